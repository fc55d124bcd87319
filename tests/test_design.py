"""Design: targets → window of strand density.  Analytic cases are computed here from the published formulas
(R from scipy.constants, CODATA), never from the code's own expressions; the round trip and the property
tests check that the inverse agrees with the forward path."""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.constants import R, kgf, psi, zero_Celsius

from network_models import MODELS, Network, get_model, get_polymer
from network_models.design import compare_models, design
from network_models.design.advice import compound_from_fit
from network_models.design.targets import TargetError, parse_target
from network_models.network import N_MIN, lock_from_N

T23 = zero_Celsius + 23.0


# ----- analytic cases ----------------------------------------------------------------------------------
def test_affine_G_target_gives_G_over_RT_at_both_edges():
    # affine network G = νRT (Kuhn; Wall; Flory, as in Treloar 1975 ch. 4); R from scipy.constants (CODATA)
    G = 0.55e6
    # entanglements off: under the one G_e policy every model (affine too) adds G_e to νRT
    r = design(["G=0.55MPa±5%"], model="affine", temperature="23C", entanglements=False)
    assert r.feasible
    assert r.window.lo == pytest.approx(0.95 * G / (R * T23), rel=1e-8)
    assert r.window.hi == pytest.approx(1.05 * G / (R * T23), rel=1e-8)
    assert r.binding == {"low": ["G=0.55MPa±5%"], "high": ["G=0.55MPa±5%"]}


def test_affine_E_and_hot_G_targets():
    # E = 3G (incompressible, small strain; Treloar 1944); G ∝ T at a fixed network (Meyer & Ferri 1935)
    r = design(["E=1.5MPa±0.15MPa"], model="affine", temperature="23C", entanglements=False)
    assert r.window.lo == pytest.approx(1.35e6 / 3 / (R * T23), rel=1e-8)
    assert r.window.hi == pytest.approx(1.65e6 / 3 / (R * T23), rel=1e-8)
    r = design(["G@100C>=0.4MPa"], model="affine", temperature="23C", entanglements=False)
    assert r.window.lo == pytest.approx(0.4e6 / (R * (zero_Celsius + 100.0)), rel=1e-8)
    # the top is the densest network the polymer allows, N = N_MIN Kuhn segments per strand with N coupled to
    # ν (ν = ρ/(N·M_K)); the sentence says the target stops being computable there and why
    poly = get_polymer("NR")
    assert r.binding["high"] == ["G@100C>=0.4MPa"] and "at least 1.5" in r.why
    assert r.window.hi == pytest.approx(poly.density / (N_MIN * poly.kuhn_molar_mass), rel=2e-2)
    # docs/methods.md §temperature-scaling: filled compounds often soften
    assert any(n.kind == "temperature" for n in r.notices)


def test_neo_hookean_M100_target():
    # Treloar's neo-Hookean uniaxial form P = G(λ − λ⁻²), at λ = 2 (100 % elongation): P = 1.75 G;
    # entanglements off so that G = νRT exactly
    r = design(["M100=1.7..1.9MPa"], model="neo-hookean", temperature="23C", entanglements=False)
    k = (2.0 - 2.0**-2) * R * T23
    assert r.window.lo == pytest.approx(1.7e6 / k, rel=1e-8)
    assert r.window.hi == pytest.approx(1.9e6 / k, rel=1e-8)


@pytest.mark.parametrize(("target", "factor"), [
    ("planar@2>=1MPa", 2.0 - 2.0**-3),        # planar P = G(λ − λ⁻³) (docs/methods.md §stress-from-energy, W₁ = G/2)
    ("equibiaxial@1.5>=1MPa", 1.5 - 1.5**-5),  # equibiaxial P = G(λ − λ⁻⁵)
])
def test_neo_hookean_other_modes(target, factor):
    r = design([target], model="neo-hookean", entanglements=False)
    assert r.window.lo == pytest.approx(1e6 / (factor * R * T23), rel=1e-8)


def test_lock_target_eight_chain():
    # Arruda & Boyce 1993: uniaxial lock where λ² + 2/λ = 3N; N = M_c/M_K = ρ/(ν M_K)
    p = get_polymer("NR")
    N6 = (36.0 + 2.0 / 6.0) / 3.0
    r = design(["lock>=6"], model="eight-chain")
    assert r.window.hi == pytest.approx(p.density / (p.kuhn_molar_mass * N6), rel=1e-8)
    assert r.window.lo_open
    # reserve = 100 % × (λ_lock − λ_service): reserve>=400% ≡ lock>=5; reserve@50%>=350% ≡ lock>=5
    a = design(["reserve>=400%"], model="eight-chain").window.hi
    b = design(["reserve@50%>=350%"], model="eight-chain").window.hi
    c = design(["lock>=5"], model="eight-chain").window.hi
    assert a == pytest.approx(c, rel=1e-9) and b == pytest.approx(c, rel=1e-9)


def test_lock_of_a_model_without_lock_uses_N_and_says_so():
    r = design(["lock>=6"], model="affine")
    p = get_polymer("NR")
    assert r.window.hi == pytest.approx(p.density / (p.kuhn_molar_mass * (36 + 1 / 3) / 3), rel=1e-8)
    assert any(n.kind == "lock-from-N" for n in r.notices)


def _flory_rehner_nu(phi, chi, V1, f=4):
    # Flory & Rehner 1943, affine, general f (docs/methods.md §flory-rehner), written here with mpmath
    phi = mpmath.mpf(phi)
    return float(-(mpmath.log(1 - phi) + phi + chi * phi**2) / (V1 * (phi ** (mpmath.mpf(1) / 3) - 2 * phi / f)))


def test_swelling_target_flory_rehner():
    from network_models.swelling import solvents

    V1 = solvents()["toluene"].molar_volume
    r = design(["Q(toluene,chi=0.39)<=4"], model="eight-chain")
    nu = _flory_rehner_nu(0.25, 0.39, V1)
    assert r.window.lo == pytest.approx(nu, rel=1e-8)
    # docs/methods.md §flory-rehner table (V₁ = 106.85 cm³/mol): φ = 0.25, χ = 0.39, affine → 2.4663e-4 mol/cm³
    assert r.window.lo == pytest.approx(246.63, rel=2e-4)
    assert any(n.kind == "chi-band" for n in r.notices)


def test_swelling_target_uses_the_same_chi_as_a_swelling_result():
    # one answer per quantity (docs/methods.md §chi): a Q target without χ takes the row a swelling test at the
    # lab temperature would take.  CR–toluene: the handbook 0.14 was measured at 100 °C (Orwoll & Arnold,
    # Table 14.1 [handbook]), so at 23 °C the table's estimate row serves — before, design took the 0.14.
    from network_models.swelling import swelling_estimate

    r = design(["Q(toluene)<=3"], polymer="CR", model="affine")
    used = swelling_estimate(1.0, 2.5, "toluene", "CR").chi_used
    assert used != 0.14
    assert any(f"χ = {used:g} [estimate]" in str(n) for n in r.notices)
    # NR–toluene: the common-practice default 0.39 in both
    r = design(["Q(toluene)<=4"], model="eight-chain")
    assert r.window.lo == pytest.approx(246.63, rel=2e-4)  # §flory-rehner table, φ = 0.25, χ = 0.39, affine


def test_trade_units_psi_and_kgf():
    # psi and kgf from scipy.constants (NIST definitions)
    t = parse_target("M100=250psi±5%")
    assert t.lo == pytest.approx(0.95 * 250 * psi) and t.hi == pytest.approx(1.05 * 250 * psi)
    t = parse_target("G>=4kgf/cm²")
    assert t.lo == pytest.approx(4 * kgf / 1e-4)


# ----- round trip over models and networks -------------------------------------------------------------
def _predicted(model, net):
    p = net.model_params(model)
    lock = model.stretch_limit("uniaxial", p)
    out = {"G": model.small_strain_modulus(**p),
           "M100": float(model.nominal_stress("uniaxial", [2.0], p)[0]),
           "lock": lock if lock is not None else lock_from_N(net.N, "uniaxial")}
    if model.supports("planar"):
        out["planar@1.5"] = float(model.nominal_stress("planar", [1.5], p)[0])
    return out


@pytest.mark.parametrize("name", list(MODELS))
@pytest.mark.parametrize(("nu", "kw"), [(80.0, {}), (200.0, {"filler": 0.1}), (420.0, {"N": 40.0})])
def test_round_trip(name, nu, kw):
    m = get_model(name)
    net = Network(polymer="NR", nu=nu, T=T23, filler_fraction=kw.get("filler", 0.0), N=kw.get("N"))
    pred = _predicted(m, net)
    targets = [f"G={pred['G'] / 1e6:.9g}MPa±2%", f"M100={pred['M100'] / 1e6:.9g}MPa±2%",
               f"lock={pred['lock']:.9g}±2%"]
    if "planar@1.5" in pred:
        targets.append(f"planar@1.5={pred['planar@1.5'] / 1e6:.9g}MPa±2%")
    r = design(targets, model=name, temperature=T23, **kw)
    assert r.feasible, r.why
    assert r.window.contains(nu)


# ----- conflicts ------------------------------------------------------------------------------------------
def test_high_modulus_with_large_lock_conflicts():
    r = design(["G>=1.5MPa", "lock>=10"], model="eight-chain")
    assert not r.feasible and r.window is None
    assert r.conflicts == [("G>=1.5MPa", "lock>=10")]
    assert "G>=1.5MPa" in r.why and "lock>=10" in r.why and "conflict" in r.why
    c = r.compromise
    # minimax: both misses equal at the compromise, and each target alone is missed there
    m = list(c["misses"].values())
    assert m[0] == pytest.approx(m[1], rel=1e-4) and m[0] > 0
    d = r.to_dict()
    assert d["strand_density"] is None and d["feasible"] is False


def test_unreachable_target_and_lock_edge_reason():
    r = design(["M300>=1000MPa"], model="eight-chain")
    assert not r.feasible and r.unreachable == ["M300>=1000MPa"]
    assert "cannot be met" in r.why
    r = design(["M300>=12MPa"], model="eight-chain")
    # above the high edge the network locks before λ = 4: the edge is the lock, not a stress maximum
    assert "locks before λ = 4" in r.why
    p = get_polymer("NR")
    N4 = (16.0 + 0.5) / 3.0  # λ² + 2/λ = 3N at λ = 4 (Arruda & Boyce 1993)
    assert r.window.hi == pytest.approx(p.density / (p.kuhn_molar_mass * N4), rel=1e-6)


# ----- widening a tolerance never shrinks the window ----------------------------------------------------
@settings(max_examples=20, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(m100=st.floats(0.8, 3.0), tol=st.floats(1.0, 15.0), extra=st.floats(0.0, 20.0),
       lock=st.floats(3.0, 9.0), model=st.sampled_from(["eight-chain", "extended-tube", "gent"]))
def test_widening_never_shrinks(m100, tol, extra, lock, model):
    narrow = design([f"M100={m100:.4f}MPa±{tol:.3f}%", f"lock>={lock:.3f}"], model=model)
    wide = design([f"M100={m100:.4f}MPa±{tol + extra:.3f}%", f"lock>={lock:.3f}"], model=model)
    if narrow.feasible:
        assert wide.feasible
        for iv in narrow.windows:
            assert any(w.lo <= iv.lo * (1 + 1e-9) and iv.hi <= w.hi * (1 + 1e-9) for w in wide.windows)


# ----- a measured compound --------------------------------------------------------------------------------
def test_advice_carries_the_interval():
    r = design(["M100=1.7..1.9MPa", "lock>=6"], model="eight-chain")
    L, H = r.window.lo, r.window.hi
    a = r.advise(L / 1.10, ci=(L / 1.15, L / 1.05))
    assert a.action == "raise"
    assert a.change == pytest.approx(0.10, rel=1e-9)
    assert a.change_range[0] == pytest.approx(0.05, rel=1e-9) and a.change_range[1] == pytest.approx(0.15, rel=1e-9)
    assert a.binding == ["M100=1.7..1.9MPa"] and "Raise ν by 5–15 %" in a.sentence
    a = r.advise(H * 1.2)
    assert a.action == "lower" and a.change == pytest.approx(1 / 1.2 - 1, rel=1e-9)
    a = r.advise(math.sqrt(L * H), ci=(L * 0.9, H))
    assert a.action == "keep" and "below the low edge" in a.sentence


def test_advice_from_a_fit():
    from network_models.fitting import fit
    from network_models.labfiles import read_curves_bytes

    m = get_model("eight-chain")
    net = Network(polymer="NR", nu=210.0, T=T23)
    lam = np.linspace(1.05, 3.0, 30)
    P = m.nominal_stress("uniaxial", lam, net.model_params(m))
    text = "# mode: uniaxial\n# temperature: 23 °C\nstretch,stress (MPa)\n" + "\n".join(
        f"{a:.6f},{b / 1e6:.8f}" for a, b in zip(lam, P, strict=True))
    curves = read_curves_bytes(text.encode(), "today.csv")
    res = fit("eight-chain", curves)
    r = design(["M100=1.7..1.9MPa"], model="eight-chain")
    nu, ci = compound_from_fit(r, res)
    assert nu == pytest.approx(210.0, rel=2e-3)
    assert ci is None or ci[0] <= nu <= ci[1]
    assert r.advise(nu, ci).action == "raise"


# ----- model honesty --------------------------------------------------------------------------------------
def test_compare_models_side_by_side():
    mw = compare_models(["M100=1.7..1.9MPa", "planar@1.5>=0.5MPa"])
    assert "slip-tube" in mw.left_out  # uniaxial-only form: not asked about planar
    assert "eight-chain" in mw.results and "affine" in mw.results
    for iv in mw.agreed:
        for r in mw.results.values():
            assert any(w.lo <= iv.lo * (1 + 1e-12) and iv.hi <= w.hi * (1 + 1e-12) for w in r.windows)
    # affine vs phantom at f = 4 differ by a factor 2 in G: tight G targets cannot agree
    mw = compare_models(["G=0.5MPa±5%"], models=["affine", "phantom"])
    assert mw.results["phantom"].window.lo == pytest.approx(2 * mw.results["affine"].window.lo, rel=1e-8)
    assert mw.agreed == [] and "do not overlap" in mw.sentence


# ----- the grammar and its error sentences ----------------------------------------------------------------
@pytest.mark.parametrize("text", ["M100=1.8", "M100=1.8MPa", "lock>=six", "G@100>=1MPa", "foo>=1", "M100>1.8",
                                  "reserve>=4", "planar>=1MPa", "M100=1.9..1.7MPa", "G=1MPa±0%", "M100",
                                  "Q(toluene)<=0.5", "lock(sideways)>=3", "M100>=1.8MPa±5%"])
def test_malformed_targets_give_one_sentence(text):
    with pytest.raises(TargetError) as exc:
        parse_target(text)
    msg = str(exc.value)
    assert text in msg and "write it like" in msg and "\n" not in msg


def test_the_same_quantity_twice_is_refused():
    with pytest.raises(TargetError, match="same quantity"):
        design(["M100>=1.7MPa", "M100<=1.9MPa"])


def test_mode_the_model_does_not_cover_is_a_sentence():
    with pytest.raises(ValueError, match="slip-tube|Slip-tube|slip tube|Slip tube"):
        design(["planar@2>=1MPa"], model="slip-tube")


def test_temperature_needs_a_unit():
    with pytest.raises(ValueError, match="unit"):
        design(["G>=1MPa"], temperature="23")


def test_a_network_the_model_cannot_represent_is_not_a_window():
    # the extended tube's δ = 1/√(3(N − 1)) grows without bound as N → 1; where its small-strain modulus is no
    # longer positive the network is unusable, so "G<=0.5MPa" must not be met there (a false second window)
    r = design(["G<=0.5MPa"], model="extended-tube")
    assert len(r.windows) == 1 and r.window.lo_open and r.window.hi < 1000.0
