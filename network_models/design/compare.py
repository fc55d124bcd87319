"""Model honesty: the design window of every model that covers the targets' test modes, side by side, and the
range of strand density all of them agree on (if any)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import UserError
from ..models import MODELS, get_model
from ._scan import Interval, intersect
from .core import DesignResult, design
from .targets import parse_targets

__all__ = ["ModelWindows", "compare_models", "window_over"]


@dataclass
class ModelWindows:
    """The window per model side by side, and the range of ν every model agrees on (``agreed``)."""

    results: dict[str, DesignResult]
    agreed: list[Interval]
    left_out: dict[str, str]

    @property
    def sentence(self) -> str:
        ok = [n for n, r in self.results.items() if r.feasible]
        no = [n for n, r in self.results.items() if not r.feasible]
        if self.agreed:
            w = max(self.agreed, key=lambda iv: iv.hi / iv.lo)
            s = f"All {len(self.results)} models agree on ν {w.lo:.4g}–{w.hi:.4g} mol/m³"
        elif no:
            s = f"No common window: {', '.join(no)} find{'s' if len(no) == 1 else ''} no ν at all"
            common = None
            for n in ok:
                ws = self.results[n].windows
                common = list(ws) if common is None else intersect(common, ws)
            if common:
                w = max(common, key=lambda iv: iv.hi / iv.lo)
                s += f"; the other {len(ok)} models agree on ν {w.lo:.4g}–{w.hi:.4g} mol/m³"
            elif len(ok) > 1:
                s += f"; the windows of the other {len(ok)} models do not overlap either"
        else:
            s = f"Each of {', '.join(ok)} has a window, but they do not overlap: the choice of model decides"
        return s + "."

    def to_dict(self) -> dict:
        return {"models": {n: {"feasible": r.feasible,
                               "strand_density": None if r.window is None else {"low": r.window.lo,
                                                                                "high": r.window.hi},
                               "binding": r.to_dict()["binding"], "why": r.why} for n, r in self.results.items()},
                "agreed": [iv.to_list() for iv in self.agreed], "left_out": self.left_out,
                "sentence": self.sentence}


def compare_models(targets, models=None, **kw: Any) -> ModelWindows:
    """:func:`design` for every model that covers the targets' test modes (or the given ``models``)."""
    tl = parse_targets(targets)
    modes = {t.mode for t in tl if t.mode is not None}
    names = list(models) if models else list(MODELS)
    results, left_out = {}, {}
    for n in names:
        m = get_model(n)
        missing = [md.value for md in modes if not m.supports(md)]
        if missing:
            left_out[m.name] = f"not defined for {', '.join(missing)}"
            continue
        results[m.name] = design(tl, model=m.name, **kw)
    if not results:
        raise UserError("no model covers the test modes these targets need; drop a target or choose models.")
    agreed = None
    for r in results.values():
        agreed = list(r.windows) if agreed is None else intersect(agreed, r.windows)
    return ModelWindows(results, agreed or [], left_out)


def window_over(targets, axis: str = "filler", values=None, **kw: Any) -> list[dict]:
    """The refined ν window (:func:`~network_models.design.design`) at each value of a second design variable:
    ``axis`` "filler" (φ, default 0–0.3 in steps of 0.025) or "N" (decoupled, default 5–200, log).  Rows:
    ``{"filler"|"N": value, "feasible", "low", "high", "binding_low", "binding_high"}`` (ν in mol/m³)."""
    if axis not in ("filler", "N"):
        raise ValueError(f"the second design variable must be 'filler' or 'N', not {axis!r}")
    if values is None:
        values = np.linspace(0.0, 0.3, 13) if axis == "filler" else np.geomspace(5.0, 200.0, 12)
    kw.pop(axis, None)
    rows = []
    for v in values:
        kw_v: dict[str, Any] = {**kw, axis: float(v)}
        r = design(targets, **kw_v)
        w = r.window
        rows.append({axis: float(v), "feasible": r.feasible, "low": None if w is None else w.lo,
                     "high": None if w is None else w.hi,
                     "binding_low": " and ".join(r.binding["low"]) or None,
                     "binding_high": " and ".join(r.binding["high"]) or None})
    return rows
