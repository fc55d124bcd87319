"""Checks of network_models.fitting.

Data here are generated in code from a model with known parameters plus seeded noise (numpy Generator),
never copied from our own output: each check compares the fit with the parameters that made the data.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import stats

from network_models import get_model
from network_models.curves import TestCurve
from network_models.fitting import FitError, estimate_modulus, fit, fit_many

EIGHT = get_model("eight-chain")
TRUE_8CH = {"mu": 0.30e6, "N": 12.0}
TOPS = {"uniaxial": 3.2, "equibiaxial": 2.1, "planar": 2.7}


def curves_from(model, params, tops=TOPS, n=20, sigma=0.0, rel=0.0, seed=0, lo=1.05):
    """Curves made from ``model`` with known ``params``: additive noise sigma (Pa) and/or relative noise."""
    rng = np.random.default_rng(seed)
    out = []
    for mode, top in tops.items():
        lam = np.linspace(lo, top, n)
        P = model.nominal_stress(mode, lam, params)
        P = P * (1 + rel * rng.standard_normal(n)) + sigma * rng.standard_normal(n)
        out.append(TestCurve(mode, lam, P, name=f"{mode} (generated)"))
    return out


# ------------------------------------------------------------------------------------------------
# recovery and interval coverage
# ------------------------------------------------------------------------------------------------
def test_exact_data_recover_parameters():
    # Noise-free data made with known parameters: the least-squares optimum is those parameters.
    res = fit("eight-chain", curves_from(EIGHT, TRUE_8CH))
    assert res.params["mu"].value == pytest.approx(TRUE_8CH["mu"], rel=1e-6)
    assert res.params["N"].value == pytest.approx(TRUE_8CH["N"], rel=1e-6)
    assert res.converged


@pytest.mark.parametrize("name,true", [
    ("gent", {"G": 0.45e6, "Jm": 40.0}),
    ("mooney-rivlin", {"C1": 0.20e6, "C2": 0.06e6}),
    ("non-affine-tube", {"Gc": 0.25e6, "Ge": 0.20e6}),
    ("extended-tube", {"Gc": 0.30e6, "Ge": 0.15e6, "delta": 0.12, "beta": 0.2}),
    ("three-chain", {"mu": 0.35e6, "N": 20.0}),
])
def test_other_models_recover_parameters(name, true):
    m = get_model(name)
    res = fit(m, curves_from(m, true, n=25))
    for k, v in true.items():
        assert res.params[k].value == pytest.approx(v, rel=1e-4), k


def test_interval_coverage_over_seeds():
    # Linearised 95 % intervals (Student t) should cover the true values in about 95 % of repeated
    # experiments (Seber & Wild, Nonlinear Regression, 1989, ch. 5 [from memory]: the linear
    # approximation is good when curvature is small, as here).  40 intervals (20 seeds × 2 parameters):
    # with a true coverage of 95 % the chance of 7 or more misses is 0.03 % (binomial, scipy.stats).
    misses = 0
    for seed in range(20):
        res = fit(EIGHT, curves_from(EIGHT, TRUE_8CH, sigma=4e3, seed=seed))
        for k, v in TRUE_8CH.items():
            lo, hi = res.params[k].ci95
            misses += not (lo <= v <= hi)
    assert stats.binom.sf(misses - 1, 40, 0.05) > 3e-4  # P(X >= misses) not absurdly small
    assert misses <= 6


def test_stderr_matches_scatter_over_seeds():
    # The reported standard error should match the spread of estimates over repeated noisy experiments
    # (definition of a standard error); allow ±35 % for 30 seeds (chi-square spread of a sample SD).
    est, se = [], []
    for seed in range(30):
        res = fit(EIGHT, curves_from(EIGHT, TRUE_8CH, sigma=4e3, seed=100 + seed))
        est.append(res.params["N"].value)
        se.append(res.params["N"].stderr)
    ratio = np.std(est, ddof=1) / np.mean(se)
    assert 0.65 < ratio < 1.35


def test_relative_residuals_with_relative_noise():
    res = fit(EIGHT, curves_from(EIGHT, TRUE_8CH, rel=0.01, seed=5), residual="relative")
    for k, v in TRUE_8CH.items():
        lo, hi = res.params[k].ci95
        assert lo < v < hi or res.params[k].value == pytest.approx(v, rel=0.05)
    assert res.residual == "relative"


def test_start_modulus_from_small_strain_slope():
    # Neo-Hookean curves: G = P/(λ − λ⁻²) uniaxial, P/(λ − λ⁻⁵) equibiaxial, P/(λ − λ⁻³) planar
    # (docs/methods.md §neo-hookean).
    m = get_model("neo-hookean")
    assert estimate_modulus(curves_from(m, {"G": 0.4e6})) == pytest.approx(0.4e6, rel=1e-12)


# ------------------------------------------------------------------------------------------------
# one mode fitted, others predicted
# ------------------------------------------------------------------------------------------------
def test_fit_uniaxial_predict_planar_and_equibiaxial():
    uni = curves_from(EIGHT, TRUE_8CH, tops={"uniaxial": 3.2}, rel=0.005, seed=2)
    res = fit(EIGHT, uni)
    for mode in ("planar", "equibiaxial"):
        lam = np.array([1.5, 2.0])
        assert np.allclose(res.predict(mode, lam), EIGHT.nominal_stress(mode, lam, TRUE_8CH), rtol=0.03)
        assert res.range_note(mode, lam) is not None
    assert res.range_note("uniaxial", [1.5, 2.0]) is None
    assert "extrapolation" in res.range_note("uniaxial", [5.0])
    assert any("no planar data" in w for w in res.warnings)
    assert res.tested_range["uniaxial"] == (pytest.approx(1.05), pytest.approx(3.2))


def test_planar_initial_slope_is_four_thirds_of_uniaxial():
    # Small-strain check (Treloar 1944, Trans. Faraday Soc. 40:59 [docs/methods.md §small-strain]): the planar
    # initial slope dP/dλ at λ = 1 is 4/3 of the uniaxial one (uniaxial 3G, planar 4G).
    res = fit("neo-hookean", curves_from(get_model("neo-hookean"), {"G": 0.5e6}, tops={"uniaxial": 1.5}))
    h = 1e-5
    su = (res.predict("uniaxial", [1 + h]) - res.predict("uniaxial", [1 - h]))[0] / (2 * h)
    sp = (res.predict("planar", [1 + h]) - res.predict("planar", [1 - h]))[0] / (2 * h)
    assert sp / su == pytest.approx(4.0 / 3.0, rel=1e-6)


# ------------------------------------------------------------------------------------------------
# locks, identifiability, instability
# ------------------------------------------------------------------------------------------------
def test_data_beyond_lock_do_not_break_the_fit():
    # Gent data with a sharp upturn close to its lock J_m = 15 (λ ≈ 4.19 uniaxial); the eight-chain fit must
    # keep every data point inside its own lock (finite predictions) whatever N it ends at.
    gent = get_model("gent")
    c = curves_from(gent, {"G": 0.4e6, "Jm": 15.0}, tops={"uniaxial": 4.1}, n=30)
    res = fit(EIGHT, c)
    assert np.all(np.isfinite(res.predict("uniaxial", c[0].stretch)))
    i1max = 4.1**2 + 2 / 4.1  # I₁ at the largest stretch; eight-chain locks at I₁ = 3N (Arruda & Boyce 1993)
    assert res.params["N"].value > i1max / 3


def test_fixed_lock_parameter_leaves_out_points_past_the_lock():
    c = curves_from(EIGHT, {"mu": 0.3e6, "N": 30.0}, tops={"uniaxial": 5.0}, n=30)
    res = fit(EIGHT, c, fixed={"N": 6.0})  # uniaxial lock at λ² + 2/λ = 18: λ ≈ 4.2
    assert res.params["N"].fixed and res.params["N"].value == 6.0
    assert any("left out" in w and "locking" in w for w in res.warnings)
    assert res.n < 30


def test_lock_bound_active_is_reported():
    # Stress rising faster than the chain model allows (invented shapes): an exponential upturn puts the
    # lock just past the data; one last point far above the curve pins N on the lock bound itself.
    lam = np.linspace(1.05, 3.0, 30)
    P = 0.4e6 * (lam - lam**-2) * np.exp(2.0 * (lam - 1) ** 2)
    res = fit(EIGHT, [TestCurve("uniaxial", lam, P)])
    assert np.all(np.isfinite(res.predict("uniaxial", lam)))
    assert any("locks just beyond the largest tested" in w for w in res.warnings), res.warnings
    lam = np.append(lam, 3.05)
    P = EIGHT.nominal_stress("uniaxial", lam, {"mu": 0.3e6, "N": 30.0})
    P[-1] *= 1000.0
    # absolute residuals (Pa): the far outlier weighs by its size, which is what pins N on the lock bound
    res = fit(EIGHT, [TestCurve("uniaxial", lam, P)], residual="absolute")
    assert np.all(np.isfinite(res.predict("uniaxial", lam)))
    # eight-chain lock: I₁ = 3N (Arruda & Boyce 1993) at λ = 3.05 ⇒ N = (3.05² + 2/3.05)/3
    assert res.params["N"].value == pytest.approx((3.05**2 + 2 / 3.05) / 3, rel=1e-3)
    assert any("is a bound, not an estimate" in w for w in res.warnings), res.warnings


def test_N_not_identifiable_far_from_lock():
    c = curves_from(EIGHT, {"mu": 0.3e6, "N": 80.0}, tops={"uniaxial": 1.4}, sigma=3e3, seed=1)
    res = fit(EIGHT, c)
    assert any(w.startswith("N ") or "N (" in w or "mu and N" in w for w in res.warnings), res.warnings


def test_mooney_rivlin_negative_c2_is_flagged():
    # A strong upturn read through the Mooney plot gives a negative slope 2C₂.
    c = curves_from(EIGHT, {"mu": 0.3e6, "N": 5.0}, tops={"uniaxial": 3.3}, n=25)
    res = fit("mooney-rivlin", c)
    assert res.params["C2"].value < 0
    assert any("C₂ is negative" in w for w in res.warnings)
    assert any("unstable in equibiaxial" in w for w in res.warnings)


def test_free_and_fixed_parameters():
    m = get_model("extended-tube")
    true = {"Gc": 0.30e6, "Ge": 0.15e6, "delta": 0.12, "beta": 0.3}
    c = curves_from(m, true, n=25)
    held = fit(m, c)
    assert held.params["beta"].fixed and held.params["beta"].value == pytest.approx(0.2)
    freed = fit(m, c, free={"beta"})
    assert freed.params["beta"].value == pytest.approx(0.3, rel=1e-3)
    fixed = fit(m, c, fixed={"Ge": 0.15e6}, free={"beta"})
    assert fixed.params["Ge"].fixed and fixed.k == 3


# ------------------------------------------------------------------------------------------------
# statistics, output, errors
# ------------------------------------------------------------------------------------------------
def test_statistics_and_information_criteria():
    c = curves_from(EIGHT, TRUE_8CH, sigma=4e3, seed=7)
    res = fit(EIGHT, c)
    assert set(res.modes) == {c_.mode for c_ in c}
    for s in res.modes.values():
        assert s.n == 20 and s.r2 > 0.99 and s.rms == pytest.approx(4e3, rel=0.5)
    # AIC = n ln(RSS/n) + 2k (Akaike 1974, least-squares form [from memory])
    assert res.aic == pytest.approx(res.n * math.log(res.rss / res.n) + 2 * res.k)
    assert res.bic - res.aic == pytest.approx(res.k * math.log(res.n) - 2 * res.k)
    assert res.correlation.shape == (2, 2) and res.correlation[0, 0] == pytest.approx(1.0)


def test_to_dict_is_json_without_nan():
    res = fit(EIGHT, curves_from(EIGHT, TRUE_8CH, sigma=4e3))
    doc = res.to_dict()
    text = json.dumps(doc, allow_nan=False)
    back = json.loads(text)
    p = back["parameters"]["mu"]
    assert p["unit"] == "Pa" and p["ci95"][0] < p["value"] < p["ci95"][1] and p["stderr"] > 0
    assert back["parameters"]["N"]["unit"] == "1"


def test_fit_errors_are_sentences():
    lam = np.linspace(1.1, 2, 10)
    with pytest.raises(FitError, match="does not rise"):
        fit(EIGHT, [TestCurve("uniaxial", lam, np.zeros_like(lam))])
    with pytest.raises(FitError, match="point 3"):
        bad = np.ones_like(lam)
        bad[2] = np.nan
        fit(EIGHT, [TestCurve("uniaxial", lam, bad, name="bad")])
    with pytest.raises(FitError, match="no curves"):
        fit(EIGHT, [])
    with pytest.raises(FitError, match="cannot determine"):
        fit(EIGHT, [TestCurve("uniaxial", [1.2, 1.5], [0.1e6, 0.2e6])])
    with pytest.raises(ValueError, match="uniaxial only"):
        fit("slip-tube", curves_from(EIGHT, TRUE_8CH))


def test_fit_many_skips_unsupported_modes_and_keeps_going():
    out = fit_many(["slip-tube", "eight-chain"], curves_from(EIGHT, TRUE_8CH))
    assert out["slip-tube"].modes.keys() == {get_model("slip-tube").modes[0]}
    assert "left out" in out["slip-tube"].warnings[0]
    assert out["eight-chain"].n == 60

