"""The Compare tab's linked specimen views (HoloViews): what each plot draws and that one specimen is
selected across all of them.

Physics reference: the neo-Hookean nominal stress in uniaxial tension, P = G(λ − λ⁻²) (Treloar, *The
Physics of Rubber Elasticity*, 3rd ed., 1975, ch. 5).  For a one-parameter model linear in G the
least-squares G over a specimen's points has the closed form G = Σw²φ·P / Σw²φ² with φ = λ − λ⁻² and w the
residual weight — for the default relative residuals w = 1/max(|P|, 0.02·max|P|) (docs/methods.md
§residual-weighting) — written here from that formula, independent of the project's fitter.
"""

from __future__ import annotations

import numpy as np
import panel as pn
import pytest
from bokeh.document import Document

from app.specimen_data import point_frame, specimen_frame
from app.specimen_view import SpecimenViews
from network_models.compare import compare
from network_models.compounds import Compound
from network_models.curves import TestCurve

LAM = np.linspace(1.05, 2.6, 24)
PHI = LAM - LAM**-2


def _g_least_squares(data):
    """Weighted least-squares G of P = G·φ with the relative-residual weights (module doc)."""
    w = 1.0 / np.maximum(np.abs(data), 0.02 * np.max(np.abs(data)))
    return float(np.sum(w**2 * PHI * data) / np.sum(w**2 * PHI * PHI))
#: per compound: the specimens' shear moduli (Pa) — data made in the test, not a claim about any rubber
MODULI = {"A": (0.50e6, 0.53e6, 0.48e6), "B": (0.80e6, 0.77e6, 0.83e6, 0.79e6)}


def _curves(name, moduli):
    out = []
    for i, G in enumerate(moduli):
        wobble = 1.0 + 0.02 * np.sin(7.0 * LAM + i)  # a deterministic departure from the model, so residuals ≠ 0
        out.append(TestCurve("uniaxial", LAM, G * PHI * wobble, name=f"{name}{i + 1}", specimen=f"{name}{i + 1}"))
    return out


@pytest.fixture(scope="module")
def comparison():
    comps = [Compound(n, _curves(n, g), polymer="NR") for n, g in MODULI.items()]
    return compare(comps, model="neo-hookean", baseline="A")


def test_specimen_frame_holds_each_specimens_own_least_squares_modulus(comparison):
    df = specimen_frame(comparison)
    assert list(df["key"]) == [f"{n} · {n}{i + 1}" for n, g in MODULI.items() for i in range(len(g))]
    for n, moduli in MODULI.items():
        for i, _G in enumerate(moduli):
            data = comparison[n].compound.curves[i].stress
            g_ls = _g_least_squares(data)  # closed-form weighted least squares (module doc)
            got = df.loc[df["key"] == f"{n} · {n}{i + 1}", "G0"].item()
            assert got == pytest.approx(g_ls * 1e-6, rel=1e-6)
    assert set(df["status"]) == {"counted"}


def test_point_frame_residual_is_the_specimens_fit_minus_its_data(comparison):
    pts = point_frame(comparison)
    assert len(pts) == sum(len(g) for g in MODULI.values()) * LAM.size
    for n, moduli in MODULI.items():
        for i in range(len(moduli)):
            data = comparison[n].compound.curves[i].stress
            g_ls = _g_least_squares(data)
            mine = pts[pts["key"] == f"{n} · {n}{i + 1}"].sort_values("lam")
            np.testing.assert_allclose(mine["lam"], LAM)
            np.testing.assert_allclose(mine["residual"], (g_ls * PHI - data) * 1e-6, rtol=1e-6, atol=1e-12)
            np.testing.assert_allclose(mine["P_data"], data * 1e-6)


def _keys_of(element) -> set[str]:
    """The specimen keys an overlay's elements hold (a highlight draws one specimen only)."""
    out = set()
    for el in (element.values() if hasattr(element, "values") and not hasattr(element, "dimension_values")
               else [element]):
        if "key" in [d.name for d in el.dimensions()]:
            out |= set(el.dimension_values("key"))
    return out


def test_a_click_in_one_plot_selects_the_specimen_in_every_plot(comparison):
    view = SpecimenViews()
    view.set_comparison(comparison)
    assert view.specimen == "A · A1"
    # a click on the 6th point of the strand-density plot
    target = view._rows["nu"]["key"].iloc[5]
    view.taps["nu"].event(index=[5])
    assert view.specimen == target == "B · B3"
    for name in ("nu", "G0", "lock", "data"):
        assert _keys_of(view.marks[name][()]) == {target}, name
    # the residual plot's bold lines: exactly the selected specimen's residuals
    bold = view.marks["residual"][()]
    pts = view.points[view.points["key"] == target]
    got = np.sort(np.concatenate([c.dimension_values("residual") for c in bold.values()]))
    np.testing.assert_allclose(got, np.sort(pts["residual"].to_numpy()))
    # and a click in the residual plot moves the selection back to compound A
    i = int(np.flatnonzero(view._rows["residual"]["key"].to_numpy() == "A · A2")[0])
    view.taps["residual"].event(index=[i])
    assert view.specimen == "A · A2"
    assert _keys_of(view.marks["G0"][()]) == {"A · A2"}
    assert "A · A2" in view.info.object


def test_the_list_selects_too_and_the_views_render(comparison):
    view = SpecimenViews()
    view.set_comparison(comparison)
    view.pick.value = "B · B4"
    assert view.specimen == "B · B4"
    assert _keys_of(view.marks["lock"][()]) == {"B · B4"}
    assert len(view.overlays()) == 5
    root = pn.panel(view).get_root(Document())  # the overlays render to Bokeh models without error
    assert root is not None
    # a new comparison without the selected specimen falls back to its first specimen
    view.set_comparison(compare([Compound("C", _curves("C", (0.6e6, 0.62e6)))], model="neo-hookean"))
    assert view.specimen == "C · C1"
    view.set_comparison(None)
    assert view.specimen is None and view.overlays() == []
