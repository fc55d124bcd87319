"""The molecular picture: from what a compounder thinks in (strand density, M_c, N, temperature,
functionality, polymer, filler) to every model's parameters.

Two densities are kept apart everywhere:

* **strand density** ν (mol/m³): elastically active network strands per m³ of dry rubber;
* **junction (crosslink) density** μ_j = 2ν/f (mol/m³) for junction functionality f.

Both are called "crosslink density" in papers; every number this module reports says which it is.
ν has ONE meaning here: elastically active strands (what the modulus measures).  The other density in
use is named apart: the **chemical (total) strand density** ν_chem = ν + 2ρ/M_n counts the dangling
chain ends too (Flory), see :attr:`Network.chemical_strand_density` and :meth:`Network.from_chemical`.

Filler (volume fraction φ) amplifies both the modulus and the strain the rubber phase sees, with the
Guth–Gold factor X = 1 + 2.5φ + 14.1φ²: moduli ×X, and the first invariant the chains feel is the
amplified Ī₁ = 3 + X(I₁ − 3) (Mullins & Tobin 1965; Bergström & Boyce 1999 [from memory]), so a filled
network locks where Ī₁ = 3N, i.e. like a gum network with N_eff = 1 + (N − 1)/X.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Any

from scipy.constants import R

from .constants import LAB_TEMPERATURE
from .deformation import MODES, Mode
from .entanglement import G_E_POLICY
from .errors import ParameterError
from .materials import Polymer, get_polymer, polymers  # the polymer table lives in materials.py

#: Smallest Kuhn number per strand a network may have: below it a strand is nearly straight at rest and the
#: Langevin chain statistics (and every modulus built on them) lose their meaning [common practice].
N_MIN = 1.5

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
    T: float = LAB_TEMPERATURE
    f: float = 4.0
    filler_fraction: float = 0.0
    Mn: float | None = None  # primary-chain molar mass before crosslinking, kg/mol (dangling ends)
    entanglements: bool = True
    bulk_modulus: float = BULK_MODULUS_TYPICAL
    expansion: float | None = None  # volume expansion coefficient, 1/K; None = the polymer's value
    N_direct: bool = field(init=False, default=False)

    @classmethod
    def from_chemical(cls, nu_chemical: float, Mn: float, **kw: Any) -> Network:
        """A network from its chemical (total) strand density ν_chem and primary-chain M_n: the
        elastically active density is ν = ν_chem(1 − 2M_c/M_n) with M_c = ρ/ν_chem (Flory [from memory],
        docs/methods.md §dangling-ends).  M_n ≤ 2M_c means no gel (every strand dangles): a ParameterError says so."""
        poly = get_polymer(kw.get("polymer", "NR"))
        if not (nu_chemical > 0 and Mn > 0 and math.isfinite(nu_chemical) and math.isfinite(Mn)):
            raise ParameterError(f"the chemical strand density and M_n must be positive; got {nu_chemical!r}, {Mn!r}")
        Mc = poly.density / nu_chemical
        if Mn <= 2.0 * Mc:
            raise ParameterError(
                f"M_n = {Mn * 1000:.4g} g/mol is not above 2M_c = {2 * Mc * 1000:.4g} g/mol: below the gel point "
                "every strand has a free end and the network carries no load. Check M_n (primary chains before "
                "crosslinking, kg/mol) or the crosslink density")
        return cls(nu=nu_chemical * (1.0 - 2.0 * Mc / Mn), Mn=Mn, **kw)

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
        if not (self.N >= N_MIN and math.isfinite(self.N)):
            raise ParameterError(
                f"Kuhn segments per strand N must be at least {N_MIN:g} (a shorter strand is nearly straight at "
                f"rest and chain statistics do not apply); got {self.N:.4g}"
                + ("" if self.N_direct else f" from M_c / M_K: the strand density {self.nu:.4g} mol/m³ is too high "
                   f"for {poly.key}, lower it below {poly.density / (N_MIN * poly.kuhn_molar_mass):.4g} mol/m³")
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

    def with_(self, **changes: Any) -> Network:
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
    def _nu(self) -> float:
        """ν as a number: ``__post_init__`` always sets it (from ν or M_c)."""
        assert self.nu is not None
        return self.nu

    @property
    def _N(self) -> float:
        """N as a number: ``__post_init__`` always sets it (given, or M_c/M_K)."""
        assert self.N is not None
        return self.N

    @property
    def strand_density(self) -> float:
        """ν, elastically active strands per m³ (mol/m³), as given."""
        return self._nu

    @property
    def junction_density(self) -> float:
        """μ_j = 2ν/f, junctions (crosslinks) per m³ (mol/m³)."""
        return 2.0 * self._nu / self.f

    @property
    def chemical_strand_density(self) -> float:
        """ν_chem = ν + 2ρ/M_n (mol/m³): all strands between junctions and chain ends, dangling ends
        included (Flory [from memory]); equal to ν without M_n.  Not what the modulus measures."""
        if self.Mn is None:
            return self._nu
        return self._nu + 2.0 * self.poly.density / self.Mn

    @property
    def dangling_factor(self) -> float:
        """Fraction of the chemical strands that are elastically active, ν/ν_chem = 1 − 2M_c,chem/M_n."""
        return self._nu / self.chemical_strand_density

    @property
    def effective_strand_density(self) -> float:
        """ν itself: the network's strand density is the elastically active one (kept for old callers)."""
        return self._nu

    @property
    def N_source(self) -> str:
        return "set directly" if self.N_direct else "from M_c / M_K of the polymer"

    # ----- moduli ------------------------------------------------------------------------------
    @property
    def filler_factor(self) -> float:
        return guth_gold(self.filler_fraction)

    @property
    def N_effective(self) -> float:
        """Kuhn number of a gum network that locks where this filled one does: 1 + (N − 1)/X (amplified
        first invariant, see the module text); N itself without filler."""
        return filler_amplified_N(self._N, self.filler_factor)

    @property
    def affine_modulus(self) -> float:
        """νRT·X (ν elastically active, Guth–Gold amplified), Pa."""
        return self.nu * R * self.T * self.filler_factor

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
        """Affine crosslink part plus entanglement part (the policy's G₀ for affine-reading models), Pa."""
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
        """Locking stretch in tension of a network with N Kuhn segments per strand and its filler
        (:func:`lock_from_N`)."""
        return lock_from_N(self._N, mode, self.filler_factor)

    def locking_range(self, mode) -> tuple[float, float]:
        """(lower, upper) locking stretches in the mode (below 1 the free direction reaches the lock)."""
        return lock_range_from_N(self._N, mode, self.filler_factor)

    # ----- to models -----------------------------------------------------------------------------
    def model_params(self, model) -> dict[str, float]:
        from .models import get_model

        m = get_model(model) if isinstance(model, str) else model
        return m.resolve(m.from_network(self))

    def model_notices(self, model) -> list:
        """Sentences (``Notice``) when the mapping to ``model`` had to bound a parameter (e.g. δ capped)."""
        from .models import get_model

        m = get_model(model) if isinstance(model, str) else model
        return list(m.network_notices(self))

    def summary(self) -> dict:
        """Every derived number, with units and what it is."""
        p = self.poly
        return {
            "polymer": {"value": p.key, "title": p.title, "source": p.source, "status": p.status},
            "strand_density": {"value": self.nu, "unit": "mol/m³", "meaning": "elastically active strands ν"},
            "chemical_strand_density": {"value": self.chemical_strand_density, "unit": "mol/m³",
                                        "meaning": "chemical (total) strands ν + 2ρ/M_n, dangling ends included"},
            "junction_density": {"value": self.junction_density, "unit": "mol/m³",
                                 "meaning": f"crosslink junctions μ_j = 2ν/f (f = {self.f:g})"},
            "Mc": {"value": self.Mc, "unit": "kg/mol", "meaning": "strand molar mass ρ/ν"},
            "N": {"value": self.N, "unit": "1", "meaning": f"Kuhn segments per strand ({self.N_source})"},
            "N_effective": {"value": self.N_effective, "unit": "1",
                            "meaning": "N of the gum network that locks where this filled one does, 1 + (N − 1)/X"},
            "T": {"value": self.T, "unit": "K"},
            "affine_modulus": {"value": self.affine_modulus, "unit": "Pa", "meaning": "νRT (corrected)"},
            "phantom_modulus": {"value": self.phantom_modulus, "unit": "Pa", "meaning": "(1 − 2/f)νRT"},
            "entanglement_modulus": {"value": self.entanglement_modulus, "unit": "Pa",
                                     "meaning": "G_e from the plateau modulus, ∝ T"},
            "locking_stretch": {m.value: self.locking_stretch(m) for m in MODES},
            "entanglement_policy": G_E_POLICY,
            "poisson_ratio": {"value": self.poisson_ratio, "unit": "1"},
            "bulk_to_shear": {"value": self.bulk_to_shear, "unit": "1"},
        }


def filler_amplified_N(N: float, X: float = 1.0) -> float:
    """N_eff = 1 + (N − 1)/X: with the amplified first invariant Ī₁ = 3 + X(I₁ − 3), the lock Ī₁ = 3N
    falls where I₁ = 3N_eff (Bergström & Boyce 1999 [from memory])."""
    if not (X >= 1.0 and math.isfinite(X)):
        raise ParameterError(f"the filler amplification factor X must be at least 1; got {X!r}")
    return 1.0 + (float(N) - 1.0) / X


def lock_range_from_N(N: float, mode, X: float = 1.0) -> tuple[float, float]:
    """(lower, upper) locking stretches of a network with N Kuhn segments per strand and filler
    amplification X: the chains reach full extension where the amplified invariant 3 + X(I₁ − 3) equals
    3N (eight-chain stretch √(Ī₁/3) = √N, Arruda & Boyce 1993; amplification Bergström & Boyce 1999)."""
    from .models.base import _I1_lock_stretches

    if not (N > 1.0 and math.isfinite(N)):
        raise ParameterError(f"Kuhn segments per strand N must exceed 1; got {N!r}")
    return _I1_lock_stretches(Mode.parse(mode), 3.0 * filler_amplified_N(N, X))


def lock_from_N(N: float, mode, X: float = 1.0) -> float:
    """The one place a network's locking stretch in tension comes from its N (and filler amplification
    X, 1 = gum): see :func:`lock_range_from_N`."""
    return lock_range_from_N(N, mode, X)[1]


__all__ = ["lock_from_N", "lock_range_from_N", "filler_amplified_N", "N_MIN", "G_E_POLICY", "Network",
            "Polymer", "polymers", "get_polymer", "guth_gold", "BULK_MODULUS_TYPICAL", "Mode"]
