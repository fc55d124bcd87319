"""Dose ladders: from a ν window to a window of an ingredient's phr (``design --manifest FILE --dose INGREDIENT``).

When compounds of a study differ in one ingredient only (a cure-dose or filler ladder), each compound's strand
density is recomputed **on the design's basis** — its fitted small-strain modulus G₀ turned into the ν whose
network gives that G₀ under the design's model, polymer, f and entanglement policy, with the compound's own
filler fraction (:func:`network_models.design.advice.nu_for_modulus`) — and a straight line
ν = intercept + slope · phr is fitted to them by least squares (slope and intercept with standard errors from the
residual scatter, n − 2 degrees of freedom,
docs/methods.md §dose-ladder; two doses: no scatter, uncertainty not determined).  The ν window's
edges are inverted through the line (the point inverse, phr = (ν − intercept)/slope); the line's uncertainty is
reported beside it.  Because the ladder's ν and the window's ν are read the same way, switching the
entanglement share on or off moves both alike and gives the same dose window (for models whose small-strain
modulus is linear in ν).

A saturating form ν = a + b·phr/(c + phr) is fitted too with at least five doses (AICc needs n > k + 1);
it is preferred only
when its small-sample Akaike criterion (AICc) is lower than the line's by more than 2 (the usual threshold of
"substantial support", Burnham & Anderson 2002 [memory]); the ``line`` stays in the JSON either way.

A dose outside the tested doses is flagged ``extrapolated``.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import numpy as np

from .errors import UserError

__all__ = ["LADDER_QUANTITIES", "Line", "dose_window", "find_ladders", "fit_line", "ladder", "ladder_fits"]


@dataclasses.dataclass(frozen=True)
class Line:
    """y = intercept + slope·x with standard errors (None when not determined: two points)."""

    slope: float
    intercept: float
    slope_se: float | None
    intercept_se: float | None
    n: int
    rss: float

    def inverse(self, y: float) -> float:
        return (y - self.intercept) / self.slope

    def to_dict(self) -> dict:
        return {"slope": self.slope, "intercept": self.intercept, "slope_se": self.slope_se,
                "intercept_se": self.intercept_se, "n": self.n,
                "units": {"slope": "mol/m³ per phr", "intercept": "mol/m³"},
                "note": "" if self.slope_se is not None else "two doses: no residual scatter, uncertainty not "
                                                             "determined"}


def fit_line(x, y) -> Line:
    """Ordinary least squares y = a + b x (standard errors from the residuals, n − 2 dof)."""
    x, y = np.asarray(x, float), np.asarray(y, float)
    n = x.size
    xm, ym = x.mean(), y.mean()
    sxx = float(((x - xm) ** 2).sum())
    if n < 2 or sxx == 0:
        raise UserError("a dose line needs at least two different doses")
    b = float(((x - xm) * (y - ym)).sum() / sxx)
    a = float(ym - b * xm)
    rss = float(((y - a - b * x) ** 2).sum())
    if n > 2:
        s2 = rss / (n - 2)
        se_b = math.sqrt(s2 / sxx)
        se_a = math.sqrt(s2 * (1.0 / n + xm * xm / sxx))
    else:
        se_b = se_a = None  # type: ignore[assignment]  # not determined from two points
    return Line(b, a, se_b, se_a, n, rss)


def _aicc(rss, n, k):
    if n - k - 1 <= 0 or rss <= 0:
        return math.inf
    return n * math.log(rss / n) + 2 * k + 2 * k * (k + 1) / (n - k - 1)


def _saturating(x, y):
    """(a, b, c, rss) of y = a + b·x/(c + x), or None when it cannot be fitted."""
    from scipy.optimize import curve_fit

    def f(x, a, b, c):
        return a + b * x / (c + x)

    try:
        p, _ = curve_fit(f, x, y, p0=(y.min(), 2 * (y.max() - y.min()), max(float(np.median(x)), 1e-3)),
                         bounds=([-np.inf, -np.inf, 1e-6], [np.inf, np.inf, np.inf]), maxfev=20000)
    except (RuntimeError, ValueError):
        return None
    return (*map(float, p), float(((y - f(x, *p)) ** 2).sum()))


def _nu_on_basis(setup, G, T, nu_for_modulus):
    """(ν, how) whose design-basis network has small-strain modulus G.  Below the smallest ν of the design scan
    (a G₀ under the entanglement share) or above the largest, ν follows the model's modulus line through the two
    nearest scan ends (it may come out negative: a reading on this basis, not a real strand density), so the
    ladder line and the window are still read alike."""
    from .models import get_model

    try:
        return nu_for_modulus(setup, G, T), "design model"
    except UserError:
        pass
    m = get_model(setup.model)
    lo, hi = setup.nu_range

    def g0(nu):
        return float(m.small_strain_modulus(**setup.network(nu, T).model_params(m)))

    a, b = (lo, 2.0 * lo) if G < g0(lo) else (hi / 2.0, hi)
    ga, gb = g0(a), g0(b)
    return a + (G - ga) * (b - a) / (gb - ga), "extended along the model's modulus line (outside the design scan)"


def _key(name):
    return str(name).strip().lower().replace("_", "-").replace(" ", "-")


def ladder(compounds: Any, ingredient: str) -> tuple[list[Any], dict[str, str]]:
    """``(rows, left_out)``: the compounds that differ only in ``ingredient`` — rows of (compound, phr), phr
    of the ingredient (0 when the recipe lacks it) — and {name: why} for the others."""
    k = _key(ingredient)
    groups: dict = {}
    left: dict = {}
    for c in compounds:
        r = getattr(c, "recipe", None)
        if r is None:
            left[c.name] = "no recipe"
            continue
        dose = r.phr_of(ingredient) or 0.0
        rest = tuple(sorted((_key(n), v) for n, v in r.phr.items() if _key(n) != k and _key(r.items[n].name) != k))
        groups.setdefault(rest, []).append((c, dose))
    best: list = max(groups.values(), key=lambda g: (len({d for _c, d in g}), len(g)), default=[])
    if len({d for _c, d in best}) < 2:
        raise UserError(f"no two compounds with recipes differ only in {ingredient!r}: a dose ladder needs at "
                        "least two doses of one ingredient with everything else equal")
    for g in groups.values():
        if g is not best:
            for c, _d in g:
                left[c.name] = f"differs from the ladder in more than {ingredient}"
    return sorted(best, key=lambda t: t[1]), left


def dose_window(result, compounds, ingredient: str, fitter=None) -> dict:
    """The ``dose`` object of ``design --dose`` for the design ``result`` (a feasible
    :class:`network_models.design.DesignResult`) and the manifest's compounds."""
    from .crosslinks import from_fit
    from .design.advice import nu_for_modulus
    from .fitting import fit

    rows, left = ladder(compounds, ingredient)
    s = result.setup
    pts = []
    for c, dose in rows:
        res = (fitter or fit)(s.model, c.curves)
        setup_c = dataclasses.replace(s, filler=float(c.filler_fraction))
        table = from_fit(res, polymer=s.polymer, f=s.f, filler_fraction=setup_c.filler)
        nu, how = _nu_on_basis(setup_c, table.G, table.T, nu_for_modulus)
        pts.append({"compound": c.name, "phr": dose, "G0_Pa": table.G, "strand_density": nu, "read": how})
    x = np.array([p["phr"] for p in pts])
    y = np.array([p["strand_density"] for p in pts])
    line = fit_line(x, y)
    form, sat = "line", None
    if len(x) >= 5:  # AICc of a 3-parameter form needs n − k − 1 > 0 and a residual dof beyond it
        sp = _saturating(x, y)
        if sp is not None:
            a_line, a_sat = _aicc(line.rss, len(x), 2), _aicc(sp[3], len(x), 3)
            sat = {"a": sp[0], "b": sp[1], "c": sp[2], "aicc": a_sat, "aicc_line": a_line}
            if a_sat < a_line - 2.0:
                form = "saturating"
    out = {"ingredient": ingredient, "unit": "phr", "basis": f"ν recomputed from each compound's fitted G₀ under the "
           f"design's basis: {s.describe()}; each compound's own filler fraction", "form": form, "line": line.to_dict(),
           "saturating": sat, "ladder": pts, "left_out": left, "tested": [float(x.min()), float(x.max())]}
    if not result.feasible or result.window is None:
        return out | {"low": None, "high": None, "extrapolated": None,
                      "note": "the targets have no ν window, so there is no dose window"}
    if line.slope == 0:
        return out | {"low": None, "high": None, "extrapolated": None, "note": "ν does not change with the dose"}

    def inv(nu):
        if form == "line":
            return line.inverse(nu)
        from scipy.optimize import brentq

        a, b, c = sat["a"], sat["b"], sat["c"]
        g = lambda d: a + b * d / (c + d) - nu  # noqa: E731
        hi = float(x.max()) * 10 + 10
        try:
            return brentq(g, 0.0, hi)
        except ValueError:
            return line.inverse(nu)

    d1, d2 = inv(result.window.lo), inv(result.window.hi)
    lo, hi = min(d1, d2), max(d1, d2)
    extrap = bool(lo < x.min() - 1e-9 or hi > x.max() + 1e-9)
    note = ("outside the tested doses " f"{x.min():g}–{x.max():g} phr: extrapolated — confirm with a compound at "
            "that dose") if extrap else ""
    if lo < 0:
        note = (note + "; " if note else "") + "the low edge is below zero phr: every dose down to 0 meets it"
    return out | {"low": lo, "high": hi, "extrapolated": extrap, "note": note,
                  "nu_window": [result.window.lo, result.window.hi]}


# ---- in the comparison: every headline quantity against the dose ---------------------------------------------
#: compared quantities fitted against the dose (key of CompoundResult.quantities → label)
LADDER_QUANTITIES = {"nu": "strand density ν (headline basis)", "G0": "small-strain shear modulus G₀",
                     "M100_measured": "M100 measured", "M300_measured": "M300 measured",
                     "lock": "uniaxial locking stretch λ_lock"}


def find_ladders(compounds) -> list[str]:
    """Ingredients in which at least three compounds with recipes differ while everything else is equal."""
    names: dict = {}
    for c in compounds:
        r = getattr(c, "recipe", None)
        if r is not None:
            for n in r.phr:
                names.setdefault(_key(n), n)
    out = []
    for n in names.values():
        try:
            rows, _left = ladder(compounds, n)
        except UserError:
            continue
        if len(rows) >= 3 and len({d for _c, d in rows}) >= 3:
            out.append(n)
    return out


def ladder_fits(results) -> list[dict]:
    """For each ladder among compared compounds (``results``: CompoundResult list): each headline quantity's
    compound means against the dose with a fitted line (slope, intercept and their standard errors)."""
    by = {r.name: r for r in results if r.ok}
    out = []
    for ing in find_ladders([r.compound for r in by.values()]):
        rows, left = ladder([r.compound for r in by.values()], ing)
        qs = {}
        for key, label in LADDER_QUANTITIES.items():
            pts = [(d, by[c.name].quantities[key]) for c, d in rows if by[c.name].quantities.get(key) is not None
                   and by[c.name].quantities[key].value is not None]
            if len({d for d, _q in pts}) < 2:
                continue
            line = fit_line([d for d, _q in pts], [q.value for _d, q in pts])
            qs[key] = {"label": label, "unit": pts[0][1].unit, "basis": pts[0][1].basis,
                       "points": [{"phr": d, "value": q.value, "ci95": [q.low, q.high] if q.has_interval else None}
                                  for d, q in pts],
                       "line": dict(line.to_dict(), units={"slope": f"{pts[0][1].unit} per phr",
                                                           "intercept": pts[0][1].unit})}
        out.append({"ingredient": ing, "unit": "phr", "compounds": [c.name for c, _d in rows], "left_out": left,
                    "form": "line", "quantities": qs})
    return out
