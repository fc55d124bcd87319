"""Benchmark 4: the app in a browser — key press on the crosslink-density control to the redrawn plot.

Setup
-----
``netstretch serve --port <free port>`` is started here (a subprocess on localhost), the system
Chromium (``/usr/bin/chromium``, headless, no ``playwright install``) opens the page through
Playwright's Python API, and the page is instrumented once loaded.

What is timed, exactly
----------------------
The slider handle of the strand-density control (css class ``ns-nu-input``) is focused and
``ArrowRight`` is pressed (one slider step, Δν = 1 mol/m³) ``moves`` times, one press after the previous
one has been drawn.  For each press:

* start: the ``keydown`` event's ``timeStamp`` (a capture listener on ``window``);
* the server recomputes the curves and sends the new columns; BokehJS applies them to the uniaxial
  stress plot's ``ColumnDataSource`` (named ``ns-stress-uniaxial``; its ``change`` signal is recorded);
* end: the uniaxial plot view's next ``_actual_paint`` after that change returns (BokehJS paints
  inside a ``requestAnimationFrame`` callback, so the new canvas goes to screen with that frame).

``slider_update_ms_*`` is end − start: browser event, websocket round trip, the server-side Python
update (curves of every shown model in three modes, Mooney plot, moduli), patch and canvas repaint.
Each press starts from a quiet page (no document change for 150 ms, so the deferred moduli/limits
views of the previous press have arrived).  The first two presses are warm-up and not counted.  The
time to the next animation frame after the paint (frame presented) is reported beside it.
"""

from __future__ import annotations

import contextlib
import os
import shutil
import statistics
import time
from pathlib import Path

import numpy as np

from .common import netstretch_server

CHROMIUM = os.environ.get("NETSTRETCH_CHROMIUM", "/usr/bin/chromium")
FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
         "--disable-sync", "--no-first-run", "--disable-quic"]
WARMUP = 2
SETTLE_MS = 150
MIN_BUDGET_S = 12.0  # server start + page load + 22 presses on a quiet machine

_INSTRUMENT = """
() => {
  const doc = Bokeh.documents[0];
  const src = doc.get_model_by_name("ns-stress-uniaxial");
  if (src == null) return "no data source named ns-stress-uniaxial";
  let fig = null;
  for (const m of doc.all_models) {
    if (m.renderers !== undefined && Array.isArray(m.renderers) &&
        m.renderers.some(r => r.data_source === src)) { fig = m; break; }
  }
  if (fig == null) return "no figure draws ns-stress-uniaxial";
  const view = doc.views_manager.find_one(fig);
  if (view == null || typeof view._actual_paint !== "function") return "no plot view with _actual_paint";
  const ns = window.__nsBench = {keys: [], changes: [], paints: [], frames: [], last: performance.now()};
  doc.on_change(() => { ns.last = performance.now(); });
  window.addEventListener("keydown", e => ns.keys.push(e.timeStamp), true);
  src.change.connect(() => ns.changes.push(performance.now()));
  const orig = view._actual_paint.bind(view);
  view._actual_paint = function () {
    const r = orig();
    const t = performance.now();
    ns.paints.push(t);
    requestAnimationFrame(() => ns.frames.push([t, performance.now()]));
    return r;
  };
  return "ok";
}
"""

# Records websocket traffic (time, size) so the latency can be split into server and browser parts.
_WS_HOOK = """
(() => {
  const rec = window.__nsWs = {send: [], recv: []};
  const Orig = window.WebSocket;
  const send = Orig.prototype.send;
  Orig.prototype.send = function (d) {
    rec.send.push(performance.now());
    return send.call(this, d);
  };
  const Wrapped = function (...args) {
    const ws = new Orig(...args);
    ws.addEventListener("message", e => {
      const n = typeof e.data === "string" ? e.data.length : (e.data.byteLength ?? e.data.size ?? 0);
      rec.recv.push([performance.now(), n]);
    });
    return ws;
  };
  Wrapped.prototype = Orig.prototype;
  Object.assign(Wrapped, {CONNECTING: 0, OPEN: 1, CLOSING: 2, CLOSED: 3});
  window.WebSocket = Wrapped;
})();
"""

# true once a paint has finished after a data change that followed the last key press
_DONE = """
(k) => {
  const ns = window.__nsBench;
  if (ns.keys.length < k) return false;
  const key = ns.keys[k - 1];
  const ch = ns.changes.find(t => t >= key);
  if (ch === undefined) return false;
  const paint = ns.paints.find(t => t >= ch);
  if (paint === undefined) return false;
  return ns.frames.some(f => f[0] === paint);
}
"""

_RESULT = """
(k) => {
  const ns = window.__nsBench;
  const key = ns.keys[k - 1];
  const ch = ns.changes.find(t => t >= key);
  const paint = ns.paints.find(t => t >= ch);
  const frame = ns.frames.find(f => f[0] === paint)[1];
  const ws = window.__nsWs;
  const sent = ws ? ws.send.find(t => t >= key) : undefined;
  // the first sizeable message after the send: the document patch carrying the new columns
  const big = ws && sent !== undefined ? ws.recv.find(r => r[0] >= sent && r[1] > 1000) : undefined;
  return {key: key, change: ch - key, paint: paint - key, frame: frame - key,
          sent: sent === undefined ? null : sent - key, patch: big === undefined ? null : big[0] - key};
}
"""


@contextlib.contextmanager
def app_server(timeout: float = 60.0):
    """``netstretch serve`` on a free localhost port; yields (url, log path); stopped and its log deleted after."""
    with netstretch_server("localhost", timeout_s=timeout, keep_log=False) as (_proc, url, log_path):
        yield url, str(log_path)


def _unavailable() -> str | None:
    if not (os.path.exists(CHROMIUM) or shutil.which(CHROMIUM)):
        return f"no Chromium at {CHROMIUM}: the browser benchmark needs the system Chromium"
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        return "the Playwright Python package is not installed"
    try:
        import app.main  # noqa: F401
    except Exception as exc:
        return f"the app cannot be imported ({type(exc).__name__}: {exc})"
    return None


class BudgetExceeded(RuntimeError):
    """The quick run's time budget ran out before the required number of slider moves."""


def measure(url: str, moves: int, timeout_ms: float = 15000, deadline: float | None = None) -> dict:
    from playwright.sync_api import sync_playwright

    with sync_playwright() as pw:
        t0 = time.perf_counter()
        browser = pw.chromium.launch(executable_path=CHROMIUM, args=FLAGS, headless=True)
        launch_s = time.perf_counter() - t0
        try:
            page = browser.new_page(viewport={"width": 1400, "height": 950})
            page.add_init_script(_WS_HOOK)
            t0 = time.perf_counter()
            load_ms = 90000.0 if deadline is None else max(1000.0, (deadline - time.monotonic()) * 1000.0)
            page.goto(url, wait_until="load", timeout=load_ms)
            page.wait_for_selector(".ns-stress-plot canvas", timeout=load_ms)
            page.wait_for_function("() => window.Bokeh && Bokeh.documents.length > 0 && "
                                   "Bokeh.documents[0].get_model_by_name('ns-stress-uniaxial') != null",
                                   timeout=load_ms)
            load_s = time.perf_counter() - t0
            page.wait_for_timeout(1000)  # let the first (slow-view) updates settle
            status = page.evaluate(_INSTRUMENT)
            if status != "ok":
                raise RuntimeError(f"cannot instrument the page: {status}")
            handle = page.locator(".ns-nu-input .noUi-handle").first
            handle.focus()
            before = handle.get_attribute("aria-valuenow")
            runs = []
            t0 = time.perf_counter()
            for k in range(1, moves + WARMUP + 1):
                if deadline is not None and time.monotonic() > deadline:
                    raise BudgetExceeded(f"the quick run's time budget ran out after {max(0, k - 1 - WARMUP)} of "
                                         f"{moves} timed slider moves (page load took {load_s:.1f} s); run the full "
                                         "benchmark (make bench) for this figure")
                page.keyboard.press("ArrowRight")
                page.wait_for_function(_DONE, arg=k, timeout=timeout_ms, polling="raf")
                runs.append(page.evaluate(_RESULT, k))
                # start each press from a quiet page: the deferred views (moduli, limits) update one tick
                # later; wait until the document has had no change for SETTLE_MS
                page.wait_for_function(f"() => performance.now() - window.__nsBench.last > {SETTLE_MS}",
                                       timeout=timeout_ms, polling=50)
            moves_s = time.perf_counter() - t0
            after = handle.get_attribute("aria-valuenow")
        finally:
            t0 = time.perf_counter()
            browser.close()
            close_s = time.perf_counter() - t0
    return {"runs": runs[WARMUP:], "load_s": load_s, "launch_s": launch_s, "moves_s": moves_s,
            "close_s": close_s, "nu_before": before, "nu_after": after}


def run(quick: bool = False, deadline: float | None = None) -> dict:
    """``deadline`` (time.monotonic): stop early, reporting null with a note, when it passes."""
    if deadline is not None and deadline - time.monotonic() < MIN_BUDGET_S:
        left = max(0.0, deadline - time.monotonic())
        return {"slider_update_ms_median": None, "slider_update_ms_p95": None,
                "notes": [f"skipped: only {left:.0f} s of the quick run's time budget were left (needs about "
                          f"{MIN_BUDGET_S:.0f} s); run the full benchmark (make bench) for this figure"]}
    why = _unavailable()
    if why:
        return {"slider_update_ms_median": None, "slider_update_ms_p95": None, "notes": [why]}
    moves = 20 if quick else 60
    t0 = time.perf_counter()
    start_timeout = 90.0 if deadline is None else max(1.0, deadline - time.monotonic())
    with app_server(timeout=start_timeout) as (url, log):
        t_server = time.perf_counter() - t0
        try:
            m = measure(url, moves, deadline=deadline)
        except BudgetExceeded as exc:
            return {"slider_update_ms_median": None, "slider_update_ms_p95": None, "notes": [str(exc)]}
        except Exception as exc:
            tail = Path(log).read_text("utf-8", errors="replace").strip().splitlines()[-5:]
            raise RuntimeError(f"{exc} (server log ends: {' | '.join(tail)})") from None
        t1 = time.perf_counter()
    t_stop = time.perf_counter() - t1
    paint = [r["paint"] for r in m["runs"]]
    frame = [r["frame"] for r in m["runs"]]
    change = [r["change"] for r in m["runs"]]
    sent = [r["sent"] for r in m["runs"] if r["sent"] is not None]
    patch = [r["patch"] for r in m["runs"] if r["patch"] is not None]
    notes = []
    try:
        moved = float(m["nu_after"]) - float(m["nu_before"])
    except (TypeError, ValueError):
        moved = None
    if moved is None or moved <= 0:
        notes.append(f"the strand-density slider did not move as expected (before {m['nu_before']}, "
                     f"after {m['nu_after']})")
    return {
        "slider_update_ms_median": statistics.median(paint),
        "slider_update_ms_p95": float(np.percentile(paint, 95)),
        "detail": {
            "moves_timed": len(paint),
            "warmup_moves": WARMUP,
            "control": ".ns-nu-input slider handle, ArrowRight (one step, 1 mol/m³)",
            "nu_before": m["nu_before"],
            "nu_after": m["nu_after"],
            "timed": "keydown timeStamp -> end of the uniaxial stress plot's first repaint after its data changed",
            "breakdown_ms_median": {
                "key_to_websocket_send": statistics.median(sent) if sent else None,
                "key_to_patch_received": statistics.median(patch) if patch else None,
                "key_to_data_source_changed": statistics.median(change),
                "key_to_repaint_done": statistics.median(paint),
                "note": "send -> patch received = server-side update + serialisation + transfer; "
                        "patch -> repaint = BokehJS applying the patch and repainting (browser)",
            },
            "to_next_frame_ms_median": statistics.median(frame),
            "to_next_frame_ms_p95": float(np.percentile(frame, 95)),
            "max_ms": max(paint),
            "server_start_s": t_server,
            "browser_launch_s": m["launch_s"],
            "page_load_s": m["load_s"],
            "moves_s": m["moves_s"],
            "browser_close_s": m["close_s"],
            "server_stop_s": t_stop,
            "browser": "system Chromium, headless, flags: " + " ".join(FLAGS),
            "targets": "median <= 150 ms, p95 <= 300 ms",
        },
        "notes": notes,
    }
