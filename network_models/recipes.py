"""Recipes in phr: what a compound is made of, and the fractions the models need derived from it.

A compounder writes a recipe in parts per hundred rubber (phr).  From the recipe and each ingredient's
density and kind this module derives (docs/methods.md §recipes):

* the filler volume fraction of the compound, φ = Σ_fillers(phr/ρ) / Σ_all(phr/ρ) — only ``kind = "filler"``
  counts as filler, every ingredient (oil included) is in the compound volume; it feeds Guth–Gold, Kraus,
  strain amplification, the explorer and design;
* the rubber mass fraction Σ_polymers(phr) / Σ_all(phr) and rubber volume fraction Σ_polymers(phr/ρ) / Σ_all(phr/ρ);
* the insoluble mass fraction F (Ellis & Welding 1964, see :mod:`network_models.swelling`): the fillers plus
  every ingredient marked ``soluble = false`` that is not part of the network.  Polymer, curatives and
  accelerators are never in F (they count with the rubber network); plasticisers, activators,
  antidegradants and "other" are extracted by the swelling solvent unless marked ``soluble = false``.

Ingredients come from the built-in table ``ingredients.toml`` (density with its source each; recalled values
marked ``[memory]``), extended or overridden by the user's own table (``--ingredients FILE`` or
``$NETSTRETCH_INGREDIENTS``, same fields) and by a manifest's ``[[ingredient]]`` rows.  A polymer named in a
recipe is a key of the polymer table (:mod:`network_models.materials`); its density comes from there.

    >>> from network_models.recipes import Recipe
    >>> r = Recipe.from_phr({"NR": 100, "N330": 50, "ZnO": 5, "stearic-acid": 2, "sulfur": 2.5, "CBS": 0.6})
    >>> round(r.filler_volume_fraction, 3), round(r.insoluble_mass_fraction, 3)
"""

from __future__ import annotations

import math
import os
import tomllib
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING

from .errors import DataError, Notice

if TYPE_CHECKING:
    import argparse

__all__ = [
    "ENV_VAR", "KINDS", "NETWORK_KINDS", "SOLUBLE_DEFAULT", "Ingredient", "Recipe", "add_ingredients_option",
    "apply_ingredients_option", "builtin_ingredients", "get_ingredient", "ingredient_rows", "ingredients",
    "load_ingredient_table", "parse_recipe_text", "recipe_notices", "recipe_text", "use_ingredient_table",
]

#: environment variable naming a user ingredient table (used when :func:`use_ingredient_table` was not called)
ENV_VAR = "NETSTRETCH_INGREDIENTS"
#: the kinds an ingredient may have (manifest contract, issue #21)
KINDS = ("polymer", "filler", "plasticiser", "curative", "accelerator", "activator", "antidegradant", "other")
#: kinds that count with the rubber network in swelling: never in the insoluble fraction F
NETWORK_KINDS = ("polymer", "curative", "accelerator")
#: whether the swelling solvent extracts an ingredient of this kind when its row does not say
SOLUBLE_DEFAULT = {"polymer": False, "filler": False, "plasticiser": True, "curative": False,
                   "accelerator": False, "activator": True, "antidegradant": True, "other": True}
#: sane density range, g/cm³ [common practice: from oils (~0.8) to zinc oxide and lead compounds]
DENSITY_RANGE = (0.5, 12.0)


def _norm(name) -> str:
    return str(name).strip().lower().replace("_", "-").replace(" ", "-")


@dataclass(frozen=True, kw_only=True)
class Ingredient:
    """One ingredient: name, kind, density (kg/m³, SI), whether the swelling solvent extracts it, source."""

    name: str
    kind: str
    density: float  # kg/m³
    soluble: bool
    source: str
    title: str = ""
    origin: str = "built-in"  # "built-in", a table's path, "manifest" or "polymer table"

    @property
    def in_network(self) -> bool:
        return self.kind in NETWORK_KINDS

    @property
    def insoluble(self) -> bool:
        """Counts in the insoluble mass fraction F: a filler, or a non-network ingredient marked insoluble."""
        return self.kind == "filler" or (not self.in_network and not self.soluble)

    def to_dict(self) -> dict:
        return {"name": self.name, "kind": self.kind, "density_g_cm3": self.density / 1000.0,
                "soluble": self.soluble, "source": self.source, "origin": self.origin}


def _fail(origin, msg, row=None, fld=None):
    where = f"ingredient table {origin}" + (f", row [{row}]" if row else "") + (f", field '{fld}'" if fld else "")
    raise DataError(f"{where}: {msg}", file=str(origin), column=fld, kind="ingredient-table", row=row)


_FIELDS = {"name", "title", "kind", "soluble", "density_g_cm3", "source"}


def ingredient_row(name, r, origin, base: Ingredient | None = None) -> Ingredient:
    """Check one table row (``name`` and its fields) and return the ingredient; ``base`` is the row it overrides
    (only the fields given change)."""
    if not isinstance(r, dict):
        _fail(origin, "is not a table; write [NAME] (or [[ingredient]] with name = ...) and 'field = value' lines",
              name)
    unknown = sorted(set(r) - _FIELDS)
    if unknown:
        _fail(origin, f"unknown field(s) {', '.join(unknown)}; the fields are {', '.join(sorted(_FIELDS))}", name,
              unknown[0])
    kind = r.get("kind", base.kind if base else None)
    if kind not in KINDS:
        _fail(origin, f"kind must be one of {' | '.join(KINDS)}; got {kind!r}", name, "kind")
    if "density_g_cm3" in r:
        d = r["density_g_cm3"]
        if isinstance(d, bool) or not isinstance(d, (int, float)) or not math.isfinite(d):
            _fail(origin, f"{d!r} is not a number; write the density in g/cm³", name, "density_g_cm3")
        if not (DENSITY_RANGE[0] <= d <= DENSITY_RANGE[1]):
            _fail(origin, f"{d:g} g/cm³ is outside {DENSITY_RANGE[0]:g}–{DENSITY_RANGE[1]:g} g/cm³; write it in "
                          "g/cm³ (not kg/m³)", name, "density_g_cm3")
        density = float(d) * 1000.0
    elif base is not None:
        density = base.density
    else:
        _fail(origin, "is missing: a new ingredient needs its density in g/cm³", name, "density_g_cm3")
    soluble = r.get("soluble", base.soluble if base is not None and "kind" not in r else SOLUBLE_DEFAULT[kind])
    if not isinstance(soluble, bool):
        _fail(origin, f"must be true or false; got {soluble!r}", name, "soluble")
    if kind == "filler" and soluble:
        _fail(origin, "a filler is never extracted by the swelling solvent; leave 'soluble' out or make the kind "
                      "'other'", name, "soluble")
    source = r.get("source", base.source if base is not None else "")
    if not (isinstance(source, str) and source.strip()):
        if origin in ("built-in",):
            _fail(origin, "every row must name its source", name, "source")
        source = "given by the user (no source stated)"
    title = str(r.get("title", base.title if base is not None else name))
    return Ingredient(name=str(name), kind=kind, density=density, soluble=soluble, source=source, title=title,
                      origin=str(origin))


@lru_cache(maxsize=1)
def builtin_ingredients() -> dict[str, Ingredient]:
    """The built-in table (``ingredients.toml``), keyed by normalised name."""
    raw = tomllib.loads(resources.files(__package__).joinpath("ingredients.toml").read_text("utf-8"))
    return {_norm(k): ingredient_row(k, r, "built-in") for k, r in raw.items()}


def ingredient_rows(rows, origin, base: dict[str, Ingredient] | None = None) -> dict[str, Ingredient]:
    """``[[ingredient]]`` rows (list of tables with ``name``) or ``[NAME]`` tables → ingredients keyed by
    normalised name; a row naming a known ingredient overrides only the fields it gives."""
    base = ingredients() if base is None else base
    if isinstance(rows, dict):
        rows = [dict(v, name=k) if isinstance(v, dict) else v for k, v in rows.items()]
    if not isinstance(rows, list):
        _fail(origin, "ingredient rows must be [[ingredient]] blocks with a name")
    out = {}
    for i, r in enumerate(rows, start=1):
        if not isinstance(r, dict) or not isinstance(r.get("name"), str) or not r["name"].strip():
            _fail(origin, "needs name = \"...\"", f"ingredient #{i}", "name")
        r = dict(r)
        name = r.pop("name").strip()
        out[_norm(name)] = ingredient_row(name, r, origin, base.get(_norm(name)))
    return out


def load_ingredient_table(path: str | Path) -> dict[str, Ingredient]:
    """A user ingredient table (TOML; ``[NAME]`` tables or ``[[ingredient]]`` blocks, fields as the built-in)."""
    p = Path(path)
    try:
        raw = tomllib.loads(p.read_text("utf-8"))
    except OSError as e:
        raise DataError(f"ingredient table {p} not found or unreadable ({e.strerror or e}); check the path given "
                        f"with --ingredients or ${ENV_VAR}", file=str(p), kind="ingredient-table") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as e:
        raise DataError(f"ingredient table {p.name} is not valid TOML ({e})", file=str(p),
                        kind="ingredient-table") from None
    rows = raw.pop("ingredient", [])
    out = ingredient_rows(rows, str(p), builtin_ingredients())
    out.update(ingredient_rows(raw, str(p), builtin_ingredients()))
    return out


_UNSET = object()
_active: object = _UNSET


def use_ingredient_table(path: str | Path | None) -> dict[str, Ingredient] | None:
    """Make a user ingredient table active for this process (None: built-in only, ignoring $NETSTRETCH_INGREDIENTS)."""
    global _active
    table = None if path is None else load_ingredient_table(path)
    _active = table
    ingredients.cache_clear()
    return table


@lru_cache(maxsize=1)
def ingredients() -> dict[str, Ingredient]:
    """The ingredient table in force: built-in rows overridden and extended by the active user table."""
    global _active
    if _active is _UNSET:
        env = os.environ.get(ENV_VAR, "").strip()
        _active = load_ingredient_table(env) if env else None
    out = dict(builtin_ingredients())
    if _active:
        out.update(_active)  # type: ignore[call-overload]  # a loaded table: dict[str, Ingredient]
    return out


def get_ingredient(name: str, extra: dict[str, Ingredient] | None = None) -> Ingredient:
    """The ingredient called ``name``: a manifest row (``extra``), the table in force, or a polymer-table key
    (kind polymer, density from the polymer table)."""
    k = _norm(name)
    if extra and k in extra:
        return extra[k]
    table = ingredients()
    if k in table:
        return table[k]
    from .materials import get_polymer

    try:
        p = get_polymer(name)
    except KeyError:
        known = ", ".join(sorted(i.name for i in table.values()))
        raise DataError(f"recipe ingredient {name!r} is neither a polymer of the polymer table nor in the ingredient "
                        f"table ({known}); add it as an [[ingredient]] row with kind and density_g_cm3, or in your "
                        "--ingredients file", kind="recipe") from None
    return Ingredient(name=p.key, kind="polymer", density=p.density, soluble=False,
                      source=f"polymer table: {p.value_source('density_kg_m3')}",
                      title=p.title, origin="polymer table")


@dataclass
class Recipe:
    """A recipe in phr with its ingredients resolved; the derived fractions are properties (mass and volume
    fractions of the dry compound, SI densities inside)."""

    phr: dict[str, float]
    items: dict[str, Ingredient] = field(default_factory=dict)  # recipe name -> ingredient

    @classmethod
    def from_phr(cls, phr: dict, extra: dict[str, Ingredient] | None = None, where: str = "recipe") -> Recipe:
        if not isinstance(phr, dict) or not phr:
            raise DataError(f"{where}: a recipe is a table of ingredient = phr, e.g. NR = 100.0", kind="recipe")
        clean, items = {}, {}
        for name, v in phr.items():
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v < 0:
                raise DataError(f"{where}: {name} = {v!r}: phr must be a number ≥ 0", kind="recipe")
            clean[str(name)] = float(v)
            try:
                items[str(name)] = get_ingredient(name, extra)
            except DataError as exc:
                raise DataError(f"{where}: {exc}", kind="recipe") from None
        if not any(items[n].kind == "polymer" and clean[n] > 0 for n in clean):
            raise DataError(f"{where}: the recipe names no polymer (a key of the polymer table such as NR or SBR); "
                            "phr are parts per hundred of rubber, so the polymer must be in it", kind="recipe")
        poly = sum(clean[n] for n in clean if items[n].kind == "polymer")
        if abs(poly - 100.0) > 0.5:
            raise DataError(f"{where}: the polymers add up to {poly:g} phr, not 100; phr are parts per hundred "
                            "of rubber", kind="recipe")
        return cls(clean, items)

    # ---- sums ---------------------------------------------------------------------------------------
    def _mass(self, pred=lambda i: True) -> float:
        return sum(v for n, v in self.phr.items() if pred(self.items[n]))

    def _volume(self, pred=lambda i: True) -> float:
        return sum(v / self.items[n].density for n, v in self.phr.items() if pred(self.items[n]))

    @property
    def total_phr(self) -> float:
        return self._mass()

    @property
    def filler_volume_fraction(self) -> float:
        """φ = Σ_fillers(phr/ρ) / Σ_all(phr/ρ)."""
        return self._volume(lambda i: i.kind == "filler") / self._volume()

    @property
    def rubber_volume_fraction(self) -> float:
        return self._volume(lambda i: i.kind == "polymer") / self._volume()

    @property
    def rubber_mass_fraction(self) -> float:
        return self._mass(lambda i: i.kind == "polymer") / self._mass()

    @property
    def insoluble_mass_fraction(self) -> float:
        """F: fillers plus non-network ingredients marked insoluble, as a mass fraction of the compound."""
        return self._mass(lambda i: i.insoluble) / self._mass()

    @property
    def polymer_density(self) -> float:
        """ρ_r, kg/m³: the polymer's density (a blend: its mass over its volume)."""
        return self._mass(lambda i: i.kind == "polymer") / self._volume(lambda i: i.kind == "polymer")

    @property
    def compound_density(self) -> float:
        """Density of the compound from the recipe (no voids), kg/m³."""
        return self._mass() / self._volume()

    @property
    def polymers(self) -> list[str]:
        return [self.items[n].name for n in self.phr if self.items[n].kind == "polymer"]

    def phr_of(self, name: str) -> float | None:
        """phr of the ingredient called ``name`` (normalised match), None when the recipe lacks it."""
        k = _norm(name)
        for n, v in self.phr.items():
            if _norm(n) == k or _norm(self.items[n].name) == k:
                return v
        return None

    def phr_of_kind(self, kind: str) -> float:
        return self._mass(lambda i: i.kind == kind)

    def to_dict(self) -> dict:
        """The ``compounds[].recipe`` JSON object: ``phr``, ``filler_volume_fraction``, ``rubber_volume_fraction``,
        ``insoluble_mass_fraction`` (issue #21 contract) plus the rubber mass fraction, densities and rows."""
        return {
            "phr": dict(self.phr),
            "filler_volume_fraction": self.filler_volume_fraction,
            "rubber_volume_fraction": self.rubber_volume_fraction,
            "insoluble_mass_fraction": self.insoluble_mass_fraction,
            "rubber_mass_fraction": self.rubber_mass_fraction,
            "total_phr": self.total_phr,
            "polymer_density_kg_m3": self.polymer_density,
            "compound_density_kg_m3": self.compound_density,
            "ingredients": [dict(self.items[n].to_dict(), recipe_name=n, phr=v) for n, v in self.phr.items()],
        }


def recipe_notices(recipe: Recipe, metadata: dict, who: str, polymer: str | None = None) -> list[Notice]:
    """Notices where the manifest's older fields (``filler_volume_fraction``, ``filler_phr``, ``sulfur_phr``)
    disagree with the recipe, which wins; and when the compound's polymer is not among the recipe's polymers."""
    out = []
    if polymer and recipe.polymers and _norm(polymer) not in {_norm(p) for p in recipe.polymers} \
            and all(recipe.items[n].origin == "polymer table" for n in recipe.phr if recipe.items[n].kind == "polymer"):
        names = ", ".join(recipe.polymers)
        out.append(Notice(f"{who}: the compound's polymer {polymer} is not in its recipe ({names}); the "
                          "polymer table row of the compound is used for the chain constants and χ, the recipe's "
                          "for the densities", "recipe-disagrees", who))

    def num(k):
        try:
            v = metadata.get(k)
            return None if v in (None, "") else float(v)
        except (TypeError, ValueError):
            return None

    checks = (("filler_volume_fraction", recipe.filler_volume_fraction, 0.01, "{:.3f}"),
              ("filler_phr", recipe.phr_of_kind("filler"), 0.05, "{:g}"),
              ("sulfur_phr", recipe.phr_of("sulfur") or 0.0, 0.05, "{:g}"))
    for key, derived, tol, fmt in checks:
        given = num(key)
        if given is not None and abs(given - derived) > tol:
            out.append(Notice(f"{who}: {key} = {given:g} in the manifest disagrees with the recipe ("
                              f"{fmt.format(derived)}); the recipe is used", "recipe-disagrees", who))
    return out


# ---- command-line helpers -------------------------------------------------------------------------
def add_ingredients_option(parser: argparse.ArgumentParser) -> None:
    """Add ``--ingredients FILE`` to an argparse (sub)parser; call :func:`apply_ingredients_option` in its run."""
    parser.add_argument("--ingredients", metavar="FILE", default=None,
                        help="your own ingredient table for recipes (TOML, same fields as the built-in "
                             f"ingredients.toml; its rows override or extend the built-in ones; also ${ENV_VAR})")


def apply_ingredients_option(args: argparse.Namespace) -> None:
    path = getattr(args, "ingredients", None)
    if path:
        use_ingredient_table(path)


def parse_recipe_text(text: str, limit: int = 60) -> dict[str, float]:
    """A recipe typed as lines ``NAME = phr`` (also ``NAME: phr`` or ``NAME phr``) → {name: phr}; a line that
    cannot be read is refused with a sentence naming it.  At most ``limit`` lines."""
    out: dict[str, float] = {}
    lines = [x.strip() for x in str(text or "").splitlines() if x.strip() and not x.strip().startswith("#")]
    if len(lines) > limit:
        raise DataError(f"a recipe of {len(lines)} lines is longer than {limit}; check what was pasted",
                        kind="recipe")
    for n, line in enumerate(lines, start=1):
        parts = line.replace("=", " ").replace(":", " ").split()
        try:
            name, value = " ".join(parts[:-1]).strip(), float(parts[-1].replace(",", "."))
        except (ValueError, IndexError):
            name, value = "", None
        if not name or value is None:
            raise DataError(f"recipe line {n} ({line[:60]!r}) is not 'ingredient = phr', e.g. 'N330 = 50'",
                            kind="recipe")
        if name in out:
            raise DataError(f"recipe line {n}: {name} is given twice", kind="recipe")
        out[name] = value
    return out


def recipe_text(recipe: Recipe | None) -> str:
    """The recipe as editable lines ``NAME = phr`` (empty for None)."""
    return "" if recipe is None else "\n".join(f"{n} = {v:g}" for n, v in recipe.phr.items())
