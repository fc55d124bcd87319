"""Report sections of issue #21: each compound's recipe (phr and the fractions derived from it) and the break
properties of the specimens that ruptured (with the rupture rule).  Every user string is escaped."""

from __future__ import annotations

from typing import Any

from ..ultimate import QUANTITIES, RULE, compound_ultimate, ultimate_differences
from .text import esc as _e
from .text import fmt


def recipes_html(cmp) -> list[str]:
    comps = [r.compound for r in cmp.results if getattr(r.compound, "recipe", None) is not None]
    if not comps:
        return []
    out = ["<h2>Recipes (phr)</h2><table><tr><th>compound</th><th>recipe, phr</th><th>filler volume fraction φ</th>"
           "<th>rubber volume fraction</th><th>insoluble mass fraction F</th></tr>"]
    for c in comps:
        r = c.recipe
        phr = ", ".join(f"{_e(k)} {fmt(v)}" for k, v in r.phr.items())
        out.append(f"<tr><td>{_e(c.name)}</td><td>{phr}</td><td class='num'>{fmt(r.filler_volume_fraction)}</td>"
                   f"<td class='num'>{fmt(r.rubber_volume_fraction)}</td>"
                   f"<td class='num'>{fmt(r.insoluble_mass_fraction)}</td></tr>")
    out.append("</table><p><small>φ = Σ fillers (phr/ρ) / Σ all ingredients (phr/ρ); F = fillers plus insoluble "
               "ingredients outside the network (Ellis–Welding swelling correction). The recipe wins over the "
               "manifest's filler_volume_fraction, filler_phr and sulfur_phr.</small></p>")
    notes = [str(n) for c in comps for n in getattr(c, "recipe_notices", [])]
    if notes:
        out.append("<ul class='warn'>" + "".join(f"<li>{_e(n)}</li>" for n in notes) + "</ul>")
    return out


def _unit(v, unit):
    return (fmt(v / 1e6), "MPa") if unit == "Pa" and v is not None else (fmt(v), unit)


def ultimate_html(cmp) -> list[str]:
    rows: list[tuple[Any, dict]] = [(r, u) for r in cmp.results if (u := compound_ultimate(r))]
    if not rows:
        return []
    out = ["<h2>Break properties</h2><table><tr><th>compound</th><th>quantity</th><th>n</th><th>mean</th>"
           "<th>95 % interval of the mean</th><th>specimens</th></tr>"]
    for r, u in rows:
        for k, (label, unit, _attr) in QUANTITIES.items():
            st = u["statistics"][k]
            mean, shown = _unit(st["mean"], unit)
            ci = st["ci95"]
            ci_txt = "scatter unknown (one specimen)" if ci is None else \
                f"{_unit(ci[0], unit)[0]} – {_unit(ci[1], unit)[0]}"
            key = {"tensile_strength": "tensile_strength_Pa", "elongation_at_break": "elongation_at_break_percent",
                   "stress_at_break": "stress_at_break_Pa"}[k]
            spec = ", ".join(f"{_e(s['specimen'])} {_unit(s[key], unit)[0]}" for s in u["specimens"])
            out.append(f"<tr><td>{_e(r.name)}</td><td>{_e(label)} ({_e(shown)})</td><td class='num'>{st['n']}</td>"
                       f"<td class='num'>{mean}</td><td class='num'>{ci_txt}</td><td><small>{spec}</small></td></tr>")
    out.append("</table>")
    diffs = ultimate_differences(cmp.results, cmp.baseline)
    if diffs:
        out.append("<table><tr><th>compound vs baseline</th><th>quantity</th><th>difference</th><th>verdict</th></tr>")
        for d in diffs:
            diff = "—" if d["absolute"] is None else _unit(d["absolute"], d["unit"])[0]
            out.append(f"<tr><td>{_e(d['compound'])} vs {_e(d['baseline'])}</td><td>{_e(d['label'])}</td>"
                       f"<td class='num'>{diff}</td><td>{_e(d['verdict'])}</td></tr>")
        out.append("</table>")
    out.append(f"<p><small>Nominal stress; elongation at break = (λ_b − 1)·100 %. {_e(RULE)}.</small></p>")
    return out


def specs_html(cmp) -> list[str]:
    from ..specs import judge

    if not getattr(cmp, "specs", None):
        return []
    out = ["<h2>Specifications</h2><table><tr><th>compound</th><th>specification</th><th>verdict</th><th>n</th>"
           "<th>mean</th><th>95 % interval of the mean</th><th>specimens outside</th><th>basis / reason</th></tr>"]
    for name, rows in judge(cmp.results, cmp.specs).items():
        for e in rows:
            scale = 1e-6 if e.get("unit_shown") == "MPa" else 1.0
            ci = e.get("ci95")
            ci_txt = "—" if not ci else f"{fmt(ci[0] * scale)} – {fmt(ci[1] * scale)}"
            mean = "—" if e.get("mean") is None else fmt(e["mean"] * scale)
            out.append(f"<tr><td>{_e(name)}</td><td>{_e(e['target'])}</td><td>{_e(e['verdict'])}</td>"
                       f"<td class='num'>{e.get('n', '—')}</td><td class='num'>{mean} {_e(e.get('unit_shown', ''))}"
                       f"</td><td class='num'>{ci_txt}</td><td class='num'>{e.get('specimens_outside', '—')}</td>"
                       f"<td><small>{_e(e.get('basis') or e.get('reason', ''))}</small></td></tr>")
    out.append("</table><p><small>meets: the 95 % interval of the compound mean (specimen scatter with fit error) "
               "lies inside the limits; fails: wholly outside; uncertain: it straddles a limit; cannot judge: one "
               "specimen or a quantity the comparison does not measure.</small></p>")
    return out


def conditions_html(cmp) -> list[str]:
    """Test conditions per compound (network_models.conditions), placed beside the comparison they qualify."""
    from ..conditions import FIELDS, compound_conditions

    rows = [(r.name, g) for r in cmp.results for g in compound_conditions(r.compound)]
    if not rows:
        return []
    out = ["<h3>Test conditions of these numbers</h3><table><tr><th>compound</th><th>curves (modes)</th>"
           + "".join(f"<th>{_e(v)}</th>" for v in FIELDS.values()) + "</tr>"]
    for name, g in rows:
        cells = "".join(f"<td>{_e(g.get(k)) if g.get(k) else '<small>not stated</small>'}</td>" for k in FIELDS)
        out.append(f"<tr><td>{_e(name)}</td><td class='num'>{g['curves']} ({_e(', '.join(g['modes']))})</td>{cells}"
                   "</tr>")
    out.append("</table><p><small>As stated in the files' metadata lines; compounds tested at different speeds, "
               "cycles or temperatures are not strictly comparable.</small></p>")
    return out


def ladders_html(cmp) -> list[str]:
    """Each dose ladder among the compounds: every headline quantity against the dose, with its line."""
    from ..dose import ladder_fits

    lads = ladder_fits(cmp.results)
    if not lads:
        return []
    out = ["<h2>Dose ladders</h2>"]
    for lad in lads:
        out.append(f"<p>{_e(lad['ingredient'])} ladder: {_e(', '.join(lad['compounds']))} (straight line, least "
                   "squares over the compound means; slope ± standard error, n − 2 dof)</p><table><tr><th>quantity"
                   "</th><th>unit</th><th>points (phr: value)</th><th>slope per phr</th><th>intercept</th></tr>")
        for q in lad["quantities"].values():
            ln = q["line"]
            se = "" if ln["slope_se"] is None else f" ± {fmt(ln['slope_se'])}"
            pts = ", ".join(f"{fmt(p['phr'])}: {fmt(p['value'])}" for p in q["points"])
            out.append(f"<tr><td>{_e(q['label'])}</td><td>{_e(q['unit'])}</td><td>{pts}</td>"
                       f"<td class='num'>{fmt(ln['slope'])}{se}</td><td class='num'>{fmt(ln['intercept'])}</td></tr>")
        out.append("</table>")
        out.append(ladder_chart(lad))
    return out


def ladder_chart(lad) -> str:
    """Strand density (headline basis) of each ladder compound against the dose, with the fitted line (SVG)."""
    import numpy as np

    from .charts import PALETTE, svg_line_chart

    q = lad["quantities"].get("nu") or next(iter(lad["quantities"].values()), None)
    if q is None:
        return ""
    x = np.array([p["phr"] for p in q["points"]], float)
    y = np.array([p["value"] for p in q["points"]], float)
    grid = np.linspace(0.0, float(x.max()) * 1.15, 50)
    ln = q["line"]
    series = [{"label": "compound means", "x": x, "y": y, "color": PALETTE[0], "style": "markers"},
              {"label": "fitted line", "x": grid, "y": ln["intercept"] + ln["slope"] * grid, "color": PALETTE[1],
               "style": "line"}]
    return svg_line_chart(series, f"{lad['ingredient']} (phr)", f"{q['label']} ({q['unit']})",
                          f"Dose ladder: {q['label']} against {lad['ingredient']}", x0=0.0, y0=None)
