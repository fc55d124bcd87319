"""Benchmark 5: a lab-scale batch — fit the eight-chain model to many uniaxial curves in one process.

What is timed
-------------
``network_models.fitting.fit("eight-chain", curve)`` for each of 1,000 invented uniaxial curves of 50
points (``datasets.batch_curves``; quick mode: 100 curves), one after another in this process, the
curves already in memory.  Curves per second = curves / wall time of the whole loop.  A fit that raises
``FitError`` counts as done (and is counted in ``failed``).

Then the command's path (``network_models.batch.run_batch``, what ``netstretch batch`` runs): the same kind of
curves written as one CSV file each into a temporary folder (400 files; quick: 40), fitted with 1 and 2
local worker processes and through a local Dask cluster (2 worker processes, 1 thread each) when the
``[cluster]`` extra is installed.  Curves/s = curves / wall time of the whole run (file reading, fitting,
crosslink table, writing the results, process start-up included).  The three result files must be
byte-identical.  Target: >= 1.8 x from 1 to 2 workers on two idle cores (the machine is shared: the load
average is recorded beside the figure).

Memory: ``batch_peak_mib`` is the tracemalloc peak (Python objects and numpy buffers) of a second,
untimed pass that makes the curves and fits them all, keeping every ``FitResult`` as a batch job would
(tracemalloc slows allocation, so the timed pass runs without it); the process's peak resident set size
(``resource.getrusage``, includes the interpreter, numpy, scipy and everything run before) is reported
beside it.
"""

from __future__ import annotations

import os
import resource
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

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
    cmd = command_path(40 if quick else 400, deadline)
    notes.extend(cmd.pop("notes"))
    detail["command"] = cmd
    return {
        "batch_cmd_curves_per_s_1": cmd.get("curves_per_s_1"),
        "batch_cmd_curves_per_s_2": cmd.get("curves_per_s_2"),
        "batch_speedup_2_workers": cmd.get("speedup_2"),
        "batch_dask_curves_per_s": cmd.get("curves_per_s_dask"),
        "batch_same_results": cmd.get("same_results"),
        "batch_curves_per_s": n / wall,
        "batch_peak_mib": (peak - base) / 2**20,
        "batch_curves": n,
        "detail": detail,
        "notes": notes,
    }


def _timed_run(folder, out, **kw) -> float:
    from network_models.batch import run_batch

    t0 = time.perf_counter()
    run_batch([folder], "eight-chain", out, progress=False, **kw)
    return time.perf_counter() - t0


def command_path(n_files: int, deadline: float | None = None) -> dict:
    """``run_batch`` over ``n_files`` one-curve CSV files: 1 and 2 local workers, and a local Dask cluster."""
    from network_models.labfiles import curves_to_csv

    out: dict = {"files": n_files, "notes": [], "load_average_1min_before": os.getloadavg()[0]}
    with tempfile.TemporaryDirectory(prefix="netstretch-bench-batch-") as tmp:
        folder = Path(tmp) / "archive"
        folder.mkdir()
        for i, c in enumerate(batch_curves(n_files, seed=23)):
            (folder / f"c{i:04d}.csv").write_text(curves_to_csv([c]), encoding="utf-8")
        files = {}
        for label, kw in (("1", {"jobs": 1}), ("2", {"jobs": 2})):
            files[label] = Path(tmp) / f"r{label}.csv"
            out[f"curves_per_s_{label}"] = n_files / _timed_run(folder, files[label], **kw)
        out["speedup_2"] = out["curves_per_s_2"] / out["curves_per_s_1"]
        if deadline is not None and time.monotonic() > deadline - 15:
            out["notes"].append("Dask cluster run left out: the quick run's time budget is spent")
        else:
            try:
                import distributed
            except ImportError:
                out["notes"].append("Dask cluster run left out: distributed is not installed (the [cluster] extra)")
            else:
                with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                              dashboard_address=None) as lc:
                    files["dask"] = Path(tmp) / "rdask.csv"
                    out["curves_per_s_dask"] = n_files / _timed_run(folder, files["dask"],
                                                                     scheduler=lc.scheduler_address)
        texts = {k: p.read_bytes() for k, p in files.items()}
        out["same_results"] = len(set(texts.values())) == 1
        out["compared"] = sorted(texts)
    out["load_average_1min_after"] = os.getloadavg()[0]
    return out
