"""Feasibility maps of a design and their self-contained HTML (inline SVG, no script, no request).

``feasibility_map(targets, axis="filler" | "N", ...)`` evaluates every target on a grid of strand density ν
(log) against a second design variable — the filler volume fraction φ (N coupled to ν as the setup says) or
the Kuhn number N (decoupled from ν) — and returns where each target is met and where all are.
``result_html(result, map)`` is :meth:`DesignResult.to_html`: the window, the targets with the value each takes
at the window's edges, a strip per target over ν and, when a map is given or ``"auto"``, the map.
"""

from __future__ import annotations

import html
import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from ..constants import CAUTION
from ..network import get_polymer
from . import _scan
from ._scan import DesignSetup
from .targets import parse_targets

__all__ = ["DesignMap", "TARGET_COLOURS", "feasibility_map", "map_svg", "nu_span", "result_html", "strip_svg"]

#: one colour per target row (cycled), the same in the SVG and in the app's map
TARGET_COLOURS = ("#1f77b4", "#d62728", "#9467bd", "#8c564b", "#e377c2", "#17becf", "#bcbd22", "#ff7f0e")
FEASIBLE_COLOUR = "#2ca02c"


@dataclass(kw_only=True)
class DesignMap:
    """Where each target is met over (ν, y); ``masks[text]`` and ``feasible`` are bool arrays (len(y), len(ν))."""

    axis: str  # "filler" | "N"
    nu: np.ndarray
    y: np.ndarray
    masks: dict
    feasible: np.ndarray
    setup: DesignSetup
    coupled_N: np.ndarray | None = None  # N = ρ/(ν M_K) along ν (axis "N"): where the polymer couples them

    @property
    def y_label(self) -> str:
        return "filler volume fraction φ" if self.axis == "filler" else "Kuhn segments per strand N"

    def y_window(self) -> tuple[float, float] | None:
        """The range of the second variable over which some ν meets every target (None if nowhere)."""
        rows = np.where(self.feasible.any(axis=1))[0]
        return None if rows.size == 0 else (float(self.y[rows[0]]), float(self.y[rows[-1]]))

    def nu_window_at(self, i: int) -> tuple[float, float] | None:
        cols = np.where(self.feasible[i])[0]
        return None if cols.size == 0 else (float(self.nu[cols[0]]), float(self.nu[cols[-1]]))

    def edges(self, values: np.ndarray, log: bool) -> np.ndarray:
        """Cell edges around grid values (geometric midpoints on a log axis)."""
        v = np.asarray(values, float)
        if v.size == 1:
            return np.array([v[0] * 0.9, v[0] * 1.1]) if log else np.array([v[0] - 0.01, v[0] + 0.01])
        mid = np.sqrt(v[:-1] * v[1:]) if log else 0.5 * (v[:-1] + v[1:])
        first = v[0] ** 2 / mid[0] if log else 2 * v[0] - mid[0]
        last = v[-1] ** 2 / mid[-1] if log else 2 * v[-1] - mid[-1]
        if not log:
            first = max(first, 0.0)
        return np.concatenate([[first], mid, [last]])

    def to_dict(self) -> dict:
        return {"axis": self.axis, "strand_density": self.nu.tolist(), "y": self.y.tolist(),
                "masks": {k: v.tolist() for k, v in self.masks.items()}, "feasible": self.feasible.tolist(),
                "y_window": self.y_window()}


def feasibility_map(targets, *, axis: str = "filler", y=None, nu_range=(10.0, 3000.0), n_nu: int = 60,
                    polymer: str = "NR", temperature: float = 296.15, model: str = "eight-chain", filler=None,
                    f: float = 4.0, N=None,
                    entanglements: bool = True) -> DesignMap:
    """Targets over a grid of ν (log, ``nu_range`` mol/m³) and ``axis``: "filler" (φ, default 0–0.3) or "N"
    (decoupled Kuhn number, default 3–200, log)."""
    if axis not in ("filler", "N"):
        raise ValueError(f"the map's second axis must be 'filler' or 'N', not {axis!r}")
    base = _scan.setup(polymer, temperature, model, filler, f, N, entanglements)
    tl = parse_targets(targets)
    _scan.check_modes(base, tl)
    if y is None:
        y = np.linspace(0.0, 0.3, 16) if axis == "filler" else np.geomspace(3.0, 200.0, 18)
    y = np.asarray(y, float)
    lo, hi = nu_range
    if not (0 < lo < hi):
        raise ValueError(f"the map's strand-density range must run from low to high (mol/m³); got {nu_range!r}")
    nu = np.geomspace(lo, hi, int(n_nu))
    masks = {t.text: np.zeros((y.size, nu.size), bool) for t in tl}
    for i, yv in enumerate(y):
        setup = replace(base, filler=float(yv)) if axis == "filler" else replace(base, N=float(yv))
        ev = _scan.Evaluator(setup)
        for t in tl:
            masks[t.text][i] = [t.margin(ev.value(t, float(v))) >= 0 for v in nu]
    feasible = np.logical_and.reduce(list(masks.values()))
    coupled = None
    if axis == "N":
        p = get_polymer(base.polymer)
        coupled = p.density / (nu * p.kuhn_molar_mass)
    return DesignMap(axis=axis, nu=nu, y=y, masks=masks, feasible=feasible, setup=base, coupled_N=coupled)


# ------------------------------------------------------------------------------------------------
def _ticks_log(lo, hi):
    out = []
    for e in range(math.floor(math.log10(lo)), math.ceil(math.log10(hi)) + 1):
        for m in (1, 2, 5):
            v = m * 10.0**e
            if lo <= v <= hi:
                out.append(v)
    return out


def _ticks_lin(lo, hi, n=5):
    step = 10 ** math.floor(math.log10((hi - lo) / n)) if hi > lo else 1.0
    for m in (1, 2, 5, 10):
        if (hi - lo) / (m * step) <= n:
            step *= m
            break
    return [v for v in np.arange(math.ceil(lo / step) * step, hi + step / 2, step) if lo <= v <= hi]


def _fmt(v):
    return f"{v:g}" if abs(v) >= 1 or v == 0 else f"{v:.2g}"


class _Frame:
    """x log ν; y linear or log; plotting box inside an SVG of width × height."""

    def __init__(self, x0, x1, y0, y1, ylog, width=620, height=300, left=150, right=16, top=14, bottom=40):
        self.x0, self.x1, self.y0, self.y1, self.ylog = math.log(x0), math.log(x1), y0, y1, ylog
        self.w, self.h, self.l, self.r, self.t, self.b = width, height, left, right, top, bottom

    def X(self, nu):
        return self.l + (math.log(nu) - self.x0) / (self.x1 - self.x0) * (self.w - self.l - self.r)

    def Y(self, v):
        if self.ylog:
            a, b, v = math.log(self.y0), math.log(self.y1), math.log(v)
        else:
            a, b = self.y0, self.y1
        return self.h - self.b - (v - a) / (b - a) * (self.h - self.t - self.b)

    def axes(self, xlabel, ylabel=None, yticks=None):
        out = [f'<rect x="{self.l}" y="{self.t}" width="{self.w - self.l - self.r}" '
               f'height="{self.h - self.t - self.b}" fill="none" stroke="#555"/>']
        for v in _ticks_log(math.exp(self.x0), math.exp(self.x1)):
            x = self.X(v)
            out.append(f'<line x1="{x:.1f}" y1="{self.h - self.b}" x2="{x:.1f}" y2="{self.h - self.b + 4}" '
                       f'stroke="#555"/><text x="{x:.1f}" y="{self.h - self.b + 16}" font-size="10" '
                       f'text-anchor="middle">{_fmt(v)}</text>')
        out.append(f'<text x="{(self.l + self.w - self.r) / 2:.0f}" y="{self.h - 6}" font-size="11" '
                   f'text-anchor="middle">{html.escape(xlabel)}</text>')
        for v in yticks or []:
            y = self.Y(v)
            out.append(f'<line x1="{self.l - 4}" y1="{y:.1f}" x2="{self.l}" y2="{y:.1f}" stroke="#555"/>'
                       f'<text x="{self.l - 6}" y="{y + 3:.1f}" font-size="10" text-anchor="end">{_fmt(v)}</text>')
        if ylabel:
            yc = (self.t + self.h - self.b) / 2
            out.append(f'<text x="{self.l - 42}" y="{yc:.0f}" font-size="11" text-anchor="middle" '
                       f'transform="rotate(-90 {self.l - 42} {yc:.0f})">{html.escape(ylabel)}</text>')
        return out


def _svg(body, w, h, label):
    return (f'<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" viewBox="0 0 {w} {h}" '
            f'role="img" aria-label="{html.escape(label)}" font-family="sans-serif">' + "".join(body) + "</svg>")


def nu_span(result: Any) -> tuple[float, float]:
    """A ν range (mol/m³) that shows every target edge with room on both sides, within the scan."""
    edges = [e for o in result.outcomes for iv in o.intervals
             for e, op in ((iv.lo, iv.lo_open), (iv.hi, iv.hi_open)) if not op]
    lo, hi = result.scan
    if not edges:
        return lo, hi
    return max(lo, min(edges) / 3.0), min(hi, max(edges) * 3.0)


def strip_svg(result, current: float | None = None) -> str:
    """One row per target: where along ν (log) it is met; the window shaded across all rows."""
    n = len(result.outcomes)
    x0, x1 = nu_span(result)
    fr = _Frame(x0, x1, 0, n, False, height=40 + 26 * n + 20)
    body = []
    w = result.window
    if w is not None:
        a, b = fr.X(max(w.lo, x0)), fr.X(min(w.hi, x1))
        body.append(f'<rect x="{a:.1f}" y="{fr.t}" width="{max(b - a, 1):.1f}" height="{fr.h - fr.t - fr.b}" '
                    f'fill="{FEASIBLE_COLOUR}" fill-opacity="0.18" class="ns-design-window"/>')
    for i, o in enumerate(result.outcomes):
        c = TARGET_COLOURS[i % len(TARGET_COLOURS)]
        yc = fr.t + 8 + 26 * i
        body.append(f'<text x="{fr.l - 6}" y="{yc + 9}" font-size="11" text-anchor="end">'
                    f'{html.escape(o.target.text)}</text>')
        for iv in o.intervals:
            a, b = fr.X(max(iv.lo, x0)), fr.X(min(iv.hi, x1))
            if b > a:
                body.append(f'<rect x="{a:.1f}" y="{yc}" width="{b - a:.1f}" height="14" fill="{c}" '
                            f'fill-opacity="0.55"><title>{html.escape(o.target.text)}: {html.escape(o.needs())}'
                            '</title></rect>')
    if current is not None and x0 <= current <= x1:
        x = fr.X(current)
        body.append(f'<line x1="{x:.1f}" y1="{fr.t}" x2="{x:.1f}" y2="{fr.h - fr.b}" stroke="#000" '
                    'stroke-dasharray="4 3"/>')
    body += fr.axes("strand density ν (mol/m³, log)")
    return _svg(body, fr.w, fr.h, "where each target is met along the strand density")


def map_svg(dmap: DesignMap, current: tuple[float, float] | None = None) -> str:
    """The map: each target's region as a translucent band in its colour, the feasible cells outlined green,
    the coupling line N = M_c/M_K (axis N) and the current network as a point."""
    ylog = dmap.axis == "N"
    xe, ye = dmap.edges(dmap.nu, True), dmap.edges(dmap.y, ylog)
    fr = _Frame(xe[0], xe[-1], ye[0], ye[-1], ylog, height=320, left=70)
    body = []
    for k, mask in enumerate(dmap.masks.values()):
        c = TARGET_COLOURS[k % len(TARGET_COLOURS)]
        for i, j in zip(*np.nonzero(mask), strict=True):
            x, y = fr.X(xe[j]), fr.Y(ye[i + 1])
            body.append(f'<rect x="{x:.1f}" y="{y:.1f}" width="{fr.X(xe[j + 1]) - x:.1f}" '
                        f'height="{fr.Y(ye[i]) - y:.1f}" fill="{c}" fill-opacity="0.16"/>')
    for i, j in zip(*np.nonzero(dmap.feasible), strict=True):
        x, y = fr.X(xe[j]), fr.Y(ye[i + 1])
        body.append(f'<rect x="{x:.1f}" y="{y:.1f}" width="{fr.X(xe[j + 1]) - x:.1f}" height="{fr.Y(ye[i]) - y:.1f}" '
                    f'fill="{FEASIBLE_COLOUR}" fill-opacity="0.55" class="ns-design-feasible"/>')
    if dmap.coupled_N is not None:
        pts = [(fr.X(v), fr.Y(n)) for v, n in zip(dmap.nu, dmap.coupled_N, strict=True) if ye[0] <= n <= ye[-1]]
        if len(pts) > 1:
            body.append('<polyline fill="none" stroke="#333" stroke-dasharray="5 3" points="'
                        + " ".join(f"{x:.1f},{y:.1f}" for x, y in pts) + '"><title>N = M_c/M_K</title></polyline>')
    if current is not None:
        cx, cy = current
        if xe[0] <= cx <= xe[-1] and ye[0] <= cy <= ye[-1]:
            body.append(f'<circle cx="{fr.X(cx):.1f}" cy="{fr.Y(cy):.1f}" r="5" fill="#000" class="ns-design-current">'
                        '<title>current network</title></circle>')
    yt = _ticks_log(ye[0], ye[-1]) if ylog else _ticks_lin(ye[0], ye[-1])
    body += fr.axes("strand density ν (mol/m³, log)", dmap.y_label, yt)
    legend = [f'<span style="display:inline-block;margin-right:12px"><span style="display:inline-block;width:12px;'
              f'height:12px;background:{TARGET_COLOURS[k % len(TARGET_COLOURS)]};opacity:.5"></span> '
              f'{html.escape(t)}</span>' for k, t in enumerate(dmap.masks)]
    legend.append(f'<span style="display:inline-block"><span style="display:inline-block;width:12px;height:12px;'
                  f'background:{FEASIBLE_COLOUR}"></span> all targets met</span>')
    return _svg(body, fr.w, fr.h, "feasibility map") + f'<div style="font-size:11px">{"".join(legend)}</div>'


def result_html(result, map="auto", current: float | None = None) -> str:
    """The design section of the review report (see :meth:`DesignResult.to_html`)."""
    e = html.escape
    r = result
    rows = []
    for o in r.outcomes:
        t = o.target
        lo, hi = o.at_edges.get("low"), o.at_edges.get("high")
        rows.append(f"<tr><td>{e(t.text)}</td><td>{e(t.describe())}</td><td>{e(t.bounds_text())}</td>"
                    f"<td>{e(o.needs())}</td><td>{e(t.fmt(lo))}</td><td>{e(t.fmt(hi))}</td></tr>")
    if r.feasible:
        w, mc, mj = r.window, r.Mc_window(), r.junction_window()
        head = (f"<p class='ns-design-verdict'><b>Feasible.</b> Strand density ν "
                f"<span data-key='nu_low' data-value='{w.lo!r}'>{w.lo:.4g}</span>–"
                f"<span data-key='nu_high' data-value='{w.hi!r}'>{w.hi:.4g}</span> mol/m³; M_c {1000 * mc[0]:.4g}–"
                f"{1000 * mc[1]:.4g} g/mol; junction density μ_j = 2ν/f {mj[0]:.4g}–{mj[1]:.4g} mol/m³ "
                f"(f = {r.setup.f:g}).</p>")
    else:
        head = "<p class='ns-design-verdict'><b>Not feasible.</b></p>"
    dmap = None
    if isinstance(map, DesignMap):
        dmap = map
    elif map == "auto":
        lo, hi = nu_span(r)
        s = r.setup
        dmap = feasibility_map(r.targets, axis="filler", nu_range=(max(lo, 1.0), hi), n_nu=40,
                               y=np.linspace(0.0, 0.3, 13), polymer=s.polymer, temperature=s.T, model=s.model,
                               f=s.f, N=s.N, entanglements=s.entanglements)
    cur = None
    if dmap is not None and current is not None:
        if dmap.axis == "filler":
            y = r.setup.filler
        elif r.setup.N is not None:
            y = r.setup.N
        else:  # N coupled to ν through the polymer
            p = get_polymer(r.setup.polymer)
            y = p.density / (current * p.kuhn_molar_mass)
        cur = (current, y)
    notes = "".join(f"<li>{e(str(n))}</li>" for n in r.notices)
    return (
        "<section class='ns-design'><h2>Design window</h2>"
        f"<p>{e(r.setup.describe())}.</p>{head}<p>{e(r.why)}</p>"
        "<table class='ns-design-targets'><thead><tr><th>target</th><th>quantity</th><th>wanted</th>"
        "<th>met for</th><th>at low edge</th><th>at high edge</th></tr></thead><tbody>"
        + "".join(rows) + "</tbody></table>"
        + f"<figure>{strip_svg(r, current)}<figcaption>Where each target is met along ν; shaded: the window."
          "</figcaption></figure>"
        + ("" if dmap is None else f"<figure>{map_svg(dmap, cur)}<figcaption>Feasibility over ν and "
           f"{e(dmap.y_label)} ({e(r.setup.model)}): translucent bands, each target; green, all met.</figcaption>"
           "</figure>")
        + (f"<ul class='ns-design-notes'>{notes}</ul>" if notes else "")
        + f"<p class='ns-caution'>{e(CAUTION)}</p>"
        "</section>")
