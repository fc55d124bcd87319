"""Each model against published formulas and check values (sources beside each check)."""

from __future__ import annotations

import mpmath as mp
import numpy as np
import pytest
from scipy.constants import R
from scipy.optimize import brentq

from network_models import Network, get_model
from network_models.langevin import inverse_langevin


def test_affine_and_phantom_moduli_from_R():
    # G = νRT (Kuhn, Wall, Flory; Treloar 1975 ch. 4) and G = (1 − 2/f)νRT (James & Guth 1943); R from
    # scipy.constants (CODATA).
    net = Network(polymer="NR", nu=200.0, T=300.0, entanglements=False)
    assert get_model("affine").from_network(net)["G"] == pytest.approx(200.0 * R * 300.0, rel=1e-15)
    assert get_model("phantom").from_network(net)["G"] == pytest.approx(0.5 * 200.0 * R * 300.0, rel=1e-15)
    # entanglements off: under the one G_e policy (network_models.entanglement) they would add G_e to G
    net6 = Network(polymer="NR", nu=200.0, T=300.0, f=6, entanglements=False)
    assert get_model("phantom").from_network(net6)["G"] == pytest.approx((1 - 2 / 6) * 200.0 * R * 300.0)


@pytest.mark.parametrize(("N", "ratio"), [(5, 1.148587), (10, 1.066313), (26.5, 1.023480), (100, 1.006057)])
def test_eight_chain_small_strain_modulus_ratio(N, ratio):
    # docs/methods.md §eight-chain [derived]: μ₀/μ = √N L⁻¹(1/√N)/3; values to 7 digits.
    m = get_model("eight-chain")
    assert m.small_strain_modulus(mu=1.0e6, N=N) / 1.0e6 == pytest.approx(ratio, abs=6e-7)
    # and the series 1 + 3/(5N) + 99/(175N²) for large N (docs/methods.md §eight-chain)
    if N >= 26.5:
        assert m.small_strain_modulus(mu=1.0, N=N) == pytest.approx(1 + 3 / (5 * N) + 99 / (175 * N**2), rel=5e-5)


def test_eight_chain_against_arruda_boyce_five_term_series():
    # Arruda & Boyce 1993, eq. 21: W = μ[½(I₁−3) + (I₁²−9)/(20N) + 11(I₁³−27)/(1050N²) + 19(I₁⁴−81)/(7000N³)
    # + 519(I₁⁵−243)/(673750N⁴)]; at moderate stretch it must agree with the exact model closely.
    mu, N = 0.27e6, 26.5
    m = get_model("eight-chain")
    lam = np.linspace(1.05, 2.0, 40)
    I1 = lam**2 + 2 / lam
    W1 = mu * (0.5 + I1 / (10 * N) + 33 * I1**2 / (1050 * N**2) + 76 * I1**3 / (7000 * N**3)
               + 2595 * I1**4 / (673750 * N**4))
    P_series = 2 * (lam - lam**-2) * W1
    P = m.nominal_stress("uniaxial", lam, mu=mu, N=N)
    np.testing.assert_allclose(P, P_series, rtol=2e-4)


@pytest.mark.parametrize(("mode", "equation"), [
    # Arruda & Boyce 1993: locking where λ_ch = √N, i.e. I₁ = 3N (docs/methods.md §eight-chain)
    ("uniaxial", lambda x: x**2 + 2 / x),
    ("equibiaxial", lambda x: 2 * x**2 + x**-4),
    ("planar", lambda x: x**2 + 1 + x**-2),
])
def test_eight_chain_locking_stretch(mode, equation):
    N = 26.5
    lock = get_model("eight-chain").stretch_limit(mode, mu=1.0, N=N)
    expected = brentq(lambda x: equation(x) - 3 * N, 1.0, 100.0, xtol=1e-14)
    assert lock == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(("lam", "slip", "nonaffine"), [
    # docs/methods.md §non-affine-tube and §slip-tube check values, G_c = G_e = 0.2 MPa [derived from the printed forms]
    (1.5, 0.35897, 0.35683), (2.0, 0.32810, 0.32612), (3.0, 0.29000, 0.28819), (5.0, 0.25521, 0.25314),
])
def test_tube_reduced_stress_check_values(lam, slip, nonaffine):
    p = {"Gc": 0.2e6, "Ge": 0.2e6}
    assert get_model("slip-tube").reduced_stress(lam, p) / 1e6 == pytest.approx(slip, abs=6e-6)
    assert get_model("non-affine-tube").reduced_stress(lam, p) / 1e6 == pytest.approx(nonaffine, abs=6e-6)


def test_extended_tube_small_strain_modulus_by_differentiating_energy():
    # docs/methods.md §extended-tube: test the small-strain modulus by differentiating W numerically,
    # not by an identity.
    # Uniaxial W(λ) ≈ (3/2)G(λ − 1)², so G = W''(1)/3.
    m = get_model("extended-tube")
    for p in ({"Gc": 0.3e6, "Ge": 0.2e6, "delta": 0.1, "beta": 0.2},
              {"Gc": 0.5e6, "Ge": 0.05e6, "delta": 0.25, "beta": 0.6}):
        h = 1e-4
        W = m.energy("uniaxial", np.array([1 - h, 1.0, 1 + h]), p)
        G_num = (W[0] - 2 * W[1] + W[2]) / h**2 / 3
        assert m.small_strain_modulus(**p) == pytest.approx(G_num, rel=1e-5)
        # and the lock at I₁ − 3 = 1/δ² (Kaliske & Heinrich 1999 [from memory])
        lock = m.stretch_limit("uniaxial", p)
        assert lock**2 + 2 / lock - 3 == pytest.approx(1 / p["delta"] ** 2, rel=1e-10)


def _kh_energy(stretches, Gc, Ge, delta, beta):
    """Kaliske & Heinrich 1999 (Rubber Chem. Technol. 72:602) extended-tube energy written here with "+ ln"
    (docs/methods.md §extended-tube): (G_c/2)[(1 − δ²)x/(1 − δ²x) + ln(1 − δ²x)] + (2G_e/β²)Σ(λᵢ^−β − 1),
    x = I₁ − 3, in mpmath."""
    x = sum(s * s for s in stretches) - 3
    d2 = delta * delta
    u = 1 - d2 * x
    return Gc / 2 * ((1 - d2) * x / u + mp.log(u)) + 2 * Ge / beta**2 * sum(s**-beta - 1 for s in stretches)


# (mode, principal stretches at λ, k) with W ≈ (k/2)·G·(λ − 1)² at small strain: k = 3 uniaxial, 4 planar,
# 12 equibiaxial [derived: I₁ − 3 ≈ 3ε², 4ε², 12ε² for the three paths of docs/methods.md §test-modes]
_PATHS = (("uniaxial", lambda L: (L, L**-0.5, L**-0.5), 3), ("planar", lambda L: (L, 1, 1 / L), 4),
          ("equibiaxial", lambda L: (L, L, L**-2), 12))


@pytest.mark.parametrize(("Gc", "Ge", "delta", "beta"), [
    (0.3e6, 0.2e6, 0.1, 0.2), (0.5e6, 0.05e6, 0.6, 0.7), (1.0e6, 0.0, 0.3, 0.2), (0.2e6, 0.4e6, 0.7, 1.0)])
def test_extended_tube_modulus_formula_against_finite_differences(Gc, Ge, delta, beta):
    # issue #20 item 7: with "+ ln" the small-strain modulus is G₀ = G_c(1 − 2δ²) + G_e (derived in
    # docs/methods.md §extended-tube).  Independent check: a central second difference of the energy written
    # above from the paper's formula, in mpmath at 50 digits with step 1e-12, along all three test paths.
    expected = Gc * (1 - 2 * delta**2) + Ge
    h = mp.mpf("1e-12")
    with mp.workdps(50):
        for mode, path, k in _PATHS:
            W = [_kh_energy(path(1 + s * h), mp.mpf(Gc), mp.mpf(Ge), mp.mpf(delta), mp.mpf(beta)) for s in (-1, 0, 1)]
            G_fd = float((W[0] - 2 * W[1] + W[2]) / h**2 / k)
            assert G_fd == pytest.approx(expected, rel=1e-9), mode
    # and the core agrees with the formula and with its own energy
    m = get_model("extended-tube")
    assert m.small_strain_modulus(Gc=Gc, Ge=Ge, delta=delta, beta=beta) == pytest.approx(expected, rel=1e-12)
    # the "−" sign would give G_c + G_e: the check above separates the two whenever δ > 0
    assert abs(expected - (Gc + Ge)) > 1e-3 * expected


@pytest.mark.parametrize("name", ["neo-hookean", "affine", "phantom", "mooney-rivlin", "constrained-junction",
                                  "eight-chain", "three-chain", "non-affine-tube", "extended-tube", "gent"])
def test_compression_is_equibiaxial_tension_of_the_same_solid(name):
    # docs/methods.md §compression [derived]: uniaxial compression at λ_c and equibiaxial tension at
    # λ_b = λ_c^−½ are one deformation, differing by a hydrostatic pressure, so P_b = −P_c·λ_c^{3/2} for any
    # isotropic incompressible solid.  Hand check for neo-Hookean: G(λ_b − λ_b⁻⁵) = −G(λ_c − λ_c⁻²)λ_c^{3/2}.
    m = get_model(name)
    p = m.params.defaults()
    lam_c = np.array([0.95, 0.8, 0.65, 0.5])
    P_c = m.nominal_stress("uniaxial", lam_c, p)
    P_b = m.nominal_stress("equibiaxial", lam_c**-0.5, p)
    ok = np.isfinite(P_c) & np.isfinite(P_b)
    assert ok.sum() >= 2
    assert P_b[ok] == pytest.approx(-P_c[ok] * lam_c[ok] ** 1.5, rel=1e-9)
    if name == "neo-hookean":
        G = p["G"]
        assert P_c == pytest.approx(G * (lam_c - lam_c**-2), rel=1e-12)


def test_mooney_rivlin_reduced_stress_is_a_straight_line_in_inverse_stretch():
    # Mooney 1940 / Rivlin 1948: σ* = 2C₁ + 2C₂/λ (docs/methods.md §mooney-plot)
    lam = np.linspace(1.1, 4, 20)
    red = get_model("mooney-rivlin").reduced_stress(lam, C1=0.15e6, C2=0.07e6)
    np.testing.assert_allclose(red, 2 * 0.15e6 + 2 * 0.07e6 / lam, rtol=1e-13)


def test_gent_lock_and_neo_hookean_limit():
    # Gent 1996: lock at I₁ − 3 = J_m; J_m → ∞ recovers neo-Hookean.
    g = get_model("gent")
    lock = g.stretch_limit("uniaxial", G=0.5e6, Jm=50)
    assert lock**2 + 2 / lock - 3 == pytest.approx(50, rel=1e-12)
    lam = np.linspace(1.1, 3, 10)
    np.testing.assert_allclose(g.nominal_stress("uniaxial", lam, G=0.5e6, Jm=1e6),
                               0.5e6 * (lam - lam**-2), rtol=2e-5)


def test_constrained_junction_limits():
    # Flory & Erman 1982: κ → 0 gives the phantom network, κ → ∞ the affine network.  Checked at f = 6: at f = 4
    # the junction density μ_j = 2ν/f and the cycle rank ξ = ν − μ_j coincide, so a model that used the wrong
    # one would pass.  Affine/phantom = νRT/((1 − 2/f)νRT) = f/(f − 2) = 3/2
    # (James & Guth 1943; docs/methods.md §phantom).
    cj = get_model("constrained-junction")
    lam = np.linspace(0.6, 4, 25)
    G_ph, f = 0.2e6, 6.0
    phantom = G_ph * (lam - lam**-2)
    np.testing.assert_allclose(cj.nominal_stress("uniaxial", lam, G_ph=G_ph, kappa=0.0, f=f), phantom, rtol=1e-12)
    affine = f / (f - 2) * phantom
    devs = [np.max(np.abs(cj.nominal_stress("uniaxial", lam, G_ph=G_ph, kappa=k, f=f) / affine - 1))
            for k in (1e2, 1e3, 1e4)]
    assert devs[0] > devs[1] > devs[2] and devs[2] < 5e-3


def test_three_chain_matches_its_published_difference_form():
    # Wang & Guth 1952 via Arruda & Boyce 1993 eq. 22: σ₁ − σ₂ = (μ/3)√N[λ₁L⁻¹(λ₁/√N) − λ₂L⁻¹(λ₂/√N)];
    # uniaxial: nominal = (σ₁ − σ₂)/λ.
    mu, N = 0.3e6, 20.0
    lam = np.linspace(1.1, 3.5, 15)
    l2 = lam**-0.5
    sn = np.sqrt(N)
    expected = (mu / 3) * sn * (lam * inverse_langevin(lam / sn) - l2 * inverse_langevin(l2 / sn)) / lam
    np.testing.assert_allclose(get_model("three-chain").nominal_stress("uniaxial", lam, mu=mu, N=N),
                               expected, rtol=1e-12)


def test_neo_hookean_modes_match_textbook_forms():
    # Treloar (1975) ch. 5: uniaxial G(λ − λ⁻²), equibiaxial G(λ − λ⁻⁵), planar G(λ − λ⁻³).
    G = 0.4e6
    lam = np.linspace(0.7, 3, 12)
    m = get_model("neo-hookean")
    np.testing.assert_allclose(m.nominal_stress("uniaxial", lam, G=G), G * (lam - lam**-2), rtol=1e-14)
    lam_t = lam[lam > 1]
    np.testing.assert_allclose(m.nominal_stress("equibiaxial", lam_t, G=G), G * (lam_t - lam_t**-5), rtol=1e-14)
    np.testing.assert_allclose(m.nominal_stress("planar", lam_t, G=G), G * (lam_t - lam_t**-3), rtol=1e-14)
