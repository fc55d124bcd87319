"""Benchmark 6: a shared server — session-ready time with 1 and 12 sessions, memory kept per closed session.

What is measured
----------------
``netstretch serve`` runs in a subprocess on a free localhost port with ``--session-lifetime 1`` (a closed
session is released about a second later instead of Bokeh's default 15 s; nothing else changes).

* Session-ready time: wall time of an HTTP GET of the page.  The server builds the session's whole page
  (Bokeh document) before it answers, so this is the server time a new colleague waits for.  One
  session alone (median of 3), then 12 requests at once (median and slowest; their wall time / 12 is the
  server time per session when they queue on one process); the server process's CPU time over those 12
  requests / 12 (``/proc/PID/stat``) is ``session_server_cpu_s_12``, the figure other work on the machine
  does not inflate.
* Memory kept per closed session: sessions are opened over the websocket (``bokeh.client.pull_session``,
  as a browser does) and closed, in rounds; after each round the server's resident set (``/proc/PID``
  VmRSS) is read once the sessions are released.  The first round is warm-up (imports, caches, allocator
  arenas); kept per session = (RSS after the last round − RSS after the first) / sessions in between.

Target: <= 1 MiB kept per closed session; <= 1 s of server time for a new session.  Measured while other
work shares the 2-core machine: see the load average recorded beside it.
"""

from __future__ import annotations

import statistics
import time
import urllib.request
from concurrent.futures import ThreadPoolExecutor

from .common import netstretch_server


def rss_mib(pid: int) -> float:
    """Resident set size of process ``pid`` (MiB) from /proc (Linux)."""
    with open(f"/proc/{pid}/status", encoding="ascii") as fh:
        for line in fh:
            if line.startswith("VmRSS:"):
                return int(line.split()[1]) / 1024.0
    raise OSError(f"no VmRSS for process {pid}")


def served(lifetime_s: float = 1.0, timeout_s: float = 90.0, extra=()):
    """``netstretch serve`` on a free localhost port with sessions released ``lifetime_s`` after they close;
    yields (process, url, log path).  Always stopped."""
    return netstretch_server("127.0.0.1", ("--session-lifetime", str(lifetime_s), *extra), timeout_s)


def cpu_s(pid: int) -> float:
    """CPU seconds (user + system) process ``pid`` has used, from /proc/PID/stat (Linux)."""
    import os

    with open(f"/proc/{pid}/stat", encoding="ascii") as fh:
        fields = fh.read().rpartition(")")[2].split()
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def get_page(url: str, timeout: float = 180.0) -> float:
    """Seconds until the page (with its freshly built session) has arrived."""
    t0 = time.perf_counter()
    with urllib.request.urlopen(url, timeout=timeout) as r:
        r.read()
    return time.perf_counter() - t0


def ready_times(url: str, n: int) -> tuple[list[float], float]:
    """``n`` page requests at once: their latencies and the wall time of all."""
    t0 = time.perf_counter()
    with ThreadPoolExecutor(n) as ex:
        times = list(ex.map(lambda _: get_page(url), range(n)))
    return times, time.perf_counter() - t0


def open_close(url: str, n: int, concurrency: int = 2) -> None:
    """Open ``n`` websocket sessions (as a browser does) and close them."""
    import panel  # noqa: F401  (the client must know Panel's model types to read the document)
    from bokeh.client import pull_session

    def one(_):
        s = pull_session(url=url)
        s.close()

    with ThreadPoolExecutor(concurrency) as ex:
        list(ex.map(one, range(n)))


def soak(proc, url: str, rounds: int, per_round: int, settle_s: float = 3.0) -> list[float]:
    """RSS (MiB) after each round of ``per_round`` sessions opened and closed, once they are released."""
    out = []
    for _ in range(rounds):
        open_close(url, per_round)
        time.sleep(settle_s)  # session lifetime (1 s) + clean-up check (1 s) + margin
        out.append(rss_mib(proc.pid))
    return out


def kept_per_session(rss: list[float], per_round: int, warmup: int = 1) -> float:
    """MiB kept per closed session after the first ``warmup`` rounds (imports, caches, allocator arenas)."""
    return (rss[-1] - rss[warmup - 1]) / (per_round * (len(rss) - warmup))


#: seconds a quick run needs left for this benchmark (server start with its warm-up page, 14 pages on 2 cores);
#: the quick run leaves out the soak (memory per session: null with a note), the full run does it all
QUICK_NEEDS_S = 25.0
#: ... and for one session alone (server start, 3 pages)
QUICK_NEEDS_ONE_S = 12.0


def run(quick: bool = False, deadline: float | None = None) -> dict:
    rounds, per_round = 6, 6
    notes = []
    left = None if deadline is None else deadline - time.monotonic()
    twelve = left is None or left >= QUICK_NEEDS_S
    if left is not None and left < QUICK_NEEDS_ONE_S:
        return {"session_ready_s_1": None, "session_ready_s_12_median": None, "session_server_s_12": None,
                "session_server_cpu_s_12": None, "memory_kept_mib_per_session": None,
                "notes": [f"not run: less than {QUICK_NEEDS_ONE_S:.0f} s of the quick run's time budget left "
                          "(the full run `python -m benchmarks` measures it)"]}
    with served() as (proc, url, log_path):
        get_page(url)  # first page pays the imports
        single = [get_page(url) for _ in range(2 if quick else 3)]
        cpu0 = cpu_s(proc.pid)
        many, wall = ready_times(url, 12) if twelve else (None, None)
        cpu12 = (cpu_s(proc.pid) - cpu0) / 12 if twelve else None
        rss = [] if quick else soak(proc, url, rounds, per_round)
        log_text = log_path.read_text("utf-8", errors="replace")
    kept = kept_per_session(rss, per_round) if rss else None
    if not twelve:
        notes.append(f"12 sessions at once not measured: less than {QUICK_NEEDS_S:.0f} s of the quick budget left")
    if quick:
        notes.append("quick run: memory kept per session not measured (the soak needs a minute; full run)")
    if "Traceback" in log_text:
        notes.append(f"the server log holds a traceback ({log_path})")
    return {
        "session_ready_s_1": statistics.median(single),
        "session_ready_s_12_median": statistics.median(many) if many else None,
        "session_server_s_12": wall / 12 if wall else None,
        "session_server_cpu_s_12": cpu12,
        "memory_kept_mib_per_session": kept,
        "detail": {
            "single_s": single, "twelve_s": many, "twelve_wall_s": wall,
            "rss_mib_after_each_round": rss, "sessions_per_round": per_round,
            "method": "HTTP GET of the page (server builds the session); websocket sessions via "
                      "bokeh.client.pull_session for memory; --session-lifetime 1",
        },
        "notes": notes,
    }
