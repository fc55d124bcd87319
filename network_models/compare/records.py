"""The records a comparison is made of: one number with its interval (:class:`Quantity`), a fitted parameter
(:class:`ParamRow`), a compound's headline (:class:`Headline`) and a compound's whole result
(:class:`CompoundResult`)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ..compounds import Compound
from ..constants import LAB_TEMPERATURE

#: test temperature assumed when no curve states one, K (23 °C — constants.LAB_TEMPERATURE)
DEFAULT_TEST_TEMPERATURE = LAB_TEMPERATURE
BASIS = "affine network, entanglement part removed"
TEMPERATURE_NOTE = ("G ∝ T at a fixed network (entropic elasticity); filled compounds often soften with "
                    "temperature in reality, so treat the service-temperature modulus of a filled compound as "
                    "an upper estimate and check it with a test at that temperature")
#: how the interval of a specimen quantity is made (shown beside it)
SPECIMEN_INTERVAL = ("mean of the specimens (n beside each value); interval: specimen scatter with fit error "
                     "(Student t, n − 1)")
ONE_SPECIMEN = ("one specimen: scatter unknown — no interval is shown for the compound (the fit's own interval "
                "[{lo} … {hi}] covers the fit only)")


@dataclass
class Quantity:
    """One number with its unit, 95 % interval (or None), how it was obtained and a display hint."""

    key: str
    label: str
    value: float | None
    unit: str
    low: float | None = None
    high: float | None = None
    basis: str = ""
    display_unit: str = ""
    display_scale: float = 1.0
    note: str = ""
    n: int | None = None  # specimens behind the value (None: not a specimen quantity)
    interval: str = ""  # how the interval was made, when not the pooled fit's

    @property
    def has_interval(self) -> bool:
        return self.low is not None and self.high is not None

    def shown(self, x: float | None) -> float | None:
        return None if x is None else x * self.display_scale

    def to_dict(self) -> dict:
        return {"key": self.key, "label": self.label, "value": self.value, "unit": self.unit,
                "ci95_low": self.low, "ci95_high": self.high, "basis": self.basis,
                "display_unit": self.display_unit or self.unit, "display_scale": self.display_scale,
                "note": self.note, "n": self.n, "interval": self.interval}


@dataclass(kw_only=True)
class ParamRow:
    name: str
    symbol: str
    value: float
    stderr: float | None
    low: float | None
    high: float | None
    unit: str
    display_unit: str
    display_scale: float
    meaning: str
    held: bool = False
    #: False when the data do not bound the parameter (no interval; issue #20), None for held parameters
    determined: bool | None = None

    def to_dict(self) -> dict[str, Any]:
        return dict(self.__dict__)


@dataclass
class Headline:
    """A compound's one headline number: strand density ν on a stated basis, never blank or negative.
    ``ci95`` is specimen scatter with fit error (None when the scatter is unknown); ``uncertainty`` holds the
    decomposition shown beside it (specimen scatter, fit error, model spread, assumption bracket)."""

    value: float | None
    basis: str
    tier: int
    n: int
    ci95: tuple[float, float] | None = None
    note: str = ""
    uncertainty: dict = field(default_factory=dict)
    quantity: str = "strand_density"
    unit: str = "mol/m³"

    @property
    def label(self) -> str:
        return f"strand density ν ({self.basis})" + (f" — {self.note}" if self.note else "")

    def to_dict(self) -> dict:
        return {"quantity": self.quantity, "value": self.value, "unit": self.unit, "basis": self.basis,
                "basis_tier": self.tier, "ci95": None if self.ci95 is None else list(self.ci95), "n": self.n,
                "label": self.label, "note": self.note, "uncertainty": self.uncertainty}


@dataclass
class CompoundResult:
    compound: Compound
    model: str
    fit: Any = None  # a FitResult, or None when the pooled fit failed
    error: str | None = None
    params: list[ParamRow] = field(default_factory=list)
    quantities: dict[str, Quantity] = field(default_factory=dict)
    fit_quality: list[dict] = field(default_factory=list)  # per mode: mode, points, rms_Pa, r2
    warnings: list[str] = field(default_factory=list)
    test_temperature: float = DEFAULT_TEST_TEMPERATURE
    crosslink_rows: list[dict] = field(default_factory=list)
    crosslink_notes: list[str] = field(default_factory=list)
    swelling_rows: list[dict] = field(default_factory=list)
    specimens: list = field(default_factory=list)  # SpecimenResult, in the order of the data
    stats: dict = field(default_factory=dict)  # quantity -> statistics.Summary over the used specimens
    headline: Headline | None = None
    main_mode: str | None = None
    pooled_nu: dict = field(default_factory=dict)  # basis tier -> (ν, ci95) from the pooled fit
    #: one fit to the compound's counted curves: {model, G0 (Pa), residual, curves, excluded_specimens, basis}
    pooled: dict | None = None

    @property
    def name(self) -> str:
        return self.compound.name

    @property
    def ok(self) -> bool:
        return self.error is None

    @property
    def n(self) -> int:
        """Specimens counted in the statistics."""
        return sum(1 for s in self.specimens if s.used)

    def param_values(self) -> dict[str, float]:
        return {p.name: p.value for p in self.params}

    def q(self, key) -> float | None:
        x = self.quantities.get(key)
        return None if x is None else x.value

    def specimen_values(self, quantity: str) -> list[float]:
        """The used specimens' values of ``quantity`` (None left out)."""
        return [s.values[quantity] for s in self.specimens if s.used and s.values.get(quantity) is not None]


__all__ = ["BASIS", "DEFAULT_TEST_TEMPERATURE", "TEMPERATURE_NOTE", "CompoundResult", "Headline", "ParamRow",
           "Quantity"]
