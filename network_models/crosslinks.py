"""Modulus → crosslink density, as a table of stated assumptions (never one bare number).

    >>> from network_models.crosslinks import from_modulus, from_fit
    >>> t = from_modulus(0.55e6, "G", polymer="NR", T=296.15)     # or kind "E", "M100", "M300", "2C1"
    >>> for row in t.rows: print(row.label, row.nu, row.junction_density, row.Mc)
    >>> t = from_fit(fit_result, polymer="NR")                      # intervals from the fit

Relations (docs/methods.md §models and §network; R from scipy.constants):

* affine network: G = νRT;   phantom network: G = (1 − 2/f)νRT;   junction density μ_j = 2ν/f;
* M_c = ρ/ν;   Kuhn segments per strand N = M_c/M_K (M_K from the polymer table);
* E = 3G (incompressible, small strain);
* M100 / M300 (nominal stress at 100 % / 300 % elongation, i.e. λ = 2 / λ = 4) are inverted with the
  neo-Hookean (affine) relation P = G(λ − λ⁻²): G = M100/1.75, G = M300/3.9375.  These are secant values:
  real compounds are not neo-Hookean at 300 %, so treat them as rough;
* entanglement share removed: G_c = G − G_e with G_e from the fit when the model separates it (tube G_e,
  Mooney 2C₂ ≥ 0) or else the polymer's plateau modulus G_N⁰ scaled with absolute temperature — an
  **upper bound** on the entanglement part (only trapped entanglements count), so those rows are lower
  bounds on ν; with a known sol fraction w_s the trapped part G_N⁰·T_e (Langley; Dossin & Graessley, see
  :mod:`network_models.entanglement`) gives the "trapped entanglements" rows;
* filler removed: G_gum = G/(1 + 2.5φ + 14.1φ²) (Guth & Gold 1938 [memory]); a fitted Kuhn number of a
  filled compound is the amplified one, the gum's is N = 1 + X(N_fit − 1) (amplified first invariant);
* ν is always the elastically active strand density, except in the dangling-end row, which gives the
  **chemical (total)** strand density ν_chem = ν + 2ρ/M_n (Flory [memory]) and says so.

Each row says what it assumes.  Intervals: the modulus interval of the input is mapped through each
(monotone) relation; for a fit the small-strain modulus interval comes from the fit covariance (delta
method, Student t).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from .constants import LAB_TEMPERATURE, R, celsius
from .entanglement import UPPER_BOUND_NOTE, entanglement_share, trapping_factor
from .fitting.uncertainty import derived
from .materials import temperature_notices
from .network import get_polymer, guth_gold

if TYPE_CHECKING:
    import pandas as pd

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


#: the headline bases, by tier: (gum row key, filled row key, label) of the crosslink table
BASIS_TIERS = (
    ("affine-no-entanglement", "affine-no-entanglement-no-filler", "affine network, entanglement part removed"),
    ("affine", "affine-no-filler", "affine network, entanglements counted as crosslinks (upper bound)"),
)


def basis_label(tier: int, filled: bool, filler_fraction: float = 0.0) -> str:
    label = BASIS_TIERS[tier][2]
    if filled:
        label += f", filler removed (Guth–Gold, φ = {filler_fraction:g})"
    return label


def row_key(tier: int, filled: bool) -> str:
    return BASIS_TIERS[tier][1 if filled else 0]


@dataclass(kw_only=True)
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
    nu_kind: str = "elastically active"  # or "chemical (total)": which strand density ``nu`` is
    #: "upper" / "lower" when the row is a bound on the crosslink strand density (what it counts or removes in
    #: full: entanglements or filler counted as crosslinks → upper; the full plateau modulus removed → lower);
    #: "" for an estimate under its stated assumption (issue #20)
    bound: str = ""

    def to_dict(self) -> dict:
        def c(x):
            return None if x is None or not math.isfinite(x) else float(x)

        def ci(t):
            return None if t is None else [c(t[0]), c(t[1])]

        return {"key": self.key, "label": self.label, "assumes": self.assumes,
                "modulus_Pa": c(self.modulus), "strand_density": c(self.nu), "strand_density_ci95": ci(self.nu_ci),
                "junction_density": c(self.junction_density), "junction_density_ci95": ci(self.junction_ci),
                "Mc": c(self.Mc), "Mc_ci95": ci(self.Mc_ci), "N": c(self.N), "N_ci95": ci(self.N_ci),
                "note": self.note, "strand_density_kind": self.nu_kind, "bound": self.bound or None}


@dataclass(kw_only=True)
class CrosslinkTable:
    rows: list[CrosslinkRow]
    polymer: str
    T: float
    f: float
    G: float
    G_ci: tuple[float, float] | None
    inputs: dict
    notes: list[str] = field(default_factory=list)
    #: G_e/G₀ of the entanglement-removed rows; None when over 100 % or undefined (see the text and notes)
    entanglement_share: float | None = None
    entanglement_share_text: str = "—"

    def to_frame(self) -> pd.DataFrame:
        """One row per assumption (ν, its interval, μ_j, M_c, N), as a pandas DataFrame (SI units)."""
        from .frames import crosslink_frame

        return crosslink_frame(self)

    def __repr__(self):
        from .frames import table_repr

        return table_repr(self)

    def _repr_html_(self):
        from .frames import crosslink_frame, html_table, table_repr

        return html_table(crosslink_frame(self), table_repr(self)[1:-1])

    def __iter__(self):
        return iter(self.rows)

    def __len__(self):
        return len(self.rows)

    def row(self, key: str) -> CrosslinkRow:
        for r in self.rows:
            if r.key == key:
                return r
        raise KeyError(f"no row {key!r}; rows: {[r.key for r in self.rows]}")

    @property
    def filler_fraction(self) -> float:
        return float(self.inputs.get("filler_fraction", 0.0) or 0.0)

    def headline(self) -> dict:
        """The one strand density a designer quotes from this table, by the comparison's headline rule
        (:mod:`network_models.compare.specimens`): the affine row with the entanglement part removed (and the
        filler removed when a filler fraction is given); when no positive crosslink modulus is left, the affine
        row with entanglements counted, and the basis says why.  ``design --model affine`` counts ν on the
        first basis by default.  ``{"value": mol/m³ or None, "row": key, "basis": label, "tier": 0|1}``."""
        phi = self.filler_fraction
        for tier in (0, 1):
            key = row_key(tier, phi > 0)
            row = next((r for r in self.rows if r.key == key), None)
            if row is not None and row.nu is not None and row.nu > 0:
                basis = basis_label(tier, phi > 0, phi)
                if tier == 1:
                    basis += " — the entanglement estimate is as large as the modulus, so no crosslink part is left"
                return {"value": row.nu, "ci95": None if row.nu_ci is None else list(row.nu_ci), "row": key,
                        "basis": basis, "tier": tier, "unit": "mol/m³"}
        return {"value": None, "ci95": None, "row": None, "basis": "no positive strand density on any basis",
                "tier": None, "unit": "mol/m³"}

    def to_dict(self) -> dict:
        return {
            "headline": self.headline(),
            "polymer": self.polymer, "temperature_K": self.T, "functionality": self.f,
            "shear_modulus_Pa": self.G, "shear_modulus_ci95": None if self.G_ci is None else list(self.G_ci),
            "inputs": self.inputs,
            "units": {"strand_density": "mol/m³", "junction_density": "mol/m³", "Mc": "kg/mol", "N": "1",
                      "modulus_Pa": "Pa"},
            "rows": [r.to_dict() for r in self.rows], "notes": [str(n) for n in self.notes],
            "entanglement_share": self.entanglement_share, "entanglement_share_text": self.entanglement_share_text,
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


def _row(key, label, assumes, Gx, Gx_ci, factor, T, f, rho, MK, note="", shift=0.0, nu_kind="elastically active"):
    """Row for crosslink modulus Gx = factor·νRT (+ ν shift for dangling ends)."""

    def nu_of(g):
        if g is None or not (g > 0):
            return None
        return g / (factor * R * T) + shift

    nu = nu_of(Gx)
    if nu is None:
        gone = "no positive crosslink modulus is left under this assumption"
        return CrosslinkRow(key=key, label=label, assumes=assumes, modulus=Gx, nu=None, nu_ci=None,
                            junction_density=None, junction_ci=None, Mc=None, Mc_ci=None, N=None, N_ci=None,
                            note=f"{gone}; {note}" if note else gone, nu_kind=nu_kind)
    nu_ci = _map_ci(Gx_ci, lambda g: nu_of(g) if g > 0 else None)
    if Gx_ci is not None and nu_ci is None:
        note = (note + "; " if note else "") + "the lower end of the interval leaves no positive crosslink modulus"
    Mc = rho / nu
    return CrosslinkRow(
        key=key, label=label, assumes=assumes, modulus=Gx, nu=nu, nu_ci=nu_ci, junction_density=2.0 * nu / f,
        junction_ci=_map_ci(nu_ci, lambda x: 2.0 * x / f),
        Mc=Mc, Mc_ci=_map_ci(nu_ci, lambda x: rho / x), N=Mc / MK, N_ci=_map_ci(nu_ci, lambda x: rho / x / MK),
        note=note, nu_kind=nu_kind,
    )


def _entanglement_rows(G, G_ci, Gc, Gc_ci, Ge, ge_txt, upper, T, f, rho, MK):
    ph = 1.0 - 2.0 / f
    label = "full plateau modulus removed (upper bound on entanglements)" if upper else "entanglement share removed"
    assumes = f"G − G_e = νRT; {ge_txt}" + (f"; {UPPER_BOUND_NOTE}" if upper else "")
    note = "lower bound on ν: the full G_N⁰ over-counts untrapped entanglements" if upper and Gc > 0 else ""
    return [
        _row("affine-no-entanglement", f"affine, {label}", assumes, Gc, Gc_ci, 1.0, T, f, rho, MK, note=note),
        _row("phantom-no-entanglement", f"phantom (f = {f:g}), {label}",
             assumes.replace("G − G_e = νRT", "G − G_e = (1 − 2/f)νRT", 1), Gc, Gc_ci, ph, T, f, rho, MK, note=note),
    ]


def _trapped_rows(G, G_ci, Ge_full, sol_fraction, T, f, rho, MK, X=1.0):
    Te = trapping_factor(sol_fraction)
    Ge_t = Ge_full * Te
    txt = (f"G_e,trapped = G_N⁰·T_e = {Ge_t / 1e6:.3g} MPa, T_e = (1 − √w_s)⁴ = {Te:.3g} at sol fraction "
           f"w_s = {sol_fraction:g} (Langley 1968; Dossin & Graessley 1979 [from memory])")
    ci = None if G_ci is None else (G_ci[0] - Ge_t, G_ci[1] - Ge_t)
    return [
        _row("affine-trapped-entanglements", "affine, trapped entanglements removed", f"G − G_e,trapped = νRT; {txt}",
             G - Ge_t, ci, 1.0, T, f, rho, MK),
        _row("phantom-trapped-entanglements", f"phantom (f = {f:g}), trapped entanglements removed",
             f"G − G_e,trapped = (1 − 2/f)νRT; {txt}", G - Ge_t, ci, 1.0 - 2.0 / f, T, f, rho, MK),
    ] + ([] if X == 1.0 else [
        # both removed (issue #20): (G/X − G_N⁰·T_e)/RT; Ge_full carries the Guth–Gold factor, so G_N⁰·T_e = Ge_t/X
        _row("affine-trapped-entanglements-no-filler", "affine, trapped entanglements and filler removed",
             f"G/X − G_N⁰·T_e = νRT, X = 1 + 2.5φ + 14.1φ² = {X:.4g} (Guth–Gold [memory]); {txt}",
             G / X - Ge_t / X, _map_ci(ci, lambda g: g / X), 1.0, T, f, rho, MK),
    ])


def _table(G, G_ci, *, polymer, T, f, filler_fraction, Mn, Ge=None, Ge_source=None,
           Gc=None, Gc_ci=None, extra_rows=(), inputs=None, notes=None, sol_fraction=None):
    poly = get_polymer(polymer)
    if not (T > 0 and math.isfinite(T)):
        raise ValueError(f"temperature must be above absolute zero; got {T!r} K")
    if not (f >= 3):
        raise ValueError(f"junction functionality f must be at least 3; got {f!r}")
    X = guth_gold(filler_fraction)
    rho, MK = poly.density, poly.kuhn_molar_mass
    ph = 1.0 - 2.0 / f
    notes = list(notes or []) + temperature_notices(poly, T, "crosslink table")
    rows = [
        _row("affine", "affine, all of G from crosslinks", "G = νRT; entanglements counted as crosslinks",
             G, G_ci, 1.0, T, f, rho, MK),
        _row("phantom", f"phantom (f = {f:g}), all of G", f"G = (1 − 2/f)νRT, f = {f:g}; entanglements counted",
             G, G_ci, ph, T, f, rho, MK),
    ]
    # entanglement share: from the model when it separates it, else the full plateau modulus (an upper bound)
    Ge_plateau = poly.plateau_modulus * T / poly.plateau_temperature * X
    upper = Gc is None and Ge is None
    if Gc is None:
        if Ge is None:
            Ge = Ge_plateau
            Ge_source = (f"plateau modulus of {poly.key} G_N⁰ = {poly.plateau_modulus / 1e6:.3g} MPa scaled to T"
                         + (" and amplified by Guth–Gold" if X != 1 else "") + f" [{poly.status}]")
        Gc = G - Ge
        Gc_ci = None if G_ci is None else (G_ci[0] - Ge, G_ci[1] - Ge)
    ge_txt = f"G_e = {Ge / 1e6:.3g} MPa from {Ge_source}" if Ge is not None else f"crosslink part from {Ge_source}"
    rows.extend(_entanglement_rows(G, G_ci, Gc, Gc_ci, Ge, ge_txt, upper, T, f, rho, MK))
    share, share_text, share_notes = entanglement_share(Ge, G, "crosslink table")
    notes.extend(share_notes)
    if sol_fraction is not None:
        rows.extend(_trapped_rows(G, G_ci, Ge_plateau, sol_fraction, T, f, rho, MK, X))
    if filler_fraction > 0:
        rows.append(_row("affine-no-filler", f"affine, filler removed (φ = {filler_fraction:g})",
                         f"G/(1 + 2.5φ + 14.1φ²) = νRT (Guth–Gold [memory], factor {X:.4g}); entanglements counted",
                         G / X, _map_ci(G_ci, lambda g: g / X), 1.0, T, f, rho, MK))
        rows.append(_row("affine-no-entanglement-no-filler",
                         f"affine, entanglement share and filler removed (φ = {filler_fraction:g})",
                         f"(G − G_e)/(1 + 2.5φ + 14.1φ²) = νRT (Guth–Gold [memory], factor {X:.4g}); {ge_txt}"
                         + (f"; {UPPER_BOUND_NOTE}" if upper else ""),
                         Gc / X, _map_ci(Gc_ci, lambda g: g / X), 1.0, T, f, rho, MK))
    if Mn is not None:
        if not (Mn > 0):
            raise ValueError(f"primary-chain M_n must be positive; got {Mn!r}")
        rows.append(_row("affine-dangling-ends", f"chemical (total) strand density, dangling ends included "
                         f"(M_n {Mn:.4g} kg/mol)",
                         "G = νRT gives the elastically active ν; the chemical density adds the dangling ends: "
                         "ν_chem = G/RT + 2ρ/M_n (Flory [memory]); entanglements counted",
                         G, G_ci, 1.0, T, f, rho, MK, shift=2.0 * rho / Mn, nu_kind="chemical (total)",
                         note="this row's ν is the CHEMICAL (total) strand density, not the elastically active one "
                         "(that is the 'affine' row); its M_c and N are per chemical strand"))
    rows.extend(extra_rows)
    notes.extend(_mark_bounds(rows, upper, X))
    notes.append(f"strand density ν counts elastically active strands (except where a row says chemical); junction "
                 f"(crosslink) density μ_j = 2ν/f (f = {f:g}); N = M_c/M_K with M_K = {MK * 1000:.4g} g/mol for "
                 f"{poly.key} [{poly.status}]")
    notes.append(f"evaluated at T = {celsius(T):.1f} °C; R from scipy.constants (CODATA)")
    return CrosslinkTable(rows=rows, polymer=poly.key, T=float(T), f=float(f), G=float(G), G_ci=G_ci,
                          inputs=dict(inputs or {}), notes=notes,
                          entanglement_share=share, entanglement_share_text=share_text)


def _mark_bounds(rows, upper, X) -> list[str]:
    """Say which rows bound the crosslink strand density (``CrosslinkRow.bound``) and return the note."""
    up = {"affine", "phantom"} | ({"affine-trapped-entanglements", "phantom-trapped-entanglements"} if X != 1.0
                                  else set()) | {"affine-no-filler"}
    low = {"affine-no-entanglement", "phantom-no-entanglement", "affine-no-entanglement-no-filler"} if upper else set()
    for r in rows:
        if r.key in up:
            r.bound = "upper"
        elif r.key in low:
            r.bound = "lower"
    named_up = [r.key for r in rows if r.bound == "upper"]
    named_low = [r.key for r in rows if r.bound == "lower"]
    text = ("upper bounds on the crosslink strand density (entanglements" + (" or filler" if X != 1.0 else "")
            + " counted as crosslinks): " + ", ".join(named_up))
    if named_low:
        text += "; lower bounds (the full plateau modulus removed): " + ", ".join(named_low)
    return [text]


def from_modulus(value: float, kind: str = "G", *, polymer: str = "NR", T: float = 296.15, f: float = 4.0,
                 filler_fraction: float = 0.0, Mn: float | None = None, ci95=None, c2: float | None = None,
                 sol_fraction: float | None = None) -> CrosslinkTable:
    """Crosslink table from one number a compounder has (Pa): G, E, M100, M300, or Mooney 2C1 (with the
    Mooney slope 2C2 as ``c2``, which is then taken as the entanglement share).  ``ci95`` (lo, hi) of the
    same kind gives intervals.  ``sol_fraction`` (w_s, 0–1) adds the trapped-entanglement rows."""
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
                  Ge_source=Ge_src, Gc=Gc, Gc_ci=Gc_ci, inputs={"value_Pa": value, "kind": k, "ci95": ci95,
                                                          "filler_fraction": filler_fraction},
                  notes=notes, sol_fraction=sol_fraction)


def _ci(P, name):
    ci = P[name].ci95
    return None if ci is None or ci[0] is None or ci[1] is None else tuple(ci)


def _reading_rows(result, reading, *, T, f, poly, X):
    """Rows for one :class:`~network_models.models.base.ChainReading` of the fitted model."""
    P = result.params
    rho, MK = poly.density, poly.kuhn_molar_mass
    fr = reading.f if reading.f is not None else f
    mod = P[reading.modulus_param]
    row = _row(reading.key, reading.label, reading.assumes, mod.value, _ci(P, reading.modulus_param),
               reading.factor, T, fr, rho, MK, note=reading.note)
    if row.nu is not None and reading.N_param is not None:
        Nv = reading.N_of(P[reading.N_param].value)
        row.note = (row.note + "; " if row.note else "") + f"M_c/M_K would give N = {row.N:.3g}"
        row.N, row.N_ci = Nv, _map_ci(_ci(P, reading.N_param), reading.N_of)
    rows = [row]
    if X != 1.0 and row.nu is not None:  # filler removed: modulus /X, and the gum's N = 1 + X(N_fit − 1)
        gum = _row(reading.key + "-no-filler", reading.label + " — filler removed",
                   reading.assumes + f"; modulus/X and N_gum = 1 + X(N − 1) with X = {X:.4g} (Guth–Gold factor, "
                   "amplified first invariant)", mod.value / X, _map_ci(_ci(P, reading.modulus_param), lambda g: g / X),
                   reading.factor, T, fr, rho, MK)
        if gum.nu is not None and reading.N_param is not None:
            gum.N = 1.0 + X * (row.N - 1.0)
            gum.N_ci = _map_ci(row.N_ci, lambda n: 1.0 + X * (n - 1.0))
        rows.append(gum)
    return rows


def from_fit(result, *, polymer: str = "NR", T: float | None = None, f: float = 4.0,
             filler_fraction: float = 0.0, Mn: float | None = None,
             sol_fraction: float | None = None) -> CrosslinkTable:
    """Crosslink table from a :class:`~network_models.fitting.FitResult`: the small-strain modulus of the
    fitted model (with its interval), the entanglement part as the model separates it
    (``Model.modulus_split``) and the model's own network readings (``Model.network_reading``: chain
    modulus and N, phantom part with its f, Gent's J_m as N)."""
    m = result.model_obj
    notes = [f"from the {result.title} fit ({result.n} points)"]
    if T is None:
        if result.temperature is not None:
            T = result.temperature
        else:
            T = LAB_TEMPERATURE
            notes.append("the curves state no temperature: 23 °C assumed")
    G, G_ci = derived(result, lambda p: m.small_strain_modulus(**p))
    poly = get_polymer(polymer)
    X = guth_gold(filler_fraction)
    Ge = Gc = Gc_ci = src = None
    split = m.modulus_split(result.values)
    if split.separable and split.entanglement is not None and split.entanglement >= 0:
        Gc, Gc_ci = derived(result, lambda p: m.modulus_split(p).crosslink)
        Ge, src = split.entanglement, f"the {result.title} fit ({split.basis})"
        if split.entanglement == 0:  # the fit put G_e on its lower bound: these data show no entanglement part
            notes.append(f"the {result.title} fit found no entanglement part (G_e on its lower bound 0): the "
                         "entanglement-removed rows remove nothing")
    else:
        notes.append(f"{split.basis}: the entanglement-removed rows subtract the polymer's plateau modulus")
    extra = []
    for reading in m.network_reading(result.values):
        extra.extend(_reading_rows(result, reading, T=T, f=f, poly=poly, X=X))
    for w in result.warnings:
        kind = getattr(w, "kind", "")
        if kind in {"not-identifiable", "at-bound"} or "poorly determined" in w or "bound" in w:
            notes.append("fit caution: " + w)
    return _table(G, G_ci, polymer=polymer, T=T, f=f, filler_fraction=filler_fraction, Mn=Mn, Ge=Ge,
                  Ge_source=src, Gc=Gc, Gc_ci=Gc_ci, extra_rows=extra, sol_fraction=sol_fraction,
                  inputs={"fit_model": result.model, "small_strain_modulus_Pa": G,
                          "filler_fraction": filler_fraction}, notes=notes)


def crosslink_table(source, kind: str = "G", **kw: Any) -> CrosslinkTable:
    """One entry point: ``source`` is a FitResult (→ :func:`from_fit`) or a modulus in Pa of ``kind``
    (→ :func:`from_modulus`).  The table iterates over its rows; each row has ``to_dict()``."""
    if hasattr(source, "params") and hasattr(source, "model"):
        return from_fit(source, **kw)
    return from_modulus(source, kind, **kw)
