"""Non-Gaussian (Langevin) chain networks: eight-chain (Arruda–Boyce) and three-chain (Wang–Guth)."""

from __future__ import annotations

import math
from functools import lru_cache
from typing import Any

import numpy as np

from ..langevin import inverse_langevin, inverse_langevin_scalar, langevin_derivative
from ..params import ParamSet, kuhn_number_param, shear_modulus_param
from ._special import CHAIN_SERIES_MAX_T, chain_energy, chain_energy_difference
from .base import ChainReading, Model


def _chain_energy_sum(d, t0, r, r0):
    """g(r) − g(r0) per chain: the series (no cancellation at large N) where t = t0 + d = r² is small,
    the exact form elsewhere."""
    if t0 > CHAIN_SERIES_MAX_T:
        return chain_energy(r, r0)
    with np.errstate(all="ignore"):
        small = (t0 + d) <= CHAIN_SERIES_MAX_T
        series = chain_energy_difference(np.where(small, d, 0.0), t0)
        exact = chain_energy(np.where(small, r0, r), r0)
    return np.where(small, series, exact)


@lru_cache(maxsize=512)
def _eight_chain_modulus_per_mu(N: float) -> float:
    """G₀/μ = √N L⁻¹(1/√N)/3 (docs/methods.md §eight-chain [derived]); cached because a network maps to the
    model once per mode and per readout with the same N."""
    sn = math.sqrt(N)
    return sn * inverse_langevin_scalar(1.0 / sn) / 3.0


@lru_cache(maxsize=512)
def _three_chain_modulus_per_mu(N: float) -> float:
    """G₀/μ of the three-chain model: separable W = Σ w(λᵢ) gives G = (w'(1) + w''(1))/2 [derived]."""
    sn = math.sqrt(N)
    beta = inverse_langevin_scalar(1.0 / sn)
    return float((sn * beta + 1.0 / langevin_derivative(beta)) / 6.0)


def _chain_reading(model):
    return [ChainReading(key="model-chain-modulus", label=f"{model.title}: chain modulus μ = νRT",
                         assumes="μ = nkT = νRT (affine chain density); N as fitted", modulus_param="mu", factor=1.0,
                         N_param="N",
                         note="N here is the fitted Kuhn number (filler-amplified when the compound is filled)")]


class EightChain(Model):
    name = "eight-chain"
    colour = "#c0392b"
    title = "Eight-chain (Arruda–Boyce)"
    family = "network (Langevin chains)"
    params = ParamSet((
        shear_modulus_param("mu", "μ", "chain modulus nkT (small-strain modulus is slightly larger)", 0.27e6),
        kuhn_number_param(),
    ))
    equation = ("W = μN[(λ_ch/√N)β + ln(β/sinh β)],  λ_ch = √(I₁/3),  β = L⁻¹(λ_ch/√N);  "
                "2W₁ = (μ/3)(√N/λ_ch)β")
    references = ("Arruda & Boyce 1993, J. Mech. Phys. Solids 41:389",)
    assumption = ("affine chain density n: μ = nkT = νRT; locking when λ_ch reaches √N; from a network, "
                  "entanglements count as extra chains (μ set so that G₀ = G_x + G_e)")

    def _dW_dI(self, I1, I2, p):
        sn = np.sqrt(p["N"])
        lch = np.sqrt(I1 / 3.0)
        beta = inverse_langevin(lch / sn)
        return (p["mu"] / 6.0) * (sn / lch) * beta, np.zeros_like(I1)

    def _W_inv(self, I1, I2, p):
        N = p["N"]
        # W = μN[g(r) − g(r0)], r² = I₁/(3N), r0² = 1/N; r² − r0² = (I₁ − 3)/(3N) formed directly
        return p["mu"] * N * _chain_energy_sum((I1 - 3.0) / (3.0 * N), 1.0 / N, np.sqrt(I1 / (3.0 * N)),
                                               1.0 / np.sqrt(N))

    def _margin(self, l1, l2, l3, I1, p):
        return 3.0 * p["N"] - I1

    def _lock_I1(self, p):
        return 3.0 * p["N"]

    def small_strain_modulus(self, **params: Any) -> float:
        p = self.resolve(params)
        return p["mu"] * _eight_chain_modulus_per_mu(p["N"])

    def _from_moduli(self, Gx, Ge, network):
        # μ chosen so that the small-strain modulus μ√N L⁻¹(1/√N)/3 is exactly G_x + G_e (policy)
        N = network.N_effective
        return {"mu": (Gx + Ge) / _eight_chain_modulus_per_mu(N), "N": N}

    def network_reading(self, values: dict) -> list:
        return _chain_reading(self)

    def guess(self, modulus: float) -> dict:
        return {"mu": 0.95 * modulus, "N": 30.0}


class ThreeChain(Model):
    name = "three-chain"
    colour = "#9bbb2f"
    title = "Three-chain (Wang–Guth)"
    family = "network (Langevin chains)"
    has_invariant_part = False
    has_stretch_part = True
    params = ParamSet((shear_modulus_param("mu", "μ", "chain modulus nkT", 0.27e6), kuhn_number_param()))
    equation = "σ₁ − σ₂ = (μ/3)√N[λ₁L⁻¹(λ₁/√N) − λ₂L⁻¹(λ₂/√N)]"
    references = ("Wang & Guth 1952, J. Chem. Phys. 20:1144",
                  "Arruda & Boyce 1993, J. Mech. Phys. Solids 41:389, eq. 22")
    assumption = "chains along the principal axes; μ = nkT; locks when any λᵢ reaches √N"

    def _dW_dlam(self, lam, p):
        sn = np.sqrt(p["N"])
        return (p["mu"] / 3.0) * sn * inverse_langevin(lam / sn)

    def _W_lam(self, l1, l2, l3, p):
        N = p["N"]
        t0, r0 = 1.0 / N, 1.0 / np.sqrt(N)
        tot = sum(_chain_energy_sum((lam * lam - 1.0) / N, t0, lam / np.sqrt(N), r0) for lam in (l1, l2, l3))
        return (p["mu"] * N / 3.0) * tot

    def _margin(self, l1, l2, l3, I1, p):
        return np.sqrt(p["N"]) - np.maximum(np.maximum(l1, l2), l3)

    def _lock_stretch(self, p):
        return float(np.sqrt(p["N"]))

    def small_strain_modulus(self, **params: Any) -> float:
        p = self.resolve(params)
        return p["mu"] * _three_chain_modulus_per_mu(p["N"])

    def _from_moduli(self, Gx, Ge, network):
        N = network.N_effective
        return {"mu": (Gx + Ge) / _three_chain_modulus_per_mu(N), "N": N}

    def network_reading(self, values: dict) -> list:
        return _chain_reading(self)

    def guess(self, modulus: float) -> dict:
        return {"mu": 0.95 * modulus, "N": 30.0}
