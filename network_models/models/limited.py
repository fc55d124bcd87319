"""Phenomenological finite-extensibility companion: Gent (1996)."""

from __future__ import annotations

import numpy as np

from ..params import Param, ParamSet, shear_modulus_param
from .base import Model


class Gent(Model):
    name = "gent"
    colour = "#17a2a2"
    title = "Gent"
    family = "phenomenological"
    params = ParamSet((
        shear_modulus_param(),
        Param("Jm", "J_m", "1", (1e-6, 1e6), (10.0, 500.0), 80.0,
              "limiting value of I₁ − 3 (locks there)", "Gent 1996, Rubber Chem. Technol. 69:59",
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

    def small_strain_modulus(self, **params):
        return self.resolve(params)["G"]

    def from_network(self, network):
        return {"G": network.affine_modulus + network.entanglement_modulus, "Jm": 3.0 * (network.N - 1.0)}

    def guess(self, modulus):
        return {"G": modulus, "Jm": 80.0}
