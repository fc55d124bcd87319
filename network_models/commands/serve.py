"""``netstretch serve``: the browser app on a local or lab-network port (Panel is imported only when this runs).

Sharing on the lab network: ``--address 0.0.0.0`` (or this machine's address) accepts pages served from
this machine's own names only; add ``--allow-origin HOST[:PORT]`` for each name colleagues type.  A password
comes from ``--password-file FILE`` (first line; or a JSON {"user": "password"} file) or the environment
variable NETSTRETCH_PASSWORD — never from the command line, where other users of the machine can read it.
"""

from __future__ import annotations

import argparse
import importlib
from pathlib import Path


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("serve", help="serve the browser app (local assets only; works without internet)",
                       description="Serve the browser app.  For a server a lab leaves running see README "
                                   "'Serving a lab'; for Panel's own options use `panel serve` on the file "
                                   "printed by --entry-file.")
    p.add_argument("--port", type=int, default=5006, help="port to listen on (default 5006)")
    p.add_argument("--address", default="localhost",
                   help="address to listen on (default localhost; 0.0.0.0 shares it on the lab network)")
    p.add_argument("--allow-origin", action="append", default=[], metavar="HOST[:PORT]",
                   help="a name colleagues' browsers use to reach this server (repeat for each); default: "
                        "the --address itself (this machine's names for 0.0.0.0), never any origin")
    p.add_argument("--password-file", metavar="FILE",
                   help="ask for a password (Panel's basic authentication): the first line of FILE, or a JSON "
                        "file mapping user names to passwords; without it NETSTRETCH_PASSWORD is used if set")
    p.add_argument("--session-lifetime", type=float, default=15.0, metavar="SECONDS",
                   help="how long a closed browser tab's session is kept before it is released (default 15)")
    p.add_argument("--show", action="store_true", help="also open a browser window on this machine")
    p.add_argument("--entry-file", action="store_true",
                   help="print the app file for `panel serve FILE` (Panel's own options) and exit")
    p.set_defaults(run=run)


def _app_package():
    """The ``app`` folder beside this ``network_models`` when running from a source checkout (so a checkout
    serves its own app, not another one an editable install points to), else the installed app
    (``netstretch_app``), else whatever ``app`` is importable."""
    from pathlib import Path

    beside = Path(__file__).resolve().parents[2] / "app"
    if (beside / "server.py").exists():
        try:
            pkg = importlib.import_module("app")
            if Path(pkg.__file__).resolve().parent == beside:
                return pkg
        except ImportError:
            pass
    try:
        return importlib.import_module("netstretch_app")
    except ImportError:
        return importlib.import_module("app")


def run(args: argparse.Namespace) -> int:
    from ..errors import UserError

    if args.entry_file:
        try:
            pkg = _app_package()
        except ImportError as exc:
            raise UserError(f"the app package is not installed ({exc}); install netstretch with pip") from None
        print(Path(pkg.__file__).with_name("panel_app.py"))
        return 0
    if not (0 < args.port < 65536):
        raise UserError(f"--port must be between 1 and 65535; got {args.port}")
    if not (args.session_lifetime > 0):
        raise UserError(f"--session-lifetime must be a positive number of seconds; got {args.session_lifetime}")
    try:
        import panel  # noqa: F401

        pkg = _app_package()
        server = importlib.import_module(f"{pkg.__name__}.server")
    except ImportError as exc:
        raise UserError(
            f"the browser app needs Panel, Bokeh and the app package ({exc}); install them with "
            "`pip install netstretch` (or `pip install -e .` in the project folder), or use the command-line "
            "sub-commands instead"
        ) from None
    try:
        origins = server.websocket_origins(args.address, args.port, args.allow_origin)
        auth = server.basic_auth_setting(args.password_file)
    except server.ServeError as exc:
        raise UserError(str(exc)) from None
    host = "localhost" if args.address in ("0.0.0.0", "::") else args.address
    print(f"netstretch app: http://{host}:{args.port}/  (Ctrl+C stops it)", flush=True)
    if args.address not in server.LOCAL_HOSTS:
        print(f"shared on the network; pages from {', '.join(origins)} may connect"
              + ("; a password is asked" if auth else "; NO password is asked (see --password-file)"), flush=True)
    try:
        server.serve(port=args.port, address=args.address, show=args.show, allow_websocket_origin=origins,
                   basic_auth=auth, unused_session_lifetime_ms=int(args.session_lifetime * 1000))
    except OSError as exc:
        if exc.errno in (98, 48, 10048):  # address in use (Linux, macOS, Windows)
            raise UserError(f"port {args.port} on {args.address} is already in use (perhaps the app is already "
                            "running there); open that address, or choose another port with --port") from None
        if exc.errno in (99, 49, 10049):
            raise UserError(f"cannot listen on address {args.address!r}: it is not an address of this machine; "
                            "use localhost or 0.0.0.0") from None
        raise
    return 0
