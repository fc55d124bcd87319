"""Inverse Langevin: accuracy against mpmath, series coefficients, published approximant errors, edges."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from network_models.langevin import (
    LINV_SERIES,
    inverse_langevin,
    inverse_langevin_scalar,
    langevin,
    langevin_derivative,
)
from tests.reference import langevin_series_coefficients, mp_inverse_langevin, mp_langevin, revert_odd_series


@pytest.fixture(scope="module")
def reference_points():
    # Thousands of points: uniform over (0, 1), geometric towards 1 down to 1 − 1e-12, geometric towards 0.
    pts = np.concatenate([
        np.linspace(1e-6, 0.999, 1500),
        1.0 - np.logspace(-12, -1, 700),
        np.logspace(-200, -2, 300),
    ])
    ref = np.array([mp_inverse_langevin(float(p)) for p in pts])
    return pts, ref


def test_inverse_matches_mpmath_to_1e13(reference_points):
    # Reference: mpmath (arbitrary precision root of coth x − 1/x = y), the project's accuracy promise.
    pts, ref = reference_points
    assert pts.size > 2048  # one call takes the long-array start (index arithmetic) ...
    ours = inverse_langevin(pts)
    rel = np.abs(ours / ref - 1.0)
    assert rel.max() <= 1e-13, f"max rel error {rel.max():.2e} at y = {pts[rel.argmax()]!r}"
    # ... and short calls take the np.interp start: both must meet the promise
    short = np.concatenate([inverse_langevin(c) for c in np.array_split(pts, 25)])
    rel_short = np.abs(short / ref - 1.0)
    assert rel_short.max() <= 1e-13, f"max rel error {rel_short.max():.2e} at y = {pts[rel_short.argmax()]!r}"
    neg = inverse_langevin(-pts)
    assert np.array_equal(neg, -ours)  # odd


def test_published_check_values():
    # docs/methods.md §inverse-langevin (mpmath, 30 digits): L⁻¹(0.1), (0.5), (0.8), (0.9).
    y = np.array([0.1, 0.5, 0.8, 0.9])
    expected = np.array([0.301817149206338, 1.79675598472371, 4.99772056690742, 9.99999958776895])
    np.testing.assert_allclose(inverse_langevin(y), expected, rtol=2e-14)


def test_langevin_matches_mpmath():
    xs = np.concatenate([np.logspace(-12, 2.8, 800), [1e6]])
    ref = np.array([mp_langevin(float(x)) for x in xs])
    np.testing.assert_allclose(langevin(xs), ref, rtol=1e-13)
    np.testing.assert_allclose(langevin(-xs), -ref, rtol=1e-13)
    assert langevin(0.0) == 0.0


def test_round_trip():
    y = np.linspace(-0.999999, 0.999999, 20001)
    np.testing.assert_allclose(langevin(inverse_langevin(y)), y, rtol=1e-14, atol=1e-300)


def test_maclaurin_coefficients_by_series_reversion():
    # L(x) series from Bernoulli numbers (Abramowitz & Stegun 4.5.67), reverted exactly;
    # docs/methods.md §inverse-langevin lists
    # the first five: 3, 9/5, 297/175, 1539/875, 126117/67375.
    a = langevin_series_coefficients(len(LINV_SERIES))
    c = revert_odd_series(a)
    assert [float(x) for x in c[:5]] == [3.0, 9 / 5, 297 / 175, 1539 / 875, 126117 / 67375]
    np.testing.assert_allclose(LINV_SERIES, [float(x) for x in c], rtol=1e-15)


def test_langevin_series_coefficients():
    # Abramowitz & Stegun 4.5.67 (Bernoulli numbers via mpmath.bernfrac)
    from network_models.langevin import _L_SERIES

    np.testing.assert_allclose(_L_SERIES, [float(x) for x in langevin_series_coefficients(len(_L_SERIES))],
                               rtol=1e-15)


# Published closed forms with the maximum relative error over (0, 1) quoted in docs/methods.md §inverse-langevin
# (each recomputed there): our exact inverse must reproduce those figures.
APPROXIMANTS = {
    "Cohen 1991 rounded Padé": (lambda y: y * (3 - y * y) / (1 - y * y), 4.94),
    "Puso 2003": (lambda y: 3 * y / (1 - y**3), 4.61),
    "Jedynak 2015": (lambda y: y * (3 - 2.6 * y + 0.7 * y * y) / ((1 - y) * (1 + 0.1 * y)), 1.51),
    "Darabi & Itskov 2015": (lambda y: y * (y * y - 3 * y + 3) / (1 - y), 2.64),
    "Petrosyan 2017": (lambda y: 3 * y + y * y / 5 * np.sin(3.5 * y) + y**3 / (1 - y), 0.179),
    "Bergström 1999 piecewise": (
        lambda y: np.where(y < 0.84136, 1.31446 * np.tan(1.58986 * y) + 0.91209 * y, 1 / (1 - y)), 0.063),
}


@pytest.mark.parametrize("name", list(APPROXIMANTS))
def test_published_approximant_errors(name):
    f, published_percent = APPROXIMANTS[name]
    y = np.linspace(1e-6, 1 - 1e-9, 200001)
    err = np.max(np.abs(f(y) / inverse_langevin(y) - 1.0)) * 100
    # published figures are given to 2–3 significant digits
    assert err == pytest.approx(published_percent, rel=0.01, abs=0.002)


def test_edges_and_no_warnings():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        out = inverse_langevin(np.array([0.0, -0.0, 1.0, -1.0, 1.5, -7.0, np.nan, np.inf, -np.inf]))
    assert out[0] == 0.0 and out[1] == 0.0
    assert out[2] == np.inf and out[3] == -np.inf
    assert np.all(np.isnan(out[4:]))
    assert isinstance(inverse_langevin(0.5), float | np.floating)
    assert inverse_langevin(np.ones((2, 3)) * 0.3).shape == (2, 3)
    assert inverse_langevin(np.array([])).shape == (0,)


def test_derivative_matches_difference_quotient():
    x = np.array([1e-4, 0.01, 0.3, 1.0, 5.0, 50.0])
    h = 1e-6 * np.maximum(x, 1.0)
    num = (langevin(x + h) - langevin(x - h)) / (2 * h)
    np.testing.assert_allclose(langevin_derivative(x), num, rtol=1e-7)


@settings(max_examples=200, deadline=None)
@given(st.floats(min_value=-1.0, max_value=1.0, allow_nan=False))
def test_property_finite_inside_and_monotone(y):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        x = inverse_langevin(np.array([y, np.nextafter(y, 2.0)]))
    if abs(y) < 1:
        assert np.isfinite(x[0])
        assert np.sign(x[0]) == np.sign(y) or y == 0
        if np.nextafter(y, 2.0) < 1:
            assert x[1] >= x[0] - 1e-14 * abs(x[0])  # monotone within the accuracy promise


def test_scalar_inverse_matches_mpmath(reference_points):
    # the pure-Python scalar path (used per slider move for the chain models' small-strain modulus) keeps the
    # project's accuracy promise against mpmath (docs/methods.md §inverse-langevin)
    pts, ref = reference_points
    got = np.array([inverse_langevin_scalar(float(p)) for p in pts])
    np.testing.assert_allclose(got, ref, rtol=1e-13, atol=0)
    assert np.isinf(inverse_langevin_scalar(1.0)) and np.isnan(inverse_langevin_scalar(1.5))
