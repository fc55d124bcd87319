"""The fitter's own Levenberg–Marquardt loop against scipy's, and the fit package's orchestration helpers.

The reference solver here is ``scipy.optimize.least_squares`` (MINPACK's lmder, Moré 1978), run on the same
problems with tight tolerances: the small loop must reach the same optimum.  Data are generated in code
from known parameters plus seeded noise (numpy Generator), never copied from our own output.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st
from scipy.optimize import least_squares

from network_models import get_model
from network_models.constants import t_quantile
from network_models.curves import TestCurve
from network_models.fitting import derived, fit, fit_specimens, levenberg_marquardt
from network_models.fitting import solver as solver_mod


# ------------------------------------------------------------------------------------------------
# the small loop against MINPACK on random well-posed problems
# ------------------------------------------------------------------------------------------------
def _problem(seed):
    """y = a·exp(−b t) + c·t plus noise, 1–3 unknowns (the others known): well posed for a, b, c > 0."""
    rng = np.random.default_rng(seed)
    k = 1 + seed % 3
    true = np.array([rng.uniform(0.5, 3.0), rng.uniform(0.3, 2.0), rng.uniform(-1.0, 1.0)])
    t = np.linspace(0.0, 4.0, 40)
    y = true[0] * np.exp(-true[1] * t) + true[2] * t + 0.02 * rng.standard_normal(t.size)

    def full(theta):
        th = true.copy()
        th[:k] = theta
        return th

    def fun(theta):
        a, b, c = full(theta)
        return a * np.exp(-b * t) + c * t - y

    def jac(theta, r=None):
        a, b, _ = full(theta)
        e = np.exp(-b * t)
        return np.column_stack([e, -a * t * e, t])[:, :k]

    x0 = true[:k] * (1.0 + 0.3 * rng.uniform(-1, 1, k))
    return fun, jac, x0


@pytest.mark.parametrize("seed", range(12))
def test_small_loop_reaches_minpack_optimum(seed):
    fun, jac, x0 = _problem(seed)
    ref = least_squares(fun, x0, jac=jac, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    out = levenberg_marquardt(fun, jac, x0)
    assert out is not None
    x, r, _msg = out
    np.testing.assert_allclose(x, ref.x, rtol=1e-7, atol=1e-9)
    assert float(r @ r) == pytest.approx(2 * ref.cost, rel=1e-10)


def test_small_loop_respects_its_box():
    # min (x − 2)² + (y + 1)² on [0, 1] × [−5, 5]: x sits on its upper bound, y is free (convex: unique).
    def fun(v):
        return np.array([v[0] - 2.0, v[1] + 1.0])

    def jac(v, r=None):
        return np.eye(2)

    x, _, _ = levenberg_marquardt(fun, jac, np.array([0.5, 3.0]), lo=np.array([0.0, -5.0]),
                                  hi=np.array([1.0, 5.0]))
    assert x[0] == 1.0
    assert x[1] == pytest.approx(-1.0, abs=1e-8)


# ------------------------------------------------------------------------------------------------
# whole fits: the small loop against scipy on the same (unprojected) problem
# ------------------------------------------------------------------------------------------------
EIGHT = get_model("eight-chain")


def _curves(params, seed, noise=0.01, tops=(("uniaxial", 3.0), ("planar", 2.5))):
    rng = np.random.default_rng(seed)
    out = []
    for mode, hi in tops:
        lam = np.linspace(1.05, hi, 18)
        P = EIGHT.nominal_stress(mode, lam, params) * (1 + noise * rng.standard_normal(lam.size))
        out.append(TestCurve(mode, lam, P, name=f"{mode} {seed}", metadata={"cycle": "1"}))
    return out


def _scipy_full_fit(curves, x0):
    """Reference: scipy least_squares (trf, bounded, its own finite differences) on (μ, N) directly."""
    lam = [c.stretch for c in curves]
    P = np.concatenate([c.stress for c in curves])
    G0 = x0[0]

    def fun(th):
        p = {"mu": th[0] * G0, "N": th[1]}
        s = np.concatenate([EIGHT.nominal_stress(c.mode, la, p) for c, la in zip(curves, lam, strict=True)])
        return np.where(np.isfinite(s), s - P, 1e3 * np.max(np.abs(P))) / G0

    res = least_squares(fun, [1.0, x0[1]], method="trf", bounds=([1e-6, 1.0 + 1e-9], [1e3, 1e6]),
                        xtol=1e-14, ftol=1e-14, gtol=1e-14, x_scale=[1.0, x0[1]])
    return {"mu": res.x[0] * G0, "N": res.x[1]}


@settings(max_examples=12, deadline=None)
@given(mu=st.floats(0.2e6, 2.0e6), N=st.floats(6.0, 60.0), seed=st.integers(0, 10_000))
@example(mu=263292.0, N=43.0, seed=801)  # a flat valley in N where scipy stops early (found by hypothesis)
def test_fit_reaches_the_scipy_optimum(mu, N, seed):
    curves = _curves({"mu": mu, "N": N}, seed)
    res = fit(EIGHT, curves, residual="absolute")  # the reference below minimises absolute residuals
    assert res.solver == "levenberg-marquardt"
    ref = _scipy_full_fit(curves, [res.values["mu"] * 1.2, res.values["N"] * 1.5])
    # same optimum: our residual sum of squares is not worse than scipy's, and the parameters agree within
    # 1e-5 relative or, where a parameter is poorly determined (N far from the data's reach: a flat valley in
    # which scipy's own stopping rule ends early), within 1e-3 of its standard error — a statistically
    # invisible difference
    P = np.concatenate([c.stress for c in curves])

    def rss(p):
        return float(np.sum((np.concatenate([EIGHT.nominal_stress(c.mode, c.stretch, p) for c in curves]) - P) ** 2))

    assert rss(res.values) <= rss(ref) * (1 + 1e-12)
    for name in ("mu", "N"):
        diff = abs(res.values[name] - ref[name])
        assert diff <= max(1e-5 * abs(ref[name]), 1e-3 * res.params[name].stderr), name


@pytest.mark.parametrize("name,true", [
    ("eight-chain", {"mu": 0.4e6, "N": 15.0}),
    ("gent", {"G": 0.45e6, "Jm": 40.0}),
    ("extended-tube", {"Gc": 0.30e6, "Ge": 0.15e6, "delta": 0.12, "beta": 0.2}),
])
def test_scipy_fallback_finds_the_same_optimum(monkeypatch, name, true):
    # When the small loop gives up, scipy's least_squares takes over and must land on the same optimum.
    m = get_model(name)
    rng = np.random.default_rng(3)
    curves = []
    for mode, hi in (("uniaxial", 3.0), ("equibiaxial", 2.0), ("planar", 2.6)):
        lam = np.linspace(1.05, hi, 20)
        curves.append(TestCurve(mode, lam, m.nominal_stress(mode, lam, true) * (1 + 0.01 * rng.standard_normal(20))))
    fast = fit(m, curves)
    monkeypatch.setattr(solver_mod, "levenberg_marquardt", lambda *a, **k: None)
    slow = fit(m, curves)
    assert fast.solver == "levenberg-marquardt" and slow.solver in ("minpack-lm", "trf")
    for k in fast.free:
        assert fast.values[k] == pytest.approx(slow.values[k], rel=1e-6), k
    assert fast.rss == pytest.approx(slow.rss, rel=1e-9)


# ------------------------------------------------------------------------------------------------
# the one delta method
# ------------------------------------------------------------------------------------------------
def test_derived_of_a_parameter_is_its_own_interval():
    res = fit(EIGHT, _curves({"mu": 0.4e6, "N": 15.0}, 1))
    v, (lo, hi) = derived(res, lambda p: p["mu"])
    assert v == res.params["mu"].value
    # the delta method of the identity is symmetric, value ± t·stderr (Student t, n − k); the parameter's own
    # interval is formed on logit(μ) over its declared domain (issue #20), so it differs at second order
    half = t_quantile(res.n - res.k) * res.params["mu"].stderr
    assert (lo, hi) == (pytest.approx(v - half, rel=1e-9), pytest.approx(v + half, rel=1e-9))
    plo, phi = res.params["mu"].ci95
    assert plo == pytest.approx(lo, rel=1e-3) and phi == pytest.approx(hi, rel=1e-3)
    # N is fitted on a log scale: its symmetric delta-method half-width is t·stderr (Student t, n − k)
    v, (lo, hi) = derived(res, lambda p: p["N"])
    assert (hi - lo) / 2 == pytest.approx(t_quantile(res.n - res.k) * res.params["N"].stderr, rel=1e-6)


def test_derived_scales_and_has_no_interval_without_covariance():
    res = fit(EIGHT, _curves({"mu": 0.4e6, "N": 15.0}, 2))
    _, (lo1, hi1) = derived(res, lambda p: p["mu"] + p["N"])
    _, (lo3, hi3) = derived(res, lambda p: 3 * (p["mu"] + p["N"]))
    assert (hi3 - lo3) == pytest.approx(3 * (hi1 - lo1), rel=1e-6)
    res.covariance = np.full((2, 2), np.nan)
    assert derived(res, lambda p: p["mu"])[1] is None


# ------------------------------------------------------------------------------------------------
# fit_specimens: every specimen alone
# ------------------------------------------------------------------------------------------------
def test_fit_specimens_groups_by_specimen_then_file():
    a = _curves({"mu": 0.4e6, "N": 15.0}, 4)
    b = _curves({"mu": 0.8e6, "N": 25.0}, 5)
    for c in a:
        c.specimen = "S1"
    for c in b:
        c.metadata["specimen"] = "S2"
    loose = _curves({"mu": 0.5e6, "N": 20.0}, 6)[:1]
    loose[0].source = "c.csv"
    bad = TestCurve("uniaxial", [1.1, 1.2], [1e5, 2e5], name="two points", source="d.csv")
    out = fit_specimens("eight-chain", [*a, *b, *loose, bad])
    # unlabelled curves are named by their file (one file per specimen)
    assert list(out) == ["S1", "S2", "c.csv", "d.csv"]
    assert out["S1"].values["mu"] == pytest.approx(0.4e6, rel=0.05)
    assert out["S2"].values["mu"] == pytest.approx(0.8e6, rel=0.05)
    assert out["S1"].n == 36 and out["c.csv"].n == 18
    assert isinstance(out["d.csv"], ValueError) and "cannot determine" in str(out["d.csv"])


# ------------------------------------------------------------------------------------------------
# notices: each kind is raised where it should be, and only there
# ------------------------------------------------------------------------------------------------
def _kinds(res):
    return {n.kind for n in res.notices()}


def test_cycle_is_kept_and_its_absence_is_a_stress_softening_notice():
    stated = fit(EIGHT, _curves({"mu": 0.4e6, "N": 15.0}, 7))
    assert stated.cycle == "1" and "stress-softening" not in _kinds(stated)
    assert stated.to_dict()["cycle"] == "1"
    unstated = _curves({"mu": 0.4e6, "N": 15.0}, 7)
    for c in unstated:
        c.metadata.pop("cycle")
    res = fit(EIGHT, unstated)
    assert res.cycle is None and res.to_dict()["cycle"] is None
    (n,) = res.notices("stress-softening")
    assert "Mullins" in n
    mixed = _curves({"mu": 0.4e6, "N": 15.0}, 7)
    mixed[1].cycle = "3"
    res = fit(EIGHT, mixed)
    assert res.cycle == "mixed: 1, 3" and res.notices("stress-softening")


def test_strain_crystallisation_notice_only_for_nr_past_lambda_3():
    # NR and IR crystallise under strain from λ ≈ 3–4 (Toki et al. 2000, Polymer 41:5423; Trabelsi et al.
    # 2003, Macromolecules 36:7624 [from memory]); SBR does not (common practice).
    far = _curves({"mu": 0.4e6, "N": 30.0}, 8, tops=(("uniaxial", 4.5),))
    near = _curves({"mu": 0.4e6, "N": 30.0}, 8, tops=(("uniaxial", 2.8),))
    assert fit(EIGHT, far, polymer="NR").notices("strain-crystallisation")
    assert fit(EIGHT, far, polymer="ir").notices("strain-crystallisation")
    assert not fit(EIGHT, far, polymer="SBR").notices("strain-crystallisation")
    assert not fit(EIGHT, far).notices("strain-crystallisation")  # unknown polymer: nothing said
    assert not fit(EIGHT, near, polymer="NR").notices("strain-crystallisation")
    for c in far:
        c.metadata["polymer"] = "NR"
    res = fit(EIGHT, far)
    assert res.polymer == "NR" and res.notices("strain-crystallisation")


def test_notice_kinds_of_the_diagnostics():
    uni = _curves({"mu": 0.4e6, "N": 15.0}, 9, tops=(("uniaxial", 3.0),))
    assert "extrapolated-mode" in _kinds(fit(EIGHT, uni))
    far = _curves({"mu": 0.3e6, "N": 80.0}, 9, noise=0.01, tops=(("uniaxial", 1.4),))
    assert "not-identifiable" in _kinds(fit(EIGHT, far))
    lock = _curves({"mu": 0.3e6, "N": 30.0}, 9, tops=(("uniaxial", 5.0),))
    assert "points-dropped" in _kinds(fit(EIGHT, lock, fixed={"N": 6.0}))
    up = _curves({"mu": 0.3e6, "N": 5.0}, 9, noise=0.0, tops=(("uniaxial", 3.3),))
    assert "unstable" in _kinds(fit("mooney-rivlin", up))
    hot = _curves({"mu": 0.4e6, "N": 15.0}, 9)
    hot[0].temperature, hot[1].temperature = 296.15, 343.15
    assert "mixed-temperature" in _kinds(fit(EIGHT, hot))
    lam = np.append(np.linspace(1.05, 3.0, 30), 3.05)
    P = EIGHT.nominal_stress("uniaxial", lam, {"mu": 0.3e6, "N": 30.0})
    P[-1] *= 1000.0
    # absolute residuals: the thousand-fold last point pulls the fit onto its lock (relative weighting, the
    # default, gives that point the weight of any other and need not reach the lock)
    res = fit(EIGHT, [TestCurve("uniaxial", lam, P)], residual="absolute")
    (n,) = res.notices("lock-reached")
    assert n.subject == "N"


def test_notices_serialise_with_their_kind():
    res = fit(EIGHT, _curves({"mu": 0.4e6, "N": 15.0}, 10, tops=(("uniaxial", 3.0),)))
    doc = res.to_dict()
    assert all(isinstance(w, str) for w in doc["warnings"])
    kinds = {n["kind"] for n in doc["notices"]}
    assert "extrapolated-mode" in kinds
    assert math.isfinite(doc["statistics"]["aic"])


def test_projection_stays_on_when_the_first_fit_starts_past_the_lock(monkeypatch):
    # The linearity check (made once per model) used to take NaN points past the start lock into its
    # scale and fail, which switched variable projection off for the rest of the session: three-chain's
    # default N = 30 locks at λ = √30 ≈ 5.48 (Wang & Guth 1952: a chain along an axis locks at λ = √N),
    # below these data's largest stretch 5.8.
    from benchmarks.datasets import three_mode_curves
    from network_models.fitting import evaluate

    monkeypatch.setattr(evaluate, "_LINEAR_IN_MODULI", {})
    res = fit("three-chain", three_mode_curves())
    assert evaluate._LINEAR_IN_MODULI == {("ThreeChain", "three-chain"): True}
    assert res.solver == "levenberg-marquardt"


def test_small_loop_moves_only_the_free_unknowns_on_a_bound():
    # min (x − 2)² + (y − x)² on x ≤ 1: x sits on its bound and y must follow it to 1 (convex: unique);
    # keeping the pinned x in the Gauss–Newton system would bend y's step.
    def fun(v):
        return np.array([v[0] - 2.0, v[1] - v[0]])

    def jac(v, r=None):
        return np.array([[1.0, 0.0], [-1.0, 1.0]])

    x, _, _ = levenberg_marquardt(fun, jac, np.array([0.0, -3.0]), hi=np.array([1.0, 10.0]))
    assert x[0] == 1.0
    assert x[1] == pytest.approx(1.0, abs=1e-8)


# ------------------------------------------------------------------------------------------------
# the one fit → catch step: never raises for a fit that fails, says which kind of failure it was
# ------------------------------------------------------------------------------------------------
@pytest.mark.parametrize(("exc", "kind"), [(ValueError("bad stretch"), "bad-input"),
                                           (ZeroDivisionError("x"), "numerical"),
                                           (RuntimeError("boom"), "defect")])
def test_fit_or_error_turns_every_failure_into_a_sentence(monkeypatch, exc, kind):
    from network_models.fitting import FitError, fit_or_error, many

    def broken(*a, **k):
        raise exc

    monkeypatch.setattr(many, "fit", broken)
    res = fit_or_error("eight-chain", _curves({"mu": 0.4e6, "N": 15.0}, 3))
    assert isinstance(res, FitError) and res.kind == kind and str(res)
