"""The Compare tab's state and the app's adapters to the core's comparison and report — no Panel import.

Compounds are not loaded here: they are formed from the session's one data store
(:class:`app.data_state.DataState`) — every file uploaded in any tab, grouped by compound, each compound
with its own polymer, functionality f and filler fraction.

The core's comparison API is used in two small adapters only, :func:`compare_compounds` and
:func:`make_report`; when the core's compare changes (per-specimen statistics), only they change.
"""

from __future__ import annotations

import param

from network_models.constants import ZERO_CELSIUS
from network_models.models import MODELS

from .data_state import CompoundInfo, DataState, FileStore, LoadedFile

DEFAULT_MODEL = "extended-tube"
STALE = "out of date — recompute"


# ----- adapters to the core ----------------------------------------------------------------------------
def build_compound(data: FileStore | DataState, name: str, files=None):
    """A core :class:`network_models.compounds.Compound` from the store: the compound's files (or the given
    ``files``), its polymer, f, filler fraction (as metadata, where the core reads it), swelling and notes."""
    from network_models.compounds import Compound

    info = data.compounds.get(name)
    if info is None:
        raise ValueError(f"there is no compound called {name!r} in this session")
    files = data.compound_files(name) if files is None else files
    curves = [c for f in files for c in f.curves]
    if not curves:
        raise ValueError(f"compound {name!r} has no test curves; upload its files in 'Test data & fits'")
    meta = dict(info.metadata)
    meta["filler_volume_fraction"] = float(info.filler)
    meta.setdefault("source", ", ".join(f.name for f in files))
    return Compound(name, curves, swelling=list(info.swelling), metadata=meta, polymer=info.polymer,
                    f=float(info.f), notes=info.notes, recipe=getattr(info, "recipe", None))


def compare_compounds(compounds: list, model: str, baseline: str | None, service_K: float | None):
    """The one call of :func:`network_models.compare.compare` in the app (through the process-level cache:
    a comparison of the bundled sample compounds is made once per server process, not once per session)."""
    from . import shared

    return shared.compare(compounds, model=model, baseline=baseline, service_temperature=service_K)


def make_report(comparison, title: str = "", purpose: str = ""):
    """The one construction of :class:`network_models.report.Report` in the app."""
    from network_models.report import Report

    return Report(comparison, title=title or "Compound design review", purpose=purpose)


def fit_report(data: DataState, title: str = "", units=None):
    """A single-compound report of the fit view's selection and model (the fit view's polymer, f and
    filler; stretch shown as ``units`` shows it).  Raises ValueError with a sentence when there is nothing to
    report."""
    files = [f for f in data.files if f.name in data.selected]
    if not files:
        raise ValueError("tick at least one file under 'Files in the fit' first")
    if not data.table_model:
        raise ValueError("no model was fitted: choose a model and fit first")
    from network_models.compounds import Compound

    name = data.selected_compound() or "selected files"
    meta = {"filler_volume_fraction": float(data.filler), "source": ", ".join(f.name for f in files)}
    info = data.compounds.get(name)
    comp = Compound(name, [c for f in files for c in f.curves], swelling=list(info.swelling) if info else [],
                    metadata=meta, polymer=data.polymer, f=float(data.f))
    cmp = compare_compounds([comp], data.table_model, None, None)
    from .display_units import displayed_comparison

    return make_report(displayed_comparison(cmp, units), title or f"Fit report: {name}", purpose="")


# ----- the tab's state ------------------------------------------------------------------------------------
class CompareState(param.Parameterized):
    """Choices of the Compare tab and its last comparison; compounds come from the data store."""

    chosen = param.ListSelector(default=[], objects=[], label="Compounds to compare")
    baseline = param.Selector(default=None, objects=[None], allow_None=True, label="Baseline")
    model = param.Selector(default=DEFAULT_MODEL, objects=list(MODELS), label="Model fitted to every compound")
    service_C = param.Number(default=80.0, bounds=(-60.0, 250.0), label="Service temperature (°C)")
    title = param.String(default="Compound design review", label="Report title")
    purpose = param.String(default="", label="Purpose of the review (one line)")
    comparison = param.Parameter(default=None, doc="the last Comparison")
    computed_with = param.Parameter(default=None, doc="the inputs the last comparison was computed with")
    scenario = param.String(default="")
    specs = param.String(default="", label="Specifications (one per line, e.g. G=0.55..0.68MPa or M100>=1.2MPa)",
                         doc="judged per compound on Compare (network_models.specs; the design-target grammar)")

    def __init__(self, data: DataState | None = None, study_source=None, **params):
        super().__init__(**params)
        #: the fit tab's state (its selection: "compare the selected files") and the session's file store
        self.data = data if data is not None else DataState()
        self.store = self.data.store
        #: the session's ``Session.study`` (set by the session): the comparison is the study's, cached there
        self.study_source = study_source
        self.store.param.watch(lambda *e: self._sync(), ["compounds"])
        self._sync()

    def _sync(self):
        """Follow the store: new compounds are offered (and chosen), vanished ones dropped."""
        names = self.store.compound_names()
        old = list(self.param.chosen.objects)
        new = [n for n in names if n not in old]
        self.param.chosen.objects = names
        self.param.baseline.objects = [None, *names]
        with param.parameterized.batch_call_watchers(self):
            self.chosen = [n for n in self.chosen if n in names] + new
            if self.baseline not in names:
                hint = self.store.manifest_baseline
                self.baseline = hint if hint in names else (names[0] if names else None)

    def use_samples_title(self):
        if self.store.manifest_title:
            self.scenario = self.store.manifest_title
            if self.title == self.param.title.default:
                self.title = self.store.manifest_title

    # ----- staleness ----------------------------------------------------------------------------------
    def inputs(self) -> tuple:
        """Everything the comparison depends on (choices, service temperature, the store's revision)."""
        return (tuple(self.chosen), self.baseline, self.model, float(self.service_C), self.store.revision,
                tuple(self.spec_lines()))

    def spec_lines(self) -> list[str]:
        """The specification rows typed on the tab (blank lines dropped; each row is data, never markup)."""
        return [x.strip() for x in str(self.specs or "").splitlines() if x.strip()][:50]

    @property
    def stale(self) -> bool:
        """True when an input changed after the last comparison (its tables and downloads are old)."""
        return self.comparison is not None and self.computed_with != self.inputs()

    def run(self):
        if not self.chosen:
            raise ValueError("choose at least one compound to compare")
        if self.study_source is not None:
            st = self.study_source()
            missing = [n for n in self.chosen if n not in st.names]
            if missing:
                raise ValueError(f"compound {missing[0]!r} has no test curves; upload its files in 'Test data & fits'")
            cmp = st.comparison()
        else:
            comps = [build_compound(self.store, n) for n in self.chosen]
            base = self.baseline if self.baseline in self.chosen else None
            cmp = compare_compounds(comps, self.model, base, self.service_C + ZERO_CELSIUS)
        from network_models.specs import parse_spec

        for text in self.spec_lines():  # a row that cannot be read: a sentence, the rows stay as typed
            parse_spec(text)
        cmp.specs = self.spec_lines()
        with param.parameterized.batch_call_watchers(self):
            self.computed_with = self.inputs()
            self.comparison = cmp
        return cmp

    def report(self):
        if self.comparison is None:
            raise ValueError("press Compare first: there is no comparison to put in a report yet")
        if self.stale:
            raise ValueError(f"the comparison is {STALE}: press Compare, then download")
        from .display_units import displayed_comparison

        # stretch shown as the session shows it (λ or elongation; issue #21) — a copy, the comparison stays as is
        return make_report(displayed_comparison(self.comparison, getattr(self, "display_units", None)), self.title,
                           self.purpose)

    # ----- compounds made in code or from files (kept for scripts and tests written against the old tab) --
    def _set(self, comps: dict, chosen=None, baseline=None):
        """Put core ``Compound`` objects into the store (their curves, polymer, f, filler, swelling), then
        choose ``chosen`` with ``baseline``."""
        files, infos = list(self.store.files), dict(self.store.compounds)
        for name, c in comps.items():
            files = [f for f in files if f.group != name]
            files.append(LoadedFile(name=f"{name} (curves)", group=name, curves=list(c.curves),
                                    detected_mode=c.curves[0].mode.value if c.curves else "uniaxial"))
            infos[name] = CompoundInfo(polymer=c.polymer, f=float(c.f), filler=float(c.filler_fraction),
                                       notes=c.notes, metadata=dict(c.metadata), swelling=list(c.swelling))
        self.store.set_files(files, compounds=infos)
        with param.parameterized.batch_call_watchers(self):
            if chosen is not None:
                self.chosen = [n for n in chosen if n in self.param.chosen.objects]
            if baseline in self.param.baseline.objects:
                self.baseline = baseline

    def add_uploads(self, name: str, files: list[tuple[str, bytes]], mode: str | None = None, polymer="NR",
                    f: float = 4.0, filler: float = 0.0, notes: str = ""):
        """A compound from uploaded files (filename, bytes) with its own recipe; it joins the store (and so
        the data tab).  Returns the core Compound.  Raises ValueError with a sentence; nothing changes then."""
        name = (name or "").strip()
        if not name:
            raise ValueError("give the new compound a name before adding its files")
        if name in self.store.compounds:
            raise ValueError(f"there is already a compound called {name!r}; choose another name")
        if not files:
            raise ValueError("choose one or more test files for the new compound first")
        opts = {"mode": mode} if mode else {}
        loaded = [self.store.add_upload(fn, data, compound=name, **opts) for fn, data in files]
        self.store.accept_uploads(loaded, CompoundInfo(polymer=polymer, f=float(f), filler=float(filler),
                                                      notes=notes))
        return build_compound(self.store, name)
