"""Benchmark 2: one slider move in the core — every registered model, every mode it supports, 400 stretches.

What is timed
-------------
One "move" sets a new strand density ν (the crosslink-density control) and recomputes the force–stretch
curves of every registered model in uniaxial, equibiaxial and planar tension (slip-tube: uniaxial only)
on 400 stretches, through the code the app runs for its stress plot:
``app.state.NetworkState(models=<all>).stress_curves()`` (builds the ``Network``, maps it to each
model's parameters, evaluates the nominal stress and the locking stretch per mode).  The ν values
cycle through the typical range so no call repeats the previous one.  Median over the moves.

When ``app.state`` cannot be imported, the same work is timed through the core directly
(``Network.model_params`` + ``Model.nominal_stress`` + ``Model.stretch_limit``) and a note says so.
The core-only time without the locking stretches is reported too, to show where the time goes, and so
is everything the app's fast update computes per move (stress curves, Mooney curves, G₀ of each model,
the readout), still without Panel.
"""

from __future__ import annotations

import cProfile
import io
import pstats
import statistics
import time

import numpy as np

from network_models import MODELS, MODES, Network

N_STRETCH = 400
LAM_MAX = 5.0  # the app's default largest stretch


def _nu_values(n: int) -> np.ndarray:
    return np.geomspace(60.0, 400.0, n)


def core_move(nu: float, lam: np.ndarray, locks: bool = True) -> dict:
    """The same work as the app's stress plot, through the core only."""
    net = Network(polymer="NR", nu=float(nu), T=296.15)
    out = {}
    for name, m in MODELS.items():
        p = net.model_params(m)
        for mode in MODES:
            if not m.supports(mode):
                continue
            out[(name, mode.value)] = m.nominal_stress(mode, lam, p)
            if locks:
                m.stretch_limit(mode, p)
    return out


def _app_state():
    try:
        from app.state import NetworkState
    except Exception as exc:  # the app is built by another part; missing or broken: fall back to the core
        return None, f"app.state not importable ({type(exc).__name__}: {exc}); timed through the core instead"
    st = NetworkState(models=list(MODELS), lam_max=LAM_MAX)
    if st.n_points != N_STRETCH:
        return st, f"the app uses {st.n_points} stretches per curve, not {N_STRETCH}"
    return st, None


def _time_interleaved(fns: dict, nus) -> dict[str, list[float]]:
    """Each callable timed at every ν in turn (move, core, core, ... at ν₁, then at ν₂, ...), so that other
    load on the shared machine falls on all of them alike."""
    for fn in fns.values():
        fn(nus[-1])  # warm-up (imports, caches)
    times = {k: [] for k in fns}
    for v in nus:
        for k, fn in fns.items():
            t0 = time.perf_counter()
            fn(v)
            times[k].append(time.perf_counter() - t0)
    return times


def _profile(fn, nus, top: int = 12) -> list[str]:
    pr = cProfile.Profile()
    pr.enable()
    for v in nus:
        fn(v)
    pr.disable()
    buf = io.StringIO()
    pstats.Stats(pr, stream=buf).sort_stats("cumulative").print_stats(top)
    lines = [ln.rstrip() for ln in buf.getvalue().splitlines() if ln.strip()]
    return lines[-top - 1:]


def run(quick: bool = False, deadline: float | None = None) -> dict:
    n_moves = 30 if quick else 200
    nus = _nu_values(n_moves)
    lam = np.linspace(1.0, LAM_MAX, N_STRETCH)
    notes = []
    st, note = _app_state()
    if note:
        notes.append(note)
    if st is not None:
        def move(v):
            st.nu = float(v)
            return st.stress_curves()
        path = "app.state.NetworkState.stress_curves (all registered models)"
    else:
        def move(v):
            return core_move(v, lam)
        path = "core: Network.model_params + nominal_stress + stretch_limit"

    fns = {
        "move": move,
        "core_stress": lambda v: core_move(v, lam, locks=False),
        "core_locks": lambda v: core_move(v, lam, locks=True),
    }
    if st is not None and all(hasattr(st, a) for a in ("mooney_curves", "moduli", "readout")):
        def app_fast(v):
            # everything the app's fast update computes (no Panel): stress, Mooney, G0 of each model, readout
            st.nu = float(v)
            net = st.network()
            st.stress_curves(net)
            st.mooney_curves(net)
            st.moduli(net)
            st.readout(net)

        fns["app_fast"] = app_fast
    t = _time_interleaved(fns, nus)
    t_move, t_core_stress, t_core_locks, t_app_all = t["move"], t["core_stress"], t["core_locks"], t.get("app_fast")
    med = statistics.median(t_move) * 1e3
    curves = sum(1 for m in MODELS.values() for mode in MODES if m.supports(mode))
    detail = {
        "path": path,
        "moves": n_moves,
        "curves_per_move": curves,
        "stretches_per_curve": N_STRETCH,
        "median_ms": med,
        "p95_ms": float(np.percentile(t_move, 95)) * 1e3,
        "min_ms": min(t_move) * 1e3,
        "app_fast_update_core_work_median_ms": statistics.median(t_app_all) * 1e3 if t_app_all else None,
        "core_stress_only_median_ms": statistics.median(t_core_stress) * 1e3,
        "core_stress_and_locks_median_ms": statistics.median(t_core_locks) * 1e3,
        "target": "<= 5 ms",
    }
    if med > 5.0:
        detail["profile_top_cumulative"] = _profile(move, nus[: min(20, n_moves)])
    return {"models_eval_ms_median": med, "detail": detail, "notes": notes}
