"""Plain-language diagnostics of a finished fit, computed once, as :class:`~network_models.errors.Notice`
objects with stable kinds (DEVELOPERS.md lists them):

``lock-reached``      the optimum sits on (or near) the bound that keeps the data inside the lock
``at-bound``          a parameter ended on a declared bound
``not-identifiable``  no covariance, or a relative standard error over 50 %
``correlated``        |ρ| > 0.98 between two free parameters
``extrapolated-mode`` a mode the model covers had no data
``unstable``          the model's own stability caveats, or stress that stops rising with stretch
``mixed-temperature`` curves tested at different temperatures fitted with one parameter set
``strain-crystallisation``  a strain-crystallising polymer (NR, IR) fitted past λ ≈ 3 in uniaxial tension
``stress-softening``  the curves do not state the loading cycle (or state different ones)
``glass``             a test temperature below T_g + 20 K of the named polymer (``service-limit``: above its
                      upper service temperature) — materials.temperature_notices
``misfit``            the model does not follow a mode's curve: RMS residual over 5 % of its largest stress
``implausible-unit``  G₀, the strain range or the ratio of two curves' stresses points at a unit mix-up
``not-determined``    a free parameter without an interval: the data do not bound it (issue #20)
(``points-dropped`` and ``curves-left-out`` are raised while setting the fit up.)
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from ..constants import celsius
from ..curves import TestCurve
from ..deformation import Mode
from ..errors import Notice
from . import plausibility
from .evaluate import fast_evaluator
from .problem import Data, estimate_modulus

_LOCK_NEAR = 0.05  # |ln(value/threshold)| within which the lock is said to set the parameter
_POORLY_DETERMINED = 0.5  # relative standard error above which a parameter is called poorly determined
_CORRELATED = 0.98
#: RMS residual of a mode, as a fraction of its largest |stress|, above which the model is said not to follow
#: the curve (a threshold chosen here: a model that follows rubber data leaves about 1 % — eight-chain on
#: Treloar's 1944 uniaxial data 0.95 % — a neo-Hookean one over λ ≤ 7.6 leaves 13 %; docs/methods.md §fit-quality)
MISFIT_FRACTION = 0.05

#: Polymers that crystallise under strain at room temperature (natural rubber and its synthetic twin,
#: cis-1,4-polyisoprene).  Onset in uniaxial tension near λ ≈ 3–4 for ordinary gum NR vulcanisates:
#: Toki et al. 2000, Polymer 41:5423 (WAXD during stretching); Trabelsi, Albouy & Rault 2003,
#: Macromolecules 36:7624 [both from memory: the threshold is the order of magnitude these report].
STRAIN_CRYSTALLISING = frozenset({"NR", "IR"})
CRYSTALLISATION_ONSET = 3.0  # uniaxial stretch above which the notice is given


def _fmt(v, unit):
    if unit == "Pa":
        return f"{v / 1e6:.4g} MPa"
    return f"{v:.4g}" + ("" if unit in ("1", "") else f" {unit}")


def diagnose(result, pj, values, se_z, corr, *, polymer=None) -> list[Notice]:
    """Every notice about a finished fit, in a fixed order."""
    pr = pj.pr
    out: list[Notice] = []
    at_bound = _lock_and_bounds(out, pr, pj, values)
    _identifiability(out, result, pr, se_z, corr, at_bound)
    m = pr.model
    for mode in m.modes:
        if mode not in result.modes:
            out.append(Notice(f"no {mode.value} data were fitted: {mode.value} predictions are extrapolations",
                              "extrapolated-mode", mode.value))
    out.extend(_as_notice(w, "unstable") for w in m.stability_notes(values))
    _monotonic(out, m, pr.data, values)
    _misfit(out, result, pr.data)
    out.extend(unit_plausibility(pr.curves, result.small_strain_modulus))
    _temperatures(out, pr.curves)
    _glass(out, pr.curves, polymer)
    _crystallisation(out, pr, polymer)
    return out


def undetermined_notices(result) -> list[Notice]:
    """One ``not-determined`` notice per free parameter the data do not bound (no interval is given)."""
    out = []
    for name in result.free:
        p = result.params[name]
        if not p.determined:
            out.append(Notice(f"{p.symbol or name} is not determined by these data: its 95 % interval is unbounded "
                              "or spans more than a factor 1000, so none is given (fix it from another source, "
                              "or add data that reach the range where it matters)", "not-determined", name))
    return out


def _as_notice(w, kind):
    return w if isinstance(w, Notice) else Notice(str(w), kind)


def _lock_and_bounds(out, pr, pj, values) -> set:
    m, data = pr.model, pr.data
    for name, (thr, _side) in pr.locks.items():
        v = values[name]
        top = data.top
        gap = abs(math.log(v / thr)) if v > 0 and thr > 0 else abs(v - thr)
        if gap <= 1e-4:
            out.append(Notice(
                f"the data reach the locking stretch of the {m.title} model: {name} was held at the "
                f"limit {_fmt(v, m.params[name].unit)} that keeps the largest stretch (λ = {top:.3g}) inside "
                f"the lock; the model cannot follow the upturn, so {name} is a bound, not an estimate",
                "lock-reached", name))
        elif gap <= _LOCK_NEAR:
            out.append(Notice(
                f"the fitted {m.title} model locks just beyond the largest tested stretch (λ = {top:.3g}): "
                f"{name} = {_fmt(v, m.params[name].unit)} is set by the last few points, and the model "
                "cannot predict much past the tested range", "lock-reached", name))
    at_bound = set()
    for i, name in enumerate(pr.free_names):
        if name in pr.locks and abs(values[name] - pr.locks[name][0]) <= 1e-4 * max(abs(pr.locks[name][0]), 1e-12):
            continue
        q = m.params[name]
        c = pj.co[i]
        z = c.z_of_v(values[name])
        if z - c.zlo_decl <= 1e-5:
            at_bound.add(name)
            out.append(Notice(f"{name} ({q.meaning}) ended at its lower bound {_fmt(pr.lb[name], q.unit)}: the data "
                              "give no evidence for it; consider a model without it or fix it", "at-bound", name))
        elif c.zhi_decl - z <= 1e-5:
            at_bound.add(name)
            out.append(Notice(f"{name} ({q.meaning}) ended at its upper bound {_fmt(pr.ub[name], q.unit)}: the data "
                              "do not limit it; it is not identifiable from these curves", "at-bound", name))
    return at_bound


def _identifiability(out, result, pr, se_z, corr, at_bound):
    names = pr.free_names
    k = len(names)
    if k and not all(map(math.isfinite, np.asarray(se_z).tolist())):
        out.append(Notice(f"could not estimate uncertainties: the parameters {', '.join(names)} are not all "
                          "identifiable from these data (fix one, or add data in another mode or at larger "
                          "stretch)", "not-identifiable", None))
        return
    for name in names:
        rel = result.params[name].relative_stderr
        if rel is not None and rel > _POORLY_DETERMINED and name not in at_bound:
            pct = "over 1000 %" if rel > 10 else f"{100 * rel:.0f} %"
            extra = (" — the curves stay far from the locking stretch, so it is barely constrained"
                     if name in pr.locks else "")
            out.append(Notice(f"{name} is poorly determined by these data (relative standard error {pct}){extra}",
                              "not-identifiable", name))
    for i in range(k):
        for j in range(i + 1, k):
            rho = corr[i, j]
            if math.isfinite(rho) and abs(rho) > _CORRELATED:
                out.append(Notice(f"{names[i]} and {names[j]} are strongly correlated (ρ = {rho:+.3f}): these data "
                                  "cannot separate them; fix one or add data in another mode", "correlated",
                                  f"{names[i]}, {names[j]}"))


def _monotonic(out, m, data, values):
    """Stress must rise with stretch in every supported mode, up to 1.5 × the largest data stretch."""
    top = max(3.0, math.ceil(3.0 * data.top) / 2.0)
    grid, gdata = _grid(top, tuple(md.value for md in m.modes))
    P = fast_evaluator(m, gdata)(values).reshape(len(m.modes), grid.size)  # NaN past the lock: skipped
    dP = np.diff(P, axis=1)
    falls = (dP <= 0) & np.isfinite(dP)  # one pass over every mode
    for row in np.flatnonzero(falls.any(axis=1)).tolist():
        mode = m.modes[row]
        where = grid[int(np.argmax(falls[row]))]
        out.append(Notice(f"the fitted {m.title} model is unstable in {mode.value}: its stress stops rising "
                          f"above λ ≈ {where:.3g}; do not use its {mode.value} predictions there",
                          "unstable", mode.value))


def unit_plausibility(curves, G0) -> list[Notice]:
    """:func:`network_models.fitting.plausibility.unit_plausibility` with the per-curve start modulus."""
    return plausibility.unit_plausibility(curves, G0, estimate_modulus)


def _misfit(out, result, data):
    for mode, st in result.modes.items():
        top = float(np.max(np.abs(data.P[data.masks[mode]]))) if st.n else 0.0
        if top > 0 and st.rms > MISFIT_FRACTION * top:
            out.append(Notice(f"the {result.title} model does not follow the {mode.value} curve: its RMS residual "
                              f"({st.rms / 1e6:.3g} MPa) is {100 * st.rms / top:.0f} % of the largest measured stress "
                              f"({top / 1e6:.3g} MPa), over {100 * MISFIT_FRACTION:.0f} %; its parameters describe a "
                              "compromise, not this rubber — use a model that follows the curve's shape",
                              "misfit", mode.value))


@lru_cache(maxsize=64)
def _grid(top: float, modes: tuple[str, ...]):
    """Stretch grid 1.001…top in each mode, as fitting data (kinematics computed once)."""
    grid = np.linspace(1.0 + 1e-3, top, 100)
    curves = [TestCurve(mode=Mode.parse(md), stretch=grid, stress=np.zeros_like(grid), name="grid") for md in modes]
    return grid, Data(curves)


def _temperatures(out, curves):
    temps = {c.temperature for c in curves if c.temperature is not None}
    if len(temps) > 1:
        out.append(Notice("the curves were tested at different temperatures (" +
                          ", ".join(f"{celsius(t):.0f} °C" for t in sorted(temps)) +
                          "); one parameter set was fitted to all of them", "mixed-temperature", None))


def _glass(out, curves, polymer):
    """``glass`` / ``service-limit`` notices for test temperatures outside the polymer's rubbery range."""
    from ..materials import temperature_notices

    for T in sorted({c.temperature for c in curves if c.temperature is not None}):
        out.extend(temperature_notices(polymer, T, "test temperature"))


def curve_polymer(curves, polymer=None) -> str | None:
    """The polymer named by the caller, else the one all curves' metadata agree on, else None."""
    if polymer:
        return str(polymer)
    named = {str(c.metadata.get("polymer")).strip() for c in curves if c.metadata.get("polymer")}
    return named.pop() if len(named) == 1 else None


def _crystallisation(out, pr, polymer):
    if not polymer or polymer.strip().upper() not in STRAIN_CRYSTALLISING:
        return
    data = pr.data
    if Mode.UNIAXIAL not in data.ranges:
        return
    top = data.ranges[Mode.UNIAXIAL][1]
    if top <= CRYSTALLISATION_ONSET:
        return
    out.append(Notice(
        f"{polymer} crystallises under strain, and the uniaxial data reach λ = {top:.3g} (above about "
        f"{CRYSTALLISATION_ONSET:g}): the upturn there may be strain crystallisation, not the finite extensibility "
        "of the network — N, J_m or δ fitted to it can read too short a chain; compare with a fit that stops "
        f"at λ ≈ {CRYSTALLISATION_ONSET:g}", "strain-crystallisation", polymer))


def curve_cycle(curves) -> tuple[str | None, list[Notice]]:
    """The loading cycle the curves state (``curve.cycle`` or ``metadata["cycle"]``) and a notice when it
    is unknown or differs between curves: the first loading of a rubber differs from later ones (stress
    softening, the Mullins effect), so a fit describes only the cycle it was made on."""
    stated = [(getattr(c, "cycle", None) or c.metadata.get("cycle")) for c in curves]
    stated = [None if s is None or str(s).strip() == "" else str(s).strip() for s in stated]
    known = sorted({s for s in stated if s is not None})
    if len(known) == 1 and None not in stated:
        return known[0], []
    if not known:
        return None, [Notice("the curves do not state the loading cycle (first loading or after conditioning): "
                             "the first loading of a rubber is stiffer than later ones (stress softening, the "
                             "Mullins effect), so say which cycle was fitted (a '# cycle: …' line) before "
                             "comparing fits", "stress-softening", None)]
    missing = sum(s is None for s in stated)
    text = (f"the curves state different loading cycles ({', '.join(known)})" if len(known) > 1 else
            f"{missing} of {len(stated)} curves do not state their loading cycle (the others: {known[0]})")
    cycle = known[0] if len(known) == 1 else "mixed: " + ", ".join(known)
    return cycle, [Notice(
        text + "; stress softening (the Mullins effect) makes cycles differ, so fit one cycle at a time",
        "stress-softening", None)]
