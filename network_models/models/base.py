"""The model interface every network model answers, and the generic machinery behind it.

A model declares its parameters once (:class:`~network_models.params.Param`) and implements a few small
pure functions; this base class turns them into nominal stress in every test mode, strain energy,
locking stretches and masks.  Beyond a model's finite-extensibility limit the stress is NaN (never an
exception, never a warning).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.optimize import brentq

from ..deformation import MODES, Mode, principal_stretches
from ..errors import ModeNotSupportedError
from ..params import ParamSet


@dataclass(frozen=True)
class ModulusSplit:
    """How a model's fitted parameters read as network numbers (all moduli in Pa, at the fit's T).

    ``total`` is the small-strain shear modulus G₀.  When the model itself separates a crosslink part
    from an entanglement part (tube models: G_c and G_e; Mooney–Rivlin: 2C₁ and 2C₂ when C₂ ≥ 0),
    ``separable`` is True and ``crosslink`` + ``entanglement`` = ``total``.  Otherwise both are None and
    callers apply the one entanglement policy (:mod:`network_models.network`) to ``total``.
    ``basis`` says in words how the split was made (shown to the user beside the number).
    """

    total: float
    crosslink: float | None = None
    entanglement: float | None = None
    separable: bool = False
    basis: str = ""


@dataclass(frozen=True, kw_only=True)
class ChainReading:
    """One way a model's fitted parameters read as network numbers beyond G₀ (asked by the crosslink
    table, which turns it into a row with intervals from the fit).

    The crosslink modulus is the fitted parameter ``modulus_param`` and stands for ``factor``·νRT
    (1 for affine chains, 1 − 2/f for a phantom part).  ``N_param`` names the parameter that gives the
    Kuhn number per strand through ``N_map`` (identity for N itself, J_m/3 + 1 for Gent); None means the
    table uses M_c/M_K.  ``f`` is the junction functionality the reading assumes (None: the table's f).
    """

    key: str
    label: str
    assumes: str
    modulus_param: str
    factor: float = 1.0
    f: float | None = None
    N_param: str | None = None
    N_map: Callable[[float], float] | None = None  # None = identity
    note: str = ""

    def N_of(self, value: float) -> float:
        return float(value if self.N_map is None else self.N_map(value))


def _newton_monotone(f, df, x, tol=1e-15, max_iter=60):
    """Scalar Newton iteration; the callers start on the side where it converges monotonically."""
    for _ in range(max_iter):
        step = f(x) / df(x)
        x -= step
        if abs(step) <= tol * abs(x):
            break
    return x


def _I1_lock_stretches(mode: Mode, c: float) -> tuple[float, float]:
    """Stretches at which I₁(λ) = c in the mode (c > 3): (lower, upper).  Every mode has a lower root
    (compression in uniaxial; λ < 1 in equibiaxial and planar, where the free direction stretches).
    Scalar Newton from starts where each branch is convex and the residual positive, so the iteration
    is monotone (no bracketing needed); planar has a closed form and is symmetric under λ → 1/λ."""
    if not c > 3.0:
        return 1.0, 1.0
    if mode is Mode.UNIAXIAL:  # λ² + 2/λ = c
        hi = _newton_monotone(lambda x: x * x + 2.0 / x - c, lambda x: 2.0 * x - 2.0 / (x * x), math.sqrt(c))
        lo = _newton_monotone(lambda x: x * x + 2.0 / x - c, lambda x: 2.0 * x - 2.0 / (x * x), 2.0 / c)
        return lo, hi
    if mode is Mode.EQUIBIAXIAL:  # 2λ² + λ⁻⁴ = c; lower start c^(-1/4) makes λ⁻⁴ = c, residual 2λ² > 0
        f = lambda x: 2.0 * x * x + x**-4 - c  # noqa: E731
        df = lambda x: 4.0 * x - 4.0 * x**-5  # noqa: E731
        return _newton_monotone(f, df, c**-0.25), _newton_monotone(f, df, math.sqrt(c / 2.0))
    b = c - 1.0  # planar: λ² + 1 + λ⁻² = c  ⇒  u + 1/u = c − 1 with u = λ²
    hi = math.sqrt((b + math.sqrt(b * b - 4.0)) / 2.0)
    return 1.0 / hi, hi


def _max_stretch_lock_stretches(mode: Mode, lm: float) -> tuple[float, float]:
    """(lower, upper) stretch at which the largest principal stretch reaches ``lm`` (> 1): below 1 the
    largest stretch is the free/transverse one — λ^(−1/2) uniaxial, λ⁻² equibiaxial, 1/λ planar."""
    if mode is Mode.UNIAXIAL:
        return 1.0 / (lm * lm), lm
    if mode is Mode.EQUIBIAXIAL:
        return lm**-0.5, lm
    return 1.0 / lm, lm


class Model:
    """Base class.  Subclasses set the class attributes and implement either

    * ``_dW_dI(I1, I2, p) -> (W1, W2)`` and ``_W_inv(I1, I2, p)`` (invariant models), or
    * ``_dW_dlam(l, p) -> dW/dλ`` for one principal stretch and ``_W_lam(l1, l2, l3, p)`` (separable
      principal-stretch terms, added to any invariant part);

    plus ``small_strain_modulus`` and, where the model locks, ``_margin`` (positive inside the domain,
    zero at the lock).
    """

    name: str = ""
    title: str = ""
    family: str = ""
    params: ParamSet = ParamSet()
    modes: tuple[Mode, ...] = MODES
    equation: str = ""
    references: tuple[str, ...] = ()
    assumption: str = ""  # how the model's modulus maps to a network (read by crosslinks)
    has_invariant_part = True
    has_stretch_part = False
    #: display colour (hex), the same in every plot and report; each registered model declares its own
    colour: str = "#777777"

    # ----- parameters -------------------------------------------------------------------------
    def resolve(self, params: dict | None = None, **kw: Any) -> dict[str, float]:
        """Defaults filled in, every value checked against its declaration."""
        given = dict(params or {}, **kw)
        unknown = set(given) - set(self.params.names())
        if unknown:
            raise ValueError(
                f"model {self.name!r} has no parameter(s) {sorted(unknown)}; "
                f"its parameters are {list(self.params.names())}"
            )
        out = {}
        for p in self.params:
            out[p.name] = p.check(given.get(p.name, p.default))
        self._check_combination(out)
        return out

    def _check_combination(self, p):
        """Hook for constraints between parameters."""

    def supports(self, mode: Mode | str) -> bool:
        return Mode.parse(mode) in self.modes

    def _require_mode(self, mode) -> Mode:
        mode = Mode.parse(mode)
        if mode not in self.modes:
            raise ModeNotSupportedError(
                f"the {self.title} model is defined for {', '.join(m.value for m in self.modes)} only, "
                f"not for {mode.value}; choose another model for {mode.value} data"
            )
        return mode

    # ----- to be provided ---------------------------------------------------------------------
    def _dW_dI(self, I1, I2, p):
        z = np.zeros_like(I1)
        return z, z

    def _W_inv(self, I1, I2, p):
        return np.zeros_like(I1)

    def _dW_dlam(self, lam, p):
        return np.zeros_like(lam)

    def _W_lam(self, l1, l2, l3, p):
        return np.zeros_like(l1)

    def _margin(self, l1, l2, l3, I1, p) -> Any:
        """Positive inside the model's domain, <= 0 past its finite-extensibility limit; None = no limit."""
        return None

    def small_strain_modulus(self, **params: Any) -> float:
        raise NotImplementedError

    # ----- from a network: the one entanglement policy (network_models.entanglement) ----------------
    def network_crosslink_modulus(self, network: Any) -> float:
        """The crosslink part of the small-strain modulus this model gives a :class:`Network` (Pa, filler
        amplified): affine νRT·X unless the model's physics says otherwise (phantom, constrained junction)."""
        return network.affine_modulus

    def from_network(self, network: Any) -> dict[str, float]:
        """Parameters for a network under the one entanglement policy: the small-strain modulus is
        G₀ = G_x + G_e (crosslink part as this model reads ν, plus the network's entanglement part), and
        the lock follows the network's filler-amplified N (``network.N_effective``)."""
        from ..entanglement import policy_parts

        Gx, Ge = policy_parts(self, network)
        return self._from_moduli(Gx, Ge, network)

    def _from_moduli(self, Gx: float, Ge: float, network) -> dict[str, float]:
        """Parameters whose small-strain modulus is exactly Gx + Ge (each model; tested over the registry)."""
        raise NotImplementedError

    def network_notices(self, network: Any) -> list:
        """Sentences (``errors.Notice``) when the mapping from this network had to bound something
        (e.g. the extended tube's δ); empty when the mapping is exact."""
        return []

    def network_reading(self, values: dict) -> list[ChainReading]:
        """How the fitted parameters read as network numbers beyond G₀ (chain modulus and N, phantom
        part with its f, J_m as N); empty when G₀ is all the model says."""
        return []

    def guess(self, modulus: float) -> dict[str, float]:
        """Start values for a fit, from the data's small-strain shear modulus estimate (Pa)."""
        raise NotImplementedError

    # ----- how fitted parameters read as network numbers ---------------------------------------
    def modulus_split(self, values: dict) -> ModulusSplit:
        """Crosslink and entanglement parts of the small-strain modulus, as far as the model separates
        them (see :class:`ModulusSplit`).  The default: the model does not separate them."""
        return ModulusSplit(total=float(self.small_strain_modulus(**values)), separable=False,
                            basis=f"the {self.title} model does not separate crosslinks from entanglements")

    def stability_notes(self, values: dict) -> list:
        """Sentences (``errors.Notice`` of kind ``"unstable"``) when these parameter values make the model
        unstable or unphysical somewhere (e.g. a negative Mooney–Rivlin C₂); empty when none."""
        return []

    # ----- generic answers --------------------------------------------------------------------
    def _state(self, mode, lam):
        l1, l2, l3 = principal_stretches(mode, lam)
        a, b, c = l1 * l1, l2 * l2, l3 * l3
        return l1, l2, l3, a + b + c, a * b + b * c + c * a

    def _valid(self, l1, l2, l3, I1, p):
        valid = np.isfinite(l1) & (l1 > 0)
        m = self._margin(l1, l2, l3, I1, p)
        if m is not None:
            valid &= m > 0
        return valid

    def nominal_stress(self, mode: Mode | str, lam: Any, params: dict | None = None, **kw: Any) -> np.ndarray:
        """Nominal (engineering) stress along the loaded direction, Pa; NaN past the locking limit."""
        mode = self._require_mode(mode)
        p = self.resolve(params, **kw)
        lam = np.asarray(lam, dtype=np.float64)
        return self._nominal_stress(mode, lam, p)

    def _nominal_stress(self, mode, lam, p):
        with np.errstate(all="ignore"):
            l1, l2, l3, I1, I2 = self._state(mode, lam)
            valid = self._valid(l1, l2, l3, I1, p)
            # P1 = (λ1 ∂W/∂λ1 − λ3 ∂W/∂λ3)/λ1 with direction 3 stress-free (docs/methods.md §stress-from-energy)
            out = np.zeros_like(l1)
            if self.has_invariant_part:
                W1, W2 = self._dW_dI(I1, I2, p)
                a1, a3 = l1 * l1, l3 * l3
                out = out + 2.0 * (W1 * (a1 - a3) + W2 * (a1 * (I1 - a1) - a3 * (I1 - a3)))
            if self.has_stretch_part:
                out = out + l1 * self._dW_dlam(l1, p) - l3 * self._dW_dlam(l3, p)
            out = out / l1
        return np.where(valid, out, np.nan)

    def true_stress(self, mode: Mode | str, lam: Any, params: dict | None = None, **kw: Any) -> np.ndarray:
        """Cauchy stress along the loaded direction (λ × nominal, incompressible)."""
        return np.asarray(lam, dtype=np.float64) * self.nominal_stress(mode, lam, params, **kw)

    def reduced_stress(self, lam: Any, params: dict | None = None, **kw: Any) -> np.ndarray:
        """Mooney reduced stress σ* = P/(λ − λ⁻²) in uniaxial tension/compression, Pa.  At λ = 1 (0/0) it
        returns its limit, the small-strain shear modulus G₀ (P ≈ 3G₀(λ − 1) and λ − λ⁻² ≈ 3(λ − 1))."""
        lam = np.asarray(lam, dtype=np.float64)
        with np.errstate(all="ignore"):
            out = self.nominal_stress(Mode.UNIAXIAL, lam, params, **kw) / (lam - lam**-2)
        at_one = lam == 1.0
        if np.any(at_one):
            G0 = float(self.small_strain_modulus(**self.resolve(params, **kw)))
            out = np.where(at_one, G0, out)
        return out

    def energy(self, mode: Mode | str, lam: Any, params: dict | None = None, **kw: Any) -> np.ndarray:
        """Strain energy per unit reference volume, J/m³ (zero in the undeformed state); NaN past lock."""
        mode = self._require_mode(mode)
        p = self.resolve(params, **kw)
        lam = np.asarray(lam, dtype=np.float64)
        with np.errstate(all="ignore"):
            l1, l2, l3, I1, I2 = self._state(mode, lam)
            valid = self._valid(l1, l2, l3, I1, p)
            w = np.zeros_like(l1)
            if self.has_invariant_part:
                w = w + self._W_inv(I1, I2, p)
            if self.has_stretch_part:
                w = w + self._W_lam(l1, l2, l3, p)
        return np.where(valid, w, np.nan)

    def _lock_I1(self, p) -> float | None:
        """The value of I₁ at which the model locks, for models whose domain is I₁ < limit (eight-chain,
        Gent, extended tube); None lets :meth:`stretch_range` find the lock numerically."""
        return None

    def _lock_stretch(self, p) -> float | None:
        """The principal stretch at which the model locks, for models whose domain is max λᵢ < limit
        (three-chain); None otherwise."""
        return None

    def stretch_range(self, mode: Mode | str, params: dict | None = None, **kw: Any) -> tuple[float, float]:
        """(lowest, highest) stretch the model allows in this mode; (0, inf) when it never locks."""
        mode = self._require_mode(mode)
        p = self.resolve(params, **kw)
        if type(self)._margin is Model._margin:
            return 0.0, float("inf")  # the model never locks
        c = self._lock_I1(p)
        if c is not None:
            return _I1_lock_stretches(mode, c)
        lm = self._lock_stretch(p)
        if lm is not None:  # locks when the largest principal stretch reaches lm
            return _max_stretch_lock_stretches(mode, lm)
        return self._stretch_range_numeric(mode, p)

    def _stretch_range_numeric(self, mode, p) -> tuple[float, float]:
        """The lock found by bracketing and brentq on the model's own domain test (any model)."""

        def margin(x):
            l1, l2, l3, I1, _ = self._state(mode, np.array([x]))
            m = self._margin(l1, l2, l3, I1, p)
            return float(m[0])

        l1, l2, l3, I1, _ = self._state(mode, np.array([1.0]))
        if self._margin(l1, l2, l3, I1, p) is None:
            return 0.0, float("inf")
        hi = float("inf")
        x = 2.0
        while x < 1e8:
            if margin(x) <= 0:
                hi = brentq(margin, 1.0, x, xtol=1e-14, rtol=1e-15)
                break
            x *= 2.0
        lo = 0.0
        x = 0.5  # every mode can lock below λ = 1 (the free direction stretches there)
        while x > 1e-8:
            if margin(x) <= 0:
                lo = brentq(margin, x, 1.0, xtol=1e-15, rtol=1e-15)
                break
            x *= 0.5
        return lo, hi

    def stretch_limit(self, mode: Mode | str, params: dict | None = None, **kw: Any) -> float | None:
        """Locking stretch in tension for the mode (finite-extensibility limit), or None."""
        hi = self.stretch_range(mode, params, **kw)[1]
        return None if not np.isfinite(hi) else hi

    def describe(self) -> dict:
        return {
            "name": self.name, "title": self.title, "family": self.family,
            "modes": [m.value for m in self.modes], "equation": self.equation,
            "references": list(self.references), "assumption": self.assumption,
            "parameters": [
                {"name": q.name, "symbol": q.symbol, "unit": q.unit, "meaning": q.meaning,
                 "bounds": list(q.bounds), "typical": list(q.typical), "default": q.default,
                 "source": q.source, "held": q.held}
                for q in self.params
            ],
        }

    def __repr__(self):
        return f"<{type(self).__name__} {self.name!r}>"
