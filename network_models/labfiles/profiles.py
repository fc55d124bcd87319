"""Reading profiles: how to read files of one shape, saved once and reused (a small TOML file of our own).

    [profile]
    format = "netstretch reading profile"
    version = 1
    note = "tensile tester, hall 2"          # free text

    [read]
    mode = "uniaxial"       # uniaxial | planar | equibiaxial | compression
    decimal = "comma"       # comma | point (default: detected)
    skip = 0                # lines to leave out at the top
    sheet = "data"          # workbook sheet, name or number from 0
    temperature = "23 °C"

    [geometry]              # each with its unit
    gauge_length = "20 mm"
    width = "4 mm"
    thickness = "2 mm"
    # area = "8 mm²"  or  diameter = "29 mm"

    [columns]               # header as written in the file = kind
    "Kraft" = "force"       # stretch, strain, true_strain, extension, stress, true_stress, force, specimen,
                            # time, temperature, other
    [units]                 # header = unit, for headers that carry none
    "Kraft" = "N"

``load_profile(path)`` returns reader options (SI) for ``read_curves(..., **options)`` or
``read_curves(..., profile=path)``; ``save_profile(path, options)`` writes the options a user gave.
"""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

from ..deformation import Mode
from ..errors import DataError, UnitError
from ..units import parse_quantity
from .columns import KINDS

FORMAT = "netstretch reading profile"
_GEOMETRY = {"gauge_length": ("length", 1e3, "mm"), "width": ("length", 1e3, "mm"),
             "thickness": ("length", 1e3, "mm"), "diameter": ("length", 1e3, "mm"), "area": ("area", 1e6, "mm²")}
_READ = ("mode", "decimal", "skip", "sheet", "temperature")


def _q(text) -> str:
    """A TOML basic string (JSON's string escapes are valid TOML)."""
    return json.dumps(str(text), ensure_ascii=False)


def save_profile(path: str | Path, options: dict, *, note: str = "") -> Path:
    """Write the reading options a user gave (the names of ``read_curves``'s options, SI values) as a
    profile.  Options that are not part of a profile's shape (``profile`` itself) are left out."""
    lines = ["# How to read lab files of one shape (netstretch; reuse with `netstretch fit --profile FILE`)",
             "[profile]", f"format = {_q(FORMAT)}", "version = 1"]
    if note:
        lines.append(f"note = {_q(note)}")
    lines += ["", "[read]"]
    mode = options.get("mode")
    if mode is not None:
        lines.append(f"mode = {_q(mode.value if isinstance(mode, Mode) else mode)}")
    if options.get("decimal") is not None:
        lines.append(f"decimal = {_q(options['decimal'])}")
    if options.get("skip"):
        lines.append(f"skip = {int(options['skip'])}")
    sheet = options.get("sheet")
    if sheet is not None:
        lines.append(f"sheet = {int(sheet)}" if isinstance(sheet, int) else f"sheet = {_q(sheet)}")
    if options.get("temperature") is not None:
        kelvin = float(options["temperature"])
        lines.append(f"temperature = {_q(f'{kelvin:.12g} K')}")
    lines += ["", "[geometry]"]
    for key, (_, scale, unit) in _GEOMETRY.items():
        if options.get(key) is not None:
            value = float(options[key]) * scale
            lines.append(f"{key} = {_q(f'{value:.12g} {unit}')}")
    for table in ("columns", "units"):
        mapping = options.get(table) or {}
        lines += ["", f"[{table}]"] + [f"{_q(h)} = {_q(v)}" for h, v in mapping.items()]
    p = Path(path)
    p.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return p


def load_profile(path: str | Path) -> dict:
    """Reader options (SI) from a profile file; DataError naming the file and entry for anything wrong."""
    p = Path(path)
    try:
        raw = tomllib.loads(p.read_text("utf-8"))
    except OSError as e:
        raise DataError(f"{p}: cannot open the reading profile ({e.strerror or e})", file=str(p)) from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as e:
        raise DataError(f"{p.name}: not a valid TOML reading profile ({e})", file=p.name) from None
    if not raw:
        raise DataError(f"{p.name}: the reading profile is empty; write at least one of [read], [geometry], "
                        "[columns] or [units], or leave --profile out", file=p.name)
    return profile_options(raw, p.name)


def profile_options(raw: dict, name: str = "profile") -> dict:
    unknown = set(raw) - {"profile", "read", "geometry", "columns", "units"}
    if unknown:
        raise DataError(f"{name}: unknown section(s) {', '.join(sorted(unknown))}; a reading profile has [profile], "
                        "[read], [geometry], [columns] and [units]", file=name)
    opts: dict = {}
    read = raw.get("read", {})
    for key in set(read) - set(_READ):
        raise DataError(f"{name}: unknown entry [read] {key}; use {', '.join(_READ)}", file=name)
    if "mode" in read:
        opts["mode"] = str(read["mode"])
    if read.get("decimal") is not None:
        if read["decimal"] not in ("comma", "point"):
            raise DataError(f"{name}: [read] decimal must be 'comma' or 'point'; got {read['decimal']!r}",
                            file=name)
        opts["decimal"] = read["decimal"]
    if "skip" in read:
        if not isinstance(read["skip"], int) or read["skip"] < 0:
            raise DataError(f"{name}: [read] skip must be a whole number of lines; got {read['skip']!r}", file=name)
        opts["skip"] = read["skip"]
    if "sheet" in read:
        opts["sheet"] = read["sheet"]
    if "temperature" in read:
        opts["temperature"] = _quantity(name, "temperature", read["temperature"], "temperature", "23 °C")
    for key, value in raw.get("geometry", {}).items():
        if key not in _GEOMETRY:
            raise DataError(f"{name}: unknown entry [geometry] {key}; use {', '.join(_GEOMETRY)}", file=name)
        dim, _, unit = _GEOMETRY[key]
        opts[key] = _quantity(name, key, value, dim, f"20 {unit}")
    for table in ("columns", "units"):
        mapping = raw.get(table, {})
        if not isinstance(mapping, dict) or not all(isinstance(v, str) for v in mapping.values()):
            raise DataError(f"{name}: [{table}] maps column headers to text", file=name)
        if mapping:
            opts[table] = dict(mapping)
    bad = [f"{h!r} = {k!r}" for h, k in opts.get("columns", {}).items() if k not in KINDS]
    if bad:
        raise DataError(f"{name}: [columns] {', '.join(bad)}: unknown kind; use one of {', '.join(KINDS)}", file=name)
    return opts


def _quantity(name, key, value, dim, example) -> float:
    try:
        v = parse_quantity(str(value), dim, require_unit=True)
    except UnitError as e:
        raise DataError(f"{name}: {key} = {value!r}: {e}", file=name, fix=f'{key} = "{example}"') from None
    if not (v > 0) or (dim == "temperature" and v <= 0):
        raise DataError(f"{name}: {key} = {value!r} must be positive", file=name)
    return v


__all__ = ["FORMAT", "load_profile", "profile_options", "save_profile"]
