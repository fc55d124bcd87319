"""``netstretch serve``: the browser app on a local port (Panel is imported only when this runs)."""

from __future__ import annotations


def add_parser(sub):
    p = sub.add_parser("serve", help="serve the browser app (local assets only; works without internet)")
    p.add_argument("--port", type=int, default=5006, help="port to listen on (default 5006)")
    p.add_argument("--address", default="localhost",
                   help="address to listen on (default localhost; 0.0.0.0 shares it on the lab network)")
    p.add_argument("--show", action="store_true", help="also open a browser window on this machine")
    p.set_defaults(run=run)


def run(args):
    from ..cli import UserError

    if not (0 < args.port < 65536):
        raise UserError(f"--port must be between 1 and 65535; got {args.port}")
    try:
        import panel  # noqa: F401

        from app.main import serve
    except ImportError as exc:
        raise UserError(
            f"the browser app needs Panel, Bokeh and the app package ({exc}); install them with "
            "`pip install -e .` in the project folder, or use the command-line sub-commands instead"
        ) from None
    host = "localhost" if args.address in ("0.0.0.0", "::") else args.address
    print(f"netstretch app: http://{host}:{args.port}/  (Ctrl+C stops it)", flush=True)
    try:
        serve(port=args.port, address=args.address, show=args.show)
    except OSError as exc:
        if exc.errno in (98, 48, 10048):  # address in use (Linux, macOS, Windows)
            raise UserError(f"port {args.port} on {args.address} is already in use (perhaps the app is already "
                            "running there); open that address, or choose another port with --port") from None
        if exc.errno in (99, 49, 10049):
            raise UserError(f"cannot listen on address {args.address!r}: it is not an address of this machine; "
                            "use localhost or 0.0.0.0") from None
        raise
    return 0
