"""Shared helpers: timing by median of repeats, machine description."""

from __future__ import annotations

import contextlib
import os
import platform
import statistics
import time


def median_time(fn, repeats: int = 7, warmup: int = 1) -> tuple[float, list[float]]:
    """Median wall time of ``fn()`` in seconds over ``repeats`` runs (after ``warmup`` untimed runs)."""
    for _ in range(warmup):
        fn()
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), times


def interleaved_times(fns: dict, repeats: int = 7, warmup: int = 1) -> dict[str, float]:
    """Median seconds of each callable, their repeats interleaved so that drift (turbo, other work on the
    machine) hits every contender alike."""
    for _ in range(warmup):
        for fn in fns.values():
            fn()
    times = {k: [] for k in fns}
    for _ in range(repeats):
        for k, fn in fns.items():
            t0 = time.perf_counter()
            fn()
            times[k].append(time.perf_counter() - t0)
    return {k: statistics.median(v) for k, v in times.items()}


def _cpu_model() -> str:
    try:
        with open("/proc/cpuinfo", encoding="utf-8") as fh:
            for line in fh:
                if line.lower().startswith("model name"):
                    return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or platform.machine()


def machine_info() -> dict:
    import numpy as np
    import scipy

    try:
        blas = np.show_config(mode="dicts")["Build Dependencies"]["blas"]["name"]
    except Exception:  # older numpy or unusual build: the BLAS name is informative only
        blas = "unknown"
    return {
        "cpu_model": _cpu_model(),
        "logical_cores": os.cpu_count(),
        "usable_cores": len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count(),
        "platform": platform.platform(),
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "blas": blas,
        "OPENBLAS_CORETYPE": os.environ.get("OPENBLAS_CORETYPE"),
        "OMP_NUM_THREADS": os.environ.get("OMP_NUM_THREADS"),
        "load_average_1min_at_start": os.getloadavg()[0] if hasattr(os, "getloadavg") else None,
    }


def percentile(values, q: float) -> float:
    """q-th percentile (0..100), linear interpolation between order statistics (numpy's default)."""
    import numpy as np

    return float(np.percentile(np.asarray(values, dtype=float), q))


def free_port() -> int:
    import socket

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@contextlib.contextmanager
def netstretch_server(host: str = "127.0.0.1", extra=(), timeout_s: float = 90.0, keep_log: bool = True):
    """``netstretch serve`` in a subprocess on a free port of ``host``; yields (process, url, log path) once
    the port accepts connections (not an HTTP GET: each GET builds a whole session, and polling would pile
    sessions up on a busy machine).  Always stopped; the log is deleted afterwards unless ``keep_log``."""
    import socket
    import subprocess
    import sys
    import tempfile
    from pathlib import Path

    port = free_port()
    log_path = Path(tempfile.gettempdir()) / f"netstretch_bench_server_{port}.log"
    root = Path(__file__).resolve().parent.parent
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    with log_path.open("w") as log:
        proc = subprocess.Popen([sys.executable, "-m", "network_models", "serve", "--port", str(port),
                                 "--address", host, *extra], cwd=root, stdout=log, stderr=subprocess.STDOUT, env=env)
        try:
            deadline = time.monotonic() + timeout_s
            while True:
                if proc.poll() is not None:
                    raise RuntimeError(f"the app server exited with code {proc.returncode}; log: {log_path}")
                try:
                    with socket.create_connection(("127.0.0.1", port), timeout=1):
                        break
                except OSError:
                    if time.monotonic() > deadline:
                        raise RuntimeError(f"the app server did not listen on port {port} within "
                                           f"{timeout_s:.0f} s") from None
                    time.sleep(0.2)
            yield proc, f"http://{host}:{port}/", log_path
        finally:
            proc.terminate()
            try:
                proc.wait(timeout=10)
            except subprocess.TimeoutExpired:
                proc.kill()
                proc.wait(timeout=10)
            if not keep_log:
                log_path.unlink(missing_ok=True)
