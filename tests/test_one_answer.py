"""Issue #18, "one study, one answer": one residual weighting default, the crosslinks headline and the
design's basis agree, the crosslinks → design round trip, the study object, the project file.

Physics checks are written here from the formulas (docs/methods.md: affine network G = νRT, entanglement
part G_e = G_N⁰·T/T_ref subtracted; neo-Hookean uniaxial nominal stress P = G(λ − λ⁻²), Treloar 1975) with
R from scipy.constants (CODATA); the polymer's plateau modulus is a table input, read from the table.
"""

from __future__ import annotations

import io
import json
from contextlib import redirect_stdout

import numpy as np
import pytest
from scipy.constants import R

from network_models import get_model
from network_models.cli import main
from network_models.network import get_polymer


def run_json(argv):
    buf = io.StringIO()
    with redirect_stdout(buf):
        rc = main(argv)
    assert rc == 0, buf.getvalue()
    return json.loads(buf.getvalue())


def run_text(argv):
    buf = io.StringIO()
    with redirect_stdout(buf):
        rc = main(argv)
    return rc, buf.getvalue()


# ----- 1. one residual weighting default ----------------------------------------------------------------------
@pytest.fixture
def lab_file(tmp_path):
    """Eight-chain uniaxial curve (μ = 0.4 MPa, N = 12) with a few stiff points pushed up at large stretch:
    the two weightings must disagree on G₀ (absolute lets the stiff points pull the fit)."""
    m = get_model("eight-chain")
    lam = np.linspace(1.05, 4.0, 30)
    P = m.nominal_stress("uniaxial", lam, {"mu": 0.4e6, "N": 12.0})
    P[-4:] *= 1.25
    p = tmp_path / "uni.csv"
    p.write_text("# mode: uniaxial\n# temperature: 23 °C\nstretch,stress (MPa)\n"
                 + "".join(f"{a:.6f},{b / 1e6:.7f}\n" for a, b in zip(lam, P, strict=True)), encoding="utf-8")
    return p


def test_default_residual_is_relative_and_alias_kept(lab_file):
    from network_models.fitting import DEFAULT_RESIDUAL

    assert DEFAULT_RESIDUAL == "relative"
    d = run_json(["fit", str(lab_file), "--json"])
    a = run_json(["fit", str(lab_file), "--json", "--relative"])
    b = run_json(["fit", str(lab_file), "--json", "--residual", "absolute"])
    assert d["residual"] == a["residual"] == "relative" and b["residual"] == "absolute"
    g = {k: x["models"]["eight-chain"]["statistics"]["small_strain_modulus_Pa"] for k, x in
         (("d", d), ("a", a), ("b", b))}
    assert g["d"] == g["a"]
    assert abs(g["b"] / g["d"] - 1) > 1e-3  # the stiff points move the absolute fit: the choice matters
    # relative weighting stays closer to the true small-strain modulus of the undisturbed points (μ, Arruda–Boyce)
    assert abs(g["d"] - 0.4e6) < abs(g["b"] - 0.4e6)


def test_app_and_compare_read_the_same_default():
    import inspect

    from network_models.fitting import DEFAULT_RESIDUAL, fit

    assert inspect.signature(fit).parameters["residual"].default == DEFAULT_RESIDUAL
    from app.data_state import DataState

    assert DataState.param["residual"].default == DEFAULT_RESIDUAL


# ----- 4. crosslinks headline and design basis agree ---------------------------------------------------------
def _headline_by_hand(M100, polymer="NR", T=296.15, phi=0.0):
    p = get_polymer(polymer)
    G = M100 / (2.0 - 2.0**-2)  # neo-Hookean inversion at λ = 2
    Ge = p.plateau_modulus * T / p.plateau_temperature
    X = 1 + 2.5 * phi + 14.1 * phi**2  # Guth & Gold 1938 (from memory)
    return (G - Ge * X) / X / (R * T), G / (R * T), Ge


def test_crosslinks_headline_is_affine_entanglements_removed():
    d = run_json(["crosslinks", "--modulus", "1.8MPa", "--kind", "M100", "--polymer", "NR", "--json"])
    nu, nu_all, _ = _headline_by_hand(1.8e6)
    assert d["headline"]["value"] == pytest.approx(nu, rel=1e-9)
    assert "entanglement part removed" in d["headline"]["basis"]
    aff = next(r for r in d["rows"] if r["key"] == "affine")
    assert aff["strand_density"] == pytest.approx(nu_all, rel=1e-9)
    f = run_json(["crosslinks", "--modulus", "1.8MPa", "--kind", "M100", "--polymer", "NR", "--filler", "0.1",
                  "--json"])
    assert f["headline"]["value"] == pytest.approx(_headline_by_hand(1.8e6, phi=0.1)[0], rel=1e-9)
    assert "filler removed" in f["headline"]["basis"]


def test_crosslinks_to_design_round_trip_says_inside():
    h = run_json(["crosslinks", "--modulus", "1.8MPa", "--kind", "M100", "--polymer", "NR", "--json"])["headline"]
    d = run_json(["design", "--model", "affine", "--target", "M100=1.7..1.9MPa", "--current-nu",
                  repr(h["value"]), "--json"])
    assert d["advice"]["inside"] is True and d["advice"]["change_percent"] == [0.0, 0.0]
    assert d["current"]["action"] == "keep"  # the alias
    # the design says how it counts ν and the G_e it assumed (plateau of NR scaled to 23 °C)
    _, _, Ge = _headline_by_hand(1.8e6)
    assert d["basis"]["G_e_Pa"] == pytest.approx(Ge, rel=1e-9) and d["basis"]["model"] == "affine"
    assert "plateau" in d["basis"]["G_e_source"]
    # the design's window contains the headline: M100 at the window edges is 1.7 / 1.9 MPa by hand
    lo, hi = d["strand_density"]["low"], d["strand_density"]["high"]
    for nu, M in ((lo, 1.7e6), (hi, 1.9e6)):
        assert (nu * R * 296.15 + Ge) * 1.75 == pytest.approx(M, rel=1e-4)


def test_design_reads_all_of_G_on_its_basis_and_refuses_below_G_e():
    nu, nu_all, Ge = _headline_by_hand(1.8e6)
    d = run_json(["design", "--model", "affine", "--target", "M100=1.7..1.9MPa", "--current-nu", repr(nu_all),
                  "--current-basis", "all-of-G", "--json"])
    assert d["advice"]["strand_density"] == pytest.approx(nu, rel=1e-6)
    assert d["advice"]["inside"] is True
    # the same number on the design's own basis is far outside (what the issue saw: "lower ν by 28 %")
    w = run_json(["design", "--model", "affine", "--target", "M100=1.7..1.9MPa", "--current-nu", repr(nu_all),
                  "--json"])
    assert w["advice"]["inside"] is False and w["advice"]["change_percent"][1] < 0
    rc, _ = run_text(["design", "--model", "affine", "--target", "M100=1.7..1.9MPa", "--current-nu",
                      repr(0.5 * Ge / (R * 296.15)), "--current-basis", "all-of-G"])
    assert rc == 2


def test_design_text_states_its_basis():
    rc, out = run_text(["design", "--model", "affine", "--target", "M100=1.7..1.9MPa"])
    assert rc == 0 and "How ν is counted" in out and "G_e = 0.348 MPa" in out


# ----- the study: cached results, pooled fit, χ source ----------------------------------------------------------
SAMPLE = "sample_sets/compounds.toml"


@pytest.fixture(scope="module")
def sample_study():
    from network_models.study import Study

    return Study.from_manifest(SAMPLE)


def _mr_compound(name, C1, C2, T=296.15):
    """Noise-free Mooney–Rivlin curves (uniaxial P = 2(C₁ + C₂/λ)(λ − λ⁻²), planar P = 2(C₁ + C₂)(λ − λ⁻³);
    Treloar 1975), three identical uniaxial specimens and one planar curve."""
    from network_models.compounds import Compound
    from network_models.curves import TestCurve

    lam = np.linspace(1.05, 4.0, 50)
    lp = np.linspace(1.05, 3.0, 30)
    cs = [TestCurve("uniaxial", lam, 2 * (C1 + C2 / lam) * (lam - lam**-2), name=f"{name} u{i}", temperature=T,
                    source=f"{name}_u{i}.csv", specimen=f"{name}-{i}") for i in (1, 2, 3)]
    cs.append(TestCurve("planar", lp, 2 * (C1 + C2) * (lp - lp**-3), name=f"{name} p", temperature=T,
                        source=f"{name}_p.csv"))
    return Compound(name, cs)


def test_pooled_fit_recovers_the_generating_modulus():
    from network_models.study import Study

    st = Study([_mr_compound("A", 0.2e6, 0.05e6), _mr_compound("B", 0.25e6, 0.04e6)], )
    st.update(model="mooney-rivlin", spread_models=())
    d = st.comparison().to_dict()
    for c, (C1, C2) in zip(d["compounds"], ((0.2e6, 0.05e6), (0.25e6, 0.04e6)), strict=True):
        # G₀ = 2(C₁ + C₂) for Mooney–Rivlin (Treloar 1975); the headline ν = 2C₁/(RT), 2C₂ the entanglement part
        assert c["pooled"]["G0"] == pytest.approx(2 * (C1 + C2), rel=1e-6)
        assert c["pooled"]["residual"] == "relative" and c["pooled"]["model"] == "mooney-rivlin"
        assert c["headline"]["value"] == pytest.approx(2 * C1 / (R * 296.15), rel=1e-6)
        assert c["fit_basis"]["headline"]["entanglements"] == "removed"
        assert "fit" in c["fit_basis"]["headline"]["G_e_source"]  # Mooney–Rivlin separates G_e (2C₂)


def test_a_setting_that_does_not_change_a_fit_does_not_refit(sample_study):
    st = sample_study
    st.update(service_temperature=None, exclusions={}, baseline="QM-S2")
    first = st.comparison()
    n = st.fits_made
    assert n > 0
    st.update(service_temperature=353.15, baseline="QM-S1", design_targets=("M100=1.7..1.9MPa",))
    second = st.comparison()
    assert second is not first and st.fits_made == n  # new results, no new fit
    assert second["QM-S2"].quantities["G0_service"].value == pytest.approx(
        first["QM-S2"].quantities["G0"].value * 353.15 / first["QM-S2"].test_temperature, rel=1e-12)
    assert st.comparison() is second  # same settings: the cached result
    st.update(residual="absolute")
    st.comparison()
    assert st.fits_made > n  # the weighting changes every fit
    st.update(residual="relative", service_temperature=None, baseline="QM-S2", design_targets=())


def test_chi_source_manifest_or_table():
    from network_models.compounds import SwellingTest
    from network_models.study import Settings, Study
    from network_models.swelling import default_chi

    c = _mr_compound("A", 0.2e6, 0.05e6)
    c.swelling = [SwellingTest(dry=1.0e-3, swollen=4.2e-3, solvent="toluene", chi=0.45, specimen="A-w1")]
    st = Study([c], settings=Settings(model="mooney-rivlin", spread_models=()))
    table_chi = default_chi("NR", "toluene").chi
    assert table_chi != 0.45
    for source, chi in (("manifest", 0.45), ("table", table_chi)):
        n = st.fits_made
        st.update(chi_source=source)
        (row,) = st.comparison()["A"].swelling_rows
        assert row["chi"] == chi
        if source == "table":
            assert st.fits_made == n  # χ never refits the curves
        # affine Flory–Rehner, f = 4 (Flory & Rehner 1943): ν = −[ln(1−v) + v + χv²]/(V₁(v^⅓ − v/2))
        v, V1 = row["phi"], row["molar_volume_cm3_mol"] * 1e-6
        assert row["nu"] == pytest.approx(-(np.log(1 - v) + v + chi * v**2) / (V1 * (v ** (1 / 3) - v / 2)),
                                          rel=1e-9)


def test_pooled_equals_fit_command_on_the_same_files(sample_study):
    d = sample_study.comparison().to_dict()
    c = next(x for x in d["compounds"] if x["name"] == "QM-S2A")
    files = [f"sample_sets/QM-S2A_uniaxial_A{i}.csv" for i in range(1, 6)]
    f = run_json(["fit", *files, "--mode", "uniaxial", "--model", c["pooled"]["model"], "--json"])
    m = f["models"][c["pooled"]["model"]]
    assert f["residual"] == c["pooled"]["residual"] == m["fit_basis"]["residual"]
    assert m["fit_basis"]["statistic"] == "pooled fit"
    assert c["pooled"]["G0"] == pytest.approx(m["statistics"]["small_strain_modulus_Pa"], rel=1e-9)
    assert c["G0"]["mean"] != c["pooled"]["G0"] and c["fit_basis"]["why_differ"]


# ----- the project file is the study -----------------------------------------------------------------------------
def test_project_round_trip_keeps_inputs_settings_and_numbers(tmp_path, sample_study):
    import zipfile
    from pathlib import Path

    from network_models.study import Study

    st = sample_study
    st.update(exclusions={"QM-S1": {"S1-4": "torn at the grip"}}, design_targets=("M100=1.7..1.9MPa",),
              specifications=("M100=1.6..2.0MPa",), service_temperature=353.15)
    try:
        data = st.to_project()
        with zipfile.ZipFile(io.BytesIO(data)) as z:
            toml = z.read("project.toml").decode()
            for inp in st.inputs:  # byte for byte
                assert z.read(f"inputs/{inp.name}") == Path(f"sample_sets/{inp.name}").read_bytes()
        assert str(Path("sample_sets").resolve()) not in toml and "filler_volume_fraction" in toml
        re = Study.from_project(data)
        assert re.stale is True
        assert re.settings == st.settings
        assert re.values() == st.values()
        assert re.stale is False
        assert re.design().window is not None
    finally:
        st.update(exclusions={}, design_targets=(), specifications=(), service_temperature=None)


def test_version_1_project_filler_is_read_as_volume_fraction():
    from network_models.project import Project, ProjectCompound, manifest_text, read_project

    text = manifest_text(Project(compounds=[ProjectCompound("A", filler_volume_fraction=0.12)]), [])
    old = text.replace("version = 2", "version = 1").replace("filler_volume_fraction", "filler")
    import zipfile

    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as z:
        z.writestr("project.toml", old)
    assert read_project(buf.getvalue()).compounds[0].filler_volume_fraction == 0.12


def test_cli_project_then_compare_gives_the_manifest_numbers_and_options_override(tmp_path):
    from network_models.study import study_values

    out = tmp_path / "s.zip"
    rc, _ = run_text(["project", "--manifest", SAMPLE, "--exclude", "QM-S1:S1-4:torn", "--service-temperature",
                      "80C", "-o", str(out)])
    assert rc == 0
    a = run_json(["compare", "--project", str(out), "--json", "--no-model-spread"])
    b = run_json(["compare", "--manifest", SAMPLE, "--exclude", "QM-S1:S1-4:torn", "--service-temperature", "80C",
                  "--json", "--no-model-spread"])
    assert study_values(a) == study_values(b) and a["service_temperature_K"] == pytest.approx(353.15)
    c = run_json(["compare", "--project", str(out), "--service-temperature", "100C", "--json",
                  "--no-model-spread"])
    assert c["service_temperature_K"] == pytest.approx(373.15)  # the command line wins
    assert [e["specimen"] for e in c["exclusions"]] == ["S1-4"]  # the stored exclusion stays


# ----- the app's session holds one study ------------------------------------------------------------------------
def test_app_session_compares_through_its_study_and_keeps_design_in_the_project():
    from app import shared
    from app.session import Session

    s = Session()
    assert s.data.load_samples() == []
    s.compare.run()
    st = s.study()
    assert s.compare.comparison is st.comparison()  # the tab shows the study's comparison
    fits = shared.stats()["fits"]  # sample fits are made once per process (app.shared): new ones add entries
    s.compare.service_C = 100.0
    s.compare.run()
    assert shared.stats()["fits"] == fits and s.study() is st  # a new service temperature refits nothing
    assert s.compare.comparison.service_temperature == pytest.approx(373.15)
    s.compare.model = "eight-chain"
    s.compare.run()
    assert shared.stats()["fits"] > fits  # a new model does fit (the count can tell)
    s.design.targets = ["M100=1.7..1.9MPa", "lock>=5"]
    other = Session()
    assert other.load_project(s.to_project()) == []
    assert other.design.targets == ["M100=1.7..1.9MPa", "lock>=5"]
    assert other.compare.comparison is None and other.results_out_of_date  # saved results shown as out of date
    assert other.saved_results.get("compare", {}).get("model") == "eight-chain"  # the summary when saved
    other.compare.run()
    assert not other.results_out_of_date
    assert other.study().settings.design_targets == ("M100=1.7..1.9MPa", "lock>=5")


def test_swelling_form_reads_a_sample_specimen_as_the_comparison_does(sample_study):
    # issue #18: QM-S2-w1 gave one ν on the Swelling tab (χ from the table) and another in Compare (χ = 0.39 from
    # the manifest); the form now takes the manifest's χ and f, so the two are one number
    from app.swell_state import SwellState

    sw = SwellState()
    assert sw.load_sample(label="QM-S2 QM-S2-w1")
    assert sw.chi == 0.39
    row = next(r for r in sample_study.comparison()["QM-S2"].swelling_rows if r["specimen"] == "QM-S2-w1")
    assert sw.estimate().nu_affine == pytest.approx(row["nu"], rel=1e-12)


def test_report_says_why_its_two_G0_differ(sample_study):
    from network_models.report import Report

    rep = Report(sample_study.comparison())
    r = sample_study.comparison()["QM-S2"]
    rows = [x for x in rep.csv_rows() if x["compound"] == "QM-S2" and x["key"] in ("G0", "G0_pooled")]
    assert {x["key"] for x in rows} == {"G0", "G0_pooled"}
    pooled = next(x for x in rows if x["key"] == "G0_pooled")
    assert pooled["value"] == r.pooled["G0"] and "pooled fit" in pooled["basis"]
    html = rep.to_html()
    assert "mean of 4 specimen fit(s)" in html and "differ by specimen scatter" in html


def test_app_opens_a_project_the_command_line_wrote(tmp_path):
    from app.session import Session

    out = tmp_path / "s.zip"
    rc, _ = run_text(["project", "--manifest", SAMPLE, "--baseline", "QM-S1", "--service-temperature", "100C",
                      "--target", "lock>=5", "-o", str(out)])
    assert rc == 0
    s = Session()
    assert s.load_project(out.read_bytes()) == []
    assert s.compare.baseline == "QM-S1" and s.compare.service_C == pytest.approx(100.0)
    assert s.design.targets == ["lock>=5"]
    assert sorted(s.data.compound_names()) == sorted(["QM-S1", "QM-S2", "QM-S3", "QM-S2A", "QM-S2B"])
