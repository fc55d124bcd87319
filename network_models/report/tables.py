"""The report's numbers as data: the CSV (long format, one row per number, SI value and trade-unit value)
and the JSON (nested, SI values, through :func:`network_models.jsonio.dumps`).  Both carry the same
specimens, statistics, verdicts and exclusions as the HTML."""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

CSV_FIELDS = ("section", "compound", "key", "label", "value", "unit", "ci95_low", "ci95_high",
              "display_value", "display_unit", "basis", "note")


class _Rows:
    def __init__(self):
        self.rows: list[dict] = []

    def add(self, section, compound, key, label, value, unit, low=None, high=None, shown_unit="", scale=1.0,
            basis="", note=""):
        if value is None or (isinstance(value, float) and not math.isfinite(value)):
            value = None
        self.rows.append({
            "section": section, "compound": compound, "key": key, "label": label,
            "value": value, "unit": unit, "ci95_low": low, "ci95_high": high,
            "display_value": None if value is None else value * scale,
            "display_unit": shown_unit or unit, "basis": basis, "note": note,
        })


def _fit_rows(out: _Rows, r) -> None:
    for p in r.params:
        out.add("parameter", r.name, p.name, p.meaning, p.value, p.unit, p.low, p.high, p.display_unit,
                p.display_scale, note="held fixed" if p.held else f"standard error {p.stderr!r}")
    for q in r.quantities.values():
        out.add("quantity", r.name, q.key, q.label, q.value, q.unit, q.low, q.high, q.display_unit,
                q.display_scale, q.basis, "; ".join(x for x in (q.interval, q.note) if x))
    if getattr(r, "pooled", None):  # the pooled fit's G₀ beside the specimen mean, each with its basis
        pl = r.pooled
        out.add("quantity", r.name, "G0_pooled", "small-strain shear modulus G₀, pooled fit", pl["G0"], "Pa",
                shown_unit="MPa", scale=1e-6, basis=f"{pl['basis']}; {pl['model']}, {pl['residual']} residuals")
    for fq in r.fit_quality:
        out.add("fit_quality", r.name, f"rms_{fq['mode']}", f"RMS residual, {fq['mode']}", fq["rms_Pa"], "Pa",
                shown_unit="MPa", scale=1e-6)
        out.add("fit_quality", r.name, f"r2_{fq['mode']}", f"R², {fq['mode']}", fq["r2"], "1")
        out.add("fit_quality", r.name, f"points_{fq['mode']}", f"points fitted, {fq['mode']}", fq["points"], "1")
    for i, row in enumerate(r.crosslink_rows):
        for key, unit in (("modulus_Pa", "Pa"), ("strand_density", "mol/m³"), ("junction_density", "mol/m³"),
                          ("Mc", "kg/mol"), ("N", "1")):
            if row.get(key) is None:
                continue
            ci = row.get(f"{key}_ci95") or (None, None)
            out.add("crosslink_table", r.name, f"{row.get('key', i)}:{key}", f"{key} — {row.get('label', i)}",
                    row[key], unit, ci[0], ci[1], basis=str(row.get("assumes", "")), note=str(row.get("note", "")))
    for i, s in enumerate(r.swelling_rows):
        for key, unit in (("phi", "1"), ("phi_measured", "1"), ("chi", "1"), ("molar_volume_cm3_mol", "cm³/mol"),
                          ("nu", "mol/m³"), ("nu_phantom", "mol/m³"), ("nu_chi_minus_0.05", "mol/m³"),
                          ("nu_chi_plus_0.05", "mol/m³")):
            out.add("swelling", r.name, f"{key}[{i}]", f"{key} ({s['solvent']})", s.get(key), unit)


def _specimen_rows(out: _Rows, r) -> None:
    from ..compare import SPECIMEN_QUANTITIES

    for s in r.specimens:
        state = ("excluded: " + s.excluded if s.excluded else "fit failed: " + s.error if s.error
                 else "used" if s.used else s.note or "not counted")
        if s.outlier:
            state += "; flagged on " + ", ".join(s.outlier) + " (modified z-score > 3.5)"
        for q, (label, unit, dunit, scale) in SPECIMEN_QUANTITIES.items():
            if s.values.get(q) is not None:
                out.add("specimen", r.name, f"{s.name}:{q}", f"{label}, specimen {s.name}", s.values[q], unit,
                        shown_unit=dunit, scale=scale, basis=", ".join(s.modes), note=state)
    for q, st in r.stats.items():
        label, unit, dunit, scale = SPECIMEN_QUANTITIES[q]
        lo, hi = st.ci95 or (None, None)
        for stat in ("n", "mean", "sd", "median"):
            v = getattr(st, stat)
            out.add("statistics", r.name, f"{q}:{stat}", f"{label}: {stat}", v, "1" if stat == "n" else unit,
                    lo if stat == "mean" else None, hi if stat == "mean" else None,
                    shown_unit="1" if stat == "n" else dunit, scale=1.0 if stat == "n" else scale,
                    note="" if st.scatter_known else "scatter unknown (fewer than two specimens)")
    h = r.headline
    if h is not None:
        lo, hi = h.ci95 or (None, None)
        out.add("headline", r.name, h.quantity, h.label, h.value, h.unit, lo, hi, basis=h.basis,
                note=f"n = {h.n}; interval: specimen scatter with fit error" if h.ci95 else f"n = {h.n}; "
                "scatter unknown")


def csv_rows(rep) -> list[dict]:
    """Every number of the report, one row each."""
    cmp = rep.cmp
    out = _Rows()
    out.add("settings", "", "service_temperature", "service temperature", cmp.service_temperature, "K",
            shown_unit="K")
    for r in cmp.results:
        for prov in r.compound.provenance():
            src = f"{prov['source']} [{prov['curve']}]"
            out.add("provenance", r.name, "points", f"points in {src}", prov["points"], "1")
            out.add("provenance", r.name, "stretch_min", f"lowest stretch in {src}", prov["stretch_min"], "1")
            out.add("provenance", r.name, "stretch_max", f"highest stretch in {src}", prov["stretch_max"], "1")
            if prov["temperature_K"] is not None:
                out.add("provenance", r.name, "temperature", f"test temperature of {src}", prov["temperature_K"], "K")
        out.add("compound", r.name, "test_temperature", "test temperature used", r.test_temperature, "K")
        if not r.ok:
            out.add("error", r.name, "error", r.error, None, "", note=r.error)
            continue
        _fit_rows(out, r)
        _specimen_rows(out, r)
    for comp, d in cmp.exclusions.items():
        for spec, why in d.items():
            out.add("exclusion", comp, spec, f"specimen {spec} excluded", None, "", note=why)
    for d in cmp.differences():
        ci = d["ci95"] or (None, None)
        out.add("difference", d["compound"], d["quantity"], f"{d['label']} vs {d['baseline']}", d["absolute"],
                d["unit"], ci[0], ci[1], basis=d.get("basis", ""),
                note=(f"{d['verdict']}; {'' if d['percent'] is None else format(d['percent'], '+.2f') + ' %'}; "
                      f"n {d['n']} vs {d['n_baseline']}"
                      + (f"; detectable {d['detectable_percent']:.2f} %" if d["detectable_percent"] is not None else "")
                      + (f"; {d['reason']}" if d["reason"] else "")))
    return out.rows


def to_csv(rep) -> str:
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=CSV_FIELDS, lineterminator="\n")
    w.writeheader()
    for row in csv_rows(rep):
        w.writerow({k: ("" if v is None else (repr(v) if isinstance(v, float) else v)) for k, v in row.items()})
    return buf.getvalue()


def read_csv(path_or_text) -> list[dict]:
    """Read a report CSV back: numbers as float, empty cells as None."""
    text = Path(path_or_text).read_text("utf-8") if not str(path_or_text).startswith("section,") else path_or_text
    out = []
    for row in csv.DictReader(io.StringIO(text)):
        for k in ("value", "ci95_low", "ci95_high", "display_value"):
            row[k] = float(row[k]) if row[k] not in ("", None) else None
        out.append(row)
    return out


__all__ = ["CSV_FIELDS", "csv_rows", "read_csv", "to_csv"]
