"""Test conditions that travel with the numbers: crosshead speed, cycle, specimen type, die, temperature and
date, read from a curve's metadata lines (``# crosshead speed: 500 mm/min``, ``# die: ...``, ``# test date: ...``,
``# specimen type: dumbbell``, ``# cycle: ...``, ``# temperature: 23 °C``) where the file states them.  The report
shows them per compound beside the comparison they qualify; a condition no file states reads "not stated".

A user may state or correct them per file (the app's per-file settings): :func:`check_conditions` turns the
typed text into clean values or one sentence per bad field, :func:`apply_conditions` writes them into each
curve's ``metadata["conditions"]`` (a table of field → text), and :func:`curve_conditions` lets those edits win
over what the file's own lines say.  Edited conditions are descriptive: the fit's temperature stays the one
the file states."""

from __future__ import annotations

import re

from .constants import celsius

__all__ = ["EDITED", "FIELDS", "MAX_TEXT", "apply_conditions", "check_conditions", "compound_conditions",
           "curve_conditions", "edited_conditions", "stated_conditions"]

#: condition → label shown
FIELDS = {"speed": "crosshead speed", "cycle": "cycle", "specimen_type": "specimen type", "die": "die",
          "temperature": "temperature", "date": "date"}


#: the metadata key holding a user's edits (field → text)
EDITED = "conditions"
#: longest text one condition may hold (characters)
MAX_TEXT = 80


def _number(text: str, field: str):
    m = re.match(r"^\s*([-+]?\d+(?:[.,]\d*)?(?:[eE][-+]?\d+)?)\s*(.*)$", text)
    if not m:
        return None, "", f"{FIELDS[field]}: {text!r} does not start with a number"
    return float(m.group(1).replace(",", ".")), m.group(2).strip(), None


def check_conditions(values: dict) -> tuple[dict, dict]:
    """The conditions a user typed (field → text; blank = not stated) checked: returns (clean, errors), clean
    holding the fields that passed (text, normalised) and errors one sentence per field that did not (the
    typed text stays the caller's to show).  Crosshead speed: a positive number, mm/min unless another
    ``…/min`` or ``…/s`` unit follows; temperature: a number of °C above absolute zero; the others: text of at
    most MAX_TEXT characters."""
    import math

    from .constants import ZERO_CELSIUS

    clean, errors = {}, {}
    for k, v in values.items():
        if k not in FIELDS:
            errors[k] = f"{k!r} is not a test condition (use {', '.join(FIELDS)})"
            continue
        text = "" if v is None else str(v).strip()
        if not text:
            continue
        if len(text) > MAX_TEXT:
            errors[k] = f"{FIELDS[k]}: at most {MAX_TEXT} characters (found {len(text)}); shorten it"
            continue
        if k == "speed":
            x, unit, err = _number(text, k)
            if err is None and not (math.isfinite(x) and x > 0):
                err = f"crosshead speed must be a positive number (found {x:g}); type e.g. 500 mm/min"
            if err is None and unit and not re.fullmatch(r"(mm|cm|m|in)\s*/\s*(min|s)", unit):
                err = f"crosshead speed: unit {unit!r} is not a speed; use mm/min, cm/min, m/min, mm/s or in/min"
            if err:
                errors[k] = err
                continue
            clean[k] = f"{x:g} {unit or 'mm/min'}"
        elif k == "temperature":
            x, unit, err = _number(text, k)
            if err is None and unit not in ("", "°C", "C", "degC"):
                err = f"temperature: type degrees Celsius, e.g. 23 °C (found the unit {unit!r})"
            if err is None and not (math.isfinite(x) and x > -ZERO_CELSIUS):
                err = f"temperature {x:g} °C is below absolute zero; type the test temperature in °C"
            if err:
                errors[k] = err
                continue
            clean[k] = f"{x:.1f} °C"
        else:
            clean[k] = text
    return clean, errors


def apply_conditions(curves, edits: dict) -> None:
    """Write a user's checked edits (field → text) into every curve's metadata (replacing earlier edits;
    an empty table removes them)."""
    for c in curves:
        md = dict(c.metadata) if isinstance(c.metadata, dict) else {}
        if edits:
            md[EDITED] = {k: str(v) for k, v in edits.items() if k in FIELDS}
        else:
            md.pop(EDITED, None)
        c.metadata = md


def edited_conditions(curve) -> dict:
    """The user's edits on one curve (field → text), empty when none."""
    md = curve.metadata if isinstance(curve.metadata, dict) else {}
    ed = md.get(EDITED)
    return {k: str(v) for k, v in ed.items() if k in FIELDS} if isinstance(ed, dict) else {}


def _find(md: dict, *words) -> str | None:
    for k, v in md.items():
        kl = str(k).lower()
        if any(w in kl for w in words) and isinstance(v, (str, int, float)) and str(v).strip():
            return str(v)
    return None


def stated_conditions(curve) -> dict:
    """The conditions one curve's file states (None where it states nothing), without the user's edits."""
    md = curve.metadata if isinstance(curve.metadata, dict) else {}
    md = {k: v for k, v in md.items() if k != EDITED}
    return {
        "speed": md.get("speed") or _find(md, "speed", "rate"),
        "cycle": curve.cycle,
        "specimen_type": _find(md, "specimen type", "test piece", "piece type", "type"),
        "die": _find(md, "die", "cutter"),
        "temperature": None if curve.temperature is None else f"{celsius(curve.temperature):.1f} °C",
        "date": _find(md, "date"),
    }


def curve_conditions(curve) -> dict:
    """The conditions of one curve: what its file states, the user's edits winning."""
    return {**stated_conditions(curve), **edited_conditions(curve)}


def compound_conditions(compound) -> list[dict]:
    """Distinct condition sets of a compound's curves, each with the number of curves and their modes."""
    groups: dict[tuple, dict] = {}
    for c in compound.curves:
        cond = curve_conditions(c)
        key = tuple(cond.get(k) for k in FIELDS)
        g = groups.setdefault(key, dict(cond, curves=0, modes=[]))
        g["curves"] += 1
        if c.mode.value not in g["modes"]:
            g["modes"].append(c.mode.value)
    return list(groups.values())
