"""The design-review report: one self-contained HTML file, with CSV and JSON beside it holding every number.

    >>> from network_models.report import Report
    >>> rep = Report(comparison, title="Cure-dose ladder", purpose="Choose the cure dose for the seal")
    >>> paths = rep.write("review.html")   # also review.csv and review.json
    >>> rep.to_html(), rep.to_csv(), rep.to_json()

The HTML needs nothing from the network and no JavaScript: its plots are inline SVG drawn here (line
charts with axes, ticks, quantity/unit labels and a legend; a bar chart with 95 % error bars).  Every
number shown is also in the CSV (long format: one row per number, SI value and trade-unit value) and the
JSON (nested, SI values).  Table cells carry ``data-compound``/``data-key``/``data-value`` attributes with
the SI value at full precision, so a script (or a test) can read the numbers back.
"""

from __future__ import annotations

import datetime as _dt
from pathlib import Path
from typing import Any

from ..compare import TEMPERATURE_NOTE, Comparison
from ..constants import CAUTION, METHOD_MANUAL_REFERENCE
from ..errors import merge_notices
from ..jsonio import dumps
from ..models import get_model
from . import recipe_sections, sections, tables
from .charts import crosslink_bar_plot, curve_plots, service_plot
from .text import esc as _e
from .text import fmt
from .text import signed as _signed
from .text import temp_c as _temp_c

CAUTIONS = (
    CAUTION,
    "Parts are validated by testing: prototypes and production parts are qualified by the tests the "
    "application calls for.",
    "Several polymer constants are recalled rather than re-read from their source (marked 'memory' in the "
    "polymer table); check them before a decision rests on them.",
)

#: quantities shown in the comparison table, in order
TABLE_KEYS = ("G0", "nu", "mu_j", "Mc", "N", "lock", "lock_elongation", "ent_share", "G0_service", "M100_measured",
              "M100_predicted",
              "M300_measured", "M300_predicted", "nu_swelling")


# ----- the report ----------------------------------------------------------------------------------------
CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;color:#1d2a33;
margin:0;background:#f4f5f2;line-height:1.45}
main{max-width:1100px;margin:0 auto;padding:24px 28px 60px;background:#fff}
h1{font-size:1.6em;margin:0 0 4px;color:#16394a}h2{font-size:1.2em;margin:30px 0 8px;color:#16394a;
border-bottom:2px solid #d9e2e6;padding-bottom:3px}h3{font-size:1em;margin:16px 0 6px}
.purpose{font-size:1.08em;margin:8px 0;padding:8px 12px;background:#eef4f6;border-left:4px solid #1f6f8b}
.meta{color:#56656e;font-size:.9em}
table{border-collapse:collapse;margin:6px 0 10px;font-size:.88em}
th,td{border:1px solid #d5dcdf;padding:4px 8px;text-align:left;vertical-align:top}
th{background:#eef2f3;font-weight:600}td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
.ci{color:#56656e;font-size:.9em}.diff{color:#56656e;font-size:.85em}
.sig{color:#9b3a12;font-weight:600}.same{color:#3f6a2a}
.caution{border:1px solid #c9a227;background:#fdf8e6;padding:8px 14px;margin:12px 0}
.warn li{color:#7a3d0c}.err{color:#9b1c1c;font-weight:600}
.chart{display:block;margin:8px 0 14px;border:1px solid #e1e6e8}
.headline{font-size:1.05em}.unc td{font-size:.92em}
.eq{font-family:"DejaVu Sans Mono",Consolas,monospace;background:#f3f5f6;padding:6px 10px;display:block}
small{color:#56656e}
table.prov{font-size:.82em;width:100%}table.prov td:nth-child(2){white-space:nowrap}
table.prov td:nth-child(5){min-width:8em}
@page{size:A4 portrait;margin:14mm 12mm}
@media print{body{background:#fff;font-size:9pt}main{padding:0;max-width:none}
.chart{break-inside:avoid;max-width:100%;height:auto}h2{break-after:avoid}
table{font-size:8pt;width:100%}td,th{padding:2px 4px}tr{break-inside:avoid}}
"""


class Report:
    """The review report for one :class:`~network_models.compare.Comparison`."""

    def __init__(self, comparison: Comparison, title: str = "Compound design review", purpose: str = "",
                 created: _dt.datetime | None = None):
        self.cmp = comparison
        self.title = title or "Compound design review"
        self.purpose = purpose or ""
        self.created = created or _dt.datetime.now(_dt.UTC).replace(microsecond=0)

    # ----- data --------------------------------------------------------------------------------------
    def to_dict(self) -> dict:
        from .. import __version__

        d = {"report": {"title": self.title, "purpose": self.purpose, "created": self.created.isoformat(),
                        "netstretch_version": __version__, "units": "SI (Pa, K, mol/m³, kg/mol)",
                        "cautions": list(CAUTIONS)}}
        d.update(self.cmp.to_dict())
        return d

    def to_json(self) -> str:
        return dumps(self.to_dict())

    def csv_rows(self) -> list[dict]:
        """Every number of the report, one row each (:func:`network_models.report.tables.csv_rows`)."""
        return tables.csv_rows(self)

    CSV_FIELDS = tables.CSV_FIELDS

    def to_csv(self) -> str:
        return tables.to_csv(self)

    # ----- HTML -----------------------------------------------------------------------------------
    #: the report's sections in the order the page shows them — the one declaration: :meth:`to_html` writes
    #: them in this order and :meth:`section_html` serves each by name (method ``_<name>_html``)
    SECTIONS = ("summary", "compounds", "specimens", "comparison", "conditions", "uncertainty", "plots",
                "provenance", "params", "crosslink", "swelling", "recipes", "ultimate", "specifications", "ladders",
                "warnings", "model")

    # issue #21's sections (report/recipe_sections.py), by name for section_html
    def _conditions_html(self):
        return recipe_sections.conditions_html(self.cmp)

    def _recipes_html(self):
        return recipe_sections.recipes_html(self.cmp)

    def _ultimate_html(self):
        return recipe_sections.ultimate_html(self.cmp)

    def _specifications_html(self):
        return recipe_sections.specs_html(self.cmp)

    def _ladders_html(self):
        return recipe_sections.ladders_html(self.cmp)

    def section_html(self, name: str) -> str:
        """One section of the report as an HTML fragment (for embedding, e.g. the app's Compare view);
        ``name`` is one of :attr:`SECTIONS`.  Pair it with :data:`CSS` in a ``<style>`` element."""
        if name not in self.SECTIONS:
            raise ValueError(f"no report section {name!r}; sections: {', '.join(self.SECTIONS)}")
        return "\n".join(getattr(self, f"_{name}_html")())

    def to_html(self) -> str:
        c = self.cmp
        m = get_model(c.model)
        parts = [
            "<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
            '<meta name="viewport" content="width=device-width, initial-scale=1">',
            f"<title>{_e(self.title)}</title><style>{CSS}</style></head><body><main>",
            f"<h1>{_e(self.title)}</h1>",
        ]
        if self.purpose:
            parts.append(f'<p class="purpose"><b>Purpose:</b> {_e(self.purpose)}</p>')
        from .. import __version__

        parts.append(
            f'<p class="meta">Made {self.created:%Y-%m-%d %H:%M} UTC with netstretch {__version__} · model: '
            f"<b>{_e(m.title)}</b> · baseline: <b>{_e(c.baseline or '—')}</b> · service temperature: "
            f"<b>{_temp_c(c.service_temperature)}</b> · {len(c.results)} compound(s)</p>")
        parts.append(f'<div class="caution"><b>Caution.</b> {_e(CAUTION)}</div>')
        for name in self.SECTIONS:
            parts += getattr(self, f"_{name}_html")()
        parts.append("<h2>Cautions</h2><ul>" + "".join(f"<li>{_e(x)}</li>" for x in CAUTIONS) + "</ul>")
        parts.append("<p class='meta'>The numbers in this report are also in the CSV and JSON files written beside "
                     "it (SI units there; trade units here).</p>")
        parts.append("</main></body></html>")
        return "\n".join(parts)

    def _summary_html(self):
        return sections.summary_html(self.cmp)

    def _specimens_html(self):
        return sections.specimens_html(self.cmp)

    def _uncertainty_html(self):
        return sections.uncertainty_html(self.cmp)

    def _compounds_html(self):
        out = ["<h2>Compounds</h2><table><tr><th>compound</th><th>polymer</th><th>f</th><th>modes tested</th>"
               "<th>swelling tests</th><th>recipe and notes (as given)</th></tr>"]
        for r in self.cmp.results:
            c = r.compound
            base = " <small>(baseline)</small>" if c.name == self.cmp.baseline else ""
            meta = " · ".join(f"<small>{_e(str(k).replace('_', ' '))}:</small> {_e(v)}"
                              for k, v in c.metadata.items() if not isinstance(v, (dict, list)))
            notes = f"<div><i>{_e(c.notes)}</i></div>" if c.notes else ""
            out.append(f"<tr><td><b>{_e(c.name)}</b>{base}</td><td>{_e(c.polymer)}</td><td class='num'>{c.f:g}</td>"
                       f"<td>{_e(', '.join(x.value for x in c.modes))}</td><td class='num'>{len(c.swelling)}</td>"
                       f"<td>{meta}{notes}</td></tr>")
        out.append("</table>")
        return out

    def _provenance_html(self):
        from pathlib import Path as _P

        out = ["<h2>Data provenance</h2>",
               "<p><small>Inputs are named by file name and SHA-256 of their bytes (not by where they were read "
               "from), so a reviewer can check that a file is the one analysed.</small></p>",
               "<table class='prov'><tr><th>compound</th><th>file</th><th>SHA-256</th><th>mode</th>"
               "<th>specimen</th><th>cycle</th><th>temperature</th><th>points</th><th>stretch range</th>"
               "<th>reader notices</th></tr>"]
        for r in self.cmp.results:
            for p in r.compound.provenance():
                src = p["source"]
                name = _P(src).name if src and not src.startswith("(") else src
                digest = file_sha256(src)
                out.append(
                    f"<tr><td>{_e(r.name)}</td><td>{_e(name)}</td>"
                    f"<td><code class='sha'>{_e(digest or '—')}</code></td>"
                    f"<td>{_e(p['mode'])}</td><td>{_e(p['specimen'] or p['curve'])}</td>"
                    f"<td>{_e(p['cycle'] or '—')}</td>"
                    f"<td class='num'>{_temp_c(p['temperature_K']) if p['temperature_K'] else 'not stated'}</td>"
                    f"<td class='num'>{p['points']}</td>"
                    f"<td class='num'>{fmt(p['stretch_min'])} – {fmt(p['stretch_max'])}</td>"
                    f"<td><small>{_e('; '.join(p['notices']) or '—')}</small></td></tr>")
        out.append("</table>")
        return out

    def _cell(self, r, q, diff):
        if q is None:
            return "<td class='num'>— <span class='ci'>not available (see Warnings)</span></td>"
        if q.value is None:
            return f"<td class='num' title='{_e(q.note)}'>— <span class='ci'>{_e(q.note)}</span></td>"
        ci = ""
        if q.has_interval:
            ci = f"<br><span class='ci'>[{fmt(q.shown(q.low))} – {fmt(q.shown(q.high))}]</span>"
        d = ""
        if diff is not None and diff["percent"] is not None:
            d = f"<br><span class='diff'>{_signed(diff['percent'], 1)} % {sections.verdict_span(diff)}</span>"
        n = "" if q.n is None else f"<br><span class='ci'>n = {q.n}</span>"
        return (f"<td class='num' data-compound='{_e(r.name)}' data-key='{_e(q.key)}' data-value='{q.value!r}'>"
                f"{fmt(q.shown(q.value))}{ci}{n}{d}</td>")

    def _comparison_html(self):
        c = self.cmp
        diffs = {(d["compound"], d["key"]): d for d in c.differences()}
        ok = list(c.results)
        out = [f"<h2>Comparison</h2><p>Same model (<b>{_e(c.model_obj.title)}</b>) fitted to every compound. "
               "Each cell: the mean of the specimens, its 95 % interval in brackets (specimen scatter with fit "
               f"error), n and, against the baseline <b>{_e(c.baseline)}</b>, the difference in % with the "
               "verdict from the specimens (Welch).</p>"]
        out.append("<table><tr><th>quantity</th><th>unit</th><th>basis</th>"
                   + "".join(f"<th>{_e(r.name)}{' (baseline)' if r.name == c.baseline else ''}</th>" for r in ok)
                   + "</tr>")
        for key in TABLE_KEYS:
            qs = [r.quantities.get(key) for r in ok]
            first = next((q for q in qs if q is not None), None)
            if first is None:
                continue
            out.append(f"<tr><th>{_e(first.label)}</th><td>{_e(first.display_unit or first.unit)}</td>"
                       f"<td><small>{_e(first.basis)}</small></td>"
                       + "".join(self._cell(r, q, diffs.get((r.name, key))) if r.ok else
                                 "<td class='err'>fit failed</td>" for r, q in zip(ok, qs, strict=True)) + "</tr>")
        out.append("</table>")
        for r in c.results:
            if not r.ok:
                out.append(f"<p class='err'>{_e(r.error)}</p>")
        out.append("<ul>" + "".join(f"<li><small>{_e(n)}</small></li>" for n in c.notes) + "</ul>")
        return out

    def _plots_html(self):
        out = ["<h2>Plots</h2>"]
        for _mode, svg in curve_plots(self.cmp):
            out.append(svg)
        if any(r.ok for r in self.cmp.results):
            out.append(crosslink_bar_plot(self.cmp))
            out.append(service_plot(self.cmp))
            out.append(f"<p><small>{_e(TEMPERATURE_NOTE)}.</small></p>")
        return out

    def _params_html(self):
        out = ["<h2>Fitted parameters</h2><table><tr><th>compound</th><th>parameter</th><th>meaning</th>"
               "<th>value</th><th>95 % interval</th><th>unit</th></tr>"]
        for r in self.cmp.results:
            for p in r.params:
                ci = "held fixed" if p.held else (
                    f"{fmt(p.low * p.display_scale)} – {fmt(p.high * p.display_scale)}" if p.low is not None
                    else "not determined")
                out.append(f"<tr><td>{_e(r.name)}</td><td>{_e(p.symbol)}</td><td>{_e(p.meaning)}</td>"
                           f"<td class='num' data-compound='{_e(r.name)}' data-key='param:{_e(p.name)}' "
                           f"data-value='{p.value!r}'>{fmt(p.value * p.display_scale)}</td>"
                           f"<td class='num'>{ci}</td><td>{_e(p.display_unit)}</td></tr>")
        out.append("</table><h3>Fit quality</h3><table><tr><th>compound</th><th>mode</th><th>points</th>"
                   "<th>RMS residual (MPa)</th><th>R²</th></tr>")
        for r in self.cmp.results:
            for q in r.fit_quality:
                out.append(f"<tr><td>{_e(r.name)}</td><td>{_e(q['mode'])}</td><td class='num'>{q['points']}</td>"
                           f"<td class='num'>{fmt(q['rms_Pa'] / 1e6)}</td><td class='num'>{fmt(q['r2'])}</td></tr>")
        out.append("</table>")
        return out

    def _crosslink_html(self):
        out = ["<h2>Crosslink density under stated assumptions</h2><p>The same fitted small-strain modulus read "
               "under different assumptions. <b>Strand density ν</b> counts elastically active strands; "
               "<b>junction (crosslink) density μ_j = 2ν/f</b> counts junctions. Both are called “crosslink "
               "density” in the literature. Brackets: 95 % interval from the fit.</p>"]
        for r in self.cmp.results:
            if not r.crosslink_rows:
                continue
            out.append(f"<h3>{_e(r.name)}</h3><table><tr><th>assumption</th><th>what it assumes</th>"
                       "<th>modulus used (MPa)</th><th>ν (mol/m³)</th><th>μ_j (mol/m³)</th><th>M_c (g/mol)</th>"
                       "<th>N</th><th>note</th></tr>")
            for i, row in enumerate(r.crosslink_rows):
                cells = []
                for key, scale in (("modulus_Pa", 1e-6), ("strand_density", 1.0), ("junction_density", 1.0),
                                   ("Mc", 1000.0), ("N", 1.0)):
                    v = row.get(key)
                    ci = row.get(f"{key}_ci95")
                    txt = fmt(None if v is None else v * scale)
                    if ci and ci[0] is not None and ci[1] is not None:
                        txt += f"<br><span class='ci'>[{fmt(ci[0] * scale)} – {fmt(ci[1] * scale)}]</span>"
                    attr = "" if v is None else (f" data-compound='{_e(r.name)}' data-key='crosslink:{i}:{key}' "
                                                 f"data-value='{v!r}'")
                    cells.append(f"<td class='num'{attr}>{txt}</td>")
                out.append(f"<tr><td>{_e(row.get('label', ''))}</td><td><small>{_e(row.get('assumes', ''))}</small>"
                           f"</td>{''.join(cells)}<td><small>{_e(row.get('note', ''))}</small></td></tr>")
            out.append("</table>")
            if r.crosslink_notes:
                out.append("<ul>" + "".join(f"<li><small>{_e(n)}</small></li>" for n in r.crosslink_notes) + "</ul>")
        return out

    def _swelling_html(self):
        rows = [(r, s) for r in self.cmp.results for s in r.swelling_rows]
        if not rows:
            return []
        out = ["<h2>Swelling (Flory–Rehner, affine)</h2><table><tr><th>compound</th><th>solvent</th><th>χ</th>"
               "<th>V₁ (cm³/mol)</th><th>φ (rubber volume fraction)</th><th>ν affine (mol/m³)</th>"
               "<th>ν at χ + 0.05 … χ − 0.05</th><th>ν phantom (mol/m³)</th><th>notes</th></tr>"]
        for r, s in rows:
            out.append(f"<tr><td>{_e(r.name)} {_e(s.get('specimen') or '')}</td><td>{_e(s['solvent'])}</td>"
                       f"<td class='num'>{fmt(s['chi'])} <small>[{_e(s.get('chi_status', ''))}]</small></td>"
                       f"<td class='num'>{fmt(s['molar_volume_cm3_mol'])}</td><td class='num'>{fmt(s['phi'])}</td>"
                       f"<td class='num' data-compound='{_e(r.name)}' data-key='swelling_nu' "
                       f"data-value='{s['nu']!r}'>{fmt(s['nu'])}</td><td class='num'>{fmt(s['nu_chi_plus_0.05'])} … "
                       f"{fmt(s['nu_chi_minus_0.05'])}</td><td class='num'>{fmt(s.get('nu_phantom'))}</td>"
                       f"<td><small>{_e('; '.join(s.get('notes', [])))}</small></td></tr>")
        out.append("</table><p><small>χ depends on concentration and crosslink density; the range shows how ν "
                   "moves for χ ± 0.05. Filled compounds swell less (restricted swelling), so their swelling "
                   "densities read higher than mechanical ones.</small></p>")
        return out

    def _warnings_html(self):
        ws = merge_notices(w for r in self.cmp.results for w in r.warnings)
        errs = [r.error for r in self.cmp.results if r.error]
        out = ["<h2>Warnings</h2>"]
        if not ws and not errs:
            out.append("<p>None.</p>")
            return out
        out.append('<ul class="warn">' + "".join(f"<li class='err'>{_e(e)}</li>" for e in errs)
                   + "".join(f"<li>{_e(w)}</li>" for w in ws) + "</ul>")
        return out

    def _model_html(self):
        m = get_model(self.cmp.model)
        out = [f"<h2>Model and references</h2><p><b>{_e(m.title)}</b> ({_e(m.family)}): "
               f"<span class='eq'>{_e(m.equation)}</span></p><p>Network reading: {_e(m.assumption)}.</p>"
               "<p>Parameters:</p><ul>"]
        for p in m.params:
            out.append(f"<li>{_e(p.symbol)} ({_e(p.unit)}): {_e(p.meaning)}. <small>{_e(p.source)}</small></li>")
        out.append("</ul><p>References:</p><ul>" + "".join(f"<li>{_e(x)}</li>" for x in m.references)
                   + "<li>Flory & Rehner 1943, J. Chem. Phys. 11:521 — swelling equilibrium</li>"
                   + "<li>Treloar, The Physics of Rubber Elasticity, 3rd ed. (1975) — G = νRT, G ∝ T</li>"
                   + f"<li>{_e(METHOD_MANUAL_REFERENCE)}</li></ul>")
        from ..network import get_polymer

        for key in sorted({r.compound.polymer for r in self.cmp.results}):
            p = get_polymer(key)
            out.append(f"<p><small>Polymer {_e(p.key)} ({_e(p.title)}): constants from {_e(p.source)} "
                       f"[{_e(p.status)}].</small></p>")
        return out

    # ----- files ---------------------------------------------------------------------------------------
    def write(self, path) -> dict[str, Path]:
        """Write ``path`` (HTML) and beside it the CSV, the JSON, the same table as an Excel workbook
        (``.xlsx``: opens with decimal commas too) and every chart as its own self-contained SVG file
        (``<stem>_charts/NN-name.svg``); returns the paths (charts under ``"charts"``, a list)."""
        p = Path(path)
        if p.suffix.lower() not in (".html", ".htm"):
            p = p.with_suffix(".html")
        p.parent.mkdir(parents=True, exist_ok=True)
        paths: dict[str, Any] = {k: p.with_suffix(f".{k}") for k in ("html", "csv", "json", "xlsx")}
        paths["html"] = p
        html_text = self.to_html()
        paths["html"].write_text(html_text, "utf-8")
        csv_text = self.to_csv()
        paths["csv"].write_text(csv_text, "utf-8")
        paths["json"].write_text(self.to_json(), "utf-8")
        write_xlsx(csv_text, paths["xlsx"])
        paths["charts"] = write_charts(html_text, p.parent / f"{p.stem}_charts")
        return paths


def file_sha256(source) -> str | None:
    """SHA-256 (hex) of a file's bytes, or None when ``source`` is not a readable file (a curve made in code)."""
    import hashlib

    if not source or str(source).startswith("("):
        return None
    try:
        return hashlib.sha256(Path(source).read_bytes()).hexdigest()
    except OSError:
        return None


def write_xlsx(csv_text: str, path: Path) -> Path:
    """The report's long-format CSV as an Excel workbook (one sheet, numbers as numbers)."""
    import io

    import pandas as pd

    from ..cellguard import write_xlsx_text

    # text cells stay text (a name beginning with '=' is not a formula); numbers stay numbers
    return write_xlsx_text(pd.read_csv(io.StringIO(csv_text), keep_default_na=False, na_values=[""]), path,
                           "netstretch")


def write_charts(html_text: str, folder: Path) -> list[Path]:
    """Every inline ``<svg>`` chart of the report as its own file (each carries its own styles, so it reads
    the same when copied into another document)."""
    import re

    charts = re.findall(r"<svg\b.*?</svg>", html_text, flags=re.S)
    if not charts:
        return []
    folder.mkdir(parents=True, exist_ok=True)
    out = []
    for i, svg in enumerate(charts, 1):
        label = re.search(r'aria-label="([^"]*)"', svg)
        slug = re.sub(r"[^A-Za-z0-9]+", "-", label.group(1) if label else "chart").strip("-").lower()[:50] or "chart"
        f = folder / f"{i:02d}-{slug}.svg"
        f.write_text('<?xml version="1.0" encoding="UTF-8"?>\n' + svg, "utf-8")
        out.append(f)
    return out


def build_report(comparison: Comparison, title: str = "", purpose: str = "") -> Report:
    return Report(comparison, title=title, purpose=purpose)


__all__ = ["CAUTIONS", "CSS", "TABLE_KEYS", "Report", "build_report"]
