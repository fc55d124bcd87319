"""Test conditions that travel with the numbers: crosshead speed, cycle, specimen type, die, temperature and
date, read from a curve's metadata lines (``# crosshead speed: 500 mm/min``, ``# die: ...``, ``# test date: ...``,
``# specimen type: dumbbell``, ``# cycle: ...``, ``# temperature: 23 °C``) where the file states them.  The report
shows them per compound beside the comparison they qualify; a condition no file states reads "not stated"."""

from __future__ import annotations

from .constants import celsius

__all__ = ["FIELDS", "compound_conditions", "curve_conditions"]

#: condition → label shown
FIELDS = {"speed": "crosshead speed", "cycle": "cycle", "specimen_type": "specimen type", "die": "die",
          "temperature": "temperature", "date": "date"}


def _find(md: dict, *words) -> str | None:
    for k, v in md.items():
        kl = str(k).lower()
        if any(w in kl for w in words) and isinstance(v, (str, int, float)) and str(v).strip():
            return str(v)
    return None


def curve_conditions(curve) -> dict:
    """The conditions one curve's file states (None where it states nothing)."""
    md = curve.metadata if isinstance(curve.metadata, dict) else {}
    return {
        "speed": md.get("speed") or _find(md, "speed", "rate"),
        "cycle": curve.cycle,
        "specimen_type": _find(md, "specimen type", "test piece", "piece type", "type"),
        "die": _find(md, "die", "cutter"),
        "temperature": None if curve.temperature is None else f"{celsius(curve.temperature):.1f} °C",
        "date": _find(md, "date"),
    }


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
