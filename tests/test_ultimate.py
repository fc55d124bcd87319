"""Break properties (network_models/ultimate.py): tensile strength, elongation and stress at break.

Independent values: the curves are built here from a neo-Hookean law σ = G(λ − λ⁻²) (Treloar's uniaxial
nominal stress, written in this file) with a maximum placed by hand, so the tensile strength, stress at break and
elongation at break are known before the code runs: elongation at break (λ_b − 1)·100 %, common practice of the
tensile standards.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from network_models.curves import TestCurve
from network_models.ultimate import find_rupture, split_at_rupture

G = 0.5e6


def _neo(lam):
    return G * (lam - lam ** -2)


def _curve_with_break():
    lam = np.round(np.linspace(1.0, 6.0, 51), 4)  # λ step 0.1; the break after λ = 5.0 (index 40)
    s = _neo(lam)
    # a known maximum: a softening shoulder before the break, peak at λ = 4.8, last point before the fall λ = 5.0
    s[39] = s[38] * 0.97  # λ = 4.9
    s[40] = s[38] * 0.95  # λ = 5.0: the stress at break
    s[41:] = np.linspace(0.05, 0.0, 10) * s[38]  # the broken specimen: a small residual force
    return lam, s


def test_known_maximum_and_break_from_arrays():
    lam, s = _curve_with_break()
    assert find_rupture(lam, s) == 41
    c, u = split_at_rupture(TestCurve("uniaxial", lam, s, specimen="T-1"))
    assert len(c) == 41 and c.stretch[-1] == pytest.approx(5.0)
    assert u.tensile_strength == pytest.approx(_neo(4.8), rel=1e-12)
    assert u.stress_at_break == pytest.approx(0.95 * _neo(4.8), rel=1e-12)
    assert u.elongation_at_break == pytest.approx(400.0)
    assert u.specimen == "T-1" and u.points_dropped == 10


def test_gradual_softening_and_plain_curves_are_not_ruptures():
    lam = np.linspace(1.0, 4.0, 31)
    assert find_rupture(lam, _neo(lam)) is None
    s = _neo(lam)
    s[20:] = s[20] * np.linspace(1.0, 0.3, 11)  # falls to 30 % slowly (7 % of the peak per step): not a break
    assert find_rupture(lam, s) is None
    s2 = _neo(lam)
    s2[25] = 0.2 * s2[24]  # a single glitch that recovers is not a break
    assert find_rupture(lam, s2) is None


def test_fit_json_reports_ultimate_and_fits_only_the_unbroken_part(tmp_path, capsys):
    from network_models.cli import main

    lam, s = _curve_with_break()
    lines = ["# mode: uniaxial", "specimen,stretch,stress (MPa)"]
    lines += [f"T-1,{a:.4f},{b / 1e6:.6f}" for a, b in zip(lam, s, strict=True)]
    lam2 = np.round(np.linspace(1.0, 4.0, 31), 4)
    lines += [f"T-2,{a:.4f},{b / 1e6:.6f}" for a, b in zip(lam2, _neo(lam2), strict=True)]
    f = tmp_path / "break.csv"
    f.write_text("\n".join(lines) + "\n", "utf-8")
    assert main(["fit", str(f), "--model", "neo-hookean", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    ult = doc["ultimate"]
    assert [u["specimen"] for u in ult] == ["T-1"]  # T-2 did not rupture
    u = ult[0]
    assert u["tensile_strength_Pa"] == pytest.approx(_neo(4.8), rel=1e-5)  # file carries 6 decimals of MPa
    assert u["stress_at_break_Pa"] == pytest.approx(0.95 * _neo(4.8), rel=1e-5)
    assert u["elongation_at_break_percent"] == pytest.approx(400.0)
    by = {c["name"].split()[-1]: c for c in doc["curves"]}
    assert by["T-1"]["n"] == 41
    assert any("ruptured" in n for n in by["T-1"]["notices"])


def _broken(specimen, peak_lam, g=G):
    lam = np.round(np.arange(1.0, peak_lam + 0.55, 0.1), 4)
    s = g * (lam - lam ** -2)
    k = int(round((peak_lam - 1.0) / 0.1))
    s[k + 1:] = 0.02 * s[k]  # broken right after the peak point
    return split_at_rupture(TestCurve("uniaxial", lam, s, specimen=specimen))[0]


def test_compare_gives_break_statistics_and_verdicts():
    from scipy import stats

    from network_models.compare import compare
    from network_models.compounds import Compound

    peaks_a, peaks_b = (5.0, 5.2, 4.8), (4.0, 4.1, 3.9)
    a = Compound("A", [_broken(f"A-{i}", p) for i, p in enumerate(peaks_a)], baseline=True)
    b = Compound("B", [_broken(f"B-{i}", p) for i, p in enumerate(peaks_b)])
    doc = compare([a, b], model="neo-hookean", spread_models=()).to_dict()
    ua = doc["compounds"][0]["ultimate"]
    eb = [(p - 1.0) * 100.0 for p in peaks_a]
    st = ua["statistics"]["elongation_at_break"]
    assert st["n"] == 3 and st["mean"] == pytest.approx(np.mean(eb))
    half = stats.t.ppf(0.975, 2) * np.std(eb, ddof=1) / np.sqrt(3)  # Student t, n − 1 (scipy.stats)
    assert st["ci95"] == pytest.approx([np.mean(eb) - half, np.mean(eb) + half])
    ts = [G * (p - p ** -2) for p in peaks_a]
    assert ua["statistics"]["tensile_strength"]["mean"] == pytest.approx(np.mean(ts), rel=1e-9)
    rows = {r["quantity"]: r for r in doc["ultimate_differences"]}
    assert rows["elongation_at_break"]["verdict"] == "different"  # 100 % points apart, sd 10: plainly different
    assert rows["elongation_at_break"]["absolute"] == pytest.approx(np.mean([(p - 1) * 100 for p in peaks_b])
                                                                    - np.mean(eb))


def test_report_sections_show_break_properties_and_escape_names():
    from network_models.compare import compare
    from network_models.compounds import Compound
    from network_models.report.recipe_sections import recipes_html, ultimate_html

    a = Compound("<b>A</b>", [_broken(f"A-{i}", p) for i, p in enumerate((5.0, 5.2, 4.8))], baseline=True,
                 recipe={"NR": 100.0, "N330": 20.0})
    cmp = compare([a], model="neo-hookean", spread_models=())
    html = "".join(ultimate_html(cmp) + recipes_html(cmp))
    assert "Break properties" in html and "Recipes (phr)" in html
    assert "<b>A</b>" not in html and "&lt;b&gt;A&lt;/b&gt;" in html
    assert "A-0 400" in html  # elongation at break of A-0: (5.0 − 1)·100 %


def test_chart_ticks_for_values_equal_up_to_rounding_do_not_hang():
    # identical specimens fitted to the last bits: the tick loop's step fell below the float spacing and never
    # advanced (found while writing the report test above)
    from network_models.report.charts import nice_ticks

    t = nice_ticks(0.5000000000001, 0.5000000000002)
    assert 2 <= len(t) <= 12 and t[0] <= 0.5 <= t[-1]


def test_test_conditions_travel_into_the_report(tmp_path):
    from network_models.compare import compare
    from network_models.compounds import load_compound
    from network_models.report.recipe_sections import conditions_html

    f = tmp_path / "c.csv"
    lam = np.linspace(1.0, 3.0, 21)
    f.write_text("# crosshead speed: 500 mm/min\n# die: type 2 <dumbbell>\n# test date: 2026-01-12\n"
                 "# cycle: 1st loading\n# temperature: 23 °C\nstretch,stress (MPa)\n"
                 + "".join(f"{a:.4f},{_neo(a) / 1e6:.6f}\n" for a in lam), "utf-8")
    cmp = compare([load_compound("C", [f])], model="neo-hookean", spread_models=())
    html = "".join(conditions_html(cmp))
    for text in ("500 mm/min", "1st loading", "2026-01-12", "23.0 °C", "type 2 &lt;dumbbell&gt;"):
        assert text in html
    assert "not stated" in html  # the specimen type is not given
