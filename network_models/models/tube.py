"""Tube models: crosslinks plus a non-permanent entanglement (tube) contribution.

G_c belongs to the crosslink strands, G_e to the topological constraints (tied to the plateau modulus of
the uncrosslinked polymer).  Both scale with absolute temperature at a fixed network.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..deformation import Mode
from ..errors import Notice
from ..params import Param, ParamSet, shear_modulus_param
from .base import Model, ModulusSplit

_GC = shear_modulus_param("Gc", "G_c", "crosslink modulus", 0.3e6)
_GE = shear_modulus_param("Ge", "G_e", "entanglement (tube) modulus", 0.2e6)


def _tube_split(model, values) -> ModulusSplit:
    """Tube models fit the entanglement part themselves: G_e as fitted, the rest of G₀ is crosslinks."""
    G0 = float(model.small_strain_modulus(**values))
    Ge = float(values["Ge"])
    return ModulusSplit(total=G0, crosslink=G0 - Ge, entanglement=Ge, separable=True,
                        basis=f"G_e fitted by the {model.title} model; crosslink part = G₀ − G_e")


class NonAffineTube(Model):
    name = "non-affine-tube"
    colour = "#2e8540"
    title = "Non-affine tube"
    family = "tube"
    has_stretch_part = True
    params = ParamSet((_GC, _GE))
    equation = ("W = (G_c/2)(I₁ − 3) + G_e Σᵢ(λᵢ + 1/λᵢ − 2);  uniaxial σ* = G_c + G_e/(λ − √λ + 1)")
    references = ("Rubinstein & Panyukov 1997, Macromolecules 30:8036 [memory: form not re-read]",)
    assumption = "G_c = crosslink strands (affine, νRT); G_e = entanglements (≈ plateau modulus)"

    def _dW_dI(self, I1, I2, p):
        return np.full_like(I1, 0.5 * p["Gc"]), np.zeros_like(I1)

    def _W_inv(self, I1, I2, p):
        return 0.5 * p["Gc"] * (I1 - 3.0)

    def _dW_dlam(self, lam, p):
        return p["Ge"] * (1.0 - 1.0 / (lam * lam))

    def _W_lam(self, l1, l2, l3, p):
        return p["Ge"] * (l1 + 1.0 / l1 + l2 + 1.0 / l2 + l3 + 1.0 / l3 - 6.0)

    def modulus_split(self, values: dict) -> ModulusSplit:
        return _tube_split(self, values)

    def small_strain_modulus(self, **params: Any) -> float:
        p = self.resolve(params)
        return p["Gc"] + p["Ge"]

    def _from_moduli(self, Gx, Ge, network):
        return {"Gc": Gx, "Ge": Ge}

    def guess(self, modulus: float) -> dict:
        return {"Gc": 0.6 * modulus, "Ge": 0.4 * modulus}


# Gauss–Legendre nodes for the slip-tube energy integral along the uniaxial path.
_GL_X, _GL_W = np.polynomial.legendre.leggauss(48)


class SlipTube(Model):
    name = "slip-tube"
    colour = "#7b4fa0"
    title = "Slip-tube (Mooney-plot form)"
    family = "tube"
    params = ParamSet((_GC, _GE))
    modes = (Mode.UNIAXIAL,)
    equation = "σ* = G_c + G_e/(0.74λ + 0.61λ^(−1/2) − 0.35)   (uniaxial only)"
    references = ("Rubinstein & Panyukov 2002, Macromolecules 35:6670 [memory: form not re-read]",)
    assumption = "a uniaxial Mooney-plot form only; G_c crosslinks, G_e entanglements"

    @staticmethod
    def _den(lam):
        return 0.74 * lam + 0.61 / np.sqrt(lam) - 0.35

    def _nominal_stress(self, mode, lam, p):
        with np.errstate(all="ignore"):
            red = p["Gc"] + p["Ge"] / self._den(lam)
            out = red * (lam - lam**-2)
        return np.where(np.isfinite(lam) & (lam > 0), out, np.nan)

    def energy(self, mode: Mode | str, lam: Any, params: dict | None = None, **kw: Any) -> np.ndarray:
        mode = self._require_mode(mode)
        p = self.resolve(params, **kw)
        lam = np.asarray(lam, dtype=np.float64)
        with np.errstate(all="ignore"):
            gc = 0.5 * p["Gc"] * (lam * lam + 2.0 / lam - 3.0)
            # ∫₁^λ G_e (s − s⁻²)/den(s) ds by 48-point Gauss–Legendre (the integrand is smooth)
            half = 0.5 * (lam - 1.0)
            s = 1.0 + half[..., None] * (_GL_X + 1.0)
            integrand = (s - s**-2) / self._den(s)
            ge = p["Ge"] * half * np.sum(_GL_W * integrand, axis=-1)
            out = gc + ge
        return np.where(np.isfinite(lam) & (lam > 0), out, np.nan)

    def modulus_split(self, values: dict) -> ModulusSplit:
        return _tube_split(self, values)

    def small_strain_modulus(self, **params: Any) -> float:
        p = self.resolve(params)
        return p["Gc"] + p["Ge"]  # den(1) = 1

    def _from_moduli(self, Gx, Ge, network):
        return {"Gc": Gx, "Ge": Ge}

    def guess(self, modulus: float) -> dict:
        return {"Gc": 0.6 * modulus, "Ge": 0.4 * modulus}


# Sign before the logarithm in the crosslink part of the extended tube model: "+".  Source of the model:
# Kaliske & Heinrich 1999, Rubber Chem. Technol. 72:602 (doi 10.5254/1.3538822); the crosslink part is the
# Edwards–Vilgis finite-extensibility term.  The sign and its consequences are derived in
# docs/methods.md §extended-tube: with "+ ln" the small-strain modulus of this W is G_c(1 − 2δ²) + G_e, so a
# positive modulus needs δ² < ½ (the domain of δ below), and W is defined while δ²(I₁ − 3) < 1.  Tests check
# the modulus by differentiating W numerically.
EXTENDED_TUBE_LOG_SIGN = +1.0

# Where the crosslink part stays stable [derived from W above, x = I₁ − 3 ≥ 0, u = 1 − δ²x ∈ (0, 1]]:
#   2W₁/G_c = [(1 − δ²) − δ²u]/u²            > 0 for every u ≤ 1  ⇔  δ² < ½  (worst case u = 1, small strain)
#   2W₁₁/G_c = δ²[2(1 − δ²) − δ²u]/u³        > 0 whenever δ² < ⅔
# so δ² < ½ keeps W₁ > 0 and W₁₁ > 0 (the usual sufficient conditions for an I₁ model to be stable in every
# homogeneous mode [from memory]) and the small-strain modulus G_c(1 − 2δ²) positive.
#: largest δ the model accepts (just below 1/√2)
DELTA_MAX = 0.7071
#: largest δ the network → model mapping produces: the crosslink part keeps at least half its modulus
#: (1 − 2δ² ≥ ½); a network that asks for more (N_eff < 7/3) gets this δ and a notice
DELTA_NETWORK_MAX = 0.5


class ExtendedTube(Model):
    name = "extended-tube"
    colour = "#e08e0b"
    title = "Extended tube (Kaliske–Heinrich)"
    family = "tube"
    has_stretch_part = True
    params = ParamSet((
        _GC, _GE,
        Param(name="delta", symbol="δ", unit="1", bounds=(0.0, DELTA_MAX), typical=(0.02, 0.3), default=0.1,
              meaning="finite extensibility: the model locks at I₁ − 3 = 1/δ² (δ² < ½ keeps W convex in I₁)",
              source="Kaliske & Heinrich 1999, Rubber Chem. Technol. 72:602; bound δ² < ½ derived in "
              "docs/methods.md §extended-tube"),
        Param(name="beta", symbol="β", unit="1", bounds=(1e-6, 1.0), typical=(0.05, 1.0), default=0.2,
              meaning="tube-constraint exponent (0 < β ≤ 1; 0.2 typical)",
              source="Kaliske & Heinrich 1999 [memory]", held=True),
    ))
    equation = ("W = (G_c/2)[(1 − δ²)(I₁ − 3)/(1 − δ²(I₁ − 3)) + ln(1 − δ²(I₁ − 3))] "
                "+ (2G_e/β²)Σᵢ(λᵢ^(−β) − 1)")
    references = ("Kaliske & Heinrich 1999, Rubber Chem. Technol. 72:602 (the model); sign of the log term and "
                  "the bound δ² < ½: docs/methods.md §extended-tube",)
    assumption = "G_c crosslinks, G_e entanglements; δ sets the extensibility of crosslink strands"

    def _dW_dI(self, I1, I2, p):
        d2 = p["delta"] ** 2
        u = 1.0 - d2 * (I1 - 3.0)
        W1 = 0.5 * p["Gc"] * ((1.0 - d2) / (u * u) - EXTENDED_TUBE_LOG_SIGN * d2 / u)
        return W1, np.zeros_like(I1)

    def _W_inv(self, I1, I2, p):
        d2 = p["delta"] ** 2
        x = I1 - 3.0
        u = 1.0 - d2 * x
        return 0.5 * p["Gc"] * ((1.0 - d2) * x / u + EXTENDED_TUBE_LOG_SIGN * np.log(u))

    def _dW_dlam(self, lam, p):
        b = p["beta"]
        return -(2.0 * p["Ge"] / b) * lam ** (-b - 1.0)

    def _W_lam(self, l1, l2, l3, p):
        b = p["beta"]
        return (2.0 * p["Ge"] / b**2) * (l1**-b + l2**-b + l3**-b - 3.0)

    def _margin(self, l1, l2, l3, I1, p):
        d2 = p["delta"] ** 2
        return 1.0 - d2 * (I1 - 3.0)

    def _lock_I1(self, p):
        return 3.0 + 1.0 / p["delta"] ** 2 if p["delta"] > 0 else None

    def modulus_split(self, values: dict) -> ModulusSplit:
        return _tube_split(self, values)

    def small_strain_modulus(self, **params: Any) -> float:
        p = self.resolve(params)
        d2 = p["delta"] ** 2
        return p["Gc"] * (1.0 - d2 + EXTENDED_TUBE_LOG_SIGN * (-d2)) + p["Ge"]

    @staticmethod
    def _network_delta(network) -> tuple[float, float]:
        """(δ used, δ asked): the extensibility matched to the eight-chain lock of the filler-amplified
        network, I₁ − 3 = 3(N_eff − 1) ⇒ δ = 1/√(3(N_eff − 1)), capped at DELTA_NETWORK_MAX."""
        asked = 1.0 / math.sqrt(3.0 * (network.N_effective - 1.0))
        return min(asked, DELTA_NETWORK_MAX), asked

    def _from_moduli(self, Gx, Ge, network):
        delta, _ = self._network_delta(network)
        # G_c chosen so that the small-strain modulus G_c(1 − 2δ²) + G_e is exactly G_x + G_e (policy)
        return {"Gc": Gx / (1.0 - 2.0 * delta * delta), "Ge": Ge, "delta": delta,
                "beta": self.params["beta"].default}

    def network_notices(self, network: Any) -> list:
        delta, asked = self._network_delta(network)
        if asked <= delta:
            return []
        return [Notice(
            f"extended tube: this network's N (effective {network.N_effective:.3g}) asks for δ = {asked:.3g}, "
            f"beyond the stable range; δ is capped at {DELTA_NETWORK_MAX:g}, so this model locks at "
            f"I₁ − 3 = {1 / DELTA_NETWORK_MAX**2:g} instead of {1 / asked**2:.3g} (a strand this short is at "
            "the edge of what the model describes)", "bounded", self.name)]

    def stability_notes(self, values: dict) -> list:
        d2 = float(values.get("delta", 0.0)) ** 2
        if 1.0 - 2.0 * d2 < 0.1:
            return [Notice(f"extended tube: δ = {math.sqrt(d2):.3g} is close to 1/√2, where the crosslink part "
                           "loses its small-strain stiffness (G_c(1 − 2δ²) → 0); treat G_c as poorly determined",
                           "unstable", self.name)]
        return []

    def guess(self, modulus: float) -> dict:
        return {"Gc": 0.6 * modulus, "Ge": 0.4 * modulus, "delta": 0.08}
