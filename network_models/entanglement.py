"""The one entanglement policy: how a network's entanglement part enters every model, and how much of
a measured modulus may be read as entanglements.

Stated once here (the app and the report show :data:`G_E_POLICY` beside the numbers):

* From a :class:`~network_models.network.Network` every model gets the same small-strain modulus
  G₀ = G_x + G_e — G_x the crosslink part as that model reads the strand density (affine νRT, phantom
  (1 − 2/f)νRT, Flory–Erman for the constrained junction), G_e = G_N⁰·T/T_ref the entanglement part
  (zero with entanglements switched off), both times the filler factor X.  Tube models and
  Mooney–Rivlin carry G_e in their own entanglement term; the others fold it into their one modulus.
* Read backwards (modulus → crosslink density), subtracting the full plateau modulus G_N⁰ is an
  **upper bound** on the entanglement part: only entanglements trapped between crosslinks count.
  When the sol fraction is known, the trapping factor T_e of Langley (1968) gives the trapped part
  G_N⁰·T_e used by Dossin & Graessley (1979).
"""

from __future__ import annotations

import math

from .errors import Notice, ParameterError

__all__ = ["G_E_POLICY", "UPPER_BOUND_NOTE", "TRAPPING_SOURCE", "policy_parts", "policy_modulus",
           "trapping_factor", "trapped_entanglement_modulus", "entanglement_share"]

#: the policy in one sentence (shown by the app and the report)
G_E_POLICY = (
    "Every model gets the same small-strain modulus from a network, G₀ = G_x + G_e: the crosslink part as "
    "the model reads ν (νRT affine, (1 − 2/f)νRT phantom) plus the entanglement part G_e = G_N⁰·T/T_ref "
    "(zero when entanglements are off), both times the filler factor X; tube models and Mooney–Rivlin "
    "hold G_e in their own entanglement term, the others fold it into their one modulus."
)

#: said beside every number obtained by subtracting the full plateau modulus
UPPER_BOUND_NOTE = (
    "subtracting the full plateau modulus G_N⁰ is an upper bound on the entanglement part (only trapped "
    "entanglements count), so the crosslink density in this row is a lower bound"
)

TRAPPING_SOURCE = ("Langley 1968, Macromolecules 1:348; Dossin & Graessley 1979, Macromolecules 12:123 — "
                   "T_e = (1 − √w_s)⁴ for random crosslinking [from memory: the form was not re-read]")


def policy_parts(model, network) -> tuple[float, float]:
    """(G_x, G_e) in Pa that ``model`` must reproduce from ``network``: its crosslink reading of ν and the
    network's entanglement part (both filler-amplified)."""
    return float(model.network_crosslink_modulus(network)), float(network.entanglement_modulus)


def policy_modulus(model, network) -> float:
    """The small-strain modulus G₀ = G_x + G_e every model must show for ``network`` (Pa)."""
    Gx, Ge = policy_parts(model, network)
    return Gx + Ge


def trapping_factor(sol_fraction: float) -> float:
    """Langley's entanglement trapping factor from the sol (extractable) weight fraction w_s, for random
    crosslinking: T_e = (1 − √w_s)⁴ (:data:`TRAPPING_SOURCE`).  w_s = 0 gives 1 (every entanglement
    trapped); T_e ≤ 1 always, so the trapped part never exceeds the plateau modulus."""
    try:
        ws = float(sol_fraction)
    except (TypeError, ValueError):
        raise ParameterError(f"the sol fraction must be a number between 0 and 1; got {sol_fraction!r}") from None
    if not (0.0 <= ws < 1.0) or not math.isfinite(ws):
        raise ParameterError(
            f"the sol fraction w_s is the extractable weight fraction, between 0 and 1 (a gel needs w_s < 1); "
            f"got {sol_fraction!r}. Give it as a fraction (0.05), not a percentage (5)")
    return (1.0 - math.sqrt(ws)) ** 4


def trapped_entanglement_modulus(plateau_modulus: float, sol_fraction: float) -> float:
    """G_e,trapped = G_N⁰·T_e (Dossin & Graessley 1979 with Langley's T_e), Pa."""
    return float(plateau_modulus) * trapping_factor(sol_fraction)


def entanglement_share(Ge: float | None, G0: float | None, subject: str = "") -> tuple[float | None, str, list]:
    """The entanglement share G_e/G₀ as (value or None, text, notices).  A share above 100 % is never a
    plain number: the value is None, the text says "> 100 %" and a notice says what it means."""
    if Ge is None or G0 is None or not (G0 > 0) or not math.isfinite(Ge):
        return None, "—", []
    share = Ge / G0
    if share > 1.0:
        return None, "> 100 %", [Notice(
            f"the entanglement part ({Ge / 1e6:.3g} MPa) is larger than the whole small-strain modulus "
            f"({G0 / 1e6:.3g} MPa), a share of {100 * share:.0f} %: the full plateau modulus over-counts the "
            "entanglements of this network (only trapped ones count); give the sol fraction for the trapping "
            "estimate, or use a tube model, instead of reading a crosslink density from this row",
            "entanglement-share", subject)]
    if share < 0:
        return None, "—", [Notice("the fitted entanglement part is negative, so it is not an entanglement share",
                                  "entanglement-share", subject)]
    return share, f"{100 * share:.0f} %", []
