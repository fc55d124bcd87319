"""Other lab tables: force–temperature records and swelling results."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ..curves import ForceTemperatureRecord, SwellingResult
from ..errors import DataError
from ..units import UnitError, split_header, unit_converter
from . import tables
from . import vocabulary as vocab
from .api import guarded
from .columns import cell_value, classify
from .metadata import geometry, parse_meta
from .tables import cell_text


def _table_from(path_or_bytes, filename):
    if isinstance(path_or_bytes, (bytes, bytearray)):
        fn = filename or "upload.csv"
        data, source = bytes(path_or_bytes), fn
        if len(data) > tables.MAX_FILE_BYTES:
            raise DataError(f"{fn}: the file is over the {tables.MAX_FILE_BYTES / 1e6:.0f} MB limit")
    else:
        data, fn, source = tables.read_file_bytes(path_or_bytes)
    if not data.strip():
        raise DataError(f"{fn}: the file is empty")
    return tables.load_table(data, fn, None), fn, source


def read_force_temperature(path_or_bytes, filename: str | None = None, *, stretch=None) -> ForceTemperatureRecord:
    """Read a force–temperature record: columns 'temperature (°C)' (or K/°F) and 'force (N)', metadata
    '# stretch: 2.0' (the clamped stretch; the ``stretch`` option wins) and optionally '# compound: ...'."""
    def work():
        table, fn, source = _table_from(path_or_bytes, filename)
        known, extra, comments = parse_meta(table)
        header = [cell_text(c) for c in table.rows[0]]
        cols = [classify(i, h, None) for i, h in enumerate(header)]
        tcol = next((c for c in cols if c.kind == "temperature"), None)
        fcol = next((c for c in cols if c.kind in ("force", "stress")), None)
        if tcol is None or fcol is None:
            raise DataError(f"{fn}: a force–temperature record needs columns 'temperature (°C)' and 'force (N)'; "
                            f"found {', '.join(repr(h) for h in header)}")
        for c, dim in ((tcol, "temperature"), (fcol, "force")):
            if not c.unit:
                raise DataError(f"{fn}: column {c.header!r} has no unit; write e.g. "
                                f"{'temperature (°C)' if dim == 'temperature' else 'force (N)'}")
        try:
            tconv = unit_converter(tcol.unit, "temperature")
            fconv = unit_converter(fcol.unit, "force")
        except UnitError as e:
            raise DataError(f"{fn}: {e}") from None
        rows = table.rows[1:]
        T = np.array([cell_value(r[tcol.index]) if tcol.index < len(r) else math.nan for r in rows])
        F = np.array([cell_value(r[fcol.index]) if fcol.index < len(r) else math.nan for r in rows])
        ok = np.isfinite(T) & np.isfinite(F)
        notices = []
        if (~ok).sum():
            notices.append(f"{int((~ok).sum())} row(s) without two numbers skipped")
        T, F = tconv(T[ok]), fconv(F[ok])
        if T.size < 3:
            raise DataError(f"{fn}: need at least 3 rows of temperature and force; found {T.size}")
        if np.any(T <= 0):
            raise DataError(f"{fn}: a temperature is at or below absolute zero; check the unit in {tcol.header!r}")
        lam = stretch if stretch is not None else known.get("stretch")
        if lam is None:
            raise DataError(f"{fn}: the clamped stretch is missing; add a line '# stretch: 2.0' or give the option")
        lam = float(lam)
        if not (math.isfinite(lam) and lam > 0):
            raise DataError(f"{fn}: the clamped stretch must be a positive number; got {lam!r}")
        _, area = geometry({}, known, fn)
        md = {"file": fn, "compound": known.get("compound"), **extra}
        if comments:
            md["comments"] = comments
        return ForceTemperatureRecord(T, F, lam, name=known.get("compound") or Path(fn).stem, source=source,
                                      area=area, metadata=md, notices=notices)

    fn = filename or (Path(path_or_bytes).name if not isinstance(path_or_bytes, (bytes, bytearray)) else "upload")
    return guarded(fn, work)


def read_swelling(path_or_bytes, filename: str | None = None) -> list[SwellingResult]:
    """Read a swelling table: compound, dry mass (g), swollen mass (g), extracted mass (g), solvent,
    temperature (°C); one row per specimen."""
    def work():
        table, fn, source = _table_from(path_or_bytes, filename)
        header = [cell_text(c) for c in table.rows[0]]
        where: dict[str, tuple[int, str | None, str]] = {}
        for i, h in enumerate(header):
            label, unit = split_header(h)
            key = vocab.swelling_column(label, taken=where)
            if key is not None:
                where[key] = (i, unit, h)
        missing = [k for k in ("compound", "dry_mass", "swollen_mass") if k not in where]
        if missing:
            raise DataError(f"{fn}: a swelling table needs columns 'compound', 'dry mass (g)', 'swollen mass (g)' "
                            f"(and optionally 'extracted mass (g)', 'solvent', 'temperature (°C)'); missing "
                            f"{', '.join(missing)}")
        convs = {}
        for key in ("dry_mass", "swollen_mass", "extracted_mass", "temperature"):
            if key in where:
                i, unit, h = where[key]
                if not unit:
                    raise DataError(f"{fn}: column {h!r} has no unit; write e.g. "
                                    f"{'temperature (°C)' if key == 'temperature' else 'dry mass (g)'}")
                try:
                    convs[key] = _mass_or_temp(unit, key)
                except UnitError as e:
                    raise DataError(f"{fn}: column {h!r}: {e}") from None
        out = []
        for r, line in zip(table.rows[1:], table.row_numbers[1:], strict=True):
            def get(key, r=r):
                if key not in where or where[key][0] >= len(r):
                    return None
                return r[where[key][0]]
            comp = cell_text(get("compound") or "").strip()
            if not comp:
                continue
            vals = {}
            for key in ("dry_mass", "swollen_mass", "extracted_mass", "temperature"):
                cell = get(key)
                if cell is None or cell == "":
                    vals[key] = None
                    continue
                v = cell_value(cell)
                if not math.isfinite(v):
                    raise DataError(f"{fn}, line {line}: {where[key][2]!r} = {cell!r} is not a number")
                vals[key] = convs[key](v)
            if vals["temperature"] is not None and not vals["temperature"] > 0:
                raise DataError(f"{fn}, line {line}: temperature at or below absolute zero; check its unit")
            if vals["dry_mass"] is None or vals["swollen_mass"] is None:
                raise DataError(f"{fn}, line {line}: dry and swollen mass are both needed")
            if vals["dry_mass"] <= 0 or vals["swollen_mass"] <= vals["dry_mass"] * 0.5:
                raise DataError(f"{fn}, line {line}: masses must be positive and the swollen mass should not be "
                                "far below the dry mass; check the columns")
            if vals["swollen_mass"] <= (vals["extracted_mass"] or vals["dry_mass"]):
                raise DataError(f"{fn}, line {line}: the swollen mass must exceed the dry (extracted) mass")
            out.append(SwellingResult(
                compound=comp, dry_mass=vals["dry_mass"], swollen_mass=vals["swollen_mass"],
                extracted_mass=vals["extracted_mass"], solvent=cell_text(get("solvent") or "").strip(),
                temperature=vals["temperature"], specimen=cell_text(get("specimen") or "").strip() or None,
                line=line, source=source,
            ))
        if not out:
            raise DataError(f"{fn}: no swelling rows found below the header")
        return out

    fn = filename or (Path(path_or_bytes).name if not isinstance(path_or_bytes, (bytes, bytearray)) else "upload")
    return guarded(fn, work)


def _mass_or_temp(unit: str, key: str):
    if key == "temperature":
        return unit_converter(unit, "temperature")
    from ..units import _SI_MASS, _registry

    if unit.strip() in _SI_MASS:  # g, kg, mg without pint (checked against pint in tests/test_units.py)
        factor = _SI_MASS[unit.strip()]
        return lambda v: v * factor

    ureg = _registry()
    try:
        q = ureg.Quantity(1.0, unit.strip())
        factor = float(q.to("kilogram").magnitude)
    except Exception:
        raise UnitError(f"{unit!r} is not a mass unit; write g or kg") from None
    return lambda v: v * factor
