"""The page: ``create_app()`` builds one independent session (state, widgets, figures).

Served as a factory (``pn.serve({"/": create_app})``): nothing mutable lives at module level, so two
browser sessions never see each other's settings or uploads.
"""

from __future__ import annotations

import importlib
import logging

import panel as pn

from .explorer import ExplorerViews, NetworkControls
from .messages import Messages
from .state import CAUTION, NetworkState
from .ui import CSS, html

log = logging.getLogger("netstretch.app")


#: Cap on one websocket message (a FileInput upload travels as one base64 message): 25 MB.  Files above
#: app.data_state.MAX_UPLOAD_BYTES (20 MB) are refused with a message before they are read.
WEBSOCKET_MAX_MESSAGE_SIZE = 25 * 1024 * 1024


def configure_panel():
    """Offline-safe Panel settings: every asset from this server, no CDN, no remote fonts."""
    pn.config.inline = False
    pn.config.design = None
    pn.config.raw_css = []
    pn.config.notifications = False
    pn.config.throttled = False
    # a callback error that slipped past guarded(): log it on the server, keep it off the page
    pn.config.exception_handler = lambda exc: log.error("callback error: %s", exc, exc_info=exc)
    try:
        pn.extension(design="native", inline=False)
    except Exception:
        pn.extension(inline=False)


def _optional_view(module: str, factory, **kw):
    """Build an optional view (e.g. the compare view) if its module exists; None otherwise.
    ``factory`` is a name or a tuple of names tried in turn; keyword arguments it does not take are dropped."""
    try:
        mod = importlib.import_module(module)
    except ImportError as exc:
        log.info("optional view %s not available: %s", module, exc)
        return None
    names = (factory,) if isinstance(factory, str) else tuple(factory)
    fn = next((getattr(mod, n) for n in names if callable(getattr(mod, n, None))), None)
    if fn is None:
        log.warning("optional view %s has none of %s", module, names)
        return None
    try:
        import inspect

        sig = inspect.signature(fn)
        if not any(p.kind is p.VAR_KEYWORD for p in sig.parameters.values()):
            kw = {k: v for k, v in kw.items() if k in sig.parameters}
        return fn(**kw)
    except Exception:
        log.exception("optional view %s failed to build", module)
        return None


def create_app(load_samples: bool = True):
    """One browser session's page.  If building it fails, the page says so in a sentence (the details go
    to the server log), never with a traceback."""
    try:
        return _build_page(load_samples)
    except Exception as exc:
        log.exception("building the page failed")
        return pn.Column(
            html("<div class='ns-header'><span class='ns-brand'>netstretch</span></div>"),
            pn.pane.Alert(f"This page could not be built ({type(exc).__name__}: {exc}). Reload the page; if it "
                          "happens again, the server log has the details.", alert_type="danger"),
            sizing_mode="stretch_width")


def _build_page(load_samples: bool = True):
    if hasattr(pn.widgets, "FileDropper"):
        pn.extension("filedropper")  # per session: the upload area's code must be in this page
    messages = Messages()
    state = NetworkState()
    controls = NetworkControls(state)
    explorer = ExplorerViews(state, controls, messages)

    tabs = [
        ("Force–stretch", explorer.stress_tab()),
        ("Mooney plot", explorer.mooney_tab()),
        ("Moduli & limits", explorer.moduli_tab()),
    ]
    data_view = _optional_view(f"{__package__}.data_view", "DataView", network_state=state, explorer=explorer,
                               messages=messages, load_samples=load_samples)
    if data_view is not None:
        tabs.append(("Test data & fits", data_view))
    else:
        tabs.append(("Test data & fits", pn.pane.Alert("Reading and fitting test data is not available yet.",
                                                       alert_type="secondary")))
    swell_view = _optional_view(f"{__package__}.swell_view", "SwellView", network_state=state, messages=messages,
                                data_view=data_view)
    if swell_view is not None:
        tabs.append(("Swelling", swell_view))
    else:
        tabs.append(("Swelling", pn.pane.Alert("The swelling (Flory–Rehner) view is not available yet.",
                                               alert_type="secondary")))
    compare = _optional_view(f"{__package__}.compare_view", ("create_compare_view", "CompareView", "create_view"),
                             network_state=state, data_view=data_view, messages=messages)
    if compare is not None:
        tabs.append(("Compare", compare))

    header = html(
        "<div class='ns-header'><span class='ns-brand'>netstretch</span>"
        "<span class='ns-tag'>rubber network explorer — models, test data, crosslink density</span></div>",
        sizing_mode="stretch_width", margin=0)
    caution = html(f"<div class='ns-caution'>{CAUTION}</div>", sizing_mode="stretch_width",
                           css_classes=["ns-caution-pane"])
    main_tabs = pn.Tabs(*tabs, sizing_mode="stretch_width", css_classes=["ns-tabs"], dynamic=True)

    def on_tab(event=None):
        name = tabs[main_tabs.active][0] if 0 <= main_tabs.active < len(tabs) else ""
        explorer.set_visible("mooney", name == "Mooney plot")
        explorer.set_visible("moduli", name == "Moduli & limits")

    main_tabs.param.watch(on_tab, "active")
    on_tab()
    side = pn.Column(controls, width=340, css_classes=["ns-side"], scroll=True, margin=(0, 8, 0, 0))
    body = pn.Row(side, pn.Column(messages, main_tabs, sizing_mode="stretch_width"), sizing_mode="stretch_width")
    page = pn.Column(header, body, caution, sizing_mode="stretch_width", stylesheets=[CSS],
                     css_classes=["ns-page"])
    # Handles for tests and scripting (per session, not global).
    page.ns_state = state
    page.ns_messages = messages
    page.ns_data = data_view
    return page


def serve(port: int = 5006, address: str = "localhost", show: bool = False, **kw):
    """Serve the app (blocking) on ``address:port`` with every asset served locally; see ``app.server.serve``
    for origins, password and session clean-up.  ``NETSTRETCH_DEBUG=1`` logs timings of the app's callbacks."""
    from .server import serve as _serve

    return _serve(port=port, address=address, show=show, **kw)
