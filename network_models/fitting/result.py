"""What a fit returns: :class:`FitResult` with its :class:`ParamEstimate` s and per-mode :class:`ModeStats`."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from ..deformation import Mode
from ..errors import Notice
from ..models import Model, get_model

if TYPE_CHECKING:
    import pandas as pd


def clean(x: Any) -> float | None:
    """A finite float, or None (for JSON: undefined numbers are null, never NaN)."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


#: a prediction past the tested range whose stress exceeds this multiple of the largest measured stress leaves
#: the plausible band (issue #20; a threshold chosen here, see docs/methods.md §extrapolation)
EXTRAPOLATION_FACTOR = 3.0


def _has_null(d) -> bool:
    if isinstance(d, dict):
        return any(_has_null(v) for v in d.values())
    if isinstance(d, list):
        return any(_has_null(v) for v in d)
    return d is None


@dataclass(frozen=True, kw_only=True)
class ParamEstimate:
    """One fitted (or fixed) parameter in SI units."""

    name: str
    value: float
    stderr: float | None
    ci95: tuple[float | None, float | None]
    unit: str
    fixed: bool  # held by the model's declaration or fixed by the user: not fitted
    symbol: str = ""
    display_unit: str = ""
    display_scale: float = 1.0
    meaning: str = ""
    #: False when the data do not bound the parameter (issue #20): no interval (``ci95 = (None, None)``), and
    #: the JSON says ``"ci95": null, "determined": false``
    determined: bool = True

    @property
    def relative_stderr(self) -> float | None:
        if self.stderr is None or self.value == 0:
            return None
        return abs(self.stderr / self.value)

    def to_dict(self) -> dict:
        lo, hi = self.ci95 if self.ci95 is not None else (None, None)
        lo, hi = clean(lo), clean(hi)
        determined = None if self.fixed else bool(self.determined and lo is not None and hi is not None)
        return {"value": clean(self.value), "unit": self.unit, "stderr": clean(self.stderr),
                "ci95": [lo, hi] if lo is not None and hi is not None else None,
                "determined": determined, "fixed": self.fixed}


@dataclass(frozen=True, kw_only=True)
class ModeStats:
    mode: Mode
    n: int
    rms: float  # Pa, absolute residual
    r2: float | None
    tested_range: tuple[float, float]

    def to_dict(self) -> dict:
        return {"n": self.n, "rms_Pa": clean(self.rms), "r2": clean(self.r2),
                "tested_range": [float(self.tested_range[0]), float(self.tested_range[1])]}


@dataclass(kw_only=True)
class FitResult:
    model: str
    title: str
    params: dict[str, ParamEstimate]
    free: tuple[str, ...]
    correlation: np.ndarray  # between free parameters, in the order of ``free``
    covariance: np.ndarray  # SI units, free parameters
    modes: dict[Mode, ModeStats]
    n: int
    k: int
    rss: float  # of the residual used in the fit (Pa² absolute; dimensionless relative)
    aic: float
    bic: float
    residual: str
    converged: bool
    message: str
    nfev: int
    #: :class:`~network_models.errors.Notice` objects (each *is* its sentence; ``.kind`` groups them)
    warnings: list[str] = field(default_factory=list)
    curve_names: list[str] = field(default_factory=list)
    temperature: float | None = None  # K, of the fitted curves when they state it
    #: the loading cycle the curves state (e.g. "1" = first loading), None when they do not say
    cycle: str | None = None
    #: the polymer the caller named (used for the strain-crystallisation notice), None when not given
    polymer: str | None = None
    #: which optimiser found the optimum: "levenberg-marquardt" (the small one), "minpack-lm", "trf", "closed-form"
    solver: str = ""
    #: the largest |nominal stress| among the fitted points, Pa (the plausible band of predictions is 3× it)
    max_stress: float | None = None

    # ----- notebooks and pandas (network_models.frames) ------------------------------------------
    def to_frame(self) -> pd.DataFrame:
        """One row per parameter (value, stderr, 95 % interval, unit), as a pandas DataFrame."""
        from ..frames import fit_frame

        return fit_frame(self)

    def __repr__(self):
        from ..frames import fit_repr

        return fit_repr(self)

    def _repr_html_(self):
        from ..frames import fit_frame, fit_repr, html_table

        return html_table(fit_frame(self), fit_repr(self)[1:-1])

    @property
    def values(self) -> dict[str, float]:
        """{name: value} in SI, ready for ``model.nominal_stress``."""
        return {k: v.value for k, v in self.params.items()}

    @property
    def model_obj(self) -> Model:
        return get_model(self.model)

    @property
    def tested_range(self) -> dict[str, tuple[float, float]]:
        return {m.value: s.tested_range for m, s in self.modes.items()}

    @property
    def small_strain_modulus(self) -> float:
        return float(self.model_obj.small_strain_modulus(**self.values))

    def notices(self, kind: str | None = None) -> list[Notice]:
        """The warnings as :class:`Notice` objects, all or those of one ``kind``."""
        out = [w if isinstance(w, Notice) else Notice(str(w)) for w in self.warnings]
        return out if kind is None else [w for w in out if w.kind == kind]

    def predict(self, mode: Mode | str, lam: Any) -> np.ndarray:
        """Nominal stress (Pa) of the fitted model in any mode it supports; NaN past its lock.
        Use :meth:`range_note` to learn whether ``lam`` lies outside the tested range."""
        return self.model_obj.nominal_stress(mode, lam, self.values)

    def range_note(self, mode, lam) -> str | None:
        """A sentence when stretches in ``lam`` lie outside the tested range for ``mode`` (or the mode was
        not tested); None when every stretch was covered by data.  When a prediction there exceeds
        :data:`EXTRAPOLATION_FACTOR` (3×) the largest measured stress the notice is of kind
        ``implausible-extrapolation`` and names the stress (:meth:`extrapolation_note`)."""
        mode = Mode.parse(mode)
        lam = np.asarray(lam, dtype=np.float64)
        loud = self.extrapolation_note(mode, lam)
        if loud is not None:
            return loud
        if mode not in self.modes:
            return Notice(f"no {mode.value} data were fitted: {mode.value} predictions of the {self.title} model "
                          "are extrapolations from the other modes", "extrapolated-mode", mode.value)
        lo, hi = self.modes[mode].tested_range
        if lam.size and (np.nanmax(lam) > hi * (1 + 1e-9) or np.nanmin(lam) < lo * (1 - 1e-9)):
            return Notice(f"{mode.value} predictions beyond the tested stretch range λ = {lo:.3g}–{hi:.3g} are "
                          "extrapolations: check them against a test before relying on them",
                          "extrapolated-range", mode.value)
        return None

    def extrapolation_note(self, mode, lam) -> Notice | None:
        """A notice (kind ``implausible-extrapolation``) when, at stretches in ``lam`` outside the tested range of
        ``mode`` (or in an untested mode), the fitted model predicts a stress of more than 3× the largest
        measured one; None otherwise."""
        mode = Mode.parse(mode)
        lam = np.atleast_1d(np.asarray(lam, dtype=np.float64))
        if not self.max_stress or not lam.size:
            return None
        if mode in self.modes:
            lo, hi = self.modes[mode].tested_range
            outside = (lam > hi * (1 + 1e-9)) | (lam < lo * (1 - 1e-9))
        else:
            outside = np.isfinite(lam)
        if not outside.any():
            return None
        with np.errstate(all="ignore"):
            P = np.abs(np.asarray(self.predict(mode, lam[outside]), dtype=np.float64))
        band = EXTRAPOLATION_FACTOR * self.max_stress
        over = np.isfinite(P) & (P > band)
        locked = ~np.isfinite(P)
        if not over.any() and locked.any():
            # the fitted model has locked (or its energy is undefined) before this stretch: a number there
            # would be invented, and silence would read as "fine" — say so (docs/methods.md §extrapolation)
            j = int(np.argmax(locked))
            return Notice(f"the {self.title} fit cannot reach λ = {lam[outside][j]:.3g} in {mode.value}: its fitted "
                          "limit lies below that stretch, past the tested range — no plausible prediction there; "
                          "test that range or fit data that reach it", "implausible-extrapolation", mode.value)
        if not over.any():
            return None
        i = int(np.argmax(np.where(over, P, -np.inf)))
        return Notice(f"the {self.title} fit predicts {P[i] / 1e6:.4g} MPa in {mode.value} at λ = "
                      f"{lam[outside][i]:.3g}, past the tested range and more than {EXTRAPOLATION_FACTOR:g}× the "
                      f"largest measured stress ({self.max_stress / 1e6:.3g} MPa): outside a plausible band — an "
                      "extrapolation the data do not support; test that range before using it",
                      "implausible-extrapolation", mode.value)

    def to_dict(self) -> dict:
        """One JSON-ready document (SI units; no NaN: undefined numbers are null with a warning)."""
        warns = [str.__str__(w) for w in self.warnings]
        out = {
            "model": self.model, "title": self.title, "residual": self.residual,
            "converged": self.converged, "message": self.message, "solver": self.solver,
            "parameters": {k: v.to_dict() for k, v in self.params.items()},
            "statistics": {
                "n": self.n, "k": self.k, "rss": clean(self.rss), "aic": clean(self.aic), "bic": clean(self.bic),
                "small_strain_modulus_Pa": clean(self.small_strain_modulus),
                "per_mode": {m.value: s.to_dict() for m, s in self.modes.items()},
            },
            "correlation": {"parameters": list(self.free),
                            "matrix": [[clean(x) for x in row] for row in np.asarray(self.correlation)]},
            "curves": list(self.curve_names),
            "temperature_K": clean(self.temperature),
            "cycle": self.cycle,
            "polymer": self.polymer,
            "warnings": warns,
            "notices": [n.to_dict() for n in self.notices()],
        }
        if _has_null(out["parameters"]) and not any(n.kind == "not-identifiable" for n in self.notices()):
            warns.append("some uncertainties could not be computed and are given as null")
        return out


__all__ = ["FitResult", "ModeStats", "ParamEstimate", "clean"]
