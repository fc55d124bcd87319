"""The fit, crosslinks and swell commands run in-process on files generated in tmp_path.

Curves are made in code from the eight-chain model with known parameters (seeded noise); the checks
compare what the command prints with those parameters and with the documented relations, never with
output saved from an earlier run.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from scipy.constants import R

from network_models import get_model
from network_models.cli import main

TRUE = {"mu": 0.35e6, "N": 15.0}


def _no_nan(text):
    def bad(c):
        raise AssertionError(f"non-JSON constant {c} in output")

    return json.loads(text, parse_constant=bad)


@pytest.fixture
def lab_files(tmp_path):
    m = get_model("eight-chain")
    rng = np.random.default_rng(3)
    paths = []
    for mode, top in (("uniaxial", 4.0), ("planar", 3.0)):
        lam = np.linspace(1.05, top, 25)
        P = m.nominal_stress(mode, lam, TRUE) + 2e3 * rng.standard_normal(lam.size)
        p = tmp_path / f"{mode}.csv"
        lines = [f"# mode: {mode}", "# temperature: 23 °C", "stretch,stress (MPa)"]
        lines += [f"{a:.6f},{b / 1e6:.7f}" for a, b in zip(lam, P, strict=True)]
        p.write_text("\n".join(lines) + "\n", encoding="utf-8")
        paths.append(str(p))
    return paths


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


# ------------------------------------------------------------------------------------------------
def test_fit_human_table(capsys, lab_files):
    code, out, err = run(capsys, "fit", *lab_files, "--model", "eight-chain", "--model", "mooney-rivlin")
    assert code == 0, err
    for words in ("Eight-chain", "Mooney–Rivlin", "MPa", "mol/m³", "10⁻⁴mol/cm³", "g/mol", "95 % interval",
                  "assumes:", "Caution", "Lowest AIC"):
        assert words in out
    assert "Traceback" not in out + err


def test_fit_json_parameters_and_network(capsys, lab_files):
    code, out, err = run(capsys, "fit", *lab_files, "--model", "eight-chain", "--json")
    assert code == 0, err
    doc = _no_nan(out)
    res = doc["models"]["eight-chain"]
    mu, N = res["parameters"]["mu"], res["parameters"]["N"]
    assert mu["unit"] == "Pa" and N["unit"] == "1"
    # the known parameters that made the files lie inside (or very near) the reported 95 % intervals
    assert mu["ci95"][0] < TRUE["mu"] < mu["ci95"][1] or mu["value"] == pytest.approx(TRUE["mu"], rel=0.01)
    assert N["ci95"][0] < TRUE["N"] < N["ci95"][1] or N["value"] == pytest.approx(TRUE["N"], rel=0.02)
    assert set(res["statistics"]["per_mode"]) == {"uniaxial", "planar"}
    rows = {r["key"]: r for r in res["network"]["rows"]}
    G0 = res["statistics"]["small_strain_modulus_Pa"]
    assert rows["affine"]["strand_density"] == pytest.approx(G0 / (R * 296.15), rel=1e-9)  # G = νRT at 23 °C
    assert rows["affine"]["junction_density"] == pytest.approx(rows["affine"]["strand_density"] / 2)
    assert isinstance(res["warnings"], list)


def test_fit_relative_and_unsupported_mode_model(capsys, lab_files):
    code, out, err = run(capsys, "fit", *lab_files, "--model", "slip-tube", "--relative", "--json")
    assert code == 0, err
    res = _no_nan(out)["models"]["slip-tube"]
    assert res["residual"] == "relative"
    assert any("left out" in w for w in res["warnings"])


@pytest.mark.parametrize("args,words", [
    (["fit", "missing.csv"], "missing.csv"),
    (["fit", "{f}", "--model", "no-such-model"], "no model called"),
    (["fit", "{f}", "--temperature", "23"], "has no unit"),
    (["fit", "{f}", "--temperature", "23 furlongs"], "--temperature"),
    (["fit", "{f}", "--polymer", "XYZ"], "unknown polymer"),
    (["crosslinks", "--modulus", "0.55"], "has no unit"),
    (["crosslinks", "--modulus", "0.55MPa", "--polymer", "XYZ"], "unknown polymer"),
    (["crosslinks", "--modulus", "20mm"], "pressure"),
    (["crosslinks", "--modulus", "0.5MPa", "--functionality", "2"], "functionality"),
    (["swell", "--dry", "3g", "--swollen", "1g"], "swollen mass"),
    (["swell", "--dry", "1", "--swollen", "3g"], "has no unit"),
    (["swell", "--dry", "1g", "--swollen", "3g", "--polymer", "EPDM"], "give χ yourself"),
    (["swell", "--dry", "1g", "--swollen", "3g", "--solvent", "water"], "unknown solvent"),
])
def test_error_paths_exit_2_with_a_sentence(capsys, lab_files, args, words):
    args = [a.replace("{f}", lab_files[0]) for a in args]
    code, out, err = run(capsys, *args)
    assert code == 2
    assert words in err
    assert "Traceback" not in err


def test_fit_malformed_file(capsys, tmp_path):
    p = tmp_path / "broken.csv"
    p.write_text("stretch,stress (MPa)\n1.1,abc\n1.2,xyz\n", encoding="utf-8")
    code, out, err = run(capsys, "fit", str(p), "--mode", "uniaxial")
    assert code == 2 and "broken.csv" in err and "Traceback" not in err


def test_fit_flat_curve_cannot_be_fitted(capsys, tmp_path):
    p = tmp_path / "flat.csv"
    p.write_text("# mode: uniaxial\nstretch,stress (MPa)\n" + "".join(f"{1 + 0.1 * i:.2f},0\n" for i in range(1, 12)),
                 encoding="utf-8")
    code, out, err = run(capsys, "fit", str(p))
    assert code == 2 and "Traceback" not in err
    assert err.strip()


def test_crosslinks_table_and_json(capsys):
    code, out, err = run(capsys, "crosslinks", "--modulus", "0.55MPa", "--kind", "G", "--temperature", "23C",
                         "--polymer", "NR")
    assert code == 0, err
    assert "affine" in out and "phantom" in out and "mol/m³" in out and "g/mol" in out and "Caution" in out
    code, out, err = run(capsys, "crosslinks", "--modulus", "1.75MPa", "--kind", "M100", "--json",
                         "--range", "1.6MPa", "1.9MPa", "--filler", "0.1", "--mn", "250kg/mol")
    assert code == 0, err
    doc = _no_nan(out)
    rows = {r["key"]: r for r in doc["rows"]}
    # M100 = 1.75 MPa ⇒ G = 1.75/(2 − 1/4) = 1.0 MPa (neo-Hookean inversion); ν = G/(RT) at 23 °C
    assert doc["shear_modulus_Pa"] == pytest.approx(1.0e6)
    assert rows["affine"]["strand_density"] == pytest.approx(1.0e6 / (R * 296.15))
    assert rows["affine"]["strand_density_ci95"][0] < rows["affine"]["strand_density"]
    assert "affine-no-filler" in rows and "affine-dangling-ends" in rows


def test_crosslinks_json_no_positive_share_gives_null(capsys):
    # a modulus below the polymer's plateau modulus leaves no crosslink share: null, never NaN
    code, out, err = run(capsys, "crosslinks", "--modulus", "0.1MPa", "--json")
    assert code == 0, err
    rows = {r["key"]: r for r in _no_nan(out)["rows"]}
    assert rows["affine-no-entanglement"]["strand_density"] is None
    assert rows["affine-no-entanglement"]["note"]


def test_swell_table_and_json(capsys):
    code, out, err = run(capsys, "swell", "--dry", "1.000g", "--swollen", "3.20g", "--solvent", "toluene",
                         "--polymer", "NR", "--chi", "0.39", "--temperature", "23C", "--modulus", "0.55MPa")
    assert code == 0, err
    assert "φ" in out and "affine" in out and "phantom" in out and "χ" in out and "ratio" in out
    code, out, err = run(capsys, "swell", "--dry", "1000mg", "--swollen", "3.2g", "--json")
    assert code == 0, err
    doc = _no_nan(out)
    rows = {r["assumption"]: r for r in doc["rows"]}
    lo, hi = rows["affine"]["strand_density_band"]
    assert lo > rows["affine"]["strand_density"] > hi
    # default NR–toluene χ: 0.39, the rubber literature's common-practice value (docs/methods.md
    # §chi-nr-toluene; Sheehan & Bisio 1966 [from memory]), with the handbook 0.36 at the low end of its spread
    assert doc["chi"]["band"] == pytest.approx([0.34, 0.44])
    assert doc["chi_used"] == 0.39 and doc["chi_band_published"] == pytest.approx([0.36, 0.42])
    assert rows["affine"]["junction_density"] == pytest.approx(rows["affine"]["strand_density"] / 2)


def test_bad_choice_is_argparse_exit_2(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["crosslinks", "--modulus", "1MPa", "--kind", "M200"])
    assert exc.value.code == 2
    assert "Traceback" not in capsys.readouterr().err


def test_crosslinks_sol_fraction_adds_the_trapped_entanglement_rows(capsys):
    # trapped entanglements: G_e,trapped = G_N⁰(T)·T_e with T_e = (1 − √w_s)⁴ (Langley 1968; Dossin &
    # Graessley 1979 [from memory]); affine ν = (G − G_e,trapped)/(RT), R from scipy.constants (CODATA)
    import math

    from scipy.constants import R, zero_Celsius

    from network_models.cli import main
    from network_models.materials import get_polymer

    assert main(["crosslinks", "--modulus", "0.55MPa", "--polymer", "NR", "--sol-fraction", "0.05", "--json"]) == 0
    rows = {r["key"]: r for r in json.loads(capsys.readouterr().out)["rows"]}
    T = zero_Celsius + 23.0
    p = get_polymer("NR")
    Ge_t = p.plateau_modulus * T / p.plateau_temperature * (1 - math.sqrt(0.05)) ** 4
    assert rows["affine-trapped-entanglements"]["strand_density"] == pytest.approx((0.55e6 - Ge_t) / (R * T), rel=1e-9)
    assert main(["crosslinks", "--modulus", "0.55MPa", "--sol-fraction", "1.5"]) == 2
    assert "--sol-fraction" in capsys.readouterr().err


def test_fit_command_passes_the_polymer_to_the_fit_notices(capsys):
    # NR strain-crystallises in uniaxial tension above λ ≈ 3 (Toki et al. 2000; Trabelsi et al. 2003 [from
    # memory]): the invented raw export reaches λ = 3.4, so the NR fit says the upturn may not be the lock
    from pathlib import Path

    from network_models.cli import main

    f = Path(__file__).resolve().parent.parent / "sample_sets" / "raw_exports" / "QM-R7_zugversuch_de.csv"
    assert main(["fit", str(f), "--model", "neo-hookean", "--polymer", "NR", "--json"]) == 0
    nr = capsys.readouterr().out
    assert main(["fit", str(f), "--model", "neo-hookean", "--polymer", "EPDM", "--json"]) == 0
    epdm = capsys.readouterr().out
    assert "strain-crystallisation" in nr and "strain-crystallisation" not in epdm
