"""Text cells that a spreadsheet would run as a formula, written as text (formula-injection guard).

A spreadsheet program takes a cell that begins with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return
as a formula, so a compound or specimen named ``=HYPERLINK(…)`` would become a live formula in a CSV or a
workbook this tool wrote.  Such TEXT cells get a leading apostrophe in CSV (:func:`guard`) and are written
as text cells in workbooks (:func:`write_xlsx_text`); numbers stay numbers (``-0.5`` is a number, not a
formula).  The project's own readers of those files strip the apostrophe again (:func:`unguard`).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    import pandas as pd

FORMULA_LEAD = ("=", "+", "-", "@", "\t", "\r")


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def guard(value: Any) -> Any:
    """A CSV cell: text that begins like a formula gets a leading ``'``; anything else unchanged."""
    if isinstance(value, str) and value.startswith(FORMULA_LEAD) and not _is_number(value):
        return "'" + value
    return value


def unguard(value: Any) -> Any:
    """The reader's side of :func:`guard`."""
    if isinstance(value, str) and len(value) > 1 and value[0] == "'" and value[1] in FORMULA_LEAD:
        return value[1:]
    return value


def write_xlsx_text(frame: pd.DataFrame, path: Any, sheet_name: str = "Sheet1") -> Any:
    """A DataFrame as a workbook whose text cells are text (never formulas) and numbers are numbers.  The
    frame may hold guarded CSV cells: their apostrophe is removed and the cell is typed as a string."""
    from openpyxl import Workbook

    wb = Workbook()
    ws = wb.active
    ws.title = sheet_name
    ws.append([str(c) for c in frame.columns])
    for row in frame.itertuples(index=False):
        ws.append([None if (isinstance(v, float) and v != v) else (v.item() if hasattr(v, "item") else v)
                   for v in row])
    for cells in ws.iter_rows():
        for c in cells:
            if isinstance(c.value, str):
                c.value = unguard(c.value)
                c.data_type = "s"  # text: openpyxl would otherwise store a '='-leading string as a formula
    wb.save(path)
    return path
