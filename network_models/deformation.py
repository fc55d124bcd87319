"""Homogeneous incompressible test modes: principal stretches and invariants.

Conventions (docs/methods.md §test-modes): direction 1 is the loaded direction, direction 3 is the free (stress-free)
direction.  Stress in test data is nominal: force per undeformed cross-section.
"""

from __future__ import annotations

from enum import StrEnum
from typing import Any

import numpy as np


class Mode(StrEnum):
    UNIAXIAL = "uniaxial"
    EQUIBIAXIAL = "equibiaxial"
    PLANAR = "planar"

    @classmethod
    def parse(cls, value) -> Mode:
        if isinstance(value, Mode):
            return value
        text = str(value).strip().lower().replace("_", " ").replace("-", " ")
        aliases = {
            "uniaxial": cls.UNIAXIAL, "uniaxial tension": cls.UNIAXIAL, "tension": cls.UNIAXIAL,
            "simple tension": cls.UNIAXIAL, "compression": cls.UNIAXIAL, "uniaxial compression": cls.UNIAXIAL,
            "equibiaxial": cls.EQUIBIAXIAL, "biaxial": cls.EQUIBIAXIAL, "equibiaxial tension": cls.EQUIBIAXIAL,
            "planar": cls.PLANAR, "pure shear": cls.PLANAR, "planar tension": cls.PLANAR,
        }
        try:
            return aliases[text]
        except KeyError:
            raise ValueError(
                f"unknown test mode {value!r}; use one of: uniaxial, equibiaxial, planar"
            ) from None

    @property
    def energy_factor(self) -> float:
        """dW/dλ along the mode's path equals ``energy_factor`` × nominal stress (two loaded faces in
        equibiaxial tension)."""
        return 2.0 if self is Mode.EQUIBIAXIAL else 1.0


MODES = (Mode.UNIAXIAL, Mode.EQUIBIAXIAL, Mode.PLANAR)


def principal_stretches(mode: Mode | str, lam: Any) -> tuple[Any, Any, Any]:
    """(λ1, λ2, λ3) for stretch ``lam`` in ``mode``; λ3 is the free direction."""
    mode = Mode.parse(mode)
    lam = np.asarray(lam, dtype=np.float64)
    with np.errstate(all="ignore"):
        if mode is Mode.UNIAXIAL:
            lt = 1.0 / np.sqrt(lam)
            return lam, lt, lt
        if mode is Mode.EQUIBIAXIAL:
            return lam, lam, 1.0 / (lam * lam)
        return lam, np.ones_like(lam), 1.0 / lam


def invariants(mode: Mode | str, lam: Any) -> tuple[Any, Any]:
    """(I1, I2) of the left Cauchy–Green tensor for the mode (incompressible, I3 = 1)."""
    l1, l2, l3 = principal_stretches(mode, lam)
    a, b, c = l1 * l1, l2 * l2, l3 * l3
    return a + b + c, a * b + b * c + c * a


def chain_stretch(mode: Mode | str, lam: Any) -> Any:
    """Eight-chain stretch λ_ch = sqrt(I1/3)."""
    i1, _ = invariants(mode, lam)
    return np.sqrt(i1 / 3.0)


def check_stretch(lam: Any, name: str = "stretch") -> np.ndarray:
    """Return ``lam`` as float array; raise ValueError on non-positive or non-finite values."""
    arr = np.asarray(lam, dtype=np.float64)
    bad = ~(np.isfinite(arr) & (arr > 0))
    if np.any(bad):
        first = arr.ravel()[np.flatnonzero(bad.ravel())[0]]
        raise ValueError(
            f"{name} must be a positive finite number (λ = 1 is the undeformed state); got {first!r}. "
            "If your column holds strain, convert with λ = 1 + ε."
        )
    return arr
