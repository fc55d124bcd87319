"""``python -m benchmarks [--quick] [--json] [--only NAME ...] [--out FILE]``

Runs the benchmarks in one process and prints a table (to stderr with ``--json``); with ``--json`` the
last line on stdout is ONE JSON document.  A full run (no ``--quick``) also writes
``benchmarks/results/latest.json``.  A benchmark whose part is missing or fails gives ``null`` for its
keys and a sentence in ``notes``; the run itself never stops with a traceback.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import importlib
import json
import math
import os
import sys
import time
import traceback
from pathlib import Path

from .common import machine_info

RESULTS = Path(__file__).with_name("results") / "latest.json"
#: The quick run must finish within a minute: benchmarks that can stop early watch this budget (seconds
#: from the start of the run, leaving room for interpreter start-up and printing).
QUICK_BUDGET_S = 48.0

#: name -> (module, keys it reports)
BENCHES = {
    "langevin": ("bench_langevin", ("langevin_max_rel_error", "langevin_speed_vs_cohen", "langevin_speed_vs_brentq")),
    "models": ("bench_models", ("models_eval_ms_median",)),
    "fit": ("bench_fit", ("fit_speedup_vs_naive", "fit_same_optimum")),
    "study": ("bench_study", ("study_compare_s", "study_compare_in_process_s", "study_setting_change_s",
                              "study_setting_change_fits", "study_open_s", "study_cache_speedup")),
    "actions": ("bench_actions", ("action_session_cpu_s", "action_tab_first_visit_cpu_s",
                                  "action_specimens_open_cpu_s", "action_design_window_cpu_s",
                                  "action_open_study_cpu_s")),
    "batch": ("bench_batch", ("batch_curves_per_s", "batch_peak_mib", "batch_curves", "batch_cmd_curves_per_s_1",
                              "batch_cmd_curves_per_s_2", "batch_speedup_2_workers", "batch_dask_curves_per_s",
                              "batch_same_results")),
    "library": ("bench_library", ("library_find_s_10000", "library_trend_s_1000")),
    # last: the slowest, and the one that stops early when the quick run's time budget runs out
    "app": ("bench_app", ("slider_update_ms_median", "slider_update_ms_p95")),
    # after the app: in a quick run it only runs if the time budget allows (else null with a note)
    "server": ("bench_server", ("session_ready_s_1", "session_ready_s_12_median", "session_server_s_12",
                                "session_server_cpu_s_12", "memory_kept_mib_per_session")),
}

#: key -> (comparison, threshold, text)
TARGETS = {
    "langevin_max_rel_error": ("<=", 1e-13, "max relative error <= 1e-13"),
    "langevin_speed_vs_cohen": (">=", 0.25, "throughput >= 0.25 x Cohen's Padé"),
    "langevin_speed_vs_brentq": (">=", 100.0, ">= 100 x per-point brentq"),
    "models_eval_ms_median": ("<=", 5.0, "one slider move <= 5 ms (median)"),
    "fit_speedup_vs_naive": (">=", 20.0, ">= 20 x the naive curve_fit + brentq fit"),
    "fit_same_optimum": ("==", True, "same optimum within 1e-6 relative"),
    "study_compare_s": ("<=", 2.0, "`netstretch compare` on the five-compound set, fresh process: <= 2 s CPU"),
    "study_compare_in_process_s": ("<=", 2.0, "a new study's comparison in a warm process <= 2 s"),
    "study_setting_change_s": ("<=", 1.0, "a setting that does not change a fit <= 1 s"),
    "study_setting_change_fits": ("==", 0, "no fit repeated after a setting change"),
    "study_open_s": ("<=", 1.0, "opening a saved study <= 1 s"),
    "action_session_cpu_s": ("<=", 1.0, "a new page built and rendered <= 1 s of server CPU"),
    "action_tab_first_visit_cpu_s": ("<=", 1.0, "first visit to any tab (the slowest) <= 1 s of server CPU"),
    "action_specimens_open_cpu_s": ("<=", 1.0, "opening Compare's specimen card <= 1 s of server CPU"),
    "action_design_window_cpu_s": ("<=", 1.0, "Design's Find the window <= 1 s of server CPU"),
    "action_open_study_cpu_s": ("<=", 1.0, "opening a saved study in the app <= 1 s of server CPU"),
    "slider_update_ms_median": ("<=", 150.0, "key press to plot on screen <= 150 ms (median)"),
    "slider_update_ms_p95": ("<=", 300.0, "key press to plot on screen <= 300 ms (p95)"),
    "batch_curves_per_s": (">=", 100.0, ">= 100 curves/s"),
    "batch_speedup_2_workers": (">=", 1.8, ">= 1.8 x from 1 to 2 local workers (two idle cores)"),
    "batch_same_results": ("==", True, "1 worker, 2 workers and Dask give identical result files"),
    "library_find_s_10000": ("<=", 0.5, "library find over 10,000 compounds <= 0.5 s (SQLite)"),
    "library_trend_s_1000": ("<=", 0.5, "library trend over 1,000 points <= 0.5 s (SQLite)"),
    "session_ready_s_1": ("<=", 1.0, "a new session ready in <= 1 s of server time"),
    "session_server_s_12": ("<=", 1.0, "12 sessions at once: <= 1 s of server time each"),
    "session_server_cpu_s_12": ("<=", 1.0, "12 sessions at once: <= 1 s of server CPU each"),
    "memory_kept_mib_per_session": ("<=", 1.0, "<= 1 MiB kept per closed session"),
}


def _clean(value):
    """JSON-safe: NaN/inf become None (the caller adds a note), numpy scalars become Python numbers."""
    if isinstance(value, dict):
        return {str(k): _clean(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_clean(v) for v in value]
    if hasattr(value, "item") and not isinstance(value, str | bytes):
        try:
            value = value.item()
        except (TypeError, ValueError):
            return str(value)
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def _met(key, value):
    if value is None or key not in TARGETS:
        return None
    op, thr, _ = TARGETS[key]
    if op == "<=":
        return bool(value <= thr)
    if op == ">=":
        return bool(value >= thr)
    return bool(value == thr)


def run(quick: bool, only=None, log=print) -> dict:
    t_start = time.perf_counter()
    deadline = time.monotonic() + QUICK_BUDGET_S if quick else None
    doc = {
        "schema": "netstretch-benchmarks/1",
        "run": "quick" if quick else "full",
        "started_utc": _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "machine": machine_info(),
    }
    results, details, notes = {}, {}, []
    for name, (module, keys) in BENCHES.items():
        for k in keys:
            results[k] = None
        if only and name not in only:
            notes.append(f"{name}: not run (--only {' '.join(only)})")
            continue
        log(f"[bench] {name} ...")
        t0 = time.perf_counter()
        try:
            mod = importlib.import_module(f"{__package__}.{module}")
            out = mod.run(quick=quick, deadline=deadline)
        except Exception as exc:  # report, never crash: the other benchmarks still run
            notes.append(f"{name}: failed with {type(exc).__name__}: {exc}")
            details[name] = {"error": traceback.format_exc(limit=6)}
            log(f"[bench] {name} failed: {type(exc).__name__}: {exc}")
            continue
        for k in keys:
            v = _clean(out.get(k))
            if v is None and out.get(k) is not None:
                notes.append(f"{name}: {k} was not a finite number ({out.get(k)!r})")
            results[k] = v
        notes.extend(f"{name}: {n}" for n in out.get("notes", []))
        details[name] = _clean(out.get("detail", {}))
        details[name]["elapsed_s"] = round(time.perf_counter() - t0, 2)
        log(f"[bench] {name} done in {time.perf_counter() - t0:.1f} s")
    doc.update(results)
    doc["targets"] = {k: v[2] for k, v in TARGETS.items()}
    doc["targets_met"] = {k: _met(k, results.get(k)) for k in TARGETS}
    doc["details"] = details
    doc["notes"] = notes
    doc["elapsed_s"] = round(time.perf_counter() - t_start, 2)
    if hasattr(os, "getloadavg"):
        doc["machine"]["load_average_1min_at_end"] = os.getloadavg()[0]
    return doc


def _fmt(v):
    if v is None:
        return "null"
    if isinstance(v, bool):
        return str(v).lower()
    if isinstance(v, float):
        return f"{v:.3g}"
    return str(v)


def table(doc) -> str:
    rows = [("figure", "value", "target", "met")]
    for name, (_, keys) in BENCHES.items():
        del name
        for k in keys:
            rows.append((k, _fmt(doc.get(k)), TARGETS[k][2] if k in TARGETS else "",
                         _fmt(doc["targets_met"].get(k)) if k in TARGETS else ""))
    w = [max(len(r[i]) for r in rows) for i in range(4)]
    lines = ["  ".join(c.ljust(w[i]) for i, c in enumerate(r)).rstrip() for r in rows]
    lines.insert(1, "  ".join("-" * x for x in w))
    m = doc["machine"]
    lines.append("")
    lines.append(f"machine: {m['cpu_model']}, {m['usable_cores']} cores, numpy {m['numpy']}, "
                 f"scipy {m['scipy']}, Python {m['python']}; run: {doc['run']}, {doc['elapsed_s']} s")
    for n in doc["notes"]:
        lines.append(f"note: {n}")
    return "\n".join(lines)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(prog="python -m benchmarks", description="netstretch speed and accuracy figures")
    ap.add_argument("--quick", action="store_true", help="smaller samples; finishes in under a minute")
    ap.add_argument("--json", action="store_true", help="print one JSON document as the last stdout line")
    ap.add_argument("--only", nargs="+", choices=list(BENCHES), help="run only these benchmarks")
    ap.add_argument("--out", type=Path, help="also write the JSON document to this file")
    args = ap.parse_args(argv)

    def log(msg):
        print(msg, file=sys.stderr, flush=True)

    doc = run(args.quick, args.only, log=log)
    text = json.dumps(doc, allow_nan=False, ensure_ascii=False)
    print(table(doc), file=sys.stderr if args.json else sys.stdout, flush=True)
    targets = [args.out] if args.out else []
    if not args.quick and not args.only:
        targets.append(RESULTS)
    for path in targets:
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = path.with_suffix(path.suffix + ".tmp")
        tmp.write_text(json.dumps(doc, indent=2, allow_nan=False, ensure_ascii=False) + "\n", encoding="utf-8")
        tmp.replace(path)
        log(f"[bench] wrote {path}")
    if args.json:
        print(text, flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
