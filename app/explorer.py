"""Network controls and the model-explorer views (force–stretch, Mooney plot, moduli and limits)."""

from __future__ import annotations

import html as _html
import logging
import time

import numpy as np
import pandas as pd
import panel as pn

from network_models import MODELS, MODES, get_model, polymers

from .messages import Messages, guarded
from .plots import (
    DIMENSIONLESS,
    data_legend_html,
    empty_points,
    force_T_figure,
    modulus_nu_figure,
    modulus_T_figure,
    mooney_figure,
    readable_range,
    set_output_backend,
    set_visible_models,
    show_stretch_as,
    stress_figure,
)
from .state import NetworkState, fmt, model_colour, polymer_label
from .ui import Deferred, html

log = logging.getLogger("netstretch.app")


def legend_html(shown, data_points=None) -> str:
    items = "".join(
        f"<span class='ns-leg-item'><span class='ns-leg-line' style='background:{model_colour(n)}'></span>"
        f"{get_model(n).title}</span>" for n in MODELS if n in shown)
    return (f"<div class='ns-legend-box'>{items}<span class='ns-leg-item ns-note'>"
            "<span class='ns-leg-dot'></span>locking stretch · ● test data</span></div>"
            + data_legend_html(data_points or {}))


class NetworkControls(pn.viewable.Viewer):
    """The sidebar: polymer, ν (with μ_j beside it), N coupled or free, T, f, filler, entanglements."""

    def __init__(self, state: NetworkState, **params):
        super().__init__(**params)
        self.state = state
        s = state
        self.polymer = pn.widgets.Select.from_param(
            s.param.polymer, name="Polymer", options={polymer_label(k): k for k in polymers()},
            css_classes=["ns-polymer"], sizing_mode="stretch_width")
        self.nu = pn.widgets.EditableFloatSlider.from_param(
            s.param.nu, name="Strand density ν (mol/m³)", step=1.0, format="0.0",
            fixed_start=s.param.nu.bounds[0], fixed_end=s.param.nu.bounds[1],
            css_classes=["ns-nu-input"], sizing_mode="stretch_width")
        self.couple = pn.widgets.Checkbox.from_param(s.param.couple_N, css_classes=["ns-couple-n"])
        self.N = pn.widgets.EditableFloatSlider.from_param(
            s.param.N_free, name="Kuhn segments per strand N", step=0.5, format="0.0",
            fixed_start=s.param.N_free.bounds[0], fixed_end=s.param.N_free.bounds[1],
            visible=not s.couple_N, css_classes=["ns-n-input"], sizing_mode="stretch_width")
        self.T = pn.widgets.EditableFloatSlider.from_param(
            s.param.T_C, name="Temperature (°C)", step=1.0, format="0",
            fixed_start=s.param.T_C.bounds[0], fixed_end=s.param.T_C.bounds[1],
            css_classes=["ns-t-input"], sizing_mode="stretch_width")
        self.f = pn.widgets.EditableFloatSlider.from_param(
            s.param.f, name="Junction functionality f", step=1.0, format="0",
            fixed_start=s.param.f.bounds[0], fixed_end=s.param.f.bounds[1],
            css_classes=["ns-f-input"], sizing_mode="stretch_width")
        self.filler = pn.widgets.EditableFloatSlider.from_param(
            s.param.filler, name=f"Filler volume fraction φ {DIMENSIONLESS}", step=0.01, format="0.00",
            fixed_start=0.0, fixed_end=s.param.filler.bounds[1], css_classes=["ns-filler-input"],
            sizing_mode="stretch_width")
        self.ent = pn.widgets.Checkbox.from_param(s.param.entanglements, css_classes=["ns-entanglements"])
        self.models = pn.widgets.CheckBoxGroup.from_param(
            s.param.models, options={get_model(n).title: n for n in MODELS}, inline=False,
            css_classes=["ns-models"])
        self.lam_max = pn.widgets.EditableFloatSlider.from_param(
            s.param.lam_max, name=f"Largest stretch shown λ {DIMENSIONLESS}", step=0.1, format="0.0",
            fixed_start=s.param.lam_max.bounds[0], fixed_end=s.param.lam_max.bounds[1],
            css_classes=["ns-lammax-input"], sizing_mode="stretch_width")
        self.lam_follow = pn.widgets.Checkbox.from_param(s.param.lam_follows_data, css_classes=["ns-lam-follow"])
        self.derived = html("", css_classes=["ns-readout"], sizing_mode="stretch_width",
                                    margin=(0, 10))
        self.polymer_note = html("", css_classes=["ns-polymer-note"], sizing_mode="stretch_width",
                                         margin=(0, 10))
        s.param.watch(self._on_couple, "couple_N")

    def _on_couple(self, event):
        """Coupled: N follows ν (shown in the readout, its box hidden). Freed: the box appears holding the
        N the coupling gave, so the curves do not jump."""
        s = self.state
        if not event.new:
            try:
                coupled_N = s.network(N=None).N
            except ValueError:
                coupled_N = s.N_free
            s.N_free = round(float(max(coupled_N, s.param.N_free.bounds[0])), 1)
        self.N.visible = not event.new

    def set_readout(self, r: dict, moduli: dict, units=None):
        lock = r["lock_uniaxial"]
        if units is not None and units.elongation and lock is not None and np.isfinite(lock):
            lock_row = ("elongation reserve to the uniaxial lock", f"{units.x(lock):.3g} %",
                        "(λ_lock − 1)·100 %: an upper bound on the elongation at break; eight-chain: I₁ = 3N")
        else:
            lock_row = ("locking stretch, uniaxial", f"λ = {lock:.3g}", "eight-chain: I₁ = 3N")
        rows = [
            ("strand density ν", f"{r['nu']:.4g} mol/m³", "elastically active network strands"),
            ("junction density μ<sub>j</sub> = 2ν/f", f"{r['junction_density']:.4g} mol/m³",
             "crosslinks (junctions)"),
            ("strand molar mass M<sub>c</sub>", f"{r['Mc_g_mol']:.4g} g/mol", "ρ/ν"),
            ("Kuhn segments N (" + ("set by hand" if r["N_source"] == "set directly" else "from ν and M<sub>K</sub>")
             + ")", f"{r['N']:.3g}", r["N_source"]),
            ("affine νRT", fmt(r["affine_MPa"], 3, "MPa"), "crosslink part"),
            ("phantom (1−2/f)νRT", fmt(r["phantom_MPa"], 3, "MPa"), ""),
            ("entanglement G<sub>e</sub>", fmt(r["Ge_MPa"], 3, "MPa"), r.get("ge_policy", "")),
            lock_row,
        ]
        body = "".join(f"<tr title='{c}'><td>{a}</td><td class='ns-num'>{b}</td></tr>" for a, b, c in rows)
        g0 = "<tr><th colspan='2'>small-strain shear modulus G₀</th></tr>" + "".join(
            f"<tr data-model='{n}'><td><span class='ns-swatch' style='background:{model_colour(n)}'></span>"
            f"{get_model(n).title}</td><td class='ns-num ns-g0' data-model='{n}'>{v / 1e6:.4g} MPa</td></tr>"
            for n, v in moduli.items())
        notes = "".join(f"<li>{_html.escape(n)}</li>" for n in dict.fromkeys(r.get("model_notices", [])))
        self.derived.object = (f"<table class='ns-table'>{body}{g0}</table>"
                               + (f"<ul class='ns-model-notices ns-small'>{notes}</ul>" if notes else ""))
        flag = {"memory": "<b>from memory</b> — check the constants before a design decision rests on them",
                "estimate": "<b>estimated</b> — replace them with measured values (--polymers / NETSTRETCH_POLYMERS)",
                }.get(r["polymer_status"], f"{r['polymer_status']} (see the source)")
        self.polymer_note.object = (f"<div class='ns-small'>Polymer constants: {flag}.<br>"
                                    f"Source: {r['polymer_source']}</div>")

    def __panel__(self):
        return pn.Column(
            html("<div class='ns-side-h'>Network</div>", margin=(0, 10)),
            self.polymer, self.polymer_note, self.nu, self.couple, self.N, self.T, self.f, self.filler,
            self.ent, self.derived,
            html("<div class='ns-side-h'>Models</div>", margin=(8, 10, 0, 10)),
            self.models, self.lam_max, self.lam_follow,
            sizing_mode="stretch_width", css_classes=["ns-controls"],
        )


class ExplorerViews(pn.viewable.Viewer):
    """Force–stretch, Mooney and moduli/limits views of the current network, updated on every change."""

    def __init__(self, state: NetworkState, controls: NetworkControls, messages: Messages, units=None, **params):
        super().__init__(**params)
        self.state, self.controls, self.messages = state, controls, messages
        from .display_units import DisplayUnits

        #: the session's display units: stretch axes and read-outs follow its λ / elongation choice (issue #21)
        self.units = units if units is not None else DisplayUnits()
        self.stress = {}
        for mode in MODES:
            self.stress[mode.value] = stress_figure(mode.value, initial=state.models)
        #: the Mooney and moduli figures are built when their tab first opens (``set_visible``) or when code
        #: asks for them (the properties below): a new session pays only for the force–stretch tab it shows
        self._lazy: dict[str, object] = {}
        #: SVG drawing for figures built from now on (the page's 'save as SVG' box sets it)
        self.svg = False
        self._mooney_view = Deferred(lambda: [pn.pane.Bokeh(self.mooney.fig, sizing_mode="stretch_width")],
                                     css_classes=["ns-mooney-plot"])
        self._moduli_view = Deferred(self._moduli_content)
        #: how many times the force–stretch views were recomputed (tests count one per upload)
        self.n_updates = 0
        self.legends = [html("", css_classes=["ns-legend"]) for _ in range(3)]
        self.limits = html("", sizing_mode="stretch_width", css_classes=["ns-limits"])
        self.inversion = html("", sizing_mode="stretch_width", css_classes=["ns-inversion"])
        self.stress_row = pn.Row(*(pn.pane.Bokeh(self.stress[m.value].fig, sizing_mode="stretch_width")
                                   for m in MODES),
                                 sizing_mode="stretch_width", css_classes=["ns-stress-plot"])
        self._update_fast = guarded(messages, "network", "Network settings")(self._update_fast)
        self._update_slow = guarded(messages, "moduli", "Moduli and limits")(self._update_slow)
        fast = ["polymer", "nu", "couple_N", "N_free", "T_C", "f", "filler", "entanglements", "models", "lam_max",
                "lam_follows_data"]
        state.param.watch(self._on_change, fast)
        state.param.watch(lambda *e: self._update_slow(), ["clamp_stretch", "expansion"])
        self._data_overlay = {}
        self._slow_pending = False
        self._mod_nu_key = None
        # which views are on screen (set by the page from the open tab); hidden ones catch up when opened.
        # The page opens on the force–stretch tab, so both start hidden and are drawn when first shown.
        self.visible = {"mooney": False, "moduli": False}
        self._dirty: set[str] = {"mooney", "moduli"}
        for w in (controls.nu, controls.N, controls.T, controls.f, controls.filler, controls.lam_max):
            w.param.watch(self._on_throttled, "value_throttled")
        self.units.param.watch(self._on_stretch_unit, ["stretch"])
        self._update_fast()
        self._update_slow()

    def _on_stretch_unit(self, *events):
        """λ ⇄ elongation: redraw the stretch axes, data points and read-outs (no model is recomputed)."""
        self._show_overlay()
        self._update_fast()
        self._update_slow()

    def _show_overlay(self):
        x = self.units.x
        for mode in MODES:
            pts = dict(self._data_overlay.get(mode.value, empty_points()))
            pts["x"] = list(x(pts["x"])) if len(pts.get("x", [])) else []
            self.stress[mode.value].data.data = pts

    # -- figures built on first use ----------------------------------------------------------------
    def _figure(self, key: str, build):
        if key not in self._lazy:
            made = build()
            set_output_backend([made.fig], self.svg)
            self._lazy[key] = made
        return self._lazy[key]

    @property
    def mooney(self):
        return self._figure("mooney", self._build_mooney)

    @property
    def mod_nu(self):
        return self._figure("mod_nu", lambda: modulus_nu_figure(initial=self.state.models))

    @property
    def mod_T(self):
        return self._figure("mod_T", lambda: modulus_T_figure(initial=self.state.models))

    @property
    def force(self):
        return self._figure("force", force_T_figure)

    def built_figures(self) -> list:
        """Every Bokeh figure made so far (the page switches their backend)."""
        return [sf.fig for sf in self.stress.values()] + [f.fig for f in self._lazy.values()]

    def _build_mooney(self):
        mf = mooney_figure(initial=self.state.models)
        mf.data.data = self._mooney_points()
        return mf

    def _mooney_points(self) -> dict:
        """The uniaxial data overlay as Mooney points (1/λ, reduced stress) for λ > 1.02."""
        u = self._data_overlay.get("uniaxial", empty_points())
        x = np.asarray(u["x"], dtype=float)
        y = np.asarray(u["y"], dtype=float)
        with np.errstate(all="ignore"):
            keep = x > 1.02
            red = y[keep] / (x[keep] - x[keep] ** -2)
        return {"x": list(1.0 / x[keep]), "y": list(red), "color": list(np.asarray(u["color"])[keep]),
                "file": list(np.asarray(u["file"])[keep])}

    # -- data overlay from the data view (uploaded curves) ------------------------------------
    def set_data_overlay(self, points: dict):
        """``points[mode] = {"x", "y", "color", "file"}`` in λ and MPa; also draws the Mooney points."""
        self._data_overlay = points
        xs = [max(d["x"]) for d in points.values() if len(d.get("x", []))]
        self.state.data_lam_max = max(xs) if xs else None
        self._show_overlay()  # in λ or elongation, as the session shows stretch
        if "mooney" in self._lazy:  # else the points are drawn when the Mooney figure is built
            self.mooney.data.data = self._mooney_points()
        self._update_fast()

    #: state parameters set by sliders: their moduli/limits update waits for the slider's value_throttled
    SLIDER_PARAMS = frozenset({"nu", "N_free", "T_C", "f", "filler", "lam_max"})

    def _on_change(self, *events):
        if self.state.couple_N and all(e.name == "N_free" for e in events):
            return  # the coupled N is only being shown in its box; nothing to redraw
        t0 = time.perf_counter()
        self._update_fast()
        log.debug("explorer: stress plots updated in %.1f ms", (time.perf_counter() - t0) * 1e3)
        if any(e.name not in self.SLIDER_PARAMS for e in events):
            self._schedule_slow()

    def _on_throttled(self, event):
        """A slider was released or a value typed: now the heavier views follow."""
        self._schedule_slow()

    def _schedule_slow(self):
        """The moduli/limits views follow one tick later, so the stress plot's patch leaves first;
        several quick changes collapse into one slow update."""
        doc = pn.state.curdoc
        if doc is None or doc.session_context is None:
            self._update_slow()
            return
        if self._slow_pending:
            return
        self._slow_pending = True

        def run():
            self._slow_pending = False
            self._update_slow()

        doc.add_next_tick_callback(run)

    def _network(self):
        """The state's network, with what to do added to the core's sentence when it cannot exist."""
        try:
            return self.state.network()
        except ValueError as exc:
            hint = ""
            if "Kuhn segments" in str(exc) and self.state.couple_N:
                hint = (" — lower the strand density, choose a polymer with a smaller Kuhn molar mass, or untick "
                        "'N from ν' and set N yourself")
            raise ValueError(f"{exc}{hint}. The plots still show the last valid network.") from None

    def _update_fast(self):
        s = self.state
        self.n_updates += 1
        net = self._network()
        res = s.stress_curves(net)
        shown = set(s.models)
        with pn.io.hold():
            for mode in MODES:
                sf = self.stress[mode.value]
                p, locks, data = sf.fig, sf.locks, sf.data
                cols = res["curves"][mode.value]
                x = self.units.x  # λ, or elongation (λ − 1)·100 % (the core's stretch_shown)
                sf.source.data = {n: (x(v) if n == "lam" else v) for n, v in cols.items()}
                lk = res["locks"][mode.value]
                lo, hi = readable_range([cols[n] for n in shown], data.data.get("y", []), floor=0.0)
                lam_hi = s.lam_shown()
                items = [(n, v) for n, v in lk.items() if v is not None and v <= lam_hi and n in shown]
                locks.data = {"x": [x(v) for _, v in items], "y0": [lo] * len(items), "y1": [hi] * len(items),
                              "color": [model_colour(n) for n, _ in items],
                              "model": [get_model(n).title for n, _ in items]}
                p.x_range.start, p.x_range.end = x(1.0), x(lam_hi)
                show_stretch_as(p, self.units)
                p.y_range.start, p.y_range.end = min(lo, 0.0), hi
                set_visible_models(sf.lines, shown, p)
            if self.visible["mooney"]:
                self._update_mooney(net)
            else:
                self._dirty.add("mooney")
            self.controls.set_readout(s.readout(net), s.moduli(net), self.units)
            for lg in self.legends:
                lg.object = legend_html(s.models, self._data_overlay)

    def _update_mooney(self, net=None):
        s = self.state
        try:
            net = net or s.network()
        except ValueError:
            return  # reported by the stress-plot update
        self.mooney.source.data = s.mooney_curves(net)
        set_visible_models(self.mooney.lines, set(s.models), self.mooney.fig)
        self._dirty.discard("mooney")

    def set_visible(self, view: str, visible: bool):
        """Told by the page which tab is open: hidden views are brought up to date when they open, so a
        slider move only computes what is on screen."""
        self.visible[view] = visible
        if visible:
            (self._mooney_view if view == "mooney" else self._moduli_view).ensure()
        if visible and view in self._dirty:
            if view == "mooney":
                guarded(self.messages, "mooney", "Mooney plot")(self._update_mooney)()
            else:
                self._update_slow()

    def _update_slow(self):
        s = self.state
        if not self.visible["moduli"]:
            self._dirty.add("moduli")
            return
        self._dirty.discard("moduli")
        try:
            net = s.network()
        except ValueError:
            return  # an impossible network is reported once, by the stress-plot update

        shown = set(s.models)
        with pn.io.hold():
            key = (s.polymer, s.couple_N, None if s.couple_N else s.N_free, s.T_C, s.f, s.filler,
                   s.entanglements, tuple(s.models))
            if key != self._mod_nu_key:  # the sweep over ν does not depend on the current ν
                self.mod_nu.source.data = s.modulus_vs_nu(net)
                self._mod_nu_key = key
            g = s.moduli(net)
            self.mod_nu.now.data = {"x": [net.nu] * len(g), "y": [v / 1e6 for v in g.values()],
                                    "color": [model_colour(n) for n in g]}
            set_visible_models(self.mod_nu.lines, shown, self.mod_nu.fig)
            self.mod_T.source.data = s.modulus_vs_T(net)
            set_visible_models(self.mod_T.lines, shown)
            ft = s.force_vs_T(net)
            self.force.source.data = {"T": ft["T"], "F": ft["F_rel"], "F_ref": ft["F_rel_noexp"],
                                   "F_small": ft["F_rel_small"]}
            has_small = ft["eps_small"] is not None
            self.force.small.visible = has_small
            for item in self.force.fig.legend[0].items:
                if self.force.small in item.renderers:
                    item.visible = has_small
            self.limits.object = self._limits_html(net)
            inv = s.inversion(net)
            if inv is None:
                txt = ("Thermal expansion is off: the force at fixed length is proportional to absolute "
                       "temperature and its line runs through 0 K.")
            else:
                txt = (f"With the polymer's volume expansion β = {ft['beta']:.3g} 1/K, the force at fixed length "
                       f"falls with temperature below a clamped strain of about <b>{inv * 100:.2g} %</b> "
                       f"(thermoelastic inversion at {s.T_C:.0f} °C; small-strain Gaussian estimate ≈ βT/3). "
                       f"The dot-dash line is clamped at {ft['eps_small'] * 100:.2g} % strain: its force falls "
                       "as the rubber is warmed.")
            self.inversion.object = f"<div class='ns-small'>{txt}</div>"

    def _limits_html(self, net) -> str:
        rows = self.state.limit_rows(net)
        df = pd.DataFrame(rows)
        if self.units.elongation:  # the lock read as an elongation reserve (λ_lock − 1)·100 %, issue #21
            df = _limits_as_elongation(self.state, net, self.units)
        else:
            df = df.rename(columns={"model": "model", "uniaxial": "uniaxial λ_lock",
                                    "equibiaxial": "equibiaxial λ_lock", "planar": "planar λ_lock"})
        r = self.state.readout(net)
        extra = (f"<p class='ns-small'>Poisson's ratio ν<sub>P</sub> = {r['poisson']:.5f} and bulk-to-shear ratio "
                 f"K/G = {r['K_over_G']:.0f} (bulk modulus K = 2 GPa, a typical gum value [common practice]); "
                 "rubber is nearly incompressible, which is why the models assume volume is kept.</p>")
        return ("<h4 class='ns-h4'>Locking (finite-extensibility) stretch per test mode</h4>"
                + df.to_html(index=False, classes="ns-table ns-lock-table", border=0) + extra)

    # -- tab contents -------------------------------------------------------------------------------
    def stress_tab(self):
        return pn.Column(
            html("<div class='ns-small'>Nominal stress (force per undeformed area) of each shown model for "
                         "the network set on the left. Dotted verticals: a model's locking stretch "
                         "(finite extensibility; the curve ends there). Points: your test data. Choose the "
                         "models on the left.</div>", sizing_mode="stretch_width"),
            self.legends[0], self.stress_row, sizing_mode="stretch_width")

    def mooney_tab(self):
        return pn.Column(
            html("<div class='ns-small'>Reduced stress σ* = P/(λ − λ⁻²) against 1/λ in uniaxial tension. "
                         "A neo-Hookean network is a flat line; the Mooney–Rivlin form a straight line of slope "
                         "2C₂; entanglement (tube) models rise towards 1/λ = 1; locking models turn up at "
                         "small 1/λ.</div>", sizing_mode="stretch_width"),
            self.legends[1], self._mooney_view.slot, sizing_mode="stretch_width")

    def moduli_tab(self):
        return pn.Column(self._moduli_view.slot, sizing_mode="stretch_width", css_classes=["ns-moduli"])

    def _moduli_content(self):
        # the tab's own widgets are made here, with the tab: a widget made earlier but never placed on the
        # page would escape the session's clean-up (Panel registers an editable slider's JS link globally)
        state = self.state
        self.clamp = pn.widgets.EditableFloatSlider.from_param(
            state.param.clamp_stretch, name=f"Clamped stretch Λ {DIMENSIONLESS}", step=0.01, format="0.00",
            fixed_start=state.param.clamp_stretch.bounds[0], fixed_end=state.param.clamp_stretch.bounds[1],
            width=260)
        self.expansion = pn.widgets.Checkbox.from_param(state.param.expansion)
        return [
            self.legends[2],
            pn.Row(pn.pane.Bokeh(self.mod_nu.fig, sizing_mode="stretch_width"),
                   pn.pane.Bokeh(self.mod_T.fig, sizing_mode="stretch_width"), sizing_mode="stretch_width"),
            pn.Row(pn.Column(pn.pane.Bokeh(self.force.fig, sizing_mode="stretch_width"),
                             pn.Row(self.clamp, self.expansion), self.inversion, sizing_mode="stretch_width"),
                   pn.Column(self.limits, sizing_mode="stretch_width"), sizing_mode="stretch_width")]

    def __panel__(self):
        return self.stress_tab()


def _limits_as_elongation(state, net, units):
    """The locking-stretch table with each mode's λ_lock (unrounded) shown as elongation reserve (%)."""
    rows = []
    for m in state.selected_models():
        p = net.model_params(m)
        row = {"model": m.title}
        for mode in MODES:
            if not m.supports(mode):
                row[f"{mode.value} elongation reserve (%)"] = "not defined"
                continue
            lk = m.stretch_limit(mode, p)
            row[f"{mode.value} elongation reserve (%)"] = "no limit" if lk is None else f"{units.x(lk):.3g}"
        rows.append(row)
    return pd.DataFrame(rows)
