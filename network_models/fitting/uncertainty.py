"""Uncertainty of a fit, linearised: covariance from the full Jacobian at the optimum, Student-t intervals,
and THE one delta method (:func:`derived`) every other module uses for a quantity computed from a fit.

Covariance in the natural coordinates z (log for ``log_scale`` parameters, value/scale otherwise):
cov_z = (JᵀJ)⁻¹ s², s² = RSS/(n − k), from the SVD of J (singular J ⇒ no covariance); 95 % intervals
t·se with Student's t at n − k degrees of freedom (``constants.t_quantile``).  For log-scaled parameters
the interval is formed on the log scale (asymmetric, always positive); their ``stderr`` is the
delta-method value in SI units.
"""

from __future__ import annotations

import math

import numpy as np

from ..constants import t_quantile
from .result import ParamEstimate


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


def covariance(pj, u_hat, values, Pm, rss):
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
            out[q.name] = ParamEstimate(q.name, v, None, (None, None), q.unit, True, **kw)
            continue
        i = names.index(q.name)
        sz = float(se_z[i])
        if not math.isfinite(sz):
            out[q.name] = ParamEstimate(q.name, v, None, (None, None), q.unit, False, **kw)
            continue
        c = pj.co[i]
        if c.log:
            ci = (_exp(z[i] - tq * sz), _exp(z[i] + tq * sz))
        else:
            ci = (v - tq * sz * c.scale, v + tq * sz * c.scale)
        out[q.name] = ParamEstimate(q.name, v, float(sz * abs(c.dv_dz(v))), (float(ci[0]), float(ci[1])),
                                    q.unit, False, **kw)
    return out


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


def derived(result, fn, *, level: float = 0.95):
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


__all__ = ["covariance", "derived", "estimates"]
