"""Specifications judged per compound (network_models/specs.py; `compare --spec`).

Independent values: specimens are neo-Hookean curves σ = G(λ − λ⁻²) (Treloar's uniaxial nominal stress, written
here) with G chosen by hand, so every specimen's G₀ is known; the 95 % interval of the mean is computed here
from those G with scipy.stats.t (Student t, n − 1) and the verdict follows the issue's rule: meets = interval
inside the limits, fails = wholly outside, uncertain = straddles a limit, cannot judge = one specimen.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from scipy import stats

from network_models.compare import compare
from network_models.compounds import Compound
from network_models.curves import TestCurve
from network_models.design.targets import TargetError
from network_models.specs import parse_spec

LAM = np.linspace(1.02, 2.5, 25)


def _compound(name, gs):
    return Compound(name, [TestCurve("uniaxial", LAM, g * 1e6 * (LAM - LAM ** -2), specimen=f"{name}-{i}")
                           for i, g in enumerate(gs)])


GS = {"A": (0.60, 0.62, 0.61), "B": (0.40, 0.41, 0.42), "C": (0.50, 0.60, 0.70), "D": (0.60,)}


@pytest.fixture(scope="module")
def judged():
    cmp = compare([_compound(k, v) for k, v in GS.items()], model="neo-hookean", spread_models=())
    cmp.specs = ["G=0.55..0.68MPa", "M100>=1.2MPa", "Q(toluene)<=3.5"]
    doc = json.loads(json.dumps(cmp.to_dict(), default=str))
    return {c["name"]: {e["target"]: e for e in c["spec"]} for c in doc["compounds"]}


def test_verdicts_follow_the_rule(judged):
    g = {k: judged[k]["G=0.55..0.68MPa"] for k in GS}
    assert g["A"]["verdict"] == "meets"
    assert g["B"]["verdict"] == "fails"
    assert g["C"]["verdict"] == "uncertain"
    assert g["D"]["verdict"] == "cannot judge"
    assert [g[k]["specimens_outside"] for k in "ABCD"] == [0, 3, 2, 0]


def test_interval_is_student_t_of_the_specimens(judged):
    x = np.array(GS["C"]) * 1e6
    half = stats.t.ppf(0.975, x.size - 1) * x.std(ddof=1) / np.sqrt(x.size)
    lo, hi = judged["C"]["G=0.55..0.68MPa"]["ci95"]
    assert lo == pytest.approx(x.mean() - half, rel=1e-3) and hi == pytest.approx(x.mean() + half, rel=1e-3)


def test_m100_and_unmeasured_quantities(judged):
    # M100: nominal stress at λ = 2 of G(λ − λ⁻²) = 1.75 G; A: 1.75 × 0.61 MPa ≈ 1.07 MPa < 1.2 MPa
    m = judged["A"]["M100>=1.2MPa"]
    assert m["mean"] == pytest.approx(1.75 * 0.61e6, rel=2e-3)
    assert m["verdict"] == "fails"
    assert judged["A"]["Q(toluene)<=3.5"]["verdict"] == "cannot judge"


def test_bad_spec_is_refused_with_a_sentence(capsys):
    from network_models.cli import main

    with pytest.raises(TargetError):
        parse_spec("G=0.55MPa")  # '=' needs a tolerance or a range
    assert main(["compare", "--spec", "G>=fast", "--compound", "A=nonexistent.csv"]) == 2
    assert "G>=fast" in capsys.readouterr().err


def test_compare_tab_judges_typed_specifications_and_keeps_a_bad_row():
    # the app's Compare tab: specification rows typed by the user, judged on Compare (same rule as above)
    from app.main import create_app

    pg = create_app()  # the invented sample set
    cv = pg.ns_compare
    cv.state.specs = "G=0.40..2.0MPa\nM100>=<script>1MPa"
    cv._run()
    assert "Specifications" not in cv.table.object or "M100>=&lt;script&gt;" not in cv.table.object
    assert "M100>=<script>1MPa" in cv.state.specs  # nothing the user typed is lost
    assert any("M100" in t for t in cv.messages.texts().values())
    cv.state.specs = "G=0.40..2.0MPa"
    cv._run()
    html = cv.table.object
    assert "Specifications" in html and "G=0.40..2.0MPa" in html
    assert cv.state.comparison.to_dict()["compounds"][0]["spec"][0]["target"] == "G=0.40..2.0MPa"
