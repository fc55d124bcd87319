"""Declared parameters: one source of truth for each parameter's unit, bounds, typical range and meaning.

A model lists its parameters once as :class:`Param` records.  Input checks, the app's sliders, the fit
bounds, start values and the generic tests over the model registry all read these records.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from .errors import ParameterError


@dataclass(frozen=True, kw_only=True)
class Param:
    """One model parameter, in SI units.

    ``bounds`` is the mathematical domain (open at an infinite end); ``typical`` is the range a compound
    designer meets in practice (used for sliders, start values and property tests).  ``display_unit`` and
    ``display_scale`` give the trade unit shown at the edges: ``shown = value * display_scale``.
    ``held`` parameters (temperature, functionality, exponents) are kept fixed by the fitter unless the
    user frees them.
    """

    name: str
    symbol: str
    unit: str
    bounds: tuple[float, float]
    typical: tuple[float, float]
    default: float
    meaning: str
    source: str = ""
    display_unit: str = ""
    display_scale: float = 1.0
    held: bool = False
    log_scale: bool = False
    integer: bool = False

    def __post_init__(self):
        lo, hi = self.bounds
        tlo, thi = self.typical
        if not (lo <= tlo < thi <= hi):
            raise ValueError(f"parameter {self.name}: typical range {self.typical} outside bounds {self.bounds}")
        if not (lo <= self.default <= hi):
            raise ValueError(f"parameter {self.name}: default {self.default} outside bounds {self.bounds}")

    def check(self, value) -> float:
        """Return ``value`` as float or raise :class:`ParameterError` naming the parameter and its domain."""
        try:
            v = float(value)
        except (TypeError, ValueError):
            raise ParameterError(f"{self.meaning} ({self.name}) must be a number, got {value!r}") from None
        lo, hi = self.bounds
        if not math.isfinite(v) or not (lo <= v <= hi):
            raise ParameterError(
                f"{self.meaning} ({self.name}) = {v:g} {self.unit} is outside its allowed range "
                f"[{lo:g}, {hi:g}] {self.unit}"
            )
        return v




@dataclass(frozen=True)
class ParamSet:
    params: tuple[Param, ...] = field(default_factory=tuple)

    def __iter__(self):
        return iter(self.params)

    def __getitem__(self, name: str) -> Param:
        for p in self.params:
            if p.name == name:
                return p
        raise KeyError(name)

    def names(self) -> tuple[str, ...]:
        return tuple(p.name for p in self.params)

    def defaults(self) -> dict[str, float]:
        return {p.name: p.default for p in self.params}


# Shared declarations used by several models (declared once here).
TEMPERATURE = Param(
    name="T", symbol="T", unit="K", bounds=(1.0, 1000.0), typical=(233.15, 423.15), default=296.15,
    meaning="absolute temperature", source="SI", display_unit="°C", display_scale=1.0, held=True,
)
FUNCTIONALITY = Param(
    name="f", symbol="f", unit="1", bounds=(3.0, 64.0), typical=(3.0, 8.0), default=4.0,
    meaning="junction functionality (strands meeting at one crosslink)",
    source="Flory, Principles of Polymer Chemistry (1953): f = 4 for a tetrafunctional crosslink [common practice]",
    held=True,
)
STRAND_DENSITY = Param(
    name="nu", symbol="ν", unit="mol/m³", bounds=(1e-6, 1e5), typical=(20.0, 600.0), default=150.0,
    meaning="elastically active strand density", source="definition (docs/methods.md §densities)",
    display_unit="mol/m³", display_scale=1.0, log_scale=True,
)


def shear_modulus_param(name: str = "G", symbol: str = "G", meaning: str = "small-strain shear modulus",
                        default: float = 0.4e6) -> Param:
    return Param(
        name=name, symbol=symbol, unit="Pa", bounds=(0.0, 1e9), typical=(0.05e6, 3e6), default=default, meaning=meaning,
        source="definition", display_unit="MPa", display_scale=1e-6,
    )


#: smallest N a chain model accepts (a filled network's amplified N_eff = 1 + (N − 1)/X can lie below the
#: network's own N_MIN = 1.5, so the models allow a little less) [common practice]
KUHN_N_MIN = 1.01


def kuhn_number_param(default: float = 26.5) -> Param:
    return Param(
        name="N", symbol="N", unit="1", bounds=(KUHN_N_MIN, 1e6), typical=(3.0, 200.0), default=default,
        meaning="Kuhn segments per network strand (sets the locking stretch; at least 1.01: nearer 1 the chain is "
        "straight at rest and the small-strain modulus grows without bound)",
        source="Arruda & Boyce 1993, J. Mech. Phys. Solids 41:389", log_scale=True,
    )
