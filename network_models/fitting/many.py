"""The one orchestrator: several models, or several specimens, each fitted alone; a failure is kept as its
:class:`~network_models.errors.FitError` in place of the result, so one failure never stops the others.
The CLI, the app and the comparison all go through these."""

from __future__ import annotations

import logging
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from ..curves import TestCurve
from ..errors import FitError, Notice
from ..models import Model, get_model
from .core import fit
from .result import FitResult

_log = logging.getLogger("netstretch.fitting")


def fit_or_error(model: str | Model, curves: TestCurve | Sequence[TestCurve], **kw: Any) -> FitResult | FitError:
    """The one fit → catch step every caller (CLI, app, comparison) goes through: a FitResult, or a FitError
    whose sentence says what failed — a user's bad input, a numerical breakdown, or (logged with its
    traceback on the server, never shown) a defect; it never raises for a fit that fails."""
    try:
        return fit(model, curves, **kw)
    except ValueError as exc:  # FitError, ModeNotSupportedError, ParameterError, DataError
        return exc if isinstance(exc, FitError) else FitError(str(exc), kind="bad-input")
    except (ArithmeticError, np.linalg.LinAlgError) as exc:
        return FitError(f"the fit broke down numerically ({type(exc).__name__}: {exc}); try another model, "
                        "the other residual choice or fewer modes", kind="numerical")
    except Exception as exc:  # a defect, not the user's input: keep the session going, say so
        _log.exception("fit of %s failed unexpectedly", getattr(model, "name", model))
        return FitError(f"the fit failed unexpectedly ({type(exc).__name__}); please report this with the data "
                        "files", kind="defect")


def fit_many(models: Sequence[str | Model], curves: TestCurve | Sequence[TestCurve], *, skip_unsupported: bool = True,
             **kw: Any) -> dict[str, FitResult | FitError]:
    """Fit several models to the same curves: ``{model name: FitResult | FitError}``.  With
    ``skip_unsupported`` a model fits only the curves in the modes it supports (e.g. slip tube: uniaxial)
    and a notice (kind ``curves-left-out``) says which curves it left out.  ``kw`` go to :func:`fit`."""
    if isinstance(curves, TestCurve):
        curves = [curves]
    out: dict[str, FitResult | FitError] = {}
    for name in [models] if isinstance(models, str) else models:
        mm = get_model(name) if isinstance(name, str) else name
        use = [c for c in curves if mm.supports(c.mode)] if skip_unsupported else list(curves)
        left = [c for c in curves if c not in use]
        if not use:
            out[mm.name] = FitError(f"the {mm.title} model covers {', '.join(x.value for x in mm.modes)} only "
                                    "and none of the curves is in that mode", kind="mode-not-supported")
            continue
        res = fit_or_error(mm, use, **kw)
        if isinstance(res, FitError):
            out[mm.name] = res
            continue
        if left:
            res.warnings.insert(0, Notice(
                f"{len(left)} curve(s) in modes the {mm.title} model does not cover were left out: "
                f"{', '.join(c.name for c in left)}", "curves-left-out", mm.name))
        out[mm.name] = res
    return out


def specimen_groups(curves: Sequence[TestCurve]) -> dict[str, list[TestCurve]]:
    """Curves grouped by specimen, in order of first appearance — the one grouping rule: a curve's specimen
    is its ``specimen`` (specimen column, specimen metadata line, column pairs), else its file (one file per
    specimen), else its own name; the same name in the same mode from two different files is two specimens
    (named ``file:specimen``)."""
    groups: dict[str, list[TestCurve]] = {}
    seen: dict[tuple, str] = {}  # (name, mode) -> source that used it first
    for c in curves:
        src = getattr(c, "source", "") or c.metadata.get("file") or ""
        name = str(c.specimen or (Path(src).name if src else c.name))
        first = seen.setdefault((name, c.mode), src)
        if first != src:
            name = f"{Path(src).name or c.name}:{name}"
        groups.setdefault(name, []).append(c)
    return groups


def fit_specimens(model: str | Model, curves: TestCurve | Sequence[TestCurve],
                  **kw: Any) -> dict[str, FitResult | FitError]:
    """Fit ``model`` to each specimen alone: ``{specimen: FitResult | FitError}`` in first-seen order.
    Curves are grouped by :func:`specimen_groups` (a specimen tested in several modes is fitted to all of
    them together).  ``kw`` go to :func:`fit`; a specimen whose fit fails keeps its place with its FitError."""
    if isinstance(curves, TestCurve):
        curves = [curves]
    return {spec: fit_or_error(model, group, **kw) for spec, group in specimen_groups(curves).items()}
