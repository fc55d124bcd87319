"""The app's state classes and page factory, without a browser.

Numbers are checked against textbook relations computed here independently (sources named beside each
check), not against the app's own earlier output.
"""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import R

pn = pytest.importorskip("panel")

from app.data_state import MAX_UPLOAD_BYTES, DataState, SwellState  # noqa: E402
from app.state import NetworkState, sig  # noqa: E402
from network_models import get_polymer  # noqa: E402
from network_models.swelling import get_solvent  # noqa: E402

T23 = 296.15


# ----- explorer ------------------------------------------------------------------------------------
def test_affine_curves_follow_the_gaussian_network_in_all_three_modes():
    s = NetworkState(nu=200.0, T_C=23.0, models=["affine"], entanglements=False)
    res = s.stress_curves()["curves"]
    G = 200.0 * R * T23  # affine network G = νRT (Kuhn; Flory 1953), R from scipy.constants (CODATA)
    lam = res["uniaxial"]["lam"]
    # nominal stress, docs/methods.md §stress-from-energy with W = (G/2)(I₁ − 3)
    # (Treloar 1944, Trans. Faraday Soc. 40:59):
    np.testing.assert_allclose(res["uniaxial"]["affine"], G * (lam - lam**-2) / 1e6, rtol=1e-12)
    np.testing.assert_allclose(res["equibiaxial"]["affine"], G * (lam - lam**-5) / 1e6, rtol=1e-12)
    np.testing.assert_allclose(res["planar"]["affine"], G * (lam - lam**-3) / 1e6, rtol=1e-12)


def test_models_not_shown_or_without_a_mode_are_empty_not_zero():
    s = NetworkState(models=["slip-tube", "affine"])
    res = s.stress_curves()["curves"]
    assert np.all(np.isnan(res["planar"]["slip-tube"]))  # slip tube: a uniaxial (Mooney-plot) form only
    assert np.all(np.isnan(res["uniaxial"]["eight-chain"]))  # not chosen
    assert np.all(np.isfinite(res["uniaxial"]["slip-tube"]))


def test_mooney_plot_of_mooney_rivlin_is_a_straight_line():
    # Mooney 1940 (J. Appl. Phys. 11:582): σ* = P/(λ − λ⁻²) = 2C₁ + 2C₂/λ for W = C₁(I₁−3) + C₂(I₂−3)
    s = NetworkState(models=["mooney-rivlin"])
    net = s.network()
    p = net.model_params("mooney-rivlin")
    mo = s.mooney_curves(net)
    expected = (2 * p["C1"] + 2 * p["C2"] * mo["inv_lam"]) / 1e6
    np.testing.assert_allclose(mo["mooney-rivlin"], expected, rtol=1e-9)


def test_readout_labels_strand_and_junction_density():
    s = NetworkState(nu=180.0, f=6.0)
    r = s.readout()
    assert r["nu"] == pytest.approx(180.0)
    assert r["junction_density"] == pytest.approx(2 * 180.0 / 6.0)  # μ_j = 2ν/f (Flory 1953, definition)
    # M_c = ρ/ν with the polymer's density from the polymer table
    assert r["Mc_g_mol"] == pytest.approx(get_polymer("NR").density / 180.0 * 1000.0)


def test_coupled_and_free_chain_length():
    s = NetworkState(nu=150.0)
    coupled = s.network().N
    # coupled: N = M_c/M_K = ρ/(ν M_K) (Rubinstein & Colby 2003, ch. 2 [memory])
    poly = get_polymer("NR")
    assert coupled == pytest.approx(poly.density / 150.0 / poly.kuhn_molar_mass)
    s.couple_N = False
    s.N_free = 12.0
    assert s.network().N == pytest.approx(12.0)


def test_eight_chain_lock_in_the_limits_table():
    # Arruda & Boyce 1993 (J. Mech. Phys. Solids 41:389): uniaxial lock where λ² + 2/λ = 3N
    s = NetworkState(nu=400.0, models=["eight-chain"])
    N = s.network().N
    row = s.limit_rows()[0]
    lam = float(row["uniaxial"])
    assert lam**2 + 2 / lam == pytest.approx(3 * N, rel=3e-3)  # shown with 3 significant digits


def test_force_at_fixed_length_is_proportional_to_absolute_temperature_without_expansion():
    # Meyer & Ferri 1935 (Helv. Chim. Acta 18:570): at fixed length an entropic network's force ∝ T
    s = NetworkState(expansion=False, clamp_stretch=2.0)
    ft = s.force_vs_T()
    T, F = ft["T"], ft["F"]
    assert F[0] == pytest.approx(0.0, abs=1e-15)
    np.testing.assert_allclose(F[1:] / T[1:], F[-1] / T[-1], rtol=1e-12)
    # at the network's temperature it equals the Gaussian uniaxial stress G(λ − λ⁻²), G = νRT
    G = s.network().affine_modulus
    assert np.interp(T23, T, F) == pytest.approx(G * (2.0 - 0.25) / 1e6, rel=1e-3)
    assert s.inversion() is None


def test_thermoelastic_inversion_near_beta_T_over_3():
    # small-strain Gaussian estimate ε_inv ≈ βT/3 (Treloar, Physics of Rubber Elasticity, ch. 2 [memory])
    s = NetworkState(expansion=True)
    beta = get_polymer("NR").expansion
    assert s.inversion() == pytest.approx(beta * T23 / 3, rel=0.1)


def test_sig_prints_plain_digits():
    assert sig(3261.2, 4) == "3261"
    assert sig(0.12345, 3) == "0.123"
    assert sig(float("nan")) == "—"


# ----- sessions and bad input ---------------------------------------------------------------------
@pytest.fixture(scope="module")
def two_pages():
    from app.main import create_app

    return create_app(), create_app()


def test_sessions_are_independent(two_pages):
    a, b = two_pages
    assert a.ns_state is not b.ns_state
    a.ns_state.nu = 321.0
    assert b.ns_state.nu != 321.0
    data = b"stretch,stress (MPa)\n1.0,0\n1.5,0.4\n2.0,0.7\n2.5,0.95\n3.0,1.2\n"
    lf = a.ns_data.state.add_upload("mine.csv", data)
    a.ns_data.state.accept_uploads([lf])
    assert "mine.csv" in [f.name for f in a.ns_data.state.files]
    assert "mine.csv" not in [f.name for f in b.ns_data.state.files]


def test_impossible_network_gives_a_message_and_keeps_the_plot(two_pages):
    page = two_pages[1]
    st, msgs = page.ns_state, page.ns_messages
    st.nu = 150.0
    before = dict(st.stress_curves()["curves"]["uniaxial"])
    st.nu = 9000.0  # coupled N = ρ/(ν M_K) < 1 for NR: no network
    text = " ".join(msgs.texts().values())
    assert "Kuhn segments" in text and "Traceback" not in text
    st.nu = 150.0
    assert "network" not in msgs.texts()
    np.testing.assert_allclose(st.stress_curves()["curves"]["uniaxial"]["affine"], before["affine"])


def test_garbage_upload_is_refused_and_nothing_changes():
    d = DataState()
    d.load_samples()
    files, sel = list(d.files), list(d.selected)
    with pytest.raises(ValueError, match="junk.csv"):
        d.add_upload("junk.csv", b"\x00\x01\x02\xff\xfe not a table")
    with pytest.raises(ValueError, match="empty"):
        d.add_upload("empty.csv", b"")
    big = b"1,2\n" * (MAX_UPLOAD_BYTES // 4 + 1)
    with pytest.raises(ValueError, match="20 MB"):
        d.add_upload("huge.csv", big)
    assert d.files == files and d.selected == sel


def test_fit_of_an_uploaded_gaussian_curve_recovers_its_strand_density():
    # a curve built from the affine relation P = νRT(λ − λ⁻²) with ν = 120 mol/m³ at 23 °C (textbook form,
    # R from scipy.constants): the neo-Hookean fit and the affine crosslink row must give ν back
    nu = 120.0
    lam = np.linspace(1.0, 3.0, 21)
    P = nu * R * T23 * (lam - lam**-2) / 1e6
    text = "# temperature: 23 °C\nstretch,stress (MPa)\n" + "\n".join(f"{a:.6f},{b:.8f}" for a, b in zip(lam, P,
                                                                                                      strict=True))
    d = DataState(fit_models=["neo-hookean"])
    lf = d.add_upload("gauss.csv", text.encode())
    d.accept_uploads([lf])
    problems = d.run_fit()
    assert problems == []
    assert d.results["neo-hookean"].params["G"].value == pytest.approx(nu * R * T23, rel=1e-5)
    d.table_model = "neo-hookean"
    t = d.crosslink_table()
    row = t.row("affine")
    assert row.nu == pytest.approx(nu, rel=1e-5)
    assert row.junction_density == pytest.approx(2 * nu / 4.0, rel=1e-5)  # μ_j = 2ν/f, f = 4


def test_per_file_mode_setting_rereads_the_file():
    d = DataState()
    data = b"stretch,stress (MPa)\n1.0,0\n1.5,0.4\n2.0,0.7\n2.5,0.95\n3.0,1.2\n"
    d.accept_uploads([d.add_upload("x.csv", data)])
    d.set_options("x.csv", mode="planar")
    assert d.get("x.csv").curves[0].mode.value == "planar"
    with pytest.raises(ValueError, match="positive"):
        d.set_options("x.csv", gauge_mm=-3)
    assert d.get("x.csv").curves[0].mode.value == "planar"


def test_swelling_form_matches_the_flory_rehner_balance():
    s = SwellState(dry_g=0.2000, swollen_g=1.0000, extracted_g=None, solvent="toluene", polymer="NR", chi=0.39)
    est = s.estimate()
    sol, poly = get_solvent("toluene"), get_polymer("NR")
    # rubber volume fraction of the swollen gel from masses and densities (definition)
    vr = (0.2 / poly.density) / (0.2 / poly.density + 0.8 / sol.density)
    assert est.phi == pytest.approx(vr, rel=1e-12)
    # Flory & Rehner 1943 (J. Chem. Phys. 11:521), affine, f = 4: ν = −[ln(1−φ)+φ+χφ²]/(V₁(φ^⅓ − φ/2))
    nu = -(math.log(1 - vr) + vr + 0.39 * vr**2) / (sol.molar_volume * (vr ** (1 / 3) - vr / 2))
    assert est.nu_affine == pytest.approx(nu, rel=1e-9)
    s.swollen_g = 0.1  # swapped masses
    with pytest.raises(ValueError, match="swapped"):
        s.estimate()


def test_core_cli_and_app_state_do_not_import_panel():
    code = ("import sys, network_models, network_models.cli, network_models.commands.serve, app.state, "
            "app.data_state, app.session, app.compare_state, app.swell_state, app.project_file, app.tables, "
            "app.display_units; "
            "bad = [m for m in ('panel', 'holoviews', 'bokeh') if m in sys.modules]; print(bad); "
            "sys.exit(1 if bad else 0)")
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert r.returncode == 0, r.stdout + r.stderr


def test_serve_reports_a_busy_port_in_a_sentence():
    import socket

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        s.listen(1)
        port = s.getsockname()[1]
        script = Path(sys.executable).with_name("netstretch")  # the installed console script, as users run it
        run_main = "import sys; from network_models.cli import main; sys.exit(main())"
        cmd = [str(script)] if script.exists() else [sys.executable, "-c", run_main]
        r = subprocess.run([*cmd, "serve", "--port", str(port), "--address", "127.0.0.1"],
                           capture_output=True, text=True, timeout=120)
    assert r.returncode == 2
    assert "already in use" in r.stderr and "Traceback" not in r.stderr


def test_fitted_network_can_be_drawn_in_the_explorer(two_pages):
    page = two_pages[0]
    dv, st = page.ns_data, page.ns_state
    dv.state.selected = [f.name for f in dv.state.files if f.group == "QM-S2"]
    dv.state.table_model = "extended-tube"
    dv.fit._send_to_explorer()
    row = dv.state.crosslink_table().row("affine-no-entanglement")
    # the explorer's affine modulus is then νRT of that row (R from scipy.constants)
    assert st.nu == pytest.approx(row.nu)
    assert st.network().affine_modulus == pytest.approx(row.nu * R * st.T, rel=1e-12)


def test_swelling_sample_picker_prefills_the_form():
    from app.swell_view import SwellView

    v = SwellView()
    label = v.sample.options[2]
    v.sample.value = label
    assert v.messages.texts() == {}
    assert v.state.sample_label.startswith(label)
    # grams at the edge: the form holds the table's masses (kg in the reader) × 1000
    from network_models.labfiles import read_manifest

    rows = read_manifest().swelling_results()
    row = rows[[f"{r.compound} {r.specimen or ''}".strip() for r in rows].index(label)]
    assert v.state.dry_g == pytest.approx(row.dry_mass * 1000.0)
    assert "Flory–Rehner result" in v.result.object


def test_freeing_N_keeps_the_coupled_value():
    from app.main import create_app

    page = create_app(load_samples=False)
    st = page.ns_state
    poly = get_polymer(st.polymer)
    st.couple_N = False
    # N = M_c/M_K = ρ/(ν M_K) (Rubinstein & Colby 2003, ch. 2 [memory]), shown to one decimal
    assert st.N_free == pytest.approx(poly.density / st.nu / poly.kuhn_molar_mass, abs=0.051)
    assert st.network().N_direct


def test_mixed_upload_keeps_the_good_file_and_names_the_bad_one():
    from types import SimpleNamespace

    from app.main import create_app

    page = create_app(load_samples=False)
    dv = page.ns_data
    good = b"stretch,stress (MPa)\n1,0\n1.5,0.4\n2,0.7\n2.5,0.9\n"
    dv._on_upload(SimpleNamespace(new={"good.csv": good, "bad.csv": b"\x00\x01zz"}))
    msg = dv.messages.texts()["upload"]
    assert "bad.csv" in msg and "good.csv loaded" in msg
    assert dv.state.selected == ["good.csv"]
    assert dv.state.results  # the good file was fitted


def test_the_sessions_file_store_and_the_fit_state_are_two_objects():
    """Issue #18 (structure): the file store every tab reads and the fit tab's state are separate objects; the
    fit state holds the store and follows it, and a refit with the same curves and settings is not made."""
    from app.data_state import FileStore
    from app.session import Session

    s = Session()
    assert s.store is not s.data and isinstance(s.store, FileStore) and not isinstance(s.data, FileStore)
    assert s.data.store is s.store and s.compare.store is s.store
    for fit_only in ("selected", "results", "fit_models", "residual", "run_fit"):
        assert not hasattr(s.store, fit_only)  # the store has no fit state
    s.data.load_samples()
    names = [f.name for f in s.store.files]
    assert s.data.param.selected.objects == names and s.data.selected
    assert {f.group for f in s.store.files if f.name in s.data.selected} == {s.store.manifest_baseline}
    other = DataState(store=s.store)  # a second fit state over the same store sees the same files
    assert other.param.selected.objects == names
    s.data.run_fit()
    first = s.data.results
    s.data.run_fit()  # the same curves, models and weighting: the fits stand
    assert s.data.results is first
    s.data.residual = "absolute" if s.data.residual == "relative" else "relative"
    s.data.run_fit()
    assert s.data.results is not first
