"""Benchmark: the study — one comparison of the five-compound sample set, a settings change, a saved study
reopened (issue #18's speed targets; the cache is what makes them possible).

What is timed (the sample set in ``sample_sets/compounds.toml``)
----------------------------------------------------------------
* ``study_compare_s``: ``netstretch compare --manifest sample_sets/compounds.toml --json`` in a fresh Python
  process — imports, reading the files, every fit (pooled, every specimen, the model spread over every
  registered model), the JSON.  CPU seconds of that process (user + system, so other work on the shared
  machine does not inflate it; wall time in ``detail``).  Median of the runs after a first one (the first
  also fills pint's definitions cache, see network_models/units.py).  Target ≤ 2 s.  The baseline in the same
  run is a fresh process that only imports ``network_models`` (``detail.baseline_import_cpu_s``): what any
  command pays before it reads a file.
* ``study_compare_in_process_s``: ``Study.from_manifest`` + ``comparison()`` of a new study in this process
  (imports done, nothing cached in the study) — what the app's server or a Python user pays per new study.
* ``study_setting_change_s``: ``update(service_temperature=…, baseline=…)`` + ``comparison()`` on the warm study
  (no fit is repeated; ``study_setting_change_fits`` counts the fits it made, which must be 0).  Target ≤ 1 s.
* ``study_open_s``: ``Study.from_project(bytes)`` of the saved study (inputs re-read, marked out of date, not
  yet recomputed — what opening a project costs before the user asks for the comparison).  Target ≤ 1 s.
* ``study_cache_speedup``: in-process new-study comparison time / settings-change time, the same run.
"""

from __future__ import annotations

import resource
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def _child(args) -> tuple[float, float, int]:
    """CPU seconds (user + system) and wall seconds of one fresh ``python`` child; its exit code."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    proc = subprocess.run([sys.executable, *args], cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                          timeout=300)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return cpu, wall, proc.returncode


def run(quick: bool = False, deadline: float | None = None) -> dict:
    from network_models.study import Study

    notes = []
    cmd = ["-m", "network_models", "compare", "--manifest", str(ROOT / "sample_sets" / "compounds.toml"), "--json"]
    runs = [_child(cmd) for _ in range(2 if quick else 4)][1:]
    if any(r[2] != 0 for r in runs):
        notes.append("`netstretch compare` exited non-zero in a fresh process; study_compare_s not measured")
    base = [_child(["-c", "import network_models"]) for _ in range(1 if quick else 3)]

    Study.from_manifest().comparison()  # this process's imports (a fresh process's are timed above)
    t0 = time.perf_counter()
    st = Study.from_manifest()
    st.comparison()
    cold = time.perf_counter() - t0
    n = st.fits_made
    t0 = time.perf_counter()
    st.update(service_temperature=353.15, baseline="QM-S1")
    st.comparison()
    warm = time.perf_counter() - t0
    data = st.to_project()
    t0 = time.perf_counter()
    re = Study.from_project(data)
    opened = time.perf_counter() - t0
    ok = all(r[2] == 0 for r in runs)
    return {"study_compare_s": statistics.median(r[0] for r in runs) if ok else None,
            "study_compare_in_process_s": cold, "study_setting_change_s": warm,
            "study_setting_change_fits": st.fits_made - n, "study_open_s": opened, "study_open_stale": re.stale,
            "study_cache_speedup": cold / warm if warm > 0 else None,
            "detail": {"fresh_process_cpu_s": [r[0] for r in runs], "fresh_process_wall_s": [r[1] for r in runs],
                       "baseline_import_cpu_s": statistics.median(b[0] for b in base),
                       "baseline_import_wall_s": statistics.median(b[1] for b in base),
                       "fits_in_a_new_study": n},
            "notes": notes}
