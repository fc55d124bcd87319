"""The netstretch project file: one zip holding a study — every input file byte for byte, every setting and
a summary of the results — described by one TOML file ``project.toml``.  Pure Python (zipfile, tomllib);
:class:`network_models.study.Study` writes and reads it (``Study.to_project`` / ``Study.from_project``), the
app's session does too, and ``netstretch project --manifest FILE -o FILE.zip`` writes one.

Layout of the zip::

    project.toml          the manifest (below)
    inputs/<name>         every input file, byte for byte as it was loaded (names only, never a machine path)

``project.toml`` (version 2)::

    [project]
    format = "netstretch-project"     # this file's kind
    version = 2                       # bumped when the layout changes (1: compound field `filler`)
    created = "2026-12-02T05:00:00+00:00"
    netstretch_version = "…"
    title = "…"
    purpose = "…"

    [settings.study]                  # the study's analysis settings (network_models.study.Settings)
    model = "extended-tube"
    residual = "relative"
    chi_source = "manifest"           # "manifest": a χ stated with the swelling data wins; "table": solvent table
    entanglements = "removed"
    service_temperature_K = 353.15    # left out: the test temperature
    baseline = "QM-S2"
    exclusions = { "QM-S1" = { "S1-4" = "torn at the grip" } }
    design_targets = ["M100=1.7..1.9MPa"]
    design_model = "affine"
    specifications = ["M100=1.6..2.0MPa"]
    [settings.<section>]              # the app's own sections (network, fit, compare, display, swelling)
    [[input]]                         # one per input file
    file = "inputs/a.csv"             # path inside the zip
    name = "a.csv"                    # the name the file had (no folder)
    compound = "A"                    # "" for a study-wide file (swelling table, force–temperature record)
    kind = "curves"                   # "curves" | "swelling" | "force-temperature"
    selected = true                   # in the app's fit selection
    options = { mode = "uniaxial", gauge_length = 0.02 }   # reader options, SI
    conditions = { speed = "500 mm/min", die = "…" }       # test conditions the user stated (text; issue #21)
    [[compound]]                      # recipe facts per compound (SI)
    name = "A"
    polymer = "NR"
    f = 4.0
    filler_volume_fraction = 0.0      # version 1 called it `filler` (still read); in a manifest `filler` is a name
    baseline = false
    notes = ""
    metadata = { … }
    swelling_source = "swelling_toluene.csv"   # the input the swelling tests came from, by name
    swelling = [ { dry = 0.0002, swollen = 0.001, solvent = "toluene", chi = 0.39 } ]   # kg, K
    [results.<section>]               # a summary of the results when saved (for reading; recomputed on open)

Values that are None or not finite are left out (TOML has no null).
"""

from __future__ import annotations

import datetime as _dt
import io
import json
import math
import re
import tomllib
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

from .limits import BoundedZipFile
from .project_schema import check_manifest

FORMAT = "netstretch-project"
VERSION = 2
MANIFEST = "project.toml"
#: refuse archives whose inputs unpack to more than this (a zip bomb, or not our file)
MAX_UNPACKED_BYTES = 200_000_000


class ProjectFileError(ValueError):
    """A project file that cannot be read: the sentence says what is wrong and what to do."""


@dataclass
class ProjectInput:
    name: str
    data: bytes
    compound: str
    options: dict = field(default_factory=dict)
    selected: bool = False
    kind: str = "curves"  # "curves" | "swelling" | "force-temperature"
    #: test conditions the user stated or corrected for this file (network_models.conditions field → text)
    conditions: dict = field(default_factory=dict)


@dataclass
class ProjectCompound:
    name: str
    polymer: str = "NR"
    f: float = 4.0
    filler_volume_fraction: float = 0.0
    notes: str = ""
    metadata: dict = field(default_factory=dict)
    swelling: list = field(default_factory=list)  # dicts of SwellingTest fields (kg, K)
    baseline: bool = False
    swelling_source: str = ""
    #: the recipe in phr (name = phr) and the ingredient rows it needs beyond the built-in table (issue #21)
    recipe: dict = field(default_factory=dict)
    ingredients: list = field(default_factory=list)

    @property
    def filler(self) -> float:  # the version-1 name, for readers of the old attribute
        return self.filler_volume_fraction


@dataclass
class Project:
    settings: dict = field(default_factory=dict)
    inputs: list = field(default_factory=list)
    compounds: list = field(default_factory=list)
    results: dict = field(default_factory=dict)
    title: str = ""
    created: str = ""
    netstretch_version: str = ""
    purpose: str = ""
    version: int = VERSION
    notices: list = field(default_factory=list)  # sentences about fields ignored on reading


# ----- a small TOML writer for the values above --------------------------------------------------------
_BARE = re.compile(r"^[A-Za-z0-9_-]+$")


def _key(k) -> str:
    k = str(k)
    return k if _BARE.match(k) else json.dumps(k, ensure_ascii=False)


def _clean(v):
    """Drop None and non-finite floats (TOML has no null); tuples become lists."""
    if isinstance(v, dict):
        return {str(k): c for k, x in v.items() if (c := _clean(x)) is not None}
    if isinstance(v, (list, tuple)):
        return [c for x in v if (c := _clean(x)) is not None]
    if isinstance(v, float) and not math.isfinite(v):
        return None
    if v is None or isinstance(v, (str, bool, int, float)):
        return v
    if hasattr(v, "item"):  # numpy scalars
        return _clean(v.item())
    return str(v)


def _value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float)):
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, list):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{_key(k)} = {_value(x)}" for k, x in v.items()) + " }"
    raise TypeError(f"cannot write {type(v).__name__} to TOML")


def _table(header: str, d: dict, array: bool = False) -> str:
    head = f"[[{header}]]" if array else f"[{header}]"
    return head + "\n" + "".join(f"{_key(k)} = {_value(v)}\n" for k, v in _clean(d).items()) + "\n"


def manifest_text(project: Project, files: list[str]) -> str:
    from_version = project.netstretch_version
    out = [_table("project", {"format": FORMAT, "version": VERSION, "created": project.created,
                              "netstretch_version": from_version, "title": project.title,
                              "purpose": project.purpose})]
    for section, values in project.settings.items():
        out.append(_table(f"settings.{_key(section)}", values))
    for inp, path in zip(project.inputs, files, strict=True):
        out.append(_table("input", {"file": path, "name": inp.name, "compound": inp.compound,
                                    "kind": inp.kind, "selected": bool(inp.selected), "options": inp.options,
                                    **({"conditions": inp.conditions} if inp.conditions else {})},
                          array=True))
    for c in project.compounds:
        out.append(_table("compound", {"name": c.name, "polymer": c.polymer, "f": float(c.f),
                                       "filler_volume_fraction": float(c.filler_volume_fraction),
                                       "baseline": bool(c.baseline), "notes": c.notes, "metadata": c.metadata,
                                       "swelling_source": c.swelling_source, "swelling": c.swelling,
                                       **({"recipe": c.recipe, "ingredients": c.ingredients} if c.recipe else {})},
                          array=True))
    for section, values in project.results.items():
        out.append(_table(f"results.{_key(section)}", values))
    return "".join(out)


def write_project(project: Project) -> bytes:
    """The project as zip bytes (``project.toml`` first, then ``inputs/…``)."""
    if not project.created:
        project.created = _dt.datetime.now(_dt.UTC).replace(microsecond=0).isoformat()
    paths, used = [], set()
    for inp in project.inputs:
        base = Path(inp.name).name or "input"
        cand, i = base, 2
        while cand in used:
            stem, dot, ext = base.rpartition(".")
            cand = f"{stem}-{i}.{ext}" if dot else f"{base}-{i}"
            i += 1
        used.add(cand)
        paths.append(f"inputs/{cand}")
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression=zipfile.ZIP_DEFLATED) as z:
        z.writestr(MANIFEST, manifest_text(project, paths))
        for inp, path in zip(project.inputs, paths, strict=True):
            z.writestr(path, bytes(inp.data))
    return buf.getvalue()


def read_project(source) -> Project:
    """A project from zip bytes or a path.  Raises :class:`ProjectFileError` with a sentence."""
    name = "the project file"
    if isinstance(source, (str, Path)):
        name = Path(source).name
        try:
            source = Path(source).read_bytes()
        except OSError as exc:
            raise ProjectFileError(f"{name}: cannot be opened ({exc.strerror or exc})") from None
    try:
        z = BoundedZipFile(io.BytesIO(bytes(source)), name, ProjectFileError)  # members counted as they inflate
    except zipfile.BadZipFile:
        raise ProjectFileError(f"{name} is not a netstretch project (not a zip file); choose a .nsproj.zip "
                               "file saved by netstretch") from None
    with z:
        if MANIFEST not in z.namelist():
            raise ProjectFileError(f"{name} has no {MANIFEST}: it is a zip file, but not a netstretch project")
        if sum(i.file_size for i in z.infolist()) > MAX_UNPACKED_BYTES:
            raise ProjectFileError(f"{name} unpacks to more than {MAX_UNPACKED_BYTES // 1_000_000} MB; "
                                   "it is not a project this app wrote")
        try:
            doc = tomllib.loads(z.read(MANIFEST).decode("utf-8"))
        except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
            raise ProjectFileError(f"{name}: {MANIFEST} cannot be read ({exc})") from None
        doc = check_manifest(doc, name, ProjectFileError)  # types checked, unknown fields dropped with a notice
        head = doc.get("project", {})
        if head.get("format") != FORMAT:
            raise ProjectFileError(f"{name}: {MANIFEST} does not say format = \"{FORMAT}\"")
        if int(head.get("version", 0)) > VERSION:
            raise ProjectFileError(f"{name} was written by a newer netstretch (project version "
                                   f"{head.get('version')}); update netstretch to open it")
        inputs = []
        for i, e in enumerate(doc.get("input", []), 1):
            path = str(e.get("file", ""))
            if path not in z.namelist():
                raise ProjectFileError(f"{name}: input {i} ({e.get('name', path)}) is listed but not in the zip")
            inputs.append(ProjectInput(name=str(e.get("name", Path(path).name)), data=z.read(path),
                                       compound=str(e.get("compound", "")), options=dict(e.get("options", {})),
                                       selected=bool(e.get("selected", False)), kind=str(e.get("kind", "curves")),
                                       conditions=dict(e.get("conditions", {}))))
    version = int(head.get("version", 1))
    compounds = []
    for c in doc.get("compound", []):
        if "name" not in c:
            continue
        # version 1 wrote the filler volume fraction as `filler`; version 2 as `filler_volume_fraction`
        phi = c.get("filler_volume_fraction", c.get("filler", 0.0) if version < 2 else 0.0)
        try:
            phi = float(phi)
        except (TypeError, ValueError):
            raise ProjectFileError(f"{name}: compound {c['name']!r} has filler_volume_fraction = {phi!r}, not a "
                                   "number") from None
        compounds.append(ProjectCompound(
            name=str(c["name"]), polymer=str(c.get("polymer", "NR")), f=float(c.get("f", 4.0)),
            filler_volume_fraction=phi, notes=str(c.get("notes", "")), metadata=dict(c.get("metadata", {})),
            swelling=list(c.get("swelling", [])), baseline=bool(c.get("baseline", False)),
            swelling_source=str(c.get("swelling_source", "")),
            recipe=dict(c.get("recipe", {})), ingredients=list(c.get("ingredients", []))))
    return Project(settings=dict(doc.get("settings", {})), inputs=inputs, compounds=compounds,
                   results=dict(doc.get("results", {})), title=str(head.get("title", "")),
                   created=str(head.get("created", "")), netstretch_version=str(head.get("netstretch_version", "")),
                   purpose=str(head.get("purpose", "")), version=version, notices=list(head.get("notices", [])))
