"""Lab test data: one homogeneous test curve in SI units, and (to be built) the readers for lab files."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .deformation import Mode


class DataError(ValueError):
    """A problem with a lab file; the message names the file, row or column and what to do."""


@dataclass
class TestCurve:
    """One test curve: stretch λ and nominal stress (Pa) in one mode, with where it came from."""

    __test__ = False  # not a pytest test class

    mode: Mode
    stretch: np.ndarray
    stress: np.ndarray  # nominal (engineering) stress, Pa
    name: str = "curve"
    source: str = ""  # file the curve came from ("" when made in code)
    specimen: str | None = None
    temperature: float | None = None  # K
    cycle: str | None = None
    metadata: dict = field(default_factory=dict)
    notices: list[str] = field(default_factory=list)

    def __post_init__(self):
        self.mode = Mode.parse(self.mode)
        self.stretch = np.asarray(self.stretch, dtype=np.float64)
        self.stress = np.asarray(self.stress, dtype=np.float64)
        if self.stretch.shape != self.stress.shape or self.stretch.ndim != 1:
            raise DataError(f"{self.name}: stretch and stress must be 1-D arrays of equal length")

    def __len__(self):
        return self.stretch.size
