"""``fit``: one model to one set of curves — set up, solve, uncertainty, statistics, diagnostics."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import replace

import numpy as np

from ..curves import TestCurve
from ..errors import FitError
from ..models import Model, get_model
from .diagnostics import curve_cycle, curve_polymer, diagnose, undetermined_notices
from .problem import DEFAULT_RESIDUAL, set_up
from .result import FitResult, ModeStats
from .solver import solve
from .uncertainty import INTERVAL_METHODS, covariance, estimates, profile_interval, undetermined


def fit(model: str | Model, curves: TestCurve | Sequence[TestCurve], *, residual: str = DEFAULT_RESIDUAL, free=None,
        fixed: dict | None = None,
        start: dict | None = None, polymer: str | None = None, intervals: str = "transformed") -> FitResult:
    """Fit ``model`` (name or Model) to ``curves`` (TestCurve or list, any mix of modes).

    ``free``: held parameters to fit as well (e.g. ``{"beta"}``); ``fixed``: {name: value} kept at that
    value; ``start``: {name: value} start values replacing the automatic ones; ``polymer``: the polymer
    (e.g. ``"NR"``), used only to warn when a strain-crystallising rubber is fitted past λ ≈ 3 (taken from
    the curves' ``polymer`` metadata when not given; nothing is said when unknown).  Raises
    :class:`~network_models.errors.FitError` (a ValueError) with a sentence when the fit cannot be done or
    does not converge.  ``intervals``: ``"transformed"`` (default; linearised on the transformed parameter,
    always inside the domain) or ``"profile"`` (profile likelihood, a few dozen refits per parameter).  A
    parameter the data do not bound is *not determined* (``ParamEstimate.determined``; no interval).
    """
    if intervals not in INTERVAL_METHODS:
        raise FitError(f"intervals must be one of {', '.join(INTERVAL_METHODS)}, not {intervals!r}",
                       kind="bad-option")
    m = get_model(model) if isinstance(model, str) else model
    curves = [curves] if isinstance(curves, TestCurve) else list(curves)
    if not curves:
        raise FitError("no curves to fit: give at least one test curve", kind="no-data")
    with np.errstate(all="ignore"):  # NaN past a lock is expected inside; it never reaches the result
        pr = set_up(m, curves, residual=residual, free=free, fixed=fixed, start=start)
        pj, u_hat, values, Pm, r, message, solver = solve(pr)
        rss = float(np.dot(r, r))
        cov_z, se_z, corr, cov, z = covariance(pj, u_hat, values, Pm, rss)
        params = estimates(pj, values, se_z, z)
        result = _result(pr, pj, params, corr, cov, rss, Pm, message, solver)
        polymer = curve_polymer(curves, polymer)
        result.polymer = polymer
        result.cycle, cycle_notes = curve_cycle(curves)
        result.warnings = [*pr.notices, *diagnose(result, pj, values, se_z, corr, polymer=polymer), *cycle_notes]
        _mark_undetermined(result)
        if intervals == "profile":
            kw = dict(residual=residual, free=free, fixed=fixed, start=start, polymer=polymer)
            for name in result.free:
                est = result.params[name]
                if est.determined:
                    ci, ok = profile_interval(m, curves, name, kw, result, refit=fit)
                    result.params[name] = replace(est, ci95=ci, determined=ok)
        result.warnings.extend(undetermined_notices(result))
    return result


def _mark_undetermined(result) -> None:
    """A parameter that ended on a declared bound has no interval: the data do not bound it there."""
    for n in result.notices("at-bound"):
        if n.subject in result.params:
            result.params[n.subject] = undetermined(result.params[n.subject])


def _result(pr, pj, params, corr, cov, rss, Pm, message, solver) -> FitResult:
    data, n, k = pr.data, pr.n, pr.k
    mode_stats = {}
    for mode, mask in data.masks.items():
        Pd = data.P[mask]
        e = Pm[mask] - Pd
        k_m = Pd.size
        dev = Pd - float(Pd.sum()) / k_m
        sst = float(np.dot(dev, dev))
        ssr = float(np.dot(e, e))
        mode_stats[mode] = ModeStats(mode=mode, n=k_m, rms=math.sqrt(ssr / k_m),
                                     r2=(1.0 - ssr / sst) if sst > 0 else None,
                                     tested_range=data.ranges[mode])
    rss_out = rss * (pr.G0 * pr.G0 if pr.residual == "absolute" else 1.0)  # Pa² for absolute residuals
    if rss_out > 0:
        aic = n * math.log(rss_out / n) + 2 * k
        bic = n * math.log(rss_out / n) + k * math.log(n)
    else:
        aic = bic = -math.inf
    temps = {c.temperature for c in pr.curves if c.temperature is not None}
    m = pr.model
    return FitResult(
        model=m.name, title=m.title, params=params, free=tuple(pr.free_names), correlation=corr, covariance=cov,
        modes=mode_stats, n=n, k=k, rss=rss_out, aic=aic, bic=bic, residual=pr.residual, converged=True,
        message=message, nfev=pj.nfev, curve_names=[c.name for c in pr.curves],
        temperature=temps.pop() if len(temps) == 1 else None, solver=solver,
        max_stress=float(np.max(np.abs(data.P))) if data.P.size else None,
    )
