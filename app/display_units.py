"""Display units of one session: stress in MPa, psi or kgf/cm², crosslink density in mol/m³, 10⁻⁴ mol/cm³
or mol/kg — no Panel import.

The core stays SI; this is the one place the app turns SI numbers into the units a compounder reads.  Every
factor comes from pint through :func:`network_models.units.unit_converter` (no factor typed by hand);
mol/kg divides the volumetric density by the polymer's density (ν/ρ).
"""

from __future__ import annotations

from functools import cache

import param

STRESS_UNITS = ("MPa", "psi", "kgf/cm²")
DENSITY_UNITS = ("mol/m³", "10⁻⁴ mol/cm³", "mol/kg")


@cache
def pascal_per(unit: str) -> float:
    """Pa in one ``unit`` of stress (pint, through network_models.units)."""
    from network_models.units import unit_converter

    return float(unit_converter(unit, "pressure").factor)


@cache
def _cm_in_m() -> float:
    from network_models.units import unit_converter

    return float(unit_converter("cm", "length").factor)


def stress_from_pa(value_pa: float | None, unit: str) -> float | None:
    """A stress in Pa shown in ``unit`` (one of STRESS_UNITS)."""
    if value_pa is None:
        return None
    return float(value_pa) / pascal_per(unit)


def density_from_si(nu_mol_m3: float | None, unit: str, density_kg_m3: float | None = None) -> float | None:
    """A strand or junction density in mol/m³ shown in ``unit`` (one of DENSITY_UNITS); mol/kg needs the
    rubber's density ρ (kg/m³) and returns None without it."""
    if nu_mol_m3 is None:
        return None
    v = float(nu_mol_m3)
    if unit == "mol/m³":
        return v
    if unit == "10⁻⁴ mol/cm³":
        return v * _cm_in_m() ** 3 / 1e-4  # mol/m³ × (m³ per cm³) = mol/cm³, then in units of 10⁻⁴
    if unit == "mol/kg":
        return None if not density_kg_m3 else v / float(density_kg_m3)
    raise ValueError(f"unknown density unit {unit!r}; use one of {', '.join(DENSITY_UNITS)}")


class DisplayUnits(param.Parameterized):
    """The units the tables and plots of one session show (a display choice: results stay SI inside)."""

    stress = param.Selector(default="MPa", objects=list(STRESS_UNITS), label="Stress shown in")
    density = param.Selector(default="mol/m³", objects=list(DENSITY_UNITS), label="Crosslink density shown in")

    def s(self, value_pa):
        return stress_from_pa(value_pa, self.stress)

    def d(self, nu, rho=None):
        return density_from_si(nu, self.density, rho)
