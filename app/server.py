"""Serving the app to a lab: origins, a password, per-session clean-up, shared sample fits.

``serve(...)`` is what ``netstretch serve`` runs; ``panel_app.py`` beside this file is the entry for
``panel serve`` (then Panel's own options apply: ``--num-procs``, ``--prefix``, ``--allow-websocket-origin``,
``--basic-auth``, ``--cookie-secret`` ...).  Both build each page with :func:`session_page`.
"""

from __future__ import annotations

import gc
import json
import logging
import os
import secrets
import socket
from pathlib import Path

log = logging.getLogger("netstretch.app")

LOCAL_HOSTS = ("localhost", "127.0.0.1", "::1")
ANY_ADDRESS = ("0.0.0.0", "::", "")
#: environment variable read for the password when no --password-file is given
PASSWORD_ENV = "NETSTRETCH_PASSWORD"
LOGIN_TEMPLATE = Path(__file__).with_name("login.html")


class ServeError(ValueError):
    """A server setting that cannot work; the message says what to write instead."""


# ----- origins ----------------------------------------------------------------------------------------
def _origin(text: str, port: int) -> str:
    o = text.strip()
    for scheme in ("http://", "https://"):
        if o.lower().startswith(scheme):
            o = o[len(scheme):]
    o = o.rstrip("/")
    if not o or "/" in o or "*" in o or " " in o:
        raise ServeError(f"--allow-origin {text!r} is not HOST or HOST:PORT (e.g. lab-pc-07:{port}); "
                         "wildcards are not accepted")
    return o


def websocket_origins(address: str, port: int, allow_origin=None) -> list[str]:
    """The origins whose pages may open the app's websocket — never ``*``.

    Listed origins (HOST or HOST:PORT; a bare HOST means port 80, as browsers send it) are used as given.
    Without any: a local address allows the local names; a shared address allows that address itself
    (for 0.0.0.0/:: this machine's host names), so a page served from elsewhere cannot drive the app."""
    if allow_origin:
        return list(dict.fromkeys(_origin(o, port) for o in allow_origin))
    local = [f"localhost:{port}", f"127.0.0.1:{port}"]
    if address in LOCAL_HOSTS:
        return local
    if address in ANY_ADDRESS:
        names = {socket.gethostname(), socket.getfqdn()}
        return list(dict.fromkeys([*(f"{n}:{port}" for n in sorted(names) if n), *local]))
    return [f"{address}:{port}"]


# ----- password --------------------------------------------------------------------------------------------
def basic_auth_setting(password_file=None, env=None) -> str | None:
    """What to hand Panel's ``basic_auth``: the path of a JSON ``{"user": "password"}`` file, or the one
    shared password (first line of a text file, else the ``NETSTRETCH_PASSWORD`` environment variable).
    None: no password.  Raises ServeError for an unreadable or empty file."""
    env = os.environ if env is None else env
    if password_file:
        p = Path(password_file)
        try:
            text = p.read_text("utf-8")
        except OSError as exc:
            raise ServeError(f"--password-file {p}: cannot read it ({exc.strerror or exc})") from None
        stripped = text.strip()
        if stripped.startswith("{"):
            try:
                users = json.loads(stripped)
            except json.JSONDecodeError as exc:
                raise ServeError(f"--password-file {p}: looks like JSON but is not valid ({exc})") from None
            if not (isinstance(users, dict) and users and all(isinstance(v, str) and v for v in users.values())):
                raise ServeError(f'--password-file {p}: the JSON must map user names to passwords, e.g. '
                                 '{"lab": "a long passphrase"}')
            return str(p.resolve())
        first = stripped.splitlines()[0].strip() if stripped else ""
        if not first:
            raise ServeError(f"--password-file {p} is empty; write the password on its first line")
        return first
    pw = env.get(PASSWORD_ENV, "")
    return pw or None


# ----- sessions --------------------------------------------------------------------------------------------
def _forget_js_links(page):
    """Panel keeps every ``jscallback``/``jslink`` in ``panel.links.Callback.registry``, a WeakKeyDictionary
    whose values (the callback's ``args``) refer back to their key through the widget that owns both (e.g.
    EditableFloatSlider's text box and slider), so the entry — and with it the whole page — is never freed.
    Drop the entries of this page's components."""
    try:
        from panel.links import Callback
    except ImportError:  # pragma: no cover - Panel without links
        return 0
    ids = {id(o) for o in page.select()}
    registry = Callback.registry
    gone = [k for k in list(registry.keys()) if id(k) in ids]
    for k in gone:
        registry.pop(k, None)
    return len(gone)


def _release(page):
    """Drop what one session's page holds so nothing of it outlives the session (called on destroy)."""
    _forget_js_links(page)
    for attr in ("ns_state", "ns_messages", "ns_data"):
        if hasattr(page, attr):
            delattr(page, attr)
    try:
        page.clear()
    except Exception:  # already torn down by Panel: nothing left to drop
        log.debug("page clear at session end failed", exc_info=True)


def session_page(build=None):
    """One session's page (``create_app``), released when the session ends."""
    import panel as pn

    from .main import create_app

    page = (build or create_app)()

    def _destroyed(session_context):
        _release(page)
        gc.collect()
        _return_free_memory()
        log.debug("session %s released", getattr(session_context, "id", "?"))

    if pn.state.curdoc is not None and pn.state.curdoc.session_context is not None:
        pn.state.on_session_destroyed(_destroyed)
    return page


def _return_free_memory():
    """Hand the C heap's free pages back to the system (glibc ``malloc_trim``), so a server's resident size
    follows the sessions it holds instead of its busiest hour.  Elsewhere (no glibc) nothing happens."""
    import ctypes
    import ctypes.util

    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6")
        libc.malloc_trim(0)
    except (OSError, AttributeError):
        pass


def _warm_up():
    """Build one page before the port opens: imports, the sample set and its fits are then ready, so the
    first colleague does not wait for them.  A failure here is logged and the first session shows it."""
    from .main import create_app

    try:
        _release(create_app())
    except Exception:
        log.exception("warming up the page failed")
    gc.collect()
    # what exists now (modules, the shared sample fits) lives as long as the server: the cyclic collector
    # stops scanning it, so a collection during a session's page build no longer walks the whole heap
    gc.freeze()


# ----- serve ---------------------------------------------------------------------------------------------------
def serve(port: int = 5006, address: str = "localhost", show: bool = False, allow_origin=None,
          basic_auth: str | None = None, cookie_secret: str | None = None, unused_session_lifetime_ms: int = 15000,
          **kw):
    """Serve the app (blocking).  Every asset is served by this process; origins are never ``*``."""
    import panel as pn

    from .main import WEBSOCKET_MAX_MESSAGE_SIZE, configure_panel

    if not log.handlers:
        handler = logging.StreamHandler()
        handler.setFormatter(logging.Formatter("%(asctime)s %(name)s %(levelname)s: %(message)s"))
        log.addHandler(handler)
    log.setLevel(logging.DEBUG if os.environ.get("NETSTRETCH_DEBUG") == "1" else logging.INFO)
    configure_panel()
    origins = kw.pop("allow_websocket_origin", None) or websocket_origins(address, port, allow_origin)
    log.info("websocket origins allowed: %s", ", ".join(origins))
    if basic_auth:
        kw.update(basic_auth=basic_auth, cookie_secret=cookie_secret or secrets.token_hex(32),
                  basic_login_template=str(LOGIN_TEMPLATE))
    _warm_up()
    lifetime = max(1000, int(unused_session_lifetime_ms))
    return pn.serve(
        {"/": session_page}, port=port, address=address, show=show, title="netstretch",
        websocket_origin=origins, websocket_max_message_size=WEBSOCKET_MAX_MESSAGE_SIZE,
        http_server_kwargs={"max_buffer_size": WEBSOCKET_MAX_MESSAGE_SIZE},
        unused_session_lifetime_milliseconds=lifetime, check_unused_sessions_milliseconds=min(lifetime, 17000),
        **kw,
    )
