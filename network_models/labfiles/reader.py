"""From a raw table to test curves: header and unit row, column pairs in any order, specimens, geometry
(everything missing named at once), conversion and clean-up."""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..constants import ZERO_CELSIUS
from ..curves import TestCurve
from ..deformation import Mode
from ..errors import DataError, Notice
from ..ultimate import break_properties, find_rupture, rupture_notice
from ..units import UnitError, unit_converter
from . import tables
from . import vocabulary as vocab
from .cleanup import clean
from .columns import Column, cell_value, classify, is_number_cell, looks_garbled, looks_like_unit_row
from .convert import convert
from .metadata import find_header, geometry, missing_geometry, missing_sentence, parse_meta, resolve_mode
from .tables import Table, cell_text

X_KINDS, Y_KINDS = vocab.X_KINDS, vocab.Y_KINDS


@dataclass(kw_only=True)
class Header:
    """The header row, the optional unit row below it and the classified columns."""

    names: list[str]
    start: int  # index of the first data row in table.rows
    unit_row: list[str] | None
    columns: list[Column]


def read_header(table: Table, opts: dict, *, strict: bool = True) -> Header:
    rows, numbers, fn = table.rows, table.row_numbers, table.filename
    first = rows[0]
    if all(is_number_cell(c) or c == "" for c in first):
        raise DataError(f"{fn}, line {numbers[0]}: the table has no header row, so the columns and their units are "
                        "unknown; add a first row such as 'stretch,stress (MPa)' or 'strain (%),force (N)'",
                        file=fn, line=numbers[0], fix="stretch,stress (MPa)")
    names = [cell_text(c) for c in first]
    start, unit_row = 1, None
    if len(rows) > 1 and looks_like_unit_row(rows[1]):
        unit_row, start = [cell_text(c) for c in rows[1]], 2
    ncols = max(len(r) for r in rows)
    nhead = sum(1 for h in names if h)
    data_part = rows[start:]
    wider = [r for r in data_part if sum(1 for c in r if c != "") > max(nhead, 1)]
    if strict and data_part and nhead and len(wider) > len(data_part) // 2:
        raise DataError(f"{fn}: most rows have more values than the header has column names ({nhead}); if the "
                        "numbers use decimal commas, separate the columns with semicolons or tabs (or quote the "
                        "numbers), or name every column in the header", file=fn)
    names += [""] * (ncols - len(names))
    cols = [classify(i, h, unit_row[i] if unit_row and i < len(unit_row) else None,
                     kinds=opts.get("columns"), units=opts.get("units")) for i, h in enumerate(names)]
    return Header(names=names, start=start, unit_row=unit_row, columns=cols)


def pair_columns(cols: list[Column]) -> list[tuple[list[Column], list[Column]]]:
    """Groups of (x columns, y columns), whichever comes first in the file: the kind of the first paired
    column (x or y) leads, and a new group starts where a leading column follows the other kind."""
    xy = [c for c in cols if c.kind in X_KINDS + Y_KINDS]
    if not xy:
        return []
    lead_is_x = xy[0].kind in X_KINDS
    groups: list[tuple[list[Column], list[Column]]] = []
    for c in xy:
        is_lead = (c.kind in X_KINDS) == lead_is_x
        if is_lead and (not groups or groups[-1][1 if lead_is_x else 0]):
            groups.append(([], []))
        groups[-1][0 if c.kind in X_KINDS else 1].append(c)
    return [g for g in groups if g[0] and g[1]]


def _choose(fn, gx, gy):
    """The stretch column and the stress columns of one group, with notices naming what was left out."""
    x = min(gx, key=lambda c: X_KINDS.index(c.kind))
    best = min(Y_KINDS.index(c.kind) for c in gy)
    ycols = [c for c in gy if Y_KINDS.index(c.kind) == best]
    notes = []
    if len(gx) > 1:
        notes.append(Notice(f"used column {x.header!r} for the stretch; ignored "
                            + ", ".join(repr(c.header) for c in gx if c is not x), "unused", fn))
    others = [c for c in gy if c not in ycols]
    if others:
        notes.append(Notice(f"used {', '.join(repr(c.header) for c in ycols)} for the stress; ignored "
                            + ", ".join(repr(c.header) for c in others), "unused", fn))
    return x, ycols, notes


def split_pieces(fn: str, groups: Any, spec_col: Any, data_rows: Any, values: Any) -> list[Any]:
    """(x col, y col, row indices, specimen label or None, notices) — one per curve to make."""
    pieces = []
    for gx, gy in groups:
        x, ycols, notes = _choose(fn, gx, gy)
        for y in ycols:
            if spec_col is None:
                pieces.append((x, y, list(range(len(data_rows))), y.specimen_hint or x.specimen_hint or None,
                               list(notes)))
                continue
            labels: dict[str, list[int]] = {}
            k = spec_col.index
            for r in range(len(data_rows)):
                lab = cell_text(data_rows[r][k]).strip() if k < len(data_rows[r]) else ""
                if lab == "" and not (np.isfinite(values[r, x.index]) or np.isfinite(values[r, y.index])):
                    continue
                labels.setdefault(lab or "(no specimen)", []).append(r)
            pieces.extend((x, y, idx, lab, list(notes)) for lab, idx in labels.items())
    return pieces


def _temperature(fn, opts, known, cols, values, notices):
    t = opts.get("temperature")
    if t is not None:
        try:
            t = float(t)
        except (TypeError, ValueError):
            raise DataError(f"{fn}: temperature option {t!r} must be a number in K", file=fn) from None
        if not (math.isfinite(t) and t > 0):
            raise DataError(f"{fn}: temperature option {t!r} must be in K and above zero", file=fn)
        return t, None
    tcol = next((c for c in cols if c.kind == "temperature" and c.unit), None)
    if "temperature" in known or tcol is None:
        return known.get("temperature"), None
    try:
        tv = unit_converter(tcol.unit, "temperature")(values[:, tcol.index])
    except UnitError:
        return None, None
    tv = tv[np.isfinite(tv)]
    if not (tv.size and np.all(tv > 0)):
        return None, None
    t = float(np.mean(tv))
    notices.append(Notice(f"test temperature taken as the mean of column {tcol.header!r}: {t - ZERO_CELSIUS:.1f} °C "
                          f"(range {tv.min() - ZERO_CELSIUS:.1f} to {tv.max() - ZERO_CELSIUS:.1f} °C)", "temperature",
                          fn))
    return t, tcol


def check_geometry(fn: str, pieces: Any, gauge: Any, area: Any, opts: Any, known: Any) -> None:
    """Every geometry item the chosen columns need and the file lacks, in ONE DataError (``missing``)."""
    needs_gauge = gauge is None and any(x.kind == "extension" for x, *_ in pieces)
    needs_area = area is None and any(y.kind == "force" for _, y, *_ in pieces)
    missing = missing_geometry(needs_gauge, needs_area, opts, known)
    if not missing:
        return
    why = {}
    if needs_gauge:
        why["gauge_length"] = "for " + ", ".join(sorted({repr(x.header) for x, *_ in pieces if x.kind == "extension"}))
    if needs_area:
        why["area"] = "for " + ", ".join(sorted({repr(y.header) for _, y, *_ in pieces if y.kind == "force"}))
    err = DataError(missing_sentence(fn, missing, why), file=fn, kind="missing-geometry", missing=list(missing),
                    fix="give " + ", ".join(missing))
    err.missing = list(missing)  # type: ignore[attr-defined]
    raise err


def _data_values(fn, header: Header, rows) -> np.ndarray:
    ncols = len(header.names)
    values = np.array([[cell_value(cell) for cell in cells[:ncols]] + [math.nan] * (ncols - len(cells[:ncols]))
                       for cells in rows], dtype=np.float64)
    if not any(np.isfinite(values[:, c.index]).any() for c in header.columns):
        shown = ", ".join(h for h in header.names if h)
        if looks_garbled(shown):
            raise DataError(f"{fn}: this does not look like a text table (binary data, or a text encoding other than "
                            "UTF-8/Latin-1); export the data from the tester as CSV, TSV or a workbook", file=fn)
        raise DataError(f"{fn}: no column holds numbers (headers: {shown or 'none'}); the table needs a "
                        "stretch/strain/extension column and a stress/force column", file=fn)
    return values


def _groups_or_error(fn, header: Header):
    cols = header.columns
    names = ", ".join(repr(h) for h in header.names if h) or "none"
    if not any(c.kind in X_KINDS for c in cols):
        raise DataError(f"{fn}: no stretch, strain or extension column found (headers: {names}); name one column "
                        "e.g. 'stretch', 'strain (%)' or 'extension (mm)' (or map the columns in a reading profile)",
                        file=fn)
    if not any(c.kind in Y_KINDS for c in cols):
        raise DataError(f"{fn}: no stress or force column found (headers: {names}); name one column e.g. "
                        "'stress (MPa)', 'true stress (MPa)' or 'force (N)' (or map the columns in a reading profile)",
                        file=fn)
    return pair_columns(cols)


def curves_from_table(table: Table, source: str, opts: dict) -> list[TestCurve]:
    fn = table.filename
    known, extra, comments = parse_meta(table, find_header(table))
    header = read_header(table, opts)
    data_rows, data_numbers = table.rows[header.start:], table.row_numbers[header.start:]
    if not data_rows:
        raise DataError(f"{fn}: the table has a header but no rows of numbers below it", file=fn)
    values = _data_values(fn, header, data_rows)
    groups = _groups_or_error(fn, header)
    notices0 = list(table.notices)
    mode, loading = resolve_mode(opts, known, fn, notices0)
    temperature, tcol = _temperature(fn, opts, known, header.columns, values, notices0)
    gauge, area = geometry(opts, known, fn)
    spec_col = next((c for c in header.columns if c.kind == "specimen"), None)
    pieces = split_pieces(fn, groups, spec_col, data_rows, values)
    check_geometry(fn, pieces, gauge, area, opts, known)
    if loading != "compression" and any(x.compression or y.compression for x, y, *_ in pieces):
        loading = "compression"
        notices0.append(Notice("column headers name compression: read as uniaxial compression", "assumed-mode", fn))
    used = {c.index for x, y, *_ in pieces for c in (x, y)}
    ignored = [c.header for c in header.columns if c.header and c.index not in used and c is not tcol
               and c.kind not in X_KINDS + Y_KINDS + ("specimen",)]
    given = [k for k in ("gauge_length", "width", "thickness", "area", "diameter") if opts.get(k) is not None]
    if given:
        notices0.append(Notice("geometry given by the user (options or profile), not read from the file: "
                               + ", ".join(k.replace("_", " ") for k in given), "assumed-geometry", fn))
    stem, multi = Path(fn).stem, len(pieces) > 1
    table_read = TableRead(fn=fn, source=source, values=values, numbers=data_numbers, gauge=gauge, area=area,
                           mode=mode, loading=loading, temperature=temperature, known=known, extra=extra,
                           comments=comments, opts=opts)
    curves = []
    for k, (x, y, idx, label, gnotes) in enumerate(pieces, start=1):
        specimen = label if label is not None else known.get("specimen")
        if label is None and multi:
            specimen = f"{specimen or 'specimen'} #{k}"
        notices = notices0 + gnotes
        if ignored and k == 1:
            notices.append(Notice("columns not used: " + ", ".join(repr(h) for h in ignored), "unused", fn))
        try:
            curves.append(_one_curve(x, y, idx, specimen, notices, stem, table_read))
        except DataError as e:
            if multi and specimen:
                raise DataError(f"{e} (specimen {specimen})", file=fn, line=e.line, column=e.column) from None
            raise
    return curves


@dataclass(frozen=True, kw_only=True)
class TableRead:
    """What :func:`curves_from_table` learnt about one table, shared by every curve (specimen) cut from it."""

    fn: str  # the file name, for messages
    source: str
    values: np.ndarray  # the data rows as floats (NaN where a cell is not a number)
    numbers: list  # the file's line/row number of each data row
    gauge: float | None  # gauge length, m
    area: float | None  # cross-section, m²
    mode: Mode
    loading: str  # "tension" | "compression"
    temperature: float | None  # K
    known: dict  # metadata read from the file's preamble
    extra: dict
    comments: list
    opts: dict  # the reader options given


def _one_curve(x, y, idx, specimen, notices, stem, t: TableRead) -> TestCurve:
    fn, values, numbers, gauge, area, known, opts = t.fn, t.values, t.numbers, t.gauge, t.area, t.known, t.opts
    mode, loading, temperature, extra, comments = t.mode, t.loading, t.temperature, t.extra, t.comments
    source = t.source
    compression = loading == "compression"
    lam, stress, kept = convert(fn, x, y, values, idx, numbers, gauge, area, notices, compression)
    ruptured = None if compression else find_rupture(lam, stress)  # break properties (network_models.ultimate)
    if ruptured is not None:
        dropped = lam.size - ruptured
        lam, stress, kept = lam[:ruptured], stress[:ruptured], kept[:ruptured]
    lam, stress, kept = clean(fn, lam, stress, kept, notices, y, compression)
    compound = known.get("compound")
    md = {
        "file": fn, "compound": compound, "columns": {"stretch": x.header, "stress": y.header},
        "units": {"stretch": x.unit, "stress": y.unit}, "rows": (kept[0], kept[-1]),
        "gauge_length": gauge, "area": area,
        "width": opts.get("width") or known.get("width"),
        "thickness": opts.get("thickness") or known.get("thickness"),
        "loading": loading,
    }
    if known.get("speed"):
        md["speed"] = known["speed"]
    md.update(extra)
    if comments:
        md["comments"] = comments
    name = " ".join(s for s in (compound or stem, specimen) if s)
    if ruptured is not None:
        u = break_properties(specimen or name, lam, stress, dropped)
        md["ultimate"] = u.to_dict()
        notices.append(rupture_notice(u, fn))
    return TestCurve(mode=mode, stretch=lam, stress=stress, name=name, source=source, specimen=specimen,
                     temperature=temperature, cycle=known.get("cycle"), metadata=md, notices=notices)


def table_from_bytes(data: bytes, filename: str, opts: dict) -> Table:
    if not data.strip():
        raise DataError(f"{filename}: the file is empty; it needs a header row and rows of numbers", file=filename)
    skip = opts.get("skip") or 0
    return tables.load_table(data, filename, opts.get("sheet"), decimal=opts.get("decimal"), skip=int(skip))
