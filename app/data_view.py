"""Test data and fits: upload, preview, per-file settings, fitted curves with residuals, parameter table
with 95 % intervals, crosslink-density assumption table and warnings in plain words."""

from __future__ import annotations

import html as _html
import logging

import numpy as np
import pandas as pd
import panel as pn
from bokeh.models import ColumnDataSource, Range1d, Span
from bokeh.plotting import figure

from network_models import MODELS, MODES, get_model

from .data_state import MAX_UPLOAD_BYTES, DataState
from .messages import Messages, guarded
from .plots import TOOLS, _style, empty_columns, model_lines, set_visible_models
from .state import model_colour, sig
from .ui import html

log = logging.getLogger("netstretch.app")


def _esc(x) -> str:
    return _html.escape(str(x))


def _table_html(rows: list[dict], cls: str) -> str:
    if not rows:
        return ""
    return pd.DataFrame(rows).to_html(index=False, classes=f"ns-table {cls}", border=0, escape=True)


def _fit_figure(mode: str, initial=()):
    src = ColumnDataSource(empty_columns("lam"), name=f"ns-fit-{mode}")
    data = ColumnDataSource({"x": [], "y": [], "color": [], "file": []}, name=f"ns-fitdata-{mode}")
    res = ColumnDataSource({"x": [], "y": [], "color": [], "model": []}, name=f"ns-resid-{mode}")
    p = figure(title=f"{mode.capitalize()}: data and fitted models", height=280, sizing_mode="stretch_width",
               tools=TOOLS, x_axis_label="stretch λ (1)", y_axis_label="nominal stress P (MPa)",
               x_range=Range1d(1.0, 3.0))
    _style(p)
    p.scatter("x", "y", source=data, fill_color="color", line_color="white", line_width=0.5, size=5.5, alpha=0.85)
    r = model_lines(p, src, "lam", initial)
    q = figure(height=150, sizing_mode="stretch_width", tools=TOOLS, x_range=p.x_range,
               x_axis_label="stretch λ (1)", y_axis_label="model − data (MPa)", title="residuals")
    _style(q)
    q.add_layout(Span(location=0, dimension="width", line_color="#888888", line_width=1))
    q.scatter("x", "y", source=res, color="color", size=3.5, alpha=0.8)
    return p, q, src, data, res, r


class DataView(pn.viewable.Viewer):
    """The 'Test data & fits' tab of one session."""

    def __init__(self, network_state=None, explorer=None, messages: Messages | None = None,
                 load_samples: bool = True, **params):
        super().__init__(**params)
        self.state = DataState()
        self.explorer = explorer
        self.messages = messages or Messages()
        self._seen: set[tuple[str, int]] = set()
        s = self.state

        # upload: drag-and-drop area (served from Panel's bundled files) for several files at once
        if hasattr(pn.widgets, "FileDropper"):
            self.upload = pn.widgets.FileDropper(
                multiple=True, max_file_size=f"{MAX_UPLOAD_BYTES // 1_000_000}MB", css_classes=["ns-upload"],
                sizing_mode="stretch_width", height=110, layout="compact")
        else:
            self.upload = pn.widgets.FileInput(multiple=True, css_classes=["ns-upload"], sizing_mode="stretch_width")
        self.upload.param.watch(self._on_upload, "value")

        self.selected = pn.widgets.CheckBoxGroup.from_param(s.param.selected, inline=False,
                                                            css_classes=["ns-file-select"])
        self.files_html = html("", css_classes=["ns-files"])
        # per-file settings
        self.edit_file = pn.widgets.Select(name="File", options=[], width=260, css_classes=["ns-edit-file"])
        self.edit_mode = pn.widgets.Select(name="Test mode", options=[m.value for m in MODES], width=140)
        self.edit_gauge = pn.widgets.FloatInput(name="Gauge length (mm)", value=None, width=140, start=0)
        self.edit_width = pn.widgets.FloatInput(name="Width (mm)", value=None, width=120, start=0)
        self.edit_thick = pn.widgets.FloatInput(name="Thickness (mm)", value=None, width=120, start=0)
        self.apply = pn.widgets.Button(name="Re-read with these settings", button_type="primary", width=220)
        self.remove = pn.widgets.Button(name="Remove file", button_type="light", width=120)
        self.preview = html("", css_classes=["ns-preview"])
        self.edit_file.param.watch(lambda *e: self._show_file(), "value")
        self.apply.on_click(lambda e: self._apply())
        self.remove.on_click(lambda e: self._remove())

        # fit choices
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
        self.network_state = network_state
        self.to_explorer = pn.widgets.Button(
            name="Draw this network in the explorer", button_type="primary", width=280,
            css_classes=["ns-to-explorer"], disabled=network_state is None,
            description="sets the explorer's polymer, filler and strand density to the 'affine, entanglement "
                        "share removed' row of the crosslink table")
        self.to_explorer.on_click(lambda e: self._send_to_explorer())

        # results
        self.figs = {m.value: _fit_figure(m.value, initial=s.fit_models) for m in MODES}
        self.params_html = html("", css_classes=["ns-param-table"])
        self.xlink_html = html("", css_classes=["ns-crosslinks"])
        self.warn_html = html("", css_classes=["ns-fit-warnings"])
        self.summary = html("", css_classes=["ns-fit-summary"])
        self.scenario = html("", css_classes=["ns-scenario"])

        self._refit = guarded(self.messages, "fit", "Fit")(self._refit)
        self._apply = guarded(self.messages, "file", "File settings")(self._apply)
        self._remove = guarded(self.messages, "file", "Remove file")(self._remove)
        self._show_file = guarded(self.messages, "file", "Preview")(self._show_file)
        self._table = guarded(self.messages, "table", "Crosslink table")(self._table)
        self._send_to_explorer = guarded(self.messages, "table", "Explorer")(self._send_to_explorer)
        s.param.watch(lambda *e: self._refit(), ["selected", "fit_models", "residual"])
        s.param.watch(lambda *e: self._files_changed(), ["files"])
        s.param.watch(lambda *e: self._table(), ["table_model", "polymer", "f", "filler"])

        self._built = self._build()
        if load_samples:
            try:
                problems = s.load_samples()
                if problems:
                    self.messages.show("samples", "Some sample files could not be read: " + " · ".join(problems))
            except Exception as exc:  # sample sets missing or unreadable: the app still works
                log.exception("sample sets")
                self.messages.show("samples", f"The bundled sample sets could not be loaded ({exc}); "
                                              "upload your own files instead.", "secondary")
        self._files_changed()
        self._refit()

    # ----- callbacks ---------------------------------------------------------------------------
    def _on_upload(self, event):
        value = event.new
        if not value:
            return
        if isinstance(value, dict):
            items = list(value.items())
        else:  # FileInput(multiple=True): lists of bytes and names
            names = self.upload.filename or []
            vals = value if isinstance(value, list) else [value]
            names = names if isinstance(names, list) else [names]
            items = list(zip(names, vals, strict=False))
        loaded, problems = [], []
        for name, data in items:
            if isinstance(data, str):
                data = data.encode("utf-8")
            key = (str(name), len(data or b""))
            if key in self._seen:
                continue
            self._seen.add(key)
            try:
                loaded.append(self.state.add_upload(name, data))
            except ValueError as exc:
                problems.append(str(exc))
            except Exception as exc:
                log.exception("upload %s", name)
                problems.append(f"{name}: the file could not be read ({type(exc).__name__}); check that it is a "
                                "CSV/TSV/TXT or .xlsx table of stretch (or strain/extension) and stress (or force)")
        if problems:
            text = " · ".join(_esc(p) for p in problems)
            if loaded:
                names = ", ".join(_esc(f.name) for f in loaded)
                self.messages.show("upload", f"**Some files were not used:** {text} — {names} loaded and fitted.",
                                   "warning")
            else:
                self.messages.show("upload", f"**Upload not used:** {text} — the data loaded before are kept.",
                                   "warning")
        else:
            self.messages.clear("upload")
        if loaded:
            if self.network_state is not None:  # an upload says nothing of its recipe: start from the explorer's
                self.state.param.update(polymer=self.network_state.polymer, f=float(self.network_state.f),
                                        filler=float(self.network_state.filler))
            self.state.accept_uploads(loaded)
            self.edit_file.value = loaded[-1].name

    def _files_changed(self):
        s = self.state
        names = [f.name for f in s.files]
        self.edit_file.options = names
        if self.edit_file.value not in names and names:
            self.edit_file.value = names[0]
        rows = []
        for f in s.files:
            rows.append({"file": f.name, "set": f.group, "modes": ", ".join(f.modes), "curves": len(f.curves),
                         "points": f.n_points, "notes": "; ".join(f.notices()) or "—"})
        self.files_html.object = _table_html(rows, "ns-file-table")
        if s.manifest_title:
            self.scenario.object = (f"<div class='ns-small'><b>Sample sets:</b> {_esc(s.manifest_title)}. "
                                    f"{_esc(s.manifest_note)}.</div>")
        self._show_file()
        self._overlay()

    def _show_file(self):
        name = self.edit_file.value
        if not name:
            self.preview.object = "<div class='ns-small'>No file loaded.</div>"
            return
        f = self.state.get(name)
        g = f.geometry_mm()
        self.edit_mode.value = f.options.get("mode", f.detected_mode)
        self.edit_gauge.value = g["gauge_length"]
        self.edit_width.value = g["width"]
        self.edit_thick.value = g["thickness"]
        meta = f.curves[0].metadata if f.curves else {}
        cols = meta.get("columns", {})
        units = meta.get("units", {})
        det = ", ".join(f"{k}: '{_esc(v)}'" + (f" [{_esc(units.get(k))}]" if units.get(k) else "")
                        for k, v in cols.items())
        notes = "".join(f"<li>{_esc(n)}</li>" for n in f.notices())
        self.preview.object = (
            f"<div class='ns-small'><b>{_esc(name)}</b> — detected mode <b>{_esc(f.detected_mode)}</b>; "
            f"columns {det or '—'}; {len(f.curves)} curve(s), {f.n_points} points.</div>"
            + (f"<ul class='ns-small'>{notes}</ul>" if notes else "")
            + _table_html(self.state.preview_rows(name, 4), "ns-preview-table"))

    def _apply(self):
        name = self.edit_file.value
        if not name:
            raise ValueError("load a file first")
        self.state.set_options(name, self.edit_mode.value, self.edit_gauge.value, self.edit_width.value,
                               self.edit_thick.value)
        self._refit()

    def _remove(self):
        if self.edit_file.value:
            self.state.remove(self.edit_file.value)

    def _overlay(self):
        pts = self.state.overlay_points()
        if self.explorer is not None:
            self.explorer.set_data_overlay(pts)
        for mode in MODES:
            self.figs[mode.value][3].data = pts[mode.value]

    def _refit(self):
        s = self.state
        self._overlay()
        try:
            problems = s.run_fit()
        finally:
            self._draw()
        if problems:
            text = " · ".join(_esc(p) for p in problems)
            self.messages.show("fit-models", f"**Some models were not fitted:** {text}",
                               "secondary")
        else:
            self.messages.clear("fit-models")

    def _draw(self):
        s = self.state
        fc = s.fitted_curves()
        rp = s.residual_points()
        shown = set(s.results)
        data_modes = {c.mode.value for c in s.selected_curves()}
        with pn.io.hold():
            for mode in MODES:
                p, q, src, data, res, r = self.figs[mode.value]
                cols = fc[mode.value]
                src.data = cols
                res.data = rp[mode.value]
                set_visible_models(r, shown)
                hi = float(cols["lam"][-1])
                p.x_range.start, p.x_range.end = 1.0, hi
                self._figure_box[mode.value].visible = mode.value in data_modes
            self.params_html.object = _table_html(s.parameter_rows(), "ns-params")
            warns = s.warnings()
            self.warn_html.object = (
                "<div class='ns-small'><b>Warnings in plain words</b><ul>"
                + "".join(f"<li>{_esc(w)}</li>" for w in warns) + "</ul></div>") if warns else (
                "<div class='ns-small ns-ok'>No warnings from the fits.</div>")
            legend = "".join(
                f"<span class='ns-leg-item'><span class='ns-leg-line' style='background:{model_colour(n)}'></span>"
                f"{_esc(r.title)} (G₀ = {r.small_strain_modulus / 1e6:.3g} MPa)</span>" for n, r in s.results.items())
            files = ", ".join(_esc(n) for n in s.selected) or "none"
            self.summary.object = (f"<div class='ns-small'>Fitted to: {files} ({s.residual} residuals).</div>"
                                   f"<div class='ns-legend-box'>{legend}</div>")
        self._table()

    def _table(self):
        t = self.state.crosslink_table()
        if t is None:
            self.xlink_html.object = "<div class='ns-small'>No fit yet: no crosslink table.</div>"
            return
        rows = []
        for r in t.rows:
            def num(v, scale=1.0, d=4):
                return "—" if v is None or not np.isfinite(v) else sig(v * scale, d)

            def ci(c, scale=1.0):
                if not c or c[0] is None or c[1] is None or not (np.isfinite(c[0]) and np.isfinite(c[1])):
                    return ""
                return f" ({sig(c[0] * scale, 3)} … {sig(c[1] * scale, 3)})"

            rows.append({
                "assumption": r.label,
                "strand density ν (mol/m³)": num(r.nu) + ci(r.nu_ci),
                "junction density μ_j = 2ν/f (mol/m³)": num(r.junction_density) + ci(r.junction_ci),
                "M_c (g/mol)": num(r.Mc, 1000.0) + ci(r.Mc_ci, 1000.0),
                "N": num(r.N, 1.0, 3),
                "assumes": r.assumes + (f" — {r.note}" if r.note else ""),
            })
        notes = "".join(f"<li>{_esc(n)}</li>" for n in t.notes)
        self.xlink_html.object = (
            f"<h4 class='ns-h4'>Crosslink density from the {_esc(self.state.results[self.state.table_model].title)} "
            f"fit: G₀ = {t.G / 1e6:.4g} MPa"
            + (f" (95 %: {sig(t.G_ci[0] / 1e6, 3)} … {sig(t.G_ci[1] / 1e6, 3)})" if t.G_ci else "") + "</h4>"
            + _table_html(rows, "ns-xlink-table")
            + f"<ul class='ns-small'>{notes}<li>Brackets: 95 % intervals from the fit.</li></ul>")

    def _send_to_explorer(self):
        """The explorer shows the fitted compound: its polymer, filler and the strand density of the
        'affine, entanglement share removed' row (the crosslink part; entanglements are added back by the
        explorer's tube models)."""
        t = self.state.crosslink_table()
        if t is None or self.network_state is None:
            raise ValueError("no fit yet: load and fit a curve first")
        row = next((r for r in t.rows if r.key == "affine-no-entanglement"), None)
        if row is None or row.nu is None or not np.isfinite(row.nu) or row.nu <= 0:
            raise ValueError("the fit leaves no positive crosslink part after removing the entanglement share, "
                             "so there is no strand density to draw; try another model")
        ns = self.network_state
        ns.param.update(polymer=self.state.polymer, filler=float(self.state.filler), f=float(self.state.f),
                        entanglements=True, nu=float(row.nu))
        self.messages.show("table", f"The explorer now draws {self.state.polymer} with strand density "
                                    f"ν = {sig(row.nu, 4)} mol/m³ (affine, entanglement share removed) from the "
                                    f"{self.state.results[self.state.table_model].title} fit.", "info")

    # ----- layout ---------------------------------------------------------------------------------
    def __panel__(self):
        return self._built

    def _build(self):
        fit_rows = []
        self._figure_box = {}
        for mode in MODES:
            p, q, *_ = self.figs[mode.value]
            box = pn.Column(pn.pane.Bokeh(p, sizing_mode="stretch_width"),
                            pn.pane.Bokeh(q, sizing_mode="stretch_width"),
                            sizing_mode="stretch_width")
            self._figure_box[mode.value] = box
            fit_rows.append(box)
        return pn.Column(
            self.scenario,
            pn.Row(
                pn.Column(html("<div class='ns-side-h'>Load test files</div>"), self.upload,
                          html("<div class='ns-small'>Drop or choose CSV, TSV, TXT or .xlsx files (several at once, "
                               f"up to {MAX_UPLOAD_BYTES // 1_000_000} MB each). Columns: stretch, strain or "
                               "extension, and stress or force, with units in the header.</div>"),
                          html("<div class='ns-side-h'>Files in the fit</div>"), self.selected,
                          sizing_mode="stretch_width"),
                pn.Column(html("<div class='ns-side-h'>Per-file settings and preview</div>"),
                          pn.Row(self.edit_file, self.edit_mode),
                          pn.Row(self.edit_gauge, self.edit_width, self.edit_thick),
                          pn.Row(self.apply, self.remove), self.preview, sizing_mode="stretch_width"),
                sizing_mode="stretch_width"),
            self.files_html,
            html("<div class='ns-side-h'>Fit</div>"),
            self.fit_models,
            pn.Row(pn.Column(html("<div class='ns-small'>Residual</div>"), self.residual), self.polymer, self.f,
                   self.filler, self.table_model),
            pn.Column(self.summary, pn.Row(*fit_rows, sizing_mode="stretch_width"), self.warn_html,
                      self.xlink_html, self.to_explorer,
                      html("<h4 class='ns-h4'>Fitted parameters (95 % intervals)</h4>"),
                      self.params_html, css_classes=["ns-fit-results"], sizing_mode="stretch_width"),
            sizing_mode="stretch_width",
        )
