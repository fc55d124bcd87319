"""The one parser of the sample-set manifest format (``compounds.toml``, sample_sets/README.md): which curve
files, swelling and force–temperature files belong to which compound — an index, read lazily (no curve is
read until asked).  :func:`network_models.compounds.load_manifest` builds loaded
:class:`~network_models.compounds.Compound` objects from it; this module holds no compound of its own."""

from __future__ import annotations

import tomllib
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..curves import ForceTemperatureRecord, SwellingResult, TestCurve
from ..deformation import Mode
from ..errors import DataError
from ..samples import SAMPLE_MANIFEST  # the bundled manifest: installed package or checkout (network_models.samples)
from .api import read_curves
from .records import read_force_temperature, read_swelling


@dataclass
class CurveFile:
    path: Path
    mode: Mode | None = None  # None: from the file's metadata
    note: str = ""


@dataclass(kw_only=True)
class ManifestEntry:
    """One compound's entry in a manifest: its curve files and what the recipe says (not yet read)."""

    key: str
    title: str
    polymer: str = "NR"
    curve_files: list[CurveFile] = field(default_factory=list)
    info: dict = field(default_factory=dict)  # cure dose, filler phr, filler volume fraction, notes...
    #: the manifest's [[ingredient]] rows (for the recipe in ``info["recipe"]``, network_models.recipes)
    ingredient_rows: list = field(default_factory=list)

    @property
    def recipe(self) -> Any:
        """The ``[compound.recipe]`` resolved (:class:`network_models.recipes.Recipe`), or None."""
        raw = self.info.get("recipe")
        if not isinstance(raw, dict):
            return None
        from ..recipes import Recipe, ingredient_rows

        extra = ingredient_rows(self.ingredient_rows, "manifest") if self.ingredient_rows else {}
        return Recipe.from_phr(raw, extra, where=f"compound {self.key!r}: [compound.recipe]")

    def curves(self) -> list[TestCurve]:
        out = []
        for cf in self.curve_files:
            out.extend(read_curves(cf.path, mode=cf.mode))
        return out

    @property
    def filler_fraction(self) -> float:
        """The recipe's filler volume fraction when there is a recipe (it wins), else the stated one."""
        r = self.recipe
        return float(r.filler_volume_fraction) if r is not None else float(self.info.get("filler_volume_fraction", 0.0))


@dataclass
class ManifestIndex:
    """A manifest's file index: entries per compound, the swelling table and force–temperature files."""

    path: Path
    title: str
    note: str
    compounds: list[ManifestEntry]
    swelling: Path | None = None
    force_temperature: list[Path] = field(default_factory=list)
    info: dict = field(default_factory=dict)
    #: the [swelling] table's other keys (solvent, chi, note): the manifest's χ wins over the solvent table's
    swelling_info: dict = field(default_factory=dict)

    def __getitem__(self, key: str) -> ManifestEntry:
        for c in self.compounds:
            if c.key == key:
                return c
        raise KeyError(f"no compound {key!r} in {self.path.name}; it lists {', '.join(c.key for c in self.compounds)}")

    def __iter__(self) -> Iterator[ManifestEntry]:
        return iter(self.compounds)

    def swelling_results(self) -> list[SwellingResult]:
        return read_swelling(self.swelling) if self.swelling else []

    def force_temperature_records(self) -> list[ForceTemperatureRecord]:
        return [read_force_temperature(p) for p in self.force_temperature]


def read_manifest(path: str | Path | None = None) -> ManifestIndex:
    """Read a sample-set manifest (``compounds.toml``; format in sample_sets/README.md).  File paths in it
    are relative to the manifest.  Default: the bundled sample set.  Raises DataError for a missing or
    malformed manifest (the files it lists are read later, by ``ManifestEntry.curves()``)."""
    p = Path(path) if path is not None else SAMPLE_MANIFEST
    try:
        raw = tomllib.loads(p.read_text("utf-8"))
    except OSError as e:
        raise DataError(f"{p}: cannot open the manifest ({e.strerror or e})") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as e:
        raise DataError(f"{p.name}: not a valid TOML manifest ({e})") from None
    try:
        return manifest_index(raw, p)
    except DataError:
        raise
    except (KeyError, TypeError, AttributeError, ValueError) as e:
        raise DataError(f"{p.name}: the manifest does not follow the format in sample_sets/README.md "
                        f"({type(e).__name__}: {e}); every [[compound]] needs a key and files with a path") from None


def manifest_index(raw: dict, p: Path) -> ManifestIndex:
    """The index of a parsed manifest document ``raw`` found at ``p`` (paths relative to it)."""
    base = p.parent
    scen = raw.get("scenario", {})
    if not isinstance(scen, dict):
        raise DataError(f"{p.name}: [scenario] must be a table")
    compounds = []
    for i, c in enumerate(raw.get("compound", []), start=1):
        if not isinstance(c, dict) or "key" not in c:
            raise DataError(f"{p.name}: compound number {i} has no 'key'")
        files = []
        for f in c.get("files", []):
            if isinstance(f, str):
                f = {"path": f}
            if not isinstance(f, dict) or not isinstance(f.get("path"), str):
                raise DataError(f"{p.name}: compound {c['key']!r}: each file needs a path, e.g. "
                                '{ path = "A_uniaxial.csv", mode = "uniaxial" }')
            try:
                mode = Mode.parse(f["mode"]) if f.get("mode") else None
            except ValueError as e:
                raise DataError(f"{p.name}: compound {c['key']!r}: {e}") from None
            files.append(CurveFile(base / f["path"], mode, str(f.get("note", ""))))
        info = {k: v for k, v in c.items() if k not in ("key", "title", "polymer", "files")}
        compounds.append(ManifestEntry(key=str(c["key"]), title=str(c.get("title", c["key"])),
                                       polymer=str(c.get("polymer", scen.get("polymer", "NR"))), curve_files=files,
                                       info=info,
                                       ingredient_rows=list(raw.get("ingredient",
                                                                    [])) if isinstance(raw.get("ingredient"), list)
                                       else []))
    keys = [c.key for c in compounds]
    if len(set(keys)) != len(keys):
        raise DataError(f"{p.name}: compound keys must be unique; got {', '.join(keys)}")
    return ManifestIndex(
        path=p, title=str(scen.get("title", p.stem)), note=str(scen.get("note", "")), compounds=compounds,
        swelling=base / raw["swelling"]["path"] if "swelling" in raw else None,
        force_temperature=[base / r["path"] for r in raw.get("force_temperature", [])],
        info=scen,
        swelling_info={k: v for k, v in raw.get("swelling", {}).items() if k != "path"}
        if isinstance(raw.get("swelling"), dict) else {},
    )
