"""Metadata: our own ``# key: value`` lines and a tester's preamble rows above the header, in any of the
vocabulary's languages; the geometry and the test mode they give."""

from __future__ import annotations

import math
import re

from ..deformation import Mode
from ..errors import DataError, Notice
from ..units import UnitError, parse_quantity, split_header
from . import vocabulary as vocab
from .columns import classify, is_number_cell
from .tables import Table, cell_text

_DIMENSIONS = {"gauge_length": "length", "width": "length", "thickness": "length", "diameter": "length",
               "area": "area", "temperature": "temperature", "stretch": "dimensionless"}
_GEOMETRY = ("gauge_length", "width", "thickness", "diameter", "area")

#: what each geometry item is called in messages and forms
GEOMETRY_WORDS = {"gauge_length": "gauge length", "width": "width", "thickness": "thickness", "area": "area",
                  "diameter": "diameter"}


def parse_meta(table: Table, lenient: frozenset[int] = frozenset()) -> tuple[dict, dict, list[str]]:
    """(known: canonical key -> SI value or text, extra: other key -> text, comments).

    Our own '# key: value' lines must be right (a DataError names the line); lines in ``lenient`` (a
    tester's preamble above the header) that cannot be read are kept as text and noted instead."""
    known: dict = {}
    extra: dict = {}
    comments: list = []
    for lineno, text in table.meta:
        try:
            _meta_line(table.filename, lineno, text, known, extra, comments)
        except DataError as e:
            if lineno not in lenient:
                raise
            extra[text] = ""
            table.notices.append(Notice(f"preamble line {lineno} kept as text only: {e}", "format", table.filename))
    return known, extra, comments


def _meta_line(filename, lineno, text, known, extra, comments):
    text = text.replace("：", ":").replace("＝", "=")  # full-width colon and equals sign (CJK text)
    m = re.match(r"^([^:=]+?)\s*[:=]\s*(.*)$", text)
    if not m:
        if text:
            comments.append(text)
        return
    raw_key, value = m.group(1).strip(), m.group(2).strip()
    label, key_unit = split_header(raw_key)
    canon = vocab.meta_key(label)
    if canon is None:
        extra[raw_key] = value
        return
    where = dict(file=filename, line=lineno)
    if canon in _DIMENSIONS:
        known[canon] = _meta_quantity(filename, lineno, raw_key, label, value, key_unit, canon)
    elif canon == "mode":
        word = vocab.mode_word(value)
        if word == "compression":
            known["mode"], known["loading"] = Mode.UNIAXIAL, "compression"
            return
        try:
            known["mode"] = Mode.parse(word or value)
        except ValueError as e:
            raise DataError(f"{filename}, line {lineno}: {e}", **where) from None
    elif canon == "speed":
        known["speed"] = value
        extra[raw_key] = value
    elif canon in known and known[canon] != value:
        # a second line for the same item (e.g. "specimen: A-1" and "test piece: dumbbell") is kept as
        # text under its own key; the first one names the item
        extra[raw_key] = value
    else:
        known[canon] = value


def _meta_quantity(filename, lineno, raw_key, label, value, key_unit, canon) -> float:
    where = dict(file=filename, line=lineno)
    number_only = re.fullmatch(r"\s*[-+]?[\d.,eE+-]+\s*", value) is not None
    try:
        v = parse_quantity(value, _DIMENSIONS[canon], default_unit=key_unit)
    except UnitError as e:
        raise DataError(f"{filename}, line {lineno}: metadata '{raw_key}: {value}' — {e}", **where) from None
    if not math.isfinite(v) or (canon != "temperature" and v <= 0):
        raise DataError(f"{filename}, line {lineno}: metadata '{raw_key}' must be a positive number with a unit; "
                        f"got {value!r}", **where)
    if canon in _GEOMETRY and not key_unit and number_only:
        raise DataError(f"{filename}, line {lineno}: metadata '{raw_key}: {value}' has no unit; write e.g. "
                        f"'# {label}: {value} mm'", fix=f"# {label}: {value} mm", **where)
    if canon == "temperature" and number_only and not key_unit:
        raise DataError(f"{filename}, line {lineno}: temperature {value!r} has no unit; write e.g. "
                        f"'# temperature: {value} °C' or '... K'", **where)
    if canon == "temperature" and v <= 0:
        raise DataError(f"{filename}, line {lineno}: temperature {value!r} is at or below absolute zero; check the "
                        "unit (°C, K or °F)", **where)
    return v


def find_header(table: Table) -> frozenset[int]:
    """Move a tester's preamble (rows above the header row) into the metadata; return its line numbers.

    The header is the first of the top 50 rows that names a stretch/strain/extension or a stress/force
    column.  Preamble rows 'Key: value' or 'Key;value;unit' become metadata lines."""
    header_at = 0
    for i, row in enumerate(table.rows[:50]):
        cells = [cell_text(c) for c in row]
        if all(is_number_cell(c) or c == "" for c in row):
            break  # data before any header: let the caller report the missing header
        kinds = {classify(k, h, None).kind for k, h in enumerate(cells) if h}
        if kinds & set(vocab.X_KINDS + vocab.Y_KINDS) and sum(1 for c in cells if c) >= 2:
            header_at = i
            break
    if header_at == 0:
        return frozenset()
    lines = set()
    for row, lineno in zip(table.rows[:header_at], table.row_numbers[:header_at], strict=True):
        cells = [cell_text(c).strip() for c in row if cell_text(c).strip()]
        if len(cells) >= 2 and ":" not in cells[0]:
            text = cells[0].rstrip(":") + ": " + " ".join(cells[1:])
        else:
            text = " ".join(cells)
        table.meta.append((lineno, text))
        lines.add(lineno)
    table.notices.append(Notice(f"{header_at} line(s) above the header row read as metadata (preamble)", "format",
                                table.filename))
    table.rows, table.row_numbers = table.rows[header_at:], table.row_numbers[header_at:]
    return frozenset(lines)


def _option_number(opts: dict, key: str, filename: str):
    v = opts.get(key)
    if v is None:
        return None
    try:
        v = float(v)
    except (TypeError, ValueError):
        raise DataError(f"{filename}: option {key}={opts.get(key)!r} must be a number in SI units (m, m², K)",
                        file=filename) from None
    if not (math.isfinite(v) and v > 0):
        raise DataError(f"{filename}: option {key}={v!r} must be a positive number in SI units (m, m², K)",
                        file=filename)
    return v


def geometry(opts: dict, known: dict, filename: str) -> tuple[float | None, float | None]:
    """Resolved gauge length and cross-section (SI) from options (winning) and metadata.  The cross-section
    is the area, else width × thickness, else π d²/4 from a diameter."""
    o = {k: _option_number(opts, k, filename) for k in _GEOMETRY}
    gauge = o["gauge_length"] if o["gauge_length"] is not None else known.get("gauge_length")
    if o["area"] is not None:
        return gauge, o["area"]
    w = o["width"] if o["width"] is not None else known.get("width")
    t = o["thickness"] if o["thickness"] is not None else known.get("thickness")
    given_wt = o["width"] is not None or o["thickness"] is not None
    if w is not None and t is not None and (given_wt or "area" not in known):
        return gauge, w * t
    if known.get("area") is not None:
        return gauge, known["area"]
    d = o["diameter"] if o["diameter"] is not None else known.get("diameter")
    if d is not None:
        return gauge, math.pi * d * d / 4.0
    return gauge, None


def missing_geometry(needs_gauge: bool, needs_area: bool, opts: dict, known: dict) -> list[str]:
    """The geometry items a form must ask for: 'gauge_length', and 'width'/'thickness' (whichever of the two
    is not known) when there is no cross-section at all."""
    out = []
    if needs_gauge:
        out.append("gauge_length")
    if needs_area:
        for key in ("width", "thickness"):
            if opts.get(key) is None and known.get(key) is None:
                out.append(key)
    return out


def missing_sentence(filename: str, missing: list[str], why: dict[str, str]) -> str:
    """One sentence naming every missing item and how to give each."""
    names = []
    if "gauge_length" in missing:
        names.append("the gauge length" + (f" ({why['gauge_length']})" if why.get("gauge_length") else ""))
    section = [k for k in missing if k in ("width", "thickness")]
    if section:
        what = " and ".join(f"the specimen {k}" for k in section)
        names.append(what + " — or the cross-section area" + (f" ({why['area']})" if why.get("area") else ""))
    lines = []
    if "gauge_length" in missing:
        lines.append("'# gauge length: 20 mm'")
    if "width" in missing:
        lines.append("'# width: 4 mm'")
    if "thickness" in missing:
        lines.append("'# thickness: 2 mm'")
    joined = "; ".join(names)
    options = ", ".join(GEOMETRY_WORDS[k] for k in missing) + (" — or area" if section else "")
    area_line = " (or '# area: 8 mm²' for the section)" if section else ""
    return (f"{filename}: missing {joined}. Add the line(s) {', '.join(lines)} to the file{area_line}, or give "
            f"them as options ({options}) or in a reading profile")


def resolve_mode(opts: dict, known: dict, filename: str, notices: list) -> tuple[Mode, str]:
    """(mode, loading): the option wins over the file; 'compression' is uniaxial loading."""
    mode = opts.get("mode")
    if mode is not None:
        word = vocab.mode_word(str(mode)) if not isinstance(mode, Mode) else None
        if word == "compression":
            return Mode.UNIAXIAL, "compression"
        try:
            return Mode.parse(word or mode), "tension"
        except ValueError as e:
            raise DataError(f"{filename}: {e}", file=filename) from None
    if "mode" in known:
        return known["mode"], known.get("loading", "tension")
    notices.append(Notice("no test mode given (metadata line '# mode: planar' or the mode option): read as uniaxial "
                          "tension", "assumed-mode", filename))
    return Mode.UNIAXIAL, "tension"
