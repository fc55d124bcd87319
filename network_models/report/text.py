"""Number and text formatting shared by the report's HTML, charts and tables."""

from __future__ import annotations

import html
import math

from ..constants import celsius


def fmt(x, digits=4) -> str:
    """``x`` to ``digits`` significant digits, plain notation for the range a compounder meets."""
    if x is None:
        return "—"
    x = float(x)
    if not math.isfinite(x):
        return "—"
    if x == 0:
        return "0"
    mag = math.floor(math.log10(abs(x)))
    if -3 <= mag < 6:
        decimals = max(digits - 1 - mag, 0)
        return f"{x:.{decimals}f}"
    return f"{x:.{digits - 1}e}"


def _signed(x: float, decimals: int) -> str:
    """+12.3 / −4.5 with a true minus sign."""
    return f"{x:+.{decimals}f}".replace("-", "−")


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _temp_c(T) -> str:
    return "—" if T is None else f"{celsius(T):.1f} °C"


signed = _signed
esc = _e
temp_c = _temp_c

__all__ = ["esc", "fmt", "signed", "temp_c"]
