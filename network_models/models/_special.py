"""Small numerically careful helpers shared by model families."""

from __future__ import annotations

import numpy as np


def log_x_over_sinh(b):
    """ln(β / sinh β) for β >= 0, without overflow or cancellation."""
    b = np.abs(np.asarray(b, dtype=np.float64))
    with np.errstate(all="ignore"):
        small = b < 1e-3
        bb = b * b
        series = -bb / 6.0 + bb * bb / 180.0
        big = np.log(b) - b - np.log1p(-np.exp(-2.0 * b)) + np.log(2.0)
    return np.where(small, series, big)
