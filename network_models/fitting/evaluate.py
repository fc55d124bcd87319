"""Evaluating a model on the prepared data through its private pieces, and the moduli it is linear in.

Every model here is linear in each of its moduli (Pa parameters): P = Σ θᵢ hᵢ(λ; other parameters).
:class:`LinearModuli` checks that once per model (numerically, at a start point), remembers which free
non-modulus parameters each unit response hᵢ depends on, and caches hᵢ on those — a tube model's hᵢ never
change during a fit, the extended tube's G_e response does not depend on δ.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable
from typing import Any

import numpy as np

from ..models.base import Model as _BaseModel


def fast_evaluator(model: Any, data: Any) -> Callable[[Any], np.ndarray]:
    """p -> nominal stress at every data point (NaN past the lock), through the model's private pieces."""
    generic = type(model)._nominal_stress is _BaseModel._nominal_stress
    if not generic:  # models with their own stress expression (e.g. slip tube)
        slices = [(data.masks[m], m, data.lam[data.masks[m]]) for m in data.modes]

        def ev_own(p):
            out = np.empty_like(data.lam)
            for mask, m, lam in slices:
                out[mask] = model._nominal_stress(m, lam, p)
            return out

        return ev_own

    l1, l2, l3, I1, I2 = data.l1, data.l2, data.l3, data.I1, data.I2
    A, B, r31 = data.A, data.B, data.l3_over_l1
    inv, lamp = model.has_invariant_part, model.has_stretch_part
    dW_dI, dW_dlam, margin = model._dW_dI, model._dW_dlam, model._margin
    locks = type(model)._margin is not _BaseModel._margin

    def ev(p):  # called inside fit's np.errstate(all="ignore")
        if inv:
            W1, W2 = dW_dI(I1, I2, p)
            out = W1 * A + W2 * B
            if lamp:
                out += dW_dlam(l1, p) - r31 * dW_dlam(l3, p)
        else:
            out = dW_dlam(l1, p) - r31 * dW_dlam(l3, p)
        if locks:
            mg = margin(l1, l2, l3, I1, p)
            if mg is not None:
                out[~(mg > 0)] = np.nan
        return out

    return ev


class _Tiled:
    """The kinematics of ``data`` repeated ``k`` times (one block per parameter set); ``head(j)`` gives the
    first j blocks as views, so one tiling serves every smaller stack of the fit."""

    _NAMES = ("l1", "l2", "l3", "I1", "I2", "A", "B", "l3_over_l1", "lam")

    def __init__(self, data, k, arrays=None):
        if arrays is None:
            idx = np.tile(np.arange(data.lam.size), k)
            arrays = {a: getattr(data, a)[idx] for a in self._NAMES}
            arrays["masks"] = {m: mask[idx] for m, mask in data.masks.items()}
        for a in self._NAMES:
            setattr(self, a, arrays[a])
        self.masks = arrays["masks"]
        self.modes = data.modes
        self.k, self._data = k, data

    def head(self, j):
        n = self._data.lam.size * j
        arrays = {a: getattr(self, a)[:n] for a in self._NAMES}
        arrays["masks"] = {m: mask[:n] for m, mask in self.masks.items()}
        return _Tiled(self._data, j, arrays)


def stacked_evaluator(model: Any, data: Any, k: int) -> Callable[[Any], np.ndarray]:
    """Like :func:`fast_evaluator`, on the data repeated k times: parameters may be arrays with one value
    per point (np.repeat of k values), so k parameter sets cost one model call — the per-call overhead of
    a model evaluation on ~60 points is most of its cost.  Only used for models that pass
    :func:`stacks_like_single` (their pieces are plain element-wise numpy)."""
    return fast_evaluator(model, _Tiled(data, k))


_LINEAR_IN_MODULI: dict[tuple[str, str], bool] = {}
_STACKS: dict[tuple[str, str], bool] = {}
_MODULUS_DEPENDS: dict[tuple, tuple[str, ...]] = {}


class LinearModuli:
    """Stress from cached unit responses hᵢ, and Jacobian columns dP/dz (models that fail the linearity
    check are evaluated directly)."""

    def __init__(self, m, ev, free_names, p, co, data=None):
        self.ev = ev
        self.model, self.data = m, data
        self.n = 0 if data is None else int(data.lam.size)
        self._stacked: dict[int, Any] = {}
        self._tiled = None
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
        self.stacks = False
        if self.linear and data is not None and any(self.deps.values()):
            key = (type(m).__qualname__, m.name)
            if key not in _STACKS:
                _STACKS[key] = self._stack_check(p, co)
            self.stacks = _STACKS[key]

    def _unit_eval(self, p, name):
        q = dict(p)
        for nm in self.moduli:
            q[nm] = 0.0
        q[name] = 1.0
        return self.ev(q)

    def h(self, p: dict[str, Any], name: str) -> np.ndarray:
        """hᵢ at p, cached on the parameters it depends on (a few entries: the base point and its steps)."""
        key = tuple(p[j] for j in self.deps[name])
        cache = self._cache[name]
        out = cache.get(key)
        if out is None:
            if len(cache) >= 8:
                cache.pop(next(iter(cache)))
            out = cache[key] = self._unit_eval(p, name)
        return out

    def prefetch(self, ps: list[dict[str, Any]]) -> None:
        """Fill the hᵢ caches for several parameter sets with one stacked model call per modulus (when the
        model stacks; else nothing: :meth:`h` evaluates on demand)."""
        if not (self.linear and self.stacks) or len(ps) < 2:
            return
        n = self.n
        for name in self.moduli:
            deps = self.deps[name]
            if not deps:
                continue
            cache = self._cache[name]
            keys = list(dict.fromkeys(tuple(p[j] for j in deps) for p in ps))
            keys = [key for key in keys if key not in cache]
            if len(keys) < 2:
                continue
            q = dict(ps[0])
            for nm in self.moduli:
                q[nm] = 0.0
            q[name] = 1.0
            for i, j in enumerate(deps):
                q[j] = np.repeat(np.array([key[i] for key in keys]), n)
            ev = self._stacked.get(len(keys))
            if ev is None:
                ev = self._stacked[len(keys)] = self._stacked_ev(len(keys))
            out = ev(q)
            while cache and len(cache) + len(keys) > 8:  # keep the newest; a large prefetch may exceed 8
                cache.pop(next(iter(cache)))
            for b, key in enumerate(keys):
                cache[key] = out[b * n:(b + 1) * n]

    def _check(self, p):
        """Linear in the moduli at p?  Points past the lock (NaN) are left out of the comparison — they
        used to make the scale NaN and the check fail, so the first fit of a model on data past its
        start lock switched variable projection off for the whole session."""
        P = self.ev(p)
        tot = sum(p[nm] * self._unit_eval(p, nm) for nm in self.moduli)
        ok = np.isfinite(P) & np.isfinite(tot)
        if not ok.any():
            return False
        scale = float(np.max(np.abs(P[ok])))
        return bool(scale > 0 and np.all(np.abs(tot[ok] - P[ok]) <= 1e-9 * scale))

    def _stacked_ev(self, k):
        """Evaluator on k stacked blocks: views into one tiling of the data (grown when a larger stack is
        asked for), so a fit tiles its kinematics once."""
        if self._tiled is None or self._tiled.k < k:
            self._tiled = _Tiled(self.data, max(k, 8))
        return fast_evaluator(self.model, self._tiled.head(k))

    def _stack_check(self, p, co):
        """Does a stacked call give what separate calls give (to rounding)?  Checked once per model."""
        try:
            for name in self.moduli:
                deps = self.deps[name]
                if not deps:
                    continue
                sets = []
                for f in (1.0, 1.01):
                    q = dict(p)
                    for j in deps:
                        c = co[self.free.index(j)]
                        q[j] = c.v_of_z(c.z_of_v(p[j]) - 0.01 * (f - 1.0) * 100 * max(1.0, abs(c.z_of_v(p[j]))))
                    sets.append(q)
                single = [self._unit_eval(q, name) for q in sets]
                q = dict(sets[0])
                for nm in self.moduli:
                    q[nm] = 0.0
                q[name] = 1.0
                for j in deps:
                    q[j] = np.repeat(np.array([s_[j] for s_ in sets]), self.n)
                out = np.asarray(stacked_evaluator(self.model, self.data, 2)(q))
                if out.shape != (2 * self.n,):
                    return False
                for b, ref in enumerate(single):
                    got = out[b * self.n:(b + 1) * self.n]
                    ok = np.isfinite(ref)
                    if not (np.array_equal(ok, np.isfinite(got)) and
                            np.allclose(got[ok], ref[ok], rtol=1e-12, atol=0.0)):
                        return False
            return True
        except Exception:  # any failure means: evaluate one parameter set at a time
            return False

    def _depends(self, p, name, j):
        c = self.co[self.free.index(j)]
        z = c.z_of_v(p[j])
        q = dict(p)
        q[j] = c.v_of_z(z - 0.01 * max(1.0, abs(z)))  # any change (also in NaN) = depends
        a, b = self._unit_eval(p, name), self._unit_eval(q, name)
        return not np.array_equal(a, b, equal_nan=True)

    def stress(self, p: dict[str, Any]) -> np.ndarray:
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

    def dP_dz(self, p: dict[str, Any], P: np.ndarray, only: str | None = None) -> np.ndarray:
        """Full Jacobian dP/dz at p (P = stress at p): modulus columns analytic (hᵢ), the others by forward
        differences in z (stepping back when a step crosses a lock).  ``only``: that one column (1-D)."""
        if only is not None:
            return self.dP_dz(p, P)[:, self.free.index(only)]
        J = np.empty((P.size, len(self.free)))
        for i, nm in enumerate(self.free):
            c = self.co[i]
            v = p[nm]
            if self.linear and nm in self.moduli:
                J[:, i] = self.h(p, nm) * c.dv_dz(v)
                continue
            z = c.z_of_v(v)
            h = 1e-7 * max(1.0, abs(z))
            q = dict(p)
            q[nm] = c.v_of_z(z + h)
            Pp = self.stress(q)
            if not np.all(np.isfinite(Pp)):  # a step past a lock: step the other way
                q[nm] = c.v_of_z(z - h)
                J[:, i] = (P - self.stress(q)) / h
            else:
                J[:, i] = (Pp - P) / h
        return J


def bounded_lstsq(H: np.ndarray, y: Any, lo: Any, hi: Any) -> np.ndarray:
    """min ‖Hθ − y‖ with lo ≤ θ ≤ hi for a few columns: the unconstrained solution when it is feasible
    (then it is optimal: convex problem), else the best feasible one over the active sets."""
    k = H.shape[1]
    A = H.T @ H
    b = H.T @ y
    if k == 1:
        a = A[0, 0]
        t = b[0] / a if a > 0 else 0.0
        return np.array([min(max(t, lo[0]), hi[0])])
    if k == 2:
        return np.array(two_column(A, b, lo, hi))
    try:
        t = np.linalg.solve(A, b)
        if np.all(t >= lo) and np.all(t <= hi) and np.all(np.isfinite(t)):
            return t
    except np.linalg.LinAlgError:
        pass
    return _active_sets(A, b, lo, hi)


def two_column(A: Any, b: Any, lo: Any, hi: Any) -> Any:
    """Two columns in closed form (A = HᵀH, only its upper triangle read; b = Hᵀy): the interior optimum,
    else the best of the four box edges (convex problem)."""
    a11, a12, a22 = float(A[0][0]), float(A[0][1]), float(A[1][1])
    b1, b2 = float(b[0]), float(b[1])
    det = a11 * a22 - a12 * a12
    if det > 1e-14 * a11 * a22:
        t1, t2 = (a22 * b1 - a12 * b2) / det, (a11 * b2 - a12 * b1) / det
        if lo[0] <= t1 <= hi[0] and lo[1] <= t2 <= hi[1]:
            return t1, t2
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
    return best


def _active_sets(A, b, lo, hi):
    k = A.shape[0]
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
