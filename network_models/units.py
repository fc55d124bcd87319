"""Units at the edges: read "23 °C", "20mm", "0.55MPa", "stress [psi]", "Force/N", "kgf/cm²" into SI.

All conversion factors come from pint (a units library with its own definitions file); this module only
tidies the text a lab writes (``cm2`` → ``cm**2``, ``23C`` → 23 degree Celsius, ``kg/cm²`` read as
kgf/cm² as the trade writes it) and checks that a unit has the dimension the caller expects.

    >>> parse_quantity("23C")                       # K
    296.15
    >>> parse_quantity("20mm", "length")            # m
    0.02
    >>> parse_quantity("0.55MPa", "pressure")       # Pa
    550000.0
    >>> split_header("Stress [psi]")
    ('Stress', 'psi')

SI targets per dimension: length m, area m², force N, pressure Pa, temperature K, dimensionless 1
(so "%" gives a factor 0.01).  The pint registry is built once, lazily, and never used in hot loops:
:func:`unit_converter` returns a plain (factor, offset) pair to apply to whole arrays.
"""

from __future__ import annotations

import math
import os
import re
import shutil
import unicodedata
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from .constants import ZERO_CELSIUS
from .errors import UnitError

__all__ = [
    "DIMENSIONS", "UnitError", "UnitConverter", "parse_quantity", "parse_number", "split_header",
    "unit_converter", "format_si",
]




#: dimension name -> (SI target unit for pint, example a user could write)
DIMENSIONS: dict[str, tuple[str, str]] = {
    "length": ("meter", "20 mm"),
    "area": ("meter**2", "8 mm²"),
    "force": ("newton", "12 N"),
    "pressure": ("pascal", "0.55 MPa"),
    "temperature": ("kelvin", "23 °C"),
    "dimensionless": ("dimensionless", "150 %"),
}

# Spellings labs use for temperature units; mapped to pint's names (no factors here, pint converts).
_TEMPERATURE_NAMES = {
    "c": "degC", "°c": "degC", "ºc": "degC", "degc": "degC", "deg c": "degC", "° c": "degC",
    "celsius": "degC", "degree celsius": "degC", "degrees celsius": "degC", "℃": "degC",
    "f": "degF", "°f": "degF", "ºf": "degF", "degf": "degF", "deg f": "degF", "° f": "degF",
    "fahrenheit": "degF", "degrees fahrenheit": "degF", "℉": "degF",
    "k": "kelvin", "kelvin": "kelvin", "°k": "kelvin",
}

_NUMBER = r"[-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?"
_QUANTITY_RE = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")


def _cache_folder(pint_version: str) -> Path | None:
    """Where pint keeps its parsed definitions between runs: ``$NETSTRETCH_CACHE_DIR`` (``off``: nowhere),
    else ``$XDG_CACHE_HOME/netstretch`` or ``~/.cache/netstretch``; one folder per pint version."""
    env = os.environ.get("NETSTRETCH_CACHE_DIR", "")
    if env.lower() == "off":
        return None
    base = Path(env) if env else Path(os.environ.get("XDG_CACHE_HOME") or Path.home() / ".cache") / "netstretch"
    return base / f"pint-{pint_version}"


@lru_cache(maxsize=1)
def _registry():
    """The one pint registry.  Parsing pint's definitions file takes 0.2–0.7 s, a large share of a cold
    command; pint's own disk cache of the parsed definitions makes it about 15 ms from the second run on.
    The registry (and so every factor) is the same either way (tests/test_benchmarks_fastpaths.py); a cache
    that cannot be written or read (read-only home, a file half-written by a stopped process) is removed and
    the definitions are parsed as before."""
    import pint

    folder = _cache_folder(pint.__version__)
    if folder is not None:
        try:
            folder.mkdir(parents=True, exist_ok=True)
            return pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=folder)
        except Exception:  # any cache trouble: parse the definitions (slower, same registry)
            shutil.rmtree(folder, ignore_errors=True)
    return pint.UnitRegistry(autoconvert_offset_to_baseunit=True)


def _dimensionality(dimension: str):
    ureg = _registry()
    return ureg.Quantity(1, DIMENSIONS[dimension][0]).dimensionality


def _tidy_unit_text(text: str) -> str:
    """Lab spellings → pint syntax: superscripts, ``cm2`` → ``cm**2``, ``sq mm``, ``mm/mm`` etc."""
    t = text.strip()
    t = t.replace("\u00b2", "**2").replace("\u00b3", "**3").replace("^", "**")
    t = t.replace("\u00b5", "u").replace("\u03bc", "u")  # micro sign / Greek mu -> u
    t = re.sub(r"\bsq\.?\s*(mm|cm|m|in|inch)\b", r"\1**2", t, flags=re.IGNORECASE)
    t = re.sub(r"\bkp\b", "kgf", t)  # kilopond, the older German name of the kilogram-force [common practice]
    t = re.sub(r"(?<=[A-Za-z])([23])\b", r"**\1", t)  # cm2 -> cm**2, mm3 -> mm**3
    t = re.sub(r"\*\*\*\*", "**", t)
    if t in {"", "-", "1", "–", "—"}:
        return "dimensionless"
    return t


@dataclass(frozen=True)
class UnitConverter:
    """``si = value * factor + offset`` (offset only for °C/°F); ``dimension`` is one of DIMENSIONS."""

    unit: str  # the unit as written
    dimension: str
    factor: float
    offset: float = 0.0

    def __call__(self, values):
        return values * self.factor + self.offset if self.offset else values * self.factor


# Units rubber labs write, by their usual spelling.  Only names (pint holds the factors): used to read
# "Mpa", "MPA", "KN", "N/MM2", "Mm" the way a lab means them rather than as megametre or millipascal.
_TRADE_UNITS = ("Pa", "kPa", "MPa", "GPa", "psi", "ksi", "bar", "N/mm**2", "N/m**2", "kgf/cm**2", "kgf/mm**2",
                "lbf/in**2", "N", "kN", "mN", "cN", "daN", "gf", "kgf", "lbf", "mm", "cm", "m", "um", "in",
                "inch", "mm**2", "cm**2", "m**2", "in**2", "mm/mm", "in/in", "m/m")
_TRADE_BY_LOWER = {u.lower(): u for u in _TRADE_UNITS}


def _pint_unit(text: str, dimension: str | None):
    """Parse unit text with pint; return a pint Unit.  Raises UnitError."""
    ureg = _registry()
    raw = unicodedata.normalize("NFKC", str(text)).strip()  # full-width forms (％, ｍｍ) as in CJK exports
    low = raw.lower().strip()
    squeezed = re.sub(r"[\s.]", "", low)
    if dimension in (None, "temperature"):
        for key in (low, squeezed):
            if key in _TEMPERATURE_NAMES:
                return ureg.Unit(_TEMPERATURE_NAMES[key])
    if low in {"%", "percent", "pct"}:
        return ureg.Unit("percent")
    tidy = _tidy_unit_text(raw)
    trade = _TRADE_BY_LOWER.get(tidy.lower().replace(" ", ""))
    if trade is not None:
        tidy = trade
    try:
        unit = ureg.Unit(tidy)
    except Exception:  # pint raises many kinds on junk text (parse, tokenize, key, type errors)
        raise UnitError(
            f"unknown unit {raw!r}; write a unit such as MPa, psi, N/mm², kgf/cm², N, mm, % or °C"
        ) from None
    # The trade writes "kg/cm²" and "kg" for kilogram-force; read mass as force when a force or
    # pressure is expected [common practice].
    if dimension in ("force", "pressure"):
        mass_like = (ureg.Quantity(1, unit) * ureg.standard_gravity)
        if mass_like.dimensionality == _dimensionality(dimension):
            return mass_like.units
    return unit


# The spellings nearly every lab file uses, as exact SI (dimension, factor, offset), so a command that meets
# only these never imports pint (its import and registry are ~0.3 s of a cold command).  pint stays the
# source of truth: tests/test_units.py::test_si_table_matches_pint checks every entry against pint's own
# conversion.  Only exact spellings; anything else goes to pint.  Masses are kept apart (_SI_MASS): with a
# force or pressure expected the trade reads "g"/"kg" as gram-/kilogram-force, which pint handles.
# psi = 4.4482216152605 N / (0.0254 m)², both exact by definition; the correctly rounded double of that is
# 6894.757293168362, but pint's chain of definitions lands 2 ulp higher.  The table keeps pint's double so
# every result stays byte-identical with and without pint (the test checks both facts).
_PSI = 6894.7572931683635
_SI_TABLE: dict[str, tuple[str, float, float]] = {
    "Pa": ("pressure", 1.0, 0.0), "kPa": ("pressure", 1e3, 0.0), "MPa": ("pressure", 1e6, 0.0),
    "GPa": ("pressure", 1e9, 0.0), "psi": ("pressure", _PSI, 0.0), "N/mm²": ("pressure", 1e6, 0.0),
    "N/mm2": ("pressure", 1e6, 0.0), "N": ("force", 1.0, 0.0), "kN": ("force", 1e3, 0.0),
    "mm": ("length", 1e-3, 0.0), "cm": ("length", 1e-2, 0.0), "m": ("length", 1.0, 0.0),
    "mm²": ("area", 1e-6, 0.0), "mm2": ("area", 1e-6, 0.0), "%": ("dimensionless", 0.01, 0.0),
    "mm/mm": ("dimensionless", 1.0, 0.0), "1": ("dimensionless", 1.0, 0.0), "-": ("dimensionless", 1.0, 0.0),
    "K": ("temperature", 1.0, 0.0), "°C": ("temperature", 1.0, ZERO_CELSIUS),
    "C": ("temperature", 1.0, ZERO_CELSIUS), "degC": ("temperature", 1.0, ZERO_CELSIUS),
}
#: masses in kg, for swelling records (tests/test_units.py checks them against pint too)
_SI_MASS: dict[str, float] = {"g": 1e-3, "kg": 1.0, "mg": 1e-6}


def unit_converter(unit_text: str, dimension: str) -> UnitConverter:
    """A converter from ``unit_text`` to the SI unit of ``dimension``; UnitError if unknown or wrong kind.

    >>> unit_converter("kgf/cm2", "pressure").factor     # Pa per kgf/cm²
    98066.5
    """
    if dimension not in DIMENSIONS:
        raise ValueError(f"unknown dimension {dimension!r}; use one of {', '.join(DIMENSIONS)}")
    target, example = DIMENSIONS[dimension]
    known = _SI_TABLE.get(unit_text.strip())
    if known is not None:
        if known[0] != dimension:  # the same sentence pint's path gives (tests/test_units.py)
            raise UnitError(f"unit {unit_text!r} is not a {dimension} unit; write e.g. {example!r}")
        return UnitConverter(unit=unit_text.strip(), dimension=dimension, factor=known[1], offset=known[2])
    return _pint_converter(unit_text, dimension)


def _pint_converter(unit_text: str, dimension: str) -> UnitConverter:
    """:func:`unit_converter` through pint alone (every spelling; the table above is checked against it)."""
    target, example = DIMENSIONS[dimension]
    unit = _pint_unit(unit_text, dimension)
    ureg = _registry()
    if ureg.Quantity(1, unit).dimensionality != _dimensionality(dimension):
        raise UnitError(
            f"unit {unit_text!r} is not a {dimension} unit; write e.g. {example!r}"
        )
    zero = ureg.Quantity(0.0, unit).to(target).magnitude
    one = ureg.Quantity(1.0, unit).to(target).magnitude
    factor = float(one - zero)
    offset = float(zero)
    return UnitConverter(unit=unit_text.strip(), dimension=dimension, factor=factor, offset=offset)


def parse_number(text) -> float:
    """A number as labs write it: ``1.5``, ``1,5`` (decimal comma), ``1e3``; UnitError otherwise."""
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        return float(text)
    s = str(text).strip().replace("\u2212", "-").replace(" ", "")
    if s.count(",") == 1 and "." not in s:
        s = s.replace(",", ".")
    try:
        return float(s)
    except ValueError:
        raise UnitError(f"{text!r} is not a number") from None


def parse_quantity(text, dimension: str | None = None, *, default_unit: str | None = None,
                   require_unit: bool = False) -> float:
    """Read "23C", "23 °C", "296 K", "73F", "20mm", "0.55MPa", "150 %" into an SI float.

    ``dimension`` (length, area, force, pressure, temperature, dimensionless) checks the unit; without
    it any unit is accepted and converted to SI base units, with a bare C/F read as °C/°F (never as
    coulomb or farad).  A bare number gets ``default_unit`` if given, else it is returned unchanged
    (taken as already SI) unless ``require_unit`` — then a bare number is an error (use it for user input
    such as '--gauge-length 20', where 20 m is surely not meant).  Raises :class:`UnitError` with a
    sentence saying what to write.
    """
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        value, unit_text = float(text), ""
    else:
        s = str(text).replace("\u2212", "-").strip()
        m = _QUANTITY_RE.match(s)
        if not m:
            hint = f" such as {DIMENSIONS[dimension][1]!r}" if dimension in DIMENSIONS else " such as '20 mm'"
            raise UnitError(f"could not read {text!r} as a number with a unit; write a value{hint}")
        value = parse_number(m.group(1))
        unit_text = m.group(2)
    if not math.isfinite(value):
        raise UnitError(f"{text!r} is not a finite number")
    if not unit_text:
        unit_text = default_unit or ""
        if not unit_text:
            if require_unit:
                example = DIMENSIONS[dimension][1] if dimension in DIMENSIONS else "20 mm"
                raise UnitError(f"{text!r} has no unit; write it with its unit, e.g. {example!r}")
            return value
    if dimension is None:
        ureg = _registry()
        unit = _pint_unit(unit_text, None)
        try:
            q = ureg.Quantity(value, unit)
            if q.dimensionality == _dimensionality("temperature"):
                out = float(q.to("kelvin").magnitude)
            else:
                out = float(q.to_base_units().magnitude)
        except Exception:  # pint conversion failures on odd unit combinations
            raise UnitError(
                f"could not convert {text!r} to SI units; write e.g. '20 mm', '0.55 MPa' or '23 °C'"
            ) from None
    else:
        out = float(unit_converter(unit_text, dimension)(value))
    if not math.isfinite(out):
        raise UnitError(f"{text!r} is out of range once converted to SI units")
    return out


_FULLWIDTH_BRACKETS = str.maketrans({"（": "(", "）": ")", "［": "[", "］": "]", "｛": "{", "｝": "}", "／": "/"})
_BRACKETS = re.compile(r"^(.*?)[\s,]*[\[(\{]\s*([^\]\)\}]*?)\s*[\]\)\}]\s*(.*)$")


def split_header(header) -> tuple[str, str | None]:
    """Split a column header into (label, unit text or None).

    Accepts "stress (MPa)", "Stress [psi]", "Force/N", "Force, N", "Force in N", "strain %",
    "Extension mm" (a last word that pint reads as a unit).  A header without a unit gives None.
    """
    h = " ".join(str(header).translate(_FULLWIDTH_BRACKETS).split())
    if not h:
        return "", None
    m = _BRACKETS.match(h)
    if m and m.group(2):
        label = (m.group(1) + " " + m.group(3)).strip()
        return label, m.group(2).strip()
    for sep in (",", ";", " in ", " - "):
        if sep in h:
            label, _, unit = h.rpartition(sep)
            if label.strip() and _looks_like_unit(unit):
                return label.strip(), unit.strip()
    if h.endswith("%"):
        return h[:-1].strip().rstrip("/,;").strip(), "%"
    parts = h.rsplit(" ", 1)
    if len(parts) == 2 and _looks_like_unit(parts[1]):
        return parts[0].strip(), parts[1].strip()
    if "/" in h:
        label, _, unit = h.partition("/")
        if label.strip() and unit.strip() and _looks_like_unit(unit):
            return label.strip(), unit.strip()
    return h, None


# Header words pint happens to know as units but that a lab means as words ("strain", "at", "point").
_NOT_UNITS = {"strain", "point", "points", "at", "in", "a", "cycle", "cycles", "degree", "lambda", "turn",
              "count", "b", "ε", "λ", "σ", "x", "y", "no", "nr", "id", "ratio"}


# Header words, metadata keys and cells that are never units; checked cheaply before pint is asked, and
# each one checked against pint's own answer in tests/test_units.py::test_never_units_agree_with_pint.
_NEVER_UNITS = {"date", "time stamp", "speed", "type", "length", "width", "thickness", "piece", "specimen",
                "sample", "operator", "compound", "batch", "mode", "test", "name", "comment", "remark",
                "remarks", "notes", "note", "temperature", "force", "stress", "extension", "elongation"}
# Specimen/batch ids such as "B-1", "PB-1", "S3-1" (pint reads them as a subtraction, not a unit)
_SPECIMEN_ID = re.compile(r"[A-Z][A-Z0-9]*-\d+")


def _looks_like_unit(text: str) -> bool:
    """True when ``text`` reads as a unit of a dimension lab tables carry (length, force, stress, ...)."""
    t = text.strip()
    if not t or len(t) > 20 or t.isdigit() or t.lower() in _NOT_UNITS:
        return False
    if t.lower() in _TEMPERATURE_NAMES or t in {"%", "-", "1"} or t in _SI_TABLE:
        return True
    if t.lower() in _NEVER_UNITS or _SPECIMEN_ID.fullmatch(t):  # pint says "not a unit" to these too
        return False
    try:
        unit = _pint_unit(t, None)
        dim = _registry().Quantity(1, unit).dimensionality
    except Exception:  # any pint failure on header text means "not a unit"
        return False
    known = [_dimensionality(d) for d in DIMENSIONS] + [_registry().Quantity(1, "second").dimensionality]
    return dim in known


def format_si(value: float, dimension: str) -> str:
    """A short trade-unit text for an SI value (for notices): mm, mm², N, MPa, °C."""
    if dimension == "length":
        return f"{value * 1e3:g} mm"
    if dimension == "area":
        return f"{value * 1e6:g} mm²"
    if dimension == "pressure":
        return f"{value / 1e6:g} MPa"
    if dimension == "temperature":
        return f"{value - ZERO_CELSIUS:g} °C"
    if dimension == "force":
        return f"{value:g} N"
    return f"{value:g}"
