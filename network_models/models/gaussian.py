"""Gaussian-chain networks and their trade companions: neo-Hookean, affine, phantom, Mooney–Rivlin and
the constrained-junction model of Flory & Erman."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import Notice
from ..params import FUNCTIONALITY, Param, ParamSet, shear_modulus_param
from .base import ChainReading, Model, ModulusSplit


class NeoHookean(Model):
    name = "neo-hookean"
    colour = "#7a7a7a"
    title = "Neo-Hookean"
    family = "phenomenological"
    params = ParamSet((shear_modulus_param(),))
    equation = "W = (G/2)(I₁ − 3)"
    references = ("Treloar, The Physics of Rubber Elasticity, 3rd ed. (1975), ch. 4",)
    assumption = "Gaussian network, modulus taken as measured (no network interpretation)"

    def _dW_dI(self, I1, I2, p):
        return np.full_like(I1, 0.5 * p["G"]), np.zeros_like(I1)

    def _W_inv(self, I1, I2, p):
        return 0.5 * p["G"] * (I1 - 3.0)

    def small_strain_modulus(self, **params: Any) -> float:
        return self.resolve(params)["G"]

    def _from_moduli(self, Gx, Ge, network):
        return {"G": Gx + Ge}

    def guess(self, modulus: float) -> dict:
        return {"G": modulus}


class Affine(NeoHookean):
    name = "affine"
    colour = "#1f5f8b"
    title = "Affine network"
    family = "network (Gaussian)"
    params = ParamSet((shear_modulus_param(meaning="affine network modulus νRT"),))
    equation = "W = (G/2)(I₁ − 3),  G = νRT = ρRT/M_c"
    references = ("Kuhn; Wall; Flory — affine Gaussian network, as in Treloar (1975) ch. 4",)
    assumption = ("affine junction displacements: G = νRT (ν = strand density); from a network, "
                  "entanglements add G_e to G")


class Phantom(NeoHookean):
    name = "phantom"
    colour = "#7fb3d9"
    title = "Phantom network"
    family = "network (Gaussian)"
    params = ParamSet((shear_modulus_param(meaning="phantom network modulus (1 − 2/f)νRT"),))
    equation = "W = (G/2)(I₁ − 3),  G = ξRT = (1 − 2/f)νRT"
    references = ("James & Guth 1943, J. Chem. Phys. 11:455 — phantom network",)
    assumption = ("junctions fluctuate freely: G = (1 − 2/f)νRT (cycle rank ξ = ν − μ_j); from a network, "
                  "entanglements add G_e to G")

    def network_crosslink_modulus(self, network: Any) -> float:
        return network.phantom_modulus


class MooneyRivlin(Model):
    name = "mooney-rivlin"
    colour = "#d4489a"
    title = "Mooney–Rivlin"
    family = "phenomenological"
    params = ParamSet((
        Param(name="C1", symbol="C₁", unit="Pa", bounds=(0.0, 1e9), typical=(0.02e6, 1.5e6), default=0.18e6,
              meaning="Mooney–Rivlin C₁ (2C₁: Mooney intercept)",
              source="Mooney 1940, J. Appl. Phys. 11:582", display_unit="MPa", display_scale=1e-6),
        Param(name="C2", symbol="C₂", unit="Pa", bounds=(-1e9, 1e9), typical=(0.0, 0.5e6), default=0.05e6,
              meaning="Mooney–Rivlin C₂ (2C₂: Mooney slope)",
              source="Rivlin 1948, Phil. Trans. R. Soc. A241:379", display_unit="MPa", display_scale=1e-6),
    ))
    equation = "W = C₁(I₁ − 3) + C₂(I₂ − 3);  σ* = 2C₁ + 2C₂/λ"
    references = ("Mooney 1940, J. Appl. Phys. 11:582", "Rivlin 1948, Phil. Trans. R. Soc. A241:379")
    assumption = "empirical; 2C₁ and 2C₂ bracket the modulus, 2C₂ often read as the entanglement share"

    def _dW_dI(self, I1, I2, p):
        return np.full_like(I1, p["C1"]), np.full_like(I1, p["C2"])

    def _W_inv(self, I1, I2, p):
        return p["C1"] * (I1 - 3.0) + p["C2"] * (I2 - 3.0)

    def modulus_split(self, values: dict) -> ModulusSplit:
        G0 = float(self.small_strain_modulus(**values))
        if values["C2"] < 0:
            return ModulusSplit(total=G0, separable=False,
                                basis="2C₂ is negative, so it cannot be read as an entanglement part")
        return ModulusSplit(total=G0, crosslink=2.0 * values["C1"], entanglement=2.0 * values["C2"],
                            separable=True, basis="2C₁ read as crosslink part, 2C₂ as entanglement part "
                            "(the trade's reading of the Mooney plot)")

    def stability_notes(self, values: dict) -> list:
        if values.get("C2", 0.0) < 0:
            return [Notice("the fitted Mooney–Rivlin C₂ is negative: the model is not stable at large strains "
                           "and its equibiaxial prediction can fall with stretch; do not use it outside the "
                           "tested range", "unstable", self.name)]
        return []

    def small_strain_modulus(self, **params: Any) -> float:
        p = self.resolve(params)
        return 2.0 * (p["C1"] + p["C2"])

    def _from_moduli(self, Gx, Ge, network):
        return {"C1": Gx / 2.0, "C2": Ge / 2.0}

    def guess(self, modulus: float) -> dict:
        return {"C1": 0.4 * modulus, "C2": 0.1 * modulus}


class ConstrainedJunction(Model):
    name = "constrained-junction"
    colour = "#8c5a2b"
    title = "Constrained junction (Flory–Erman)"
    family = "network (Gaussian)"
    has_stretch_part = True
    params = ParamSet((
        shear_modulus_param("G_ph", "G_ph", "phantom part ξRT", 0.2e6),
        Param(name="kappa", symbol="κ", unit="1", bounds=(0.0, 1e4), typical=(0.5, 20.0), default=5.0,
              meaning="constraint strength on junction fluctuations (κ→0 phantom, κ→∞ affine)",
              source="Flory & Erman 1982, Macromolecules 15:800 [paper, as printed in Arruda & Boyce 1993 appendix]"),
        FUNCTIONALITY,
    ))
    equation = ("W = ½ξRT(I₁ − 3) + ½μ_jRT Σ[Bᵢ + Dᵢ − ln(1 + Bᵢ) − ln(1 + Dᵢ)],  "
                "Bᵢ = κ²(λᵢ² − 1)/(λᵢ² + κ)², Dᵢ = λᵢ²Bᵢ/κ,  μ_j = 2ξ/(f − 2)")
    references = ("Flory & Erman 1982, Macromolecules 15:800",
                  "Arruda & Boyce 1993, J. Mech. Phys. Solids 41:389, appendix")
    assumption = ("phantom network plus junction constraints of strength κ; junction density μ_j = 2ν/f; "
                  "from a network, G_e scales G_ph so that G₀ = G_x + G_e")

    def _mu_j(self, p):
        return p["G_ph"] * 2.0 / (p["f"] - 2.0)

    def _dW_dI(self, I1, I2, p):
        return np.full_like(I1, 0.5 * p["G_ph"]), np.zeros_like(I1)

    def _W_inv(self, I1, I2, p):
        return 0.5 * p["G_ph"] * (I1 - 3.0)

    def _BD(self, a, k):
        B = k * k * (a - 1.0) / (a + k) ** 2
        return B, a * B / k

    def _W_lam(self, l1, l2, l3, p):
        k = p["kappa"]
        if k == 0:
            return np.zeros_like(l1)
        tot = np.zeros_like(l1)
        for lam in (l1, l2, l3):
            B, D = self._BD(lam * lam, k)
            tot = tot + B + D - np.log1p(B) - np.log1p(D)
        return 0.5 * self._mu_j(p) * tot

    def _dW_dlam(self, lam, p):
        k = p["kappa"]
        if k == 0:
            return np.zeros_like(lam)
        a = lam * lam
        B, D = self._BD(a, k)
        dB = k * k * (k + 2.0 - a) / (a + k) ** 3  # dB/d(λ²)
        dD = (B + a * dB) / k
        dW_da = 0.5 * self._mu_j(p) * (dB * B / (1.0 + B) + dD * D / (1.0 + D))
        return 2.0 * lam * dW_da

    @staticmethod
    def _modulus_per_G_ph(kappa, f):
        # G = ξRT + μ_jRT κ²(κ² + 1)/(1 + κ)⁴ with μ_j = 2ξ/(f − 2)  [derived from the strain energy above]
        return 1.0 + 2.0 / (f - 2.0) * kappa * kappa * (kappa * kappa + 1.0) / (1.0 + kappa) ** 4

    def small_strain_modulus(self, **params: Any) -> float:
        p = self.resolve(params)
        return p["G_ph"] * self._modulus_per_G_ph(p["kappa"], p["f"])

    def network_crosslink_modulus(self, network: Any) -> float:
        # the phantom part (1 − 2/f)νRT·X with the default constraint strength κ on top
        return network.phantom_modulus * self._modulus_per_G_ph(self.params["kappa"].default, network.f)

    def _from_moduli(self, Gx, Ge, network):
        k = self.params["kappa"].default
        return {"G_ph": (Gx + Ge) / self._modulus_per_G_ph(k, network.f), "kappa": k, "f": network.f}

    def network_reading(self, values: dict) -> list:
        f = float(values["f"])
        return [ChainReading(key="model-phantom-part", label=f"{self.title}: phantom part G_ph = (1 − 2/f)νRT",
                             assumes=f"G_ph = (1 − 2/f)νRT with the model's f = {f:g}", modulus_param="G_ph",
                             factor=1.0 - 2.0 / f, f=f)]

    def guess(self, modulus: float) -> dict:
        return {"G_ph": 0.6 * modulus, "kappa": 5.0}
