"""``netstretch design``: the JSON contract (feasible, strand_density {low, high}, binding, why), the table,
today's compound, and the error paths (one sentence on stderr, exit 2)."""

from __future__ import annotations

import json

import numpy as np
import pytest
from scipy.constants import R, zero_Celsius

from network_models import Network, get_model
from network_models.cli import main

SEAL = ["--polymer", "NR", "--temperature", "23C", "--model", "eight-chain",
        "--target", "M100=1.7..1.9MPa", "--target", "lock>=6", "--target", "G@100C>=0.4MPa"]


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def _doc(text):
    def bad(c):
        raise AssertionError(f"non-JSON constant {c} in output")

    return json.loads(text, parse_constant=bad)


def test_json_contract_feasible(capsys):
    code, out, err = run(capsys, "design", *SEAL, "--json")
    assert code == 0, err
    d = _doc(out)
    assert d["feasible"] is True
    sd = d["strand_density"]
    assert set(sd) >= {"low", "high"} and 0 < sd["low"] < sd["high"]
    assert set(d["binding"]) == {"low", "high"}
    assert d["binding"]["low"] in {"M100=1.7..1.9MPa", "lock>=6", "G@100C>=0.4MPa"}
    assert isinstance(d["why"], str) and d["why"].endswith(".")
    # the junction density is labelled and is 2ν/f; M_c = ρ/ν
    assert d["junction_density"]["low"] == pytest.approx(2 * sd["low"] / 4)
    assert d["Mc"]["high"] == pytest.approx(910.0 / sd["low"])


def test_json_contract_affine_G_edges(capsys):
    # affine G = νRT, R from scipy.constants (CODATA)
    # entanglements off: under the one G_e policy the affine model also adds G_e to νRT
    code, out, _ = run(capsys, "design", "--model", "affine", "--temperature", "40C", "--target", "G=0.5MPa±4%",
                       "--no-entanglements", "--json")
    d = _doc(out)
    T = zero_Celsius + 40.0
    assert d["strand_density"]["low"] == pytest.approx(0.96 * 0.5e6 / (R * T), rel=1e-8)
    assert d["strand_density"]["high"] == pytest.approx(1.04 * 0.5e6 / (R * T), rel=1e-8)
    assert d["binding"] == {"low": "G=0.5MPa±4%", "high": "G=0.5MPa±4%"}


def test_json_contract_infeasible_names_the_conflict(capsys):
    code, out, _ = run(capsys, "design", "--target", "G>=1.5MPa", "--target", "lock>=10", "--json")
    assert code == 0
    d = _doc(out)
    assert d["feasible"] is False and d["strand_density"] is None
    assert "G>=1.5MPa" in d["why"] and "lock>=10" in d["why"]
    assert d["conflicts"] == [["G>=1.5MPa", "lock>=10"]]


def test_table_and_current_compound(capsys):
    code, out, _ = run(capsys, "design", *SEAL, "--current-nu", "200", "--current-ci", "190..215")
    assert code == 0
    assert "FEASIBLE" in out and "mol/m³" in out and "μ_j = 2ν/f" in out
    assert "Raise ν by" in out and "validation testing" in out


def test_compare_models_json(capsys):
    code, out, _ = run(capsys, "design", "--target", "M100=1.7..1.9MPa", "--target", "planar@1.5>=0.5MPa",
                       "--compare-models", "--json")
    d = _doc(out)["model_comparison"]
    assert "eight-chain" in d["models"] and "slip-tube" in d["left_out"]
    assert isinstance(d["sentence"], str)


def test_current_from_files(capsys, tmp_path):
    m = get_model("eight-chain")
    net = Network(polymer="NR", nu=205.0)
    lam = np.linspace(1.05, 3.0, 25)
    P = m.nominal_stress("uniaxial", lam, net.model_params(m))
    f = tmp_path / "today.csv"
    f.write_text("# mode: uniaxial\n# temperature: 23 °C\nstretch,stress (MPa)\n"
                 + "\n".join(f"{a:.6f},{b / 1e6:.8f}" for a, b in zip(lam, P, strict=True)) + "\n", encoding="utf-8")
    code, out, err = run(capsys, "design", *SEAL, "--current", str(f), "--json")
    assert code == 0, err
    cur = _doc(out)["current"]
    assert cur["strand_density"] == pytest.approx(205.0, rel=2e-3)
    assert cur["action"] == "raise"


@pytest.mark.parametrize(("args", "words"), [
    (["--target", "M100=1.8"], "M100=1.8"),
    (["--target", "M100>=1.8"], "no unit"),
    (["--model", "no-such-model", "--target", "G>=1MPa"], "no-such-model"),
    (["--polymer", "XYZ", "--target", "G>=1MPa"], "XYZ"),
    (["--temperature", "23", "--target", "G>=1MPa"], "unit"),
    (["--model", "slip-tube", "--target", "planar@2>=1MPa"], "planar"),
    (["--target", "G>=1MPa", "--current-ci", "1..2"], "--current-nu"),
    (["--target", "G>=1MPa", "--current-nu", "100", "--current-ci", "abc"], "235..265"),
    (["--target", "G>=1MPa", "--filler", "0.7"], "filler"),
    (["--target", "Q(acetone)<=3", "--polymer", "NR"], "chi="),  # no NR–acetone χ row in the table
    (["--target", "Q(water)<=3"], "water"),
])
def test_error_paths_exit_2_with_a_sentence(capsys, args, words):
    code, out, err = run(capsys, "design", *args)
    assert code == 2
    assert out == ""
    assert words in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1


def test_window_over_filler(capsys):
    code, out, _ = run(capsys, "design", *SEAL, "--over", "filler", "--json")
    d = _doc(out)
    rows = d["window_over"]["rows"]
    assert rows[0]["filler"] == 0.0 and rows[0]["low"] == pytest.approx(d["strand_density"]["low"], rel=1e-9)
    # Guth–Gold amplification 1 + 2.5φ + 14.1φ² stiffens the network, so the window moves to lower ν
    lows = [r["low"] for r in rows if r["feasible"]]
    assert all(b <= a for a, b in zip(lows, lows[1:], strict=False))
