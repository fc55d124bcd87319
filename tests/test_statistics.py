"""Specimen statistics and verdicts (network_models.statistics), checked against scipy, a published t table
and simulations with a known truth.  Random draws only stand in for specimens here; no physics is checked."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from network_models import statistics as st
from network_models.constants import t_quantile


# ----- Student t: published table and scipy ---------------------------------------------------------
@pytest.mark.parametrize(("dof", "table"), [(1, 12.706), (2, 4.303), (4, 2.776), (9, 2.262), (30, 2.042)])
def test_t_quantile_matches_published_table(dof, table):
    # NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.7.2 "Critical values of the Student's t
    # distribution", column 0.975 (upper-tail 0.025), three decimals
    assert t_quantile(dof) == pytest.approx(table, abs=5e-4)


def test_summary_matches_scipy_interval():
    x = [0.612e6, 0.633e6, 0.598e6, 0.641e6, 0.620e6]
    s = st.summarize(x)
    lo, hi = stats.t.interval(0.95, len(x) - 1, loc=np.mean(x), scale=stats.sem(x))  # scipy, independent
    assert s.n == 5 and s.mean == pytest.approx(np.mean(x)) and s.median == pytest.approx(0.620e6)
    assert s.sd == pytest.approx(np.std(x, ddof=1))
    assert s.ci95[0] == pytest.approx(lo, rel=1e-12) and s.ci95[1] == pytest.approx(hi, rel=1e-12)


def test_one_specimen_has_unknown_scatter():
    s = st.summarize([0.6e6, None, float("nan")])
    assert s.n == 1 and s.mean == 0.6e6 and s.sd is None and s.ci95 is None and not s.scatter_known
    assert "unknown" in s.to_dict()["scatter"]


# ----- Welch ---------------------------------------------------------------------------------------
@pytest.mark.parametrize("seed", range(6))
def test_welch_interval_and_dof_match_scipy(seed):
    rng = np.random.default_rng(seed)
    a = rng.normal(1.0, 0.05 + 0.05 * seed, 3 + seed)
    b = rng.normal(1.05, 0.04, 5)
    v = st.verdict(a, b)
    ref = stats.ttest_ind(a, b, equal_var=False)  # scipy's Welch test
    assert v.dof == pytest.approx(ref.df, rel=1e-10)
    ci = ref.confidence_interval(0.95)
    assert v.ci95[0] == pytest.approx(ci.low, rel=1e-9, abs=1e-12)
    assert v.ci95[1] == pytest.approx(ci.high, rel=1e-9, abs=1e-12)
    assert (v.verdict == st.DIFFERENT) == (ref.pvalue < 0.05)


def test_welch_dof_textbook_limits():
    # equal sd and n: Welch–Satterthwaite gives the pooled 2n − 2 (Welch 1947)
    assert st.welch_dof(2.0, 5, 2.0, 5) == pytest.approx(8.0)
    # one side with no scatter: the dof are those of the other side, n − 1
    assert st.welch_dof(0.0, 4, 3.0, 6) == pytest.approx(5.0)


def test_cannot_judge_with_one_specimen():
    v = st.verdict([1.3], [1.0, 1.01, 0.99])
    assert v.verdict == st.CANNOT_JUDGE and v.ci95 is None
    assert v.percent == pytest.approx(30.0)
    assert st.verdict([1.0, 1.1], [1.0]).verdict == st.CANNOT_JUDGE


def test_detectable_difference_has_80_percent_power():
    # power of the two-sided t test from the non-central t distribution (scipy), at δ = the detectable difference
    for dof in (4, 8, 20):
        se = 1.0
        d = st.detectable_difference(se, dof)
        tc = stats.t.ppf(0.975, dof)
        power = 1 - stats.nct.cdf(tc, dof, d / se) + stats.nct.cdf(-tc, dof, d / se)
        assert power == pytest.approx(0.80, abs=0.01)


# ----- outliers -------------------------------------------------------------------------------------
def test_modified_z_matches_definition():
    x = np.array([10.0, 10.2, 9.9, 10.1, 13.0, 10.05])
    # Iglewicz & Hoaglin (1993): M = 0.6745 (x − median)/MAD, written here with scipy's MAD (scale 1)
    mad = stats.median_abs_deviation(x, scale=1.0)
    ref = 0.6745 * (x - np.median(x)) / mad
    assert np.allclose(st.modified_z(x), ref)
    assert st.outliers(x) == [4]
    assert st.outliers([1.0, 1.0, 1.0, 5.0]) == []  # MAD = 0: no robust scale, nothing flagged
    assert st.outliers([1.0, 2.0]) == []
    assert st.outliers([10.0, 10.1, 13.0, 9.9]) == []  # fewer than five values: not judged


# ----- simulations with a known truth ----------------------------------------------------------------
def _rate(delta, sd, n, runs, seed):
    rng = np.random.default_rng(seed)
    hits = 0
    for _ in range(runs):
        base = rng.normal(1.0, sd, n)
        other = rng.normal(1.0 + delta, sd, n)
        hits += st.verdict(other, base).verdict == st.DIFFERENT
    return hits / runs


def test_no_true_difference_flags_about_five_percent():
    runs = 4000
    rate = _rate(0.0, 0.04, 5, runs, seed=11)
    # binomial: sd of the rate at p = 0.05 is √(0.05·0.95/4000) = 0.0034; accept ±4 sd (0.036 … 0.064).
    # Welch at n = 5 + 5 is close to exact for equal variances (Welch 1947), so 5 % is the target.
    tol = 4 * math.sqrt(0.05 * 0.95 / runs)
    assert abs(rate - 0.05) < tol, rate


def test_twenty_percent_at_four_percent_scatter_is_found():
    assert _rate(0.20, 0.04, 5, 1000, seed=12) >= 0.95


def test_the_classic_case_by_specimen_values():
    # five specimens at +3 % inside 4 % scatter vs +25 %: draws fixed by the seed
    rng = np.random.default_rng(2026)
    base = 1.0 + 0.04 * rng.standard_normal(5)
    z = rng.standard_normal(5)
    small, big = 1.03 + 0.04 * z, 1.25 + 0.04 * z
    assert st.verdict(small, base).verdict == st.NOT_DISTINGUISHABLE
    assert st.verdict(big, base).verdict == st.DIFFERENT


def test_detectable_difference_found_at_its_power():
    # at a true difference equal to the planned detectable difference (σ known, n = 5 + 5, dof 8) the
    # test says "different" in about 80 % of runs; binomial sd at 2000 runs ≈ 0.009, accept ±4 sd, plus the
    # Welch dof being estimated per run (it is ≤ 8, which costs a little power) on the low side
    n, sd = 5, 0.04
    se = math.sqrt(2 * sd * sd / n)
    d = st.detectable_difference(se, 2 * n - 2)
    rate = _rate(d, sd, n, 2000, seed=13)
    assert 0.80 - 4 * 0.009 - 0.04 < rate < 0.80 + 4 * 0.009, rate


def test_combined_interval_is_wider_than_scatter_alone():
    s = st.summarize([1.0, 1.04, 0.97, 1.02])
    lo, hi = st.combined_interval(s, [0.01, 0.01, 0.01, 0.01])
    assert lo < s.ci95[0] and hi > s.ci95[1]
    # independent: t·√(s²/n + Σse²/n²)
    half = stats.t.ppf(0.975, 3) * math.sqrt(s.sd**2 / 4 + 4 * 0.01**2 / 16)
    assert hi - s.mean == pytest.approx(half)
    assert st.combined_interval(st.summarize([1.0]), [0.01]) is None
