"""Checks of network_models.swelling (Flory–Rehner) and the solvent/χ table."""

from __future__ import annotations

import pytest

from network_models.network import get_polymer
from network_models.swelling import (
    chi_values,
    compare_with_modulus,
    flory_rehner_nu,
    get_solvent,
    kraus_gum_fraction,
    polymer_volume_fraction,
    solvents,
    swelling_estimate,
    swollen_fraction,
)

V1_TOLUENE = 106.85e-6  # m³/mol, physics.md §5 [derived]

# physics.md §5 check table [derived from Flory & Rehner 1943, J. Chem. Phys. 11:521, affine and phantom
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
    # Phantom elastic term (1 − 2/f)φ^⅓ → φ^⅓ as f → ∞; affine φ^⅓ − 2φ/f likewise (physics.md §5).
    a = flory_rehner_nu(0.2, 0.39, V1_TOLUENE, 1e9, "affine")
    p = flory_rehner_nu(0.2, 0.39, V1_TOLUENE, 1e9, "phantom")
    assert a == pytest.approx(p, rel=1e-6)


def test_swollen_fraction_inverts_flory_rehner():
    for nu in (50.0, 150.0, 400.0):
        phi = swollen_fraction(nu, 0.39, V1_TOLUENE)
        assert flory_rehner_nu(phi, 0.39, V1_TOLUENE) == pytest.approx(nu, rel=1e-9)


@pytest.mark.parametrize("key,v1_cm3", [
    # physics.md §5: molar volumes at 25 °C from molar mass/density [derived; densities from memory]
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
    # as listed in physics.md §5 [handbook]
    ("NR", "toluene", 0.36), ("NR", "benzene", 0.40), ("NR", "cyclohexane", 0.31),
    ("BR", "cyclohexane", 0.46), ("IIR", "cyclohexane", 0.43), ("PDMS", "toluene", 0.445),
])
def test_handbook_chi_rows(polymer, solvent, chi):
    rows = [r for r in chi_values(polymer, solvent) if r.status == "handbook"]
    assert rows and rows[0].chi == pytest.approx(chi)
    assert "Orwoll & Arnold" in rows[0].source and "14.1" in rows[0].source


def test_recalled_chi_rows_are_flagged():
    # NR–toluene 0.39 and the SBR/EPDM values are from memory (physics.md §5), never "handbook".
    nr = [r for r in chi_values("NR", "toluene") if r.chi == 0.39]
    assert nr and nr[0].status == "memory"
    for p in ("SBR", "EPDM"):
        assert all(r.status == "memory" for r in chi_values(p))


def test_volume_fraction_from_masses():
    # φ = (m_d/ρ_p)/(m_d/ρ_p + (m_s − m_d)/ρ_s), physics.md §5, worked by hand for 1 g dry, 3 g swollen,
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
    assert r.chi.chi == 0.39 and r.chi.status == "memory"
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


def test_kraus_correction():
    # Kraus 1963 (J. Appl. Polym. Sci. 7:861) [memory]: V_r0/V_rf = 1 − mφ/(1 − φ),
    # m = 3c(1 − V_r0^⅓) + V_r0 − 1.  The solution must satisfy that relation, and adhering filler
    # restricts swelling, so the gum-equivalent fraction is smaller (fewer strands than uncorrected).
    vrf, phi_f, c = 0.30, 0.15, 1.17
    vr0 = kraus_gum_fraction(vrf, phi_f, c)
    m = 3 * c * (1 - vr0 ** (1 / 3)) + vr0 - 1
    assert vr0 / vrf == pytest.approx(1 - m * phi_f / (1 - phi_f), rel=1e-10)
    assert vr0 < vrf
    assert kraus_gum_fraction(vrf, 0.0) == vrf
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
