"""Lab test data: one homogeneous test curve in SI units, and the readers for lab files.

``read_curves(path, ...)`` and ``read_curves_bytes(data, filename, ...)`` read CSV/TSV/TXT (comma,
semicolon or tab; decimal point or decimal comma) and .xlsx tables into :class:`TestCurve` objects
(stretch λ and nominal stress in Pa).  The accepted columns, headers and ``# key: value`` metadata lines
are described in README.md ("Lab files netstretch reads").  Every problem is a :class:`DataError` whose
message names the file, row or column and what to do; every row the reader leaves out is counted in the
curve's ``notices``.

Also here: ``read_force_temperature`` (force at fixed length vs temperature), ``read_swelling``
(swelling masses) and ``read_manifest`` (the compound list of a sample set, ``compounds.toml``).
"""

from __future__ import annotations

import csv
import io
import math
import re
import tomllib
import unicodedata
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .deformation import Mode
from .errors import DataError
from .units import UnitError, parse_number, parse_quantity, split_header, unit_converter

__all__ = [
    "MAX_FILE_BYTES", "SAMPLE_MANIFEST", "SLACK_FRACTION", "Compound", "DataError", "FileInfo",
    "ForceTemperatureRecord", "Manifest", "SwellingResult", "TestCurve", "curves_to_csv", "inspect_bytes",
    "read_curves", "read_curves_bytes", "read_force_temperature", "read_manifest", "read_swelling",
]

#: Files larger than this are refused (bytes; 20 MB).  A tensile export is usually well under 1 MB.
MAX_FILE_BYTES = 20_000_000
#: Leading rows whose stress is at or below this fraction of the peak stress count as slack.
SLACK_FRACTION = 0.002
#: Stretch above this is taken as a unit mistake (λ = 50 is 4900 % strain; no rubber gets there).
MAX_PLAUSIBLE_STRETCH = 50.0
#: The bundled sample set's manifest (installed package or source checkout; see network_models.samples).
from .samples import SAMPLE_MANIFEST  # noqa: E402

_TEXT_SUFFIXES = {".csv", ".tsv", ".txt", ".dat", ".asc", ""}
_EXCEL_SUFFIXES = {".xlsx", ".xlsm"}




@dataclass(eq=False)
class TestCurve:
    """One test curve: stretch λ and nominal stress (Pa) in one mode, with where it came from.

    Curves compare and hash by identity (``eq=False``): field-wise ``==`` on numpy arrays is ambiguous, and
    ``curve in list_of_curves`` must work."""

    __test__ = False  # not a pytest test class

    mode: Mode
    stretch: np.ndarray
    stress: np.ndarray  # nominal (engineering) stress, Pa
    name: str = "curve"
    source: str = ""  # file the curve came from ("" when made in code)
    specimen: str | None = None
    temperature: float | None = None  # K
    cycle: str | None = None
    metadata: dict = field(default_factory=dict)
    notices: list[str] = field(default_factory=list)

    def __post_init__(self):
        self.mode = Mode.parse(self.mode)
        self.stretch = np.asarray(self.stretch, dtype=np.float64)
        self.stress = np.asarray(self.stress, dtype=np.float64)
        if self.stretch.shape != self.stress.shape or self.stretch.ndim != 1:
            raise DataError(f"{self.name}: stretch and stress must be 1-D arrays of equal length")

    def __len__(self):
        return self.stretch.size


# ---------------------------------------------------------------------------------------------------
# Raw table: metadata lines + rows of cells (str or float), whatever the file format
# ---------------------------------------------------------------------------------------------------

@dataclass
class _Table:
    filename: str
    meta: list[tuple[int, str]]  # (line/row number, text after '#')
    rows: list[list]  # cells: str | float
    row_numbers: list[int]  # 1-based line (or sheet row) number of each row, for messages
    notices: list[str] = field(default_factory=list)


def _decode(data: bytes, filename: str) -> str:
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return data.decode("utf-16")
        except UnicodeDecodeError:
            raise DataError(f"{filename}: the file says it is UTF-16 text but is not; save it as UTF-8 CSV") from None
    if b"\x00" in data:
        raise DataError(
            f"{filename}: this is not a text table (it holds binary bytes); "
            "export the test as CSV/TXT or save it as .xlsx"
        )
    for enc in ("utf-8-sig", "cp1252"):
        try:
            return data.decode(enc)
        except UnicodeDecodeError:
            continue
    return data.decode("latin-1")  # every byte is a character in latin-1


def _meta_text(line: str) -> str | None:
    s = line.strip()
    if s.startswith("#"):
        return s.lstrip("#").strip()
    return None


def _sniff_delimiter(lines: list[str]) -> str:
    sample = lines[:30]
    for delim in ("\t", ";"):
        if sample and sum(delim in ln for ln in sample) >= max(1, int(0.8 * len(sample))):
            return delim
    if any("," in ln for ln in sample):
        return ","
    return ""


_DECIMAL_COMMA_CELL = re.compile(r"^[-+\u2212]?\d*,\d+(?:[eE][-+]?\d+)?$")
_THOUSANDS_DOT = re.compile(r"^[-+\u2212]?\d{1,3}(?:\.\d{3})+,\d+$")


def _text_table(text: str, filename: str) -> _Table:
    meta: list[tuple[int, str]] = []
    body: list[tuple[int, str]] = []
    for i, line in enumerate(text.splitlines(), start=1):
        if not line.strip():
            continue
        m = _meta_text(line)
        if m is not None:
            meta.append((i, m))
        else:
            body.append((i, line))
    if not body:
        if meta:
            raise DataError(f"{filename}: the file holds only '#' metadata lines and no table of numbers")
        raise DataError(f"{filename}: the file is empty; it needs a header row and rows of numbers")
    delim = _sniff_delimiter([ln for _, ln in body])
    if not delim:
        raise DataError(
            f"{filename}: no column separator found (comma, semicolon or tab); "
            "save the table as CSV with a header row such as 'stretch,stress (MPa)'"
        )
    rows, numbers = [], []
    reader = csv.reader([ln for _, ln in body], delimiter=delim)
    for (lineno, _), cells in zip(body, reader, strict=True):
        rows.append([c.strip() for c in cells])
        numbers.append(lineno)
    decimal_comma = delim != "," and any(
        _DECIMAL_COMMA_CELL.match(c) or _THOUSANDS_DOT.match(c) for r in rows[1:60] for c in r
    )
    notices = []
    if decimal_comma:
        notices.append("decimal commas read as decimal points")
        for r in rows:
            for k, c in enumerate(r):
                if _THOUSANDS_DOT.match(c):
                    r[k] = c.replace(".", "")
    return _Table(filename, meta, rows, numbers, notices)


def _excel_table(data: bytes, filename: str, sheet) -> _Table:
    try:
        import openpyxl
    except ImportError:  # pragma: no cover - openpyxl is a dependency
        raise DataError(f"{filename}: reading .xlsx needs openpyxl; install it or save the sheet as CSV") from None
    try:
        wb = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception:  # zipfile.BadZipFile, InvalidFileException, KeyError on broken archives...
        raise DataError(f"{filename}: not a readable .xlsx workbook; open it in a spreadsheet and save it again "
                        "as .xlsx, or export the sheet as CSV") from None
    try:
        names = wb.sheetnames
        if sheet is None:
            ws = wb[names[0]]
        elif isinstance(sheet, int) and not isinstance(sheet, bool):
            if not (0 <= sheet < len(names)):
                raise DataError(f"{filename}: there is no sheet number {sheet} (the workbook has {len(names)}: "
                                f"{', '.join(names)}); sheets are counted from 0")
            ws = wb[names[sheet]]
        else:
            if str(sheet) not in names:
                raise DataError(f"{filename}: no sheet called {sheet!r}; the workbook has {', '.join(names)}")
            ws = wb[str(sheet)]
        meta, rows, numbers = [], [], []
        for i, values in enumerate(ws.iter_rows(values_only=True), start=1):
            cells = []
            for v in values:
                if v is None:
                    cells.append("")
                elif isinstance(v, bool):
                    cells.append(str(v))
                elif isinstance(v, (int, float)):
                    cells.append(float(v))
                else:
                    cells.append(str(v).strip())
            while cells and cells[-1] == "":
                cells.pop()
            if not cells or all(c == "" for c in cells):
                continue
            first = next(c for c in cells if c != "")
            if isinstance(first, str) and first.startswith("#"):
                text = " ".join(_cell_text(c) for c in cells if c != "")
                meta.append((i, text.lstrip("#").strip()))
                continue
            rows.append(cells)
            numbers.append(i)
        notices = []
        if sheet is None and len(names) > 1:
            notices.append(f"read sheet {names[0]!r}; the workbook's other sheets ({', '.join(names[1:])}) "
                           "were not read (choose one with the sheet option)")
    finally:
        wb.close()
    if not rows:
        raise DataError(f"{filename}: the sheet {ws.title!r} holds no table; it needs a header row and rows of numbers")
    return _Table(filename, meta, rows, numbers, notices)


def _cell_text(c) -> str:
    if isinstance(c, float):
        return f"{c:g}"
    return str(c)


def _load_table(data: bytes, filename: str, sheet) -> _Table:
    suffix = Path(filename).suffix.lower()
    is_zip = data[:4] == b"PK\x03\x04"
    if suffix in _EXCEL_SUFFIXES or is_zip:  # a workbook, whatever its name says
        return _excel_table(data, filename, sheet)
    if suffix == ".xls" or data[:8] == b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1":
        raise DataError(f"{filename}: the old .xls format is not read; save the workbook as .xlsx or CSV")
    return _text_table(_decode(data, filename), filename)


# ---------------------------------------------------------------------------------------------------
# Metadata
# ---------------------------------------------------------------------------------------------------

_META_KEYS = {
    "mode": "mode", "test mode": "mode", "deformation mode": "mode", "test type": "mode",
    "gauge length": "gauge_length", "gage length": "gauge_length", "l0": "gauge_length",
    "initial length": "gauge_length", "clamp distance": "gauge_length", "grip distance": "gauge_length",
    "width": "width", "specimen width": "width",
    "thickness": "thickness", "specimen thickness": "thickness",
    "area": "area", "cross section": "area", "cross-section": "area", "cross sectional area": "area",
    "cross-sectional area": "area", "section area": "area",
    "temperature": "temperature", "test temperature": "temperature", "temp": "temperature",
    "specimen": "specimen", "sample": "specimen", "specimen id": "specimen",
    "cycle": "cycle", "compound": "compound", "material": "compound",
    "stretch": "stretch", "clamp stretch": "stretch", "fixed stretch": "stretch",
}
# test-mode words machines write that Mode.parse does not know
_MODE_WORDS = {"tensile": "uniaxial", "tensile test": "uniaxial", "uniaxial tensile": "uniaxial",
               "biaxial tension": "equibiaxial", "bubble inflation": "equibiaxial", "equi-biaxial": "equibiaxial",
               "equi biaxial": "equibiaxial", "shear": "planar", "planar shear": "planar"}
_META_DIMENSIONS = {"gauge_length": "length", "width": "length", "thickness": "length", "area": "area",
                    "temperature": "temperature", "stretch": "dimensionless"}


def _parse_meta(table: _Table, lenient: frozenset[int] = frozenset()) -> tuple[dict, dict, list[str]]:
    """(known: canonical key -> SI value or text, extra: other key -> text, comments).

    Our own '# key: value' lines must be right (a DataError names the line); lines in ``lenient`` (a
    machine's preamble above the header) that cannot be read are kept as text and noted instead."""
    known, extra, comments = {}, {}, []
    for lineno, text in table.meta:
        try:
            _meta_line(table.filename, lineno, text, known, extra, comments)
        except DataError as e:
            if lineno not in lenient:
                raise
            extra[text] = ""
            table.notices.append(f"preamble line {lineno} kept as text only: {e}")
    return known, extra, comments


def _meta_line(filename, lineno, text, known, extra, comments):
    m = re.match(r"^([^:=]+?)\s*[:=]\s*(.*)$", text)
    if not m:
        if text:
            comments.append(text)
        return
    raw_key, value = m.group(1).strip(), m.group(2).strip()
    label, key_unit = split_header(raw_key)
    key = " ".join(label.lower().replace("_", " ").split())
    canon = _META_KEYS.get(key)
    if canon is None:
        extra[raw_key] = value
        return
    number_only = re.fullmatch(r"\s*[-+]?[\d.,eE+-]+\s*", value) is not None
    if canon in _META_DIMENSIONS:
        dim = _META_DIMENSIONS[canon]
        try:
            v = parse_quantity(value, dim, default_unit=key_unit)
        except UnitError as e:
            raise DataError(f"{filename}, line {lineno}: metadata '{raw_key}: {value}' — {e}") from None
        if not math.isfinite(v) or (canon != "temperature" and v <= 0):
            raise DataError(f"{filename}, line {lineno}: metadata '{raw_key}' must be a positive "
                            f"number with a unit; got {value!r}")
        if canon in ("gauge_length", "width", "thickness", "area") and not key_unit and number_only:
            raise DataError(f"{filename}, line {lineno}: metadata '{raw_key}: {value}' has no unit; "
                            f"write e.g. '# {key}: {value} mm'")
        if canon == "temperature" and number_only and not key_unit:
            raise DataError(f"{filename}, line {lineno}: temperature {value!r} has no unit; "
                            f"write e.g. '# temperature: {value} °C' or '... K'")
        if canon == "temperature" and v <= 0:
            raise DataError(f"{filename}, line {lineno}: temperature {value!r} is at or below "
                            "absolute zero; check the unit (°C, K or °F)")
        known[canon] = v
    elif canon == "mode":
        value = _MODE_WORDS.get(value.strip().lower(), value)
        try:
            known[canon] = Mode.parse(value)
        except ValueError as e:
            raise DataError(f"{filename}, line {lineno}: {e}") from None
    else:
        known[canon] = value


# ---------------------------------------------------------------------------------------------------
# Columns
# ---------------------------------------------------------------------------------------------------

_X_KINDS = ("stretch", "strain", "true_strain", "extension")  # in order of preference
_Y_KINDS = ("stress", "true_stress", "force")

_KEYWORDS = [
    ("specimen", ("specimen", "sample", "test piece", "piece", "probe")),
    ("true_stress", ("true stress", "cauchy stress", "true tensile stress", "wahre spannung")),
    ("stretch", ("stretch", "lambda", "λ", "extension ratio", "draw ratio")),
    ("stress", ("stress", "σ", "spannung")),
    ("true_strain", ("true strain", "logarithmic strain", "log strain", "hencky strain", "natural strain")),
    ("force", ("force", "load", "kraft")),
    ("strain", ("strain", "elongation", "ε", "dehnung")),
    ("extension", ("extension", "displacement", "crosshead", "travel", "deformation", "position", "elong",
                   "distance", "traverse", "weg")),
    ("time", ("time", "zeit")),
    ("temperature", ("temperature", "temp")),
]


@dataclass
class _Column:
    index: int
    header: str
    label: str
    unit: str | None
    kind: str
    specimen_hint: str = ""


def _unit_dimension(unit: str | None) -> str | None:
    if not unit:
        return None
    for dim in ("pressure", "force", "length", "dimensionless", "temperature"):
        try:
            unit_converter(unit, dim)
            return dim
        except UnitError:
            continue
    return None


def _classify(index: int, header: str, unit_row_cell: str | None) -> _Column:
    label, unit = split_header(header)
    if unit is None and unit_row_cell:
        unit = split_header(f"x ({unit_row_cell.strip('[]() ')})")[1]
    low = label.lower()
    kind = "other"
    for k, words in _KEYWORDS:
        if any(w in low for w in words):
            kind = k
            break
    dim = _unit_dimension(unit)
    if kind in ("strain", "true_strain") and dim == "length":
        kind = "extension"
    elif kind == "extension" and dim == "dimensionless" and unit is not None:
        kind = "strain"
    elif kind == "other" and dim == "pressure":
        kind = "stress"
    elif kind in ("other", "stress") and dim == "force":
        kind = "force"
    elif kind == "specimen" and dim is not None:  # "specimen width (mm)" is a measurement, not a name
        kind = "other"
    hint = low
    for _, words in _KEYWORDS:
        for w in words:
            hint = hint.replace(w, " ")
    for w in ("nominal", "engineering", "tensile", "standard", "true", "ratio", "of", "the", "#"):
        hint = re.sub(rf"\b{re.escape(w)}\b", " ", hint)
    hint = " ".join(hint.replace("_", " ").split()).strip(" -:,.")
    # keep the user's spelling for the hint
    if hint:
        pos = label.lower().find(hint)
        if pos >= 0:
            hint = label[pos:pos + len(hint)]
    return _Column(index, header, label, unit, kind, hint)


def _is_number_cell(c) -> bool:
    if isinstance(c, float):
        return True
    if not c:
        return False
    try:
        parse_number(c)
        return True
    except UnitError:
        return False


def _cell_value(c) -> float:
    if isinstance(c, float):
        return c
    if not c:
        return math.nan
    try:
        return float(c)  # the common case, fast
    except ValueError:
        pass
    try:
        return parse_number(c)
    except UnitError:
        return math.nan


def _looks_like_unit_row(cells) -> bool:
    nonempty = [c for c in cells if c != ""]
    if not nonempty or any(not isinstance(c, str) for c in nonempty):
        return False
    ok = 0
    for c in nonempty:
        if _unit_dimension(c.strip("[]() ")) is not None or c.strip("[]() ") in {"-", "1", "%"}:
            ok += 1
    return ok >= max(1, len(nonempty) // 2) and not any(_is_number_cell(c) for c in nonempty)


# ---------------------------------------------------------------------------------------------------
# From table to curves
# ---------------------------------------------------------------------------------------------------

def _fmt_rows(rows: list[int], limit: int = 6) -> str:
    shown = ", ".join(str(r) for r in rows[:limit])
    return shown + (f" and {len(rows) - limit} more" if len(rows) > limit else "")


def _geometry(opts: dict, known: dict, filename: str):
    """Resolved gauge length and cross-section (SI) from options (winning) and metadata."""
    def pick(key):
        v = opts.get(key)
        if v is not None:
            try:
                v = float(v)
            except (TypeError, ValueError):
                raise DataError(f"{filename}: option {key}={opts.get(key)!r} must be a number in SI units "
                                "(m, m², K)") from None
            if not (math.isfinite(v) and v > 0):
                raise DataError(f"{filename}: option {key}={v!r} must be a positive number in SI units (m, m², K)")
            return v
        return known.get(key)

    gauge = pick("gauge_length")
    area = pick("area") if opts.get("area") is not None else None
    if area is None:
        w, t = pick("width"), pick("thickness")
        if w is not None and t is not None and (opts.get("width") is not None or opts.get("thickness") is not None
                                                or "area" not in known):
            area = w * t
        else:
            area = known.get("area")
            if area is None and w is not None and t is not None:
                area = w * t
    return gauge, area


def _find_header(table: _Table) -> frozenset[int]:
    """Move a machine's preamble (rows above the header row) into the metadata; return its line numbers.

    The header is the first of the top 50 rows that names a stretch/strain/extension or a stress/force
    column.  Preamble rows 'Key: value' or 'Key;value;unit' become metadata lines."""
    header_at = 0
    for i, row in enumerate(table.rows[:50]):
        cells = [_cell_text(c) for c in row]
        if all(_is_number_cell(c) or c == "" for c in row):
            break  # data before any header: let the caller report the missing header
        kinds = {_classify(k, h, None).kind for k, h in enumerate(cells) if h}
        if kinds & set(_X_KINDS + _Y_KINDS) and sum(1 for c in cells if c) >= 2:
            header_at = i
            break
    if header_at == 0:
        return frozenset()
    lines = set()
    for row, lineno in zip(table.rows[:header_at], table.row_numbers[:header_at], strict=True):
        cells = [_cell_text(c).strip() for c in row if _cell_text(c).strip()]
        if len(cells) >= 2 and ":" not in cells[0]:
            text = cells[0].rstrip(":") + ": " + " ".join(cells[1:])
        else:
            text = " ".join(cells)
        table.meta.append((lineno, text))
        lines.add(lineno)
    table.notices.append(f"{header_at} line(s) above the header row read as metadata (preamble)")
    table.rows, table.row_numbers = table.rows[header_at:], table.row_numbers[header_at:]
    return frozenset(lines)


def _curves_from_table(table: _Table, source: str, opts: dict) -> list[TestCurve]:
    fn = table.filename
    lenient = _find_header(table)
    known, extra, comments = _parse_meta(table, lenient)
    rows, numbers = table.rows, table.row_numbers

    # header row: the first row holding a non-number
    first = rows[0]
    if all(_is_number_cell(c) or c == "" for c in first):
        raise DataError(
            f"{fn}, line {numbers[0]}: the table has no header row, so the columns and their units are unknown; "
            "add a first row such as 'stretch,stress (MPa)' or 'strain (%),force (N)'"
        )
    header = [_cell_text(c) for c in first]
    start = 1
    unit_row = None
    if len(rows) > 1 and _looks_like_unit_row(rows[1]):
        unit_row = [_cell_text(c) for c in rows[1]]
        start = 2
    ncols = max(len(r) for r in rows)
    nhead = sum(1 for h in header if h)
    data_part = rows[start:]
    wider = [r for r in data_part if sum(1 for c in r if c != "") > max(nhead, 1)]
    if data_part and nhead and len(wider) > len(data_part) // 2:
        raise DataError(
            f"{fn}: most rows have more values than the header has column names ({nhead}); if the numbers use "
            "decimal commas, separate the columns with semicolons or tabs (or quote the numbers), or name "
            "every column in the header"
        )
    header += [""] * (ncols - len(header))
    cols = []
    for i, h in enumerate(header):
        ur = unit_row[i] if unit_row and i < len(unit_row) else None
        cols.append(_classify(i, h, ur))

    data_rows = rows[start:]
    data_numbers = numbers[start:]
    if not data_rows:
        raise DataError(f"{fn}: the table has a header but no rows of numbers below it")
    values = np.array([[_cell_value(cell) for cell in cells] + [math.nan] * (ncols - len(cells))
                       for cells in data_rows], dtype=np.float64)

    numeric = [c for c in cols if np.isfinite(values[:, c.index]).any()]
    if not numeric:
        shown = ", ".join(h for h in header if h)
        if _looks_garbled(shown):
            raise DataError(f"{fn}: this does not look like a text table (binary data, or a text encoding other "
                            "than UTF-8/Latin-1); export the data from the test machine as CSV, TSV or .xlsx")
        raise DataError(f"{fn}: no column holds numbers (headers: {shown or 'none'}); "
                        "the table needs a stretch/strain/extension column and a stress/force column")
    xs = [c for c in cols if c.kind in _X_KINDS]
    ys = [c for c in cols if c.kind in _Y_KINDS]
    names = ", ".join(repr(h) for h in header if h) or "none"
    if not xs:
        raise DataError(f"{fn}: no stretch, strain or extension column found (headers: {names}); name one column "
                        "e.g. 'stretch', 'strain (%)' or 'extension (mm)'")
    if not ys:
        raise DataError(f"{fn}: no stress or force column found (headers: {names}); name one column e.g. "
                        "'stress (MPa)', 'true stress (MPa)' or 'force (N)'")

    mode = opts.get("mode")
    notices0 = list(table.notices)
    if mode is not None:
        try:
            mode = Mode.parse(mode)
        except ValueError as e:
            raise DataError(f"{fn}: {e}") from None
    elif "mode" in known:
        mode = known["mode"]
    else:
        mode = Mode.UNIAXIAL
        notices0.append("no test mode given (metadata line '# mode: planar' or the mode option): read as "
                        "uniaxial tension")
    temperature = opts.get("temperature")
    if temperature is not None:
        try:
            temperature = float(temperature)
        except (TypeError, ValueError):
            raise DataError(f"{fn}: temperature option {temperature!r} must be a number in K") from None
        if not (math.isfinite(temperature) and temperature > 0):
            raise DataError(f"{fn}: temperature option {temperature!r} must be in K and above zero")
    else:
        temperature = known.get("temperature")
    tcol = next((c for c in cols if c.kind == "temperature" and c.unit), None)
    if temperature is None and tcol is not None:
        try:
            tv = unit_converter(tcol.unit, "temperature")(values[:, tcol.index])
        except UnitError:
            tv = np.array([np.nan])
        tv = tv[np.isfinite(tv)]
        if tv.size and np.all(tv > 0):
            temperature = float(np.mean(tv))
            notices0.append(f"test temperature taken as the mean of column {tcol.header!r}: "
                            f"{temperature - 273.15:.1f} °C (range {tv.min() - 273.15:.1f} to "
                            f"{tv.max() - 273.15:.1f} °C)")
    gauge, area = _geometry(opts, known, fn)

    # groups of (x columns, y columns): a new group starts at an x column that follows a y column
    groups: list[tuple[list[_Column], list[_Column]]] = []
    for c in cols:
        if c.kind in _X_KINDS:
            if not groups or groups[-1][1]:
                groups.append(([c], []))
            else:
                groups[-1][0].append(c)
        elif c.kind in _Y_KINDS and groups:
            groups[-1][1].append(c)
    groups = [g for g in groups if g[1]]
    if not groups:
        raise DataError(f"{fn}: the stress/force column comes before every stretch/strain/extension column; "
                        "put the stretch (or strain, extension) column to the left of its stress (or force) column")
    ignored = [c.header for c in cols if c.kind not in _X_KINDS + _Y_KINDS + ("specimen",) and c.header
               and not (c is tcol and temperature is not None and opts.get("temperature") is None
                        and "temperature" not in known)]

    spec_col = next((c for c in cols if c.kind == "specimen"), None)
    pieces = []  # (x col, y col, row indices, specimen label, notices)
    for gx, gy in groups:
        x = min(gx, key=lambda c: _X_KINDS.index(c.kind))
        best = min(_Y_KINDS.index(c.kind) for c in gy)
        ycols = [c for c in gy if _Y_KINDS.index(c.kind) == best]
        group_notices = []
        if len(gx) > 1:
            group_notices.append(f"used column {x.header!r} for the stretch; ignored "
                                 + ", ".join(repr(c.header) for c in gx if c is not x))
        others = [c for c in gy if c not in ycols]
        if others:
            group_notices.append(f"used {', '.join(repr(c.header) for c in ycols)} for the stress; ignored "
                                 + ", ".join(repr(c.header) for c in others))
        for y in ycols:
            all_rows = list(range(len(data_rows)))
            if spec_col is not None:
                labels: dict[str, list[int]] = {}
                k = spec_col.index
                for r in all_rows:
                    lab = _cell_text(data_rows[r][k]).strip() if k < len(data_rows[r]) else ""
                    if lab == "" and not (np.isfinite(values[r, x.index]) or np.isfinite(values[r, y.index])):
                        continue
                    labels.setdefault(lab or "(no specimen)", []).append(r)
                for lab, idx in labels.items():
                    pieces.append((x, y, idx, lab, list(group_notices)))
            else:
                label = y.specimen_hint or x.specimen_hint or None
                pieces.append((x, y, all_rows, label, list(group_notices)))

    multi = len(pieces) > 1
    stem = Path(fn).stem
    curves = []
    for k, (x, y, idx, label, gnotes) in enumerate(pieces, start=1):
        specimen = label
        if specimen is None:
            specimen = known.get("specimen")
            if multi:
                specimen = f"{specimen or 'specimen'} #{k}"
        notices = notices0 + gnotes
        try:
            lam, stress, kept_rows = _convert(fn, x, y, values, idx, data_numbers, gauge, area, notices)
            lam, stress, kept_rows = _clean(fn, lam, stress, kept_rows, notices, y)
        except DataError as e:
            if multi and specimen:
                raise DataError(f"{e} (specimen {specimen})") from None
            raise
        if ignored and k == 1:
            notices.append("columns not used: " + ", ".join(repr(h) for h in ignored))
        compound = known.get("compound")
        name = " ".join(s for s in (compound or stem, specimen) if s)
        md = {
            "file": fn, "compound": compound, "columns": {"stretch": x.header, "stress": y.header},
            "units": {"stretch": x.unit, "stress": y.unit}, "rows": (kept_rows[0], kept_rows[-1]),
            "gauge_length": gauge, "area": area,
            "width": opts.get("width") or known.get("width"),
            "thickness": opts.get("thickness") or known.get("thickness"),
        }
        md.update(extra)
        if comments:
            md["comments"] = comments
        curves.append(TestCurve(
            mode=mode, stretch=lam, stress=stress, name=name, source=source, specimen=specimen,
            temperature=temperature, cycle=known.get("cycle"), metadata=md, notices=notices,
        ))
    return curves




def _looks_garbled(text: str) -> bool:
    """True when more than a fifth of the characters are control characters or odd Latin-1 symbols — what
    binary bytes look like after decoding — so a message does not echo them back."""
    if not text:
        return False
    ok_extra = set("°²³µμλ·–—±×’‘“”€")
    odd = sum(1 for ch in text
              if (unicodedata.category(ch)[0] == "C") or (0x80 <= ord(ch) <= 0x2FF and ch not in ok_extra))
    return odd > 0.2 * len(text)


def _column_converter(fn, col, dimension, example):
    """The SI converter for a column's unit, or a DataError naming the file and column: no unit (with an
    example header to write) or a unit of the wrong kind."""
    if not col.unit:
        raise DataError(f"{fn}: column {col.header!r} has no unit; write it in the header, e.g. {example}")
    try:
        return unit_converter(col.unit, dimension)
    except UnitError as e:
        raise DataError(f"{fn}: column {col.header!r}: {e}") from None


def _convert(fn, x: _Column, y: _Column, values, idx, numbers, gauge, area, notices):
    """Stretch and nominal stress (Pa) for rows ``idx``; rows missing a number are counted and dropped."""
    xv = values[idx, x.index]
    yv = values[idx, y.index]
    rows = np.asarray([numbers[i] for i in idx])
    if not np.isfinite(xv).any():
        raise DataError(f"{fn}: column {x.header!r} holds no numbers")
    if not np.isfinite(yv).any():
        raise DataError(f"{fn}: column {y.header!r} holds no numbers")
    both_missing = ~np.isfinite(xv) & ~np.isfinite(yv)
    one_missing = np.isfinite(xv) ^ np.isfinite(yv)
    if one_missing.any():
        notices.append(f"{int(one_missing.sum())} row(s) with a missing or non-numeric value in {x.header!r} or "
                       f"{y.header!r} skipped (line {_fmt_rows(rows[one_missing].tolist())})")
    keep = ~(both_missing | one_missing)
    xv, yv, rows = xv[keep], yv[keep], rows[keep]
    if xv.size == 0:
        raise DataError(f"{fn}: no row has numbers in both {x.header!r} and {y.header!r}")

    # ---- stretch
    if x.kind == "stretch":
        if x.unit and _unit_dimension(x.unit) not in ("dimensionless", None):
            raise DataError(f"{fn}: column {x.header!r}: a stretch has no unit (λ = L/L₀); "
                            f"got unit {x.unit!r} — for an extension in mm name the column 'extension (mm)'")
        if x.unit and _unit_dimension(x.unit) is None:
            raise DataError(f"{fn}: column {x.header!r}: unknown unit {x.unit!r}")
        lam = xv.astype(float)
    elif x.kind == "strain":
        if x.unit:
            try:
                conv = unit_converter(x.unit, "dimensionless")
            except UnitError as e:
                raise DataError(f"{fn}: column {x.header!r}: {e}; strain is a fraction or '%'") from None
            eps = conv(xv)
        else:
            eps = xv.astype(float)
            if np.nanmax(np.abs(eps)) > 15:
                raise DataError(f"{fn}: column {x.header!r} has values up to {np.nanmax(eps):g}, which as a "
                                "fraction means more than 1500 % strain; if it is in percent, name it 'strain (%)'")
            notices.append(f"column {x.header!r} has no unit: read as a fraction (0.5 = 50 %)")
        lam = 1.0 + eps
    elif x.kind == "true_strain":
        try:
            conv = unit_converter(x.unit or "1", "dimensionless")
        except UnitError as e:
            raise DataError(f"{fn}: column {x.header!r}: {e}; true strain is a fraction or '%'") from None
        eps = conv(xv)
        if np.nanmax(np.abs(eps)) > 4:  # ln 50 ≈ 3.9
            raise DataError(f"{fn}: column {x.header!r} has values up to {np.nanmax(np.abs(eps)):g}; as a true "
                            "(logarithmic) strain that is beyond any rubber; if it is in percent, write '(%)'")
        lam = np.exp(eps)
        notices.append(f"column {x.header!r} is true (logarithmic) strain: converted with λ = exp(ε)")
    else:  # extension
        conv = _column_converter(fn, x, "length", "'extension (mm)'")
        if gauge is None:
            raise DataError(f"{fn}: column {x.header!r} is an extension, which needs the gauge length; add a line "
                            "'# gauge length: 20 mm' to the file or give the gauge-length option")
        lam = 1.0 + conv(xv) / gauge

    bad = ~np.isfinite(lam) | (lam <= 0)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise DataError(f"{fn}, line {rows[i]}: stretch {lam[i]:g} (from {x.header!r} = {xv[i]:g}) is not positive; "
                        "a stretch must be above 0 (λ = 1 unstretched). Check the column's unit (fraction or %) "
                        "and sign, and the gauge length")
    if np.max(lam) > MAX_PLAUSIBLE_STRETCH:
        i = int(np.argmax(lam))
        raise DataError(f"{fn}, line {rows[i]}: stretch {lam[i]:g} (from {x.header!r} = {xv[i]:g}) is beyond any "
                        f"rubber (above {MAX_PLAUSIBLE_STRETCH:g}); check the column's unit (% or fraction, mm or m) "
                        "and the gauge length")

    # ---- nominal stress
    if y.kind in ("stress", "true_stress"):
        conv = _column_converter(fn, y, "pressure", "'stress (MPa)', 'stress [psi]' or 'stress (N/mm²)'")
        stress = conv(yv)
        if y.kind == "true_stress":
            stress = stress / lam
            notices.append(f"column {y.header!r} is true stress: converted to nominal stress P = σ/λ "
                           "(incompressible rubber)")
    else:
        conv = _column_converter(fn, y, "force", "'force (N)'")
        if area is None:
            raise DataError(f"{fn}: column {y.header!r} is a force, which needs the specimen's cross-section; add "
                            "lines '# width: 4 mm' and '# thickness: 2 mm' (or '# area: 8 mm²') to the file, or "
                            "give the width/thickness or area option")
        stress = conv(yv) / area
    if not np.all(np.isfinite(stress)):
        i = int(np.flatnonzero(~np.isfinite(stress))[0])
        raise DataError(f"{fn}, line {rows[i]}: stress value {yv[i]!r} in {y.header!r} is out of range; "
                        "check the number and its unit")
    return lam, stress, rows


def _is_slack(lam, stress, j, limit, peak) -> bool:
    """Rows 0..j-1 have stress ≤ limit.  They are slack when their stretch span is more than twice
    the stretch the early loading slope needs to reach ``limit`` (a clean, densely sampled start is not)."""
    span = lam[j - 1] - lam[0]
    m = j
    while m < lam.size and stress[m] <= 0.1 * peak:
        m += 1
    m = max(m, min(j + 3, lam.size))
    x, yv = lam[j:m], stress[j:m]
    if x.size < 2 or np.ptp(x) <= 0:
        return span > 1e-3
    slope = np.polyfit(x, yv, 1)[0]
    if not slope > 0:
        return span > 1e-3
    return span > 2.0 * limit / slope + 1e-3


def _clean(fn, lam, stress, rows, notices, y):
    """Keep the loading branch: drop slack at the start, the return after the extreme stretch, and points
    that do not advance the stretch — each counted in ``notices``."""
    n0 = lam.size
    tension = (np.max(lam) - 1.0) >= (1.0 - np.min(lam))
    # return branch after the extreme stretch
    i_ext = int(np.argmax(lam) if tension else np.argmin(lam))
    if i_ext < n0 - 1:
        dropped = n0 - 1 - i_ext
        word = "maximum" if tension else "minimum"
        notices.append(f"{dropped} row(s) after the {word} stretch λ = {lam[i_ext]:.4g} (line {rows[i_ext]}) "
                       "dropped: unloading/return branch; only the loading branch is kept")
        lam, stress, rows = lam[: i_ext + 1], stress[: i_ext + 1], rows[: i_ext + 1]
    # slack: leading rows with near-zero or negative stress (tension only)
    if tension and lam.size:
        peak = np.max(stress)
        if peak > 0:
            limit = SLACK_FRACTION * peak
            loaded = np.flatnonzero(stress > limit)
            j = int(loaded[0]) if loaded.size else lam.size
            # keep the last unloaded row (the zero from which loading starts); drop the slack before it —
            # but only when the near-zero rows span more stretch than the initial slope explains
            if 1 < j < lam.size and _is_slack(lam, stress, j, limit, peak):
                lam0 = lam[j - 1]
                text = (f"{j - 1} leading row(s) with near-zero or negative stress (≤ {SLACK_FRACTION:.1%} of "
                        f"the peak: slack before loading) dropped; loading starts at line {rows[j - 1]}")
                lam, stress, rows = lam[j - 1:], stress[j - 1:], rows[j - 1:]
                if lam0 > 1.0:
                    # the specimen's unstretched length is the length where it became taut: λ' = λ/λ₀
                    lam = lam / lam0
                    text += f", where the stretch is re-zeroed (every stretch divided by {lam0:.4g})"
                notices.append(text)
    # points that do not advance the stretch (repeats, back-steps)
    if lam.size:
        order = lam if tension else -lam
        running = np.maximum.accumulate(order)
        advance = np.ones(lam.size, dtype=bool)
        advance[1:] = order[1:] > running[:-1]
        if not advance.all():
            notices.append(f"{int((~advance).sum())} repeated or backward-stepping point(s) (stretch not beyond the "
                           f"previous one) dropped (line {_fmt_rows(rows[~advance].tolist())})")
            lam, stress, rows = lam[advance], stress[advance], rows[advance]
    if lam.size < 3:
        raise DataError(f"{fn}: only {lam.size} usable point(s) left in {y.header!r} after removing slack, unloading "
                        "and repeated rows; a curve needs at least 3 points on its loading branch")
    return lam, stress, rows.tolist()


# ---------------------------------------------------------------------------------------------------
# Public readers
# ---------------------------------------------------------------------------------------------------

def _read_file_bytes(path) -> tuple[bytes, str, str]:
    p = Path(path)
    try:
        if p.is_dir():
            raise DataError(f"{p}: is a folder, not a file; choose a CSV, TXT or .xlsx file")
        size = p.stat().st_size
        if size > MAX_FILE_BYTES:
            raise DataError(f"{p.name}: the file is {size / 1e6:.1f} MB, over the {MAX_FILE_BYTES / 1e6:.0f} MB limit; "
                            "export only the test curves (stretch/strain/extension and stress/force columns)")
        data = p.read_bytes()
    except OSError as e:
        raise DataError(f"{p}: cannot open the file ({e.strerror or e}); check the path and permissions") from None
    return data, p.name, str(p)


def _guarded(fn_name: str, func, *args):
    try:
        return func(*args)
    except DataError:
        raise
    except Exception as e:  # last line of defence: never a traceback for a bad file
        raise DataError(f"{fn_name}: could not be read as a lab table ({type(e).__name__}); check that it is a CSV, "
                        "TXT or .xlsx table with a header row of column names and units") from None


def _check_options(opts: dict) -> dict:
    allowed = {"mode", "gauge_length", "width", "thickness", "area", "temperature", "sheet"}
    unknown = set(opts) - allowed
    if unknown:
        raise TypeError(f"unknown option(s) {', '.join(sorted(unknown))}; allowed: {', '.join(sorted(allowed))}")
    return opts


def read_curves(path, *, mode=None, gauge_length=None, width=None, thickness=None, area=None, temperature=None,
                sheet=None) -> list[TestCurve]:
    """Read a lab file (CSV/TSV/TXT or .xlsx) into test curves, one per specimen.

    Options are SI (m, m², K) and win over the file's ``# key: value`` metadata lines.  Raises
    :class:`DataError` (one readable sentence naming the file, line or column) for anything wrong.
    """
    opts = dict(mode=mode, gauge_length=gauge_length, width=width, thickness=thickness, area=area,
                temperature=temperature, sheet=sheet)
    data, name, source = _read_file_bytes(path)
    return _guarded(name, _read, data, name, source, opts)


def read_curves_bytes(data: bytes, filename: str, **options) -> list[TestCurve]:
    """Same as :func:`read_curves` for bytes already in memory (uploads); ``filename`` gives the format."""
    opts = _check_options(dict(options))
    fn = Path(str(filename or "upload.csv")).name or "upload.csv"
    if not isinstance(data, (bytes, bytearray, memoryview)):
        raise DataError(f"{fn}: expected the file's bytes, got {type(data).__name__}")
    data = bytes(data)
    if len(data) > MAX_FILE_BYTES:
        raise DataError(f"{fn}: the file is {len(data) / 1e6:.1f} MB, over the {MAX_FILE_BYTES / 1e6:.0f} MB limit; "
                        "export only the test curves (stretch/strain/extension and stress/force columns)")
    return _guarded(fn, _read, data, fn, fn, opts)


def _read(data: bytes, filename: str, source: str, opts: dict) -> list[TestCurve]:
    if not data.strip():
        raise DataError(f"{filename}: the file is empty; it needs a header row and rows of numbers")
    table = _load_table(data, filename, opts.get("sheet"))
    return _curves_from_table(table, source, opts)


def curves_to_csv(curves: list[TestCurve]) -> str:
    """The curves as one CSV text in the reader's own format (readable back with ``read_curves_bytes``):
    '# key: value' metadata lines (mode, temperature, cycle, compound — common to all curves), then columns
    specimen, stretch, stress (MPa).  Curves of different modes or temperatures need separate files."""
    if not curves:
        raise ValueError("no curves to write")
    modes = {c.mode for c in curves}
    temps = {c.temperature for c in curves}
    if len(modes) > 1 or len(temps) > 1:
        raise ValueError("curves of different test modes or temperatures go in separate files")
    first = curves[0]
    lines = [f"# mode: {first.mode.value}"]
    if first.temperature is not None:
        lines.append(f"# temperature: {first.temperature:.6g} K")
    for key, value in (("cycle", first.cycle), ("compound", first.metadata.get("compound"))):
        if value and all((c.cycle if key == "cycle" else c.metadata.get(key)) == value for c in curves):
            lines.append(f"# {key}: {' '.join(str(value).split())}")
    lines.append("specimen,stretch,stress (MPa)")
    for i, c in enumerate(curves, start=1):
        label = str(c.specimen or c.name or f"curve {i}").replace(",", " ").replace('"', "'").strip() or f"curve {i}"
        if len(curves) > 1 and sum(1 for d in curves if (d.specimen or d.name) == (c.specimen or c.name)) > 1:
            label = f"{label} #{i}"
        lines += [f"{label},{lam!r},{p / 1e6!r}" for lam, p in zip(c.stretch.tolist(), c.stress.tolist(), strict=True)]
    return "\n".join(lines) + "\n"


@dataclass
class FileInfo:
    """What a lab file holds before it is turned into curves (for an upload preview and settings form).

    ``columns``: one dict per column (header, kind — stretch, strain, true_strain, extension, stress,
    true_stress, force, specimen, time, temperature or other — and unit); ``metadata``: the recognised
    ``# key: value`` lines in SI (mode as a Mode); ``needs``: reader options the file lacks for
    read_curves to succeed ('gauge_length', 'area' — width × thickness will do); ``preview``: the header
    and first data rows as text.
    """

    filename: str
    columns: list[dict]
    metadata: dict
    extra: dict
    needs: list[str]
    mode: Mode | None
    n_rows: int
    preview: list[list[str]]
    notices: list[str]


def inspect_bytes(data: bytes, filename: str, *, sheet=None, preview_rows: int = 8) -> FileInfo:
    """Look into a lab file without converting it: columns and their kinds, metadata, what is missing.
    Raises DataError for a file that cannot be read as a table at all."""
    fn = Path(str(filename or "upload.csv")).name or "upload.csv"

    def work():
        if len(data) > MAX_FILE_BYTES:
            raise DataError(f"{fn}: the file is over the {MAX_FILE_BYTES / 1e6:.0f} MB limit")
        if not bytes(data).strip():
            raise DataError(f"{fn}: the file is empty; it needs a header row and rows of numbers")
        table = _load_table(bytes(data), fn, sheet)
        lenient = _find_header(table)
        known, extra, _ = _parse_meta(table, lenient)
        header = [_cell_text(c) for c in table.rows[0]]
        unit_row = None
        if len(table.rows) > 1 and _looks_like_unit_row(table.rows[1]):
            unit_row = [_cell_text(c) for c in table.rows[1]]
        cols = [_classify(i, h, unit_row[i] if unit_row and i < len(unit_row) else None)
                for i, h in enumerate(header)]
        kinds = {c.kind for c in cols}
        needs = []
        if "extension" in kinds and not ({"stretch", "strain", "true_strain"} & kinds) and "gauge_length" not in known:
            needs.append("gauge_length")
        has_area = "area" in known or ("width" in known and "thickness" in known)
        if "force" in kinds and not ({"stress", "true_stress"} & kinds) and not has_area:
            needs.append("area")
        start = 2 if unit_row else 1
        preview = [[_cell_text(c) for c in r] for r in table.rows[: start + preview_rows]]
        return FileInfo(
            filename=fn, columns=[{"header": c.header, "kind": c.kind, "unit": c.unit} for c in cols],
            metadata=known, extra=extra, needs=needs, mode=known.get("mode"),
            n_rows=max(len(table.rows) - start, 0), preview=preview, notices=list(table.notices),
        )

    return _guarded(fn, work)


# ---------------------------------------------------------------------------------------------------
# Force–temperature records and swelling results
# ---------------------------------------------------------------------------------------------------

@dataclass
class ForceTemperatureRecord:
    """Force at a fixed clamped length against temperature (SI: K, N)."""

    temperature: np.ndarray  # K
    force: np.ndarray  # N
    stretch: float  # clamped length / unstretched length at the reference temperature
    name: str = "record"
    source: str = ""
    area: float | None = None  # m², when the file gives the cross-section
    metadata: dict = field(default_factory=dict)
    notices: list[str] = field(default_factory=list)


def _table_from(path_or_bytes, filename):
    if isinstance(path_or_bytes, (bytes, bytearray)):
        fn = filename or "upload.csv"
        data, source = bytes(path_or_bytes), fn
        if len(data) > MAX_FILE_BYTES:
            raise DataError(f"{fn}: the file is over the {MAX_FILE_BYTES / 1e6:.0f} MB limit")
    else:
        data, fn, source = _read_file_bytes(path_or_bytes)
    if not data.strip():
        raise DataError(f"{fn}: the file is empty")
    return _load_table(data, fn, None), fn, source


def read_force_temperature(path_or_bytes, filename: str | None = None, *, stretch=None) -> ForceTemperatureRecord:
    """Read a force–temperature record: columns 'temperature (°C)' (or K/°F) and 'force (N)', metadata
    '# stretch: 2.0' (the clamped stretch; the ``stretch`` option wins) and optionally '# compound: ...'."""
    def work():
        table, fn, source = _table_from(path_or_bytes, filename)
        known, extra, comments = _parse_meta(table)
        header = [_cell_text(c) for c in table.rows[0]]
        cols = [_classify(i, h, None) for i, h in enumerate(header)]
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
        T = np.array([_cell_value(r[tcol.index]) if tcol.index < len(r) else math.nan for r in rows])
        F = np.array([_cell_value(r[fcol.index]) if fcol.index < len(r) else math.nan for r in rows])
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
        _, area = _geometry({}, known, fn)
        md = {"file": fn, "compound": known.get("compound"), **extra}
        if comments:
            md["comments"] = comments
        return ForceTemperatureRecord(T, F, lam, name=known.get("compound") or Path(fn).stem, source=source,
                                      area=area, metadata=md, notices=notices)

    fn = filename or (Path(path_or_bytes).name if not isinstance(path_or_bytes, (bytes, bytearray)) else "upload")
    return _guarded(fn, work)


@dataclass
class SwellingResult:
    """One swelling measurement (masses in kg, temperature in K).

    ``dry_mass``: the specimen before swelling; ``swollen_mass``: blotted, at equilibrium in the solvent;
    ``extracted_mass``: after the solvent is driven off again (the extracted, dried specimen; smaller than
    ``dry_mass`` by the soluble fraction).
    """

    compound: str
    dry_mass: float
    swollen_mass: float
    extracted_mass: float | None
    solvent: str
    temperature: float | None
    specimen: str | None = None
    line: int = 0
    source: str = ""


_SWELL_COLUMNS = {
    "compound": ("compound", "material"),
    "specimen": ("specimen", "sample", "piece"),
    "dry_mass": ("dry mass", "initial mass", "mass before", "dry weight", "initial weight"),
    "swollen_mass": ("swollen mass", "swollen weight", "wet mass"),
    "extracted_mass": ("extracted mass", "extracted", "deswollen", "dried mass", "mass after", "final mass"),
    "solvent": ("solvent",),
    "temperature": ("temperature", "temp"),
}


def read_swelling(path_or_bytes, filename: str | None = None) -> list[SwellingResult]:
    """Read a swelling table: compound, dry mass (g), swollen mass (g), extracted mass (g), solvent,
    temperature (°C); one row per specimen."""
    def work():
        table, fn, source = _table_from(path_or_bytes, filename)
        header = [_cell_text(c) for c in table.rows[0]]
        where: dict[str, tuple[int, str | None, str]] = {}
        for i, h in enumerate(header):
            label, unit = split_header(h)
            low = label.lower()
            for key, words in _SWELL_COLUMNS.items():
                if key not in where and any(w in low for w in words):
                    where[key] = (i, unit, h)
                    break
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
            comp = _cell_text(get("compound") or "").strip()
            if not comp:
                continue
            vals = {}
            for key in ("dry_mass", "swollen_mass", "extracted_mass", "temperature"):
                cell = get(key)
                if cell is None or cell == "":
                    vals[key] = None
                    continue
                v = _cell_value(cell)
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
                extracted_mass=vals["extracted_mass"], solvent=_cell_text(get("solvent") or "").strip(),
                temperature=vals["temperature"], specimen=_cell_text(get("specimen") or "").strip() or None,
                line=line, source=source,
            ))
        if not out:
            raise DataError(f"{fn}: no swelling rows found below the header")
        return out

    fn = filename or (Path(path_or_bytes).name if not isinstance(path_or_bytes, (bytes, bytearray)) else "upload")
    return _guarded(fn, work)


def _mass_or_temp(unit: str, key: str):
    if key == "temperature":
        return unit_converter(unit, "temperature")
    from .units import _registry

    ureg = _registry()
    try:
        q = ureg.Quantity(1.0, unit.strip())
        factor = float(q.to("kilogram").magnitude)
    except Exception:
        raise UnitError(f"{unit!r} is not a mass unit; write g or kg") from None
    return lambda v: v * factor


# ---------------------------------------------------------------------------------------------------
# Sample-set manifest
# ---------------------------------------------------------------------------------------------------

@dataclass
class CurveFile:
    path: Path
    mode: Mode | None = None  # None: from the file's metadata
    note: str = ""


@dataclass
class Compound:
    """One compound of a sample set: its curve files and what the recipe says (read from compounds.toml)."""

    key: str
    title: str
    polymer: str = "NR"
    curve_files: list[CurveFile] = field(default_factory=list)
    info: dict = field(default_factory=dict)  # cure dose, filler phr, filler volume fraction, notes...

    def curves(self) -> list[TestCurve]:
        out = []
        for cf in self.curve_files:
            out.extend(read_curves(cf.path, mode=cf.mode))
        return out

    @property
    def filler_fraction(self) -> float:
        return float(self.info.get("filler_volume_fraction", 0.0))


@dataclass
class Manifest:
    path: Path
    title: str
    note: str
    compounds: list[Compound]
    swelling: Path | None = None
    force_temperature: list[Path] = field(default_factory=list)
    info: dict = field(default_factory=dict)

    def __getitem__(self, key: str) -> Compound:
        for c in self.compounds:
            if c.key == key:
                return c
        raise KeyError(f"no compound {key!r} in {self.path.name}; it lists {', '.join(c.key for c in self.compounds)}")

    def __iter__(self) -> Iterable[Compound]:
        return iter(self.compounds)

    def swelling_results(self) -> list[SwellingResult]:
        return read_swelling(self.swelling) if self.swelling else []

    def force_temperature_records(self) -> list[ForceTemperatureRecord]:
        return [read_force_temperature(p) for p in self.force_temperature]


def read_manifest(path=None) -> Manifest:
    """Read a sample-set manifest (``compounds.toml``; format in sample_sets/README.md).  File paths in it
    are relative to the manifest.  Default: the bundled sample set.  Raises DataError for a missing or
    malformed manifest (the files it lists are read later, by ``Compound.curves()``)."""
    p = Path(path) if path is not None else SAMPLE_MANIFEST
    try:
        raw = tomllib.loads(p.read_text("utf-8"))
    except OSError as e:
        raise DataError(f"{p}: cannot open the manifest ({e.strerror or e})") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as e:
        raise DataError(f"{p.name}: not a valid TOML manifest ({e})") from None
    try:
        return _manifest_from(raw, p)
    except DataError:
        raise
    except (KeyError, TypeError, AttributeError, ValueError) as e:
        raise DataError(f"{p.name}: the manifest does not follow the format in sample_sets/README.md "
                        f"({type(e).__name__}: {e}); every [[compound]] needs a key and files with a path") from None


def _manifest_from(raw: dict, p: Path) -> Manifest:
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
        compounds.append(Compound(str(c["key"]), str(c.get("title", c["key"])), str(c.get("polymer", "NR")),
                                  files, info))
    keys = [c.key for c in compounds]
    if len(set(keys)) != len(keys):
        raise DataError(f"{p.name}: compound keys must be unique; got {', '.join(keys)}")
    return Manifest(
        path=p, title=str(scen.get("title", p.stem)), note=str(scen.get("note", "")), compounds=compounds,
        swelling=base / raw["swelling"]["path"] if "swelling" in raw else None,
        force_temperature=[base / r["path"] for r in raw.get("force_temperature", [])],
        info=scen,
    )
