"""Specifications: does a compared compound meet ``G=0.55..0.68MPa`` or ``M100>=1.2MPa``?

A specification is written in the design-target grammar (:mod:`network_models.design.targets`) and judged per
compound from its specimens (the specimen is the statistical unit):

* (docs/methods.md §specifications)
  the compound's headline 95 % interval of the mean — specimen scatter with fit error,
  :func:`network_models.statistics.combined_interval` (Student t, n − 1) — is compared with the limits:
  ``meets`` when it lies inside them, ``fails`` when it lies wholly outside, ``uncertain`` when it straddles a
  limit, ``cannot judge`` with fewer than two specimens (scatter unknown) or when the comparison does not
  measure the quantity;
* it judges the compound mean, and also counts the specimens whose own value lies outside the limits.

Quantities judged: ``G`` (the specimens' G₀), ``E`` (3·G₀), ``M<e>`` at 100 % or 300 % (the measured
nominal stress at that elongation, else the fitted model's prediction, basis stated), ``lock``, and the
break properties ``TS`` (tensile strength, Pa) and ``EB`` (elongation at break, %) of specimens that ruptured
(:mod:`network_models.ultimate`; written ``TS>=20MPa``, ``EB>=450%``).  Other design quantities (a stress in
another mode, a temperature shift, reserve, Q) are "cannot judge" with the reason.
"""

from __future__ import annotations

import math
import re

from .design.targets import TargetError, parse_target
from .statistics import CANNOT_JUDGE, combined_interval, summarize
from .units import parse_quantity

__all__ = ["FAILS", "MEETS", "UNCERTAIN", "SpecTarget", "judge", "judge_one", "parse_spec", "spec_lines"]

MEETS, FAILS, UNCERTAIN = "meets", "fails", "uncertain"


class SpecTarget:
    """A parsed specification: text, quantity key of the comparison, limits in SI (either may be None)."""

    def __init__(self, text, name, lo, hi, unit, scale, target=None):
        self.text, self.name, self.lo, self.hi, self.unit, self.scale, self.target = \
            text, name, lo, hi, unit, scale, target

    def inside(self, v) -> bool:
        return (self.lo is None or v >= self.lo) and (self.hi is None or v <= self.hi)


_BREAK = re.compile(r"^\s*(TS|EB)\s*(>=|<=|≥|≤|=)\s*(.+?)\s*$", re.IGNORECASE)


def _break_spec(text):
    m = _BREAK.match(text)
    if not m:
        return None
    q, op, raw = m.group(1).upper(), m.group(2), m.group(3)

    def val(s, unit=""):
        s = s.strip()
        if q == "EB":
            s = s[:-1] if s.endswith("%") else s
            try:
                return float(s.replace(",", "."))
            except ValueError:
                raise TargetError(f"specification {text!r}: elongation at break is a number of %, e.g. EB>=450%") \
                    from None
        if unit and not re.search(r"[a-zA-Z/²]", s):
            s += unit
        return parse_quantity(s, "pressure", require_unit=True)

    if op == "=":
        if ".." not in raw:
            raise TargetError(f"specification {text!r}: '=' needs a range, e.g. TS=18..24MPa or EB=400..600%")
        a, b = raw.split("..", 1)
        unit = re.sub(r"^\s*[-+0-9.,eE]+\s*", "", b)
        lo, hi = val(a, unit), val(b)
    elif op in (">=", "≥"):
        lo, hi = val(raw), None
    else:
        lo, hi = None, val(raw)
    key = "tensile_strength" if q == "TS" else "elongation_at_break"
    return SpecTarget(text, key, lo, hi, "MPa" if q == "TS" else "%", 1e-6 if q == "TS" else 1.0)


def parse_spec(text: str) -> SpecTarget:
    """A specification string → :class:`SpecTarget` (TargetError with a sentence when it cannot be read)."""
    text = str(text).strip()
    b = _break_spec(text)
    if b is not None:
        return b
    t = parse_target(text)
    name = None
    if t.temperature is None:
        if t.kind == "G":
            name = "G0"
        elif t.kind == "E":
            name = "E"
        elif t.kind == "lock" and t.mode is not None and t.mode.value == "uniaxial":
            name = "lock"
        elif t.kind == "stress" and t.mode is not None and t.mode.value == "uniaxial" and t.stretch is not None and \
                any(abs(t.stretch - s) < 1e-9 for s in (2.0, 4.0)):
            name = "M100" if abs(t.stretch - 2.0) < 1e-9 else "M300"
    return SpecTarget(text, name, t.lo, t.hi, t.unit, t.scale, t)


def _values(result, name):
    """(specimen values, fit standard errors, basis) of quantity ``name`` for one compared compound."""
    if name in ("G0", "lock"):
        specs = [s for s in result.specimens if s.used and s.values.get(name) is not None]
        return [s.values[name] for s in specs], [s.fit_se.get(name) for s in specs], "specimen fits"
    if name == "E":
        specs = [s for s in result.specimens if s.used and s.values.get("G0") is not None]
        se = [None if s.fit_se.get("G0") is None else 3 * s.fit_se["G0"] for s in specs]
        return [3 * s.values["G0"] for s in specs], se, "E = 3G₀ of the specimen fits"
    if name in ("M100", "M300"):
        for suffix, basis in (("_measured", "measured on the curves"), ("_predicted", "predicted by the fit")):
            k = name + suffix
            specs = [s for s in result.specimens if s.used and s.values.get(k) is not None]
            if specs:
                return [s.values[k] for s in specs], [s.fit_se.get(k) for s in specs], basis
        return [], [], ""
    if name in ("tensile_strength", "elongation_at_break"):
        from .ultimate import specimen_breaks

        breaks = specimen_breaks(result)
        return [getattr(u, name) for u in breaks], [], "specimens that ruptured"
    return [], [], ""


def judge_one(result, spec: SpecTarget) -> dict:
    """One compound against one specification (the ``compounds[].spec`` entry)."""
    out = {"target": spec.text, "quantity": spec.name, "low": spec.lo, "high": spec.hi, "unit_shown": spec.unit}
    if not getattr(result, "ok", False):
        return out | {"verdict": CANNOT_JUDGE, "reason": "the compound could not be fitted"}
    if spec.name is None:
        return out | {"verdict": CANNOT_JUDGE, "reason": "the comparison does not measure this quantity (judged: G, "
                                                         "E, M100, M300, lock, TS, EB at the test temperature)"}
    vals, se, basis = _values(result, spec.name)
    vals = [float(v) for v in vals if v is not None and math.isfinite(float(v))]
    summ = summarize(vals)
    outside = sum(1 for v in vals if not spec.inside(v))
    out |= {"n": summ.n, "mean": summ.mean, "basis": basis, "specimens_outside": outside}
    if summ.n < 2:
        return out | {"verdict": CANNOT_JUDGE, "ci95": None,
                      "reason": "one specimen: scatter unknown" if summ.n == 1 else "no specimen value"}
    ci = combined_interval(summ, se)
    assert ci is not None  # n ≥ 2: scatter known
    lo, hi = ci
    below = spec.lo is not None and hi < spec.lo
    above = spec.hi is not None and lo > spec.hi
    if below or above:
        v = FAILS
    elif spec.inside(lo) and spec.inside(hi):
        v = MEETS
    else:
        v = UNCERTAIN
    return out | {"verdict": v, "ci95": [lo, hi], "reason": "95 % interval of the mean (specimen scatter with fit "
                                                              "error, Student t, n − 1) against the limits"}


def judge(results, texts) -> dict[str, list[dict]]:
    """``{compound name: [spec entries]}`` for every compound and specification text."""
    specs = [parse_spec(t) for t in texts or []]
    return {r.name: [judge_one(r, s) for s in specs] for r in results}


def _shown(entry, v):
    if v is None:
        return "—"
    unit = entry.get("unit_shown") or ""
    scale = 1e-6 if unit == "MPa" else 1.0
    return f"{v * scale:.4g}" + (f" {unit}" if unit else "")


def spec_lines(cmp) -> list[str]:
    """Plain-text lines for the specifications of a comparison (empty without any)."""
    if not getattr(cmp, "specs", None):
        return []
    out = ["", "Specifications (the compound's 95 % interval of the mean, specimen scatter with fit error, against "
               "the limits; specimens outside counted):"]
    for name, rows in judge(cmp.results, cmp.specs).items():
        for e in rows:
            ci = e.get("ci95")
            ci_txt = "" if not ci else f" [{_shown(e, ci[0])} – {_shown(e, ci[1])}]"
            n_out = e.get("specimens_outside")
            extra = "" if not e.get("n") else f"; {n_out} of {e['n']} specimen(s) outside"
            out.append(f"  {name:10s} {e['target']:22s} {e['verdict']:13s} mean {_shown(e, e.get('mean'))}{ci_txt}"
                       f"{extra}" + (f" ({e['reason']})" if e["verdict"] == CANNOT_JUDGE else ""))
    return out
