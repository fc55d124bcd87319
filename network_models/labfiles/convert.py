"""Conversion of one column pair to stretch λ and nominal stress (Pa), tension or compression.

Compression (uniaxial loading with λ < 1): testers write compressive strain and stress as positive numbers;
the core's convention is λ = 1 − ε (ε the compressive strain) and negative nominal stress.  Either sign
convention is accepted per column, and a notice (kind ``assumed-sign``) says which was assumed; a column
holding both signs is refused.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import DataError, Notice
from ..units import UnitError, unit_converter
from .columns import Column, column_converter, unit_dimension

#: Stretch above this is taken as a unit mistake (λ = 50 is 4900 % strain; no rubber gets there).
MAX_PLAUSIBLE_STRETCH = 50.0
#: Values of the minority sign smaller than this fraction of the column's largest magnitude are noise.
SIGN_NOISE = 0.05


def fmt_rows(rows: list[int], limit: int = 6) -> str:
    shown = ", ".join(str(r) for r in rows[:limit])
    return shown + (f" and {len(rows) - limit} more" if len(rows) > limit else "")


def _sign(fn, col: Column, v: np.ndarray) -> int:
    """+1 when the column is written positive (as testers write compression), −1 when negative (the core's
    convention); DataError when both signs carry real values."""
    big = np.nanmax(np.abs(v)) if v.size else 0.0
    if not big > 0:
        return 1
    pos = np.count_nonzero(v > SIGN_NOISE * big)
    neg = np.count_nonzero(v < -SIGN_NOISE * big)
    if pos and neg:
        raise DataError(f"{fn}: column {col.header!r} holds both positive and negative values in a compression test "
                        f"({pos} positive, {neg} negative); a compression curve has one sign throughout — check the "
                        "column, or split the loading branches into separate files", file=fn, column=col.header)
    return -1 if neg else 1


def _strain(fn, x: Column, xv, notices):
    if x.unit:
        try:
            conv = unit_converter(x.unit, "dimensionless")
        except UnitError as e:
            raise DataError(f"{fn}: column {x.header!r}: {e}; strain is a fraction or '%'", file=fn,
                            column=x.header) from None
        return conv(xv)
    eps = xv.astype(float)
    if np.nanmax(np.abs(eps)) > 15:
        raise DataError(f"{fn}: column {x.header!r} has values up to {np.nanmax(eps):g}, which as a fraction means "
                        "more than 1500 % strain; if it is in percent, name it 'strain (%)'", file=fn,
                        column=x.header, fix="strain (%)")
    notices.append(Notice(f"column {x.header!r} has no unit: read as a fraction (0.5 = 50 %)", "assumed-unit", fn))
    return eps


def _stretch(fn, x: Column, xv, gauge, compression: bool, notices, sign_notes) -> np.ndarray:
    if x.kind == "stretch":
        if x.unit and unit_dimension(x.unit) not in ("dimensionless", None):
            raise DataError(f"{fn}: column {x.header!r}: a stretch has no unit (λ = L/L₀); got unit {x.unit!r} — for "
                            "an extension in mm name the column 'extension (mm)'", file=fn, column=x.header)
        if x.unit and unit_dimension(x.unit) is None:
            raise DataError(f"{fn}: column {x.header!r}: unknown unit {x.unit!r}", file=fn, column=x.header)
        lam = xv.astype(float)
        if compression and np.any(lam > 1.0 + 1e-9):
            raise DataError(f"{fn}: column {x.header!r} holds stretches above 1 in a compression test; a compressed "
                            "specimen has λ = h/h₀ ≤ 1 (give the compressive strain instead if that is what it "
                            "holds)", file=fn, column=x.header)
        return lam
    if x.kind == "true_strain":
        try:
            conv = unit_converter(x.unit or "1", "dimensionless")
        except UnitError as e:
            raise DataError(f"{fn}: column {x.header!r}: {e}; true strain is a fraction or '%'", file=fn,
                            column=x.header) from None
        eps = conv(xv)
        if np.nanmax(np.abs(eps)) > 4:  # ln 50 ≈ 3.9
            raise DataError(f"{fn}: column {x.header!r} has values up to {np.nanmax(np.abs(eps)):g}; as a true "
                            "(logarithmic) strain that is beyond any rubber; if it is in percent, write '(%)'",
                            file=fn, column=x.header)
        if compression and _sign(fn, x, eps) > 0:
            eps = -eps
            sign_notes.append("strain")
        notices.append(Notice(f"column {x.header!r} is true (logarithmic) strain: converted with λ = exp(ε)",
                              "converted", fn))
        return np.exp(eps)
    if x.kind == "strain":
        eps = _strain(fn, x, xv, notices)
    else:  # extension: the caller has made sure the gauge length is there
        eps = column_converter(fn, x, "length", "'extension (mm)'")(xv) / gauge
    if compression and _sign(fn, x, eps) > 0:
        eps = -eps
        sign_notes.append("strain")
    return 1.0 + eps


def _nominal_stress(fn, y: Column, yv, lam, area, compression: bool, notices, sign_notes) -> np.ndarray:
    if y.kind in ("stress", "true_stress"):
        conv = column_converter(fn, y, "pressure", "'stress (MPa)', 'stress [psi]' or 'stress (N/mm²)'")
        stress = conv(yv)
    else:
        conv = column_converter(fn, y, "force", "'force (N)'")
        stress = conv(yv) / area
    if compression and _sign(fn, y, stress) > 0:
        stress = -stress
        sign_notes.append("stress")
    if y.kind == "true_stress":
        stress = stress / lam
        notices.append(Notice(f"column {y.header!r} is true stress: converted to nominal stress P = σ/λ "
                              "(incompressible rubber)", "converted", fn))
    return stress


def convert(fn: str, x: Column, y: Column, values: Any, idx: Any, numbers: Any, gauge: Any, area: Any,
            notices: list[Any], compression: bool = False) -> tuple[Any, Any, Any]:
    """Stretch and nominal stress (Pa) for rows ``idx``; rows missing a number are counted and dropped."""
    xv = values[idx, x.index]
    yv = values[idx, y.index]
    rows = np.asarray([numbers[i] for i in idx])
    if not np.isfinite(xv).any():
        raise DataError(f"{fn}: column {x.header!r} holds no numbers", file=fn, column=x.header)
    if not np.isfinite(yv).any():
        raise DataError(f"{fn}: column {y.header!r} holds no numbers", file=fn, column=y.header)
    both_missing = ~np.isfinite(xv) & ~np.isfinite(yv)
    one_missing = np.isfinite(xv) ^ np.isfinite(yv)
    if one_missing.any():
        notices.append(Notice(f"{int(one_missing.sum())} row(s) with a missing or non-numeric value in {x.header!r} "
                              f"or {y.header!r} skipped (line {fmt_rows(rows[one_missing].tolist())})", "cleanup", fn))
    keep = ~(both_missing | one_missing)
    xv, yv, rows = xv[keep], yv[keep], rows[keep]
    if xv.size == 0:
        raise DataError(f"{fn}: no row has numbers in both {x.header!r} and {y.header!r}", file=fn)

    sign_notes: list[str] = []
    lam = _stretch(fn, x, xv, gauge, compression, notices, sign_notes)
    bad = ~np.isfinite(lam) | (lam <= 0)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise DataError(f"{fn}, line {rows[i]}: stretch {lam[i]:g} (from {x.header!r} = {xv[i]:g}) is not positive; "
                        "a stretch must be above 0 (λ = 1 unstretched). Check the column's unit (fraction or %) and "
                        "sign, and the gauge length", file=fn, line=int(rows[i]), column=x.header)
    if np.max(lam) > MAX_PLAUSIBLE_STRETCH:
        i = int(np.argmax(lam))
        raise DataError(f"{fn}, line {rows[i]}: stretch {lam[i]:g} (from {x.header!r} = {xv[i]:g}) is beyond any "
                        f"rubber (above {MAX_PLAUSIBLE_STRETCH:g}); check the column's unit (% or fraction, mm or m) "
                        "and the gauge length", file=fn, line=int(rows[i]), column=x.header)
    stress = _nominal_stress(fn, y, yv, lam, area, compression, notices, sign_notes)
    if not np.all(np.isfinite(stress)):
        i = int(np.flatnonzero(~np.isfinite(stress))[0])
        raise DataError(f"{fn}, line {rows[i]}: stress value {yv[i]!r} in {y.header!r} is out of range; check the "
                        "number and its unit", file=fn, line=int(rows[i]), column=y.header)
    if compression:
        notices.append(_sign_notice(fn, x, y, sign_notes))
    return lam, stress, rows


def _sign_notice(fn, x: Column, y: Column, flipped: list[str]) -> Notice:
    parts = []
    if "strain" in flipped:
        parts.append(f"{x.header!r} read as compression written positive (λ = 1 − ε)")
    elif x.kind != "stretch":
        parts.append(f"{x.header!r} read as written with compression negative (λ = 1 + ε)")
    if "stress" in flipped:
        parts.append(f"{y.header!r} read as compression written positive and made negative (the core's convention)")
    else:
        parts.append(f"{y.header!r} read as already negative in compression (the core's convention)")
    return Notice("compression test: " + "; ".join(parts), "assumed-sign", fn)
