"""One browser session's states, made once and handed to every view — no Panel import.

``Session()`` holds the explorer's :class:`NetworkState`, the one data store :class:`DataState` (files and
compounds every tab reads), the Compare tab's :class:`CompareState` (over that store), the swelling form's
:class:`SwellState` and the display units.  It also turns itself into a project file and back.
"""

from __future__ import annotations

import logging
from dataclasses import replace

from .compare_state import CompareState
from .data_state import CompoundInfo, DataState, LoadedFile
from .display_units import DisplayUnits
from .project_file import Project, ProjectCompound, ProjectInput, read_project, write_project
from .state import NetworkState
from .swell_state import SwellState

log = logging.getLogger("netstretch.app")

#: the settings a project file keeps, per section: (state attribute, parameter names)
SETTINGS = {
    "network": ("network", ("polymer", "nu", "couple_N", "N_free", "T_C", "f", "filler", "entanglements",
                            "models", "lam_max", "lam_follows_data", "clamp_stretch", "expansion")),
    "fit": ("data", ("fit_models", "residual", "polymer", "f", "filler", "table_model")),
    "compare": ("compare", ("chosen", "baseline", "model", "service_C", "title", "purpose")),
    "display": ("units", ("stress", "density")),
    "swelling": ("swell", ("dry_g", "swollen_g", "extracted_g", "solvent", "polymer", "chi", "f", "filler", "T_C")),
}


class Session:
    def __init__(self):
        self.network = NetworkState()
        self.data = DataState()
        self.compare = CompareState(data=self.data)
        self.swell = SwellState()
        self.units = DisplayUnits()

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
                                        options={"mode": c.mode.value}, selected=f.name in d.selected)
                           for c in f.curves]
                continue
            data = f.data if f.data is not None else f.path.read_bytes()
            inputs.append(ProjectInput(name=f.name, data=data, compound=f.group, options=dict(f.options),
                                       selected=f.name in d.selected))
        comps = [ProjectCompound(name=n, polymer=i.polymer, f=i.f, filler=i.filler, notes=i.notes,
                                 metadata=dict(i.metadata), swelling=[s.to_dict() for s in i.swelling])
                 for n, i in d.compounds.items()]
        return write_project(Project(settings=self.settings(), inputs=inputs, compounds=comps,
                                     results=self.results_summary(), title=title or self.compare.title,
                                     netstretch_version=__version__))

    def load_project(self, source) -> list[str]:
        """Replace this session's files, compounds and settings by a project's (zip bytes or path).
        Returns sentences about settings that could not be restored; raises ValueError when the file
        cannot be used at all (then nothing changes)."""
        from network_models.compounds import SwellingTest
        from network_models.testdata import read_curves_bytes

        proj = read_project(source)
        files, seen = [], set()
        for inp in proj.inputs:
            curves = read_curves_bytes(inp.data, inp.name, **inp.options)
            name = inp.name
            while name in seen:
                name = "copy of " + name
            seen.add(name)
            files.append(LoadedFile(name=name, group=inp.compound or "uploaded", curves=curves,
                                    detected_mode=curves[0].mode.value if curves else "uniaxial", data=inp.data,
                                    options=dict(inp.options), digest=""))
        comps = {}
        for c in proj.compounds:
            tests = [SwellingTest(**{k: v for k, v in s.items() if k in _SWELL_FIELDS}) for s in c.swelling]
            comps[c.name] = CompoundInfo(polymer=c.polymer, f=c.f, filler=c.filler, notes=c.notes,
                                         metadata=dict(c.metadata), swelling=tests)
        problems = list(getattr(proj, "notices", []))  # fields of the file that were ignored
        d = self.data
        d.manifest_title, d.manifest_note = "", ""
        selected = [i.name for i in proj.inputs if i.selected]
        d.results, d.failures = {}, {}
        d._set_files(files, selected, compounds={**comps, **{f.group: replace(CompoundInfo()) for f in files
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
        self.compare.comparison = None
        return problems


def curve_csv(c) -> bytes:
    """One curve as a CSV the reader reads back exactly (stretch and nominal stress in Pa, 17 digits)."""
    head = f"# mode: {c.mode.value}\n" + (f"# temperature: {c.temperature} K\n" if c.temperature else "")
    rows = "\n".join(f"{a!r},{b!r}" for a, b in zip(c.stretch.tolist(), c.stress.tolist(), strict=True))
    return (head + "stretch,nominal stress (Pa)\n" + rows + "\n").encode("utf-8")


_SWELL_FIELDS = ("dry", "swollen", "solvent", "chi", "extracted", "temperature", "specimen", "source")

__all__ = ["Session", "SETTINGS"]
