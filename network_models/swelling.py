"""Equilibrium swelling: strand density from the Flory–Rehner balance (docs/methods.md §flory-rehner).

    >>> from network_models.swelling import swelling_estimate
    >>> r = swelling_estimate(dry=1.000e-3, swollen=3.20e-3, solvent="toluene", polymer="NR")
    >>> r.nu_affine, r.nu_band("affine")      # mol/m³; ν at χ − 0.05 and χ + 0.05

Formulas used (SI inside; V₁ in m³/mol, ν in mol/m³):

* polymer volume fraction of the swollen gel, φ = (m_r/ρ_p) / (m_r/ρ_p + (m_s − m_d)/ρ_s), where m_d is
  the mass of the network in the gel (the extracted, re-dried mass when it was measured, else the dry mass
  before swelling), m_s the swollen mass and m_r = w_r·m_d the rubber part of it (w_r = 1 for a gum;
  filler does not swell and its mass is not polymer);
* Flory & Rehner 1943 (J. Chem. Phys. 11:521) [memory, standard form], general functionality f:
  affine  −[ln(1 − φ) + φ + χφ²] = V₁ν(φ^⅓ − 2φ/f);   phantom  −[ln(1 − φ) + φ + χφ²] = V₁ν(1 − 2/f)φ^⅓;
* Kraus 1963 (J. Appl. Polym. Sci. 7:861) [memory] for filled compounds with non-swelling, adhering filler:
  V_r0/V_rf = 1 − m·φ_f/(1 − φ_f),  m = 3c(1 − V_r0^⅓) + V_r0 − 1, with V_rf the rubber volume fraction
  measured in the swollen filled gel, V_r0 the value the unfilled network would show, φ_f the filler
  volume fraction of the dry compound and c the filler–rubber constant (c ≈ 1.17 for reinforcing carbon
  black [memory]).  V_r0 is solved from this implicit relation (it can have two roots; the one nearest V_rf
  is the physical one, see :func:`kraus_roots`) and used in Flory–Rehner.

χ comes from the table (:func:`default_chi` says which row wins: near the test temperature, then your own
rows, then handbook, recalled, estimated) or from the caller; recalled or estimated values carry a notice.

ν is the **strand** density; the junction (crosslink) density is μ_j = 2ν/f.  χ depends on temperature,
concentration and crosslink density, so every result carries ν at χ ± 0.05.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from scipy.optimize import brentq

from .constants import LAB_TEMPERATURE, ZERO_CELSIUS
from .errors import Notice
from .materials import (  # the solvent and χ tables live beside the polymer table; re-exported here
    CHI_STATUS_RANK,
    CHI_TEMPERATURE_WINDOW,
    ChiValue,
    Solvent,
    chi_values,
    default_chi,
    get_polymer,
    get_solvent,
    solvents,
)

__all__ = [
    "CHI_BAND", "CHI_STATUS_RANK", "CHI_TEMPERATURE_WINDOW", "FILLER_DENSITY_CARBON_BLACK", "KRAUS_C_CARBON_BLACK",
    "ChiValue", "Solvent", "SwellingEstimate", "chi_values", "compare_with_modulus", "default_chi",
    "ellis_welding_fraction", "flory_rehner_nu",
    "from_record", "get_solvent", "kraus_gum_fraction", "kraus_roots", "polymer_volume_fraction", "solvents",
    "swelling_estimate", "swollen_fraction",
]

CHI_BAND = 0.05
#: Kraus filler–rubber constant for reinforcing carbon black, Kraus 1963 [memory]
KRAUS_C_CARBON_BLACK = 1.17
#: density of carbon black, kg/m³ [memory: about 1.8 g/cm³]
FILLER_DENSITY_CARBON_BLACK = 1800.0


# ------------------------------------------------------------------------------------------------
def polymer_volume_fraction(dry: float, swollen: float, rho_polymer: float, rho_solvent: float,
                            rubber_fraction: float = 1.0) -> float:
    """φ of rubber in the swollen gel from masses (any one mass unit) and densities (kg/m³)."""
    for name, v in (("dry (network) mass", dry), ("swollen mass", swollen)):
        if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
            raise ValueError(f"{name} must be a positive number; got {v!r}")
    if swollen <= dry:
        raise ValueError(
            f"the swollen mass ({swollen:g}) must exceed the dry network mass ({dry:g}): check that the two were not "
            "swapped and that the swollen piece was weighed before the solvent evaporated"
        )
    if not (0 < rubber_fraction <= 1):
        raise ValueError(f"rubber mass fraction of the dry compound must be in (0, 1]; got {rubber_fraction!r}")
    vr = rubber_fraction * dry / rho_polymer
    vs = (swollen - dry) / rho_solvent
    return vr / (vr + vs)


def ellis_welding_fraction(T: float, D: float, swollen: float, F: float, rho_rubber: float,
                           rho_solvent: float) -> float:
    """Rubber volume fraction of the swollen gel corrected for the recipe, Ellis & Welding 1964 (docs/methods.md
    §ellis-welding): v_r = [(D − F·T)/ρ_r] / [(D − F·T)/ρ_r + A₀/ρ_s], with T the specimen
    mass before swelling, D the re-dried (extracted) mass, F the insoluble mass fraction of the compound
    (fillers and other insoluble non-network ingredients), A₀ = swollen − D the absorbed solvent, ρ_r the
    polymer's and ρ_s the solvent's density (masses in any one unit)."""
    for name, v in (("mass before swelling T", T), ("re-dried mass D", D), ("swollen mass", swollen)):
        if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
            raise ValueError(f"{name} must be a positive number; got {v!r}")
    if swollen <= D:
        raise ValueError(f"the swollen mass ({swollen:g}) must exceed the re-dried mass ({D:g}): check that the two "
                         "were not swapped")
    rubber = D - F * T
    if not (rubber > 0):
        raise ValueError(f"the insoluble fraction F = {F:g} of the {T:g} specimen exceeds its re-dried mass {D:g}: "
                         "no rubber would be left; check the recipe (kinds and soluble flags) and the masses")
    vr = rubber / rho_rubber
    return vr / (vr + (swollen - D) / rho_solvent)


def _mixing(phi, chi):
    return -(math.log1p(-phi) + phi + chi * phi * phi)


def _elastic_factor(phi, f, network):
    if network == "affine":
        return phi ** (1.0 / 3.0) - 2.0 * phi / f
    if network == "phantom":
        return (1.0 - 2.0 / f) * phi ** (1.0 / 3.0)
    raise ValueError(f"network assumption must be 'affine' or 'phantom', not {network!r}")


def flory_rehner_nu(phi: float, chi: float, V1: float, f: float = 4.0, network: str = "affine") -> float:
    """Strand density ν (mol/m³) from φ, χ and the solvent molar volume V₁ (m³/mol)."""
    if not (0 < phi < 1):
        raise ValueError(f"polymer volume fraction φ must lie between 0 and 1; got {phi!r}")
    if not (f >= 3):
        raise ValueError(f"junction functionality f must be at least 3; got {f!r}")
    num = _mixing(phi, chi)
    if num <= 0:
        raise ValueError(
            f"with χ = {chi:g} the solvent is too poor for the measured swelling (φ = {phi:.3f}): Flory–Rehner "
            "gives no positive strand density; check χ for this rubber–solvent pair and temperature"
        )
    return num / (V1 * _elastic_factor(phi, f, network))


def swollen_fraction(nu: float, chi: float, V1: float, f: float = 4.0, network: str = "affine") -> float:
    """Inverse of :func:`flory_rehner_nu`: equilibrium φ for strand density ν (mol/m³)."""
    if not (nu > 0):
        raise ValueError(f"strand density must be positive; got {nu!r}")

    def g(phi):
        return _mixing(phi, chi) - V1 * nu * _elastic_factor(phi, f, network)

    lo, hi = 1e-9, 1.0 - 1e-12
    if g(lo) * g(hi) > 0:
        raise ValueError(f"no swelling equilibrium for ν = {nu:g} mol/m³ with χ = {chi:g}")
    return brentq(g, lo, hi, xtol=1e-15, rtol=1e-14)


def _kraus_residual(vr0, v_rf, q, c):
    m = 3.0 * c * (1.0 - vr0 ** (1.0 / 3.0)) + vr0 - 1.0
    return vr0 - v_rf * (1.0 - m * q)


def kraus_roots(v_rf: float, filler_fraction: float, c: float = KRAUS_C_CARBON_BLACK) -> list[float]:
    """Every root V_r0 in (0, 1) of Kraus's relation (see module doc), smallest first.

    g(V_r0) = V_r0 − V_rf[1 − m(V_r0)·φ/(1 − φ)] is convex in V_r0 (g'' = (2/3)c·V_rf·q·V_r0^(−5/3) > 0 with
    q = φ/(1 − φ)) [derived], so it has at most two roots, on either side of its minimum
    V* = [c·V_rf·q/(1 + V_rf·q)]^(3/2) (from g' = 1 + V_rf·q(1 − c·V_r0^(−2/3)) = 0).  At φ ≥ 1/(3c) (≈ 0.285 for
    c = 1.17) both ends of (0, 1) are positive and an end-point bracket finds nothing although a root may exist:
    bracketing each side of the minimum finds both."""
    q = filler_fraction / (1.0 - filler_fraction)
    lo, hi = 1e-12, 1.0 - 1e-12
    vq = v_rf * q
    x_min = min(max((c * vq / (1.0 + vq)) ** 1.5, lo), hi)
    g_min = _kraus_residual(x_min, v_rf, q, c)
    roots = []
    for a, b in ((lo, x_min), (x_min, hi)):
        ga, gb = _kraus_residual(a, v_rf, q, c), _kraus_residual(b, v_rf, q, c)
        if g_min == 0.0 and (a == x_min or b == x_min):
            roots.append(x_min)
        elif ga * gb < 0:
            roots.append(brentq(_kraus_residual, a, b, args=(v_rf, q, c), xtol=1e-15, rtol=1e-14))
    return sorted(set(roots))


def kraus_gum_fraction(v_rf: float, filler_fraction: float, c: float = KRAUS_C_CARBON_BLACK) -> float:
    """Kraus 1963 [memory]: the gum-equivalent rubber fraction V_r0 from the filled V_rf (see module doc).

    Of the (at most two) roots of Kraus's relation the physical one is the one nearest the measured V_rf
    (the other lies near V_r0 → 0, a gum that would dissolve); it is returned.  No root at all means the
    measured swelling is too large for adhering filler at this loading and c: refused with a sentence."""
    if not (0 <= filler_fraction < 0.5):
        raise ValueError(f"filler volume fraction must be in [0, 0.5); got {filler_fraction!r}")
    if not (0 < v_rf < 1):
        raise ValueError(f"rubber volume fraction in the swollen gel must lie between 0 and 1; got {v_rf!r}")
    if not (c > 0 and math.isfinite(c)):
        raise ValueError(f"the Kraus filler–rubber constant c must be positive; got {c!r}")
    if filler_fraction == 0:
        return v_rf
    roots = kraus_roots(v_rf, filler_fraction, c)
    if not roots:
        raise ValueError(
            f"the Kraus correction has no solution for V_rf = {v_rf:.3f} at filler volume fraction "
            f"{filler_fraction:g} with c = {c:g}: the filled sample swelled more than adhering filler allows. "
            "Check the filler fraction (volume, not phr or mass) and c, or leave the filler out (no correction)"
        )
    return min(roots, key=lambda r: abs(r - v_rf))


# ------------------------------------------------------------------------------------------------
@dataclass(kw_only=True)
class SwellingEstimate:
    phi: float  # rubber volume fraction used in Flory–Rehner (Kraus-corrected when filled)
    phi_measured: float  # before any Kraus correction
    chi: ChiValue
    solvent: Solvent
    polymer: str
    f: float
    T: float | None
    nu_affine: float
    nu_phantom: float
    band: dict[str, tuple[float | None, float | None]]  # network -> (ν at χ − 0.05, ν at χ + 0.05)
    rho_polymer: float
    soluble_fraction: float | None = None
    kraus: dict | None = None
    notes: list[str] = field(default_factory=list)
    #: half-width of the published-χ band (docs/methods.md §chi) and what it rests on
    chi_spread: float = CHI_BAND
    chi_spread_basis: str = ""
    #: network -> (ν at χ − spread, ν at χ + spread); None where Flory–Rehner has no positive root
    nu_band_chi: dict = field(default_factory=dict)

    @property
    def chi_used(self) -> float:
        """The χ this result was computed with (table row or the caller's value)."""
        return self.chi.chi
    insoluble_fraction: float | None = None  # F of the Ellis–Welding correction (None: not applied)

    def nu(self, network: str = "affine") -> float:
        return self.nu_affine if network == "affine" else self.nu_phantom

    def nu_band(self, network: str = "affine") -> Any:
        return self.band[network]

    def junction_density(self, network: str = "affine") -> float:
        return 2.0 * self.nu(network) / self.f

    def rows(self) -> list[dict]:
        """One row per assumption: ν, μ_j, M_c with their χ ± 0.05 bands (SI)."""
        out = []
        for net, text in (("affine", "affine junctions: elastic term φ^⅓ − 2φ/f"),
                          ("phantom", f"phantom network: elastic term (1 − 2/f)φ^⅓, f = {self.f:g}")):
            nu = self.nu(net)
            lo, hi = self.band[net]
            out.append({
                "assumption": net, "assumes": text,
                "strand_density": nu, "strand_density_band": [lo, hi],
                "junction_density": 2.0 * nu / self.f,
                "junction_density_band": [None if lo is None else 2 * lo / self.f,
                                          None if hi is None else 2 * hi / self.f],
                "Mc": self.rho_polymer / nu,
                "Mc_band": [None if hi is None else self.rho_polymer / hi,
                            None if lo is None else self.rho_polymer / lo],
            })
        return out

    def to_dict(self) -> dict:
        return {
            "polymer": self.polymer, "solvent": self.solvent.key,
            "solvent_molar_volume_m3_mol": self.solvent.molar_volume,
            "chi": {"value": self.chi.chi, "status": self.chi.status, "source": self.chi.source,
                    "note": self.chi.note, "band": [self.chi.chi - CHI_BAND, self.chi.chi + CHI_BAND]},
            "polymer_volume_fraction": self.phi, "polymer_volume_fraction_measured": self.phi_measured,
            "functionality": self.f, "temperature_K": self.T,
            "soluble_fraction": self.soluble_fraction, "kraus": self.kraus,
            "insoluble_fraction": self.insoluble_fraction,
            "units": {"strand_density": "mol/m³", "junction_density": "mol/m³", "Mc": "kg/mol"},
            "rows": self.rows(), "notes": list(self.notes),
            "chi_used": self.chi.chi, "chi_spread": self.chi_spread, "chi_spread_basis": self.chi_spread_basis,
            "chi_band_published": [self.chi.chi - self.chi_spread, self.chi.chi + self.chi_spread],
            "nu_band_chi": {net: list(b) for net, b in self.nu_band_chi.items()},
        }


def _chi_for(poly, sol, chi, T, notes) -> ChiValue:
    """The χ a swelling estimate uses: the given one (checked) or the table's default, with notices."""
    if chi is None:
        cv = default_chi(poly.key, sol.key, T)
        notes.append(f"χ = {cv.chi:g} from the solvent table [{cv.status}]: {cv.source}"
                     + (f" ({cv.note})" if cv.note else ""))
        T_test = LAB_TEMPERATURE if T is None else T
        if abs(cv.temperature - T_test) > CHI_TEMPERATURE_WINDOW:
            notes.append(Notice(
                f"the table's χ for {poly.key}–{sol.key} was measured at {cv.temperature - ZERO_CELSIUS:.0f} °C, "
                f"far from the swelling test at {T_test - ZERO_CELSIUS:.0f} °C: χ changes with temperature, so give "
                "χ for your temperature when you have it", kind="chi-temperature", subject=f"{poly.key}–{sol.key}"))
        if cv.status in ("memory", "estimate", "common"):
            notes.append(Notice(
                f"χ for {poly.key}–{sol.key} is "
                + {"memory": "recalled, not re-read", "estimate": "a solubility-parameter estimate",
                   "common": "the value most of the rubber literature uses (common practice, recalled)"}[cv.status]
                + ": the strand density is only as good as χ — check it before a decision rests on it",
                kind="chi-unsourced", subject=f"{poly.key}–{sol.key}"))
    else:
        if not (isinstance(chi, (int, float)) and math.isfinite(chi) and 0 <= chi < 1.5):
            raise ValueError(f"χ must be a number between 0 and 1.5; got {chi!r}")
        cv = ChiValue(polymer=poly.key, solvent=sol.key, chi=float(chi), temperature=T or float("nan"), default=False,
                      status="user", source="given by the user")
        notes.append(f"χ = {chi:g} as given")
    return cv


def _network_mass(dry, extracted, initial, notes) -> tuple[float, float | None]:
    """(network mass, soluble fraction or None) from the masses of one swelling test."""
    soluble = None
    network_mass = dry
    if extracted is not None and initial is not None:
        raise ValueError("give either the extracted mass (with dry = before swelling) or the initial mass "
                         "(with dry = re-dried network), not both")
    if initial is not None:
        if not (isinstance(initial, (int, float)) and math.isfinite(initial) and initial > 0):
            raise ValueError(f"initial mass must be a positive number; got {initial!r}")
        if dry > initial * (1 + 1e-9):
            raise ValueError(f"the re-dried mass ({dry:g}) exceeds the mass before swelling ({initial:g}); "
                             "check that the two were not swapped")
        soluble = (initial - dry) / initial
    elif extracted is not None:
        if not (isinstance(extracted, (int, float)) and math.isfinite(extracted) and extracted > 0):
            raise ValueError(f"extracted mass must be a positive number; got {extracted!r}")
        if extracted > dry * (1 + 1e-9):
            raise ValueError(f"the extracted mass ({extracted:g}) exceeds the dry mass before swelling ({dry:g}); "
                             "check that the two were not swapped and that the piece was fully dried")
        soluble = (dry - extracted) / dry
        network_mass = extracted
    else:
        notes.append("no extracted (re-dried) mass given: the dry mass before swelling is taken as network, "
                     "so any soluble fraction is counted as network")
    return network_mass, soluble


#: weighing error of a lab balance for swelling (issue #20): an absorbed mass below 1 mg, or below 1 % of the
#: dry mass, cannot be told from the balance's and the blotting's scatter (common practice: 0.1 mg balances,
#: blotting scatter of a few mg)
WEIGHING_ERROR_KG = 1e-6
WEIGHING_ERROR_FRACTION = 0.01


def check_absorbed_mass(network_mass: float, swollen: float, *, resolution_kg: float = WEIGHING_ERROR_KG) -> None:
    """Refuse (ValueError) an absorbed solvent mass within weighing error: below 1 % of the network mass, or
    below 1 mg when the masses are in kg (SI, as the CLI passes them).  A swollen/dry ratio of 1.001 would
    otherwise give ν ≈ 10⁵ mol/m³ — a strand shorter than one repeat unit."""
    absorbed = swollen - network_mass
    if absorbed < WEIGHING_ERROR_FRACTION * network_mass or absorbed < resolution_kg:
        raise ValueError(
            f"the piece absorbed only {absorbed * 1e3:.3g} g (swollen {swollen * 1e3:.6g} g − dry "
            f"{network_mass * 1e3:.6g} g; masses are taken in kg, the core's SI unit): "
            f"{100 * absorbed / network_mass:.2g} % of its dry mass, within weighing error (below 1 % of the dry "
            "mass or 1 mg); no strand density can be read from it — check that the piece swelled to equilibrium "
            "(about 72 h), that the swollen mass was weighed before the solvent evaporated, and the masses' units")


def check_repeat_unit(nu_affine: float, nu_phantom: float, rho: float, poly, notes: list) -> None:
    """Refuse (ValueError) a strand density whose strand molar mass M_c = ρ/ν is below one repeat unit of the
    polymer (physically impossible); a note when only the phantom reading is."""
    M0 = poly.monomer_molar_mass
    Mc = rho / nu_affine if nu_affine > 0 else math.inf
    if Mc < M0:
        raise ValueError(
            f"this swelling gives ν = {nu_affine:.4g} mol/m³ (affine), i.e. M_c = {1000 * Mc:.3g} g/mol — below one "
            f"repeat unit of {poly.key} ({1000 * M0:.4g} g/mol): impossible for a rubber network; the swollen and dry "
            "masses are too close (weighing error), or χ, the solvent or the polymer is wrong")
    if nu_phantom > 0 and rho / nu_phantom < M0:
        notes.append(f"the phantom reading gives M_c = {1000 * rho / nu_phantom:.3g} g/mol, below one repeat unit of "
                     f"{poly.key}: use the affine row")


def swelling_estimate(dry: float, swollen: float, solvent: str = "toluene", polymer: str = "NR", *,
                      chi: float | None = None, f: float = 4.0, T: float | None = None,
                      extracted: float | None = None, initial: float | None = None,
                      rubber_fraction: float | None = None, filler_fraction: float = 0.0,
                      kraus_c: float = KRAUS_C_CARBON_BLACK, filler_density: float = FILLER_DENSITY_CARBON_BLACK,
                      rho_polymer: float | None = None, insoluble_fraction: float | None = None) -> SwellingEstimate:
    """ν (affine and phantom) from one swelling test.  Masses in any one unit (kg in SI), named as in
    :class:`network_models.curves.SwellingResult`: ``dry`` before swelling, ``swollen`` blotted at
    equilibrium, ``extracted`` (optional) re-dried after swelling — when given it is the network mass and
    the soluble fraction (dry − extracted)/dry is reported.  The other convention is accepted too:
    ``dry`` = the re-dried network mass with ``initial`` = the mass before swelling (give one of
    ``extracted``/``initial``, not both).  ``chi`` overrides the table;
    ``filler_fraction`` (volume fraction of filler in the dry compound) switches the Kraus correction on;
    ``rubber_fraction`` is the rubber mass fraction of the dry compound (default: 1 for a gum, else from
    the filler volume fraction and ``filler_density``, carbon black 1800 kg/m³ [memory]).

    ``insoluble_fraction`` F (from the recipe, :attr:`network_models.recipes.Recipe.insoluble_mass_fraction`)
    switches on the Ellis–Welding correction (:func:`ellis_welding_fraction`): the rubber network in the
    re-dried specimen is D − F·T (T = ``dry``, D = ``extracted`` or T when not measured) — the soluble
    ingredients have left it, the insoluble ones (filler, zinc oxide ...) have not; it replaces
    ``rubber_fraction`` (give one of the two)."""
    poly = get_polymer(polymer)
    sol = get_solvent(solvent)
    rho_p = poly.density if rho_polymer is None else float(rho_polymer)
    notes = []
    if not (0.0 <= filler_fraction < 0.5):
        raise ValueError(f"filler volume fraction must be in [0, 0.5); got {filler_fraction!r}")
    if insoluble_fraction is not None and rubber_fraction is not None:
        raise ValueError("give either the insoluble mass fraction (Ellis–Welding, from the recipe) or the rubber "
                         "mass fraction, not both")
    if insoluble_fraction is not None:
        if not (isinstance(insoluble_fraction, (int, float)) and 0 <= insoluble_fraction < 1):
            raise ValueError(f"insoluble mass fraction F must be in [0, 1); got {insoluble_fraction!r}")
    elif rubber_fraction is None:
        if filler_fraction > 0:
            vr, vf = (1.0 - filler_fraction) * rho_p, filler_fraction * filler_density
            rubber_fraction = vr / (vr + vf)
            notes.append(f"rubber mass fraction {rubber_fraction:.3f} of the dry compound from the filler volume "
                         f"fraction and a filler density of {filler_density:g} kg/m³ (other ingredients ignored; "
                         "give the rubber fraction from the recipe when you have it)")
        else:
            rubber_fraction = 1.0
    cv = _chi_for(poly, sol, chi, T, notes)
    network_mass, soluble = _network_mass(dry, extracted, initial, notes)
    if insoluble_fraction is not None:
        T_mass = initial if initial is not None else dry
        phi_m = ellis_welding_fraction(T_mass, network_mass, swollen, insoluble_fraction, rho_p, sol.density)
        notes.append(f"Ellis–Welding: rubber network D − F·T with insoluble fraction F = {insoluble_fraction:.4f} "
                     f"from the recipe, polymer density {rho_p:g} kg/m³; v_r = {phi_m:.4f}")
    else:
        phi_m = polymer_volume_fraction(network_mass, swollen, rho_p, sol.density, float(rubber_fraction or 1.0))
    check_absorbed_mass(network_mass, swollen)
    phi = phi_m
    kraus = None
    if filler_fraction > 0:
        phi = kraus_gum_fraction(phi_m, filler_fraction, kraus_c)
        kraus = {"filler_volume_fraction": filler_fraction, "c": kraus_c, "V_rf": phi_m, "V_r0": phi,
                 "formula": "V_r0/V_rf = 1 − m φ/(1 − φ), m = 3c(1 − V_r0^⅓) + V_r0 − 1 (Kraus 1963 [memory])"}
        notes.append(f"Kraus correction for filler (φ_filler = {filler_fraction:g}, c = {kraus_c:g}): "
                     f"V_r = {phi_m:.4f} measured → {phi:.4f} gum-equivalent")
    elif (rubber_fraction or 1.0) < 1:
        notes.append("filled compound without a Kraus correction: restricted swelling makes the swelling "
                     "density larger than the mechanical one")
    nu_a = flory_rehner_nu(phi, cv.chi, sol.molar_volume, f, "affine")
    nu_p = flory_rehner_nu(phi, cv.chi, sol.molar_volume, f, "phantom")
    check_repeat_unit(nu_a, nu_p, rho_p, poly, notes)
    band = {}
    for net in ("affine", "phantom"):
        vals: list[float | None] = []
        for c in (cv.chi - CHI_BAND, cv.chi + CHI_BAND):
            try:
                vals.append(flory_rehner_nu(phi, c, sol.molar_volume, f, net))
            except ValueError:
                vals.append(None)
        band[net] = (vals[0], vals[1])
    if any(v is None for b in band.values() for v in b):
        notes.append("χ + 0.05 leaves no positive strand density for this swelling: the upper band is missing")
    notes.append("Flory–Rehner assumes a perfect network in equilibrium with pure solvent at the test "
                 "temperature; χ is the largest uncertainty (the band shows χ ± 0.05)")
    spread, basis, band_chi = _published_band(phi, cv, sol.molar_volume, f, notes)
    return SwellingEstimate(phi=phi, phi_measured=phi_m, chi=cv, solvent=sol, polymer=poly.key, f=float(f), T=T,
                            nu_affine=nu_a, nu_phantom=nu_p, band=band, rho_polymer=rho_p, soluble_fraction=soluble,
                            kraus=kraus, notes=notes,
                            chi_spread=spread, chi_spread_basis=basis, nu_band_chi=band_chi,
                            insoluble_fraction=insoluble_fraction)


def _published_band(phi, cv: ChiValue, V1, f, notes) -> tuple[float, str, dict]:
    """ν at χ ± the published spread of χ for this pair (docs/methods.md §chi), and a note that shows the χ
    in use and the band it spans (the note reaches the CLI text, the app and the report)."""
    if cv.spread is not None:
        spread, basis = cv.spread, cv.spread_basis or "published spread stated in the solvent table"
    else:
        spread = CHI_BAND
        basis = ("χ given by the user: the fixed ± 0.05 band" if cv.status == "user"
                 else "no published spread stated for this row: the fixed ± 0.05 band")
    band = {}
    for net in ("affine", "phantom"):
        vals: list[float | None] = []
        for c in (cv.chi - spread, cv.chi + spread):
            try:
                vals.append(flory_rehner_nu(phi, c, V1, f, net))
            except ValueError:
                vals.append(None)
        band[net] = (vals[0], vals[1])
    lo, hi = band["affine"]
    span = (f"{hi:.4g} … {lo:.4g} mol/m³" if lo is not None and hi is not None
            else "no positive strand density at the upper end")
    notes.append(f"χ in use: {cv.chi:g} [{cv.status}]; published values spread ± {spread:g} ({basis}): "
                 f"affine ν spans {span} over χ = {cv.chi - spread:.3g} … {cv.chi + spread:.3g}")
    return spread, basis, band


def from_record(record, polymer: str, **kw: Any) -> SwellingEstimate:
    """Estimate from a :class:`network_models.curves.SwellingResult` row (``read_swelling``)."""
    kw.setdefault("T", record.temperature)
    return swelling_estimate(record.dry_mass, record.swollen_mass, record.solvent or "toluene", polymer,
                             extracted=record.extracted_mass, **kw)


def compare_with_modulus(swelling: SwellingEstimate, table) -> list[dict]:
    """Side by side: swelling ν (affine, phantom) against the modulus-based rows of a crosslink table
    (:class:`network_models.crosslinks.CrosslinkTable`) with the same assumption; ratio = swelling/modulus."""
    out = []
    for row in table.rows:
        net = "phantom" if row.key.startswith("phantom") else "affine"
        sw = swelling.nu(net)
        ratio = (sw / row.nu) if (row.nu and row.nu > 0) else None
        out.append({"modulus_row": row.label, "assumption": net, "swelling_strand_density": sw,
                    "modulus_strand_density": row.nu, "ratio": ratio})
    return out
