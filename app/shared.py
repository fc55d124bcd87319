"""Process-level, read-only data shared by every browser session of one server process.

The bundled sample set is read once per process and its fits are made once per (model, residual,
curves) instead of once per session.  Everything handed out here is shared: the curves' arrays are made
read-only so a session cannot change what another one sees, and fit results / comparisons must be
treated as read-only (the app only reads them; a new fit or a re-read file makes new objects, which are
not cached).

Only the sample set's own objects are cached: an upload or a re-read file is never kept here, so memory
stays bounded by the size of the sample set times the number of model choices.
"""

from __future__ import annotations

import threading
from pathlib import Path

_lock = threading.RLock()
_curves: dict[tuple, tuple] = {}  # (path, mode, mtime_ns) -> curves read from that file
_curve_ids: set[int] = set()  # ids of the cached curves (the cache holds them, so ids stay valid)
_fits: dict[tuple, object] = {}  # (model, residual, curve ids) -> FitResult or the FitError it raised
_manifests: dict[tuple, object] = {}  # (path, mtime_ns) -> compounds.Manifest
_compound_ids: set[int] = set()
_comparisons: dict[tuple, object] = {}
#: cap on cached fits / comparisons (a sample set with 4 compounds and 13 models needs far fewer)
MAX_CACHED = 512


def _stamp(path) -> tuple[str, int]:
    p = Path(path).resolve()
    try:
        return str(p), p.stat().st_mtime_ns
    except OSError:
        return str(p), -1


def _freeze(curves):
    for c in curves:
        for arr in (c.stretch, c.stress):
            arr.setflags(write=False)
    return tuple(curves)


def sample_curves(path, mode=None) -> list:
    """``labfiles.read_curves(path, mode=mode)``, read once per process (the file's mtime is part of the
    key, so a regenerated sample file is read again).  The curves are shared: do not modify them."""
    from network_models.labfiles import read_curves

    key = (*_stamp(path), getattr(mode, "value", mode))
    with _lock:
        hit = _curves.get(key)
        if hit is None:
            hit = _curves[key] = _freeze(read_curves(path, mode=mode))
            _curve_ids.update(id(c) for c in hit)
    return list(hit)


def is_shared(curves) -> bool:
    with _lock:
        return bool(curves) and all(id(c) in _curve_ids for c in curves)


def fit_or_error(model, curves, residual: str | None = None, polymer: str | None = None, **kw):
    """``fitting.fit_or_error`` (a FitResult or a FitError, never raising) with the result for shared sample
    curves made once per process.  Other curves or extra options: a plain fit, not cached."""
    from network_models.fitting import DEFAULT_RESIDUAL
    from network_models.fitting import fit_or_error as _fit

    residual = residual or DEFAULT_RESIDUAL
    curves = list(curves)
    if kw or not is_shared(curves):
        return _fit(model, curves, residual=residual, polymer=polymer, **kw)
    name = model if isinstance(model, str) else model.name
    key = (name, residual, polymer, tuple(id(c) for c in curves))
    with _lock:
        hit = _fits.get(key)
        if hit is None:
            hit = _fit(model, curves, residual=residual, polymer=polymer)  # a FitError: same for every session
            if len(_fits) < MAX_CACHED:
                _fits[key] = hit
    return hit


def sample_manifest(path):
    """``compounds.load_manifest(path)`` once per process (compounds shared read-only)."""
    from network_models.compounds import load_manifest

    key = _stamp(path)
    with _lock:
        hit = _manifests.get(key)
        if hit is None:
            hit = _manifests[key] = load_manifest(path)
            for c in hit.compounds:
                _freeze(getattr(c, "curves", ()) or ())
            _compound_ids.update(id(c) for c in hit.compounds)
    return hit


def _compound_key(c):
    """A compound's identity for the cache: name, recipe facts, swelling tests and the ids of its curves —
    None when any curve is not a shared sample curve (then it is never cached)."""
    curves = list(getattr(c, "curves", ()) or ())
    if not is_shared(curves):
        return None
    meta = tuple(sorted((str(k), repr(v)) for k, v in (c.metadata or {}).items()))
    return (c.name, c.polymer, float(c.f), meta, repr(list(c.swelling)), tuple(id(x) for x in curves))


def compare(compounds, fitter=None, **kw):
    """``compare.compare(compounds, **kw)``; made once per process when every compound is built from shared
    sample curves (whichever session built the Compound objects) and the options are plain values (a dict
    option such as ``exclude`` is keyed by its sorted items).  ``fitter`` (a session's cached fitter, same
    weighting as ``kw["residual"]``) makes the fits of a comparison that is not cached; it is not part of
    the key."""
    from network_models.compare import compare as _compare

    if fitter is not None:
        kw["fitter"] = fitter
    compounds = list(compounds)
    try:
        opts = tuple(sorted((k, tuple(sorted((str(a), repr(b)) for a, b in v.items())) if isinstance(v, dict)
                             else v) for k, v in kw.items() if k != "fitter"))
        hash(opts)
    except TypeError:
        return _compare(compounds, **kw)
    keys = [_compound_key(c) for c in compounds]
    if not compounds or any(k is None for k in keys):
        return _compare(compounds, **kw)
    key = (tuple(keys), opts)
    with _lock:
        hit = _comparisons.get(key)
        if hit is None:
            hit = _compare(compounds, **kw)
            if len(_comparisons) < MAX_CACHED:
                _comparisons[key] = hit
    return hit


def stats() -> dict:
    """How much is cached (for tests and the server log)."""
    with _lock:
        return {"curve_files": len(_curves), "fits": len(_fits), "manifests": len(_manifests),
                "comparisons": len(_comparisons)}


def clear():
    """Forget everything (tests)."""
    with _lock:
        for d in (_curves, _fits, _manifests, _comparisons):
            d.clear()
        _curve_ids.clear()
        _compound_ids.clear()
