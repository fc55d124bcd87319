"""Unit plausibility of lab curves (issue #20): notices when the numbers cannot be right as their units say
(docs/methods.md §plausibility).  Used before a fit (``problem.set_up`` refuses a modulus past 1 GPa with
these sentences) and after it (``diagnostics.diagnose``); it imports nothing of the fitting package."""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from ..errors import Notice

__all__ = ["PLAUSIBLE_G0", "SMALLEST_TENSILE_STRAIN", "TYPICAL_G0", "UNIT_MIXUPS", "unit_plausibility"]


#: the small-strain shear modulus a solid rubber can have, Pa (issue #20: 0.05–20 MPa; soft gels and hard
#: ebonite lie outside, common practice)
PLAUSIBLE_G0 = (0.05e6, 20e6)
#: a tensile curve whose largest strain is below this is not a rubber test as written (issue #20)
SMALLEST_TENSILE_STRAIN = 0.02
#: unit mix-ups: (factor, column, header unit it hides under, sentence, direction).  "big": the numbers are too
#: large by the factor (G₀/factor would be right), "small": too small.  psi per MPa 145.038 (NIST SP 811:
#: 1 psi = 6.894757 kPa); kgf/cm² per MPa 10.1972 (1 kgf = 9.80665 N, standard gravity, CGPM 1901)
UNIT_MIXUPS = (
    (145.038, "stress", "mpa", "stress numbers in psi under a MPa header", "big"),
    (1000.0, "stress", "mpa", "stress numbers in kPa under a MPa header", "big"),
    (1000.0, "stress", "kpa", "stress numbers in Pa under a kPa header", "big"),
    (100.0, "stretch", "%", "strain fractions under a % header", "big"),
    (10.1972, "stress", "mpa", "stress numbers in kgf/cm² under a MPa header", "big"),
    (6.89476, "stress", "psi", "stress numbers in kPa under a psi header", "big"),
    (145.038, "stress", "psi", "stress numbers in MPa under a psi header", "small"),
    (1000.0, "stress", "kpa", "stress numbers in MPa under a kPa header", "small"),
    (1000.0, "stress", "pa", "stress numbers in kPa under a Pa header", "small"),
    (10.1972, "stress", "kgf/cm²", "stress numbers in MPa under a kgf/cm² header", "small"),
    (6.89476, "stress", "kpa", "stress numbers in psi under a kPa header", "small"),
)
#: the typical small-strain modulus of a rubber, Pa: candidates are named nearest this first (common practice)
TYPICAL_G0 = 0.5e6


def _units(curves, column) -> set[str] | None:
    """The header units the curves state for a column (lower case), None when no curve states one."""
    said = {str((c.metadata.get("units") or {}).get(column) or "").strip().lower() for c in curves}
    said.discard("")
    return said or None


def _headers(curves) -> str:
    units = {(str((c.metadata.get("units") or {}).get("stretch") or ""),
              str((c.metadata.get("units") or {}).get("stress") or "")) for c in curves}
    said = [f"strain/stretch column in {a or 'no unit'}, stress column in {b or 'no unit'}" for a, b in sorted(units)
            if a or b]
    return f" (the files say: {'; '.join(said)})" if said else ""


def _top_strain(curves) -> float:
    tops = [float(np.nanmax(c.stretch)) - 1.0 for c in curves if len(c.stretch)]
    return max(tops) if tops else math.nan


def unit_plausibility(curves, G0, modulus_of: Callable[[list], float]) -> list[Notice]:
    """Notices (kind ``implausible-unit``, the word *plausible* in each) when the numbers cannot be right
    as their units say: G₀ outside 0.05–20 MPa (naming the mix-ups the headers allow that would bring it
    inside, nearest a typical 0.5 MPa first), a tensile curve whose largest strain is below 2 %, or two curves
    of one mode whose moduli differ by a unit factor.  ``modulus_of(curves)`` is the start-modulus estimate
    (``problem.estimate_modulus``), passed in so this module imports nothing of the fitting package."""
    out: list[Notice] = []
    lo, hi = PLAUSIBLE_G0
    if G0 is not None and math.isfinite(G0) and G0 > 0 and not lo <= G0 <= hi:
        fixes = []
        for f, column, header, text, way in UNIT_MIXUPS:
            said = _units(curves, column)
            if said is not None and header not in said:
                continue
            if column == "stretch" and not _top_strain(curves) < 0.1:  # fractions read as % stay below 10 %
                continue
            g = G0 / f if way == "big" else G0 * f
            if (way == "big") == (G0 > hi) and lo <= g <= hi:
                fixes.append((abs(math.log(g / TYPICAL_G0)), f"{text} (G₀ would be {g / 1e6:.3g} MPa)"))
            strain_ok = (_units(curves, "stretch") in (None, {"%"}) and _top_strain(curves) < 0.1)
            if column == "stress" and way == "big" and G0 > hi and strain_ok:  # both columns mixed up
                g = G0 / f / 100.0
                if lo <= g <= hi:
                    fixes.append((abs(math.log(g / TYPICAL_G0)),
                                  f"{text} and strain fractions under a % header (G₀ would be {g / 1e6:.3g} MPa)"))
        named = [t for _, t in sorted(fixes)[:2]]
        what = ("; likely mix-up: " + "; or ".join(named)) if named else ""
        out.append(Notice(f"G₀ = {G0 / 1e6:.4g} MPa is not a plausible rubber modulus (solid rubbers lie between "
                          f"{lo / 1e6:g} and {hi / 1e6:g} MPa){what}{_headers(curves)}; check the columns' units "
                          "before using the fit", "implausible-unit", "G0"))
    for c in curves:
        lam = np.asarray(c.stretch, float)
        lam = lam[np.isfinite(lam)]
        if lam.size and lam.min() >= 1.0 - 1e-9 and 0 < lam.max() - 1.0 < SMALLEST_TENSILE_STRAIN:
            top = lam.max() - 1.0
            out.append(Notice(f"{c.name}: the largest strain is {100 * top:.3g} %, not a plausible rubber tensile "
                              f"test (below {100 * SMALLEST_TENSILE_STRAIN:g} %); likely mix-up: strain fractions "
                              f"under a % header (as fractions the largest strain would be {100 * 100 * top:.3g} %)"
                              f"{_headers([c])}", "implausible-unit", c.name))
    by_mode: dict = {}
    for c in curves:
        try:
            by_mode.setdefault(c.mode, []).append((c.name, modulus_of([c])))
        except ValueError:
            continue
    for items in by_mode.values():
        for i in range(len(items)):
            for j in range(i + 1, len(items)):
                (na, ga), (nb, gb) = items[i], items[j]
                r = max(ga, gb) / min(ga, gb)
                for f, _column, _header, text, way in UNIT_MIXUPS:
                    if way == "big" and abs(math.log(r / f)) < 0.05:
                        hi_name = na if ga > gb else nb
                        out.append(Notice(f"the moduli of {na} and {nb} differ by a factor {r:.4g}, close to the unit "
                                          f"factor {f:g}: not a plausible specimen scatter; likely mix-up in "
                                          f"{hi_name}: {text}", "implausible-unit", f"{na}, {nb}"))
                        break
    return out
