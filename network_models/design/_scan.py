"""The scan behind every design answer: the setup, the per-ν evaluator of target quantities, the log grid
of ν, each target's set of ν refined with ``brentq``, intersection of those sets, the binding targets and
the closest compromise.  Private to the package: :mod:`.core`, :mod:`.advice`, :mod:`.map` and
:mod:`.compare` import from here, never from each other's private names."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import brentq, minimize_scalar

from ..constants import LAB_TEMPERATURE, ZERO_CELSIUS
from ..errors import Notice, UserError
from ..materials import chi_values, default_chi, get_solvent
from ..models import get_model
from ..network import Network, get_polymer, lock_from_N
from ..swelling import KRAUS_C_CARBON_BLACK, swollen_fraction
from .targets import Target, TargetError

__all__ = ["GRID", "NU_RANGE", "DesignSetup", "Evaluator", "Interval", "TargetOutcome", "binding",
           "check_modes", "compromise", "intersect", "outcome", "scan_grid", "setup"]

#: strand densities scanned, mol/m³ (M_c from ~450 kg/mol down to ~45 g/mol for NR): wider than any rubber
NU_RANGE = (2.0, 2.0e4)
GRID = 97  # log grid points over NU_RANGE (about 24 per decade); edges are refined with brentq



# ------------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
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


@dataclass(kw_only=True)
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
class Evaluator:
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
            sol = get_solvent(str(t.solvent))
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
            assert t.mode is not None and t.stretch is not None
            v = float(m.nominal_stress(t.mode, np.array([t.stretch]), p)[0])
            if not math.isfinite(v):
                self._note(t, f"the network locks before λ = {t.stretch:g} in {t.mode.value} tension")
            return v
        lock = self._lock(t, net, p)
        return lock if t.kind == "lock" else lock - float(t.stretch or 1.0)  # reserve: λ_service

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
        V1 = get_solvent(str(t.solvent)).molar_volume
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
@dataclass(kw_only=True)
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


def scan_grid(setup: DesignSetup, n: int = GRID) -> np.ndarray:
    lo, hi = setup.nu_range
    return np.geomspace(lo, hi, n)


def _refine(ev: Evaluator, t: Target, x_in: float, x_out: float) -> float:
    """The ν between a met point and a not-met point (log scale) where the target's margin changes sign;
    an unevaluable point counts as not met (margin −1)."""

    def h(x):
        m = t.margin(ev.value(t, math.exp(x)))
        return m if math.isfinite(m) else -1.0

    a, b = math.log(x_in), math.log(x_out)
    if h(a) == 0.0:
        return x_in
    return math.exp(brentq(h, a, b, xtol=1e-12, rtol=1e-12, maxiter=200))


def _reason_at(ev: Evaluator, t: Target, nu: float) -> str:
    before = list(ev.reasons.get(t.text, []))
    ev.reasons[t.text] = []
    ev.value(t, nu)
    got = ev.reasons.get(t.text, [])
    ev.reasons[t.text] = before + [r for r in got if r not in before]
    return got[0] if got else ""


def _straddled(ev: Evaluator, t: Target, grid: np.ndarray, vals: np.ndarray):
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


def outcome(ev: Evaluator, t: Target, grid: np.ndarray) -> TargetOutcome:
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
        iv = Interval(lo=float(lo), hi=float(hi), lo_open=k == 0, hi_open=j == n - 1)
        if k > 0 and not math.isfinite(vals[k - 1]):
            iv.lo_reason = _reason_at(ev, t, grid[k - 1])
        if j < n - 1 and not math.isfinite(vals[j + 1]):
            iv.hi_reason = _reason_at(ev, t, grid[j + 1])
        intervals.append(iv)
        k = j + 1
    finite = vals[np.isfinite(vals)]
    vr = (float(finite.min()), float(finite.max())) if finite.size else None
    return TargetOutcome(target=t, intervals=intervals, value_range=vr, reasons=list(ev.reasons.get(t.text, [])))


def intersect(a: list[Interval], b: list[Interval]) -> list[Interval]:
    out = []
    for x in a:
        for y in b:
            lo, hi = max(x.lo, y.lo), min(x.hi, y.hi)
            if lo < hi:
                lo_open = (x.lo_open if x.lo >= y.lo else True) and (y.lo_open if y.lo >= x.lo else True)
                hi_open = (x.hi_open if x.hi <= y.hi else True) and (y.hi_open if y.hi <= x.hi else True)
                out.append(Interval(lo=lo, hi=hi, lo_open=lo_open, hi_open=hi_open))
    return sorted(out, key=lambda iv: iv.lo)


def binding(outcomes: list[TargetOutcome], nu: float, side: str, reasons: bool = False) -> list[str]:
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


def compromise(ev: Evaluator, targets: list[Target], grid: np.ndarray) -> dict | None:
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
def setup(polymer, temperature, model, filler, f, N, entanglements) -> DesignSetup:
    if isinstance(temperature, str):
        from ..units import parse_quantity

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
    setup = DesignSetup(polymer=poly.key, T=T, model=m.name, filler=float(filler or 0.0), f=float(f),
                        N=None if N is None else float(N),
                        entanglements=bool(entanglements))
    try:
        setup.network(math.sqrt(setup.nu_range[0] * setup.nu_range[1]))
    except ValueError as exc:
        raise UserError(f"the design settings are not a valid network: {exc}.") from None
    return setup


def check_modes(setup: DesignSetup, targets: list[Target]) -> None:
    m = get_model(setup.model)
    for t in targets:
        if t.kind == "Q":
            try:
                get_solvent(str(t.solvent))
            except KeyError as exc:
                raise TargetError(f"target {t.text!r}: {exc.args[0]}; write it like 'Q(toluene)<=3.5'.",
                                  kind="design-target") from None
            Evaluator(setup).chi(t)
        if t.mode is not None and not m.supports(t.mode):
            raise UserError(f"target {t.text!r} needs {t.mode.value} tension, which the {m.title} model does not "
                            f"cover; choose a model defined for {t.mode.value} (see `netstretch models`).")

