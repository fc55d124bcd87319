"""Setting a fit up: the curves' kinematics (computed once), the start modulus, the optimiser's coordinates
(bounds folded into smooth transforms), the lock-aware bounds and the weights of the residual."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.optimize import brentq

from ..curves import TestCurve
from ..deformation import MODES
from ..errors import FitError, Notice
from .plausibility import unit_plausibility

#: the one residual weighting default of netstretch (fit, compare, report, batch, app, study): relative
#: residuals weight every point by its own stress, so the small-strain points that fix the modulus G₀ count
#: as much as the stiff high-stretch points (absolute residuals let the last few points of a curve set G₀).
DEFAULT_RESIDUAL = "relative"
RESIDUALS = ("relative", "absolute")
RELATIVE_FLOOR = 0.02  # relative residual denominator floor, fraction of the largest |stress| of a mode
SMALL_STRAIN = (0.7, 1.5)  # stretch window for the start modulus

_NEO_SHAPE = {  # nominal stress / G, neo-Hookean solid (docs/methods.md §stress-from-energy, W₁ = G/2, W₂ = 0)
    0: lambda x: x - x**-2,  # uniaxial
    1: lambda x: x - x**-5,  # equibiaxial
    2: lambda x: x - x**-3,  # planar
}
_MODE_INDEX = {m: i for i, m in enumerate(MODES)}
_KINEMATICS = ("l1", "l2", "l3", "I1", "I2", "A", "B", "l3_over_l1")


def _stretches(mode_index: int, lam: np.ndarray):
    """(λ₁, λ₂, λ₃) of the incompressible test modes, direction 3 stress-free (docs/methods.md §test-modes)."""
    if mode_index == 0:
        lt = 1.0 / np.sqrt(lam)
        return lam, lt, lt
    if mode_index == 1:
        return lam, lam, 1.0 / (lam * lam)
    return lam, np.ones_like(lam), 1.0 / lam


class Data:
    """All curves concatenated, with per-point mode and the precomputed kinematics."""

    def __init__(self, curves: list[TestCurve]):
        for c in curves:
            if not isinstance(c, TestCurve):
                raise TypeError(f"fit expects TestCurve objects, got {type(c).__name__}")
        self.lam = np.concatenate([c.stretch for c in curves])
        self.P = np.concatenate([c.stress for c in curves])
        self.mode_idx = np.repeat([_MODE_INDEX[c.mode] for c in curves], [c.stretch.size for c in curves])
        if not (math.isfinite(float(np.dot(self.lam, self.lam)) + float(np.dot(self.P, self.P)))
                and float(self.lam.min()) > 0):
            _bad_curve(curves)  # raises the sentence
        self._index()
        parts = [_stretches(_MODE_INDEX[c.mode], c.stretch) for c in curves]  # per curve: no masked writes
        if len(parts) == 1:
            self._kinematics(*parts[0])
        else:
            self._kinematics(*(np.concatenate([q[i] for q in parts]) for i in range(3)))

    def _index(self):
        counts = np.bincount(self.mode_idx, minlength=len(MODES)).tolist()
        self.modes = [m for m, k in zip(MODES, counts, strict=True) if k]
        self.masks = {m: self.mode_idx == _MODE_INDEX[m] for m in self.modes}
        # (min, max) stretch of each mode and the indices where they sit: one sort, no per-mode reductions
        order = np.lexsort((self.lam, self.mode_idx)).tolist()
        self.ranges, self.ends = {}, []
        start = 0
        for m, k in zip(MODES, counts, strict=True):
            if k:
                i, j = order[start], order[start + k - 1]
                self.ranges[m] = (float(self.lam[i]), float(self.lam[j]))
                self.ends += [i, j]
                start += k
        self.top = max(hi for _, hi in self.ranges.values())

    def _kinematics(self, l1, l2, l3):
        self.l1, self.l2, self.l3 = l1, l2, l3
        a1, a2, a3 = l1 * l1, l2 * l2, l3 * l3
        self.I1 = a1 + a2 + a3
        self.I2 = a1 * a2 + a2 * a3 + a3 * a1
        # P₁ = 2[W₁(a₁ − a₃) + W₂(a₁(I₁ − a₁) − a₃(I₁ − a₃))]/λ₁ (models/base.py)
        self.A = 2.0 * (a1 - a3) / l1
        self.B = 2.0 * (a1 * (self.I1 - a1) - a3 * (self.I1 - a3)) / l1
        self.l3_over_l1 = l3 / l1

    def extremes(self) -> np.ndarray:
        """Indices of the smallest and largest stretch of every mode (where a model's domain ends)."""
        return np.array(sorted(set(self.ends)), dtype=int)

    def subset(self, keep: np.ndarray) -> Data:
        new = object.__new__(Data)
        new.lam, new.P, new.mode_idx = self.lam[keep], self.P[keep], self.mode_idx[keep]
        new._index()
        for a in _KINEMATICS:
            setattr(new, a, getattr(self, a)[keep])
        return new


def _bad_curve(curves):
    for c in curves:
        s, p = c.stretch, c.stress
        bad = ~(np.isfinite(s) & np.isfinite(p))
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            raise FitError(f"curve {c.name!r} has a missing or non-numeric value at point {i + 1}; "
                           "remove or fix that row and fit again", kind="bad-data")
        if (s <= 0).any():
            raise FitError(f"curve {c.name!r} has a stretch ≤ 0; stretch λ = 1 + strain must be positive "
                           "(did the file hold strain in % or displacement?)", kind="bad-data")
    raise FitError("the curves hold values too large to fit; check the stress unit", kind="bad-data")


def estimate_modulus(curves: TestCurve | Sequence[TestCurve]) -> float:
    """Small-strain shear modulus G₀ (Pa) from curves: neo-Hookean least-squares slope over the points with
    0.7 ≤ λ ≤ 1.5 (λ ≠ 1), or the five points nearest λ = 1 when fewer than three lie there."""
    if isinstance(curves, TestCurve):
        curves = [curves]
    num = den = 0.0
    for c in curves:
        lam = np.asarray(c.stretch, float)
        P = np.asarray(c.stress, float)
        ok = np.isfinite(lam) & np.isfinite(P) & (lam > 0) & (np.abs(lam - 1.0) > 1e-6)
        lam, P = lam[ok], P[ok]
        if lam.size == 0:
            continue
        sel = (lam >= SMALL_STRAIN[0]) & (lam <= SMALL_STRAIN[1])
        if sel.sum() < 3:
            sel = np.argsort(np.abs(lam - 1.0))[:5]
        g = _NEO_SHAPE[_MODE_INDEX[c.mode]](lam[sel])
        num += float(np.dot(g, P[sel]))
        den += float(np.dot(g, g))
    G0 = num / den if den > 0 else float("nan")
    if not (math.isfinite(G0) and G0 > 0):
        raise FitError("cannot estimate a modulus from these curves: the stress does not rise with stretch "
                       "near λ = 1 (check the stress column, its unit and sign)", kind="no-modulus")
    return G0


def modulus_from_data(data: Data, curves) -> float:
    """:func:`estimate_modulus` on the prepared data (neo-Hookean shape = A/2 of the kinematics), pooled
    over all curves; falls back to the per-curve function when fewer than three points are near λ = 1."""
    lam = data.lam
    sel = (lam >= SMALL_STRAIN[0]) & (lam <= SMALL_STRAIN[1]) & (np.abs(lam - 1.0) > 1e-6)
    if int(sel.sum()) < 3 * len(curves):
        return estimate_modulus(curves)
    g = 0.5 * data.A[sel]
    den = float(np.dot(g, g))
    G0 = float(np.dot(g, data.P[sel])) / den if den > 0 else float("nan")
    if not (math.isfinite(G0) and G0 > 0):
        return estimate_modulus(curves)  # raises the sentence
    return G0


def inside(model, data: Data, p) -> np.ndarray:
    with np.errstate(all="ignore"):
        m = model._margin(data.l1, data.l2, data.l3, data.I1, p)
    if m is None:
        return np.ones(data.lam.size, bool)
    return np.asarray(m > 0)


def lock_threshold(model: Any, data: Data, p: dict[str, Any], name: str, lo: float, hi: float) -> Any:
    """If ``name`` controls the model's domain on these data, (threshold, valid_side) with valid_side
    'above' or 'below'; else None.  The threshold is the root of the smallest domain margin over the data
    points (the model's own ``_margin``), found with brentq (the margins here are linear or quadratic in
    the parameter, so it takes few steps)."""
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return None
    q = dict(p)
    args = (data.l1, data.l2, data.l3, data.I1)

    def g(z):
        q[name] = z
        mg = model._margin(*args, q)
        if mg is None:
            return math.inf
        vals = np.asarray(mg, float).ravel().tolist()  # a handful of points: Python's min is cheaper
        if any(v != v for v in vals):
            return -math.inf
        return min(vals)

    ga, gb = g(lo), g(hi)
    if not (math.isfinite(ga) or math.isfinite(gb)) or (ga > 0) == (gb > 0):
        return None
    ok_a = ga > 0
    if math.isfinite(ga) and math.isfinite(gb):
        zr = brentq(g, lo, hi, xtol=1e-13, rtol=4 * np.finfo(float).eps, maxiter=200)
    else:  # an end where the margin is not finite: bisection on the sign
        z0, z1 = lo, hi
        for _ in range(200):
            zm = 0.5 * (z0 + z1)
            if (g(zm) > 0) == ok_a:
                z0 = zm
            else:
                z1 = zm
            if abs(z1 - z0) <= 1e-13 * max(1.0, abs(z0)):
                break
        zr = 0.5 * (z0 + z1)
    return zr, ("below" if ok_a else "above")


def resolve_names(model: Any, names: Any, what: str) -> Any:
    if names is None:
        return set()
    names = {names} if isinstance(names, str) else set(names)
    unknown = names - set(model.params.names())
    if unknown:
        raise FitError(f"{what}: the {model.title} model has no parameter(s) {sorted(unknown)}; "
                       f"its parameters are {list(model.params.names())}", kind="bad-option")
    return names


class Coord:
    """One free parameter's coordinates.

    ``z`` is the natural coordinate (log v for log-scaled parameters, v/scale otherwise): standard errors
    and intervals are formed in it.  ``x`` is the optimiser's coordinate, with the bounds folded in by the
    smooth one- and two-sided transforms used by MINUIT and lmfit (z = lo − 1 + √(x² + 1), z = lo + (hi −
    lo)(sin x + 1)/2), so the optimiser runs unbounded: bounded trf takes many short reflective steps.
    """

    __slots__ = ("log", "scale", "zlo_decl", "zhi_decl", "zlo", "zhi", "kind")

    def __init__(self, param, start, G0, lo, hi):
        self.log = bool(param.log_scale) and param.bounds[0] > 0
        if self.log:
            self.scale = 1.0
        elif param.unit == "Pa":
            self.scale = G0
        else:
            self.scale = abs(start) if start != 0 else (param.typical[1] - param.typical[0])
        self.zlo_decl = self.z_of_v(lo) if math.isfinite(lo) and (lo > 0 or not self.log) else -math.inf
        self.zhi_decl = self.z_of_v(hi) if math.isfinite(hi) else math.inf
        self.zlo, self.zhi = self.zlo_decl, self.zhi_decl
        lo_ok, hi_ok = math.isfinite(self.zlo), math.isfinite(self.zhi)
        self.kind = "both" if lo_ok and hi_ok else "lower" if lo_ok else "upper" if hi_ok else "none"

    def z_of_v(self, v: float) -> float:
        return math.log(v) if self.log else v / self.scale

    def v_of_z(self, z: float) -> float:
        return math.exp(min(z, 700.0)) if self.log else z * self.scale

    def dv_dz(self, v: float) -> float:
        return v if self.log else self.scale

    def z_of_x(self, x: float) -> float:
        if self.kind == "both":
            return self.zlo + (self.zhi - self.zlo) * (math.sin(x) + 1.0) / 2.0
        if self.kind == "lower":
            return self.zlo - 1.0 + math.sqrt(x * x + 1.0)
        if self.kind == "upper":
            return self.zhi + 1.0 - math.sqrt(x * x + 1.0)
        return x

    def x_of_v(self, v: float) -> float:
        """Optimiser coordinate of a start value, nudged off a bound (the transforms are flat there)."""
        z = self.z_of_v(v)
        if self.kind == "both":
            w = self.zhi - self.zlo
            u = min(max(2.0 * (z - self.zlo) / w - 1.0, -1.0 + 1e-6), 1.0 - 1e-6)
            return math.asin(u)
        if self.kind == "lower":
            return math.sqrt((max(z - self.zlo, 1e-3) + 1.0) ** 2 - 1.0)
        if self.kind == "upper":
            return math.sqrt((max(self.zhi - z, 1e-3) + 1.0) ** 2 - 1.0)
        return z

    def v_of_x(self, x: float) -> float:
        return self.v_of_z(self.z_of_x(x))


@dataclass(kw_only=True)
class Problem:
    """Everything the solver and the uncertainty step need, set up once per fit."""

    model: Any
    curves: list
    data: Data
    residual: str
    free_names: list[str]
    start: dict  # user start values
    G0: float
    p0: dict  # start parameter set (defaults, model guess, user start and fixed values)
    lb: dict
    ub: dict
    locks: dict  # name -> (threshold, valid side)
    weight: np.ndarray | None = None
    wd: np.ndarray | None = None
    notices: list = field(default_factory=list)

    @property
    def n(self) -> int:
        return int(self.data.lam.size)

    @property
    def k(self) -> int:
        return len(self.free_names)


def set_up(m, curves, *, residual, free, fixed, start) -> Problem:
    """Check the options, prepare the data, find start values and the lock-aware bounds."""
    if residual not in ("absolute", "relative"):
        raise FitError(f"residual must be 'absolute' or 'relative', not {residual!r}", kind="bad-option")
    for c in curves:
        m._require_mode(c.mode)
    data = Data(curves)
    fixed = dict(fixed or {})
    start = dict(start or {})
    freed = resolve_names(m, free, "free")
    resolve_names(m, set(fixed), "fixed")
    resolve_names(m, set(start), "start")
    fixed_names = {q.name for q in m.params if q.held and q.name not in freed} | set(fixed)
    free_names = [q.name for q in m.params if q.name not in fixed_names]
    if not free_names:
        raise FitError("every parameter is fixed: free at least one to fit", kind="bad-option")
    G0 = modulus_from_data(data, curves)
    if G0 > 1e9:  # past every model's modulus domain: say which unit mix-up would explain it (issue #20)
        why = "; ".join(str(n) for n in unit_plausibility(curves, G0, estimate_modulus))
        raise FitError(f"the curves' small-strain modulus is {G0 / 1e6:.4g} MPa, far beyond any rubber: {why}",
                       kind="bad-input")
    try:
        p0 = m.resolve({**m.params.defaults(), **m.guess(G0), **start, **fixed})
    except ValueError as exc:
        raise FitError(f"start values rejected: {exc}", kind="bad-option") from None
    pr = Problem(model=m, curves=curves, data=data, residual=residual, free_names=free_names, start=start, G0=G0, p0=p0,
                 lb={q.name: q.bounds[0] for q in m.params}, ub={q.name: q.bounds[1] for q in m.params}, locks={})
    _lock_bounds(pr)
    _drop_points_past_lock(pr)
    n, k = pr.n, pr.k
    if n <= k:
        raise FitError(f"{n} data point(s) cannot determine {k} parameter(s): give more points or fix parameters",
                       kind="too-few-points")
    _weights(pr)
    return pr


def _lock_bounds(pr: Problem):
    """Bound each locking parameter so every data point stays inside the lock (no NaN during the fit)."""
    m, ext = pr.model, pr.data.subset(pr.data.extremes())  # the domain is set by the extreme stretches
    for name in pr.free_names:
        q = m.params[name]
        t = lock_threshold(m, ext, pr.p0, name, q.bounds[0], q.bounds[1])
        if t is None:
            continue
        thr, side = t
        pr.locks[name] = t
        if side == "above":
            pr.lb[name] = max(pr.lb[name], thr * (1 + 1e-7) if thr > 0 else thr + 1e-12)
        else:
            pr.ub[name] = min(pr.ub[name], thr * (1 - 1e-7) if thr > 0 else thr - 1e-12)


def _drop_points_past_lock(pr: Problem):
    """Points past a lock that no free parameter can move are left out, and a notice says so."""
    if pr.locks:
        return
    keep = inside(pr.model, pr.data, pr.p0)
    if np.all(keep):
        return
    data = pr.data
    nout = int((~keep).sum())
    top = float(data.lam[~keep].min())
    pr.notices.append(Notice(
        f"{nout} data point(s) from λ = {top:.3g} upward lie beyond the locking stretch of the "
        f"{pr.model.title} model with the fixed parameters and were left out of the fit; free the "
        "locking parameter or remove those points", "points-dropped", pr.model.name))
    pr.data = data.subset(keep)
    if pr.data.lam.size == 0:
        raise FitError("every data point lies beyond the model's locking stretch with the fixed parameters",
                       kind="past-lock")


def _weights(pr: Problem):
    data = pr.data
    if pr.residual == "relative":
        floor = np.empty(pr.n)
        for mask in data.masks.values():
            floor[mask] = RELATIVE_FLOOR * np.max(np.abs(data.P[mask]))
        pr.weight = 1.0 / np.maximum(np.abs(data.P), np.maximum(floor, 1e-300))
    else:
        pr.weight = np.full(pr.n, 1.0 / pr.G0)
    pr.wd = data.P * pr.weight
