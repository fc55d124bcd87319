"""The network → model mapping: one entanglement policy, filler strain amplification, lower locks, the
extended tube's δ bound, one meaning of ν, trapped entanglements and the numerics near N = 1 and at large N.

Every expected value is computed here from the published (or derived) formula with scipy/mpmath, never
from the code's own expression.
"""

from __future__ import annotations

import math

import mpmath as mp
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.constants import R  # CODATA gas constant
from scipy.optimize import brentq

from network_models import MODELS, Mode, Network, get_model, get_polymer
from network_models.crosslinks import from_fit, from_modulus
from network_models.curves import TestCurve
from network_models.entanglement import G_E_POLICY, entanglement_share, policy_modulus, trapping_factor
from network_models.errors import ParameterError
from network_models.fitting import fit
from network_models.network import N_MIN, lock_from_N, lock_range_from_N
from tests.reference import langevin_series_coefficients, mp_inverse_langevin, revert_odd_series

# (name, first invariant as a function of λ) per mode (docs/methods.md §test-modes table)
I1 = {
    Mode.UNIAXIAL: lambda x: x**2 + 2 / x,
    Mode.EQUIBIAXIAL: lambda x: 2 * x**2 + x**-4,
    Mode.PLANAR: lambda x: x**2 + 1 + x**-2,
}

NETWORKS = [
    dict(polymer="NR", nu=150.0, T=296.15),
    dict(polymer="SBR", nu=300.0, T=350.0, f=6.0, filler_fraction=0.15),
    dict(polymer="NR", nu=90.0, T=273.15, entanglements=False, filler_fraction=0.3),
    dict(polymer="NR", nu=5000.0, T=296.15),  # N close to N_MIN: the extended tube's δ is capped
]


def _plateau_part(net):
    # G_e = G_N⁰(T/T_ref)·X: plateau modulus ∝ T (docs/methods.md §temperature-scaling),
    # Guth–Gold factor 1 + 2.5φ + 14.1φ² [memory]
    p = get_polymer(net.polymer)
    X = 1 + 2.5 * net.filler_fraction + 14.1 * net.filler_fraction**2
    return (p.plateau_modulus * net.T / p.plateau_temperature * X if net.entanglements else 0.0), X


def _flory_erman_G(G_ph, kappa, f):
    """Small-strain modulus of the Flory–Erman energy (docs/methods.md §constrained-junction, as printed in
    Arruda & Boyce 1993) by mpmath differentiation of W along the uniaxial path: G = W''(1)/3."""
    mu_j = 2 * G_ph / (f - 2)

    def W(lam):
        ls = (lam, 1 / mp.sqrt(lam), 1 / mp.sqrt(lam))
        tot = 0
        for li in ls:
            a = li**2
            B = kappa**2 * (a - 1) / (a + kappa) ** 2
            D = a * B / kappa
            tot += B + D - mp.log(1 + B) - mp.log(1 + D)
        return G_ph / 2 * (sum(li**2 for li in ls) - 3) + mu_j / 2 * tot

    with mp.workdps(40):
        return float(mp.diff(W, 1, 2) / 3)


def _expected_G0(name, net):
    """The policy's G₀ written out: crosslink part as the model reads ν plus G_e, both ×X."""
    Ge, X = _plateau_part(net)
    affine = net.nu * R * net.T * X  # Kuhn, Wall, Flory: G = νRT
    phantom = (1 - 2 / net.f) * affine  # James & Guth 1943
    if name == "phantom":
        return phantom + Ge
    if name == "constrained-junction":
        return _flory_erman_G(phantom, MODELS[name].params["kappa"].default, net.f) + Ge
    return affine + Ge


@pytest.mark.parametrize("kw", NETWORKS)
@pytest.mark.parametrize("name", list(MODELS))
def test_every_model_shows_the_policy_modulus(name, kw):
    """One G_e policy: the same network gives every model the small-strain modulus G_x + G_e (issue: 0.06 to
    0.47 MPa before).  The slope of the model's own stress at λ = 1 is compared, not its declared modulus."""
    net = Network(**kw)
    m = get_model(name)
    p = net.model_params(m)
    e = 1e-6
    slope = (m.nominal_stress("uniaxial", 1 + e, p) - m.nominal_stress("uniaxial", 1 - e, p)) / (2 * e)
    expected = _expected_G0(name, net)
    assert float(slope) / 3 == pytest.approx(expected, rel=2e-6)  # E = 3G (docs/methods.md §small-strain)
    assert policy_modulus(m, net) == pytest.approx(expected, rel=1e-12)
    assert float(slope) > 0


def test_policy_is_one_sentence_shown_by_the_network():
    assert G_E_POLICY.count(". ") == 0 and "G₀ = G_x + G_e" in G_E_POLICY
    assert Network().summary()["entanglement_policy"] == G_E_POLICY


# ----- filler: strain amplification moves the lock ---------------------------------------------------
@pytest.mark.parametrize("mode", list(Mode))
@pytest.mark.parametrize(("N", "phi"), [(26.5, 0.0), (26.5, 0.1), (8.0, 0.2), (60.0, 0.35)])
def test_filled_lock_solves_the_amplified_invariant_equation(mode, N, phi):
    # Amplified first invariant Ī₁ = 3 + X(I₁ − 3) (Bergström & Boyce 1999 [from memory]) with the Guth–Gold
    # factor X (Mullins & Tobin 1965 [from memory]); the chains lock where Ī₁ = 3N (Arruda & Boyce 1993).
    X = 1 + 2.5 * phi + 14.1 * phi**2

    def eq(x):
        return 3 + X * (I1[mode](x) - 3) - 3 * N

    hi = brentq(eq, 1.0 + 1e-12, 1e3, xtol=1e-15, rtol=1e-15)
    lo = brentq(eq, 1e-6, 1.0 - 1e-12, xtol=1e-15, rtol=1e-15)
    got_lo, got_hi = lock_range_from_N(N, mode, X)
    assert got_hi == pytest.approx(hi, rel=1e-12) and got_lo == pytest.approx(lo, rel=1e-12)
    assert lock_from_N(N, mode, 1.0) == pytest.approx(brentq(lambda x: I1[mode](x) - 3 * N, 1.0 + 1e-12, 1e3,
                                                             xtol=1e-15), rel=1e-12)  # X = 1: the gum lock
    if phi > 0:
        assert got_hi < lock_from_N(N, mode)  # filler shortens the reachable stretch


def test_filled_network_models_lock_at_the_network_lock():
    net = Network(polymer="NR", nu=120.0, filler_fraction=0.2)
    for name in ("eight-chain", "gent", "extended-tube"):
        m = get_model(name)
        for mode in Mode:
            assert m.stretch_limit(mode, net.model_params(m)) == pytest.approx(net.locking_stretch(mode), rel=1e-10)
    assert net.locking_stretch(Mode.UNIAXIAL) < net.with_(filler_fraction=0.0).locking_stretch(Mode.UNIAXIAL)


# ----- lower locks in every mode (mpmath root of I₁(λ) = c below 1) -----------------------------------
@pytest.mark.parametrize("mode", list(Mode))
@pytest.mark.parametrize("N", [4.0, 26.5])
def test_lower_lock_of_the_eight_chain_is_the_root_below_one(mode, N):
    f = {Mode.UNIAXIAL: lambda x: x**2 + 2 / x, Mode.EQUIBIAXIAL: lambda x: 2 * x**2 + x**-4,
         Mode.PLANAR: lambda x: x**2 + 1 + x**-2}[mode]
    with mp.workdps(40):
        root = float(mp.findroot(lambda x: f(x) - 3 * N, (mp.mpf("1e-3"), mp.mpf("0.999999")), solver="bisect",
                                 tol=1e-30, maxsteps=200))
    lo, hi = get_model("eight-chain").stretch_range(mode, mu=1.0, N=N)
    assert 0 < lo < 1 and lo == pytest.approx(root, rel=1e-12)
    m = get_model("eight-chain")
    assert np.isfinite(m.nominal_stress(mode, lo * (1 + 1e-9), mu=1.0, N=N))
    assert np.isnan(m.nominal_stress(mode, lo * (1 - 1e-9), mu=1.0, N=N))


def test_issue_values_of_the_lower_lock_at_N_4():
    # issue 10: eight-chain N = 4 is NaN below 0.544 (equibiaxial) and 0.303 (planar): those are the locks
    m = get_model("eight-chain")
    assert m.stretch_range("equibiaxial", mu=1.0, N=4.0)[0] == pytest.approx(0.544, abs=5e-4)
    assert m.stretch_range("planar", mu=1.0, N=4.0)[0] == pytest.approx(0.303, abs=5e-4)


@pytest.mark.parametrize(("mode", "transverse"), [
    (Mode.UNIAXIAL, lambda x: x**-0.5), (Mode.EQUIBIAXIAL, lambda x: x**-2), (Mode.PLANAR, lambda x: 1 / x)])
def test_three_chain_lower_lock_where_the_free_stretch_reaches_root_N(mode, transverse):
    # three-chain: a chain along each principal axis locks at λᵢ = √N (Wang & Guth 1952); below λ = 1 the
    # largest principal stretch is the transverse/free one (docs/methods.md §test-modes table)
    N = 9.0
    root = brentq(lambda x: transverse(x) - math.sqrt(N), 1e-6, 1.0 - 1e-12, xtol=1e-15, rtol=1e-15)
    assert get_model("three-chain").stretch_range(mode, mu=1.0, N=N)[0] == pytest.approx(root, rel=1e-12)


# ----- extended tube: the δ bound and the sign before the logarithm ---------------------------------
def _mp_W_c(x, d2):
    # crosslink part of the extended tube model (Kaliske & Heinrich 1999, Rubber Chem. Technol. 72:602), with
    # "+" before the log as derived in docs/methods.md §extended-tube: (1/2)[(1 − δ²)x/(1 − δ²x) + ln(1 − δ²x)], G_c = 1
    return ((1 - d2) * x / (1 - d2 * x) + mp.log(1 - d2 * x)) / 2


def test_extended_tube_energy_is_the_printed_form():
    m = get_model("extended-tube")
    p = {"Gc": 1.0, "Ge": 0.0, "delta": 0.2, "beta": 0.2}
    for lam in (1.2, 2.0, 3.5):
        with mp.workdps(30):
            x = mp.mpf(lam) ** 2 + 2 / mp.mpf(lam) - 3
            ref = float(_mp_W_c(x, mp.mpf(0.2) ** 2))
        assert float(m.energy("uniaxial", lam, p)) == pytest.approx(ref, rel=1e-12)


@pytest.mark.parametrize("delta", [0.1, 0.4, 0.6, 0.7])
def test_extended_tube_delta_bound_keeps_W_convex(delta):
    # derived (tube.py): for δ² < ½, W₁ > 0 and W₁₁ > 0 for all I₁ ≥ 3 up to the lock; checked here by mpmath
    # derivatives of the printed energy at points across the domain
    d2 = mp.mpf(delta) ** 2
    with mp.workdps(30):
        for frac in (0.0, 0.3, 0.9, 0.999):
            x = frac / d2
            assert mp.diff(lambda s: _mp_W_c(s, d2), x, 1) > 0
            assert mp.diff(lambda s: _mp_W_c(s, d2), x, 2) > 0
    G0 = get_model("extended-tube").small_strain_modulus(Gc=1.0, Ge=0.0, delta=delta, beta=0.2)
    assert G0 > 0


def test_extended_tube_bound_is_sharp_and_enforced():
    # past δ² = ½ the small-strain modulus of the crosslink part, 2W₁(0)·… = 1 − 2δ², turns negative
    with mp.workdps(30):
        d2 = mp.mpf(0.72) ** 2
        assert mp.diff(lambda s: _mp_W_c(s, d2), 0, 1) < 0
    with pytest.raises(ParameterError, match="delta"):
        get_model("extended-tube").resolve({"delta": 0.72})


def test_extended_tube_delta_domain_is_below_one_over_root_two():
    # issue #20 item 7: δ² < ½ (G₀ = G_c(1 − 2δ²) + G_e > 0, docs/methods.md §extended-tube) is the declared
    # domain of δ — one source of truth for the fitter, the explorer and the intervals.  1/√2 from math.sqrt.
    m = get_model("extended-tube")
    lo, hi = m.params["delta"].bounds
    assert lo == 0.0 and hi**2 < 0.5 and hi > 1 / math.sqrt(2) - 1e-4
    m.resolve({"delta": hi})  # the edge itself is accepted, with a positive crosslink modulus
    assert m.small_strain_modulus(Gc=1.0, Ge=0.0, delta=hi, beta=0.2) > 0
    with pytest.raises(ParameterError, match="delta"):
        m.resolve({"delta": 1 / math.sqrt(2) + 1e-9})
    # every interior value keeps W defined up to its lock: the stress is finite just below I₁ − 3 = 1/δ²
    lock = m.stretch_limit("uniaxial", {"Gc": 1.0, "Ge": 0.0, "delta": 0.5, "beta": 0.2})
    assert lock**2 + 2 / lock - 3 == pytest.approx(1 / 0.25, rel=1e-10)
    assert np.isfinite(m.nominal_stress("uniaxial", lock * (1 - 1e-6), {"Gc": 1.0, "Ge": 0.0, "delta": 0.5,
                                                                        "beta": 0.2}))


def test_extended_tube_mapping_caps_delta_with_a_notice():
    net = Network(polymer="NR", nu=5000.0)  # issue 10: δ = 0.74 and G₀ = −0.78 MPa before
    m = get_model("extended-tube")
    p = net.model_params(m)
    assert p["delta"] <= 0.5 and m.small_strain_modulus(**p) > 0
    notes = net.model_notices(m)
    assert notes and notes[0].kind == "bounded" and "capped" in notes[0]
    assert net.with_(nu=150.0).model_notices(m) == []


# ----- ν: one definition, the chemical density named apart -------------------------------------------
def test_chemical_and_active_strand_density():
    # Flory (docs/methods.md §dangling-ends [memory]): ν_active = ν_chem(1 − 2M_c/M_n), M_c = ρ/ν_chem
    rho = get_polymer("NR").density
    nu_chem, Mn = 200.0, 50.0
    net = Network.from_chemical(nu_chem, Mn, polymer="NR")
    assert net.nu == pytest.approx(nu_chem * (1 - 2 * (rho / nu_chem) / Mn), rel=1e-14)
    assert net.chemical_strand_density == pytest.approx(nu_chem, rel=1e-14)
    assert net.affine_modulus == pytest.approx(net.nu * R * net.T, rel=1e-14)  # the modulus sees the active ν
    with pytest.raises(ParameterError, match="gel point"):
        Network.from_chemical(200.0, 2 * rho / 200.0 * 0.99, polymer="NR")


def test_dangling_end_row_is_labelled_chemical():
    t = from_modulus(0.6e6, polymer="NR", T=296.15, Mn=250.0)
    row = t.row("affine-dangling-ends")
    assert row.nu_kind.startswith("chemical") and "CHEMICAL" in row.note
    rho = get_polymer("NR").density
    assert row.nu == pytest.approx(0.6e6 / (R * 296.15) + 2 * rho / 250.0, rel=1e-12)
    assert t.row("affine").nu_kind == "elastically active"


# ----- entanglements: upper bound, trapping, shares over 100 % --------------------------------------
def test_plateau_subtraction_is_labelled_an_upper_bound():
    t = from_modulus(0.6e6, polymer="NR", T=296.15)
    row = t.row("affine-no-entanglement")
    assert "upper bound" in row.label and "upper bound" in row.assumes


@pytest.mark.parametrize("ws", [0.0, 0.02, 0.1, 0.3])
def test_trapped_entanglement_rows(ws):
    # Dossin & Graessley 1979: G = νRT + T_e G_N⁰; Langley T_e = (1 − √w_s)⁴ [from memory, form not re-read]
    T = 296.15
    p = get_polymer("NR")
    Te = (1 - math.sqrt(ws)) ** 4
    assert trapping_factor(ws) == pytest.approx(Te, rel=1e-15)
    t = from_modulus(0.6e6, polymer="NR", T=T, sol_fraction=ws)
    expected = (0.6e6 - p.plateau_modulus * T / p.plateau_temperature * Te) / (R * T)
    assert t.row("affine-trapped-entanglements").nu == pytest.approx(expected, rel=1e-12)
    # fewer trapped entanglements leave more for the crosslinks: never below the upper-bound row
    assert t.row("affine-trapped-entanglements").nu >= t.row("affine-no-entanglement").nu
    with pytest.raises(ParameterError, match="sol fraction"):
        trapping_factor(5.0)


def test_entanglement_share_over_100_percent_is_not_a_plain_number():
    # issue 10: a classic gum NR data set showed "124 %"
    value, text, notes = entanglement_share(0.62e6, 0.5e6)
    assert value is None and text == "> 100 %" and notes and "124 %" in notes[0]
    t = from_modulus(0.25e6, polymer="NR", T=296.15)
    assert t.entanglement_share is None and t.entanglement_share_text == "> 100 %"
    assert any(getattr(n, "kind", "") == "entanglement-share" for n in t.notes)
    ok = from_modulus(0.9e6, polymer="NR", T=296.15)
    assert 0 < ok.entanglement_share < 1


# ----- the crosslink table asks the model, not its name ------------------------------------------------
def test_gent_fit_reads_J_m_as_N():
    # Gent 1996 J_m vs the eight-chain lock I₁ − 3 = 3(N − 1) (Arruda & Boyce 1993): N = J_m/3 + 1
    m = get_model("gent")
    lam = np.linspace(1.05, 4.0, 30)
    curves = [TestCurve("uniaxial", lam, m.nominal_stress("uniaxial", lam, G=0.5e6, Jm=60.0), temperature=296.15)]
    res = fit(m, curves)
    row = from_fit(res, polymer="NR").row("model-chain-equivalent")
    assert row.N == pytest.approx(res.params["Jm"].value / 3 + 1, rel=1e-12)
    assert row.nu == pytest.approx(res.params["G"].value / (R * 296.15), rel=1e-12)


def test_constrained_junction_reading_at_f_6():
    # f = 6 (not 4, where μ_j = 2ν/f and ξ = ν − μ_j coincide): the phantom part G_ph = (1 − 2/f)νRT
    m = get_model("constrained-junction")
    lam = np.linspace(1.05, 3.0, 25)
    true = {"G_ph": 0.2e6, "kappa": 5.0, "f": 6.0}
    curves = [TestCurve("uniaxial", lam, m.nominal_stress("uniaxial", lam, true), temperature=300.0)]
    res = fit(m, curves, fixed={"kappa": 5.0, "f": 6.0})
    row = from_fit(res, polymer="NR").row("model-phantom-part")
    assert row.nu == pytest.approx(0.2e6 / ((1 - 2 / 6) * R * 300.0), rel=1e-5)
    assert row.junction_density == pytest.approx(2 * row.nu / 6, rel=1e-12)


def test_filled_chain_reading_gives_the_gum_N():
    m = get_model("eight-chain")
    lam = np.linspace(1.05, 3.0, 30)
    curves = [TestCurve("uniaxial", lam, m.nominal_stress("uniaxial", lam, mu=0.4e6, N=12.0), temperature=296.15)]
    res = fit(m, curves)
    X = 1 + 2.5 * 0.2 + 14.1 * 0.04  # Guth–Gold [memory]
    t = from_fit(res, polymer="NR", filler_fraction=0.2)
    gum = t.row("model-chain-modulus-no-filler")
    assert gum.N == pytest.approx(1 + X * (res.params["N"].value - 1), rel=1e-12)  # inverse of N_eff
    assert gum.nu == pytest.approx(res.params["mu"].value / X / (R * 296.15), rel=1e-12)


# ----- numerics ----------------------------------------------------------------------------------------
def test_N_near_one_is_refused_with_a_sentence():
    with pytest.raises(ParameterError, match=f"at least {N_MIN:g}"):
        Network(polymer="NR", nu=100.0, N=1.0 + 1e-9)
    with pytest.raises(ParameterError, match="too high"):
        Network(polymer="NR", nu=8000.0)


def _mp_chain_energy(r):
    # g(r) = rβ + ln(β/sinh β), β = L⁻¹(r) (Arruda & Boyce 1993), high precision
    with mp.workdps(50):
        r = mp.mpf(r)
        b = mp.findroot(lambda x: mp.coth(x) - 1 / x - r, 3 * r)
        return r * b + mp.log(b / mp.sinh(b))


@pytest.mark.parametrize("N", [1e2, 1e4, 1e5, 1e6])
@pytest.mark.parametrize("lam", [1.01, 1.5, 3.0])
def test_eight_chain_energy_keeps_its_digits_at_large_N(N, lam):
    with mp.workdps(50):
        I1v = mp.mpf(lam) ** 2 + 2 / mp.mpf(lam)
        ref = float(N * (_mp_chain_energy(mp.sqrt(I1v / (3 * N))) - _mp_chain_energy(1 / mp.sqrt(N))))
    W = float(get_model("eight-chain").energy("uniaxial", lam, mu=1.0, N=N))
    assert W == pytest.approx(ref, rel=1e-10)  # was 3e-6 off at N = 1e5, λ = 1.01


@pytest.mark.parametrize("N", [1e2, 1e5])
def test_three_chain_energy_keeps_its_digits_at_large_N(N):
    # three-chain (Wang & Guth 1952, as in Arruda & Boyce 1993): W = (μN/3) Σᵢ [g(λᵢ/√N) − g(1/√N)]
    lam = 1.02
    with mp.workdps(50):
        ls = (mp.mpf(lam), 1 / mp.sqrt(mp.mpf(lam)), 1 / mp.sqrt(mp.mpf(lam)))
        ref = float(N / 3 * sum(_mp_chain_energy(li / mp.sqrt(N)) - _mp_chain_energy(1 / mp.sqrt(N)) for li in ls))
    W = float(get_model("three-chain").energy("uniaxial", lam, mu=1.0, N=N))
    assert W == pytest.approx(ref, rel=1e-9)


def test_chain_energy_series_coefficients():
    # g(r) = ∫₀^r L⁻¹(s)ds: coefficients a_k/(2k + 2) of the reverted Langevin series (A&S 4.5.67)
    from network_models.models._special import CHAIN_ENERGY_SERIES

    a = revert_odd_series(langevin_series_coefficients(len(CHAIN_ENERGY_SERIES)))
    np.testing.assert_allclose(CHAIN_ENERGY_SERIES, [float(c) / (2 * k + 2) for k, c in enumerate(a)], rtol=1e-15)
    assert mp_inverse_langevin(0.1) == pytest.approx(0.301817149206338, rel=1e-14)  # docs/methods.md §inverse-langevin


@pytest.mark.parametrize("name", [n for n, m in MODELS.items() if m.supports("uniaxial")])
def test_reduced_stress_at_one_is_its_limit(name):
    m = get_model(name)
    p = Network(polymer="NR", nu=150.0).model_params(m)
    at_one = float(m.reduced_stress(1.0, p))
    near = float(m.reduced_stress(1.0 + 1e-5, p))
    assert np.isfinite(at_one) and at_one == pytest.approx(near, rel=1e-4)


@settings(max_examples=80, deadline=None)
@given(nu=st.floats(20.0, 5000.0), phi=st.floats(0.0, 0.45), T=st.floats(233.15, 423.15), f=st.floats(3.0, 8.0),
       ent=st.booleans(), polymer=st.sampled_from(["NR", "SBR", "BR"]))
def test_no_model_shows_a_negative_modulus_anywhere_the_sliders_reach(nu, phi, T, f, ent, polymer):
    """issue 10 'done when': every model's small-strain modulus from a network is positive and follows the
    policy, over the app's slider ranges (a network the core refuses says so in a sentence instead)."""
    try:
        net = Network(polymer=polymer, nu=nu, T=T, f=f, filler_fraction=phi, entanglements=ent)
    except ParameterError as e:
        assert "at least" in str(e)
        return
    for name, m in MODELS.items():
        p = net.model_params(m)
        G0 = m.small_strain_modulus(**p)
        assert G0 > 0 and G0 == pytest.approx(_expected_G0(name, net), rel=1e-9), name
