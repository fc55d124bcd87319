"""Packaging: what the wheel holds, one version string, the bundled sample set wherever netstretch runs from.

The wheel itself is built and used outside the checkout by ``.ci/wheel_smoke.sh`` (run by ``.ci/run``); these
are the fast checks of the declarations it depends on (common practice: setuptools packages list and
package-data must name everything that has to ship).
"""

from __future__ import annotations

import subprocess
import sys
import tomllib
from pathlib import Path

import pytest
import setuptools

import network_models
from network_models import labfiles, samples
from network_models.cli import main

ROOT = Path(__file__).resolve().parent.parent
PYPROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text("utf-8"))


def test_every_core_subpackage_is_listed_for_the_wheel():
    listed = set(PYPROJECT["tool"]["setuptools"]["packages"])
    found = set(setuptools.find_packages(str(ROOT), include=["network_models", "network_models.*"]))
    missing = found - listed
    assert not missing, f"add {sorted(missing)} to [tool.setuptools] packages in pyproject.toml"
    assert "netstretch_app" in listed and "app" not in listed  # installed under a name no one else uses
    assert PYPROJECT["tool"]["setuptools"]["package-dir"]["netstretch_app"] == "app"


@pytest.mark.parametrize("folder", ["", "raw_exports", "qc_history"])
def test_every_sample_file_kind_ships(folder):
    package = "network_models.sample_data" + (f".{folder}" if folder else "")
    assert package in PYPROJECT["tool"]["setuptools"]["packages"]  # a sub-folder is a package of its own
    patterns = PYPROJECT["tool"]["setuptools"]["package-data"][package]
    suffixes = {p.removeprefix("*") for p in patterns}
    data = [p for p in (ROOT / "sample_sets" / folder).iterdir() if p.is_file() and p.suffix != ".py"]
    assert data
    for p in data:
        assert p.suffix in suffixes, f"{p.name}: add '*{p.suffix}' to the {package} package-data in pyproject.toml"
    subfolders = {p.name for p in (ROOT / "sample_sets").iterdir() if p.is_dir() and not p.name.startswith((".", "_"))}
    assert subfolders <= {"raw_exports", "qc_history"}, f"list {sorted(subfolders)} as packages in pyproject.toml"


def test_one_version_string(capsys):
    assert PYPROJECT["project"]["dynamic"] == ["version"]
    assert PYPROJECT["tool"]["setuptools"]["dynamic"]["version"] == {"attr": "network_models.__version__"}
    with pytest.raises(SystemExit) as e:
        main(["--version"])
    assert e.value.code == 0
    assert capsys.readouterr().out.strip() == f"netstretch {network_models.__version__}"


def test_python_dash_m_entry():
    out = subprocess.run([sys.executable, "-m", "network_models", "--version"], capture_output=True, text=True,
                         timeout=120, cwd=ROOT)
    assert out.returncode == 0 and out.stdout.strip() == f"netstretch {network_models.__version__}"


def test_sample_manifest_is_the_one_module():
    assert labfiles.SAMPLE_MANIFEST == samples.SAMPLE_MANIFEST
    assert samples.SAMPLE_MANIFEST.is_file()
    man = labfiles.read_manifest()
    assert man.compounds and all(cf.path.is_file() for c in man for cf in c.curve_files)


def test_samples_command_writes_a_usable_set(tmp_path, capsys):
    dest = tmp_path / "mine"
    assert main(["samples", str(dest)]) == 0
    names = {p.name for p in dest.iterdir()}
    assert "compounds.toml" in names and "make_samples.py" not in names
    man = labfiles.read_manifest(dest / "compounds.toml")  # the copy reads on its own
    assert {c.key for c in man} == {c.key for c in labfiles.read_manifest()}
    assert "compare --manifest" in capsys.readouterr().out
    # the raw instrument exports come along in their sub-folder and read from there
    raw = sorted((dest / "raw_exports").glob("*.csv"))
    assert [p.name for p in raw] == sorted(p.name for p in (samples.sample_dir() / "raw_exports").glob("*.csv"))
    assert all(labfiles.read_curves(p) for p in raw)
    # a second time into the same folder: identical files, nothing refused
    assert main(["samples", str(dest)]) == 0
    (dest / "compounds.toml").write_text("changed", encoding="utf-8")
    assert main(["samples", str(dest)]) == 2
    assert "--overwrite" in capsys.readouterr().err
    assert main(["samples", str(dest), "--overwrite"]) == 0
    assert (dest / "compounds.toml").read_bytes() == samples.SAMPLE_MANIFEST.read_bytes()


def test_panel_serve_entry_file_exists(capsys):
    assert main(["serve", "--entry-file"]) == 0
    path = Path(capsys.readouterr().out.strip())
    assert path.name == "panel_app.py" and path.is_file()
    assert ".servable(" in path.read_text("utf-8")
