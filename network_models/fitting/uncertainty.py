"""Uncertainty of a fit, linearised: covariance from the full Jacobian at the optimum, Student-t intervals,
and THE one delta method (:func:`derived`) every other module uses for a quantity computed from a fit.

Covariance in the natural coordinates z (log for ``log_scale`` parameters, value/scale otherwise):
cov_z = (JᵀJ)⁻¹ s², s² = RSS/(n − k), from the SVD of J (singular J ⇒ no covariance); 95 % intervals
t·se with Student's t at n − k degrees of freedom (``constants.t_quantile``).  For log-scaled parameters
the interval is formed on the log scale (asymmetric, always positive); their ``stderr`` is the
delta-method value in SI units.

Intervals respect each parameter's declared domain (``Param.bounds``, the one source of truth): the
interval is formed on a transformed parameter — logit on a bounded domain (lo, hi), log(v − lo) on a
half-open one, the value itself on the whole line — and mapped back, so it can never leave the domain
(a δ or G_e interval never crosses zero).  A parameter is *not determined* (``ci95 = (None, None)``,
``determined = False``) when its interval is unbounded, its ends differ by more than
:data:`DETERMINED_RATIO` (10³×), or it sits on a declared bound.  ``fit(..., intervals="profile")`` gives
profile-likelihood intervals instead (:func:`profile_interval`; docs/methods.md §uncertainty).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import replace
from typing import Any

import numpy as np

from ..constants import t_quantile
from .result import ParamEstimate

#: an interval whose ends differ by more than this factor is "not determined" (issue #20)
DETERMINED_RATIO = 1e3
#: the interval methods ``fit(intervals=...)`` accepts
INTERVAL_METHODS = ("transformed", "profile")


def _to_t(v, lo, hi):
    """The domain transform t(v): logit on (lo, hi), log(v − lo) on (lo, ∞), log(hi − v) on (−∞, hi), v."""
    if math.isfinite(lo) and math.isfinite(hi):
        if not lo < v < hi:
            return math.nan
        return math.log((v - lo) / (hi - v))
    if math.isfinite(lo):
        return math.log(v - lo) if v > lo else math.nan
    if math.isfinite(hi):
        return -math.log(hi - v) if v < hi else math.nan
    return v


def _from_t(t, lo, hi):
    if math.isfinite(lo) and math.isfinite(hi):
        if t >= 0:
            e = math.exp(-min(t, 745.0))
            return (lo * e + hi) / (1.0 + e)
        e = math.exp(max(t, -745.0))
        return (lo + hi * e) / (1.0 + e)
    if math.isfinite(lo):
        return lo + _exp(t)
    if math.isfinite(hi):
        return hi - _exp(-t)
    return t


def _dt_dv(v, lo, hi):
    if math.isfinite(lo) and math.isfinite(hi):
        return (hi - lo) / ((v - lo) * (hi - v))
    if math.isfinite(lo):
        return 1.0 / (v - lo)
    if math.isfinite(hi):
        return 1.0 / (hi - v)
    return 1.0


def is_determined(ci, bounds) -> bool:
    """The rule of issue #20: both ends finite, strictly inside the domain (an end on a domain edge means the
    data do not bound the parameter on that side), and — for a one-signed interval — ends within 10³×."""
    lo, hi = ci
    if lo is None or hi is None or not (math.isfinite(lo) and math.isfinite(hi)):
        return False
    dlo, dhi = bounds
    span = (dhi - dlo) if math.isfinite(dhi - dlo) else max(abs(lo), abs(hi), 1.0)
    tol = 1e-9 * span
    if (math.isfinite(dlo) and lo - dlo <= tol) or (math.isfinite(dhi) and dhi - hi <= tol):
        return False
    if lo > 0 or hi < 0:
        return max(abs(lo), abs(hi)) <= DETERMINED_RATIO * min(abs(lo), abs(hi))
    return True


def domain_interval(v: float, se_v: float, tq: float, bounds: tuple[float, float]
                    ) -> tuple[tuple[float, float] | tuple[None, None], bool]:
    """(ci, determined) of a parameter with value ``v`` and standard error ``se_v`` (SI) on its declared
    ``bounds``: v's interval formed on the transformed parameter t(v) (see the module text), t ± tq·se_t with
    se_t = se_v·|dt/dv|, mapped back.  ``((None, None), False)`` when it is not determined."""
    lo, hi = float(bounds[0]), float(bounds[1])
    t = _to_t(v, lo, hi)
    if not (math.isfinite(t) and se_v is not None and math.isfinite(se_v)):
        return (None, None), False
    st = abs(se_v * _dt_dv(v, lo, hi))
    if not math.isfinite(st):
        return (None, None), False
    ci = (_from_t(t - tq * st, lo, hi), _from_t(t + tq * st, lo, hi))
    if not is_determined(ci, (lo, hi)):
        return (None, None), False
    return (float(ci[0]), float(ci[1])), True


def _exp(x: float) -> float:
    return math.exp(x) if x < 709.0 else math.inf


def _inverse(A):
    """(JᵀJ)⁻¹, or NaN when singular (condition of J over 1e10): closed forms for one and two parameters
    (a LAPACK call costs more than the arithmetic there), the eigen-decomposition otherwise."""
    k = A.shape[0]
    nan = np.full((k, k), np.nan)
    if k == 1:
        a = float(A[0, 0])
        return np.array([[1.0 / a]]) if a > 0 else nan
    if k == 2:
        a, b, d = float(A[0, 0]), float(A[0, 1]), float(A[1, 1])
        tr, det = a + d, a * d - b * b
        hi = tr / 2.0 + math.sqrt(max(tr * tr / 4.0 - det, 0.0))  # the larger eigenvalue
        lo = det / hi if hi > 0 else 0.0  # the smaller one, without cancellation
        if not (hi > 0 and det > 0 and lo > hi * 1e-20):
            return nan
        return np.array([[d, -b], [-b, a]]) / det
    try:
        w, V = np.linalg.eigh(A)
    except np.linalg.LinAlgError:
        return nan
    if w.size and w[-1] > 0 and w[0] > w[-1] * 1e-20:
        return (V / w) @ V.T
    return nan


def covariance(pj: Any, u_hat: np.ndarray, values: dict[str, Any], Pm: np.ndarray, rss: float
               ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(cov_z, se_z, correlation, cov_SI, z) of the free parameters at the optimum."""
    pr = pj.pr
    k = pr.k
    s2 = rss / (pr.n - k)
    names = pr.free_names
    z = np.array([c.z_of_v(values[nm]) for c, nm in zip(pj.co, names, strict=True)])
    J = pj.full_jacobian(u_hat, values, Pm) * pr.weight[:, None]  # full Jacobian at the optimum, in z
    cov_z = np.full((k, k), np.nan)
    if math.isfinite(float(np.sum(J * J))):
        cov_z = _inverse(J.T @ J) * s2
    ok = all(map(math.isfinite, cov_z.ravel().tolist()))
    se_z = np.sqrt(np.clip(np.diag(cov_z), 0, None)) if ok else np.full(k, np.nan)
    with np.errstate(all="ignore"):
        corr = cov_z / np.outer(se_z, se_z)
    D = np.array([c.dv_dz(values[nm]) for c, nm in zip(pj.co, names, strict=True)])
    return cov_z, se_z, corr, cov_z * np.outer(D, D), z


def estimates(pj, values, se_z, z) -> dict[str, ParamEstimate]:
    """One :class:`ParamEstimate` per model parameter (fixed ones without an interval)."""
    pr = pj.pr
    m = pr.model
    names = pr.free_names
    tq = t_quantile(pr.n - pr.k)
    out: dict[str, ParamEstimate] = {}
    for q in m.params:
        v = float(values[q.name])
        kw = dict(symbol=q.symbol, display_unit=q.display_unit, display_scale=q.display_scale, meaning=q.meaning)
        if q.name not in names:
            out[q.name] = ParamEstimate(name=q.name, value=v, stderr=None, ci95=(None, None), unit=q.unit, fixed=True,
                                        **kw)
            continue
        i = names.index(q.name)
        sz = float(se_z[i])
        if not math.isfinite(sz):
            out[q.name] = ParamEstimate(name=q.name, value=v, stderr=None, ci95=(None, None), unit=q.unit,
                                        fixed=False, **kw)
            continue
        c = pj.co[i]
        se_v = float(sz * abs(c.dv_dz(v)))
        ci, ok = domain_interval(v, se_v, tq, q.bounds)
        out[q.name] = ParamEstimate(name=q.name, value=v, stderr=se_v, ci95=ci, unit=q.unit, fixed=False,
                                    determined=ok, **kw)
    return out


def undetermined(est: ParamEstimate) -> ParamEstimate:
    """The same estimate, marked not determined (no interval)."""
    return replace(est, ci95=(None, None), determined=False)


def profile_interval(model: Any, curves: Any, name: str, fit_kw: dict[str, Any], base: Any, *,
                     refit: Callable[..., Any], level: float = 0.95) -> tuple[Any, bool]:
    """Profile-likelihood interval of one free parameter: the set of values v at which the best fit with
    ``name`` held at v has RSS(v) ≤ RSŜ·(1 + t²/(n − k)) (the likelihood-ratio form of the Student-t
    interval; Bates & Watts 1988, *Nonlinear Regression Analysis*, §6.1 [from memory]).  Searched on the
    transformed parameter t(v) of :func:`domain_interval` outwards from the optimum, so every end lies inside
    the domain; an end not found before the domain edge (or 60 steps) means the data do not bound it.
    Returns ``(ci, determined)``; about 20–60 refits per parameter (an option, not the default).  ``refit``
    is :func:`network_models.fitting.core.fit` (passed in: ``core`` imports this module)."""
    from scipy.optimize import brentq

    est = base.params[name]
    q = model.params[name]
    lo, hi = float(q.bounds[0]), float(q.bounds[1])
    t0 = _to_t(est.value, lo, hi)
    if not math.isfinite(t0):
        return (None, None), False
    dof = base.n - base.k
    limit = base.rss * (1.0 + t_quantile(dof, level) ** 2 / dof)
    fixed = dict(fit_kw.get("fixed") or {})

    def excess(t):
        kw = dict(fit_kw, fixed={**fixed, name: _from_t(t, lo, hi)}, intervals="transformed")
        try:
            r = refit(model, curves, **kw)
        except ValueError:
            return math.inf
        return r.rss - limit

    st = est.stderr * _dt_dv(est.value, lo, hi) if est.stderr and math.isfinite(est.stderr) else 0.5
    step = min(max(abs(st), 1e-3), 5.0)
    ends = []
    for sign in (-1.0, 1.0):
        inner, t, found = t0, t0, None
        for _ in range(60):
            t = inner + sign * step
            v = _from_t(t, lo, hi)
            if not (lo < v < hi) or abs(t) > 700:
                break
            e = excess(t)
            if e > 0:
                found = brentq(excess, min(inner, t), max(inner, t), xtol=1e-6) if math.isfinite(e) else t
                break
            inner, step = t, step * 1.6
        if found is None:
            return (None, None), False
        ends.append(_from_t(found, lo, hi))
    ci = (min(ends), max(ends))
    return (ci, True) if is_determined(ci, (lo, hi)) else ((None, None), False)


def derived_se(result, fn) -> tuple[float, float | None]:
    """Value and standard error of a quantity computed from a fit: ``fn(values) -> float`` where ``values``
    is the {name: SI value} dict of the fitted model.  The one delta method of the core: gᵀCg with the fit's
    covariance C and g by central differences (step 1e-6 relative; one-sided where a step leaves a
    parameter's domain).  ``(value, None)`` when the fit has no usable covariance or g cannot be formed."""
    vals = result.values
    v0 = float(fn(vals))
    free = list(result.free)
    cov = np.asarray(result.covariance, float)
    if not free or cov.shape != (len(free), len(free)) or not np.all(np.isfinite(cov)):
        return v0, None
    g = np.empty(len(free))
    for i, name in enumerate(free):
        g[i] = _slope(fn, vals, name, v0)
    if not np.all(np.isfinite(g)):
        return v0, None
    var = float(g @ cov @ g)
    if not (var >= 0 and math.isfinite(var)):
        return v0, None
    return v0, math.sqrt(var)


def derived(result: Any, fn: Callable[..., Any], *, level: float = 0.95
            ) -> tuple[float, tuple[float, float] | None]:
    """Value and interval of a quantity computed from a fit (:func:`derived_se`) with Student's t at n − k
    degrees of freedom.  Returns ``(value, (lo, hi))``, or ``(value, None)`` without a usable covariance."""
    v0, se = derived_se(result, fn)
    if se is None:
        return v0, None
    half = t_quantile(result.n - result.k, level) * se
    return v0, (v0 - half, v0 + half)


def _slope(fn, vals, name, v0):
    h = 1e-6 * max(abs(vals[name]), 1e-12)
    up, dn = dict(vals), dict(vals)
    up[name] += h
    dn[name] -= h
    try:
        f_up = float(fn(up))
    except ValueError:
        f_up = None
    try:
        f_dn = float(fn(dn))
    except ValueError:
        f_dn = None
    if f_up is not None and f_dn is not None:
        return (f_up - f_dn) / (2 * h)
    if f_up is not None:
        return (f_up - v0) / h
    if f_dn is not None:
        return (v0 - f_dn) / h
    return math.nan


__all__ = ["DETERMINED_RATIO", "INTERVAL_METHODS", "covariance", "derived", "domain_interval", "estimates",
           "is_determined", "profile_interval", "undetermined"]
