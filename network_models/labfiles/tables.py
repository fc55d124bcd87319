"""Bytes → a raw table: metadata lines plus rows of cells (str or float), whatever the file format.

Text tables (CSV/TSV/TXT: comma, semicolon or tab; decimal point or comma) are read here; workbooks
(.xlsx, .xlsm, .xls, .ods) through python-calamine, reading only.
"""

from __future__ import annotations

import csv
import datetime as _dt
import io
import re
from dataclasses import dataclass, field
from pathlib import Path

from .. import limits
from ..errors import DataError, Notice

#: Files larger than this are refused (bytes; 20 MB).  A tensile export is usually well under 1 MB.
MAX_FILE_BYTES = 20_000_000

TEXT_SUFFIXES = {".csv", ".tsv", ".txt", ".dat", ".asc", ""}
WORKBOOK_SUFFIXES = {".xlsx", ".xlsm", ".xls", ".ods", ".xlsb"}
_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"  # old .xls (BIFF in an OLE container)


@dataclass
class Table:
    filename: str
    meta: list[tuple[int, str]]  # (line/row number, text after '#')
    rows: list[list]  # cells: str | float
    row_numbers: list[int]  # 1-based line (or sheet row) number of each row, for messages
    notices: list = field(default_factory=list)


def cell_text(c) -> str:
    if isinstance(c, float):
        return f"{c:g}"
    return str(c)


def limit_message(fn: str, size: int) -> str:
    return (f"{fn}: the file is {size / 1e6:.1f} MB, over the {MAX_FILE_BYTES / 1e6:.0f} MB limit; "
            "export only the test curves (stretch/strain/extension and stress/force columns)")


def read_file_bytes(path: str | Path) -> tuple[bytes, str, str]:
    """(bytes, file name, source path) of a file, or a DataError naming it."""
    p = Path(path)
    try:
        if p.is_dir():
            raise DataError(f"{p}: is a folder, not a file; choose a CSV, TXT or workbook file", file=str(p))
        size = p.stat().st_size
        if size > MAX_FILE_BYTES:
            raise DataError(limit_message(p.name, size), file=p.name)
        data = limits.read_file(p, MAX_FILE_BYTES)  # bounded whatever the file system says
    except OSError as e:
        raise DataError(f"{p}: cannot open the file ({e.strerror or e}); check the path and permissions",
                        file=str(p)) from None
    return data, p.name, str(p)


def decode(data: bytes, filename: str) -> str:
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return data.decode("utf-16")
        except UnicodeDecodeError:
            raise DataError(f"{filename}: the file says it is UTF-16 text but is not; save it as UTF-8 CSV",
                            file=filename) from None
    if b"\x00" in data:
        raise DataError(f"{filename}: this is not a text table (it holds binary bytes); export the test as "
                        "CSV/TXT or save it as a workbook (.xlsx, .xls, .ods)", file=filename)
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
    """Tab or semicolon when most of the top lines hold it, or when the table body at the end of the sample
    does (below a preamble of 'Key: value' lines that hold none); else comma when any line does."""
    head, sample = lines[:30], lines[:200]
    for delim in ("\t", ";"):
        if head and sum(delim in ln for ln in head) >= max(1, int(0.8 * len(head))):
            return delim
        run = 0
        for ln in reversed(sample):
            if delim not in ln:
                break
            run += 1
        if run >= max(3, 0.2 * len(sample)):
            return delim
    if any("," in ln for ln in sample):
        return ","
    return ""


_DECIMAL_COMMA_CELL = re.compile(r"^[-+\u2212]?\d*,\d+(?:[eE][-+]?\d+)?$")
_THOUSANDS_DOT = re.compile(r"^[-+\u2212]?\d{1,3}(?:\.\d{3})+,\d+$")


def text_table(text: str, filename: str, *, decimal: str | None = None, skip: int = 0) -> Table:
    """A text table.  ``decimal``: ``"comma"`` or ``"point"`` (None: detected); ``skip``: lines at the top
    to leave out entirely (a title block that is neither metadata nor table)."""
    meta: list[tuple[int, str]] = []
    body: list[tuple[int, str]] = []
    for i, line in enumerate(text.splitlines(), start=1):
        if i <= skip or not line.strip():
            continue
        m = _meta_text(line)
        if m is not None:
            meta.append((i, m))
        else:
            body.append((i, line))
    if not body:
        if meta:
            raise DataError(f"{filename}: the file holds only '#' metadata lines and no table of numbers",
                            file=filename)
        raise DataError(f"{filename}: the file is empty; it needs a header row and rows of numbers", file=filename)
    delim = _sniff_delimiter([ln for _, ln in body])
    if not delim:
        raise DataError(f"{filename}: no column separator found (comma, semicolon or tab); save the table as CSV "
                        "with a header row such as 'stretch,stress (MPa)'", file=filename)
    limits.check_text_shape([ln for _, ln in body], delim, filename)  # columns and cells, before splitting
    rows, numbers = [], []
    reader = csv.reader([ln for _, ln in body], delimiter=delim)
    for (lineno, _), cells in zip(body, reader, strict=True):
        rows.append([c.strip() for c in cells])
        numbers.append(lineno)
    if decimal is None:
        comma = delim != "," and any(_DECIMAL_COMMA_CELL.match(c) or _THOUSANDS_DOT.match(c)
                                     for r in rows[1:60] for c in r)
    else:
        comma = decimal == "comma"
    notices = []
    if comma:
        notices.append(Notice("decimal commas read as decimal points", "format", filename))
        for r in rows:
            for k, c in enumerate(r):
                if _THOUSANDS_DOT.match(c) or decimal == "comma" and c.count(",") == 1 and "." in c:
                    r[k] = c.replace(".", "")
    elif decimal == "point":
        for r in rows:  # "1,234.5" thousands separators
            for k, c in enumerate(r):
                if re.fullmatch(r"[-+]?\d{1,3}(?:,\d{3})+(?:\.\d+)?", c):
                    r[k] = c.replace(",", "")
    return Table(filename, meta, rows, numbers, notices)


def _workbook_cell(v):
    if v is None or v == "":
        return ""
    if isinstance(v, bool):
        return str(v)
    if isinstance(v, (int, float)):
        return float(v)
    if isinstance(v, (_dt.date, _dt.time, _dt.timedelta)):
        return str(v)
    return str(v).strip()


def _pick_sheet(names: list[str], sheet, filename: str) -> int:
    if sheet is None:
        return 0
    if isinstance(sheet, int) and not isinstance(sheet, bool):
        if not (0 <= sheet < len(names)):
            raise DataError(f"{filename}: there is no sheet number {sheet} (the workbook has {len(names)}: "
                            f"{', '.join(names)}); sheets are counted from 0", file=filename)
        return sheet
    if str(sheet) not in names:
        raise DataError(f"{filename}: no sheet called {sheet!r}; the workbook has {', '.join(names)}", file=filename)
    return names.index(str(sheet))


def workbook_table(data: bytes, filename: str, sheet=None, *, skip: int = 0) -> Table:
    """The chosen sheet (default: the first) of an .xlsx/.xlsm/.xls/.ods workbook."""
    try:
        from python_calamine import CalamineWorkbook
    except ImportError:  # pragma: no cover - python-calamine is a dependency
        raise DataError(f"{filename}: reading workbooks needs python-calamine; install it or save the sheet as CSV",
                        file=filename) from None
    limits.check_zip(data, filename)  # every member inflated in steps and counted, before the reader sees it
    try:
        wb = CalamineWorkbook.from_filelike(io.BytesIO(data))
        names = list(wb.sheet_names)
    except Exception:  # CalamineError and friends on broken or foreign files
        raise DataError(f"{filename}: not a readable workbook (.xlsx, .xls, .ods); open it in a spreadsheet and "
                        "save it again, or export the sheet as CSV", file=filename) from None
    if not names:
        raise DataError(f"{filename}: the workbook has no sheets", file=filename)
    k = _pick_sheet(names, sheet, filename)
    try:
        ws = wb.get_sheet_by_index(k)
        shape = (ws.height, ws.width)
    except Exception:  # the sheet's size is unknown: reading it below says what is wrong
        ws, shape = None, (0, 0)
    limits.check_table_shape(*shape, filename)
    try:
        values = (ws or wb.get_sheet_by_index(k)).to_python(skip_empty_area=False)
    except Exception:
        raise DataError(f"{filename}: the sheet {names[k]!r} cannot be read; save the workbook again or export the "
                        "sheet as CSV", file=filename) from None
    meta, rows, numbers = [], [], []
    for i, raw in enumerate(values, start=1):
        if i <= skip:
            continue
        cells = [_workbook_cell(v) for v in raw]
        while cells and cells[-1] == "":
            cells.pop()
        if not cells:
            continue
        first = next(c for c in cells if c != "")
        if isinstance(first, str) and first.startswith("#"):
            text = " ".join(cell_text(c) for c in cells if c != "")
            meta.append((i, text.lstrip("#").strip()))
            continue
        rows.append(cells)
        numbers.append(i)
    notices = []
    if sheet is None and len(names) > 1:
        notices.append(Notice(f"read sheet {names[0]!r}; the workbook's other sheets ({', '.join(names[1:])}) were "
                              "not read (choose one with the sheet option)", "format", filename))
    if not rows:
        raise DataError(f"{filename}: the sheet {names[k]!r} holds no table; it needs a header row and rows of "
                        "numbers", file=filename)
    return Table(filename, meta, rows, numbers, notices)


def load_table(data: bytes, filename: str, sheet=None, *, decimal: str | None = None, skip: int = 0) -> Table:
    """Whatever the file is — text or workbook, by its content first and its name second."""
    suffix = Path(filename).suffix.lower()
    if data[:4] == b"PK\x03\x04" or data[:8] == _OLE_MAGIC or suffix in WORKBOOK_SUFFIXES:
        return workbook_table(data, filename, sheet, skip=skip)
    return text_table(decode(data, filename), filename, decimal=decimal, skip=skip)
