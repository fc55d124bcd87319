"""Display units at the edges — stress in MPa, psi or kgf/cm², crosslink density in mol/m³, 10⁻⁴ mol/cm³ or
mol/kg.  The core stays SI; the app, the CLI tables and the report turn SI numbers into these units here.
Every factor comes from pint through :func:`network_models.units.unit_converter` (no factor typed by hand);
mol/kg divides the volumetric density by the polymer's density (ν/ρ).
"""

from __future__ import annotations

from functools import cache
from typing import Any

STRESS_UNITS = ("MPa", "psi", "kgf/cm²")
DENSITY_UNITS = ("mol/m³", "10⁻⁴ mol/cm³", "mol/kg")


@cache
def pascal_per(unit: str) -> float:
    """Pa in one ``unit`` of stress (pint, through network_models.units)."""
    from .units import unit_converter

    return float(unit_converter(unit, "pressure").factor)


@cache
def _cm_in_m() -> float:
    from .units import unit_converter

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


#: how stretch-valued numbers are shown: as stretch λ, or as elongation (λ − 1)·100 % (a display choice)
STRETCH_UNITS = ("stretch", "elongation")


def stretch_shown(lam: float | None, unit: str = "stretch") -> float | None:
    """A stretch λ shown as ``unit``: λ itself, or the elongation (λ − 1)·100 in %."""
    if lam is None:
        return None
    if unit == "stretch":
        return float(lam)
    if unit == "elongation":
        return (float(lam) - 1.0) * 100.0
    raise ValueError(f"unknown stretch unit {unit!r}; use one of {', '.join(STRETCH_UNITS)}")


def elongation_reserve(q: Any) -> Any:
    """The uniaxial locking stretch quantity read as an **elongation reserve**: (λ_lock − 1)·100 %, the
    elongation the network can take before it locks (an upper bound on the elongation at break), with its
    interval mapped the same way."""
    from dataclasses import replace

    def e(x):
        return stretch_shown(x, "elongation")

    return replace(q, key="lock_elongation", label="elongation reserve to the uniaxial lock", value=e(q.value),
                   unit="%", low=e(q.low), high=e(q.high), display_unit="%", display_scale=1.0,
                   note=(q.note + "; " if q.note else "") + "(λ_lock − 1)·100 %: an upper bound on the elongation "
                                                            "at break; real compounds break earlier")


def apply_to_comparison(cmp: Any, stress: str = "MPa", density: str = "mol/m³", stretch: str = "stretch"
                        ) -> Any:
    """Show a comparison's stresses in ``stress`` and strand/junction densities in ``density`` (its tables,
    the CLI summary, the report and the CSV's display columns; SI values are untouched).  Returns ``cmp``."""
    if stress not in STRESS_UNITS:
        raise ValueError(f"unknown stress unit {stress!r}; use one of {', '.join(STRESS_UNITS)}")
    if density not in DENSITY_UNITS:
        raise ValueError(f"unknown density unit {density!r}; use one of {', '.join(DENSITY_UNITS)}")
    from .materials import get_polymer

    for r in cmp.results:
        rho = get_polymer(r.compound.polymer).density
        for q in r.quantities.values():
            if q.unit == "Pa":
                q.display_unit, q.display_scale = stress, stress_from_pa(1.0, stress)
            elif q.unit == "mol/m³":
                q.display_unit, q.display_scale = density, density_from_si(1.0, density, rho)
    if stretch not in STRETCH_UNITS:
        raise ValueError(f"unknown stretch unit {stretch!r}; use one of {', '.join(STRETCH_UNITS)}")
    if stretch == "elongation":
        for r in cmp.results:
            if r.quantities.get("lock") is not None and r.quantities["lock"].value is not None:
                r.quantities["lock_elongation"] = elongation_reserve(r.quantities["lock"])
    cmp.display_units = {"stress": stress, "density": density, "stretch": stretch}
    return cmp


__all__ = ["DENSITY_UNITS", "STRESS_UNITS", "STRETCH_UNITS", "apply_to_comparison", "density_from_si",
           "elongation_reserve", "pascal_per", "stress_from_pa", "stretch_shown"]
