"""Shore A hardness ↔ Young's modulus (approximate): ``crosslinks --modulus 62ShoreA`` and design targets such as
``hardness=60..65ShoreA``.

Relation (docs/methods.md §shore-a;
Gent 1958, "On the relation between indentation hardness and Young's modulus", Trans. Inst. Rubber
Ind. 34:46–57 [memory: constants as commonly reprinted, not re-read in the paper]):

    E (MPa) = 0.0981 (56 + 7.62336 S) / (0.137505 (254 − 2.54 S)),   S the Shore A hardness.

It is an empirical fit of the durometer's spring force and indentor geometry to linear-elastic indentation, so:

* **caution** — hardness conversions are approximate: filler, surface state, specimen thickness, dwell time and
  viscoelasticity move the reading; a modulus from hardness is a first guess, never a substitute for a tensile or
  shear test;
* a **scatter band** of ±:data:`SCATTER_POINTS` Shore A points (durometer readings typically repeat to about
  2–3 points between operators and instruments [common practice]) is carried into an E band;
* it is used only for :data:`VALID` Shore A [memory: the range over which the relation is usually applied]:
  near 100 the denominator vanishes and below about 20 the reading is unreliable.
"""

from __future__ import annotations

import re

from .errors import UserError

__all__ = ["CAUTION", "SCATTER_POINTS", "SOURCE", "VALID", "e_to_shore_a", "parse_shore_a", "shore_a_band",
           "shore_a_to_e"]

SOURCE = ("Gent 1958, Trans. Inst. Rubber Ind. 34:46: E(MPa) = 0.0981(56 + 7.62336 S)/(0.137505(254 − 2.54 S)) "
          "[memory: constants as commonly reprinted]")
SCATTER_POINTS = 3.0
VALID = (20.0, 90.0)
CAUTION = ("hardness conversions are approximate: a modulus from Shore A (Gent 1958) is a first guess — filler, "
           "thickness, dwell time and viscoelasticity move the reading; confirm with a tensile or shear test")

_SHORE = re.compile(r"^\s*([0-9]+(?:[.,][0-9]+)?)\s*(?:°\s*)?(?:shore\s*a|sh\s*a|sha)\s*$", re.IGNORECASE)


def parse_shore_a(text) -> float | None:
    """The Shore A number of a text such as ``62ShoreA`` / ``62 Shore A`` / ``62ShA``; None when the text is not
    a Shore A value (a pressure, say).  Out-of-range values are refused with a sentence."""
    m = _SHORE.match(str(text))
    if not m:
        return None
    s = float(m.group(1).replace(",", "."))
    if not (VALID[0] <= s <= VALID[1]):
        raise UserError(f"{text!r}: the hardness–modulus relation (Gent 1958) is used for {VALID[0]:g}–{VALID[1]:g} "
                        "Shore A; outside that, measure the modulus instead")
    return s


def shore_a_to_e(s: float) -> float:
    """Young's modulus (Pa) for Shore A hardness ``s`` (Gent 1958, see the module doc)."""
    return 1e6 * 0.0981 * (56.0 + 7.62336 * s) / (0.137505 * (254.0 - 2.54 * s))


def e_to_shore_a(E: float) -> float:
    """Inverse of :func:`shore_a_to_e` (E in Pa): the relation is a ratio of two linear terms, solved for S."""
    e = E / 1e6
    return (e * 0.137505 * 254.0 - 0.0981 * 56.0) / (0.0981 * 7.62336 + e * 0.137505 * 2.54)


def shore_a_band(s: float, points: float = SCATTER_POINTS) -> tuple[float, float]:
    """E (Pa) at S − points and S + points, clipped to the valid range."""
    lo, hi = max(VALID[0], s - points), min(VALID[1], s + points)
    return shore_a_to_e(lo), shore_a_to_e(hi)


_TARGET = re.compile(r"^\s*(?:hardness|shore\s*a|H)\s*(>=|<=|≥|≤|=)\s*(.+?)\s*$", re.IGNORECASE)


def rewrite_target(text: str) -> tuple[str, dict] | None:
    """A hardness design target (``hardness>=60ShoreA``, ``hardness=60..65ShoreA``) as the equivalent E target
    text plus what to record; None when ``text`` is not a hardness target."""
    m = _TARGET.match(str(text))
    if not m:
        return None
    op, raw = m.group(1), m.group(2)
    nums = re.sub(r"(?i)\s*(shore\s*a|sha)\s*$", "", raw)
    if nums == raw:
        raise UserError(f"target {text!r}: write the hardness with its unit, e.g. hardness=60..65ShoreA")
    parts = nums.split("..")
    try:
        vals = [float(p.strip().replace(",", ".")) for p in parts]
    except ValueError:
        raise UserError(f"target {text!r}: write the hardness like hardness=60..65ShoreA or hardness>=60ShoreA") \
            from None
    for v in vals:
        if not (VALID[0] <= v <= VALID[1]):
            raise UserError(f"target {text!r}: the hardness–modulus relation is used for {VALID[0]:g}–{VALID[1]:g} "
                            "Shore A")
    if op == "=" and len(vals) != 2:
        raise UserError(f"target {text!r}: '=' needs a range, e.g. hardness=60..65ShoreA")
    es = [f"{shore_a_to_e(v) / 1e6:.6g}MPa" for v in vals]
    e_text = f"E={es[0][:-3]}..{es[1]}" if op == "=" else f"E{op}{es[0]}"
    return e_text, {"hardness": text, "shore_a": vals, "source": SOURCE, "caution": CAUTION,
                    "band_points": SCATTER_POINTS}
