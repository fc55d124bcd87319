"""From targets to a network: which strand density ν meets a specification, and what to change.

    >>> from network_models.design import design
    >>> r = design(["M100=1.7..1.9MPa", "lock>=6", "G@100C>=0.4MPa"], polymer="NR", temperature="23C",
    ...            model="eight-chain")
    >>> r.feasible, r.window.lo, r.window.hi, r.binding        # mol/m³; which target sets each edge
    >>> r.advise(nu=250.0, ci=(235.0, 265.0)).sentence           # what to change in today's compound

How it works.  The polymer, the design temperature, the model, the filler volume fraction φ, the junction
functionality f and (when it is not coupled to ν through the polymer, N = M_c/M_K) the Kuhn number N are
fixed; the strand density ν is the design variable.  For each ν the network is built with
:class:`~network_models.network.Network` and the model's parameters come from ``Network.model_params``, so
the window means exactly what the explorer shows for that ν.  Every target is evaluated on a log grid of ν
(``NU_RANGE``), without assuming it is monotone; each change between "met" and "not met" is refined with
``brentq`` (a point where the quantity cannot be evaluated — the network locks before the stretch the target
needs, or N would fall to 1 — counts as "not met" and its reason is kept).  The sets of ν of all targets are
intersected; the edges of the window name the target whose own edge they are.  When no ν meets all targets,
the pairs of targets whose sets do not overlap are named and the closest compromise minimises the largest
relative miss over ν.

ν is the **strand** density (elastically active strands per m³ of dry rubber); every window is also given as
M_c = ρ/ν and as the junction (crosslink) density μ_j = 2ν/f.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Any

from ..constants import CAUTION, LAB_TEMPERATURE
from ..errors import Notice
from ..materials import temperature_notices
from ..network import get_polymer
from ..swelling import CHI_BAND
from . import _scan
from ._scan import DesignSetup, Interval, TargetOutcome
from .advice import advise
from .map import result_html
from .targets import Target, parse_targets

__all__ = ["CAUTION", "DesignResult", "design"]



# ------------------------------------------------------------------------------------------------
@dataclass(kw_only=True)
class DesignResult:
    """The answer: is there a window of ν meeting every target, where, which targets bind, and if not,
    which targets conflict and the closest compromise.  ``to_dict()`` is the JSON contract."""

    setup: DesignSetup
    targets: list[Target]
    outcomes: list[TargetOutcome]
    windows: list[Interval]
    window: Interval | None
    binding: dict
    conflicts: list[tuple[str, str]]
    unreachable: list[str]
    compromise: dict | None
    why: str
    notices: list[Notice]
    scan: tuple[float, float]
    _ev: _scan.Evaluator | None = field(default=None, repr=False)

    @property
    def feasible(self) -> bool:
        return self.window is not None

    # ----- the window in other units ---------------------------------------------------------------
    @property
    def density(self) -> float:
        return get_polymer(self.setup.polymer).density

    def Mc_window(self) -> tuple[float, float] | None:
        """M_c = ρ/ν at the window's edges (kg/mol), low to high (the high-ν edge gives the low M_c)."""
        w = self.window
        return None if w is None else (self.density / w.hi, self.density / w.lo)

    def junction_window(self) -> tuple[float, float] | None:
        """Junction (crosslink) density μ_j = 2ν/f at the window's edges, mol/m³."""
        w = self.window
        return None if w is None else (2.0 * w.lo / self.setup.f, 2.0 * w.hi / self.setup.f)

    def values_at(self, nu: float) -> dict[str, float]:
        """Every target's quantity for strand density ν (SI; NaN where it cannot be evaluated)."""
        ev = self._ev or _scan.Evaluator(self.setup)
        return {t.text: ev.value(t, float(nu)) for t in self.targets}

    def status_at(self, nu: float) -> dict[str, bool]:
        return {t.text: t.margin(v) >= 0 for t, v in zip(self.targets, self.values_at(nu).values(), strict=True)}

    # ----- from a measured compound -------------------------------------------------------------------
    def advise(self, nu: float, ci: tuple[float, float] | None = None) -> Any:
        """What change brings a compound of strand density ``nu`` (95 % interval ``ci``) into the window
        (:func:`network_models.design.advice.advise`)."""
        return advise(self, nu, ci)

    # ----- output --------------------------------------------------------------------------------------
    def to_dict(self) -> dict:
        w = self.window
        doc: dict[str, Any] = {
            "feasible": self.feasible,
            "strand_density": None if w is None else {
                "low": w.lo, "high": w.hi, "unit": "mol/m³", "low_is_scan_limit": w.lo_open,
                "high_is_scan_limit": w.hi_open,
                "meaning": "elastically active strands ν per m³ of dry rubber"},
            "binding": {"low": " and ".join(self.binding["low"]) or None,
                        "high": " and ".join(self.binding["high"]) or None},
            "why": self.why,
        }
        if w is not None:
            mc, mj = self.Mc_window(), self.junction_window()
            assert mc is not None and mj is not None  # a window gives both
            doc["Mc"] = {"low": mc[0], "high": mc[1], "unit": "kg/mol", "meaning": "strand molar mass ρ/ν"}
            doc["junction_density"] = {"low": mj[0], "high": mj[1], "unit": "mol/m³", "functionality": self.setup.f,
                                       "meaning": "crosslink junctions μ_j = 2ν/f"}
            if self.setup.N is None:
                MK = get_polymer(self.setup.polymer).kuhn_molar_mass
                doc["N"] = {"low": mc[0] / MK, "high": mc[1] / MK, "meaning": "Kuhn segments per strand M_c/M_K"}
        doc.update({
            "windows": [iv.to_list() for iv in self.windows],
            "targets": [o.to_dict() for o in self.outcomes],
            "conflicts": [list(p) for p in self.conflicts], "unreachable": list(self.unreachable),
            "compromise": self.compromise, "setup": self.setup.to_dict(),
            "scan": {"strand_density": list(self.scan), "unit": "mol/m³"},
            "notices": [n.to_dict() if isinstance(n, Notice) else str(n) for n in self.notices],
            "caution": CAUTION,
        })
        return doc

    def to_html(self, map: str = "auto", current: float | None = None) -> str:
        """A self-contained HTML section (inline SVG: ν strip per target and, unless ``map=None``, the
        feasibility map over ν and filler fraction, or the given :class:`~network_models.design.map.DesignMap`)
        for the review report; ``current`` marks a compound's ν."""
        return result_html(self, map, current)




def _unreachable_text(o: TargetOutcome) -> str:
    t = o.target
    s = f"{t.text} cannot be met by any ν with this model"
    if o.value_range is not None:
        s += f" ({t.name} spans {t.fmt(o.value_range[0])} to {t.fmt(o.value_range[1])} over the scan"
        s += f"; {o.reasons[0]})" if o.reasons else ")"
    elif o.reasons:
        s += f" ({o.reasons[0]})"
    return s


def _why(setup, outcomes, window, windows, conflicts, unreachable, compromise, scan, binding) -> str:
    n = len(outcomes)
    if window is not None:
        w = window
        rho = get_polymer(setup.polymer).density
        bl = _scan.binding(outcomes, w.lo, "low", True) if not w.lo_open else []
        bh = _scan.binding(outcomes, w.hi, "high", True) if not w.hi_open else []
        low = (f"{' and '.join(bl)} sets the low edge" if bl
               else f"no target limits ν from below (scan starts at {scan[0]:g} mol/m³)")
        high = (f"{' and '.join(bh)} sets the high edge" if bh
                else f"no target limits ν from above (scan ends at {scan[1]:.4g} mol/m³)")
        if bl and bl == bh:
            low, high = f"{' and '.join(bl)} sets both edges", ""
        more = f" (one of {len(windows)} separate ranges, the widest)" if len(windows) > 1 else ""
        what = f"all {n} targets" if n > 1 else "the target"
        return (f"ν {w.lo:.4g}–{w.hi:.4g} mol/m³{more} meets {what} with the "
                f"{setup.describe()} (M_c {1000 * rho / w.hi:.4g}–{1000 * rho / w.lo:.4g} g/mol; junction density "
                f"μ_j = 2ν/f {2 * w.lo / setup.f:.4g}–{2 * w.hi / setup.f:.4g} mol/m³): {low}"
                + (f", {high}." if high else "."))
    by = {o.target.text: o for o in outcomes}
    parts = [_unreachable_text(by[u]) for u in unreachable]
    for a, b in conflicts:
        parts.append(f"{a} (needs {by[a].needs()}) and {b} (needs {by[b].needs()}) conflict")
    if not parts:
        parts.append("no two targets conflict alone, but all of them together leave no common ν")
    what = f"all {n} targets" if n > 1 else "the target"
    s = f"No strand density meets {what} with the {setup.describe()}: " + "; ".join(parts)
    if compromise is not None:
        misses = sorted(((v, k) for k, v in compromise["misses"].items() if v > 0), reverse=True)[:3]
        miss_txt = ", ".join(("cannot read " + k) if not math.isfinite(v) else f"{k} by {100 * v:.3g} %"
                             for v, k in misses) or "nothing (it meets every target at that single point)"
        s += (f". The closest compromise (smallest largest relative miss), ν = {compromise['strand_density']:.4g} "
              f"mol/m³, misses {miss_txt}")
    return s + "."


def _extra_notices(ev: _scan.Evaluator, setup: DesignSetup, outcomes: list[TargetOutcome], grid) -> list[Notice]:
    notes = list(ev.notices)
    poly = get_polymer(setup.polymer)
    if poly.status == "memory":
        notes.append(Notice(f"the chain constants of {poly.key} (density, M_K, plateau modulus) are recalled, not "
                            "re-read (polymers.toml): check them before a design decision rests on the window",
                            "memory-values", poly.key))
    notes.extend(temperature_notices(poly, setup.T, "design temperature"))
    for o in outcomes:  # targets read at their own temperature (G@100C …)
        if o.target.temperature is not None:
            notes.extend(temperature_notices(poly, o.target.temperature, f"target {o.target.text}"))
    if setup.filler > 0:
        notes.append(Notice(f"filler φ = {setup.filler:g} enters through the network's filler handling "
                            "(Guth–Gold amplification): well-dispersed, weakly reinforcing filler only", "filler"))
    hot = [o.target.text for o in outcomes if o.target.temperature is not None]
    if hot:
        notes.append(Notice(f"{', '.join(hot)}: the same network at another temperature, its moduli following "
                            "absolute temperature (entropic elasticity); many filled compounds soften with "
                            "temperature instead, so confirm with a test at that temperature", "temperature"))
    kinds = {o.target.kind for o in outcomes}
    if kinds & {"lock", "reserve"}:
        notes.append(Notice("the locking stretch is an upper bound on the elongation at break: real compounds break "
                            "earlier (flaws, crystallisation, filler)", "lock-bound"))
    for o in outcomes:
        t = o.target
        if t.kind != "Q":
            continue
        chi, status = ev.chi(t)
        notes.append(Notice(f"{t.text}: affine Flory–Rehner with χ = {chi:g} [{status}]"
                            + (" and the Kraus correction (carbon black, c = 1.17 [memory])" if setup.filler else ""),
                            "swelling", t.text))
        edges = []
        for dchi in (-CHI_BAND, CHI_BAND):
            tb = replace(t, chi=chi + dchi, text=f"{t.text} (χ {chi + dchi:+.2f})")
            ob = _scan.outcome(ev, tb, grid)
            edges += [e for iv in ob.intervals for e, op in ((iv.lo, iv.lo_open), (iv.hi, iv.hi_open)) if not op]
        if edges:
            notes.append(Notice(f"with χ ± {CHI_BAND:g} the ν edge of {t.text} moves within {min(edges):.4g}–"
                                f"{max(edges):.4g} mol/m³", "chi-band", t.text))
    return notes


def design(targets, *, polymer: str = "NR", temperature=LAB_TEMPERATURE, model: str = "eight-chain",
           filler: float | None = None, f: float = 4.0, N: float | None = None,
           entanglements: bool = True) -> DesignResult:
    """The window of strand density ν that meets every target (strings in the target grammar of
    :mod:`network_models.design.targets`, or :class:`Target`).  ``temperature`` in K or as text ('23C');
    ``N`` None couples N to ν (N = M_c/M_K), a number fixes it.  Raises :class:`UserError` (a ValueError)
    with a sentence for bad targets or settings; an infeasible set is a result, not an error."""
    setup = _scan.setup(polymer, temperature, model, filler, f, N, entanglements)
    tl = parse_targets(targets)
    _scan.check_modes(setup, tl)
    return _design(setup, tl)


def _design(setup: DesignSetup, tl: list[Target]) -> DesignResult:
    ev = _scan.Evaluator(setup)
    grid = _scan.scan_grid(setup)
    outcomes = [_scan.outcome(ev, t, grid) for t in tl]
    windows = [Interval(lo=float(grid[0]), hi=float(grid[-1]), lo_open=True, hi_open=True)]
    for o in outcomes:
        windows = _scan.intersect(windows, o.intervals)
    window = max(windows, key=lambda iv: math.log(iv.hi / iv.lo)) if windows else None
    binding: dict[str, list[str]] = {"low": [], "high": []}
    conflicts: list[tuple[str, str]] = []
    unreachable: list[str] = []
    compromise: dict | None = None
    if window is not None:
        binding = {"low": [] if window.lo_open else _scan.binding(outcomes, window.lo, "low"),
                   "high": [] if window.hi_open else _scan.binding(outcomes, window.hi, "high")}
        for o in outcomes:
            vals = ev.value(o.target, window.lo), ev.value(o.target, window.hi)
            o.at_edges = {"low": vals[0], "high": vals[1]}
    else:
        unreachable = [o.target.text for o in outcomes if not o.reachable]
        live = [o for o in outcomes if o.reachable]
        for i, a in enumerate(live):
            for b in live[i + 1:]:
                if not _scan.intersect(a.intervals, b.intervals):
                    conflicts.append((a.target.text, b.target.text))
        compromise = _scan.compromise(ev, tl, grid)
    scan = (float(grid[0]), float(grid[-1]))
    why = _why(setup, outcomes, window, windows, conflicts, unreachable, compromise, scan, binding)
    notices = _extra_notices(ev, setup, outcomes, grid)
    if len(windows) > 1:
        notices.append(Notice(f"the targets are met in {len(windows)} separate ranges of ν: "
                              + ", ".join(f"{iv.lo:.4g}–{iv.hi:.4g}" for iv in windows)
                              + " mol/m³; the widest is reported as the window", "several-windows"))
    return DesignResult(setup=setup, targets=tl, outcomes=outcomes, windows=windows, window=window, binding=binding,
                        conflicts=conflicts, unreachable=unreachable, compromise=compromise, why=why,
                        notices=notices, scan=scan, _ev=ev)
