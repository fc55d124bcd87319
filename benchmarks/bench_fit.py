"""Benchmark 3: fitting eight-chain and extended-tube to three-mode data, netstretch against a naive fit.

What is timed
-------------
* fast:  ``network_models.fitting.fit(model, curves, residual="absolute")`` (as the naive fit), the whole call:
         start values, lock-aware bounds, least squares, uncertainty and diagnostics.
* naive: ``benchmarks.naive.naive_fit`` — ``scipy.optimize.curve_fit`` (trf, finite differences) on a
         per-point Python stress with a brentq L⁻¹, started from ``model.guess(G₀)`` with G₀ from the
         same small-strain estimate, tolerances 1e-12 so it reaches the true optimum.
Both on the same ~60 invented points (``datasets.three_mode_curves``), in the same process; medians of
interleaved repeats.  ``fit_speedup_vs_naive`` = total naive time / total fast time over the two models.
``fit_same_optimum``: every fitted parameter agrees within 1e-6 relative for both models.

Each fast repeat is a block of back-to-back fits about as long as one naive fit (each fit does all its
work: nothing is carried from one call to the next but the once-per-model checks a warm-up also makes),
and its time is the block's time per fit.  Both sides thus see the same share of a shared machine: a
single 1-ms fit timed right after a 200-ms naive run is usually preempted on a loaded machine (measured
on the 2-core box at load 9: median 8.6 ms for a fit timed alone after the naive run, 2.4 ms for the next
one).  ``fast_single_s`` keeps the single-call median for comparison.
"""

from __future__ import annotations

import statistics
import time

from network_models import get_model

from .datasets import three_mode_curves
from .naive import naive_fit

MODELS = ("eight-chain", "extended-tube")
TOL = 1e-6


def _fit_api():
    from network_models.fitting import estimate_modulus, fit

    return fit, estimate_modulus


def _naive_inputs(model, curves, estimate_modulus):
    m = get_model(model)
    G0 = estimate_modulus(curves)
    guess = m.guess(G0)
    bounds = {q.name: q.bounds for q in m.params}
    pairs = [(c.mode.value, c.stretch, c.stress) for c in curves]
    return pairs, guess, bounds


def compare(model, curves, repeats: int = 5) -> dict:
    """Fast and naive fit of ``model`` to ``curves``, their repeats interleaved (fast, naive, fast, ...) so
    that other load on the machine hits both alike; medians of the repeats."""
    fit, estimate_modulus = _fit_api()
    fit(model, curves, residual="absolute")  # warm-up
    pairs, guess, bounds = _naive_inputs(model, curves, estimate_modulus)
    t0 = time.perf_counter()
    naive_fit(model, pairs, guess, bounds)  # warm-up, and the length of one naive fit
    t_one_naive = time.perf_counter() - t0
    one = []
    for _ in range(3):
        t0 = time.perf_counter()
        fit(model, curves, residual="absolute")
        one.append(time.perf_counter() - t0)
    block = max(1, min(500, round(t_one_naive / max(min(one), 1e-6))))
    t_fast, t_single, t_naive = [], [], []
    for _ in range(repeats):
        t0 = time.perf_counter()
        res = fit(model, curves, residual="absolute")
        t_single.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        for _ in range(block):
            res = fit(model, curves, residual="absolute")
        t_fast.append((time.perf_counter() - t0) / block)
        t0 = time.perf_counter()
        p_naive, cost_naive, calls = naive_fit(model, pairs, guess, bounds)
        t_naive.append(time.perf_counter() - t0)
    fast = res.values
    rel = {k: abs(fast[k] - p_naive[k]) / abs(p_naive[k]) for k in res.free}
    return {
        "fast_s": statistics.median(t_fast),
        "fast_block_fits": block,
        "fast_single_s": statistics.median(t_single),
        "naive_s": statistics.median(t_naive),
        "repeats": repeats,
        "fast_params": {k: fast[k] for k in res.free},
        "naive_params": {k: p_naive[k] for k in res.free},
        "max_rel_param_diff": max(rel.values()),
        "fast_rss_Pa2": res.rss,
        "naive_rss_Pa2": cost_naive,
        "fast_nfev": res.nfev,
        "fast_solver": res.solver,
        "naive_model_evaluations": calls,
        "fast_warnings": list(res.warnings),
        "G0_Pa": estimate_modulus(curves),
    }


def _profile(curves, repeats: int = 20) -> dict:
    """Where the fast fit spends its time: cumulative ms per fit of its main stages (cProfile)."""
    import cProfile
    import pstats

    fit, _ = _fit_api()
    stages = {"set_up": "set-up (kinematics, start modulus, lock bounds)",
              "lock_threshold": "lock-bound root finding (inside set-up)",
              "start_point": "start candidates (one stacked model call)",
              "levenberg_marquardt": "small Levenberg–Marquardt loop (incl. model evaluations)",
              "least_squares": "scipy least_squares fallback (should not appear)",
              "ev": "model evaluations (all)", "covariance": "covariance", "diagnose": "diagnostics"}
    out = {}
    for name in MODELS:
        fit(name, curves)
        pr = cProfile.Profile()
        pr.enable()
        for _ in range(repeats):
            fit(name, curves)
        pr.disable()
        st = pstats.Stats(pr)
        rows = {"total_ms_per_fit_profiled": st.total_tt / repeats * 1e3}
        for (_f, _l, fn), (_cc, nc, _tt, ct, _callers) in st.stats.items():
            if fn in stages:
                key = stages[fn]
                prev = rows.get(key, {"calls_per_fit": 0.0, "ms_per_fit": 0.0})
                rows[key] = {"calls_per_fit": prev["calls_per_fit"] + nc / repeats,
                             "ms_per_fit": prev["ms_per_fit"] + ct / repeats * 1e3}
        out[name] = rows
    return out


def run(quick: bool = False, deadline: float | None = None) -> dict:
    try:
        _fit_api()
    except ImportError as exc:
        return {"fit_speedup_vs_naive": None, "fit_same_optimum": None,
                "notes": [f"network_models.fitting is not available ({exc}); nothing to time"]}
    curves = three_mode_curves()
    per = {}
    for name in MODELS:
        per[name] = compare(name, curves, repeats=7 if quick else 11)
    fast = sum(v["fast_s"] for v in per.values())
    profile = _profile(curves) if not quick else None
    slow = sum(v["naive_s"] for v in per.values())
    same = all(v["max_rel_param_diff"] <= TOL for v in per.values())
    notes = []
    if not same:
        worst = max(per, key=lambda k: per[k]["max_rel_param_diff"])
        notes.append(f"optima differ: {worst} parameters differ by {per[worst]['max_rel_param_diff']:.2g} relative "
                     f"(fast RSS {per[worst]['fast_rss_Pa2']:.6g} Pa², naive {per[worst]['naive_rss_Pa2']:.6g} Pa²)")
    return {
        "fit_speedup_vs_naive": slow / fast,
        "fit_same_optimum": same,
        "detail": {
            "points": int(sum(len(c) for c in curves)),
            "data": "invented three-mode data of compound 'BX-1' (benchmarks/datasets.py), 1.5 % noise",
            "residual": "absolute",
            "per_model": per,
            "speedup_per_model": {k: v["naive_s"] / v["fast_s"] for k, v in per.items()},
            "tolerance": TOL,
            "target": ">= 20",
            "fast_fit_profile": profile,
        },
        "notes": notes,
    }
