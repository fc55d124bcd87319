"""The app's Compare tab: choose compounds (bundled sample set or uploads), a baseline, a model and a service
temperature; see the comparison table and plots; download the review report (HTML) with its CSV and JSON.

``CompareView(messages=None, load_samples=True)`` is a ``pn.viewable.Viewer``; ``app.main`` mounts it as
its own tab.  State and logic live in :class:`CompareState` (param only, no Panel); the numbers, tables and
SVG plots come from ``network_models.compare`` and ``network_models.report`` so the tab, the downloaded
report and ``netstretch report`` agree.
"""

from __future__ import annotations

import html as _html
import io
import logging
from pathlib import Path

import panel as pn
import param

from network_models.compare import Comparison
from network_models.compounds import Compound
from network_models.models import MODELS, get_model
from network_models.report import CSS as REPORT_CSS
from network_models.report import Report

from . import shared  # process-level read-only sample cache (app/shared.py)
from .messages import Messages, guarded
from .ui import html

log = logging.getLogger("netstretch.app")

#: upload cap for one file (uploads travel in one websocket message)
MAX_UPLOAD_BYTES = 20 * 1024 * 1024
DEFAULT_MODEL = "extended-tube"


class CompareState(param.Parameterized):
    """Compounds of one session, the comparison choices and the last comparison (no Panel here)."""

    compounds = param.Dict(default={}, doc="name -> Compound")
    chosen = param.ListSelector(default=[], objects=[], label="Compounds to compare")
    baseline = param.Selector(default=None, objects=[None], allow_None=True, label="Baseline")
    model = param.Selector(default=DEFAULT_MODEL, objects=list(MODELS), label="Model fitted to every compound")
    service_C = param.Number(default=80.0, bounds=(-60.0, 250.0), label="Service temperature (°C)")
    title = param.String(default="Compound design review", label="Report title")
    purpose = param.String(default="", label="Purpose of the review (one line)")
    comparison = param.Parameter(default=None, doc="the last Comparison")
    scenario = param.String(default="")

    def _set(self, comps: dict, chosen=None, baseline=None):
        names = list(comps)
        self.param.chosen.objects = names
        self.param.baseline.objects = [None, *names]
        with param.parameterized.batch_call_watchers(self):
            self.compounds = comps
            self.chosen = [n for n in (chosen if chosen is not None else self.chosen) if n in names]
            b = baseline if baseline in names else (self.baseline if self.baseline in names else None)
            self.baseline = b

    def load_samples(self, path=None):
        from network_models.testdata import SAMPLE_MANIFEST

        man = shared.sample_manifest(path or SAMPLE_MANIFEST)  # read once per server process (app/shared.py)
        comps = dict(self.compounds)
        comps.update({c.name: c for c in man.compounds})
        self.scenario = man.title
        if man.title and self.title == self.param.title.default:
            self.title = man.title
        self._set(comps, chosen=[c.name for c in man.compounds], baseline=man.baseline)

    def add_uploads(self, name: str, files: list[tuple[str, bytes]], mode: str | None = None, polymer="NR",
                    f: float = 4.0, notes: str = "") -> Compound:
        """A compound from uploaded files (filename, bytes).  Raises ValueError with a sentence."""
        from network_models.testdata import read_curves_bytes

        name = (name or "").strip()
        if not name:
            raise ValueError("give the new compound a name before adding its files")
        if name in self.compounds:
            raise ValueError(f"there is already a compound called {name!r}; choose another name")
        if not files:
            raise ValueError("choose one or more test files for the new compound first")
        curves = []
        for fn, data in files:
            if not data:
                raise ValueError(f"{fn}: the file is empty")
            if len(data) > MAX_UPLOAD_BYTES:
                raise ValueError(f"{fn}: {len(data) / 1e6:.1f} MB is over the {MAX_UPLOAD_BYTES / 1e6:.0f} MB "
                                 "upload limit; export only the test curves")
            opts = {"mode": mode} if mode else {}
            curves.extend(read_curves_bytes(bytes(data), Path(fn).name, **opts))
        comp = Compound(name, curves, polymer=polymer, f=f, notes=notes, metadata={"source": "uploaded"})
        comps = dict(self.compounds)
        comps[name] = comp
        self._set(comps, chosen=[*self.chosen, name])
        return comp

    def run(self) -> Comparison:
        if not self.chosen:
            raise ValueError("choose at least one compound to compare")
        comps = [self.compounds[n] for n in self.chosen]
        base = self.baseline if self.baseline in self.chosen else None
        cmp = shared.compare(comps, model=self.model, baseline=base, service_temperature=self.service_C + 273.15)
        self.comparison = cmp
        return cmp

    def report(self) -> Report:
        if self.comparison is None:
            raise ValueError("press Compare first: there is no comparison to put in a report yet")
        return Report(self.comparison, title=self.title, purpose=self.purpose)


class CompareView(pn.viewable.Viewer):
    """The Compare tab of one session."""

    def __init__(self, messages: Messages | None = None, load_samples: bool = True, **params):
        super().__init__(**params)
        self.messages = messages or Messages()
        self.state = s = CompareState()
        self.chosen = pn.widgets.MultiChoice.from_param(s.param.chosen, sizing_mode="stretch_width",
                                                        css_classes=["ns-cmp-chosen"])
        self.baseline = pn.widgets.Select.from_param(s.param.baseline, width=200, css_classes=["ns-cmp-baseline"])
        self.model = pn.widgets.Select.from_param(
            s.param.model, options={get_model(n).title: n for n in MODELS}, width=260, css_classes=["ns-cmp-model"])
        self.service = pn.widgets.FloatInput.from_param(s.param.service_C, step=5.0, width=170,
                                                        css_classes=["ns-cmp-service"])
        self.title = pn.widgets.TextInput.from_param(s.param.title, sizing_mode="stretch_width")
        self.purpose = pn.widgets.TextInput.from_param(s.param.purpose, sizing_mode="stretch_width",
                                                       placeholder="e.g. choose the cure dose for the mount")
        self.run_btn = pn.widgets.Button(name="Compare", button_type="primary", width=140,
                                         css_classes=["ns-cmp-run"])
        self.run_btn.on_click(lambda e: self._run())
        # new compound from uploads
        self.new_name = pn.widgets.TextInput(name="New compound name", width=200, placeholder="e.g. Trial 7")
        self.new_mode = pn.widgets.Select(name="Test mode (if the files do not say)",
                                          options=["from the file", "uniaxial", "planar", "equibiaxial"], width=220)
        self.upload = pn.widgets.FileInput(multiple=True, sizing_mode="stretch_width", css_classes=["ns-cmp-upload"])
        self.add_btn = pn.widgets.Button(name="Add compound", button_type="light", width=140)
        self.add_btn.on_click(lambda e: self._add())
        # downloads (built on click, from the last comparison)
        self.dl_html = pn.widgets.FileDownload(callback=lambda: self._file("html"), filename="review.html",
                                               label="Download report (HTML)", button_type="success", width=230,
                                               css_classes=["ns-cmp-dl-html"])
        self.dl_csv = pn.widgets.FileDownload(callback=lambda: self._file("csv"), filename="review.csv",
                                              label="CSV", width=90, css_classes=["ns-cmp-dl-csv"])
        self.dl_json = pn.widgets.FileDownload(callback=lambda: self._file("json"), filename="review.json",
                                               label="JSON", width=90, css_classes=["ns-cmp-dl-json"])
        # results (panes created once, their .object replaced)
        self.summary = html("", css_classes=["ns-cmp-summary"])
        self.table = html("", css_classes=["ns-cmp-table"])
        self.plots = html("", css_classes=["ns-cmp-plots"])
        self.details = html("", css_classes=["ns-cmp-details"])
        self._run = guarded(self.messages, "compare", "Compare")(self._run)
        self._add = guarded(self.messages, "compare-upload", "New compound")(self._add)
        self._file = guarded(self.messages, "compare-download", "Download")(self._file)
        self._layout = self._build()
        if load_samples:
            try:
                s.load_samples()
            except Exception as exc:  # the tab still works with uploads
                log.exception("sample sets for compare")
                self.messages.show("compare-samples", f"The bundled sample set could not be loaded ({exc}); "
                                                      "add compounds from your own files.", "secondary")
            else:
                self._run()

    # ----- callbacks ------------------------------------------------------------------------------
    def _run(self):
        self.run_btn.loading = True
        try:
            cmp = self.state.run()
        finally:
            self.run_btn.loading = False
        rep = self.state.report()
        style = f"<style>{REPORT_CSS}</style>"
        self.summary.object = style + rep.section_html("summary")
        self.table.object = style + rep.section_html("comparison")
        self.plots.object = style + rep.section_html("plots")
        self.details.object = style + "".join(rep.section_html(n) for n in (
            "warnings", "params", "crosslink", "swelling", "provenance", "model"))
        failed = [r.error for r in cmp.results if r.error]
        if failed:
            self.messages.show("compare", "**Compare:** " + " · ".join(failed), "warning")
        return cmp

    def _add(self):
        value, names = self.upload.value, self.upload.filename
        if value is None or (isinstance(value, list) and not value):
            raise ValueError("choose one or more test files for the new compound first")
        if not isinstance(value, list):
            value, names = [value], [names]
        mode = None if self.new_mode.value == "from the file" else self.new_mode.value
        comp = self.state.add_uploads(self.new_name.value, list(zip(names, value, strict=True)), mode=mode)
        self.new_name.value = ""
        shown = _html.escape(comp.name, quote=False)  # a typed name shows as text, never as HTML
        self.messages.show("compare-upload", f"Compound **{shown}** added ({len(comp.curves)} curve(s)); "
                                             "press Compare.", "success")

    def _file(self, kind: str):
        rep = self.state.report()
        text = {"html": rep.to_html, "csv": rep.to_csv, "json": rep.to_json}[kind]()
        return io.BytesIO(text.encode("utf-8"))

    # ----- layout ---------------------------------------------------------------------------------
    def _build(self):
        intro = html(
            "<div class='ns-small'>Fit the same model to every chosen compound and compare them with the "
            "baseline: strand density ν and junction (crosslink) density μ_j = 2ν/f with 95 % intervals, M_c, N, "
            "locking stretch, entanglement share, G₀ at the service temperature (G ∝ T at a fixed network — "
            "filled compounds often soften with temperature in reality), M100/M300 measured and predicted, and "
            "swelling where given. The download is one self-contained HTML file (opens offline); CSV and JSON "
            "hold every number.</div>")
        choose = pn.Column(
            html("<div class='ns-side-h'>Compounds</div>"), self.chosen,
            pn.Row(self.baseline, self.model, self.service, sizing_mode="stretch_width"),
            self.title, self.purpose,
            pn.Row(self.run_btn, self.dl_html, self.dl_csv, self.dl_json),
            sizing_mode="stretch_width")
        add = pn.Card(
            pn.Row(self.new_name, self.new_mode), self.upload, self.add_btn,
            title="Add a compound from your files", collapsed=True, sizing_mode="stretch_width")
        return pn.Column(intro, choose, add, self.summary, self.table, self.plots, self.details,
                         sizing_mode="stretch_width", css_classes=["ns-compare"])

    def __panel__(self):
        return self._layout


def create_compare_view(messages: Messages | None = None, load_samples: bool = True, **_ignored):
    """Factory used by ``app.main``."""
    return CompareView(messages=messages, load_samples=load_samples)


__all__ = ["CompareState", "CompareView", "create_compare_view"]
