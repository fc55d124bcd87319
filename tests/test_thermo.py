"""Force at fixed length, thermoelastic inversion and the energetic fraction of the force."""

from __future__ import annotations

import numpy as np
import pytest

from network_models.thermo import energetic_fraction, force_at_fixed_length, inversion_strain


def test_force_proportional_to_absolute_temperature_without_expansion():
    # Meyer & Ferri 1935 (Helv. Chim. Acta 18:570): at fixed length the force of an entropic network is
    # proportional to absolute temperature — the line passes through T = 0.
    T = np.linspace(250, 400, 7)
    F = force_at_fixed_length(T, 2.0, 0.4e6, 300.0, area_ref=1e-5)
    np.testing.assert_allclose(F / T, F[0] / T[0], rtol=1e-14)
    slope, intercept = np.polyfit(T, F, 1)
    assert abs(intercept) < 1e-9 * F.max()


def test_thermoelastic_inversion_for_natural_rubber():
    # With thermal expansion the force at small clamped strain falls with T; inversion near 7–10 % strain for
    # natural rubber [from memory, physics.md §4]; small-strain estimate ε ≈ βT/3 [derived].
    beta, T = 6.6e-4, 298.15
    eps = inversion_strain(T, beta)
    assert eps == pytest.approx(beta * T / 3, rel=0.15)
    assert 0.05 < eps < 0.10
    below = force_at_fixed_length([T - 1, T + 1], 1 + eps / 2, 1.0, T, expansion=beta)
    above = force_at_fixed_length([T - 1, T + 1], 1 + 2 * eps, 1.0, T, expansion=beta)
    assert below[1] < below[0] and above[1] > above[0]


def test_energetic_fraction_of_ideal_and_linear_records():
    # Definition (physics.md §4): f_e/f = −T d ln(F/T)/dT at constant V, L.  F ∝ T gives 0; F = a + bT gives
    # a/(a + bT) exactly [derived from the definition].
    T = np.linspace(290, 310, 11)
    ideal = energetic_fraction(T, 0.05 * T, stretch=2.0)
    assert abs(ideal.value) < 1e-12
    a, b = 2.0, 0.05
    rec = energetic_fraction(T, a + b * T, stretch=2.0)
    Tm = T.mean()
    assert rec.value == pytest.approx(a / (a + b * Tm), rel=2e-3)  # ln(F/T) is nearly linear over 20 K
    # constant-pressure correction: − βT/(λ³ − 1) (Flory, Ciferri & Hoeve 1960 [from memory])
    corr = energetic_fraction(T, 0.05 * T, stretch=2.0, expansion=6.6e-4)
    assert corr.value == pytest.approx(-6.6e-4 * Tm / 7.0, rel=1e-12)


def test_ideal_network_with_expansion_has_no_energetic_part():
    # An ideal network clamped at fixed length and heated at constant pressure: the Flory–Ciferri–Hoeve
    # correction −βT/(λ³ − 1) must remove exactly what thermal expansion does to F/T, leaving f_e/f = 0
    # (Flory, Principles of Polymer Chemistry, ch. XI: F ∝ T·L_i·(λ − λ⁻²)).
    beta = 6.6e-4
    T = np.linspace(293.15, 298.15, 11)  # a narrow range: the correction is evaluated at the mean T
    for lam in (1.5, 2.0, 3.0):
        F = force_at_fixed_length(T, lam, 0.5e6, 295.65, area_ref=8e-6, expansion=beta)
        ef = energetic_fraction(T, F, stretch=lam, expansion=beta)
        assert abs(ef.value) < 2e-4
    # and the inversion condition λ³ − 1 = βT [derived from the same relation]
    eps = inversion_strain(298.15, beta)
    assert (1 + eps) ** 3 - 1 == pytest.approx(beta * 298.15, rel=1e-6)


def test_energetic_fraction_rejects_bad_records():
    with pytest.raises(ValueError, match="three"):
        energetic_fraction([300, 310], [1, 1], 2.0)
    with pytest.raises(ValueError, match="absolute"):
        energetic_fraction([-5, 10, 20], [1, 1, 1], 2.0)
    with pytest.raises(ValueError, match="stretched"):
        energetic_fraction([300, 310, 320], [1, 1, 1], 1.0)
