"""Temperature: force at fixed length, the thermoelastic inversion and the energetic part of the force.

At a fixed network the modulus of an entropic network is proportional to absolute temperature, so the
force at fixed length is too (Meyer & Ferri 1935, Helv. Chim. Acta 18:570).  With thermal expansion the
unstretched length grows with temperature, the stretch at a clamped length falls, and at small strains
the force falls with temperature: the thermoelastic inversion.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from .errors import Notice


def _check_temperatures(T, T_ref, allow_zero=True):
    """Absolute temperatures: T ≥ 0 K (0 K allowed where the force line is drawn down to absolute zero,
    ``allow_zero``), the reference T_ref > 0 K."""
    bad = (T < 0) if allow_zero else (T <= 0)
    if not np.all(np.isfinite(T)) or np.any(bad):
        raise ValueError("temperatures must be absolute, in kelvin " + ("≥ 0 K" if allow_zero else "above 0 K")
                         + "; convert °C by adding 273.15")
    if not (math.isfinite(T_ref) and T_ref > 0):
        raise ValueError(f"the reference temperature must be absolute, in kelvin above 0 K; got {T_ref!r} "
                         "(a reference of 0 would divide by zero: give e.g. 296.15 for 23 °C)")


def force_at_fixed_length(T: Any, clamp_stretch: Any, modulus_ref: float, T_ref: float, area_ref: float = 1.0,
                          expansion: float = 0.0, energetic_fraction: float = 0.0) -> Any:
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
    _check_temperatures(T, T_ref)
    if not (np.isfinite(clamp_stretch) and clamp_stretch > 0):
        raise ValueError(f"clamped stretch must be a positive number; got {clamp_stretch!r}")
    s = 1.0 + expansion * (T - T_ref)
    lam = clamp_stretch / np.cbrt(s)
    fe = float(energetic_fraction)
    if not (math.isfinite(fe) and -1.0 < fe < 1.0):
        raise ValueError(f"the energetic fraction f_e/f must lie between −1 and 1; got {energetic_fraction!r}")
    # modulus: the entropic share (1 − f_e/f) grows with T, the energetic share f_e/f does not (at T_ref)
    return modulus_ref * ((1.0 - fe) * T / T_ref + fe) * area_ref * np.cbrt(s) * (lam - lam**-2)


def inversion_strain(T: float, expansion: float, energetic_fraction: float = 0.0) -> float:
    """Clamped strain at which dF/dT = 0 at temperature T: λ³ − 1 = βT for the ideal network above, so
    ε ≈ βT/3 = β_lin·T at small strain [derived].  With an energetic share f_e/f of the force (known from a
    force–temperature record, ``energetic_fraction``) only the entropic part grows with T and the inversion
    moves out: ε_inv ≈ β_lin·T/(1 − f_e/f) [derived; ≈ 8 % for NR with f_e/f = 0.18, about 10 % is observed
    from memory] (docs/methods.md §thermoelasticity)."""
    from scipy.optimize import brentq

    def slope(eps):
        h = 1e-3
        f = force_at_fixed_length
        return (f(T + h, 1 + eps, 1.0, T, expansion=expansion, energetic_fraction=energetic_fraction)
                - f(T - h, 1 + eps, 1.0, T, expansion=expansion, energetic_fraction=energetic_fraction))

    _check_temperatures(np.asarray(T, dtype=np.float64), T, allow_zero=False)
    if not (math.isfinite(expansion) and 0 <= expansion < 0.01):
        raise ValueError(f"volume expansion coefficient β = {expansion!r} 1/K is implausible; rubbers have about "
                         "6e-4 1/K")
    if not (math.isfinite(energetic_fraction) and -1.0 < energetic_fraction < 0.9):
        raise ValueError(f"the energetic fraction f_e/f = {energetic_fraction!r} is implausible for a rubber "
                         "(natural rubber about 0.1–0.2); give it as a fraction")
    if expansion == 0:
        return 0.0
    return brentq(slope, 1e-6, 1.0)


#: below this λ³ − 1 the thermal-expansion correction βT/(λ³ − 1) dominates the energetic fraction
#: (at λ³ − 1 = 0.5 it is ≈ 0.4 for β = 6.6e-4 1/K at 300 K, larger than f_e/f itself) [derived]
CORRECTION_DOMINATES_BELOW = 0.5

#: JSON key of ``netstretch thermo`` for −T·∂ln(F/T)/∂T at constant pressure and length (issue #20: the old key
#: ``energetic_fraction_constant_pressure`` named it an energetic fraction, which it is not; kept one release
#: as a deprecated alias, listed under ``deprecated_keys``)
THERMOELASTIC_KEY = "thermoelastic_coefficient_constant_pressure"
DEPRECATED_KEYS = {"energetic_fraction_constant_pressure": THERMOELASTIC_KEY}

METHOD_CONSTANT_PRESSURE = ("measured at constant pressure and length, no thermal-expansion correction: "
                            "−T·∂ln(F/T)/∂T at p, L (not the constant-volume energetic fraction)")
METHOD_CONSTANT_VOLUME = ("constant-volume energetic fraction: the constant-pressure value minus βT/(λ³ − 1) "
                          "(Flory, Ciferri & Hoeve 1960 [memory])")


@dataclass(frozen=True, kw_only=True)
class EnergeticFraction:
    value: float
    stderr: float
    slope: float  # d ln(F/T)/dT, 1/K
    stretch: float
    method: str
    n_points: int
    basis: str = "constant pressure"  # "constant pressure" (uncorrected) or "constant volume" (corrected)
    correction: float = 0.0  # βT/(λ³ − 1) subtracted from the constant-pressure value
    notices: tuple = ()

    def as_dict(self) -> dict[str, Any]:
        d = dict(self.__dict__)
        d["notices"] = list(self.notices)
        return d


def _check_record(T, F, stretch, expansion):
    if T.shape != F.shape or T.ndim != 1 or T.size < 3:
        raise ValueError("need at least three (temperature, force) pairs of equal length")
    if not (np.all(np.isfinite(T)) and np.all(np.isfinite(F))):
        raise ValueError("the record has missing or non-numeric temperatures or forces; remove those rows")
    if np.any(T <= 0):
        raise ValueError(f"temperatures must be absolute (K, > 0); the record has {T.min():g} K — convert °C to "
                         "kelvin (add 273.15)")
    if np.any(F <= 0):
        raise ValueError("forces must be positive (tension) for the force–temperature analysis")
    if np.ptp(T) == 0:
        raise ValueError("all temperatures are equal: the record needs a temperature range")
    if not (isinstance(stretch, (int, float, np.floating)) and math.isfinite(stretch) and stretch > 1.0):
        raise ValueError(f"the force–temperature analysis needs a stretched sample (λ > 1); got λ = {stretch!r}")
    if not (isinstance(expansion, (int, float, np.floating)) and math.isfinite(expansion) and 0 <= expansion < 0.01):
        raise ValueError(f"volume expansion coefficient β = {expansion!r} 1/K is implausible; rubbers have about "
                         "6e-4 1/K (give 0 for no correction)")


def energetic_fraction(T: Any, force: Any, stretch: float, expansion: float | None = None) -> EnergeticFraction:
    """f_e/f from a force–temperature record at constant length and (atmospheric) pressure.

    The record gives −T·∂ln(F/T)/∂T at constant **pressure** and length (evaluated at the mean temperature
    from a straight-line fit of ln(F/T) on T, with its standard error).  With the volume expansion
    coefficient β the **constant-volume** energetic fraction — the one that measures the energetic part of
    the chains — follows as f_e/f = −T·∂ln(F/T)/∂T|_{p,L} − βT/(λ³ − 1) (Flory, Ciferri & Hoeve 1960
    [memory]; docs/methods.md §thermoelastic).  ``expansion=None`` returns the uncorrected constant-pressure value.

    For an ideal network with thermal expansion the constant-pressure value is βT/(λ³ − 1) and the
    constant-volume value ≈ 0.  When λ³ − 1 < 0.5 the correction dominates the result: a notice says so.
    """
    T = np.asarray(T, dtype=np.float64)
    F = np.asarray(force, dtype=np.float64)
    _check_record(T, F, stretch, 0.0 if expansion is None else expansion)
    y = np.log(F / T)
    A = np.vstack([T - T.mean(), np.ones_like(T)]).T
    coef, res, *_ = np.linalg.lstsq(A, y, rcond=None)
    slope = coef[0]
    dof = max(T.size - 2, 1)
    resid = y - A @ coef
    s2 = float(resid @ resid) / dof
    se = np.sqrt(s2 / np.sum((T - T.mean()) ** 2))
    Tm = T.mean()
    notices = []
    if expansion is None:
        corr, basis, method = 0.0, "constant pressure", METHOD_CONSTANT_PRESSURE
    else:
        corr, basis, method = expansion * Tm / (stretch**3 - 1.0), "constant volume", METHOD_CONSTANT_VOLUME
        if stretch**3 - 1.0 < CORRECTION_DOMINATES_BELOW:
            notices.append(Notice(
                f"clamped at λ = {stretch:g} (λ³ − 1 = {stretch**3 - 1:.3f} < {CORRECTION_DOMINATES_BELOW:g}): the "
                f"thermal-expansion correction βT/(λ³ − 1) = {corr:.3f} dominates the result, so β and λ decide "
                "it more than the forces do; measure at a larger stretch (λ ≥ 1.15)",
                kind="correction-dominates", subject="thermo"))
    value = -Tm * slope - corr
    return EnergeticFraction(value=float(value), stderr=float(Tm * se), slope=float(slope), stretch=float(stretch),
                             method=method, n_points=int(T.size),
                             basis=basis, correction=float(corr), notices=tuple(notices))
