"""Print the README "Performance" table from ``benchmarks/results/latest.json``:
``python -m benchmarks.readme_table``."""

from __future__ import annotations

import json

from .__main__ import RESULTS


def _get(doc, *path):
    for p in path:
        if not isinstance(doc, dict) or p not in doc:
            return None
        doc = doc[p]
    return doc


def _f(value, fmt: str) -> str:
    return "null" if value is None else fmt.format(value)


def table(d: dict) -> str:
    met = d["targets_met"]

    def ok(k):
        v = met.get(k)
        return "—" if v is None else ("yes" if v else "**no**")

    lt = ("langevin", "throughput")
    ours, cohen = _get(d, "details", *lt, "ours_s"), _get(d, "details", *lt, "cohen_s")
    per = _get(d, "details", "fit", "speedup_per_model") or {}
    stress_only = _get(d, "details", "models", "core_stress_only_median_ms")
    rows = [
        ("L⁻¹ max relative error vs mpmath (10,200 points up to 1 − 1e-12)",
         _f(d["langevin_max_rel_error"], "{:.1e}"), "≤ 1e-13", "langevin_max_rel_error"),
        ("L⁻¹ throughput vs Cohen's Padé in numpy, 10⁶ values (t_Cohen / t_ours)",
         _f(d["langevin_speed_vs_cohen"], "{:.2f}")
         + (f" ({ours * 1e3:.1f} ms vs {cohen * 1e3:.1f} ms)" if ours and cohen else ""),
         "≥ 0.25", "langevin_speed_vs_cohen"),
        ("L⁻¹ speed vs per-point brentq (timed on a subsample, scaled)",
         _f(d["langevin_speed_vs_brentq"], "{:.0f}×"), "≥ 100×", "langevin_speed_vs_brentq"),
        ("One ν move: 11 models, 31 curves × 400 stretches, app code path (median)",
         _f(d["models_eval_ms_median"], "{:.1f} ms")
         + (f" (stress alone {stress_only:.1f} ms)" if stress_only else ""), "≤ 5 ms", "models_eval_ms_median"),
        ("Fit eight-chain + extended tube to 60 three-mode points, vs curve_fit + brentq",
         _f(d["fit_speedup_vs_naive"], "{:.1f}×")
         + (" (" + ", ".join(f"{k} {v:.1f}×" for k, v in per.items()) + ")" if per else ""),
         "≥ 20×", "fit_speedup_vs_naive"),
        ("…both reach the same optimum within 1e-6 relative",
         _f(d["fit_same_optimum"], "{}").lower(), "true", "fit_same_optimum"),
        ("Browser: key press on the ν slider → stress plot repainted (median)",
         _f(d["slider_update_ms_median"], "{:.0f} ms"), "≤ 150 ms", "slider_update_ms_median"),
        ("…95th percentile", _f(d["slider_update_ms_p95"], "{:.0f} ms"), "≤ 300 ms", "slider_update_ms_p95"),
        (f"Batch: {_f(d['batch_curves'], '{}')} uniaxial curves × 50 points, eight-chain fits",
         _f(d["batch_curves_per_s"], "{:.0f} curves/s") + ", peak " + _f(d["batch_peak_mib"], "{:.1f} MiB"),
         "≥ 100 /s", "batch_curves_per_s"),
        ("`netstretch batch`: 2 local workers vs 1 (same results; Dask "
         + _f(d.get("batch_dask_curves_per_s"), "{:.0f} curves/s") + ")",
         _f(d.get("batch_speedup_2_workers"), "{:.2f}×") + " (" + _f(d.get("batch_cmd_curves_per_s_1"), "{:.0f}")
         + " → " + _f(d.get("batch_cmd_curves_per_s_2"), "{:.0f} curves/s") + ")", "≥ 1.8×",
         "batch_speedup_2_workers"),
        ("Library (SQLite): `library find`, 2 targets over 10,000 generated compounds",
         _f(d.get("library_find_s_10000"), "{:.2f} s"), "≤ 0.5 s", "library_find_s_10000"),
        ("Library (SQLite): `library trend` over 1,000 points with control limits",
         _f(d.get("library_trend_s_1000"), "{:.2f} s"), "≤ 0.5 s", "library_trend_s_1000"),
        ("`netstretch compare` on the five-compound sample set, fresh process (CPU; imports alone "
         + _f(_get(d, "details", "study", "baseline_import_cpu_s"), "{:.2f} s") + ")",
         _f(d.get("study_compare_s"), "{:.2f} s"), "≤ 2 s", "study_compare_s"),
        ("…a new study's comparison in a warm process; after a setting that changes no fit",
         _f(d.get("study_compare_in_process_s"), "{:.2f} s") + "; " + _f(d.get("study_setting_change_s"),
                                                                        "{:.3f} s"),
         "≤ 2 s; ≤ 1 s", "study_compare_in_process_s"),
        ("App: a new page built and rendered (server CPU)", _f(d.get("action_session_cpu_s"), "{:.2f} s"), "≤ 1 s",
         "action_session_cpu_s"),
        ("App: first visit to a tab, the slowest ("
         + str(_get(d, "details", "actions", "slowest_tab") or "—") + ", server CPU)",
         _f(d.get("action_tab_first_visit_cpu_s"), "{:.2f} s"), "≤ 1 s", "action_tab_first_visit_cpu_s"),
        ("App: opening Compare's specimen card (server CPU)", _f(d.get("action_specimens_open_cpu_s"), "{:.2f} s"),
         "≤ 1 s", "action_specimens_open_cpu_s"),
        ("App: Design's *Find the window* (server CPU)", _f(d.get("action_design_window_cpu_s"), "{:.2f} s"),
         "≤ 1 s", "action_design_window_cpu_s"),
        ("App: opening a saved study (server CPU)", _f(d.get("action_open_study_cpu_s"), "{:.2f} s"), "≤ 1 s",
         "action_open_study_cpu_s"),
        ("Server: a new session ready (server time, one session)", _f(d.get("session_ready_s_1"), "{:.2f} s"),
         "≤ 1 s", "session_ready_s_1"),
        ("…12 sessions opened at once, server time each", _f(d.get("session_server_s_12"), "{:.2f} s"), "≤ 1 s",
         "session_server_s_12"),
        ("…12 sessions opened at once, server CPU each", _f(d.get("session_server_cpu_s_12"), "{:.2f} s"), "≤ 1 s",
         "session_server_cpu_s_12"),
        ("Memory kept per closed session (soak, after clean-up)", _f(d.get("memory_kept_mib_per_session"),
                                                                     "{:.2f} MiB"), "≤ 1 MiB",
         "memory_kept_mib_per_session"),
    ]
    out = ["| figure | measured | target | met |", "|---|---|---|---|"]
    out += [f"| {a} | {b} | {c} | {ok(k)} |" for a, b, c, k in rows]
    m = d["machine"]
    load = m.get("load_average_1min_at_start")
    out.append("")
    out.append(f"Machine: {m['cpu_model']}, {m['usable_cores']} cores, numpy {m['numpy']}, scipy {m['scipy']}, "
               f"Python {m['python']}, BLAS {m['blas']}"
               + (f"; 1-min load average {load:.1f} at the start" if load is not None else "")
               + f"; run {d['started_utc']}, {d['elapsed_s']:.0f} s.")
    return "\n".join(out)


def main() -> None:
    print(table(json.loads(RESULTS.read_text(encoding="utf-8"))))


if __name__ == "__main__":
    main()
