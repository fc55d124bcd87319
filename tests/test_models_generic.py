"""Generic checks run over every registered model and every mode it supports.

A model is covered here the moment it is added to the registry.  The checks use the models' own
parameter declarations (typical ranges) and compare against independent numerical derivatives, so
they can fail for a wrong stress, a wrong modulus or a missing mask.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from network_models import MODELS, MODES, Mode, Model, ModeNotSupportedError, ParameterError, get_model

CASES = [(name, mode) for name, m in MODELS.items() for mode in m.modes]


def typical_params(model, frac=0.5):
    out = {}
    for p in model.params:
        lo, hi = p.typical
        out[p.name] = float(np.exp(np.log(lo) + frac * (np.log(hi) - np.log(lo)))) if p.log_scale and lo > 0 \
            else lo + frac * (hi - lo)
    return model.resolve(out)


def energy_path_derivative(model, mode, lam, p, h=1e-6):
    """dW/dλ along the mode's path divided by the number of loaded faces = nominal stress (work conjugacy)."""
    return (model.energy(mode, lam + h, p) - model.energy(mode, lam - h, p)) / (2 * h) / Mode(mode).energy_factor


@pytest.mark.parametrize(("name", "mode"), CASES)
def test_stress_is_energy_derivative(name, mode):
    m = get_model(name)
    p = typical_params(m)
    lam = np.linspace(0.5, 6.0, 300)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        P = m.nominal_stress(mode, lam, p)
        dW = energy_path_derivative(m, mode, lam, p)
    ok = np.isfinite(P) & np.isfinite(dW)
    assert ok.sum() > 50
    scale = np.abs(P[ok]) + m.small_strain_modulus(**p) * 1e-3
    assert np.max(np.abs(dW[ok] - P[ok]) / scale) < 1e-5


@pytest.mark.parametrize("name", list(MODELS))
def test_small_strain_modulus_against_numerical_slope(name):
    # Small strain: P ≈ 3G(λ − 1) in uniaxial tension (E = 3G for an incompressible solid,
    # docs/methods.md §small-strain).
    m = get_model(name)
    for frac in (0.1, 0.5, 0.9):
        p = typical_params(m, frac)
        e = 1e-5
        slope = (m.nominal_stress("uniaxial", 1 + e, p) - m.nominal_stress("uniaxial", 1 - e, p)) / (2 * e)
        assert float(slope) / 3 == pytest.approx(m.small_strain_modulus(**p), rel=1e-6)


@pytest.mark.parametrize("name", [n for n, m in MODELS.items() if m.supports("planar")])
def test_planar_initial_slope_is_four_thirds_of_uniaxial(name):
    # Treloar 1944, Trans. Faraday Soc. 40:59: planar (pure shear) initial slope is 4/3 of the uniaxial one.
    m = get_model(name)
    p = typical_params(m)
    e = 1e-5
    su = (m.nominal_stress("uniaxial", 1 + e, p) - m.nominal_stress("uniaxial", 1 - e, p)) / (2 * e)
    sp = (m.nominal_stress("planar", 1 + e, p) - m.nominal_stress("planar", 1 - e, p)) / (2 * e)
    assert float(sp / su) == pytest.approx(4 / 3, rel=1e-6)


@pytest.mark.parametrize(("name", "mode"), CASES)
def test_undeformed_state_is_stress_and_energy_free(name, mode):
    m = get_model(name)
    p = typical_params(m)
    assert abs(float(m.nominal_stress(mode, 1.0, p))) < 1e-6 * m.small_strain_modulus(**p)
    assert abs(float(m.energy(mode, 1.0, p))) < 1e-9 * m.small_strain_modulus(**p)


@pytest.mark.parametrize(("name", "mode"), CASES)
def test_nan_past_the_lock_without_warnings(name, mode):
    m = get_model(name)
    p = typical_params(m)
    lo, hi = m.stretch_range(mode, p)
    lam = np.array([1.5, 1e3, 1e7, np.inf, -1.0, 0.0, np.nan])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        P = m.nominal_stress(mode, lam, p)
        W = m.energy(mode, lam, p)
    assert np.isfinite(P[0])
    assert np.all(np.isnan(P[4:])) and np.all(np.isnan(W[4:]))
    if np.isfinite(hi):
        assert np.all(np.isnan(P[1:4]))
        just_inside = m.nominal_stress(mode, hi * (1 - 1e-9), p)
        assert np.isfinite(just_inside) and just_inside > 0
        assert np.isnan(m.nominal_stress(mode, hi * (1 + 1e-9), p))
        assert m.stretch_limit(mode, p) == pytest.approx(hi)
    else:
        assert m.stretch_limit(mode, p) is None


@pytest.mark.parametrize("name", list(MODELS))
def test_declarations_are_complete(name):
    m = get_model(name)
    assert m.title and m.equation and m.references and m.assumption
    for q in m.params:
        assert q.unit and q.meaning and q.source, q
        assert q.bounds[0] <= q.typical[0] < q.typical[1] <= q.bounds[1]
        with pytest.raises(ParameterError, match=q.name):
            m.resolve({q.name: q.bounds[1] * 10 + 10 if np.isfinite(q.bounds[1]) else -1e300})
        with pytest.raises(ParameterError, match=q.name):
            m.resolve({q.name: float("nan")})
    with pytest.raises(ValueError, match="no parameter"):
        m.resolve({"not_a_parameter": 1.0})


def test_unsupported_mode_says_so():
    m = get_model("slip-tube")
    for mode in (Mode.EQUIBIAXIAL, Mode.PLANAR):
        with pytest.raises(ModeNotSupportedError, match="uniaxial only|defined for uniaxial"):
            m.nominal_stress(mode, [1.5])


def test_unknown_model_lists_the_registry():
    with pytest.raises(KeyError, match="eight-chain"):
        get_model("ate-chain")
    assert get_model("Eight Chain") is MODELS["eight-chain"]


@pytest.mark.parametrize("name", list(MODELS))
def test_every_model_answers_the_network_questions(name):
    """Adding a model = one file + one registry line: it must map from a network under the policy, declare
    its colour, and its readings must name parameters it has."""
    from network_models import Network

    m = get_model(name)
    p = Network(polymer="NR", nu=150.0, filler_fraction=0.1).model_params(m)
    assert m.colour.startswith("#") and m.colour != Model.colour
    for r in m.network_reading(p):
        assert r.modulus_param in p and (r.N_param is None or r.N_param in p)


def test_registry_has_the_required_models():
    required = {"affine", "phantom", "eight-chain", "non-affine-tube", "extended-tube", "slip-tube",
                "neo-hookean", "mooney-rivlin", "gent"}
    assert required <= set(MODELS)


@settings(max_examples=60, deadline=None)
@given(
    name=st.sampled_from(list(MODELS)),
    mode=st.sampled_from(list(MODES)),
    frac=st.lists(st.floats(0.0, 1.0), min_size=4, max_size=4),
    lam=st.floats(1.001, 20.0),
)
def test_property_tension_stress_positive_and_increasing(name, mode, frac, lam):
    """Within typical parameters, nominal stress in tension is positive and rises with stretch up to the lock
    (all registered models are stable there: common practice for a usable hyperelastic law)."""
    m = get_model(name)
    if not m.supports(mode):
        return
    p = {}
    for q, fr in zip(m.params, frac, strict=False):
        lo, hi = q.typical
        p[q.name] = lo + fr * (hi - lo)
    p = m.resolve(p)
    lams = np.array([lam, lam * 1.01])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        P = m.nominal_stress(mode, lams, p)
    if np.all(np.isfinite(P)):
        assert P[0] > 0
        # The tube part of the extended-tube law softens at large stretch (its nominal stress falls like
        # λ^(β/2 − 1)), so a network whose entanglement modulus dwarfs the crosslink modulus is not monotone;
        # vulcanizates have G_e of the order of G_c [common practice], so monotonicity is asked for there only.
        if "Ge" not in p or p["Ge"] <= 2.0 * p["Gc"]:
            assert P[1] > P[0]
    else:
        hi = m.stretch_range(mode, p)[1]
        assert lams[np.isnan(P)].min() >= hi * (1 - 1e-9)


@pytest.mark.parametrize(("name", "mode"), CASES)
def test_closed_form_lock_matches_the_numerical_lock(name, mode):
    """The fast lock (I₁ limit by scalar Newton / closed form, or the largest principal stretch) against
    bracketing + brentq on the model's own domain test, over the typical parameter range."""
    m = get_model(name)
    for frac in (0.0, 0.3, 0.7, 1.0):
        p = typical_params(m, frac)
        fast = m.stretch_range(mode, p)
        if type(m)._margin is Model._margin:  # never locks: nothing numeric to compare
            assert fast == (0.0, float("inf"))
            continue
        slow = m._stretch_range_numeric(Mode(mode), p)
        assert fast[1] == pytest.approx(slow[1], rel=1e-12)
        assert fast[0] == pytest.approx(slow[0], rel=1e-10, abs=1e-300)
        # every mode has a lower lock below 1 (the free direction stretches there); both paths once returned 0
        # for equibiaxial and planar and agreed with each other — mpmath roots are in test_network_policy.py
        assert 0.0 < fast[0] < 1.0
