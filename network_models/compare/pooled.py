"""One compound, all its curves in one fit: the parameters, fit quality, crosslink table, swelling and the
network numbers read from that pooled fit (with fit-only intervals).  The specimen statistics
(:mod:`.specimens`) then replace the values and intervals of the quantities the specimens give.

Every value is SI (Pa, K, mol/m³, kg/mol).  A compound whose fit fails keeps its place with the error
sentence; the others are still compared.
"""

from __future__ import annotations

import logging
import math
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import numpy as np

from ..compounds import Compound
from ..constants import TRADE_MODULI, R, celsius, t_quantile
from ..curves import TestCurve
from ..deformation import Mode
from ..entanglement import UPPER_BOUND_NOTE, entanglement_share
from ..errors import about
from ..fitting import FitError, fit_or_error
from ..fitting.uncertainty import derived_se
from ..models import Model, get_model
from ..network import get_polymer
from .records import DEFAULT_TEST_TEMPERATURE, TEMPERATURE_NOTE, CompoundResult, ParamRow, Quantity
from .specimens import BASIS_TIERS, basis_label, row_key, stress_at

if TYPE_CHECKING:
    from ..fitting.result import FitResult

log = logging.getLogger("netstretch.compare")
log.addHandler(logging.NullHandler())  # no traceback on a CLI user's screen; an app server's handlers still see it


# ----- fitting adapter ----------------------------------------------------------------------------
def default_fitter(model: Model | str, curves: list[TestCurve]) -> FitResult:
    """Fit with :func:`network_models.fitting.fit`."""
    from ..fitting import fit

    return fit(model, curves)


def fit_safely(m: Model, curves: list[TestCurve], fitter: Callable[..., Any] | None, who: str
               ) -> tuple[Any, Any]:
    """(fit result, None) or (None, error sentence), through the core's one fit → catch step
    (``fitting.fit_or_error``); ``fitter`` replaces ``fit`` (tests, custom fitters)."""
    if fitter is None or fitter is default_fitter:
        res = fit_or_error(m, curves)
    else:
        try:
            res = fitter(m, curves)
        except Exception as exc:  # a custom fitter's failure is a sentence too
            res = FitError(f"{type(exc).__name__}: {exc}")
    if isinstance(res, FitError):
        return None, f"{who}: the {m.title} fit failed — {res}"
    return res, None


def propagate(func, fr) -> float | None:
    """Fit standard error of ``func(parameter values)`` (the core's one delta method, ``fitting.derived_se``)."""
    if getattr(fr, "covariance", None) is None:
        return None
    return derived_se(fr, func)[1]


def _param_rows(model, fr) -> list[ParamRow]:
    rows = []
    for decl in model.params:
        est = fr.params.get(decl.name)
        if est is None:
            continue
        stderr = est.stderr if est.stderr is not None and np.isfinite(est.stderr) else None
        ci = getattr(est, "ci95", None)
        lo = hi = None
        if ci is not None and all(v is not None and np.isfinite(v) for v in ci):
            lo, hi = float(ci[0]), float(ci[1])
        held = bool(est.fixed) or (stderr is None and lo is None)
        rows.append(ParamRow(name=decl.name, symbol=decl.symbol, value=float(est.value), stderr=stderr, low=lo,
                             high=hi, unit=decl.unit,
                             display_unit=decl.display_unit or decl.unit, display_scale=decl.display_scale,
                             meaning=decl.meaning, held=held,
                             determined=None if held else bool(getattr(est, "determined", True) and lo is not None)))
    return rows


def _quality(fr, model, curves, values) -> list[dict]:
    out = []
    by_mode: dict[Mode, list[TestCurve]] = {}
    for c in curves:
        by_mode.setdefault(c.mode, []).append(c)
    for mode, cs in by_mode.items():
        lam = np.concatenate([c.stretch for c in cs])
        P = np.concatenate([c.stress for c in cs])
        pred = model.nominal_stress(mode, lam, values)
        ok = np.isfinite(pred)
        res = P[ok] - pred[ok]
        rms = float(np.sqrt(np.mean(res**2))) if res.size else None
        ss = float(np.sum((P[ok] - P[ok].mean()) ** 2)) if res.size else 0.0
        r2 = 1.0 - float(np.sum(res**2)) / ss if ss > 0 else None
        st = (getattr(fr, "modes", None) or {}).get(mode)  # the fitter's own numbers, so pages agree
        if st is not None:
            rms, r2 = float(st.rms), (None if st.r2 is None else float(st.r2))
        out.append({"mode": mode.value, "points": int(lam.size), "points_past_lock": int((~ok).sum()),
                    "rms_Pa": rms, "r2": r2})
    return out


# ----- physics of the comparison -------------------------------------------------------------------
def entanglement_modulus_table(polymer: str, T: float) -> float:
    """G_e from the polymer's plateau modulus, scaled ∝ T (network.py convention), Pa."""
    p = get_polymer(polymer)
    return p.plateau_modulus * T / p.plateau_temperature


def split_modulus(model, values: dict, polymer: str, T: float) -> tuple[float, float, str]:
    """(crosslink part G_x, entanglement part G_e, how) of the small-strain modulus, Pa: the model's own
    split where it makes one (:meth:`Model.modulus_split`), else the polymer table's plateau modulus (∝ T)."""
    split = model.modulus_split(values)
    if split.separable:
        return split.crosslink, split.entanglement, split.basis
    Ge = entanglement_modulus_table(polymer, T)
    return split.total - Ge, Ge, (f"G_e = plateau modulus of {get_polymer(polymer).key} (polymer table, ∝ T) "
                                  f"subtracted — an upper bound: {UPPER_BOUND_NOTE}")


def strand_density_from_modulus(Gx: float, T: float) -> float:
    """Affine: ν = G_x/(RT), mol/m³ (docs/methods.md §affine)."""
    return Gx / (R * T)


def flory_rehner_strand_density(phi: float, chi: float, V1: float, f: float = 4.0) -> float:
    """Affine Flory–Rehner strand density, mol/m³ (V1 in m³/mol) — :func:`network_models.swelling.flory_rehner_nu`."""
    from ..swelling import flory_rehner_nu

    return flory_rehner_nu(phi, chi, V1, f, "affine")


def specimen_values(curves: list[TestCurve], mode: Mode, lam: float) -> list[float]:
    """Nominal stress at ``lam`` on each curve of ``mode`` that reaches it (loading branch, linear interpolation)."""
    vals = (stress_at([c], lam, mode) for c in curves if c.mode is mode)
    return [v for v in vals if v is not None]


def measured_at(curves: list[TestCurve], mode: Mode, lam: float) -> tuple[float | None, int]:
    """Mean nominal stress at ``lam`` over the curves of ``mode`` that reach it, and how many did."""
    vals = specimen_values(curves, mode, lam)
    return (float(np.mean(vals)) if vals else None), len(vals)


def at_temperature(model, values: dict, T_from: float, T_to: float) -> dict:
    """Parameters at another temperature at a fixed network: every modulus (Pa) ∝ T, the rest unchanged."""
    k = T_to / T_from
    return {n: (v * k if model.params[n].unit == "Pa" else v) for n, v in values.items()}


def _iv(value, se, dof):
    if se is None or value is None:
        return None, None
    q = t_quantile(dof)
    return value - q * se, value + q * se


# ----- the pooled analysis ---------------------------------------------------------------------------
def analyse(compound: Compound, model: str = "eight-chain", service_temperature: float | None = None,
            fitter=None) -> CompoundResult:
    """Fit ``model`` to all of one compound's curves and derive every comparison number from that fit
    (fit-only intervals; :func:`network_models.compare.compare` adds the specimen statistics)."""
    m = get_model(model) if isinstance(model, str) else model
    res = CompoundResult(compound=compound, model=m.name)
    T = compound.temperature()
    if T is None:
        T = DEFAULT_TEST_TEMPERATURE
        if compound.curves:
            res.warnings.append(f"{compound.name}: no test temperature stated in the data; 23 °C assumed")
    res.test_temperature = T
    curves = [c for c in compound.curves if m.supports(c.mode)]
    skipped = [c for c in compound.curves if not m.supports(c.mode)]
    if skipped:
        res.warnings.append(
            f"{compound.name}: the {m.title} model has no {', '.join(sorted({c.mode.value for c in skipped}))} "
            f"form; {len(skipped)} curve(s) left out of the fit")
    if not curves:
        res.error = (f"{compound.name}: no test curve the {m.title} model can fit "
                     f"(it covers {', '.join(x.value for x in m.modes)}); choose another model")
        return res
    fr, err = fit_safely(m, curves, fitter, compound.name)
    if err:
        res.error = err
        return res
    res.fit = fr
    res.warnings.extend(about(compound.name, w) for w in (getattr(fr, "warnings", None) or []))
    res.params = _param_rows(m, fr)
    try:
        values = m.resolve({p.name: p.value for p in res.params})
    except ValueError as exc:
        res.error = f"{compound.name}: fitted parameters are outside the model's domain — {exc}"
        return res
    res.fit_quality = _quality(fr, m, curves, values)
    dof = max(fr.n - fr.k, 1)
    _modulus_part(res, m, fr, values, T, dof)
    _crosslink_part(res, fr, compound, T)
    Ts = T if service_temperature is None else float(service_temperature)
    _service_part(res, T, Ts)
    _trade_part(res, m, fr, values, compound, dof)
    _swelling_part(res, compound)
    return res


def _modulus_part(res, m, fr, values, T, dof):
    poly = get_polymer(res.compound.polymer)
    Q = res.quantities
    G0 = float(m.small_strain_modulus(**values))
    se = propagate(lambda p: m.small_strain_modulus(**p), fr)
    Q["G0"] = Quantity("G0", "small-strain shear modulus G₀", G0, "Pa", *_iv(G0, se, dof),
                       basis=f"at test temperature {celsius(T):.1f} °C", display_unit="MPa", display_scale=1e-6)
    Gx, Ge, how = split_modulus(m, values, poly.key, T)
    share, _, share_notices = entanglement_share(Ge, G0, res.compound.name)
    res.warnings.extend(about(res.compound.name, n) for n in share_notices)
    if share is not None:  # a share over 100 % is never shown as a plain number (the notice says why)
        share_se = (propagate(lambda p: split_modulus(m, p, poly.key, T)[1] / m.small_strain_modulus(**p), fr)
                    if m.modulus_split(values).separable else None)
        Q["ent_share"] = Quantity("ent_share", "entanglement share G_e/G₀", share, "1",
                                  *_iv(share, share_se, dof), basis=how, display_unit="%", display_scale=100.0)
    if "N" in values:
        pr = next(p for p in res.params if p.name == "N")
        Q["N"] = Quantity("N", "Kuhn segments per strand N", values["N"], "1", pr.low, pr.high, basis="fitted")
    lock = m.stretch_limit("uniaxial", values) if m.supports("uniaxial") else None
    if lock is not None:
        Q["lock"] = Quantity("lock", "uniaxial locking stretch λ_lock", lock, "1", basis=f"{m.title} fit")


def _crosslink_part(res, fr, compound, T):
    """The crosslink-density assumption table and the pooled ν on each headline tier (``res.pooled_nu``)."""
    from ..crosslinks import from_fit

    try:
        table = from_fit(fr, polymer=compound.polymer, T=T, f=compound.f, filler_fraction=compound.filler_fraction,
                         Mn=compound.metadata.get("Mn_kg_mol"))
    except (ValueError, KeyError, AttributeError, TypeError) as exc:
        res.warnings.append(f"{compound.name}: no crosslink table ({exc})")
        table = None
    res.crosslink_rows = [] if table is None else [r.to_dict() for r in table.rows]
    res.crosslink_notes = [] if table is None else list(table.notes)
    filled = compound.filler_fraction > 0
    res.pooled_nu = {}
    for tier in range(len(BASIS_TIERS)):
        row = next((r for r in res.crosslink_rows if r["key"] == row_key(tier, filled)), None)
        res.pooled_nu[tier] = (None, None) if row is None else (row["strand_density"], row["strand_density_ci95"])


def network_quantities(res, tier: int, tier_note: str = "") -> None:
    """ν, μ_j = 2ν/f and M_c = ρ/ν on the headline tier (pooled fit; specimen statistics replace them), and N
    and the lock from M_c when the model has none."""
    from ..network import lock_from_N

    c = res.compound
    poly = get_polymer(c.polymer)
    nu, ci = res.pooled_nu.get(tier, (None, None))
    if nu is None or not nu > 0:
        return
    lo, hi = ci if ci else (None, None)
    basis = basis_label(tier, c.filler_fraction > 0, c.filler_fraction)
    Q = res.quantities
    Q["nu"] = Quantity("nu", "strand density ν", nu, "mol/m³", lo, hi, basis=basis, note=tier_note)
    Q["mu_j"] = Quantity("mu_j", "junction (crosslink) density μ_j = 2ν/f", 2 * nu / c.f, "mol/m³",
                         None if lo is None else 2 * lo / c.f, None if hi is None else 2 * hi / c.f,
                         basis=f"{basis}, f = {c.f:g}")
    Q["Mc"] = Quantity("Mc", "strand molar mass M_c = ρ/ν", poly.density / nu, "kg/mol",
                       None if not hi else poly.density / hi, None if not (lo and lo > 0) else poly.density / lo,
                       basis=f"ρ = {poly.density:g} kg/m³ ({poly.key})", display_unit="g/mol", display_scale=1000.0)
    MK = poly.kuhn_molar_mass
    if "N" not in Q:
        mc = Q["Mc"]
        Q["N"] = Quantity("N", "Kuhn segments per strand N", mc.value / MK, "1",
                          None if mc.low is None else mc.low / MK, None if mc.high is None else mc.high / MK,
                          basis=f"M_c/M_K, M_K = {MK * 1000:g} g/mol ({poly.status})")
    if "lock" not in Q:
        Q["lock"] = Quantity("lock", "uniaxial locking stretch λ_lock",
                             lock_from_N(max(Q["N"].value, 1.0 + 1e-6), Mode.UNIAXIAL), "1",
                             basis="eight-chain locking with N above (the fitted model does not lock)")


def _service_part(res, T, Ts):
    k = Ts / T
    g = res.quantities["G0"]
    res.quantities["G0_service"] = Quantity(
        "G0_service", "G₀ at service temperature", g.value * k, "Pa", None if g.low is None else g.low * k,
        None if g.high is None else g.high * k, basis=f"{celsius(Ts):.1f} °C, G ∝ T at fixed network",
        display_unit="MPa", display_scale=1e-6, note=TEMPERATURE_NOTE)


def _trade_part(res, m, fr, values, compound, dof):
    """M100/M300 measured (interpolated on the uniaxial curves; specimen statistics replace the interval) and
    predicted by the pooled fit."""
    uni = [c for c in compound.curves if c.mode is Mode.UNIAXIAL]
    Q = res.quantities
    for key, lam in TRADE_MODULI.items():
        strain = f"{(lam - 1) * 100:.0f} % elongation (λ = {lam:g})"
        if uni:
            meas, n = measured_at(uni, Mode.UNIAXIAL, lam)
            Q[f"{key}_measured"] = Quantity(
                f"{key}_measured", f"{key} measured", meas, "Pa", basis=f"interpolated at {strain}, {n} curve(s)",
                display_unit="MPa", display_scale=1e-6,
                note="" if meas is not None else "the uniaxial data do not reach this elongation")
        if m.supports("uniaxial"):
            pred = float(m.nominal_stress("uniaxial", np.array([lam]), values)[0])
            ok = math.isfinite(pred)
            se = propagate(lambda p, lam=lam: float(m.nominal_stress("uniaxial", np.array([lam]), p)[0]), fr) \
                if ok else None
            Q[f"{key}_predicted"] = Quantity(
                f"{key}_predicted", f"{key} predicted", pred if ok else None, "Pa",
                *_iv(pred if ok else None, se if se is not None and math.isfinite(se) else None, dof),
                basis=f"{m.title} fit at {strain}", display_unit="MPa", display_scale=1e-6,
                note=(str(fr.range_note("uniaxial", [lam]) or "") if ok and hasattr(fr, "range_note")
                      else "" if ok else "past the model's locking stretch"))


def _swelling_part(res, compound):
    """Flory–Rehner strand density from the compound's swelling tests (χ ± 0.05 range, not statistical)."""
    sw_vals, ends = [], []
    for s in compound.swelling:
        try:
            est = s.estimate(compound.polymer, compound.f, compound.filler_fraction,
                             **getattr(compound, "swelling_options", dict)())
        except (ValueError, KeyError) as exc:
            msg = exc.args[0] if isinstance(exc, KeyError) and exc.args else str(exc)
            res.warnings.append(f"{compound.name}: swelling test {s.specimen or s.source or ''} in {s.solvent}: {msg}")
            continue
        lo_b, hi_b = est.nu_band("affine")
        sw_vals.append(est.nu_affine)
        ends.extend(v for v in (lo_b, hi_b) if v is not None)
        res.swelling_rows.append({
            "specimen": s.specimen or "", "source": s.source, "solvent": est.solvent.key, "chi": est.chi.chi,
            "chi_status": est.chi.status, "molar_volume_cm3_mol": est.solvent.molar_volume * 1e6,
            "phi": est.phi, "phi_measured": est.phi_measured, "nu": est.nu_affine, "nu_phantom": est.nu_phantom,
            "nu_chi_minus_0.05": lo_b, "nu_chi_plus_0.05": hi_b, "f": compound.f, "notes": list(est.notes),
            "chi_used": est.chi_used, "chi_spread": est.chi_spread, "nu_band_chi": list(est.nu_band_chi["affine"])})
    if sw_vals:
        ends.extend(sw_vals)
        res.quantities["nu_swelling"] = Quantity(
            "nu_swelling", "strand density ν from swelling", float(np.mean(sw_vals)), "mol/m³", min(ends),
            max(ends), basis=f"Flory–Rehner, affine, {len(sw_vals)} test(s); range for χ ± 0.05 (not statistical)",
            note="restricted swelling makes filled stocks read higher than mechanical values unless corrected")


__all__ = ["analyse", "at_temperature", "default_fitter", "entanglement_modulus_table", "fit_safely",
           "flory_rehner_strand_density", "measured_at", "network_quantities", "propagate", "specimen_values",
           "split_modulus", "strand_density_from_modulus"]
