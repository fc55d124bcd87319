"""Tables behind the Compare tab's specimen views — pandas only, no Panel or HoloViews.

A comparison fits every specimen alone (``CompoundResult.specimens``); these frames lay the specimens out
for plotting, one row per specimen (``specimen_frame``) and one row per measured point with the specimen's
own fit and residual there (``point_frame``).  Every row carries ``key`` = "compound · specimen", the
one name the linked views select by.  Stress in MPa and strand density in mol/m³ (the Compare tab's units).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from network_models.report import PALETTE

#: per-specimen quantities drawn, with their axis label (value column = the key)
QUANTITIES = {
    "nu": "strand density ν (mol/m³, headline basis)",
    "G0": "small-strain shear modulus G₀ (MPa)",
    "lock": "uniaxial locking stretch λ_lock (–)",
}
#: SI → display scale per quantity (G₀ Pa → MPa)
_SCALE = {"nu": 1.0, "G0": 1e-6, "lock": 1.0}
#: specimen quantity name in the core → column here
_SOURCE = {"nu": "strand_density", "G0": "G0", "lock": "lock"}

SPECIMEN_COLUMNS = ("key", "compound", "specimen", "status", "colour", *QUANTITIES)
POINT_COLUMNS = ("key", "compound", "specimen", "mode", "lam", "P_data", "P_model", "residual", "colour")


def specimen_key(compound: str, specimen: str) -> str:
    return f"{compound} · {specimen}"


def compound_colours(cmp) -> dict[str, str]:
    """One colour per compound, in the comparison's order (the report's palette)."""
    return {r.name: PALETTE[i % len(PALETTE)] for i, r in enumerate(cmp.results)}


def specimen_status(spec) -> str:
    """How the specimen enters the statistics, in words."""
    if spec.error:
        return "fit failed"
    if spec.excluded:
        return "excluded"
    if not spec.counted:
        return "not counted (other mode)"
    if spec.outlier:
        return "outlier (kept)"
    return "counted"


def _num(x, scale=1.0):
    return float(x) * scale if x is not None and math.isfinite(float(x)) else math.nan


def specimen_frame(cmp) -> pd.DataFrame:
    """One row per specimen of every compound that was fitted: its quantities and its status."""
    colours = compound_colours(cmp)
    rows = []
    for r in cmp.results:
        for spec in r.specimens:
            row = {"key": specimen_key(r.name, spec.name), "compound": r.name, "specimen": spec.name,
                   "status": specimen_status(spec), "colour": colours[r.name]}
            for q, src in _SOURCE.items():
                row[q] = _num(spec.values.get(src), _SCALE[q])
            rows.append(row)
    return pd.DataFrame(rows, columns=list(SPECIMEN_COLUMNS))


def point_frame(cmp) -> pd.DataFrame:
    """One row per measured point of every fitted specimen: the data, the specimen's own fit there and the
    residual (model − data, MPa).  Points past the fitted model's locking stretch have no model value and
    are left out of the residuals (they are listed with NaN model values only in ``P_model``)."""
    model = cmp.model_obj
    colours = compound_colours(cmp)
    parts = []
    for r in cmp.results:
        for spec in r.specimens:
            if not spec.params:
                continue
            for c in spec.curves:
                if not model.supports(c.mode):
                    continue
                lam = np.asarray(c.stretch, dtype=float)
                pm = np.asarray(model.nominal_stress(c.mode, lam, spec.params), dtype=float)
                pdata = np.asarray(c.stress, dtype=float)
                parts.append(pd.DataFrame({
                    "key": specimen_key(r.name, spec.name), "compound": r.name, "specimen": spec.name,
                    "mode": c.mode.value, "lam": lam, "P_data": pdata * 1e-6, "P_model": pm * 1e-6,
                    "residual": (pm - pdata) * 1e-6, "colour": colours[r.name]}))
    if not parts:
        return pd.DataFrame(columns=list(POINT_COLUMNS))
    return pd.concat(parts, ignore_index=True)[list(POINT_COLUMNS)]


__all__ = ["POINT_COLUMNS", "QUANTITIES", "SPECIMEN_COLUMNS", "compound_colours", "point_frame", "specimen_frame",
           "specimen_key", "specimen_status"]
