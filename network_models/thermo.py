"""Temperature: force at fixed length, the thermoelastic inversion and the energetic part of the force.

At a fixed network the modulus of an entropic network is proportional to absolute temperature, so the
force at fixed length is too (Meyer & Ferri 1935, Helv. Chim. Acta 18:570).  With thermal expansion the
unstretched length grows with temperature, the stretch at a clamped length falls, and at small strains
the force falls with temperature: the thermoelastic inversion.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


def force_at_fixed_length(T, clamp_stretch, modulus_ref, T_ref, area_ref=1.0, expansion=0.0):
    """Uniaxial force at a clamped length (Gaussian network), N (or Pa·m² units of ``area_ref``).

    ``clamp_stretch`` is the clamped length over the unstretched length at ``T_ref``; ``expansion`` the
    volume expansion coefficient β (1/K).  With s = 1 + β(T − T_ref) the unstretched length L_i grows as
    s^(1/3) and the stretch falls to λ = Λ/s^(1/3).  An ideal network (no energetic part, so the free-chain
    size ⟨r²⟩₀ does not change with T) gives F = (νkT/V)(⟨r²⟩_i/⟨r²⟩₀)(V/L_i)(λ − λ⁻²) ∝ T·L_i·(λ − λ⁻²)
    (Flory, Principles of Polymer Chemistry, ch. XI), so F = G_ref (T/T_ref) A_ref s^(1/3) (λ − λ⁻²).
    β = 0 gives F ∝ T; for β > 0, −T·d ln(F/T)/dT = βT/(λ³ − 1), the constant-pressure term that
    :func:`energetic_fraction` removes.
    """
    T = np.asarray(T, dtype=np.float64)
    s = 1.0 + expansion * (T - T_ref)
    lam = clamp_stretch / np.cbrt(s)
    return modulus_ref * (T / T_ref) * area_ref * np.cbrt(s) * (lam - lam**-2)


def inversion_strain(T, expansion):
    """Clamped strain at which dF/dT = 0 at temperature T: λ³ − 1 = βT for the ideal network above, so
    ε ≈ βT/3 at small strain [derived]."""
    from scipy.optimize import brentq

    def slope(eps):
        h = 1e-3
        f = force_at_fixed_length
        return f(T + h, 1 + eps, 1.0, T, expansion=expansion) - f(T - h, 1 + eps, 1.0, T, expansion=expansion)

    if expansion <= 0:
        return 0.0
    return brentq(slope, 1e-6, 1.0)


@dataclass(frozen=True)
class EnergeticFraction:
    value: float
    stderr: float
    slope: float  # d ln(F/T)/dT, 1/K
    stretch: float
    method: str
    n_points: int

    def as_dict(self):
        return dict(self.__dict__)


def energetic_fraction(T, force, stretch, expansion=0.0):
    """f_e/f from a force–temperature record at constant length and pressure.

    f_e/f = −T·d ln(F/T)/dT − βT/(λ³ − 1)  (Flory, Ciferri & Hoeve 1960 [memory]), evaluated at the mean
    temperature; the slope comes from a straight-line fit of ln(F/T) on T, with its standard error.
    """
    T = np.asarray(T, dtype=np.float64)
    F = np.asarray(force, dtype=np.float64)
    if T.shape != F.shape or T.size < 3:
        raise ValueError("need at least three (temperature, force) pairs of equal length")
    if np.any(T <= 0) or np.any(F <= 0):
        raise ValueError("temperatures must be absolute (K, > 0) and forces positive (tension)")
    if not stretch > 1.0:
        raise ValueError("the force–temperature analysis needs a stretched sample (λ > 1)")
    y = np.log(F / T)
    A = np.vstack([T - T.mean(), np.ones_like(T)]).T
    coef, res, *_ = np.linalg.lstsq(A, y, rcond=None)
    slope = coef[0]
    dof = max(T.size - 2, 1)
    resid = y - A @ coef
    s2 = float(resid @ resid) / dof
    se = np.sqrt(s2 / np.sum((T - T.mean()) ** 2))
    Tm = T.mean()
    corr = expansion * Tm / (stretch**3 - 1.0)
    value = -Tm * slope - corr
    return EnergeticFraction(float(value), float(Tm * se), float(slope), float(stretch),
                             "constant pressure, Flory–Ciferri–Hoeve correction" if expansion else
                             "constant volume (no expansion correction)", int(T.size))
