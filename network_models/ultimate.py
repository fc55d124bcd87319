"""Break properties of a tensile curve that runs to rupture: tensile strength, elongation and stress at break.

**Rupture rule** (:func:`find_rupture`, docs/methods.md §break-properties;
common practice of tensile testers and the tensile standards, which
detect a break as a sudden fall of the force from its peak; the thresholds here are this project's choice):
after the largest nominal stress σ_max the stress falls, between two consecutive points, by at least
:data:`RUPTURE_STEP` (30 %) of σ_max to below :data:`RUPTURE_LEVEL` (50 %) of σ_max, and never climbs back above
that level to the end of the record; the fall must come before the largest stretch (a fall while the
stretch goes back is an unloading branch, not a break).  A gradual softening (no such step) is not a
rupture.  Only tension curves (stretch above 1) are judged.

Per specimen that ruptured (nominal stress, Pa; the specimen is the statistical unit):

* tensile strength — the largest nominal stress of the curve (up to the break);
* stress at break — the nominal stress at the last point before the drop;
* elongation at break — (λ_b − 1)·100 %, λ_b the stretch of that point.

The points after the break are left out of every fit: the lab-file reader cuts them off
(network_models.labfiles.reader) and records the break in the curve's ``metadata["ultimate"]`` with a notice
of kind ``rupture``; :func:`split_at_rupture` does the same for a curve made in code.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from .curves import TestCurve
from .errors import Notice

__all__ = ["RULE", "RUPTURE_LEVEL", "RUPTURE_STEP", "Ultimate", "break_properties", "find_rupture",
           "rupture_notice", "split_at_rupture",
           "ultimate_of", "ultimate_rows"]

#: after the break the stress stays below this fraction of the largest nominal stress
RUPTURE_LEVEL = 0.5
#: the break is a fall of at least this fraction of the largest nominal stress between two consecutive points
RUPTURE_STEP = 0.3
#: the rule in one sentence (JSON, report)
RULE = (f"rupture: after the largest nominal stress σ_max the stress falls between two consecutive points by at "
        f"least {RUPTURE_STEP:.0%} of σ_max to below {RUPTURE_LEVEL:.0%} of σ_max, before the largest stretch, and "
        "stays below it to the end; "
        "stress at break = the last point before the fall; points after it are left out of the fit")


@dataclass(frozen=True, kw_only=True)
class Ultimate:
    """Break properties of one specimen (SI: Pa; elongation in %)."""

    specimen: str
    tensile_strength: float  # Pa, largest nominal stress
    elongation_at_break: float  # %, (λ_b − 1)·100
    stress_at_break: float  # Pa, last point before the drop
    stretch_at_break: float
    points_dropped: int = 0

    def to_dict(self) -> dict:
        """The ``ultimate`` entry of ``fit --json`` (issue #21 contract: specimen, tensile_strength_Pa,
        elongation_at_break_percent, stress_at_break_Pa) plus the stretch at break."""
        return {"specimen": self.specimen, "tensile_strength_Pa": self.tensile_strength,
                "elongation_at_break_percent": self.elongation_at_break, "stress_at_break_Pa": self.stress_at_break,
                "stretch_at_break": self.stretch_at_break, "points_after_break_left_out": self.points_dropped}


def find_rupture(stretch, stress) -> int | None:
    """Index of the first point after the break (the rule in the module docstring), or None (no rupture)."""
    lam, s = np.asarray(stretch, float), np.asarray(stress, float)
    if lam.size < 3 or not np.all(np.isfinite(s)) or not (np.nanmax(lam) > 1.0):
        return None
    i_max = int(np.argmax(s))
    smax = float(s[i_max])
    if not smax > 0:
        return None
    level, step = RUPTURE_LEVEL * smax, RUPTURE_STEP * smax
    # only on the loading branch: up to the largest stretch (a fall while the stretch goes back is unloading)
    for j in range(i_max + 1, int(np.argmax(lam)) + 1):
        if s[j] < level and s[j - 1] - s[j] >= step:
            return j if np.all(s[j:] < level) else None
    return None


def split_at_rupture(curve: TestCurve) -> tuple[TestCurve, Any]:
    """``(curve with the points after the break removed, Ultimate)`` — or ``(curve, None)`` without a rupture.
    A curve made in code is not changed in place."""
    j = find_rupture(curve.stretch, curve.stress) if curve.loading != "compression" else None
    if j is None:
        return curve, None
    lam, s = curve.stretch[:j], curve.stress[:j]
    u = break_properties(curve.specimen or curve.name, lam, s, curve.stretch.size - j)
    md = dict(curve.metadata, ultimate=u.to_dict())
    out = replace(curve, stretch=lam, stress=s, metadata=md,
                  notices=list(curve.notices) + [rupture_notice(u, curve.name)])
    return out, u


def break_properties(specimen, lam, s, dropped=0) -> Ultimate:
    """Break properties of a curve already cut at the break (its last point is the point before the fall)."""
    return Ultimate(specimen=str(specimen), tensile_strength=float(np.max(s)),
                    elongation_at_break=float((lam[-1] - 1.0) * 100.0), stress_at_break=float(s[-1]),
                    stretch_at_break=float(lam[-1]),
                    points_dropped=int(dropped))


def rupture_notice(u: Ultimate, subject=None) -> Notice:
    return Notice(f"the specimen ruptured at {u.elongation_at_break:.0f} % elongation (stretch "
                  f"{u.stretch_at_break:.3g}); the {u.points_dropped} point(s) after the break are left out of the "
                  f"fit; tensile strength {u.tensile_strength / 1e6:.3g} MPa, stress at break "
                  f"{u.stress_at_break / 1e6:.3g} MPa", "rupture", subject)


def ultimate_of(curve) -> Ultimate | None:
    """The break properties recorded on a curve (by the reader or :func:`split_at_rupture`), or None."""
    d = curve.metadata.get("ultimate") if isinstance(curve.metadata, dict) else None
    if not d:
        return None
    return Ultimate(specimen=d["specimen"], tensile_strength=d["tensile_strength_Pa"],
                    elongation_at_break=d["elongation_at_break_percent"], stress_at_break=d["stress_at_break_Pa"],
                    stretch_at_break=d["stretch_at_break"], points_dropped=d.get("points_after_break_left_out", 0))


def ultimate_rows(curves) -> list[dict]:
    """One ``ultimate`` JSON entry per curve that ruptured."""
    return [u.to_dict() for u in (ultimate_of(c) for c in curves) if u is not None]


# ---- in the comparison: specimen statistics and verdicts against the baseline -------------------------------
#: quantity key → (label, unit, attribute of Ultimate)
QUANTITIES = {
    "tensile_strength": ("tensile strength", "Pa", "tensile_strength"),
    "elongation_at_break": ("elongation at break", "%", "elongation_at_break"),
    "stress_at_break": ("stress at break", "Pa", "stress_at_break"),
}


def specimen_breaks(result) -> list[Ultimate]:
    """Break properties of a compared compound's specimens (one per specimen that ruptured; excluded specimens
    left out).  ``result``: a :class:`network_models.compare.records.CompoundResult`."""
    out = []
    for s in getattr(result, "specimens", []):
        if s.excluded:
            continue
        u = next((x for x in (ultimate_of(c) for c in s.curves) if x is not None), None)
        if u is not None:
            out.append(u)
    return out


def compound_ultimate(result) -> dict | None:
    """``compounds[].ultimate`` of ``compare --json``: per-specimen break properties and their statistics
    (mean, sd, 95 % interval of the mean, Student t, n − 1; one specimen: scatter unknown); None when no
    specimen ruptured."""
    from .statistics import summarize

    breaks = specimen_breaks(result)
    if not breaks:
        return None
    return {"rule": RULE, "specimens": [u.to_dict() for u in breaks],
            "statistics": {k: dict(summarize([getattr(u, a) for u in breaks]).to_dict(), label=lab, unit=unit)
                           for k, (lab, unit, a) in QUANTITIES.items()}}


def ultimate_differences(results, baseline: str | None) -> list[dict]:
    """Each compound against the baseline on the break properties (Welch interval, verdict; one specimen on a
    side: cannot judge) — :func:`network_models.statistics.verdict`."""
    from .statistics import verdict

    base = next((r for r in results if r.name == baseline), None)
    if base is None:
        return []
    b = specimen_breaks(base)
    out = []
    for r in results:
        if r is base:
            continue
        a = specimen_breaks(r)
        if not a and not b:
            continue
        for k, (lab, unit, attr) in QUANTITIES.items():
            d = verdict([getattr(u, attr) for u in a], [getattr(u, attr) for u in b]).to_dict()
            d.update({"compound": r.name, "baseline": base.name, "quantity": k, "label": lab, "unit": unit})
            out.append(d)
    return out
