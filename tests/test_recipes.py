"""Recipes in phr (network_models/recipes.py) and the Ellis–Welding swelling correction.

Independent values: the fractions are summed BY HAND here from phr and the densities written in this file
(the table's densities are checked against the values typed here, so a table edit cannot pass silently);
the Ellis–Welding v_r is written in the test from the formula of Ellis & Welding 1964 as the issue states it:
v_r = [(D − F·T)/ρ_r] / [(D − F·T)/ρ_r + A₀/ρ_s].  The Flory–Rehner equation is written here too.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from network_models.compounds import Compound, SwellingTest, load_manifest
from network_models.errors import DataError
from network_models.recipes import Recipe, get_ingredient, ingredient_rows, use_ingredient_table
from network_models.swelling import ellis_welding_fraction, get_solvent, swelling_estimate

ROOT = Path(__file__).resolve().parent.parent


def test_filler_fraction_by_hand():
    # densities, g/cm³: NR 0.91 (polymers.toml), N330 1.80, ZnO 5.61, stearic acid 0.94, sulfur 2.07, CBS 1.27,
    # paraffinic oil 0.87 — typed here; the table must hold the same numbers
    dens = {"NR": 0.91, "N330": 1.80, "ZnO": 5.61, "stearic-acid": 0.94, "sulfur": 2.07, "CBS": 1.27,
            "paraffinic-oil": 0.87}
    for k, d in dens.items():
        assert get_ingredient(k).density == pytest.approx(d * 1000.0)
    phr = {"NR": 100.0, "N330": 50.0, "paraffinic-oil": 10.0, "ZnO": 5.0, "stearic-acid": 2.0, "sulfur": 2.5,
           "CBS": 0.6}
    r = Recipe.from_phr(phr)
    vol = {k: v / dens[k] for k, v in phr.items()}
    total_v, total_m = sum(vol.values()), sum(phr.values())
    assert r.filler_volume_fraction == pytest.approx(vol["N330"] / total_v, rel=1e-12)
    assert r.rubber_volume_fraction == pytest.approx(vol["NR"] / total_v, rel=1e-12)
    assert r.rubber_mass_fraction == pytest.approx(100.0 / total_m, rel=1e-12)
    # F: black and ZnO (insoluble, not network); oil and stearic acid are extracted; sulfur, CBS count as rubber
    assert r.insoluble_mass_fraction == pytest.approx((50.0 + 5.0) / total_m, rel=1e-12)
    # a hand value: 27.778 / (109.890 + 27.778 + 11.494 + 0.891 + 2.128 + 1.208 + 0.472)
    assert r.filler_volume_fraction == pytest.approx(27.7778 / 153.861, rel=1e-4)


def test_manifest_ingredient_row_overrides_and_soluble_flag(tmp_path):
    extra = ingredient_rows([{"name": "ZnO", "kind": "activator", "soluble": True, "density_g_cm3": 5.60},
                             {"name": "clay", "kind": "filler", "density_g_cm3": 2.6, "source": "supplier sheet"},
                             {"name": "resin", "kind": "other", "soluble": False, "density_g_cm3": 1.1}], "test")
    r = Recipe.from_phr({"SBR": 100.0, "clay": 40.0, "ZnO": 3.0, "resin": 5.0}, extra)
    total = 148.0
    assert r.insoluble_mass_fraction == pytest.approx((40.0 + 5.0) / total)  # ZnO now extracted, resin not
    assert r.items["ZnO"].density == pytest.approx(5600.0)
    with pytest.raises(DataError, match="never extracted"):
        ingredient_rows([{"name": "x", "kind": "filler", "soluble": True, "density_g_cm3": 2.0}], "test")
    with pytest.raises(DataError, match="neither a polymer"):
        Recipe.from_phr({"NR": 100.0, "unobtainium": 1.0})
    with pytest.raises(DataError, match="add up to"):
        Recipe.from_phr({"NR": 90.0, "N330": 10.0})


def test_user_ingredient_table(tmp_path):
    f = tmp_path / "ing.toml"
    f.write_text('[N330]\ndensity_g_cm3 = 1.85\nsource = "in-house pycnometer"\n', "utf-8")
    try:
        use_ingredient_table(f)
        assert get_ingredient("N330").density == pytest.approx(1850.0)
    finally:
        use_ingredient_table(None)
    assert get_ingredient("N330").density == pytest.approx(1800.0)
    f.write_text('[N330]\ndensity_g_cm3 = 1850\n', "utf-8")
    with pytest.raises(DataError, match="g/cm³"):
        use_ingredient_table(f)
    use_ingredient_table(None)


def test_recipe_wins_and_notices_disagreement():
    c = Compound("X", metadata={"filler_volume_fraction": 0.30, "sulfur_phr": 2.0},
                 recipe={"NR": 100.0, "N330": 30.0, "sulfur": 1.5})
    phi = (30 / 1.80) / (100 / 0.91 + 30 / 1.80 + 1.5 / 2.07)
    assert c.filler_fraction == pytest.approx(phi)
    text = " ".join(c.recipe_notices)
    assert "filler_volume_fraction" in text and "sulfur_phr" in text


def _ew_by_hand(T, D, swollen, F, rho_r, rho_s):
    rubber = (D - F * T) / rho_r
    return rubber / (rubber + (swollen - D) / rho_s)


def test_ellis_welding_from_the_formula():
    T, D, S, F = 0.2340, 0.2249, 1.0384, 0.0456
    got = ellis_welding_fraction(T, D, S, F, 910.0, 867.0)
    assert got == pytest.approx(_ew_by_hand(T, D, S, F, 910.0, 867.0), rel=1e-12)
    # F = 0 and no extraction: the plain volume fraction m/ρ_r / (m/ρ_r + (S − m)/ρ_s)
    assert ellis_welding_fraction(T, T, S, 0.0, 910.0, 867.0) == pytest.approx(
        (T / 910.0) / (T / 910.0 + (S - T) / 867.0))
    with pytest.raises(ValueError, match="no rubber"):
        ellis_welding_fraction(1.0, 0.5, 2.0, 0.6, 910.0, 867.0)
    # through swelling_estimate: polymer_volume_fraction_measured is this v_r
    est = swelling_estimate(T, S, "toluene", "NR", chi=0.39, extracted=D, insoluble_fraction=F)
    rho_s = get_solvent("toluene").density
    assert est.to_dict()["polymer_volume_fraction_measured"] == pytest.approx(
        _ew_by_hand(T, D, S, F, 910.0, rho_s), rel=1e-12)


def _nu_affine(phi, chi, V1, f=4.0):  # Flory & Rehner 1943, affine, written here
    return -(math.log(1 - phi) + phi + chi * phi * phi) / (V1 * (phi ** (1 / 3) - 2 * phi / f))


def test_sample_gum_reads_back_its_generating_density():
    """QM-S2 was generated at 140 mol/m³ (sample_sets/compounds.toml [compound.generator]); with its recipe the
    Ellis–Welding correction reads ≈ 140 back, where counting every non-rubber phr as rubber read ~156."""
    m = load_manifest()
    c = m["QM-S2"]
    assert c.recipe is not None and c.swelling
    sol = get_solvent("toluene")
    F, rho_r = c.recipe.insoluble_mass_fraction, c.recipe.polymer_density
    nus, plain = [], []
    for s in c.swelling:
        vr = _ew_by_hand(s.dry, s.extracted, s.swollen, F, rho_r, sol.density)
        nus.append(_nu_affine(vr, 0.39, sol.molar_volume))
        got = s.estimate(c.polymer, c.f, c.filler_fraction, **c.swelling_options())
        assert got.nu_affine == pytest.approx(nus[-1], rel=1e-9)
        vr0 = (s.extracted / rho_r) / (s.extracted / rho_r + (s.swollen - s.extracted) / sol.density)
        plain.append(_nu_affine(vr0, 0.39, sol.molar_volume))
    mean = sum(nus) / len(nus)
    assert mean == pytest.approx(140.0, rel=0.04)  # the generator adds ~2 % scatter per specimen
    assert sum(plain) / len(plain) > 150.0


def test_compare_json_shows_recipe():
    from network_models.compare import compare
    from network_models.compare.core import result_to_dict

    m = load_manifest()
    cmp = compare([m["QM-S2B"]], spread_models=())
    doc = json.loads(json.dumps(result_to_dict(cmp.results[0]), default=str))
    rec = doc["recipe"]
    assert set(rec) >= {"phr", "filler_volume_fraction", "rubber_volume_fraction", "insoluble_mass_fraction"}
    vol = 100 / 0.91 + 30 / 1.80 + 5 / 5.61 + 2 / 0.94 + 2 / 2.07 + 0.6 / 1.27
    assert rec["filler_volume_fraction"] == pytest.approx((30 / 1.80) / vol, rel=1e-9)
    assert rec["rubber_volume_fraction"] == pytest.approx((100 / 0.91) / vol, rel=1e-9)
    assert rec["insoluble_mass_fraction"] == pytest.approx(35.0 / 139.6, rel=1e-9)
    assert rec["phr"]["N330"] == 30.0


def test_swelling_test_without_recipe_unchanged():
    s = SwellingTest(dry=1.0e-3, swollen=3.2e-3, extracted=0.96e-3, chi=0.39)
    est = s.estimate("NR")
    rho_s = get_solvent("toluene").density
    assert est.phi_measured == pytest.approx((0.96e-3 / 910) / (0.96e-3 / 910 + 2.24e-3 / rho_s))


def test_swell_cli_uses_the_compounds_recipe(capsys):
    from network_models.cli import main

    args = ["swell", "--dry", "0.2340g", "--swollen", "1.0384g", "--extracted", "0.2249g", "--json"]
    assert main(args + ["--manifest", str(ROOT / "sample_sets" / "compounds.toml"), "--compound", "QM-S2"]) == 0
    doc = json.loads(capsys.readouterr().out)
    F = 5.0 / 109.6  # ZnO 5 phr of 109.6 phr (QM-S2's recipe: NR 100, ZnO 5, stearic acid 2, sulfur 2, CBS 0.6)
    want = _ew_by_hand(0.2340, 0.2249, 1.0384, F, 910.0, get_solvent("toluene").density)
    assert doc["polymer_volume_fraction_measured"] == pytest.approx(want, rel=1e-9)
    assert doc["chi"]["value"] == 0.39  # the manifest's [swelling] χ
    assert main(args + ["--compound", "QM-S2"]) == 2  # --compound without --manifest: a user error
    assert "--manifest" in capsys.readouterr().err


def test_swelling_tab_state_uses_the_recipe():
    from app.swell_state import SwellState

    st = SwellState()
    assert st.load_sample("QM-S2")
    assert st.insoluble == pytest.approx(5.0 / 109.6)  # ZnO 5 of 109.6 phr
    assert st.chi == 0.39  # the manifest's [swelling] χ, not the solvent table's
    assert st.estimate().nu_affine == pytest.approx(145.0, rel=0.04)  # generated at 140 ± ~2 % per specimen
    est = st.estimate()
    T, S = st.dry_g / 1000, st.swollen_g / 1000
    D = st.extracted_g / 1000
    assert est.phi_measured == pytest.approx(
        _ew_by_hand(T, D, S, 5.0 / 109.6, 910.0, get_solvent("toluene").density), rel=1e-9)


def test_polymer_grade_row_and_polymer_mismatch_notice():
    extra = ingredient_rows([{"name": "SMR-10", "kind": "polymer", "density_g_cm3": 0.92}], "test")
    r = Recipe.from_phr({"SMR-10": 100.0, "N330": 50.0}, extra)
    assert r.polymer_density == pytest.approx(920.0)
    assert r.filler_volume_fraction == pytest.approx((50 / 1.8) / (100 / 0.92 + 50 / 1.8))
    c = Compound("X", polymer="NR", recipe={"SBR": 100.0})
    assert any("not in its recipe" in n for n in c.recipe_notices)
    with pytest.raises(DataError, match="compound 'Y'.*unobtainium"):
        Compound("Y", recipe={"NR": 100.0, "unobtainium": 1.0})


def test_recipe_disagreement_reaches_the_comparison_notes():
    import numpy as np

    from network_models.compare import compare
    from network_models.curves import TestCurve

    lam = np.linspace(1.0, 2.5, 16)
    c = Compound("X", [TestCurve("uniaxial", lam, 0.5e6 * (lam - lam ** -2), specimen=f"X-{i}") for i in range(2)],
                 metadata={"filler_volume_fraction": 0.3}, recipe={"NR": 100.0, "N330": 30.0})
    cmp = compare([c], model="neo-hookean", spread_models=())
    assert any("disagrees with the recipe" in str(n) for n in cmp.notes)


def test_swelling_table_in_the_app_reads_the_compare_value():
    """The Swelling tab's table and Compare give one ν per specimen (issue #21: 158.7 vs 183.5 before)."""
    from app.session import Session

    session = Session()
    assert session.data.load_samples() == []
    from app.swell_state import SwellState

    st = SwellState()
    table = (ROOT / "sample_sets" / "swelling_toluene.csv").read_bytes()
    st.load_table(table, "swelling_toluene.csv")
    rows = {(r["compound"], r["specimen"]): r for r in st.table_estimates(session.data.compounds)}
    m = load_manifest()
    c = m["QM-S2"]
    for s in c.swelling:
        want = s.estimate(c.polymer, c.f, c.filler_fraction, **c.swelling_options()).nu_affine
        assert rows[("QM-S2", s.specimen)]["nu_affine"] == pytest.approx(want, rel=1e-9)


def test_compound_editor_takes_a_recipe_and_keeps_a_bad_one():
    from app.main import create_app

    pg = create_app()
    cv = pg.ns_compare
    cv.edit_name.value = "QM-S2"
    assert "ZnO = 5" in cv.edit_recipe.value  # the manifest's recipe, editable
    cv.edit_recipe.value = "NR = 100\nN330 = 40\nsulfur = 2"
    cv._save_compound()
    info = pg.ns_data.state.compounds["QM-S2"]
    phi = (40 / 1.80) / (100 / 0.91 + 40 / 1.80 + 2 / 2.07)  # by hand from phr and densities
    assert info.recipe.filler_volume_fraction == pytest.approx(phi) and info.filler == pytest.approx(phi, abs=1e-6)
    cv.edit_recipe.value = "NR = 100\nN330 = lots"
    cv._save_compound()
    assert "not 'ingredient = phr'" in cv.messages.texts()["compare-edit"]
    assert cv.edit_recipe.value == "NR = 100\nN330 = lots"  # nothing the user typed is lost
    assert pg.ns_data.state.compounds["QM-S2"].recipe.phr["N330"] == 40.0  # the last good recipe stays
