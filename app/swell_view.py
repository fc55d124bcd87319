"""Swelling tab: a Flory–Rehner form, its result with the χ ± 0.05 band, beside the modulus-based estimate."""

from __future__ import annotations

import html as _html
import logging

import pandas as pd
import panel as pn

from .data_state import SwellState
from .messages import Messages, guarded
from .state import sig
from .ui import html

log = logging.getLogger("netstretch.app")


def _esc(x) -> str:
    return _html.escape(str(x))


class SwellView(pn.viewable.Viewer):
    def __init__(self, network_state=None, messages: Messages | None = None, data_view=None, **params):
        super().__init__(**params)
        self.state = SwellState()
        self.network_state = network_state
        self.data_view = data_view
        self.messages = messages or Messages()
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
                                        value="—", width=260, css_classes=["ns-swell-sample"])
        self.sample.param.watch(self._pick_sample, "value")
        self.result = html("", css_classes=["ns-swell-result"])
        self.compare = html("", css_classes=["ns-swell-compare"])
        self.chi_note = html("", css_classes=["ns-chi-note"])
        self._update = guarded(self.messages, "swelling", "Swelling")(self._update)
        s.param.watch(lambda *e: self._update(),
                      ["dry_g", "swollen_g", "extracted_g", "solvent", "polymer", "chi", "f", "filler", "T_C"])
        if data_view is not None:
            data_view.state.param.watch(lambda *e: self._update(), ["results", "table_model"])
        self._update()

    def _pick_sample(self, event):
        if event.new and event.new != "—":
            guarded(self.messages, "swelling", "Swelling sample")(self.state.load_sample)(label=event.new)

    def _modulus_table(self):
        """The modulus-based crosslink table: from the current fit if there is one, else none."""
        if self.data_view is None:
            return None, ""
        st = self.data_view.state
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
            + (f"<br>Prefilled from {_esc(s.sample_label)}." if s.sample_label else "") + "</div>")
        try:
            est = s.estimate()
        except ValueError:
            self.result.object = "<div class='ns-small'>No swelling result yet.</div>"
            self.compare.object = ""
            raise
        rows = []
        for r in est.rows():
            lo, hi = r["strand_density_band"]
            jlo, jhi = r["junction_density_band"]
            band = f"{sig(hi, 3)} … {sig(lo, 3)}" if lo is not None and hi is not None else "—"
            jband = f"{sig(jhi, 3)} … {sig(jlo, 3)}" if jlo is not None and jhi is not None else "—"
            rows.append({"assumption": r["assumes"],
                         "strand density ν (mol/m³)": sig(r["strand_density"], 4),
                         "ν for χ ± 0.05": band,
                         "junction density μ_j = 2ν/f (mol/m³)": sig(r["junction_density"], 4),
                         "μ_j for χ ± 0.05": jband,
                         "M_c (g/mol)": sig(r["Mc"] * 1000.0, 4)})
        sol = f", soluble fraction {est.soluble_fraction * 100:.2g} %" if est.soluble_fraction is not None else ""
        notes = "".join(f"<li>{_esc(n)}</li>" for n in est.notes)
        self.result.object = (
            f"<h4 class='ns-h4'>Flory–Rehner result: rubber volume fraction in the swollen gel "
            f"φ = {est.phi:.4f}{sol}</h4>"
            + pd.DataFrame(rows).to_html(index=False, classes="ns-table ns-swell-table", border=0)
            + f"<ul class='ns-small'>{notes}</ul>")
        t, what = self._modulus_table()
        if t is None:
            self.compare.object = ("<div class='ns-small'>No fit in the 'Test data &amp; fits' tab yet, so there is "
                                   "no modulus-based estimate to set beside this one.</div>")
            return
        from network_models.swelling import compare_with_modulus

        comp = compare_with_modulus(est, t)
        crow = [{"modulus-based row": c["modulus_row"],
                 "ν from the modulus (mol/m³)": sig(c["modulus_strand_density"], 4),
                 "ν from swelling, same assumption (mol/m³)": sig(c["swelling_strand_density"], 4),
                 "swelling / modulus": sig(c["ratio"], 3)} for c in comp]
        self.compare.object = (
            f"<h4 class='ns-h4'>Beside the modulus-based estimate (from {_esc(what)})</h4>"
            + pd.DataFrame(crow).to_html(index=False, classes="ns-table ns-swell-compare-table", border=0)
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
            self.result, self.compare, sizing_mode="stretch_width", css_classes=["ns-swelling"])
