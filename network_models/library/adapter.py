"""The one place the library meets the rest of netstretch: what a study IS (its inputs with their bytes, its
settings, its compounds) and how its results are computed.  :func:`study_from` is the adapter; when the Study
object (network_models/study.py) lands, only this module is re-pointed at it.

A study to store is a :class:`StudyInput`: the input files (bytes, by SHA-256), the settings, the compounds
(with their curves, read from those bytes), the model and the date each compound was tested.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import re
from dataclasses import dataclass, field
from pathlib import Path

from .db import LibraryError

#: the comparison's default model (``netstretch compare``), used when a study names none
try:
    from ..commands.report import DEFAULT_MODEL
except ImportError:  # pragma: no cover
    DEFAULT_MODEL = "extended-tube"

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


def _rel(path, folder: Path) -> str:
    q = Path(path).resolve()
    try:
        return q.relative_to(folder).as_posix()
    except ValueError:
        return q.name


def _from_manifest(p: Path, model):
    from ..compounds import load_manifest
    from ..models import get_model

    man = load_manifest(p)
    folder = p.resolve().parent
    inputs = [InputFile(name=p.name, data=p.read_bytes(), role="manifest")]
    seen = set()
    for c in man.compounds:
        for cv in c.curves:
            src = cv.source
            if not src or src in seen:
                continue
            seen.add(src)
            modes = {x.mode.value for x in c.curves if x.source == src}
            inputs.append(InputFile(name=_rel(src, folder), data=Path(src).read_bytes(), role="curve",
                                    compound=c.name, options={"mode": modes.pop()} if len(modes) == 1 else {}))
    if man.swelling_path is not None:
        inputs.append(InputFile(name=_rel(man.swelling_path, folder), data=Path(man.swelling_path).read_bytes(),
                                role="swelling"))
    for ft in man.force_temperature:
        inputs.append(InputFile(name=_rel(ft, folder), data=Path(ft).read_bytes(), role="force_temperature"))
    own = man.extra.get("model") if isinstance(man.extra.get("model"), str) else None
    name = get_model(model or own or DEFAULT_MODEL).name
    settings = {"compare": {"model": name, "baseline": man.baseline, "chosen": [c.name for c in man.compounds],
                            "title": man.title, "purpose": man.purpose}}
    return StudyInput(kind="manifest", title=man.title or p.stem, source=p.name, model=name, settings=settings,
                      inputs=inputs, compounds=list(man.compounds), baseline=man.baseline)


def _from_project(p, model):
    from ..compounds import Compound, SwellingTest
    from ..labfiles import read_curves_bytes
    from ..models import get_model

    mod = _project_module()
    name = "project" if isinstance(p, bytes) else p.name
    try:
        proj = mod.read_project(p)
    except ValueError as exc:
        raise LibraryError(str(exc)) from None
    facts = {c.name: c for c in proj.compounds}
    curves: dict[str, list] = {}
    inputs = []
    for inp in proj.inputs:
        group = inp.compound or "uploaded"
        inputs.append(InputFile(name=inp.name, data=bytes(inp.data), role="curve", compound=group,
                                options=dict(inp.options)))
        curves.setdefault(group, []).extend(read_curves_bytes(inp.data, inp.name, **inp.options))
    cmp_settings = dict(proj.settings.get("compare", {}))
    chosen = [n for n in cmp_settings.get("chosen", []) if n in curves] or list(curves)
    comps = []
    for name in chosen:
        fc = facts.get(name)
        meta = dict(fc.metadata) if fc else {}
        if fc and fc.filler and "filler_volume_fraction" not in meta:
            meta["filler_volume_fraction"] = fc.filler
        swell = [SwellingTest(**{k: v for k, v in s.items() if k in _SWELL}) for s in (fc.swelling if fc else [])]
        comps.append(Compound(name=name, curves=curves[name], swelling=swell, metadata=meta,
                              polymer=fc.polymer if fc else "NR", f=fc.f if fc else 4.0,
                              notes=fc.notes if fc else ""))
    own = cmp_settings.get("model")
    mname = get_model(model or own or DEFAULT_MODEL).name
    baseline = cmp_settings.get("baseline") if cmp_settings.get("baseline") in chosen else None
    title = proj.title or (name if isinstance(p, bytes) else p.stem)
    return StudyInput(kind="project", title=title, source=name, model=mname,
                      settings=dict(proj.settings), inputs=inputs, compounds=comps, baseline=baseline)


_SWELL = ("dry", "swollen", "solvent", "chi", "extracted", "temperature", "specimen", "source")


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
