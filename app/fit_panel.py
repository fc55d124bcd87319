"""The fit half of the 'Test data & fits' tab: model choice, fitted curves with residuals, which model fits
best (RMS chart), warnings grouped by kind, the crosslink table, parameters, fit statistics, the
single-compound report download and 'draw this network in the explorer'."""

from __future__ import annotations

import io
import logging
from dataclasses import dataclass

import numpy as np
import panel as pn
from bokeh.models import ColumnDataSource, Range1d, Span
from bokeh.plotting import figure

from network_models import MODELS, MODES, get_model

from .compare_state import fit_report
from .data_state import DataState
from .display_units import DisplayUnits
from .messages import Messages, guarded
from .plots import (
    DIMENSIONLESS,
    TOOLS,
    ModelLines,
    _style,
    data_legend_html,
    data_scatter,
    empty_columns,
    empty_points,
    model_lines,
    readable_range,
    residual_range,
    set_output_backend,
    set_range,
    set_visible_models,
)
from .state import model_colour, sig
from .tables import (
    crosslink_rows,
    esc,
    fit_quality_rows,
    grouped_warnings,
    overall_rms,
    parameter_rows,
    table_html,
    warnings_html,
)
from .ui import Deferred, html

log = logging.getLogger("netstretch.app")


@dataclass(frozen=True)
class FitFigure:
    """One mode's data-and-fit figure and its residual figure below."""

    fig: object
    resid_fig: object
    source: ColumnDataSource  # fitted model lines (MPa)
    data: ColumnDataSource  # the selected data points
    resid: ColumnDataSource  # model − data per point
    lines: ModelLines


def fit_figure(mode: str, initial=()) -> FitFigure:
    src = ColumnDataSource(empty_columns("lam"), name=f"ns-fit-{mode}")
    data = ColumnDataSource(empty_points(), name=f"ns-fitdata-{mode}")
    res = ColumnDataSource({"x": [], "y": [], "color": [], "model": []}, name=f"ns-resid-{mode}")
    p = figure(title=f"{mode.capitalize()}: data and fitted models", height=280, sizing_mode="stretch_width",
               tools=TOOLS, x_axis_label=f"stretch λ {DIMENSIONLESS}", y_axis_label="nominal stress P (MPa)",
               x_range=Range1d(1.0, 3.0), y_range=Range1d(0.0, 1.0))
    _style(p)
    data_scatter(p, data, size=5.5)
    r = model_lines(p, src, "lam", initial)
    q = figure(height=150, sizing_mode="stretch_width", tools=TOOLS, x_range=p.x_range, y_range=Range1d(-1.0, 1.0),
               x_axis_label=f"stretch λ {DIMENSIONLESS}", y_axis_label="model − data (MPa)", title="residuals")
    _style(q)
    q.add_layout(Span(location=0, dimension="width", line_color="#888888", line_width=1))
    q.scatter("x", "y", source=res, color="color", size=3.5, alpha=0.8)
    return FitFigure(p, q, src, data, res, r)


def rms_figure() -> tuple[object, ColumnDataSource]:
    """Horizontal bars: each fitted model's overall RMS residual (shorter = closer to the data)."""
    src = ColumnDataSource({"model": [], "rms": [], "color": [], "label": []}, name="ns-fit-rms")
    p = figure(title="Which model fits these data best (RMS residual, all modes)", height=170,
               sizing_mode="stretch_width", tools="save", y_range=[], x_range=Range1d(0.0, 1.0),
               x_axis_label="RMS residual (MPa)")
    _style(p)
    p.hbar(y="model", right="rms", height=0.6, color="color", source=src)
    p.text(x="rms", y="model", text="label", source=src, text_font_size="8.5pt", x_offset=4, text_baseline="middle")
    return p, src


class FitPanel(pn.viewable.Viewer):
    """Fit choices and results for the store's current selection."""

    def __init__(self, state: DataState, messages: Messages, units: DisplayUnits | None = None,
                 network_state=None, **params):
        super().__init__(**params)
        self.state = s = state
        self.messages = messages
        #: messages of the buttons below the tables (explorer, report), shown right under them
        self.action_messages = Messages(area="fit-actions")
        self.units = units or DisplayUnits()
        self.network_state = network_state
        self.fit_models = pn.widgets.MultiChoice.from_param(
            s.param.fit_models, name="Models to fit", options={get_model(n).title: n for n in MODELS},
            css_classes=["ns-fit-models"], sizing_mode="stretch_width")
        self.residual = pn.widgets.RadioButtonGroup.from_param(s.param.residual, button_type="light")
        self.polymer = pn.widgets.Select.from_param(s.param.polymer, name="Polymer tested", width=130)
        self.f = pn.widgets.FloatInput.from_param(s.param.f, name="Functionality f", step=1.0, width=130)
        self.filler = pn.widgets.FloatInput.from_param(s.param.filler, name="Filler volume fraction φ", step=0.01,
                                                       width=170)
        self.table_model = pn.widgets.Select.from_param(s.param.table_model, name="Crosslink table from the fit of",
                                                        width=240)
        self.stress_unit = pn.widgets.RadioButtonGroup.from_param(self.units.param.stress, button_type="light",
                                                                  css_classes=["ns-stress-unit"])
        self.density_unit = pn.widgets.RadioButtonGroup.from_param(self.units.param.density, button_type="light",
                                                                   css_classes=["ns-density-unit"])
        # stretch as λ or as elongation (λ − 1)·100 % — a display choice like the stress unit (issue #21)
        self.stretch_unit = pn.widgets.RadioButtonGroup.from_param(self.units.param.stretch, button_type="light",
                                                                   css_classes=["ns-stretch-unit"])
        self.to_explorer = pn.widgets.Button(
            name="Draw this network in the explorer", button_type="primary", width=280,
            css_classes=["ns-to-explorer"], disabled=network_state is None,
            description="sets the explorer's polymer, filler and strand density to the 'affine, entanglement "
                        "share removed' row of the crosslink table")
        self.to_explorer.on_click(lambda e: self._send_to_explorer())
        self.dl_report = pn.widgets.FileDownload(
            callback=lambda: self._report_file(), filename="fit-report.html", label="Download fit report (HTML)",
            button_type="success", width=250, css_classes=["ns-fit-report"])
        #: the fit and residual figures are built when the tab is first shown (``show_figures``) or when code
        #: asks for ``figs``: a new session does not pay for a tab it has not opened
        self._figs: dict[str, FitFigure] | None = None
        self._rms = None
        #: SVG drawing for figures built from now on (the page's 'save as SVG' box sets it)
        self.svg = False
        self._figures_view = Deferred(self._figure_panes)
        self.params_html = html("", css_classes=["ns-param-table"])
        self.quality_html = html("", css_classes=["ns-fit-quality"])
        self.xlink_html = html("", css_classes=["ns-crosslinks"])
        self.warn_html = html("", css_classes=["ns-fit-warnings"])
        self.summary = html("", css_classes=["ns-fit-summary"])
        am = self.action_messages
        self._table = guarded(am, "table", "Crosslink table")(self._table)
        self._send_to_explorer = guarded(am, "table", "Explorer")(self._send_to_explorer)
        self._report_file = guarded(am, "report", "Fit report")(self._report_file)
        s.param.watch(lambda *e: self._table(), ["table_model", "polymer", "f", "filler"])
        self.units.param.watch(lambda *e: self.draw(), ["stress", "density", "stretch"])
        self._boxes = {}
        self._layout = self._build()

    # ----- figures, built on first use ------------------------------------------------------------------
    @property
    def figs(self) -> dict[str, FitFigure]:
        if self._figs is None:
            self._figs = {m.value: fit_figure(m.value, initial=self.state.fit_models) for m in MODES}
            self._rms = rms_figure()
            set_output_backend(self.built_figures(), self.svg)
            self._draw_figures()
        return self._figs

    @property
    def rms_fig(self):
        self.figs  # noqa: B018  (builds the figures when not yet built)
        return self._rms[0]

    @property
    def rms_src(self) -> ColumnDataSource:
        self.figs  # noqa: B018
        return self._rms[1]

    def built_figures(self) -> list:
        """Every Bokeh figure made so far (the page switches their backend)."""
        if self._figs is None:
            return []
        return [f for ff in self._figs.values() for f in (ff.fig, ff.resid_fig)] + [self._rms[0]]

    def show_figures(self):
        """The tab is on screen: build its figures (once) and put them in the layout."""
        self._figures_view.ensure()

    def _figure_panes(self):
        rows = []
        for mode in MODES:
            ff = self.figs[mode.value]
            box = pn.Column(pn.pane.Bokeh(ff.fig, sizing_mode="stretch_width"),
                            pn.pane.Bokeh(ff.resid_fig, sizing_mode="stretch_width"), sizing_mode="stretch_width",
                            visible=mode.value in self._data_modes())
            self._boxes[mode.value] = box
            rows.append(box)
        return [pn.Row(*rows, sizing_mode="stretch_width"), pn.pane.Bokeh(self.rms_fig, sizing_mode="stretch_width")]

    def _data_modes(self) -> set[str]:
        return {c.mode.value for c in self.state.selected_curves()}

    # ----- drawing --------------------------------------------------------------------------------------
    def draw(self):
        s = self.state
        pts = s.overlay_points()
        with pn.io.hold():
            if self._figs is not None:
                self._draw_figures()
            self.params_html.object = table_html(parameter_rows(s.results, self.units), "ns-params")
            self.quality_html.object = table_html(fit_quality_rows(s.results, self.units), "ns-quality")
            self.warn_html.object = warnings_html(grouped_warnings(s.warnings()))
            legend = "".join(
                f"<span class='ns-leg-item'><span class='ns-leg-line' style='background:{model_colour(n)}'></span>"
                f"{esc(r.title)} (G₀ = {sig(self.units.s(r.small_strain_modulus), 3)} {self.units.stress})</span>"
                for n, r in s.results.items())
            files = ", ".join(esc(n) for n in s.selected) or "none"
            self.summary.object = (f"<div class='ns-small'>Fitted to: {files} ({s.residual} residuals).</div>"
                                   f"<div class='ns-legend-box'>{legend}</div>" + data_legend_html(pts))
        self._table()

    def _draw_figures(self):
        s = self.state
        fc = s.fitted_curves()
        rp = s.residual_points()
        pts = s.overlay_points()
        shown = set(s.results)
        data_modes = self._data_modes()
        k = self.units.s(1e6)  # the state draws MPa; the plots follow the display unit
        unit = self.units.stress
        x = self.units.x  # stretch as shown: λ, or elongation (λ − 1)·100 % (the core's one conversion)
        with pn.io.hold():
            for mode in MODES:
                ff = self.figs[mode.value]
                cols = {n: (x(v) if n == "lam" else np.asarray(v) * k) for n, v in fc[mode.value].items()}
                ff.source.data = cols
                ff.resid.data = {**rp[mode.value], "x": list(x(rp[mode.value]["x"])),
                                 "y": [y * k for y in rp[mode.value]["y"]]}
                ff.data.data = {**pts[mode.value], "x": list(x(pts[mode.value]["x"])),
                                "y": [y * k for y in pts[mode.value]["y"]]}
                ff.fig.yaxis.axis_label = f"nominal stress P ({unit})"
                ff.resid_fig.yaxis.axis_label = f"model − data ({unit})"
                ff.fig.xaxis.axis_label = ff.resid_fig.xaxis.axis_label = self.units.x_label()
                set_visible_models(ff.lines, shown)
                # every axis follows the data just drawn (explicit ranges, reset target included): a 1.6 MPa
                # curve is not left on the 0–5 MPa axis of the previous fit
                set_range(ff.fig.x_range, x(1.0), float(cols["lam"][-1]))
                lo, hi = readable_range([cols[n] for n in shown if n in cols], ff.data.data["y"], floor=0.0)
                set_range(ff.fig.y_range, min(lo, 0.0), hi)
                set_range(ff.resid_fig.y_range, *residual_range(ff.resid.data["y"]))
                if mode.value in self._boxes:
                    self._boxes[mode.value].visible = mode.value in data_modes
            self._draw_rms()

    def _draw_rms(self):
        res = self.state.results
        names = sorted(res, key=lambda n: overall_rms(res[n]))
        vals = [self.units.s(overall_rms(res[n])) for n in names]
        titles = [res[n].title for n in names]
        fig, src = self._rms
        src.data = {"model": titles, "rms": vals, "color": [model_colour(n) for n in names],
                    "label": [sig(v, 3) for v in vals]}
        fig.y_range.factors = titles[::-1]
        fig.xaxis.axis_label = f"RMS residual ({self.units.stress})"
        finite = [v for v in vals if np.isfinite(v) and v > 0]
        set_range(fig.x_range, 0.0, 1.25 * max(finite) if finite else 1.0)
        fig.visible = bool(names)

    def _table(self):
        s = self.state
        t = s.crosslink_table()
        if t is None:
            self.xlink_html.object = "<div class='ns-small'>No fit yet: no crosslink table.</div>"
            return
        from network_models import get_polymer

        rho = get_polymer(s.polymer).density
        u = self.units
        ci = (f" (95 %: {sig(u.s(t.G_ci[0]), 3)} … {sig(u.s(t.G_ci[1]), 3)})" if t.G_ci else "")
        notes = "".join(f"<li>{esc(n)}</li>" for n in t.notes)
        self.xlink_html.object = (
            f"<h4 class='ns-h4'>Crosslink density from the {esc(s.results[s.table_model].title)} fit: "
            f"G₀ = {sig(u.s(t.G), 4)} {u.stress}{ci}</h4>"
            + table_html(crosslink_rows(t, u, rho), "ns-xlink-table")
            + f"<ul class='ns-small'>{notes}<li>Brackets: 95 % intervals from the fit.</li></ul>")

    # ----- actions --------------------------------------------------------------------------------------
    def _report_file(self):
        rep = fit_report(self.state, units=self.units)  # stretch as the session shows it
        self.action_messages.show("report", "Fit report written: it holds this fit with the polymer, f and filler set "
                                     "here.", "success")
        return io.BytesIO(rep.to_html().encode("utf-8"))

    def _send_to_explorer(self):
        """The explorer shows the fitted compound: its polymer, filler and the strand density of the
        'affine, entanglement share removed' row (the crosslink part; entanglements are added back by the
        explorer's tube models)."""
        t = self.state.crosslink_table()
        if t is None or self.network_state is None:
            raise ValueError("no fit yet: load and fit a curve first")
        # a filled compound: the explorer multiplies by the filler factor itself, so it takes the row with the
        # filler reinforcement removed (else X would count twice)
        key = "affine-no-entanglement-no-filler" if float(self.state.filler) > 0 else "affine-no-entanglement"
        row = next((r for r in t.rows if r.key == key), None)
        if row is None or row.nu is None or not np.isfinite(row.nu) or row.nu <= 0:
            raise ValueError("the fit leaves no positive crosslink part after removing the entanglement share, "
                             "so there is no strand density to draw; try another model")
        s = self.state
        self.network_state.param.update(polymer=s.polymer, filler=float(s.filler), f=float(s.f),
                                        entanglements=True, nu=float(row.nu))
        self.action_messages.show("table", f"The explorer now draws {s.polymer} with strand density "
                                    f"ν = {sig(row.nu, 4)} mol/m³ ({row.label}) from the "
                                    f"{s.results[s.table_model].title} fit.", "info")

    # ----- layout ---------------------------------------------------------------------------------------
    def _build(self):
        return pn.Column(
            html("<div class='ns-side-h'>Fit</div>"), self.fit_models,
            pn.Row(pn.Column(html("<div class='ns-small'>Residual</div>"), self.residual), self.polymer, self.f,
                   self.filler, self.table_model),
            pn.Row(html("<div class='ns-small'>Tables show stress in</div>", width=150), self.stress_unit,
                   html("<div class='ns-small'>and crosslink density in</div>", width=170), self.density_unit,
                   html("<div class='ns-small'>Stretch shown as</div>", width=110), self.stretch_unit),
            self.messages,
            pn.Column(self.summary, self._figures_view.slot, self.warn_html,
                      self.xlink_html, pn.Row(self.to_explorer, self.dl_report), self.action_messages,
                      html("<h4 class='ns-h4'>Fitted parameters (95 % intervals)</h4>"), self.params_html,
                      html("<h4 class='ns-h4'>Fit statistics</h4>"), self.quality_html,
                      css_classes=["ns-fit-results"], sizing_mode="stretch_width"),
            sizing_mode="stretch_width")

    def __panel__(self):
        return self._layout
