"""High-precision references for the tests (mpmath), independent of the code under test."""

from __future__ import annotations

import math
from fractions import Fraction

import mpmath as mp


def mp_inverse_langevin(y: float) -> float:
    """L⁻¹(y) by mpmath root finding with enough working digits to survive the cancellation in
    coth(x) − 1/x at small x (about 2·|log10 y| extra digits)."""
    if y == 0:
        return 0.0
    a = abs(y)
    extra = int(max(0.0, -2.0 * math.log10(a))) + 10
    with mp.workdps(40 + extra):
        t = mp.mpf(a)
        x0 = 1 / (1 - t) if a > 0.8 else 3 * t
        x = mp.findroot(lambda x: mp.coth(x) - 1 / x - t, x0)
        return math.copysign(float(x), y)


def mp_langevin(x: float) -> float:
    with mp.workdps(60):
        X = mp.mpf(x)
        return float(mp.coth(X) - 1 / X) if x != 0 else 0.0


def langevin_series_coefficients(n_terms: int) -> list[Fraction]:
    """Odd Taylor coefficients a_k of L(x) = Σ a_k x^(2k+1), from the Bernoulli-number series of
    coth x − 1/x = Σ_{n≥1} 2^(2n) B_(2n) x^(2n−1)/(2n)!  (Abramowitz & Stegun 4.5.67)."""
    out = []
    for n in range(1, n_terms + 1):
        b = Fraction(mp.bernfrac(2 * n)[0], mp.bernfrac(2 * n)[1])
        out.append(Fraction(2 ** (2 * n)) * b / math.factorial(2 * n))
    return out


def revert_odd_series(a: list[Fraction]) -> list[Fraction]:
    """Series reversion: given y = Σ a_k x^(2k+1) (a_0 ≠ 0), return c with x = Σ c_k y^(2k+1),
    by solving order by order with exact rationals."""
    n = len(a)
    deg = 2 * n - 1

    def mul(p, q):
        r = [Fraction(0)] * (deg + 1)
        for i, pi in enumerate(p):
            if pi == 0:
                continue
            for j, qj in enumerate(q):
                if i + j > deg:
                    break
                r[i + j] += pi * qj
        return r

    c = [Fraction(0)] * n
    for k in range(n):
        # x(y) truncated with unknown c_k set to 0, then fix c_k from the coefficient of y^(2k+1)
        x = [Fraction(0)] * (deg + 1)
        for i, ci in enumerate(c):
            x[2 * i + 1] = ci
        comp = [Fraction(0)] * (deg + 1)
        power = x[:]
        x2 = mul(x, x)
        for ai in a:
            comp = [u + ai * v for u, v in zip(comp, power, strict=True)]
            power = mul(power, x2)
        target = Fraction(1) if k == 0 else Fraction(0)
        c[k] = (target - comp[2 * k + 1]) / a[0] if k > 0 else 1 / a[0]
    return c
