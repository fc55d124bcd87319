"""Save and reopen a project (the zip of :mod:`app.project_file`): a small bar at the top of the page."""

from __future__ import annotations

import io
import logging
import re

import panel as pn

from network_models.limits import MAX_FILE_BYTES, TIME_BUDGET_S

from .messages import Messages, guarded
from .session import Session
from .session import read_project as _read_project  # the reader the session itself uses
from .tables import esc
from .ui import html, off_the_loop

SUFFIX = ".nsproj.zip"
#: a project larger than this is refused with a message (the reading layer's per-file limit)
MAX_PROJECT_BYTES = MAX_FILE_BYTES
log = logging.getLogger("netstretch.app")


def project_filename(title: str) -> str:
    stem = re.sub(r"[^A-Za-z0-9._-]+", "-", title or "").strip("-")[:60] or "netstretch-project"
    return stem + SUFFIX


class ProjectBar(pn.viewable.Viewer):
    def __init__(self, session: Session, **params):
        super().__init__(**params)
        self.session = session
        self.messages = Messages(area="project")
        self.save = pn.widgets.FileDownload(callback=lambda: self._save(), filename="netstretch-project.nsproj.zip",
                                            label="Save project", button_type="primary", width=150,
                                            css_classes=["ns-project-save"])
        if hasattr(pn.widgets, "FileDropper"):  # sent in chunks (never one message over the websocket
            # limit) and refused in the page above MAX_PROJECT_BYTES before it is sent
            self.open = pn.widgets.FileDropper(accepted_filetypes=[".zip"], width=260, layout="compact",
                                               max_file_size=f"{MAX_PROJECT_BYTES // 1_000_000}MB",
                                               css_classes=["ns-project-open"])
        else:  # pragma: no cover - older Panel
            self.open = pn.widgets.FileInput(accept=".zip", width=260, css_classes=["ns-project-open"])
        self.open.param.watch(lambda e: self._open(e.new), "value")
        self._save = guarded(self.messages, "project", "Save project")(self._save)
        self._open = guarded(self.messages, "project", "Open project")(self._open)
        self._finish_open = guarded(self.messages, "project", "Open project")(self._finish_open)
        session.compare.param.watch(lambda e: setattr(self.save, "filename", project_filename(e.new)), "title")

    def _save(self):
        data = self.session.to_project()
        self.messages.show("project", f"Project saved ({len(self.session.data.files)} input file(s), settings and "
                                      "a results summary in one zip). Open it again with 'Open project'.",
                           "success")
        return io.BytesIO(data)

    def _open(self, value):
        if not value:
            return
        filename = getattr(self.open, "filename", None)
        if isinstance(value, dict):  # the file dropper: {name: bytes}, the newest last
            filename, value = list(value.items())[-1]
        if isinstance(value, str):
            value = value.encode("utf-8")
        if len(value) > MAX_PROJECT_BYTES:
            log.warning("project upload %r refused: %d bytes, over the %d MB limit", filename, len(value),
                        MAX_PROJECT_BYTES // 1_000_000)
            raise ValueError(f"{filename or 'the project'} is {len(value) / 1e6:.1f} MB, over the "
                             f"{MAX_PROJECT_BYTES // 1_000_000} MB limit for a project; save a project with fewer "
                             "or smaller input files")
        data = bytes(value)

        def check():  # in a worker thread: the zip and its manifest read and checked within the limits
            try:
                _read_project(data)
            except Exception as exc:
                return exc
            return None

        off_the_loop(check, lambda checked: self._finish_open(data, filename, checked), TIME_BUDGET_S)

    def _finish_open(self, data: bytes, filename, checked):
        if isinstance(checked, TimeoutError):
            log.warning("project %r: reading took longer than %g s", filename, TIME_BUDGET_S)
            raise ValueError(f"{filename or 'the project'}: reading it took longer than the {TIME_BUDGET_S:g} s "
                             "budget; save a project with fewer or smaller input files")
        if checked is not None:
            raise checked
        problems = self.session.load_project(data)
        name = esc(filename or "the project")
        text = (f"Opened {name}: {len(self.session.data.files)} input file(s); the fits were recomputed from them."
                + (" Not restored: " + " · ".join(esc(p) for p in problems) if problems else ""))
        self.messages.show("project", text, "warning" if problems else "success")

    def __panel__(self):
        return pn.Column(
            pn.Row(html("<div class='ns-side-h'>Project</div>", width=90), self.save,
                   html("<div class='ns-small'>Open a saved project:</div>", width=150), self.open,
                   sizing_mode="stretch_width"),
            self.messages, sizing_mode="stretch_width", css_classes=["ns-project"], margin=(0, 10))
