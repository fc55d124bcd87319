"""From a measured compound to the change that brings it into a design window.

``advise(result, nu, ci)`` (also ``DesignResult.advise``): the compound's strand density ν (mol/m³) with its
95 % interval is compared with the window of a :class:`~network_models.design.DesignResult`.  Outside the
window the advice is the relative change of ν that reaches the nearest edge — its range runs from the
interval's far end to its near end, so the compound's specimen scatter is carried through — and which target
binds there; the largest change before the far edge is missed; and the change to the window's (geometric)
centre.  Without a window the advice points at the closest compromise.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from ..constants import celsius
from ..errors import UserError
from ._scan import binding

__all__ = ["CURRENT_BASES", "Advice", "advise", "compound_from_fit", "convert_current", "nu_basis", "nu_for_modulus"]


@dataclass(kw_only=True)
class Advice:
    """What to change in a measured compound (strand density ``nu`` with 95 % interval ``ci``) to land in
    the window.  ``change`` and ``change_range`` are fractions (0.08 = +8 %); ``change_range`` carries the
    compound's interval through (from the interval's upper end to its lower end)."""

    nu: float
    ci: tuple[float, float] | None
    action: str  # "raise" | "lower" | "keep" | "none" (no window)
    change: float
    change_range: tuple[float, float]
    binding: list[str]
    to_centre: float | None
    limit: float | None  # largest change in the same direction before the far edge
    limit_binding: list[str]
    sentence: str

    def to_dict(self) -> dict:
        return {"strand_density": self.nu, "strand_density_ci95": None if self.ci is None else list(self.ci),
                "action": self.action, "change": self.change, "change_range": list(self.change_range),
                "binding": self.binding, "change_to_centre": self.to_centre, "change_limit": self.limit,
                "limit_binding": self.limit_binding, "sentence": self.sentence}


def _pct(x: float) -> str:
    return f"{100 * abs(x):.3g} %"


def _pct_range(a: float, b: float) -> str:
    a, b = sorted((abs(a), abs(b)))
    if math.isclose(a, b, rel_tol=0.02, abs_tol=5e-4):
        return _pct(a)
    return f"{100 * a:.3g}–{100 * b:.3g} %"


def advise(self, nu: float, ci: tuple[float, float] | None = None) -> Advice:
    """What change brings a compound of strand density ``nu`` (95 % interval ``ci``) into the window of
    ``self`` (a :class:`~network_models.design.DesignResult`)."""
    nu = float(nu)
    if not (nu > 0 and math.isfinite(nu)):
        raise UserError(f"the compound's strand density must be a positive number of mol/m³; got {nu!r}.")
    a, b = (nu, nu) if ci is None else (float(min(ci)), float(max(ci)))
    if not (0 < a <= nu <= b):
        raise UserError(f"the compound's interval {ci!r} must contain its strand density {nu:g} mol/m³ and be "
                        "positive.")
    if self.window is None:
        return _advise_infeasible(self, nu, ci, a, b)
    w = min(self.windows, key=lambda iv: 0.0 if iv.contains(nu) else min(abs(math.log(nu / iv.lo)),
                                                                           abs(math.log(nu / iv.hi))))
    lo_b, hi_b = binding(self.outcomes, w.lo, "low"), binding(self.outcomes, w.hi, "high")
    centre = None if (w.lo_open or w.hi_open) else math.sqrt(w.lo * w.hi) / nu - 1.0
    interval_txt = "" if ci is None else f" (95 % interval {a:.4g}–{b:.4g})"
    if w.contains(nu):
        out = []
        if a < w.lo:
            out.append(f"its interval reaches below the low edge {w.lo:.4g} mol/m³ ({' and '.join(lo_b)})")
        if b > w.hi:
            out.append(f"its interval reaches above the high edge {w.hi:.4g} mol/m³ ({' and '.join(hi_b)})")
        s = (f"Keep ν: the compound's ν = {nu:.4g} mol/m³{interval_txt} is inside the window "
             f"{w.lo:.4g}–{w.hi:.4g} mol/m³" + ("; but " + " and ".join(out) if out else "") + ".")
        return Advice(nu=nu, ci=ci, action="keep", change=0.0, change_range=(0.0, 0.0), binding=[], to_centre=centre,
                      limit=None, limit_binding=[], sentence=s)
    raise_ = nu < w.lo
    edge, far, bind, far_bind = (w.lo, w.hi, lo_b, hi_b) if raise_ else (w.hi, w.lo, hi_b, lo_b)
    far_open = w.hi_open if raise_ else w.lo_open
    change = edge / nu - 1.0
    rng = (edge / b - 1.0, edge / a - 1.0)
    if raise_:
        rng = (max(rng[0], 0.0), rng[1])
    else:
        rng = (min(rng[1], 0.0), rng[0])
    limit = None if far_open else far / nu - 1.0
    verb = "raise" if raise_ else "lower"
    s = (f"{verb.capitalize()} ν by {_pct_range(*rng)} ({' and '.join(bind)} is binding; "
         f"{_pct(change)} from the nominal ν = {nu:.4g} mol/m³{interval_txt.replace(' (', ', ').rstrip(')')})")
    if limit is not None:
        s += f"; {verb} by no more than {_pct(limit)} or {' and '.join(far_bind)} is missed"
    if centre is not None:
        s += f"; {_pct(centre)} lands at the window's centre"
    return Advice(nu=nu, ci=ci, action=verb, change=change, change_range=rng, binding=bind, to_centre=centre,
                  limit=limit, limit_binding=far_bind if limit is not None else [], sentence=s + ".")

def _advise_infeasible(self, nu, ci, a, b) -> Advice:
    if self.compromise is None:
        return Advice(nu=nu, ci=ci, action="none", change=0.0, change_range=(0.0, 0.0), binding=[], to_centre=None,
                      limit=None, limit_binding=[],
                      sentence="No strand density meets these targets and no compromise can be computed: see why.")
    c = self.compromise["strand_density"]
    change = c / nu - 1.0
    rng = tuple(sorted((c / b - 1.0, c / a - 1.0)))
    verb = "raise" if change > 0 else "lower"
    s = (f"No window exists for these targets (see why); toward the closest compromise ν = {c:.4g} mol/m³: "
         f"{verb} ν by {_pct_range(*rng)} ({_pct(change)} from the nominal ν = {nu:.4g} mol/m³).")
    return Advice(nu=nu, ci=ci, action="none", change=change, change_range=rng, binding=[], to_centre=None,
                  limit=None, limit_binding=[], sentence=s)


def nu_for_modulus(setup, G: float, T: float | None = None) -> float:
    """The strand density whose network, under the design model (``setup``: a
    :class:`~network_models.design.DesignSetup`), has small-strain shear modulus ``G`` (Pa) at ``T`` (K): the
    lowest ν on the scan where the model's modulus crosses G, refined with brentq (not assumed monotone)."""
    import numpy as np
    from scipy.optimize import brentq

    from ..models import get_model

    m = get_model(setup.model)
    T = setup.T if T is None else T

    def g0(nu):
        try:
            v = float(m.small_strain_modulus(**setup.network(nu, T).model_params(m)))
        except ValueError:
            return math.nan
        return v if v > 0 else math.nan

    lo, hi = setup.nu_range
    grid = np.geomspace(lo, hi, 97)
    vals = [g0(v) for v in grid]
    for k in range(len(grid) - 1):
        a, b = vals[k], vals[k + 1]
        if math.isfinite(a) and math.isfinite(b) and (a - G) * (b - G) <= 0:
            x = brentq(lambda x: math.log(g0(math.exp(x)) / G), math.log(grid[k]), math.log(grid[k + 1]),
                       xtol=1e-12, rtol=1e-12)
            return math.exp(x)
    raise UserError(f"a shear modulus of {G / 1e6:.4g} MPa is outside what the {m.title} model gives for "
                    f"ν {setup.nu_range[0]:g}–{setup.nu_range[1]:.4g} mol/m³ with these settings (the "
                    "entanglement share alone may exceed it); check the model and the polymer.")


def compound_from_fit(result, fit) -> tuple[float, tuple[float, float] | None]:
    """A measured compound's strand density and 95 % interval **under the design model**: the fitted
    small-strain modulus G₀ and its interval (from :func:`network_models.crosslinks.from_fit`, delta method)
    are each turned into the ν whose network gives that G₀ with the design's model, polymer, filler and f, at
    the fit's temperature.  This keeps the compound and the window on the same reading of ν."""
    from ..crosslinks import from_fit

    s = result.setup
    table = from_fit(fit, polymer=s.polymer, f=s.f, filler_fraction=s.filler)
    nu = nu_for_modulus(s, table.G, table.T)
    ci = None
    if table.G_ci is not None and table.G_ci[0] is not None and table.G_ci[0] > 0:
        ci = (nu_for_modulus(s, table.G_ci[0], table.T), nu_for_modulus(s, table.G_ci[1], table.T))
    return nu, ci


# ----- on which basis the design counts ν (stated in its text and JSON; ``--current-basis``) -------------------
#: the bases a measured ν can be given on (``design --current-basis``)
CURRENT_BASES = ("design", "entanglements-removed", "all-of-G")


def nu_basis(setup) -> dict:
    """How the design (a :class:`~network_models.design.DesignSetup`) counts ν: ``{label, model, G_e_Pa,
    G_e_source, filler_volume_fraction}``.  With the entanglement contribution on, ν counts only the crosslink
    strands and the network's small-strain modulus is X·(νRT + G_e) for the affine model (G_e the polymer's
    plateau modulus ∝ T, X the Guth–Gold factor) — the basis of ``crosslinks``' headline; with it off, all of G
    is read as crosslinks (G = X·νRT)."""
    from ..models import get_model
    from ..network import get_polymer

    m = get_model(setup.model)
    p = get_polymer(setup.polymer)
    filler = f", filler removed (Guth–Gold, φ = {setup.filler:g})" if setup.filler > 0 else ""
    if setup.entanglements:
        Ge = p.plateau_modulus * setup.T / p.plateau_temperature
        src = (f"plateau modulus of {p.key} G_N⁰ = {p.plateau_modulus / 1e6:.3g} MPa at "
               f"{celsius(p.plateau_temperature):.4g} °C scaled ∝ T (polymer table, {p.status})")
        label = f"{m.title}: ν counts crosslink strands only, entanglement part removed (G_e = {Ge / 1e6:.3g} MPa)"
    else:
        Ge, src = 0.0, "none: entanglements switched off, so all of G is read as crosslinks"
        label = f"{m.title}: ν counts all of G as crosslink strands (entanglements counted as crosslinks)"
    return {"label": label + filler, "model": m.name, "G_e_Pa": Ge, "G_e_source": src,
            "entanglements": bool(setup.entanglements), "filler_volume_fraction": setup.filler,
            "key": "entanglements-removed" if setup.entanglements else "all-of-G"}


def _affine_modulus(setup, nu: float, basis: str) -> float:
    """The small-strain shear modulus (Pa) an affine ν on ``basis`` stands for at the design's T and filler."""
    from ..constants import R
    from ..network import get_polymer, guth_gold

    p = get_polymer(setup.polymer)
    Ge = p.plateau_modulus * setup.T / p.plateau_temperature if basis == "entanglements-removed" else 0.0
    return guth_gold(setup.filler) * (nu * R * setup.T + Ge)


def convert_current(setup: Any, nu: float, ci: tuple[float, ...] | None, basis: str
                    ) -> tuple[float, tuple[float, ...] | None, str]:
    """``(ν, ci, sentence)`` of today's compound on the design's own basis, from ν (mol/m³) given on ``basis``
    (``"design"``: already on it; ``"entanglements-removed"`` or ``"all-of-G"``: the affine readings of the
    ``crosslinks`` table, the first being its headline).  The given ν is turned into the modulus it stands for
    and that modulus into the design model's ν (:func:`nu_for_modulus`).  Refuses with a sentence when the
    modulus lies outside what the design model gives (e.g. all of G below the entanglement modulus)."""
    if basis not in CURRENT_BASES:
        raise UserError(f"--current-basis {basis!r}: use one of {', '.join(CURRENT_BASES)}.")
    own = nu_basis(setup)
    if basis == "design" or (basis == own["key"] and setup.model == "affine"):
        return nu, ci, "read on the design's basis"
    G = _affine_modulus(setup, nu, basis)
    try:
        out = nu_for_modulus(setup, G)
        ci_out = None if ci is None else tuple(nu_for_modulus(setup, _affine_modulus(setup, x, basis)) for x in ci)
    except UserError:
        from ..network import guth_gold

        Ge = own["G_e_Pa"] * guth_gold(setup.filler)
        below = Ge > 0 and G <= Ge
        raise UserError(
            f"ν = {nu:.4g} mol/m³ read as '{basis}' stands for a shear modulus of {G / 1e6:.4g} MPa, which no "
            f"network of the design ({own['label']}) gives"
            + (f": it is at or below the entanglement modulus G_e = {Ge / 1e6:.3g} MPa the design assumes, so no "
               "crosslink strands are left to count — give ν on the design's basis, or design with "
               "--no-entanglements" if below else "; check the model and the polymer") + ".") from None
    return out, ci_out, (f"given as {nu:.4g} mol/m³ on the '{basis}' basis (affine, shear modulus "
                         f"{G / 1e6:.4g} MPa), converted to the design's basis")
