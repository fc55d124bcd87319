"""The one orchestrator: several models, or several specimens, each fitted alone; a failure is kept as its
:class:`~network_models.errors.FitError` in place of the result, so one failure never stops the others.
The CLI, the app and the comparison all go through these."""

from __future__ import annotations

from ..errors import FitError, Notice
from ..models import get_model
from ..testdata import TestCurve
from .core import fit
from .result import FitResult


def fit_many(models, curves, *, skip_unsupported: bool = True, **kw) -> dict[str, FitResult | FitError]:
    """Fit several models to the same curves: ``{model name: FitResult | FitError}``.  With
    ``skip_unsupported`` a model fits only the curves in the modes it supports (e.g. slip tube: uniaxial)
    and a notice (kind ``curves-left-out``) says which curves it left out.  ``kw`` go to :func:`fit`."""
    if isinstance(curves, TestCurve):
        curves = [curves]
    out = {}
    for name in [models] if isinstance(models, str) else models:
        mm = get_model(name) if isinstance(name, str) else name
        use = [c for c in curves if mm.supports(c.mode)] if skip_unsupported else list(curves)
        left = [c for c in curves if c not in use]
        if not use:
            out[mm.name] = FitError(f"the {mm.title} model covers {', '.join(x.value for x in mm.modes)} only "
                                    "and none of the curves is in that mode", kind="mode-not-supported")
            continue
        try:
            res = fit(mm, use, **kw)
        except ValueError as exc:  # FitError, ModeNotSupportedError, ParameterError
            out[mm.name] = exc if isinstance(exc, FitError) else FitError(str(exc), kind="bad-input")
            continue
        if left:
            res.warnings.insert(0, Notice(
                f"{len(left)} curve(s) in modes the {mm.title} model does not cover were left out: "
                f"{', '.join(c.name for c in left)}", "curves-left-out", mm.name))
        out[mm.name] = res
    return out


def specimen_of(curve: TestCurve, index: int) -> str:
    """The specimen a curve belongs to: ``curve.specimen`` or ``metadata["specimen"]``; else the file it
    came from and its position ("a.csv #2"), so curves of one file without specimen labels stay apart."""
    name = getattr(curve, "specimen", None) or curve.metadata.get("specimen")
    if name:
        return str(name)
    src = getattr(curve, "source", "") or curve.metadata.get("file") or curve.name
    return f"{src} #{index + 1}"


def fit_specimens(model, curves, **kw) -> dict[str, FitResult | FitError]:
    """Fit ``model`` to each specimen alone: ``{specimen: FitResult | FitError}`` in first-seen order.
    Curves are grouped by :func:`specimen_of` (a specimen tested in several modes is fitted to all of them
    together).  ``kw`` go to :func:`fit`; a specimen whose fit fails keeps its place with its FitError."""
    if isinstance(curves, TestCurve):
        curves = [curves]
    groups: dict[str, list[TestCurve]] = {}
    for i, c in enumerate(curves):
        groups.setdefault(specimen_of(c, i), []).append(c)
    out = {}
    for spec, group in groups.items():
        try:
            out[spec] = fit(model, group, **kw)
        except ValueError as exc:
            out[spec] = exc if isinstance(exc, FitError) else FitError(str(exc), kind="bad-input")
    return out
