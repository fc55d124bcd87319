"""The Compare tab's specimen views, drawn with HoloViews: every specimen's network numbers per compound,
the residuals of every specimen's own fit, and the data with the fit — composable overlays with one
specimen selected across all of them.

Selecting: click a point in any plot (a specimen value, a residual or a data point) or choose the specimen
in the list; the same specimen is then ringed in every quantity plot and drawn bold in the residual and
data plots.  The selection is the parameter ``specimen`` (its key "compound · specimen"); each plot's
highlight is a ``DynamicMap`` over that parameter and each plot's tap is a ``Selection1D`` stream that sets
it, so the plots stay linked however they are composed.

The explorer's figures stay plain Bokeh (one data patch per slider move); these views are rebuilt once per
comparison, where composing overlays is worth more than milliseconds.
"""

from __future__ import annotations

import weakref

import holoviews as hv
import numpy as np
import pandas as pd
import panel as pn
import param

from .specimen_data import POINT_COLUMNS, QUANTITIES, SPECIMEN_COLUMNS, compound_colours, point_frame, specimen_frame
from .tables import esc
from .ui import html

#: the ring drawn round the selected specimen, and its bold lines
MARK = "#111111"
_DIMS = {
    "compound": hv.Dimension("compound", label="compound"),
    "nu": hv.Dimension("nu", label="strand density ν", unit="mol/m³"),
    "G0": hv.Dimension("G0", label="small-strain shear modulus G₀", unit="MPa"),
    "lock": hv.Dimension("lock", label="uniaxial locking stretch λ_lock", unit="–"),
    "lam": hv.Dimension("lam", label="stretch λ", unit="–"),
    "residual": hv.Dimension("residual", label="model − data", unit="MPa"),
    "P_data": hv.Dimension("P_data", label="nominal stress P", unit="MPa"),
}


def _dim(name):
    return _DIMS.get(name, name)


def _ensure_backend():
    """HoloViews draws with Bokeh here; load its plotting module once (no notebook output, no remote assets)."""
    if "bokeh" not in hv.Store.renderers:
        import holoviews.plotting.bokeh  # noqa: F401


class SpecimenViews(pn.viewable.Viewer):
    """Linked per-specimen plots of one comparison."""

    specimen = param.Selector(default=None, objects=[None], allow_None=True, label="Specimen shown in every plot")

    def __init__(self, **params):
        super().__init__(**params)
        _ensure_backend()
        self.spec = pd.DataFrame(columns=list(SPECIMEN_COLUMNS))
        self.points = pd.DataFrame(columns=list(POINT_COLUMNS))
        #: the rows each plot's tap indexes into (plot name -> frame), and the tap streams
        self._rows: dict[str, pd.DataFrame] = {}
        self.taps: dict[str, hv.streams.Selection1D] = {}
        #: the highlight of each plot (plot name -> DynamicMap over ``specimen``)
        self.marks: dict[str, hv.DynamicMap] = {}
        #: SVG drawing (the page's 'save as SVG' box)
        self.svg = False
        self.pick = pn.widgets.Select.from_param(self.param.specimen, width=320, css_classes=["ns-spec-pick"])
        self.legend = html("", css_classes=["ns-spec-legend"])
        self.info = html("", css_classes=["ns-spec-info"])
        #: the plots, one HoloViews pane each (Panel links their shared axes: stretch λ, compound)
        self.plots = pn.Column(sizing_mode="stretch_width", css_classes=["ns-spec-plots"])
        self.param.watch(lambda *e: self._show_info(), "specimen")
        self._layout = pn.Column(
            html("<div class='ns-small'>Each point is one specimen fitted alone; click a point in any plot (or "
                 "choose below) and that specimen is ringed in every plot, with its residuals and its data and "
                 "fit drawn bold. Residual = the specimen's own fit − its data.</div>"),
            pn.Row(self.pick, self.legend, sizing_mode="stretch_width"), self.info, self.plots,
            sizing_mode="stretch_width", css_classes=["ns-specimen-views"])

    # ----- data ------------------------------------------------------------------------------------------
    def set_comparison(self, cmp):
        """Draw ``cmp``'s specimens (None: nothing to draw)."""
        if cmp is None:
            self.spec = pd.DataFrame(columns=list(SPECIMEN_COLUMNS))
            self.points = pd.DataFrame(columns=list(POINT_COLUMNS))
            colours = {}
        else:
            self.spec, self.points = specimen_frame(cmp), point_frame(cmp)
            colours = compound_colours(cmp)
        keys = list(self.spec["key"])
        keep = self.specimen if self.specimen in keys else (keys[0] if keys else None)
        self.param.specimen.objects = keys or [None]
        self.legend.object = "".join(
            f"<span class='ns-leg-item'><span class='ns-leg-marker' style='background:{c}'></span>{esc(n)}</span>"
            for n, c in colours.items())
        self.plots.objects = self._compose() if keys else []
        self.specimen = keep
        self._show_info()

    def _show_info(self):
        row = self._row(self.specimen)
        if row is None:
            self.info.object = "<div class='ns-small'>No specimen to show: run a comparison first.</div>"
            return
        vals = " · ".join(f"{QUANTITIES[q].split(' (')[0]} = {row[q]:.4g}" for q in QUANTITIES if np.isfinite(row[q]))
        self.info.object = (f"<div class='ns-small'><b>{esc(row['key'])}</b> ({esc(row['status'])}): "
                            f"{esc(vals) or 'no values'}</div>")

    def _row(self, key):
        if key is None or self.spec.empty:
            return None
        hit = self.spec[self.spec["key"] == key]
        return None if hit.empty else hit.iloc[0]

    # ----- plots -----------------------------------------------------------------------------------------
    def _tap(self, name: str, element, rows: pd.DataFrame):
        """Clicking a point of ``element`` selects its specimen in every plot."""
        self._rows[name] = rows.reset_index(drop=True)
        stream = hv.streams.Selection1D(source=element)

        def picked(index):
            if index:
                key = self._rows[name]["key"].iloc[int(index[0])]
                if key in self.param.specimen.objects:
                    self.specimen = key

        stream.add_subscriber(picked)
        self.taps[name] = stream

    def _mark(self, name: str, draw):
        """A DynamicMap of ``draw(key)`` that follows the selected specimen."""
        dm = hv.DynamicMap(lambda specimen: draw(specimen),
                           streams=[hv.streams.Params(parameterized=self, parameters=["specimen"])])
        self.marks[name] = dm
        return dm

    def _hooks(self):
        # HoloViews keeps an element's options (these hooks among them) in its process-wide option store, so
        # the hook refers to the view weakly: a strong reference kept every session's views alive for ever
        me = weakref.ref(self)

        def backend(plot, element):
            view = me()
            plot.state.output_backend = "svg" if view is not None and view.svg else "canvas"
            plot.state.toolbar.logo = None
        return [backend]

    def _quantity_plot(self, q: str):
        rows = self.spec[np.isfinite(self.spec[q].astype(float))]
        vdims = [_dim(q), "key", "specimen", "status", "colour"]
        title = QUANTITIES[q].split(" (")[0] + (" (headline basis)" if q == "nu" else "")
        base = hv.Scatter(rows, kdims=[_dim("compound")], vdims=vdims).opts(
            color="colour", size=9, alpha=0.85, line_color="white", tools=["tap", "hover"],
            hover_tooltips=[("specimen", "@key"), ("counted", "@status"), (title, f"@{{{q}}}")],
            nonselection_alpha=0.85, title=title, responsive=True, height=250,
            hooks=self._hooks(), default_tools=["save", "reset"])
        self._tap(q, base, rows)

        def ring(key):
            sel = rows[rows["key"] == key]
            return hv.Scatter(sel, kdims=[_dim("compound")], vdims=vdims).opts(
                marker="circle", size=18, fill_alpha=0.0, line_color=MARK, line_width=2.5)

        return base * self._mark(q, ring)

    def _residual_plot(self):
        pts = self.points[np.isfinite(self.points["residual"].astype(float))]
        vdims = [_dim("residual"), "key", "mode", "colour"]
        base = hv.Scatter(pts, kdims=[_dim("lam")], vdims=vdims).opts(
            color="colour", size=4, alpha=0.45, tools=["tap", "hover"], nonselection_alpha=0.45,
            hover_tooltips=[("specimen", "@key"), ("mode", "@mode"), ("λ", "@lam"), ("fit − data (MPa)", "@residual")],
            title="residuals of each specimen's own fit", responsive=True, height=280, hooks=self._hooks(),
            default_tools=["save", "pan", "wheel_zoom", "box_zoom", "reset"])
        self._tap("residual", base, pts)

        def bold(key):
            return hv.Overlay([hv.Curve(g.sort_values("lam"), kdims=[_dim("lam")], vdims=[_dim("residual")]).opts(
                color=MARK, line_width=2.2) for _m, g in pts[pts["key"] == key].groupby("mode")]
                or [hv.Curve([], kdims=[_dim("lam")], vdims=[_dim("residual")])])

        return base * hv.HLine(0).opts(color="#888888", line_width=1) * self._mark("residual", bold)

    def _data_plot(self):
        pts = self.points
        vdims = [_dim("P_data"), "key", "mode", "colour"]
        base = hv.Scatter(pts, kdims=[_dim("lam")], vdims=vdims).opts(
            color="colour", size=4, alpha=0.3, tools=["tap", "hover"], nonselection_alpha=0.3,
            hover_tooltips=[("specimen", "@key"), ("mode", "@mode"), ("λ", "@lam"), ("P (MPa)", "@P_data")],
            title="data, and the selected specimen's fit", responsive=True, height=280,
            hooks=self._hooks(), default_tools=["save", "pan", "wheel_zoom", "box_zoom", "reset"])
        self._tap("data", base, pts)

        def bold(key):
            mine = pts[pts["key"] == key]
            parts = [hv.Scatter(mine, kdims=[_dim("lam")], vdims=vdims).opts(color="colour", size=6,
                                                                              line_color=MARK)]
            for _m, g in mine.groupby("mode"):
                fit = g[np.isfinite(g["P_model"].astype(float))].sort_values("lam")
                parts.append(hv.Curve((fit["lam"], fit["P_model"]), kdims=[_dim("lam")], vdims=[_dim("P_data")],
                                      label="specimen's fit").opts(color=MARK, line_width=2.2))
            return hv.Overlay(parts)

        return base * self._mark("data", bold)

    def _compose(self) -> list:
        """Two rows of panes: the quantities, then residuals and data.  Each pane holds one overlay (base
        points * highlight); residuals and data share the stretch axis (zooming one zooms the other)."""
        self.taps, self.marks, self._rows = {}, {}, {}

        def pane(overlay):
            return pn.pane.HoloViews(overlay, backend="bokeh", sizing_mode="stretch_width", linked_axes=True)

        top = [pane(self._quantity_plot(q)) for q in QUANTITIES]
        bottom = [pane(self._residual_plot()), pane(self._data_plot())]
        return [pn.Row(*top, sizing_mode="stretch_width"), pn.Row(*bottom, sizing_mode="stretch_width")]

    def overlays(self) -> list:
        """The HoloViews objects drawn (quantities, residuals, data), for scripts and tests."""
        return [p.object for row in self.plots.objects for p in row.objects]

    def __panel__(self):
        return self._layout


__all__ = ["SpecimenViews"]
