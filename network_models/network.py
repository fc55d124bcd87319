"""The molecular picture: from what a compounder thinks in (strand density, M_c, N, temperature,
functionality, polymer, filler) to every model's parameters.

Two densities are kept apart everywhere:

* **strand density** ν (mol/m³): elastically active network strands per m³ of dry rubber;
* **junction (crosslink) density** μ_j = 2ν/f (mol/m³) for junction functionality f.

Both are called "crosslink density" in papers; every number this module reports says which it is.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

from scipy.constants import R

from .deformation import MODES, Mode
from .materials import Polymer, get_polymer, polymers  # the polymer table lives in materials.py

#: Typical bulk modulus of an unfilled rubber, Pa [common practice: ~2 GPa for natural rubber gum].
BULK_MODULUS_TYPICAL = 2.0e9


def guth_gold(phi: float) -> float:
    """Guth–Gold modulus amplification 1 + 2.5φ + 14.1φ² (Guth & Gold 1938 [memory]); well-dispersed,
    weakly reinforcing filler at modest φ only."""
    if not (0.0 <= phi < 0.5):
        raise ValueError(f"filler volume fraction must be in [0, 0.5); got {phi!r}")
    return 1.0 + 2.5 * phi + 14.1 * phi * phi


@dataclass(frozen=True)
class Network:
    """A rubber network described by molecular quantities (SI units).

    Give the strand density ``nu`` (mol/m³) or ``Mc`` (kg/mol).  ``N`` (Kuhn segments per strand) is
    derived from M_c and the polymer's Kuhn molar mass unless given (``N_source`` says which).
    """

    polymer: str = "NR"
    nu: float | None = None
    Mc: float | None = None
    N: float | None = None
    T: float = 296.15
    f: float = 4.0
    filler_fraction: float = 0.0
    Mn: float | None = None  # primary-chain molar mass before crosslinking, kg/mol (dangling ends)
    entanglements: bool = True
    bulk_modulus: float = BULK_MODULUS_TYPICAL
    expansion: float | None = None  # volume expansion coefficient, 1/K; None = the polymer's value
    N_direct: bool = field(init=False, default=False)

    def __post_init__(self):
        poly = get_polymer(self.polymer)
        object.__setattr__(self, "polymer", poly.key)
        if self.nu is None and self.Mc is None:
            object.__setattr__(self, "nu", 150.0)
        if self.nu is not None and self.Mc is not None:
            raise ValueError("give either the strand density nu or the strand molar mass Mc, not both")
        if self.nu is not None:
            if not (self.nu > 0 and math.isfinite(self.nu)):
                raise ValueError(f"strand density must be positive (mol/m³); got {self.nu!r}")
            object.__setattr__(self, "Mc", poly.density / self.nu)
        else:
            if not (self.Mc > 0 and math.isfinite(self.Mc)):
                raise ValueError(f"strand molar mass M_c must be positive (kg/mol); got {self.Mc!r}")
            object.__setattr__(self, "nu", poly.density / self.Mc)
        object.__setattr__(self, "N_direct", self.N is not None)
        if self.N is None:
            object.__setattr__(self, "N", self.Mc / poly.kuhn_molar_mass)
        if not (self.N > 1.0 and math.isfinite(self.N)):
            raise ValueError(
                f"Kuhn segments per strand N must exceed 1; got {self.N!r}"
                + ("" if self.N_direct else " (from M_c / M_K: the strand density is too high for this polymer)")
            )
        if not (self.T > 0):
            raise ValueError(f"temperature must be above absolute zero; got {self.T!r} K")
        if not (self.f >= 3):
            raise ValueError(f"junction functionality f must be at least 3; got {self.f!r}")
        guth_gold(self.filler_fraction)
        if self.Mn is not None and not (self.Mn > 0):
            raise ValueError(f"primary-chain M_n must be positive (kg/mol); got {self.Mn!r}")
        if self.bulk_modulus <= 0:
            raise ValueError("bulk modulus must be positive")

    # ----- identity ---------------------------------------------------------------------------
    @property
    def poly(self) -> Polymer:
        return get_polymer(self.polymer)

    def with_(self, **changes) -> Network:
        """A copy with changes; setting ``nu`` clears ``Mc`` and vice versa."""
        if "Mc" in changes and "nu" not in changes:
            changes["nu"] = None
        elif "Mc" not in changes:
            changes["Mc"] = None  # ν stays the identity of the network
        if not self.N_direct and "N" not in changes:
            changes["N"] = None
        return replace(self, **changes)

    # ----- densities --------------------------------------------------------------------------
    @property
    def strand_density(self) -> float:
        """ν, elastically active strands per m³ (mol/m³), as given."""
        return self.nu

    @property
    def junction_density(self) -> float:
        """μ_j = 2ν/f, junctions (crosslinks) per m³ (mol/m³)."""
        return 2.0 * self.nu / self.f

    @property
    def dangling_factor(self) -> float:
        """Flory's correction 1 − 2M_c/M_n (physics.md §3 [memory]); 1 without M_n; floored at 0."""
        if self.Mn is None:
            return 1.0
        return max(0.0, 1.0 - 2.0 * self.Mc / self.Mn)

    @property
    def effective_strand_density(self) -> float:
        return self.nu * self.dangling_factor

    @property
    def N_source(self) -> str:
        return "set directly" if self.N_direct else "from M_c / M_K of the polymer"

    # ----- moduli ------------------------------------------------------------------------------
    @property
    def filler_factor(self) -> float:
        return guth_gold(self.filler_fraction)

    @property
    def affine_modulus(self) -> float:
        """νRT (dangling ends removed, Guth–Gold amplified), Pa."""
        return self.effective_strand_density * R * self.T * self.filler_factor

    @property
    def phantom_modulus(self) -> float:
        """(1 − 2/f)νRT, Pa (same corrections)."""
        return (1.0 - 2.0 / self.f) * self.affine_modulus

    @property
    def entanglement_modulus(self) -> float:
        """G_e: the polymer's plateau modulus scaled with absolute temperature (0 when switched off), Pa."""
        if not self.entanglements:
            return 0.0
        p = self.poly
        return p.plateau_modulus * (self.T / p.plateau_temperature) * self.filler_factor

    @property
    def small_strain_modulus(self) -> float:
        """Affine crosslink part plus entanglement part, Pa."""
        return self.affine_modulus + self.entanglement_modulus

    @property
    def poisson_ratio(self) -> float:
        G, K = self.small_strain_modulus, self.bulk_modulus
        return (3.0 * K - 2.0 * G) / (2.0 * (3.0 * K + G))

    @property
    def bulk_to_shear(self) -> float:
        return self.bulk_modulus / self.small_strain_modulus

    # ----- extensibility ------------------------------------------------------------------------
    def locking_stretch(self, mode) -> float:
        """Locking stretch in tension of a network with N Kuhn segments per strand (:func:`lock_from_N`)."""
        return lock_from_N(self.N, mode)

    # ----- to models -----------------------------------------------------------------------------
    def model_params(self, model) -> dict[str, float]:
        from .models import get_model

        m = get_model(model) if isinstance(model, str) else model
        return m.resolve(m.from_network(self))

    def summary(self) -> dict:
        """Every derived number, with units and what it is."""
        p = self.poly
        return {
            "polymer": {"value": p.key, "title": p.title, "source": p.source, "status": p.status},
            "strand_density": {"value": self.nu, "unit": "mol/m³", "meaning": "elastically active strands ν"},
            "junction_density": {"value": self.junction_density, "unit": "mol/m³",
                                 "meaning": f"crosslink junctions μ_j = 2ν/f (f = {self.f:g})"},
            "Mc": {"value": self.Mc, "unit": "kg/mol", "meaning": "strand molar mass ρ/ν"},
            "N": {"value": self.N, "unit": "1", "meaning": f"Kuhn segments per strand ({self.N_source})"},
            "T": {"value": self.T, "unit": "K"},
            "affine_modulus": {"value": self.affine_modulus, "unit": "Pa", "meaning": "νRT (corrected)"},
            "phantom_modulus": {"value": self.phantom_modulus, "unit": "Pa", "meaning": "(1 − 2/f)νRT"},
            "entanglement_modulus": {"value": self.entanglement_modulus, "unit": "Pa",
                                     "meaning": "G_e from the plateau modulus, ∝ T"},
            "locking_stretch": {m.value: self.locking_stretch(m) for m in MODES},
            "poisson_ratio": {"value": self.poisson_ratio, "unit": "1"},
            "bulk_to_shear": {"value": self.bulk_to_shear, "unit": "1"},
        }


def lock_from_N(N: float, mode) -> float:
    """The one place a network's locking stretch in tension comes from its N: the chain reaches full
    extension when the eight-chain stretch √(I₁/3) equals √N, i.e. I₁(λ) = 3N (Arruda & Boyce 1993)."""
    from .models import get_model

    return get_model("eight-chain").stretch_limit(mode, mu=1.0, N=N)


__all__ = ["lock_from_N", "Network", "Polymer", "polymers", "get_polymer", "guth_gold", "BULK_MODULUS_TYPICAL", "Mode"]
