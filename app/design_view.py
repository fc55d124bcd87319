"""The Design tab: targets as rows, the window of strand density that meets them, which target binds, and a
feasibility map (ν against filler fraction or against N) on which a click moves the explorer.

``app/main.py`` mounts it as the Design tab with the session's explorer state; its messages appear under
its Compute button (area ``ns-messages-design``).

``create_design_view(explorer_state=None, messages=None, on_pick=None)``: with an explorer state (the
session's :class:`app.state.NetworkState`) the tab takes polymer, temperature, f, filler and N coupling from
it, draws the explorer's network as a point, and a click on the map sets the explorer's ν and φ (or N); give
``on_pick(nu=..., filler=... | N=...)`` to handle clicks yourself.  State lives in
:class:`app.design_state.DesignState` (param only).
"""

from __future__ import annotations

import html as _html
import logging

import numpy as np
import panel as pn
from bokeh.events import Tap
from bokeh.models import ColumnDataSource, LogTicker
from bokeh.plotting import figure

from network_models.design.map import FEASIBLE_COLOUR, TARGET_COLOURS, strip_svg

from .design_state import DesignState
from .messages import Messages, guarded
from .ui import html

log = logging.getLogger("netstretch.app")


def _esc(x) -> str:
    return _html.escape(str(x))


def map_figure(dmap, current=None, compound=None, height=360, measured=None):
    """Bokeh figure of a :class:`~network_models.design.map.DesignMap`: a translucent band per target, the
    feasible cells in green, the N = M_c/M_K line (axis N), the explorer's network and today's compound."""
    ylog = dmap.axis == "N"
    xe, ye = dmap.edges(dmap.nu, True), dmap.edges(dmap.y, ylog)
    p = figure(height=height, sizing_mode="stretch_width", x_axis_type="log", y_axis_type="log" if ylog else "linear",
               x_axis_label="strand density ν (mol/m³)", y_axis_label=dmap.y_label,
               tools="pan,wheel_zoom,box_zoom,reset,save,tap", x_range=(xe[0], xe[-1]), y_range=(ye[0], ye[-1]),
               title="Feasibility map (click a point to move the explorer there)")
    p.toolbar.logo = None
    p.xaxis.ticker = LogTicker(mantissas=[1, 2, 5])
    if ylog:
        p.yaxis.ticker = LogTicker(mantissas=[1, 2, 5])

    def quads(mask):
        i, j = np.nonzero(mask)
        return {"left": xe[j], "right": xe[j + 1], "bottom": ye[i], "top": ye[i + 1]}

    for k, (text, mask) in enumerate(dmap.masks.items()):
        p.quad(source=ColumnDataSource(quads(mask), name=f"ns-design-band-{k}"), fill_alpha=0.18, line_alpha=0,
               fill_color=TARGET_COLOURS[k % len(TARGET_COLOURS)], legend_label=text)
    p.quad(source=ColumnDataSource(quads(dmap.feasible), name="ns-design-feasible"), fill_alpha=0.6, line_alpha=0,
           fill_color=FEASIBLE_COLOUR, legend_label="all targets met")
    if dmap.coupled_N is not None:
        p.line(dmap.nu, dmap.coupled_N, line_dash="dashed", color="#333333", legend_label="N = M_c/M_K")
    cur = ColumnDataSource({"x": [] if current is None else [current[0]], "y": [] if current is None else
                            [current[1]]}, name="ns-design-current")
    p.scatter("x", "y", source=cur, size=11, color="#000000", legend_label="explorer network")
    if compound is not None:
        p.scatter([compound[0]], [compound[1]], size=12, marker="diamond", color="#ff7f0e",
                  legend_label="today's compound")
    if measured:
        src = ColumnDataSource({"x": [m[1] for m in measured], "y": [m[2] for m in measured],
                                "name": [m[0] for m in measured]}, name="ns-design-compounds")
        p.scatter("x", "y", source=src, size=10, marker="triangle", color="#8c564b", legend_label="measured compounds")
        p.text("x", "y", text="name", source=src, x_offset=6, y_offset=-6, text_font_size="9pt")
    p.legend.location = "top_right"
    p.legend.click_policy = "hide"
    p.legend.label_text_font_size = "9pt"
    return p, cur


class DesignView(pn.viewable.Viewer):
    """The Design tab (one per session)."""

    def __init__(self, explorer_state=None, messages: Messages | None = None, on_pick=None, state=None, **params):
        super().__init__(**params)
        self.state = state if state is not None else DesignState()  # the session's (Session.design)
        self.explorer_state = explorer_state
        self.messages = messages or Messages(area="design")
        self.on_pick = on_pick
        #: SVG drawing for the map (the page's 'save as SVG' box sets it; the map is made at each run)
        self.svg = False
        s = self.state
        self.rows = pn.Column(sizing_mode="stretch_width", css_classes=["ns-design-targets"])
        for t in s.targets:
            self._add_row(t)
        # the rows and the session's DesignState.targets follow each other (a reopened project sets the targets)
        s.param.watch(lambda e: self._targets_set(e.new), "targets")
        self.new_target = pn.widgets.TextInput(placeholder="e.g. Q(toluene)<=3.5 or planar@2>=1.1MPa", width=260,
                                               css_classes=["ns-design-new"])
        add = pn.widgets.Button(name="Add target", width=110, css_classes=["ns-design-add"])
        add.on_click(lambda e: self._add_clicked())
        self.use_explorer = pn.widgets.Checkbox(name="Polymer, temperature, f, filler and N from the explorer",
                                                value=explorer_state is not None, disabled=explorer_state is None)
        own = dict(width=200)
        self.own = pn.Column(
            pn.widgets.Select.from_param(s.param.polymer, **own),
            pn.widgets.FloatInput.from_param(s.param.T_C, step=1.0, **own),
            pn.widgets.FloatInput.from_param(s.param.filler, step=0.01, **own),
            pn.widgets.FloatInput.from_param(s.param.f, step=1.0, **own),
            pn.widgets.FloatInput.from_param(s.param.N, **own),
            visible=explorer_state is None)
        self.use_explorer.param.watch(lambda e: setattr(self.own, "visible", not e.new), "value")
        self.run_button = pn.widgets.Button(name="Find the window", button_type="primary", width=160,
                                            css_classes=["ns-design-run"])
        self.run_button.on_click(lambda e: self.compute())
        self.result = html("<p>Type targets (one per row) and press <b>Find the window</b>.</p>",
                           css_classes=["ns-design-result"])
        self.models_pane = html("", css_classes=["ns-design-models"])
        self.map_pane = pn.pane.Bokeh(None, sizing_mode="stretch_width", css_classes=["ns-design-map"])
        self._cur_source = None
        self.compute = guarded(self.messages, "design", "Design")(self.compute)
        self._picked = guarded(self.messages, "design-pick", "Moving the explorer")(self._picked)
        self._add_clicked = guarded(self.messages, "design", "Design")(self._add_clicked)
        if explorer_state is not None:
            explorer_state.param.watch(self._explorer_moved, ["nu", "filler", "N_free", "couple_N"])
        self._layout = pn.Row(
            pn.Column(
                html("<h3>Targets</h3><p class='ns-hint'>One per row: <code>M100=1.8MPa±5%</code>, "
                     "<code>M100=1.7..1.9MPa</code>, <code>lock>=6</code>, <code>G@100C>=0.4MPa</code>, "
                     "<code>Q(toluene)<=3.5</code>, <code>reserve>=400%</code>, <code>planar@2>=1.1MPa</code>."
                     "</p>"),
                self.rows, pn.Row(self.new_target, add),
                pn.widgets.Select.from_param(s.param.model, width=200, css_classes=["ns-design-model"]),
                pn.widgets.RadioButtonGroup.from_param(s.param.axis, css_classes=["ns-design-axis"]),
                self.use_explorer, self.own,
                pn.widgets.FloatInput.from_param(s.param.compound_nu, width=200, css_classes=["ns-design-nu"]),
                pn.widgets.TextInput.from_param(s.param.compound_ci, width=200),
                pn.widgets.Checkbox.from_param(s.param.with_models),
                pn.widgets.TextInput.from_param(s.param.dose_ingredient, width=200, css_classes=["ns-design-dose"],
                                                placeholder="e.g. sulfur"),
                self.run_button, self.messages, width=360),
            pn.Column(self.result, self.map_pane, self.models_pane, sizing_mode="stretch_width"),
            sizing_mode="stretch_width", css_classes=["ns-design"])
        self._page = pn.Column(self._layout, sizing_mode="stretch_width")

    # ----- target rows -------------------------------------------------------------------------
    def _add_row(self, text: str):
        box = pn.widgets.TextInput(value=text, width=240, css_classes=["ns-design-target"])
        remove = pn.widgets.Button(name="✕", width=40, css_classes=["ns-design-remove"])
        row = pn.Row(box, remove)
        remove.on_click(lambda e: self._remove_row(row))
        box.param.watch(lambda e: self._rows_changed(), "value")
        self.rows.append(row)
        self._rows_changed()
        return row

    def _remove_row(self, row):
        self.rows.objects = [r for r in self.rows.objects if r is not row]
        self._rows_changed()

    def _rows_changed(self):
        if getattr(self, "_syncing", False):
            return
        texts = self.target_texts()
        if texts != list(self.state.targets):
            self.state.targets = texts

    def _targets_set(self, targets):
        if list(targets) == self.target_texts():
            return
        self._syncing = True
        try:
            self.rows.objects = []
            for t in targets:
                self._add_row(t)
        finally:
            self._syncing = False

    def _add_clicked(self):
        from network_models.design.targets import parse_target

        text = (self.new_target.value or "").strip()
        if not text:
            raise ValueError("type a target in the box first, e.g. Q(toluene)<=3.5")
        parse_target(text)  # a sentence now rather than at the next run
        self._add_row(text)
        self.new_target.value = ""

    def target_texts(self) -> list[str]:
        return [r.objects[0].value for r in self.rows.objects if (r.objects[0].value or "").strip()]

    # ----- compute and draw --------------------------------------------------------------------------
    def _current(self):
        es = self.explorer_state
        if es is None:
            return None
        return float(es.nu), self.state.y_of(float(es.nu), es)

    def compute(self):
        s = self.state
        if self.use_explorer.value and self.explorer_state is not None:
            s.sync_from(self.explorer_state)
        s.targets = self.target_texts()
        res = s.compute()
        cur = self._current()
        parts = [res.to_html(map=None, current=None if cur is None else cur[0])]
        for name, (_nu, _ci, sentence) in reversed(list(s.compound_advice.items())):
            parts.insert(0, f"<p class='ns-design-advice' data-compound='{_esc(name)}'><b>{_esc(name)}:</b> "
                            f"{_esc(sentence)}</p>")
        if s.advice is not None:
            parts.insert(0, f"<p class='ns-design-advice'><b>Today's compound:</b> {_esc(s.advice.sentence)}</p>")
        if not res.feasible:  # a stiffness target below the entanglements alone: say why, not just "not feasible"
            from .modulus_card import entanglement_floor_sentences

            parts[:0] = [f"<p class='ns-design-floor'>{_esc(x)}</p>" for x in entanglement_floor_sentences(res)]
        if s.dose is not None:
            parts.insert(0, _dose_html(s.dose))
        self.result.object = "".join(parts)
        compound = None
        if s.compound_nu is not None:
            compound = (s.compound_nu, s.y_of(s.compound_nu))
        measured = [(n, v[0], s.y_of(v[0])) for n, v in s.compound_advice.items() if v[0] is not None]
        fig, self._cur_source = map_figure(s.map, cur, compound, measured=measured)
        fig.on_event(Tap, self._on_tap)
        fig.output_backend = "svg" if self.svg else "canvas"
        self.map_pane.object = fig
        self.models_pane.object = self._models_html()
        return res

    def set_compounds(self, compounds: dict):
        """Measured compounds to place on the map and advise on at the next run: name -> FitResult (read
        under the design model) or (ν in mol/m³, (low, high) or None)."""
        self.state.compounds = dict(compounds)

    def _models_html(self) -> str:
        mw = self.state.models
        if mw is None:
            return ""
        rows = []
        for name, r in mw.results.items():
            w = r.window
            b = r.to_dict()["binding"]
            rows.append(f"<tr data-model='{_esc(name)}'><td>{_esc(name)}</td><td>{'—' if w is None else f'{w.lo:.4g}'}"
                        f"</td><td>{'—' if w is None else f'{w.hi:.4g}'}</td><td>{_esc(b['low'] or '—')}</td>"
                        f"<td>{_esc(b['high'] or '—')}</td></tr>")
        left = "".join(f"<li>{_esc(n)}: {_esc(w)}</li>" for n, w in mw.left_out.items())
        return ("<h4>Window per model</h4><table><thead><tr><th>model</th><th>ν low</th><th>ν high</th>"
                "<th>binding low</th><th>binding high</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>"
                + f"<p>{_esc(mw.sentence)}</p>" + (f"<ul>{left}</ul>" if left else ""))

    def strip_svg(self) -> str:
        return "" if self.state.result is None else strip_svg(self.state.result)

    # ----- the map and the explorer ---------------------------------------------------------------------
    def _on_tap(self, event):
        self._picked(event.x, event.y)

    def _picked(self, nu, y):
        if nu is None or y is None:
            return None
        changes = self.state.pick_changes(float(nu), float(y))
        if self.on_pick is not None:
            key = "filler" if self.state.axis == "filler" else "N"
            self.on_pick(nu=changes["nu"], **{key: changes.get("filler", changes.get("N_free"))})
        elif self.explorer_state is not None:
            es = self.explorer_state
            lo, hi = es.param.nu.bounds
            changes["nu"] = min(max(changes["nu"], lo), hi)
            es.param.update(**changes)
        return changes

    def _explorer_moved(self, *events):
        if self._cur_source is not None:
            cur = self._current()
            self._cur_source.data = {"x": [cur[0]], "y": [cur[1]]}

    def add_below(self, view):
        """Put another view (e.g. the modulus → strand density card) under the tab's targets and results."""
        self._page.append(view)

    def __panel__(self):
        return self._page


def create_design_view(explorer_state=None, messages: Messages | None = None, on_pick=None, network_state=None,
                       state=None, **_ignored) -> DesignView:
    """One session's Design tab.  ``network_state`` is accepted as another name for ``explorer_state``;
    ``state``: the session's :class:`DesignState` (``Session.design``), so a project file keeps the targets."""
    return DesignView(explorer_state=explorer_state if explorer_state is not None else network_state,
                      messages=messages, on_pick=on_pick, state=state)


def _dose_html(d: dict) -> str:
    """The dose window beside the ν window (issue #21): the ladder's line inverted at the window's edges."""
    if d.get("error"):
        return f"<p class='ns-design-dose-result'><b>Dose window in {_esc(d['ingredient'])}:</b> {_esc(d['error'])}</p>"
    ln = d["line"]
    se = "" if ln["slope_se"] is None else f" ± {ln['slope_se']:.3g}"
    pts = ", ".join(f"{_esc(p['compound'])} {p['phr']:g} phr" for p in d["ladder"])
    if d.get("low") is None:
        body = _esc(d.get("note", "no dose window"))
    else:
        body = (f"{d['low']:.3g} – {d['high']:.3g} phr" + (" <b>(extrapolated)</b>" if d["extrapolated"] else "")
                + f"; tested {d['tested'][0]:g}–{d['tested'][1]:g} phr")
    return (f"<p class='ns-design-dose-result'><b>Dose window in {_esc(d['ingredient'])}:</b> {body}<br>"
            f"<small>ladder {pts}; line ν = {ln['intercept']:.4g} + {ln['slope']:.4g}{se} mol/m³ per phr, ν read "
            f"on the design's basis</small></p>")
