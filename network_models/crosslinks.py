"""Modulus → crosslink density, as a table of stated assumptions (never one bare number).

    >>> from network_models.crosslinks import from_modulus, from_fit
    >>> t = from_modulus(0.55e6, "G", polymer="NR", T=296.15)     # or kind "E", "M100", "M300", "2C1"
    >>> for row in t.rows: print(row.label, row.nu, row.junction_density, row.Mc)
    >>> t = from_fit(fit_result, polymer="NR")                      # intervals from the fit

Relations (physics.md §3–4; R from scipy.constants):

* affine network: G = νRT;   phantom network: G = (1 − 2/f)νRT;   junction density μ_j = 2ν/f;
* M_c = ρ/ν;   Kuhn segments per strand N = M_c/M_K (M_K from the polymer table);
* E = 3G (incompressible, small strain);
* M100 / M300 (nominal stress at 100 % / 300 % elongation, i.e. λ = 2 / λ = 4) are inverted with the
  neo-Hookean (affine) relation P = G(λ − λ⁻²): G = M100/1.75, G = M300/3.9375.  These are secant values:
  real compounds are not neo-Hookean at 300 %, so treat them as rough;
* entanglement share removed: G_c = G − G_e with G_e from the fit (tube G_e, Mooney 2C₂) or else the
  polymer's plateau modulus G_N⁰ scaled with absolute temperature;
* filler removed: G_gum = G/(1 + 2.5φ + 14.1φ²) (Guth & Gold 1938 [memory]);
* dangling ends (Flory [memory]): the modulus measures ν_eff = ν(1 − 2M_c/M_n); with M_c = ρ/ν this gives
  the chemical strand density ν = ν_eff + 2ρ/M_n.

Each row says what it assumes.  Intervals: the modulus interval of the input is mapped through each
(monotone) relation; for a fit the small-strain modulus interval comes from the fit covariance (delta
method, Student t).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import stats
from scipy.constants import R

from .network import get_polymer, guth_gold

__all__ = ["KINDS", "CrosslinkRow", "CrosslinkTable", "crosslink_table", "from_fit", "from_modulus",
           "shear_modulus_from"]

#: stretch at which the trade "moduli" are read
_TRADE_STRETCH = {"M100": 2.0, "M300": 4.0}
KINDS = ("G", "E", "M100", "M300", "2C1")


def shear_modulus_from(value: float, kind: str = "G") -> float:
    """Small-strain shear modulus G (Pa) from G, E (E = 3G), M100 or M300 (neo-Hookean inversion) or 2C1."""
    k = str(kind).strip().upper()
    if k not in KINDS:
        raise ValueError(f"unknown modulus kind {kind!r}; use one of {', '.join(KINDS)}")
    if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
        raise ValueError(f"the modulus must be a positive number; got {value!r}")
    if k == "E":
        return value / 3.0
    if k in _TRADE_STRETCH:
        lam = _TRADE_STRETCH[k]
        return value / (lam - lam**-2)
    return float(value)


@dataclass
class CrosslinkRow:
    key: str
    label: str
    assumes: str
    modulus: float | None  # Pa: the modulus attributed to crosslink strands in this row
    nu: float | None  # strand density, mol/m³
    nu_ci: tuple[float, float] | None
    junction_density: float | None  # μ_j = 2ν/f, mol/m³
    junction_ci: tuple[float, float] | None
    Mc: float | None  # kg/mol
    Mc_ci: tuple[float, float] | None
    N: float | None  # Kuhn segments per strand, M_c/M_K (or fitted, see note)
    N_ci: tuple[float, float] | None
    note: str = ""

    def to_dict(self) -> dict:
        def c(x):
            return None if x is None or not math.isfinite(x) else float(x)

        def ci(t):
            return None if t is None else [c(t[0]), c(t[1])]

        return {"key": self.key, "label": self.label, "assumes": self.assumes,
                "modulus_Pa": c(self.modulus), "strand_density": c(self.nu), "strand_density_ci95": ci(self.nu_ci),
                "junction_density": c(self.junction_density), "junction_density_ci95": ci(self.junction_ci),
                "Mc": c(self.Mc), "Mc_ci95": ci(self.Mc_ci), "N": c(self.N), "N_ci95": ci(self.N_ci),
                "note": self.note}


@dataclass
class CrosslinkTable:
    rows: list[CrosslinkRow]
    polymer: str
    T: float
    f: float
    G: float
    G_ci: tuple[float, float] | None
    inputs: dict
    notes: list[str] = field(default_factory=list)

    def __iter__(self):
        return iter(self.rows)

    def __len__(self):
        return len(self.rows)

    def row(self, key: str) -> CrosslinkRow:
        for r in self.rows:
            if r.key == key:
                return r
        raise KeyError(f"no row {key!r}; rows: {[r.key for r in self.rows]}")

    def to_dict(self) -> dict:
        return {
            "polymer": self.polymer, "temperature_K": self.T, "functionality": self.f,
            "shear_modulus_Pa": self.G, "shear_modulus_ci95": None if self.G_ci is None else list(self.G_ci),
            "inputs": self.inputs,
            "units": {"strand_density": "mol/m³", "junction_density": "mol/m³", "Mc": "kg/mol", "N": "1",
                      "modulus_Pa": "Pa"},
            "rows": [r.to_dict() for r in self.rows], "notes": list(self.notes),
        }


# ------------------------------------------------------------------------------------------------
def _map_ci(ci, fn):
    if ci is None:
        return None
    a, b = ci
    if a is None or b is None:
        return None
    va, vb = fn(a), fn(b)
    if va is None or vb is None:
        return None
    return (min(va, vb), max(va, vb))


def _row(key, label, assumes, Gx, Gx_ci, factor, T, f, rho, MK, note="", shift=0.0):
    """Row for crosslink modulus Gx = factor·νRT (+ ν shift for dangling ends)."""

    def nu_of(g):
        if g is None or not (g > 0):
            return None
        return g / (factor * R * T) + shift

    nu = nu_of(Gx)
    if nu is None:
        return CrosslinkRow(key, label, assumes, Gx, None, None, None, None, None, None, None, None,
                            note or "no positive crosslink modulus is left under this assumption")
    nu_ci = _map_ci(Gx_ci, lambda g: nu_of(g) if g > 0 else None)
    if Gx_ci is not None and nu_ci is None:
        note = (note + "; " if note else "") + "the lower end of the interval leaves no positive crosslink modulus"
    Mc = rho / nu
    return CrosslinkRow(
        key, label, assumes, Gx, nu, nu_ci, 2.0 * nu / f, _map_ci(nu_ci, lambda x: 2.0 * x / f),
        Mc, _map_ci(nu_ci, lambda x: rho / x), Mc / MK, _map_ci(nu_ci, lambda x: rho / x / MK), note,
    )


def _table(G, G_ci, *, polymer, T, f, filler_fraction, Mn, Ge=None, Ge_ci=None, Ge_source=None,
           Gc=None, Gc_ci=None, extra_rows=(), inputs=None, notes=None):
    poly = get_polymer(polymer)
    if not (T > 0 and math.isfinite(T)):
        raise ValueError(f"temperature must be above absolute zero; got {T!r} K")
    if not (f >= 3):
        raise ValueError(f"junction functionality f must be at least 3; got {f!r}")
    X = guth_gold(filler_fraction)
    rho, MK = poly.density, poly.kuhn_molar_mass
    ph = 1.0 - 2.0 / f
    notes = list(notes or [])
    rows = [
        _row("affine", "affine, all of G from crosslinks", "G = νRT; entanglements counted as crosslinks",
             G, G_ci, 1.0, T, f, rho, MK),
        _row("phantom", f"phantom (f = {f:g}), all of G", f"G = (1 − 2/f)νRT, f = {f:g}; entanglements counted",
             G, G_ci, ph, T, f, rho, MK),
    ]
    # entanglement share
    if Gc is None:
        if Ge is None:
            Ge = poly.plateau_modulus * T / poly.plateau_temperature * X
            Ge_source = (f"plateau modulus of {poly.key} G_N⁰ = {poly.plateau_modulus / 1e6:.3g} MPa scaled to T"
                         + (" and amplified by Guth–Gold" if X != 1 else "") + f" [{poly.status}]")
        Gc = G - Ge
        Gc_ci = None if G_ci is None else (G_ci[0] - Ge, G_ci[1] - Ge)
    ge_txt = f"G_e = {Ge / 1e6:.3g} MPa from {Ge_source}" if Ge is not None else f"crosslink part from {Ge_source}"
    rows.append(_row("affine-no-entanglement", "affine, entanglement share removed",
                     f"G − G_e = νRT; {ge_txt}", Gc, Gc_ci, 1.0, T, f, rho, MK))
    rows.append(_row("phantom-no-entanglement", f"phantom (f = {f:g}), entanglement share removed",
                     f"G − G_e = (1 − 2/f)νRT; {ge_txt}", Gc, Gc_ci, ph, T, f, rho, MK))
    if filler_fraction > 0:
        rows.append(_row("affine-no-filler", f"affine, filler removed (φ = {filler_fraction:g})",
                         f"G/(1 + 2.5φ + 14.1φ²) = νRT (Guth–Gold [memory], factor {X:.4g}); entanglements counted",
                         G / X, _map_ci(G_ci, lambda g: g / X), 1.0, T, f, rho, MK))
        rows.append(_row("affine-no-entanglement-no-filler",
                         f"affine, entanglement share and filler removed (φ = {filler_fraction:g})",
                         f"(G − G_e)/(1 + 2.5φ + 14.1φ²) = νRT (Guth–Gold [memory], factor {X:.4g}); {ge_txt}",
                         Gc / X, _map_ci(Gc_ci, lambda g: g / X), 1.0, T, f, rho, MK))
    if Mn is not None:
        if not (Mn > 0):
            raise ValueError(f"primary-chain M_n must be positive; got {Mn!r}")
        rows.append(_row("affine-dangling-ends", f"affine, dangling ends out (M_n {Mn:.4g} kg/mol)",
                         "νRT(1 − 2M_c/M_n) = G, so ν = G/RT + 2ρ/M_n (Flory [memory]); entanglements counted",
                         G, G_ci, 1.0, T, f, rho, MK, shift=2.0 * rho / Mn))
    rows.extend(extra_rows)
    notes.append(f"strand density ν counts elastically active strands; junction (crosslink) density μ_j = 2ν/f "
                 f"(f = {f:g}); N = M_c/M_K with M_K = {MK * 1000:.4g} g/mol for {poly.key} [{poly.status}]")
    notes.append(f"evaluated at T = {T - 273.15:.1f} °C; R from scipy.constants (CODATA)")
    return CrosslinkTable(rows, poly.key, float(T), float(f), float(G), G_ci, dict(inputs or {}), notes)


def from_modulus(value: float, kind: str = "G", *, polymer: str = "NR", T: float = 296.15, f: float = 4.0,
                 filler_fraction: float = 0.0, Mn: float | None = None, ci95=None, c2: float | None = None,
                 ) -> CrosslinkTable:
    """Crosslink table from one number a compounder has (Pa): G, E, M100, M300, or Mooney 2C1 (with the
    Mooney slope 2C2 as ``c2``, which is then taken as the entanglement share).  ``ci95`` (lo, hi) of the
    same kind gives intervals."""
    k = str(kind).strip().upper()
    G = shear_modulus_from(value, k)
    G_ci = None
    if ci95 is not None:
        G_ci = (shear_modulus_from(ci95[0], k), shear_modulus_from(ci95[1], k))
    notes = []
    if k in _TRADE_STRETCH:
        notes.append(f"{k} is a point on the curve (λ = {_TRADE_STRETCH[k]:g}), inverted with the neo-Hookean "
                     "relation P = G(λ − λ⁻²): a secant estimate, rough for real compounds")
    if k == "E":
        notes.append("E = 3G (incompressible, small strain)")
    Ge = Ge_src = Gc = Gc_ci = None
    if k == "2C1":
        if c2 is not None:
            if not (c2 >= 0 and math.isfinite(c2)):
                raise ValueError(f"the Mooney 2C2 must be zero or positive here; got {c2!r}")
            Gc, Gc_ci = G, G_ci
            Ge, Ge_src = c2, "the Mooney slope 2C₂"
            G = G + c2  # total small-strain modulus 2(C1 + C2)
            G_ci = None if G_ci is None else (G_ci[0] + c2, G_ci[1] + c2)
            notes.append("G = 2C₁ + 2C₂ (upper end of the Mooney bracket); 2C₂ taken as the entanglement share")
        else:
            notes.append("2C₁ used as G (lower end of the Mooney bracket, without the 2C₂ share)")
    return _table(G, G_ci, polymer=polymer, T=T, f=f, filler_fraction=filler_fraction, Mn=Mn, Ge=Ge,
                  Ge_source=Ge_src, Gc=Gc, Gc_ci=Gc_ci, inputs={"value_Pa": value, "kind": k, "ci95": ci95},
                  notes=notes)


def _derived(result, fn):
    """Value and 95 % interval of fn(values) from the fit covariance (delta method, Student t)."""
    vals = result.values
    v0 = float(fn(vals))
    free = list(result.free)
    cov = np.asarray(result.covariance, float)
    if not free or not np.all(np.isfinite(cov)):
        return v0, None
    g = np.empty(len(free))
    for i, name in enumerate(free):
        h = 1e-6 * max(abs(vals[name]), 1e-12)
        up = dict(vals)
        dn = dict(vals)
        up[name] += h
        dn[name] -= h
        try:
            g[i] = (fn(up) - fn(dn)) / (2 * h)
        except ValueError:  # one side steps outside a bound: one-sided difference
            g[i] = (fn(up) - v0) / h
    var = float(g @ cov @ g)
    if not (var >= 0 and math.isfinite(var)):
        return v0, None
    t = float(stats.t.ppf(0.975, max(result.n - result.k, 1)))
    se = math.sqrt(var)
    return v0, (v0 - t * se, v0 + t * se)


def from_fit(result, *, polymer: str = "NR", T: float | None = None, f: float = 4.0,
             filler_fraction: float = 0.0, Mn: float | None = None) -> CrosslinkTable:
    """Crosslink table from a :class:`~network_models.fitting.FitResult`: the small-strain modulus of the
    fitted model (with its interval), the entanglement share the model separates (tube G_e, Mooney 2C₂)
    and, for Langevin-chain models, the fitted chain modulus μ = νRT and N."""
    m = result.model_obj
    notes = [f"from the {result.title} fit ({result.n} points)"]
    if T is None:
        if result.temperature is not None:
            T = result.temperature
        else:
            T = 296.15
            notes.append("the curves state no temperature: 23 °C assumed")
    G, G_ci = _derived(result, lambda p: m.small_strain_modulus(**p))
    P = result.params
    Ge = Gc = Gc_ci = src = None
    poly = get_polymer(polymer)
    extra = []
    if "Gc" in P and "Ge" in P:
        Gc, Gc_ci = _derived(result, lambda p: m.small_strain_modulus(**p) - p["Ge"])
        Ge, src = P["Ge"].value, f"the fitted tube modulus G_e ({result.title})"
    elif m.name == "mooney-rivlin":
        Gc, Gc_ci = 2 * P["C1"].value, _map_ci(P["C1"].ci95, lambda x: 2 * x)
        Ge, src = 2 * P["C2"].value, "the fitted Mooney slope 2C₂"
        if Ge < 0:
            Ge = Gc = Gc_ci = src = None
            notes.append("the fitted 2C₂ is negative, so it cannot be an entanglement share: the "
                         "entanglement-removed rows use the polymer's plateau modulus instead")
    if "mu" in P and "N" in P:
        mu = P["mu"]
        rho, MK = poly.density, poly.kuhn_molar_mass
        row = _row("model-chain-modulus", f"{result.title}: chain modulus μ = νRT",
                   "μ = nkT = νRT (affine chain density); N as fitted", mu.value,
                   mu.ci95 if mu.ci95[0] is not None else None, 1.0, T, f, rho, MK,
                   note="N here is the fitted Kuhn number; M_c/M_K would give "
                   f"{rho / (mu.value / (R * T)) / MK:.3g}" if mu.value > 0 else "")
        if row.nu is not None:
            row.N, row.N_ci = P["N"].value, (P["N"].ci95 if P["N"].ci95[0] is not None else None)
        extra.append(row)
    elif m.name == "constrained-junction":
        gp = P["G_ph"]
        fm = P["f"].value
        extra.append(_row("model-phantom-part", f"{result.title}: phantom part G_ph = (1 − 2/f)νRT",
                          f"G_ph = (1 − 2/f)νRT with the model's f = {fm:g}", gp.value,
                          gp.ci95 if gp.ci95[0] is not None else None, 1.0 - 2.0 / fm, T, fm,
                          poly.density, poly.kuhn_molar_mass))
    elif m.name == "gent":
        notes.append(f"Gent J_m = {P['Jm'].value:.3g} corresponds to an eight-chain N ≈ J_m/3 + 1 = "
                     f"{P['Jm'].value / 3 + 1:.3g} (matching the locks)")
    for w in result.warnings:
        if "poorly determined" in w or "bound" in w:
            notes.append("fit caution: " + w)
    return _table(G, G_ci, polymer=polymer, T=T, f=f, filler_fraction=filler_fraction, Mn=Mn, Ge=Ge,
                  Ge_source=src, Gc=Gc, Gc_ci=Gc_ci, extra_rows=extra,
                  inputs={"fit_model": result.model, "small_strain_modulus_Pa": G}, notes=notes)


def crosslink_table(source, kind: str = "G", **kw) -> CrosslinkTable:
    """One entry point: ``source`` is a FitResult (→ :func:`from_fit`) or a modulus in Pa of ``kind``
    (→ :func:`from_modulus`).  The table iterates over its rows; each row has ``to_dict()``."""
    if hasattr(source, "params") and hasattr(source, "model"):
        return from_fit(source, **kw)
    return from_modulus(source, kind, **kw)
