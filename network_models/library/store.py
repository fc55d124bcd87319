"""Putting studies into the library and taking them out again: import (idempotent, safe under concurrent
imports), the rows stored per compound (results per model and basis), and export back to a project file."""

from __future__ import annotations

import datetime as _dt
import getpass
import json
import math
import time
from dataclasses import dataclass

from . import schema as S
from .adapter import StudyInput, compound_date, study_from
from .db import LibraryError, connect, masked

#: basis keys of the stored strand density, by the comparison's basis tier (compare/specimens.py BASIS_TIERS)
BASIS_KEYS = ("affine-no-entanglement", "affine-all")
#: the trend's default basis: affine, all of G read as strands (entanglements counted) — never negative
DEFAULT_BASIS = "affine-all"
#: basis key of quantities that are the model's own (G₀, lock, N, trade moduli)
MODEL_BASIS = "model"
#: the specimen quantities stored per compound besides the strand density
QUANTITIES = ("G0", "N", "lock", "M100_measured", "M300_measured", "M100_predicted", "M300_predicted")


@dataclass
class ImportResult:
    study: int
    created: bool
    title: str
    compounds: int
    notes: list

    def sentence(self) -> str:
        what = "imported as study" if self.created else "already in the library as study"
        out = f"{self.title}: {what} {self.study} ({self.compounds} compounds)"
        return out + "".join(f"\nnote: {n}" for n in self.notes)

    def to_dict(self) -> dict:
        return {"study": self.study, "created": self.created, "title": self.title, "compounds": self.compounds,
                "notes": list(self.notes)}


def _num(x):
    if x is None:
        return None
    try:
        x = float(x)
    except (TypeError, ValueError):
        return None
    return x if math.isfinite(x) else None


def _json(x) -> str:
    return json.dumps(x, sort_keys=True, default=str, ensure_ascii=False)


# ----- rows from a comparison ----------------------------------------------------------------------------------
def _result_rows(r, model: str) -> list[dict]:
    """A compared compound's results: strand density on both bases (headline flagged) and the model quantities,
    each with its 95 % interval (specimen scatter with fit error; None with one specimen) and n."""
    from ..compare.specimens import SPECIMEN_QUANTITIES, TABLE_KEY, basis_label
    from ..statistics import combined_interval, summarize

    c = r.compound
    filled = c.filler_fraction > 0
    rows = []
    used = [s for s in r.specimens if s.used]
    for tier, key in enumerate(BASIS_KEYS):
        h = r.headline
        if h is not None and h.tier == tier:
            value, ci, n = h.value, h.ci95, h.n
        else:
            vals = [s.values.get(f"nu@{tier}") for s in used]
            summ = summarize(vals)
            if summ.n:
                value, n = summ.mean, summ.n
                ci = combined_interval(summ, [s.fit_se.get(f"nu@{tier}") for s in used
                                              if s.values.get(f"nu@{tier}") is not None])
            else:
                value, ci, n = (r.pooled_nu.get(tier) or (None, None))[0], None, 0
        rows.append({"model": model, "quantity": "strand_density", "basis": key,
                     "basis_label": basis_label(tier, filled, c.filler_fraction),
                     "headline": bool(h is not None and h.tier == tier), "value": _num(value),
                     "ci_low": _num(ci[0]) if ci else None, "ci_high": _num(ci[1]) if ci else None, "n": int(n or 0),
                     "unit": "mol/m³"})
    for q in QUANTITIES:
        qt = r.quantities.get(TABLE_KEY[q])
        if qt is None:
            continue
        rows.append({"model": model, "quantity": q, "basis": MODEL_BASIS,
                     "basis_label": f"{SPECIMEN_QUANTITIES[q][0]} of the {model} fit", "headline": False,
                     "value": _num(qt.value), "ci_low": _num(qt.low), "ci_high": _num(qt.high), "n": int(qt.n or 0),
                     "unit": SPECIMEN_QUANTITIES[q][1]})
    return rows


def _recipe(c):
    """The compound's recipe when the compound carries one (phr per ingredient), as plain data; else None."""
    rec = getattr(c, "recipe", None)
    if rec is None:
        return None
    return rec.to_dict() if hasattr(rec, "to_dict") else rec


def _recipe_record(c) -> dict:
    """The recipe as the project file holds it (phr and the ingredient rows it needs), so an export keeps it."""
    from ..study import recipe_record

    return recipe_record(c)


def _conditions(c) -> list[dict]:
    """Test conditions per curve (file by name only — never the folder it was read from)."""
    from pathlib import PurePath

    return [{"curve": x["curve"], "file": PurePath(str(x["source"])).name, "mode": x["mode"],
             "specimen": x["specimen"], "cycle": x["cycle"], "temperature_K": x["temperature_K"], "points": x["points"]}
            for x in c.provenance()]


def _analyse(st: StudyInput, today) -> list[dict]:
    """The study's own comparison (``Study.comparison()``: its model, weighting, χ source, exclusions — the
    numbers `compare` gives for the same study) → one dict per compound with specimens and result rows."""
    from ..errors import UserError

    if not st.compounds or st.study is None:
        raise LibraryError(f"{st.source}: the study has no compounds to store")
    try:
        cmp = st.study.comparison()
    except (UserError, ValueError) as exc:
        raise LibraryError(f"{st.source}: {exc}") from None
    out = []
    for r in cmp.results:
        c = r.compound
        tested, src = compound_date(c, today)
        out.append({
            "name": c.name, "polymer": c.polymer, "f": float(c.f), "filler": float(c.filler_fraction),
            "tested": tested, "date_source": src,
            "metadata": _json({"metadata": c.metadata, "notes": c.notes,
                               "swelling": [s.to_dict() for s in c.swelling],
                               "test_temperature_K": r.test_temperature, "conditions": _conditions(c),
                               "recipe": _recipe(c), "project_recipe": _recipe_record(c)}),
            "n": int(r.n), "error": r.error,
            "specimens": [{"name": s.name, "used": bool(s.used), "excluded": s.excluded,
                           "values": _json({k: _num(v) for k, v in s.values.items()})} for s in r.specimens],
            "results": [] if not r.ok else _result_rows(r, cmp.model),
        })
    return out


def _batch_compounds(st, today) -> list[dict]:
    """A batch output's rows grouped by compound (each row a specimen): G₀ and ν (affine, all of G — the batch's
    own basis) as specimen means with Student-t 95 % intervals (no fit error in a batch file)."""
    from ..statistics import summarize

    groups: dict[str, list] = {}
    for row in st.rows:
        name = str(row.get("compound") or "").strip() or str(row.get("file") or "").rsplit("/", 1)[-1]
        groups.setdefault(name, []).append(row)
    out = []
    for name, rows in groups.items():
        ok = [r for r in rows if not r.get("error") and _num(r.get("nu")) is not None]
        results = []
        for q, col, basis, label, unit in (
                ("strand_density", "nu", DEFAULT_BASIS, "affine network, entanglements counted as crosslinks "
                 "(upper bound)", "mol/m³"),
                ("G0", "G0", MODEL_BASIS, f"small-strain shear modulus G₀ of the {st.model} fit", "Pa")):
            s = summarize([_num(r.get(col)) for r in ok])
            if s.n:
                results.append({"model": st.model, "quantity": q, "basis": basis, "basis_label": label,
                                "headline": q == "strand_density", "value": s.mean,
                                "ci_low": s.ci95[0] if s.ci95 else None, "ci_high": s.ci95[1] if s.ci95 else None,
                                "n": s.n, "unit": unit})
        out.append({"name": name, "polymer": "NR", "f": 4.0, "filler": 0.0, "tested": today, "date_source": "import",
                    "metadata": _json({"metadata": {}, "notes": "from a batch output", "swelling": []}),
                    "n": len(ok), "error": None if ok else "no curve of this compound could be fitted",
                    "specimens": [{"name": str(r.get("specimen") or r.get("curve") or r.get("file")),
                                   "used": r in ok, "excluded": None,
                                   "values": _json({"G0": _num(r.get("G0")), "nu@1": _num(r.get("nu"))})}
                                  for r in rows],
                    "results": results})
    return out


# ----- import ------------------------------------------------------------------------------------------------
_RETRY_WORDS = ("locked", "deadlock", "could not serialize", "busy")


def _existing(conn, h):
    from sqlalchemy import select

    return conn.execute(select(S.studies.c.id).where(S.studies.c.content_hash == h)).scalar()


def _write(conn, st: StudyInput, h: str, comps: list[dict], saved_by, now) -> int:
    from sqlalchemy import insert, select

    from .. import __version__

    for inp in st.inputs:
        sha = inp.sha256
        if conn.execute(select(S.blobs.c.sha256).where(S.blobs.c.sha256 == sha)).scalar() is None:
            conn.execute(insert(S.blobs).values(sha256=sha, size=len(inp.data), data=inp.data))
    sid = conn.execute(insert(S.studies).values(
        content_hash=h, kind=st.kind, title=st.title, source=st.source, model=st.model, settings=_json(st.settings),
        imported_at=now, saved_by=saved_by, netstretch_version=__version__, notes="").returning(S.studies.c.id)
    ).scalar_one()
    conn.execute(insert(S.inputs), [{"study_id": sid, "name": i.name, "sha256": i.sha256, "role": i.role,
                                     "compound": i.compound, "options": _json(i.options)} for i in st.inputs])
    for c in comps:
        cid = conn.execute(insert(S.compounds).values(
            study_id=sid, name=c["name"], polymer=c["polymer"], f=c["f"], filler=c["filler"], tested=c["tested"],
            date_source=c["date_source"], metadata=c["metadata"], n=c["n"], error=c["error"]
        ).returning(S.compounds.c.id)).scalar_one()
        if c["specimens"]:
            conn.execute(insert(S.specimens), [dict(s, compound_id=cid) for s in c["specimens"]])
        if c["results"]:
            conn.execute(insert(S.results), [dict(x, compound_id=cid) for x in c["results"]])
    if st.kind == "batch":
        rid = conn.execute(insert(S.batch_runs).values(study_id=sid, model=st.model, source=st.source,
                                                       rows=len(st.rows)).returning(  # type: ignore[attr-defined]
                                                       S.batch_runs.c.id)).scalar_one()
        known = {"file", "curve", "specimen", "compound", "mode", "model", "points", "G0", "nu", "nu_basis", "rms",
                 "r2", "warnings", "error", "index"}
        conn.execute(insert(S.batch_rows), [{
            "run_id": rid, "file": str(r.get("file") or ""), "curve": str(r.get("curve") or ""),
            "specimen": str(r.get("specimen") or ""), "compound": str(r.get("compound") or ""),
            "mode": str(r.get("mode") or ""), "G0": _num(r.get("G0")), "nu": _num(r.get("nu")),
            "nu_basis": str(r.get("nu_basis") or ""), "rms": _num(r.get("rms")), "r2": _num(r.get("r2")),
            "warnings": str(r.get("warnings") or ""), "error": str(r.get("error") or ""),
            "params": _json({k: _num(v) for k, v in r.items() if k not in known})} for r in st.rows])  # type: ignore[attr-defined]
    return sid


def store(st: StudyInput, db=None, *, saved_by: str | None = None, engine=None) -> ImportResult:
    """Store a study (see :mod:`.adapter`) unless the same inputs and settings are already there.  Two imports of
    the same study at the same moment store it once: the content hash is UNIQUE, and the loser of the race finds
    the winner's study on its retry."""
    from sqlalchemy.exc import IntegrityError, OperationalError

    eng = engine or connect(db)
    h = st.content_hash()
    with eng.connect() as conn:
        sid = _existing(conn, h)
    title = st.title
    if sid is not None:
        return ImportResult(sid, False, title, len(st.compounds) or len({r.get("compound") for r in
                                                                          getattr(st, "rows", [])}), [])
    now = _dt.datetime.now(_dt.UTC).replace(microsecond=0)
    comps = _batch_compounds(st, now.date()) if st.kind == "batch" else _analyse(st, now.date())
    notes = []
    undated = [c["name"] for c in comps if c["date_source"] == "import"]
    if undated:
        notes.append(f"{', '.join(undated)}: no test date in the manifest (tested = \"YYYY-MM-DD\") or a '# date:' "
                     f"line, so the import date {now.date().isoformat()} is used")
    failed = [f"{c['name']} ({c['error']})" for c in comps if c["error"]]
    if failed:
        notes.append("stored without results: " + "; ".join(failed))
    if saved_by is None:
        try:
            saved_by = getpass.getuser()
        except (KeyError, OSError):  # no login name (some containers)
            saved_by = None
    for attempt in range(12):
        try:
            with eng.begin() as conn:
                sid = _existing(conn, h)
                if sid is not None:
                    return ImportResult(sid, False, title, len(comps), [])
                sid = _write(conn, st, h, comps, saved_by, now)
            return ImportResult(sid, True, title, len(comps), notes)
        except IntegrityError:
            time.sleep(0.05 * (attempt + 1))  # the other import stored it (or a shared blob) first: look again
        except OperationalError as exc:
            if not any(w in str(exc).lower() for w in _RETRY_WORDS) or attempt == 11:
                raise LibraryError(f"the library {masked(eng.url)} could not store the study "
                                   f"({str(exc.orig).splitlines()[0] if exc.orig else exc})") from None
            time.sleep(0.1 * (attempt + 1))
    raise LibraryError(f"the library {masked(eng.url)} stayed busy; try the import again")


def import_study(kind: str, path, db=None, *, model=None, saved_by=None, engine=None) -> ImportResult:
    """``library import``: a manifest, a project zip or a batch output → the library."""
    return store(study_from(kind, path, model), db, saved_by=saved_by, engine=engine)


# ----- export ------------------------------------------------------------------------------------------------------
def export_study(study_id: int, db=None, *, engine=None) -> bytes:
    """A stored study as its project file: the study rebuilt from its inputs (byte for byte, every kind), its
    compound facts and its settings, then written by ``Study.to_project`` — so ``compare --project`` on the export
    gives the numbers the study gave when it was imported."""
    from sqlalchemy import select

    from ..study import Study
    from .adapter import KIND_OF_ROLE, _project_module

    mod = _project_module()
    eng = engine or connect(db)
    with eng.connect() as conn:
        st = conn.execute(select(S.studies).where(S.studies.c.id == int(study_id))).mappings().first()
        if st is None:
            raise LibraryError(f"no study {study_id} in the library {masked(eng.url)}; `netstretch library find` "
                               "lists study numbers")
        ins = conn.execute(select(S.inputs, S.blobs.c.data).join(S.blobs, S.blobs.c.sha256 == S.inputs.c.sha256)
                           .where(S.inputs.c.study_id == st["id"]).order_by(S.inputs.c.id)).mappings().all()
        comps = conn.execute(select(S.compounds).where(S.compounds.c.study_id == st["id"])
                             .order_by(S.compounds.c.id)).mappings().all()
    if st["kind"] == "batch":
        raise LibraryError(f"study {study_id} is a batch output, not a comparison: it has no project file; its rows "
                           "are in the library's batch_rows table")
    inputs = [mod.ProjectInput(name=i["name"], data=bytes(i["data"]), compound=i["compound"],
                               options=json.loads(i["options"]), selected=True, kind=KIND_OF_ROLE[i["role"]])
              for i in ins if i["role"] in KIND_OF_ROLE]
    pcs = []
    for c in comps:
        facts = json.loads(c["metadata"])
        meta = dict(facts.get("metadata", {}))
        meta.setdefault("tested", c["tested"].isoformat())
        pcs.append(mod.ProjectCompound(name=c["name"], polymer=c["polymer"], f=c["f"],
                                       filler_volume_fraction=c["filler"],
                                       notes=facts.get("notes", ""), metadata=meta,
                                       swelling=list(facts.get("swelling", [])),
                                       **facts.get("project_recipe", {})))  # recipe and own ingredient rows
    settings = json.loads(st["settings"])
    if "study" not in settings:  # stored before the library kept the study's settings: the model it was stored with
        settings.setdefault("compare", {})["model"] = st["model"]
    data = mod.write_project(mod.Project(settings=settings, inputs=inputs, compounds=pcs, title=st["title"],
                                         netstretch_version=st["netstretch_version"]))
    try:
        return Study.from_project(data).to_project()
    except ValueError as exc:  # UserError or a project-file error: the stored study cannot be opened again
        raise LibraryError(f"study {study_id} cannot be written as a project file ({exc})") from None


__all__ = ["BASIS_KEYS", "DEFAULT_BASIS", "ImportResult", "export_study", "import_study", "store"]
