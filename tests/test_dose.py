"""Dose ladders (network_models/dose.py; `design --manifest FILE --dose INGREDIENT`).

Independent values: a ladder is generated here with ν(d) = ν₀ + s·d (invented) and neo-Hookean curves
σ = G(λ − λ⁻²), G = ν R T (Treloar; R from scipy.constants), so for a target G = G₁..G₂ the dose window is
the analytic inverse d = (G/(R T) − ν₀)/s, computed here — and must come out the same with the entanglement
share on or off.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import R

from network_models.compounds import Compound
from network_models.curves import TestCurve
from network_models.design import design
from network_models.dose import dose_window, fit_line

T = 296.15
NU0, S = 60.0, 45.0  # mol/m³ and mol/m³ per phr sulfur (invented)
LAM = np.linspace(1.02, 2.5, 25)


def _ladder(doses=(1.0, 2.0, 3.0, 4.0)):
    out = []
    for d in doses:
        G = (NU0 + S * d) * R * T
        out.append(Compound(f"L{d:g}", [TestCurve("uniaxial", LAM, G * (LAM - LAM ** -2), specimen=f"L{d:g}-1",
                                                  temperature=T)],
                            recipe={"NR": 100.0, "ZnO": 5.0, "sulfur": d, "CBS": 0.6}))
    # a compound that differs in more than the dose stays out of the ladder
    out.append(Compound("B", [TestCurve("uniaxial", LAM, 1e6 * (LAM - LAM ** -2), specimen="B-1", temperature=T)],
                        recipe={"NR": 100.0, "N330": 30.0, "ZnO": 5.0, "sulfur": 2.0, "CBS": 0.6}))
    return out


@pytest.mark.parametrize("entanglements", [False, True])
def test_dose_window_is_the_analytic_inverse(entanglements):
    G1, G2 = 0.45e6, 0.55e6
    r = design([f"G={G1 / 1e6}..{G2 / 1e6}MPa"], model="neo-hookean", entanglements=entanglements)
    d = dose_window(r, _ladder(), "sulfur")
    want = sorted(((G / (R * T)) - NU0) / S for G in (G1, G2))
    assert d["low"] == pytest.approx(want[0], rel=1e-4) and d["high"] == pytest.approx(want[1], rel=1e-4)
    assert d["unit"] == "phr" and d["ingredient"] == "sulfur" and d["extrapolated"] is False
    assert "B" in d["left_out"]
    assert d["line"]["slope"] == pytest.approx(S, rel=1e-4)


def test_outside_the_tested_doses_is_extrapolated():
    r = design(["G=0.9..1.0MPa"], model="neo-hookean", entanglements=False)
    d = dose_window(r, _ladder(), "sulfur")
    assert d["low"] == pytest.approx((0.9e6 / (R * T) - NU0) / S, rel=1e-4)
    assert d["extrapolated"] is True and "extrapolated" in d["note"]


def test_line_standard_errors_match_the_textbook_formulas():
    x = np.array([1.0, 2.0, 3.0, 4.0])
    y = np.array([100.0, 150.0, 190.0, 250.0])
    line = fit_line(x, y)
    ref = np.polyfit(x, y, 1, cov="unscaled")  # numpy's least squares as the reference
    resid = y - np.polyval(ref[0], x)
    s2 = (resid ** 2).sum() / (x.size - 2)
    assert line.slope == pytest.approx(ref[0][0]) and line.intercept == pytest.approx(ref[0][1])
    assert line.slope_se == pytest.approx(np.sqrt(s2 * ref[1][0, 0]))
    assert line.intercept_se == pytest.approx(np.sqrt(s2 * ref[1][1, 1]))


def test_design_cli_dose_json(capsys):
    import json
    from pathlib import Path

    from network_models.cli import main

    man = Path(__file__).resolve().parent.parent / "sample_sets" / "compounds.toml"
    args = ["design", "--target", "G=0.5..0.6MPa", "--manifest", str(man), "--dose", "sulfur", "--json"]
    assert main(args) == 0
    a = json.loads(capsys.readouterr().out)["dose"]
    assert main(args + ["--no-entanglements"]) == 0
    b = json.loads(capsys.readouterr().out)["dose"]
    assert set(a) >= {"ingredient", "low", "high", "unit", "basis", "extrapolated", "line"}
    assert a["low"] == pytest.approx(b["low"], rel=1e-3) and a["high"] == pytest.approx(b["high"], rel=1e-3)
    assert [p["phr"] for p in a["ladder"]] == [1.0, 2.0, 3.0]
    assert main(["design", "--target", "G=0.5..0.6MPa", "--dose", "sulfur"]) == 2


def test_compare_fits_each_headline_quantity_against_the_dose():
    from network_models.compare import compare

    cmp = compare(_ladder(), model="neo-hookean", spread_models=())
    (lad,) = cmp.to_dict()["dose_ladders"]
    assert lad["ingredient"] == "sulfur" and lad["compounds"] == ["L1", "L2", "L3", "L4"] and "B" in lad["left_out"]
    g = lad["quantities"]["G0"]
    assert g["line"]["slope"] == pytest.approx(S * R * T, rel=1e-4)  # G = (ν₀ + s·d) R T, by construction
    assert g["line"]["intercept"] == pytest.approx(NU0 * R * T, rel=1e-4)
    assert [p["phr"] for p in g["points"]] == [1.0, 2.0, 3.0, 4.0]


def test_report_lists_the_ladder():
    from network_models.compare import compare
    from network_models.report.recipe_sections import ladders_html

    html = "".join(ladders_html(compare(_ladder(), model="neo-hookean", spread_models=())))
    assert "sulfur ladder" in html and "small-strain shear modulus" in html
    assert "<svg" in html and "sulfur (phr)" in html  # the ladder is plotted


def test_design_tab_shows_the_dose_window_of_the_sessions_ladder():
    # the app (sample set loaded: QM-S1/S2/S3 are a sulfur ladder) gives the same dose window as the CLI above
    from pathlib import Path

    from app.main import create_app
    from network_models.compounds import load_manifest

    pg = create_app()
    dv = pg.ns_design
    s = dv.state
    s.param.update(model="eight-chain", dose_ingredient="sulfur")
    for r in list(dv.rows.objects):
        dv.rows.remove(r)
    dv._add_row("G=0.5..0.6MPa")
    dv.use_explorer.value = False
    dv.compute()
    man = Path(__file__).resolve().parent.parent / "sample_sets" / "compounds.toml"
    want = dose_window(s.result, load_manifest(man).compounds, "sulfur")
    assert s.dose["low"] == pytest.approx(want["low"], rel=1e-6) and s.dose["high"] == pytest.approx(want["high"])
    assert "Dose window in sulfur" in dv.result.object
    s.dose_ingredient = "DCP"  # no compound has peroxide: no ladder, a sentence instead of a number
    dv.compute()
    assert "no two compounds" in dv.result.object
