"""The page: ``create_app()`` builds one independent session (state, widgets, figures).

Served as a factory (``pn.serve({"/": create_app})``): nothing mutable lives at module level, so two
browser sessions never see each other's settings or uploads.
"""

from __future__ import annotations

import logging

import panel as pn

from .compare_view import CompareView
from .data_view import DataView
from .design_view import create_design_view
from .explorer import ExplorerViews, NetworkControls
from .messages import Messages
from .modulus_card import ModulusCard
from .panel_setup import WEBSOCKET_MAX_MESSAGE_SIZE, configure_panel  # noqa: F401  (panel_app.py, tests)
from .plots import set_output_backend
from .project_view import ProjectBar
from .session import Session
from .state import CAUTION
from .swell_view import SwellView
from .ui import CSS, html

log = logging.getLogger("netstretch.app")


def warm_imports():
    """Modules a session loads only on demand (HoloViews and its Bokeh plotting, for Compare's specimen
    card): the server imports them once before its port opens, so no user's first click pays for them."""
    from .specimen_view import _ensure_backend

    _ensure_backend()


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
    session = Session()
    if load_samples:
        problems = _load_samples(session)
    messages = Messages(area="page")
    controls = NetworkControls(session.network)
    explorer = ExplorerViews(session.network, controls, messages, units=session.units)
    data_view = DataView(session.data, network_state=session.network, explorer=explorer, units=session.units)
    swell_view = SwellView(session.swell, data=session.data, units=session.units)
    compare = CompareView(session.compare, ask_missing=data_view.ask_missing)
    project = ProjectBar(session)
    design = create_design_view(explorer_state=session.network, state=session.design)
    modulus_card = ModulusCard(units=session.units)
    design.add_below(modulus_card)  # modulus → strand density, on the Design tab under the targets
    if load_samples:
        if problems:
            data_view.messages.show("samples", " · ".join(problems), "secondary")
        compare.run()
    tabs = [
        ("Force–stretch", explorer.stress_tab()),
        ("Mooney plot", explorer.mooney_tab()),
        ("Moduli & limits", explorer.moduli_tab()),
        ("Test data & fits", data_view),
        ("Swelling", swell_view),
        ("Compare", compare),
        ("Design", design),
    ]
    library = _library_tab(session, compare)
    if library is not None:
        tabs.append(("Library", library))
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
        if name == "Test data & fits":
            data_view.fit.show_figures()
        if name == "Compare":
            compare.show_specimens()

    main_tabs.param.watch(on_tab, "active")
    on_tab()
    svg = pn.widgets.Checkbox(name="Plots save as SVG (else PNG)", value=False, css_classes=["ns-svg-export"])
    svg.param.watch(lambda e: _switch_backend(page, e.new, (explorer, data_view.fit, compare, design)), "value")
    side = pn.Column(controls, pn.Column(svg, margin=(4, 10)), width=340, css_classes=["ns-side"], scroll=True,
                     margin=(0, 8, 0, 0))
    body = pn.Row(side, pn.Column(project, messages, main_tabs, sizing_mode="stretch_width"),
                  sizing_mode="stretch_width")
    page = pn.Column(header, body, caution, sizing_mode="stretch_width", stylesheets=[CSS],
                     css_classes=["ns-page"])
    # Handles for tests and scripting (per session, not global).
    page.ns_session = session
    page.ns_state = session.network
    page.ns_messages = messages
    page.ns_data = data_view
    page.ns_compare = compare
    page.ns_swell = swell_view
    page.ns_modulus = modulus_card
    page.ns_explorer = explorer
    page.ns_project = project
    page.ns_design = design
    page.ns_library = library
    return page


def _library_tab(session: Session, compare):
    """The Library tab, only when a results library is configured ($NETSTRETCH_LIBRARY); None otherwise."""
    from network_models.library.db import configured

    if not configured():
        return None
    from .library_view import LibraryView

    return LibraryView(session, on_open=compare._run)


def _load_samples(session: Session) -> list[str]:
    """The bundled sample sets into the session's store; sentences for what could not be read."""
    try:
        problems = session.data.load_samples()
    except Exception as exc:  # sample sets missing or unreadable: the app still works
        log.exception("sample sets")
        return [f"The bundled sample sets could not be loaded ({exc}); upload your own files instead."]
    session.compare.use_samples_title()
    return [f"Some sample files could not be read: {p}" for p in problems]


def _switch_backend(page, svg: bool, lazy_views=()):
    """PNG or SVG drawing for every plot of the page: the figures change backend and their panes are
    re-rendered (a backend change alone does not rebuild a figure already on screen).  Views that build
    figures on first use (``lazy_views``, each with an ``svg`` flag) build later ones in the same backend."""
    for view in lazy_views:
        view.svg = svg
    panes = [p for p in page.select(pn.pane.Bokeh) if p.object is not None]  # an empty place has no figure yet
    set_output_backend([p.object for p in panes], svg)
    for p in panes:
        p.param.trigger("object")
