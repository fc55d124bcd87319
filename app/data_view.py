"""The 'Test data & fits' tab: upload (with a small form for what a file lacks), the session's files and the
compound each belongs to, per-file settings and preview; the fit half is :class:`app.fit_panel.FitPanel`.

The tab works on the session's one data store (``DataState``, passed in): a file uploaded here is a file of
every tab (Compare forms its compounds from the same store)."""

from __future__ import annotations

import logging

import panel as pn

from network_models import MODES
from network_models.limits import TIME_BUDGET_S

from .data_state import GEOMETRY_ITEMS, MAX_UPLOAD_BYTES, CompoundInfo, DataState, missing_items
from .display_units import DisplayUnits
from .fit_panel import FitPanel
from .messages import Messages, guarded
from .tables import esc, file_rows, preview_rows, table_html
from .ui import html, off_the_loop

log = logging.getLogger("netstretch.app")


class DataView(pn.viewable.Viewer):
    """The 'Test data & fits' tab of one session."""

    def __init__(self, state: DataState, network_state=None, explorer=None, units: DisplayUnits | None = None,
                 **params):
        super().__init__(**params)
        self.state = s = state
        self.explorer = explorer
        self.network_state = network_state
        self.units = units or DisplayUnits()
        #: messages about files (upload, settings), shown beside the upload area
        self.messages = Messages(area="files")
        self._seen: set[tuple[str, int]] = set()
        #: files waiting for the missing-items form: (name, bytes, missing items, compound or None)
        self._pending: list[tuple[str, bytes, list[str], str | None]] = []

        if hasattr(pn.widgets, "FileDropper"):
            self.upload = pn.widgets.FileDropper(
                multiple=True, max_file_size=f"{MAX_UPLOAD_BYTES // 1_000_000}MB", css_classes=["ns-upload"],
                sizing_mode="stretch_width", height=110, layout="compact")
        else:
            self.upload = pn.widgets.FileInput(multiple=True, css_classes=["ns-upload"], sizing_mode="stretch_width")
        self.upload.param.watch(self._on_upload, "value")
        # the missing-items form: one box per item the reader says is missing
        self.missing_title = html("", css_classes=["ns-missing-title"])
        self.missing_inputs: dict[str, pn.widgets.FloatInput] = {}
        self.missing_box = pn.Column(css_classes=["ns-missing-form"], sizing_mode="stretch_width", visible=False)
        self.missing_read = pn.widgets.Button(name="Read the file with these values", button_type="primary",
                                              width=260, css_classes=["ns-missing-read"])
        self.missing_read.on_click(lambda e: self._read_pending())

        self.selected = pn.widgets.CheckBoxGroup.from_param(s.param.selected, inline=False,
                                                            css_classes=["ns-file-select"])
        self.files_html = html("", css_classes=["ns-files"])
        self.edit_file = pn.widgets.Select(name="File", options=[], width=190, css_classes=["ns-edit-file"])
        self.edit_mode = pn.widgets.Select(name="Test mode", options=[m.value for m in MODES], width=110)
        self.edit_gauge = pn.widgets.FloatInput(name="Gauge length (mm)", value=None, width=120, start=0)
        self.edit_width = pn.widgets.FloatInput(name="Width (mm)", value=None, width=100, start=0)
        self.edit_thick = pn.widgets.FloatInput(name="Thickness (mm)", value=None, width=100, start=0)
        self.edit_compound = pn.widgets.TextInput(name="Compound", width=120, css_classes=["ns-edit-compound"])
        self.apply = pn.widgets.Button(name="Re-read with these settings", button_type="primary", width=220)
        self.remove = pn.widgets.Button(name="Remove file", button_type="light", width=120)
        self.preview = html("", css_classes=["ns-preview"])
        # the file's test conditions (issue #21): what the file states shows as the placeholder; a typed value
        # wins, travels into the curves' metadata, the project file and the report's test-conditions table
        from network_models.conditions import FIELDS

        self.cond_inputs = {k: pn.widgets.TextInput(name=label.capitalize() + (" (°C)" if k == "temperature" else ""),
                                                    width=130, max_length=80, css_classes=[f"ns-cond-{k}"])
                            for k, label in FIELDS.items()}
        self.cond_apply = pn.widgets.Button(name="Keep these test conditions", button_type="light", width=220,
                                            css_classes=["ns-cond-apply"])
        self.cond_msg = html("", css_classes=["ns-cond-msg"])
        self.cond_apply.on_click(lambda e: self._apply_conditions())
        self.scenario = html("", css_classes=["ns-scenario"])
        self.edit_file.param.watch(lambda *e: self._show_file(), "value")
        self.apply.on_click(lambda e: self._apply())
        self.remove.on_click(lambda e: self._remove())

        self.fit = FitPanel(s, Messages(area="fit"), self.units, network_state)
        self._refit = guarded(self.fit.messages, "fit", "Fit")(self._refit)
        self._apply = guarded(self.messages, "file", "File settings")(self._apply)
        self._remove = guarded(self.messages, "file", "Remove file")(self._remove)
        self._apply_conditions = guarded(self.messages, "file", "Test conditions")(self._apply_conditions)
        self._show_file = guarded(self.messages, "file", "Preview")(self._show_file)
        self._read_pending = guarded(self.messages, "upload", "Upload")(self._read_pending)
        # one watcher for the store: an upload changes files and selection together and is drawn once
        self._store_key = None  # (file identities, selection) last drawn
        s.store.param.watch(self._on_store, ["files"])  # the session's file store (its own object)
        s.param.watch(self._on_store, ["selected"])  # the fit's choice of files
        s.param.watch(lambda *e: self._refit(), ["fit_models", "residual", "polymer"])  # polymer: the fit's notices
        self.units.param.watch(lambda *e: self._show_file(), ["stress", "stretch"])
        self._built = self._build()
        self._files_changed()
        self._refit()

    # ----- callbacks ----------------------------------------------------------------------------------
    def _on_store(self, *events):
        """The store's files or the fit's selection changed (one change of both arrives twice: once per
        object); redraw once per new (files, selection)."""
        s = self.state
        files = tuple(id(f) for f in s.store.files)
        key = (files, tuple(s.selected))
        if key == self._store_key:
            return
        if self._store_key is None or files != self._store_key[0]:
            self._files_changed()
        self._store_key, self._store_files = key, list(s.store.files)  # held: their ids stay theirs
        self._refit()

    def _upload_items(self, event) -> list[tuple[str, bytes]]:
        value = event.new
        if not value:
            return []
        if isinstance(value, dict):
            items = list(value.items())
        else:  # FileInput(multiple=True): lists of bytes and names
            names = self.upload.filename or []
            vals = value if isinstance(value, list) else [value]
            names = names if isinstance(names, list) else [names]
            items = list(zip(names, vals, strict=False))
        out = []
        for name, data in items:
            if isinstance(data, str):
                data = data.encode("utf-8")
            key = (str(name), len(data or b""))
            if key not in self._seen:
                self._seen.add(key)
                out.append((str(name), data))
        return out

    def _on_upload(self, event):
        """Read the files in a worker thread (off the server's event loop, within the time budget), then
        show and accept them on the loop."""
        items = self._upload_items(event)
        names = ", ".join(n for n, _ in items)

        def done(result):
            if isinstance(result, TimeoutError):
                log.warning("upload %s: reading took longer than %g s", names, TIME_BUDGET_S)
                result = ([], [f"{names}: reading took longer than the {TIME_BUDGET_S:g} s budget; export only "
                               "the test curves"])
            self._after_upload(*result)

        off_the_loop(lambda: self._read_uploads(items), done, TIME_BUDGET_S)

    def _read_uploads(self, items):
        import threading

        log.debug("reading upload(s) %s in thread %s", ", ".join(n for n, _ in items),
                  threading.current_thread().name)
        loaded, problems = [], []
        for name, data in items:
            try:
                loaded.append(self.state.add_upload(name, data))
            except ValueError as exc:
                miss = missing_items(exc)
                if miss:
                    self._pending.append((name, data, miss, None))
                else:
                    problems.append(str(exc))
            except Exception as exc:
                log.exception("upload %s", name)
                problems.append(f"{name}: the file could not be read ({type(exc).__name__}); check that it is a "
                                "CSV/TSV/TXT or .xlsx table of stretch (or strain/extension) and stress (or force)")
        return loaded, problems

    def _after_upload(self, loaded, problems):
        for p in problems:
            if "limit" in p:
                log.warning("upload refused: %s", p)  # a refused (too large) file leaves a line in the log
        self._report_upload(loaded, problems)
        self._accept(loaded)
        self._show_missing_form()

    def _report_upload(self, loaded, problems):
        self.messages.clear("upload")
        if problems:
            text = " · ".join(esc(p) for p in problems)
            if loaded:
                names = ", ".join(esc(f.name) for f in loaded)
                self.messages.show("upload", f"**Some files were not used:** {text} — {names} loaded and fitted.")
            else:
                self.messages.show("upload", f"**Upload not used:** {text} — the data loaded before are kept.")
        elif loaded:
            names = ", ".join(f"{esc(f.name)} (compound {esc(f.group)})" for f in loaded)
            self.messages.show("upload", f"Loaded {names}; it is fitted below and available in Compare.", "success")

    def _accept(self, loaded):
        if not loaded:
            return
        ns = self.network_state  # an upload says nothing of its recipe: start from the explorer's
        recipe = CompoundInfo(polymer=ns.polymer, f=float(ns.f), filler=float(ns.filler)) if ns else None
        self.state.accept_uploads(loaded, recipe)
        self.edit_file.value = loaded[-1].name

    def _show_missing_form(self):
        """Ask for exactly the items the first waiting file lacks; hidden when none waits."""
        if not self._pending:
            self.missing_box.visible = False
            return
        name, _data, miss, _compound = self._pending[0]
        self.missing_inputs = {}
        for item in miss:
            unit, label = GEOMETRY_ITEMS.get(item, ("mm", item.replace("_", " ").capitalize()))
            self.missing_inputs[item] = pn.widgets.FloatInput(name=f"{label} ({unit})", value=None, start=0,
                                                              width=160, css_classes=[f"ns-missing-{item}"])
        self.missing_title.object = (
            f"<div class='ns-small'><b>{esc(name)}</b> needs "
            + ", ".join(esc(GEOMETRY_ITEMS.get(m, ("", m.replace("_", " ")))[1].lower()) for m in miss)
            + " before it can be read. Type them once; the file is read with them.</div>")
        self.missing_box.objects = [self.missing_title, pn.Row(*self.missing_inputs.values()), self.missing_read]
        self.missing_box.visible = True

    def ask_missing(self, name: str, data: bytes, missing: list[str], compound: str | None = None):
        """Queue a file another tab could not read for lack of ``missing`` items: this tab's form asks."""
        self._pending.append((name, data, list(missing), compound))
        self._show_missing_form()

    def _read_pending(self):
        if not self._pending:
            return
        name, data, miss, compound = self._pending[0]
        opts = {}
        for item, w in self.missing_inputs.items():
            v = w.value
            if v is None or not v > 0:
                raise ValueError(f"{name}: type a positive {item.replace('_', ' ')} first")
            unit = GEOMETRY_ITEMS.get(item, ("mm",))[0]
            opts[item] = v * (1e-6 if unit == "mm²" else 1e-3)  # mm, mm² → m, m² for the reader
        lf = self.state.add_upload(name, data, compound=compound, **opts)
        self._pending.pop(0)
        self._report_upload([lf], [])
        self._accept([lf])
        self._show_missing_form()

    def _files_changed(self):
        s = self.state
        names = [f.name for f in s.files]
        self.edit_file.options = names
        if self.edit_file.value not in names and names:
            self.edit_file.value = names[0]
        self.files_html.object = table_html(file_rows(s.files), "ns-file-table")
        if s.manifest_title:
            self.scenario.object = (f"<div class='ns-small'><b>Sample sets:</b> {esc(s.manifest_title)}. "
                                    f"{esc(s.manifest_note)}.</div>")
        self._show_file()

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
        self.edit_compound.value = f.group
        self._show_conditions(f)
        meta = f.curves[0].metadata if f.curves else {}
        cols, units = meta.get("columns", {}), meta.get("units", {})
        det = ", ".join(f"{k}: '{esc(v)}'" + (f" [{esc(units.get(k))}]" if units.get(k) else "")
                        for k, v in cols.items())
        notes = "".join(f"<li>{esc(n)}</li>" for n in f.notices())
        self.preview.object = (
            f"<div class='ns-small'><b>{esc(name)}</b> — detected mode <b>{esc(f.detected_mode)}</b>; "
            f"columns {det or '—'}; {len(f.curves)} curve(s), {f.n_points} points.</div>"
            + (f"<ul class='ns-small'>{notes}</ul>" if notes else "")
            + table_html(preview_rows(f, 4, self.units), "ns-preview-table"))

    def _apply(self):
        name = self.edit_file.value
        if not name:
            raise ValueError("load a file first")
        s = self.state
        new_compound = (self.edit_compound.value or "").strip()
        if new_compound and new_compound != s.get(name).group:
            s.assign(name, new_compound)
        s.set_options(name, self.edit_mode.value, self.edit_gauge.value, self.edit_width.value,
                      self.edit_thick.value)
        self.messages.show("file", f"{esc(name)} re-read (compound {esc(s.get(name).group)}).", "success")

    def _show_conditions(self, f):
        """The file's conditions: the user's edits as values, what the file states as placeholders."""
        from network_models.conditions import stated_conditions

        stated = stated_conditions(f.curves[0]) if f.curves else {}
        same = getattr(self, "_cond_file", None) == (f.name, id(f))
        for k, w in self.cond_inputs.items():
            w.placeholder = str(stated.get(k) or "not stated")
            if not same:  # a redraw of the same file (a unit toggle, a refit) keeps what is typed
                w.value = f.conditions.get(k, "")
        if not same:
            self.cond_msg.object = ""
        self._cond_file = (f.name, id(f))

    def _apply_conditions(self):
        """Check and keep the typed conditions; a bad one gets its sentence here and its text stays typed."""
        name = self.edit_file.value
        if not name:
            raise ValueError("load a file first")
        errors = self.state.set_conditions(name, {k: w.value for k, w in self.cond_inputs.items()})
        if errors:
            self.cond_msg.object = ("<ul class='ns-small ns-cond-errors'>"
                                    + "".join(f"<li>{esc(e)}</li>" for e in errors.values())
                                    + "</ul><div class='ns-small'>The other conditions were kept; correct these "
                                      "and press the button again.</div>")
        else:
            self.cond_msg.object = (f"<div class='ns-small'>Test conditions of {esc(name)} kept: they appear in the "
                                    "report beside the numbers they qualify and are saved with the project.</div>")

    def _remove(self):
        if self.edit_file.value:
            self.state.remove(self.edit_file.value)

    def _overlay(self):
        if self.explorer is not None:
            self.explorer.set_data_overlay(self.state.overlay_points())

    def _refit(self):
        s = self.state
        self._overlay()
        try:
            problems = s.run_fit()
        finally:
            self.fit.draw()
        if problems:
            text = " · ".join(esc(p) for p in problems)
            self.fit.messages.show("fit-models", f"**Some models were not fitted:** {text}", "secondary")
        else:
            self.fit.messages.clear("fit-models")

    # ----- layout -------------------------------------------------------------------------------------
    def __panel__(self):
        return self._built

    def _build(self):
        return pn.Column(
            self.scenario,
            pn.Row(
                pn.Column(html("<div class='ns-side-h'>Load test files</div>"), self.upload,
                          html("<div class='ns-small'>Drop or choose CSV, TSV, TXT or .xlsx files (several at once, "
                               f"up to {MAX_UPLOAD_BYTES // 1_000_000} MB each). Columns: stretch, strain or "
                               "extension, and stress or force, with units in the header. Each file joins a "
                               "compound (from its metadata or the part of its name before '_'; change it on the "
                               "right): every tab, Compare included, uses the same files.</div>"),
                          self.messages, self.missing_box,
                          html("<div class='ns-side-h'>Files in the fit</div>"), self.selected,
                          sizing_mode="stretch_width"),
                pn.Column(html("<div class='ns-side-h'>Per-file settings and preview</div>"),
                          pn.Row(self.edit_file, self.edit_mode, self.edit_compound),
                          pn.Row(self.edit_gauge, self.edit_width, self.edit_thick),
                          pn.Row(self.apply, self.remove),
                          html("<div class='ns-small'><b>Test conditions</b> (blank: as the file states, shown "
                               "grey)</div>"),
                          pn.Row(*list(self.cond_inputs.values())[:3]), pn.Row(*list(self.cond_inputs.values())[3:]),
                          pn.Row(self.cond_apply), self.cond_msg,
                          self.preview, sizing_mode="stretch_width"),
                sizing_mode="stretch_width"),
            self.files_html,
            self.fit,
            sizing_mode="stretch_width",
        )
