"""Specimens as the unit of a comparison: group a compound's curves into specimens, fit each alone with the
compound's model, read its network numbers, and summarise them per quantity.

    >>> groups = specimen_groups(compound.curves)            # {specimen name: [curves]}
    >>> spec = fit_specimen(model, "S1-1", curves, compound, T)
    >>> spec.values["G0"], spec.values["nu@0"], spec.fit_se["G0"]

Rules (documented once here, shown to the user beside the numbers):

* **Grouping.** A curve's specimen is its ``metadata["specimen"]``, else its ``specimen`` field (specimen
  column, specimen metadata line, column pairs), else its file (one file per specimen), else its own name.
  The same name in the same mode from two different files is two specimens (named ``file:specimen``).
* **Counted specimens.** The statistics are taken over the specimens tested in the compound's *main mode*
  (the mode with most specimens; uniaxial on a tie): a fit to another mode alone reads the model
  differently.  The others are fitted and listed, marked "not counted".
* **Headline strand density ν, one rule.** Bases in order of preference: tier 0 "affine, entanglement part
  removed" (G − G_e = νRT; G_e from the model where it separates it, else the polymer's plateau modulus;
  the filler reinforcement taken out by Guth–Gold where a filler fraction is given), then tier 1 "affine,
  entanglements counted as crosslinks" (G = νRT, filler removed likewise: an upper bound on chemical
  crosslinks, always positive).  A compound takes the first tier that is positive for its pooled fit and
  every counted specimen; when that is not tier 0 the label says why.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..constants import TRADE_MODULI, t_quantile
from ..crosslinks import BASIS_TIERS, basis_label, from_fit, row_key
from ..deformation import Mode
from ..fitting.many import specimen_groups
from ..network import get_polymer, lock_from_N

#: quantities summarised over specimens, with label, SI unit, display unit and scale
SPECIMEN_QUANTITIES = {
    "G0": ("small-strain shear modulus G₀", "Pa", "MPa", 1e-6),
    "strand_density": ("strand density ν (headline)", "mol/m³", "mol/m³", 1.0),
    "N": ("Kuhn segments per strand N", "1", "1", 1.0),
    "lock": ("uniaxial locking stretch λ_lock", "1", "1", 1.0),
    "M100_measured": ("M100 measured", "Pa", "MPa", 1e-6),
    "M300_measured": ("M300 measured", "Pa", "MPa", 1e-6),
    "M100_predicted": ("M100 predicted", "Pa", "MPa", 1e-6),
    "M300_predicted": ("M300 predicted", "Pa", "MPa", 1e-6),
}


def main_mode(groups: dict[str, list]) -> Mode | None:
    counts: dict[Mode, int] = {}
    for cs in groups.values():
        for md in {c.mode for c in cs}:
            counts[md] = counts.get(md, 0) + 1
    if not counts:
        return None
    top = max(counts.values())
    best = [m for m, k in counts.items() if k == top]
    return Mode.UNIAXIAL if Mode.UNIAXIAL in best else best[0]


def stress_at(curves, lam: float, mode: Mode = Mode.UNIAXIAL) -> float | None:
    """Mean nominal stress at ``lam`` over the curves of ``mode`` that reach it (loading branch, linear
    interpolation); None when none does."""
    vals = []
    for c in curves:
        if c.mode is not mode or len(c) < 2:
            continue
        imax = int(np.argmax(c.stretch))
        x, y = c.stretch[: imax + 1], c.stress[: imax + 1]
        order = np.argsort(x, kind="stable")
        x, y = x[order], y[order]
        if x[0] <= lam <= x[-1]:
            vals.append(float(np.interp(lam, x, y)))
    return float(np.mean(vals)) if vals else None


@dataclass
class SpecimenResult:
    """One specimen of a compound: its curves, its own fit and the numbers read from it (SI)."""

    name: str
    curves: list
    counted: bool = True
    error: str | None = None
    excluded: str | None = None  # the user's reason when excluded
    outlier: list[str] = field(default_factory=list)  # quantities where the MAD rule flags it
    values: dict[str, float | None] = field(default_factory=dict)
    fit_se: dict[str, float | None] = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)
    note: str = ""
    #: the specimen's own fitted parameters (SI, as the model names them); empty when its fit failed
    params: dict[str, float] = field(default_factory=dict)

    @property
    def modes(self) -> list[str]:
        return sorted({c.mode.value for c in self.curves})

    @property
    def used(self) -> bool:
        """Counted in the statistics: fitted, in the main mode and not excluded."""
        return self.counted and self.error is None and self.excluded is None

    def to_dict(self) -> dict:
        d = {"name": self.name, "modes": self.modes, "files": sorted({c.source for c in self.curves if c.source}),
             "counted": self.counted, "used": self.used, "error": self.error, "excluded": self.excluded,
             "outlier": list(self.outlier), "note": self.note, "warnings": list(self.warnings)}
        for k in SPECIMEN_QUANTITIES:
            d[k] = self.values.get(k)
        d["fit_se"] = {k: v for k, v in self.fit_se.items() if not k.startswith("nu@")}
        return d


def _se_from_ci(ci, dof) -> float | None:
    if not ci or ci[0] is None or ci[1] is None:
        return None
    return (ci[1] - ci[0]) / 2.0 / t_quantile(dof)


def read_specimen(model, fr, compound, T: float, spec: SpecimenResult, propagate) -> None:
    """Fill ``spec.values``/``fit_se`` from its fit ``fr``: G₀, ν on both basis tiers, N, lock and the trade
    moduli (measured on its curves, predicted by its fit).  ``propagate(func, fr)`` gives a fit standard error."""
    values = fr.values
    spec.params = {k: float(v) for k, v in values.items()}
    V, S = spec.values, spec.fit_se
    V["G0"] = float(model.small_strain_modulus(**values))
    S["G0"] = propagate(lambda p: model.small_strain_modulus(**p), fr)
    filled = compound.filler_fraction > 0
    try:
        table = from_fit(fr, polymer=compound.polymer, T=T, f=compound.f, filler_fraction=compound.filler_fraction)
    except (ValueError, KeyError, AttributeError, TypeError) as exc:
        spec.warnings.append(f"no crosslink table for specimen {spec.name}: {exc}")
        table = None
    for tier in range(len(BASIS_TIERS)):
        row = None if table is None else next((r for r in table.rows if r.key == row_key(tier, filled)), None)
        V[f"nu@{tier}"] = None if row is None else row.nu
        S[f"nu@{tier}"] = None if row is None else _se_from_ci(row.nu_ci, max(fr.n - fr.k, 1))
    if "N" in values:
        V["N"] = float(values["N"])
    lock = model.stretch_limit("uniaxial", values) if model.supports("uniaxial") else None
    V["lock"] = None if lock is None or not math.isfinite(lock) else float(lock)
    for key, lam in TRADE_MODULI.items():
        V[f"{key}_measured"] = stress_at(spec.curves, lam)
        if model.supports("uniaxial"):
            pred = float(model.nominal_stress("uniaxial", np.array([lam]), values)[0])
            V[f"{key}_predicted"] = pred if math.isfinite(pred) else None


def finish_specimen(spec: SpecimenResult, tier: int, compound) -> None:
    """Headline ν on the compound's chosen tier; N (and lock) from it when the model has no N."""
    nu = spec.values.get(f"nu@{tier}")
    spec.values["strand_density"] = nu
    spec.fit_se["strand_density"] = spec.fit_se.get(f"nu@{tier}")
    if spec.values.get("N") is None and nu:
        poly = get_polymer(compound.polymer)
        spec.values["N"] = poly.density / nu / poly.kuhn_molar_mass
    if spec.values.get("lock") is None and spec.values.get("N"):
        spec.values["lock"] = lock_from_N(max(float(spec.values["N"] or 0.0), 1.0 + 1e-6), Mode.UNIAXIAL)


def choose_tier(pooled_nu: dict[int, float | None], specimens: list[SpecimenResult]) -> tuple[int, str]:
    """The headline basis tier (module docstring: one rule) and, when it is not the preferred one, why."""
    for tier in range(len(BASIS_TIERS)):
        vals = [pooled_nu.get(tier)] + [s.values.get(f"nu@{tier}") for s in specimens if s.used]
        if all(v is not None and v > 0 for v in vals) and any(v is not None for v in vals):
            if tier == 0:
                return 0, ""
            return tier, ("the entanglement estimate is as large as the modulus (for the pooled fit or a "
                          "specimen), so nothing is left for crosslinks on the preferred basis; "
                          "entanglements are counted as crosslinks instead (an upper bound)")
    return len(BASIS_TIERS) - 1, "no positive modulus: no strand density can be read"


# ----- a compound's specimens, end to end -----------------------------------------------------------
#: fit notices that do not disqualify a model from the model spread (they only say what was not tested)
_HARMLESS = ("predictions are extrapolations", "left out")
#: specimen quantity -> the comparison table's quantity key
TABLE_KEY = {"G0": "G0", "strand_density": "nu", "N": "N", "lock": "lock", "M100_measured": "M100_measured",
             "M300_measured": "M300_measured", "M100_predicted": "M100_predicted",
             "M300_predicted": "M300_predicted"}


def _serious(warnings) -> list[str]:
    return [w for w in warnings or [] if getattr(w, "kind", None) != "extrapolated-mode"
            and not any(h in str(w) for h in _HARMLESS)]


def analyse_specimens(res, m, fitter, exclude: dict, fit_safely, propagate) -> tuple[int, str]:
    """Fit every specimen of ``res.compound`` alone, flag outliers, apply exclusions, choose the headline
    basis, summarise every specimen quantity (``res.stats``) and put the specimen means and intervals into
    the comparison table."""
    from ..errors import Notice
    from ..statistics import OUTLIER_Z, modified_z, summarize

    c = res.compound
    groups = specimen_groups([cv for cv in c.curves if m.supports(cv.mode)])
    main = main_mode(groups)
    res.main_mode = None if main is None else main.value
    exclude = dict(exclude or {})
    for name, cs in groups.items():
        spec = SpecimenResult(name, cs, counted=any(cv.mode is main for cv in cs))
        if not spec.counted:
            main_text = "no" if main is None else main.value
            spec.note = f"not counted: tested in {', '.join(spec.modes)}, the statistics use {main_text} specimens"
        if name in exclude:
            spec.excluded = str(exclude.pop(name) or "excluded by the user")
        fr, err = fit_safely(m, cs, fitter, f"{c.name} specimen {name}")
        if err:
            spec.error = err
        else:
            spec.warnings = _serious(fr.warnings)
            read_specimen(m, fr, c, res.test_temperature, spec, propagate)
        res.specimens.append(spec)
    for name in exclude:
        res.warnings.append(Notice(f"{c.name}: no specimen called {name!r} to exclude; specimens are "
                                   f"{', '.join(groups) or 'none'}", "exclusion", c.name))
    tier, why = choose_tier({t: v for t, (v, _ci) in res.pooled_nu.items()}, res.specimens)
    for spec in res.specimens:
        if spec.error is None:
            finish_specimen(spec, tier, c)
    used = [s for s in res.specimens if s.used]
    flags: dict[str, list[str]] = {}
    for q in SPECIMEN_QUANTITIES:
        zs = modified_z([s.values.get(q) for s in used])
        for s, z in zip(used, zs, strict=True):
            if z is not None and abs(z) > OUTLIER_Z:
                s.outlier.append(q)
                flags.setdefault(s.name, []).append(f"{q} ({z:+.1f})")
        res.stats[q] = summarize(res.specimen_values(q))
    for name, where in flags.items():
        res.warnings.append(Notice(
            f"{c.name}: specimen {name} is far from the others — modified z-score above {OUTLIER_Z:g} (Iglewicz & "
            f"Hoaglin 1993) on {', '.join(where)}; look at it, and exclude it with a reason if a fault is known",
            "outlier", c.name))
    return tier, why


def specimen_table(res, tier: int, why: str) -> None:
    """Replace the pooled values of the specimen quantities by the specimen means and their intervals
    (specimen scatter with fit error); one specimen: the interval is withheld and the note says why."""
    from ..statistics import combined_interval
    from .records import ONE_SPECIMEN, SPECIMEN_INTERVAL

    Q = res.quantities
    for q, key in TABLE_KEY.items():
        qt, s = Q.get(key), res.stats.get(q)
        if qt is None or s is None:
            continue
        qt.n = s.n
        if s.n >= 2:
            fit_se = [sp.fit_se.get(q) for sp in res.specimens if sp.used and sp.values.get(q) is not None]
            qt.value = s.mean
            ci = combined_interval(s, fit_se)
            assert ci is not None  # n ≥ 2: scatter known
            qt.low, qt.high = ci
            qt.interval = SPECIMEN_INTERVAL
        elif qt.has_interval:
            sc = qt.display_scale
            qt.note = ONE_SPECIMEN.format(lo=f"{qt.low * sc:.4g}", hi=f"{qt.high * sc:.4g}") + (
                f"; {qt.note}" if qt.note else "")
            qt.low = qt.high = None
        if s.n == 0 and qt.value is not None:
            qt.note = "no specimen could be fitted alone; value and interval from the pooled fit only" + (
                f"; {qt.note}" if qt.note else "")
    nu = Q.get("nu")
    if nu is not None:
        f = res.compound.f
        for key, fn in (("mu_j", lambda x: 2 * x / f), ("Mc", lambda x: get_polymer(res.compound.polymer).density / x)):
            if key in Q:
                lo, hi = (fn(nu.low), fn(nu.high)) if nu.has_interval and nu.low > 0 else (None, None)
                Q[key].value, Q[key].n = fn(nu.value), nu.n
                Q[key].low, Q[key].high = (min(lo, hi), max(lo, hi)) if lo is not None else (None, None)
                Q[key].note = nu.note
    if why and nu is not None:
        nu.note = why + (f"; {nu.note}" if nu.note else "")


__all__ = [
    "BASIS_TIERS", "SPECIMEN_QUANTITIES", "TABLE_KEY", "SpecimenResult", "analyse_specimens", "basis_label",
    "choose_tier", "finish_specimen", "main_mode", "read_specimen", "row_key", "specimen_groups", "specimen_table",
    "stress_at",
]
