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
LOGOUT_TEMPLATE = Path(__file__).with_name("logout.html")
#: failed sign-ins: the n-th failure in a row from one address is answered after
#: min(THROTTLE_FIRST_S * 2**(n-1), THROTTLE_MAX_S) seconds; an address is forgotten after THROTTLE_FORGET_S
THROTTLE_FIRST_S = 0.5
THROTTLE_MAX_S = 30.0
THROTTLE_FORGET_S = 900.0


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


# ----- hosts, sign-in, cookies ------------------------------------------------------------------------------------
def _host_port(text: str, default_port: int = 80) -> str:
    t = text.strip().lower()
    if t.startswith("["):  # [::1]:5006
        host, _, rest = t[1:].partition("]")
        port = rest.lstrip(":") or str(default_port)
        return f"[{host}]:{port}"
    host, sep, port = t.rpartition(":")
    if not sep or not port.isdigit() or ":" in host:
        return f"{t}:{default_port}" if ":" not in t else f"[{t}]:{default_port}"
    return f"{host}:{port}"


def allowed_hosts(origins: list[str], port: int) -> set[str]:
    """The names this server answers to (``Host`` header, HOST:PORT): the listed origins, and for a local
    server the local names.  A page that reached this machine under another name (DNS rebinding: a foreign
    name that resolves here) is refused, so Host and Origin naming the same foreign host get nowhere."""
    hosts = {_host_port(o) for o in origins}
    if any(h.split(":")[0] in ("localhost", "127.0.0.1", "[::1]") for h in hosts):
        hosts |= {f"localhost:{port}", f"127.0.0.1:{port}", f"[::1]:{port}"}
    return hosts


def only_known_hosts(tornado_app, hosts: set[str]):
    """Every request (pages, assets, the websocket, login) whose ``Host`` is not one of ``hosts`` gets
    403 and a log line, before any handler runs."""
    import tornado.web

    class WrongHost(tornado.web.RequestHandler):
        def prepare(self):
            log.warning("refused a request for host %r from %s (this server answers to %s)",
                        self.request.host, self.request.remote_ip, ", ".join(sorted(hosts)))
            self.set_status(403)
            self.finish("This server answers only to the names it was started with (--allow-origin).")

    find = tornado_app.find_handler

    def find_handler(request, **kw):
        if _host_port(request.host or "") not in hosts:
            return tornado_app.get_handler_delegate(request, WrongHost)
        return find(request, **kw)

    tornado_app.find_handler = find_handler


class _Throttle:
    """Failed sign-ins per client address: the delay before the next answer doubles with each failure."""

    def __init__(self):
        self.failures: dict[str, tuple[int, float]] = {}

    def delay(self, address: str) -> float:
        import time

        n, last = self.failures.get(address, (0, 0.0))
        if n == 0 or time.monotonic() - last > THROTTLE_FORGET_S:
            return 0.0
        return min(THROTTLE_FIRST_S * 2 ** (n - 1), THROTTLE_MAX_S)

    def failed(self, address: str) -> int:
        import time

        n, last = self.failures.get(address, (0, 0.0))
        n = 1 if time.monotonic() - last > THROTTLE_FORGET_S else n + 1
        self.failures[address] = (n, time.monotonic())
        if len(self.failures) > 10_000:  # many addresses: forget the oldest half
            for k in sorted(self.failures, key=lambda a: self.failures[a][1])[:5_000]:
                del self.failures[k]
        return n

    def succeeded(self, address: str):
        self.failures.pop(address, None)


THROTTLE = _Throttle()


def _cookie_flags(handler, kwargs: dict) -> dict:
    """SameSite=Lax on every cookie (not sent with another site's requests or websockets); Secure when the
    page came over HTTPS (directly, or through a proxy that says so with X-Forwarded-Proto)."""
    https = handler.request.protocol == "https" or \
        handler.request.headers.get("X-Forwarded-Proto", "").lower() == "https"
    kwargs.setdefault("samesite", "Lax")
    if https:
        kwargs.setdefault("secure", True)
    return kwargs


def _login_handlers():
    """The sign-in and sign-out handlers: Panel's, with failed sign-ins logged (client address) and
    throttled per address, and cookie flags set."""
    from panel.auth import BasicLoginHandler, LogoutHandler

    class Login(BasicLoginHandler):
        def set_cookie(self, name, value, *args, **kwargs):
            return super().set_cookie(name, value, *args, **_cookie_flags(self, kwargs))

        async def post(self):
            import asyncio

            address = self.request.remote_ip or "?"
            wait = THROTTLE.delay(address)
            if wait:
                await asyncio.sleep(wait)  # this address only: other requests are answered meanwhile
            username = self.get_argument("username", "")
            if self._validate(username, self.get_argument("password", "")):
                THROTTLE.succeeded(address)
                log.info("sign-in of %r from %s", username, address)
            else:
                n = THROTTLE.failed(address)
                log.warning("failed sign-in for user %r from %s (%d in a row; the next answer waits %.1f s)",
                            username[:80], address, n, THROTTLE.delay(address))
            return super().post()

    class Logout(LogoutHandler):
        def set_cookie(self, name, value, *args, **kwargs):
            return super().set_cookie(name, value, *args, **_cookie_flags(self, kwargs))

    return {BasicLoginHandler: Login, LogoutHandler: Logout}


def _autoload_handler():
    """Panel's ``/autoload.js`` handler, answering a request it cannot serve (not signed in, a bad
    argument) with a status and one log line instead of an uncaught exception and its traceback."""
    import inspect

    from panel.io.server import AutoloadJsHandler

    class _NotSignedIn(Exception):
        pass

    class Autoload(AutoloadJsHandler):
        async def get_session(self):
            result = super().get_session()
            if not inspect.isawaitable(result):  # not signed in: already sent to the login page
                raise _NotSignedIn
            return await result

        async def get(self, *args, **kwargs):
            try:
                await super().get(*args, **kwargs)
            except _NotSignedIn:
                return
            except Exception as exc:
                log.warning("/autoload.js request refused (%s: %s) from %s", type(exc).__name__, exc,
                            self.request.remote_ip)
                if not self._finished:
                    self.send_error(400)

    return {AutoloadJsHandler: Autoload}


def _swap_handlers(tornado_app, swaps: dict):
    """Replace handler classes in the app's routing rules (Panel's sign-in handlers by ours)."""
    def walk(router):
        for rule in getattr(router, "rules", []):
            if isinstance(rule.target, type) and rule.target in swaps:
                rule.target = swaps[rule.target]
            else:
                walk(rule.target)

    walk(tornado_app.wildcard_router)
    walk(tornado_app.default_router)


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


def _local_assets(doc):
    """Panel points a component's stylesheets (``loading.css``, the theme's ``default.css``) at its internet
    CDN whenever the session's document does not yet name where the local ones are — which it names only
    once the first page has been written, so components made while the page is built and in later callbacks
    (upload, fit) asked the CDN.  Name this server's copy on the document before anything is built."""
    if doc is None or getattr(doc, "session_context", None) is None:
        return
    from panel.io.resources import LOCAL_DIST
    from panel.io.state import state

    rel = state.rel_path
    doc._template_variables.setdefault("dist_url", f"{rel}/{LOCAL_DIST}" if rel else LOCAL_DIST)


def session_page(build=None):
    """One session's page (``create_app``), released when the session ends."""
    import panel as pn

    from .main import create_app

    _local_assets(pn.state.curdoc)
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
    from .main import create_app, warm_imports

    try:
        _release(create_app())
        warm_imports()
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

    from .panel_setup import WEBSOCKET_MAX_MESSAGE_SIZE, configure_panel

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
                  basic_login_template=str(LOGIN_TEMPLATE), logout_template=str(LOGOUT_TEMPLATE))
    _warm_up()
    lifetime = max(1000, int(unused_session_lifetime_ms))
    server = pn.serve(
        {"/": session_page}, port=port, address=address, show=show, title="netstretch",
        websocket_origin=origins, websocket_max_message_size=WEBSOCKET_MAX_MESSAGE_SIZE,
        http_server_kwargs={"max_buffer_size": WEBSOCKET_MAX_MESSAGE_SIZE},
        unused_session_lifetime_milliseconds=lifetime, check_unused_sessions_milliseconds=min(lifetime, 17000),
        start=False, **kw,
    )
    hosts = allowed_hosts(origins, port)
    only_known_hosts(server._tornado, hosts)
    log.info("host names answered: %s", ", ".join(sorted(hosts)))
    _swap_handlers(server._tornado, {**_autoload_handler(), **(_login_handlers() if basic_auth else {})})
    server.start()
    server.io_loop.start()
    return server
