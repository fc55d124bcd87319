"""Compare compounds on one basis: fit the same model to every compound and line up the network numbers.

    >>> from network_models.compare import compare
    >>> cmp = compare(compounds, model="eight-chain", baseline="A", service_temperature=353.15)
    >>> cmp.rows()            # one dict per compound: every number with unit and 95 % interval
    >>> cmp.differences()     # % change against the baseline and whether the 95 % intervals overlap

For each compound the comparison gives the small-strain shear modulus G₀, the **strand density ν** and
**junction (crosslink) density μ_j = 2ν/f** (basis: affine network, entanglement part removed — the basis
is stated beside every number), M_c = ρ/ν, Kuhn segments per strand N, the uniaxial locking stretch, the
entanglement share G_e/G₀, G₀ at the service temperature (G ∝ T at a fixed network; filled compounds often
soften with temperature in reality), predicted and measured M100/M300 (nominal stress at 100 % and 300 %
elongation, λ = 2 and 4) and the Flory–Rehner strand density from swelling where given.

Every value is SI inside (Pa, K, mol/m³, kg/mol); :mod:`network_models.report` converts at the edge.
A compound whose fit fails keeps its place with the error sentence; the others are still compared.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field

import numpy as np
from scipy.constants import R

from .compounds import Compound
from .deformation import Mode
from .models import ModeNotSupportedError, get_model
from .network import get_polymer, lock_from_N
from .testdata import TestCurve

log = logging.getLogger("netstretch.compare")
log.addHandler(logging.NullHandler())  # no traceback on a CLI user's screen; an app server's handlers still see it

#: stretches of the trade moduli M100 and M300 (100 % and 300 % elongation; physics.md §7)
TRADE_MODULI = {"M100": 2.0, "M300": 4.0}
#: test temperature assumed when no curve states one, K (23 °C, the usual lab temperature — common practice)
DEFAULT_TEST_TEMPERATURE = 296.15
#: two-sided 95 % normal quantile (scipy.stats.norm.ppf(0.975))
Z95 = 1.959963984540054

#: quantities whose range is not a statistical interval (no overlap verdict)
NON_STATISTICAL = frozenset({"nu_swelling"})

BASIS = "affine network, entanglement part removed"
TEMPERATURE_NOTE = ("G ∝ T at a fixed network (entropic elasticity); filled compounds often soften with "
                    "temperature in reality, so treat the service-temperature modulus of a filled compound as "
                    "an upper estimate and check it with a test at that temperature")


# ----- small records ------------------------------------------------------------------------------
@dataclass
class Quantity:
    """One number with its unit, 95 % interval (or None), how it was obtained and a display hint."""

    key: str
    label: str
    value: float | None
    unit: str
    low: float | None = None
    high: float | None = None
    basis: str = ""
    display_unit: str = ""
    display_scale: float = 1.0
    note: str = ""

    @property
    def has_interval(self) -> bool:
        return self.low is not None and self.high is not None

    def shown(self, x):
        return None if x is None else x * self.display_scale

    def to_dict(self) -> dict:
        return {"key": self.key, "label": self.label, "value": self.value, "unit": self.unit,
                "ci95_low": self.low, "ci95_high": self.high, "basis": self.basis,
                "display_unit": self.display_unit or self.unit, "display_scale": self.display_scale,
                "note": self.note}


@dataclass
class ParamRow:
    name: str
    symbol: str
    value: float
    stderr: float | None
    low: float | None
    high: float | None
    unit: str
    display_unit: str
    display_scale: float
    meaning: str
    held: bool = False

    def to_dict(self):
        return dict(self.__dict__)


@dataclass
class CompoundResult:
    compound: Compound
    model: str
    fit: object | None = None
    error: str | None = None
    params: list[ParamRow] = field(default_factory=list)
    quantities: dict[str, Quantity] = field(default_factory=dict)
    fit_quality: list[dict] = field(default_factory=list)  # per mode: mode, points, rms_Pa, r2
    warnings: list[str] = field(default_factory=list)
    test_temperature: float = DEFAULT_TEST_TEMPERATURE
    crosslink_rows: list[dict] = field(default_factory=list)
    crosslink_notes: list[str] = field(default_factory=list)
    swelling_rows: list[dict] = field(default_factory=list)

    @property
    def name(self) -> str:
        return self.compound.name

    @property
    def ok(self) -> bool:
        return self.error is None

    def param_values(self) -> dict[str, float]:
        return {p.name: p.value for p in self.params}

    def q(self, key) -> float | None:
        x = self.quantities.get(key)
        return None if x is None else x.value


# ----- fitting adapter ----------------------------------------------------------------------------
def _fit(model, curves):
    """Fit with :func:`network_models.fitting.fit`."""
    from .fitting import fit

    return fit(model, curves)


def _param_rows(model, fr) -> list[ParamRow]:
    rows = []
    for decl in model.params:
        est = fr.params.get(decl.name) if hasattr(fr.params, "get") else fr.params[decl.name]
        if est is None:
            continue
        value = float(getattr(est, "value", est))
        stderr = getattr(est, "stderr", None)
        stderr = float(stderr) if stderr is not None and np.isfinite(stderr) else None
        ci = getattr(est, "ci95", None)
        lo = hi = None
        if ci is not None and all(v is not None and np.isfinite(v) for v in ci):
            lo, hi = float(ci[0]), float(ci[1])
        held = bool(getattr(est, "held", getattr(est, "fixed", False))) or (stderr is None and lo is None)
        rows.append(ParamRow(decl.name, decl.symbol, value, stderr, lo, hi, decl.unit,
                             decl.display_unit or decl.unit, decl.display_scale, decl.meaning, held))
    return rows


def _covariance(fr, names):
    cov = getattr(fr, "covariance", None)
    if cov is None:
        cov = getattr(fr, "cov", None)
    if cov is None:
        return None
    order = list(getattr(fr, "free", None) or getattr(fr, "free_names", None) or getattr(fr, "param_names", None)
                 or [])
    cov = np.asarray(cov, dtype=float)
    if cov.ndim != 2 or not order or cov.shape[0] != len(order):
        return None
    idx = [order.index(n) if n in order else None for n in names]
    out = np.zeros((len(names), len(names)))
    for i, a in enumerate(idx):
        for j, b in enumerate(idx):
            if a is not None and b is not None:
                out[i, j] = cov[a, b]
    return out


def _propagate(func, rows: list[ParamRow], cov=None) -> float | None:
    """Standard error of ``func(params)`` by the delta method (covariance when the fit gives one,
    independent parameters otherwise)."""
    free = [r for r in rows if not r.held and r.stderr is not None]
    if not free:
        return None
    base = {r.name: r.value for r in rows}
    f0 = func(base)
    grad = []
    for r in free:
        h = max(abs(r.value) * 1e-6, 1e-12)
        p = dict(base)
        p[r.name] = r.value + h
        try:
            f1 = func(p)
        except ValueError:
            p[r.name] = r.value - h
            f1 = 2 * f0 - func(p)
        grad.append((f1 - f0) / h)
    g = np.array(grad)
    if cov is not None:
        c = _covariance_sub(cov, rows, free)
        var = float(g @ c @ g)
    else:
        var = float(np.sum((g * np.array([r.stderr for r in free])) ** 2))
    return math.sqrt(var) if var >= 0 and math.isfinite(var) else None


def _covariance_sub(cov, rows, free):
    names = [r.name for r in rows]
    idx = [names.index(r.name) for r in free]
    return cov[np.ix_(idx, idx)]


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
        rms = float(np.sqrt(np.mean(res**2))) if res.size else float("nan")
        ss = float(np.sum((P[ok] - P[ok].mean()) ** 2)) if res.size else 0.0
        r2 = 1.0 - float(np.sum(res**2)) / ss if ss > 0 else float("nan")
        out.append({"mode": mode.value, "points": int(lam.size), "points_past_lock": int((~ok).sum()),
                    "rms_Pa": rms, "r2": r2})
    return out


# ----- physics of the comparison -------------------------------------------------------------------
def entanglement_modulus_table(polymer: str, T: float) -> float:
    """G_e from the polymer's plateau modulus, scaled ∝ T (network.py convention), Pa."""
    p = get_polymer(polymer)
    return p.plateau_modulus * T / p.plateau_temperature


def split_modulus(model, values: dict, polymer: str, T: float) -> tuple[float, float, str]:
    """(crosslink part G_x, entanglement part G_e, how) of the small-strain modulus, Pa.

    Tube models and Mooney–Rivlin fit the entanglement part themselves (G_e, 2C₂); the others carry it
    inside their modulus, and the polymer table's plateau modulus (∝ T) is subtracted.
    """
    split = model.modulus_split(values)
    if split.separable:
        return split.crosslink, split.entanglement, split.basis
    G0 = split.total
    Ge = entanglement_modulus_table(polymer, T)
    return G0 - Ge, Ge, f"G_e = plateau modulus of {get_polymer(polymer).key} (polymer table, ∝ T) subtracted"


def strand_density_from_modulus(Gx: float, T: float) -> float:
    """Affine: ν = G_x/(RT), mol/m³ (physics.md §3)."""
    return Gx / (R * T)


def flory_rehner_strand_density(phi: float, chi: float, V1: float, f: float = 4.0) -> float:
    """Affine Flory–Rehner strand density, mol/m³ (V1 in m³/mol) — :func:`network_models.swelling.flory_rehner_nu`."""
    from .swelling import flory_rehner_nu

    return flory_rehner_nu(phi, chi, V1, f, "affine")


def measured_at(curves: list[TestCurve], mode: Mode, lam: float) -> tuple[float | None, int]:
    """Mean nominal stress at ``lam`` interpolated on every curve of ``mode`` that reaches it (loading
    branch: points up to the curve's maximum stretch), and how many curves reached it."""
    vals = specimen_values(curves, mode, lam)
    return (float(np.mean(vals)) if vals else None), len(vals)


def specimen_values(curves: list[TestCurve], mode: Mode, lam: float) -> list[float]:
    """Nominal stress at ``lam`` on each curve of ``mode`` that reaches it (linear interpolation on the
    loading branch)."""
    vals = []
    for c in curves:
        if c.mode is not mode or len(c) < 2:
            continue
        imax = int(np.argmax(c.stretch))
        x, y = c.stretch[: imax + 1], c.stress[: imax + 1]
        order = np.argsort(x, kind="stable")
        x, y = x[order], y[order]
        if x[0] <= lam <= x[-1]:
            vals.append(float(np.interp(lam, x, y)))
    return vals


def at_temperature(model, values: dict, T_from: float, T_to: float) -> dict:
    """Parameters at another temperature at a fixed network: every modulus (Pa) ∝ T, the rest unchanged."""
    k = T_to / T_from
    return {n: (v * k if model.params[n].unit == "Pa" else v) for n, v in values.items()}


# ----- the comparison ----------------------------------------------------------------------------
@dataclass
class Comparison:
    model: str
    results: list[CompoundResult]
    baseline: str | None
    service_temperature: float
    notes: list[str] = field(default_factory=list)

    def __iter__(self):
        return iter(self.results)

    def __getitem__(self, name) -> CompoundResult:
        for r in self.results:
            if r.name == name:
                return r
        raise KeyError(f"no compound called {name!r} in this comparison; have {', '.join(self.names)}")

    @property
    def names(self) -> list[str]:
        return [r.name for r in self.results]

    @property
    def base(self) -> CompoundResult | None:
        return self[self.baseline] if self.baseline else None

    @property
    def model_obj(self):
        return get_model(self.model)

    def rows(self) -> list[dict]:
        out = []
        for r in self.results:
            row = {"compound": r.name, "ok": r.ok, "error": r.error}
            for k, q in r.quantities.items():
                row[k] = q.to_dict()
            out.append(row)
        return out

    def differences(self) -> list[dict]:
        """Per compound and quantity: % difference to the baseline and whether the 95 % intervals overlap."""
        base = self.base
        out = []
        if base is None or not base.ok:
            return out
        for r in self.results:
            if r is base or not r.ok:
                continue
            for key, q in r.quantities.items():
                b = base.quantities.get(key)
                if b is None or q.value is None or b.value is None or b.value == 0:
                    continue
                pct = (q.value - b.value) / abs(b.value) * 100.0
                overlap = None
                if q.has_interval and b.has_interval and key not in NON_STATISTICAL:
                    overlap = bool(q.low <= b.high and b.low <= q.high)
                out.append({"compound": r.name, "baseline": base.name, "key": key, "label": q.label,
                            "value": q.value, "baseline_value": b.value, "unit": q.unit,
                            "percent": pct, "intervals_overlap": overlap})
        return out

    def to_dict(self) -> dict:
        m = self.model_obj
        return {
            "model": {"name": m.name, "title": m.title, "equation": m.equation,
                      "references": list(m.references), "assumption": m.assumption},
            "baseline": self.baseline,
            "service_temperature_K": self.service_temperature,
            "basis": BASIS,
            "temperature_note": TEMPERATURE_NOTE,
            "notes": list(self.notes),
            "compounds": [result_to_dict(r) for r in self.results],
            "differences": self.differences(),
        }


def result_to_dict(r: CompoundResult) -> dict:
    c = r.compound
    return {
        "name": c.name, "ok": r.ok, "error": r.error, "polymer": c.polymer, "f": c.f, "notes": c.notes,
        "metadata": {k: (v if isinstance(v, (str, int, float, bool)) or v is None else str(v))
                     for k, v in c.metadata.items()},
        "test_temperature_K": r.test_temperature,
        "provenance": c.provenance(),
        "parameters": [p.to_dict() for p in r.params],
        "quantities": {k: q.to_dict() for k, q in r.quantities.items()},
        "fit_quality": r.fit_quality,
        "crosslink_table": r.crosslink_rows,
        "crosslink_notes": r.crosslink_notes,
        "swelling": r.swelling_rows,
        "warnings": list(r.warnings),
    }


def _interval(value, se, q=Z95):
    if se is None or value is None:
        return None, None
    return value - q * se, value + q * se


def analyse(compound: Compound, model="eight-chain", service_temperature: float | None = None,
            fitter=None) -> CompoundResult:
    """Fit ``model`` to one compound and derive every comparison number."""
    m = get_model(model) if isinstance(model, str) else model
    res = CompoundResult(compound=compound, model=m.name)
    T = compound.temperature()
    if T is None:
        T = DEFAULT_TEST_TEMPERATURE
        if compound.curves:
            res.warnings.append(f"{compound.name}: no test temperature stated in the data; 23 °C assumed")
    res.test_temperature = T
    Ts = T if service_temperature is None else float(service_temperature)
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
    try:
        fr = (fitter or _fit)(m, curves)
    except (ValueError, RuntimeError, ModeNotSupportedError, np.linalg.LinAlgError) as exc:
        res.error = f"{compound.name}: the {m.title} fit failed — {exc}"
        return res
    except ArithmeticError as exc:  # overflow inside the optimiser: a numerical failure, not the user's
        res.error = (f"{compound.name}: the {m.title} fit broke down numerically ({type(exc).__name__}: {exc}); "
                     "try another model or fit fewer modes")
        return res
    except Exception as exc:  # a defect, not the user's input: keep the other compounds going, say so
        log.exception("fit of %s to %s failed unexpectedly", m.name, compound.name)
        res.error = (f"{compound.name}: the {m.title} fit failed unexpectedly ({type(exc).__name__}); the other "
                     "compounds are compared without it — please report this with the data files")
        return res
    res.fit = fr
    res.warnings.extend(f"{compound.name}: {w}" for w in (getattr(fr, "warnings", None) or []))
    res.params = _param_rows(m, fr)
    values = {p.name: p.value for p in res.params}
    cov = _covariance(fr, [p.name for p in res.params])
    try:
        values = m.resolve(values)
    except ValueError as exc:
        res.error = f"{compound.name}: fitted parameters are outside the model's domain — {exc}"
        return res
    res.fit_quality = _quality(fr, m, curves, values)
    stats = getattr(fr, "modes", None)
    if isinstance(stats, dict):  # the fitter's own per-mode numbers, so the report matches the fit page
        for q in res.fit_quality:
            st = stats.get(Mode.parse(q["mode"]))
            if st is not None:
                q["rms_Pa"], q["r2"] = float(st.rms), (None if st.r2 is None else float(st.r2))
    poly = get_polymer(compound.polymer)
    f = compound.f
    Q = res.quantities
    tq = _t95(fr)

    def _iv(value, se):
        return _interval(value, se, tq)

    # small-strain modulus at the test temperature
    G0 = m.small_strain_modulus(**values)
    se_G0 = _propagate(lambda p: m.small_strain_modulus(**p), res.params, cov)
    Q["G0"] = Quantity("G0", "small-strain shear modulus G₀", G0, "Pa", *_iv(G0, se_G0),
                       basis=f"at test temperature {T - 273.15:.1f} °C", display_unit="MPa", display_scale=1e-6)

    # crosslink part, strand and junction density: the crosslink table's "affine, entanglement removed" row
    Gx, Ge, how = split_modulus(m, values, poly.key, T)
    table = _crosslink_table(fr, compound, T)
    res.crosslink_rows = [] if table is None else [r.to_dict() for r in table.rows]
    if table is not None:
        res.crosslink_notes = list(table.notes)
        # like-for-like basis: a filled compound's filler reinforcement is taken out too (Guth–Gold)
        row = next((r for r in table.rows if r.key == "affine-no-entanglement-no-filler"), None)
        if row is not None:
            basis = f"{BASIS}, filler removed (Guth–Gold, φ = {compound.filler_fraction:g})"
        else:
            row = next((r for r in table.rows if r.key == "affine-no-entanglement"), None)
            basis = BASIS
        if row is not None and row.nu is not None and row.nu > 0:
            nu_ci = row.nu_ci or (None, None)
            mj_ci = row.junction_ci or (None, None)
            mc_ci = row.Mc_ci or (None, None)
            Q["nu"] = Quantity("nu", "strand density ν", row.nu, "mol/m³", *nu_ci, basis=basis, note=row.assumes)
            Q["mu_j"] = Quantity("mu_j", "junction (crosslink) density μ_j = 2ν/f", row.junction_density, "mol/m³",
                                 *mj_ci, basis=f"{basis}, f = {f:g}")
            Q["Mc"] = Quantity("Mc", "strand molar mass M_c = ρ/ν", row.Mc, "kg/mol", *mc_ci,
                               basis=f"ρ = {poly.density:g} kg/m³ ({poly.key})", display_unit="g/mol",
                               display_scale=1000.0)
    if "nu" not in Q and Gx > 0 and table is None:
        se_Gx = _propagate(lambda p: split_modulus(m, p, poly.key, T)[0], res.params, cov)
        lo, hi = _iv(Gx, se_Gx)
        k_nu = 1.0 / (R * T)
        Q["nu"] = Quantity("nu", "strand density ν", Gx * k_nu, "mol/m³", None if lo is None else lo * k_nu,
                           None if hi is None else hi * k_nu, basis=BASIS, note=how)
        Q["mu_j"] = Quantity("mu_j", "junction (crosslink) density μ_j = 2ν/f", 2 * Gx * k_nu / f, "mol/m³",
                             None if lo is None else 2 * lo * k_nu / f, None if hi is None else 2 * hi * k_nu / f,
                             basis=f"{BASIS}, f = {f:g}")
        Q["Mc"] = Quantity("Mc", "strand molar mass M_c = ρ/ν", poly.density / (Gx * k_nu), "kg/mol",
                           poly.density / (hi * k_nu) if hi else None,
                           poly.density / (lo * k_nu) if lo and lo > 0 else None,
                           basis=f"ρ = {poly.density:g} kg/m³ ({poly.key})", display_unit="g/mol",
                           display_scale=1000.0)
    if "nu" not in Q:
        res.warnings.append(
            f"{compound.name}: the entanglement part ({Ge / 1e6:.3f} MPa) is as large as the whole modulus "
            f"({G0 / 1e6:.3f} MPa); no crosslink density on the '{BASIS}' basis — see the crosslink table for "
            "other assumptions, or try a tube model")
    # Kuhn segments per strand
    if "N" in values:
        pr = next(p for p in res.params if p.name == "N")
        Q["N"] = Quantity("N", "Kuhn segments per strand N", values["N"], "1", pr.low, pr.high,
                          basis="fitted")
    elif "Mc" in Q:
        Q["N"] = Quantity("N", "Kuhn segments per strand N", Q["Mc"].value / poly.kuhn_molar_mass, "1",
                          None if Q["Mc"].low is None else Q["Mc"].low / poly.kuhn_molar_mass,
                          None if Q["Mc"].high is None else Q["Mc"].high / poly.kuhn_molar_mass,
                          basis=f"M_c/M_K, M_K = {poly.kuhn_molar_mass * 1000:g} g/mol ({poly.status})")
    # locking stretch
    lock = m.stretch_limit("uniaxial", values) if m.supports("uniaxial") else None
    if lock is not None:
        Q["lock"] = Quantity("lock", "uniaxial locking stretch λ_lock", lock, "1", basis=f"{m.title} fit")
    elif "N" in Q:
        lock = lock_from_N(max(Q["N"].value, 1.0 + 1e-6), Mode.UNIAXIAL)
        Q["lock"] = Quantity("lock", "uniaxial locking stretch λ_lock", lock, "1",
                             basis="eight-chain locking with N above (the fitted model does not lock)")
    # entanglement share
    if G0 > 0:
        share = Ge / G0
        se_share = _propagate(lambda p: split_modulus(m, p, poly.key, T)[1] / m.small_strain_modulus(**p),
                              res.params, cov) if m.modulus_split(values).separable else None
        lo, hi = _iv(share, se_share)
        Q["ent_share"] = Quantity("ent_share", "entanglement share G_e/G₀", share, "1", lo, hi, basis=how,
                                  display_unit="%", display_scale=100.0)
    # service temperature
    k = Ts / T
    Q["G0_service"] = Quantity(
        "G0_service", "G₀ at service temperature", G0 * k, "Pa",
        None if Q["G0"].low is None else Q["G0"].low * k, None if Q["G0"].high is None else Q["G0"].high * k,
        basis=f"{Ts - 273.15:.1f} °C, G ∝ T at fixed network", display_unit="MPa", display_scale=1e-6,
        note=TEMPERATURE_NOTE)
    # trade moduli: measured (interpolated) and predicted
    uni = [c for c in compound.curves if c.mode is Mode.UNIAXIAL]
    for key, lam in TRADE_MODULI.items():
        meas, n = measured_at(uni, Mode.UNIAXIAL, lam)
        strain = f"{(lam - 1) * 100:.0f} % elongation (λ = {lam:g})"
        if uni:
            lo = hi = None
            basis = f"interpolated at {strain}, {n} curve(s)"
            if n >= 2:  # specimen scatter: t-interval of the mean over the specimens (n − 1 degrees of freedom)
                vals = specimen_values(uni, Mode.UNIAXIAL, lam)
                from scipy import stats

                half = float(stats.t.ppf(0.975, n - 1)) * float(np.std(vals, ddof=1)) / math.sqrt(n)
                lo, hi = meas - half, meas + half
                basis += "; interval: specimen scatter (t, n − 1)"
            Q[f"{key}_measured"] = Quantity(
                f"{key}_measured", f"{key} measured", meas, "Pa", lo, hi, basis=basis,
                display_unit="MPa", display_scale=1e-6,
                note="" if meas is not None else "the uniaxial data do not reach this elongation")
        if m.supports("uniaxial"):
            pred = float(m.nominal_stress("uniaxial", np.array([lam]), values)[0])
            se = None
            if np.isfinite(pred):
                se = _propagate(lambda p, lam=lam: float(m.nominal_stress("uniaxial", np.array([lam]), p)[0]),
                                res.params, cov)
                if se is not None and not math.isfinite(se):
                    se = None
            Q[f"{key}_predicted"] = Quantity(
                f"{key}_predicted", f"{key} predicted", pred if np.isfinite(pred) else None, "Pa",
                *_iv(pred if np.isfinite(pred) else None, se), basis=f"{m.title} fit at {strain}",
                display_unit="MPa", display_scale=1e-6,
                note="" if np.isfinite(pred) else "past the model's locking stretch")
    # swelling (Flory–Rehner via network_models.swelling)
    sw_vals, ends = [], []
    for s in compound.swelling:
        try:
            est = s.estimate(compound.polymer, f, compound.filler_fraction)
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
            "nu_chi_minus_0.05": lo_b, "nu_chi_plus_0.05": hi_b, "f": f, "notes": list(est.notes)})
    if sw_vals:
        ends.extend(sw_vals)
        Q["nu_swelling"] = Quantity(
            "nu_swelling", "strand density ν from swelling", float(np.mean(sw_vals)), "mol/m³", min(ends),
            max(ends), basis=f"Flory–Rehner, affine, {len(sw_vals)} test(s); range for χ ± 0.05 (not statistical)",
            note="restricted swelling makes filled stocks read higher than mechanical values unless corrected")
    # the crosslink-density assumption table, from the project's crosslinks module when present
    return res


def _crosslink_table(fr, compound, T):
    """The crosslink-density assumption table of :mod:`network_models.crosslinks` for this fit (None when
    it cannot be made, e.g. for a stand-in fit result without covariance)."""
    from .crosslinks import from_fit

    try:
        return from_fit(fr, polymer=compound.polymer, T=T, f=compound.f, filler_fraction=compound.filler_fraction,
                        Mn=compound.metadata.get("Mn_kg_mol"))
    except (ValueError, KeyError, AttributeError, TypeError):
        return None


def _t95(fr) -> float:
    """Two-sided 95 % quantile: Student t with the fit's n − k degrees of freedom (as the fitter and the
    crosslink table use), the normal value when the fit does not say."""
    n, k = getattr(fr, "n", None), getattr(fr, "k", None)
    if isinstance(n, int) and isinstance(k, int):
        from scipy import stats

        return float(stats.t.ppf(0.975, max(n - k, 1)))
    return Z95


def compare(compounds: list[Compound], model="eight-chain", baseline: str | None = None,
            service_temperature: float | None = None, fitter=None) -> Comparison:
    """Fit ``model`` to every compound and compare.  ``service_temperature`` in K (None: the test
    temperature).  ``baseline`` defaults to the compound marked baseline, else the first."""
    if not compounds:
        raise ValueError("no compounds to compare; give at least one")
    names = [c.name for c in compounds]
    if len(set(names)) != len(names):
        raise ValueError(f"compound names must be unique; got {names}")
    m = get_model(model) if isinstance(model, str) else model
    if service_temperature is not None and not (150.0 < float(service_temperature) < 700.0):
        raise ValueError(f"service temperature {float(service_temperature) - 273.15:.1f} °C is outside "
                         "−123…427 °C; give it in °C (e.g. 80C) or K (e.g. 353.15K)")
    if baseline is None:
        marked = [c.name for c in compounds if c.baseline]
        baseline = marked[0] if marked else names[0]
    elif baseline not in names:
        raise ValueError(f"baseline {baseline!r} is not one of the compounds ({', '.join(names)})")
    results = [analyse(c, m, service_temperature, fitter) for c in compounds]
    Ts = service_temperature if service_temperature is not None else (
        results[0].test_temperature if results else DEFAULT_TEST_TEMPERATURE)
    notes = [TEMPERATURE_NOTE,
             f"Strand density ν and junction density μ_j = 2ν/f: basis '{BASIS}' unless stated beside the number.",
             "Intervals are 95 % (fit standard errors from the Jacobian, Student t, propagated by the delta "
             "method); they cover the fit only, not specimen-to-specimen scatter. Swelling ranges are χ ± 0.05, "
             "not statistical."]
    if any(c.metadata.get("filler_phr") not in (None, 0, "0", "") for c in compounds):
        notes.append("Filled compounds: ν is given with the filler reinforcement taken out by the Guth–Gold factor "
                     "where the filler volume fraction is known; Guth–Gold holds for well-dispersed, weakly "
                     "reinforcing filler at modest φ, so for carbon black treat ν as an estimate (see the crosslink "
                     "table for the other assumptions).")
    return Comparison(model=m.name, results=results, baseline=baseline, service_temperature=float(Ts), notes=notes)


__all__ = [
    "BASIS", "TEMPERATURE_NOTE", "TRADE_MODULI", "Comparison", "CompoundResult", "ParamRow", "Quantity",
    "analyse", "at_temperature", "compare", "flory_rehner_strand_density", "measured_at", "split_modulus",
    "strand_density_from_modulus",
]

