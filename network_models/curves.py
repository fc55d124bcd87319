"""The data types every part of the core enters: a test curve, a force–temperature record, a swelling row.

A **curve** is one loading branch of one specimen in one mode, in SI (stretch λ, nominal stress in Pa),
with the notices the reader attached (rows dropped, signs or geometry assumed).  Specimens belong to a
compound; the specimen of a curve is kept in its metadata (``curve.specimen`` reads it).

Compression is uniaxial loading with λ < 1 and negative nominal stress (the core's sign convention);
``curve.loading`` says ``"compression"`` for such curves and ``"tension"`` otherwise.
"""

from __future__ import annotations

from dataclasses import InitVar, dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from .deformation import Mode
from .errors import DataError, Notice

__all__ = ["DataError", "ForceTemperatureRecord", "SwellingResult", "TestCurve"]


def as_notices(items, subject: str | None = None) -> list[Notice]:
    """Plain sentences become notices of kind ``note``; notices stay as they are."""
    return [n if isinstance(n, Notice) else Notice(str(n), "note", subject) for n in items]


@dataclass(eq=False)
class TestCurve:
    """One test curve: stretch λ and nominal stress (Pa) in one mode, with where it came from.

    ``specimen`` may be given to the constructor; it is stored in ``metadata["specimen"]`` and read back
    by the ``specimen`` property.  ``notices`` are :class:`~network_models.errors.Notice` objects (plain
    strings given here are turned into notices of kind ``note``).

    Curves compare and hash by identity (``eq=False``): field-wise ``==`` on numpy arrays is ambiguous, and
    ``curve in list_of_curves`` must work."""

    __test__ = False  # not a pytest test class

    mode: Mode
    stretch: np.ndarray
    stress: np.ndarray  # nominal (engineering) stress, Pa
    name: str = "curve"
    source: str = ""  # file the curve came from ("" when made in code)
    if TYPE_CHECKING:  # for the type checker an ordinary attribute (a property over metadata at run time)
        specimen: str | None = None
    else:
        specimen: InitVar[str | None] = None
    temperature: float | None = None  # K
    cycle: str | None = None
    metadata: dict = field(default_factory=dict)
    notices: list = field(default_factory=list)

    def __post_init__(self, specimen: str | None = None) -> None:
        self.mode = Mode.parse(self.mode)
        self.stretch = np.asarray(self.stretch, dtype=np.float64)
        self.stress = np.asarray(self.stress, dtype=np.float64)
        if self.stretch.shape != self.stress.shape or self.stretch.ndim != 1:
            raise DataError(f"{self.name}: stretch and stress must be 1-D arrays of equal length")
        self.metadata = dict(self.metadata)
        if specimen is not None:
            self.metadata["specimen"] = specimen
        self.notices = as_notices(self.notices, self.name)

    def __len__(self):
        return self.stretch.size

    @property
    def loading(self) -> str:
        """``"compression"`` for a compression curve (λ ≤ 1, stress ≤ 0), else ``"tension"``."""
        return str(self.metadata.get("loading") or "tension")


def _get_specimen(self) -> str | None:
    """The specimen this curve belongs to (``metadata["specimen"]``), or None."""
    value = self.metadata.get("specimen")
    return None if value is None else str(value)


def _set_specimen(self, value) -> None:
    if value is None:
        self.metadata.pop("specimen", None)
    else:
        self.metadata["specimen"] = str(value)


# a property over the constructor's InitVar: set after the dataclass is built so the constructor keeps
# its ``specimen=`` argument (default None) and the value lives in one place, the metadata
TestCurve.specimen = property(_get_specimen, _set_specimen, doc=_get_specimen.__doc__)  # type: ignore[assignment]


@dataclass
class ForceTemperatureRecord:
    """Force at a fixed clamped length against temperature (SI: K, N)."""

    temperature: np.ndarray  # K
    force: np.ndarray  # N
    stretch: float  # clamped length / unstretched length at the reference temperature
    name: str = "record"
    source: str = ""
    area: float | None = None  # m², when the file gives the cross-section
    metadata: dict = field(default_factory=dict)
    notices: list = field(default_factory=list)


@dataclass
class SwellingResult:
    """One swelling measurement (masses in kg, temperature in K).

    ``dry_mass``: the specimen before swelling; ``swollen_mass``: blotted, at equilibrium in the solvent;
    ``extracted_mass``: after the solvent is driven off again (the extracted, dried specimen; smaller than
    ``dry_mass`` by the soluble fraction).
    """

    compound: str
    dry_mass: float
    swollen_mass: float
    extracted_mass: float | None
    solvent: str
    temperature: float | None
    specimen: str | None = None
    line: int = 0
    source: str = ""
