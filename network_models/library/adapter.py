"""The one place the library meets the rest of netstretch: a study to store is the study object of
:mod:`network_models.study` — its inputs with their bytes, its settings, its compounds and the results its own
comparison gives.  :func:`study_from` builds that :class:`~network_models.study.Study` (``Study.from_manifest``,
``Study.from_project``; the library parses no manifest or project file itself) and wraps it for storing.

A study to store is a :class:`StudyInput`: the input files (bytes, by SHA-256), the settings (the project file's
``[settings.*]`` sections, ``study`` among them), the compounds (with their curves, read from those bytes), the
model, and the :class:`Study` whose ``comparison()`` gives the stored results (None for a batch output).
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import re
from dataclasses import dataclass, field
from pathlib import Path

from ..study import DEFAULT_MODEL, Study  # the comparison's default model, used when a study names none
from .db import LibraryError

_DATE = re.compile(r"^\s*(\d{4})-(\d{2})-(\d{2})\s*$")


@dataclass
class InputFile:
    name: str
    data: bytes
    role: str  # "curve" | "manifest" | "swelling" | "force_temperature" | "batch"
    compound: str = ""
    options: dict = field(default_factory=dict)

    @property
    def sha256(self) -> str:
        return hashlib.sha256(self.data).hexdigest()


@dataclass
class StudyInput:
    kind: str  # "manifest" | "project" | "batch"
    title: str
    source: str
    model: str
    settings: dict
    inputs: list[InputFile]
    compounds: list = field(default_factory=list)  # network_models.compounds.Compound
    baseline: str | None = None
    exclusions: dict = field(default_factory=dict)
    #: the study object (network_models.study.Study) the results come from; None for a batch output
    study: Study | None = None

    def content_hash(self) -> str:
        """SHA-256 over the inputs (name, bytes' hash, compound, options), the settings, the model and the compound
        facts: equal for the same inputs and settings, whatever the order the files were listed in."""
        doc = {"kind": self.kind, "model": self.model, "settings": self.settings,
               "inputs": sorted([i.name, i.sha256, i.role, i.compound, i.options] for i in self.inputs),
               "compounds": sorted(compound_facts(c) for c in self.compounds),
               "exclusions": self.exclusions}
        text = json.dumps(doc, sort_keys=True, default=str, ensure_ascii=False)
        return hashlib.sha256(text.encode("utf-8")).hexdigest()


def compound_facts(c) -> str:
    return json.dumps({"name": c.name, "polymer": c.polymer, "f": c.f, "notes": c.notes, "metadata": c.metadata,
                       "swelling": [s.to_dict() for s in c.swelling]}, sort_keys=True, default=str)


def parse_date(text) -> _dt.date | None:
    """``YYYY-MM-DD`` (also a TOML date) → date; anything else → None."""
    if isinstance(text, _dt.datetime):
        return text.date()
    if isinstance(text, _dt.date):
        return text
    m = _DATE.match(str(text or ""))
    if not m:
        return None
    try:
        return _dt.date(int(m.group(1)), int(m.group(2)), int(m.group(3)))
    except ValueError:
        return None


def compound_date(c, today: _dt.date) -> tuple[_dt.date, str]:
    """When the compound was tested and where that came from: the manifest's ``tested = "YYYY-MM-DD"``
    ("manifest"), a ``# date:`` line of one of its files ("metadata"), else the import date ("import")."""
    raw = c.metadata.get("tested")
    if raw not in (None, ""):
        d = parse_date(raw)
        if d is None:
            raise LibraryError(f"compound {c.name!r}: tested = {raw!r} is not a date; write it as \"YYYY-MM-DD\"")
        return d, "manifest"
    for cv in c.curves:
        raw = cv.metadata.get("date")
        if raw not in (None, ""):
            d = parse_date(raw)
            if d is not None:
                return d, "metadata"
    return today, "import"


# ----- the adapter ---------------------------------------------------------------------------------------------
def _project_module():
    """The project-file reader/writer (the study's file format, :mod:`network_models.project`)."""
    from .. import project

    return project


def study_from(kind: str, path, model: str | None = None) -> StudyInput:
    """THE adapter: a manifest (``kind="manifest"``), a project zip (``"project"``) or a batch output
    (``"batch"``) → the study to store.  ``model`` None: the study's own model, else the comparison default."""
    if kind == "project" and isinstance(path, (bytes, bytearray, memoryview)):  # a project made in memory (app)
        return _from_project(bytes(path), model)
    p = Path(path)
    if not p.exists():
        raise LibraryError(f"{path}: no such file; check the path")
    if kind == "manifest":
        return _from_manifest(p, model)
    if kind == "project":
        return _from_project(p, model)
    if kind == "batch":
        return _from_batch(p, model)
    raise ValueError(f"unknown study kind {kind!r}")


#: project-file input kind → the library's input role (the manifest itself is stored as role "manifest")
ROLE_OF_KIND = {"curves": "curve", "swelling": "swelling", "force-temperature": "force_temperature"}
KIND_OF_ROLE = {v: k for k, v in ROLE_OF_KIND.items()}


def _wrap(study, kind: str, title: str, source: str, extra_inputs=(), other_settings=None) -> StudyInput:
    """The study as the library stores it: its inputs by role, its settings, the compounds it compares."""
    s = study.settings
    inputs = list(extra_inputs) + [InputFile(name=i.name, data=bytes(i.data), role=ROLE_OF_KIND.get(i.kind, "curve"),
                                             compound=i.compound, options=dict(i.options)) for i in study.inputs]
    comps = study.compounds if s.chosen is None else [study[n] for n in s.chosen]
    settings = {**(other_settings or {}), "study": s.to_dict()}
    return StudyInput(kind=kind, title=title, source=source, model=s.model, settings=settings, inputs=inputs,
                      compounds=list(comps), baseline=s.baseline, exclusions=s.exclusion_dict, study=study)


def _from_manifest(p: Path, model):
    from ..errors import UserError
    from ..study import Study

    try:
        study = Study.from_manifest(p)
        if model:
            study.update(model=model)
    except (UserError, ValueError) as exc:
        raise LibraryError(f"{p.name}: {exc}") from None
    return _wrap(study, "manifest", study.title or p.stem, p.name,
                 extra_inputs=[InputFile(name=p.name, data=p.read_bytes(), role="manifest")])


def _from_project(p, model):
    from ..errors import UserError
    from ..study import Study

    name = "project" if isinstance(p, bytes) else p.name
    try:
        study = Study.from_project(p)
        if model:
            study.update(model=model)
    except (UserError, ValueError) as exc:
        raise LibraryError(f"{name}: {exc}") from None
    title = study.title or (name if isinstance(p, bytes) else p.stem)
    return _wrap(study, "project", title, name, other_settings=study.extra_settings)


#: a batch output larger than this is refused (a results file of a million curves is ~200 MB)
MAX_BATCH_BYTES = 200_000_000


def _from_batch(p: Path, model):
    from ..batch import read_results

    if p.stat().st_size > MAX_BATCH_BYTES:
        raise LibraryError(f"{p.name} is larger than {MAX_BATCH_BYTES // 1_000_000} MB; import the batch output in "
                           "parts (one folder per run)")
    try:
        rows = read_results(p)
    except Exception as exc:  # a file that is not a batch output: one sentence
        raise LibraryError(f"{p.name} cannot be read as batch results ({exc})") from None
    if not rows or "nu" not in rows[0] or "file" not in rows[0]:
        raise LibraryError(f"{p.name} is not a `netstretch batch` output (no file and nu columns)")
    models = sorted({str(r.get("model")) for r in rows if r.get("model")})
    if len(models) > 1:
        raise LibraryError(f"{p.name} holds results of several models ({', '.join(models)}); import one at a time")
    name = models[0] if models else (model or DEFAULT_MODEL)
    if model and model != name:
        raise LibraryError(f"{p.name} holds {name} results, not {model}")
    st = StudyInput(kind="batch", title=p.stem, source=p.name, model=name, settings={"batch": {"model": name}},
                    inputs=[InputFile(name=p.name, data=p.read_bytes(), role="batch")])
    st.rows = rows  # type: ignore[attr-defined]
    return st


__all__ = ["DEFAULT_MODEL", "InputFile", "StudyInput", "compound_date", "parse_date", "study_from"]
