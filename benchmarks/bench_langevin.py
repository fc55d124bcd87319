"""Benchmark 1: inverse Langevin accuracy (against mpmath) and throughput (against Cohen's Padé and brentq).

What is timed
-------------
* ours:   ``network_models.inverse_langevin`` on ONE float64 array of 10⁶ values, uniform on [0, 1)
          (fixed seed), result allocated by the call.
* Cohen:  ``y*(3 - y*y)/(1 - y*y)`` in numpy on the same array (Cohen 1991, Rheol. Acta 30:270, the
          rounded Padé approximant; about 5 % error near y = 0.8 but the cheapest usable form).
* brentq: ``scipy.optimize.brentq`` on coth(x) − 1/x − y per point, bracketed by [0, 1/(1 − y) + 1]
          (L(x) > 1 − 1/x for x > 0), on a subsample of the same array; the time per point
          is scaled to 10⁶ points.
Times are medians of interleaved repeats.  Ratios are throughput ratios (baseline time / our time).
"""

from __future__ import annotations

import math
import time

import numpy as np
from scipy.optimize import brentq

from network_models import inverse_langevin

from .common import interleaved_times
from .langevin_reference import load_reference

SEED = 12345
N_THROUGHPUT = 1_000_000


def cohen(y):
    """Cohen's rounded Padé approximant of L⁻¹ (Cohen 1991, Rheol. Acta 30:270)."""
    y2 = y * y
    return y * (3.0 - y2) / (1.0 - y2)


def _langevin_scalar(x: float) -> float:
    if x < 0.05:  # coth x − 1/x cancels near 0: four series terms are exact to 3e-15 there
        z = x * x
        return x * (1.0 / 3.0 - z * (1.0 / 45.0 - z * (2.0 / 945.0 - z / 4725.0)))
    return 1.0 / math.tanh(x) - 1.0 / x


def brentq_inverse_langevin(y: float) -> float:
    """Naive reference: L⁻¹(y) for one 0 <= y < 1 by Brent's method on coth(x) − 1/x − y.

    Accurate to about 1e-15/(1 − y) relative (the residual is formed plainly, so digits go near the pole);
    better than 1e-9 for y <= 1 − 1e-6, which covers every fit in the benchmarks."""
    if y == 0.0:
        return 0.0
    lo, hi = 0.0, 1.0 / (1.0 - y) + 1.0
    return brentq(lambda x: _langevin_scalar(x) - y, lo, hi, xtol=1e-300, rtol=4 * np.finfo(float).eps)


def brentq_inverse_langevin_array(y) -> np.ndarray:
    return np.array([brentq_inverse_langevin(float(v)) for v in np.ravel(y)])


def accuracy() -> dict:
    y, ref = load_reference()
    ours = inverse_langevin(y)
    nz = ref > 0
    rel = np.abs(ours[nz] - ref[nz]) / ref[nz]
    worst = int(np.argmax(rel))
    zero_ok = bool(np.all(ours[~nz] == 0.0))
    return {
        "langevin_max_rel_error": float(rel.max()) if zero_ok else float("inf"),
        "detail": {
            "points": int(y.size),
            "y_max": float(y.max()),
            "one_minus_y_min": float(1.0 - y.max()),
            "worst_y": float(y[nz][worst]),
            "median_rel_error": float(np.median(rel)),
            "reference": "mpmath Newton at 50 digits, cached in benchmarks/langevin_reference.npz",
            "target": "<= 1e-13",
        },
    }


def throughput(quick: bool) -> dict:
    rng = np.random.default_rng(SEED)
    y = rng.uniform(0.0, 1.0, N_THROUGHPUT)
    repeats = 15 if quick else 21
    t = interleaved_times({"ours": lambda: inverse_langevin(y), "cohen": lambda: cohen(y)}, repeats=repeats)

    n_sub = 2_000 if quick else 20_000
    sub = y[:n_sub]
    brentq_inverse_langevin_array(sub[:100])  # warm-up
    t0 = time.perf_counter()
    brentq_inverse_langevin_array(sub)
    t_brentq_sub = time.perf_counter() - t0
    t_brentq = t_brentq_sub / n_sub * N_THROUGHPUT
    return {
        "langevin_speed_vs_cohen": t["cohen"] / t["ours"],
        "langevin_speed_vs_brentq": t_brentq / t["ours"],
        "detail": {
            "array_size": N_THROUGHPUT,
            "seed": SEED,
            "repeats": repeats,
            "ours_s": t["ours"],
            "cohen_s": t["cohen"],
            "brentq_subsample": n_sub,
            "brentq_subsample_s": t_brentq_sub,
            "brentq_scaled_s": t_brentq,
            "brentq_note": (f"brentq timed on the first {n_sub} values of the same array and scaled per point "
                            f"to {N_THROUGHPUT}"),
            "targets": "vs Cohen >= 0.25 (throughput ratio t_cohen/t_ours); vs brentq >= 100",
        },
    }


def run(quick: bool = False, deadline: float | None = None) -> dict:
    acc = accuracy()
    thr = throughput(quick)
    return {
        "langevin_max_rel_error": acc["langevin_max_rel_error"],
        "langevin_speed_vs_cohen": thr["langevin_speed_vs_cohen"],
        "langevin_speed_vs_brentq": thr["langevin_speed_vs_brentq"],
        "detail": {"accuracy": acc["detail"], "throughput": thr["detail"]},
    }
