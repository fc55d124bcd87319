"""The naive reference fitter: what a careful engineer would write in an afternoon.

* L⁻¹ by ``scipy.optimize.brentq`` per point (``bench_langevin.brentq_inverse_langevin``);
* nominal stress per point in a Python loop, straight from the published strain-energy functions:
  eight-chain (Arruda & Boyce 1993, J. Mech. Phys. Solids 41:389) and extended tube (Kaliske &
  Heinrich 1999, Rubber Chem. Technol. 72:602), with the stress P₁ = (λ₁∂W/∂λ₁ − λ₃∂W/∂λ₃)/λ₁ for
  incompressible homogeneous tests with direction 3 stress-free;
* ``scipy.optimize.curve_fit`` (Levenberg–Marquardt by finite differences) on all curves at once.

None of this imports netstretch's models: it is the independent slow path the fast fitter is timed and
checked against.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import curve_fit

from .bench_langevin import brentq_inverse_langevin


def stretches(mode: str, lam: float) -> tuple[float, float, float]:
    if mode == "uniaxial":
        return lam, 1.0 / math.sqrt(lam), 1.0 / math.sqrt(lam)
    if mode == "equibiaxial":
        return lam, lam, 1.0 / (lam * lam)
    if mode == "planar":
        return lam, 1.0, 1.0 / lam
    raise ValueError(f"unknown mode {mode!r}")


def eight_chain_point(mode: str, lam: float, mu: float, N: float) -> float:
    """Nominal stress, Pa.  W = μN[(λ_ch/√N)β + ln(β/sinh β)] ⇒ ∂W/∂I₁ = (μ/6)(√N/λ_ch)β."""
    l1, l2, l3 = stretches(mode, lam)
    I1 = l1 * l1 + l2 * l2 + l3 * l3
    lch = math.sqrt(I1 / 3.0)
    r = lch / math.sqrt(N)
    if not r < 1.0:
        return math.nan
    beta = brentq_inverse_langevin(r)
    W1 = mu / 6.0 * math.sqrt(N) / lch * beta
    return 2.0 * W1 * (l1 * l1 - l3 * l3) / l1


def extended_tube_point(mode: str, lam: float, Gc: float, Ge: float, delta: float, beta: float) -> float:
    """Nominal stress, Pa.  W = (G_c/2)[(1−δ²)(I₁−3)/(1−δ²(I₁−3)) + ln(1−δ²(I₁−3))] + (2G_e/β²)Σ(λᵢ^−β − 1)."""
    l1, l2, l3 = stretches(mode, lam)
    I1 = l1 * l1 + l2 * l2 + l3 * l3
    d2 = delta * delta
    u = 1.0 - d2 * (I1 - 3.0)
    if not u > 0.0:
        return math.nan
    W1 = 0.5 * Gc * ((1.0 - d2) / (u * u) - d2 / u)
    dw1 = -(2.0 * Ge / beta) * l1 ** (-beta - 1.0)
    dw3 = -(2.0 * Ge / beta) * l3 ** (-beta - 1.0)
    return (2.0 * W1 * (l1 * l1 - l3 * l3) + l1 * dw1 - l3 * dw3) / l1


NAIVE_MODELS = {
    # name: (point function, fitted parameter names, held parameters)
    "eight-chain": (eight_chain_point, ("mu", "N"), {}),
    "extended-tube": (extended_tube_point, ("Gc", "Ge", "delta"), {"beta": 0.2}),
}


def naive_stress(model: str, modes, lam, params: dict) -> np.ndarray:
    """Stress of ``model`` at each (mode, λ) pair, one point at a time."""
    fn, names, held = NAIVE_MODELS[model]
    args = [params[k] for k in names] + [params.get(k, v) for k, v in held.items()]
    return np.array([fn(m, float(x), *args) for m, x in zip(modes, lam, strict=True)])


def naive_fit(model: str, curves, p0: dict, bounds: dict, relative: bool = False, tol: float = 1e-12):
    """Least-squares fit of ``model`` to all ``curves`` at once with ``curve_fit``.

    ``curves``: iterable of (mode, λ array, nominal stress array in Pa).  ``relative``: weight each
    residual by 1/|stress| (relative residuals) instead of plain stress residuals.
    Returns (params dict, sum of squared residuals, number of model evaluations).
    """
    _, names, held = NAIVE_MODELS[model]
    modes, lam, y = [], [], []
    for mode, la, st in curves:
        la = np.asarray(la, dtype=float)
        modes += [str(getattr(mode, "value", mode))] * la.size
        lam.append(la)
        y.append(np.asarray(st, dtype=float))
    lam, y = np.concatenate(lam), np.concatenate(y)
    calls = [0]
    # A stress of NaN (past the lock) is turned into a huge value so the optimiser backs away.
    big = 1e3 * float(np.max(np.abs(y)))

    def f(_x, *theta):
        calls[0] += 1
        p = dict(zip(names, theta, strict=True), **held)
        s = naive_stress(model, modes, lam, p)
        return np.where(np.isfinite(s), s, big)

    sigma = np.abs(y) if relative else None
    lo = [bounds[k][0] for k in names]
    hi = [bounds[k][1] for k in names]
    x0 = [min(max(p0[k], lo[i]), hi[i]) for i, k in enumerate(names)]
    popt, _ = curve_fit(f, np.arange(y.size), y, p0=x0, sigma=sigma, bounds=(lo, hi),
                        xtol=tol, ftol=tol, gtol=tol, max_nfev=20000)
    p = dict(zip(names, (float(v) for v in popt), strict=True), **held)
    r = f(None, *popt) - y
    if relative:
        r = r / np.abs(y)
    return p, float(np.sum(r * r)), calls[0]
