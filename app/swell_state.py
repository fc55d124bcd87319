"""The swelling tab's state: one Flory–Rehner form, and a whole table of swelling results — no Panel import."""

from __future__ import annotations

import param

from network_models import polymers
from network_models.constants import ZERO_CELSIUS


def _testdata():
    """The file readers (:mod:`network_models.labfiles`), loaded when a file is first read."""
    from network_models import labfiles

    return labfiles


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
    insoluble = param.Number(default=None, allow_None=True, bounds=(0.0, 0.95),
                             label="Insoluble mass fraction F (Ellis–Welding; blank: no recipe)",
                             doc="from the compound's recipe (network_models.recipes) when prefilled from a manifest")
    sample_label = param.String(default="")
    sample_key = param.String(default="", doc="the prefill picker's label of the row the form holds")
    compound = param.String(default="", doc="the compound the form's specimen belongs to ('' = not said): its "
                                            "recipe and stated χ fill the form; only its own fit is set beside it")
    table_rows = param.List(default=[], doc="a whole swelling table (curves.SwellingResult rows)")
    table_name = param.String(default="")

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
        # the manifest's values win (χ stated with the swelling data, the compound's f): the same reading the
        # comparison, the report and the study make of this specimen (issue #18: one answer)
        from network_models.labfiles import SAMPLE_MANIFEST

        from . import shared

        core = next((c for c in shared.sample_manifest(SAMPLE_MANIFEST).compounds if c.name == row.compound), None)
        test = None if core is None else next((t for t in core.swelling if t.specimen == row.specimen), None)
        with param.parameterized.batch_call_watchers(self):
            self.chi = None if test is None else test.chi
            if core is not None:
                self.f = float(core.f)
            self.dry_g, self.swollen_g = row.dry_mass * 1000.0, row.swollen_mass * 1000.0
            self.extracted_g = None if row.extracted_mass is None else row.extracted_mass * 1000.0
            if row.solvent and row.solvent in self.param.solvent.objects:
                self.solvent = row.solvent
            if comp is not None:
                self.polymer = comp.polymer
                self.filler = comp.filler_fraction
                self.insoluble = None
                chi = man.swelling_info.get("chi")
                if isinstance(chi, (int, float)) and not isinstance(chi, bool):
                    self.chi = float(chi)  # the manifest's χ (the one its swelling data were read with)
                if isinstance(comp.info.get("recipe"), dict):  # the recipe wins (issue #21): φ and F from it
                    from network_models.recipes import Recipe

                    rec = Recipe.from_phr(comp.info["recipe"], where=f"compound {comp.key}")
                    self.filler, self.insoluble = rec.filler_volume_fraction, rec.insoluble_mass_fraction
            if row.temperature:
                self.T_C = row.temperature - ZERO_CELSIUS
            self.sample_label = f"{row.compound} {row.specimen or ''} (invented sample data)".strip()
            self.sample_key = labels[rows.index(row)]
            self.compound = row.compound
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
                                 chi=self.chi, f=float(self.f), T=self.T_C + ZERO_CELSIUS, extracted=ext,
                                 filler_fraction=float(self.filler), insoluble_fraction=self.insoluble)

    # ----- a whole table of swelling results --------------------------------------------------------------
    def load_table(self, data: bytes, filename: str) -> int:
        """Read a swelling table (the reader's format: compound, specimen, dry/swollen/extracted mass in g,
        solvent, temperature); returns the number of rows.  ValueError with a sentence; nothing changes then."""
        rows = _testdata().read_swelling(bytes(data), filename)
        if not rows:
            raise ValueError(f"{filename}: no swelling rows found; the table needs compound, dry mass and swollen "
                             "mass columns")
        with param.parameterized.batch_call_watchers(self):
            self.table_rows, self.table_name = list(rows), filename

    def table_estimates(self, recipes: dict | None = None) -> list[dict]:
        """One result per row: the rubber fraction v_r in the swollen gel and ν (affine, phantom), mol/m³, with
        the compound's polymer, f and filler from ``recipes`` (name -> CompoundInfo) where known, else this
        form's.  A row that cannot be computed says why instead of a number."""
        from network_models.compounds import SwellingTest

        out = []
        for r in self.table_rows:
            info = (recipes or {}).get(r.compound)
            poly, f, phi = (info.polymer, info.f, info.filler) if info else (self.polymer, self.f, self.filler)
            # χ: the one stated for this compound's swelling tests (manifest), else the form's, else the table's
            chi, chi_from = compound_chi(info, r.solvent), "stated for the compound"
            if chi is None:
                chi, chi_from = self.chi, ("typed in the form" if self.chi is not None else "solvent table")
            row = {"compound": r.compound, "specimen": r.specimen or "—", "polymer": poly, "f": f, "filler": phi,
                   "chi": chi, "chi_source": chi_from}
            try:
                rec = getattr(info, "recipe", None)  # Ellis–Welding with the compound's recipe (issue #21)
                extra = {} if rec is None else {"insoluble_fraction": rec.insoluble_mass_fraction,
                                                "rho_polymer": rec.polymer_density}
                est = SwellingTest.from_record(r, chi=chi).estimate(poly, f=float(f), filler_fraction=float(phi),
                                                                    **extra)
            except ValueError as exc:
                row["problem"] = str(exc)
            else:
                row.update(chi=est.chi.chi, v_r=est.phi, nu_affine=est.nu_affine, nu_phantom=est.nu_phantom,
                           rho=est.rho_polymer, soluble=est.soluble_fraction)
            out.append(row)
        return out


def compound_chi(info, solvent: str | None = None) -> float | None:
    """The χ stated for a compound's swelling tests (``CompoundInfo.swelling``, from a manifest's
    ``[swelling] chi`` or a test's own), in ``solvent`` when given; None when none is stated."""
    for t in getattr(info, "swelling", None) or []:
        if t.chi is not None and (solvent is None or t.solvent == solvent):
            return float(t.chi)
    return None
