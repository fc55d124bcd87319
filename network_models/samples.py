"""The bundled sample set (invented demo data) wherever netstretch runs from.

In git the files live once, in the checkout's ``sample_sets/`` folder.  A wheel installs that folder as
``network_models/sample_data`` (``pyproject.toml``: ``package-dir``), read here with
``importlib.resources``; in a source checkout the folder beside the package is used.

    >>> from network_models.samples import SAMPLE_MANIFEST, sample_dir, write_samples
    >>> SAMPLE_MANIFEST.name
    'compounds.toml'
"""

from __future__ import annotations

import contextlib
import importlib.resources
import shutil
from pathlib import Path

__all__ = ["SAMPLE_FILE_SUFFIXES", "SAMPLE_MANIFEST", "SAMPLE_SUBFOLDERS", "sample_dir", "sample_files",
           "write_samples"]

#: what a sample set consists of (the generator script and caches are not copied out)
SAMPLE_FILE_SUFFIXES = (".csv", ".tsv", ".txt", ".xlsx", ".toml", ".md")

_INSTALLED = "sample_data"  # folder inside the installed package (mapped from sample_sets/ at build time)
_CHECKOUT = Path(__file__).resolve().parent.parent / "sample_sets"
_stack = contextlib.ExitStack()  # keeps an extracted copy (zip imports only) alive for the process


def sample_dir() -> Path:
    """A real folder holding the sample set (``compounds.toml`` and the files it lists).

    Installed package first, then the source checkout.  Raises FileNotFoundError with a sentence when
    neither has it (a broken install)."""
    res = importlib.resources.files("network_models").joinpath(_INSTALLED)
    if res.is_dir() and res.joinpath("compounds.toml").is_file():
        return Path(_stack.enter_context(importlib.resources.as_file(res)))
    if (_CHECKOUT / "compounds.toml").is_file():
        return _CHECKOUT
    raise FileNotFoundError(
        "the bundled sample set is missing from this installation (no network_models/sample_data folder and "
        "no sample_sets/ checkout folder); reinstall netstretch with `pip install --force-reinstall netstretch`")


def _manifest_path() -> Path:
    try:
        return sample_dir() / "compounds.toml"
    except FileNotFoundError:
        return _CHECKOUT / "compounds.toml"  # readers then say the manifest cannot be opened


#: The bundled sample set's manifest (``compounds.toml``), in the installed package or the checkout.
SAMPLE_MANIFEST: Path = _manifest_path()


#: sub-folders of the sample set copied out with it (raw instrument exports with French and German headers; a QC
#: history of one compound, batch by batch, for the results library)
SAMPLE_SUBFOLDERS = ("raw_exports", "qc_history")


def sample_files(subfolders: bool = False) -> list[Path]:
    """The sample set's files (data, manifest, README), sorted by name; with ``subfolders`` also the files
    of ``SAMPLE_SUBFOLDERS`` (after the top-level ones)."""
    d = sample_dir()
    folders = [d] + ([d / name for name in SAMPLE_SUBFOLDERS if (d / name).is_dir()] if subfolders else [])
    return [p for f in folders
            for p in sorted(p for p in f.iterdir() if p.is_file() and p.suffix.lower() in SAMPLE_FILE_SUFFIXES)]


def write_samples(dest, overwrite: bool = False) -> list[Path]:
    """Copy the sample set (files + ``compounds.toml``, and the ``raw_exports/`` sub-folder) into folder
    ``dest`` (created if needed).

    Refuses (FileExistsError with a sentence) to replace a file that differs, unless ``overwrite``.
    Returns the written paths."""
    dest = Path(dest)
    if dest.exists() and not dest.is_dir():
        raise NotADirectoryError(f"{dest} is a file; give a folder to write the sample set into")
    root = sample_dir()
    pairs = [(p, dest / p.relative_to(root)) for p in sample_files(subfolders=True)]
    clash = [str(t.relative_to(dest)) for p, t in pairs if t.exists() and t.read_bytes() != p.read_bytes()]
    if clash and not overwrite:
        raise FileExistsError(f"{dest} already holds different files called {', '.join(clash)}; choose an empty "
                              "folder or add --overwrite")
    out = []
    for p, t in pairs:
        t.parent.mkdir(parents=True, exist_ok=True)
        shutil.copyfile(p, t)
        out.append(t)
    return out
