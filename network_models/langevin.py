"""Langevin function and its inverse, vectorised and accurate to machine level.

``langevin(x) = coth(x) - 1/x`` is the mean extension of a freely jointed chain under a reduced force
``x``; ``inverse_langevin(y)`` returns the reduced force that holds a chain at fractional extension
``y = r / (N b)``.  Non-Gaussian network models (eight-chain, three-chain) call the inverse on every
stretch, so it has to be both exact and cheap.

Method of ``inverse_langevin``
------------------------------
1. Short calls (up to 2048 values, as in a fit): start from a table — h(y) = L⁻¹(y)(1 - y)/y is smooth
   and bounded, so linear interpolation (np.interp) on 1025 nodes gives x₀ = y·h(y)/(1 - y) to 4e-7,
   exact as y -> 1 — then one Halley step (cubic convergence: below 1e-16).  The nodes are computed once
   at import by the long-array method below.
2. Long arrays, in cache-sized blocks: Jedynak's (2015) rational start (1.5 %, exact as y -> 1 because
   its pole 1/(1 - y) is the asymptote of L⁻¹), one Halley step and one Newton step.
   In both, the residual ``L(x) - y`` is formed as ``(coth x - 1) - 1/x + (1 - y)`` with ``1 - y``
   exact, so it keeps its relative accuracy as y -> 1 (down to 1 - y = 1e-12 and beyond).
3. ``|y| < 0.1``: that residual loses digits to cancellation, so these points are overwritten with the
   Maclaurin series of L⁻¹ to y¹⁵ (truncation error below 3e-16 relative at y = 0.1).

Everything runs in place on a few cache-sized work arrays.

The accuracy promise (<= 1e-13 relative for |y| <= 1 - 1e-12) is checked against mpmath in
``tests/test_langevin.py``; throughput against Cohen's rounded Padé is measured in ``benchmarks/``.

Edge values: ``|y| == 1`` gives ``±inf`` (a chain at full extension needs infinite force);
``|y| > 1`` and NaN give NaN.  No floating-point warnings are emitted.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

__all__ = ["langevin", "inverse_langevin", "inverse_langevin_scalar", "langevin_derivative", "LINV_SERIES"]

# Maclaurin coefficients of L^{-1}(y) = sum c_k y^(2k+1) (exact rationals, checked in tests against
# mpmath's series reversion of L(x) = x/3 - x^3/45 + 2x^5/945 - ...).
LINV_SERIES = (
    3.0,
    9.0 / 5.0,
    297.0 / 175.0,
    1539.0 / 875.0,
    126117.0 / 67375.0,
    43733439.0 / 21896875.0,
    231321177.0 / 109484375.0,
    20495009043.0 / 9306171875.0,
)

# Taylor coefficients of L(x)/x in x²: 2^(2n) B_(2n) / (2n)!  (Bernoulli numbers; checked in tests).
# Used for |x| < 0.5, where 11 terms leave a truncation error below 1e-18 relative.
_L_SERIES = (
    1.0 / 3.0,
    -1.0 / 45.0,
    2.0 / 945.0,
    -1.0 / 4725.0,
    2.0 / 93555.0,
    -1382.0 / 638512875.0,
    4.0 / 18243225.0,
    -3617.0 / 162820783125.0,
    87734.0 / 38979295480125.0,
    -349222.0 / 1531329465290625.0,
    310732.0 / 13447856940643125.0,
)

_SMALL_Y = 0.1
_SMALL_X = 0.5


def _horner(coeffs, z):
    out = np.full_like(z, coeffs[-1])
    for c in coeffs[-2::-1]:
        out *= z
        out += c
    return out


def langevin(x: Any) -> Any:
    """L(x) = coth(x) - 1/x, odd, accurate near 0 (series) and for large |x|."""
    x = np.asarray(x, dtype=np.float64)
    scalar = x.ndim == 0
    x = np.atleast_1d(x)
    ax = np.abs(x)
    out = np.empty_like(ax)
    with np.errstate(all="ignore"):
        small = ax < _SMALL_X
        big = ~small
        xb = ax[big]
        e = np.exp(-2.0 * xb)
        out[big] = (1.0 + e) / (-np.expm1(-2.0 * xb)) - 1.0 / xb
        out[np.isinf(ax)] = 1.0
        xs = ax[small]
        out[small] = xs * _horner(_L_SERIES, xs * xs)
    out = np.copysign(out, x)
    return out[0] if scalar else out


def langevin_derivative(x: Any) -> np.ndarray:
    """dL/dx = 1/x² - 1/sinh²(x); equals 1/3 at x = 0."""
    x = np.asarray(x, dtype=np.float64)
    ax = np.abs(x)
    with np.errstate(all="ignore"):
        e = np.exp(-2.0 * ax)
        d = -np.expm1(-2.0 * ax)
        big = 1.0 / (ax * ax) - 4.0 * e / (d * d)
        z = ax * ax
        # series of L'(x): 1/3 - x^2/15 + 2x^4/189 - x^6/675 + 2x^8/10395
        small = 1.0 / 3.0 + z * (-1.0 / 15.0 + z * (2.0 / 189.0 + z * (-1.0 / 675.0 + z * 2.0 / 10395.0)))
    return np.where(ax < 0.02, small, big)


def _refine(x, t, work, halley):
    """One Newton (or Halley) step for L(x) = y, in place on ``x`` (x > 0, t = 1 - y computed exactly).

    With q = e/(1 - e), e = exp(-2x):  coth x - 1 = 2q,  1/sinh²x = 4q(1 + q),
    L(x) - y = 2q - 1/x + t,  L'(x) = 1/x² - 4q(1 + q),  L''(x)/2 = (1 + 2q)·4q(1 + q) - 1/x³.

    ``work`` is a (5, n) array reused by every step: fresh 8 MB temporaries cost more in page faults
    than the arithmetic.  ``exp(-2x)`` is taken at min(x, 40): beyond that e < 2e-35 and would only
    bring slow subnormal arithmetic; the error this leaves in x is below 1e-22 relative.
    """
    q, tmp, s, r, d1 = work
    np.minimum(x, 40.0, out=q)
    q *= -2.0
    np.exp(q, out=q)
    np.subtract(1.0, q, out=tmp)  # 1 - e: no cancellation for x >= 0.1, where the result is kept
    q /= tmp  # q = e / (1 - e)
    np.divide(1.0, x, out=s)
    np.multiply(q, 2.0, out=r)
    r -= s
    r += t  # residual L(x) - y
    np.add(q, 1.0, out=tmp)
    tmp *= q
    tmp *= 4.0  # 1/sinh²x
    np.multiply(s, s, out=d1)
    d1 -= tmp  # L'(x)
    if halley:
        q *= 2.0
        q += 1.0
        q *= tmp  # coth x / sinh²x
        np.multiply(s, s, out=tmp)
        tmp *= s
        q -= tmp  # L''(x) / 2
        q *= r
        np.multiply(d1, d1, out=tmp)
        tmp -= q  # L'² - r L''/2
        r *= d1
        r /= tmp
    else:
        r /= d1
    x -= r
    return x


_CHUNK = 8192  # elements per block: the work arrays (8 x 64 KiB) stay in the L2 cache

# Start table: h(y) = L⁻¹(y)(1 − y)/y is smooth and bounded (3 at y = 0, 1 at y = 1), so linear
# interpolation on 1025 nodes gives x₀ = y·h(y)/(1 − y) within 4e-7 relative everywhere, and one Halley
# step (cubic convergence) takes that below 1e-16.  The nodes are computed at import with Jedynak's start
# and two corrections (Halley, then Newton), which are exact to ~1e-15 on their own.
_TABLE_K = 1024


def _jedynak_start(a, t, x, den):
    """Jedynak (2015): y(3 − 2.6y + 0.7y²)/((1 − y)(1 + 0.1y)), 1.5 % error, exact as y → 1; in place."""
    np.multiply(a, 0.7, out=x)
    x -= 2.6
    x *= a
    x += 3.0
    x *= a
    np.multiply(a, 0.1, out=den)
    den += 1.0
    den *= t
    x /= den


def _build_start_table():
    a = np.linspace(0.0, 1.0, _TABLE_K + 1)[1:-1]
    t = 1.0 - a
    x = np.empty_like(a)
    _jedynak_start(a, t, x, np.empty_like(a))
    work = np.empty((5, a.size))
    with np.errstate(all="ignore"):
        _refine(x, t, work, halley=True)
        _refine(x, t, work, halley=False)
    h = np.empty(_TABLE_K + 2)
    h[0] = 3.0
    h[1:-2] = x * t / a
    h[-2] = 1.0
    h[-1] = 1.0  # guard node
    return h


_H = _build_start_table()
_GRID = np.linspace(0.0, 1.0, _TABLE_K + 1)
_INTERP_MAX = 2048


def _inverse_block(a, out, work):
    """L⁻¹ of a block of |y| values (0 <= a, no NaN handling) written into ``out``."""
    n = a.size
    w = work[:, :n]
    t = w[5]
    x = out
    np.subtract(1.0, a, out=t)  # exact (Sterbenz) for a >= 0.5, where it matters
    if n <= _INTERP_MAX:
        # short calls (a fit's ~60 values): per-call overhead dominates, so start from the table by one
        # np.interp call (4e-7) and take one Halley step
        x[:] = np.interp(a, _GRID, _H[:-1])
        x *= a
        x /= t
        _refine(x, t, w[:5], halley=True)
    else:
        # long arrays: arithmetic dominates, and Jedynak's rational start with a Halley and a Newton step
        # streams through the cache faster than a table lookup with one Halley step
        _jedynak_start(a, t, x, w[6])
        _refine(x, t, w[:5], halley=True)
        _refine(x, t, w[:5], halley=False)


def inverse_langevin(y: Any) -> Any:
    """Inverse Langevin function, vectorised float64, relative error <= 1e-13 for |y| <= 1 - 1e-12.

    ``|y| == 1`` returns ±inf, ``|y| > 1`` or NaN returns NaN; never warns.
    """
    y = np.asarray(y, dtype=np.float64)
    scalar = y.ndim == 0
    flat = np.ravel(y)
    a = np.abs(flat)
    out = np.empty_like(a)
    with np.errstate(all="ignore"):
        work = np.empty((7, min(_CHUNK, a.size)))
        for i in range(0, a.size, _CHUNK):
            _inverse_block(a[i : i + _CHUNK], out[i : i + _CHUNK], work)

        # Small |y|: the residual above loses digits to cancellation; the series is exact there.
        idx = np.flatnonzero(a < _SMALL_Y)
        if idx.size:
            ys = a[idx]
            out[idx] = ys * _horner(LINV_SERIES, ys * ys)
        # |y| >= 1: infinite force at full extension, undefined beyond; NaN stays NaN.
        bad = ~(a < 1.0)
        if bad.any():
            out[bad] = np.where(a[bad] == 1.0, np.inf, np.nan)
    np.copysign(out, flat, out=out)
    return out[0] if scalar else out.reshape(y.shape)


def inverse_langevin_scalar(y: float) -> float:
    """L⁻¹(y) for one Python float in [0, 1), without numpy's per-call overhead (a network maps to the chain
    models once per slider move): the Maclaurin series below 0.1, else Cohen's start and Newton steps on the
    residual (coth x − 1) − 1/x + (1 − y), which keeps its relative accuracy as y → 1."""
    y = float(y)
    if not (0.0 <= y < 1.0):  # same edges as inverse_langevin: ±1 → ±inf, beyond and NaN → NaN, odd function
        if abs(y) == 1.0:
            return math.copysign(math.inf, y)
        return -inverse_langevin_scalar(-y) if -1.0 < y < 0.0 else math.nan
    if y < 0.1:
        yy = y * y
        acc = 0.0
        for c in reversed(LINV_SERIES):
            acc = acc * yy + c
        return y * acc
    x = y * (3.0 - y * y) / (1.0 - y * y)
    one_minus_y = 1.0 - y
    for _ in range(20):
        e = math.exp(-2.0 * x)
        coth_m1 = 2.0 * e / (1.0 - e)
        r = coth_m1 - 1.0 / x + one_minus_y
        dL = 1.0 / (x * x) - 4.0 * e / ((1.0 - e) * (1.0 - e))  # L'(x) = 1/x² − 1/sinh²x
        step = r / dL
        x -= step
        if abs(step) <= 1e-16 * x:
            break
    return x
