"""The Design tab without a browser, and the design section of the report (HTML with inline SVG)."""

from __future__ import annotations

import re

import numpy as np
import pytest
from scipy.constants import R, zero_Celsius

pn = pytest.importorskip("panel")

from app.design_view import create_design_view  # noqa: E402
from app.messages import Messages  # noqa: E402
from app.state import NetworkState  # noqa: E402
from network_models.design import design  # noqa: E402
from network_models.design.map import feasibility_map  # noqa: E402


def test_view_finds_the_window_and_shows_binding():
    st, msg = NetworkState(), Messages()
    v = create_design_view(explorer_state=st, messages=msg)
    res = v.compute()
    assert msg.texts() == {}
    assert res.feasible and "Feasible" in v.result.object
    assert res.binding["low"][0] in v.result.object
    assert v.map_pane.object is not None


def test_affine_window_in_the_view_follows_the_explorer_temperature():
    # affine G = νRT (R from scipy.constants, CODATA) at the explorer's temperature
    st = NetworkState(T_C=60.0, entanglements=False)  # the affine model adds G_e otherwise (one G_e policy)
    v = create_design_view(explorer_state=st)
    v.state.model = "affine"
    v.rows.objects = []
    v._add_row("G=0.5MPa±5%")
    res = v.compute()
    T = zero_Celsius + 60.0
    assert res.window.lo == pytest.approx(0.95 * 0.5e6 / (R * T), rel=1e-8)


def test_click_on_the_map_moves_the_explorer():
    st = NetworkState()
    v = create_design_view(explorer_state=st)
    v.compute()
    v._picked(321.0, 0.12)
    assert st.nu == pytest.approx(321.0) and st.filler == pytest.approx(0.12)
    assert v._cur_source.data["x"] == [pytest.approx(321.0)]
    got = {}
    v2 = create_design_view(on_pick=lambda **kw: got.update(kw))
    v2.state.axis = "N"
    v2.compute()
    v2._picked(150.0, 40.0)
    assert got == {"nu": 150.0, "N": 40.0}


def test_bad_target_is_a_sentence_and_keeps_the_last_result():
    msg = Messages()
    v = create_design_view(messages=msg)
    v.compute()
    before = v.result.object
    v.rows.objects[0].objects[0].value = "M100=1.8"
    v.compute()
    assert "M100=1.8" in msg.texts()["design"] and "write it like" in msg.texts()["design"]
    assert v.result.object == before
    v.new_target.value = "Q(water)<=3"
    v._add_clicked()  # a bad solvent is caught at run time, not at adding: the row is added only when it parses
    v.new_target.value = "nonsense"
    n = len(v.rows.objects)
    v._add_clicked()
    assert len(v.rows.objects) == n and "nonsense" in msg.texts()["design"]


def test_two_sessions_are_independent():
    a, b = create_design_view(), create_design_view()
    a.rows.objects = []
    assert len(b.rows.objects) == 3 and b.state.targets is not a.state.targets


def test_to_html_numbers_and_self_contained():
    r = design(["M100=1.7..1.9MPa", "lock>=6", "G@100C>=0.4MPa"])
    h = r.to_html(current=250.0)
    lo = float(re.search(r"data-key='nu_low' data-value='([^']+)'", h).group(1))
    hi = float(re.search(r"data-key='nu_high' data-value='([^']+)'", h).group(1))
    assert lo == r.window.lo and hi == r.window.hi
    assert h.count("<svg") == 2 and "<script" not in h
    assert not re.search(r"(src|href)=['\"]?https?:", h)
    assert "validation testing" in h


def test_feasibility_map_agrees_with_the_window():
    r = design(["M100=1.7..1.9MPa", "lock>=6"])
    m = feasibility_map(r.targets, axis="filler", y=[0.0, 0.1], nu_range=(100.0, 600.0), n_nu=80)
    cols = m.nu[m.feasible[0]]
    assert cols.size and r.window.lo <= cols.min() and cols.max() <= r.window.hi
    # filler stiffens (Guth–Gold amplification): the window moves to lower ν
    assert m.nu[m.feasible[1]].max() < cols.max()
    mN = feasibility_map(r.targets, axis="N", y=np.geomspace(5, 100, 6), nu_range=(100.0, 600.0))
    assert mN.coupled_N is not None and mN.y_window() is not None


def test_measured_compounds_are_placed_and_advised():
    v = create_design_view()
    v.set_compounds({"QM-A": (150.0, (140.0, 160.0)), "bad": ("x", None)})
    res = v.compute()
    adv = v.state.compound_advice
    assert adv["QM-A"][2] == res.advise(150.0, (140.0, 160.0)).sentence
    assert adv["bad"][0] is None and "cannot be placed" in adv["bad"][2]
    assert "data-compound='QM-A'" in v.result.object


def test_the_page_mounts_the_design_tab_on_the_session_explorer():
    from app.main import create_app

    page = create_app(load_samples=False)
    assert page.ns_design.explorer_state is page.ns_state
    page.ns_design.rows.objects = []
    page.ns_design._add_row("G>=0.3MPa")
    assert page.ns_design.compute().feasible
