"""The polymer table: chain constants per polymer, each value with its source — as data, not code.

The built-in table is ``polymers.toml`` beside this module.  A compounder's own constants live in a TOML
file with the same schema; its rows override (field by field) or extend the built-in rows:

    >>> from network_models.materials import use_polymer_table, get_polymer
    >>> use_polymer_table("our_polymers.toml")        # or NETSTRETCH_POLYMERS=our_polymers.toml
    >>> get_polymer("NBR-33").plateau_modulus          # Pa

A user file looks like the built-in one (units in the key names)::

    [NBR-33]                      # override: only the fields given change; source is required
    plateau_MPa = 0.62
    source = "in-house relaxation test, report 2024-17"

    [OURFKM]                      # a new row: every numeric field, title and source are required
    title = "peroxide-cure FKM, 70 % F"
    density_kg_m3 = 1890.0
    ...

    [[chi]]                       # optional in-house χ rows for swelling (network_models.swelling)
    polymer = "OURFKM"
    solvent = "2-butanone"
    chi = 0.30
    temperature_C = 23.0
    source = "in-house swelling series"

A mistake in the file is refused with a sentence naming the file, the row and the field.
"""

from __future__ import annotations

import math
import os
import tomllib
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING, Any

from .constants import LAB_TEMPERATURE, celsius, kelvin
from .errors import DataError

if TYPE_CHECKING:
    import argparse

__all__ = [
    "ENV_VAR", "FIELDS", "Polymer", "UserTable", "active_polymer_table", "add_polymers_option",
    "apply_polymers_option", "builtin_polymers", "get_polymer", "load_polymer_table", "polymer_listing",
    "polymers", "temperature_notices", "use_polymer_table", "user_chi_rows", "GLASS_MARGIN", "OPTIONAL_FIELDS",
    "CHI_STATUS_RANK", "CHI_TEMPERATURE_WINDOW", "ChiValue", "Solvent", "chi_values", "default_chi", "get_solvent",
    "solvents",
]

#: environment variable naming a user polymer table (used when :func:`use_polymer_table` was not called)
ENV_VAR = "NETSTRETCH_POLYMERS"


@dataclass(frozen=True)
class _Field:
    attr: str  # attribute of Polymer
    scale: float  # TOML value × scale = SI value
    low: float  # sane range in the TOML unit [common practice: the span of rubbers and their solvents]
    high: float
    unit: str
    meaning: str


#: numeric columns of the table: TOML key → attribute, SI factor, sane range (TOML unit) and meaning.
#: The ranges are sanity limits for rubbers [common practice], not physical laws: a value outside is
#: almost always a unit slip (g/cm³ for kg/m³, kg/mol for g/mol, linear for volume expansion …).
FIELDS: dict[str, _Field] = {
    "density_kg_m3": _Field("density", 1.0, 800.0, 2200.0, "kg/m³", "density of the gum polymer near 25 °C"),
    "monomer_g_mol": _Field("monomer_molar_mass", 1e-3, 10.0, 1000.0, "g/mol", "repeat-unit molar mass"),
    "kuhn_g_mol": _Field("kuhn_molar_mass", 1e-3, 20.0, 5000.0, "g/mol", "molar mass of one Kuhn segment M_K"),
    "c_inf": _Field("c_inf", 1.0, 1.5, 30.0, "1", "characteristic ratio C∞"),
    "kuhn_length_nm": _Field("kuhn_length", 1e-9, 0.1, 5.0, "nm", "Kuhn length b"),
    "plateau_MPa": _Field("plateau_modulus", 1e6, 0.01, 10.0, "MPa", "plateau modulus G_N⁰ of the melt"),
    "plateau_T_K": _Field("plateau_temperature", 1.0, 150.0, 600.0, "K", "temperature of the plateau modulus"),
    "entanglement_g_mol": _Field("entanglement_molar_mass", 1e-3, 200.0, 1e5, "g/mol",
                                 "entanglement molar mass M_e"),
    "expansion_1_K": _Field("expansion", 1.0, 1e-4, 2e-3, "1/K", "volume expansion coefficient β"),
}
#: optional numeric columns (a row may leave them out; None then): the glass transition and the upper
#: continuous service temperature (issue #20)
OPTIONAL_FIELDS: dict[str, _Field] = {
    "glass_K": _Field("glass_transition", 1.0, 100.0, 400.0, "K", "glass transition temperature T_g"),
    "service_max_K": _Field("service_max", 1.0, 300.0, 700.0, "K", "upper continuous service temperature"),
}
_ALL_FIELDS = {**FIELDS, **OPTIONAL_FIELDS}
_TEXT = {"title", "source", "status", "note", "sources"}
_STATUS = {"read", "memory", "user"}


@dataclass(frozen=True)
class Polymer:
    key: str
    title: str
    density: float  # kg/m³
    monomer_molar_mass: float  # kg/mol
    kuhn_molar_mass: float  # kg/mol
    c_inf: float
    kuhn_length: float  # m
    plateau_modulus: float  # Pa, at plateau_temperature
    plateau_temperature: float  # K
    entanglement_molar_mass: float  # kg/mol
    expansion: float  # 1/K, volume expansion coefficient
    source: str
    status: str  # "read" (every value read in the source) | "memory" (some recalled) | "user" (user table)
    #: per-value sources, (TOML key, "citation [read|memory|derived|estimate]") pairs
    sources: tuple[tuple[str, str], ...] = ()
    note: str = ""
    origin: str = "built-in"  # "built-in" or the user table's path
    glass_transition: float | None = None  # K, T_g (optional)
    service_max: float | None = None  # K, upper continuous service temperature (optional)

    def value_source(self, key: str) -> str:
        """Where the value of TOML column ``key`` (e.g. ``"plateau_MPa"``) comes from."""
        return dict(self.sources).get(key, self.source)


# ---- reading and checking rows ------------------------------------------------------------------
def _fail(origin: str, msg: str, row: str | None = None, fld: str | None = None, fix: str | None = None):
    where = f"polymer table {origin}" + (f", row [{row}]" if row else "") + (f", field '{fld}'" if fld else "")
    raise DataError(f"{where}: {msg}", file=origin, column=fld, fix=fix, kind="polymer-table", row=row)


def _number(origin, key, name, v):
    spec = _ALL_FIELDS[name]
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
        _fail(origin, f"{v!r} is not a number; write it in {spec.unit} ({spec.meaning})", key, name)
    if not (spec.low <= v <= spec.high):
        _fail(origin, f"{v:g} {spec.unit} is outside the sane range {spec.low:g}–{spec.high:g} {spec.unit} for "
                      f"{spec.meaning}; check the unit", key, name)
    return float(v)


def _row(key: str, r, origin: str, base: Polymer | None) -> Polymer:
    if not isinstance(r, dict):
        _fail(origin, "is not a table; write it as [KEY] followed by 'name = value' lines", key)
    unknown = sorted(set(r) - set(_ALL_FIELDS) - _TEXT)
    if unknown:
        known = ", ".join(list(_ALL_FIELDS) + sorted(_TEXT))
        _fail(origin, f"unknown field(s) {', '.join(unknown)}; the fields are {known}", key, unknown[0])
    for t in ("title", "source", "status", "note"):
        if t in r and not (isinstance(r[t], str) and (r[t].strip() or t == "note")):
            _fail(origin, "must be non-empty text in quotes", key, t)
    if not r.get("source"):
        _fail(origin, "every row must name its source (source = \"…\"): where the values come from", key, "source")
    status = r.get("status", "user" if origin != "built-in" else None)
    if status not in _STATUS:
        _fail(origin, f"status must be one of {', '.join(sorted(_STATUS))}; got {status!r}", key, "status")
    srcs = r.get("sources", {})
    if not isinstance(srcs, dict) or any(k not in _ALL_FIELDS or not isinstance(v, str) for k, v in srcs.items()):
        _fail(origin, "must map numeric field names to source text, e.g. sources.plateau_MPa = \"…\"", key, "sources")
    values = {}
    for name, spec in FIELDS.items():
        if name in r:
            values[spec.attr] = _number(origin, key, name, r[name]) * spec.scale
        elif base is not None:
            values[spec.attr] = getattr(base, spec.attr)
        else:
            _fail(origin, f"is missing ({spec.meaning}, {spec.unit}); a new polymer needs every numeric field",
                  key, name)
    for name, spec in OPTIONAL_FIELDS.items():
        if name in r:
            values[spec.attr] = _number(origin, key, name, r[name]) * spec.scale
        elif base is not None:
            values[spec.attr] = getattr(base, spec.attr)
    if base is None and not r.get("title"):
        _fail(origin, "a new polymer needs a title", key, "title")
    if base is not None:  # inherited values keep their built-in sources; given ones take this row's source
        merged = {k: base.value_source(k) for k in _ALL_FIELDS if k not in r}
        merged.update({k: r["source"] for k in _ALL_FIELDS if k in r})
        merged.update(srcs)
        srcs = merged
    return Polymer(key=key, title=r.get("title", base.title if base else ""), source=r["source"], status=status,
                   sources=tuple(sorted(srcs.items())), note=r.get("note", ""), origin=origin, **values)


def _parse(text: str, origin: str) -> dict:
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DataError(f"polymer table {origin} is not valid TOML ({exc}); rows look like [KEY] followed by "
                        "'density_kg_m3 = 910.0' lines", file=origin, kind="polymer-table") from None


def _key(k) -> str:
    return str(k).strip().upper()


@lru_cache(maxsize=1)
def builtin_polymers() -> dict[str, Polymer]:
    """The built-in table (``polymers.toml``), converted to SI."""
    raw = _parse(resources.files(__package__).joinpath("polymers.toml").read_text("utf-8"), "built-in")
    return {_key(k): _row(_key(k), r, "built-in", None) for k, r in raw.items()}


# ---- user tables ----------------------------------------------------------------------------------
@dataclass(frozen=True)
class UserTable:
    path: str
    polymers: dict[str, Polymer]
    chi: list[dict] = field(default_factory=list)  # raw χ rows, checked, status "user" unless given


def _chi_rows(rows, origin: str) -> list[dict]:
    if not isinstance(rows, list):
        _fail(origin, "χ rows must be written as [[chi]] blocks", "chi")
    out = []
    for i, r in enumerate(rows, start=1):
        tag = f"chi #{i}"
        if not isinstance(r, dict):
            _fail(origin, "must be a [[chi]] block", tag)
        for t in ("polymer", "solvent", "source"):
            if not (isinstance(r.get(t), str) and r[t].strip()):
                _fail(origin, "is missing (text in quotes)", tag, t)
        chi = r.get("chi")
        if isinstance(chi, bool) or not isinstance(chi, (int, float)) or not (0.0 <= chi < 1.5):
            _fail(origin, f"χ must be a number between 0 and 1.5; got {chi!r}", tag, "chi")
        t = r.get("temperature_C", 25.0)
        if isinstance(t, bool) or not isinstance(t, (int, float)) or not (-100 <= t <= 300):
            _fail(origin, f"temperature must be in °C between −100 and 300; got {t!r}", tag, "temperature_C")
        out.append({"polymer": _key(r["polymer"]), "solvent": r["solvent"].strip(), "chi": float(chi),
                    "temperature_C": float(t), "default": bool(r.get("default", True)),
                    "status": r.get("status", "user"), "source": r["source"], "note": r.get("note", "")})
    return out


def load_polymer_table(path: str | Path) -> UserTable:
    """Read and check a user polymer table (TOML, same schema as the built-in one).  Rows whose key is in
    the built-in table override it field by field; new keys need every field.  Raises :class:`DataError`
    naming the file, row and field for anything wrong."""
    p = Path(path)
    origin = str(p)
    try:
        text = p.read_text("utf-8")
    except FileNotFoundError:
        raise DataError(f"polymer table {origin} not found; check the path given with --polymers or "
                        f"{ENV_VAR}", file=origin, kind="polymer-table") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise DataError(f"polymer table {origin} cannot be read as UTF-8 text ({exc})", file=origin,
                        kind="polymer-table") from None
    raw = _parse(text, origin)
    if not raw:
        raise DataError(f"polymer table {origin} is empty; it needs at least one [KEY] row (same fields as the "
                        "built-in table), or leave --polymers out", file=origin, kind="polymer-table")
    chi = _chi_rows(raw.pop("chi"), origin) if "chi" in raw else []
    base = builtin_polymers()
    rows = {_key(k): _row(_key(k), r, origin, base.get(_key(k))) for k, r in raw.items()}
    for i, r in enumerate(chi, start=1):
        if r["polymer"] not in rows and r["polymer"] not in base:
            _fail(origin, f"polymer {r['polymer']!r} is neither in this file nor in the built-in table", f"chi #{i}",
                  "polymer")
        try:
            get_solvent(r["solvent"])
        except KeyError as exc:
            _fail(origin, str(exc.args[0]), f"chi #{i}", "solvent")
    return UserTable(origin, rows, chi)


_UNSET = object()
_active: Any = _UNSET


def use_polymer_table(path: str | Path | None) -> UserTable | None:
    """Make a user table active for this process (``None``: built-in table only, ignoring the environment
    variable).  The file is checked at once; a bad file leaves the previous table active."""
    global _active
    table = None if path is None else load_polymer_table(path)
    _active = table
    polymers.cache_clear()
    return table


def active_polymer_table() -> UserTable | None:
    """The user table in force: the one given to :func:`use_polymer_table`, else ``$NETSTRETCH_POLYMERS``."""
    global _active
    if _active is _UNSET:
        env = os.environ.get(ENV_VAR, "").strip()
        _active = load_polymer_table(env) if env else None
    return _active


@lru_cache(maxsize=1)
def polymers() -> dict[str, Polymer]:
    """The polymer table in force (built-in rows, overridden and extended by the active user table), SI."""
    out = dict(builtin_polymers())
    user = active_polymer_table()
    if user is not None:
        out.update(user.polymers)
    return out


def get_polymer(key: str) -> Polymer:
    table = polymers()
    k = _key(key)
    if k not in table:
        raise KeyError(f"unknown polymer {key!r}; the table has {', '.join(table)} "
                       f"(add your own with --polymers FILE or {ENV_VAR})")
    return table[k]


def user_chi_rows() -> list[dict]:
    """χ rows of the active user table (empty without one)."""
    user = active_polymer_table()
    return [] if user is None else list(user.chi)


def polymer_listing() -> list[dict]:
    """Every row of the table in force with each value in table units and its source (for listings)."""
    out = []
    for p in polymers().values():
        vals = {name: {"value": float(f"{getattr(p, spec.attr) / spec.scale:.12g}"), "unit": spec.unit,
                       "meaning": spec.meaning, "source": p.value_source(name)} for name, spec in FIELDS.items()}
        vals.update({name: {"value": float(f"{getattr(p, spec.attr) / spec.scale:.12g}"), "unit": spec.unit,
                            "meaning": spec.meaning, "source": p.value_source(name)}
                     for name, spec in OPTIONAL_FIELDS.items() if getattr(p, spec.attr) is not None})
        out.append({"key": p.key, "title": p.title, "status": p.status, "source": p.source, "note": p.note,
                    "origin": p.origin, "values": vals})
    return out


# ---- command-line helpers -------------------------------------------------------------------------
def add_polymers_option(parser: argparse.ArgumentParser) -> None:
    """Add ``--polymers FILE`` to an argparse (sub)parser; call :func:`apply_polymers_option` in its run."""
    parser.add_argument("--polymers", metavar="FILE", default=None,
                        help=f"your own polymer table (TOML, same fields as the built-in one; its rows override "
                             f"or extend the built-in rows; also ${ENV_VAR})")


def apply_polymers_option(args: argparse.Namespace) -> None:
    """Activate the table given with ``--polymers`` (no-op without the option)."""
    path = getattr(args, "polymers", None)
    if path:
        use_polymer_table(path)


# ---- temperature and state (issue #20) -------------------------------------------------------------
#: a rubber behaves as a rubber (entropic network, G ∝ T) only well above its glass transition: below
#: T_g + 20 K the glass transition region stiffens it by orders of magnitude (common practice; the
#: transition region of a rubber spans some 20–30 K above the DSC T_g [from memory]; docs/methods.md §glass)
GLASS_MARGIN = 20.0


def temperature_notices(polymer, T, where: str = "") -> list:
    """Notices for a temperature ``T`` (K) that leaves the rubbery state of ``polymer`` (key or Polymer):
    kind ``glass`` below T_g + 20 K (the word *glass* in it), kind ``service-limit`` above the upper service
    temperature.  ``[]`` when the table has neither value, the polymer is unknown or T is None."""
    from .errors import Notice

    if T is None or polymer is None:
        return []
    try:
        p = polymer if isinstance(polymer, Polymer) else get_polymer(str(polymer))
        T = float(T)
    except (KeyError, ValueError, TypeError, DataError):
        return []
    if not math.isfinite(T):
        return []
    at = f" ({where})" if where else ""
    out = []
    tg = p.glass_transition
    if tg is not None and T < tg + GLASS_MARGIN:
        state = "in the glass" if T < tg else "in the glass transition region"
        out.append(Notice(
            f"{celsius(T):.0f} °C{at} is {state} of {p.key} (T_g ≈ {celsius(tg):.0f} °C; rubbery above about "
            f"{celsius(tg + GLASS_MARGIN):.0f} °C): the network models and G = νRT describe the rubbery state only — "
            "results here are not valid", "glass", p.key))
    smax = p.service_max
    if smax is not None and T > smax:
        out.append(Notice(
            f"{celsius(T):.0f} °C{at} is above the upper continuous service temperature of {p.key} "
            f"(about {celsius(smax):.0f} °C in air): the network ages (chain scission, further crosslinking) "
            "while tested or used there, so a result describes a changing rubber", "service-limit", p.key))
    return out


# ----- solvents and χ (solvents.toml): beside the polymer table, read by swelling and design --------------
@dataclass(frozen=True, kw_only=True)
class Solvent:
    key: str
    title: str
    formula: str
    molar_mass: float  # kg/mol
    density: float  # kg/m³
    density_source: str

    @property
    def molar_volume(self) -> float:
        """V₁ = M/ρ, m³/mol."""
        return self.molar_mass / self.density


@dataclass(frozen=True, kw_only=True)
class ChiValue:
    polymer: str
    solvent: str
    chi: float
    temperature: float  # K
    default: bool
    status: str  # "handbook" | "common" | "memory" | "estimate" | "user"
    source: str
    note: str = ""
    #: half-width of the band of published χ for this pair around ``chi`` (docs/methods.md §chi-table);
    #: None when the row states none (then :data:`CHI_BAND` serves)
    spread: float | None = None
    spread_basis: str = ""


@lru_cache(maxsize=1)
def _solvent_table():
    return tomllib.loads(resources.files(__package__).joinpath("solvents.toml").read_text("utf-8"))


def solvents() -> dict[str, Solvent]:
    out = {}
    for key, r in _solvent_table()["solvent"].items():
        out[key] = Solvent(key=key, title=r["title"], formula=r["formula"], molar_mass=r["molar_mass_g_mol"] / 1000.0,
                           density=r["density_g_cm3"] * 1000.0, density_source=r["density_source"])
    return out


def get_solvent(key: str) -> Solvent:
    table = solvents()
    k = str(key).strip().lower().replace(" ", "-")
    aliases = {"mek": "2-butanone", "methyl-ethyl-ketone": "2-butanone", "heptane": "n-heptane"}
    k = aliases.get(k, k)
    if k not in table:
        raise KeyError(f"unknown solvent {key!r}; the table has {', '.join(table)}")
    return table[k]


def _row_spread(r) -> float | None:
    """The ``spread`` of a χ row (published spread around its χ, docs/methods.md §chi), checked."""
    v = r.get("spread")
    if v is None:
        return None
    v = float(v)
    if not (math.isfinite(v) and 0 <= v < 1):
        raise ValueError(f"χ row {r.get('polymer')}–{r.get('solvent')}: spread must be a number in [0, 1); got {v!r}")
    return v


def chi_values(polymer: str | None = None, solvent: str | None = None) -> list[ChiValue]:
    """χ rows of ``solvents.toml`` (built-in rows, then any ``[[chi]]`` rows of the active user polymer
    table), optionally for one polymer and/or solvent."""
    rows = []
    for r in list(_solvent_table()["chi"]) + user_chi_rows():
        if polymer is not None and r["polymer"] != str(polymer).strip().upper():
            continue
        if solvent is not None and get_solvent(r["solvent"]).key != get_solvent(solvent).key:
            continue
        rows.append(ChiValue(polymer=r["polymer"], solvent=get_solvent(r["solvent"]).key, chi=float(r["chi"]),
                             temperature=kelvin(r["temperature_C"]), default=bool(r["default"]), status=r["status"],
                             source=r["source"],
                             note=r.get("note", ""), spread=_row_spread(r),
                             spread_basis=str(r.get("spread_basis", ""))))
    return rows


#: which χ row wins when the user gives none: rows measured within :data:`CHI_TEMPERATURE_WINDOW` of the
#: swelling temperature first; among those the user's own rows, then rows read in a handbook or paper, then
#: recalled ones, then solubility-parameter estimates; ``default = true`` only breaks ties within one rank.
CHI_STATUS_RANK = {"user": 0, "handbook": 1, "read": 1, "common": 1, "memory": 2, "estimate": 3}
CHI_TEMPERATURE_WINDOW = 30.0  # K


def default_chi(polymer: str, solvent: str, T: float | None = None) -> ChiValue:
    """The χ row used when the user gives none (rule: :data:`CHI_STATUS_RANK`): a sourced value beats a
    recalled one, a recalled one beats an estimate, but a row measured far from the swelling temperature
    ``T`` (K; default the lab's 23 °C) only serves when no row near it exists."""
    rows = chi_values(polymer, solvent)
    if not rows:
        raise KeyError(
            f"the solvent table has no χ for {polymer}–{get_solvent(solvent).key}; give χ yourself "
            "(--chi 0.4, or chi=0.4 from Python) from a source you trust"
        )
    T = LAB_TEMPERATURE if T is None else T

    def rank(ir):
        i, r = ir
        far = not (abs(r.temperature - T) <= CHI_TEMPERATURE_WINDOW)
        return (far, CHI_STATUS_RANK.get(r.status, 4), not r.default, i)

    return min(enumerate(rows), key=rank)[1]
