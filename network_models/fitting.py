"""Fitting network models to lab curves, with uncertainty and plain-language diagnostics.

    >>> from network_models.fitting import fit
    >>> res = fit("eight-chain", curves)              # curves: list of TestCurve, one or several modes
    >>> res.params["mu"].value, res.params["mu"].ci95  # Pa, 95 % interval
    >>> res.predict("planar", [1.5, 2.0])              # fit one mode, predict another
    >>> res.warnings                                   # plain sentences

Method
------
* Least squares with :func:`scipy.optimize.least_squares`.  Bounds come from each parameter's
  declaration and are folded into smooth one-/two-sided transforms (as MINUIT and lmfit do), so the
  problem is unbounded and MINPACK's Levenberg–Marquardt (``method="lm"``) runs it with the least
  overhead; ``trf`` is the fallback when it fails.  (Bounded ``trf`` took several times longer on the
  same fits: reflective steps near a bound are short.)  Parameters live in a scaled space: ``log`` for
  parameters declared ``log_scale`` (N, J_m, ν), ``value / scale`` for the rest (moduli scaled by G₀).
* Variable projection (Golub & Pereyra 1973, SIAM J. Numer. Anal. 10:413 [from memory]): every model
  here is linear in its moduli (checked numerically once per model), so the free moduli are solved
  exactly by a small bounded linear least squares for each trial of the other parameters; the optimiser
  only moves N, J_m, δ, κ … (tube and Mooney–Rivlin fits need no iteration at all).
* Residuals: ``"absolute"`` (default) is ``model − data`` in Pa, so the stiff high-stress points weigh
  most; ``"relative"`` is ``(model − data) / max(|data|, 2 % of the largest |stress| in that mode)``, which
  gives the small-strain region and a soft mode (planar, equibiaxial at low stress) equal say.  Use
  relative residuals when curves of very different stress levels are fitted together.
* Start values come from the data: the small-strain shear modulus G₀ from a neo-Hookean least-squares
  slope over the points with 0.7 ≤ λ ≤ 1.5, then ``model.guess(G₀)``, one common scale factor on every
  modulus, and for locking parameters (N, J_m, δ) a few candidates placed relative to the data's largest
  stretch; the best candidate starts the optimiser.
* Finite extensibility: a locking parameter is bounded so that the largest data stretch stays inside the
  lock (brentq on the smallest of the model's own domain margins over the extreme data points), so no
  prediction is NaN during the fit.  When the optimum sits on (or within 5 % of) that bound, a warning says so.
* Standard errors from the full Jacobian at the optimum (all free parameters, modulus columns analytic,
  the others by forward differences), cov = (JᵀJ)⁻¹ s², s² = RSS/(n − k); 95 % intervals
  with Student's t (n − k degrees of freedom).  For log-scaled parameters the interval is formed on the
  log scale (asymmetric, always positive); their ``stderr`` is the delta-method value in SI units.
* AIC = n ln(RSS/n) + 2k, BIC = n ln(RSS/n) + k ln n, with RSS of the residual used in the fit: compare
  models only on the same curves and the same residual choice.

The model is evaluated through a private vectorised path: the principal stretches and invariants of all
curves are computed once, then each evaluation calls the model's ``_dW_dI``/``_dW_dlam`` directly.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np
from scipy import stats
from scipy.optimize import brentq, least_squares

from .deformation import MODES, Mode, principal_stretches
from .errors import FitError
from .models import Model, get_model
from .models.base import Model as _BaseModel
from .testdata import TestCurve

__all__ = ["FitError", "FitResult", "ModeStats", "ParamEstimate", "estimate_modulus", "fit", "fit_many"]

_RELATIVE_FLOOR = 0.02  # relative residual denominator floor, fraction of the largest |stress| of a mode
_SMALL_STRAIN = (0.7, 1.5)  # stretch window for the start modulus
_LOCK_CANDIDATES = (1.3, 2.5, 8.0)  # start multiples of the locking threshold (model's guess when nothing locks)
_METHODS = ("lm", "trf")  # MINPACK Levenberg–Marquardt first (least overhead); trf if it fails




@dataclass(frozen=True)
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

    @property
    def relative_stderr(self) -> float | None:
        if self.stderr is None or self.value == 0:
            return None
        return abs(self.stderr / self.value)

    def to_dict(self) -> dict:
        lo, hi = self.ci95
        return {"value": _clean(self.value), "unit": self.unit, "stderr": _clean(self.stderr),
                "ci95": [_clean(lo), _clean(hi)], "fixed": self.fixed}


@dataclass(frozen=True)
class ModeStats:
    mode: Mode
    n: int
    rms: float  # Pa, absolute residual
    r2: float | None
    tested_range: tuple[float, float]

    def to_dict(self) -> dict:
        return {"n": self.n, "rms_Pa": _clean(self.rms), "r2": _clean(self.r2),
                "tested_range": [float(self.tested_range[0]), float(self.tested_range[1])]}


@dataclass
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
    warnings: list[str] = field(default_factory=list)
    curve_names: list[str] = field(default_factory=list)
    temperature: float | None = None  # K, of the fitted curves when they state it

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

    def predict(self, mode, lam):
        """Nominal stress (Pa) of the fitted model in any mode it supports; NaN past its lock.
        Use :meth:`range_note` to learn whether ``lam`` lies outside the tested range."""
        return self.model_obj.nominal_stress(mode, lam, self.values)

    def range_note(self, mode, lam) -> str | None:
        """A sentence when stretches in ``lam`` lie outside the tested range for ``mode`` (or the mode was
        not tested); None when every stretch was covered by data."""
        mode = Mode.parse(mode)
        lam = np.asarray(lam, dtype=np.float64)
        if mode not in self.modes:
            return (f"no {mode.value} data were fitted: {mode.value} predictions of the {self.title} model "
                    "are extrapolations from the other modes")
        lo, hi = self.modes[mode].tested_range
        if lam.size and (np.nanmax(lam) > hi * (1 + 1e-9) or np.nanmin(lam) < lo * (1 - 1e-9)):
            return (f"{mode.value} predictions beyond the tested stretch range λ = {lo:.3g}–{hi:.3g} are "
                    "extrapolations: check them against a test before relying on them")
        return None

    def to_dict(self) -> dict:
        """One JSON-ready document (SI units; no NaN: undefined numbers are null with a warning)."""
        warns = list(self.warnings)
        out = {
            "model": self.model, "title": self.title, "residual": self.residual,
            "converged": self.converged, "message": self.message,
            "parameters": {k: v.to_dict() for k, v in self.params.items()},
            "statistics": {
                "n": self.n, "k": self.k, "rss": _clean(self.rss), "aic": _clean(self.aic), "bic": _clean(self.bic),
                "small_strain_modulus_Pa": _clean(self.small_strain_modulus),
                "per_mode": {m.value: s.to_dict() for m, s in self.modes.items()},
            },
            "correlation": {"parameters": list(self.free),
                            "matrix": [[_clean(x) for x in row] for row in np.asarray(self.correlation)]},
            "curves": list(self.curve_names),
            "temperature_K": _clean(self.temperature),
            "warnings": warns,
        }
        if _has_null(out["parameters"]) and not any("could not estimate" in w for w in warns):
            warns.append("some uncertainties could not be computed and are given as null")
        return out


def _clean(x):
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def _has_null(d) -> bool:
    if isinstance(d, dict):
        return any(_has_null(v) for v in d.values())
    if isinstance(d, list):
        return any(_has_null(v) for v in d)
    return d is None


# ------------------------------------------------------------------------------------------------
# data preparation
# ------------------------------------------------------------------------------------------------
_NEO_SHAPE = {  # nominal stress / G for the neo-Hookean solid (physics.md §2 with W₁ = G/2, W₂ = 0)
    Mode.UNIAXIAL: lambda x: x - x**-2,
    Mode.EQUIBIAXIAL: lambda x: x - x**-5,
    Mode.PLANAR: lambda x: x - x**-3,
}


class _Data:
    """All curves concatenated, with per-point mode and the precomputed kinematics."""

    def __init__(self, curves: list[TestCurve]):
        lam, P, mode_of = [], [], []
        for c in curves:
            if not isinstance(c, TestCurve):
                raise TypeError(f"fit expects TestCurve objects, got {type(c).__name__}")
            s, p = np.asarray(c.stretch, float), np.asarray(c.stress, float)
            bad = ~(np.isfinite(s) & np.isfinite(p))
            if bad.any():
                i = int(np.flatnonzero(bad)[0])
                raise FitError(f"curve {c.name!r} has a missing or non-numeric value at point {i + 1}; "
                               "remove or fix that row and fit again")
            if np.any(s <= 0):
                raise FitError(f"curve {c.name!r} has a stretch ≤ 0; stretch λ = 1 + strain must be positive "
                               "(did the file hold strain in % or displacement?)")
            lam.append(s)
            P.append(p)
            mode_of.append(np.full(s.size, MODES.index(c.mode)))
        self.lam = np.concatenate(lam)
        self.P = np.concatenate(P)
        self.mode_idx = np.concatenate(mode_of)
        self.modes = [m for m in MODES if np.any(self.mode_idx == MODES.index(m))]
        self.masks = {m: self.mode_idx == MODES.index(m) for m in self.modes}
        self._kinematics()

    def _kinematics(self):
        n = self.lam.size
        l1, l2, l3 = np.empty(n), np.empty(n), np.empty(n)
        for m, mask in self.masks.items():
            a, b, c = principal_stretches(m, self.lam[mask])
            l1[mask], l2[mask], l3[mask] = a, b, c
        self.l1, self.l2, self.l3 = l1, l2, l3
        a1, a2, a3 = l1 * l1, l2 * l2, l3 * l3
        self.I1 = a1 + a2 + a3
        self.I2 = a1 * a2 + a2 * a3 + a3 * a1
        # P₁ = 2[W₁(a₁ − a₃) + W₂(a₁(I₁ − a₁) − a₃(I₁ − a₃))]/λ₁ (models/base.py)
        self.A = 2.0 * (a1 - a3) / l1
        self.B = 2.0 * (a1 * (self.I1 - a1) - a3 * (self.I1 - a3)) / l1
        self.l3_over_l1 = l3 / l1

    def extremes(self) -> np.ndarray:
        """Indices of the smallest and largest stretch of every mode (where a model's domain ends)."""
        idx = []
        for mask in self.masks.values():
            where = np.flatnonzero(mask)
            lam = self.lam[where]
            idx += [int(where[np.argmin(lam)]), int(where[np.argmax(lam)])]
        return np.unique(np.array(idx, dtype=int))

    def subset(self, keep: np.ndarray) -> _Data:
        new = object.__new__(_Data)
        new.lam, new.P, new.mode_idx = self.lam[keep], self.P[keep], self.mode_idx[keep]
        new.modes = [m for m in MODES if np.any(new.mode_idx == MODES.index(m))]
        new.masks = {m: new.mode_idx == MODES.index(m) for m in new.modes}
        for a in ("l1", "l2", "l3", "I1", "I2", "A", "B", "l3_over_l1"):
            setattr(new, a, getattr(self, a)[keep])
        return new


def estimate_modulus(curves) -> float:
    """Small-strain shear modulus G₀ (Pa) from curves: neo-Hookean least-squares slope over the points with
    0.7 ≤ λ ≤ 1.5 (λ ≠ 1), or the five points nearest λ = 1 when fewer than three lie there."""
    if isinstance(curves, TestCurve):
        curves = [curves]
    num = den = 0.0
    for c in curves:
        lam = np.asarray(c.stretch, float)
        P = np.asarray(c.stress, float)
        ok = np.isfinite(lam) & np.isfinite(P) & (lam > 0) & (np.abs(lam - 1.0) > 1e-6)
        lam, P = lam[ok], P[ok]
        if lam.size == 0:
            continue
        sel = (lam >= _SMALL_STRAIN[0]) & (lam <= _SMALL_STRAIN[1])
        if sel.sum() < 3:
            sel = np.argsort(np.abs(lam - 1.0))[:5]
        g = _NEO_SHAPE[c.mode](lam[sel])
        num += float(np.dot(g, P[sel]))
        den += float(np.dot(g, g))
    G0 = num / den if den > 0 else float("nan")
    if not (math.isfinite(G0) and G0 > 0):
        raise FitError("cannot estimate a modulus from these curves: the stress does not rise with stretch "
                       "near λ = 1 (check the stress column, its unit and sign)")
    return G0


def _modulus_from_data(data, curves) -> float:
    """:func:`estimate_modulus` on the prepared data (neo-Hookean shape = A/2 of the kinematics), pooled
    over all curves; falls back to the per-curve function when fewer than three points are near λ = 1."""
    lam = data.lam
    sel = (lam >= _SMALL_STRAIN[0]) & (lam <= _SMALL_STRAIN[1]) & (np.abs(lam - 1.0) > 1e-6)
    if int(sel.sum()) < 3 * len(curves):
        return estimate_modulus(curves)
    g = 0.5 * data.A[sel]
    den = float(np.dot(g, g))
    G0 = float(np.dot(g, data.P[sel])) / den if den > 0 else float("nan")
    if not (math.isfinite(G0) and G0 > 0):
        return estimate_modulus(curves)  # raises the sentence
    return G0


# ------------------------------------------------------------------------------------------------
# the problem
# ------------------------------------------------------------------------------------------------
def _fast_evaluator(model: Model, data: _Data):
    """p -> nominal stress at every data point (NaN past the lock), through the model's private pieces."""
    generic = type(model)._nominal_stress is _BaseModel._nominal_stress
    if not generic:  # models with their own stress expression (e.g. slip tube)
        slices = [(data.masks[m], m, data.lam[data.masks[m]]) for m in data.modes]

        def ev(p):
            out = np.empty_like(data.lam)
            for mask, m, lam in slices:
                out[mask] = model._nominal_stress(m, lam, p)
            return out

        return ev

    l1, l2, l3, I1, I2 = data.l1, data.l2, data.l3, data.I1, data.I2
    A, B, r31 = data.A, data.B, data.l3_over_l1
    inv, lamp = model.has_invariant_part, model.has_stretch_part

    def ev(p):  # called inside fit's np.errstate(all="ignore")
        if inv:
            W1, W2 = model._dW_dI(I1, I2, p)
            out = W1 * A + W2 * B
            if lamp:
                out += model._dW_dlam(l1, p) - r31 * model._dW_dlam(l3, p)
        else:
            out = model._dW_dlam(l1, p) - r31 * model._dW_dlam(l3, p)
        m = model._margin(l1, l2, l3, I1, p)
        if m is not None:
            out[~(m > 0)] = np.nan
        return out

    return ev


def _inside(model, data, p) -> np.ndarray:
    with np.errstate(all="ignore"):
        m = model._margin(data.l1, data.l2, data.l3, data.I1, p)
    if m is None:
        return np.ones(data.lam.size, bool)
    return np.asarray(m > 0)


class _Coord:
    """One free parameter's coordinates.

    ``z`` is the natural coordinate (log v for log-scaled parameters, v/scale otherwise): standard errors
    and intervals are formed in it.  ``x`` is the optimiser's coordinate, with the bounds folded in by the
    smooth one- and two-sided transforms used by MINUIT and lmfit (z = lo − 1 + √(x² + 1), z = lo + (hi −
    lo)(sin x + 1)/2), so ``least_squares`` runs unbounded: bounded trf takes many short reflective steps.
    A linear bound more than ``_FAR`` scale units from the start counts as absent (the result is clipped
    to the declared bounds and flagged if it gets there).
    """

    _FAR = math.inf

    def __init__(self, param, start, G0, lo, hi):
        self.log = bool(param.log_scale) and param.bounds[0] > 0
        if self.log:
            self.scale = 1.0
        elif param.unit == "Pa":
            self.scale = G0
        else:
            self.scale = abs(start) if start != 0 else (param.typical[1] - param.typical[0])
        self.zlo_decl = self.z_of_v(lo) if math.isfinite(lo) and (lo > 0 or not self.log) else -math.inf
        self.zhi_decl = self.z_of_v(hi) if math.isfinite(hi) else math.inf
        z0 = self.z_of_v(start)
        self.zlo = self.zlo_decl if (self.log or abs(self.zlo_decl - z0) <= self._FAR) else -math.inf
        self.zhi = self.zhi_decl if (self.log or abs(self.zhi_decl - z0) <= self._FAR) else math.inf
        lo_ok, hi_ok = math.isfinite(self.zlo), math.isfinite(self.zhi)
        self.kind = "both" if lo_ok and hi_ok else "lower" if lo_ok else "upper" if hi_ok else "none"

    def z_of_v(self, v):
        return math.log(v) if self.log else v / self.scale

    def v_of_z(self, z):
        return math.exp(min(z, 700.0)) if self.log else z * self.scale

    def dv_dz(self, v):
        return v if self.log else self.scale

    def z_of_x(self, x):
        if self.kind == "both":
            return self.zlo + (self.zhi - self.zlo) * (math.sin(x) + 1.0) / 2.0
        if self.kind == "lower":
            return self.zlo - 1.0 + math.sqrt(x * x + 1.0)
        if self.kind == "upper":
            return self.zhi + 1.0 - math.sqrt(x * x + 1.0)
        return x

    def dz_dx(self, x):
        if self.kind == "both":
            return (self.zhi - self.zlo) * math.cos(x) / 2.0
        if self.kind == "lower":
            return x / math.sqrt(x * x + 1.0)
        if self.kind == "upper":
            return -x / math.sqrt(x * x + 1.0)
        return 1.0

    def x_of_v(self, v):
        """Optimiser coordinate of a start value, nudged off a bound (the transforms are flat there)."""
        z = self.z_of_v(v)
        if self.kind == "both":
            w = self.zhi - self.zlo
            u = min(max(2.0 * (z - self.zlo) / w - 1.0, -1.0 + 1e-6), 1.0 - 1e-6)
            return math.asin(u)
        if self.kind == "lower":
            return math.sqrt((max(z - self.zlo, 1e-3) + 1.0) ** 2 - 1.0)
        if self.kind == "upper":
            return math.sqrt((max(self.zhi - z, 1e-3) + 1.0) ** 2 - 1.0)
        return z

    def v_of_x(self, x):
        return self.v_of_z(self.z_of_x(x))


class _LinearModuli:
    """Stress and Jacobian columns dP/dz for the optimiser.

    Every model here is linear in each of its moduli (Pa parameters) with the others held:
    P = Σ θᵢ hᵢ(λ; other parameters), hᵢ = the stress with θᵢ = 1 and the other moduli 0.  This is checked
    once per model (numerically, at a start point) and remembered; so is which free non-modulus parameters
    each hᵢ depends on.  Then P is assembled from cached hᵢ (a tube model's hᵢ never change during a fit;
    the extended tube's G_e response does not depend on δ), a modulus column of the Jacobian is hᵢ itself,
    and only the other parameters need a finite difference in z.  Models that fail the check are
    evaluated directly."""

    def __init__(self, m, ev, free_names, p, co):
        self.ev = ev
        self.free = list(free_names)
        self.co = co
        self.moduli = [q.name for q in m.params if q.unit == "Pa"]
        nonlin = [nm for nm in self.free if nm not in self.moduli]
        self._cache: dict[str, dict] = {nm: {} for nm in self.moduli}
        self.linear = False
        self.deps: dict[str, tuple[str, ...]] = {}
        if self.moduli:
            key = (type(m).__qualname__, m.name)
            if key not in _LINEAR_IN_MODULI:
                _LINEAR_IN_MODULI[key] = self._check(p)
            self.linear = _LINEAR_IN_MODULI[key]
        if self.linear:
            for nm in self.moduli:
                dk = (type(m).__qualname__, m.name, nm, tuple(nonlin))
                if dk not in _MODULUS_DEPENDS:
                    _MODULUS_DEPENDS[dk] = tuple(j for j in nonlin if self._depends(p, nm, j))
                self.deps[nm] = _MODULUS_DEPENDS[dk]

    def _unit_eval(self, p, name):
        q = dict(p)
        for nm in self.moduli:
            q[nm] = 0.0
        q[name] = 1.0
        return self.ev(q)

    def h(self, p, name):
        """hᵢ at p, cached on the parameters it depends on (a few entries: the base point and its steps)."""
        key = tuple(p[j] for j in self.deps[name])
        cache = self._cache[name]
        out = cache.get(key)
        if out is None:
            if len(cache) >= 4:
                cache.pop(next(iter(cache)))
            out = cache[key] = self._unit_eval(p, name)
        return out

    def _check(self, p):
        P = self.ev(p)
        tot = sum(p[nm] * self._unit_eval(p, nm) for nm in self.moduli)
        scale = np.max(np.abs(P)) if P.size else 0.0
        ok = np.isfinite(P)
        return bool(scale > 0 and np.all(np.abs(tot[ok] - P[ok]) <= 1e-9 * scale))

    def _depends(self, p, name, j):
        c = self.co[self.free.index(j)]
        z = c.z_of_v(p[j])
        q = dict(p)
        q[j] = c.v_of_z(z - 0.01 * max(1.0, abs(z)))  # toward the valid side of most locks is not known:
        a, b = self._unit_eval(p, name), self._unit_eval(q, name)  # any change (also in NaN) = depends
        return not np.array_equal(a, b, equal_nan=True)

    def stress(self, p):
        if not self.linear:
            return self.ev(p)
        if len(self.moduli) == 1:
            nm = self.moduli[0]
            return p[nm] * self.h(p, nm)
        out = None
        for nm in self.moduli:
            t = p[nm]
            if t == 0.0 and self.deps[nm]:
                continue
            term = t * self.h(p, nm)
            out = term if out is None else out + term
        if out is None:
            out = 0.0 * self.h(p, self.moduli[0])
        return out

    def dP_dz(self, p, P, central):
        k = len(self.free)
        J = np.empty((P.size, k))
        for i, nm in enumerate(self.free):
            c = self.co[i]
            v = p[nm]
            if self.linear and nm in self.moduli:
                J[:, i] = self.h(p, nm) * c.dv_dz(v)
                continue
            z = c.z_of_v(v)
            h = (1e-5 if central else 1e-7) * max(1.0, abs(z))
            q = dict(p)
            q[nm] = c.v_of_z(z + h)
            Pp = self.stress(q)
            if central:
                q[nm] = c.v_of_z(z - h)
                Pm = self.stress(q)
                if np.all(np.isfinite(Pp)) and np.all(np.isfinite(Pm)):
                    J[:, i] = (Pp - Pm) / (2 * h)
                    continue
            if not np.all(np.isfinite(Pp)):  # a step past a lock: step the other way
                q[nm] = c.v_of_z(z - h)
                J[:, i] = (P - self.stress(q)) / h
            else:
                J[:, i] = (Pp - P) / h
        return J


def _bounded_lstsq(H, y, lo, hi):
    """min ‖Hθ − y‖ with lo ≤ θ ≤ hi for a few columns: the unconstrained solution when it is feasible
    (then it is optimal: convex problem), else the best feasible one over the active sets."""
    k = H.shape[1]
    A = H.T @ H
    b = H.T @ y
    if k == 1:
        a = A[0, 0]
        t = b[0] / a if a > 0 else 0.0
        return np.array([min(max(t, lo[0]), hi[0])])
    if k == 2:  # closed form: interior optimum, else the best of the four box edges (convex problem)
        a11, a12, a22 = float(A[0, 0]), float(A[0, 1]), float(A[1, 1])
        b1, b2 = float(b[0]), float(b[1])
        det = a11 * a22 - a12 * a12
        if det > 1e-14 * a11 * a22:
            t1, t2 = (a22 * b1 - a12 * b2) / det, (a11 * b2 - a12 * b1) / det
            if lo[0] <= t1 <= hi[0] and lo[1] <= t2 <= hi[1]:
                return np.array([t1, t2])
        best, best_cost = (0.0, 0.0), math.inf
        for i, edge in ((0, lo[0]), (0, hi[0]), (1, lo[1]), (1, hi[1])):
            if not math.isfinite(edge):
                continue
            if i == 0:
                t1 = edge
                t2 = min(max((b2 - a12 * t1) / a22 if a22 > 0 else 0.0, lo[1]), hi[1])
            else:
                t2 = edge
                t1 = min(max((b1 - a12 * t2) / a11 if a11 > 0 else 0.0, lo[0]), hi[0])
            cost = a11 * t1 * t1 + 2 * a12 * t1 * t2 + a22 * t2 * t2 - 2 * (b1 * t1 + b2 * t2)
            if cost < best_cost:
                best, best_cost = (t1, t2), cost
        return np.array(best)
    try:
        t = np.linalg.solve(A, b)
        if np.all(t >= lo) and np.all(t <= hi) and np.all(np.isfinite(t)):
            return t
    except np.linalg.LinAlgError:
        pass
    best, best_cost = None, math.inf
    for states in itertools.product((0, 1, 2), repeat=k):  # 0 free, 1 at lower, 2 at upper bound
        th = np.zeros(k)
        free = [i for i in range(k) if states[i] == 0]
        ok = True
        for i in range(k):
            if states[i]:
                th[i] = lo[i] if states[i] == 1 else hi[i]
                ok &= math.isfinite(th[i])
        if not ok:
            continue
        if free:
            fixed = [i for i in range(k) if states[i]]
            rhs = b[free] - (A[np.ix_(free, fixed)] @ th[fixed] if fixed else 0.0)
            try:
                th[free] = np.linalg.solve(A[np.ix_(free, free)], rhs)
            except np.linalg.LinAlgError:
                continue
            if not (np.all(th >= lo - 1e-12 * np.abs(lo)) and np.all(th <= hi)):
                continue
        cost = float(th @ A @ th - 2 * b @ th)
        if cost < best_cost:
            best, best_cost = th, cost
    return np.clip(best, lo, hi) if best is not None else np.clip(np.zeros(k), lo, hi)


def _exp(x: float) -> float:
    return math.exp(x) if x < 709.0 else math.inf


_LINEAR_IN_MODULI: dict[tuple[str, str], bool] = {}
_MODULUS_DEPENDS: dict[tuple, tuple[str, ...]] = {}


@lru_cache(maxsize=256)
def _t975(dof: int) -> float:
    return float(stats.t.ppf(0.975, dof))


def _lock_threshold(model, data, p, name, lo, hi):
    """If ``name`` controls the model's domain on these data, (threshold, valid_side) with valid_side
    'above' or 'below'; else None.  The threshold is the root of the smallest domain margin over the data
    points (the model's own ``_margin``), found with brentq in log or linear coordinates."""
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return None
    use_log = False  # the margins here are linear or quadratic in the parameter: brentq needs few steps

    def v_of(z):
        return math.exp(z) if use_log else z

    def g(z):
        q = dict(p)
        q[name] = v_of(z)
        mg = model._margin(data.l1, data.l2, data.l3, data.I1, q)
        if mg is None:
            return math.inf
        mn = float(np.min(mg))
        return mn if math.isfinite(mn) else (-math.inf if np.isnan(mn) else mn)

    za, zb = (math.log(lo), math.log(hi)) if use_log else (lo, hi)
    ga, gb = g(za), g(zb)
    if not (math.isfinite(ga) or math.isfinite(gb)) or (ga > 0) == (gb > 0):
        return None
    ok_a = ga > 0
    if math.isfinite(ga) and math.isfinite(gb):
        zr = brentq(g, za, zb, xtol=1e-13, rtol=4 * np.finfo(float).eps, maxiter=200)
    else:  # an end where the margin is not finite: bisection on the sign
        z0, z1 = za, zb
        for _ in range(200):
            zm = 0.5 * (z0 + z1)
            if (g(zm) > 0) == ok_a:
                z0 = zm
            else:
                z1 = zm
            if abs(z1 - z0) <= 1e-13 * max(1.0, abs(z0)):
                break
        zr = 0.5 * (z0 + z1)
    return v_of(zr), ("below" if ok_a else "above")


def _resolve_names(model, names, what):
    if names is None:
        return set()
    names = {names} if isinstance(names, str) else set(names)
    unknown = names - set(model.params.names())
    if unknown:
        raise FitError(f"{what}: the {model.title} model has no parameter(s) {sorted(unknown)}; "
                       f"its parameters are {list(model.params.names())}")
    return names


def fit(model, curves, *, residual: str = "absolute", free=None, fixed: dict | None = None,
        start: dict | None = None) -> FitResult:
    """Fit ``model`` (name or Model) to ``curves`` (TestCurve or list, any mix of modes).

    ``free``: held parameters to fit as well (e.g. ``{"beta"}``); ``fixed``: {name: value} kept at that
    value; ``start``: {name: value} start values replacing the automatic ones.  Raises :class:`FitError`
    (a ValueError) with a sentence when the fit cannot be done or does not converge.
    """
    with np.errstate(all="ignore"):  # NaN past a lock is expected inside; it never reaches the result
        return _fit(model, curves, residual=residual, free=free, fixed=fixed, start=start)


def _fit(model, curves, *, residual, free, fixed, start) -> FitResult:
    m = get_model(model) if isinstance(model, str) else model
    if isinstance(curves, TestCurve):
        curves = [curves]
    curves = list(curves)
    if not curves:
        raise FitError("no curves to fit: give at least one test curve")
    if residual not in ("absolute", "relative"):
        raise FitError(f"residual must be 'absolute' or 'relative', not {residual!r}")
    for c in curves:
        m._require_mode(c.mode)
    data = _Data(curves)
    warns: list[str] = []

    fixed = dict(fixed or {})
    start = dict(start or {})
    freed = _resolve_names(m, free, "free")
    _resolve_names(m, set(fixed), "fixed")
    _resolve_names(m, set(start), "start")
    fixed_names = {q.name for q in m.params if q.held and q.name not in freed} | set(fixed)
    free_names = [q.name for q in m.params if q.name not in fixed_names]
    if not free_names:
        raise FitError("every parameter is fixed: free at least one to fit")

    # ---- start values ------------------------------------------------------------------------
    G0 = _modulus_from_data(data, curves)
    try:
        p0 = m.resolve({**m.params.defaults(), **m.guess(G0), **start, **fixed})
    except ValueError as exc:
        raise FitError(f"start values rejected: {exc}") from None

    lb = {q.name: q.bounds[0] for q in m.params}
    ub = {q.name: q.bounds[1] for q in m.params}
    locks: dict[str, tuple[float, str]] = {}
    ext = data.subset(data.extremes())  # the domain of every model here is set by the extreme stretches
    for name in free_names:
        q = m.params[name]
        t = _lock_threshold(m, ext, p0, name, q.bounds[0], q.bounds[1])
        if t is None:
            continue
        thr, side = t
        locks[name] = t
        if side == "above":
            lb[name] = max(lb[name], thr * (1 + 1e-7) if thr > 0 else thr + 1e-12)
        else:
            ub[name] = min(ub[name], thr * (1 - 1e-7) if thr > 0 else thr - 1e-12)

    # points past a lock that no free parameter can move: leave them out, and say so
    inside = _inside(m, data, p0) if not locks else np.ones(data.lam.size, bool)
    if not np.all(inside):
        nout = int((~inside).sum())
        top = float(data.lam[~inside].min())
        warns.append(f"{nout} data point(s) from λ = {top:.3g} upward lie beyond the locking stretch of the "
                     f"{m.title} model with the fixed parameters and were left out of the fit; free the "
                     "locking parameter or remove those points")
        data = data.subset(inside)
        if data.lam.size == 0:
            raise FitError("every data point lies beyond the model's locking stretch with the fixed parameters")
    ev = _fast_evaluator(m, data)

    n = data.lam.size
    k = len(free_names)
    if n <= k:
        raise FitError(f"{n} data point(s) cannot determine {k} parameter(s): give more points or fix parameters")

    if residual == "relative":
        floor = np.empty(n)
        for mask in data.masks.values():
            floor[mask] = _RELATIVE_FLOOR * np.max(np.abs(data.P[mask]))
        weight = 1.0 / np.maximum(np.abs(data.P), np.maximum(floor, 1e-300))
    else:
        weight = np.full(n, 1.0 / G0)
    wd = data.P * weight
    wd2 = float(np.dot(wd, wd))

    moduli = [q.name for q in m.params if q.unit == "Pa"]
    scale_moduli = bool(moduli) and all(name in free_names and name not in start for name in moduli)

    def scored(p):
        """(cost, p) with one common best factor on every modulus (the stress is linear in the moduli
        together), from a single model evaluation."""
        wm = ev(p) * weight
        if not np.all(np.isfinite(wm)):
            return math.inf, p
        mm_, md = float(np.dot(wm, wm)), float(np.dot(wm, wd))
        if scale_moduli and mm_ > 0 and md > 0:
            a = md / mm_
            q = dict(p)
            for name in moduli:
                q[name] = q[name] * a
            if all(lb[nm] <= q[nm] <= ub[nm] for nm in moduli):
                return wd2 - md * md / mm_, q
        return mm_ - 2 * md + wd2, p

    candidates = []
    for name, (thr, side) in locks.items():
        if name in start:
            continue
        for c in _LOCK_CANDIDATES:
            v = thr * c if side == "above" else thr / c
            if lb[name] <= v <= ub[name]:
                q = dict(p0)
                q[name] = v
                candidates.append(q)
    if not candidates:
        candidates = [p0]
    best, best_cost = None, math.inf
    for q in candidates:
        for name in locks:  # keep start values inside the lock bound
            q[name] = min(max(q[name], lb[name]), ub[name])
        c, q = scored(q)
        if c < best_cost:
            best, best_cost = q, c
    if best is None:
        raise FitError(f"the {m.title} model cannot be evaluated at any start value on these data")
    p_start = best

    # ---- optimiser coordinates: bounds folded into smooth transforms, so the optimiser runs unbounded ----
    co = [_Coord(m.params[nm], p_start[nm], G0, lb[nm], ub[nm]) for nm in free_names]
    lin = _LinearModuli(m, ev, free_names, p_start, co)
    base = dict(p_start)
    big = 1e3 * max(1.0, float(np.max(np.abs(wd))))
    cache = {}
    # Variable projection (Golub & Pereyra 1973): the free moduli enter linearly, so for given other
    # parameters they are solved exactly (bounded linear least squares); the optimiser only sees the rest.
    L = [nm for nm in free_names if lin.linear and nm in lin.moduli]
    NL = [nm for nm in free_names if nm not in L]
    iNL = [free_names.index(nm) for nm in NL]
    L_lo = np.array([lb[nm] for nm in L])
    L_hi = np.array([ub[nm] for nm in L])
    fixed_moduli = [nm for nm in lin.moduli if nm not in L] if lin.linear else []

    def params_of(x):
        p = base.copy()
        for j, i in enumerate(iNL):
            p[free_names[i]] = co[i].v_of_x(x[j])
        if L:
            y = wd
            if fixed_moduli:
                y = wd - sum(p[nm] * lin.h(p, nm) for nm in fixed_moduli) * weight
            if len(L) == 1:  # the common case, in scalars: θ = <h, y>/<h, h>, clipped to its bounds
                hw = lin.h(p, L[0]) * weight
                a, b = float(np.dot(hw, hw)), float(np.dot(hw, y))
                t = b / a if a > 0 else 0.0
                p[L[0]] = min(max(t, L_lo[0]), L_hi[0]) if math.isfinite(t) else t
            else:
                H = np.column_stack([lin.h(p, nm) for nm in L]) * weight[:, None]
                theta = _bounded_lstsq(H, y, L_lo, L_hi)
                for j, nm in enumerate(L):
                    p[nm] = float(theta[j])
        return p

    def residual_of(x):
        p = params_of(x)
        P = lin.stress(p)
        r = P * weight - wd
        if not np.isfinite(r).all():
            r[~np.isfinite(r)] = big
        return p, P, r

    def fun(x):
        p, P, r = residual_of(x)
        cache["x"], cache["p"], cache["P"], cache["r"] = x.copy(), p, P, r
        return r

    def jac(x):
        if "x" in cache and np.array_equal(cache["x"], x):
            p, P, r = cache["p"], cache["P"], cache["r"]
        else:
            p, P, r = residual_of(x)
        if not L:  # plain problem: analytic modulus columns, differences for the rest
            Jz = lin.dP_dz(p, P, central=False)
            Jz *= weight[:, None]
            for i, c in enumerate(co):
                Jz[:, i] *= c.dz_dx(x[i])
        else:  # reduced (projected) problem: forward differences in x, moduli re-solved each time
            Jz = np.empty((r.size, x.size))
            for j in range(x.size):
                h = 1e-7 * max(1.0, abs(x[j]))
                x2 = x.copy()
                x2[j] += h
                Jz[:, j] = (residual_of(x2)[2] - r) / h
        Jz[~np.isfinite(Jz)] = 0.0
        return Jz

    if NL:
        x0 = np.array([co[i].x_of_v(p_start[free_names[i]]) for i in iNL])
        res, failure = None, ""
        for method in _METHODS:
            cache.clear()
            try:
                res = least_squares(fun, x0, jac=jac, method=method, x_scale=1.0, ftol=1e-10, xtol=1e-10,
                                    gtol=1e-10, max_nfev=100 * (len(NL) + 1))
            except (ValueError, FloatingPointError, np.linalg.LinAlgError) as exc:
                res, failure = None, f"failed numerically ({exc})"
                continue
            if res.status > 0 and np.all(np.isfinite(res.x)):
                break
            failure = f"did not converge ({res.message.rstrip('.')})"
            res = None
        if res is None:
            raise FitError(f"the {m.title} fit {failure}; try another model, fix a parameter (fixed=...), "
                           "use relative residuals, or check the data for outliers")
        xhat, message, nfev = res.x, str(res.message), int(res.nfev)
    else:  # every free parameter is a modulus: the projected problem is solved in closed form
        xhat, message, nfev = np.empty(0), "solved in closed form (the model is linear in its moduli)", 1
    values, Pm, r = residual_of(xhat)
    if np.any(np.abs(r) >= big):
        raise FitError(f"the {m.title} fit ended with data beyond the model's locking stretch; "
                       "remove the points at the largest stretches or choose a model without a lock")
    for nm in free_names:  # bounds counted as absent for the optimiser (far away) still hold
        values[nm] = min(max(values[nm], lb[nm]), ub[nm])

    # ---- uncertainty, in the natural coordinates z (log for log-scaled parameters, else scaled) --------
    rss = float(np.dot(r, r))
    dof = n - k
    s2 = rss / dof
    z = np.array([c.z_of_v(values[nm]) for c, nm in zip(co, free_names, strict=True)])
    J = lin.dP_dz(values, Pm, central=False) * weight[:, None]  # full Jacobian at the optimum, in z
    cov_z = np.full((k, k), np.nan)
    if np.all(np.isfinite(J)):
        try:
            _, sv, Vt = np.linalg.svd(J, full_matrices=False)
            if sv.size and sv[0] > 0 and sv[-1] > sv[0] * 1e-10:
                cov_z = (Vt.T / sv**2) @ Vt * s2
        except np.linalg.LinAlgError:
            pass
    se_z = np.sqrt(np.clip(np.diag(cov_z), 0, None)) if np.all(np.isfinite(cov_z)) else np.full(k, np.nan)
    with np.errstate(all="ignore"):
        corr = cov_z / np.outer(se_z, se_z)
    D = np.array([c.dv_dz(values[nm]) for c, nm in zip(co, free_names, strict=True)])
    cov = cov_z * np.outer(D, D)
    tq = _t975(dof)

    params: dict[str, ParamEstimate] = {}
    for q in m.params:
        v = float(values[q.name])
        kw = dict(symbol=q.symbol, display_unit=q.display_unit, display_scale=q.display_scale, meaning=q.meaning)
        if q.name in free_names:
            i = free_names.index(q.name)
            sz = float(se_z[i])
            if math.isfinite(sz):
                c = co[i]
                if c.log:
                    ci = (_exp(z[i] - tq * sz), _exp(z[i] + tq * sz))
                else:
                    ci = (v - tq * sz * c.scale, v + tq * sz * c.scale)
                params[q.name] = ParamEstimate(q.name, v, float(sz * abs(D[i])), (float(ci[0]), float(ci[1])),
                                               q.unit, False, **kw)
            else:
                params[q.name] = ParamEstimate(q.name, v, None, (None, None), q.unit, False, **kw)
        else:
            params[q.name] = ParamEstimate(q.name, v, None, (None, None), q.unit, True, **kw)

    # ---- statistics --------------------------------------------------------------------------
    mode_stats = {}
    for mode, mask in data.masks.items():
        e = Pm[mask] - data.P[mask]
        sst = float(np.sum((data.P[mask] - data.P[mask].mean()) ** 2))
        ssr = float(np.dot(e, e))
        lam = data.lam[mask]
        mode_stats[mode] = ModeStats(mode, int(mask.sum()), math.sqrt(ssr / mask.sum()),
                                     (1.0 - ssr / sst) if sst > 0 else None,
                                     (float(lam.min()), float(lam.max())))
    rss_out = rss * (G0 * G0 if residual == "absolute" else 1.0)  # Pa² for absolute residuals
    if rss_out > 0:
        aic = n * math.log(rss_out / n) + 2 * k
        bic = n * math.log(rss_out / n) + k * math.log(n)
    else:
        aic = bic = -math.inf

    temps = {c.temperature for c in curves if c.temperature is not None}
    if len(temps) > 1:
        warns.append("the curves were tested at different temperatures (" +
                     ", ".join(f"{t - 273.15:.0f} °C" for t in sorted(temps)) +
                     "); one parameter set was fitted to all of them")

    result = FitResult(
        model=m.name, title=m.title, params=params, free=tuple(free_names), correlation=corr, covariance=cov,
        modes=mode_stats, n=n, k=k, rss=rss_out,
        aic=aic, bic=bic, residual=residual, converged=True, message=message, nfev=nfev,
        warnings=warns, curve_names=[c.name for c in curves],
        temperature=temps.pop() if len(temps) == 1 else None,
    )
    _diagnose(result, m, data, values, locks, lb, ub, co, free_names, se_z, corr)
    return result


# ------------------------------------------------------------------------------------------------
# diagnostics
# ------------------------------------------------------------------------------------------------
_LOCK_WORDS = {"N": "Kuhn segments per strand N", "Jm": "the limiting I₁ − 3 (J_m)", "delta": "δ"}


def _fmt(v, unit):
    if unit == "Pa":
        return f"{v / 1e6:.4g} MPa"
    return f"{v:.4g}" + ("" if unit in ("1", "") else f" {unit}")


def _diagnose(result, m, data, values, locks, lb, ub, co, free_names, se_x, corr):
    w = result.warnings
    k = len(free_names)
    # 1. the locking bound is active (or nearly)
    for name, (thr, _side) in locks.items():
        v = values[name]
        top = float(data.lam.max())
        gap = abs(math.log(v / thr)) if v > 0 and thr > 0 else abs(v - thr)
        if gap <= 1e-4:
            w.append(f"the data reach the locking stretch of the {m.title} model: {name} was held at the "
                     f"limit {_fmt(v, m.params[name].unit)} that keeps the largest stretch (λ = {top:.3g}) inside "
                     f"the lock; the model cannot follow the upturn, so {name} is a bound, not an estimate")
        elif gap <= 0.05:
            w.append(f"the fitted {m.title} model locks just beyond the largest tested stretch (λ = {top:.3g}): "
                     f"{name} = {_fmt(v, m.params[name].unit)} is set by the last few points, and the model "
                     "cannot predict much past the tested range")
    # 2. declared bounds
    at_bound = set()
    for i, name in enumerate(free_names):
        if name in locks and abs(values[name] - locks[name][0]) <= 1e-4 * max(abs(locks[name][0]), 1e-12):
            continue
        q = m.params[name]
        z = co[i].z_of_v(values[name])
        if z - co[i].zlo_decl <= 1e-5:
            at_bound.add(name)
            w.append(f"{name} ({q.meaning}) ended at its lower bound {_fmt(lb[name], q.unit)}: the data give no "
                     f"evidence for it; consider a model without it or fix it")
        elif co[i].zhi_decl - z <= 1e-5:
            at_bound.add(name)
            w.append(f"{name} ({q.meaning}) ended at its upper bound {_fmt(ub[name], q.unit)}: the data do not "
                     "limit it; it is not identifiable from these curves")
    # 3. identifiability
    if k and not np.all(np.isfinite(se_x)):
        w.append(f"could not estimate uncertainties: the parameters {', '.join(free_names)} are not all "
                 "identifiable from these data (fix one, or add data in another mode or at larger stretch)")
    else:
        for name in free_names:
            pe = result.params[name]
            rel = pe.relative_stderr
            if rel is not None and rel > 0.5 and name not in at_bound:
                pct = "over 1000 %" if rel > 10 else f"{100 * rel:.0f} %"
                extra = (" — the curves stay far from the locking stretch, so it is barely constrained"
                         if name in locks else "")
                w.append(f"{name} is poorly determined by these data (relative standard error {pct}){extra}")
        for i in range(k):
            for j in range(i + 1, k):
                rho = corr[i, j]
                if math.isfinite(rho) and abs(rho) > 0.98:
                    w.append(f"{free_names[i]} and {free_names[j]} are strongly correlated (ρ = {rho:+.3f}): "
                             "these data cannot separate them; fix one or add data in another mode")
    # 4. untested modes
    for mode in m.modes:
        if mode not in result.modes:
            w.append(f"no {mode.value} data were fitted: {mode.value} predictions are extrapolations")
    # 5. stability: stress must rise with stretch in every supported mode
    w.extend(m.stability_notes(values))
    top = max(3.0, math.ceil(3.0 * float(data.lam.max())) / 2.0)  # 1.5 × the largest stretch, rounded up
    grid, gdata = _grid(top, tuple(md.value for md in m.modes))
    P = _fast_evaluator(m, gdata)(values)  # NaN past the lock: those steps are skipped
    for mode in m.modes:
        Pm = P[gdata.masks[mode]]
        dP = np.diff(Pm)
        bad = np.flatnonzero(np.isfinite(dP) & (dP <= 0))
        if bad.size:
            where = grid[bad[0]]
            w.append(f"the fitted {m.title} model is unstable in {mode.value}: its stress stops rising above "
                     f"λ ≈ {where:.3g}; do not use its {mode.value} predictions there")


@lru_cache(maxsize=64)
def _grid(top: float, modes: tuple[str, ...]):
    """Stretch grid 1.001…top in each mode, as fitting data (kinematics computed once)."""
    grid = np.linspace(1.0 + 1e-3, top, 100)
    curves = [TestCurve(md, grid, np.zeros_like(grid), name="grid") for md in modes]
    return grid, _Data(curves)


def fit_many(models, curves, *, skip_unsupported: bool = True, **kw) -> dict[str, FitResult | FitError]:
    """Fit several models to the same curves; a model that fails gives its FitError instead of a result,
    so one failure does not stop the others.  With ``skip_unsupported`` a model fits only the curves in
    the modes it supports (e.g. slip tube: uniaxial) and says which curves it left out."""
    if isinstance(curves, TestCurve):
        curves = [curves]
    out = {}
    for name in models:
        mm = get_model(name) if isinstance(name, str) else name
        use = [c for c in curves if mm.supports(c.mode)] if skip_unsupported else list(curves)
        left = [c for c in curves if c not in use]
        if not use:
            out[mm.name] = FitError(f"the {mm.title} model covers {', '.join(x.value for x in mm.modes)} only "
                                    "and none of the curves is in that mode")
            continue
        try:
            res = fit(mm, use, **kw)
        except ValueError as exc:  # FitError, ModeNotSupportedError, ParameterError
            out[mm.name] = exc if isinstance(exc, FitError) else FitError(str(exc))
            continue
        if left:
            res.warnings.insert(0, f"{len(left)} curve(s) in modes the {mm.title} model does not cover were left "
                                   f"out: {', '.join(c.name for c in left)}")
        out[mm.name] = res
    return out
