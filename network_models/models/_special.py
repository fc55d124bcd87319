"""Small numerically careful helpers shared by model families."""

from __future__ import annotations

import numpy as np

from ..langevin import LINV_SERIES, inverse_langevin


def log_x_over_sinh(b) -> np.ndarray:
    """ln(β / sinh β) for β >= 0, without overflow or cancellation."""
    b = np.abs(np.asarray(b, dtype=np.float64))
    with np.errstate(all="ignore"):
        small = b < 1e-3
        bb = b * b
        series = -bb / 6.0 + bb * bb / 180.0
        big = np.log(b) - b - np.log1p(-np.exp(-2.0 * b)) + np.log(2.0)
    return np.where(small, series, big)


# Taylor coefficients of the chain free energy g(r) = rβ + ln(β/sinh β) = ∫₀^r L⁻¹(s) ds (β = L⁻¹(r)) in
# t = r²: g = Σ_k c_k t^(k+1) with c_k = a_k/(2k + 2), a_k the Maclaurin coefficients of L⁻¹ (the first five
# are Arruda & Boyce 1993, eq. 21, written in I₁ = 3Nt; the rest by series reversion, checked in tests).
_LINV10 = LINV_SERIES + (1073585186448381.0 / 476522530859375.0, 4387445039583.0 / 1944989921875.0)
CHAIN_ENERGY_SERIES = tuple(a / (2 * k + 2) for k, a in enumerate(_LINV10))

#: largest t = r² at which the series is used (truncation error below 1e-14 relative there)
CHAIN_SERIES_MAX_T = 0.05


def chain_energy_difference(d, t0) -> np.ndarray:
    """g(√t) − g(√t0) with t = t0 + d, as Σ_k c_k (t^(k+1) − t0^(k+1)) with every difference written as
    d·Σ_j t^j t0^(k−j): no cancellation between two nearly equal energies (large N, small strain).
    Accurate for t, t0 ≤ :data:`CHAIN_SERIES_MAX_T`."""
    d = np.asarray(d, dtype=np.float64)
    t = t0 + d
    s = np.ones_like(t)  # S_k = Σ_{j=0}^{k} t^j t0^(k−j)
    p0 = 1.0
    total = CHAIN_ENERGY_SERIES[0] * s
    for c in CHAIN_ENERGY_SERIES[1:]:
        p0 *= t0
        s = t * s + p0
        total = total + c * s
    return d * total


def chain_energy(r, r0) -> np.ndarray:
    """N-free chain energy difference g(r) − g(r0), exact form (ln(β/sinh β) without overflow)."""
    def g(x):
        beta = inverse_langevin(x)
        return x * beta + log_x_over_sinh(beta)

    return g(np.asarray(r, dtype=np.float64)) - g(np.array([r0]))[0]
