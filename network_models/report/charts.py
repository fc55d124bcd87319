"""Self-contained SVG charts of the report: every style is inline (no stylesheet needed), so a chart copied
out of the page — into a slide, a mail, another document — keeps its white background, grey grid and dark
text instead of turning black.

Line charts with axes, ticks, labels and a legend; grouped bars with 95 % error bars; a specimen chart
(every specimen a point, the compound's mean and 95 % interval beside them).
"""

from __future__ import annotations

import math

import numpy as np

from ..compare import Comparison, at_temperature
from ..deformation import MODES, Mode
from ..models import get_model
from .text import esc as _e
from .text import temp_c as _temp_c

#: plot colours (an own palette; colour-blind-friendly ordering of hue and lightness)
PALETTE = ("#1f6f8b", "#c4572a", "#4f8a2b", "#7d4e9f", "#b48a12", "#2e4756", "#c46d94", "#3f8f84")
#: inline text style of every chart label
FONT = 'font-family="system-ui, Arial, Helvetica, sans-serif" fill="#1d2a33"'
TICK = FONT + ' font-size="11"'
AXIS = FONT + ' font-size="12"'
GRID = 'stroke="#e6eaec" stroke-width="1"'
FRAME = 'fill="none" stroke="#8a979e" stroke-width="1"'
#: marker shapes that tell specimens apart without colour (cycled per specimen)
MARKERS = ("circle", "square", "triangle", "diamond", "cross")


def nice_ticks(lo: float, hi: float, n: int = 6) -> list[float]:
    """Round tick values covering [lo, hi] (1, 2, 2.5, 5 × 10^k steps)."""
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return [0.0, 1.0]
    if hi <= lo:
        hi = lo + (abs(lo) or 1.0)
    elif hi - lo <= 1e-9 * max(abs(lo), abs(hi)):  # equal up to rounding: a step below the float spacing hangs
        lo, hi = lo - 0.05 * abs(lo), hi + 0.05 * abs(hi)
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
        out.append(f'<text x="{left}" y="20" {FONT} font-size="13" font-weight="600">{_e(title)}</text>')
    for t in xt:
        out.append(f'<line x1="{X(t):.1f}" y1="{top}" x2="{X(t):.1f}" y2="{top + ph}" {GRID}/>')
        out.append(f'<text x="{X(t):.1f}" y="{top + ph + 16}" {TICK} text-anchor="middle">{_tick_label(t)}</text>')
    for t in yt:
        out.append(f'<line x1="{left}" y1="{Y(t):.1f}" x2="{left + pw}" y2="{Y(t):.1f}" {GRID}/>')
        out.append(f'<text x="{left - 6}" y="{Y(t) + 4:.1f}" {TICK} text-anchor="end">{_tick_label(t)}</text>')
    out.append(f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" {FRAME}/>')
    out.append(f'<text x="{left + pw / 2:.1f}" y="{height - 12}" {AXIS} text-anchor="middle">{_e(xlabel)}</text>')
    out.append(f'<text x="16" y="{top + ph / 2:.1f}" {AXIS} text-anchor="middle" '
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
        out.append(f'<text x="{lx + 28}" y="{yy + 4}" {FONT} font-size="11.5">{_e(s["label"])}</text>')
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
        out.append(f'<text x="{left}" y="20" {FONT} font-size="13" font-weight="600">{_e(title)}</text>')
    for t in yt:
        out.append(f'<line x1="{left}" y1="{Y(t):.1f}" x2="{left + pw}" y2="{Y(t):.1f}" {GRID}/>')
        out.append(f'<text x="{left - 6}" y="{Y(t) + 4:.1f}" {TICK} text-anchor="end">{_tick_label(t)}</text>')
    out.append(f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" {FRAME}/>')
    n, k = max(len(categories), 1), max(len(groups), 1)
    slot = pw / n
    bw = slot * 0.7 / k
    for ci, cat in enumerate(categories):
        cx = left + slot * ci + slot * 0.15
        for gi, g in enumerate(groups):
            v = g["values"][ci]
            x = cx + gi * bw
            if v is None or not math.isfinite(v):
                out.append(f'<text x="{x + bw / 2:.1f}" y="{Y(0) - 4:.1f}" {TICK} text-anchor="middle">n/a</text>')
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
        out.append(f'<text x="{left + slot * (ci + 0.5):.1f}" y="{top + ph + 16}" {TICK} '
                   f'text-anchor="middle">{_e(cat)}</text>')
    out.append(f'<text x="16" y="{top + ph / 2:.1f}" {AXIS} text-anchor="middle" '
               f'transform="rotate(-90 16 {top + ph / 2:.1f})">{_e(ylabel)}</text>')
    out.append(f'<text x="{left + pw / 2:.1f}" y="{height - 12}" {AXIS} text-anchor="middle">compound '
               '(error bars: 95 % interval)</text>')
    lx, ly = left + pw + 14, top + 6
    for i, g in enumerate(groups):
        yy = ly + 18 * i
        out.append(f'<rect x="{lx}" y="{yy - 6}" width="16" height="12" fill="{g["color"]}" fill-opacity="0.85"/>')
        out.append(f'<text x="{lx + 22}" y="{yy + 4}" {FONT} font-size="11.5">{_e(g["label"])}</text>')
    out.append("</svg>")
    return "\n".join(out)


# ----- plots of a comparison ---------------------------------------------------------------------------
def _stretch_axis(cmp):
    """(x transform, axis label, x0) for the comparison's stretch display choice (display_units: stretch or
    elongation (λ − 1)·100 %)."""
    if getattr(cmp, "display_units", {}).get("stretch") == "elongation":
        return (lambda lam: (np.asarray(lam) - 1.0) * 100.0), "elongation (%)", 0.0
    return (lambda lam: lam), "stretch λ (1)", 1.0


def curve_plots(cmp: Comparison) -> list[tuple[str, str]]:
    """(mode, svg): every compound's data (markers) and fit (line) overlaid, one chart per mode."""
    m = get_model(cmp.model)
    X, xlabel, x0 = _stretch_axis(cmp)
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
            series.append({"label": f"{r.name} data", "x": X(lam), "y": P / 1e6, "color": color, "style": "markers"})
            if r.ok and m.supports(mode):
                grid = np.linspace(1.0, float(lam.max()), 160)
                fit = m.nominal_stress(mode, grid, r.param_values())
                series.append({"label": f"{r.name} fit", "x": X(grid), "y": fit / 1e6, "color": color,
                               "style": "line"})
        if series:
            plots.append((mode.value, svg_line_chart(
                series, xlabel, "nominal stress P (MPa)",
                f"{mode.value.capitalize()} tension: data and {m.title} fit", x0=x0)))
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



def _marker(shape: str, x: float, y: float, color: str, filled: bool = True) -> str:
    fill = color if filled else "#ffffff"
    st = f'fill="{fill}" stroke="{color}" stroke-width="1.4"'
    if shape == "square":
        return f'<rect x="{x - 4:.1f}" y="{y - 4:.1f}" width="8" height="8" {st}/>'
    if shape == "triangle":
        return f'<polygon points="{x:.1f},{y - 5:.1f} {x - 5:.1f},{y + 4:.1f} {x + 5:.1f},{y + 4:.1f}" {st}/>'
    if shape == "diamond":
        return (f'<polygon points="{x:.1f},{y - 5:.1f} {x + 5:.1f},{y:.1f} {x:.1f},{y + 5:.1f} '
                f'{x - 5:.1f},{y:.1f}" {st}/>')
    if shape == "cross":
        return (f'<path d="M{x - 4:.1f},{y - 4:.1f}L{x + 4:.1f},{y + 4:.1f}M{x - 4:.1f},{y + 4:.1f}L{x + 4:.1f},'
                f'{y - 4:.1f}" stroke="{color}" stroke-width="2" fill="none"/>')
    return f'<circle cx="{x:.1f}" cy="{y:.1f}" r="4.2" {st}/>'


def specimen_plot(cmp: Comparison, quantity: str = "G0", width: int = 860, height: int = 360) -> str:
    """Every specimen of every compound as a point (shape = specimen number within its compound, colour =
    compound; hollow grey = excluded or not counted), the compound's mean as a bar and its 95 % interval
    (specimen scatter with fit error) as a whisker."""
    from ..compare import SPECIMEN_QUANTITIES

    label, _unit, dunit, scale = SPECIMEN_QUANTITIES[quantity]
    ok = [r for r in cmp.results if r.ok]
    pts = [(i, r, s, s.values.get(quantity)) for i, r in enumerate(ok) for s in r.specimens
           if s.values.get(quantity) is not None]
    key = {"G0": "G0", "strand_density": "nu"}.get(quantity, quantity)
    qs = [r.quantities.get(key) for r in ok]
    vals = [v * scale for *_x, v in pts] + [x * scale for q in qs if q is not None and q.has_interval
                                            for x in (q.low, q.high) if x is not None]
    left, top, bottom, right = 72, 34, 52, 190
    pw, ph = width - left - right, height - top - bottom
    lo, hi = (min(vals), max(vals)) if vals else (0.0, 1.0)
    pad = 0.08 * (hi - lo or abs(hi) or 1.0)
    yt = nice_ticks(lo - pad, hi + pad)
    ya, yb = yt[0], yt[-1]

    def Y(v):
        return top + ph - (v - ya) / (yb - ya) * ph

    slot = pw / max(len(ok), 1)
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" class="chart" width="{width}" height="{height}" '
           f'viewBox="0 0 {width} {height}" role="img" aria-label="{_e(label)} by specimen">',
           f'<rect x="0" y="0" width="{width}" height="{height}" fill="#ffffff"/>',
           f'<text x="{left}" y="20" {FONT} font-size="13" font-weight="600">{_e(label)}: every specimen, '
           'compound mean and 95 % interval</text>']
    for t in yt:
        out.append(f'<line x1="{left}" y1="{Y(t):.1f}" x2="{left + pw}" y2="{Y(t):.1f}" stroke="#e6eaec" '
                   'stroke-width="1"/>')
        out.append(f'<text x="{left - 6}" y="{Y(t) + 4:.1f}" {TICK} text-anchor="end">'
                   f'{_tick_label(t)}</text>')
    out.append(f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" {FRAME}/>')
    for i, r in enumerate(ok):
        color = PALETTE[i % len(PALETTE)]
        cx = left + slot * (i + 0.5)
        q = qs[i]
        if q is not None and q.value is not None:
            out.append(f'<line x1="{cx + 8:.1f}" y1="{Y(q.value * scale):.1f}" x2="{cx + 30:.1f}" '
                       f'y2="{Y(q.value * scale):.1f}" stroke="{color}" stroke-width="3"/>')
            if q.low is not None and q.high is not None:  # has_interval
                xm = cx + 19
                out.append(f'<g stroke="#222" stroke-width="1.3"><line x1="{xm:.1f}" y1="{Y(q.low * scale):.1f}" '
                           f'x2="{xm:.1f}" y2="{Y(q.high * scale):.1f}"/><line x1="{xm - 5:.1f}" '
                           f'y1="{Y(q.low * scale):.1f}" x2="{xm + 5:.1f}" y2="{Y(q.low * scale):.1f}"/><line '
                           f'x1="{xm - 5:.1f}" y1="{Y(q.high * scale):.1f}" x2="{xm + 5:.1f}" '
                           f'y2="{Y(q.high * scale):.1f}"/></g>')
        mine = [(s, v) for j, rr, s, v in pts if rr is r]
        for k, (s, v) in enumerate(mine):
            x = cx - 22 + 30 * (k / max(len(mine) - 1, 1)) if len(mine) > 1 else cx - 8
            out.append(_marker(MARKERS[k % len(MARKERS)], x, Y(v * scale), color if s.used else "#9aa5ab",
                               filled=s.used))
        out.append(f'<text x="{cx:.1f}" y="{top + ph + 16}" {TICK} text-anchor="middle">'
                   f'{_e(r.name)} (n = {r.n})</text>')
    out.append(f'<text x="16" y="{top + ph / 2:.1f}" {AXIS} text-anchor="middle" '
               f'transform="rotate(-90 16 {top + ph / 2:.1f})">{_e(label)} ({_e(dunit)})</text>')
    lx, ly = left + pw + 14, top + 8
    nmax = max((len(r.specimens) for r in ok), default=0)
    for k in range(min(nmax, len(MARKERS))):
        out.append(_marker(MARKERS[k], lx + 6, ly + 18 * k, "#2e4756"))
        out.append(f'<text x="{lx + 18}" y="{ly + 18 * k + 4}" {FONT} font-size="11.5">specimen {k + 1}'
                   f'{" (and every 5th after)" if k == 0 and nmax > len(MARKERS) else ""}</text>')
    y2 = ly + 18 * min(nmax, len(MARKERS)) + 6
    out.append(_marker("circle", lx + 6, y2, "#9aa5ab", filled=False))
    out.append(f'<text x="{lx + 18}" y="{y2 + 4}" {FONT} font-size="11.5">excluded / not counted</text>')
    out.append(f'<line x1="{lx}" y1="{y2 + 18}" x2="{lx + 14}" y2="{y2 + 18}" stroke="#2e4756" stroke-width="3"/>')
    out.append(f'<text x="{lx + 18}" y="{y2 + 22}" {FONT} font-size="11.5">mean, whisker 95 %</text>')
    out.append("</svg>")
    return "\n".join(out)


__all__ = ["MARKERS", "PALETTE", "crosslink_bar_plot", "curve_plots", "nice_ticks", "service_plot", "specimen_plot",
           "svg_bar_chart", "svg_line_chart"]
