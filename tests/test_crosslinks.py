"""Checks of network_models.crosslinks: modulus → strand density ν, junction density μ_j = 2ν/f, M_c, N."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import R  # CODATA gas constant, J/(mol·K)

from network_models import get_model
from network_models.crosslinks import crosslink_table, from_fit, from_modulus, shear_modulus_from
from network_models.curves import TestCurve
from network_models.fitting import fit
from network_models.network import get_polymer

T = 296.15


def test_gas_constant_is_codata():
    # 2019 SI: R = N_A·k = 6.02214076e23 × 1.380649e-23 exactly, printed as 8.314462618... J/(mol·K) (CODATA 2018)
    assert R == pytest.approx(6.02214076e23 * 1.380649e-23, rel=1e-15)
    assert R == pytest.approx(8.314462618, rel=1e-10)


def test_affine_and_phantom_rows():
    G = 0.55e6
    t = from_modulus(G, "G", polymer="NR", T=T, f=4)
    aff, ph = t.row("affine"), t.row("phantom")
    # affine G = νRT; phantom G = (1 − 2/f)νRT (docs/methods.md §affine, §phantom: James & Guth; Flory)
    assert aff.nu == pytest.approx(G / (R * T), rel=1e-12)
    assert ph.nu == pytest.approx(2 * aff.nu, rel=1e-12)  # f = 4: a factor 2 (docs/methods.md §densities)
    assert aff.junction_density == pytest.approx(aff.nu / 2)  # μ_j = 2ν/f
    rho = get_polymer("NR").density
    assert aff.Mc == pytest.approx(rho / aff.nu)  # M_c = ρ/ν
    assert aff.N == pytest.approx(aff.Mc / get_polymer("NR").kuhn_molar_mass)
    # Trifunctional junctions: phantom factor 1 − 2/3 = 1/3, μ_j = 2ν/3
    t3 = from_modulus(G, "G", polymer="NR", T=T, f=3)
    assert t3.row("phantom").nu == pytest.approx(3 * aff.nu)
    assert t3.row("affine").junction_density == pytest.approx(2 * aff.nu / 3)


def test_hand_worked_value():
    # 0.5 MPa at 25 °C: ν = 0.5e6 / (8.314462618 × 298.15) = 201.70 mol/m³ (worked by hand, CODATA R)
    t = from_modulus(0.5e6, "G", T=298.15)
    assert t.row("affine").nu == pytest.approx(201.70, abs=0.01)


def test_trade_moduli_inversions():
    # E = 3G (incompressible, small strain, docs/methods.md §small-strain).
    assert shear_modulus_from(1.5e6, "E") == pytest.approx(0.5e6)
    # M100/M300: nominal stress at 100 %/300 % elongation (λ = 2, 4; docs/methods.md §trade-moduli) inverted with the
    # neo-Hookean P = G(λ − λ⁻²): 2 − 1/4 = 1.75, 4 − 1/16 = 3.9375.
    assert shear_modulus_from(1.75e6, "M100") == pytest.approx(1.0e6)
    assert shear_modulus_from(3.9375e6, "M300") == pytest.approx(1.0e6)
    # and the neo-Hookean model's own stress at λ = 2 inverts back to its G
    P = float(get_model("neo-hookean").nominal_stress("uniaxial", [2.0], {"G": 0.4e6})[0])
    assert from_modulus(P, "M100").G == pytest.approx(0.4e6)
    with pytest.raises(ValueError, match="unknown modulus kind"):
        shear_modulus_from(1e6, "M200")
    with pytest.raises(ValueError, match="positive"):
        shear_modulus_from(-1e6, "G")


def test_mooney_2c1_2c2():
    t = from_modulus(0.30e6, "2C1", c2=0.12e6, T=T)
    assert t.G == pytest.approx(0.42e6)  # 2C₁ + 2C₂: upper end of the Mooney bracket (docs/methods.md §mooney-rivlin)
    assert t.row("affine-no-entanglement").nu == pytest.approx(0.30e6 / (R * T))


def test_entanglement_share_from_plateau_modulus():
    poly = get_polymer("NR")
    Ge = poly.plateau_modulus * T / poly.plateau_temperature  # G_e ∝ T (docs/methods.md §temperature-scaling)
    t = from_modulus(0.6e6, "G", polymer="NR", T=T)
    assert t.row("affine-no-entanglement").nu == pytest.approx((0.6e6 - Ge) / (R * T))
    # a modulus below the plateau modulus leaves nothing: no number, a sentence instead
    low = from_modulus(0.2 * Ge, "G", polymer="NR", T=T).row("affine-no-entanglement")
    assert low.nu is None and "no positive" in low.note


def test_filler_and_dangling_end_rows():
    t = from_modulus(0.6e6, "G", polymer="NR", T=T, filler_fraction=0.10, Mn=250.0)
    # Guth–Gold 1 + 2.5φ + 14.1φ² = 1.3910 at φ = 0.10 (docs/methods.md §guth-gold [derived])
    assert t.row("affine-no-filler").nu == pytest.approx(0.6e6 / 1.3910 / (R * T), rel=1e-4)
    # both removed: the gum's crosslink part (G/X − G_e,gum) = νRT, with G_e,gum from the plateau modulus ∝ T
    poly = get_polymer("NR")
    Ge_gum = poly.plateau_modulus * T / poly.plateau_temperature
    assert t.row("affine-no-entanglement-no-filler").nu == pytest.approx(
        (0.6e6 / 1.3910 - Ge_gum) / (R * T), rel=1e-3)
    # Flory dangling ends: ν(1 − 2M_c/M_n)RT = G with M_c = ρ/ν (docs/methods.md §dangling-ends [memory])
    row = t.row("affine-dangling-ends")
    rho = get_polymer("NR").density
    assert row.nu * (1 - 2 * (rho / row.nu) / 250.0) * R * T == pytest.approx(0.6e6, rel=1e-12)


def test_intervals_map_through():
    t = from_modulus(0.55e6, "G", T=T, ci95=(0.50e6, 0.60e6))
    lo, hi = t.row("affine").nu_ci
    assert lo == pytest.approx(0.50e6 / (R * T)) and hi == pytest.approx(0.60e6 / (R * T))
    mlo, mhi = t.row("affine").Mc_ci
    assert mlo < t.row("affine").Mc < mhi


def test_from_fit_eight_chain_recovers_strand_density():
    # Eight-chain data made from a known strand density: μ = νRT (Arruda & Boyce 1993, μ = nkT).
    nu_true = 120.0
    mu = nu_true * R * T
    m = get_model("eight-chain")
    rng = np.random.default_rng(11)
    lam = np.linspace(1.05, 3.0, 30)
    P = m.nominal_stress("uniaxial", lam, {"mu": mu, "N": 15.0}) + 3e3 * rng.standard_normal(30)
    res = fit(m, [TestCurve("uniaxial", lam, P, temperature=T)])
    t = from_fit(res, polymer="NR")
    row = t.row("model-chain-modulus")
    assert row.nu_ci[0] < nu_true < row.nu_ci[1]
    assert row.N == pytest.approx(res.params["N"].value)
    assert t.T == T  # the curves' temperature is used
    # the small-strain modulus row carries an interval from the fit covariance
    assert t.row("affine").nu_ci is not None


def test_from_fit_tube_uses_fitted_entanglement_share():
    # Rubinstein & Panyukov 1997 [from memory]: G₀ = G_c + G_e with G_c the crosslink strands (affine νRT), so
    # the entanglement-removed row reads ν from the fitted G_c, the plain affine row from G_c + G_e.
    m = get_model("non-affine-tube")
    lam = np.linspace(1.05, 3.0, 30)
    true = {"Gc": 0.25e6, "Ge": 0.2e6}
    curves = [TestCurve(mode, lam, m.nominal_stress(mode, lam, true)) for mode in ("uniaxial", "planar")]
    res = fit(m, curves)
    t = crosslink_table(res, polymer="NR", T=T)
    assert t.row("affine-no-entanglement").nu == pytest.approx(0.25e6 / (R * T), rel=1e-5)
    assert t.row("affine").nu == pytest.approx(0.45e6 / (R * T), rel=1e-5)
    assert [r.key for r in t][:2] == ["affine", "phantom"]  # the table iterates over its rows
    assert all(isinstance(r.to_dict(), dict) for r in t)


def test_bad_input():
    with pytest.raises(ValueError, match="functionality"):
        from_modulus(0.5e6, f=2)
    with pytest.raises(KeyError, match="unknown polymer"):
        from_modulus(0.5e6, polymer="XYZ")
    with pytest.raises(ValueError, match="temperature"):
        from_modulus(0.5e6, T=-5)
