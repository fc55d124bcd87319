"""Invented benchmark data (not measurements): a made-up compound "BX-1" tested in three modes, and a
made-up batch of uniaxial curves.  Generated from model equations plus seeded noise, for timing only."""

from __future__ import annotations

import numpy as np

from network_models import get_model
from network_models.curves import TestCurve

#: Invented "true" parameters of compound BX-1 (extended tube, SI units).  Not a real material.
#: δ = 0.15 puts the lock (I₁ − 3 = 1/δ²) within reach, so the data show the upturn and both the
#: eight-chain N and the tube δ are determined by them.
BX1_TRUE = {"Gc": 0.35e6, "Ge": 0.25e6, "delta": 0.15, "beta": 0.2}
BX1_RANGES = {"uniaxial": (1.05, 5.8), "equibiaxial": (1.05, 3.2), "planar": (1.05, 4.5)}


def three_mode_curves(points_per_mode: int = 20, noise: float = 0.015, seed: int = 7) -> list[TestCurve]:
    """About 60 points of invented three-mode data (uniaxial, equibiaxial, planar)."""
    rng = np.random.default_rng(seed)
    m = get_model("extended-tube")
    out = []
    for mode, (lo, hi) in BX1_RANGES.items():
        lam = np.linspace(lo, hi, points_per_mode)
        P = m.nominal_stress(mode, lam, BX1_TRUE)
        P = P * (1.0 + noise * rng.standard_normal(lam.size))
        out.append(TestCurve(mode, lam, P, name=f"BX-1 {mode} (invented)", metadata={"invented": True}))
    return out


def batch_curves(n: int, points: int = 50, noise: float = 0.01, seed: int = 11) -> list[TestCurve]:
    """``n`` invented uniaxial curves from the eight-chain model: μ and N vary as they might over a
    cure-dose and filler study, each curve ends at 80–95 % of its locking stretch, 1 % stress noise."""
    rng = np.random.default_rng(seed)
    m = get_model("eight-chain")
    mus = rng.uniform(0.25e6, 1.2e6, n)
    Ns = rng.uniform(6.0, 40.0, n)
    frac = rng.uniform(0.80, 0.95, n)
    out = []
    for i in range(n):
        p = {"mu": float(mus[i]), "N": float(Ns[i])}
        top = frac[i] * m.stretch_limit("uniaxial", p)
        lam = np.linspace(1.02, top, points)
        P = m.nominal_stress("uniaxial", lam, p) * (1.0 + noise * rng.standard_normal(points))
        out.append(TestCurve("uniaxial", lam, P, name=f"batch-{i:04d} (invented)", metadata={"true": p}))
    return out
