"""Benchmark: the server time of every user action in the app (issue #18: each ≤ 1 s of server time).

What is measured (in this process, no browser; the app's own code path)
----------------------------------------------------------------------
The page is built with ``app.main.create_app()`` and rendered into a Bokeh ``Document`` (``get_root``), which
is what the server does for a new session; the first page of the process is a warm-up (imports, the sample
set's fits and comparison that the server shares between sessions — a server does this once when it starts).
Then, on a fresh page:

* ``action_session_cpu_s``: building and rendering the page (what a new session costs the server);
* ``action_tab_first_visit_cpu_s``: switching to each tab for the first time (``Tabs.active``: the tab's
  models are built then, and its deferred figures); the figure is the slowest tab, every tab is in
  ``detail.tabs``;
* ``action_specimens_open_cpu_s``: opening Compare's collapsed "Specimens one by one" card (its five linked
  HoloViews plots are drawn then, not on the tab's first visit);
* ``action_design_window_cpu_s``: Design's *Find the window* (``DesignView.compute``) with the tab's targets;
* ``action_open_study_cpu_s``: opening a saved study (``ProjectBar._open`` with the session's own project
  bytes: inputs re-read, settings restored, results marked out of date).

Each figure is the process CPU time (``time.process_time``: user + system of this process, so other work on
the shared machine does not inflate it); wall time is in ``detail`` beside it.  The baseline in the same run
is the cost of rendering an empty page of the same size (a ``pn.Column`` of one HTML pane), to show what any
page costs on this machine.
"""

from __future__ import annotations

import gc
import time


def _timed(fn) -> tuple[float, float]:
    c0, t0 = time.process_time(), time.perf_counter()
    fn()
    return time.process_time() - c0, time.perf_counter() - t0


def run(quick: bool = False, deadline: float | None = None) -> dict:
    import panel as pn
    from bokeh.document import Document

    from app.main import configure_panel, create_app, warm_imports

    configure_panel()
    notes = []

    def page_with_root():
        page = create_app()
        page.ns_doc = Document()
        page.ns_root = page.get_root(page.ns_doc)
        return page

    def main_tabs(page):
        return next(o for o in page.select(pn.Tabs) if "ns-tabs" in o.css_classes)

    def warm_up():  # the process's first page: imports, shared sample fits (as app.server._warm_up does)
        page_with_root()
        warm_imports()
        gc.collect()
        gc.freeze()  # as the server does after its warm-up page: what lives as long as the process leaves the scans

    warm_cpu, warm_wall = _timed(warm_up)
    base_cpu, base_wall = _timed(lambda: pn.Column(pn.pane.HTML("<p>x</p>")).get_root(Document()))
    holder = {}
    cpu, wall = _timed(lambda: holder.setdefault("page", page_with_root()))
    page = holder["page"]
    tabs = main_tabs(page)
    names = list(tabs._names)
    per_tab = {}
    for i, name in enumerate(names):
        if i == tabs.active:
            continue  # the page opens on this tab: its cost is in the session figure

        def visit(i=i):
            tabs.active = i

        per_tab[name] = _timed(visit)
    # the Compare tab places its specimen card collapsed; opening it (a click on its header) draws the five
    # linked HoloViews plots — a user action of its own
    spec_cpu, spec_wall = _timed(page.ns_compare.open_specimens)
    design_cpu, design_wall = _timed(page.ns_design.compute)
    if page.ns_design.state.result is None:
        notes.append("Design's Find the window gave no window (the figure times the refusal)")
    data = page.ns_session.to_project("benchmark")
    open_cpu, open_wall = _timed(lambda: page.ns_project._open(data))
    slowest = max(per_tab, key=lambda k: per_tab[k][0]) if per_tab else None
    return {
        "action_session_cpu_s": cpu,
        "action_tab_first_visit_cpu_s": per_tab[slowest][0] if slowest else None,
        "action_specimens_open_cpu_s": spec_cpu,
        "action_design_window_cpu_s": design_cpu,
        "action_open_study_cpu_s": open_cpu,
        "detail": {
            "slowest_tab": slowest,
            "tabs": {k: {"cpu_s": round(v[0], 3), "wall_s": round(v[1], 3)} for k, v in per_tab.items()},
            "session_wall_s": wall, "specimens_open_wall_s": spec_wall,
            "design_window_wall_s": design_wall, "open_study_wall_s": open_wall,
            "first_page_of_process_cpu_s": warm_cpu, "first_page_of_process_wall_s": warm_wall,
            "baseline_empty_page_cpu_s": base_cpu, "baseline_empty_page_wall_s": base_wall,
            "open_study_bytes": len(data),
            "method": "create_app() rendered into a Bokeh Document in this process; Tabs.active per tab; "
                      "CompareView.open_specimens; "
                      "DesignView.compute; ProjectBar._open(project bytes); time.process_time per action",
        },
        "notes": notes,
    }
