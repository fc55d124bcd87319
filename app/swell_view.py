"""Swelling tab: a Flory–Rehner form, its result with the χ ± 0.05 band, beside the modulus-based estimate;
and a whole table of swelling results uploaded and computed in one go."""

from __future__ import annotations

import logging

import panel as pn

from .data_state import DataState
from .display_units import DisplayUnits
from .messages import Messages, guarded
from .state import sig
from .swell_state import SwellState
from .tables import esc, swelling_rows, table_html
from .ui import html

log = logging.getLogger("netstretch.app")
_esc = esc


class SwellView(pn.viewable.Viewer):
    def __init__(self, state: SwellState | None = None, data: DataState | None = None,
                 units: DisplayUnits | None = None, **params):
        super().__init__(**params)
        self.state = state if state is not None else SwellState()
        self.data = data
        self.units = units or DisplayUnits()
        self.messages = Messages(area="swelling")
        s = self.state
        try:
            s.load_sample()
        except Exception as exc:  # no sample swelling table: the form starts empty
            log.info("no sample swelling data: %s", exc)
        num = dict(width=190)
        self.widgets = [
            pn.widgets.FloatInput.from_param(s.param.dry_g, name="Dry mass before swelling (g)", step=0.001,
                                             css_classes=["ns-swell-dry"], **num),
            pn.widgets.FloatInput.from_param(s.param.swollen_g, name="Swollen mass (g)", step=0.001,
                                             css_classes=["ns-swell-swollen"], **num),
            pn.widgets.FloatInput.from_param(s.param.extracted_g, name="Re-dried mass (g, optional)", step=0.001,
                                             **num),
            pn.widgets.Select.from_param(s.param.solvent, **num),
            pn.widgets.Select.from_param(s.param.polymer, **num),
            pn.widgets.FloatInput.from_param(s.param.chi, name="χ (blank: table value)", step=0.01, **num),
            pn.widgets.FloatInput.from_param(s.param.f, name="Functionality f", step=1.0, **num),
            pn.widgets.FloatInput.from_param(s.param.filler, name="Filler volume fraction φ", step=0.01, **num),
            pn.widgets.FloatInput.from_param(s.param.T_C, name="Test temperature (°C)", step=1.0, **num),
        ]
        try:
            labels = s.sample_labels()
        except Exception:  # no sample set: no picker
            labels = []
        self.sample = pn.widgets.Select(name="Prefill from the sample set (invented)", options=["—", *labels],
                                        value=s.sample_key if s.sample_key in labels else "—", width=260,
                                        css_classes=["ns-swell-sample"])
        self.sample.param.watch(self._pick_sample, "value")
        self.table_upload = pn.widgets.FileInput(accept=".csv,.tsv,.txt,.xlsx", css_classes=["ns-swell-upload"],
                                                 sizing_mode="stretch_width")
        self.table_upload.param.watch(self._on_table, "value")
        self.table_html = html("", css_classes=["ns-swell-table-result"])
        self.result = html("", css_classes=["ns-swell-result"])
        self.compare = html("", css_classes=["ns-swell-compare"])
        self.chi_note = html("", css_classes=["ns-chi-note"])
        self._update = guarded(self.messages, "swelling", "Swelling")(self._update)
        self._draw_table = guarded(self.messages, "swelling-table", "Swelling table")(self._draw_table)
        s.param.watch(lambda *e: self._update(),
                      ["dry_g", "swollen_g", "extracted_g", "solvent", "polymer", "chi", "f", "filler", "T_C"])
        s.param.watch(lambda *e: self._draw_table(), ["table_rows", "chi"])
        self.units.param.watch(lambda *e: (self._update(), self._draw_table()), ["density"])
        if data is not None:
            data.param.watch(lambda *e: self._update(), ["results", "table_model"])
            data.param.watch(lambda *e: self._draw_table(), ["compounds"])
        self._update()

    def _pick_sample(self, event):
        if event.new and event.new != "—":
            guarded(self.messages, "swelling", "Swelling sample")(self.state.load_sample)(label=event.new)

    def _on_table(self, event):
        if not event.new:
            return

        def load():
            name = self.table_upload.filename or "swelling.csv"
            self.state.load_table(event.new, name)
            self.messages.show("swelling-upload", f"{esc(name)}: {len(self.state.table_rows)} swelling row(s) "
                                                  "computed below.", "success")

        guarded(self.messages, "swelling-upload", "Swelling table")(load)()

    def _draw_table(self):
        rows = self.state.table_estimates(self.data.compounds if self.data is not None else None)
        if not rows:
            self.table_html.object = ""
            return
        du = self.units.density
        out = []
        for r in rows:
            if "problem" in r:
                out.append({"compound": r["compound"], "specimen": r["specimen"], "v_r (–)": "—",
                            f"ν affine ({du})": "—", f"ν phantom ({du})": "—", "note": r["problem"]})
                continue
            out.append({"compound": r["compound"], "specimen": r["specimen"], "v_r (–)": f"{r['v_r']:.4f}",
                        f"ν affine ({du})": sig(self.units.d(r["nu_affine"], r["rho"]), 4),
                        f"ν phantom ({du})": sig(self.units.d(r["nu_phantom"], r["rho"]), 4),
                        "note": f"{r['polymer']}, f = {r['f']:g}, φ = {r['filler']:g}"})
        self.table_html.object = (f"<h4 class='ns-h4'>Swelling table {esc(self.state.table_name)}: v_r = rubber "
                                  "volume fraction in the swollen gel</h4>" + table_html(out, "ns-swell-table-rows"))

    def _modulus_table(self):
        """The modulus-based crosslink table: from the current fit if there is one, else none."""
        if self.data is None:
            return None, ""
        st = self.data
        t = st.crosslink_table()
        if t is None:
            return None, ""
        return t, f"the {st.results[st.table_model].title} fit of {', '.join(st.selected)}"

    def _update(self):
        s = self.state
        cv = s.default_chi()
        self.chi_note.object = (
            "<div class='ns-small'>" + (
                f"Table χ for {_esc(s.polymer)}–{_esc(s.solvent)}: <b>{cv.chi:g}</b> [{_esc(cv.status)}] — "
                f"{_esc(cv.source)}" + (f" ({_esc(cv.note)})" if cv.note else "")
                if cv is not None else f"No table χ for {_esc(s.polymer)}–{_esc(s.solvent)}: type one.")
            + "</div>")
        try:
            est = s.estimate()
        except ValueError:
            self.result.object = "<div class='ns-small'>No swelling result yet.</div>"
            self.compare.object = ""
            raise
        rows = swelling_rows(est, self.units, est.rho_polymer)
        sol = f", soluble fraction {est.soluble_fraction * 100:.2g} %" if est.soluble_fraction is not None else ""
        notes = "".join(f"<li>{_esc(n)}</li>" for n in est.notes)
        self.result.object = (
            f"<h4 class='ns-h4'>Flory–Rehner result: rubber volume fraction in the swollen gel "
            f"v_r = {est.phi:.4f}{sol}</h4>"
            + table_html(rows, "ns-swell-table")
            + f"<ul class='ns-small'>{notes}</ul>")
        t, what = self._modulus_table()
        if t is None:
            self.compare.object = ("<div class='ns-small'>No fit in the 'Test data &amp; fits' tab yet, so there is "
                                   "no modulus-based estimate to set beside this one.</div>")
            return
        from network_models.swelling import compare_with_modulus

        comp = compare_with_modulus(est, t)
        du, rho = self.units.density, est.rho_polymer
        crow = [{"modulus-based row": c["modulus_row"],
                 f"ν from the modulus ({du})": sig(self.units.d(c["modulus_strand_density"], rho), 4),
                 f"ν from swelling, same assumption ({du})": sig(self.units.d(c["swelling_strand_density"], rho), 4),
                 "swelling / modulus": sig(c["ratio"], 3)} for c in comp]
        self.compare.object = (
            f"<h4 class='ns-h4'>Beside the modulus-based estimate (from {_esc(what)})</h4>"
            + table_html(crow, "ns-swell-compare-table")
            + "<div class='ns-small'>The two methods rarely agree exactly: swelling sees every elastically "
              "active strand including trapped entanglements differently, χ is uncertain, and filler restricts "
              "swelling. A ratio far from 1 is a reason to check χ, the extraction and the fit assumptions.</div>")

    def __panel__(self):
        return pn.Column(
            html("<div class='ns-small'>Equilibrium swelling in a good solvent: enter the masses of one "
                 "specimen. The result is the strand density ν under affine and phantom assumptions, with the "
                 "band for χ ± 0.05 (χ is the largest uncertainty).</div>"),
            pn.Row(pn.Column(*self.widgets[:5]), pn.Column(*self.widgets[5:]),
                   pn.Column(self.sample, self.chi_note, sizing_mode="stretch_width"), sizing_mode="stretch_width"),
            self.messages, self.result, self.compare,
            html("<div class='ns-side-h'>A whole swelling table</div>"),
            html("<div class='ns-small'>Upload a table with one row per specimen — compound, specimen, dry mass (g), "
                 "swollen mass (g), extracted mass (g, optional), solvent, temperature (°C) — and every row is "
                 "computed at once, with each compound's polymer, f and filler from the session's compounds "
                 "(else the form's).</div>"),
            self.table_upload, self.table_html, sizing_mode="stretch_width", css_classes=["ns-swelling"])
