"""The Compare tab: compounds formed from the session's files (each with its own polymer, f and filler),
a baseline, a model and a service temperature; the comparison table and plots; the review report (HTML)
with its CSV and JSON.  When an input changes after a comparison, the results and the download buttons say
"out of date — recompute" and the downloads are off until Compare is pressed again.

State and logic: :class:`app.compare_state.CompareState` (no Panel); numbers, tables and SVG plots come
from ``network_models.compare`` / ``network_models.report`` so the tab, the report and ``netstretch
report`` agree.
"""

from __future__ import annotations

import io
import logging

import panel as pn

from network_models import get_model, polymers
from network_models.models import MODELS
from network_models.report import CSS as REPORT_CSS

from .compare_state import STALE, CompareState
from .data_state import MAX_UPLOAD_BYTES, CompoundInfo, missing_items
from .messages import Messages, guarded
from .tables import esc, table_html
from .ui import Deferred, html, text_labels

log = logging.getLogger("netstretch.app")

#: the report's downloads (kind, label, width): the same files `netstretch report` writes; the PDF only where a
#: Chromium is installed (:func:`network_models.report.pdf.find_chromium`), the charts as one zip of SVGs
DOWNLOADS = (("html", "Download report (HTML)", 200), ("pdf", "PDF", 64), ("xlsx", "Excel (xlsx)", 110),
             ("csv", "CSV", 64), ("json", "JSON", 64), ("svg", "Charts (SVG, zip)", 150))
_STEM_CHARS = 60


def study_stem(title: str = "", default_title: str = "", compounds=(), fallback: str = "review") -> str:
    """A file name (no suffix) for the study's downloads: the report title when one was given (the sample
    set's title is put there), else the compared compounds' keys, else ``fallback``; ASCII letters, digits,
    '.', '_' and '-' only (user text never reaches the file system or a header as typed), at most 60 characters,
    cut at a word."""
    import re
    import unicodedata

    def slug(text: str) -> str:
        text = unicodedata.normalize("NFKD", str(text)).encode("ascii", "ignore").decode("ascii")
        text = re.sub(r"\([^)]*\)", " ", text)  # "(invented for demonstration)" and the like: not in a name
        text = re.sub(r"[^A-Za-z0-9._]+", "-", text).strip("-._")
        if len(text) > _STEM_CHARS:
            text = text[:_STEM_CHARS].rsplit("-", 1)[0]
        return text

    t = (title or "").strip()
    stem = slug(t) if t and t != default_title else ""
    if not stem:
        stem = slug("_".join(str(c) for c in compounds))
    return stem or fallback


class CompareView(pn.viewable.Viewer):
    """The Compare tab of one session."""

    def __init__(self, state: CompareState, ask_missing=None, **params):
        super().__init__(**params)
        self.state = s = state
        #: called as ask_missing(name, bytes, missing_items, compound) for a file that lacks geometry
        self.ask_missing = ask_missing
        self.store = s.store  # the session's file store (CompareState.store)
        units = getattr(s, "display_units", None)
        if units is not None:  # λ ⇄ elongation: the shown comparison is drawn again (its fits are cached)
            units.param.watch(lambda *e: self._redraw_units(), ["stretch"])
        self.messages = Messages(area="compare")
        self.chosen = pn.widgets.MultiChoice.from_param(s.param.chosen, sizing_mode="stretch_width",
                                                        css_classes=["ns-cmp-chosen"])
        text_labels(self.chosen)  # compound names are data: shown as text, never as markup
        self.baseline = pn.widgets.Select.from_param(s.param.baseline, width=200, css_classes=["ns-cmp-baseline"])
        self.model = pn.widgets.Select.from_param(
            s.param.model, options={get_model(n).title: n for n in MODELS}, width=260, css_classes=["ns-cmp-model"])
        self.service = pn.widgets.FloatInput.from_param(s.param.service_C, step=5.0, width=170,
                                                        css_classes=["ns-cmp-service"])
        self.title = pn.widgets.TextInput.from_param(s.param.title, sizing_mode="stretch_width")
        self.purpose = pn.widgets.TextInput.from_param(s.param.purpose, sizing_mode="stretch_width",
                                                       placeholder="e.g. choose the cure dose for the mount")
        self.specs = pn.widgets.TextAreaInput.from_param(
            s.param.specs, sizing_mode="stretch_width", height=70, css_classes=["ns-cmp-specs"],
            placeholder="one per line: G=0.55..0.68MPa · M100>=1.2MPa · EB>=450% · hardness=55..65ShoreA")
        self.run_btn = pn.widgets.Button(name="Compare", button_type="primary", width=140, css_classes=["ns-cmp-run"])
        self.run_btn.on_click(lambda e: self._run())
        from network_models.report.pdf import find_chromium

        self.downloads = {
            kind: pn.widgets.FileDownload(callback=(lambda k=kind: self._file(k)), filename=f"review.{kind}",
                                          label=label, width=w, css_classes=[f"ns-cmp-dl-{kind}"],
                                          button_type="success" if kind == "html" else "default")
            for kind, label, w in DOWNLOADS}
        #: no Chromium on this server: no PDF button (the HTML prints to PDF from any browser)
        self.downloads["pdf"].visible = bool(find_chromium())
        #: Chromium prints in a worker thread: the server's event loop (every session) goes on meanwhile
        self.downloads["pdf"].callback = self._pdf_file
        self.stale_note = html("", css_classes=["ns-cmp-stale"])
        self.stale_results = html("", css_classes=["ns-cmp-stale-results"])
        # the compound editor: recipe facts of one compound of the store
        self.edit_name = pn.widgets.Select(name="Compound", options=[], width=180, css_classes=["ns-cmp-edit"])
        self.edit_polymer = pn.widgets.Select(name="Polymer", options=list(polymers()), width=110,
                                              css_classes=["ns-cmp-polymer"])
        self.edit_f = pn.widgets.FloatInput(name="Functionality f", value=4.0, step=1.0, start=3, end=64, width=120,
                                            css_classes=["ns-cmp-f"])
        self.edit_filler = pn.widgets.FloatInput(name="Filler volume fraction φ", value=0.0, step=0.01, start=0,
                                                 end=0.45, width=170, css_classes=["ns-cmp-filler"])
        self.edit_recipe = pn.widgets.TextAreaInput(
            name="Recipe, phr (one 'ingredient = phr' per line; blank: none)", height=110, width=260,
            css_classes=["ns-cmp-edit-recipe"], placeholder="NR = 100\nN330 = 50\nZnO = 5\nsulfur = 2")
        self.edit_save = pn.widgets.Button(name="Keep these values", button_type="primary", width=150,
                                           css_classes=["ns-cmp-edit-save"])
        self.edit_save.on_click(lambda e: self._save_compound())
        self.edit_name.param.watch(lambda e: self._show_compound(), "value")
        self.compounds_html = html("", css_classes=["ns-cmp-compounds"])
        # a new compound from files: the files join the store under the name typed here
        self.new_name = pn.widgets.TextInput(name="New compound name", width=200, placeholder="e.g. Trial 7")
        self.new_mode = pn.widgets.Select(name="Test mode (if the files do not say)",
                                          options=["from the file", "uniaxial", "planar", "equibiaxial"], width=220)
        self.upload = pn.widgets.FileInput(multiple=True, sizing_mode="stretch_width", css_classes=["ns-cmp-upload"])
        self.add_btn = pn.widgets.Button(name="Add compound", button_type="light", width=140,
                                         css_classes=["ns-cmp-add"])
        self.add_btn.on_click(lambda e: self._add())
        self.summary = html("", css_classes=["ns-cmp-summary"])
        self.table = html("", css_classes=["ns-cmp-table"])
        self.plots = html("", css_classes=["ns-cmp-plots"])
        self.details = html("", css_classes=["ns-cmp-details"])
        #: the linked per-specimen plots (HoloViews), made when the user first opens their card
        #: (``open_specimens``); the collapsed card itself is placed when the tab is first shown
        #: (``show_specimens``) — five HoloViews plots would otherwise be most of the tab's first visit
        self._specimen_views = None
        self._specimens_card = None
        self._specimens_inner = Deferred(lambda: [self.specimen_views])
        self._svg = False
        self._specimens_place = Deferred(self._specimens_section)
        self.results = pn.Column(self.stale_results, self.summary, self.table, self._specimens_place.slot,
                                 self.plots, self.details, sizing_mode="stretch_width", css_classes=["ns-cmp-results"])
        self._run = guarded(self.messages, "compare", "Compare")(self._run)
        self._add = guarded(self.messages, "compare-upload", "New compound")(self._add)
        self._file = guarded(self.messages, "compare-download", "Download")(self._file)
        self._save_compound = guarded(self.messages, "compare-edit", "Compound")(self._save_compound)
        s.param.watch(lambda *e: self._mark(), ["chosen", "baseline", "model", "service_C", "comparison", "title",
                                                "specs"])
        self.store.param.watch(lambda *e: self._on_store(), ["compounds", "revision"])
        self._layout = self._build()
        self._on_store()

    # ----- the linked specimen plots ---------------------------------------------------------------------
    @property
    def specimen_views(self):
        if self._specimen_views is None:
            from .specimen_view import SpecimenViews

            self._specimen_views = SpecimenViews()
            self._specimen_views.svg = self._svg
            self._specimen_views.set_comparison(self.state.comparison)
        return self._specimen_views

    def _specimens_section(self):
        """The specimen card, collapsed: its plots are built the first time it is opened (made here, inside
        the tab's deferred builder, so the card goes with the page's clean-up like every other widget)."""
        card = pn.Card(self._specimens_inner.slot,
                       title="Specimens one by one: values, residuals, data and fit (linked) — open to draw",
                       collapsed=True, sizing_mode="stretch_width", css_classes=["ns-cmp-specimens"])
        card.param.watch(lambda e: None if e.new else self._specimens_inner.ensure(), "collapsed")
        self._specimens_card = card
        return [card]

    def show_specimens(self):
        """The tab is on screen: place the specimen card, collapsed (once; its plots wait for ``open_specimens``)."""
        self._specimens_place.ensure()

    def open_specimens(self):
        """Open the specimen card (what a click on its header does): the linked plots are built then, once;
        later comparisons redraw them."""
        self.show_specimens()
        self._specimens_card.collapsed = False
        return self._specimens_inner.ensure()

    @property
    def svg(self) -> bool:
        return self._svg

    @svg.setter
    def svg(self, value: bool):
        self._svg = bool(value)
        if self._specimen_views is not None:
            self._specimen_views.svg = self._svg
            for overlay_pane in self._specimen_views.plots.select(pn.pane.HoloViews):
                overlay_pane.param.trigger("object")

    # ----- the store and stale marks -------------------------------------------------------------------
    def _on_store(self):
        names = self.store.compound_names()
        self.edit_name.options = names
        if self.edit_name.value not in names and names:
            self.edit_name.value = names[0]
        rows = [{"compound": n, "polymer": i.polymer, "f": f"{i.f:g}", "filler φ": f"{i.filler:.3g}",
                 "files": ", ".join(f.name for f in self.store.compound_files(n)),
                 "swelling tests": str(len(i.swelling))} for n, i in self.store.compounds.items()]
        self.compounds_html.object = table_html(rows, "ns-cmp-compound-table")
        self._show_compound()
        self._mark()

    def _mark(self):
        """Say 'out of date' on the results and the downloads whenever an input changed since Compare."""
        stale = self.state.stale
        stem = self.file_stem()
        for kind, label, _w in DOWNLOADS:
            dl = self.downloads[kind]
            dl.disabled = stale or self.state.comparison is None
            dl.label = STALE.capitalize() if stale and kind == "html" else label
            dl.filename = f"{stem}_charts.zip" if kind == "svg" else f"{stem}.{kind}"
        if stale and self.messages.kinds().get("compare") == "success":
            self.messages.clear("compare")  # "Compared …" no longer describes what is shown
        self.stale_note.object = (
            f"<div class='ns-stale'>The results below are {STALE}: an input changed after the last comparison. "
            "Press Compare; the downloads are off until then.</div>" if stale else "")
        self.stale_note.visible = stale
        self.stale_results.object = self.stale_note.object
        self.stale_results.visible = stale
        self.results.css_classes = ["ns-cmp-results"] + (["ns-stale-results"] if stale else [])

    def _show_compound(self):
        info = self.store.compounds.get(self.edit_name.value or "")
        if info is not None:
            self.edit_polymer.value = info.polymer if info.polymer in self.edit_polymer.options else "NR"
            self.edit_f.value, self.edit_filler.value = float(info.f), float(info.filler)
            from network_models.recipes import recipe_text

            self.edit_recipe.value = recipe_text(getattr(info, "recipe", None))

    def _save_compound(self):
        name = self.edit_name.value
        if not name:
            raise ValueError("there is no compound to edit yet: load files first")
        from network_models.recipes import Recipe, parse_recipe_text

        text = self.edit_recipe.value or ""
        recipe = Recipe.from_phr(parse_recipe_text(text), where=f"compound {name!r}: recipe") if text.strip() \
            else None
        if recipe is not None:  # the recipe wins: φ comes from it (issue #21)
            self.edit_filler.value = round(float(recipe.filler_volume_fraction), 6)
        self.store.set_compound_info(name, polymer=self.edit_polymer.value, f=float(self.edit_f.value),
                                     filler=float(self.edit_filler.value or 0.0), recipe=recipe)
        self.messages.show("compare-edit", f"Compound **{esc(name)}**: {esc(self.edit_polymer.value)}, "
                                           f"f = {self.edit_f.value:g}, φ = {self.edit_filler.value or 0:g} kept; "
                                           "press Compare.", "success")

    # ----- actions ---------------------------------------------------------------------------------------
    def run(self):
        """Compare now (what the Compare button does); the page calls it once for the sample set."""
        return self._run()

    def _run(self):
        self.run_btn.loading = True
        try:
            cmp = self.state.run()
        finally:
            self.run_btn.loading = False
        rep = self.state.report()
        style = f"<style>{REPORT_CSS}</style>"
        self.summary.object = style + rep.section_html("summary")
        # verdicts, then every specimen as a point per compound with mean and interval (legend tells them
        # apart, exclusions and outliers listed), then the uncertainty decomposed
        self.table.object = style + "".join(rep.section_html(n) for n in (
            "comparison", "conditions", "specifications", "specimens", "uncertainty", "ultimate", "ladders"))
        self.plots.object = style + rep.section_html("plots")
        self.details.object = style + "".join(rep.section_html(n) for n in (
            "warnings", "params", "crosslink", "swelling", "recipes", "provenance", "model"))
        if self._specimen_views is not None:
            self._specimen_views.set_comparison(cmp)
        failed = [r.error for r in cmp.results if r.error]
        if failed:
            self.messages.show("compare", "**Compare:** " + " · ".join(esc(x) for x in failed), "warning")
        else:
            self.messages.show("compare", f"Compared {len(cmp.results)} compound(s) with the "
                                          f"{esc(cmp.model_obj.title)} model.", "success")
        self._mark()
        return cmp

    def _redraw_units(self):
        if self.state.comparison is not None and not self.state.stale:
            self._run()  # guarded in __init__

    def _add(self):
        value, names = self.upload.value, self.upload.filename
        if value is None or (isinstance(value, list) and not value):
            raise ValueError("choose one or more test files for the new compound first")
        if not isinstance(value, list):
            value, names = [value], [names]
        name = (self.new_name.value or "").strip()
        if not name:
            raise ValueError("give the new compound a name before adding its files")
        if name in self.store.compounds:
            raise ValueError(f"there is already a compound called {name!r}; choose another name")
        mode = None if self.new_mode.value == "from the file" else self.new_mode.value
        loaded, waiting = [], []
        for fn, data in zip(names, value, strict=True):
            if data and len(data) > MAX_UPLOAD_BYTES:
                raise ValueError(f"{fn}: over the {MAX_UPLOAD_BYTES / 1e6:.0f} MB upload limit")
            try:
                loaded.append(self.store.add_upload(fn, data, compound=name, **({"mode": mode} if mode else {})))
            except ValueError as exc:
                miss = missing_items(exc)
                if not miss or self.ask_missing is None:
                    raise
                self.ask_missing(fn, data, miss, name)
                waiting.append(fn)
        if waiting:
            self.messages.show("compare-missing", f"{esc(', '.join(waiting))}: the file(s) lack items such as the "
                                                  "gauge length or cross-section; type them once in the form under "
                                                  "'Test data &amp; fits' → 'Load test files' and they join "
                                                  f"**{esc(name)}**.", "info")
            if not loaded:
                return
        recipe = CompoundInfo(polymer=self.edit_polymer.value, f=float(self.edit_f.value),
                              filler=float(self.edit_filler.value or 0.0))
        self.store.accept_uploads(loaded, recipe)
        self.new_name.value = ""
        self.edit_name.value = name
        self.messages.show("compare-upload", f"Compound **{esc(name)}** added ({sum(len(f.curves) for f in loaded)} "
                                             f"curve(s); {esc(recipe.polymer)}, f = {recipe.f:g}, φ = "
                                             f"{recipe.filler:g} — change them above); press Compare.", "success")

    def file_stem(self) -> str:
        """The downloads' file name: the study's title (the manifest's, or the one typed), else the compounds."""
        s = self.state
        cmp = s.comparison
        names = [r.name for r in cmp.results] if cmp is not None and hasattr(cmp, "results") else list(s.chosen)
        return study_stem(s.title, s.param.title.default, names)

    def _file(self, kind: str):
        """One download of the current (not stale) comparison's report; the same files `netstretch report`
        writes (report.write), made in memory."""
        rep = self.state.report()  # refuses while stale
        if kind == "pdf":
            from network_models.report.pdf import pdf_bytes

            data = pdf_bytes(rep.to_html(), how="download the HTML and print it to PDF from a browser (A4 portrait)")
            return io.BytesIO(data)
        if kind == "xlsx":
            from network_models.report.html import write_xlsx

            buf = io.BytesIO()
            write_xlsx(rep.to_csv(), buf)
            buf.seek(0)
            return buf
        if kind == "svg":
            return io.BytesIO(self._charts_zip(rep.to_html()))
        text = {"html": rep.to_html, "csv": rep.to_csv, "json": rep.to_json}[kind]()
        return io.BytesIO(text.encode("utf-8"))

    async def _pdf_file(self):
        """The PDF download, printed off the event loop; a refusal or failure is a sentence beside the
        buttons (as for the other downloads), never a traceback."""
        import asyncio
        import html as _html

        from network_models.report.pdf import pdf_bytes

        key = "compare-download"
        self.messages.clear(key)
        try:
            text = self.state.report().to_html()  # refuses while stale
            data = await asyncio.to_thread(pdf_bytes, text, "download the HTML and print it to PDF from a browser "
                                                            "(A4 portrait)")
        except (ValueError, OSError) as exc:
            self.messages.show(key, f"**Download:** {_html.escape(str(exc), quote=False)}", "warning")
            return None
        except Exception as exc:
            log.exception("PDF download")
            self.messages.show(key, f"**Download:** an unexpected problem occurred ({type(exc).__name__}); the "
                                    "HTML download prints to PDF from any browser.", "danger")
            return None
        return io.BytesIO(data)

    def _charts_zip(self, html_text: str) -> bytes:
        """Every chart of the report as its own SVG file (report.write_charts' names), in one zip."""
        import tempfile
        import zipfile
        from pathlib import Path

        from network_models.report.html import write_charts

        buf = io.BytesIO()
        with tempfile.TemporaryDirectory(prefix="netstretch-charts-") as tmp:
            files = write_charts(html_text, Path(tmp) / "charts")
            if not files:
                raise ValueError("the report has no charts to download")
            with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
                for f in files:
                    z.write(f, f"{self.file_stem()}_charts/{f.name}")
        return buf.getvalue()

    # ----- layout ----------------------------------------------------------------------------------------
    def _build(self):
        intro = html(
            "<div class='ns-small'>Fit the same model to every chosen compound and compare them with the "
            "baseline: strand density ν and junction (crosslink) density μ_j = 2ν/f with 95 % intervals, M_c, N, "
            "locking stretch, entanglement share, G₀ at the service temperature (G ∝ T at a fixed network — "
            "filled compounds often soften with temperature in reality), M100/M300 measured and predicted, and "
            "swelling where given. Compounds are the session's files grouped by compound (files uploaded in "
            "'Test data &amp; fits' appear here). The report is one self-contained HTML file (opens offline), "
            "also as PDF where the server has Chromium; Excel, CSV and JSON hold every number, the zip every chart "
            "as SVG. Files are named after the study.</div>")
        dl = self.downloads
        choose = pn.Column(
            html("<div class='ns-side-h'>Compounds</div>"), self.chosen,
            pn.Row(self.baseline, self.model, self.service, sizing_mode="stretch_width"),
            self.title, self.purpose, self.specs,
            pn.Row(self.run_btn, *(dl[k] for k, _label, _w in DOWNLOADS)), self.stale_note, self.messages,
            sizing_mode="stretch_width")
        edit = pn.Card(
            self.compounds_html,
            pn.Row(self.edit_name, self.edit_polymer, self.edit_f, self.edit_filler, self.edit_recipe, self.edit_save),
            html("<div class='ns-small'>Each compound carries its own polymer, junction functionality f and filler "
                 "volume fraction φ; they enter its crosslink density and the Guth–Gold correction.</div>"),
            title="Compounds and their recipe facts", collapsed=False, sizing_mode="stretch_width",
            css_classes=["ns-cmp-editor"])
        add = pn.Card(
            pn.Row(self.new_name, self.new_mode), self.upload, self.add_btn,
            html("<div class='ns-small'>The new compound takes the polymer, f and φ shown in the editor above; "
                 "its files are also listed in 'Test data &amp; fits'.</div>"),
            title="Add a compound from your files", collapsed=True, sizing_mode="stretch_width")
        return pn.Column(intro, choose, edit, add, self.results, sizing_mode="stretch_width",
                         css_classes=["ns-compare"])

    def __panel__(self):
        return self._layout


__all__ = ["CompareState", "CompareView"]  # CompareState re-exported: it lived here before
