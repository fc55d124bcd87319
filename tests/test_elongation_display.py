"""Stretch shown as % elongation (display choice; network_models/display_units.py).

Independent value: elongation e = (λ − 1)·100 % — the definition of engineering strain in % (common practice
of the tensile standards), written here.
"""

from __future__ import annotations

from types import SimpleNamespace

import pytest

from network_models.compare.records import Quantity
from network_models.display_units import apply_to_comparison, stretch_shown


def test_stretch_as_elongation():
    assert stretch_shown(2.0, "elongation") == pytest.approx(100.0)
    assert stretch_shown(6.5, "elongation") == pytest.approx(550.0)
    assert stretch_shown(6.5, "stretch") == 6.5
    with pytest.raises(ValueError, match="stretch unit"):
        stretch_shown(2.0, "percent")


def test_lock_reads_as_elongation_reserve():
    q = Quantity("lock", "uniaxial locking stretch", 6.2, "1", 5.8, 6.7)
    r = SimpleNamespace(compound=SimpleNamespace(polymer="NR"), quantities={"lock": q})
    cmp = apply_to_comparison(SimpleNamespace(results=[r]), stretch="elongation")
    e = r.quantities["lock_elongation"]
    assert (e.value, e.low, e.high) == pytest.approx(((6.2 - 1) * 100, (5.8 - 1) * 100, (6.7 - 1) * 100))
    assert e.unit == "%" and "reserve" in e.label and cmp.display_units["stretch"] == "elongation"
    assert r.quantities["lock"].value == 6.2  # the stretch stays; the reserve is beside it


def test_report_curve_axes_in_elongation():
    import numpy as np

    from network_models.compare import compare
    from network_models.compounds import Compound
    from network_models.curves import TestCurve
    from network_models.report.charts import curve_plots

    lam = np.linspace(1.0, 3.0, 21)
    c = Compound("A", [TestCurve("uniaxial", lam, 0.5e6 * (lam - lam ** -2), specimen=f"A-{i}") for i in range(2)])
    cmp = apply_to_comparison(compare([c], model="neo-hookean", spread_models=()), stretch="elongation")
    (_mode, svg), = curve_plots(cmp)
    assert "elongation (%)" in svg and "stretch λ" not in svg
    assert ">200<" in svg  # λ = 3 is 200 % elongation: the axis reaches it
