"""Columns: what each header names (from the vocabulary, then the unit's dimension) and cell values."""

from __future__ import annotations

import math
import unicodedata
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from ..units import UnitError, parse_number, split_header, unit_converter
from . import vocabulary as vocab

#: the kinds a profile or option may give a column
KINDS = ("stretch", "strain", "true_strain", "extension", "stress", "true_stress", "force", "specimen", "time",
         "temperature", "other")


@dataclass
class Column:
    index: int
    header: str
    label: str
    unit: str | None
    kind: str
    specimen_hint: str = ""
    compression: bool = False  # the header says compression ("compressive stress", "Druckspannung")


@lru_cache(maxsize=512)
def unit_dimension(unit: str | None) -> str | None:
    if not unit:
        return None
    for dim in ("pressure", "force", "length", "dimensionless", "temperature"):
        try:
            unit_converter(unit, dim)
            return dim
        except UnitError:
            continue
    return None


def classify(index: int, header: str, unit_row_cell: str | None, *, kinds: dict | None = None,
             units: dict | None = None) -> Column:
    """One column from its header (and the unit row's cell).  ``kinds``/``units``: header → kind/unit given
    by the user (a reading profile), which win over the words."""
    label, unit = split_header(header)
    if unit is None and unit_row_cell:
        unit = split_header(f"x ({unit_row_cell.strip('[]() ')})")[1]
    key = header.strip()
    if units and key in units and units[key]:
        unit = str(units[key])
    if kinds and key in kinds:
        return Column(index, header, label, unit, str(kinds[key]), vocab.specimen_hint(label),
                      vocab.marks_compression(label))
    kind = vocab.column_kind(label)
    dim = unit_dimension(unit)
    if kind in ("strain", "true_strain") and dim == "length":
        kind = "extension"
    elif kind == "extension" and dim == "dimensionless" and unit is not None:
        kind = "strain"
    elif kind in ("other", "force") and dim == "pressure":
        kind = "stress"
    elif kind in ("other", "stress") and dim == "force":
        kind = "force"
    elif kind == "specimen" and dim is not None:  # "specimen width (mm)" is a measurement, not a name
        kind = "other"
    return Column(index, header, label, unit, kind, vocab.specimen_hint(label), vocab.marks_compression(label))


def is_number_cell(c) -> bool:
    if isinstance(c, float):
        return True
    if not c:
        return False
    try:
        parse_number(c)
        return True
    except UnitError:
        return False


def cell_value(c) -> float:
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


def looks_like_unit_row(cells) -> bool:
    nonempty = [c for c in cells if c != ""]
    if not nonempty or any(not isinstance(c, str) for c in nonempty):
        return False
    if any(is_number_cell(c) for c in nonempty):  # a row with a number is never the unit row (asked first:
        return False                              # it spares reading data cells as units)
    ok = 0
    for c in nonempty:
        if unit_dimension(c.strip("[]() ")) is not None or c.strip("[]() ") in {"-", "1", "%"}:
            ok += 1
    return ok >= max(1, len(nonempty) // 2) and not any(is_number_cell(c) for c in nonempty)


def looks_garbled(text: str) -> bool:
    """True when more than a fifth of the characters are control characters or odd Latin-1 symbols — what
    binary bytes look like after decoding — so a message does not echo them back."""
    if not text:
        return False
    ok_extra = set("°²³µμλ·–—±×’‘“”€")
    odd = sum(1 for ch in text
              if (unicodedata.category(ch)[0] == "C") or (0x80 <= ord(ch) <= 0x2FF and ch not in ok_extra))
    return odd > 0.2 * len(text)


def column_converter(fn: str, col: Column, dimension: str, example: str) -> Any:
    """The SI converter for a column's unit, or a DataError naming the file and column: no unit (with an
    example header to write) or a unit of the wrong kind."""
    from ..errors import DataError

    if not col.unit:
        raise DataError(f"{fn}: column {col.header!r} has no unit; write it in the header, e.g. {example}",
                        file=fn, column=col.header, fix=example)
    try:
        return unit_converter(col.unit, dimension)
    except UnitError as e:
        raise DataError(f"{fn}: column {col.header!r}: {e}", file=fn, column=col.header) from None
