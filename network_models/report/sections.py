"""The report sections about specimens and decisions: the summary (n per compound, headline, verdicts in
plain words), the specimen table and chart with exclusions, and the uncertainty decomposition."""

from __future__ import annotations

from ..statistics import DIFFERENT, VERDICT_WORDING
from .charts import specimen_plot
from .text import esc as _e
from .text import fmt
from .text import signed as _signed

#: verdict -> css class; colour only for "different" (red when lower, green when higher is not implied: one
#: colour says "a difference the specimens support", the others stay plain)
_VERDICT_CLASS = {DIFFERENT: "sig"}


def verdict_span(d: dict) -> str:
    cls = _VERDICT_CLASS.get(d["verdict"], "")
    return f"<span class='{cls}'>{_e(d['verdict'])}</span>" if cls else _e(d["verdict"])


def _headline_text(r) -> str:
    h = r.headline
    if h is None:
        return f"{_e(r.name)}: no headline ({_e(r.error or 'not fitted')})"
    ci = f" [{fmt(h.ci95[0])} – {fmt(h.ci95[1])}]" if h.ci95 else " (scatter unknown)"
    return (f"<b>{_e(r.name)}</b>: ν = <b data-compound='{_e(r.name)}' data-key='headline' data-value='{h.value!r}'>"
            f"{fmt(h.value)}</b> mol/m³{ci}, n = {h.n} specimen(s) — basis: {_e(h.basis)}"
            + (f" <small>({_e(h.note)})</small>" if h.note else ""))


def summary_html(cmp) -> list[str]:
    """n per compound, the headline of each, and each compound against the baseline in words."""
    out = ["<h2>Summary</h2><ul class='headline'>"]
    out += [f"<li>{_headline_text(r)}</li>" for r in cmp.results]
    out.append("</ul>")
    diffs = cmp.differences()
    items = []
    for r in cmp.results:
        if r.name == cmp.baseline:
            continue
        if not r.ok:
            items.append(f"<li class='err'>{_e(r.error)}</li>")
            continue
        bits = []
        for d in diffs:
            if d["compound"] != r.name or d["quantity"] not in ("G0", "strand_density", "M100_measured"):
                continue
            pct = "" if d["percent"] is None else f"{_signed(d['percent'], 1)} %"
            if d["quantity"] == "strand_density" and d["absolute"] is not None:
                pct += f" (Δν {_signed(d['absolute'], 1)} mol/m³)"
            mdd = (f", could detect ≥ {d['detectable_percent']:.1f} %" if d["detectable_percent"] is not None else "")
            bits.append(f"{_e(d['label'])} {pct}: {verdict_span(d)} <small>(n {d['n']} vs {d['n_baseline']}{mdd})"
                        "</small>")
        if bits:
            items.append(f"<li><b>{_e(r.name)}</b> vs {_e(cmp.baseline)}: " + "; ".join(bits) + ".</li>")
    if items:
        out.append(f"<p>Against the baseline <b>{_e(cmp.baseline)}</b>, from the specimens:</p><ul>"
                   + "".join(items) + "</ul>")
    out.append(f"<p><small>{_e(VERDICT_WORDING)} Smallest detectable difference: α = 0.05 two-sided, 80 % "
               "power. Intervals of compound values: specimen scatter with fit error (Student t, n − 1).</small></p>")
    return out


def specimens_html(cmp) -> list[str]:
    """Every specimen with its own fit's numbers, whether it is counted, outlier flags and exclusions."""
    out = ["<h2>Specimens</h2><p>Every specimen is fitted alone with the same model; the statistics use the "
           "specimens tested in each compound's main mode. Outlier flag: modified z-score above 3.5 (median "
           "absolute deviation; Iglewicz &amp; Hoaglin 1993), judged from five specimens on.</p>"]
    out.append(specimen_plot(cmp, "G0"))
    if any(r.headline is not None for r in cmp.results):
        out.append(specimen_plot(cmp, "strand_density"))
    out.append("<table><tr><th>compound</th><th>specimen</th><th>modes</th><th>G₀ (MPa)</th><th>ν (mol/m³)</th>"
               "<th>M100 measured (MPa)</th><th>status</th></tr>")
    for r in cmp.results:
        for s in r.specimens:
            status = ("excluded — " + s.excluded if s.excluded else "fit failed — " + s.error if s.error
                      else "counted" if s.used else s.note)
            if s.outlier:
                status += "; flagged: " + ", ".join(s.outlier)
            cells = "".join(
                f"<td class='num' data-compound='{_e(r.name)}' data-key='specimen:{_e(s.name)}:{q}' "
                f"data-value='{s.values[q]!r}'>{fmt(s.values[q] * sc)}</td>" if s.values.get(q) is not None
                else "<td class='num'>—</td>" for q, sc in (("G0", 1e-6), ("strand_density", 1.0),
                                                           ("M100_measured", 1e-6)))
            out.append(f"<tr><td>{_e(r.name)}</td><td>{_e(s.name)}</td><td>{_e(', '.join(s.modes))}</td>{cells}"
                       f"<td><small>{_e(status)}</small></td></tr>")
    out.append("</table>")
    ex = [(c, s, why) for c, d in cmp.exclusions.items() for s, why in d.items()]
    out.append("<h3>Exclusions</h3>" + ("<ul>" + "".join(f"<li>{_e(c)} specimen {_e(s)}: {_e(why)}</li>"
                                                         for c, s, why in ex) + "</ul>" if ex else "<p>None.</p>"))
    return out


def _pair(v) -> str:
    return "—" if not v else f"{fmt(v[0])} – {fmt(v[1])}"


def uncertainty_html(cmp) -> list[str]:
    """The headline's uncertainty side by side: specimen scatter, fit error, model spread, assumption bracket."""
    out = ["<h2>Where the uncertainty of the headline comes from</h2><table class='unc'><tr><th>compound</th>"
           "<th>headline ν (mol/m³)</th><th>specimen scatter (95 %)</th><th>fit error only (95 %)</th>"
           "<th>spread across suitable models</th><th>assumption bracket affine … phantom</th></tr>"]
    for r in cmp.results:
        h = r.headline
        if h is None:
            continue
        u = h.uncertainty
        spread = u.get("model_spread") or {}
        used = [m["model"] for m in spread.get("models", []) if m["used"]]
        sp = _pair(spread.get("range")) + (f"<br><small>{_e(', '.join(used))}</small>" if used else "")
        out.append(f"<tr><td>{_e(r.name)}</td><td class='num'>{fmt(h.value)}<br><span class='ci'>"
                   f"{'[' + _pair(h.ci95) + ']' if h.ci95 else 'scatter unknown'}</span></td>"
                   f"<td class='num'>{_pair(u.get('specimen_scatter')) if u.get('specimen_scatter') else 'unknown'}"
                   f"</td><td class='num'>{_pair(u.get('fit_error'))}</td><td class='num'>{sp}</td>"
                   f"<td class='num'>{_pair(u.get('assumption_bracket'))}</td></tr>")
    out.append("</table><p><small>Headline interval: specimen scatter with fit error. The fit-only interval is not "
               "an uncertainty of the compound. Model spread: models covering every tested mode whose fit has no "
               "warning beyond untested modes. Assumption bracket: the same modulus read as an affine or a "
               "phantom network.</small></p>")
    return out


__all__ = ["specimens_html", "summary_html", "uncertainty_html", "verdict_span"]
