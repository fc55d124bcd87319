"""Modulus → strand density in the app: a small card on the Design tab where a designer types one measured
modulus (G, E, M100 or M300, value with its unit), the polymer, temperature, f and filler, and gets the
assumption table `netstretch crosslinks` prints (the same core function, :func:`network_models.crosslinks.
from_modulus`; no physics here).

When the modulus is below the polymer's entanglement (plateau) modulus the card says so and what it means,
instead of an empty "entanglements removed" row; :func:`entanglement_floor_sentences` gives the Design tab's
"not feasible" the same explanation for a stiffness target below what the entanglements alone give.

The top half (:class:`ModulusEstimate`, the sentence builders) has no Panel import; :class:`ModulusCard`
is the view.
"""

from __future__ import annotations

import html as _html
from dataclasses import dataclass

import panel as pn
import param

from network_models import polymers
from network_models.constants import ZERO_CELSIUS

#: the kinds the card offers (the CLI's ``--kind`` choices a designer has from a data sheet)
CARD_KINDS = ("G", "E", "M100", "M300")
#: design targets read as one of those kinds: (target kind, stretch) -> modulus kind
_TARGET_KIND = {("G", None): "G", ("E", None): "E", ("stress", 2.0): "M100", ("stress", 4.0): "M300"}
_MAX_TEXT = 40  # characters of the modulus box (a value and a unit)


def entanglement_modulus(table) -> float | None:
    """G_e (Pa) the crosslink table removed in its 'entanglement share removed' rows: G minus that row's
    crosslink modulus (the core's number, not recomputed here); None when the table has no such row."""
    try:
        row = table.row("affine-no-entanglement")
    except KeyError:
        return None
    if row.modulus is None:
        return None
    return float(table.G - row.modulus)


def below_entanglements_sentence(table, kind: str, value: float) -> str | None:
    """A plain sentence when the small-strain modulus lies below the polymer's entanglement modulus (the
    crosslink part cannot be separated from it), else None."""
    Ge = entanglement_modulus(table)
    if Ge is None or not (table.G < Ge):
        return None
    T_C = table.T - ZERO_CELSIUS
    filler = float(table.inputs.get("filler_fraction", 0.0) or 0.0)
    read = "" if kind == "G" else f" (read as G = {table.G / 1e6:.3g} MPa)"
    return (f"{kind} = {value / 1e6:.3g} MPa{read} is below the entanglement (plateau) modulus of {table.polymer}, "
            f"G_e = {Ge / 1e6:.3g} MPa at {T_C:.0f} °C" + (" with the filler's Guth–Gold factor" if filler > 0 else "")
            + ": entanglements alone would give this stiffness, so the network's crosslink part cannot be "
              "separated from this one number and the rows with the plateau modulus removed stay empty. The 'all of "
              "G' rows count the entanglements as crosslinks, so they are upper bounds on the crosslink strand "
              "density; a tube-model fit of a whole curve, or a swelling test, separates the two.")


@dataclass
class ModulusEstimate:
    """One card result: the core's crosslink table and the sentence for a modulus below the entanglements."""

    table: object
    kind: str
    value: float  # Pa, as typed (of the given kind)
    below: str | None


def estimate(text: str, kind: str = "G", *, polymer: str = "NR", T_C: float = 23.0, f: float = 4.0,
             filler: float = 0.0) -> ModulusEstimate:
    """The crosslink table for a modulus typed with its unit ('0.62 MPa', '90 psi'); ValueError with a
    sentence on bad input (what is wrong and what to type)."""
    from network_models.crosslinks import from_modulus
    from network_models.units import parse_quantity

    raw = (text or "").strip()
    if not raw:
        raise ValueError("type the measured modulus with its unit, e.g. 0.62 MPa")
    if len(raw) > _MAX_TEXT:
        raise ValueError(f"the modulus box takes a value and a unit ({_MAX_TEXT} characters at most), "
                         "e.g. 0.62 MPa")
    k = str(kind).strip().upper()
    if k not in CARD_KINDS:
        raise ValueError(f"choose what the value is: {', '.join(CARD_KINDS)}")
    try:
        value = parse_quantity(raw.replace(" ", ""), "pressure", require_unit=True)
    except ValueError as exc:
        raise ValueError(f"the modulus {raw!r}: {exc}") from None
    if not (value > 0):
        raise ValueError(f"the modulus must be positive; got {raw!r}")
    if not (-100.0 < T_C < 300.0):
        raise ValueError(f"the temperature {T_C:g} °C is outside −100…300 °C; type the test temperature")
    if not (f >= 3):
        raise ValueError(f"junction functionality f must be at least 3; got {f:g}")
    if not (0.0 <= filler < 0.5):
        raise ValueError(f"the filler volume fraction is between 0 and 0.5; got {filler:g}")
    table = from_modulus(value, k, polymer=polymer, T=T_C + ZERO_CELSIUS, f=float(f),
                         filler_fraction=float(filler))
    table.inputs.setdefault("filler_fraction", float(filler))
    return ModulusEstimate(table, k, value, below_entanglements_sentence(table, k, value))


def entanglement_floor_sentences(result) -> list[str]:
    """For a design result: one sentence per unreachable stiffness target (G, E, M100, M300 with an upper
    edge) that asks for less than the entanglements alone give while the entanglement share is on."""
    from network_models.crosslinks import from_modulus

    setup = result.setup
    if not getattr(setup, "entanglements", False):
        return []
    out = []
    for o in result.outcomes:
        t = o.target
        if t.text not in result.unreachable:
            continue
        kind = _TARGET_KIND.get((t.kind, t.stretch))
        edge = t.hi if t.hi is not None else t.nominal
        if kind is None or edge is None or not (edge > 0):
            continue
        T = t.temperature or setup.T
        table = from_modulus(edge, kind, polymer=setup.polymer, T=T, f=setup.f, filler_fraction=setup.filler)
        Ge = entanglement_modulus(table)
        if Ge is None or not (table.G < Ge):
            continue
        lowest = ""
        if o.value_range is not None:
            lowest = f"; the lowest {t.name} any strand density gives with this model is {t.fmt(o.value_range[0])}"
        read = "" if kind == "G" else f" (read as G = {table.G / 1e6:.3g} MPa)"
        out.append(
            f"{t.text} asks for a stiffness below the entanglement (plateau) modulus of {setup.polymer}: at most "
            f"{edge / 1e6:.3g} MPa{read} against G_e = {Ge / 1e6:.3g} MPa at {T - ZERO_CELSIUS:.0f} °C{lowest}. "
            "With the entanglement share on, entanglements alone would give that stiffness, so no crosslink "
            "density can meet it and the network's crosslink part cannot be separated. Turn the entanglement "
            "share off (the explorer's switch) to read the target as crosslinks alone, or choose a polymer with "
            "a lower plateau modulus, a higher temperature or less filler.")
    return out


# ----- the view ---------------------------------------------------------------------------------------------
def _esc(x) -> str:
    return _html.escape(str(x))


class ModulusCardState(param.Parameterized):
    """The card's inputs (param only)."""

    text = param.String(default="", label="Measured modulus (value and unit)")
    kind = param.Selector(default="G", objects=list(CARD_KINDS), label="The value is")
    polymer = param.Selector(default="NR", objects=list(polymers()), label="Polymer")
    T_C = param.Number(default=23.0, bounds=(-100.0, 300.0), label="Test temperature (°C)")
    f = param.Number(default=4.0, bounds=(3.0, 64.0), label="Junction functionality f")
    filler = param.Number(default=0.0, bounds=(0.0, 0.45), label="Filler volume fraction φ")


class ModulusCard(pn.viewable.Viewer):
    """The card: inputs on the left, messages beside them, the assumption table on the right."""

    def __init__(self, units=None, **params):
        from .display_units import DisplayUnits
        from .messages import Messages, guarded
        from .ui import html

        super().__init__(**params)
        self.state = s = ModulusCardState()
        self.units = units or DisplayUnits()
        self.messages = Messages(area="modulus")
        self.result_est: ModulusEstimate | None = None
        w = dict(width=190)
        self.value = pn.widgets.TextInput.from_param(s.param.text, placeholder="e.g. 0.62 MPa", max_length=_MAX_TEXT,
                                                     css_classes=["ns-mod-value"], **w)
        self.kind = pn.widgets.RadioButtonGroup.from_param(s.param.kind, button_type="light",
                                                           css_classes=["ns-mod-kind"])
        self.widgets = [
            pn.widgets.Select.from_param(s.param.polymer, css_classes=["ns-mod-polymer"], **w),
            pn.widgets.FloatInput.from_param(s.param.T_C, step=1.0, css_classes=["ns-mod-t"], **w),
            pn.widgets.FloatInput.from_param(s.param.f, step=1.0, css_classes=["ns-mod-f"], **w),
            pn.widgets.FloatInput.from_param(s.param.filler, step=0.01, css_classes=["ns-mod-filler"], **w),
        ]
        self.result = html("<div class='ns-small'>Type a measured modulus (G, E, M100 or M300) with its unit to "
                           "see the strand density under each usual assumption.</div>",
                           css_classes=["ns-mod-result"])
        self.update = guarded(self.messages, "modulus", "Modulus → strand density")(self.update)
        s.param.watch(lambda *e: self.update(), ["text", "kind", "polymer", "T_C", "f", "filler"])
        self.units.param.watch(lambda *e: self.update(), ["density"])
        self._layout = pn.Column(
            html("<div class='ns-side-h'>From one measured modulus to strand density</div>"
                 "<div class='ns-small'>The same table as <code>netstretch crosslinks</code>: G = νRT (affine) or "
                 "(1 − 2/f)νRT (phantom), with and without the polymer's entanglement share; M100/M300 are read "
                 "with the neo-Hookean relation, E = 3G.</div>"),
            pn.Row(pn.Column(self.value, self.kind, *self.widgets, self.messages, width=230),
                   pn.Column(self.result, sizing_mode="stretch_width"), sizing_mode="stretch_width"),
            sizing_mode="stretch_width", css_classes=["ns-modulus-card"])

    def update(self):
        from network_models import get_polymer

        from .tables import crosslink_rows, table_html

        s = self.state
        if not (s.text or "").strip():
            self.result_est = None
            return
        try:
            est = estimate(s.text, s.kind, polymer=s.polymer, T_C=float(s.T_C), f=float(s.f), filler=float(s.filler))
        except ValueError:
            self.result.object = "<div class='ns-small'>No result: see the message beside the inputs.</div>"
            self.result_est = None
            raise
        self.result_est = est
        t = est.table
        head = (f"<h4 class='ns-h4'>{_esc(est.kind)} = {est.value / 1e6:.4g} MPa → small-strain shear modulus "
                f"G = {t.G / 1e6:.4g} MPa; {_esc(t.polymer)}, T = {float(s.T_C):.1f} °C, f = {float(s.f):g}"
                + (f", φ = {float(s.filler):g}" if s.filler else "") + "</h4>")
        below = (f"<div class='ns-mod-below ns-note'><b>Below the entanglement modulus.</b> {_esc(est.below)}</div>"
                 if est.below else "")
        notes = "".join(f"<li>{_esc(n)}</li>" for n in t.notes)
        self.result.object = (head + below + table_html(crosslink_rows(t, self.units, get_polymer(t.polymer).density),
                                                         "ns-mod-table")
                              + f"<ul class='ns-small'>{notes}</ul>")

    def __panel__(self):
        return self._layout
