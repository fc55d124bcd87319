"""Clean-up of a converted curve: keep the loading branch; drop slack at the start, the return after the
extreme stretch and points that do not advance the stretch — each counted in a notice of kind ``cleanup``."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import DataError, Notice
from .convert import fmt_rows

#: Leading rows whose stress is at or below this fraction of the peak stress count as slack.
SLACK_FRACTION = 0.002


def is_slack(lam, stress, j, limit, peak) -> bool:
    """Rows 0..j-1 have stress ≤ limit.  They are slack when their stretch span is more than twice
    the stretch the early loading slope needs to reach ``limit`` (a clean, densely sampled start is not)."""
    span = lam[j - 1] - lam[0]
    m = j
    while m < lam.size and stress[m] <= 0.1 * peak:
        m += 1
    m = max(m, min(j + 3, lam.size))
    x, yv = lam[j:m], stress[j:m]
    if x.size < 2 or np.ptp(x) <= 0:
        return span > 1e-3
    slope = np.polyfit(x, yv, 1)[0]
    if not slope > 0:
        return span > 1e-3
    return span > 2.0 * limit / slope + 1e-3


def clean(fn: str, lam: np.ndarray, stress: np.ndarray, rows: np.ndarray, notices: list[Any], y: Any,
          compression: bool = False) -> tuple[np.ndarray, np.ndarray, list[Any]]:
    """Keep the loading branch: drop slack at the start, the return after the extreme stretch, and points
    that do not advance the stretch — each counted in ``notices``."""
    n0 = lam.size
    tension = not compression and (np.max(lam) - 1.0) >= (1.0 - np.min(lam))
    # return branch after the extreme stretch
    i_ext = int(np.argmax(lam) if tension else np.argmin(lam))
    if i_ext < n0 - 1:
        dropped = n0 - 1 - i_ext
        word = "maximum" if tension else "minimum"
        notices.append(Notice(f"{dropped} row(s) after the {word} stretch λ = {lam[i_ext]:.4g} (line {rows[i_ext]}) "
                       "dropped: unloading/return branch; only the loading branch is kept", "cleanup", fn))
        lam, stress, rows = lam[: i_ext + 1], stress[: i_ext + 1], rows[: i_ext + 1]
    # slack: leading rows with near-zero stress (in compression: the platen not yet bearing), mirrored so the
    # same test serves both directions (x grows with loading, s is the load's magnitude)
    if lam.size:
        x, s = (lam, stress) if tension else (2.0 - lam, -stress)
        peak = np.max(s)
        if peak > 0:
            limit = SLACK_FRACTION * peak
            loaded = np.flatnonzero(s > limit)
            j = int(loaded[0]) if loaded.size else lam.size
            # keep the last unloaded row (the zero from which loading starts); drop the slack before it —
            # but only when the near-zero rows span more stretch than the initial slope explains
            if 1 < j < lam.size and is_slack(x, s, j, limit, peak):
                lam0 = lam[j - 1]
                text = (f"{j - 1} leading row(s) with near-zero or opposite-sign stress (≤ {SLACK_FRACTION:.1%} of "
                        f"the peak: slack before loading) dropped; loading starts at line {rows[j - 1]}")
                lam, stress, rows = lam[j - 1:], stress[j - 1:], rows[j - 1:]
                if (lam0 > 1.0) if tension else (lam0 < 1.0):
                    # the specimen's unloaded length is the length where it started to bear load: λ' = λ/λ₀
                    lam = lam / lam0
                    text += f", where the stretch is re-zeroed (every stretch divided by {lam0:.4g})"
                notices.append(Notice(text, "cleanup", fn))
    # points that do not advance the stretch (repeats, back-steps)
    if lam.size:
        order = lam if tension else -lam
        running = np.maximum.accumulate(order)
        advance = np.ones(lam.size, dtype=bool)
        advance[1:] = order[1:] > running[:-1]
        if not advance.all():
            notices.append(Notice(f"{int((~advance).sum())} repeated or backward-stepping point(s) (stretch not "
                                  f"beyond the previous one) dropped (line {fmt_rows(rows[~advance].tolist())})",
                                  "cleanup", fn))
            lam, stress, rows = lam[advance], stress[advance], rows[advance]
    if lam.size < 3:
        raise DataError(f"{fn}: only {lam.size} usable point(s) left in {y.header!r} after removing slack, unloading "
                        "and repeated rows; a curve needs at least 3 points on its loading branch", file=fn,
                        column=y.header)
    return lam, stress, rows.tolist()
