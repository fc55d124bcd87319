"""One number formatter for every table a person reads: the app's tables and the review report (HTML, its
charts' labels) print the same value the same way.

``number(x, digits)``: ``digits`` significant digits, trailing zeros kept (they say how many digits are
meant: 0.6900 MPa), plain positional notation for 10⁻⁴ ≤ |x| < 10⁷ — the range a compounder meets, so no
"e+03" in a table — and scientific notation outside it (2.500e-07); a missing or non-finite value is a dash,
never "nan".  Rounding is to the nearest, ties to even (numpy's and Python's rule), and a value that rounds up
into the next decade keeps ``digits`` digits (9.9996 → "10.00").
"""

from __future__ import annotations

import math

#: what a missing, NaN or infinite value prints as
DASH = "—"
#: |x| in [PLAIN_MIN, PLAIN_MAX) prints positionally, outside in scientific notation
PLAIN_MIN, PLAIN_MAX = 1e-4, 1e7


def number(x, digits: int = 4, *, trim: bool = False) -> str:
    """``x`` to ``digits`` significant digits (see the module's docstring); ``trim`` drops trailing zeros
    (for a short read-out beside a control, never in a table)."""
    if x is None:
        return DASH
    try:
        x = float(x)
    except (TypeError, ValueError):
        return DASH
    if not math.isfinite(x):
        return DASH
    if x == 0:
        return "0"
    digits = max(int(digits), 1)
    sci = f"{x:.{digits - 1}e}"  # correctly rounded mantissa; its exponent is the rounded value's decade
    exp = int(sci.rsplit("e", 1)[1])
    if not (PLAIN_MIN <= abs(float(sci)) < PLAIN_MAX):
        return f"{x:.{digits}g}" if trim else sci
    decimals = digits - 1 - exp
    text = f"{x:.{decimals}f}" if decimals >= 0 else f"{round(x, decimals):.0f}"
    if trim and "." in text:
        text = text.rstrip("0").rstrip(".")
    return text


__all__ = ["DASH", "PLAIN_MAX", "PLAIN_MIN", "number"]
