"""Benchmark: the study — one comparison of the five-compound sample set, a settings change, a saved study
reopened (issue #18's speed targets; the cache is what makes them possible).

What is timed (wall time, this process, the sample set in ``sample_sets/compounds.toml``)
---------------------------------------------------------------------------------------
* ``study_compare_s``: ``Study.from_manifest`` + ``comparison()`` from cold — every fit made (pooled, every
  specimen, the model spread over every registered model).  Target ≤ 2 s.
* ``study_setting_change_s``: ``update(service_temperature=…, baseline=…)`` + ``comparison()`` on the warm study
  (no fit is repeated; ``study_setting_change_fits`` counts the fits it made, which must be 0).  Target ≤ 1 s.
* ``study_open_s``: ``Study.from_project(bytes)`` of the saved study (inputs re-read, marked out of date, not
  yet recomputed — what opening a project costs before the user asks for the comparison).  Target ≤ 1 s.
* ``study_cache_speedup``: cold comparison time / settings-change time, the same machine in the same run.
"""

from __future__ import annotations

import time


def run(quick: bool = False, deadline: float | None = None) -> dict:
    from network_models.study import Study

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
    return {"study_compare_s": cold, "study_setting_change_s": warm, "study_setting_change_fits": st.fits_made - n,
            "study_open_s": opened, "study_open_stale": re.stale,
            "study_cache_speedup": cold / warm if warm > 0 else None}
