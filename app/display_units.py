"""Display units of one session: stress in MPa, psi or kgf/cm², crosslink density in mol/m³, 10⁻⁴ mol/cm³
or mol/kg, stretch as λ or as elongation (λ − 1)·100 % — no Panel import.  The conversions are the core's
(:mod:`network_models.display_units`), shared with the CLI tables (``--stretch-unit``) and the report."""

from __future__ import annotations

import copy

import numpy as np
import param

from network_models.display_units import (  # noqa: F401 (the app's names for the core's one conversion)
    DENSITY_UNITS,
    STRESS_UNITS,
    STRETCH_UNITS,
    apply_to_comparison,
    density_from_si,
    pascal_per,
    stress_from_pa,
    stretch_shown,
)

DIMENSIONLESS = "(–)"


class DisplayUnits(param.Parameterized):
    """The units the tables and plots of one session show (a display choice: results stay SI inside)."""

    stress = param.Selector(default="MPa", objects=list(STRESS_UNITS), label="Stress shown in")
    density = param.Selector(default="mol/m³", objects=list(DENSITY_UNITS), label="Crosslink density shown in")
    stretch = param.Selector(default="stretch", objects=list(STRETCH_UNITS), label="Stretch shown as")

    def s(self, value_pa):
        return stress_from_pa(value_pa, self.stress)

    def d(self, nu, rho=None):
        return density_from_si(nu, self.density, rho)

    # ----- stretch: λ, or elongation (λ − 1)·100 % (the core's stretch_shown, element by element) -----
    @property
    def elongation(self) -> bool:
        return self.stretch == "elongation"

    def x(self, lam):
        """A stretch (number or array) as shown: λ itself or the elongation in %."""
        if lam is None:
            return None
        if np.ndim(lam) == 0:
            return stretch_shown(float(lam), self.stretch)
        a = np.asarray(lam, dtype=float)
        return a if not self.elongation else np.array([stretch_shown(v, self.stretch) for v in a.tolist()])

    def x_label(self, what: str = "stretch") -> str:
        """The axis label of a stretch axis: 'stretch λ (–)' or 'elongation (%)' (``what`` names the stretch)."""
        return "elongation (%)" if self.elongation else f"{what} λ {DIMENSIONLESS}"

    def x_unit(self) -> str:
        return "%" if self.elongation else "λ"


def displayed_comparison(cmp, units: DisplayUnits | None):
    """A comparison with stretch shown as the session shows it (elongation: the lock also reads as the
    elongation reserve, the curve charts get an elongation axis — the CLI's ``--stretch-unit`` path,
    :func:`network_models.display_units.apply_to_comparison`); its stress and density units stay the
    comparison's own.  A copy whose quantity records carry the display, so a comparison shared between
    sessions (the process-level cache) is never changed; unchanged when stretch is shown as λ."""
    if cmp is None or units is None or not units.elongation:
        return cmp
    shown = getattr(cmp, "display_units", None) or {}
    out = copy.copy(cmp)
    out.results = []
    for r in cmp.results:
        rc = copy.copy(r)
        rc.quantities = {k: copy.copy(q) for k, q in r.quantities.items()}
        out.results.append(rc)
    return apply_to_comparison(out, stress=shown.get("stress", "MPa"), density=shown.get("density", "mol/m³"),
                               stretch=units.stretch)
