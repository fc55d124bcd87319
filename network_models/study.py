"""A study: the compounds under review, their test records, the analysis settings and the results derived
from them — one object, so every command, the report and the app read a compound the same way.

    >>> from network_models.study import Study
    >>> st = Study.from_manifest("sample_sets/compounds.toml")          # or .from_specs([...]), .from_project(zip)
    >>> st.update(service_temperature=353.15, exclusions={"QM-S1": {"S1-4": "torn at the grip"}})
    >>> cmp = st.comparison()               # computed once per settings change; fits are cached per data + fit choice
    >>> st.pooled("QM-S2")                  # one fit to the compound's counted curves: model, G₀ (Pa), residual
    >>> st.values()                         # one row per (compound, quantity, basis): the study's one answer
    >>> open("s.zip", "wb").write(st.to_project())                     # the project file is the study

What a study holds:

* **compounds** (:class:`network_models.compounds.Compound`): key, polymer, f, filler volume fraction, χ choices
  (in each swelling test), recipe facts and notes (metadata), their curves of every mode (specimens are grouped
  from them) and swelling tests; **force–temperature records** of the study;
* **inputs**: every file the study was built from, byte for byte (for the project file);
* **settings** (:class:`Settings`): model, residual weighting, χ source, entanglement policy, service
  temperature, baseline, exclusions, pooling, design targets, specifications;
* **derived results**, computed on demand and cached.  Caching is keyed on what each result depends on, so a
  setting that does not change a fit never refits: every fit is cached on (model, residual weighting, the
  curves' identities); the comparison on the settings it reads; the design window on its targets and setup.
  Changing the service temperature, the baseline, an exclusion or χ re-runs only the cheap arithmetic.

A study reopened from a project file is ``stale`` (its saved results are shown as out of date) until a result
is recomputed.  The study asks the core's own code — :func:`network_models.compare.compare` (which calls the
fitting and crosslink code) and :func:`network_models.design.design` — and nothing else computes these numbers.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, field, fields, replace
from pathlib import Path
from typing import Any

from .compounds import Compound, SwellingTest
from .errors import UserError
from .fitting import DEFAULT_RESIDUAL, RESIDUALS
from .project import Project, ProjectCompound, ProjectInput, read_project, write_project

#: the comparison's default model: it separates the crosslink (G_c) and entanglement (G_e) parts and locks
DEFAULT_MODEL = "extended-tube"
#: where the Flory–Huggins χ of a swelling test comes from
CHI_SOURCES = ("manifest", "table")
#: entanglement policy of the headline ν (the comparison's one rule: removed where a positive crosslink part
#: is left, else counted and labelled so — network_models.compare.specimens)
ENTANGLEMENT_POLICIES = ("removed",)


def _exclusion_tuple(exclusions) -> tuple:
    """``{compound: {specimen: reason}}`` (or the other forms compare accepts) → sorted tuple of triples."""
    from .compare.core import _exclusions

    if isinstance(exclusions, tuple) and all(isinstance(x, tuple) and len(x) == 3 for x in exclusions):
        return tuple(sorted(exclusions))
    return tuple(sorted((c, s, why) for c, d in _exclusions(exclusions).items() for s, why in d.items()))


@dataclass(frozen=True)
class Settings:
    """The analysis settings of a study (immutable: change them with :meth:`Study.update`)."""

    model: str = DEFAULT_MODEL
    residual: str = DEFAULT_RESIDUAL
    chi_source: str = "manifest"  # "manifest": a χ given with the swelling data wins; "table": solvent table
    entanglements: str = "removed"
    service_temperature: float | None = None  # K; None: the test temperature
    baseline: str | None = None
    exclusions: tuple = ()  # ((compound, specimen, reason), ...)
    pool: bool = False
    spread_models: tuple | None = None  # None: every registered model covering the compound's modes
    design_targets: tuple = ()
    design_model: str = "affine"
    specifications: tuple = ()
    chosen: tuple | None = None  # the compounds compared (None: all, in the study's order)
    holm: bool = False  # family-wise verdicts over each compound's quantities (Holm)

    def __post_init__(self):
        from .models import get_model

        if self.residual not in RESIDUALS:
            raise UserError(f"residual weighting {self.residual!r}: use one of {', '.join(RESIDUALS)}")
        if self.chi_source not in CHI_SOURCES:
            raise UserError(f"χ source {self.chi_source!r}: use one of {', '.join(CHI_SOURCES)}")
        if self.entanglements not in ENTANGLEMENT_POLICIES:
            raise UserError(f"entanglement policy {self.entanglements!r}: the one policy is 'removed' (the "
                            "entanglement part is removed where a positive crosslink part is left)")
        object.__setattr__(self, "model", get_model(self.model).name)
        object.__setattr__(self, "design_model", get_model(self.design_model).name)
        object.__setattr__(self, "exclusions", _exclusion_tuple(self.exclusions))
        object.__setattr__(self, "design_targets", tuple(str(t) for t in self.design_targets))
        object.__setattr__(self, "specifications", tuple(str(t) for t in self.specifications))
        if self.spread_models is not None:
            object.__setattr__(self, "spread_models", tuple(self.spread_models))
        if self.chosen is not None:
            object.__setattr__(self, "chosen", tuple(str(c) for c in self.chosen))
        if self.service_temperature is not None:
            object.__setattr__(self, "service_temperature", float(self.service_temperature))

    @property
    def exclusion_dict(self) -> dict[str, dict[str, str]]:
        out: dict[str, dict[str, str]] = {}
        for c, s, why in self.exclusions:
            out.setdefault(c, {})[s] = why
        return out

    def to_dict(self) -> dict:
        """Plain values for ``[settings.study]`` of the project file (None left out by the writer)."""
        return {"model": self.model, "residual": self.residual, "chi_source": self.chi_source,
                "entanglements": self.entanglements, "service_temperature_K": self.service_temperature,
                "baseline": self.baseline, "exclusions": self.exclusion_dict, "pool": self.pool,
                "spread_models": None if self.spread_models is None else list(self.spread_models),
                "design_targets": list(self.design_targets), "design_model": self.design_model,
                "specifications": list(self.specifications),
                "chosen": None if self.chosen is None else list(self.chosen), "holm": self.holm}

    @classmethod
    def from_dict(cls, d: dict) -> Settings:
        d = dict(d or {})
        if "service_temperature_K" in d:
            d["service_temperature"] = d.pop("service_temperature_K")
        known = {f.name for f in fields(cls)}
        unknown = sorted(set(d) - known)
        if unknown:
            raise UserError(f"project settings: unknown setting(s) {', '.join(unknown)}; this file was written by "
                            "another version of netstretch")
        for k in ("design_targets", "specifications", "spread_models", "chosen"):
            if d.get(k) is not None:
                d[k] = tuple(d[k])
        return cls(**d)


# ----- the cached fitter -----------------------------------------------------------------------------------
class _FitCache:
    """``fitter(model, curves)`` for :func:`network_models.compare.compare`: ``fit_or_error`` with the study's
    residual weighting, each result kept per (model, weighting, curve identities)."""

    def __init__(self, limit: int = 2000, fit_function=None):
        self._fits: dict = {}
        self.fit_function = fit_function  # None: fitting.fit_or_error (the app passes its process-level cache)
        self.limit = limit
        self.calls = 0  # fits actually made (the benchmark and the tests read it)

    def fitter(self, residual: str):
        from .fitting import fit_or_error

        fit_or_error = self.fit_function or fit_or_error

        def fit(model, curves):
            key = (model.name, residual, tuple(id(c) for c in curves))
            hit = self._fits.get(key)
            if hit is None:
                self.calls += 1
                hit = fit_or_error(model, curves, residual=residual)
                if len(self._fits) < self.limit:
                    self._fits[key] = hit
            return hit

        return fit


@dataclass
class Study:
    """Compounds, their test records, the analysis settings and the cached results (module text)."""

    compounds: list[Compound]
    settings: Settings = field(default_factory=Settings)
    title: str = ""
    purpose: str = ""
    inputs: list[ProjectInput] = field(default_factory=list)
    force_temperature: list = field(default_factory=list)  # ForceTemperatureRecord
    #: True for a study reopened from a project until a result is recomputed
    stale: bool = False
    #: the results summary a reopened project carried (for showing, marked out of date)
    saved_results: dict = field(default_factory=dict)
    #: a reopened project's other ``[settings.<section>]`` tables (the app's), written back by ``to_project``
    extra_settings: dict = field(default_factory=dict)
    #: the fit call behind every fit (None: ``fitting.fit_or_error``); same signature and weighting keyword
    fit_function: object = None
    #: the comparison call (None: ``compare.compare``); the app passes its process-level cache of the
    #: sample set's comparisons (same keywords, ``fitter`` included)
    compare_function: object = None

    def __post_init__(self):
        names = [c.name for c in self.compounds]
        dup = sorted({n for n in names if names.count(n) > 1})
        if dup:
            raise UserError(f"compound name(s) {', '.join(dup)} appear more than once in the study")
        self._fits = _FitCache(fit_function=self.fit_function)
        self._results: dict = {}
        self._chi_table: dict = {}

    # ----- settings ---------------------------------------------------------------------------------------
    def update(self, **changes: Any) -> Settings:
        """Change settings (unknown names and bad values are refused with a sentence); results that depend
        on a changed setting are recomputed when next asked for."""
        known = {f.name for f in fields(Settings)}
        bad = sorted(set(changes) - known)
        if bad:
            raise UserError(f"unknown study setting(s) {', '.join(bad)}; settings are {', '.join(sorted(known))}")
        self.settings = replace(self.settings, **changes)
        return self.settings

    @property
    def names(self) -> list[str]:
        return [c.name for c in self.compounds]

    def __getitem__(self, name: str) -> Compound:
        for c in self.compounds:
            if c.name == name:
                return c
        raise KeyError(f"no compound {name!r} in the study; it has {', '.join(self.names)}")

    @property
    def fits_made(self) -> int:
        """How many fits the study has actually run (cache misses)."""
        return self._fits.calls

    # ----- derived results ------------------------------------------------------------------------------
    def _cached(self, what: str, key, make):
        k = (what, key)
        if k not in self._results:
            self._results[k] = make()
            self.stale = False
        return self._results[k]

    def _analysed_compounds(self) -> list[Compound]:
        """The compounds as the comparison sees them: with χ from the manifest, or every χ from the table."""
        comps = self.compounds
        if self.settings.chosen is not None:
            missing = [n for n in self.settings.chosen if n not in self.names]
            if missing:
                raise UserError(f"compound(s) {', '.join(missing)} chosen for the comparison are not in the study")
            comps = [self[n] for n in self.settings.chosen]
        if self.settings.chi_source == "manifest":
            return comps
        key = tuple(id(c) for c in comps)
        if self._chi_table.get("key") != key:
            self._chi_table = {"key": key, "compounds": [
                replace(c, swelling=[replace(s, chi=None) for s in c.swelling]) for c in comps]}
        return self._chi_table["compounds"]

    def comparison(self) -> Any:
        """The comparison of every compound (:class:`network_models.compare.Comparison`), once per settings."""
        from .compare import compare

        s = self.settings
        key = (s.model, s.residual, s.chi_source, s.service_temperature, s.baseline, s.exclusions, s.pool,
               s.spread_models, s.chosen, s.holm, tuple(id(c) for c in self.compounds))
        def make():
            comps = self._analysed_compounds()
            names = {c.name for c in comps}
            # a baseline outside the app's chosen subset falls back to compare's default; an unknown one is refused
            base = s.baseline if s.chosen is None or s.baseline in names else None
            return (self.compare_function or compare)(
                comps, model=s.model, baseline=base, service_temperature=s.service_temperature,
                fitter=self._fits.fitter(s.residual), exclude={c: d for c, d in s.exclusion_dict.items() if c in names},
                pool=s.pool, spread_models=s.spread_models, residual=s.residual, **({"holm": True} if s.holm else {}))

        return self._cached("comparison", key, make)

    def pooled(self, name: str) -> dict | None:
        """One fit to the compound's counted curves: {model, G0 (Pa), residual, ...} (None when it failed)."""
        return self.comparison()[name].pooled

    def design(self, compound: str | None = None) -> Any:
        """The design window for the study's targets (``settings.design_targets``) on the polymer, f, filler
        and test temperature of ``compound`` (default: the baseline); None without targets."""
        from .design import design

        s = self.settings
        if not s.design_targets:
            return None
        c = self[compound or s.baseline or self.names[0]]
        T = c.temperature() or 296.15
        key = (s.design_targets, s.design_model, c.polymer, c.f, c.filler_fraction, T)
        return self._cached("design", key, lambda: design(list(s.design_targets), model=s.design_model,
                                                          polymer=c.polymer, temperature=T, f=c.f,
                                                          filler=c.filler_fraction))

    def values(self) -> list[dict]:
        """The study's one answer: one row per (compound, quantity, basis) with its value (SI) — what every
        view, command and report of this study shows."""
        return study_values(self.comparison().to_dict())

    # ----- building ----------------------------------------------------------------------------------------
    @classmethod
    def from_manifest(cls, path=None, **settings: Any) -> Study:
        """From a manifest (either format; default: the bundled sample set), keeping its files' bytes."""
        from .compounds import load_manifest

        man = load_manifest(path)
        inputs = manifest_inputs(Path(man.path))
        st = cls(man.compounds, title=man.title, purpose=man.purpose, inputs=inputs,
                 force_temperature=man.force_temperature_records(),
                 settings=Settings(**({"baseline": man.baseline} | settings)))
        return st

    @classmethod
    def from_specs(cls, specs, *, polymer: str = "NR", f: float = 4.0, read_options=None, **settings: Any) -> Study:
        """From ``NAME=FILE[,FILE...]`` strings (the CLI's ``--compound``)."""
        from .compounds import load_compound, parse_spec

        comps, inputs = [], []
        for spec in specs:
            name, files = parse_spec(spec)
            comps.append(load_compound(name, files, polymer=polymer, f=f, read_options=read_options))
            inputs += [ProjectInput(name=Path(p).name, data=Path(p).read_bytes(), compound=name,
                                    options=dict(read_options or {})) for p in files]
        return cls(comps, inputs=inputs, settings=Settings(**settings))

    @classmethod
    def from_project(cls, source) -> Study:
        """From a project file (path or zip bytes): the inputs re-read with their stored options, the stored
        compounds and settings.  The study is ``stale`` until a result is recomputed."""
        from .labfiles import read_force_temperature
        from .labfiles.api import read_curves_bytes

        proj = read_project(source)
        curves: dict[str, list] = {}
        ft = []
        for inp in proj.inputs:
            if inp.kind == "curves":
                read = read_curves_bytes(inp.data, inp.name, **inp.options)
                if inp.conditions:  # test conditions the user stated in the app (checked again; issue #21)
                    from .conditions import apply_conditions, check_conditions

                    apply_conditions(read, check_conditions(inp.conditions)[0])
                curves.setdefault(inp.compound, []).extend(read)
            elif inp.kind == "force-temperature":
                ft.append(read_force_temperature(inp.data, inp.name))
        comps = []
        for pc in proj.compounds:
            meta = dict(pc.metadata)
            meta.setdefault("filler_volume_fraction", pc.filler_volume_fraction)
            tests = [SwellingTest(**{k: v for k, v in s.items() if k in _SWELL_FIELDS}) for s in pc.swelling]
            recipe = None
            if pc.recipe:  # the recipe travels with the study (issue #21)
                from .recipes import Recipe, ingredient_rows

                recipe = Recipe.from_phr(pc.recipe, ingredient_rows(pc.ingredients, "project file"),
                                         where=f"project file: compound {pc.name!r}: recipe")
            comps.append(Compound(name=pc.name, curves=curves.pop(pc.name, []), swelling=tests, metadata=meta,
                                  polymer=pc.polymer, f=pc.f, notes=pc.notes, baseline=pc.baseline, recipe=recipe))
        for name, cs in curves.items():  # inputs of a compound the file does not describe: defaults
            comps.append(Compound(name=name or "uploaded", curves=cs))
        settings = Settings.from_dict(proj.settings.get("study", {}))
        extra = {k: v for k, v in proj.settings.items() if k != "study"}
        st = cls(comps, settings=settings, title=proj.title, purpose=proj.purpose, inputs=list(proj.inputs),
                 force_temperature=ft, stale=True, saved_results=dict(proj.results), extra_settings=extra)
        if "study" not in proj.settings:
            st._legacy_compare_settings(extra.get("compare"))
        return st

    def _legacy_compare_settings(self, cmp) -> None:
        """A file written before ``[settings.study]`` existed (an older app save or results-library export):
        its ``[settings.compare]`` model, baseline and chosen compounds — what the app restores from it — become
        the study's settings, so the command line and the app read it alike."""
        if not isinstance(cmp, dict):
            return
        chosen = [n for n in cmp.get("chosen") or [] if n in self.names and self[n].curves]
        changes: dict = {"chosen": tuple(chosen)} if chosen and chosen != self.names else {}
        if isinstance(cmp.get("model"), str):
            changes["model"] = cmp["model"]
        if cmp.get("baseline") in (chosen or self.names):
            changes["baseline"] = cmp["baseline"]
        self.update(**changes)

    def to_project(self, extra_settings: dict | None = None) -> bytes:
        """The project file (zip bytes): inputs byte for byte, compounds, every setting, a results summary
        (when results were computed).  ``extra_settings``: further ``[settings.<section>]`` (the app's; None:
        those the study was opened with)."""
        from . import __version__

        if not self.inputs:
            raise UserError("this study was not built from files, so it has no inputs to store; build it with "
                            "Study.from_manifest, from_specs or from_project")
        swell_src = next((i.name for i in self.inputs if i.kind == "swelling"), "")
        comps = [ProjectCompound(name=c.name, polymer=c.polymer, f=c.f, filler_volume_fraction=c.filler_fraction,
                                 notes=c.notes, metadata=dict(c.metadata), baseline=c.baseline,
                                 swelling_source=swell_src if c.swelling else "",
                                 swelling=[_swelling_record(s) for s in c.swelling],
                                 **recipe_record(c)) for c in self.compounds]
        results = {}
        k = [key for key in self._results if key[0] == "comparison"]
        if k:
            cmp = self._results[k[-1]]
            results["study"] = {"model": cmp.model, "up_to_date": not self.stale,
                                "headline_mol_m3": {r.name: r.headline.value for r in cmp.results
                                                    if r.headline is not None and r.headline.value is not None}}
        extra = self.extra_settings if extra_settings is None else extra_settings
        settings = {"study": self.settings.to_dict(), **{k: v for k, v in extra.items() if k != "study"}}
        return write_project(Project(settings=settings, inputs=list(self.inputs), compounds=comps, results=results,
                                     title=self.title, purpose=self.purpose, netstretch_version=__version__))


def recipe_record(c) -> dict:
    """A compound's recipe for the project file: phr and the ingredient rows not in the built-in table."""
    r = getattr(c, "recipe", None)
    if r is None:
        return {}
    rows = [{"name": i.name, "kind": i.kind, "soluble": i.soluble, "density_g_cm3": i.density / 1000.0,
             "source": i.source} for i in r.items.values() if i.origin not in ("built-in", "polymer table")]
    return {"recipe": dict(r.phr), "ingredients": rows}


_SWELL_FIELDS = ("dry", "swollen", "solvent", "chi", "extracted", "temperature", "specimen", "source")


def _swelling_record(s: SwellingTest) -> dict:
    """A swelling test for the project file, its source named by file name only (no machine path)."""
    d = s.to_dict()
    src = str(d.get("source") or "")
    if ", line " in src:
        head, _, line = src.rpartition(", line ")
        src = f"{Path(head).name}, line {line}"
    elif src:
        src = Path(src).name
    d["source"] = src
    return d


def manifest_inputs(path: Path) -> list[ProjectInput]:
    """Every file a manifest names, as project inputs (bytes, compound, reader options, kind) — both formats."""
    from .compounds import _manifest_entries

    doc = tomllib.loads(path.read_text("utf-8")) if path.suffix.lower() != ".json" else __import__(
        "json").loads(path.read_text("utf-8"))
    out = []
    if isinstance(doc, dict) and ("scenario" in doc or any(
            isinstance(e, dict) and "key" in e and "name" not in e for e in doc.get("compound", []))):
        from .labfiles.manifest import manifest_index

        index = manifest_index(doc, path)
        for entry in index:
            for cf in entry.curve_files:
                out.append(ProjectInput(name=cf.path.name, data=cf.path.read_bytes(), compound=entry.key,
                                        options={"mode": cf.mode.value} if cf.mode else {}))
        if index.swelling is not None:
            out.append(ProjectInput(name=index.swelling.name, data=index.swelling.read_bytes(), compound="",
                                    kind="swelling"))
        for p in index.force_temperature:
            out.append(ProjectInput(name=p.name, data=p.read_bytes(), compound="", kind="force-temperature"))
        return out
    for e in _manifest_entries(doc):
        files = e.get("files", e.get("file", []))
        files = [files] if isinstance(files, str) else list(files)
        for fn in files:
            p = path.parent / fn
            out.append(ProjectInput(name=p.name, data=p.read_bytes(), compound=str(e["name"]),
                                    options=dict(e.get("read_options", {}))))
    return out


# ----- the one answer --------------------------------------------------------------------------------------
def study_values(doc: dict) -> list[dict]:
    """Rows {compound, quantity, basis, value, unit} from a comparison's JSON document (``compare --json``,
    the report's JSON, ``Study.comparison().to_dict()``): G₀ (specimen mean and pooled fit), the headline ν,
    every crosslink-table row (pooled fit) and the swelling ν.  The basis names what makes two numbers of one
    quantity differ."""
    rows = []
    for c in doc.get("compounds", []):
        name = c["name"]
        fb = c.get("fit_basis") or {}

        def add(q, basis, v, unit, name=name):
            if v is not None:
                rows.append({"compound": name, "quantity": q, "basis": basis, "value": v, "unit": unit})

        g = c.get("G0") or {}
        add("G0", fb.get("G0", {}).get("label", "specimen mean"), g.get("mean"), "Pa")
        p = c.get("pooled") or {}
        add("G0", fb.get("pooled", {}).get("label", "pooled fit"), p.get("G0"), "Pa")
        h = c.get("headline") or {}
        add("nu", f"{h.get('basis')}; {fb.get('headline', {}).get('label', '')}", h.get("value"), "mol/m³")
        for r in c.get("crosslink_table") or []:
            add("nu", f"pooled fit; crosslink row {r['key']}", r.get("strand_density"), "mol/m³")
        sw = (c.get("quantities") or {}).get("nu_swelling") or {}
        add("nu_swelling", sw.get("basis", "swelling"), sw.get("value"), "mol/m³")
    return rows


__all__ = ["CHI_SOURCES", "DEFAULT_MODEL", "ENTANGLEMENT_POLICIES", "Settings", "Study", "manifest_inputs",
           "study_values"]
