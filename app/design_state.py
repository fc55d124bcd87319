"""State and logic of the Design tab (param only, no Panel): targets as text, the fixed settings, the last
design result, its feasibility map and the advice for today's compound.

Every number comes from :mod:`network_models.design` / :mod:`network_models.design.map`, so the tab, the
``netstretch design`` command and the report agree.
"""

from __future__ import annotations

import re

import param

from network_models import MODELS, get_polymer, polymers
from network_models.constants import ZERO_CELSIUS
from network_models.design import compare_models, design
from network_models.design.map import feasibility_map, nu_span

DEFAULT_TARGETS = ["M100=1.7..1.9MPa", "lock>=6", "G@100C>=0.4MPa"]


class DesignState(param.Parameterized):
    targets = param.List(default=list(DEFAULT_TARGETS), item_type=str, doc="targets in the design grammar")
    model = param.Selector(default="eight-chain", objects=list(MODELS), label="Model")
    polymer = param.Selector(default="NR", objects=list(polymers()), label="Polymer")
    T_C = param.Number(default=23.0, bounds=(-60.0, 250.0), label="Design temperature (°C)")
    filler = param.Number(default=0.0, bounds=(0.0, 0.45), label="Filler volume fraction φ")
    f = param.Number(default=4.0, bounds=(3.0, 30.0), label="Junction functionality f")
    N = param.Number(default=None, allow_None=True, bounds=(1.05, 1e4), label="N (blank: coupled, N = M_c/M_K)")
    entanglements = param.Boolean(default=True)
    axis = param.Selector(default="filler", objects=["filler", "N"], label="Map: ν against")
    compound_nu = param.Number(default=None, allow_None=True, bounds=(1e-3, 1e5),
                               label="Today's compound ν (mol/m³, same model)")
    compound_ci = param.String(default="", label="its 95 % interval (e.g. 235..265)")
    with_models = param.Boolean(default=False, label="Window of every model too")
    compounds = param.Dict(default={}, doc="measured compounds: name -> (ν, (lo, hi) | None) or a FitResult")
    compound_advice = param.Dict(default={}, doc="name -> (ν, interval, advice sentence) after compute()")
    result = param.Parameter(default=None)
    map = param.Parameter(default=None)
    advice = param.Parameter(default=None)
    models = param.Parameter(default=None)
    dose_ingredient = param.String(default="", label="Dose window in (ingredient, e.g. sulfur; blank: none)")
    dose_compounds = param.Callable(default=None, doc="() -> the session's core Compounds (with recipes)")
    dose = param.Parameter(default=None, doc="network_models.dose.dose_window's object, or {'error': sentence}")

    def sync_from(self, net_state):
        """Take polymer, temperature, f, filler, N coupling and entanglements from the explorer's state."""
        if net_state is None:
            return
        self.polymer = net_state.polymer
        self.T_C = float(net_state.T_C)
        self.f = float(net_state.f)
        self.filler = float(net_state.filler)
        self.N = None if net_state.couple_N else float(net_state.N_free)
        self.entanglements = bool(net_state.entanglements)

    def settings(self) -> dict:
        return dict(polymer=self.polymer, temperature=self.T_C + ZERO_CELSIUS, filler=self.filler, f=self.f,
                    N=self.N, entanglements=self.entanglements)

    def _ci(self):
        text = (self.compound_ci or "").strip()
        if not text:
            return None
        parts = re.split(r"\.\.|,|…|–", text)
        try:
            lo, hi = (float(x) for x in parts)
        except ValueError:
            raise ValueError(f"the interval {text!r} is not two numbers; write it like 235..265 (mol/m³)") from None
        return lo, hi

    def compute(self):
        """Window, map and advice for the current targets; ValueError with a sentence on bad input."""
        kw = self.settings()
        targets = [t for t in self.targets if t.strip()]
        res = design(targets, model=self.model, **kw)
        lo, hi = nu_span(res)
        dmap = feasibility_map(res.targets, axis=self.axis, model=self.model, nu_range=(max(lo, 1.0), hi),
                               n_nu=56, **kw)
        advice = None
        if self.compound_nu is not None:
            advice = res.advise(self.compound_nu, self._ci())
        models = compare_models(res.targets, **kw) if self.with_models else None
        per = {name: self._compound(res, src) for name, src in self.compounds.items()}
        dose = self._dose(res)
        with param.parameterized.batch_call_watchers(self):
            self.result, self.map, self.advice, self.models = res, dmap, advice, models
            self.compound_advice = per
            self.dose = dose
        return res

    def _dose(self, res):
        """The dose window of the session's ladder in ``dose_ingredient`` (issue #21), or None; a ladder that
        cannot be formed gives its sentence instead of a number."""
        ing = self.dose_ingredient.strip()
        if not ing or self.dose_compounds is None:
            return None
        from network_models.dose import dose_window

        try:
            return dose_window(res, self.dose_compounds(), ing)
        except ValueError as exc:
            return {"ingredient": ing, "error": str(exc)}

    @staticmethod
    def _compound(res, src):
        """(ν, interval, sentence) for one measured compound; a compound that cannot be read gets its reason."""
        from network_models.design.advice import compound_from_fit

        try:
            nu, ci = compound_from_fit(res, src) if hasattr(src, "params") else (float(src[0]), src[1])
            return nu, ci, res.advise(nu, ci).sentence
        except (ValueError, KeyError, TypeError, IndexError) as exc:
            return None, None, f"cannot be placed: {exc}"

    def y_of(self, nu: float, net_state=None) -> float:
        """The map's second coordinate for a network of strand density ν (filler φ, or N)."""
        if self.axis == "filler":
            return float(net_state.filler) if net_state is not None else self.filler
        N = (None if net_state.couple_N else float(net_state.N_free)) if net_state is not None else self.N
        if N is not None:
            return N
        p = get_polymer(self.polymer)
        return p.density / (nu * p.kuhn_molar_mass)

    def pick_changes(self, nu: float, y: float) -> dict:
        """Explorer settings for a clicked map point (ν, y): ν and φ, or ν with N freed from ν."""
        if not (nu > 0 and y >= 0):
            raise ValueError("that point is outside the map")
        if self.axis == "filler":
            return {"nu": float(nu), "filler": float(min(max(y, 0.0), 0.45))}
        return {"nu": float(nu), "couple_N": False, "N_free": float(max(y, 1.05))}
