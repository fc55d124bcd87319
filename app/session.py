"""One browser session's states, made once and handed to every view — no Panel import.

``Session()`` holds the explorer's :class:`NetworkState`, the one file store :class:`FileStore` (``store``:
files and compounds every tab reads), the fit tab's :class:`DataState` (``data``, a separate object holding that
store), the Compare tab's :class:`CompareState` (over that store), the swelling form's
:class:`SwellState`, the Design tab's :class:`DesignState` and the display units — and the session's one
:class:`network_models.study.Study` (:meth:`Session.study`): the store's compounds with the settings the tabs
write (Compare: model, baseline, service temperature, chosen compounds; fit view: residual weighting; Design:
targets and model).  The comparison the Compare tab shows is the study's, so its fits are cached per data and
weighting and a setting that does not change a fit never refits.  It also turns itself into a project file
and back; a reopened project's saved results are kept, marked out of date, until the comparison is recomputed.
"""

from __future__ import annotations

import logging
from dataclasses import replace

from network_models.project import Project, ProjectCompound, ProjectInput, read_project, write_project

from .compare_state import CompareState, build_compound
from .data_state import CompoundInfo, DataState, FileStore, LoadedFile
from .design_state import DesignState
from .display_units import DisplayUnits
from .state import NetworkState
from .swell_state import SwellState

log = logging.getLogger("netstretch.app")

#: the settings a project file keeps, per section: (state attribute, parameter names)
SETTINGS = {
    "network": ("network", ("polymer", "nu", "couple_N", "N_free", "T_C", "f", "filler", "entanglements",
                            "models", "lam_max", "lam_follows_data", "clamp_stretch", "expansion")),
    "fit": ("data", ("fit_models", "residual", "polymer", "f", "filler", "table_model")),
    "compare": ("compare", ("chosen", "baseline", "model", "service_C", "title", "purpose")),
    "display": ("units", ("stress", "density", "stretch")),
    # compound first: restoring it fills the recipe and stated χ, which the saved form values then override
    "swelling": ("swell", ("compound", "dry_g", "swollen_g", "extracted_g", "solvent", "polymer", "chi", "f",
                           "filler", "T_C")),
    "design": ("design", ("targets", "model", "polymer", "T_C", "filler", "f", "N", "entanglements", "axis")),
}


class Session:
    def __init__(self):
        self.network = NetworkState()
        #: the session's file store (files and compounds every tab reads) and the fit tab's state, two objects:
        #: the fit state holds the store (``data.store is store``) and follows its files
        self.store = FileStore()
        self.data = DataState(store=self.store)
        self.compare = CompareState(data=self.data)
        self.swell = SwellState()
        self.design = DesignState()
        self.design.dose_compounds = self._dose_compounds  # the Design tab's dose window reads the store
        self.units = DisplayUnits()
        self.compare.display_units = self.units  # the Compare tab's tables follow the stretch display (#21)
        self._study = None  # (store revision, Study)
        self.compare.study_source = self.study
        #: the results summary of a reopened project, shown as out of date until the comparison is recomputed
        self.saved_results: dict = {}

    # ----- the study -----------------------------------------------------------------------------------
    def _dose_compounds(self) -> list:
        """The store's compounds that have curves, as core Compounds (with their recipes) for a dose ladder."""
        from .compare_state import build_compound

        return [build_compound(self.data, n) for n in self.data.compounds if self.data.compound_files(n)]

    def study(self):
        """The session's one study: the store's compounds (rebuilt only when the store changes, so fits stay
        cached) with the settings the tabs hold now."""
        from network_models.study import Study

        from . import shared

        d, c, store = self.data, self.compare, self.store
        if self._study is None or self._study[0] != store.revision:
            comps = []
            for name in store.compound_names():
                try:
                    comps.append(build_compound(store, name))
                except ValueError:  # a compound without curves yet: not part of the comparison
                    continue
            self._study = (store.revision, Study(comps, title=c.title, purpose=c.purpose,
                                             fit_function=shared.fit_or_error, compare_function=shared.compare))
        st = self._study[1]
        from network_models.constants import ZERO_CELSIUS

        chosen = tuple(n for n in c.chosen if n in st.names)
        st.title, st.purpose = c.title, c.purpose
        st.update(model=c.model, residual=d.residual, service_temperature=float(c.service_C) + ZERO_CELSIUS,
                  baseline=c.baseline if c.baseline in chosen else None, chosen=chosen,
                  design_targets=tuple(self.design.targets), design_model=self.design.model)
        return st

    @property
    def results_out_of_date(self) -> bool:
        """True while a reopened project's saved results stand in for a comparison not yet recomputed, or when
        the shown comparison is older than the settings."""
        return (bool(self.saved_results) and self.compare.comparison is None) or self.compare.stale

    # ----- project files --------------------------------------------------------------------------------
    def settings(self) -> dict:
        out = {}
        for section, (attr, names) in SETTINGS.items():
            obj = getattr(self, attr)
            out[section] = {n: (list(v) if isinstance(v := getattr(obj, n), (list, tuple)) else v) for n in names}
        return out

    def results_summary(self) -> dict:
        """Headline numbers when saved (SI): each fit's G₀, AIC and RMS per mode; the comparison's model."""
        fit = {}
        for name, r in self.data.results.items():
            fit[name] = {"G0_Pa": float(r.small_strain_modulus), "aic": float(r.aic),
                         **{f"rms_{m.value}_Pa": float(s.rms) for m, s in r.modes.items()}}
        out = {"fit": fit}
        if self.design.result is not None:
            r = self.design.result
            out["design"] = {"feasible": bool(r.feasible), "targets": list(self.design.targets),
                             **({"nu_low": r.window.lo, "nu_high": r.window.hi} if r.window else {})}
        cmp = self.compare.comparison
        if cmp is not None:
            out["compare"] = {"model": cmp.model, "compounds": list(cmp.names),
                              "service_temperature_K": float(cmp.service_temperature),
                              "up_to_date": not self.compare.stale}
        return out

    def to_project(self, title: str = "") -> bytes:
        from network_models import __version__

        d = self.data
        inputs = []
        for f in d.files:
            if f.data is None and f.path is None:  # curves made in code: kept as one CSV per curve
                inputs += [ProjectInput(name=f"{f.name} {c.name}.csv", data=curve_csv(c), compound=f.group,
                                        options={"mode": c.mode.value}, selected=f.name in d.selected,
                                        conditions=dict(f.conditions))
                           for c in f.curves]
                continue
            data = f.data if f.data is not None else f.path.read_bytes()
            inputs.append(ProjectInput(name=f.name, data=data, compound=f.group, options=dict(f.options),
                                       selected=f.name in d.selected, conditions=dict(f.conditions)))
        from network_models.study import recipe_record

        comps = [ProjectCompound(name=n, polymer=i.polymer, f=i.f, filler_volume_fraction=i.filler, notes=i.notes,
                                 metadata=dict(i.metadata), swelling=[s.to_dict() for s in i.swelling],
                                 **recipe_record(i))  # the recipe travels with the study (issue #21)
                 for n, i in d.compounds.items()]
        settings = self.settings()
        try:
            settings["study"] = self.study().settings.to_dict()
        except ValueError as exc:  # e.g. a chosen compound without curves: the tabs' own sections still hold it
            log.info("study settings not saved: %s", exc)
        return write_project(Project(settings=settings, inputs=inputs, compounds=comps,
                                     results=self.results_summary(), title=title or self.compare.title,
                                     netstretch_version=__version__))

    def load_project(self, source) -> list[str]:
        """Replace this session's files, compounds and settings by a project's (zip bytes or path).
        Returns sentences about settings that could not be restored; raises ValueError when the file
        cannot be used at all (then nothing changes)."""
        from network_models.compounds import SwellingTest
        from network_models.labfiles import read_curves_bytes

        proj = read_project(source)
        files, seen, cond_problems = [], set(), []
        for inp in proj.inputs:
            if inp.kind != "curves":  # a swelling table or force–temperature record: its rows are in [[compound]]
                continue
            curves = read_curves_bytes(inp.data, inp.name, **inp.options)
            name = inp.name
            while name in seen:
                name = "copy of " + name
            seen.add(name)
            conds = {}
            if inp.conditions:  # the user's test conditions, checked again (the file may have been edited)
                from network_models.conditions import apply_conditions, check_conditions

                conds, bad = check_conditions(inp.conditions)
                cond_problems.extend(f"{name}: {e} — that condition was not restored" for e in bad.values())
                apply_conditions(curves, conds)
            files.append(LoadedFile(name=name, group=inp.compound or "uploaded", curves=curves,
                                    detected_mode=curves[0].mode.value if curves else "uniaxial", data=inp.data,
                                    options=dict(inp.options), digest="", conditions=conds))
        comps = {}
        for c in proj.compounds:
            tests = [SwellingTest(**{k: v for k, v in s.items() if k in _SWELL_FIELDS}) for s in c.swelling]
            recipe = None
            if c.recipe:
                from network_models.recipes import Recipe, ingredient_rows

                recipe = Recipe.from_phr(c.recipe, ingredient_rows(c.ingredients, "project file"),
                                         where=f"project file: compound {c.name!r}: recipe")
            comps[c.name] = CompoundInfo(polymer=c.polymer, f=c.f, filler=c.filler_volume_fraction, notes=c.notes,
                                         metadata=dict(c.metadata), swelling=tests, recipe=recipe)
        problems = list(getattr(proj, "notices", [])) + cond_problems  # fields of the file that were ignored
        d = self.data
        self.store.manifest_title, self.store.manifest_note = "", ""
        selected = [i.name for i in proj.inputs if i.selected]
        d.results, d.failures = {}, {}
        self.store.set_files(files, selected, compounds={**comps, **{f.group: replace(CompoundInfo()) for f in files
                                                            if f.group not in comps}})
        from network_models import MODELS

        d.param.table_model.objects = [None, *MODELS]  # the fit that follows narrows it to the fitted models
        for section, (attr, names) in SETTINGS.items():
            values = proj.settings.get(section, {})
            obj = getattr(self, attr)
            for n in names:
                if n not in values:
                    continue
                try:
                    obj.param.update(**{n: values[n]})
                except (ValueError, TypeError) as exc:
                    problems.append(f"setting {section}.{n} = {values[n]!r} was not restored ({exc})")
        study = proj.settings.get("study", {})
        if study and "compare" not in proj.settings:  # a project the command line wrote: its study settings
            from network_models.constants import ZERO_CELSIUS

            try:
                self.compare.param.update(**{k: v for k, v in (
                    ("model", study.get("model")), ("baseline", study.get("baseline")),
                    ("service_C", None if study.get("service_temperature_K") is None
                     else float(study["service_temperature_K"]) - ZERO_CELSIUS)) if v is not None})
                if study.get("design_targets"):
                    self.design.targets = list(study["design_targets"])
            except (ValueError, TypeError) as exc:
                problems.append(f"the project's study settings were not all restored ({exc})")
        self.compare.comparison = None  # nothing of the old session stays on screen
        self.design.param.update(result=None, map=None, advice=None, models=None)
        self.saved_results = dict(proj.results)  # shown out of date until the comparison is recomputed
        self._study = None
        return problems


def curve_csv(c) -> bytes:
    """One curve as a CSV the reader reads back exactly (stretch and nominal stress in Pa, 17 digits)."""
    head = f"# mode: {c.mode.value}\n" + (f"# temperature: {c.temperature} K\n" if c.temperature else "")
    rows = "\n".join(f"{a!r},{b!r}" for a, b in zip(c.stretch.tolist(), c.stress.tolist(), strict=True))
    return (head + "stretch,nominal stress (Pa)\n" + rows + "\n").encode("utf-8")


_SWELL_FIELDS = ("dry", "swollen", "solvent", "chi", "extracted", "temperature", "specimen", "source")

__all__ = ["Session", "SETTINGS"]
