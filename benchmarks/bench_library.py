"""Benchmark: the results library on SQLite — ``library find`` over 10,000 compounds and ``library trend`` over
1,000 points.

What is timed
-------------
A generated library in a temporary SQLite file (no fitting: the rows are written straight into the library's
tables, as an import would leave them): 10,000 compounds in 100 studies, each with its headline strand density
(and the all-of-G basis), G₀ and the locking stretch with 95 % intervals, values drawn around a lab's usual range
(seeded).  1,000 of them form one QC family (prefix ``QC-``) dated day by day.

* ``library_find_s_10000``: ``network_models.library.find(["nu=250..300mol/m3", "lock>=6"])`` — the query, the
  interval rule and the ranking, in this process on an open engine; median of 5 runs after one warm-up.
* ``library_trend_s_1000``: ``network_models.library.trend("strand_density", compound_prefix="QC-")`` — 1,000
  points with their control limits; median of 5 runs.

Targets: each ≤ 0.5 s.  The same timings with the chart (``trend_svg``) are reported beside them.
"""

from __future__ import annotations

import datetime as dt
import tempfile
import time
from pathlib import Path

import numpy as np

from .common import median_time


def build(url: str, n: int = 10_000, qc: int = 1_000, studies: int = 100, seed: int = 23):
    from sqlalchemy import insert

    from network_models.library import connect
    from network_models.library import schema as S

    eng = connect(url)
    rng = np.random.default_rng(seed)
    per = n // studies
    day0 = dt.date(2024, 1, 1)
    with eng.begin() as conn:
        sids = [conn.execute(insert(S.studies).values(
            content_hash=f"{k:064x}", kind="manifest", title=f"generated study {k}", source="", model="extended-tube",
            settings="{}", imported_at=dt.datetime(2026, 1, 1, tzinfo=dt.UTC) + dt.timedelta(minutes=k),
            saved_by="bench", netstretch_version="", notes="").returning(S.studies.c.id)).scalar_one()
            for k in range(studies)]
        comps = []
        for i in range(n):
            name = f"QC-{i:05d}" if i < qc else f"GEN-{i:05d}"
            comps.append({"study_id": sids[i // per], "name": name, "polymer": "NR" if i % 3 else "SBR", "f": 4.0,
                          "filler": 0.0, "tested": day0 + dt.timedelta(days=i % 900), "date_source": "manifest",
                          "metadata": "{}", "n": 3, "error": None})
        conn.execute(insert(S.compounds), comps)
        ids = [r[0] for r in conn.execute(S.compounds.select().with_only_columns(S.compounds.c.id)
                                          .order_by(S.compounds.c.id))]
        nu = rng.normal(260.0, 60.0, n).clip(20.0, None)
        half = np.abs(rng.normal(8.0, 3.0, n)) + 1.0
        lock = rng.normal(7.0, 1.5, n).clip(1.5, None)
        G0 = nu * 8.314 * 296.15 * 1.6
        rows = []
        for k, cid in enumerate(ids):
            base = {"compound_id": cid, "model": "extended-tube", "n": 3, "unit": ""}
            rows += [dict(base, quantity="strand_density", basis="affine-no-entanglement", basis_label="b0",
                          headline=True, value=nu[k], ci_low=nu[k] - half[k], ci_high=nu[k] + half[k]),
                     dict(base, quantity="strand_density", basis="affine-all", basis_label="b1", headline=False,
                          value=nu[k] * 2, ci_low=nu[k] * 2 - half[k], ci_high=nu[k] * 2 + half[k]),
                     dict(base, quantity="G0", basis="model", basis_label="m", headline=False, value=G0[k],
                          ci_low=G0[k] * 0.95, ci_high=G0[k] * 1.05),
                     dict(base, quantity="lock", basis="model", basis_label="m", headline=False, value=lock[k],
                          ci_low=lock[k] - 0.2, ci_high=lock[k] + 0.2)]
        conn.execute(insert(S.results), rows)
    return eng


def run(quick: bool = False, deadline: float | None = None) -> dict:
    try:
        from network_models.library import find, trend, trend_svg
    except ImportError as exc:
        return {"library_find_s_10000": None, "library_trend_s_1000": None,
                "notes": [f"the results library is not available ({exc})"]}
    with tempfile.TemporaryDirectory() as tmp:
        url = f"sqlite:///{Path(tmp) / 'bench.sqlite'}"
        t0 = time.perf_counter()
        eng = build(url)
        built = time.perf_counter() - t0
        targets = ["nu=250..300mol/m3", "lock>=6"]
        t_find, _ = median_time(lambda: find(targets, engine=eng), repeats=5)
        t_trend, _ = median_time(lambda: trend("strand_density", engine=eng, compound_prefix="QC-"), repeats=5)
        t_svg, _ = median_time(lambda: trend_svg(trend("strand_density", engine=eng, compound_prefix="QC-")),
                               repeats=3)
        matches = len(find(targets, engine=eng)["matches"])
        points = len(trend("strand_density", engine=eng, compound_prefix="QC-")["points"])
        eng.dispose()
    return {"library_find_s_10000": round(t_find, 4), "library_trend_s_1000": round(t_trend, 4),
            "detail": {"library_build_s": round(built, 2), "find_matches": matches, "trend_points": points,
                       "trend_with_svg_s": round(t_svg, 4), "backend": "SQLite (temporary file)"}}


if __name__ == "__main__":
    print(run())
