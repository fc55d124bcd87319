"""One bounded reading layer for everything a user hands the server or the command line: lab files
(CSV/TXT and workbooks), uploads, project zips and their ``project.toml``, reading profiles.

Every limit lives here (one source of truth; README "Serving a lab" states them):

- a file handed in: at most :data:`MAX_FILE_BYTES` (20 MB);
- a member of a zip (a workbook's sheet, a project's input): at most :data:`MAX_MEMBER_BYTES` (50 MB)
  COUNTED WHILE INFLATING, in small steps — the sizes a zip declares are never trusted, so a member that
  under-states its size or a sheet that inflates to gigabytes is stopped after 50 MB of real bytes;
- a project's ``project.toml`` or a reading profile: at most :data:`MAX_MANIFEST_BYTES` (1 MB);
- a table: at most :data:`MAX_COLUMNS` (1,000) columns and :data:`MAX_CELLS` (5 million) cells;
- reading one file: at most :data:`TIME_BUDGET_S` seconds of work (checked between steps).

A refusal is a :class:`LimitError` (a :class:`~network_models.errors.DataError`): one sentence naming the
file and the limit; the command line exits with status 2 as for every user error.
"""

from __future__ import annotations

import io
import time
import zipfile
from typing import TYPE_CHECKING, Any

from .errors import DataError

if TYPE_CHECKING:
    from pathlib import Path

MAX_FILE_BYTES = 20_000_000
MAX_MEMBER_BYTES = 50_000_000
MAX_MANIFEST_BYTES = 1_000_000
MAX_COLUMNS = 1_000
MAX_CELLS = 5_000_000
TIME_BUDGET_S = 15.0
#: inflate in steps of this size (the decompressor never makes more than this at once)
_STEP = 1 << 20


class LimitError(DataError):
    """An input over one of the limits above; the sentence names the file and the limit."""


def _mb(n: int) -> str:
    return f"{n / 1e6:.0f} MB" if n >= 1_000_000 else f"{n / 1e3:.0f} kB"


class Budget:
    """A time budget for reading one file: ``check()`` between steps raises LimitError once spent."""

    def __init__(self, name: str, seconds: float = TIME_BUDGET_S):
        self.name, self.seconds, self.start = name, seconds, time.monotonic()

    def check(self) -> None:
        if time.monotonic() - self.start > self.seconds:
            raise LimitError(f"{self.name}: reading it took longer than the {self.seconds:g} s budget; it is "
                             "too large or too complex — export only the test curves", file=self.name)


def check_size(n: int, name: str, limit: int = MAX_FILE_BYTES, what: str = "the file") -> None:
    if n > limit:
        raise LimitError(f"{name}: {what} is over the {_mb(limit)} limit; export only the test curves "
                         "(stretch/strain/extension and stress/force columns)", file=name)


def read_file(path: str | Path, limit: int = MAX_FILE_BYTES, what: str = "the file") -> bytes:
    """At most ``limit`` bytes of a file (reading stops at the limit whatever the file system says)."""
    from pathlib import Path

    p = Path(path)
    with open(p, "rb") as fh:
        data = fh.read(limit + 1)
    check_size(len(data), p.name, limit, what)
    return data


def _inflate(z: zipfile.ZipFile, info: zipfile.ZipInfo, name: str, limit: int, budget: Budget | None,
             advice: str):
    """A member's bytes in steps of 1 MiB, counted as they come: LimitError past ``limit`` real bytes or
    when the member is not what its header says (a wrong declared size fails zipfile's own check)."""
    label = f"{name} (member {info.filename})"
    n = 0
    try:
        with z.open(info) as fh:
            while chunk := fh.read(_STEP):
                n += len(chunk)
                if n > limit:
                    raise LimitError(f"{label}: inflates to more than the {_mb(limit)} limit per member; {advice}",
                                     file=name)
                if budget is not None:
                    budget.check()
                yield chunk
    except LimitError:
        raise
    except (zipfile.BadZipFile, EOFError, OSError, ValueError, NotImplementedError) as exc:
        raise LimitError(f"{label}: the zip member is damaged or does not match its declared size ({exc}); "
                         "it is not a file this tool wrote — save it again", file=name) from None


def read_member(z: zipfile.ZipFile, member, name: str, limit: int = MAX_MEMBER_BYTES,
                budget: Budget | None = None) -> bytes:
    """One zip member's bytes, inflated in small steps and counted (see :func:`_inflate`)."""
    info = member if isinstance(member, zipfile.ZipInfo) else z.getinfo(member)
    return b"".join(_inflate(z, info, name, limit, budget, "it is not a file this tool reads"))


def check_zip(data: bytes, name: str, limit: int = MAX_MEMBER_BYTES, budget: Budget | None = None) -> None:
    """Inflate every member of a zip (a workbook) in small steps, counting real bytes, WITHOUT keeping them:
    refuse the file before any library inflates it in one go."""
    try:
        z = zipfile.ZipFile(io.BytesIO(data))
    except zipfile.BadZipFile:
        return  # not a zip: the workbook reader says what it is
    budget = budget or Budget(name)
    with z:
        if len(z.infolist()) > 10_000:
            raise LimitError(f"{name}: holds more than 10,000 zip members; it is not a file this tool reads",
                             file=name)
        for info in z.infolist():
            for _ in _inflate(z, info, name, limit, budget, "save only the sheet with the test curves"):
                pass


def check_text_shape(lines: list[str], delim: str, name: str) -> None:
    """Columns per line and cells in all: refused before any cell is split."""
    cells = 0
    for i, ln in enumerate(lines, 1):
        k = ln.count(delim) + 1 if delim else 1
        if k > MAX_COLUMNS:
            raise LimitError(f"{name}: line {i} has {k:,} columns, over the limit of {MAX_COLUMNS:,} columns "
                             "per table; put one test curve per column pair and specimens below each other",
                             file=name)
        cells += k
        if cells > MAX_CELLS:
            raise LimitError(f"{name}: the table has more than {MAX_CELLS:,} cells, over the limit; export only "
                             "the test curves", file=name)


def check_table_shape(nrows: int, ncols: int, name: str) -> None:
    if ncols > MAX_COLUMNS:
        raise LimitError(f"{name}: the table has {ncols:,} columns, over the limit of {MAX_COLUMNS:,} columns per "
                         "table", file=name)
    if nrows * ncols > MAX_CELLS:
        raise LimitError(f"{name}: the table has {nrows * ncols:,} cells, over the limit of {MAX_CELLS:,}",
                         file=name)


def read_manifest(z: zipfile.ZipFile, member: str, name: str) -> bytes:
    """A project's ``project.toml`` (or another small text member): at most :data:`MAX_MANIFEST_BYTES`."""
    try:
        return read_member(z, member, name, MAX_MANIFEST_BYTES)
    except LimitError as exc:
        if "limit" in str(exc) and "damaged" not in str(exc):
            raise LimitError(f"{name}: {member} is larger than the {_mb(MAX_MANIFEST_BYTES)} limit for a project "
                             "manifest; it is not a project this tool wrote", file=name) from None
        raise


class BoundedZipFile(zipfile.ZipFile):
    """A zip whose ``read`` goes through :func:`read_member`: each member counted while it inflates (at most
    :data:`MAX_MEMBER_BYTES`; ``.toml`` members at most :data:`MAX_MANIFEST_BYTES`).  ``error`` is the
    exception class raised for a refusal (e.g. the project file's own), with the sentence of LimitError."""

    def __init__(self, file, name: str = "the file", error=LimitError, **kw):
        super().__init__(file, **kw)
        self._label, self._error = name, error
        self._budget = Budget(name)

    def read(self, name: Any, pwd: bytes | None = None) -> bytes:
        member = name.filename if isinstance(name, zipfile.ZipInfo) else str(name)
        try:
            if member.lower().endswith(".toml"):
                return read_manifest(self, member, self._label)
            return read_member(self, member, self._label, budget=self._budget)
        except LimitError as exc:
            if self._error is LimitError:
                raise
            raise self._error(str(exc)) from None
