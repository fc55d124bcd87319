"""Batch fitting of an archive: every curve of every readable file, one result row per curve.

    >>> from network_models.batch import run_batch
    >>> summary = run_batch(["qc_archive/"], model="eight-chain", output="results.csv", jobs=2)

* Inputs: folders (walked recursively) and files.  Files with a readable suffix (``READABLE_SUFFIXES``) are
  read with ``labfiles.read_curves_bytes``; a file it cannot read is listed in ``<stem>.failures.csv``
  with the reader's sentence, and the run goes on.
* Output: CSV (or parquet, with pyarrow), one row per curve, columns ``COLUMNS_FIRST`` + one per fitted
  parameter (SI, named as the model declares it) + ``COLUMNS_LAST``.  A curve whose fit failed keeps its
  row with the sentence in ``error`` and blank numbers — never a silent NaN.
* Resume: files already in the output are skipped, so a re-run after an interruption only does the rest.
  Results are appended file by file as they come (CSV; parquet collects into ``<stem>.journal.csv``
  first), then sorted by (file, curve) at the end, so the output is the same whatever the order of work.
* Parallel: ``jobs`` local processes, or a Dask distributed ``scheduler`` address; the file's bytes travel
  with the task, so workers need netstretch installed but no shared folder.
"""

from __future__ import annotations

import csv
import math
import os
import sys
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from .cellguard import guard, unguard
from .errors import UserError

if TYPE_CHECKING:
    import pandas as pd

__all__ = ["COLUMNS_FIRST", "COLUMNS_LAST", "HEADLINE_ROW", "READABLE_SUFFIXES", "BatchSummary", "collect_files",
           "fit_file", "fit_files", "read_results", "run_batch",
           "to_frame"]

#: suffixes the batch tries to read (the reader says why when it cannot, e.g. an old .xls workbook)
READABLE_SUFFIXES = (".csv", ".tsv", ".txt", ".dat", ".asc", ".xlsx", ".xlsm", ".xls", ".ods")
#: the crosslink-table row of the headline strand density: affine, G = νRT (entanglements not removed: a gum can
#: have G below the plateau modulus, which leaves no "entanglement removed" value; that row is in `netstretch fit`)
HEADLINE_ROW = "affine"
COLUMNS_FIRST = ["file", "curve", "specimen", "compound", "mode", "model", "points"]
COLUMNS_LAST = ["G0", "nu", "nu_basis", "rms", "r2", "warnings", "error"]
MAX_BYTES = 20_000_000


@dataclass
class BatchSummary:
    files: int = 0  # files found
    skipped: int = 0  # already in the output
    read: int = 0
    failed_files: int = 0
    curves: int = 0  # rows written in this run
    failed_fits: int = 0
    output: Path | None = None
    failures: Path | None = None
    notes: list[str] = field(default_factory=list)

    def sentence(self) -> str:
        return (f"{self.curves} curves from {self.read} files fitted ({self.failed_fits} fits failed), "
                f"{self.failed_files} files could not be read, {self.skipped} files already done; "
                f"results in {self.output}, unreadable files in {self.failures}")


# ----- finding files -------------------------------------------------------------------------------------
def collect_files(inputs: Iterable) -> list[tuple[str, Path]]:
    """(name relative to the folder given, path) for every readable file, sorted, each once."""
    out: dict[Path, str] = {}
    for item in inputs:
        p = Path(item)
        if p.is_dir():
            for f in sorted(p.rglob("*")):
                if f.is_file() and f.suffix.lower() in READABLE_SUFFIXES and not f.name.startswith((".", "~$")):
                    out.setdefault(f.resolve(), f.relative_to(p).as_posix())
        elif p.is_file():
            out.setdefault(p.resolve(), p.name)
        else:
            raise UserError(f"{item}: no such file or folder; give folders or lab files to fit")
    names: dict[str, int] = {}
    rows = []
    for path, rel in sorted(out.items(), key=lambda kv: kv[1]):
        names[rel] = names.get(rel, 0) + 1
        rows.append((rel if names[rel] == 1 else f"{rel} ({path.parent})", path))
    return rows


# ----- the work for one file (runs in a worker process or on a Dask worker) ----------------------------------
def _num(x):
    return float(x) if x is not None and math.isfinite(float(x)) else None


def _fit_row(curve, model, polymer: str, f: float) -> dict:
    from .crosslinks import from_fit
    from .fitting import fit

    row = {"mode": curve.mode.value, "points": len(curve)}
    try:
        r = fit(model, curve)  # the one default weighting (fitting.DEFAULT_RESIDUAL)
    except (ValueError, ArithmeticError) as exc:
        row["error"] = str(exc)
        return row
    for name, p in r.params.items():
        row[name] = _num(p.value)
    row["G0"] = _num(r.small_strain_modulus)
    stats = r.modes.get(curve.mode)
    if stats is not None:
        row["rms"], row["r2"] = _num(stats.rms), _num(stats.r2)
    warns = list(r.warnings)
    try:
        tr = from_fit(r, polymer=polymer, f=f).row(HEADLINE_ROW)
        row["nu"] = _num(tr.nu)
        row["nu_basis"] = f"{tr.label} ({tr.assumes}); strand density, mol/m³"
        if row["nu"] is None:
            warns.append(f"no strand density under '{tr.label}': {tr.note or 'not defined for this fit'}")
    except (ValueError, KeyError) as exc:
        warns.append(f"no crosslink density: {exc}")
    row["warnings"] = " | ".join(str(w) for w in warns)
    return row


def fit_file(rel: str, source, model: str, polymer: str = "NR", f: float = 4.0) -> dict:
    """Read one file (``source``: a path, or the file's bytes) and fit every curve in it.

    Returns ``{"file": rel, "rows": [...], "error": None | sentence}``; never raises for a bad file."""
    from .labfiles import read_curves_bytes

    try:
        data = source if isinstance(source, (bytes, bytearray)) else Path(source).read_bytes()
        curves = read_curves_bytes(bytes(data), Path(rel).name)
        if not curves:
            raise ValueError(f"{Path(rel).name}: no test curve found in the file")
    except (ValueError, OSError) as exc:
        return {"file": rel, "rows": [], "error": str(exc)}
    except Exception as exc:  # a reader bug must not stop an archive run: report it as this file's problem
        return {"file": rel, "rows": [], "error": f"{Path(rel).name}: could not be read ({type(exc).__name__}: {exc})"}
    rows = []
    for i, c in enumerate(curves):
        base = {"file": rel, "curve": c.name or f"curve {i + 1}", "specimen": c.specimen or "",
                "compound": str(c.metadata.get("compound") or ""), "model": model, "index": i}
        try:
            base.update(_fit_row(c, model, polymer, f))
        except Exception as exc:  # a numerical failure in one curve: a row that says so
            base["error"] = f"the fit did not succeed ({type(exc).__name__}: {exc})"
        notices = [str(n) for n in c.notices]
        if notices:
            earlier = str(base.get("warnings") or "")
            base["warnings"] = " | ".join([*notices, earlier] if earlier else notices)
        rows.append(base)
    return {"file": rel, "rows": rows, "error": None}


# ----- output ----------------------------------------------------------------------------------------------
def columns_for(model: str) -> list[str]:
    from .models import get_model

    return [*COLUMNS_FIRST, *(p.name for p in get_model(model).params), *COLUMNS_LAST]


def _cell(v):
    if v is None:
        return ""
    if isinstance(v, float):
        return repr(v)  # round-trips exactly
    return guard(str(v))  # a text cell that would run as a spreadsheet formula is written as text


def read_results(path) -> list[dict]:
    """Rows of a batch output (CSV or parquet) as dicts of strings/floats (empty cells: None)."""
    path = Path(path)
    if path.suffix.lower() == ".parquet":
        import pyarrow.parquet as pq

        return pq.read_table(path).to_pylist()
    with path.open(newline="", encoding="utf-8") as fh:
        return [{k: (unguard(v) if v != "" else None) for k, v in r.items()} for r in csv.DictReader(fh)]


def to_frame(path: str | Path) -> pd.DataFrame:
    """A batch output (CSV or parquet) as a pandas DataFrame, numbers as floats, empty cells as NaN
    (read ``error`` for why a row has no numbers)."""
    import pandas as pd

    path = Path(path)
    if path.suffix.lower() == ".parquet":
        return pd.read_parquet(path)
    frame = pd.read_csv(path, keep_default_na=False, na_values=[""])
    for c in frame.columns:
        if not pd.api.types.is_numeric_dtype(frame[c]):
            frame[c] = frame[c].map(unguard)  # the formula guard of text cells (see cellguard)
    return frame


def _check_existing(rows: list[dict], model: str, path: Path):
    models = {str(r["model"]) for r in rows if r.get("model")}
    if models and models != {model}:
        raise UserError(f"{path} holds results of model {', '.join(sorted(models))}, not {model}; "
                        "write this model's results to another file with -o")


def _sort_key(r):
    idx = r.get("index")
    try:
        idx = int(float(idx))
    except (TypeError, ValueError):
        idx = 0
    return (str(r.get("file") or ""), idx, str(r.get("curve") or ""))


def _write_csv(path: Path, cols: list[str], rows: list[dict]):
    tmp = path.with_name(path.name + ".tmp")
    with tmp.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(cols)
        for r in rows:
            w.writerow([_cell(r.get(c)) for c in cols])
    os.replace(tmp, path)


def _write_parquet(path: Path, cols: list[str], rows: list[dict]):
    import pyarrow as pa
    import pyarrow.parquet as pq

    text = {"file", "curve", "specimen", "compound", "mode", "model", "nu_basis", "warnings", "error"}

    def conv(c, v):
        if v is None or v == "":
            return None
        if c in text:
            return str(v)
        if c in ("points", "index"):
            return int(float(v))
        return float(v)

    data = {c: [conv(c, r.get(c)) for r in rows] for c in cols}
    schema = pa.schema([(c, pa.string() if c in text else pa.int64() if c in ("points", "index") else pa.float64())
                        for c in cols])
    tmp = path.with_name(path.name + ".tmp")
    pq.write_table(pa.table(data, schema=schema), tmp)
    os.replace(tmp, path)


class _Appender:
    """Appends each file's rows at once and flushes, so an interruption loses at most the file in hand."""

    def __init__(self, path: Path, cols: list[str]):
        self.path, self.cols = path, cols
        new = not path.exists() or path.stat().st_size == 0
        self.fh = path.open("a", newline="", encoding="utf-8")
        self.w = csv.writer(self.fh)
        if new:
            self.w.writerow(cols)
            self.fh.flush()

    def add(self, rows):
        for r in rows:
            self.w.writerow([_cell(r.get(c)) for c in self.cols])
        self.fh.flush()  # in the operating system's hands: survives Ctrl+C or a killed process

    def close(self):
        self.fh.flush()
        os.fsync(self.fh.fileno())
        self.fh.close()


class OutputLock:
    """An exclusive lock on a batch output and its journal (``<output>.lock``, an advisory ``flock`` held
    while the run lasts; the operating system drops it when the process ends, however it ends).  A second
    run on the same output is refused with a sentence naming the running one."""

    def __init__(self, output: Path):
        import datetime as _dt
        import socket

        self.path = output.with_name(output.name + ".lock")
        self.fh = None
        try:
            import fcntl
        except ImportError:  # pragma: no cover - not a POSIX system: no lock
            return
        fh = self.path.open("a+", encoding="utf-8")
        try:
            fcntl.flock(fh.fileno(), fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            fh.seek(0)
            who = fh.read().strip() or "another process"
            fh.close()
            raise UserError(f"{output} is being written by another batch run ({who}); wait until it has finished "
                            "(run the same command again then to resume) or write to another file with -o") from None
        fh.seek(0)
        fh.truncate()
        started = _dt.datetime.now().astimezone().replace(microsecond=0).isoformat()
        fh.write(f"process {os.getpid()} on {socket.gethostname()}, started {started}: "
                 f"{' '.join(Path(sys.argv[0]).name if i == 0 else a for i, a in enumerate(sys.argv))}")
        fh.flush()
        self.fh = fh

    def release(self) -> None:
        if self.fh is not None:
            self.path.unlink(missing_ok=True)
            self.fh.close()  # closing drops the lock
            self.fh = None

    def __del__(self):
        self.release()


# ----- running -------------------------------------------------------------------------------------------------
def fit_files(items, model: str, polymer: str = "NR", f: float = 4.0) -> list[dict]:
    """:func:`fit_file` for several (rel, source) pairs: one task carries a few files, so sending work to a
    process or a cluster costs little next to the fits."""
    return [fit_file(rel, src, model, polymer, f) for rel, src in items]


def _chunks(tasks, workers: int, most: int = 8):
    size = max(1, min(most, len(tasks) // (4 * max(1, workers)) or 1))
    return [tasks[i:i + size] for i in range(0, len(tasks), size)]


def _results_local(tasks, model, polymer, f, jobs):
    if jobs <= 1:
        for rel, path in tasks:
            yield fit_file(rel, path, model, polymer, f)
        return
    from concurrent.futures import ProcessPoolExecutor, as_completed

    with ProcessPoolExecutor(max_workers=jobs) as ex:
        futs = [ex.submit(fit_files, [(rel, str(path)) for rel, path in chunk], model, polymer, f)
                for chunk in _chunks(tasks, jobs)]
        for fut in as_completed(futs):
            yield from fut.result()


def _results_dask(tasks, model, polymer, f, scheduler):
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise UserError("--scheduler needs Dask distributed: pip install 'netstretch[cluster]'") from None
    client = scheduler if hasattr(scheduler, "submit") else None
    own = client is None
    if own:
        try:
            client = Client(scheduler, timeout="20s")
        except (OSError, TimeoutError) as exc:
            raise UserError(f"cannot reach the Dask scheduler at {scheduler} ({exc}); start it with "
                            "`dask scheduler` and check the address (tcp://HOST:8786)") from None
    try:
        workers = max(1, len(client.scheduler_info().get("workers", {})))
        chunks = iter(_chunks(tasks, workers))
        pending = as_completed()

        def submit_next():  # read the next chunk's files here and send their bytes; None when none is left
            errors = []
            for chunk in chunks:
                ready = []
                for rel, path in chunk:
                    try:
                        if path.stat().st_size > MAX_BYTES:
                            errors.append({"file": rel, "rows": [], "error": f"{path.name}: larger than "
                                           f"{MAX_BYTES // 1_000_000} MB; export only the test curves"})
                        else:
                            ready.append((rel, path.read_bytes()))
                    except OSError as exc:
                        errors.append({"file": rel, "rows": [],
                                       "error": f"{path.name}: cannot open it ({exc.strerror or exc})"})
                if ready:  # else (every file of the chunk unreadable) go on to the next chunk
                    pending.add(client.submit(fit_files, ready, model, polymer, f, pure=False))
                    return errors
            return errors or None

        for _ in range(4 * workers):  # a bounded number of chunks in flight: an archive never sits in memory
            errors = submit_next()
            if errors is None:
                break
            yield from errors
        for fut in pending:
            yield from fut.result()
            fut.release()
            errors = submit_next()
            if errors:
                yield from errors
    finally:
        if own:
            client.close()


def run_batch(inputs, model: str, output, *, jobs: int = 1, scheduler=None, polymer: str = "NR", f: float = 4.0,
              progress: bool = True) -> BatchSummary:
    """Fit ``model`` to every curve under ``inputs``; write ``output`` (.csv or .parquet) and
    ``<stem>.failures.csv``.  ``scheduler``: a Dask scheduler address (or a ``distributed.Client``)."""
    from .models import get_model

    name = get_model(model).name
    output = Path(output)
    suffix = output.suffix.lower()
    if suffix not in (".csv", ".parquet"):
        raise UserError(f"-o {output}: write results to a .csv or .parquet file")
    if suffix == ".parquet":
        try:
            import pyarrow  # noqa: F401
        except ImportError:
            raise UserError("parquet output needs pyarrow (pip install 'netstretch[cluster]'); or write "
                            f"{output.with_suffix('.csv')} instead") from None
    if jobs < 1:
        raise UserError(f"--jobs must be 1 or more; got {jobs}")
    output.parent.mkdir(parents=True, exist_ok=True)
    cols = columns_for(name) + ["index"]
    journal = output if suffix == ".csv" else output.with_name(output.stem + ".journal.csv")
    failures_path = output.with_name(output.stem + ".failures.csv")
    lock = OutputLock(output)  # one run per output (and journal): a second one is refused, naming this one

    existing = []
    for p in dict.fromkeys([output, journal]):
        if p.exists() and p.stat().st_size:
            try:
                existing.extend(read_results(p))
            except Exception as exc:
                raise UserError(f"{p} exists but cannot be read as batch results ({exc}); move it away or "
                                "choose another -o") from None
    _check_existing(existing, name, output)
    done = {r.get("file") for r in existing}
    files = collect_files(inputs)
    todo = [(rel, path) for rel, path in files if rel not in done]
    summary = BatchSummary(files=len(files), skipped=len(files) - len(todo), output=output, failures=failures_path)

    try:
        from tqdm import tqdm

        bar = tqdm(total=len(todo), unit="file", file=sys.stderr, disable=not progress, desc="netstretch batch")
    except ImportError:  # pragma: no cover - tqdm is a dependency
        bar = None
    app = _Appender(journal, cols)
    fails = []
    try:
        results = (_results_dask(todo, name, polymer, f, scheduler) if scheduler is not None
                   else _results_local(todo, name, polymer, f, jobs))
        for res in results:
            if res["error"]:
                summary.failed_files += 1
                fails.append((res["file"], res["error"]))
            else:
                summary.read += 1
                summary.curves += len(res["rows"])
                summary.failed_fits += sum(1 for r in res["rows"] if r.get("error"))
                app.add(res["rows"])
            if bar is not None:
                bar.update(1)
    finally:
        app.close()
        if bar is not None:
            bar.close()
        with failures_path.open("w", newline="", encoding="utf-8") as fh:
            w = csv.writer(fh)
            w.writerow(["file", "problem"])
            w.writerows(sorted(fails))
    rows = read_results(journal)
    if journal != output and output.exists():  # parquet: earlier results plus this run's journal
        fresh = {r.get("file") for r in rows}
        rows += [r for r in read_results(output) if r.get("file") not in fresh]
    rows.sort(key=_sort_key)
    if suffix == ".csv":
        _write_csv(output, cols, rows)
    else:
        _write_parquet(output, cols, rows)
        journal.unlink(missing_ok=True)
    lock.release()
    return summary
