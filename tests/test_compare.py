"""Compound comparison: the numbers it derives from a fit, checked against closed forms from the literature.

Test curves are written from published closed forms here (not through the project's model code), with
fixed-seed noise, so every check can fail if the fit, the crosslink reading or the comparison is wrong.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
import tomllib
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import R  # CODATA gas constant

from network_models.compare import TRADE_MODULI, compare, measured_at
from network_models.compounds import Compound, SwellingTest, compounds_from_specs, load_manifest, parse_spec
from network_models.deformation import Mode
from network_models.labfiles import DataError, TestCurve

ROOT = Path(__file__).resolve().parent.parent
T23 = 296.15


def mooney_uniaxial(lam, C1, C2):
    """Mooney 1940 (J. Appl. Phys. 11:582) / Rivlin 1948: uniaxial nominal stress
    P = 2(λ − λ⁻²)(C₁ + C₂/λ) (docs/methods.md §mooney-plot, reduced stress σ* = 2C₁ + 2C₂/λ)."""
    lam = np.asarray(lam, float)
    return 2.0 * (lam - lam**-2) * (C1 + C2 / lam)


def mooney_planar(lam, C1, C2):
    """Planar tension (pure shear) for the same W: P = 2(λ − λ⁻³)(C₁ + C₂)
    (docs/methods.md §stress-from-energy, Treloar 1975)."""
    lam = np.asarray(lam, float)
    return 2.0 * (lam - lam**-3) * (C1 + C2)


def mr_compound(name, C1, C2, noise=0.0, seed=0, top=4.5, T=T23, planar=True, factors=(0.97, 1.0, 1.03)):
    """Uniaxial specimens at ``factors`` × (C₁, C₂) (their mean is the nominal compound) and one planar curve."""
    rng = np.random.default_rng(seed)
    lam = np.linspace(1.05, top, 60)
    curves = []
    for i, k in enumerate(factors, 1):
        P = k * mooney_uniaxial(lam, C1, C2) * (1 + noise * rng.standard_normal(lam.size))
        curves.append(TestCurve("uniaxial", lam, P, name=f"{name} uniaxial {i}", temperature=T, source=f"{name}_u.csv",
                                specimen=f"{name}-{i}"))
    if planar:
        lp = np.linspace(1.05, 3.0, 40)
        Pp = mooney_planar(lp, C1, C2) * (1 + noise * rng.standard_normal(lp.size))
        curves.append(TestCurve("planar", lp, Pp, name=f"{name} planar", temperature=T, source=f"{name}_p.csv"))
    return Compound(name, curves, metadata={"cure": f"{name} (invented)"})


@pytest.fixture(scope="module")
def mr_pair():
    a = mr_compound("A", 0.20e6, 0.05e6)
    b = mr_compound("B", 0.24e6, 0.05e6, factors=(1.02, 0.99, 0.99))
    # absolute residuals: the pooled fit of specimens at 0.97/1.00/1.03 × (C₁, C₂) plus a planar curve at 1.00 is
    # then exactly (C₁, C₂) (least squares averages the factors to 1); relative residuals weight each specimen
    # by 1/k², which shifts the pooled C₁, C₂ slightly — the default is checked in test_one_answer.py
    return compare([a, b], model="mooney-rivlin", baseline="A", service_temperature=353.15, spread_models=(),
                   residual="absolute")


def test_strand_density_is_2C1_over_RT(mr_pair):
    # Mooney–Rivlin reading used by the comparison: 2C₁ is the crosslink part, ν = 2C₁/(RT) (affine,
    # G = νRT: Treloar 1975 ch. 4), R from scipy.constants.  Noise-free curves: the fit must return C₁.
    for r, C1 in ((mr_pair["A"], 0.20e6), (mr_pair["B"], 0.24e6)):
        assert r.ok, r.error
        nu = r.quantities["nu"]
        assert nu.value == pytest.approx(2 * C1 / (R * T23), rel=1e-6)
        assert r.quantities["mu_j"].value == pytest.approx(nu.value / 2, rel=1e-12)  # μ_j = 2ν/f, f = 4
        # M_c = ρ/ν with ρ(NR) = 910 kg/m³ from the polymer table (docs/methods.md §mc-and-n)
        assert r.quantities["Mc"].value == pytest.approx(910.0 / nu.value, rel=1e-9)


def test_small_strain_modulus_and_entanglement_share(mr_pair):
    # Mooney–Rivlin: G₀ = 2(C₁ + C₂) (docs/methods.md §mooney-rivlin); 2C₂ read as the entanglement part
    # -> share C₂/(C₁+C₂)
    r = mr_pair["A"]
    assert r.quantities["G0"].value == pytest.approx(2 * (0.20e6 + 0.05e6), rel=1e-6)
    assert r.quantities["ent_share"].value == pytest.approx(0.05 / 0.25, rel=1e-5)


def test_service_temperature_scales_with_absolute_temperature(mr_pair):
    # Meyer & Ferri 1935 (Helv. Chim. Acta 18:570): at a fixed network the modulus is proportional to T.
    r = mr_pair["B"]
    g, gs = r.quantities["G0"], r.quantities["G0_service"]
    assert gs.value / g.value == pytest.approx(353.15 / T23, rel=1e-12)
    assert gs.low / g.low == pytest.approx(353.15 / T23, rel=1e-12)
    assert "soften" in gs.note  # the caution about filled compounds is carried with the number


def test_trade_moduli_measured_and_predicted(mr_pair):
    # M100/M300 = nominal stress at 100 %/300 % elongation, λ = 2 and 4
    # (docs/methods.md §trade-moduli, common practice).
    assert TRADE_MODULI == {"M100": 2.0, "M300": 4.0}
    r = mr_pair["A"]
    for key, lam in TRADE_MODULI.items():
        exact = float(mooney_uniaxial(lam, 0.20e6, 0.05e6))
        assert r.quantities[f"{key}_predicted"].value == pytest.approx(exact, rel=1e-6)
        # measured: linear interpolation on a 60-point grid, error well below 1 %
        assert r.quantities[f"{key}_measured"].value == pytest.approx(exact, rel=5e-3)


def test_measured_at_reports_absent_when_data_stop_short():
    lam = np.linspace(1.0, 3.0, 30)  # reaches M100 (λ = 2) but not M300 (λ = 4)
    c = TestCurve("uniaxial", lam, mooney_uniaxial(lam, 0.2e6, 0.0))
    v, n = measured_at([c], Mode.UNIAXIAL, 4.0)
    assert v is None and n == 0
    v, n = measured_at([c], Mode.UNIAXIAL, 2.0)
    assert n == 1 and v == pytest.approx(0.4e6 * 1.75, rel=5e-3)  # neo-Hookean 2C₁(λ − λ⁻²) at λ = 2
    comp = compare([Compound("short", [c])], model="mooney-rivlin", spread_models=())
    q = comp["short"].quantities["M300_measured"]
    assert q.value is None and "do not reach" in q.note  # stated, not a silent NaN


def test_differences_against_baseline(mr_pair):
    # B has 2C₁ 20 % higher: ν differs by +20 %, G₀ by 2·0.04/0.5 = +16 % (arithmetic on the closed form;
    # both specimen sets average to factor 1)
    d = {x["quantity"]: x for x in mr_pair.differences()}
    assert d["strand_density"]["percent"] == pytest.approx(20.0, abs=1e-3)
    assert d["strand_density"]["absolute"] == pytest.approx(2 * 0.04e6 / (R * T23), rel=1e-5)
    assert d["G0"]["percent"] == pytest.approx(16.0, abs=1e-3)
    assert d["G0"]["verdict"] == "different" and d["G0"]["n"] == 3 and d["G0"]["n_baseline"] == 3


def test_specimen_statistics_and_headline(mr_pair):
    # G₀ of each specimen is k·2(C₁ + C₂) (Mooney 1940): the summary is their mean, sd (n − 1) and t interval
    from scipy import stats

    r = mr_pair["A"]
    vals = np.array([0.97, 1.0, 1.03]) * 2 * (0.20e6 + 0.05e6)
    s = r.stats["G0"]
    assert s.n == 3 and s.mean == pytest.approx(vals.mean(), rel=1e-6)
    assert s.sd == pytest.approx(vals.std(ddof=1), rel=1e-4)
    lo, hi = stats.t.interval(0.95, 2, loc=vals.mean(), scale=stats.sem(vals))
    assert s.ci95[0] == pytest.approx(lo, rel=1e-5) and s.ci95[1] == pytest.approx(hi, rel=1e-5)
    h = r.headline
    assert h.value == pytest.approx(2 * 0.20e6 / (R * T23), rel=1e-6) and h.tier == 0 and "removed" in h.basis
    assert h.ci95[0] < h.value < h.ci95[1]
    assert [s.name for s in r.specimens] == ["A-1", "A-2", "A-3", "A_p.csv"]
    assert [s.used for s in r.specimens] == [True, True, True, False]  # the planar piece is not the main mode


def _classic(delta, model="mooney-rivlin"):
    """Five specimens per compound, 4 % scatter in modulus (fixed draws), the variant at 1 + delta."""
    rng = np.random.default_rng(7)
    fa = 1.0 + 0.04 * rng.standard_normal(5)
    fb = 1.0 + 0.04 * rng.standard_normal(5)
    a = mr_compound("A", 0.20e6, 0.05e6, planar=False, factors=tuple(fa), noise=0.005, seed=1)
    b = mr_compound("B", 0.20e6 * (1 + delta), 0.05e6 * (1 + delta), planar=False, factors=tuple(fb), noise=0.005,
                    seed=2)
    return compare([a, b], model=model, baseline="A", spread_models=())


def test_classic_case_end_to_end():
    # five specimens at +3 % inside 4 % scatter: not distinguishable; +25 %: different (issue's acceptance case)
    for delta, expected in ((0.03, "not distinguishable"), (0.25, "different")):
        d = {x["quantity"]: x for x in _classic(delta).differences()}
        assert d["G0"]["verdict"] == expected, (delta, d["G0"])
        assert d["strand_density"]["verdict"] == expected, (delta, d["strand_density"])


def test_one_specimen_cannot_be_judged():
    a = mr_compound("A", 0.2e6, 0.05e6, factors=(1.0,))
    b = mr_compound("B", 0.3e6, 0.05e6)
    cmp = compare([a, b], model="mooney-rivlin", baseline="A", spread_models=())
    d = {x["quantity"]: x for x in cmp.differences()}
    assert d["G0"]["verdict"] == "cannot judge" and d["G0"]["ci95"] is None
    q = cmp["A"].quantities["G0"]
    assert q.low is None and "scatter unknown" in q.note
    assert "one specimen" in cmp["A"].headline.note


def test_exclusion_is_kept_with_its_reason():
    a = mr_compound("A", 0.2e6, 0.05e6, factors=(0.97, 1.0, 1.03, 1.6))
    cmp = compare([a], model="mooney-rivlin", exclude={"A": {"A-4": "torn at the grip"}}, spread_models=())
    spec = {s.name: s for s in cmp["A"].specimens}
    assert spec["A-4"].excluded == "torn at the grip" and not spec["A-4"].used
    assert cmp["A"].stats["G0"].n == 3
    doc = cmp.to_dict()
    assert {"compound": "A", "specimen": "A-4", "reason": "torn at the grip"} in doc["exclusions"]
    with pytest.raises(ValueError, match="not compared"):
        compare([a], model="mooney-rivlin", exclude={"Z": ["A-1"]})


def test_files_of_different_compounds_are_not_pooled():
    a = mr_compound("A", 0.2e6, 0.05e6, planar=False)
    a.curves[0].metadata.update(compound="QX-1")
    a.curves[1].metadata.update(compound="QX-2")
    a.curves[0].source, a.curves[1].source = "lab/x.csv", "lab/y.csv"
    r = compare([a], model="mooney-rivlin", spread_models=())["A"]
    assert not r.ok and "not pooled" in r.error and "--compound QX-1=lab/x.csv" in r.error
    assert compare([a], model="mooney-rivlin", pool=True, spread_models=())["A"].ok


def test_headline_falls_back_when_entanglements_exceed_the_modulus():
    # a soft gum read by a model that does not split its modulus: the NR plateau modulus (polymer table)
    # exceeds G₀, so the headline takes the next basis and says why — never blank, never negative
    a = mr_compound("A", 0.05e6, 0.0, planar=False)
    r = compare([a], model="neo-hookean", spread_models=())["A"]
    h = r.headline
    assert h.value is not None and h.value > 0 and h.tier == 1
    assert "entanglement" in h.note and "upper bound" in h.basis


def test_swelling_estimate_matches_flory_rehner_table():
    # docs/methods.md §flory-rehner table [derived from Flory & Rehner 1943]: φ = 0.20, χ = 0.39, affine, f = 4,
    # V₁ = 106.85 cm³/mol -> ν = 1.4562e-4 mol/cm³ = 145.62 mol/m³.  Masses chosen to give φ = 0.20 with
    # ρ(NR) = 910 kg/m³ and ρ(toluene) = 862.3 kg/m³ (the project's tables): m_s − m_d = 4 (m_d/ρ_p) ρ_s.
    md = 1.0e-3
    ms = md + 4.0 * (md / 910.0) * 862.3
    comp = mr_compound("S", 0.2e6, 0.05e6)
    comp.swelling = [SwellingTest(dry=md, swollen=ms, solvent="toluene", chi=0.39)]
    r = compare([comp], model="mooney-rivlin")["S"]
    q = r.quantities["nu_swelling"]
    assert q.value == pytest.approx(145.62, rel=2e-4)
    # χ ± 0.05 band: docs/methods.md §flory-rehner gives χ = 0.465 -> 87.711 mol/m³ at φ = 0.2,
    # so χ + 0.05 lies above it
    assert q.low > 87.711 and q.high > q.value > q.low


def test_swelling_rows_carry_the_chi_in_use_and_its_published_band():
    # issue #20 item 6 (docs/methods.md §chi): with no χ given, NR–toluene uses the table's 0.39 (common
    # practice) and the row shows ν at χ ± 0.03, the published spread (handbook 0.36 … 0.42).  Same masses as
    # above (φ = 0.20); reference: Flory & Rehner 1943, affine f = 4, written here.
    md = 1.0e-3
    ms = md + 4.0 * (md / 910.0) * 862.3
    comp = mr_compound("S", 0.2e6, 0.05e6)
    comp.swelling = [SwellingTest(dry=md, swollen=ms, solvent="toluene")]
    row = compare([comp], model="mooney-rivlin")["S"].swelling_rows[0]
    V1 = 92.141e-3 / 862.3  # toluene M/ρ from the solvent table

    def nu(chi, phi=0.2):
        return -(math.log(1 - phi) + phi + chi * phi * phi) / (V1 * (phi ** (1 / 3) - phi / 2))

    assert row["chi_used"] == 0.39 and row["chi_spread"] == 0.03
    assert row["nu_band_chi"] == pytest.approx([nu(0.36), nu(0.42)], rel=1e-9)
    assert any("χ in use: 0.39" in str(n) for n in row["notes"])  # shown in the report's swelling table


def test_bad_swelling_masses_are_refused_with_a_sentence():
    with pytest.raises(DataError, match="must exceed"):
        SwellingTest(dry=2e-3, swollen=1e-3)
    with pytest.raises(DataError, match="positive"):
        SwellingTest(dry=-1, swollen=1e-3)


def test_unfittable_compound_keeps_its_place_with_a_sentence():
    planar_only = Compound("P", [TestCurve("planar", np.linspace(1.05, 2.5, 20),
                                           mooney_planar(np.linspace(1.05, 2.5, 20), 0.2e6, 0.05e6))])
    ok = mr_compound("U", 0.2e6, 0.05e6, planar=False)
    cmp = compare([ok, planar_only], model="slip-tube", baseline="U")  # slip-tube is uniaxial only
    assert cmp["U"].ok
    assert not cmp["P"].ok and "choose another model" in cmp["P"].error
    assert all(d["compound"] != "P" for d in cmp.differences())


def test_compare_rejects_bad_requests():
    a = mr_compound("A", 0.2e6, 0.05e6)
    with pytest.raises(ValueError, match="baseline"):
        compare([a], model="mooney-rivlin", baseline="Z")
    with pytest.raises(ValueError, match="°C"):
        compare([a], model="mooney-rivlin", service_temperature=80.0)  # 80 K: someone forgot the unit
    with pytest.raises(ValueError, match="unique"):
        compare([a, mr_compound("A", 0.3e6, 0.0)], model="mooney-rivlin")
    with pytest.raises(ValueError, match="no compounds"):
        compare([], model="mooney-rivlin")


def test_compound_specs():
    assert parse_spec("A=a.csv, b.csv") == ("A", ["a.csv", "b.csv"])
    for bad in ("A", "=a.csv", "A="):
        with pytest.raises(DataError, match="NAME=FILE"):
            parse_spec(bad)
    with pytest.raises(DataError, match="not found"):
        compounds_from_specs(["A=/nonexistent/file.csv"])


def test_sample_manifest_loads_every_compound_it_lists():
    path = ROOT / "sample_sets" / "compounds.toml"
    if not path.exists():
        pytest.skip("sample set not generated")
    raw = tomllib.loads(path.read_text("utf-8"))  # reference: the manifest itself
    man = load_manifest(path)
    assert [c.name for c in man.compounds] == [c["key"] for c in raw["compound"]]
    assert man.baseline == raw["scenario"].get("baseline")
    for c, spec in zip(man.compounds, raw["compound"], strict=True):
        assert c.curves, c.name
        files = {str((path.parent / f["path"]).resolve()) if isinstance(f, dict) else f for f in spec["files"]}
        assert {str(Path(s).resolve()) for s in c.sources} <= files | {s for s in c.sources}
        if "recipe" in spec:  # the recipe wins (issue #21); the manifest's stated fraction agrees with it to 0.01
            assert c.filler_fraction == pytest.approx(c.recipe.filler_volume_fraction)
            assert c.filler_fraction == pytest.approx(spec.get("filler_volume_fraction", 0.0), abs=0.01)
        else:
            assert c.filler_fraction == pytest.approx(spec.get("filler_volume_fraction", 0.0))


def test_own_manifest_format(tmp_path):
    lam = np.linspace(1.05, 3.0, 25)
    P = mooney_uniaxial(lam, 0.2e6, 0.05e6) / 1e6
    f = tmp_path / "a.csv"
    f.write_text("stretch,stress (MPa)\n" + "\n".join(f"{x:.6f},{y:.6f}" for x, y in zip(lam, P, strict=True)),
                 "utf-8")
    (tmp_path / "review.toml").write_text(
        'title = "t"\n[[compound]]\nname = "A"\nfiles = ["a.csv"]\nbaseline = true\ncure_dose = "x"\n'
        '[[compound.swelling]]\ndry_g = 1.0\nswollen_g = 4.0\n', "utf-8")
    man = load_manifest(tmp_path / "review.toml", mode="uniaxial")
    (c,) = man.compounds
    assert c.name == "A" and c.baseline and man.baseline == "A"
    assert c.metadata["cure_dose"] == "x"
    assert c.swelling[0].dry == pytest.approx(1e-3) and c.swelling[0].swollen == pytest.approx(4e-3)
    np.testing.assert_allclose(c.curves[0].stress, P * 1e6, rtol=0, atol=1.0)  # file holds 1 Pa steps
    (tmp_path / "broken.toml").write_text("[[compound]\n", "utf-8")
    with pytest.raises(DataError, match="cannot be parsed"):
        load_manifest(tmp_path / "broken.toml")


def test_core_does_not_import_the_app_stack():
    code = ("import sys, network_models.compare, network_models.report, network_models.compounds;"
            "bad=[m for m in sys.modules if m.split('.')[0] in ('panel','holoviews','bokeh')];"
            "print(bad); sys.exit(1 if bad else 0)")
    assert subprocess.run([sys.executable, "-c", code], capture_output=True).returncode == 0


def test_no_nan_in_rows(mr_pair):
    for row in mr_pair.rows():
        for k, v in row.items():
            if isinstance(v, dict):
                assert v["value"] is None or math.isfinite(v["value"]), (row["compound"], k)


def test_measured_modulus_interval_is_the_specimen_t_interval():
    # three specimens at 0.97, 1.00, 1.04 × the Mooney–Rivlin curve: the measured M100 is their mean and its
    # interval the Student-t 95 % interval of the mean (scipy.stats.t.interval as the reference)
    from scipy import stats

    lam = np.linspace(1.0, 3.0, 81)  # λ = 2 is a grid point: no interpolation error
    base = mooney_uniaxial(lam, 0.2e6, 0.05e6)
    factors = (0.97, 1.00, 1.04)
    comp = Compound("S", [TestCurve("uniaxial", lam, k * base, name=f"s{i}", temperature=T23)
                          for i, k in enumerate(factors)])
    q = compare([comp], model="mooney-rivlin")["S"].quantities["M100_measured"]
    vals = np.array(factors) * float(mooney_uniaxial(2.0, 0.2e6, 0.05e6))
    lo, hi = stats.t.interval(0.95, len(vals) - 1, loc=vals.mean(), scale=stats.sem(vals))
    assert q.value == pytest.approx(vals.mean(), rel=1e-12)
    assert (q.low, q.high) == (pytest.approx(lo, rel=1e-9), pytest.approx(hi, rel=1e-9))


def test_load_folder_one_subfolder_per_compound(tmp_path):
    lam = np.linspace(1.05, 3.0, 20)
    for name, C1 in (("A", 0.2e6), ("B", 0.3e6)):
        d = tmp_path / name
        d.mkdir()
        (d / "uni.csv").write_text("# test: uniaxial\nstretch,stress (MPa)\n" + "\n".join(
            f"{x:.5f},{y / 1e6:.6f}" for x, y in zip(lam, mooney_uniaxial(lam, C1, 0.0), strict=True)), "utf-8")
    from network_models.compounds import load_folder

    comps = load_folder(tmp_path)
    assert [c.name for c in comps] == ["A", "B"]
    assert comps[1].curves[0].stress[-1] == pytest.approx(float(mooney_uniaxial(3.0, 0.3e6, 0.0)), abs=1.0)
    with pytest.raises(DataError, match="sub-folder"):
        load_folder(tmp_path / "A")


def test_app_compare_state_and_download_agree():
    pytest.importorskip("panel")
    from app.compare_view import CompareState

    st = CompareState()
    st._set({"A": mr_compound("A", 0.2e6, 0.05e6), "B": mr_compound("B", 0.24e6, 0.05e6)},
            chosen=["A", "B"], baseline="A")
    st.model, st.service_C = "mooney-rivlin", 80.0
    with pytest.raises(ValueError, match="Compare first"):
        st.report()
    cmp = st.run()
    assert cmp.service_temperature == pytest.approx(353.15)
    doc = json.loads(st.report().to_json())
    nu = {c["name"]: c["quantities"]["nu"]["value"] for c in doc["compounds"]}
    assert nu["B"] / nu["A"] == pytest.approx(1.2, rel=1e-6)  # 2C₁ ratio 0.24/0.20 (closed form above)
    with pytest.raises(ValueError, match="name"):
        st.add_uploads("", [("a.csv", b"x")])


def test_cli_compare_json_contract(tmp_path, capsys):
    # the documented contract (README, "Comparing compounds"): one JSON object with these names
    from network_models.cli import main

    specs = []
    for name, C1, factors in (("A", 0.20e6, (0.97, 1.0, 1.03)), ("B", 0.26e6, (0.99, 1.02, 0.98))):
        lam = np.linspace(1.05, 4.0, 40)
        f = tmp_path / f"{name}.csv"
        rows = [f"{name}-{i},{x:.5f},{k * y / 1e6:.7f}" for i, k in enumerate(factors, 1)
                for x, y in zip(lam, mooney_uniaxial(lam, C1, 0.05e6), strict=True)]
        head = "# mode: uniaxial\n# temperature: 23 °C\nspecimen,stretch,stress (MPa)\n"
        f.write_text(head + "\n".join(rows), "utf-8")
        specs += ["--compound", f"{name}={f}"]
    assert main(["compare", *specs, "--baseline", "A", "--model", "mooney-rivlin", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert isinstance(doc, dict)
    for c in doc["compounds"]:
        assert isinstance(c["name"], str)
        assert [s["name"] for s in c["specimens"]] == [f"{c['name']}-{i}" for i in (1, 2, 3)]
        assert all(s["G0"] > 0 for s in c["specimens"])
        g = c["G0"]
        assert g["n"] == 3 and g["ci95"][0] < g["mean"] < g["ci95"][1] and g["sd"] > 0 and g["median"] > 0
        h = c["headline"]
        assert h["quantity"] == "strand_density" and h["unit"] == "mol/m³" and h["value"] > 0 and h["basis"]
        assert len(h["ci95"]) == 2
    d = {x["quantity"]: x for x in doc["differences"]}
    assert set(d) >= {"G0", "strand_density"}
    for x in d.values():
        assert x["compound"] == "B" and x["verdict"] in ("different", "not distinguishable", "cannot judge")
        assert {"percent", "absolute", "ci95"} <= set(x)
    # 2C₁ +30 % with ~3 % scatter: G₀ +24 % (Mooney: G₀ = 2(C₁ + C₂)) — different
    assert d["G0"]["verdict"] == "different" and d["G0"]["percent"] == pytest.approx(24.0, abs=3.0)


def test_specimen_grouping_rules():
    from network_models.compare import specimen_groups
    from network_models.compare.specimens import main_mode

    lam = np.linspace(1.05, 2.0, 5)
    P = mooney_uniaxial(lam, 0.2e6, 0.0)
    cs = [TestCurve("uniaxial", lam, P, name="a1", source="a.csv", specimen="1"),
          TestCurve("planar", lam, P, name="a1p", source="a_planar.csv", specimen="1"),  # same piece, other mode
          TestCurve("uniaxial", lam, P, name="b1", source="b.csv", specimen="1"),  # same name, other file
          TestCurve("uniaxial", lam, P, name="c", source="lab/c.csv"),  # one file per specimen
          TestCurve("uniaxial", lam, P, name="d", metadata={"specimen": "D-7"})]
    g = specimen_groups(cs)
    assert list(g) == ["1", "b.csv:1", "c.csv", "D-7"]
    assert [c.name for c in g["1"]] == ["a1", "a1p"]
    assert main_mode(g) is Mode.UNIAXIAL
    assert main_mode({"p": [cs[1]], "u": [cs[0]]}) is Mode.UNIAXIAL  # a tie goes to uniaxial


def test_cli_exclusion_spec_is_checked():
    from network_models.cli import UserError
    from network_models.commands.report import parse_exclusions

    assert parse_exclusions(["A:S1:torn: at grip", "A:S2", "B:x"]) == {
        "A": {"S1": "torn: at grip", "S2": "excluded by the user"}, "B": {"x": "excluded by the user"}}
    with pytest.raises(UserError, match="COMPOUND:SPECIMEN"):
        parse_exclusions(["A"])


def test_outlier_is_flagged_once_and_can_be_excluded():
    # five specimens, one at 1.6× the others: its modified z-score (Iglewicz & Hoaglin 1993) is far above 3.5
    a = mr_compound("A", 0.2e6, 0.05e6, planar=False, factors=(1.0, 1.01, 0.99, 1.02, 1.6))
    r = compare([a], model="mooney-rivlin", spread_models=())["A"]
    flagged = [s.name for s in r.specimens if s.outlier]
    assert flagged == ["A-5"] and "G0" in r.specimens[4].outlier
    notes = [w for w in r.warnings if getattr(w, "kind", None) == "outlier"]
    assert len(notes) == 1 and "A-5" in notes[0]
    r2 = compare([a], model="mooney-rivlin", spread_models=(), exclude={"A": {"A-5": "air bubble"}})["A"]
    assert r2.stats["G0"].n == 4 and r2.stats["G0"].mean == pytest.approx(
        np.mean([1.0, 1.01, 0.99, 1.02]) * 2 * 0.25e6, rel=1e-6)


def test_entanglement_share_over_100_percent_is_not_a_plain_number():
    # A soft gum NR (G₀ = 2(C₁ + C₂) = 0.3 MPa with C₂ = 0) read with the neo-Hookean model: the model does not
    # separate entanglements, so the polymer table's plateau modulus is subtracted; NR's G_N⁰ (≈ 0.58 MPa,
    # Fetters et al. 1994 [from memory], polymers.toml) exceeds G₀, a "share" above 100 % that must be flagged
    from network_models.materials import get_polymer

    c = mr_compound("S", 0.15e6, 0.0, planar=False)
    r = compare([c], model="neo-hookean", spread_models=())["S"]
    poly = get_polymer("NR")
    assert poly.plateau_modulus * T23 / poly.plateau_temperature > 0.3e6  # the premise of this check
    assert "ent_share" not in r.quantities
    assert any("larger than the whole small-strain modulus" in w for w in r.warnings)


def test_display_units_for_tables_and_report(mr_pair, capsys):
    # psi = 6894.757… Pa and 10⁻⁴ mol/cm³ = 100 mol/m³ (scipy.constants.psi; SI prefixes); mol/kg = ν/ρ with the
    # polymer table's density; SI values stay untouched
    from scipy.constants import psi

    from network_models.display_units import apply_to_comparison
    from network_models.materials import get_polymer

    apply_to_comparison(mr_pair, stress="psi", density="10⁻⁴ mol/cm³")
    q = mr_pair["A"].quantities
    assert q["G0"].display_unit == "psi" and q["G0"].display_scale == pytest.approx(1 / psi, rel=1e-12)
    assert q["nu"].display_scale == pytest.approx(1e-2, rel=1e-12)
    assert q["G0"].value == pytest.approx(2 * (0.20e6 + 0.05e6), rel=1e-6)  # still Pa inside
    apply_to_comparison(mr_pair, density="mol/kg")
    assert q["nu"].display_scale == pytest.approx(1 / get_polymer("NR").density, rel=1e-12)
    apply_to_comparison(mr_pair)  # back to MPa and mol/m³ for the other tests of this module
    with pytest.raises(ValueError, match="psi"):
        apply_to_comparison(mr_pair, stress="bar")
