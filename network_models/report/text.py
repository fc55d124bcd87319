"""Number and text formatting shared by the report's HTML, charts and tables."""

from __future__ import annotations

import html

from ..constants import celsius
from ..formatting import number


def fmt(x, digits=4) -> str:
    """``x`` to ``digits`` significant digits: the project's one number formatter
    (:func:`network_models.formatting.number`), shared with the app's tables."""
    return number(x, digits)


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
