"""The polymer table as data (network_models.materials): schema, sources, derived values, the seal and hose
polymers, user tables (--polymers FILE / NETSTRETCH_POLYMERS) and the χ rows for their swelling solvents."""

from __future__ import annotations

import json
import math
import re
import tomllib
from importlib import resources

import mpmath as mp
import pytest
from scipy.constants import R

from network_models import materials
from network_models.cli import main
from network_models.materials import get_polymer, load_polymer_table, polymers, use_polymer_table
from network_models.network import Network
from network_models.swelling import chi_values, default_chi, get_solvent, swelling_estimate

NEW_KEYS = ["NBR-18", "NBR-28", "NBR-33", "NBR-41", "HNBR", "FKM", "CR", "ACM", "IIR", "VMQ", "BR"]
OLD_KEYS = ["NR", "SBR", "EPDM", "PDMS"]


@pytest.fixture(autouse=True)
def _builtin_table_only():
    use_polymer_table(None)
    yield
    use_polymer_table(None)


def _raw():
    return tomllib.loads(resources.files("network_models").joinpath("polymers.toml").read_text("utf-8"))


# ---- schema and sanity ----------------------------------------------------------------------------
# Sane ranges for gum rubbers [common practice: densities of hydrocarbon to fluorinated rubbers, volume
# expansion of rubbers a few 1e-4 1/K, plateau moduli 0.1–2 MPa, characteristic ratios 4–10].
SANE = {
    "density_kg_m3": (800.0, 2200.0), "monomer_g_mol": (20.0, 200.0), "kuhn_g_mol": (50.0, 1000.0),
    "c_inf": (3.0, 12.0), "kuhn_length_nm": (0.5, 2.0), "plateau_MPa": (0.1, 2.0), "plateau_T_K": (273.0, 450.0),
    "entanglement_g_mol": (1000.0, 20000.0), "expansion_1_K": (3e-4, 1.2e-3),
}
#: optional columns (issue #20): T_g of rubbers from silicones (≈ 150 K) to high-ACN nitrile (≈ 260 K), upper
#: service temperature 50–300 °C [common practice]
SANE_OPTIONAL = {"glass_K": (140.0, 270.0), "service_max_K": (323.0, 573.0)}


def test_every_row_has_source_status_and_sane_values():
    raw = _raw()
    assert set(NEW_KEYS + OLD_KEYS) <= set(raw)
    for key, row in raw.items():
        assert row["source"].strip() and row["status"] in {"read", "memory"}, key
        for name, (lo, hi) in SANE.items():
            assert lo <= row[name] <= hi, (key, name, row[name])
        for name, (lo, hi) in SANE_OPTIONAL.items():
            assert name not in row or lo <= row[name] <= hi, (key, name, row[name])
        assert set(SANE) <= set(row["sources"]) <= set(SANE) | set(SANE_OPTIONAL), key  # every value names its source
        assert {n for n in SANE_OPTIONAL if n in row} == {n for n in SANE_OPTIONAL if n in row["sources"]}, key
        for name, text in row["sources"].items():
            assert re.search(r"\[(read|memory|derived|estimate)", text), (key, name, text)
        # a row that says "read" must not contain a recalled or estimated value
        if row["status"] == "read":
            assert not any(re.search(r"\[(memory|estimate)", t) for t in row.get("sources", {}).values()), key


# IUPAC standard atomic weights (conventional values) [from memory]
_ATOMIC = {"C": 12.011, "H": 1.008, "N": 14.007, "O": 15.999, "Cl": 35.45, "F": 18.998, "Si": 28.085}


def _mass(formula):
    return sum(_ATOMIC[el] * int(n or 1) for el, n in re.findall(r"([A-Z][a-z]?)(\d*)", formula))


@pytest.mark.parametrize("key,formula", [("NR", "C5H8"), ("BR", "C4H6"), ("IIR", "C4H8"), ("PDMS", "C2H6OSi"),
                                         ("VMQ", "C2H6OSi"), ("CR", "C4H5Cl"), ("ACM", "C5H8O2")])
def test_repeat_unit_masses_from_formulas(key, formula):
    assert get_polymer(key).monomer_molar_mass * 1000 == pytest.approx(_mass(formula), abs=0.02)


def test_styrene_butadiene_repeat_unit():
    m = 1.0 / (0.235 / _mass("C8H8") + 0.765 / _mass("C4H6"))  # number average at 23.5 wt % styrene [derived]
    assert get_polymer("SBR").monomer_molar_mass * 1000 == pytest.approx(m, abs=0.05)


@pytest.mark.parametrize("key,acn", [("NBR-18", 0.18), ("NBR-28", 0.28), ("NBR-33", 0.33), ("NBR-41", 0.41)])
def test_nitrile_repeat_unit_is_the_number_average(key, acn):
    # number-average repeat unit of a copolymer with mass fraction w of C3H3N and 1 − w of C4H6 [derived]
    m = 1.0 / (acn / _mass("C3H3N") + (1 - acn) / _mass("C4H6"))
    assert get_polymer(key).monomer_molar_mass * 1000 == pytest.approx(m, abs=0.01)


def test_derived_values_follow_their_formulas():
    raw = _raw()
    theta_half = math.radians(34.0)  # half the bond-angle supplement 68° of a C–C backbone [from memory]
    for key, row in raw.items():
        src = row.get("sources", {})
        if src.get("entanglement_g_mol", "").startswith("ρRT/G_N⁰"):  # rows whose M_e was derived
            # Ferry's convention G_N⁰ = ρRT/M_e (R from scipy.constants, CODATA)
            me = row["density_kg_m3"] * R * row["plateau_T_K"] / (row["plateau_MPa"] * 1e6) * 1000
            assert row["entanglement_g_mol"] == pytest.approx(me, rel=0.01), key
        if "cos²34°" in src.get("kuhn_g_mol", ""):
            # Rubinstein & Colby (2003) ch. 2 [from memory]: M_K = m_b·C∞/cos²(θ/2), two backbone bonds per unit
            mk = row["monomer_g_mol"] / 2 * row["c_inf"] / math.cos(theta_half) ** 2
            assert row["kuhn_g_mol"] == pytest.approx(mk, rel=0.01), key
        if "0.154 nm/cos 34°" in src.get("kuhn_length_nm", ""):
            assert row["kuhn_length_nm"] == pytest.approx(row["c_inf"] * 0.154 / math.cos(theta_half), rel=0.01), key


def test_values_marked_read_match_what_was_read():
    # butyl rubber 0.92 g/cm³: Brady, Materials Handbook (1971) p. 306 as quoted in the CAMEO database [read];
    # chloroprene rubber 1.23–1.25 g/cm³ and linear α 185–250e-6 1/K on polymer data pages [read]
    assert get_polymer("IIR").density == pytest.approx(920.0)
    assert 1230.0 <= get_polymer("CR").density <= 1250.0
    assert 3 * 185e-6 <= get_polymer("CR").expansion <= 3 * 250e-6
    # nitrile rubbers 0.92–1.01 g/cm³ at 20 °C over all ACN levels (a polymer-data handbook's NBR entry [read]),
    # rising with ACN content [common practice]
    nbr = [get_polymer(k).density for k in ("NBR-18", "NBR-28", "NBR-33", "NBR-41")]
    assert all(920.0 <= d <= 1010.0 for d in nbr) and nbr == sorted(nbr)
    # fluoroelastomer dipolymer: over 1800 kg/m³ [read]; VDF/HFP 78/22 mol (Fluoroelastomers Handbook 2006,
    # ch. 2 [read]) → number-average repeat unit [derived]
    assert get_polymer("FKM").density > 1800.0
    m = 0.78 * _mass("C2H2F2") + 0.22 * _mass("C3F6")
    assert get_polymer("FKM").monomer_molar_mass * 1000 == pytest.approx(m, abs=0.05)


@pytest.mark.parametrize("key", NEW_KEYS + OLD_KEYS)
def test_every_polymer_makes_a_network(key):
    from network_models.models import MODELS

    net = Network(polymer=key, nu=150.0)
    p = get_polymer(key)
    assert net.Mc == pytest.approx(p.density / 150.0)  # M_c = ρ/ν (docs/methods.md §mc-and-n)
    assert net.N == pytest.approx(net.Mc / p.kuhn_molar_mass)
    for m in MODELS.values():
        assert set(net.model_params(m)) == set(m.params.names())


def test_keys_are_case_insensitive_and_unknown_keys_say_how_to_add():
    assert get_polymer("nbr-33").key == "NBR-33"
    with pytest.raises(KeyError, match="--polymers FILE"):
        get_polymer("NBR-50")


# ---- user tables ----------------------------------------------------------------------------------
USER = """
[NBR-33]
plateau_MPa = 0.62
source = "in-house relaxation test 17"

[OURFKM]
title = "peroxide-cure fluoroelastomer, 70 % F"
density_kg_m3 = 1890.0
monomer_g_mol = 90.0
kuhn_g_mol = 380.0
c_inf = 6.0
kuhn_length_nm = 1.1
plateau_MPa = 0.5
plateau_T_K = 298.0
entanglement_g_mol = 9300.0
expansion_1_K = 4.6e-4
source = "in-house data sheet 3"

[[chi]]
polymer = "OURFKM"
solvent = "MEK"
chi = 0.31
temperature_C = 23.0
source = "in-house swelling series 9"
"""


def test_user_table_overrides_and_extends(tmp_path):
    f = tmp_path / "ours.toml"
    f.write_text(USER, encoding="utf-8")
    builtin = get_polymer("NBR-33")
    use_polymer_table(f)
    p = get_polymer("NBR-33")
    assert p.plateau_modulus == pytest.approx(0.62e6) and p.status == "user"
    assert p.density == builtin.density and p.kuhn_molar_mass == builtin.kuhn_molar_mass  # inherited
    assert p.value_source("plateau_MPa") == "in-house relaxation test 17"
    assert p.value_source("density_kg_m3") == builtin.value_source("density_kg_m3")
    assert get_polymer("OURFKM").density == 1890.0 and "OURFKM" in polymers()
    assert Network(polymer="OURFKM", nu=100.0).N == pytest.approx(1890.0 / 100.0 / 0.380)
    # the user's χ row is used (and ranks first: status "user")
    cv = default_chi("OURFKM", "2-butanone")
    assert cv.chi == 0.31 and cv.status == "user"
    use_polymer_table(None)
    assert get_polymer("NBR-33").plateau_modulus == builtin.plateau_modulus and "OURFKM" not in polymers()


@pytest.mark.parametrize("text,words", [
    ("[NBR-33]\nplateau_MPa = 0.62\n", ["[NBR-33]", "'source'"]),
    ("[X1]\ntitle = 'x'\nsource = 's'\ndensity_kg_m3 = 900.0\n", ["[X1]", "'monomer_g_mol'", "missing"]),
    ("[NR]\ndensity_kg_m3 = 0.91\nsource = 's'\n", ["[NR]", "'density_kg_m3'", "800–2200 kg/m³", "unit"]),
    ("[NR]\ndensty_kg_m3 = 910.0\nsource = 's'\n", ["[NR]", "densty_kg_m3", "unknown"]),
    ("[NR]\nplateau_MPa = 'high'\nsource = 's'\n", ["[NR]", "'plateau_MPa'", "not a number"]),
    ("[NR]\nsource = 's'\nstatus = 'sure'\n", ["[NR]", "'status'"]),
    ("[NR\ndensity = 1\n", ["not valid TOML"]),
    ("[[chi]]\npolymer = 'NR'\nsolvent = 'water'\nchi = 0.4\nsource = 's'\n", ["chi #1", "'solvent'", "water"]),
    ("[[chi]]\npolymer = 'NR'\nsolvent = 'toluene'\nchi = 4\nsource = 's'\n", ["chi #1", "'chi'"]),
    ("[[chi]]\npolymer = 'XX'\nsolvent = 'toluene'\nchi = 0.4\nsource = 's'\n", ["chi #1", "'XX'"]),
])
def test_user_table_mistakes_name_row_and_field(tmp_path, text, words):
    f = tmp_path / "bad.toml"
    f.write_text(text, encoding="utf-8")
    with pytest.raises(ValueError) as exc:
        load_polymer_table(f)
    msg = str(exc.value)
    assert str(f) in msg
    for w in words:
        assert w in msg, (w, msg)
    # a refused file leaves the table in force unchanged
    with pytest.raises(ValueError):
        use_polymer_table(f)
    assert get_polymer("NR").density == 910.0


def test_missing_file_is_a_sentence(tmp_path):
    with pytest.raises(ValueError, match="not found"):
        load_polymer_table(tmp_path / "nope.toml")


def test_environment_variable(tmp_path, monkeypatch):
    f = tmp_path / "env.toml"
    f.write_text("[NR]\ndensity_kg_m3 = 920.0\nsource = 'lab'\n", encoding="utf-8")
    monkeypatch.setenv(materials.ENV_VAR, str(f))
    monkeypatch.setattr(materials, "_active", materials._UNSET)
    materials.polymers.cache_clear()
    assert get_polymer("NR").density == 920.0


def test_cli_polymers_option_and_listing(tmp_path, capsys):
    f = tmp_path / "ours.toml"
    f.write_text(USER, encoding="utf-8")
    assert main(["swell", "--dry", "1.000g", "--swollen", "1.80g", "--solvent", "MEK", "--polymer", "OURFKM",
                 "--polymers", str(f), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["polymer"] == "OURFKM" and doc["chi"]["value"] == 0.31 and doc["chi"]["status"] == "user"
    use_polymer_table(None)
    assert main(["models", "--list-polymers"]) == 0
    out = capsys.readouterr().out
    for key in NEW_KEYS + OLD_KEYS:
        assert re.search(rf"^{re.escape(key)}\s", out, re.M), key
    assert "[derived]" in out and "[memory]" in out
    assert main(["models", "--list-polymers", "--json", "--polymers", str(f)]) == 0
    rows = {r["key"]: r for r in json.loads(capsys.readouterr().out)["polymers"]}
    assert rows["OURFKM"]["values"]["density_kg_m3"]["value"] == 1890.0
    assert rows["NBR-33"]["values"]["plateau_MPa"]["source"] == "in-house relaxation test 17"
    assert main(["swell", "--dry", "1g", "--swollen", "2g", "--polymers", str(tmp_path / "nope.toml")]) == 2
    assert "not found" in capsys.readouterr().err


# ---- χ rows ---------------------------------------------------------------------------------------
def _fr_nu(phi, chi, V1, f=4):
    # Flory & Rehner 1943 (J. Chem. Phys. 11:521) [memory, standard form], affine,
    # docs/methods.md §flory-rehner, in mpmath
    phi = mp.mpf(phi)
    return -(mp.log(1 - phi) + phi + chi * phi**2) / (V1 * (mp.cbrt(phi) - 2 * phi / f))


def _solvent_table():
    return tomllib.loads(resources.files("network_models").joinpath("solvents.toml").read_text("utf-8"))


@pytest.mark.parametrize("row", chi_values(), ids=lambda r: f"{r.polymer}-{r.solvent}-{r.chi:g}-{r.status}")
def test_swelling_with_every_chi_row(row):
    # each χ row through the whole estimate, against Flory–Rehner written here: masses made for a gel whose
    # rubber fraction gives ν ≈ 200 mol/m³ with this χ (φ found by mpmath)
    sol = get_solvent(row.solvent)
    V1 = sol.molar_volume
    phi = mp.findroot(lambda p: _fr_nu(p, row.chi, V1) - 200, 0.5 if row.chi > 0.6 else 0.25)
    rho_p = get_polymer(row.polymer).density
    dry = 1.0
    swollen = dry + (dry / rho_p) * (1 - phi) / phi * sol.density
    est = swelling_estimate(dry, float(swollen), row.solvent, row.polymer, chi=row.chi)
    assert est.phi == pytest.approx(float(phi), rel=1e-9)
    assert est.nu_affine == pytest.approx(200.0, rel=1e-7)


def test_estimate_rows_recompute_from_their_solubility_parameters():
    # χ = 0.34 + V₁(δ_s − δ_p)²/RT at 25 °C (Hildebrand–Scatchard plus the entropic 0.34 [common practice]);
    # the row is rounded to two decimals
    table = _solvent_table()
    estimates = [r for r in table["chi"] if r["status"] == "estimate"]
    assert len(estimates) >= 20
    for r in estimates:
        s = table["solvent"][get_solvent(r["solvent"]).key]
        V1 = s["molar_mass_g_mol"] / s["density_g_cm3"] * 1e-6
        chi = 0.34 + V1 * ((s["delta_MPa05"] - r["delta_polymer_MPa05"]) * 1e3) ** 2 / (R * 298.15)
        assert r["chi"] == pytest.approx(chi, abs=0.005), (r["polymer"], r["solvent"])


@pytest.mark.parametrize("polymer,solvent", [
    ("NBR-18", "acetone"), ("NBR-28", "2-butanone"), ("NBR-33", "toluene"), ("NBR-41", "acetone"),
    ("FKM", "2-butanone"), ("FKM", "acetone"), ("CR", "toluene"), ("IIR", "cyclohexane"), ("IIR", "toluene"),
    ("VMQ", "toluene"), ("VMQ", "n-heptane"), ("BR", "toluene"), ("EPDM", "cyclohexane"), ("HNBR", "2-butanone"),
    ("ACM", "2-butanone"),
])
def test_usual_swelling_solvents_have_a_default(polymer, solvent):
    cv = default_chi(polymer, solvent)
    assert cv.source and cv.status in {"handbook", "memory", "estimate"}


def test_default_prefers_sourced_over_recalled():
    # the rule (issue 10): a sourced χ beats a recalled one even when the recalled row is marked default
    nr = chi_values("NR", "toluene")
    assert {r.status for r in nr} == {"handbook", "common"}
    cv = default_chi("NR", "toluene")
    # common practice 0.39 ranks with the handbook 0.36 (Orwoll & Arnold, Table 14.1) and is the table's
    # default (docs/methods.md §chi-nr-toluene); a merely recalled row marked default still loses
    assert cv.status == "common" and cv.chi == 0.39
    rows = [r.__class__(**{**r.__dict__, "status": "memory" if r.status == "common" else r.status,
                           "default": r.status == "common"}) for r in nr]
    from network_models import materials

    orig = materials.chi_values
    try:
        materials.chi_values = lambda p=None, s=None: rows
        assert materials.default_chi("NR", "toluene").status == "handbook"
    finally:
        materials.chi_values = orig


def test_default_keeps_to_the_test_temperature():
    # polychloroprene–toluene 0.14 was measured at 100 °C (Orwoll & Arnold, Table 14.1 [handbook]): used for a
    # swelling test near 100 °C, not at 23 °C, where the estimate row serves and a notice says so
    assert default_chi("CR", "toluene", 373.15).chi == 0.14
    room = default_chi("CR", "toluene", 296.15)
    assert room.status == "estimate"
    est = swelling_estimate(1.0, 2.5, "toluene", "CR")
    assert any(getattr(n, "kind", "") == "chi-unsourced" for n in est.notes)
    hot = swelling_estimate(1.0, 2.5, "toluene", "CR", T=373.15)
    assert hot.chi.chi == 0.14


def test_every_polymer_command_takes_the_user_table(tmp_path, capsys):
    # the CLI adds --polymers to each command that names a polymer; a user plateau modulus changes the
    # entanglement-removed row of the crosslink table (G − G_e)/(RT) (docs/methods.md §entanglement-policy)
    from network_models.cli import main

    t = tmp_path / "ours.toml"
    t.write_text('[NR]\nplateau_MPa = 0.10\nsource = "test table"\n', "utf-8")
    args = ["crosslinks", "--modulus", "0.55MPa", "--kind", "G", "--temperature", "23C", "--polymer", "NR", "--json"]
    from network_models.materials import use_polymer_table

    assert main(args) == 0
    base = json.loads(capsys.readouterr().out)
    try:
        assert main([*args, "--polymers", str(t)]) == 0
        ours = json.loads(capsys.readouterr().out)
    finally:
        use_polymer_table(None)  # back to the built-in table for the other tests

    def row(doc):
        return next(r for r in doc["rows"] if r["key"] == "affine-no-entanglement")["strand_density"]

    assert row(ours) > row(base)
