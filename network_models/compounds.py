"""Compounds: a named group of lab tests (any modes), optional swelling results and free metadata.

A compound is what a compounder changes between recipe variants ("cure dose +20 %", "40 phr black").
The comparison (:mod:`network_models.compare`) fits the same model to every compound; the review report
(:mod:`network_models.report`) shows them side by side.

Ways to make compounds::

    Compound("A", curves=[TestCurve(...), ...], metadata={"cure": "2.0 phr S"})
    load_compound("A", ["a_uniaxial.csv", "a_planar.csv"])          # lab files, read by labfiles
    compounds_from_specs(["A=a_uni.csv,a_pl.csv", "B=b_uni.csv"])  # the CLI's --compound NAME=FILE,...
    load_manifest("sample_sets/manifest.toml")                        # a manifest (TOML or JSON)
    load_folder("lab/")                                               # one sub-folder per compound

Manifest format (TOML; JSON with the same keys also works)::

    title = "Cure-dose ladder (invented demo)"
    [[compound]]
    name = "A"
    files = ["A/uniaxial.csv", "A/planar.csv"]      # relative to the manifest
    polymer = "NR"                                   # optional, key of polymers.toml
    f = 4                                            # optional junction functionality
    baseline = true                                  # optional, marks the baseline compound
    notes = "reference recipe"
    [compound.metadata]                              # anything; shown in the report as given
    cure_dose = "1.5 phr sulfur"
    filler_phr = 0
    [[compound.swelling]]                            # optional, one table per swelling test
    solvent = "toluene"
    dry_g = 1.012                                    # mass before swelling, g
    swollen_g = 4.31                                 # blotted swollen mass, g
    extracted_g = 0.981                              # optional: re-dried mass after swelling, g
    chi = 0.39                                       # optional: Flory–Huggins χ (default: solvent table)
    [compound.recipe]                                # optional: recipe in phr (network_models/recipes.py)
    NR = 100.0
    N330 = 50.0
    ZnO = 5.0
    [[ingredient]]                                   # optional: overrides or extends the ingredient table
    name = "ZnO"
    kind = "activator"                               # polymer | filler | plasticiser | curative | accelerator |
                                                     # activator | antidegradant | other
    soluble = false                                  # extracted by the swelling solvent? (defaults by kind)
    density_g_cm3 = 5.60

The ``[compounds.NAME]`` table form (one table per compound) is accepted too, and so is the sample-set
manifest (``[scenario]`` + ``[[compound]]`` with ``key``, files as ``{ path, mode }``, one ``[swelling]``
table; sample_sets/README.md), read here directly.
"""

from __future__ import annotations

import json
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

from .constants import kelvin
from .curves import TestCurve
from .errors import DataError
from .labfiles import read_curves

if TYPE_CHECKING:
    from .swelling import SwellingEstimate


@dataclass
class SwellingTest:
    """One equilibrium-swelling test of a compound: masses in kg (SI; the manifest takes grams as
    ``dry_g``/``swollen_g``/``extracted_g``) — ``dry`` before swelling, ``swollen`` blotted at equilibrium,
    ``extracted`` (optional) re-dried after swelling — solvent, optional χ (None: the solvent table's value for the
    polymer) and temperature (K).  :meth:`estimate` runs :func:`network_models.swelling.swelling_estimate`."""

    dry: float
    swollen: float
    solvent: str = "toluene"
    chi: float | None = None
    extracted: float | None = None
    temperature: float | None = None
    specimen: str | None = None
    source: str = ""

    def __post_init__(self):
        for name in ("dry", "swollen"):
            v = getattr(self, name)
            try:
                v = float(v)
            except (TypeError, ValueError):
                raise DataError(
                    f"swelling test {self.specimen or ''}: {name} mass must be a number, got {v!r}") from None
            if not (math.isfinite(v) and v > 0):
                raise DataError(f"swelling test {self.specimen or ''}: {name} mass must be positive, got {v!r}")
            setattr(self, name, v)
        if self.swollen <= (self.extracted or self.dry):
            raise DataError(f"swelling test {self.specimen or ''}: the swollen mass ({self.swollen:g} kg) must exceed "
                            f"the dry mass ({self.dry:g} kg); check that the two were not swapped")

    @classmethod
    def from_manifest(cls, d: dict) -> SwellingTest:
        d = dict(d)
        for k in ("dry", "swollen", "extracted"):
            if f"{k}_g" in d:
                d[k] = float(d.pop(f"{k}_g")) / 1000.0
        if "temperature_C" in d:
            d["temperature"] = kelvin(float(d.pop("temperature_C")))
        try:
            return cls(**d)
        except TypeError as exc:
            raise DataError(f"swelling entry {d}: {exc}; use dry_g, swollen_g, solvent, chi, extracted_g, "
                            "temperature_C") from None

    @classmethod
    def from_record(cls, r, chi=None) -> SwellingTest:
        """From a :class:`network_models.curves.SwellingResult` row (masses already in kg)."""
        return cls(dry=r.dry_mass, swollen=r.swollen_mass, solvent=r.solvent or "toluene", extracted=r.extracted_mass,
                   chi=chi,
                   temperature=r.temperature, specimen=r.specimen, source=f"{r.source}, line {r.line}")

    def estimate(self, polymer: str = "NR", f: float = 4.0, filler_fraction: float = 0.0,
                 **recipe_options: Any) -> SwellingEstimate:
        """``recipe_options``: ``insoluble_fraction`` and ``rho_polymer`` from :meth:`Compound.swelling_options`."""
        from .swelling import swelling_estimate

        return swelling_estimate(self.dry, self.swollen, self.solvent, polymer, chi=self.chi, f=f,
                                 T=self.temperature, extracted=self.extracted, filler_fraction=filler_fraction,
                                 **recipe_options)

    def to_dict(self) -> dict:
        return {k: getattr(self, k) for k in ("dry", "swollen", "solvent", "chi", "extracted", "temperature",
                                              "specimen", "source")}


@dataclass
class Compound:
    """A named group of test curves in any modes, optional swelling tests and free metadata."""

    name: str
    curves: list[TestCurve] = field(default_factory=list)
    swelling: list[SwellingTest] = field(default_factory=list)
    metadata: dict = field(default_factory=dict)
    polymer: str = "NR"
    f: float = 4.0
    notes: str = ""
    baseline: bool = False
    #: the recipe in phr (:class:`network_models.recipes.Recipe`; a dict of name = phr is resolved), or None
    recipe: Any = None
    #: notices where the manifest's older fields disagree with the recipe (which wins)
    recipe_notices: list = field(default_factory=list)

    def __post_init__(self):
        self.name = str(self.name).strip()
        if not self.name:
            raise DataError("a compound needs a name")
        self.swelling = [s if isinstance(s, SwellingTest) else SwellingTest.from_manifest(s) for s in self.swelling]
        if self.recipe is not None:
            from .recipes import Recipe, recipe_notices

            if not isinstance(self.recipe, Recipe):
                self.recipe = Recipe.from_phr(self.recipe, where=f"compound {self.name!r}: recipe")
            if not self.recipe_notices:
                self.recipe_notices = recipe_notices(self.recipe, self.metadata, self.name, self.polymer)

    def swelling_options(self) -> dict:
        """Keyword arguments for :meth:`SwellingTest.estimate` from the recipe (Ellis–Welding insoluble fraction
        and the polymer's density); empty without a recipe."""
        if self.recipe is None:
            return {}
        return {"insoluble_fraction": self.recipe.insoluble_mass_fraction, "rho_polymer": self.recipe.polymer_density}

    @property
    def filler_fraction(self) -> float:
        """Filler volume fraction of the dry compound: from the recipe when there is one, else the metadata
        (0 when not given)."""
        if self.recipe is not None:
            return float(self.recipe.filler_volume_fraction)
        for k in ("filler_volume_fraction", "filler_fraction"):
            v = self.metadata.get(k)
            if v not in (None, ""):
                try:
                    return float(v)
                except (TypeError, ValueError):
                    raise DataError(f"compound {self.name!r}: {k} = {v!r} is not a number") from None
        return 0.0

    @property
    def modes(self) -> list:
        out = []
        for c in self.curves:
            if c.mode not in out:
                out.append(c.mode)
        return out

    @property
    def sources(self) -> list[str]:
        out = []
        for c in self.curves:
            if c.source and c.source not in out:
                out.append(c.source)
        return out

    def temperature(self) -> float | None:
        """Mean test temperature of the curves that state one, K (None when none does)."""
        ts = [c.temperature for c in self.curves if c.temperature is not None]
        return sum(ts) / len(ts) if ts else None

    def provenance(self) -> list[dict]:
        """One row per curve: file, mode, specimen, cycle, temperature (K), points, stretch span."""
        rows = []
        for c in self.curves:
            rows.append({
                "compound": self.name, "curve": c.name, "source": c.source or "(made in code)",
                "mode": c.mode.value, "specimen": c.specimen, "cycle": c.cycle, "temperature_K": c.temperature,
                "points": len(c), "stretch_min": float(c.stretch.min()) if len(c) else None,
                "stretch_max": float(c.stretch.max()) if len(c) else None,
                "notices": list(c.notices),
            })
        return rows


# ----- loading ---------------------------------------------------------------------------------
def _read(path, **opts) -> list[TestCurve]:
    p = Path(path)
    if not p.exists():
        raise DataError(f"file {str(path)!r} not found; check the path")
    if p.is_dir():
        raise DataError(f"{str(path)!r} is a folder; give the test files inside it")
    curves = read_curves(p, **opts)
    if not curves:
        raise DataError(f"{p.name}: no test curve found in the file")
    return list(curves)


def load_compound(name: str, files, *, polymer="NR", f: float = 4.0, metadata=None, swelling=(), notes: str = "",
                  read_options=None, baseline: bool = False, recipe=None) -> Compound:
    """A compound from one or more lab files (each may hold several curves)."""
    files = [files] if isinstance(files, (str, Path)) else list(files)
    if not files:
        raise DataError(f"compound {name!r}: no files given")
    curves = []
    for fpath in files:
        curves.extend(_read(fpath, **(read_options or {})))
    return Compound(name=name, curves=curves, swelling=list(swelling), metadata=dict(metadata or {}),
                    polymer=polymer, f=float(f), notes=notes, baseline=baseline, recipe=recipe)


def parse_spec(spec: str) -> tuple[str, list[str]]:
    """``"NAME=FILE[,FILE...]"`` -> (name, files), with a clear message when malformed."""
    if "=" not in spec:
        raise DataError(f"--compound {spec!r}: write it as NAME=FILE[,FILE...], e.g. A=a_uniaxial.csv")
    name, _, rest = spec.partition("=")
    files = [x.strip() for x in rest.split(",") if x.strip()]
    if not name.strip() or not files:
        raise DataError(f"--compound {spec!r}: write it as NAME=FILE[,FILE...], e.g. A=a_uniaxial.csv")
    return name.strip(), files


def compounds_from_specs(specs, **kw: Any) -> list[Compound]:
    out: list[Compound] = []
    for spec in specs:
        name, files = parse_spec(spec)
        if any(c.name == name for c in out):
            raise DataError(f"compound {name!r} is given twice; give each compound once with all its files")
        out.append(load_compound(name, files, **kw))
    return out


_KNOWN = {"name", "files", "file", "polymer", "f", "metadata", "swelling", "notes", "baseline", "read_options",
          "recipe"}


def _manifest_recipe(doc, entry: dict, key: str, p: Path):
    """The compound's ``[compound.recipe]`` (name = phr) resolved against the manifest's ``[[ingredient]]``
    rows and the ingredient table in force (network_models.recipes); None without a recipe."""
    raw = entry.get("recipe")
    if raw is None:
        return None
    from .recipes import Recipe, ingredient_rows

    extra = ingredient_rows(doc.get("ingredient", []), f"manifest {p.name}") if isinstance(doc, dict) else {}
    return Recipe.from_phr(raw, extra, where=f"manifest {p.name}: compound {key!r}: [compound.recipe]")


def _manifest_entries(doc) -> list[dict]:
    if isinstance(doc, list):
        return doc
    for key in ("compound", "compounds"):
        if key in doc:
            v = doc[key]
            if isinstance(v, dict):  # [compounds.NAME] tables
                return [dict(body, name=body.get("name", name)) for name, body in v.items()]
            return list(v)
    raise DataError("the manifest has no [[compound]] entries; see network_models/compounds.py for the format")


@dataclass
class Manifest:
    """The one manifest type: compounds (read, with their curves and swelling tests), title, purpose,
    baseline, and for the sample-set format the swelling table and force–temperature files it names."""

    compounds: list[Compound]
    title: str = ""
    purpose: str = ""
    baseline: str | None = None
    path: str = ""
    extra: dict = field(default_factory=dict)
    swelling_path: Path | None = None
    force_temperature: list[Path] = field(default_factory=list)

    def __iter__(self):
        return iter(self.compounds)

    def __getitem__(self, name: str) -> Compound:
        for c in self.compounds:
            if c.name == name:
                return c
        raise KeyError(f"no compound {name!r} in {Path(self.path).name}; it lists "
                       f"{', '.join(c.name for c in self.compounds)}")

    def force_temperature_records(self) -> list:
        from .labfiles import read_force_temperature

        return [read_force_temperature(p) for p in self.force_temperature]


def load_manifest(path=None, **read_options: Any) -> Manifest:
    """Read a manifest (TOML or JSON); file paths in it are relative to the manifest's folder.  Default: the
    bundled sample set (sample_sets/compounds.toml)."""
    if path is None:
        from .labfiles import SAMPLE_MANIFEST as path
    p = Path(path)
    if p.is_dir():
        for cand in ("compounds.toml", "manifest.toml", "manifest.json"):
            if (p / cand).exists():
                p = p / cand
                break
        else:
            raise DataError(f"{str(path)!r} is a folder without manifest.toml or manifest.json")
    if not p.exists():
        raise DataError(f"manifest {str(path)!r} not found; check the path")
    text = p.read_text("utf-8")
    try:
        doc = json.loads(text) if p.suffix.lower() == ".json" else tomllib.loads(text)
    except (tomllib.TOMLDecodeError, json.JSONDecodeError) as exc:
        raise DataError(f"manifest {p.name}: cannot be parsed ({exc}); fix the syntax") from None
    if isinstance(doc, dict) and ("scenario" in doc or any(
            isinstance(e, dict) and "key" in e and "name" not in e for e in doc.get("compound", []))):
        return _from_sample_manifest(p, doc, read_options)
    entries = _manifest_entries(doc)
    comps, baseline = [], doc.get("baseline") if isinstance(doc, dict) else None
    for i, e in enumerate(entries, 1):
        if not isinstance(e, dict) or not e.get("name"):
            raise DataError(f"manifest {p.name}: compound entry {i} has no name")
        files = e.get("files", e.get("file", []))
        files = [files] if isinstance(files, str) else list(files)
        if not files:
            raise DataError(f"manifest {p.name}: compound {e['name']!r} lists no files")
        meta = dict(e.get("metadata", {}))
        meta.update({k: v for k, v in e.items() if k not in _KNOWN})
        opts = dict(read_options)
        opts.update(e.get("read_options", {}))
        swell = e.get("swelling", [])
        swell = [swell] if isinstance(swell, dict) else list(swell)
        try:
            c = load_compound(
                e["name"], [p.parent / fn for fn in files], polymer=e.get("polymer", doc.get("polymer", "NR")
                                                                       if isinstance(doc, dict) else "NR"),
                f=e.get("f", 4.0), metadata=meta, swelling=swell, notes=e.get("notes", ""),
                read_options=opts, baseline=bool(e.get("baseline", False)),
                recipe=_manifest_recipe(doc, e, e["name"], p),
            )
        except TypeError as exc:
            raise DataError(f"manifest {p.name}: compound {e['name']!r}: {exc}") from None
        if c.baseline and baseline is None:
            baseline = c.name
        comps.append(c)
    names = [c.name for c in comps]
    dup = {n for n in names if names.count(n) > 1}
    if dup:
        raise DataError(f"manifest {p.name}: compound name(s) {sorted(dup)} appear more than once")
    extra = {k: v for k, v in doc.items() if k not in ("compound", "compounds", "title", "purpose", "baseline")} \
        if isinstance(doc, dict) else {}
    return Manifest(comps, title=str(doc.get("title", "")) if isinstance(doc, dict) else "",
                    purpose=str(doc.get("purpose", "")) if isinstance(doc, dict) else "",
                    baseline=baseline, path=str(p), extra=extra)


def _from_sample_manifest(p: Path, doc: dict, read_options: dict) -> Manifest:
    """The sample-set manifest format (``[scenario]`` + ``[[compound]]`` with ``key``, files as
    ``{ path, mode, note }``, one ``[swelling]`` table, ``[[force_temperature]]``; sample_sets/README.md),
    parsed by its one parser (:func:`network_models.labfiles.manifest.manifest_index`) and read here."""
    from .labfiles import read_swelling
    from .labfiles.manifest import manifest_index

    index = manifest_index(doc, p)
    scen = index.info
    raw_swell = doc.get("swelling", {})
    if not isinstance(raw_swell, dict):
        raise DataError(f"manifest {p.name}: [swelling] must be one table with a path")
    swell = read_swelling(index.swelling) if index.swelling is not None else []
    comps = []
    for entry in index:
        info = dict(entry.info)
        recipe = _manifest_recipe(doc, info, entry.key, p)
        info.pop("recipe", None)
        notes = str(info.pop("notes", info.pop("note", "")))
        is_baseline = bool(info.pop("baseline", False))
        f = float(info.pop("f", 4.0))
        meta = ({"title": entry.title} if entry.title != entry.key else {}) | info
        curves = []
        for cf in entry.curve_files:
            if not cf.path.exists():
                raise DataError(f"manifest {p.name}: compound {entry.key!r} lists {cf.path.name}, which is not there")
            curves.extend(_read(cf.path, **(dict(read_options) | ({"mode": cf.mode} if cf.mode else {}))))
        tests = [SwellingTest.from_record(r, chi=raw_swell.get("chi")) for r in swell
                 if r.compound in (entry.key, entry.title)]
        comps.append(Compound(name=entry.key, curves=curves, swelling=tests, metadata=meta, polymer=entry.polymer,
                              f=f, notes=notes, baseline=is_baseline, recipe=recipe))
    baseline = scen.get("baseline") or next((c.name for c in comps if c.baseline), None)
    return Manifest(comps, title=str(scen.get("title", p.stem)), purpose=str(scen.get("purpose", scen.get("note", ""))),
                    baseline=baseline, path=str(p), extra=dict(scen), swelling_path=index.swelling,
                    force_temperature=list(index.force_temperature))


#: file endings treated as lab files when loading a folder
LAB_SUFFIXES = (".csv", ".txt", ".tsv", ".dat", ".xlsx", ".xls", ".json")


def load_folder(path: str | Path, **read_options: Any) -> list[Compound]:
    """A folder with a manifest, or one sub-folder per compound holding its lab files."""
    p = Path(path)
    if not p.is_dir():
        raise DataError(f"{str(path)!r} is not a folder")
    if any((p / n).exists() for n in ("compounds.toml", "manifest.toml", "manifest.json")):
        return load_manifest(p, **read_options).compounds
    out = []
    for sub in sorted(x for x in p.iterdir() if x.is_dir() and not x.name.startswith(".")):
        files = sorted(x for x in sub.iterdir() if x.suffix.lower() in LAB_SUFFIXES)
        if files:
            out.append(load_compound(sub.name, files, read_options=read_options))
    if not out:
        raise DataError(f"{p.name}: no sub-folders with lab files found; put each compound's files in its own "
                        "sub-folder, or write a manifest.toml")
    return out


__all__ = [
    "Compound", "Manifest", "SwellingTest", "compounds_from_specs", "load_compound",
    "load_folder", "load_manifest", "parse_spec",
]
