"""Stretch shown as % elongation in the app (issue #21): one toggle beside the stress and density units, followed
by the explorer's force–stretch axes, lock markers and read-outs (the lock as "elongation reserve"), the fit
tab's plots and preview table and the Compare tab's tables; saved with the project's display settings.

Independent value: elongation e = (λ − 1)·100 % — the definition of engineering strain in % (common practice of
the tensile standards), written here in the test; the curves are an affine network P = νRT(λ − λ⁻²) (Treloar
1975, ch. 4) with R from scipy.constants (CODATA).
"""

from __future__ import annotations

import re
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.constants import R

pytest.importorskip("panel")

T23 = 296.15


def elongation(lam):
    return (np.asarray(lam, dtype=float) - 1.0) * 100.0


def gauss_csv(nu=120.0, hi=3.0) -> bytes:
    lam = np.linspace(1.0, hi, 21)  # 1.0, 1.1, … 3.0: λ = 2 is a data point
    P = nu * R * T23 * (lam - lam**-2) / 1e6
    return ("# temperature: 23 °C\nstretch,stress (MPa)\n"
            + "\n".join(f"{a:.6f},{b:.8f}" for a, b in zip(lam, P, strict=True))).encode()


@pytest.fixture(scope="module")
def page():
    from app.main import create_app

    a = create_app(load_samples=False)
    a.ns_data._on_upload(SimpleNamespace(new={"EL-1_uniaxial.csv": gauss_csv(),
                                              "EL-2_uniaxial.csv": gauss_csv(150.0)}))
    a.ns_data.state.selected = ["EL-1_uniaxial.csv"]
    yield a
    a.ns_session.units.stretch = "stretch"


@pytest.fixture()
def units(page):
    u = page.ns_session.units
    u.stretch = "stretch"
    yield u
    u.stretch = "stretch"


def test_lambda_two_shows_as_one_hundred_percent(units):
    assert units.x(2.0) == 2.0  # shown as λ until toggled
    units.stretch = "elongation"
    assert units.x(2.0) == pytest.approx(100.0) and units.x_label() == "elongation (%)"
    np.testing.assert_allclose(units.x([1.0, 1.5, 4.0]), elongation([1.0, 1.5, 4.0]), rtol=1e-12)


def test_fit_plots_and_preview_follow_the_stretch_toggle(page, units):
    fit = page.ns_data.fit
    assert "ns-stretch-unit" in fit.stretch_unit.css_classes  # the toggle sits with the unit toggles
    ff = fit.figs["uniaxial"]
    lam_pts = np.asarray(ff.data.data["x"], dtype=float)
    lam_line = np.asarray(ff.source.data["lam"], dtype=float)
    assert ff.fig.xaxis[0].axis_label.startswith("stretch λ") and lam_pts.max() == pytest.approx(3.0)
    units.stretch = "elongation"
    assert ff.fig.xaxis[0].axis_label == "elongation (%)" == ff.resid_fig.xaxis[0].axis_label
    np.testing.assert_allclose(ff.data.data["x"], elongation(lam_pts), rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(ff.source.data["lam"], elongation(lam_line), rtol=1e-12, atol=1e-9)
    assert ff.fig.x_range.start == pytest.approx(0.0) and ff.fig.x_range.end == pytest.approx(elongation(lam_line[-1]))
    page.ns_data.edit_file.value = "EL-1_uniaxial.csv"
    prev = page.ns_data.preview.object
    assert "elongation (%)" in prev and "stretch λ" not in prev
    units.stretch = "stretch"
    np.testing.assert_allclose(ff.data.data["x"], lam_pts, rtol=1e-12)
    assert "stretch λ" in page.ns_data.preview.object


def test_explorer_axes_locks_and_readout_follow_the_toggle(page, units):
    ex = page.ns_explorer
    st = ex.state
    st.models = ["eight-chain", "affine"]
    sf = ex.stress["uniaxial"]
    lam = np.asarray(sf.source.data["lam"], dtype=float)
    locks = list(sf.locks.data["x"])
    lock_u = st.readout(st.network())["lock_uniaxial"]
    assert f"λ = {lock_u:.3g}" in ex.controls.derived.object
    units.stretch = "elongation"
    assert sf.fig.xaxis[0].axis_label == "elongation (%)"
    np.testing.assert_allclose(sf.source.data["lam"], elongation(lam), rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(sf.locks.data["x"], elongation(locks), rtol=1e-12)
    np.testing.assert_allclose(sf.data.data["x"], elongation(ex._data_overlay["uniaxial"]["x"]), atol=1e-9)
    assert sf.fig.x_range.start == pytest.approx(0.0)
    ro = ex.controls.derived.object
    assert "elongation reserve to the uniaxial lock" in ro and f"{(lock_u - 1) * 100:.3g} %" in ro
    hover = [t for t in sf.fig.tools if getattr(t, "tooltips", None)][0].tooltips
    assert ("e (%)", "@x{0.0}") in hover
    ex.set_visible("moduli", True)
    lim = ex.limits.object
    assert "uniaxial elongation reserve (%)" in lim and "λ_lock" not in lim
    units.stretch = "stretch"
    assert "uniaxial λ_lock" in ex.limits.object
    np.testing.assert_allclose(sf.source.data["lam"], lam, rtol=1e-12)


def test_compare_tables_show_the_lock_as_elongation_reserve(page, units):
    cs, cv = page.ns_session.compare, page.ns_compare
    cs.param.update(chosen=["EL-1", "EL-2"], model="eight-chain")
    cmp = cv.run()
    lock = next(r.quantities["lock"] for r in cmp.results if r.name == "EL-1")
    assert "elongation reserve" not in cv.table.object
    units.stretch = "elongation"
    table = cv.table.object
    assert "elongation reserve" in table
    m = re.search(r"data-compound='EL-1' data-key='lock_elongation' data-value='([^']+)'", table)
    assert m and float(m.group(1)) == pytest.approx(float(elongation(lock.value)), rel=1e-12)
    # the shown comparison is a copy: the session's (cached) comparison is not changed
    assert all("lock_elongation" not in r.quantities for r in cs.comparison.results)
    assert "elongation (%)" in cs.report().to_html()
    units.stretch = "stretch"
    assert "elongation reserve" not in cv.table.object


def test_the_fit_report_follows_the_toggle(page, units):
    fit = page.ns_data.fit
    before = fit._report_file().getvalue().decode()
    assert "elongation (%)" not in before
    units.stretch = "elongation"
    after = fit._report_file().getvalue().decode()
    assert "elongation (%)" in after  # the report's curve charts get an elongation axis


def test_the_stretch_display_is_saved_with_the_project(page, units):
    from app.session import Session

    units.stretch = "elongation"
    blob = page.ns_session.to_project()
    b = Session()
    assert b.load_project(blob) == []
    assert b.units.stretch == "elongation"
