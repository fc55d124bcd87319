"""The benchmarks' fast paths give the same answers as their slow references (correctness only, no timing).

A speed ratio means something only if both contenders compute the same thing: these tests check the
cached mpmath reference, the naive baselines (brentq L⁻¹, per-point stress, curve_fit) and the fast code
paths against each other and against outside values.
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import mpmath as mp
import numpy as np
import pytest

# `benchmarks` is a top-level folder, not an installed package: make it importable under a bare `pytest`
# too (`python -m pytest`, as `make test` runs it, has the project folder on the path already).
_ROOT = str(Path(__file__).resolve().parent.parent)
if _ROOT not in sys.path:
    sys.path.insert(0, _ROOT)

from benchmarks import bench_langevin, naive  # noqa: E402
from benchmarks.langevin_reference import load_reference, mp_inverse_langevin, reference_points  # noqa: E402
from network_models import MODELS, MODES, Network, get_model, inverse_langevin  # noqa: E402
from tests.reference import mp_inverse_langevin as mp_inverse_langevin_findroot  # noqa: E402

# ----- benchmark 1: the inverse Langevin reference and baselines -----------------------------------------


def test_reference_cache_is_the_documented_point_set():
    y, x = load_reference()
    assert y.size >= 10_000  # brief: at least 10⁴ points
    assert y.min() == 0.0 and y.max() == 1.0 - 1e-12
    assert np.array_equal(y, reference_points())
    assert np.sum(1.0 - y < 1e-6) >= 1000  # dense near the pole


def test_reference_generator_against_manual_values():
    # docs/methods.md §inverse-langevin (mpmath, 30 digits): L⁻¹(0.1), (0.5), (0.8), (0.9).
    expected = {0.1: 0.301817149206338, 0.5: 1.79675598472371, 0.8: 4.99772056690742, 0.9: 9.99999958776895}
    for y, x in expected.items():
        assert float(mp_inverse_langevin(y)) == pytest.approx(x, rel=2e-15)


def test_cached_reference_matches_independent_mpmath_findroot():
    # tests/reference.py solves coth x − 1/x = y with mpmath.findroot (secant, own start values), a
    # different route from the cache generator's Newton iteration.
    y, x = load_reference()
    idx = np.linspace(0, y.size - 1, 150).astype(int)
    for i in idx:
        if y[i] == 0.0:
            assert x[i] == 0.0
            continue
        assert x[i] == pytest.approx(mp_inverse_langevin_findroot(float(y[i])), rel=1e-15)


def test_cached_reference_residuals_in_mpmath():
    # The defining equation itself, at 60 digits: L(x_ref) = y to the rounding of x_ref (|dL/dx|·ulp).
    y, x = load_reference()
    for i in np.linspace(1, y.size - 1, 60).astype(int):
        with mp.workdps(60):
            X = mp.mpf(float(x[i]))
            resid = mp.coth(X) - 1 / X - mp.mpf(float(y[i]))
            slope = 1 / X**2 - 1 / mp.sinh(X) ** 2
            assert abs(resid) <= 2 * slope * abs(X) * mp.mpf(2) ** -52


def test_fast_inverse_langevin_meets_the_benchmark_target():
    out = bench_langevin.accuracy()
    assert out["langevin_max_rel_error"] <= 1e-13


def test_brentq_baseline_computes_the_same_function():
    # The baseline must do the same job as the fast path, else the speed ratio is meaningless.
    y, x = load_reference()
    # Its plain residual loses digits as y -> 1 (about 1e-16/(1 − y)), so the check stops at 1 − 1e-6.
    pick = (y > 0) & (y <= 1.0 - 1e-6)
    ys, xs = y[pick][::20], x[pick][::20]
    got = bench_langevin.brentq_inverse_langevin_array(ys)
    np.testing.assert_allclose(got, xs, rtol=1e-9)
    np.testing.assert_allclose(inverse_langevin(ys), got, rtol=1e-9)


def test_cohen_baseline_is_cohens_pade():
    # Cohen 1991, Rheol. Acta 30:270: y(3 − y²)/(1 − y²); his stated maximum relative error is about 4.9 %
    # (from memory), reached near y ≈ 0.8.  Against mpmath on a grid:
    y, x = load_reference()
    pick = y > 0
    rel = np.abs(bench_langevin.cohen(y[pick]) / x[pick] - 1.0)
    assert 0.04 < rel.max() < 0.05
    assert bench_langevin.cohen(np.array([0.5]))[0] == pytest.approx(0.5 * 2.75 / 0.75, rel=1e-15)


# ----- the naive per-point stress (slow reference for benchmarks 3 and 5) -------------------------------


def _mp_stretches(mode, s):
    """Principal stretches of the incompressible test modes (docs/methods.md §test-modes), in mpmath."""
    if mode == "uniaxial":
        return [s, 1 / mp.sqrt(s), 1 / mp.sqrt(s)]
    if mode == "equibiaxial":
        return [s, s, 1 / s**2]
    return [s, mp.mpf(1), 1 / s]


def _mp_energy_eight_chain(mode, lam, mu, N):
    """Arruda & Boyce 1993 (J. Mech. Phys. Solids 41:389) eight-chain energy, evaluated in mpmath."""

    def W(s):
        a = _mp_stretches(mode, s)
        I1 = sum(v * v for v in a)
        r = mp.sqrt(I1 / 3) / mp.sqrt(N)
        beta = mp.findroot(lambda b: mp.coth(b) - 1 / b - r, 3 * r / (1 - r * r))
        return mu * N * (r * beta + mp.log(beta / mp.sinh(beta)))

    return W


@pytest.mark.parametrize("mode", ["uniaxial", "equibiaxial", "planar"])
def test_naive_eight_chain_is_the_derivative_of_the_published_energy(mode):
    # Nominal stress = (1/k) dW/dλ along the mode's path, k = 2 for equibiaxial (two loaded faces), 1 otherwise.
    mu, N = 0.4e6, 12.0
    k = 2 if mode == "equibiaxial" else 1
    for lam in (1.3, 2.0, 2.6):
        with mp.workdps(30):
            W = _mp_energy_eight_chain(mode, lam, mu, N)
            ref = float(mp.diff(W, mp.mpf(lam))) / k
        assert naive.eight_chain_point(mode, lam, mu, N) == pytest.approx(ref, rel=1e-11)


@pytest.mark.parametrize("mode", ["uniaxial", "equibiaxial", "planar"])
def test_naive_extended_tube_is_the_derivative_of_the_published_energy(mode):
    # Kaliske & Heinrich 1999 (Rubber Chem. Technol. 72:602) energy [form from memory], mpmath derivative.
    Gc, Ge, d, b = 0.3e6, 0.2e6, 0.1, 0.2
    k = 2 if mode == "equibiaxial" else 1

    def W(s):
        a = _mp_stretches(mode, s)
        x = sum(v * v for v in a) - 3
        u = 1 - d**2 * x
        return Gc / 2 * ((1 - d**2) * x / u + mp.log(u)) + 2 * Ge / b**2 * sum(v**-b - 1 for v in a)

    for lam in (0.7, 1.5, 2.5) if mode == "uniaxial" else (1.5, 2.5):
        with mp.workdps(30):
            ref = float(mp.diff(W, mp.mpf(lam))) / k
        assert naive.extended_tube_point(mode, lam, Gc, Ge, d, b) == pytest.approx(ref, rel=1e-11)


@pytest.mark.parametrize("name,params", [
    ("eight-chain", {"mu": 0.4e6, "N": 12.0}),
    ("extended-tube", {"Gc": 0.3e6, "Ge": 0.2e6, "delta": 0.1, "beta": 0.2}),
])
@pytest.mark.parametrize("mode", ["uniaxial", "equibiaxial", "planar"])
def test_core_stress_equals_naive_stress(name, params, mode):
    m = get_model(name)
    lam = np.linspace(0.6 if mode == "uniaxial" else 1.0, 3.0, 41)
    fast = m.nominal_stress(mode, lam, params)
    slow = naive.naive_stress(name, [mode] * lam.size, lam, params)
    np.testing.assert_allclose(fast, slow, rtol=1e-12, atol=1e-6)


def test_naive_stress_is_nan_past_the_lock_like_the_core():
    m = get_model("eight-chain")
    p = {"mu": 0.4e6, "N": 4.0}
    lam = np.array([1.5, 2.0, 3.0, 4.0])  # uniaxial lock at I₁ = 3N = 12: λ ≈ 3.41
    fast = m.nominal_stress("uniaxial", lam, p)
    slow = naive.naive_stress("eight-chain", ["uniaxial"] * 4, lam, p)
    assert np.array_equal(np.isnan(fast), np.isnan(slow)) and np.isnan(slow[-1])


def test_naive_fit_recovers_known_parameters():
    # Noise-free stress from the published eight-chain form, so the fit must return the generating values.
    true = {"mu": 0.35e6, "N": 15.0}
    curves = []
    for mode, hi in (("uniaxial", 3.5), ("equibiaxial", 2.2), ("planar", 3.0)):
        lam = np.linspace(1.05, hi, 20)
        curves.append((mode, lam, naive.naive_stress("eight-chain", [mode] * lam.size, lam, true)))
    p, cost, _ = naive.naive_fit("eight-chain", curves, {"mu": 0.2e6, "N": 30.0},
                                 {"mu": (1e3, 1e8), "N": (1.5, 1e4)})
    assert p["mu"] == pytest.approx(true["mu"], rel=1e-8)
    assert p["N"] == pytest.approx(true["N"], rel=1e-8)


# ----- benchmark 2: the slider-move path ------------------------------------------------------------------


def test_core_move_evaluates_every_supported_model_and_mode():
    from benchmarks.bench_models import core_move

    lam = np.linspace(1.0, 5.0, 400)
    out = core_move(150.0, lam)
    expected = {(n, mo.value) for n, m in MODELS.items() for mo in MODES if m.supports(mo)}
    assert set(out) == expected
    net = Network(polymer="NR", nu=150.0, T=296.15)
    m = get_model("eight-chain")
    np.testing.assert_array_equal(out[("eight-chain", "uniaxial")],
                                  m.nominal_stress("uniaxial", lam, net.model_params(m)))


def test_app_stress_curves_equal_the_core_path():
    from app.state import NetworkState
    from benchmarks.bench_models import core_move

    st = NetworkState(models=list(MODELS), lam_max=5.0)
    st.nu = 222.0
    app = st.stress_curves()["curves"]
    lam = app["uniaxial"]["lam"]
    core = core_move(222.0, lam, locks=False)
    for (name, mode), stress in core.items():
        np.testing.assert_allclose(app[mode][name], stress / 1e6, rtol=1e-14, equal_nan=True)


# ----- the runner ------------------------------------------------------------------------------------------


def test_runner_writes_one_json_document_with_nulls_and_notes(capsys):
    from benchmarks.__main__ import main

    assert main(["--quick", "--json", "--only", "langevin"]) == 0
    lines = capsys.readouterr().out.strip().splitlines()
    doc = json.loads(lines[-1])
    assert doc["langevin_max_rel_error"] is not None and doc["langevin_max_rel_error"] <= 1e-13
    assert math.isfinite(doc["langevin_speed_vs_cohen"])
    for key in ("models_eval_ms_median", "fit_speedup_vs_naive", "slider_update_ms_median", "batch_curves_per_s"):
        assert doc[key] is None
    assert any(n.startswith("fit:") for n in doc["notes"])
    assert doc["machine"]["numpy"] == np.__version__


# ----- benchmarks 3 and 5: the fitter against the naive curve_fit ------------------------------------------


@pytest.mark.parametrize("model", ["eight-chain", "extended-tube"])
def test_fast_fit_reaches_the_naive_optimum(model):
    from benchmarks.bench_fit import compare
    from benchmarks.datasets import three_mode_curves

    out = compare(model, three_mode_curves(), repeats=1)
    assert out["max_rel_param_diff"] <= 1e-6, out
    assert out["fast_rss_Pa2"] == pytest.approx(out["naive_rss_Pa2"], rel=1e-9)


def test_batch_fit_of_one_curve_equals_the_naive_fit():
    from benchmarks.datasets import batch_curves
    from network_models import fitting

    c = batch_curves(3)[2]
    fast = fitting.fit("eight-chain", c, residual="absolute").values  # the naive fit's weighting
    G0 = fitting.estimate_modulus([c])
    slow, _, _ = naive.naive_fit("eight-chain", [("uniaxial", c.stretch, c.stress)],
                                 get_model("eight-chain").guess(G0), {"mu": (1.0, 1e9), "N": (1.0 + 1e-9, 1e6)})
    assert fast["mu"] == pytest.approx(slow["mu"], rel=1e-6)
    assert fast["N"] == pytest.approx(slow["N"], rel=1e-6)


def test_batch_data_are_inside_the_lock_and_labelled_invented():
    from benchmarks.datasets import batch_curves, three_mode_curves

    m = get_model("eight-chain")
    for c in batch_curves(20):
        assert "invented" in c.name
        assert np.all(np.isfinite(m.nominal_stress("uniaxial", c.stretch, c.metadata["true"])))
    assert all("invented" in c.name for c in three_mode_curves())


def test_browser_benchmark_without_chromium_reports_null_and_why(monkeypatch):
    from benchmarks import bench_app

    monkeypatch.setattr(bench_app, "CHROMIUM", "/nonexistent/chromium")
    out = bench_app.run(quick=True)
    assert out["slider_update_ms_median"] is None and out["slider_update_ms_p95"] is None
    assert "no Chromium" in out["notes"][0]


def test_runner_never_writes_nan_and_says_so(monkeypatch):
    from benchmarks import __main__ as runner
    from benchmarks import bench_models

    monkeypatch.setattr(bench_models, "run", lambda quick=False, deadline=None: {"models_eval_ms_median": float("nan")})
    doc = runner.run(quick=True, only=["models"], log=lambda m: None)
    json.dumps(doc, allow_nan=False)  # raises on NaN/inf
    assert doc["models_eval_ms_median"] is None
    assert any("models_eval_ms_median" in n and "not a finite number" in n for n in doc["notes"])


# ----- benchmark 4: the hooks the browser benchmark relies on still exist ----------------------------------


@pytest.mark.ui
@pytest.mark.slow
def test_browser_benchmark_hooks_find_the_slider_and_the_plot():
    # Not a timing test: one slider step must move ν by one step and produce the ordered events the
    # benchmark times (key press, data change, repaint), or the figure would be measuring nothing.
    import os

    from benchmarks import bench_app

    why = bench_app._unavailable()
    if why:
        if os.environ.get("NETSTRETCH_REQUIRE_BROWSER") == "1":
            pytest.fail(why)
        pytest.skip(why)
    with bench_app.app_server() as (url, _log):
        m = bench_app.measure(url, moves=1)
    assert float(m["nu_after"]) - float(m["nu_before"]) == pytest.approx(1.0 + bench_app.WARMUP)
    (r,) = m["runs"]
    assert 0 <= r["sent"] <= r["change"] <= r["paint"] <= r["frame"]


def test_browser_benchmark_skips_with_a_note_when_the_quick_budget_is_spent():
    import time

    from benchmarks import bench_app

    out = bench_app.run(quick=True, deadline=time.monotonic() + 1.0)
    assert out["slider_update_ms_median"] is None and out["slider_update_ms_p95"] is None
    assert "budget" in out["notes"][0]


# ----- the study's cold start: Student-t without scipy.stats, pint's definitions cache ------------------
def test_student_t_through_scipy_special_equals_scipy_stats_bit_for_bit():
    """Reference: scipy.stats.t (the library's own distribution object); the fast path must give the same
    floats exactly, so no interval, verdict or p-value of a comparison changes."""
    from scipy import stats

    from network_models.constants import student_t_ppf, student_t_sf, t_quantile

    rng = np.random.default_rng(18)
    dofs = [*range(1, 120), *rng.uniform(1.0, 300.0, 200)]
    for dof in dofs:
        for q in (0.5, 0.8, 0.9, 0.95, 0.975, 0.995):
            assert student_t_ppf(q, dof) == float(stats.t.ppf(q, dof))
        for x in rng.uniform(0.0, 12.0, 4):
            assert student_t_sf(x, dof) == float(stats.t.sf(x, dof))
    # textbook check: t_{0.975, 10} = 2.228 (two-sided 95 %, 10 dof; Student-t tables, e.g. Zar 1999 App. B.3)
    assert round(t_quantile(10), 3) == 2.228
    t_quantile.cache_clear()


def test_pint_definitions_cache_gives_the_same_factors(tmp_path, monkeypatch):
    """A registry from pint's disk cache converts exactly as one parsed from pint's definitions file
    (reference: pint itself, no cache); a broken cache falls back to parsing, with the same factors."""
    import pint

    from network_models import units

    plain = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    texts = [("MPa", "pressure"), ("psi", "pressure"), ("kgf/cm**2", "pressure"), ("N", "force"),
             ("lbf", "force"), ("mm", "length"), ("in", "length"), ("mm**2", "area"), ("degC", "temperature"),
             ("degF", "temperature"), ("percent", "dimensionless")]

    def factors(ureg):
        out = []
        for t, dim in texts:
            target = units.DIMENSIONS[dim][0]
            out.append((ureg.Quantity(0.0, t).to(target).magnitude, ureg.Quantity(1.0, t).to(target).magnitude))
        return out

    expected = factors(plain)
    monkeypatch.setenv("NETSTRETCH_CACHE_DIR", str(tmp_path))
    for _ in range(2):  # first: parses and writes the cache; second: reads it
        units._registry.cache_clear()
        assert factors(units._registry()) == expected
    folder = units._cache_folder(pint.__version__)
    assert folder is not None and any(folder.iterdir())
    for f in folder.iterdir():  # a cache file cut short (a process stopped while writing)
        if f.is_file() and f.suffix != ".json":
            f.write_bytes(f.read_bytes()[:10])
    units._registry.cache_clear()
    assert factors(units._registry()) == expected
    monkeypatch.setenv("NETSTRETCH_CACHE_DIR", "off")
    assert units._cache_folder(pint.__version__) is None
    units._registry.cache_clear()
