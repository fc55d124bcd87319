"""Display units of one session: stress in MPa, psi or kgf/cm², crosslink density in mol/m³, 10⁻⁴ mol/cm³
or mol/kg — no Panel import.  The conversions are the core's (:mod:`network_models.display_units`), shared
with the CLI tables and the report."""

from __future__ import annotations

import param

from network_models.display_units import (  # noqa: F401 (the app's names for the core's one conversion)
    DENSITY_UNITS,
    STRESS_UNITS,
    density_from_si,
    pascal_per,
    stress_from_pa,
)


class DisplayUnits(param.Parameterized):
    """The units the tables and plots of one session show (a display choice: results stay SI inside)."""

    stress = param.Selector(default="MPa", objects=list(STRESS_UNITS), label="Stress shown in")
    density = param.Selector(default="mol/m³", objects=list(DENSITY_UNITS), label="Crosslink density shown in")

    def s(self, value_pa):
        return stress_from_pa(value_pa, self.stress)

    def d(self, nu, rho=None):
        return density_from_si(nu, self.density, rho)
