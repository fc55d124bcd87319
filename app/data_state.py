"""Session state for test data, fits, crosslink tables and swelling — no Panel import.

One :class:`DataState` per browser session holds the files the user loaded (bytes kept so per-file
settings can re-read them), the files chosen for the fit, the fit results and the crosslink table.
A file that cannot be read raises a ``ValueError`` whose message names the file and what to do;
the state is left exactly as it was.
"""

from __future__ import annotations

import hashlib
import logging
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import param

from network_models import MODELS, MODES, Mode, get_model, polymers

from . import shared  # process-level read-only sample cache (app/shared.py)
from .state import DATA_COLOURS, model_colour, sig

log = logging.getLogger("netstretch.app")

#: Upload cap, bytes (20 MB): larger files are refused with a message before they are parsed.
MAX_UPLOAD_BYTES = 20_000_000

DEFAULT_FIT_MODELS = ["eight-chain", "extended-tube", "non-affine-tube", "mooney-rivlin"]


def _testdata():
    """The readers (network_models.testdata); imported lazily so a missing piece gives a message."""
    from network_models import testdata

    return testdata


@dataclass
class LoadedFile:
    name: str  # unique display name
    group: str  # compound key from a manifest, or "uploaded"
    curves: list
    detected_mode: str
    data: bytes | None = None  # upload bytes (None: read from ``path``)
    path: Path | None = None
    options: dict = field(default_factory=dict)  # reader options in SI (mode, gauge_length, width, thickness)
    polymer: str | None = None
    filler_fraction: float = 0.0
    digest: str = ""

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


class DataState(param.Parameterized):
    """Loaded test files, fit choices and results of one session."""

    files = param.List(default=[], item_type=LoadedFile, doc="loaded files, in load order")
    selected = param.ListSelector(default=[], objects=[], label="Files in the fit")
    fit_models = param.ListSelector(default=list(DEFAULT_FIT_MODELS), objects=list(MODELS), label="Models to fit")
    residual = param.Selector(default="relative", objects=["relative", "absolute"], label="Residual")
    polymer = param.Selector(default="NR", objects=list(polymers()), label="Polymer of the tested compound")
    f = param.Number(default=4.0, bounds=(3.0, 64.0), label="Junction functionality f")
    filler = param.Number(default=0.0, bounds=(0.0, 0.45), label="Filler volume fraction φ")
    table_model = param.Selector(default=None, objects=[None], allow_None=True,
                                 label="Crosslink table from the fit of")
    results = param.Dict(default={}, doc="model name -> FitResult")
    failures = param.Dict(default={}, doc="model name -> sentence why the fit failed")
    manifest_title = param.String(default="")
    manifest_note = param.String(default="")

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

    def _set_files(self, files: list[LoadedFile], selected: list[str] | None = None):
        names = [f.name for f in files]
        self.param.selected.objects = names
        sel = [n for n in (selected if selected is not None else self.selected) if n in names]
        with param.parameterized.batch_call_watchers(self):
            self.files = files
            self.selected = sel

    def load_samples(self, manifest_path=None) -> list[str]:
        """Load the bundled sample sets (or a manifest); select the baseline compound's files.
        Returns plain-language problems (a missing sample file does not stop the others)."""
        td = _testdata()
        man = td.read_manifest(manifest_path)
        self.manifest_title, self.manifest_note = man.title, man.note
        problems, files = [], list(self.files)
        for comp in man:
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
        sel = [f.name for f in files if f.group == baseline]
        self._set_files(files, sel)
        self._prefill_from_selection()
        return problems

    def add_upload(self, filename: str, data: bytes) -> LoadedFile:
        """Read an uploaded file and add it (selected for the fit on its own with other new uploads).
        Raises ValueError with a sentence; nothing changes then."""
        name = Path(str(filename or "upload.csv")).name or "upload.csv"
        if data is None or len(data) == 0:
            raise ValueError(f"{name}: the file is empty; it needs a header row and rows of numbers")
        if len(data) > MAX_UPLOAD_BYTES:
            raise ValueError(f"{name}: the file is {len(data) / 1e6:.1f} MB, over the "
                             f"{MAX_UPLOAD_BYTES / 1e6:.0f} MB upload limit; export only the test curves")
        digest = _digest(bytes(data))
        for f in self.files:
            if f.group == "uploaded" and f.digest == digest:
                return f  # the same file again: nothing new
        td = _testdata()
        curves = td.read_curves_bytes(bytes(data), name)
        if not curves:
            raise ValueError(f"{name}: no test curve found; the file needs a stretch/strain column and a "
                             "stress/force column")
        lf = LoadedFile(name=self._unique(name), group="uploaded", curves=curves,
                        detected_mode=curves[0].mode.value, data=bytes(data), digest=digest)
        return lf

    def accept_uploads(self, loaded: list[LoadedFile]):
        """Add read uploads to the session and make them the fit selection."""
        if not loaded:
            return
        files = list(self.files) + [f for f in loaded if f not in self.files]
        self._set_files(files, [f.name for f in loaded])

    def remove(self, name: str):
        self._set_files([f for f in self.files if f.name != name])

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
        new = LoadedFile(name=f.name, group=f.group, curves=curves, detected_mode=f.detected_mode, data=f.data,
                         path=f.path, options=opts, polymer=f.polymer, filler_fraction=f.filler_fraction,
                         digest=f.digest)
        self._set_files([new if x.name == name else x for x in self.files])
        return new

    def _prefill_from_selection(self):
        groups = {f.group for f in self.files if f.name in self.selected}
        comp = [f for f in self.files if f.name in self.selected and f.polymer]
        if len(groups) == 1 and comp:
            with param.parameterized.batch_call_watchers(self):
                if comp[0].polymer in self.param.polymer.objects:
                    self.polymer = comp[0].polymer
                self.filler = float(comp[0].filler_fraction)

    # ----- what the views draw -------------------------------------------------------------------
    def selected_curves(self) -> list:
        out = []
        for f in self.files:
            if f.name in self.selected:
                out.extend(f.curves)
        return out

    def file_colour(self, name: str) -> str:
        names = [f.name for f in self.files]
        i = names.index(name) if name in names else 0
        return DATA_COLOURS[i % len(DATA_COLOURS)]

    def overlay_points(self) -> dict:
        """Selected data per mode, λ and MPa, with a colour per file (for every stress plot)."""
        out = {m.value: {"x": [], "y": [], "color": [], "file": []} for m in MODES}
        for f in self.files:
            if f.name not in self.selected:
                continue
            col = self.file_colour(f.name)
            for c in f.curves:
                d = out[c.mode.value]
                d["x"].extend(c.stretch.tolist())
                d["y"].extend((c.stress / 1e6).tolist())
                d["color"].extend([col] * len(c))
                d["file"].extend([f"{f.name} · {c.name}"] * len(c))
        return out

    def preview_rows(self, name: str, n: int = 8) -> list[dict]:
        f = self.get(name)
        rows = []
        for c in f.curves:
            for lam, P in list(zip(c.stretch, c.stress, strict=True))[:n]:
                rows.append({"curve": c.name, "mode": c.mode.value, "stretch λ": f"{lam:.4f}",
                             "nominal stress (MPa)": f"{P / 1e6:.4f}"})
        return rows

    # ----- fitting ------------------------------------------------------------------------------
    def run_fit(self) -> list[str]:
        """Fit every chosen model to the selected curves.  Returns sentences about models that could not
        be fitted (the others still are)."""
        from .shared import fit  # sample-set fits made once per server process; other curves fitted here

        curves = self.selected_curves()
        if not curves:
            self.results, self.failures = {}, {}
            if not self.files:
                return []  # nothing loaded yet: nothing to say
            raise ValueError("no test curves selected: tick at least one loaded file under 'Files in the fit'")
        data_modes = {c.mode for c in curves}
        results, failures = {}, {}
        for name in self.fit_models:
            m = get_model(name)
            missing = [md.value for md in data_modes if not m.supports(md)]
            if missing:
                failures[name] = (f"{m.title}: defined for {', '.join(x.value for x in m.modes)} only, so it "
                                  f"was not fitted to the {', '.join(missing)} data")
                continue
            try:
                results[name] = fit(m, curves, residual=self.residual)
            except ValueError as exc:
                failures[name] = f"{m.title}: {exc}"
            except Exception as exc:  # a numerical failure inside the fitter must not end the session
                log.exception("fit of %s failed", name)
                failures[name] = (f"{m.title}: the fit did not succeed ({type(exc).__name__}: {exc}); "
                                  "try the other residual choice or fewer models")
        names = list(results)
        self.param.table_model.objects = names or [None]
        with param.parameterized.batch_call_watchers(self):
            self.results, self.failures = results, failures
            if self.table_model not in names:
                self.table_model = self._preferred(names)
        return list(failures.values())

    @staticmethod
    def _preferred(names):
        for pick in ("extended-tube", "eight-chain", "non-affine-tube"):
            if pick in names:
                return pick
        return names[0] if names else None

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

    def parameter_rows(self) -> list[dict]:
        """One row per fitted parameter (display units), with 95 % interval, plus G₀ and fit quality."""
        rows = []
        for _name, r in self.results.items():
            for p in r.params.values():
                scale = p.display_scale or 1.0
                unit = p.display_unit or p.unit
                lo, hi = p.ci95
                if lo is None or hi is None or not (np.isfinite(lo) and np.isfinite(hi)):
                    ci = "not determined"
                else:
                    ci = f"{sig(lo * scale, 4)} … {sig(hi * scale, 4)}"
                rows.append({"model": r.title, "parameter": f"{p.symbol or p.name}",
                             "meaning": p.meaning, "value": sig(p.value * scale, 4),
                             "95 % interval": "held fixed" if p.fixed else ci, "unit": "" if unit == "1" else unit})
            g0 = r.small_strain_modulus
            rms = ", ".join(f"{m.value} {s.rms / 1e6:.3g}" for m, s in r.modes.items())
            rows.append({"model": r.title, "parameter": "G₀", "meaning": "small-strain shear modulus (derived)",
                         "value": sig(g0 / 1e6, 4), "95 % interval": "see crosslink table", "unit": "MPa"})
            rows.append({"model": r.title, "parameter": "fit", "meaning": f"RMS residual per mode (MPa): {rms}",
                         "value": f"AIC {r.aic:.4g}", "95 % interval": f"n = {r.n}, k = {r.k}", "unit": ""})
        return rows

    def warnings(self) -> list[str]:
        out = []
        for r in self.results.values():
            out.extend(f"{r.title}: {w}" for w in r.warnings)
        return out + list(self.failures.values())

    def crosslink_table(self):
        """The crosslink-density assumption table from the chosen fit (None without a fit)."""
        from network_models.crosslinks import from_fit

        r = self.results.get(self.table_model) if self.table_model else None
        if r is None:
            return None
        return from_fit(r, polymer=self.polymer, f=float(self.f), filler_fraction=float(self.filler))


class SwellState(param.Parameterized):
    """One Flory–Rehner form: masses in grams at the edge, everything else from the core."""

    dry_g = param.Number(default=None, allow_None=True, bounds=(0.0, None), label="Dry mass before swelling (g)")
    swollen_g = param.Number(default=None, allow_None=True, bounds=(0.0, None), label="Swollen mass (g)")
    extracted_g = param.Number(default=None, allow_None=True, bounds=(0.0, None),
                               label="Extracted, re-dried mass (g, optional)")
    solvent = param.Selector(default="toluene", objects=["toluene"], label="Solvent")
    polymer = param.Selector(default="NR", objects=list(polymers()), label="Polymer")
    chi = param.Number(default=None, allow_None=True, bounds=(0.0, 1.5),
                       label="χ (blank: the solvent table's value)")
    f = param.Number(default=4.0, bounds=(3.0, 64.0), label="Junction functionality f")
    filler = param.Number(default=0.0, bounds=(0.0, 0.45), label="Filler volume fraction φ (Kraus correction)")
    T_C = param.Number(default=23.0, bounds=(-50.0, 200.0), label="Test temperature (°C)")
    sample_label = param.String(default="")

    def __init__(self, **params):
        from network_models.swelling import solvents

        super().__init__(**params)
        self.param.solvent.objects = list(solvents())

    def sample_labels(self) -> list[str]:
        """One label per row of the bundled sample set's swelling table."""
        rows = _testdata().read_manifest().swelling_results()
        return [f"{r.compound} {r.specimen or ''}".strip() for r in rows]

    def load_sample(self, compound: str | None = None, label: str | None = None) -> bool:
        """Prefill from the bundled sample set's swelling table: the row called ``label``, else the first
        row of ``compound`` (default: the baseline compound)."""
        td = _testdata()
        man = td.read_manifest()
        rows = man.swelling_results()
        if not rows:
            return False
        want = compound or man.info.get("baseline")
        labels = [f"{r.compound} {r.specimen or ''}".strip() for r in rows]
        if label in labels:
            row = rows[labels.index(label)]
        else:
            row = next((r for r in rows if r.compound == want), rows[0])
        comp = next((c for c in man if c.key == row.compound), None)
        with param.parameterized.batch_call_watchers(self):
            self.dry_g, self.swollen_g = row.dry_mass * 1000.0, row.swollen_mass * 1000.0
            self.extracted_g = None if row.extracted_mass is None else row.extracted_mass * 1000.0
            if row.solvent and row.solvent in self.param.solvent.objects:
                self.solvent = row.solvent
            if comp is not None:
                self.polymer = comp.polymer
                self.filler = comp.filler_fraction
            if row.temperature:
                self.T_C = row.temperature - 273.15
            self.sample_label = f"{row.compound} {row.specimen or ''} (invented sample data)".strip()
        return True

    def default_chi(self):
        """The table's χ row for this polymer–solvent pair, or None (then the user must give χ)."""
        from network_models.swelling import default_chi

        try:
            return default_chi(self.polymer, self.solvent)
        except KeyError:
            return None

    def estimate(self):
        """The swelling estimate (network_models.swelling.SwellingEstimate); ValueError with a sentence."""
        from network_models.swelling import swelling_estimate

        if self.dry_g is None or self.swollen_g is None:
            raise ValueError("enter the dry mass and the swollen mass (grams) to get a swelling estimate")
        if not (self.dry_g > 0 and self.swollen_g > 0):
            raise ValueError("masses must be positive numbers of grams")
        if self.swollen_g <= (self.extracted_g or self.dry_g):
            raise ValueError(f"the swollen mass ({self.swollen_g:g} g) must exceed the dry mass "
                             f"({(self.extracted_g or self.dry_g):g} g): check that the two were not swapped")
        if self.chi is None and self.default_chi() is None:
            raise ValueError(f"the solvent table has no χ for {self.polymer} in {self.solvent}; type a χ from a "
                             "source you trust")
        ext = None if self.extracted_g in (None, 0) else self.extracted_g / 1000.0
        return swelling_estimate(self.dry_g / 1000.0, self.swollen_g / 1000.0, self.solvent, self.polymer,
                                 chi=self.chi, f=float(self.f), T=self.T_C + 273.15, extracted=ext,
                                 filler_fraction=float(self.filler))
