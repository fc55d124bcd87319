"""The comparison: every compound fitted (pooled and specimen by specimen), one headline each, and verdicts
against the baseline from the specimens."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from ..constants import celsius
from ..dose import ladder_fits
from ..errors import Notice
from ..models import MODELS, Model, get_model
from ..specs import judge as judge_specs
from ..statistics import (
    ALPHA,
    CANNOT_JUDGE,
    DIFFERENT,
    NOT_DISTINGUISHABLE,
    VERDICT_WORDING,
    combined_interval,
    holm_adjust,
    verdict,
    welch_p_value,
)
from ..ultimate import compound_ultimate, ultimate_differences
from .pooled import _service_part, analyse, fit_safely, network_quantities, propagate
from .records import BASIS, DEFAULT_TEST_TEMPERATURE, TEMPERATURE_NOTE, CompoundResult, Headline
from .specimens import SPECIMEN_QUANTITIES, analyse_specimens, basis_label, row_key, specimen_table

if TYPE_CHECKING:
    import pandas as pd

#: quantities judged against the baseline, in order (the JSON contract names "G0" and "strand_density")
VERDICT_QUANTITIES = ("G0", "strand_density", "N", "lock", "M100_measured", "M300_measured", "M100_predicted",
                      "M300_predicted")


# ----- one compound ---------------------------------------------------------------------------------
def _pooling_problem(compound) -> str | None:
    """A sentence when the compound's files state different compounds (metadata 'compound:' lines)."""
    said: dict[str, set] = {}
    for c in compound.curves:
        who = c.metadata.get("compound")
        if who not in (None, ""):
            said.setdefault(str(who), set()).add(c.source or c.metadata.get("file") or c.name)
    if len(said) < 2:
        return None
    parts = "; ".join(f"{', '.join(sorted(files))} {'says' if len(files) == 1 else 'say'} compound {who!r}"
                      for who, files in said.items())
    split = " ".join(f"--compound {who}={','.join(sorted(files))}" for who, files in said.items())
    return (f"{compound.name}: the files belong to different compounds ({parts}), so they are not pooled into one "
            f"fit; compare them as separate compounds ({split}), or ask for pooling explicitly (pool=True, --pool)")


def model_spread(res, tier: int, models, fitter=None) -> dict:
    """ν on the headline tier from each model of the declared set that fits the compound's pooled data
    without a serious warning; the spread is their range."""
    from ..crosslinks import from_fit
    from .specimens import _serious

    c = res.compound
    rows = []
    for name in models:
        mm = get_model(name)
        curves = [x for x in c.curves if mm.supports(x.mode)]
        if len(curves) != len(c.curves):
            continue
        fr, err = fit_safely(mm, curves, fitter, c.name)
        if err:
            rows.append({"model": mm.name, "value": None, "used": False, "why": err})
            continue
        try:
            tab = from_fit(fr, polymer=c.polymer, T=res.test_temperature, f=c.f, filler_fraction=c.filler_fraction)
            nu = tab.row(row_key(tier, c.filler_fraction > 0)).nu
        except (ValueError, KeyError, AttributeError, TypeError) as exc:
            rows.append({"model": mm.name, "value": None, "used": False, "why": str(exc)})
            continue
        bad = _serious(fr.warnings)
        rows.append({"model": mm.name, "value": nu, "used": nu is not None and not bad,
                     "why": "; ".join(bad) if bad else ("" if nu is not None else "no positive ν on this basis")})
    vals = [r["value"] for r in rows if r["used"]]
    return {"range": [min(vals), max(vals)] if len(vals) >= 2 else None, "models": rows,
            "set": "every registered model that covers all of the compound's test modes; a model counts when its "
                   "fit has no warning beyond untested modes"}


def _headline(res, tier: int, why: str, spread_models, fitter=None) -> Headline:
    c = res.compound
    s = res.stats.get("strand_density")
    pooled, pooled_ci = res.pooled_nu.get(tier, (None, None))
    basis = basis_label(tier, c.filler_fraction > 0, c.filler_fraction)
    if s is not None and s.n >= 1:
        value, n = s.mean, s.n
        fit_se = [sp.fit_se.get("strand_density") for sp in res.specimens if sp.used]
        ci = combined_interval(s, fit_se)
    else:
        value, n, ci = pooled, 0, None
    ph = 1.0 - 2.0 / c.f
    unc: dict[str, Any] = {
        "specimen_scatter": None if s is None or s.ci95 is None else list(s.ci95),
        "specimen_scatter_note": "scatter unknown (fewer than two specimens)" if s is None or s.n < 2 else
        f"95 % interval of the mean of {s.n} specimens (Student t, n − 1)",
        "fit_error": None if not pooled_ci else list(pooled_ci),
        "fit_error_note": "95 % interval of the pooled fit alone (delta method, Student t) — not specimen scatter",
        "assumption_bracket": None if value is None else [value, value / ph],
        "assumption_bracket_note": f"affine … phantom (f = {c.f:g}): the same modulus read as G = νRT or "
                                   f"G = (1 − 2/f)νRT",
        "headline_note": "headline interval: specimen scatter with fit error",
    }
    if spread_models:
        unc["model_spread"] = model_spread(res, tier, spread_models, fitter)
    note = why
    if n == 1:
        note = (note + "; " if note else "") + "one specimen: scatter unknown"
    elif n == 0 and value is not None:
        note = (note + "; " if note else "") + "no specimen could be fitted alone: value from the pooled fit"
    return Headline(value=value, basis=basis, tier=tier, n=n, ci95=ci, note=note, uncertainty=unc)


def analyse_compound(compound, m, service_temperature, fitter=None, exclude=None, spread_models=(),
                     pool: bool = False) -> CompoundResult:
    """Pooled fit, specimen fits and statistics, headline — one compound."""
    problem = None if pool else _pooling_problem(compound)
    if problem:
        return CompoundResult(compound=compound, model=m.name, error=problem)
    res = analyse(compound, m, service_temperature, fitter)
    if not res.ok:
        return res
    tier, why = analyse_specimens(res, m, fitter, exclude or {}, fit_safely, propagate)
    network_quantities(res, tier, why)
    specimen_table(res, tier, why)
    T = res.test_temperature
    _service_part(res, T, T if service_temperature is None else float(service_temperature))
    res.headline = _headline(res, tier, why, spread_models, fitter)
    res.pooled = _pooled(res, m, fitter)
    g = res.stats.get("G0")
    if res.fit is not None and g is not None and g.mean is not None:  # where both G₀ are shown, say why
        G0p = float(m.small_strain_modulus(**m.resolve(res.fit.values)))
        res.crosslink_notes.append(
            f"this table reads the pooled fit (G₀ = {G0p / 1e6:.4g} MPa: one fit to all the compound's curves, "
            f"{getattr(res.fit, 'residual', '')} residuals); the compound's G₀ = {g.mean / 1e6:.4g} MPa elsewhere is "
            f"the mean of {g.n} specimen fit(s) — they differ by specimen scatter and by how the test modes pull "
            "the single fit")
    return res


def _pooled(res, m, fitter) -> dict | None:
    """One fit to the compound's counted curves (every curve the model covers, excluded specimens left out):
    the same fit ``netstretch fit`` makes on those files with that model and the default weighting."""
    from ..fitting.many import specimen_groups

    excluded = [s.name for s in res.specimens if s.excluded]
    fr = res.fit
    curves = [c for c in res.compound.curves if m.supports(c.mode)]
    if excluded:
        groups = specimen_groups(curves)
        curves = [c for name, cs in groups.items() if name not in excluded for c in cs]
        fr, err = fit_safely(m, curves, fitter, res.name) if curves else (None, "no curves left")
        if err:
            return None
    if fr is None:
        return None
    G0 = float(m.small_strain_modulus(**m.resolve(fr.values)))
    return {"model": m.name, "G0": G0, "residual": getattr(fr, "residual", None), "curves": len(curves),
            "excluded_specimens": excluded,
            "basis": "pooled fit: one fit to all of the compound's curves the model covers"
                     + (f", specimens {', '.join(excluded)} left out" if excluded else "")}


def fit_basis(r: CompoundResult, residual: str | None) -> dict:
    """How each of a compound's G₀ / ν / μ_j numbers was obtained (the JSON's ``compounds[].fit_basis``):
    statistic (specimen mean or pooled fit), model, residual weighting, entanglement treatment and where G_e
    came from, filler treatment — and, where two numbers of one quantity are shown together, why they differ."""
    c = r.compound
    m = get_model(r.model)
    phi = c.filler_fraction
    filler = f"removed (Guth–Gold, φ = {phi:g})" if phi > 0 else "none given (gum or φ not stated)"
    separable = bool(r.fit is not None and m.modulus_split(r.fit.values).separable)
    ge_src = f"the {m.title} fit (the model separates G_e)" if separable else \
        f"the plateau modulus of {c.polymer} (polymer table, ∝ T; an upper bound)"
    h = r.headline
    tier = None if h is None else h.tier
    ent = {0: "removed", 1: "counted as crosslinks (upper bound)"}.get(-1 if tier is None else tier, "—")
    n = r.n
    common = {"model": m.name, "residual": residual}
    mean = "specimen mean" if n >= 1 else "pooled fit (no specimen could be fitted alone)"
    out = {
        "G0": {"statistic": mean, "n": n, "main_mode": r.main_mode, **common,
               "label": f"{mean} of {n} specimen fit(s) ({r.main_mode or '—'}), {m.name}, {residual} residuals"},
        "pooled": {"statistic": "pooled fit", **common,
                   "label": f"pooled fit of all curves, {m.name}, {residual} residuals"},
        "headline": {"statistic": mean, "n": n, **common, "entanglements": ent,
                     "G_e_source": ge_src if tier == 0 else None, "filler": filler,
                     "label": f"{mean}, {m.name}, {residual} residuals, entanglements {ent}"
                              + (f" (G_e from {ge_src})" if tier == 0 else "") + f", filler {filler}"},
        "crosslink_table": {"statistic": "pooled fit", **common, "G_e_source": ge_src, "filler": filler,
                            "label": "pooled fit; each row states its entanglement and filler treatment"},
        "mu_j": {"statistic": mean, "relation": f"μ_j = 2ν/f with f = {c.f:g}, on the headline's basis"},
        "why_differ": ("G0.mean averages the counted specimens' own fits (each specimen weighs the same); "
                       "pooled.G0 and the crosslink table come from one fit to all the curves together (each point "
                       "weighs by the residual weighting, every mode at once), so the two differ by specimen "
                       "scatter and by how the modes pull the single fit"),
    }
    return out


# ----- the comparison ----------------------------------------------------------------------------
@dataclass
class Comparison:
    model: str
    results: list[CompoundResult]
    baseline: str | None
    service_temperature: float
    notes: list[str] = field(default_factory=list)
    exclusions: dict = field(default_factory=dict)
    #: the units stresses and densities are shown in (display_units.apply_to_comparison); values stay SI
    display_units: dict = field(default_factory=lambda: {"stress": "MPa", "density": "mol/m³"})
    #: the residual weighting of every fit in this comparison
    residual: str = "relative"
    #: family-wise verdicts: "holm" adjusts each compound's verdict quantities together (Holm 1979), None keeps
    #: one test per quantity at α = 0.05 (issue #20)
    family_wise: str | None = None
    #: specifications in the design-target grammar, judged per compound (network_models.specs)
    specs: list = field(default_factory=list)

    def to_frame(self) -> pd.DataFrame:
        """One row per compound and quantity (value, 95 % interval, unit, basis), as a pandas DataFrame."""
        from ..frames import comparison_frame

        return comparison_frame(self)

    def differences_frame(self) -> pd.DataFrame:
        """One row per difference against the baseline, with its verdict, as a pandas DataFrame."""
        from ..frames import differences_frame

        return differences_frame(self)

    def __repr__(self):
        from ..frames import comparison_repr

        return comparison_repr(self)

    def _repr_html_(self):
        from ..frames import comparison_frame, comparison_repr, differences_frame, html_table

        return (html_table(comparison_frame(self), comparison_repr(self)[1:-1])
                + html_table(differences_frame(self), "Against the baseline"))

    def __iter__(self):
        return iter(self.results)

    def __getitem__(self, name) -> CompoundResult:
        for r in self.results:
            if r.name == name:
                return r
        raise KeyError(f"no compound called {name!r} in this comparison; have {', '.join(self.names)}")

    @property
    def names(self) -> list[str]:
        return [r.name for r in self.results]

    @property
    def base(self) -> CompoundResult | None:
        return self[self.baseline] if self.baseline else None

    @property
    def model_obj(self) -> Model:
        return get_model(self.model)

    def rows(self) -> list[dict]:
        out = []
        for r in self.results:
            row = {"compound": r.name, "ok": r.ok, "error": r.error}
            for k, q in r.quantities.items():
                row[k] = q.to_dict()
            out.append(row)
        return out

    def differences(self) -> list[dict]:
        """Per compound and quantity against the baseline, from the specimens: difference (absolute and %),
        its 95 % interval (Welch), the verdict and the smallest detectable difference."""
        base = self.base
        if base is None or not base.ok:
            return []
        out = []
        for r in self.results:
            if r is base or not r.ok:
                continue
            rows = [row for q in VERDICT_QUANTITIES if (row := self._difference(r, base, q)) is not None]
            if self.family_wise == "holm":
                _holm(rows)
            out.extend(rows)
        return out

    def _difference(self, r, base, q):
        label, unit, _du, _sc = SPECIMEN_QUANTITIES[q]
        basis = ""
        a, b = r.specimen_values(q), base.specimen_values(q)
        if q == "strand_density":  # on a common basis: the higher tier of the two
            tier = max(r.headline.tier, base.headline.tier) if r.headline and base.headline else 0
            a, b = ([s.values.get(f"nu@{tier}") for s in x.specimens if s.used and s.values.get(f"nu@{tier}")]
                    for x in (r, base))
            basis = basis_label(tier, False) + ("; filler removed where a filler fraction is given" if any(
                x.compound.filler_fraction > 0 for x in (r, base)) else "")
        if not a and not b:
            return None
        v = verdict(a, b)
        d = v.to_dict()
        d["p_value"] = welch_p_value(a, b) if v.verdict != CANNOT_JUDGE else None
        d.update({"compound": r.name, "baseline": base.name, "quantity": q, "label": label, "unit": unit,
                  "basis": basis, "key": "nu" if q == "strand_density" else q,
                  "styled": v.verdict == DIFFERENT})
        return d

    def to_dict(self) -> dict:
        m = self.model_obj
        spec_verdicts = judge_specs(self.results, self.specs)
        return {
            "model": {"name": m.name, "title": m.title, "equation": m.equation,
                      "references": list(m.references), "assumption": m.assumption},
            "baseline": self.baseline,
            "service_temperature_K": self.service_temperature,
            "basis": BASIS,
            "temperature_note": TEMPERATURE_NOTE,
            "verdict_wording": VERDICT_WORDING,
            "notes": list(self.notes),
            "exclusions": [{"compound": c, "specimen": s, "reason": why} for c, d in self.exclusions.items()
                           for s, why in d.items()],
            "residual": self.residual,
            "compounds": [dict(result_to_dict(r, self.residual), spec=spec_verdicts.get(r.name, []))
                          for r in self.results],
            "differences": self.differences(),
            "family_wise": self.family_wise,
            "ultimate_differences": ultimate_differences(self.results, self.baseline),
            "dose_ladders": ladder_fits(self.results),
        }


def _holm(rows) -> None:
    """Holm's family-wise verdicts over one compound's quantities (statistics.holm_adjust): each row gains
    ``p_holm`` and its verdict follows p_holm < α; the Welch interval stays the per-quantity 95 % one."""
    adj = holm_adjust([d.get("p_value") for d in rows])
    m = sum(p is not None for p in adj)
    for d, p in zip(rows, adj, strict=True):
        d["p_holm"] = p
        d["family"] = f"Holm over the {m} judged quantities of this compound (family-wise α = {ALPHA:g})"
        if p is not None:
            d["verdict"] = DIFFERENT if p < ALPHA else NOT_DISTINGUISHABLE
            d["styled"] = d["verdict"] == DIFFERENT


def _stat_dict(s) -> dict | None:
    return None if s is None else s.to_dict()


def result_to_dict(r: CompoundResult, residual: str | None = None) -> dict:
    c = r.compound
    if residual is None:
        residual = getattr(r.fit, "residual", None)
    return {
        "name": c.name, "ok": r.ok, "error": r.error, "polymer": c.polymer, "f": c.f, "notes": c.notes,
        "metadata": {k: (v if isinstance(v, (str, int, float, bool)) or v is None else str(v))
                     for k, v in c.metadata.items()},
        "test_temperature_K": r.test_temperature,
        "n": r.n, "main_mode": r.main_mode,
        "specimens": [s.to_dict() for s in r.specimens],
        "G0": _stat_dict(r.stats.get("G0")) or {"n": 0, "mean": None, "sd": None, "median": None, "ci95": None},
        "statistics": {k: _stat_dict(v) for k, v in r.stats.items()},
        "headline": None if r.headline is None else r.headline.to_dict(),
        "pooled": r.pooled,
        "fit_basis": fit_basis(r, residual) if r.ok else None,
        "provenance": c.provenance(),
        "parameters": [p.to_dict() for p in r.params],
        "quantities": {k: q.to_dict() for k, q in r.quantities.items()},
        "fit_quality": r.fit_quality,
        "crosslink_table": r.crosslink_rows,
        "crosslink_notes": r.crosslink_notes,
        "swelling": r.swelling_rows,
        "recipe": None if getattr(c, "recipe", None) is None else c.recipe.to_dict(),
        "ultimate": compound_ultimate(r),
        "warnings": list(r.warnings) + [str(n) for n in getattr(c, "recipe_notices", [])],
    }


def _exclusions(exclude) -> dict[str, dict[str, str]]:
    """``{compound: {specimen: reason}}`` from {compound: [specimens]} / {compound: {specimen: reason}} /
    {compound: [(specimen, reason)]}."""
    out: dict[str, dict[str, str]] = {}
    for comp, items in (exclude or {}).items():
        d = out.setdefault(str(comp), {})
        if isinstance(items, dict):
            d.update({str(k): str(v or "excluded by the user") for k, v in items.items()})
            continue
        for it in [items] if isinstance(items, str) else items:
            if isinstance(it, (tuple, list)):
                d[str(it[0])] = str(it[1]) if len(it) > 1 and it[1] else "excluded by the user"
            else:
                d[str(it)] = "excluded by the user"
    return out


def compare(compounds, model: str = "eight-chain", baseline: str | None = None,
            service_temperature: float | None = None,
            fitter=None, *, exclude=None, pool: bool = False, spread_models=None, holm: bool = False,
            residual: str | None = None) -> Comparison:
    """Fit ``model`` to every compound (pooled and specimen by specimen) and compare with ``baseline``.

    ``service_temperature`` in K (None: the test temperature); ``baseline`` defaults to the compound marked
    baseline, else the first.  ``exclude={compound: {specimen: reason}}`` (or a list of specimen names) keeps
    specimens out of the statistics, with the reason recorded.  ``pool=True`` allows files that state
    different compounds to be fitted as one.  ``spread_models``: the models whose spread is shown beside the
    headline (None: every registered model covering the compound's modes; ``()``: none).  ``holm=True``: verdicts
    family-wise over each compound's quantities (Holm), instead of one test per quantity at 5 %.  ``residual``: the
    weighting of every fit (None: ``fitting.DEFAULT_RESIDUAL``, as everywhere); a custom ``fitter`` is
    expected to use the same weighting."""
    from ..fitting import DEFAULT_RESIDUAL, fit_or_error

    residual = residual or DEFAULT_RESIDUAL
    if fitter is None and residual != DEFAULT_RESIDUAL:
        def fitter(mm, curves):
            return fit_or_error(mm, curves, residual=residual)
    if not compounds:
        raise ValueError("no compounds to compare; give at least one")
    names = [c.name for c in compounds]
    if len(set(names)) != len(names):
        raise ValueError(f"compound names must be unique; got {names}")
    m = get_model(model) if isinstance(model, str) else model
    if service_temperature is not None and not (150.0 < float(service_temperature) < 700.0):
        raise ValueError(f"service temperature {celsius(float(service_temperature)):.1f} °C is outside "
                         "−123…427 °C; give it in °C (e.g. 80C) or K (e.g. 353.15K)")
    if baseline is None:
        marked = [c.name for c in compounds if c.baseline]
        baseline = marked[0] if marked else names[0]
    elif baseline not in names:
        raise ValueError(f"baseline {baseline!r} is not one of the compounds ({', '.join(names)})")
    excl = _exclusions(exclude)
    unknown = set(excl) - set(names)
    if unknown:
        raise ValueError(f"exclusions name compound(s) {', '.join(sorted(unknown))} that are not compared")
    spread = list(MODELS) if spread_models is None else [get_model(x).name for x in spread_models]
    results = [analyse_compound(c, m, service_temperature, fitter, excl.get(c.name), spread, pool) for c in compounds]
    Ts = service_temperature if service_temperature is not None else (
        results[0].test_temperature if results else DEFAULT_TEST_TEMPERATURE)
    return Comparison(model=m.name, results=results, baseline=baseline, service_temperature=float(Ts),
                      notes=_notes(compounds, results) + ([HOLM_NOTE] if holm else []), exclusions=excl,
                      family_wise="holm" if holm else None, residual=residual)


#: the note a Holm comparison carries (README "Comparing compounds")
HOLM_NOTE = ("Family-wise verdicts (--holm): each compound's quantities against the baseline are judged together "
             "with Holm's step-down correction (Holm 1979), so the chance that equal compounds show any "
             "'different' stays at most 5 %; the intervals shown remain the per-quantity 95 % Welch intervals.")


def _notes(compounds, results) -> list:
    notes = [TEMPERATURE_NOTE,
             "Specimens are the unit: every specimen is fitted alone; values are specimen means and intervals are "
             "95 % intervals of the mean from specimen scatter with fit error (Student t, n − 1). With one "
             "specimen the scatter is unknown and no interval is shown.",
             "Verdicts against the baseline: " + VERDICT_WORDING,
             "Strand density ν (headline) and junction density μ_j = 2ν/f: basis stated beside every number; "
             "preferred basis: affine, entanglement part removed.",
             "Swelling ranges are χ ± 0.05, not statistical.",
             "Two G₀ per compound: the compound table's G₀ is the mean of the specimens' own fits; the crosslink "
             "table and the pooled G₀ come from one fit to all of the compound's curves — they differ by "
             "specimen scatter and by how the test modes pull the single fit (basis beside each number)."]
    if any(c.metadata.get("filler_phr") not in (None, 0, "0", "", 0.0) for c in compounds):
        notes.append("Filled compounds: ν is given with the filler reinforcement taken out by the Guth–Gold factor "
                     "where the filler volume fraction is known; Guth–Gold holds for well-dispersed, weakly "
                     "reinforcing filler at modest φ, so for carbon black treat ν as an estimate.")
    notes.extend(n for c in compounds for n in getattr(c, "recipe_notices", []))  # the recipe wins (issue #21)
    judged = [r for r in results if r.ok and r.n < 2]
    if judged:
        notes.append(Notice(f"{', '.join(r.name for r in judged)}: fewer than two specimens — verdicts against them "
                            f"read '{CANNOT_JUDGE}'", "one-specimen"))
    return notes


__all__ = ["VERDICT_QUANTITIES", "Comparison", "analyse_compound", "compare", "model_spread", "result_to_dict"]
