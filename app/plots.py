"""Bokeh figures of the app, built once per session; callbacks replace their sources' ``data``.

Plain Bokeh (no HoloViews) keeps a slider move to one data patch per figure: the browser redraws
without rebuilding any figure.  Every axis carries a quantity and a unit; every model has its own
explicit colour (``state.MODEL_COLOURS``) and a legend entry.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from bokeh.models import ColumnDataSource, FixedTicker, HoverTool, Range1d
from bokeh.plotting import figure

from network_models import MODELS

from .state import model_colour

TOOLS = "pan,wheel_zoom,box_zoom,reset,save"
FONT = "11pt"
#: axis label for a dimensionless quantity (a dash, not "1")
DIMENSIONLESS = "(–)"
#: empty columns of a data-points source (λ, value, colour, label shown in the legend and the hover)
DATA_COLUMNS = ("x", "y", "color", "file")


def readable_range(model_arrays, data=(), pad=0.06, floor=None, reach=4.0):
    """A y-range that keeps the data and the bulk of the model curves readable: a curve shooting up near its
    locking stretch (or a slider at an extreme) is clipped at ``reach`` × the data's (or the curves' median
    end) height instead of squashing everything else flat."""
    data = np.asarray(data, dtype=float).ravel()
    data = data[np.isfinite(data)]
    ends = [float(a[np.isfinite(a)][-1]) for a in (np.asarray(m, dtype=float) for m in model_arrays)
            if np.isfinite(a).any()]
    ref = float(np.max(np.abs(data))) if data.size else (float(np.median(np.abs(ends))) if ends else None)
    arrays = [np.asarray(a, dtype=float).ravel() for a in model_arrays] + [data]
    if ref and ref > 0:
        arrays = [np.clip(a, -reach * ref, reach * ref) for a in arrays]
    return _nanrange(arrays, pad, floor)


def _nanrange(arrays, pad=0.06, floor=None):
    vals = np.concatenate([np.asarray(a, dtype=float).ravel() for a in arrays]) if arrays else np.array([])
    vals = vals[np.isfinite(vals)]
    if vals.size == 0:
        return (0.0, 1.0)
    lo, hi = float(vals.min()), float(vals.max())
    if floor is not None:
        lo = min(lo, floor)
    if hi - lo <= 0:
        hi = lo + 1.0
    span = hi - lo
    return lo - (pad * span if floor is None else 0.0), hi + pad * span


def residual_range(values, pad=0.1):
    """A y-range for residuals: symmetric about zero, so the sign of a misfit reads at a glance."""
    v = np.asarray(values, dtype=float).ravel()
    v = v[np.isfinite(v)]
    m = float(np.max(np.abs(v))) if v.size else 0.0
    m = m * (1.0 + pad) if m > 0 else 1.0
    return -m, m


def set_range(rng, lo: float, hi: float):
    """Set a Range1d to [lo, hi] and make the toolbar's reset return there (not to the first data's range)."""
    lo, hi = float(lo), float(hi)
    rng.start, rng.end = lo, hi
    rng.reset_start, rng.reset_end = lo, hi


def empty_points() -> dict:
    return {k: [] for k in DATA_COLUMNS}


def set_output_backend(figures, svg: bool):
    """PNG (canvas) or SVG drawing for the given figures: the toolbar's save tool then writes that format."""
    for p in figures:
        p.output_backend = "svg" if svg else "canvas"


def data_scatter(p, source, size=6.0):
    """Data points coloured per file/specimen; their legend is HTML beside the plot (:func:`data_legend_html`:
    a Bokeh legend grouped by a column breaks in the browser when the source is replaced)."""
    r = p.scatter("x", "y", source=source, fill_color="color", line_color="white", line_width=0.6, size=size,
                  alpha=0.9)
    return r


def _style(p):
    p.toolbar.logo = None
    p.title.text_font_size = "11pt"
    p.title.text_font_style = "bold"
    p.title.text_color = "#1f3a4d"
    for ax in (p.xaxis, p.yaxis):
        ax.axis_label_text_font_size = "10.5pt"
        ax.axis_label_text_font_style = "normal"
        ax.major_label_text_font_size = "9.5pt"
    p.background_fill_color = "#fbfcfd"
    p.grid.grid_line_color = "#e3e8ec"
    p.outline_line_color = "#c9d2d9"
    return p


def empty_columns(xname: str, n: int = 2) -> dict:
    cols = {xname: np.zeros(n)}
    for name in MODELS:
        cols[name] = np.full(n, np.nan)
    return cols


class ModelLines(dict):
    """name -> line renderer of one figure, created on first use: a session only pays for the models it
    shows (a Bokeh renderer costs milliseconds to build; eleven per figure add up over ten figures)."""

    def __init__(self, p, source, xname: str, line_width=2.2):
        super().__init__()
        self.p, self.source, self.xname, self.line_width = p, source, xname, line_width

    def ensure(self, name: str):
        if name not in self and name in MODELS:
            self[name] = self.p.line(self.xname, name, source=self.source, color=model_colour(name),
                                     line_width=self.line_width)
        return self.get(name)


def model_lines(p, source, xname: str, initial=(), line_width=2.2) -> ModelLines:
    """Lines for the registered models, each in its own colour; ``initial`` are built now, others when
    first shown (``set_visible_models``)."""
    lines = ModelLines(p, source, xname, line_width)
    for name in initial:
        lines.ensure(name)
    return lines


def set_visible_models(renderers, shown, legend_figure=None):
    if isinstance(renderers, ModelLines):
        for name in shown:
            renderers.ensure(name)
    for name, r in renderers.items():
        r.visible = name in shown


@dataclass(frozen=True)
class StressFigure:
    """One mode's force–stretch figure: model lines (``source``), lock markers, data points."""

    fig: object
    source: ColumnDataSource
    locks: ColumnDataSource
    data: ColumnDataSource
    lines: ModelLines


@dataclass(frozen=True)
class MooneyFigure:
    fig: object
    source: ColumnDataSource
    data: ColumnDataSource
    lines: ModelLines


@dataclass(frozen=True)
class ModulusNuFigure:
    fig: object
    source: ColumnDataSource
    now: ColumnDataSource  # the current network's G₀ per model (diamonds)
    lines: ModelLines


@dataclass(frozen=True)
class ModulusTFigure:
    fig: object
    source: ColumnDataSource
    lines: ModelLines


@dataclass(frozen=True)
class ForceTFigure:
    fig: object
    source: ColumnDataSource
    small: object  # the renderer of the small-clamped-strain line (hidden with expansion off)


def stress_figure(mode: str, width=None, height=380, initial=()) -> StressFigure:
    """Nominal stress vs stretch in one mode: model lines, lock markers, data points."""
    src = ColumnDataSource(empty_columns("lam"), name=f"ns-stress-{mode}")
    locks = ColumnDataSource({"x": [], "y0": [], "y1": [], "color": [], "model": []}, name=f"ns-locks-{mode}")
    data = ColumnDataSource(empty_points(), name=f"ns-data-{mode}")
    p = figure(title=f"{mode.capitalize()} tension", height=height, sizing_mode="stretch_width",
               tools=TOOLS, x_axis_label=f"stretch λ {DIMENSIONLESS}", y_axis_label="nominal stress P (MPa)",
               x_range=Range1d(1.0, 5.0), y_range=Range1d(0.0, 1.0))
    if width:
        p.width = width
    _style(p)
    r = model_lines(p, src, "lam", initial)
    p.segment("x", "y0", "x", "y1", source=locks, color="color", line_dash="dotted", line_width=1.6)
    pts = data_scatter(p, data)
    p.add_tools(HoverTool(tooltips=[("data", "@file"), ("λ", "@x{0.000}"), ("P (MPa)", "@y{0.000}")],
                          renderers=[pts]))
    return StressFigure(p, src, locks, data, r)


def mooney_figure(height=380, initial=()) -> MooneyFigure:
    src = ColumnDataSource(empty_columns("inv_lam"), name="ns-mooney")
    data = ColumnDataSource(empty_points(), name="ns-mooney-data")
    p = figure(title="Mooney plot (uniaxial)", height=height, sizing_mode="stretch_width", tools=TOOLS,
               x_axis_label=f"inverse stretch 1/λ {DIMENSIONLESS}",
               y_axis_label="reduced stress σ* = P/(λ − λ⁻²) (MPa)", x_range=Range1d(0.0, 1.0))
    _style(p)
    r = model_lines(p, src, "inv_lam", initial)
    data_scatter(p, data)
    return MooneyFigure(p, src, data, r)


def modulus_nu_figure(height=330, initial=()) -> ModulusNuFigure:
    src = ColumnDataSource(empty_columns("nu"), name="ns-modulus-nu")
    now = ColumnDataSource({"x": [], "y": [], "color": []})
    p = figure(title="Small-strain shear modulus vs strand density", height=height, sizing_mode="stretch_width",
               tools=TOOLS, x_axis_type="log", x_axis_label="strand density ν (mol/m³)",
               y_axis_label="shear modulus G₀ (MPa)")
    _style(p)
    p.xaxis.ticker = FixedTicker(ticks=[1, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 2000, 5000, 10000])
    r = model_lines(p, src, "nu", initial)
    p.scatter("x", "y", source=now, color="color", size=8, marker="diamond")
    return ModulusNuFigure(p, src, now, r)


def modulus_T_figure(height=330, initial=()) -> ModulusTFigure:
    src = ColumnDataSource(empty_columns("T_C"), name="ns-modulus-T")
    p = figure(title="Small-strain shear modulus vs temperature", height=height, sizing_mode="stretch_width",
               tools=TOOLS, x_axis_label="temperature T (°C)", y_axis_label="shear modulus G₀ (MPa)")
    _style(p)
    r = model_lines(p, src, "T_C", initial)
    return ModulusTFigure(p, src, r)


def force_T_figure(height=330) -> ForceTFigure:
    """Force at a clamped length relative to its value at the network's temperature, against T (K)."""
    src = ColumnDataSource({"T": np.zeros(2), "F": np.zeros(2), "F_ref": np.zeros(2), "F_small": np.zeros(2)},
                           name="ns-force-T")
    p = figure(title="Force at fixed length vs temperature (Gaussian network)", height=height,
               sizing_mode="stretch_width", tools=TOOLS, x_axis_label="absolute temperature T (K)",
               y_axis_label=f"force / force at the set temperature {DIMENSIONLESS}", x_range=Range1d(0.0, 450.0))
    _style(p)
    p.line("T", "F_ref", source=src, color="#9aa7b1", line_dash="dashed", line_width=1.5,
           legend_label="no expansion: F ∝ T, through 0 K")
    p.line("T", "F", source=src, color="#1f5f8b", line_width=2.5, legend_label="clamped stretch Λ (set below)")
    small = p.line("T", "F_small", source=src, color="#c0392b", line_width=2.0, line_dash="dotdash",
                   legend_label="small clamped strain (½ × inversion strain)")
    lg = p.legend[0]
    lg.label_text_font_size = "9pt"
    lg.spacing = 0
    lg.padding = 4
    p.add_layout(lg, "below")  # outside the plot: the curves fill every corner
    p.height = height + 70
    return ForceTFigure(p, src, small)


def data_legend_html(points: dict) -> str:
    """One legend entry per data label (file · curve) with its marker colour, from overlay points."""
    seen = {}
    for d in points.values():
        for label, colour in zip(d.get("file", []), d.get("color", []), strict=False):
            seen.setdefault(label, colour)
    if not seen:
        return ""
    import html as _html

    items = "".join(f"<span class='ns-leg-item'><span class='ns-leg-marker' style='background:{c}'></span>"
                    f"{_html.escape(str(lbl))}</span>" for lbl, c in seen.items())
    return f"<div class='ns-legend-box ns-data-legend'>{items}</div>"


def show_stretch_as(fig, units) -> None:
    """A stress figure's stretch axis and hover read as the session shows stretch: 'stretch λ' or
    'elongation (%)' (the data in its sources is converted by the caller with ``units.x``)."""
    from bokeh.models import HoverTool

    fig.xaxis.axis_label = units.x_label()
    for t in fig.select(type=HoverTool):
        if t.tooltips and isinstance(t.tooltips, list):
            t.tooltips = [(("e (%)", "@x{0.0}") if units.elongation else ("λ", "@x{0.000}")) if k in ("λ", "e (%)")
                          else (k, v) for k, v in t.tooltips]
