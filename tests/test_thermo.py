"""Force at fixed length, thermoelastic inversion and the energetic fraction of the force.

The reference data are generated here, independently of network_models.thermo, from the ideal-network
force of Flory, Principles of Polymer Chemistry (1953) ch. XI [memory]: for a fixed network
f ∝ T · (⟨r²⟩_i/⟨r²⟩₀) · (A_i/V) · (λ − λ⁻²).  With isotropic thermal expansion at constant pressure
V ∝ s = 1 + β(T − T_ref), the unstrained length L_i ∝ s^⅓, the unstrained area A_i ∝ s^⅔, ⟨r²⟩_i ∝ L_i² and
⟨r²⟩₀ does not depend on T (no energetic part).  docs/methods.md §temperature-scaling and §thermoelastic.
"""

from __future__ import annotations

import mpmath as mp
import numpy as np
import pytest

from network_models.thermo import energetic_fraction, force_at_fixed_length, inversion_strain


def ideal_force(T, L_clamped, beta, T_ref, L_ref=1.0, c=1.0):
    """Ideal network at constant pressure, written from the ingredients above with mpmath."""
    T, L_clamped, beta, T_ref = (mp.mpf(x) for x in (T, L_clamped, beta, T_ref))
    s = 1 + beta * (T - T_ref)  # V/V_ref
    L_i = L_ref * mp.cbrt(s)  # unstrained length
    area_i = mp.cbrt(s) ** 2  # unstrained cross-section (relative)
    r2_ratio = (L_i / L_ref) ** 2  # ⟨r²⟩_i/⟨r²⟩₀ relative to the reference state
    lam = L_clamped / L_i
    return c * T * r2_ratio * area_i / s * (lam - lam**-2)


def test_ideal_network_with_expansion_constant_volume_fraction_is_zero():
    # An ideal network has no energetic part: its constant-VOLUME energetic fraction is 0.  At constant
    # pressure the record shows −T ∂ln(F/T)/∂T = βT/(λ³ − 1) (Flory, Ciferri & Hoeve 1960 [memory],
    # docs/methods.md §thermoelastic): the uncorrected value must be that, the corrected one ≈ 0.
    beta = 6.6e-4  # 1/K, natural rubber [from memory]
    T = np.linspace(293.15, 303.15, 11)
    T_ref = float(T.mean())  # clamp stretch is λ at the mean temperature, where the correction is evaluated
    for lam in (1.3, 1.5, 2.0, 3.0):
        F = np.array([float(ideal_force(t, lam, beta, T_ref)) for t in T])
        at_p = energetic_fraction(T, F, stretch=lam)
        at_v = energetic_fraction(T, F, stretch=lam, expansion=beta)
        expected_p = beta * T_ref / (lam**3 - 1)
        assert at_p.value == pytest.approx(expected_p, rel=2e-3), lam
        assert abs(at_v.value) < 2e-3 * expected_p, lam
        assert at_p.basis == "constant pressure" and at_v.basis == "constant volume"
        assert "constant-volume" in at_v.method and "constant pressure" in at_p.method


def test_force_at_fixed_length_matches_the_ideal_network():
    # the core's closed form against the ingredient-by-ingredient expression above (same physics, written
    # independently), over a wide temperature range with expansion
    beta, T_ref = 6.6e-4, 296.15
    for T in (250.0, 296.15, 350.0, 400.0):
        for lam in (1.05, 1.5, 2.5):
            got = force_at_fixed_length(T, lam, 1.0, T_ref, expansion=beta)
            want = ideal_force(T, lam, beta, T_ref) / T_ref
            assert float(got) == pytest.approx(float(want), rel=1e-12)


def test_linear_record_energetic_fraction():
    # F = a + bT: −T d ln(F/T)/dT = a/(a + bT) exactly [derived from the definition, docs/methods.md §thermoelastic]
    T = np.linspace(290, 310, 11)
    a, b = 2.0, 0.05
    rec = energetic_fraction(T, a + b * T, stretch=2.0)
    assert rec.value == pytest.approx(a / (a + b * T.mean()), rel=2e-3)  # ln(F/T) is nearly linear over 20 K


def test_inversion_strain_from_the_ideal_network():
    # The clamped strain where ∂F/∂T = 0, found here with mpmath on the independent expression; for this
    # ideal network it is (1 + βT)^⅓ − 1 [derived].  (The 7–10 % quoted for real natural rubber [from memory,
    # docs/methods.md §inversion] includes the energetic part of the force; the ideal network inverts
    # lower, at 6.2 % for β = 6.6e-4 1/K and 298 K, so that range is not a check of this function.)
    for beta, T in ((6.6e-4, 298.15), (5.6e-4, 273.15), (9.0e-4, 350.0)):
        def dFdT(eps, beta=beta, T=T):
            return mp.diff(lambda t: ideal_force(t, 1 + eps, beta, T), T)

        eps_mp = mp.findroot(dFdT, 0.05)
        assert inversion_strain(T, beta) == pytest.approx(float(eps_mp), rel=1e-6)
        assert float(eps_mp) == pytest.approx((1 + beta * T) ** (1 / 3) - 1, rel=1e-9)
    eps = inversion_strain(298.15, 6.6e-4)
    below = force_at_fixed_length([297.15, 299.15], 1 + eps / 2, 1.0, 298.15, expansion=6.6e-4)
    above = force_at_fixed_length([297.15, 299.15], 1 + 2 * eps, 1.0, 298.15, expansion=6.6e-4)
    assert below[1] < below[0] and above[1] > above[0]


def test_correction_dominates_notice():
    # λ³ − 1 < 0.5: βT/(λ³ − 1) is larger than any plausible f_e/f — the result says so (issue 10, item 4)
    beta = 6.6e-4
    T = np.linspace(293.15, 303.15, 6)
    F = [float(ideal_force(t, 1.1, beta, 298.15)) for t in T]
    small = energetic_fraction(T, F, stretch=1.1, expansion=beta)
    assert [n.kind for n in small.notices] == ["correction-dominates"]
    assert "λ = 1.1" in small.notices[0]
    F = [float(ideal_force(t, 1.2, beta, 298.15)) for t in T]  # λ³ − 1 = 0.728
    assert energetic_fraction(T, F, stretch=1.2, expansion=beta).notices == ()


def test_bad_inputs_are_sentences():
    with pytest.raises(ValueError, match="three"):
        energetic_fraction([300, 310], [1, 1], 2.0)
    with pytest.raises(ValueError, match="absolute"):
        energetic_fraction([-5, 10, 20], [1, 1, 1], 2.0)
    with pytest.raises(ValueError, match="absolute"):
        energetic_fraction([0.0, 10, 20], [1, 1, 1], 2.0)
    with pytest.raises(ValueError, match="stretched"):
        energetic_fraction([300, 310, 320], [1, 1, 1], 1.0)
    with pytest.raises(ValueError, match="implausible"):
        energetic_fraction([300, 310, 320], [1, 1, 1], 2.0, expansion=-1e-4)
    with pytest.raises(ValueError, match="reference temperature"):
        force_at_fixed_length(300.0, 2.0, 1.0, 0.0)
    with pytest.raises(ValueError, match="absolute"):
        force_at_fixed_length(-10.0, 2.0, 1.0, 296.15)
    with pytest.raises(ValueError, match="absolute"):
        inversion_strain(0.0, 6.6e-4)
