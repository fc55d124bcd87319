"""Benchmark 5: a lab-scale batch — fit the eight-chain model to many uniaxial curves in one process.

What is timed
-------------
``network_models.fitting.fit("eight-chain", curve)`` for each of 1,000 invented uniaxial curves of 50
points (``datasets.batch_curves``; quick mode: 100 curves), one after another in this process, the
curves already in memory.  Curves per second = curves / wall time of the whole loop.  A fit that raises
``FitError`` counts as done (and is counted in ``failed``).

Memory: ``batch_peak_mib`` is the tracemalloc peak (Python objects and numpy buffers) of a second,
untimed pass that makes the curves and fits them all, keeping every ``FitResult`` as a batch job would
(tracemalloc slows allocation, so the timed pass runs without it); the process's peak resident set size
(``resource.getrusage``, includes the interpreter, numpy, scipy and everything run before) is reported
beside it.
"""

from __future__ import annotations

import resource
import sys
import time
import tracemalloc

import numpy as np

from .datasets import batch_curves


def _maxrss_mib() -> float:
    r = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return r / (1024.0 * 1024.0) if sys.platform == "darwin" else r / 1024.0


def run(quick: bool = False, deadline: float | None = None) -> dict:
    try:
        from network_models.fitting import FitError, fit
    except ImportError as exc:
        return {"batch_curves_per_s": None, "batch_peak_mib": None, "batch_curves": None,
                "notes": [f"network_models.fitting is not available ({exc}); nothing to time"]}
    n = 100 if quick else 1000
    curves = batch_curves(n)
    fit("eight-chain", curves[0])  # warm-up

    def one_pass(curves, keep):
        failed = 0
        for c in curves:
            try:
                keep.append(fit("eight-chain", c))
            except FitError:
                failed += 1
        return failed

    results: list = []
    t0 = time.perf_counter()
    failed = one_pass(curves, results)
    wall = time.perf_counter() - t0

    tracemalloc.start()
    base, _ = tracemalloc.get_traced_memory()
    kept: list = []
    one_pass(batch_curves(n), kept)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    del kept

    true = np.array([[c.metadata["true"]["mu"], c.metadata["true"]["N"]] for c in curves])
    got = np.array([[r.values["mu"], r.values["N"]] for r in results]) if results else np.empty((0, 2))
    detail = {
        "curves": n,
        "points_per_curve": int(len(curves[0])),
        "failed": failed,
        "wall_s": wall,
        "ms_per_curve": wall / n * 1e3,
        "tracemalloc_peak_mib": (peak - base) / 2**20,
        "process_peak_rss_mib": _maxrss_mib(),
        "data": "invented eight-chain curves, 1 % noise (benchmarks/datasets.py)",
        "target": ">= 100 curves/s",
    }
    if failed == 0 and got.shape == true.shape:
        rel = np.abs(got / true - 1.0)
        detail["median_rel_error_vs_generating_mu_N"] = [float(np.median(rel[:, 0])), float(np.median(rel[:, 1]))]
    notes = [f"quick mode: {n} curves instead of 1000"] if quick else []
    if failed:
        notes.append(f"{failed} of {n} fits raised FitError")
    return {
        "batch_curves_per_s": n / wall,
        "batch_peak_mib": (peak - base) / 2**20,
        "batch_curves": n,
        "detail": detail,
        "notes": notes,
    }
