"""The session's file store and the fit tab's state: two classes, two objects — no Panel import.

:class:`FileStore` is the one store every tab reads (``Session.store``): the files the user loaded (bytes kept
so per-file settings can re-read them and a project file can hold them) and the compound each file belongs to
with that compound's polymer, functionality and filler (:class:`CompoundInfo`).  :class:`DataState` is the fit
tab's state (``Session.data``) and *holds* a store (``DataState.store``, composition): the files chosen for the
fit, the models, the weighting, the fit results and the crosslink table.  The store knows nothing of a
selection; it tells its subscribers (:meth:`FileStore.subscribe`) which files a change points at (new uploads,
the sample set's baseline), and a fit state picks them.  Views watch the store's ``files``/``compounds``/
``revision`` on ``state.store`` and the fit's ``selected``/``results`` on the state.  For the fit tab's own
code and scripts, a DataState also reads and loads through its store (``files``, ``compounds``, ``get``,
``add_upload``, ``load_samples`` ... are the store's).  A file that cannot be read raises a ``ValueError``
whose message names the file and what to do; the state is left exactly as it was.
"""

from __future__ import annotations

import hashlib
import logging
import math
import re
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np
import param

from network_models import MODELS, MODES, Mode, get_model, polymers
from network_models.fitting import DEFAULT_RESIDUAL, RESIDUALS

from . import shared  # process-level read-only sample cache (app/shared.py)
from .state import DATA_COLOURS, model_colour

log = logging.getLogger("netstretch.app")

#: Upload cap, bytes (20 MB): larger files are refused with a message before they are parsed.
MAX_UPLOAD_BYTES = 20_000_000

DEFAULT_FIT_MODELS = ["eight-chain", "extended-tube", "non-affine-tube", "mooney-rivlin"]
#: after a fit, the crosslink table (and the explorer) uses the first of these that was fitted (data, in
#: the one place the app states a preference between models), else the first fitted model
PREFERRED_TABLE_MODELS = ("extended-tube", "eight-chain", "non-affine-tube")
#: reader options a user can give for a file (and the missing-items form asks for), with unit and label
GEOMETRY_ITEMS = {"gauge_length": ("mm", "Gauge length"), "width": ("mm", "Width"),
                  "thickness": ("mm", "Thickness"), "area": ("mm²", "Cross-section area")}


def _testdata():
    """The file readers (:mod:`network_models.labfiles`), loaded when a file is first read."""
    from network_models import labfiles

    return labfiles


@dataclass
class CompoundInfo:
    """What the store knows of one compound besides its curves: recipe facts the analysis needs."""

    polymer: str = "NR"
    f: float = 4.0
    filler: float = 0.0  # filler volume fraction φ of the dry compound
    notes: str = ""
    metadata: dict = field(default_factory=dict)
    swelling: list = field(default_factory=list)  # network_models.compounds.SwellingTest
    recipe: object = None  # network_models.recipes.Recipe from the manifest's [compound.recipe], or None


def compound_from_filename(filename: str, curves=()) -> str:
    """The compound a file belongs to: the curves' ``compound`` metadata, else the file name up to its
    first '_' or space ('QM-S3_uniaxial_psi.txt' → 'QM-S3'), else the file name's stem."""
    for c in curves:
        v = (getattr(c, "metadata", {}) or {}).get("compound")
        if v:
            return str(v).strip()
    stem = Path(filename).stem
    stem = re.sub(r"\s*\(\d+\)$", "", stem)
    head = re.split(r"[_ ]", stem, maxsplit=1)[0]
    return head or stem or "uploaded"


def missing_items(exc) -> list[str] | None:
    """The items a reader error says are missing (``DataError.fields["missing"]``), or None."""
    fields = getattr(exc, "fields", None)
    if not isinstance(fields, dict):
        return None
    miss = fields.get("missing")
    return [str(m) for m in miss] if miss else None


@dataclass
class LoadedFile:
    name: str  # unique display name
    group: str  # the compound the file belongs to (manifest key, metadata, file-name prefix or the user's)
    curves: list
    detected_mode: str
    data: bytes | None = None  # upload bytes (None: read from ``path``)
    path: Path | None = None
    options: dict = field(default_factory=dict)  # reader options in SI (mode, gauge_length, width, thickness)
    polymer: str | None = None
    filler_fraction: float = 0.0
    digest: str = ""
    #: test conditions the user stated or corrected (network_models.conditions field → text; issue #21):
    #: written into every curve's metadata, kept across a re-read, saved in the project file
    conditions: dict = field(default_factory=dict)

    @property
    def n_points(self) -> int:
        return int(sum(len(c) for c in self.curves))

    @property
    def modes(self) -> list[str]:
        return sorted({c.mode.value for c in self.curves})

    def notices(self) -> list[str]:
        out = []
        for c in self.curves:
            out.extend(f"{c.name}: {n}" for n in c.notices)
        return out

    def geometry_mm(self) -> dict:
        """Gauge length, width, thickness (mm) as detected from the file's metadata (None when absent)."""
        meta = self.curves[0].metadata if self.curves else {}
        out = {}
        for key in ("gauge_length", "width", "thickness"):
            v = self.options.get(key, meta.get(key))
            out[key] = None if v is None else float(v) * 1000.0
        return out


def _digest(data: bytes) -> str:
    return hashlib.sha1(data).hexdigest()[:12]


class FileStore(param.Parameterized):
    """The session's file store — the one place every tab reads files and compounds from: the loaded files
    (bytes kept, so per-file settings can re-read them and a project file can hold them), the compound each
    file belongs to with that compound's recipe facts (:class:`CompoundInfo`), a revision counter and the
    sample set's title/baseline.  No fit state: a :class:`DataState` holds a store and subscribes to it
    (:meth:`subscribe`) to follow which files a change points at; ``new_compound_info`` (a callable, set by the
    fit state) gives the recipe of a compound new to the store."""

    files = param.List(default=[], item_type=LoadedFile, doc="loaded files, in load order")
    compounds = param.Dict(default={}, doc="compound name -> CompoundInfo (every compound a file belongs to)")
    revision = param.Integer(default=0, doc="counts every change of files or compounds (for stale marks)")
    manifest_title = param.String(default="")
    manifest_note = param.String(default="")
    manifest_baseline = param.String(default="", doc="the sample set's baseline compound")

    def __init__(self, **params):
        super().__init__(**params)
        self._subscribers: list = []
        #: () -> CompoundInfo for a compound new to the store (None: the defaults); the fit state sets it
        self.new_compound_info = None

    # ----- who follows the store ------------------------------------------------------------------
    def subscribe(self, fn) -> None:
        """``fn(names, selected)`` is called inside every :meth:`set_files` change with the new file names and
        the files the change points at (None: keep what you had) — how a fit state follows the store."""
        self._subscribers.append(fn)

    def _default_info(self) -> CompoundInfo:
        """The recipe a compound new to the store gets when none is given."""
        return self.new_compound_info() if self.new_compound_info is not None else CompoundInfo()

    # ----- loading -----------------------------------------------------------------------------
    def _unique(self, name: str) -> str:
        names = {f.name for f in self.files}
        if name not in names:
            return name
        stem, dot, ext = name.rpartition(".")
        i = 2
        while True:
            cand = f"{stem} ({i}).{ext}" if dot else f"{name} ({i})"
            if cand not in names:
                return cand
            i += 1

    def set_files(self, files: list[LoadedFile], selected: list[str] | None = None, compounds=None,
                  new_info: CompoundInfo | None = None):
        """Replace the store's files (and compounds; and tell the subscribers — a fit state picks ``selected``) in
        one change: one revision, one redraw.  Compounds no file belongs to any more are dropped; a new group gets
        ``new_info`` (or ``_default_info()``)."""
        names = [f.name for f in files]
        comps = dict(compounds if compounds is not None else self.compounds)
        for f in files:
            if f.group not in comps:
                comps[f.group] = replace(new_info) if new_info is not None else self._default_info()
        used = {f.group for f in files}
        comps = {k: v for k, v in comps.items() if k in used}
        with param.parameterized.batch_call_watchers(self):
            self.compounds = comps
            self.files = files
            for fn in self._subscribers:
                fn(names, selected)
            self.revision += 1

    # ----- compounds ----------------------------------------------------------------------------
    def compound_names(self) -> list[str]:
        return list(self.compounds)

    def compound_files(self, name: str) -> list[LoadedFile]:
        return [f for f in self.files if f.group == name]

    def set_compound_info(self, name: str, **changes):
        """Change one compound's polymer, f, filler or notes (checked here, so a bad value is a sentence)."""
        if name not in self.compounds:
            raise ValueError(f"there is no compound called {name!r}")
        if "polymer" in changes and changes["polymer"] not in polymers():
            raise ValueError(f"unknown polymer {changes['polymer']!r}; choose one of {', '.join(polymers())}")
        if "f" in changes and not (3.0 <= float(changes["f"]) <= 64.0):
            raise ValueError(f"junction functionality f = {changes['f']} is outside 3…64")
        if "filler" in changes and not (0.0 <= float(changes["filler"]) < 0.5):
            raise ValueError(f"filler volume fraction {changes['filler']} is outside 0…0.5")
        comps = dict(self.compounds)
        comps[name] = replace(comps[name], **changes)
        with param.parameterized.batch_call_watchers(self):
            self.compounds = comps
            self.revision += 1

    def set_conditions(self, file_name: str, values: dict) -> dict:
        """The user's test conditions for one file (field → typed text; blank = as the file says): the fields
        that pass go into the file's curves' metadata (one revision, so the report and Compare follow); returns
        field → sentence for those that did not (the caller shows them beside the control, keeping the text)."""
        from network_models.conditions import apply_conditions, check_conditions

        f = self.get(file_name)
        clean, errors = check_conditions(values)
        # a field not given, or given badly, keeps its last good value
        kept = {k: v for k, v in f.conditions.items() if k not in values or k in errors}
        f.conditions = {**kept, **clean}
        apply_conditions(f.curves, f.conditions)
        self.revision += 1
        return errors

    def assign(self, file_name: str, compound: str):
        """Put one file into another (possibly new) compound: the user's edit of the automatic grouping."""
        compound = (compound or "").strip()
        if not compound:
            raise ValueError("give the compound a name")
        f = self.get(file_name)
        comps = dict(self.compounds)
        if compound not in comps:
            comps[compound] = replace(comps.get(f.group, CompoundInfo()), swelling=[], metadata={})
        self.set_files([replace(x, group=compound) if x.name == file_name else x for x in self.files],
                        compounds=comps)

    def load_samples(self, manifest_path=None) -> list[str]:
        """Load the bundled sample sets (or a manifest); select the baseline compound's files.
        Returns plain-language problems (a missing sample file does not stop the others)."""
        td = _testdata()
        man = td.read_manifest(manifest_path)
        self.manifest_title, self.manifest_note = man.title, man.note
        problems, files = [], list(self.files)
        comps = dict(self.compounds)
        try:
            swell = man.swelling_results()
            raw = tomllib.loads(Path(man.path).read_text("utf-8")).get("swelling", {})
            chi = raw.get("chi") if isinstance(raw, dict) else None  # the set's stated χ, as `netstretch report`
        except (ValueError, OSError) as exc:
            problems.append(str(exc))
            swell, chi = [], None
        for comp in man:
            comps[comp.key] = _manifest_info(comp, swell, chi)
            for cf in comp.curve_files:
                try:
                    curves = shared.sample_curves(cf.path, cf.mode)  # read once per server process
                except (ValueError, OSError) as exc:
                    problems.append(str(exc))
                    continue
                files.append(LoadedFile(
                    name=self._unique(cf.path.name), group=comp.key, curves=curves,
                    detected_mode=curves[0].mode.value if curves else "uniaxial", path=cf.path,
                    options={"mode": cf.mode.value} if cf.mode else {}, polymer=comp.polymer,
                    filler_fraction=comp.filler_fraction))
        baseline = man.info.get("baseline") or (man.compounds[0].key if man.compounds else None)
        self.manifest_baseline = baseline or ""
        sel = [f.name for f in files if f.group == baseline]
        self.set_files(files, sel, compounds=comps)
        return problems

    def add_upload(self, filename: str, data: bytes, compound: str | None = None, **options) -> LoadedFile:
        """Read an uploaded file (``options``: reader options in SI, e.g. the geometry the missing-items
        form asked for).  Returns the file; :meth:`accept_uploads` adds it.  Raises ValueError with a
        sentence (a reader error may list ``fields["missing"]``: see :func:`missing_items`)."""
        name = Path(str(filename or "upload.csv")).name or "upload.csv"
        if data is None or len(data) == 0:
            raise ValueError(f"{name}: the file is empty; it needs a header row and rows of numbers")
        if len(data) > MAX_UPLOAD_BYTES:
            raise ValueError(f"{name}: the file is {len(data) / 1e6:.1f} MB, over the "
                             f"{MAX_UPLOAD_BYTES / 1e6:.0f} MB upload limit; export only the test curves")
        digest = _digest(bytes(data))
        for f in self.files:
            if f.data is not None and f.digest == digest and not options:
                return f  # the same upload again: nothing new
        td = _testdata()
        opts = {k: v for k, v in options.items() if v is not None}
        curves = td.read_curves_bytes(bytes(data), name, **opts)
        if not curves:
            raise ValueError(f"{name}: no test curve found; the file needs a stretch/strain column and a "
                             "stress/force column")
        group = (compound or "").strip() or compound_from_filename(name, curves)
        return LoadedFile(name=self._unique(name), group=group, curves=curves, detected_mode=curves[0].mode.value,
                          data=bytes(data), digest=digest, options=opts)

    def accept_uploads(self, loaded: list[LoadedFile], recipe: CompoundInfo | None = None):
        """Add read uploads to the store and make them the fit selection; a compound new to the store gets
        ``recipe`` (polymer, f, filler; default: the fit view's current values)."""
        if not loaded:
            return
        files = list(self.files) + [f for f in loaded if f not in self.files]
        self.set_files(files, [f.name for f in loaded], new_info=recipe)

    def remove(self, name: str):
        self.set_files([f for f in self.files if f.name != name])

    def get(self, name: str) -> LoadedFile:
        for f in self.files:
            if f.name == name:
                return f
        raise KeyError(f"no loaded file called {name!r}")

    def set_options(self, name: str, mode: str | None = None, gauge_mm=None, width_mm=None, thickness_mm=None):
        """Re-read one file with the user's settings (mm at the edge, SI to the reader)."""
        f = self.get(name)
        opts = {}
        if mode:
            opts["mode"] = Mode.parse(mode).value
        for key, v in (("gauge_length", gauge_mm), ("width", width_mm), ("thickness", thickness_mm)):
            if v is not None and v != "":
                x = float(v)
                if not (math.isfinite(x) and x > 0):
                    raise ValueError(f"{name}: {key.replace('_', ' ')} must be a positive number of mm; got {v!r}")
                opts[key] = x / 1000.0
        td = _testdata()
        if f.data is not None:
            curves = td.read_curves_bytes(f.data, f.name, **opts)
        else:
            curves = td.read_curves(f.path, **opts)
        if f.conditions:  # the user's test conditions survive a re-read
            from network_models.conditions import apply_conditions

            apply_conditions(curves, f.conditions)
        new = replace(f, curves=curves, options=opts)
        self.set_files([new if x.name == name else x for x in self.files])
        return new


#: the store's reading and loading API, which a DataState offers through its store (``state.files`` is
#: ``state.store.files``); watch these on ``state.store``
STORE_ATTRIBUTES = ("files", "compounds", "revision", "manifest_title", "manifest_note", "manifest_baseline")
STORE_METHODS = ("set_files", "compound_names", "compound_files", "set_compound_info", "set_conditions", "assign",
                 "add_upload",
                 "accept_uploads", "remove", "get", "set_options")


class DataState(param.Parameterized):
    """The fit tab's state, holding the session's file store (``store``, a :class:`FileStore` — its own object,
    shared with every tab): the files chosen for the fit, the models, the residual weighting, the
    polymer/f/filler the fit view shows, the fit results and the crosslink table.  ``DataState()`` alone makes
    its own store (scripts, tests)."""

    store = param.ClassSelector(class_=FileStore, instantiate=False, constant=True,
                                doc="the session's file store (every tab's files and compounds)")
    selected = param.ListSelector(default=[], objects=[], label="Files in the fit")

    fit_models = param.ListSelector(default=list(DEFAULT_FIT_MODELS), objects=list(MODELS), label="Models to fit")
    residual = param.Selector(default=DEFAULT_RESIDUAL, objects=list(RESIDUALS), label="Residual")
    polymer = param.Selector(default="NR", objects=list(polymers()), label="Polymer of the tested compound")
    f = param.Number(default=4.0, bounds=(3.0, 64.0), label="Junction functionality f")
    filler = param.Number(default=0.0, bounds=(0.0, 0.45), label="Filler volume fraction φ")
    table_model = param.Selector(default=None, objects=[None], allow_None=True,
                                 label="Crosslink table from the fit of")
    results = param.Dict(default={}, doc="model name -> FitResult")
    failures = param.Dict(default={}, doc="model name -> sentence why the fit failed")

    def __init__(self, store: FileStore | None = None, **params):
        super().__init__(store=store if store is not None else FileStore(), **params)
        #: the last fit's inputs (curve ids, models, weighting, polymer), its results and curves (held, so the
        #: ids cannot be reused): run_fit with the same inputs and those results still shown does not refit
        self._fit_key, self._fit_results, self._fit_curves = None, None, None
        self.store.subscribe(self._select)
        self.store.new_compound_info = self._default_info
        self.store.param.watch(lambda *e: self._prefill_from_selection(), ["compounds"])
        self._select([f.name for f in self.store.files], None)

    # ----- the store, through this state ---------------------------------------------------------------
    def __getattr__(self, name):
        # only reached when normal lookup fails: the store's attributes and methods (STORE_*), nothing else
        if name in STORE_ATTRIBUTES or name in STORE_METHODS:
            return getattr(self.store, name)
        raise AttributeError(f"{type(self).__name__!r} object has no attribute {name!r}")

    def _select(self, names, selected):
        """The store changed its files: offer them, keep the chosen ones that remain (or take the ones the
        change points at)."""
        with param.parameterized.batch_call_watchers(self):
            self.param.selected.objects = names
            self.selected = [n for n in (selected if selected is not None else self.selected) if n in names]

    def _default_info(self) -> CompoundInfo:
        return CompoundInfo(polymer=self.polymer, f=float(self.f), filler=float(self.filler))

    def load_samples(self, manifest_path=None) -> list[str]:
        """The store's :meth:`FileStore.load_samples`, then the fit view shows the selected (baseline)
        compound's recipe."""
        problems = self.store.load_samples(manifest_path)
        self._prefill_from_selection()
        return problems

    def selected_compound(self) -> str | None:
        """The compound of the fit selection when it is one compound, else None."""
        groups = {f.group for f in self.files if f.name in self.selected}
        return groups.pop() if len(groups) == 1 else None

    @param.depends("selected", watch=True)
    def _prefill_from_selection(self):
        """The fit view shows the recipe of the compound it fits (kept in step when either changes)."""
        info = self.compounds.get(self.selected_compound() or "")
        if info is not None:
            with param.parameterized.batch_call_watchers(self):
                if info.polymer in self.param.polymer.objects:
                    self.polymer = info.polymer
                self.f = float(info.f)
                self.filler = float(info.filler)

    @param.depends("polymer", "f", "filler", watch=True)
    def _recipe_to_compound(self):
        """The fit view's polymer, f and filler belong to the compound being fitted: keep them with it."""
        name = self.selected_compound()
        info = self.compounds.get(name or "")
        if info is not None and (info.polymer, info.f, info.filler) != (self.polymer, float(self.f),
                                                                        float(self.filler)):
            self.set_compound_info(name, polymer=self.polymer, f=float(self.f), filler=float(self.filler))

    # ----- what the views draw -------------------------------------------------------------------
    def selected_curves(self) -> list:
        out = []
        for f in self.files:
            if f.name in self.selected:
                out.extend(f.curves)
        return out

    def overlay_points(self) -> dict:
        """Selected data per mode, λ and MPa, with a colour per specimen curve (cycled) and its label
        'file · curve' (one legend entry each, for every stress plot)."""
        out = {m.value: {"x": [], "y": [], "color": [], "file": []} for m in MODES}
        i = 0
        for f in self.files:
            if f.name not in self.selected:
                continue
            for c in f.curves:
                col = DATA_COLOURS[i % len(DATA_COLOURS)]
                i += 1
                d = out[c.mode.value]
                d["x"].extend(c.stretch.tolist())
                d["y"].extend((c.stress / 1e6).tolist())
                d["color"].extend([col] * len(c))
                d["file"].extend([f"{f.name} · {c.name}"] * len(c))
        return out


    # ----- fitting ------------------------------------------------------------------------------
    def run_fit(self) -> list[str]:
        """Fit every chosen model to the selected curves.  Returns sentences about models that could not
        be fitted (the others still are)."""
        from .shared import fit_or_error  # sample-set fits made once per server process; others fitted here

        curves = self.selected_curves()
        if not curves:
            self.results, self.failures = {}, {}
            if not self.files:
                return []  # nothing loaded yet: nothing to say
            raise ValueError("no test curves selected: tick at least one loaded file under 'Files in the fit'")
        key = (tuple(id(c) for c in curves), tuple(self.fit_models), self.residual, self.polymer)
        if key == self._fit_key and self.results is self._fit_results:
            return list(self.failures.values())  # the same curves, models and weighting: the fits stand
        data_modes = {c.mode for c in curves}
        results, failures = {}, {}
        for name in self.fit_models:
            m = get_model(name)
            missing = [md.value for md in data_modes if not m.supports(md)]
            if missing:
                failures[name] = (f"{m.title}: defined for {', '.join(x.value for x in m.modes)} only, so it "
                                  f"was not fitted to the {', '.join(missing)} data")
                continue
            res = fit_or_error(m, curves, residual=self.residual, polymer=self.polymer)
            if isinstance(res, ValueError):
                failures[name] = f"{m.title}: {res}"
            else:
                results[name] = res
        names = list(results)
        self.param.table_model.objects = names or [None]
        with param.parameterized.batch_call_watchers(self):
            self.results, self.failures = results, failures
            if self.table_model not in names:
                self.table_model = self._preferred(names)
        self._fit_key, self._fit_results, self._fit_curves = key, results, curves
        return list(failures.values())

    @staticmethod
    def _preferred(names):
        return next((n for n in PREFERRED_TABLE_MODELS if n in names), names[0] if names else None)

    def fitted_curves(self, n: int = 200) -> dict:
        """For each mode: λ grid over the data (a little beyond) and each fitted model's stress (MPa)."""
        curves = self.selected_curves()
        out = {}
        for mode in MODES:
            cs = [c for c in curves if c.mode is mode]
            hi = max((float(np.max(c.stretch)) for c in cs), default=3.0)
            lam = np.linspace(1.0, hi * 1.05, n)
            cols = {"lam": lam}
            for name in MODELS:
                r = self.results.get(name)
                if r is None or not r.model_obj.supports(mode):
                    cols[name] = np.full(n, np.nan)
                else:
                    with np.errstate(all="ignore"):
                        cols[name] = np.asarray(r.predict(mode, lam), dtype=float) / 1e6
            out[mode.value] = cols
        return out

    def residual_points(self) -> dict:
        """Per mode: λ, model − data (MPa), colour and model name of every fitted model at every data point."""
        out = {m.value: {"x": [], "y": [], "color": [], "model": []} for m in MODES}
        curves = self.selected_curves()
        for name, r in self.results.items():
            for c in curves:
                if not r.model_obj.supports(c.mode):
                    continue
                with np.errstate(all="ignore"):
                    pred = np.asarray(r.predict(c.mode, c.stretch), dtype=float)
                res = (pred - c.stress) / 1e6
                ok = np.isfinite(res)
                d = out[c.mode.value]
                d["x"].extend(c.stretch[ok].tolist())
                d["y"].extend(res[ok].tolist())
                d["color"].extend([model_colour(name)] * int(ok.sum()))
                d["model"].extend([r.title] * int(ok.sum()))
        return out

    def warnings(self) -> list:
        """The fits' notices (``errors.Notice`` where the core gives one, else plain sentences), each led by
        its model's name, then the models that could not be fitted (kind 'fit-failed')."""
        from network_models.errors import Notice, about

        out = []
        for r in self.results.values():
            out.extend(about(r.title, w) for w in r.warnings)
            # the plotted predictions past the data (fitted_curves' grid): flagged when implausible (issue #20)
            for mode in r.model_obj.modes:
                tops = [float(np.max(c.stretch)) for c in self.selected_curves() if c.mode is mode]
                loud = r.extrapolation_note(mode, np.linspace(1.0, max(tops, default=3.0) * 1.05, 50))
                if loud is not None:
                    out.append(about(r.title, loud))
        return out + [Notice(t, "fit-failed") for t in self.failures.values()]

    def crosslink_table(self):
        """The crosslink-density assumption table from the chosen fit (None without a fit)."""
        from network_models.crosslinks import from_fit

        r = self.results.get(self.table_model) if self.table_model else None
        if r is None:
            return None
        return from_fit(r, polymer=self.polymer, f=float(self.f), filler_fraction=float(self.filler))




def _manifest_info(comp, swell_rows, chi=None) -> CompoundInfo:
    """A sample-set compound's recipe facts and swelling tests for the store."""
    from network_models.compounds import SwellingTest

    info = dict(comp.info)
    meta = {"title": comp.title} if comp.title and comp.title != comp.key else {}
    meta.update({k: v for k, v in info.items() if k not in ("notes", "note", "f", "baseline", "recipe")})
    tests = []
    for r in swell_rows:
        if r.compound in (comp.key, comp.title):
            try:
                tests.append(SwellingTest.from_record(r, chi=chi))
            except ValueError as exc:  # one bad row does not hide the compound
                log.info("swelling row skipped: %s", exc)
    return CompoundInfo(polymer=comp.polymer, f=float(info.get("f", 4.0)), filler=float(comp.filler_fraction),
                        notes=str(info.get("notes", info.get("note", ""))), metadata=meta, swelling=tests,
                        recipe=comp.recipe)


from .swell_state import SwellState  # noqa: E402  (re-exported: it used to live here)

__all__ = ["CompoundInfo", "DataState", "FileStore", "LoadedFile", "MAX_UPLOAD_BYTES", "SwellState",
           "compound_from_filename", "missing_items"]
