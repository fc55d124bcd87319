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

import numpy as np
from scipy.optimize import brentq, minimize_scalar

from .constants import CAUTION, LAB_TEMPERATURE, ZERO_CELSIUS
from .design_targets import Target, TargetError, parse_targets
from .errors import Notice, UserError
from .models import get_model
from .network import Network, get_polymer, lock_from_N
from .swelling import CHI_BAND, KRAUS_C_CARBON_BLACK, chi_values, default_chi, get_solvent, swollen_fraction

__all__ = ["NU_RANGE", "CAUTION", "DesignResult", "DesignSetup", "Interval",
           "Target", "TargetError", "TargetOutcome", "compare_models", "design", "parse_targets"]

#: strand densities scanned, mol/m³ (M_c from ~450 kg/mol down to ~45 g/mol for NR): wider than any rubber
NU_RANGE = (2.0, 2.0e4)
_GRID = 97  # log grid points over NU_RANGE (about 24 per decade); edges are refined with brentq



# ------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class DesignSetup:
    """What the user fixes: polymer, design temperature (K), model, filler volume fraction, f, N (None =
    coupled to ν through the polymer, N = M_c/M_K) and whether the entanglement contribution is on."""

    polymer: str = "NR"
    T: float = LAB_TEMPERATURE
    model: str = "eight-chain"
    filler: float = 0.0
    f: float = 4.0
    N: float | None = None
    entanglements: bool = True

    def network(self, nu: float, T: float | None = None) -> Network:
        return Network(polymer=self.polymer, nu=float(nu), T=self.T if T is None else T, f=self.f,
                       filler_fraction=self.filler, N=self.N, entanglements=self.entanglements)

    @property
    def nu_range(self) -> tuple[float, float]:
        lo, hi = NU_RANGE
        if self.N is None:  # N = ρ/(ν M_K) must stay above 1
            p = get_polymer(self.polymer)
            hi = min(hi, p.density / p.kuhn_molar_mass / 1.02)
        return lo, hi

    def describe(self) -> str:
        n = "N = M_c/M_K (coupled to ν)" if self.N is None else f"N = {self.N:g} (set)"
        return (f"{get_model(self.model).title} model, {self.polymer} at {self.T - ZERO_CELSIUS:.4g} °C, "
                f"filler φ = {self.filler:g}, f = {self.f:g}, {n}"
                + ("" if self.entanglements else ", entanglements off"))

    def to_dict(self) -> dict:
        return {"polymer": self.polymer, "temperature_K": self.T, "model": self.model,
                "filler_volume_fraction": self.filler, "functionality": self.f,
                "N": self.N, "N_coupled": self.N is None, "entanglements": self.entanglements}


@dataclass
class Interval:
    """A range of ν (mol/m³).  ``lo_open``/``hi_open``: the edge is the end of the scanned range, not a target."""

    lo: float
    hi: float
    lo_open: bool = False
    hi_open: bool = False
    lo_reason: str = ""  # set when the edge is where the quantity stops being computable
    hi_reason: str = ""

    def contains(self, nu: float) -> bool:
        return self.lo <= nu <= self.hi

    def to_list(self) -> list:
        return [self.lo, self.hi]


def _nu_text(iv: Interval) -> str:
    if iv.lo_open and iv.hi_open:
        return "any ν in the scanned range"
    if iv.lo_open:
        return f"ν ≤ {iv.hi:.4g} mol/m³"
    if iv.hi_open:
        return f"ν ≥ {iv.lo:.4g} mol/m³"
    return f"ν {iv.lo:.4g}–{iv.hi:.4g} mol/m³"


# ------------------------------------------------------------------------------------------------
class _Evaluator:
    """Target quantities for one setup, with the network's model parameters cached per (ν, T)."""

    def __init__(self, setup: DesignSetup):
        self.setup = setup
        self.model = get_model(setup.model)
        self._params: dict = {}
        self.reasons: dict[str, list[str]] = {}
        self.notices: list[Notice] = []
        self._chi: dict = {}

    def _note(self, t: Target, text: str):
        r = self.reasons.setdefault(t.text, [])
        if text not in r:
            r.append(text)

    def _net_params(self, nu, T):
        key = (nu, T)
        if key not in self._params:
            try:
                net = self.setup.network(nu, T)
                p = net.model_params(self.model)
                G0 = self.model.small_strain_modulus(**p)
                if not G0 > 0:  # e.g. a lock parameter mapped from a very small N: not a usable network
                    raise ValueError(f"the {self.model.title} model gives no positive small-strain modulus for "
                                     f"N = {net.N:.3g} (outside its stable range)")
                self._params[key] = (net, p)
            except ValueError as exc:
                self._params[key] = exc
        return self._params[key]

    def chi(self, t: Target) -> tuple[float, str]:
        if t.chi is not None:
            return t.chi, "given"
        key = t.solvent
        if key not in self._chi:
            sol = get_solvent(t.solvent)
            rows = chi_values(self.setup.polymer, sol.key)
            if not rows:
                raise TargetError(f"target {t.text!r}: the solvent table has no χ for {self.setup.polymer}–{sol.key}; "
                                  f"give it in the target, e.g. 'Q({sol.key},chi=0.40)<=3.5'.", kind="design-target")
            row = default_chi(self.setup.polymer, sol.key)  # the swelling module's one rule (docs/methods.md §chi)
            self._chi[key] = (row.chi, row.status)
        return self._chi[key]

    def value(self, t: Target, nu: float) -> float:
        """The target's quantity for strand density ν (SI); NaN where it cannot be evaluated (reason kept)."""
        if t.kind == "Q":
            return self._swelling(t, nu)
        if t.kind == "nu":  # a strand-density target bounds ν itself
            return float(nu)
        got = self._net_params(nu, t.temperature if t.temperature is not None else self.setup.T)
        if isinstance(got, Exception):
            self._note(t, str(got))
            return math.nan
        net, p = got
        m = self.model
        if t.kind in ("G", "E"):
            G = float(m.small_strain_modulus(**p))
            return 3.0 * G if t.kind == "E" else G
        if t.kind == "stress":
            v = float(m.nominal_stress(t.mode, np.array([t.stretch]), p)[0])
            if not math.isfinite(v):
                self._note(t, f"the network locks before λ = {t.stretch:g} in {t.mode.value} tension")
            return v
        lock = self._lock(t, net, p)
        return lock if t.kind == "lock" else lock - t.stretch

    def _lock(self, t, net, p) -> float:
        lim = self.model.stretch_limit(t.mode, p)
        if lim is None:
            text = (f"the {self.model.title} model has no finite extensibility: {t.name} uses the network's own "
                    "lock from N (chains fully stretched when I₁ = 3N, the eight-chain relation)")
            if text not in self.notices:
                self.notices.append(Notice(text, "lock-from-N", t.text))
            return float(lock_from_N(net.N, t.mode))
        return float(lim)

    def _swelling(self, t: Target, nu: float) -> float:
        chi, _status = self.chi(t)
        V1 = get_solvent(t.solvent).molar_volume
        try:
            phi0 = swollen_fraction(nu, chi, V1, f=self.setup.f, network="affine")
        except ValueError as exc:
            self._note(t, str(exc))
            return math.nan
        phi = self.setup.filler
        if phi > 0:  # Kraus 1963 [memory], forward: V_rf = V_r0/(1 − m·φ/(1 − φ))
            c = KRAUS_C_CARBON_BLACK
            mk = 3.0 * c * (1.0 - phi0 ** (1.0 / 3.0)) + phi0 - 1.0
            den = 1.0 - mk * phi / (1.0 - phi)
            if not den > phi0:
                self._note(t, "the Kraus correction gives no swelling for this filler fraction")
                return math.nan
            phi0 = phi0 / den
        return 1.0 / phi0


# ------------------------------------------------------------------------------------------------
@dataclass
class TargetOutcome:
    """Where one target is met: its sets of ν, the range of values it takes over the scan, reasons for
    points where it cannot be evaluated."""

    target: Target
    intervals: list[Interval]
    value_range: tuple[float, float] | None
    reasons: list[str] = field(default_factory=list)
    at_edges: dict = field(default_factory=dict)  # "low"/"high" -> value of the quantity at the window edge
    note: str = ""

    @property
    def reachable(self) -> bool:
        return bool(self.intervals)

    def needs(self) -> str:
        if not self.intervals:
            return "no ν in the scanned range"
        return " or ".join(_nu_text(iv) for iv in self.intervals)

    def to_dict(self) -> dict:
        t = self.target
        return {**t.to_dict(), "met_for": [iv.to_list() for iv in self.intervals], "needs": self.needs(),
                "value_range": None if self.value_range is None else list(self.value_range),
                "at_window_edges": self.at_edges, "reasons": list(self.reasons), "note": self.note}


def _grid(setup: DesignSetup, n: int = _GRID) -> np.ndarray:
    lo, hi = setup.nu_range
    return np.geomspace(lo, hi, n)


def _refine(ev: _Evaluator, t: Target, x_in: float, x_out: float) -> float:
    """The ν between a met point and a not-met point (log scale) where the target's margin changes sign;
    an unevaluable point counts as not met (margin −1)."""

    def h(x):
        m = t.margin(ev.value(t, math.exp(x)))
        return m if math.isfinite(m) else -1.0

    a, b = math.log(x_in), math.log(x_out)
    if h(a) == 0.0:
        return x_in
    return math.exp(brentq(h, a, b, xtol=1e-12, rtol=1e-12, maxiter=200))


def _reason_at(ev: _Evaluator, t: Target, nu: float) -> str:
    before = list(ev.reasons.get(t.text, []))
    ev.reasons[t.text] = []
    ev.value(t, nu)
    got = ev.reasons.get(t.text, [])
    ev.reasons[t.text] = before + [r for r in got if r not in before]
    return got[0] if got else ""


def _straddled(ev: _Evaluator, t: Target, grid: np.ndarray, vals: np.ndarray):
    """A narrow two-sided target can lie between two grid points (one value below it, the next above):
    add the point where the quantity crosses the middle of the interval, so that no window is stepped over."""
    if t.lo is None or t.hi is None:
        return grid, vals
    mid = 0.5 * (t.lo + t.hi)
    extra = []
    for k in range(len(grid) - 1):
        a, b = vals[k], vals[k + 1]
        if math.isfinite(a) and math.isfinite(b) and (a - t.hi) * (b - t.lo) < 0 and (a - t.lo) * (b - t.hi) < 0:

            def h(x):
                v = ev.value(t, math.exp(x))
                return (v - mid) if math.isfinite(v) else math.nan

            try:
                x = brentq(h, math.log(grid[k]), math.log(grid[k + 1]), xtol=1e-12)
            except ValueError:
                continue
            extra.append(math.exp(x))
    if not extra:
        return grid, vals
    g = np.sort(np.concatenate([grid, extra]))
    return g, np.array([ev.value(t, nu) for nu in g])


def _outcome(ev: _Evaluator, t: Target, grid: np.ndarray) -> TargetOutcome:
    vals = np.array([ev.value(t, nu) for nu in grid])
    grid, vals = _straddled(ev, t, grid, vals)
    inside = np.array([t.margin(v) >= 0 for v in vals])
    n = len(grid)
    intervals = []
    k = 0
    while k < n:
        if not inside[k]:
            k += 1
            continue
        j = k
        while j + 1 < n and inside[j + 1]:
            j += 1
        lo = grid[0] if k == 0 else _refine(ev, t, grid[k], grid[k - 1])
        hi = grid[-1] if j == n - 1 else _refine(ev, t, grid[j], grid[j + 1])
        iv = Interval(float(lo), float(hi), k == 0, j == n - 1)
        if k > 0 and not math.isfinite(vals[k - 1]):
            iv.lo_reason = _reason_at(ev, t, grid[k - 1])
        if j < n - 1 and not math.isfinite(vals[j + 1]):
            iv.hi_reason = _reason_at(ev, t, grid[j + 1])
        intervals.append(iv)
        k = j + 1
    finite = vals[np.isfinite(vals)]
    vr = (float(finite.min()), float(finite.max())) if finite.size else None
    return TargetOutcome(t, intervals, vr, list(ev.reasons.get(t.text, [])))


def _intersect(a: list[Interval], b: list[Interval]) -> list[Interval]:
    out = []
    for x in a:
        for y in b:
            lo, hi = max(x.lo, y.lo), min(x.hi, y.hi)
            if lo < hi:
                lo_open = (x.lo_open if x.lo >= y.lo else True) and (y.lo_open if y.lo >= x.lo else True)
                hi_open = (x.hi_open if x.hi <= y.hi else True) and (y.hi_open if y.hi <= x.hi else True)
                out.append(Interval(lo, hi, lo_open, hi_open))
    return sorted(out, key=lambda iv: iv.lo)


def _binding(outcomes: list[TargetOutcome], nu: float, side: str, reasons: bool = False) -> list[str]:
    """Targets whose own edge is the window's ``side`` edge at ν (with why, when ``reasons``)."""
    out = []
    for o in outcomes:
        for iv in o.intervals:
            edge, open_, why = (iv.lo, iv.lo_open, iv.lo_reason) if side == "low" else (iv.hi, iv.hi_open,
                                                                                        iv.hi_reason)
            if not open_ and math.isclose(edge, nu, rel_tol=1e-9):
                beyond = "below" if side == "low" else "above"
                out.append(o.target.text + (f" ({why} {beyond} it)" if reasons and why else ""))
                break
    return out


def _compromise(ev: _Evaluator, targets: list[Target], grid: np.ndarray) -> dict | None:
    """ν minimising the largest relative miss over all targets (grid, then a bounded scalar search)."""

    def worst(x):
        nu = math.exp(x)
        return max(t.miss(ev.value(t, nu)) for t in targets)

    xs = np.log(grid)
    ws = np.array([worst(x) for x in xs])
    if not np.isfinite(ws).any():
        return None
    k = int(np.nanargmin(np.where(np.isfinite(ws), ws, np.inf)))
    lo, hi = xs[max(k - 1, 0)], xs[min(k + 1, len(xs) - 1)]
    best_x, best_w = xs[k], ws[k]
    if hi > lo:
        r = minimize_scalar(lambda x: min(worst(x), 1e300), bounds=(lo, hi), method="bounded",
                            options={"xatol": 1e-7})
        if r.fun < best_w:
            best_x, best_w = float(r.x), float(r.fun)
    nu = math.exp(best_x)
    misses = {t.text: t.miss(ev.value(t, nu)) for t in targets}
    return {"strand_density": nu, "largest_miss": best_w, "misses": misses}


# ------------------------------------------------------------------------------------------------
@dataclass
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
    _ev: _Evaluator | None = field(default=None, repr=False)

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
        ev = self._ev or _Evaluator(self.setup)
        return {t.text: ev.value(t, float(nu)) for t in self.targets}

    def status_at(self, nu: float) -> dict[str, bool]:
        return {t.text: t.margin(v) >= 0 for t, v in zip(self.targets, self.values_at(nu).values(), strict=True)}

    # ----- from a measured compound -------------------------------------------------------------------
    def advise(self, nu: float, ci: tuple[float, float] | None = None):
        """What change brings a compound of strand density ``nu`` (95 % interval ``ci``) into the window
        (:func:`network_models.design_advice.advise`)."""
        from .design_advice import advise

        return advise(self, nu, ci)

    # ----- output --------------------------------------------------------------------------------------
    def to_dict(self) -> dict:
        w = self.window
        doc = {
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

    def to_html(self, map="auto", current: float | None = None) -> str:
        """A self-contained HTML section (inline SVG: ν strip per target and, unless ``map=None``, the
        feasibility map over ν and filler fraction, or the given :class:`~network_models.design_map.DesignMap`)
        for the review report; ``current`` marks a compound's ν."""
        from .design_map import result_html

        return result_html(self, map, current)


# ------------------------------------------------------------------------------------------------
def _setup(polymer, temperature, model, filler, f, N, entanglements) -> DesignSetup:
    if isinstance(temperature, str):
        from .units import parse_quantity

        try:
            T = parse_quantity(temperature, "temperature", require_unit=True)
        except ValueError as exc:
            raise UserError(f"design temperature: {exc}") from None
    else:
        T = float(temperature)
    try:
        m = get_model(model)
        poly = get_polymer(polymer)
    except KeyError as exc:
        raise UserError(str(exc.args[0]) + ".") from None
    setup = DesignSetup(poly.key, T, m.name, float(filler or 0.0), float(f), None if N is None else float(N),
                        bool(entanglements))
    try:
        setup.network(math.sqrt(setup.nu_range[0] * setup.nu_range[1]))
    except ValueError as exc:
        raise UserError(f"the design settings are not a valid network: {exc}.") from None
    return setup


def _check_modes(setup: DesignSetup, targets: list[Target]):
    m = get_model(setup.model)
    for t in targets:
        if t.kind == "Q":
            try:
                get_solvent(t.solvent)
            except KeyError as exc:
                raise TargetError(f"target {t.text!r}: {exc.args[0]}; write it like 'Q(toluene)<=3.5'.",
                                  kind="design-target") from None
            _Evaluator(setup).chi(t)
        if t.mode is not None and not m.supports(t.mode):
            raise UserError(f"target {t.text!r} needs {t.mode.value} tension, which the {m.title} model does not "
                            f"cover; choose a model defined for {t.mode.value} (see `netstretch models`).")


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
        bl = _binding(outcomes, w.lo, "low", True) if not w.lo_open else []
        bh = _binding(outcomes, w.hi, "high", True) if not w.hi_open else []
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


def _extra_notices(ev: _Evaluator, setup: DesignSetup, outcomes: list[TargetOutcome], grid) -> list[Notice]:
    notes = list(ev.notices)
    poly = get_polymer(setup.polymer)
    if poly.status == "memory":
        notes.append(Notice(f"the chain constants of {poly.key} (density, M_K, plateau modulus) are recalled, not "
                            "re-read (polymers.toml): check them before a design decision rests on the window",
                            "memory-values", poly.key))
    from .materials import temperature_notices

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
            ob = _outcome(ev, tb, grid)
            edges += [e for iv in ob.intervals for e, op in ((iv.lo, iv.lo_open), (iv.hi, iv.hi_open)) if not op]
        if edges:
            notes.append(Notice(f"with χ ± {CHI_BAND:g} the ν edge of {t.text} moves within {min(edges):.4g}–"
                                f"{max(edges):.4g} mol/m³", "chi-band", t.text))
    return notes


def design(targets, *, polymer: str = "NR", temperature=LAB_TEMPERATURE, model: str = "eight-chain",
           filler: float | None = None, f: float = 4.0, N: float | None = None,
           entanglements: bool = True) -> DesignResult:
    """The window of strand density ν that meets every target (strings in the target grammar of
    :mod:`network_models.design_targets`, or :class:`Target`).  ``temperature`` in K or as text ('23C');
    ``N`` None couples N to ν (N = M_c/M_K), a number fixes it.  Raises :class:`UserError` (a ValueError)
    with a sentence for bad targets or settings; an infeasible set is a result, not an error."""
    setup = _setup(polymer, temperature, model, filler, f, N, entanglements)
    tl = parse_targets(targets)
    _check_modes(setup, tl)
    return _design(setup, tl)


def _design(setup: DesignSetup, tl: list[Target]) -> DesignResult:
    ev = _Evaluator(setup)
    grid = _grid(setup)
    outcomes = [_outcome(ev, t, grid) for t in tl]
    windows = [Interval(float(grid[0]), float(grid[-1]), True, True)]
    for o in outcomes:
        windows = _intersect(windows, o.intervals)
    window = max(windows, key=lambda iv: math.log(iv.hi / iv.lo)) if windows else None
    binding = {"low": [], "high": []}
    conflicts, unreachable, compromise = [], [], None
    if window is not None:
        binding = {"low": [] if window.lo_open else _binding(outcomes, window.lo, "low"),
                   "high": [] if window.hi_open else _binding(outcomes, window.hi, "high")}
        for o in outcomes:
            vals = ev.value(o.target, window.lo), ev.value(o.target, window.hi)
            o.at_edges = {"low": vals[0], "high": vals[1]}
    else:
        unreachable = [o.target.text for o in outcomes if not o.reachable]
        live = [o for o in outcomes if o.reachable]
        for i, a in enumerate(live):
            for b in live[i + 1:]:
                if not _intersect(a.intervals, b.intervals):
                    conflicts.append((a.target.text, b.target.text))
        compromise = _compromise(ev, tl, grid)
    scan = (float(grid[0]), float(grid[-1]))
    why = _why(setup, outcomes, window, windows, conflicts, unreachable, compromise, scan, binding)
    notices = _extra_notices(ev, setup, outcomes, grid)
    if len(windows) > 1:
        notices.append(Notice(f"the targets are met in {len(windows)} separate ranges of ν: "
                              + ", ".join(f"{iv.lo:.4g}–{iv.hi:.4g}" for iv in windows)
                              + " mol/m³; the widest is reported as the window", "several-windows"))
    return DesignResult(setup, tl, outcomes, windows, window, binding, conflicts, unreachable, compromise, why,
                        notices, scan, ev)


# ------------------------------------------------------------------------------------------------


def compare_models(targets, models=None, **kw):
    """The window of every model that covers the targets' test modes, side by side, and where they agree
    (:func:`network_models.design_compare.compare_models`, returns a ``ModelWindows``)."""
    from .design_compare import compare_models as _compare

    return _compare(targets, models, **kw)
