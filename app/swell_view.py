"""Swelling tab: a Flory–Rehner form, its result with the χ ± 0.05 band, beside the modulus-based estimate;
and a whole table of swelling results uploaded and computed in one go."""

from __future__ import annotations

import logging

import panel as pn

from .data_state import DataState
from .display_units import DisplayUnits
from .messages import Messages, guarded
from .state import sig
from .swell_state import SwellState, compound_chi
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
            labels = list(self._store_tests()) or s.sample_labels()
        except Exception:  # no sample set: no picker
            labels = []
        self.sample = pn.widgets.Select(name="Prefill from the sample set (invented)", options=["—", *labels],
                                        value=s.sample_key if s.sample_key in labels else "—", width=260,
                                        css_classes=["ns-swell-sample"])
        self.sample.param.watch(self._pick_sample, "value")
        #: the compound the specimen belongs to: its recipe and stated χ fill the form, and only its own fit is
        #: set beside the swelling result
        self.compound = pn.widgets.Select(name="Specimen of compound", options=self._compound_options(),
                                          width=190, css_classes=["ns-swell-compound"])
        self.compound.value = s.compound if s.compound in self.compound.options else "—"
        self.compound.param.watch(self._pick_compound, "value")
        self.fit_compound = pn.widgets.Button(name="Fit this compound's files", button_type="primary", width=260,
                                              visible=False, css_classes=["ns-swell-fit-compound"])
        self.fit_compound.on_click(lambda e: self._fit_compound())
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
        s.param.watch(self._on_compound, ["compound"])
        self._fit_compound = guarded(self.messages, "swelling", "Fit of the compound")(self._fit_compound)
        self.units.param.watch(lambda *e: (self._update(), self._draw_table()), ["density"])
        if data is not None:
            data.param.watch(lambda *e: self._update(), ["results", "table_model"])
            data.store.param.watch(lambda *e: self._draw_table(), ["compounds"])  # the session's file store
            data.store.param.watch(lambda *e: self._refresh_compounds(), ["compounds"])
        if s.compound:
            self._apply_compound(s.compound)
        self._update()

    # ----- which compound the specimen belongs to ---------------------------------------------------------
    def _compound_options(self) -> list[str]:
        names = list(self.data.compounds) if self.data is not None else []
        if self.state.compound and self.state.compound not in names:
            names.append(self.state.compound)
        return ["—", *names]

    def _refresh_compounds(self):
        self.compound.options = self._compound_options()
        tests = list(self._store_tests())
        if tests:
            keep = self.sample.value if self.sample.value in tests else "—"
            self.sample.options = ["—", *tests]
            self.sample.value = keep
        self._update()

    def _pick_compound(self, event):
        self.state.compound = "" if event.new in (None, "—") else event.new

    def _on_compound(self, event):
        name = event.new or ""
        if name and name not in self.compound.options:
            self.compound.options = self._compound_options()
        self.compound.value = name or "—"
        self._apply_compound(name)
        self._update()  # the comparison depends on the compound even when its recipe equals the form's

    def _info(self, name: str):
        return self.data.compounds.get(name) if (self.data is not None and name) else None

    def _apply_compound(self, name: str):
        """The form takes the compound's recipe (polymer, f, filler) and the χ stated for its swelling tests
        (the manifest's), so a sample-set specimen is computed as the set says; no stated χ → the table's."""
        info = self._info(name)
        if info is None:
            return
        s = self.state
        with pn.io.hold():
            rec = getattr(info, "recipe", None)  # the recipe's insoluble fraction F: Ellis–Welding (issue #21)
            s.param.update(**({"polymer": info.polymer} if info.polymer in s.param.polymer.objects else {}),
                           f=float(info.f), filler=float(info.filler), chi=compound_chi(info, s.solvent),
                           insoluble=None if rec is None else float(rec.insoluble_mass_fraction))

    def _fit_compound(self):
        name = self.state.compound
        files = [f.name for f in self.data.compound_files(name)] if self.data is not None else []
        if not files:
            raise ValueError(f"no test curves of {name} are loaded: add its files on 'Test data & fits'")
        self.data.selected = files
        self.messages.show("swelling", f"'Test data & fits' now fits {esc(name)}'s {len(files)} file(s).", "info")

    def _store_tests(self) -> dict:
        """label -> (compound, SwellingTest) for every swelling test the session's compounds hold (a manifest's,
        a reopened project's): the picker offers these, so their χ and recipe are the ones used."""
        out = {}
        for name, info in (self.data.compounds.items() if self.data is not None else ()):
            for i, t in enumerate(info.swelling):
                out[f"{name} {t.specimen or i + 1}".strip()] = (name, t)
        return out

    def _pick_sample(self, event):
        if not event.new or event.new == "—":
            return
        hit = self._store_tests().get(event.new)
        if hit is not None:
            guarded(self.messages, "swelling", "Swelling sample")(self._fill_from_test)(event.new, *hit)
        else:
            guarded(self.messages, "swelling", "Swelling sample")(self.state.load_sample)(label=event.new)

    def _fill_from_test(self, label: str, compound: str, t):
        """The form holds one of the session's swelling tests: its compound first (recipe and stated χ), then
        the test's masses (kg → g), solvent, temperature and its own χ when it states one."""
        from network_models.constants import ZERO_CELSIUS

        s = self.state
        s.compound = compound
        with pn.io.hold():
            changes = dict(dry_g=t.dry * 1000.0, swollen_g=t.swollen * 1000.0,
                           extracted_g=None if t.extracted is None else t.extracted * 1000.0,
                           sample_label=f"{label} (from the session's compounds)", sample_key=label)
            if t.solvent in s.param.solvent.objects:
                changes["solvent"] = t.solvent
            if t.temperature:
                changes["T_C"] = t.temperature - ZERO_CELSIUS
            if t.chi is not None:
                changes["chi"] = float(t.chi)
            s.param.update(**changes)

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
                        "note": f"{r['polymer']}, f = {r['f']:g}, φ = {r['filler']:g}, χ = {r['chi']:g} "
                                f"({r['chi_source']})"})
        self.table_html.object = (f"<h4 class='ns-h4'>Swelling table {esc(self.state.table_name)}: v_r = rubber "
                                  "volume fraction in the swollen gel</h4>" + table_html(out, "ns-swell-table-rows"))

    def _modulus_table(self):
        """The modulus-based crosslink table of the SAME compound as the specimen, with its basis; else
        (None, a sentence why there is none). Never another compound's fit."""
        self.fit_compound.visible = False
        if self.data is None:
            return None, "No test data in this session, so there is no modulus-based estimate to set beside this one."
        st, name = self.data, self.state.compound
        if not name:
            return None, ("Say which compound this specimen is ('Specimen of compound') to set its modulus-based "
                          "strand density beside it.")
        fitted = st.selected_compound()
        if fitted != name:
            has_files = bool(st.compound_files(name))
            self.fit_compound.visible = has_files
            now = (f"of {esc(fitted)}" if fitted else
                   "of several compounds at once" if st.selected else "of no files")
            todo = ("use the button below to fit its files there" if has_files else
                    f"load {esc(name)}'s test curves there")
            return None, (f"The fit on 'Test data &amp; fits' is {now}, not {esc(name)}: a swelling result is only "
                          f"set beside the modulus of its own compound ({todo}).")
        t = st.crosslink_table()
        if t is None:
            return None, f"No fit of {esc(name)} on 'Test data &amp; fits' yet."
        n = len(st.selected)
        basis = (f"{esc(name)}: one fit of the {esc(st.results[st.table_model].title)} model to its {n} "
                 f"file{'s' if n != 1 else ''} ({esc(st.residual)} residuals), {esc(st.polymer)}, f = {st.f:g}, "
                 f"φ = {st.filler:g}")
        return t, basis

    def _update(self):
        s = self.state
        cv = s.default_chi()
        stated = compound_chi(self._info(s.compound), s.solvent)
        own = ""
        if s.chi is not None and stated is not None and abs(s.chi - stated) < 1e-12:
            own = (f"χ = <b>{stated:g}</b> as stated for {_esc(s.compound)}'s swelling tests (the manifest); "
                   "the table's value follows for reference. ")
        elif s.chi is not None:
            own = f"χ = <b>{s.chi:g}</b> as typed. "
        self.chi_note.object = (
            "<div class='ns-small'>" + own + (
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
            self.compare.object = f"<div class='ns-small ns-swell-no-compare'>{what}</div>"
            return
        from network_models.swelling import compare_with_modulus

        comp = compare_with_modulus(est, t)
        du, rho = self.units.density, est.rho_polymer
        crow = [{"modulus-based row": c["modulus_row"],
                 f"ν from the modulus ({du})": sig(self.units.d(c["modulus_strand_density"], rho), 4),
                 f"ν from swelling, same assumption ({du})": sig(self.units.d(c["swelling_strand_density"], rho), 4),
                 "swelling / modulus": sig(c["ratio"], 3)} for c in comp]
        self.compare.object = (
            f"<h4 class='ns-h4'>Beside the modulus-based estimate of the same compound</h4>"
            f"<div class='ns-small ns-swell-basis'>Basis: {what}; swelling with χ = {est.chi.chi:g}, "
            f"{_esc(s.polymer)}, f = {s.f:g}, φ = {s.filler:g}.</div>"
            + table_html(crow, "ns-swell-compare-table")
            + "<div class='ns-small'>The two methods rarely agree exactly: swelling sees every elastically "
              "active strand including trapped entanglements differently, χ is uncertain, and filler restricts "
              "swelling. A ratio far from 1 is a reason to check χ, the extraction and the fit assumptions.</div>")

    def __panel__(self):
        return pn.Column(
            html("<div class='ns-small'>Equilibrium swelling in a good solvent: enter the masses of one "
                 "specimen. The result is the strand density ν under affine and phantom assumptions, with the "
                 "band for χ ± 0.05 (χ is the largest uncertainty).</div>"),
            pn.Row(pn.Column(self.compound, *self.widgets[:5]), pn.Column(*self.widgets[5:]),
                   pn.Column(self.sample, self.chi_note, sizing_mode="stretch_width"), sizing_mode="stretch_width"),
            self.messages, self.result, self.compare, self.fit_compound,
            html("<div class='ns-side-h'>A whole swelling table</div>"),
            html("<div class='ns-small'>Upload a table with one row per specimen — compound, specimen, dry mass (g), "
                 "swollen mass (g), extracted mass (g, optional), solvent, temperature (°C) — and every row is "
                 "computed at once, with each compound's polymer, f and filler from the session's compounds "
                 "(else the form's).</div>"),
            self.table_upload, self.table_html, sizing_mode="stretch_width", css_classes=["ns-swelling"])
