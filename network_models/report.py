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

import csv
import datetime as _dt
import html
import io
import json
import math
from pathlib import Path

import numpy as np

from .compare import TEMPERATURE_NOTE, Comparison, at_temperature
from .deformation import MODES, Mode
from .models import get_model

CAUTIONS = (
    "Model results support design decisions; they do not replace validation testing of parts.",
    "Parts are validated by testing: prototypes and production parts are qualified by the tests the "
    "application calls for.",
    "For safety-relevant parts the applicable standards and licensed engineering practice govern.",
    "Several polymer constants are recalled rather than re-read from their source (marked 'memory' in the "
    "polymer table); check them before a decision rests on them.",
)

#: plot colours (an own palette; colour-blind-friendly ordering of hue and lightness)
PALETTE = ("#1f6f8b", "#c4572a", "#4f8a2b", "#7d4e9f", "#b48a12", "#2e4756", "#c46d94", "#3f8f84")

#: quantities shown in the comparison table, in order
TABLE_KEYS = ("G0", "nu", "mu_j", "Mc", "N", "lock", "ent_share", "G0_service", "M100_measured", "M100_predicted",
              "M300_measured", "M300_predicted", "nu_swelling")


# ----- number formatting ----------------------------------------------------------------------------
def fmt(x, digits=4) -> str:
    """``x`` to ``digits`` significant digits, plain notation for the range a compounder meets."""
    if x is None:
        return "—"
    x = float(x)
    if not math.isfinite(x):
        return "—"
    if x == 0:
        return "0"
    mag = math.floor(math.log10(abs(x)))
    if -3 <= mag < 6:
        decimals = max(digits - 1 - mag, 0)
        return f"{x:.{decimals}f}"
    return f"{x:.{digits - 1}e}"


def _signed(x: float, decimals: int) -> str:
    """+12.3 / −4.5 with a true minus sign."""
    return f"{x:+.{decimals}f}".replace("-", "−")


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _temp_c(T) -> str:
    return "—" if T is None else f"{T - 273.15:.1f} °C"


# ----- SVG charts -----------------------------------------------------------------------------------
def nice_ticks(lo: float, hi: float, n: int = 6) -> list[float]:
    """Round tick values covering [lo, hi] (1, 2, 2.5, 5 × 10^k steps)."""
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return [0.0, 1.0]
    if hi <= lo:
        hi = lo + (abs(lo) or 1.0)
    raw = (hi - lo) / max(n - 1, 1)
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw)
    start = math.floor(lo / step + 1e-9) * step
    ticks = []
    t = start
    while t <= hi + step * 1e-6:
        ticks.append(round(t, 12))
        t += step
    if ticks[-1] < hi - 1e-9 * step:
        ticks.append(round(t, 12))
    return ticks


def _legend_width(labels) -> int:
    """Right margin that fits the longest legend label (about 6.6 px per character at 11.5 px)."""
    longest = max((len(x) for x in labels if x), default=0)
    return int(max(120, 48 + 6.6 * longest))


def _tick_label(t: float) -> str:
    s = f"{t:.6g}"
    return s.replace("-", "−")


def svg_line_chart(series: list[dict], xlabel: str, ylabel: str, title: str = "", width: int = 860,
                   height: int = 380, x0: float | None = None, y0: float | None = 0.0) -> str:
    """A line/marker chart.  Each series: ``label``, ``x``, ``y``, ``color``, ``style`` in
    {"line", "dashed", "markers"}.  NaN points break lines.  Returns an ``<svg>`` element."""
    left, top, bottom = 72, 34 if title else 14, 52
    right = _legend_width([s.get("label", "") for s in series])
    width = max(width, right + left + 380)
    pw, ph = width - left - right, height - top - bottom
    xs = [np.asarray(s["x"], float) for s in series]
    ys = [np.asarray(s["y"], float) for s in series]
    finite_x = np.concatenate([x[np.isfinite(x) & np.isfinite(y)] for x, y in zip(xs, ys, strict=True)] or [[]])
    finite_y = np.concatenate([y[np.isfinite(x) & np.isfinite(y)] for x, y in zip(xs, ys, strict=True)] or [[]])
    if finite_x.size == 0:
        finite_x, finite_y = np.array([0.0, 1.0]), np.array([0.0, 1.0])
    xlo = float(finite_x.min()) if x0 is None else min(x0, float(finite_x.min()))
    ylo = float(finite_y.min())
    if y0 is not None:  # small excursions below y0 (slack, noise) are clipped rather than widening the axis
        span = float(finite_y.max()) - y0
        ylo = y0 if ylo >= y0 - 0.03 * abs(span) else ylo
    xt = nice_ticks(xlo, float(finite_x.max()))
    if x0 is not None and xt[0] < x0 <= float(finite_x.min()):  # e.g. a stretch axis starts at λ = 1
        xt = [x0] + [t for t in xt if t > x0 + 0.2 * (xt[1] - xt[0])]
    yt = nice_ticks(ylo, float(finite_y.max()))
    xa, xb, ya, yb = xt[0], xt[-1], yt[0], yt[-1]

    def X(v):
        return left + (v - xa) / (xb - xa) * pw

    def Y(v):
        return top + ph - (v - ya) / (yb - ya) * ph

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" class="chart" width="{width}" height="{height}" '
           f'viewBox="0 0 {width} {height}" role="img" aria-label="{_e(title or ylabel)}">']
    out.append(f'<rect x="0" y="0" width="{width}" height="{height}" fill="#ffffff"/>')
    if title:
        out.append(f'<text x="{left}" y="20" class="ct">{_e(title)}</text>')
    for t in xt:
        out.append(f'<line x1="{X(t):.1f}" y1="{top}" x2="{X(t):.1f}" y2="{top + ph}" class="grid"/>')
        out.append(f'<text x="{X(t):.1f}" y="{top + ph + 16}" class="tk" text-anchor="middle">{_tick_label(t)}</text>')
    for t in yt:
        out.append(f'<line x1="{left}" y1="{Y(t):.1f}" x2="{left + pw}" y2="{Y(t):.1f}" class="grid"/>')
        out.append(f'<text x="{left - 6}" y="{Y(t) + 4:.1f}" class="tk" text-anchor="end">{_tick_label(t)}</text>')
    out.append(f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" class="frame"/>')
    out.append(f'<text x="{left + pw / 2:.1f}" y="{height - 12}" class="al" text-anchor="middle">{_e(xlabel)}</text>')
    out.append(f'<text x="16" y="{top + ph / 2:.1f}" class="al" text-anchor="middle" '
               f'transform="rotate(-90 16 {top + ph / 2:.1f})">{_e(ylabel)}</text>')
    out.append(f'<clipPath id="c{id(series)}"><rect x="{left}" y="{top}" width="{pw}" height="{ph}"/></clipPath>')
    out.append(f'<g clip-path="url(#c{id(series)})">')
    for s, x, y in zip(series, xs, ys, strict=True):
        color, style = s.get("color", "#333"), s.get("style", "line")
        ok = np.isfinite(x) & np.isfinite(y)
        if style == "markers":
            step = max(1, int(ok.sum() // 60))
            idx = np.flatnonzero(ok)[::step]
            out.append(f'<g fill="none" stroke="{color}" stroke-width="1.2">' + "".join(
                f'<circle cx="{X(x[i]):.1f}" cy="{Y(y[i]):.1f}" r="2.6"/>' for i in idx) + "</g>")
            continue
        dash = ' stroke-dasharray="6 4"' if style == "dashed" else ""
        segs, cur = [], []
        for xi, yi, k in zip(x, y, ok, strict=True):
            if k:
                cur.append(f"{X(xi):.1f},{Y(yi):.1f}")
            elif cur:
                segs.append(cur)
                cur = []
        if cur:
            segs.append(cur)
        for seg in segs:
            if len(seg) > 1:
                out.append(f'<polyline points="{" ".join(seg)}" fill="none" stroke="{color}" '
                           f'stroke-width="2"{dash}/>')
    out.append("</g>")
    # legend
    lx, ly = left + pw + 14, top + 6
    for i, s in enumerate(series):
        if not s.get("label"):
            continue
        yy = ly + 18 * i
        color, style = s.get("color", "#333"), s.get("style", "line")
        if style == "markers":
            out.append(f'<circle cx="{lx + 11}" cy="{yy}" r="3" fill="none" stroke="{color}" stroke-width="1.4"/>')
        else:
            dash = ' stroke-dasharray="6 4"' if style == "dashed" else ""
            out.append(f'<line x1="{lx}" y1="{yy}" x2="{lx + 22}" y2="{yy}" stroke="{color}" stroke-width="2"{dash}/>')
        out.append(f'<text x="{lx + 28}" y="{yy + 4}" class="lg">{_e(s["label"])}</text>')
    out.append("</svg>")
    return "\n".join(out)


def svg_bar_chart(categories: list[str], groups: list[dict], ylabel: str, title: str = "", width: int = 860,
                  height: int = 360) -> str:
    """Grouped bars with 95 % error bars.  Each group: ``label``, ``color``, ``values``, ``lows``, ``highs``
    (None where absent)."""
    left, top, bottom = 72, 34 if title else 14, 52
    right = _legend_width([g["label"] for g in groups])
    width = max(width, right + left + 380)
    pw, ph = width - left - right, height - top - bottom
    vals = [v for g in groups for v in list(g["values"]) + list(g.get("highs") or []) if v is not None
            and math.isfinite(v)]
    yt = nice_ticks(0.0, max(vals) if vals else 1.0)
    ya, yb = yt[0], yt[-1]

    def Y(v):
        return top + ph - (v - ya) / (yb - ya) * ph

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" class="chart" width="{width}" height="{height}" '
           f'viewBox="0 0 {width} {height}" role="img" aria-label="{_e(title or ylabel)}">',
           f'<rect x="0" y="0" width="{width}" height="{height}" fill="#ffffff"/>']
    if title:
        out.append(f'<text x="{left}" y="20" class="ct">{_e(title)}</text>')
    for t in yt:
        out.append(f'<line x1="{left}" y1="{Y(t):.1f}" x2="{left + pw}" y2="{Y(t):.1f}" class="grid"/>')
        out.append(f'<text x="{left - 6}" y="{Y(t) + 4:.1f}" class="tk" text-anchor="end">{_tick_label(t)}</text>')
    out.append(f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" class="frame"/>')
    n, k = max(len(categories), 1), max(len(groups), 1)
    slot = pw / n
    bw = slot * 0.7 / k
    for ci, cat in enumerate(categories):
        cx = left + slot * ci + slot * 0.15
        for gi, g in enumerate(groups):
            v = g["values"][ci]
            x = cx + gi * bw
            if v is None or not math.isfinite(v):
                out.append(f'<text x="{x + bw / 2:.1f}" y="{Y(0) - 4:.1f}" class="tk" text-anchor="middle">n/a</text>')
                continue
            out.append(f'<rect x="{x + 1:.1f}" y="{Y(max(v, 0)):.1f}" width="{bw - 2:.1f}" '
                       f'height="{abs(Y(0) - Y(v)):.1f}" fill="{g["color"]}" fill-opacity="0.85"/>')
            lo = (g.get("lows") or [None] * n)[ci]
            hi = (g.get("highs") or [None] * n)[ci]
            if lo is not None and hi is not None:
                xm = x + bw / 2
                out.append(f'<g stroke="#222" stroke-width="1.3"><line x1="{xm:.1f}" y1="{Y(lo):.1f}" x2="{xm:.1f}" '
                           f'y2="{Y(hi):.1f}"/><line x1="{xm - 5:.1f}" y1="{Y(lo):.1f}" x2="{xm + 5:.1f}" '
                           f'y2="{Y(lo):.1f}"/><line x1="{xm - 5:.1f}" y1="{Y(hi):.1f}" x2="{xm + 5:.1f}" '
                           f'y2="{Y(hi):.1f}"/></g>')
        out.append(f'<text x="{left + slot * (ci + 0.5):.1f}" y="{top + ph + 16}" class="tk" '
                   f'text-anchor="middle">{_e(cat)}</text>')
    out.append(f'<text x="16" y="{top + ph / 2:.1f}" class="al" text-anchor="middle" '
               f'transform="rotate(-90 16 {top + ph / 2:.1f})">{_e(ylabel)}</text>')
    out.append(f'<text x="{left + pw / 2:.1f}" y="{height - 12}" class="al" text-anchor="middle">compound '
               '(error bars: 95 % interval)</text>')
    lx, ly = left + pw + 14, top + 6
    for i, g in enumerate(groups):
        yy = ly + 18 * i
        out.append(f'<rect x="{lx}" y="{yy - 6}" width="16" height="12" fill="{g["color"]}" fill-opacity="0.85"/>')
        out.append(f'<text x="{lx + 22}" y="{yy + 4}" class="lg">{_e(g["label"])}</text>')
    out.append("</svg>")
    return "\n".join(out)


# ----- plots of a comparison ---------------------------------------------------------------------------
def curve_plots(cmp: Comparison) -> list[tuple[str, str]]:
    """(mode, svg): every compound's data (markers) and fit (line) overlaid, one chart per mode."""
    m = get_model(cmp.model)
    plots = []
    for mode in MODES:
        series = []
        for i, r in enumerate(cmp.results):
            color = PALETTE[i % len(PALETTE)]
            cs = [c for c in r.compound.curves if c.mode is mode]
            if not cs:
                continue
            lam = np.concatenate([c.stretch for c in cs])
            P = np.concatenate([c.stress for c in cs])
            series.append({"label": f"{r.name} data", "x": lam, "y": P / 1e6, "color": color, "style": "markers"})
            if r.ok and m.supports(mode):
                grid = np.linspace(1.0, float(lam.max()), 160)
                fit = m.nominal_stress(mode, grid, r.param_values())
                series.append({"label": f"{r.name} fit", "x": grid, "y": fit / 1e6, "color": color,
                               "style": "line"})
        if series:
            plots.append((mode.value, svg_line_chart(
                series, "stretch λ (1)", "nominal stress P (MPa)",
                f"{mode.value.capitalize()} tension: data and {m.title} fit", x0=1.0)))
    return plots


def crosslink_bar_plot(cmp: Comparison) -> str:
    ok = [r for r in cmp.results if r.ok]
    names = [r.name for r in ok]

    def col(key):
        qs = [r.quantities.get(key) for r in ok]
        return ([None if q is None else q.value for q in qs], [None if q is None else q.low for q in qs],
                [None if q is None else q.high for q in qs])

    groups = []
    for key, label, color in (("nu", "strand density ν", PALETTE[0]),
                              ("mu_j", "junction density μ_j = 2ν/f", PALETTE[1]),
                              ("nu_swelling", "ν from swelling (χ ± 0.05)", PALETTE[2])):
        v, lo, hi = col(key)
        if any(x is not None for x in v):
            groups.append({"label": label, "color": color, "values": v, "lows": lo, "highs": hi})
    nu0 = next((r.quantities["nu"] for r in ok if "nu" in r.quantities), None)
    basis = nu0.basis if nu0 is not None else "basis as stated"
    return svg_bar_chart(names, groups, "density (mol/m³)", f"Crosslink density ({basis})")


def service_plot(cmp: Comparison) -> str:
    """Each compound's uniaxial model curve at the test temperature (dashed) and at the service
    temperature (solid), G ∝ T at a fixed network."""
    m = get_model(cmp.model)
    mode = Mode.UNIAXIAL if m.supports("uniaxial") else m.modes[0]
    series = []
    top = 3.0
    for r in cmp.results:
        cs = [c for c in r.compound.curves if c.mode is mode]
        if cs:
            top = max(top, max(float(c.stretch.max()) for c in cs))
    Ts = cmp.service_temperature
    for i, r in enumerate(cmp.results):
        if not r.ok:
            continue
        own = [float(c.stretch.max()) for c in r.compound.curves if c.mode is mode]
        grid = np.linspace(1.0, max(own) if own else top, 160)  # each compound over its own tested range
        color = PALETTE[i % len(PALETTE)]
        p = r.param_values()
        if abs(Ts - r.test_temperature) < 0.05:  # service = test temperature: one curve, not two on top
            series.append({"label": f"{r.name} at {_temp_c(Ts)} (test = service)", "x": grid,
                           "y": m.nominal_stress(mode, grid, p) / 1e6, "color": color, "style": "line"})
            continue
        series.append({"label": f"{r.name} at {_temp_c(r.test_temperature)}", "x": grid,
                       "y": m.nominal_stress(mode, grid, p) / 1e6, "color": color, "style": "dashed"})
        p_s = at_temperature(m, p, r.test_temperature, Ts)
        series.append({"label": f"{r.name} at {_temp_c(Ts)}", "x": grid,
                       "y": m.nominal_stress(mode, grid, p_s) / 1e6, "color": color, "style": "line"})
    return svg_line_chart(series, "stretch λ (1)", "nominal stress P (MPa)",
                          f"{mode.value.capitalize()}: {m.title} fit re-evaluated at {_temp_c(Ts)}", x0=1.0)


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
.chart .grid{stroke:#e6eaec;stroke-width:1}.chart .frame{fill:none;stroke:#8a979e;stroke-width:1}
.chart text{font-family:inherit;fill:#1d2a33}.chart .tk{font-size:11px}.chart .al{font-size:12px}
.chart .lg{font-size:11.5px}.chart .ct{font-size:13px;font-weight:600}
.eq{font-family:"DejaVu Sans Mono",Consolas,monospace;background:#f3f5f6;padding:6px 10px;display:block}
small{color:#56656e}
table.prov{font-size:.82em;width:100%}table.prov td:nth-child(2){white-space:nowrap}
table.prov td:nth-child(5){min-width:8em}
@media print{body{background:#fff}main{padding:0}.chart{break-inside:avoid}h2{break-after:avoid}}
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
        from . import __version__

        d = {"report": {"title": self.title, "purpose": self.purpose, "created": self.created.isoformat(),
                        "netstretch_version": __version__, "units": "SI (Pa, K, mol/m³, kg/mol)",
                        "cautions": list(CAUTIONS)}}
        d.update(self.cmp.to_dict())
        return d

    def to_json(self) -> str:
        return json.dumps(_clean(self.to_dict()), indent=2, ensure_ascii=False, default=_json_default, allow_nan=False)

    def csv_rows(self) -> list[dict]:
        """Every number of the report, one row each."""
        rows = []

        def add(section, compound, key, label, value, unit, low=None, high=None, shown_unit="", scale=1.0,
                basis="", note=""):
            if value is None or (isinstance(value, float) and not math.isfinite(value)):
                value = None
            rows.append({
                "section": section, "compound": compound, "key": key, "label": label,
                "value": value, "unit": unit, "ci95_low": low, "ci95_high": high,
                "display_value": None if value is None else value * scale,
                "display_unit": shown_unit or unit, "basis": basis, "note": note,
            })

        add("settings", "", "service_temperature", "service temperature", self.cmp.service_temperature, "K",
            shown_unit="K")
        for r in self.cmp.results:
            for prov in r.compound.provenance():
                src = f"{prov['source']} [{prov['curve']}]"
                add("provenance", r.name, "points", f"points in {src}", prov["points"], "1")
                add("provenance", r.name, "stretch_min", f"lowest stretch in {src}", prov["stretch_min"], "1")
                add("provenance", r.name, "stretch_max", f"highest stretch in {src}", prov["stretch_max"], "1")
                if prov["temperature_K"] is not None:
                    add("provenance", r.name, "temperature", f"test temperature of {src}", prov["temperature_K"],
                        "K")
            add("compound", r.name, "test_temperature", "test temperature used", r.test_temperature, "K")
            if not r.ok:
                add("error", r.name, "error", r.error, None, "", note=r.error)
                continue
            for p in r.params:
                add("parameter", r.name, p.name, p.meaning, p.value, p.unit, p.low, p.high, p.display_unit,
                    p.display_scale, note="held fixed" if p.held else f"standard error {p.stderr!r}")
            for q in r.quantities.values():
                add("quantity", r.name, q.key, q.label, q.value, q.unit, q.low, q.high, q.display_unit,
                    q.display_scale, q.basis, q.note)
            for fq in r.fit_quality:
                add("fit_quality", r.name, f"rms_{fq['mode']}", f"RMS residual, {fq['mode']}", fq["rms_Pa"], "Pa",
                    shown_unit="MPa", scale=1e-6)
                add("fit_quality", r.name, f"r2_{fq['mode']}", f"R², {fq['mode']}", fq["r2"], "1")
                add("fit_quality", r.name, f"points_{fq['mode']}", f"points fitted, {fq['mode']}", fq["points"], "1")
            for i, row in enumerate(r.crosslink_rows):
                for key, unit in (("modulus_Pa", "Pa"), ("strand_density", "mol/m³"), ("junction_density", "mol/m³"),
                                  ("Mc", "kg/mol"), ("N", "1")):
                    if row.get(key) is None:
                        continue
                    ci = row.get(f"{key}_ci95") or (None, None)
                    add("crosslink_table", r.name, f"{row.get('key', i)}:{key}", f"{key} — {row.get('label', i)}",
                        row[key], unit, ci[0], ci[1], basis=str(row.get("assumes", "")), note=str(row.get("note", "")))
            for i, s in enumerate(r.swelling_rows):
                for key, unit in (("phi", "1"), ("phi_measured", "1"), ("chi", "1"),
                                  ("molar_volume_cm3_mol", "cm³/mol"), ("nu", "mol/m³"), ("nu_phantom", "mol/m³"),
                                  ("nu_chi_minus_0.05", "mol/m³"), ("nu_chi_plus_0.05", "mol/m³")):
                    add("swelling", r.name, f"{key}[{i}]", f"{key} ({s['solvent']})", s.get(key), unit)
        for d in self.cmp.differences():
            add("difference", d["compound"], d["key"], f"{d['label']} vs {d['baseline']}", d["percent"], "%",
                note={True: "95 % intervals overlap", False: "95 % intervals do not overlap",
                      None: "no interval"}[d["intervals_overlap"]])
        return rows

    CSV_FIELDS = ("section", "compound", "key", "label", "value", "unit", "ci95_low", "ci95_high",
                  "display_value", "display_unit", "basis", "note")

    def to_csv(self) -> str:
        buf = io.StringIO()
        w = csv.DictWriter(buf, fieldnames=self.CSV_FIELDS, lineterminator="\n")
        w.writeheader()
        for row in self.csv_rows():
            w.writerow({k: ("" if v is None else (repr(v) if isinstance(v, float) else v)) for k, v in row.items()})
        return buf.getvalue()

    # ----- HTML -----------------------------------------------------------------------------------
    SECTIONS = ("summary", "compounds", "comparison", "plots", "provenance", "params", "crosslink", "swelling",
                "warnings", "model")

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
        from . import __version__

        parts.append(
            f'<p class="meta">Made {self.created:%Y-%m-%d %H:%M} UTC with netstretch {__version__} · model: '
            f"<b>{_e(m.title)}</b> · baseline: <b>{_e(c.baseline or '—')}</b> · service temperature: "
            f"<b>{_temp_c(c.service_temperature)}</b> · {len(c.results)} compound(s)</p>")
        parts.append(f'<div class="caution"><b>Caution.</b> {_e(CAUTIONS[0])} {_e(CAUTIONS[2])}</div>')
        parts += self._summary_html()
        parts += self._compounds_html()
        parts += self._comparison_html()
        parts += self._plots_html()
        parts += self._provenance_html()
        parts += self._params_html()
        parts += self._crosslink_html()
        parts += self._swelling_html()
        parts += self._warnings_html()
        parts += self._model_html()
        parts.append("<h2>Cautions</h2><ul>" + "".join(f"<li>{_e(x)}</li>" for x in CAUTIONS) + "</ul>")
        parts.append("<p class='meta'>The numbers in this report are also in the CSV and JSON files written beside "
                     "it (SI units there; trade units here).</p>")
        parts.append("</main></body></html>")
        return "\n".join(parts)

    def _summary_html(self):
        """Plain-sentence findings: each compound against the baseline on ν, G₀ at service temperature
        and M100 (measured where the data reach it)."""
        c = self.cmp
        diffs = {(d["compound"], d["key"]): d for d in c.differences()}
        items = []
        for r in c.results:
            if r.name == c.baseline:
                continue
            if not r.ok:
                items.append(f"<li class='err'>{_e(r.error)}</li>")
                continue
            bits = []
            for key, what in (("nu", "strand density ν"), ("G0_service", f"G₀ at {_temp_c(c.service_temperature)}"),
                              ("M100_measured", "measured M100")):
                d = diffs.get((r.name, key))
                if d is None:
                    continue
                verdict = {True: "within the 95 % intervals of the baseline",
                           False: "outside the 95 % intervals", None: ""}[d["intervals_overlap"]]
                bits.append(f"{what} {_signed(d['percent'], 0)} %" + (f" ({verdict})" if verdict else ""))
            if bits:
                items.append(f"<li><b>{_e(r.name)}</b> vs {_e(c.baseline)}: {_e('; '.join(bits))}.</li>")
        if not items:
            return []
        return ["<h2>Summary</h2><ul>" + "".join(items) + "</ul><p><small>Intervals cover the fit only, not "
                "specimen-to-specimen or batch scatter; differences smaller than the usual scatter of the test "
                "are not decisions.</small></p>"]

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

        folders = sorted({str(_P(p["source"]).parent) for r in self.cmp.results for p in r.compound.provenance()
                          if p["source"] and not p["source"].startswith("(")})
        out = ["<h2>Data provenance</h2>"]
        if folders:
            out.append("<p><small>Files read from: " + ", ".join(_e(f) for f in folders) + "</small></p>")
        out.append("<table class='prov'><tr><th>compound</th><th>file</th><th>mode</th>"
                   "<th>specimen</th><th>cycle</th><th>temperature</th><th>points</th><th>stretch range</th>"
                   "<th>reader notices</th></tr>")
        for r in self.cmp.results:
            for p in r.compound.provenance():
                src = p["source"]
                name = _P(src).name if src and not src.startswith("(") else src
                out.append(
                    f"<tr><td>{_e(r.name)}</td><td title='{_e(src)}'>{_e(name)}</td>"
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
        if diff is not None:
            mark = {True: ("same", "intervals overlap"), False: ("sig", "intervals apart"),
                    None: ("", "")}[diff["intervals_overlap"]]
            d = (f"<br><span class='diff'>{_signed(diff['percent'], 1)} % "
                 f"<span class='{mark[0]}'>{mark[1]}</span></span>")
        return (f"<td class='num' data-compound='{_e(r.name)}' data-key='{_e(q.key)}' data-value='{q.value!r}'>"
                f"{fmt(q.shown(q.value))}{ci}{d}</td>")

    def _comparison_html(self):
        c = self.cmp
        diffs = {(d["compound"], d["key"]): d for d in c.differences()}
        ok = [r for r in c.results]
        out = [f"<h2>Comparison</h2><p>Same model (<b>{_e(c.model_obj.title)}</b>) fitted to every compound. "
               "Each cell: value, its 95 % interval in brackets and, against the baseline "
               f"<b>{_e(c.baseline)}</b>, the difference in % and whether the 95 % intervals overlap.</p>"]
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
                    f"{fmt(p.low * p.display_scale)} – {fmt(p.high * p.display_scale)}" if p.low is not None else "—")
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
        ws = [w for r in self.cmp.results for w in r.warnings]
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
                   + "<li>Treloar, The Physics of Rubber Elasticity, 3rd ed. (1975) — G = νRT, G ∝ T</li></ul>")
        from .network import get_polymer

        for key in sorted({r.compound.polymer for r in self.cmp.results}):
            p = get_polymer(key)
            out.append(f"<p><small>Polymer {_e(p.key)} ({_e(p.title)}): constants from {_e(p.source)} "
                       f"[{_e(p.status)}].</small></p>")
        return out

    # ----- files ---------------------------------------------------------------------------------------
    def write(self, path) -> dict[str, Path]:
        """Write ``path`` (HTML) and the CSV and JSON beside it; returns the three paths."""
        p = Path(path)
        if p.suffix.lower() not in (".html", ".htm"):
            p = p.with_suffix(".html")
        p.parent.mkdir(parents=True, exist_ok=True)
        paths = {"html": p, "csv": p.with_suffix(".csv"), "json": p.with_suffix(".json")}
        paths["html"].write_text(self.to_html(), "utf-8")
        paths["csv"].write_text(self.to_csv(), "utf-8")
        paths["json"].write_text(self.to_json(), "utf-8")
        return paths


def _json_default(o):
    if isinstance(o, (np.floating, np.integer)):
        return o.item()
    if isinstance(o, np.ndarray):
        return o.tolist()
    if isinstance(o, Mode):
        return o.value
    return str(o)


def _clean(o):
    """Replace non-finite floats by None so the JSON is valid."""
    if isinstance(o, float):
        return o if math.isfinite(o) else None
    if isinstance(o, dict):
        return {k: _clean(v) for k, v in o.items()}
    if isinstance(o, (list, tuple)):
        return [_clean(v) for v in o]
    return o


def read_csv(path_or_text) -> list[dict]:
    """Read a report CSV back: numbers as float, empty cells as None."""
    text = Path(path_or_text).read_text("utf-8") if not str(path_or_text).startswith("section,") else path_or_text
    out = []
    for row in csv.DictReader(io.StringIO(text)):
        for k in ("value", "ci95_low", "ci95_high", "display_value"):
            row[k] = float(row[k]) if row[k] not in ("", None) else None
        out.append(row)
    return out


def build_report(comparison: Comparison, title="", purpose="") -> Report:
    return Report(comparison, title=title, purpose=purpose)


__all__ = ["CAUTIONS", "PALETTE", "Report", "build_report", "fmt", "nice_ticks", "read_csv", "svg_bar_chart",
           "svg_line_chart"]
