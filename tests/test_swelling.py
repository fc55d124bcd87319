"""Checks of network_models.swelling (Flory–Rehner) and the solvent/χ table."""

from __future__ import annotations

import mpmath as mp
import pytest

from network_models.network import get_polymer
from network_models.swelling import (
    chi_values,
    compare_with_modulus,
    flory_rehner_nu,
    get_solvent,
    kraus_gum_fraction,
    kraus_roots,
    polymer_volume_fraction,
    solvents,
    swelling_estimate,
    swollen_fraction,
)

V1_TOLUENE = 106.85e-6  # m³/mol, docs/methods.md §solvents [derived]

# docs/methods.md §flory-rehner check table [derived from Flory & Rehner 1943, J. Chem. Phys. 11:521, affine and phantom
# forms, V₁ = 106.85 cm³/mol]; ν in mol/cm³:
#   φ: (χ=0.39 affine, χ=0.39 phantom f=4, χ=0.465 affine, χ=0.465 phantom f=4)
FR_TABLE = {
    0.15: (7.6785e-05, 1.3189e-04, 4.2176e-05, 7.2445e-05),
    0.20: (1.4562e-04, 2.4145e-04, 8.7711e-05, 1.4543e-04),
    0.25: (2.4663e-04, 3.9539e-04, 1.5975e-04, 2.5611e-04),
    0.30: (3.8873e-04, 6.0325e-04, 2.6711e-04, 4.1452e-04),
}


@pytest.mark.parametrize("phi", sorted(FR_TABLE))
def test_flory_rehner_check_table(phi):
    a39, p39, a465, p465 = FR_TABLE[phi]
    to_cm3 = 1e-6  # mol/m³ → mol/cm³
    # The table is printed to 5 significant digits: relative tolerance 1e-4.
    assert flory_rehner_nu(phi, 0.39, V1_TOLUENE) * to_cm3 == pytest.approx(a39, rel=1e-4)
    assert flory_rehner_nu(phi, 0.39, V1_TOLUENE, 4, "phantom") * to_cm3 == pytest.approx(p39, rel=1e-4)
    assert flory_rehner_nu(phi, 0.465, V1_TOLUENE) * to_cm3 == pytest.approx(a465, rel=1e-4)
    assert flory_rehner_nu(phi, 0.465, V1_TOLUENE, 4, "phantom") * to_cm3 == pytest.approx(p465, rel=1e-4)


def test_general_functionality_limits():
    # Phantom elastic term (1 − 2/f)φ^⅓ → φ^⅓ as f → ∞; affine φ^⅓ − 2φ/f likewise (docs/methods.md §flory-rehner).
    a = flory_rehner_nu(0.2, 0.39, V1_TOLUENE, 1e9, "affine")
    p = flory_rehner_nu(0.2, 0.39, V1_TOLUENE, 1e9, "phantom")
    assert a == pytest.approx(p, rel=1e-6)


def test_swollen_fraction_inverts_flory_rehner():
    for nu in (50.0, 150.0, 400.0):
        phi = swollen_fraction(nu, 0.39, V1_TOLUENE)
        assert flory_rehner_nu(phi, 0.39, V1_TOLUENE) == pytest.approx(nu, rel=1e-9)


@pytest.mark.parametrize("key,v1_cm3", [
    # docs/methods.md §solvents: molar volumes at 25 °C from molar mass/density [derived; densities from memory]
    ("toluene", 106.85), ("cyclohexane", 108.75), ("benzene", 89.40), ("acetone", 74.03),
    ("2-butanone", 90.17), ("n-heptane", 147.46),
])
def test_solvent_molar_volumes(key, v1_cm3):
    assert get_solvent(key).molar_volume * 1e6 == pytest.approx(v1_cm3, rel=1e-4)


# IUPAC conventional atomic weights [from memory]:
# C 12.011, H 1.008, O 15.999.
_ATOMIC = {"C": 12.011, "H": 1.008, "O": 15.999}


def test_solvent_molar_masses_from_formula():
    import re

    for s in solvents().values():
        mass = sum(_ATOMIC[el] * int(n or 1) for el, n in re.findall(r"([A-Z][a-z]?)(\d*)", s.formula))
        assert s.molar_mass * 1000 == pytest.approx(mass, abs=2e-3), s.key


@pytest.mark.parametrize("polymer,solvent,chi", [
    # Orwoll & Arnold, Table 14.1 in Mark (ed.), Physical Properties of Polymers Handbook, 2nd ed. (2007),
    # as listed in docs/methods.md §chi-table [handbook]
    ("NR", "toluene", 0.36), ("NR", "benzene", 0.40), ("NR", "cyclohexane", 0.31),
    ("BR", "cyclohexane", 0.46), ("IIR", "cyclohexane", 0.43), ("PDMS", "toluene", 0.445),
])
def test_handbook_chi_rows(polymer, solvent, chi):
    rows = [r for r in chi_values(polymer, solvent) if r.status == "handbook"]
    assert rows and rows[0].chi == pytest.approx(chi)
    assert "Orwoll & Arnold" in rows[0].source and "14.1" in rows[0].source


def test_recalled_chi_rows_are_flagged():
    # NR–toluene 0.39 and the SBR/EPDM values are from memory (docs/methods.md §chi-table), never "handbook".
    nr = [r for r in chi_values("NR", "toluene") if r.chi == 0.39]
    assert nr and nr[0].status == "common" and "from memory" in nr[0].source
    for p in ("SBR", "EPDM"):
        assert all(r.status == "memory" for r in chi_values(p))


def test_volume_fraction_from_masses():
    # φ = (m_d/ρ_p)/(m_d/ρ_p + (m_s − m_d)/ρ_s), docs/methods.md §volume-fraction,
    # worked by hand for 1 g dry, 3 g swollen,
    # ρ_p = 900, ρ_s = 800 kg/m³: (1/900)/((1/900) + (2/800)) = 0.30769...
    assert polymer_volume_fraction(1.0, 3.0, 900.0, 800.0) == pytest.approx((1 / 900) / (1 / 900 + 2 / 800))
    assert polymer_volume_fraction(1.0, 3.0, 900.0, 800.0) == pytest.approx(0.3076923, rel=1e-6)


def test_swelling_estimate_and_band():
    r = swelling_estimate(1.0e-3, 3.2e-3, "toluene", "NR", extracted=0.96e-3)
    rho_p = get_polymer("NR").density
    rho_s = get_solvent("toluene").density
    phi = (0.96e-3 / rho_p) / (0.96e-3 / rho_p + (3.2e-3 - 0.96e-3) / rho_s)
    assert r.phi == pytest.approx(phi)
    assert r.soluble_fraction == pytest.approx(0.04)
    # default χ: 0.39, common practice of the rubber literature (docs/methods.md §chi-nr-toluene), not the
    # handbook's dilute-end 0.36 (Orwoll & Arnold, Table 14.1), which stays selectable
    assert r.chi.chi == 0.39 and r.chi.status == "common" and r.chi_used == 0.39
    lo, hi = r.nu_band("affine")
    assert lo > r.nu_affine > hi  # better solvent (lower χ) needs more strands for the same swelling
    assert r.junction_density() == pytest.approx(r.nu_affine / 2)  # μ_j = 2ν/f, f = 4
    assert r.nu_phantom > r.nu_affine
    # the other mass convention (dry = re-dried network, initial = before swelling) gives the same φ
    r2 = swelling_estimate(0.96e-3, 3.2e-3, "toluene", "NR", initial=1.0e-3)
    assert r2.phi == pytest.approx(r.phi) and r2.soluble_fraction == pytest.approx(0.04)


def test_user_chi_and_missing_pair():
    r = swelling_estimate(1.0, 3.0, "toluene", "EPDM", chi=0.49)
    assert r.chi.status == "user"
    with pytest.raises(KeyError, match="give χ yourself"):
        swelling_estimate(1.0, 3.0, "toluene", "EPDM")


def _kraus_mp(vr0, v_rf, phi, c):
    # Kraus 1963 (J. Appl. Polym. Sci. 7:861) [from memory]: V_r0/V_rf = 1 − m·φ/(1 − φ),
    # m = 3c(1 − V_r0^⅓) + V_r0 − 1, written here with mpmath
    m = 3 * c * (1 - mp.cbrt(vr0)) + vr0 - 1
    return vr0 / v_rf - (1 - m * phi / (1 - phi))


def _kraus_reference(v_rf, phi, c=1.17):
    """All roots on (0, 1) by mpmath: sign changes on a fine grid refined with findroot (bisection-free),
    and the physical one, nearest V_rf.  None when the relation has no root."""
    v_rf, phi, c = mp.mpf(v_rf), mp.mpf(phi), mp.mpf(c)
    xs = [mp.mpf(10) ** (k / 4 - 12) for k in range(36)] + [mp.mpf(i) / 1000 for i in range(1, 1000)]
    roots = []
    for a, b in zip(xs[:-1], xs[1:], strict=True):
        fa, fb = _kraus_mp(a, v_rf, phi, c), _kraus_mp(b, v_rf, phi, c)
        if fa == 0 or fa * fb < 0:
            roots.append(mp.findroot(lambda x: _kraus_mp(x, v_rf, phi, c), (a, b), solver="anderson"))
    if not roots:
        return None, roots
    return min(roots, key=lambda r: abs(r - v_rf)), roots


@pytest.mark.parametrize("phi_f", [0.0, 0.05, 0.10, 0.15, 0.20, 0.25, 0.28, 0.29, 0.30, 0.33, 0.35, 0.38, 0.40])
@pytest.mark.parametrize("v_rf", [0.25, 0.35, 0.45, 0.55])
def test_kraus_root_against_mpmath(phi_f, v_rf):
    # Kraus correction over the carbon-black range φ_f ≤ 0.40 (issue 10 item 2), c = 1.17 for reinforcing
    # black [from memory, Kraus 1963].  No published worked example with numbers was found with the search
    # tool, so the check is an independent root search of Kraus's relation written above.
    if phi_f == 0.0:
        assert kraus_gum_fraction(v_rf, 0.0) == v_rf
        return
    ref, roots = _kraus_reference(v_rf, phi_f)
    if ref is None:
        with pytest.raises(ValueError, match="no solution"):
            kraus_gum_fraction(v_rf, phi_f)
        return
    got = kraus_gum_fraction(v_rf, phi_f)
    assert got == pytest.approx(float(ref), rel=1e-9)
    assert got < v_rf  # adhering filler restricts swelling: the gum swells more (Kraus 1963 [from memory])
    assert kraus_roots(v_rf, phi_f) == pytest.approx([float(x) for x in roots], rel=1e-9)


def test_kraus_past_the_end_point_bracket():
    # At φ_f ≥ 1/(3c) ≈ 0.285 both ends of (0, 1) give the same sign [derived], which is where the old
    # end-point bracket answered "no solution" although the physical root exists (issue 10 item 2).
    v_rf, phi_f, c = 0.45, 0.35, 1.17
    assert _kraus_mp(mp.mpf("1e-12"), v_rf, phi_f, c) * _kraus_mp(mp.mpf(1) - mp.mpf("1e-12"), v_rf, phi_f, c) > 0
    ref, roots = _kraus_reference(v_rf, phi_f, c)
    assert len(roots) == 2 and ref is not None
    assert kraus_gum_fraction(v_rf, phi_f, c) == pytest.approx(float(ref), rel=1e-9)
    # and through the whole estimate (about 95 phr carbon black in a gum of density 910 kg/m³)
    est = swelling_estimate(1.0, 1.9, "toluene", "NR", filler_fraction=0.35)
    assert est.kraus["V_r0"] < est.phi_measured and est.nu_affine > 0


def test_kraus_without_a_root_is_a_sentence():
    # φ_f = 0.40 with a very swollen gel (V_rf = 0.2): mpmath finds no root either
    ref, roots = _kraus_reference(0.2, 0.40)
    assert ref is None and roots == []
    with pytest.raises(ValueError, match="filler fraction \\(volume, not phr"):
        kraus_gum_fraction(0.2, 0.40)


def test_kraus_in_the_swelling_estimate():
    plain = swelling_estimate(1.0, 2.5, "toluene", "NR", rubber_fraction=0.7)
    kraus = swelling_estimate(1.0, 2.5, "toluene", "NR", rubber_fraction=0.7, filler_fraction=0.15)
    assert kraus.nu_affine < plain.nu_affine
    assert kraus.kraus["V_rf"] == pytest.approx(plain.phi)
    # without a recipe rubber fraction it follows from the filler volume fraction and densities:
    # w_r = (1 − φ)ρ_p / ((1 − φ)ρ_p + φρ_f), worked by hand for φ = 0.2, ρ_p = 910, ρ_f = 1800 kg/m³: 0.66912
    est = swelling_estimate(1.0, 2.5, "toluene", "NR", filler_fraction=0.2)
    rho_s = get_solvent("toluene").density
    assert est.phi_measured == pytest.approx(polymer_volume_fraction(1.0, 2.5, 910.0, rho_s, 0.669118), rel=1e-5)


def test_bad_input_messages():
    with pytest.raises(ValueError, match="swollen mass"):
        swelling_estimate(3.0, 1.0, "toluene", "NR")
    with pytest.raises(ValueError, match="exceeds the dry mass"):
        swelling_estimate(1.0, 3.0, "toluene", "NR", extracted=1.2)
    with pytest.raises(ValueError, match="too poor"):
        flory_rehner_nu(0.2, 1.2, V1_TOLUENE)
    with pytest.raises(KeyError, match="unknown solvent"):
        get_solvent("water")


def test_compare_with_modulus_side_by_side():
    from network_models.crosslinks import from_modulus

    r = swelling_estimate(1.0, 3.2, "toluene", "NR")
    rows = compare_with_modulus(r, from_modulus(0.5e6, "G", polymer="NR"))
    aff = rows[0]
    assert aff["assumption"] == "affine"
    assert aff["ratio"] == pytest.approx(aff["swelling_strand_density"] / aff["modulus_strand_density"])


# ----- χ in use and the band of published values (issue #20 item 6, docs/methods.md §chi) -------------------
def _toml_rows():
    import tomllib
    from importlib import resources

    return tomllib.loads(resources.files("network_models").joinpath("solvents.toml").read_text("utf-8"))["chi"]


def _mp_fr_nu(phi, chi, V1, f=4, network="affine"):
    """Flory & Rehner 1943 (J. Chem. Phys. 11:521), general f, written here in mpmath (mol/m³)."""
    with mp.workdps(30):
        phi, chi = mp.mpf(phi), mp.mpf(chi)
        lhs = -(mp.log(1 - phi) + phi + chi * phi**2)
        cube = phi ** (mp.mpf(1) / 3)
        el = cube - 2 * phi / f if network == "affine" else (1 - mp.mpf(2) / f) * cube
        return float(lhs / (mp.mpf(V1) * el))


def test_default_chi_and_band_are_what_the_table_says():
    # the table (network_models/solvents.toml) read here with tomllib: the NR–toluene default row and its spread
    rows = [r for r in _toml_rows() if r["polymer"] == "NR" and r["solvent"] == "toluene"]
    default = [r for r in rows if r["default"]]
    assert len(default) == 1 and default[0]["chi"] == 0.39 and default[0]["status"] == "common"
    spread = default[0]["spread"]
    assert spread == 0.03  # 0.36 (Orwoll & Arnold, Table 14.1 [handbook]) … 0.393 (Sheehan & Bisio 1966 [from memory])
    rho_p, sol = get_polymer("NR").density, get_solvent("toluene")
    est = swelling_estimate(1.0e-3, 3.2e-3, "toluene", "NR")
    phi = (1.0e-3 / rho_p) / (1.0e-3 / rho_p + 2.2e-3 / sol.density)
    assert est.chi_used == 0.39 and est.chi_spread == spread
    for net in ("affine", "phantom"):
        lo, hi = est.nu_band_chi[net]
        assert lo == pytest.approx(_mp_fr_nu(phi, 0.39 - spread, sol.molar_volume, 4, net), rel=1e-10)
        assert hi == pytest.approx(_mp_fr_nu(phi, 0.39 + spread, sol.molar_volume, 4, net), rel=1e-10)
    d = est.to_dict()
    assert d["chi_used"] == 0.39 and d["chi_band_published"] == pytest.approx([0.36, 0.42])
    assert d["nu_band_chi"]["affine"] == pytest.approx(list(est.nu_band_chi["affine"]))
    assert any("χ in use: 0.39" in str(n) for n in est.notes)  # the note the CLI text, app and report show


def test_every_chi_row_states_its_spread():
    for r in _toml_rows():
        assert 0 < r["spread"] < 1 and r["spread_basis"].strip(), (r["polymer"], r["solvent"])
        if r["status"] == "estimate":  # the estimate rule's stated error, ± 0.1 (docs/methods.md §chi)
            assert r["spread"] >= 0.1, (r["polymer"], r["solvent"])
    # a user χ has no published spread: the fixed ± 0.05 band, said so
    est = swelling_estimate(1.0, 3.0, "toluene", "EPDM", chi=0.49)
    assert est.chi_spread == 0.05 and "user" in est.chi_spread_basis


def test_nr_toluene_default_is_the_common_practice_value():
    # issue #20 item 6: 0.39 against the handbook 0.36 shifts ν by about 12 % at equal swelling.  Reference:
    # Flory–Rehner in mpmath at φ = 0.25 (V₁ = 106.85 cm³/mol, docs/methods.md §flory-rehner): ratio 1.13.
    ratio = _mp_fr_nu(0.25, 0.36, V1_TOLUENE) / _mp_fr_nu(0.25, 0.39, V1_TOLUENE)
    assert 1.10 < ratio < 1.16
    # the band shown with the default reaches the handbook value: ν at χ − spread is ν at 0.36
    est = swelling_estimate(1.0e-3, 3.2e-3, "toluene", "NR")
    hb = swelling_estimate(1.0e-3, 3.2e-3, "toluene", "NR", chi=0.36)
    assert est.nu_band_chi["affine"][0] == pytest.approx(hb.nu_affine, rel=1e-12)
    assert hb.nu_affine / est.nu_affine > 1.10
    # and the handbook row stays selectable by value, marked as such
    assert any(r.chi == 0.36 and r.status == "handbook" and not r.default for r in chi_values("NR", "toluene"))
