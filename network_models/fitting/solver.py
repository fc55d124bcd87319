"""The optimiser: variable projection of the moduli, a small Levenberg–Marquardt loop for the 1–3
parameters left, and scipy's ``least_squares`` as the fallback when the small loop fails.

Variable projection (Golub & Pereyra 1973, SIAM J. Numer. Anal. 10:413 [from memory]): the free moduli
enter the stress linearly, so for given other parameters (N, J_m, δ …) they are solved exactly by a
1–2 column bounded linear least squares, and the optimiser only moves the others.  Its Jacobian is the
forward difference of the *projected* residual (moduli re-solved at the stepped point), which is exact to
the step — the small loop then converges like Gauss–Newton on the reduced problem.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

import numpy as np
from scipy.optimize import least_squares

from ..errors import FitError
from .evaluate import LinearModuli, bounded_lstsq, fast_evaluator, two_column
from .problem import Coord, Problem

#: start multiples of the locking threshold (the model's guess when nothing locks); scored in one stacked call
LOCK_CANDIDATES = (1.05, 1.1, 1.2, 1.3, 1.6, 2.5, 8.0)
_FALLBACK_METHODS = ("lm", "trf")  # MINPACK Levenberg–Marquardt first (least overhead); trf if it fails


class Projected:
    """The fit's weighted residual as a function of the coordinates u of the non-modulus parameters (the
    free moduli are solved for each u).  ``space="z"``: the small loop's coordinates with box bounds (log
    distance to the lock for a locking parameter, else the natural coordinate; see :class:`_Axis`);
    ``space="x"``: bounds folded into smooth transforms (scipy fallback)."""

    def __init__(self, pr: Problem):
        m = pr.model
        self.pr = pr
        self.ev = fast_evaluator(m, pr.data)
        names = pr.free_names
        self.co = [Coord(m.params[nm], pr.p0[nm], pr.G0, pr.lb[nm], pr.ub[nm]) for nm in names]
        self.lin = lin = LinearModuli(m, self.ev, names, pr.p0, self.co, pr.data)
        self.L = [nm for nm in names if lin.linear and nm in lin.moduli]
        self.NL = [nm for nm in names if nm not in self.L]
        self._nl_co = [self.co[names.index(nm)] for nm in self.NL]
        self._axes = [_Axis(c, pr.locks.get(nm), pr.lb[nm], pr.ub[nm]) for nm, c in zip(self.NL, self._nl_co,
                                                                                         strict=True)]
        self.zlo = np.array([a.lo for a in self._axes])
        self.zhi = np.array([a.hi for a in self._axes])
        self.L_lo = np.array([pr.lb[nm] for nm in self.L])
        self.L_hi = np.array([pr.ub[nm] for nm in self.L])
        self.fixed_moduli = [nm for nm in lin.moduli if nm not in self.L] if lin.linear else []
        self.base = dict(pr.p0)
        assert pr.wd is not None  # set_up weighs the data
        self.big = 1e3 * max(1.0, float(np.max(np.abs(pr.wd))))
        self.nfev = 0
        self.space = "z"
        self._memo: dict = {}
        self._wcache: dict = {}
        self._pmemo: dict = {}
        self.yy = float(np.dot(pr.wd, pr.wd))
        self._fast = bool(lin.linear and not self.fixed_moduli and 1 <= len(self.L) <= 2
                          and set(self.L) == set(lin.moduli))

    def params_of(self, u: np.ndarray) -> dict[str, Any]:
        p = self._nl_params(u)
        L = self.L
        if not L:
            return p
        weight: Any
        lin, weight = self.lin, self.pr.weight
        y: Any = self.pr.wd
        b: Any
        if self.fixed_moduli:
            y = y - sum(p[nm] * lin.h(p, nm) for nm in self.fixed_moduli) * weight
        if len(L) == 1:  # the common case, in scalars: θ = <h, y>/<h, h>, clipped to its bounds
            hw = lin.h(p, L[0]) * weight
            a, b = float(np.dot(hw, hw)), float(np.dot(hw, y))
            t = b / a if a > 0 else 0.0
            p[L[0]] = min(max(t, self.L_lo[0]), self.L_hi[0]) if math.isfinite(t) else t
        elif len(L) == 2:  # two moduli (tube models): the 2 × 2 normal equations in scalars
            h1, h2 = lin.h(p, L[0]) * weight, lin.h(p, L[1]) * weight
            A = ((float(np.dot(h1, h1)), float(np.dot(h1, h2))), (0.0, float(np.dot(h2, h2))))
            b = (float(np.dot(h1, y)), float(np.dot(h2, y)))
            p[L[0]], p[L[1]] = two_column(A, b, self.L_lo, self.L_hi)
        else:
            H = np.column_stack([lin.h(p, nm) for nm in L]) * weight[:, None]
            theta = bounded_lstsq(H, y, self.L_lo, self.L_hi)
            for j, nm in enumerate(L):
                p[nm] = float(theta[j])
        return p

    def residual(self, u: np.ndarray) -> tuple[dict[str, Any], np.ndarray, np.ndarray]:
        """(parameters, stress, weighted residual) at u; non-finite residuals become a large number so an
        optimiser backs away from them.  The last few points are remembered (the optimum is asked again)."""
        key = (self.space, u.tobytes())
        hit = self._memo.get(key)
        if hit is not None:
            return hit
        out = self._residual(u)
        if len(self._memo) >= 3:
            self._memo.pop(next(iter(self._memo)))
        self._memo[key] = out
        return out

    def _weighted(self, p, nm):
        """(h, h·w, ⟨hw, hw⟩, ⟨hw, y⟩) of one modulus at p, cached with its unit response."""
        lin = self.lin
        key = (nm, *(p[j] for j in lin.deps[nm]))
        hit = self._wcache.get(key)
        if hit is None:
            h = lin.h(p, nm)
            hw = h * self.pr.weight
            hit = (h, hw, float(np.dot(hw, hw)), float(np.dot(hw, self.pr.wd)))
            if len(self._wcache) >= 16:
                self._wcache.pop(next(iter(self._wcache)))
            self._wcache[key] = hit
        return hit

    def _one_modulus(self, hh, hy):
        """The one projected modulus: least squares t = ⟨h, y⟩/⟨h, h⟩, clipped to its bounds."""
        t = hy / hh if hh > 0 else 0.0
        return min(max(t, self.L_lo[0]), self.L_hi[0]) if math.isfinite(t) else t

    def _projected(self, u):
        """Moduli solved, stress and residual assembled from the cached weighted unit responses (the common
        case: one or two moduli, all free)."""
        p = self._nl_params(u)
        L = self.L
        if len(L) == 1:
            h, hw, hh, hy = self._weighted(p, L[0])
            t = self._one_modulus(hh, hy)
            p[L[0]] = t
            return p, t * h, t * hw - self.pr.wd
        h1, hw1, a11, b1 = self._weighted(p, L[0])
        h2, hw2, a22, b2 = self._weighted(p, L[1])
        t1, t2 = two_column(((a11, float(np.dot(hw1, hw2))), (0.0, a22)), (b1, b2), self.L_lo, self.L_hi)
        p[L[0]], p[L[1]] = t1, t2
        return p, t1 * h1 + t2 * h2, t1 * hw1 + t2 * hw2 - self.pr.wd

    def cost(self, u: np.ndarray) -> float:
        """‖residual‖² at u from the Gram entries alone (no residual vector) in the common case."""
        if not self._fast:
            r = self.residual(u)[2]
            return float(np.dot(r, r))
        p = self._nl_params(u)
        L = self.L
        if len(L) == 1:
            _, _, hh, hy = self._weighted(p, L[0])
            t = self._one_modulus(hh, hy)
            c = self.yy - 2.0 * t * hy + t * t * hh
        else:
            _, hw1, a11, b1 = self._weighted(p, L[0])
            _, hw2, a22, b2 = self._weighted(p, L[1])
            a12 = float(np.dot(hw1, hw2))
            t1, t2 = two_column(((a11, a12), (0.0, a22)), (b1, b2), self.L_lo, self.L_hi)
            c = self.yy - 2.0 * (t1 * b1 + t2 * b2) + t1 * t1 * a11 + 2.0 * t1 * t2 * a12 + t2 * t2 * a22
        return c if math.isfinite(c) else math.inf

    def costs(self, us: Any) -> Any:
        """:meth:`cost` at several points, vectorised over them (the unit responses already fetched)."""
        if not self._fast or len(us) < 2:
            return [self.cost(u) for u in us]
        ps = [self._nl_params(u) for u in us]
        w, y, L = self.pr.weight, self.pr.wd, self.L
        H1 = np.stack([self.lin.h(p, L[0]) for p in ps]) * w
        a11, b1 = np.einsum("ij,ij->i", H1, H1).tolist(), (H1 @ y).tolist()
        if len(L) == 2:
            H2 = np.stack([self.lin.h(p, L[1]) for p in ps]) * w
            a22, b2 = np.einsum("ij,ij->i", H2, H2).tolist(), (H2 @ y).tolist()
            a12 = np.einsum("ij,ij->i", H1, H2).tolist()
        out = []
        for i in range(len(us)):
            if len(L) == 1:
                t = b1[i] / a11[i] if a11[i] > 0 else 0.0
                t = min(max(t, self.L_lo[0]), self.L_hi[0]) if math.isfinite(t) else t
                c = self.yy - 2.0 * t * b1[i] + t * t * a11[i]
            else:
                t1, t2 = two_column(((a11[i], a12[i]), (0.0, a22[i])), (b1[i], b2[i]), self.L_lo, self.L_hi)
                c = (self.yy - 2.0 * (t1 * b1[i] + t2 * b2[i]) + t1 * t1 * a11[i] + 2.0 * t1 * t2 * a12[i]
                     + t2 * t2 * a22[i])
            out.append(c if math.isfinite(c) else math.inf)
        return out

    def _residual(self, u):
        self.nfev += 1
        if self._fast:
            p, P, r = self._projected(u)
        else:
            p = self.params_of(u)
            P = self.lin.stress(p)
            r = P * self.pr.weight - self.pr.wd
        if not math.isfinite(float(np.dot(r, r))):  # one BLAS call: NaN/inf anywhere shows in the sum
            r[~np.isfinite(r)] = self.big
        return p, P, r

    def _nl_params(self, u):
        """The parameter set at u (moduli as in the start set; callers overwrite them).  Remembered for the
        points of the current iteration: the candidates, the steps and the trial point each come back."""
        key = (self.space, u.tobytes())
        hit = self._pmemo.get(key)
        if hit is not None:
            return hit.copy()
        p = self.base.copy()
        in_z = self.space == "z"
        for nm, c, a, ui in zip(self.NL, self._nl_co, self._axes, u.tolist(), strict=True):
            p[nm] = a.v_of(ui) if in_z else c.v_of_x(ui)
        if len(self._pmemo) >= 32:
            self._pmemo.clear()
        self._pmemo[key] = p
        return p.copy()

    def steps(self, u: np.ndarray) -> list[tuple[np.ndarray, float]]:
        """The points the forward-difference Jacobian at u evaluates."""
        out = []
        for j in range(u.size):
            h = 1e-7 * max(1.0, abs(u[j]))
            if self.space == "z" and u[j] + h > self.zhi[j]:
                h = -h
            u2 = u.copy()
            u2[j] += h
            out.append((u2, h))
        return out

    def prefetch(self, us: Any) -> None:
        """Evaluate the model at several points in one stacked call (fills the unit-response caches)."""
        self.lin.prefetch([self._nl_params(u) for u in us])

    def full_jacobian(self, u: np.ndarray, p: dict[str, Any], P: np.ndarray) -> np.ndarray:
        """dP/dz at the optimum for every free parameter (moduli held, not re-solved): modulus columns are
        the unit responses, the others forward differences over the same steps the optimiser's last
        Jacobian used (cached, so usually no model call)."""
        lin, names = self.lin, self.pr.free_names
        J = np.empty((P.size, len(names)))
        steps = self.steps(u) if self.space == "z" and u.size else []
        for i, nm in enumerate(names):
            c = self.co[i]
            if lin.linear and nm in lin.moduli:
                J[:, i] = lin.h(p, nm) * c.dv_dz(p[nm])
                continue
            if nm not in self.NL or not steps:
                J[:, i] = lin.dP_dz(p, P, only=nm)
                continue
            v2 = self._axes[self.NL.index(nm)].v_of(steps[self.NL.index(nm)][0][self.NL.index(nm)])
            q = dict(p)
            q[nm] = v2
            dz = c.z_of_v(v2) - c.z_of_v(p[nm])
            J[:, i] = (lin.stress(q) - P) / dz if dz != 0 else lin.dP_dz(p, P, only=nm)
        return J

    def residual_ahead(self, u: np.ndarray) -> np.ndarray:
        """The residual at u, with the model evaluated at u and at the Jacobian's steps from u in one call:
        an accepted step then needs no further model call for its Jacobian."""
        if (self.space, u.tobytes()) not in self._memo:
            self.prefetch([u] + [u2 for u2, _ in self.steps(u)])
        return self.residual(u)[2]

    def jac(self, u: np.ndarray, r: np.ndarray) -> np.ndarray:
        """Forward-difference Jacobian of the projected residual (moduli re-solved at each step); in z the
        step points away from a bound it would cross."""
        J = np.empty((r.size, u.size))
        for j, (u2, h) in enumerate(self.steps(u)):
            J[:, j] = (self.residual(u2)[2] - r) / h
        J[~np.isfinite(J)] = 0.0
        return J

    def u_of(self, p: dict[str, Any]) -> np.ndarray:
        if self.space == "z":
            return np.array([a.u_of(p[nm]) for nm, a in zip(self.NL, self._axes, strict=True)])
        return np.array([c.x_of_v(p[nm]) for nm, c in zip(self.NL, self._nl_co, strict=True)])


class _Axis:
    """The small loop's coordinate of one non-modulus parameter, with box bounds.  For a locking parameter
    it is the log of the distance to the lock threshold (u = ln|v − v_lock|): the stress at the largest
    stretches grows like 1/(distance to the lock), so in u the residual is nearly linear and Gauss–Newton
    steps land where they should; otherwise it is the natural coordinate z."""

    __slots__ = ("c", "thr", "sign", "lo", "hi")

    def __init__(self, c: Coord, lock, lb, ub):
        self.c = c
        self.thr: float | None
        self.sign: float
        self.thr, self.sign = (None, 0.0) if lock is None else (lock[0], 1.0 if lock[1] == "above" else -1.0)
        if self.thr is None:
            self.lo, self.hi = c.zlo, c.zhi
        else:
            near, far = (lb, ub) if self.sign > 0 else (ub, lb)
            self.lo = math.log(max(abs(near - self.thr), 1e-300))
            self.hi = math.log(abs(far - self.thr)) if math.isfinite(far) and far != self.thr else math.inf

    def v_of(self, u):
        if self.thr is None:
            return self.c.v_of_z(u)
        return self.thr + self.sign * math.exp(min(u, 700.0))

    def u_of(self, v):
        u = self.c.z_of_v(v) if self.thr is None else math.log(max(self.sign * (v - self.thr), 1e-300))
        return min(max(u, self.lo), self.hi)


def start_point(pj: Projected) -> tuple[np.ndarray, np.ndarray]:
    """The best start for the optimiser: the model's guess, or for each locking parameter a few candidates
    placed relative to the value at which the largest data stretch reaches the lock.  Returns (x, r)."""
    pr = pj.pr
    cands = []
    for name, (thr, side) in pr.locks.items():
        if name in pr.start or name not in pj.NL:
            continue
        for c in LOCK_CANDIDATES:
            v = thr * c if side == "above" else thr / c
            if pr.lb[name] <= v <= pr.ub[name]:
                q = dict(pr.p0)
                q[name] = v
                cands.append(q)
    if not cands:
        cands = [pr.p0]
    for q in cands:
        for name in pr.locks:  # keep start values inside the lock bound
            q[name] = min(max(q[name], pr.lb[name]), pr.ub[name])
    us = [pj.u_of(q) for q in cands]
    one = len(us) > 2 and len(pj.NL) == 1
    pj.prefetch(us if one else us + [u2 for u in us for u2, _ in pj.steps(u)])
    costs = pj.costs(us)
    best = min(range(len(us)), key=costs.__getitem__)
    x = us[best]
    if one:  # one unknown: the vertex of the parabola through the best candidate and its neighbours
        x = _vertex(us, costs, best, pj)
    r = pj.residual(x)[2]
    if not math.isfinite(float(np.dot(r, r))) or float(np.abs(r).max()) >= pj.big:
        raise FitError(f"the {pr.model.title} model cannot be evaluated at any start value on these data",
                       kind="no-start")
    return x, r


def _vertex(us, costs, best, pj):
    """Minimum of the parabola through the best candidate and its two neighbours (ordered by u), when
    the three bracket a minimum and it is better; else the best candidate.  One stacked model call (the
    vertex with its Jacobian step), which the optimiser's first iteration needs anyway."""
    order = sorted(range(len(us)), key=lambda i: float(us[i][0]))
    k = order.index(best)
    if k == 0 or k == len(order) - 1:
        return us[best]
    (a, fa), (b, fb), (c, fc) = ((float(us[i][0]), costs[i]) for i in order[k - 1:k + 2])
    if not all(map(math.isfinite, (fa, fb, fc))):
        return us[best]
    den = (b - a) * (fb - fc) - (b - c) * (fb - fa)
    if den == 0.0:
        return us[best]
    v = b - 0.5 * ((b - a) ** 2 * (fb - fc) - (b - c) ** 2 * (fb - fa)) / den
    if not min(a, c) < v < max(a, c):
        return us[best]
    x = np.array([v])
    # the vertex with its Jacobian step, and the best candidate's step in case the vertex is worse: one call
    pj.prefetch([x] + [u2 for u2, _ in pj.steps(x)] + [u2 for u2, _ in pj.steps(us[best])])
    return x if pj.cost(x) < fb else us[best]


def _solve_damped(A, D, g, mu, free=None):
    """(A + μ·D) s = −g for 1–3 unknowns (D: Marquardt's diagonal scaling, floored); with ``free`` (a
    mask) only those unknowns move — the others sit on a bound the gradient pushes them against, and
    keeping them in the system would bend the step of the rest."""
    if free is not None and not free.all():
        s = np.zeros_like(g)
        if free.any():
            idx = np.flatnonzero(free)
            s[idx] = _solve_damped(A[np.ix_(idx, idx)], D[idx], g[idx], mu)
        return s
    if A.shape[0] == 1:
        return np.array([-g[0] / (A[0, 0] + mu * D[0])])
    return np.linalg.solve(A + np.diag(mu * D), -g)


def levenberg_marquardt(fun: Callable[[np.ndarray], np.ndarray], jac: Callable[..., np.ndarray], x0: Any,
                        r0: np.ndarray | None = None, *, lo: Any = None, hi: Any = None, xtol: float = 1e-8,
                        ftol: float = 1e-14, max_iter: int = 60) -> tuple[np.ndarray, np.ndarray, str] | None:
    """Minimise ‖fun(x)‖² over a few parameters within the box lo ≤ x ≤ hi.

    Levenberg–Marquardt with Marquardt's diagonal scaling and Nielsen's damping update (Madsen, Nielsen &
    Tingleff 2004, "Methods for non-linear least squares problems", IMM DTU, §3.2 [from memory]); a step
    that would leave the box goes half way to the bound the first time (a valley may lie between) and to the
bound the next.  ``jac(x, r)`` gives the Jacobian at x; ``r0`` = fun(x0)
    when already known.  With one unknown the curvature is the secant of the gradient between the last two
    points when that lies within a factor 5 of the Gauss–Newton JᵀJ: it includes the Σ rᵢ∇²rᵢ term that
    Gauss–Newton drops, so a fit with a systematic misfit converges superlinearly instead of linearly
    (the 1-D case of the hybrid methods in the same notes, §3.4).

    Returns (x, r, message), or None when it does not converge (the caller then falls back to scipy).
    Converged: the undamped (Gauss–)Newton step at the current point, kept inside the box, is below
    ``xtol`` (relative to 1 + |x|) — it estimates the distance to the optimum, where a damped step can be
    small far from it; or an accepted step reduced the sum of squares by less than ``ftol`` of it; or no
    step inside the box reduces it."""
    x = np.array(x0, float)
    n = x.size
    lo = np.full(n, -np.inf) if lo is None else np.asarray(lo, float)
    hi = np.full(n, np.inf) if hi is None else np.asarray(hi, float)
    if n == 1:
        return _lm_scalar(fun, jac, float(x[0]), r0, float(lo[0]), float(hi[0]), xtol, ftol, max_iter)
    r = fun(x) if r0 is None else r0
    cost = float(np.dot(r, r))
    J = jac(x, r)
    mu, nu, at_bound = 1e-3, 2.0, False
    A, g = J.T @ J, J.T @ r
    for _ in range(max_iter):  # the k × k pieces are handled as Python floats: numpy reductions cost more
        if not (math.isfinite(cost) and all(map(math.isfinite, A.ravel().tolist() + g.tolist()))):
            return None
        d = A.diagonal().tolist()
        D = np.maximum(A.diagonal(), 1e-12 * max(max(d), 1e-300))
        H = A
        tol = xtol * (1.0 + max(map(abs, x.tolist())))
        free = ~(((x <= lo) & (g > 0)) | ((x >= hi) & (g < 0)))  # not pinned on a bound by the gradient
        try:  # the undamped step, kept inside the box, estimates the distance to the optimum
            newton = np.minimum(np.maximum(x + _solve_damped(H, D, g, 0.0, free), lo), hi) - x
            if max(map(abs, newton.tolist())) <= tol:
                return x, r, "the Gauss–Newton step became negligible"
        except np.linalg.LinAlgError:
            pass
        try:
            step = _solve_damped(H, D, g, mu, free)
        except np.linalg.LinAlgError:
            return None
        x_new = np.minimum(np.maximum(x + step, lo), hi)
        hit = bool(np.any(x_new != x + step))
        if hit and not at_bound:  # the first step into a bound goes half way (a valley may lie between)
            x_new = x + 0.5 * (x_new - x)
        step = x_new - x
        size = max(map(abs, step.tolist()))
        if size == 0.0:
            return x, r, "no smaller sum of squares in any direction within the bounds"
        r_new = fun(x_new)
        c_new = float(np.dot(r_new, r_new))
        pred = -float(2.0 * (g @ step) + step @ H @ step)
        if math.isfinite(c_new) and c_new < cost and pred > 0:
            rho = (cost - c_new) / pred
            flat = cost - c_new <= ftol * cost
            x, r, cost, at_bound = x_new, r_new, c_new, hit
            J = jac(x, r)
            A, g = J.T @ J, J.T @ r
            if flat:
                return x, r, "the reduction of the sum of squares became negligible"
            mu *= max(1.0 / 3.0, 1.0 - (2.0 * rho - 1.0) ** 3)
            nu = 2.0
        elif size <= 1e-3 * tol:
            return x, r, "no smaller sum of squares in any direction"
        else:
            mu *= nu
            nu *= 2.0
    return None


def _lm_scalar(fun, jac, x, r0, lo, hi, xtol, ftol, max_iter):
    """:func:`levenberg_marquardt` for one unknown, in Python floats (the same steps and tests; numpy's
    per-call cost on 1 × 1 arrays is most of an iteration otherwise)."""
    arr = np.array
    r = fun(arr([x])) if r0 is None else r0
    cost = float(np.dot(r, r))
    J = jac(arr([x]), r)[:, 0]
    a, g = float(np.dot(J, J)), float(np.dot(J, r))
    mu, nu, prev, at_bound = 1e-3, 2.0, None, None
    for _ in range(max_iter):
        if not (math.isfinite(cost) and math.isfinite(a) and math.isfinite(g)):
            return None
        h = a
        if prev is not None:  # secant curvature of the gradient (takes in the misfit term)
            sec = (g - prev[1]) / (x - prev[0])
            if 0.2 * a <= sec <= 5.0 * a:
                h = sec
        # converged when the undamped (Newton) step, kept inside the box, is negligible: it estimates the
        # distance to the optimum directly (a damped step can be small far from it)
        if abs(min(max(x - g / h, lo), hi) - x) <= xtol * (1.0 + abs(x)):
            return arr([x]), r, "the Newton step became negligible"
        x_new = x - g / (h + mu * max(a, 1e-300))
        hit = lo if x_new < lo else hi if x_new > hi else None
        if hit is not None:  # the first step into a bound goes half way (a valley may lie between)
            x_new = hit if hit == at_bound else x + 0.5 * (hit - x)
        step = x_new - x
        if step == 0.0:
            return arr([x]), r, "no smaller sum of squares in any direction within the bounds"
        r_new = fun(arr([x_new]))
        c_new = float(np.dot(r_new, r_new))
        pred = -(2.0 * g * step + h * step * step)
        if math.isfinite(c_new) and c_new < cost and pred > 0:
            rho = (cost - c_new) / pred
            flat = cost - c_new <= ftol * cost
            prev = (x, g)
            x, r, cost, at_bound = x_new, r_new, c_new, hit
            J = jac(arr([x]), r)[:, 0]
            a, g = float(np.dot(J, J)), float(np.dot(J, r))
            if flat:
                return arr([x]), r, "the reduction of the sum of squares became negligible"
            mu *= max(1.0 / 3.0, 1.0 - (2.0 * rho - 1.0) ** 3)
            nu = 2.0
        elif abs(step) <= 1e-3 * xtol * (1.0 + abs(x)):
            return arr([x]), r, "no smaller sum of squares in any direction"
        else:
            mu *= nu
            nu *= 2.0
    return None


def _scipy(pj: Projected, p_start):
    pj.space = "x"
    x0 = pj.u_of(p_start)
    cache = {}

    def fun(x):
        r = pj.residual(x)[2]
        cache["x"], cache["r"] = x.copy(), r
        return r

    def jac(x):
        r = cache["r"] if "x" in cache and np.array_equal(cache["x"], x) else pj.residual(x)[2]
        return pj.jac(x, r)

    failure = ""
    for method in _FALLBACK_METHODS:
        cache.clear()
        try:
            res = least_squares(fun, x0, jac=jac, method=method, x_scale=1.0, ftol=1e-10, xtol=1e-10,
                                gtol=1e-10, max_nfev=100 * (x0.size + 1))
        except (ValueError, FloatingPointError, np.linalg.LinAlgError) as exc:
            failure = f"failed numerically ({exc})"
            continue
        if res.status > 0 and np.all(np.isfinite(res.x)):
            return res.x, str(res.message), "minpack-lm" if method == "lm" else "trf"
        failure = f"did not converge ({res.message.rstrip('.')})"
    raise FitError(f"the {pj.pr.model.title} fit {failure}; try another model, fix a parameter (fixed=...), "
                   "use relative residuals, or check the data for outliers", kind="no-convergence")


def solve(pr: Problem) -> tuple[Projected, np.ndarray, dict[str, Any], np.ndarray, np.ndarray, str, str]:
    """Run the fit.  Returns (projected problem, optimiser coordinates, parameter values, stress, residual,
    message, solver name)."""
    pj = Projected(pr)
    if pj.NL:
        u0, r0 = start_point(pj)
        p_start = pj.params_of(u0)
        out = levenberg_marquardt(pj.residual_ahead, pj.jac, u0, r0, lo=pj.zlo, hi=pj.zhi)
        if out is not None and all(map(math.isfinite, out[0].tolist())) and float(np.abs(out[1]).max()) < pj.big:
            xhat, message, solver = out[0], out[2], "levenberg-marquardt"
        else:
            xhat, message, solver = _scipy(pj, p_start)
    else:  # every free parameter is a modulus: the projected problem is solved in closed form
        xhat, message, solver = np.empty(0), "solved in closed form (the model is linear in its moduli)", "closed-form"
    values, Pm, r = pj.residual(xhat)
    values = dict(values)
    if float(np.abs(r).max()) >= pj.big:
        raise FitError(f"the {pr.model.title} fit ended with data beyond the model's locking stretch; "
                       "remove the points at the largest stretches or choose a model without a lock",
                       kind="past-lock")
    for nm in pr.free_names:  # bounds the transforms keep are met; clip rounding
        values[nm] = min(max(values[nm], pr.lb[nm]), pr.ub[nm])
    return pj, xhat, values, Pm, r, message, solver
