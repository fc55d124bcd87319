"""Phenomenological finite-extensibility companion: Gent (1996)."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..params import Param, ParamSet, shear_modulus_param
from .base import ChainReading, Model


class Gent(Model):
    name = "gent"
    colour = "#17a2a2"
    title = "Gent"
    family = "phenomenological"
    params = ParamSet((
        shear_modulus_param(),
        Param(name="Jm", symbol="J_m", unit="1", bounds=(1e-6, 1e6), typical=(10.0, 500.0), default=80.0,
              meaning="limiting value of I₁ − 3 (locks there)", source="Gent 1996, Rubber Chem. Technol. 69:59",
              log_scale=True),
    ))
    equation = "W = −(G J_m/2) ln(1 − (I₁ − 3)/J_m)"
    references = ("Gent 1996, Rubber Chem. Technol. 69:59",)
    assumption = "empirical; J_m ≈ 3N − 3 when compared with the eight-chain lock"

    def _dW_dI(self, I1, I2, p):
        return 0.5 * p["G"] / (1.0 - (I1 - 3.0) / p["Jm"]), np.zeros_like(I1)

    def _W_inv(self, I1, I2, p):
        return -0.5 * p["G"] * p["Jm"] * np.log1p(-(I1 - 3.0) / p["Jm"])

    def _margin(self, l1, l2, l3, I1, p):
        return p["Jm"] - (I1 - 3.0)

    def _lock_I1(self, p):
        return p["Jm"] + 3.0

    def small_strain_modulus(self, **params: Any) -> float:
        return self.resolve(params)["G"]

    def _from_moduli(self, Gx, Ge, network):
        # J_m matched to the eight-chain lock I₁ = 3N of the (filler-amplified) network
        return {"G": Gx + Ge, "Jm": 3.0 * (network.N_effective - 1.0)}

    def network_reading(self, values: dict) -> list:
        return [ChainReading(key="model-chain-equivalent", label=f"{self.title}: G = νRT, N from J_m",
                             assumes="G = νRT (affine, entanglements counted); N = J_m/3 + 1 locks where the "
                                     "eight-chain model with that N does", modulus_param="G", factor=1.0, N_param="Jm",
                             N_map=lambda J: J / 3.0 + 1.0,
                             note="N from J_m = 3(N − 1) (matching locks), not from M_c/M_K")]

    def guess(self, modulus: float) -> dict:
        return {"G": modulus, "Jm": 80.0}
