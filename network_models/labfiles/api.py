"""The public readers: ``read_curves``, ``read_curves_bytes``, ``inspect_bytes`` and ``curves_to_csv``.

Options (all optional, SI): ``mode`` (uniaxial, planar, equibiaxial or compression), ``gauge_length``,
``width``, ``thickness``, ``area``, ``diameter`` (m, m²), ``temperature`` (K), ``sheet`` (name or number),
``columns`` ({header: kind}), ``units`` ({header: unit}), ``decimal`` ("comma" | "point"), ``skip`` (lines
to leave out at the top), ``profile`` (a reading profile: path or the dict ``load_profile`` returns; the
other options win over it).
"""

from __future__ import annotations

import os
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..curves import TestCurve
from ..deformation import Mode
from ..errors import DataError
from . import tables
from .columns import KINDS
from .metadata import find_header, geometry, missing_geometry, parse_meta, resolve_mode
from .reader import curves_from_table, read_header, table_from_bytes
from .tables import cell_text
from .vocabulary import X_KINDS, Y_KINDS

OPTIONS = ("mode", "gauge_length", "width", "thickness", "area", "diameter", "temperature", "sheet", "columns",
           "units", "decimal", "skip", "profile")


#: environment variable the test suite sets (tests/conftest.py): ``guarded`` then re-raises a programming error
#: instead of turning it into a DataError, so the fuzz tests see a crash as a failure
STRICT_ENV = "NETSTRETCH_STRICT_READERS"
#: exception types that mean a bug in the reader, not a bad file: re-raised under :data:`STRICT_ENV`
#: (a malformed file surfaces as DataError, ValueError, OSError, UnicodeError or a parser library's own error)
PROGRAMMING_ERRORS = (IndexError, KeyError, AttributeError, TypeError, NameError, AssertionError,
                      ZeroDivisionError, RecursionError)


def strict() -> bool:
    """True when readers must not hide programming errors (``NETSTRETCH_STRICT_READERS=1``: the tests)."""
    return os.environ.get(STRICT_ENV) == "1"


def guarded(fn_name: str, func: Callable[..., Any], *args: Any) -> Any:
    """``func(*args)``; any exception but a :class:`DataError` becomes a DataError naming the file (a user never
    sees a traceback for a bad file) — except a programming error (:data:`PROGRAMMING_ERRORS`) under the tests
    (:func:`strict`), which is re-raised so a crash in a reader fails the fuzz tests."""
    try:
        return func(*args)
    except DataError:
        raise
    except Exception as e:  # last line of defence: never a traceback for a bad file
        if isinstance(e, PROGRAMMING_ERRORS) and strict():
            raise
        raise DataError(f"{fn_name}: could not be read as a lab table ({type(e).__name__}); check that it is a CSV, "
                        "TXT or workbook table with a header row of column names and units", file=fn_name) from None


def check_options(opts: dict) -> dict:
    """Known option names (a wrong keyword is a programming error: TypeError); a profile merged in under the
    options given; profile-style values checked."""
    unknown = set(opts) - set(OPTIONS)
    if unknown:
        raise TypeError(f"unknown option(s) {', '.join(sorted(unknown))}; allowed: {', '.join(OPTIONS)}")
    opts = {k: v for k, v in opts.items() if v is not None}
    profile = opts.pop("profile", None)
    if profile is not None:
        from .profiles import load_profile

        base = load_profile(profile) if not isinstance(profile, dict) else dict(profile)
        opts = {**base, **opts}
    if opts.get("decimal") not in (None, "comma", "point"):
        raise DataError(f"option decimal={opts['decimal']!r}: write 'comma' or 'point'")
    for key in ("columns", "units"):
        if opts.get(key) is not None and not isinstance(opts[key], dict):
            raise DataError(f"option {key} must map column headers to {'kinds' if key == 'columns' else 'units'}")
    bad = {h: k for h, k in (opts.get("columns") or {}).items() if k not in KINDS}
    if bad:
        raise DataError(f"unknown column kind(s) {', '.join(f'{h!r}: {k!r}' for h, k in bad.items())}; use one of "
                        f"{', '.join(KINDS)}")
    skip = opts.get("skip")
    if skip is not None and (not isinstance(skip, int) or isinstance(skip, bool) or skip < 0):
        raise DataError(f"option skip={skip!r} must be a whole number of lines (0 or more)")
    return opts


def _read(data: bytes, filename: str, source: str, opts: dict) -> list[TestCurve]:
    return curves_from_table(table_from_bytes(data, filename, opts), source, opts)


def read_curves(path, *, mode=None, gauge_length=None, width=None, thickness=None, area=None, temperature=None,
                sheet=None, **options: Any) -> list[TestCurve]:
    """Read a lab file (CSV/TSV/TXT, .xlsx, .xls or .ods) into test curves, one per specimen.

    Options are SI (m, m², K) and win over the file's metadata (see the module docstring for the full
    list).  Raises :class:`DataError` (one readable sentence naming the file, line or column) for anything
    wrong; when geometry is missing, ONE error names every missing item and carries them in ``missing``.
    """
    opts = dict(mode=mode, gauge_length=gauge_length, width=width, thickness=thickness, area=area,
                temperature=temperature, sheet=sheet, **options)
    opts = check_options(opts)
    data, name, source = tables.read_file_bytes(path)
    return guarded(name, _read, data, name, source, opts)


def _upload_name(filename) -> str:
    return Path(str(filename or "upload.csv")).name or "upload.csv"


def read_curves_bytes(data: bytes, filename: str, **options: Any) -> list[TestCurve]:
    """Same as :func:`read_curves` for bytes already in memory (uploads); ``filename`` gives the format."""
    opts = check_options(dict(options))
    fn = _upload_name(filename)
    if not isinstance(data, (bytes, bytearray, memoryview)):
        raise DataError(f"{fn}: expected the file's bytes, got {type(data).__name__}", file=fn)
    data = bytes(data)
    if len(data) > tables.MAX_FILE_BYTES:
        raise DataError(tables.limit_message(fn, len(data)), file=fn)
    return guarded(fn, _read, data, fn, fn, opts)


def curves_to_csv(curves: list[TestCurve]) -> str:
    """The curves as one CSV text in the reader's own format (readable back with ``read_curves_bytes``):
    '# key: value' metadata lines (mode, temperature, cycle, compound — common to all curves), then columns
    specimen, stretch, stress (MPa).  Curves of different modes or temperatures need separate files."""
    if not curves:
        raise ValueError("no curves to write")
    modes = {c.mode for c in curves}
    temps = {c.temperature for c in curves}
    if len(modes) > 1 or len(temps) > 1:
        raise ValueError("curves of different test modes or temperatures go in separate files")
    first = curves[0]
    loadings = {c.loading for c in curves}
    if len(loadings) > 1:
        raise ValueError("compression and tension curves go in separate files")
    lines = [f"# mode: {'compression' if loadings == {'compression'} else first.mode.value}"]
    if first.temperature is not None:
        lines.append(f"# temperature: {first.temperature:.6g} K")
    for key, value in (("cycle", first.cycle), ("compound", first.metadata.get("compound"))):
        if value and all((c.cycle if key == "cycle" else c.metadata.get(key)) == value for c in curves):
            lines.append(f"# {key}: {' '.join(str(value).split())}")
    lines.append("specimen,stretch,stress (MPa)")
    for i, c in enumerate(curves, start=1):
        label = str(c.specimen or c.name or f"curve {i}").replace(",", " ").replace('"', "'").strip() or f"curve {i}"
        if len(curves) > 1 and sum(1 for d in curves if (d.specimen or d.name) == (c.specimen or c.name)) > 1:
            label = f"{label} #{i}"
        lines += [f"{label},{lam!r},{p / 1e6!r}" for lam, p in zip(c.stretch.tolist(), c.stress.tolist(), strict=True)]
    return "\n".join(lines) + "\n"


@dataclass
class FileInfo:
    """What a lab file holds before it is turned into curves (for an upload preview and settings form).

    ``columns``: one dict per column (header, kind — stretch, strain, true_strain, extension, stress,
    true_stress, force, specimen, time, temperature or other — and unit); ``metadata``: the recognised
    metadata in SI (mode as a Mode); ``needs``: the geometry items the file lacks for read_curves to succeed
    — the same names a DataError's ``missing`` carries: 'gauge_length', 'width', 'thickness' (the area or a
    diameter may stand for width × thickness); ``preview``: the header and first data rows as text.
    """

    filename: str
    columns: list[dict]
    metadata: dict
    extra: dict
    needs: list[str]
    mode: Mode | None
    n_rows: int
    preview: list[list[str]]
    notices: list
    loading: str = "tension"
    options: dict = field(default_factory=dict)


def inspect_bytes(data: bytes, filename: str, *, sheet=None, preview_rows: int = 8, **options: Any) -> FileInfo:
    """Look into a lab file without converting it: columns and their kinds, metadata, what is missing
    (given the options, which take the same names as :func:`read_curves`'s).  Raises DataError for a file
    that cannot be read as a table at all."""
    fn = _upload_name(filename)
    opts = check_options(dict(options, sheet=sheet))

    def work():
        if len(data) > tables.MAX_FILE_BYTES:
            raise DataError(tables.limit_message(fn, len(data)), file=fn)
        table = table_from_bytes(bytes(data), fn, opts)
        known, extra, _ = parse_meta(table, find_header(table))
        header = read_header(table, opts, strict=False)
        cols = header.columns
        kinds = {c.kind for c in cols}
        gauge, area = geometry(opts, known, fn)
        needs_gauge = gauge is None and "extension" in kinds and not ({"stretch", "strain", "true_strain"} & kinds)
        needs_area = area is None and "force" in kinds and not ({"stress", "true_stress"} & kinds)
        preview = [[cell_text(c) for c in r] for r in table.rows[: header.start + preview_rows]]
        mode, loading = resolve_mode(opts, known, fn, [])
        if any(c.compression for c in cols if c.kind in X_KINDS + Y_KINDS):
            loading = "compression"
        return FileInfo(
            filename=fn, columns=[{"header": c.header, "kind": c.kind, "unit": c.unit} for c in cols],
            metadata=known, extra=extra, needs=missing_geometry(needs_gauge, needs_area, opts, known),
            mode=known.get("mode") or (mode if opts.get("mode") else None),
            n_rows=max(len(table.rows) - header.start, 0), preview=preview, notices=list(table.notices),
            loading=loading, options=opts,
        )

    return guarded(fn, work)
