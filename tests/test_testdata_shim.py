"""`network_models.testdata` is only a deprecated shim for code outside the project (issue #22): nothing in the
project imports it, it warns when imported, and the fitting core does not load the file readers."""

from __future__ import annotations

import ast
import importlib
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SHIM = "network_models.testdata"


def _imports_shim(path: Path) -> list[int]:
    """Line numbers in ``path`` that import the shim (absolutely or relatively, anywhere in the module)."""
    lines = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import) and any(a.name == SHIM for a in node.names):
            lines.append(node.lineno)
        elif isinstance(node, ast.ImportFrom):
            mod = node.module or ""
            names = {a.name for a in node.names}
            absolute = node.level == 0 and (mod == SHIM or (mod == "network_models" and "testdata" in names))
            relative = node.level > 0 and (mod.split(".")[-1] == "testdata" or (not mod and "testdata" in names))
            if absolute or relative:
                lines.append(node.lineno)
    return lines


def test_the_shim_detector_sees_each_import_form(tmp_path):
    f = tmp_path / "m.py"
    for text in ("from network_models.testdata import read_curves\n", "import network_models.testdata\n",
                 "from network_models import testdata\n", "def f():\n    from ..testdata import TestCurve\n",
                 "from . import testdata\n"):
        f.write_text(text)
        assert _imports_shim(f), text
    f.write_text("from network_models.labfiles import read_curves\nfrom .curves import TestCurve\n")
    assert _imports_shim(f) == []


def test_no_project_module_imports_the_shim():
    found = {str(p.relative_to(ROOT)): ln for d in ("network_models", "app", "benchmarks", "sample_sets")
             for p in (ROOT / d).rglob("*.py") if p.name != "testdata.py" and (ln := _imports_shim(p))}
    assert not found, f"import from network_models.curves / network_models.labfiles instead: {found}"


def test_importing_the_shim_warns_and_still_gives_the_old_names():
    sys.modules.pop(SHIM, None)
    with pytest.warns(DeprecationWarning, match="network_models.labfiles"):
        td = importlib.import_module(SHIM)
    from network_models import curves, labfiles

    assert td.TestCurve is curves.TestCurve and td.read_curves is labfiles.read_curves


def test_importing_fitting_does_not_load_the_file_readers():
    code = ("import sys, network_models.fitting; "
            "print(sorted(m for m in sys.modules if m.startswith(('network_models.labfiles', "
            "'network_models.testdata'))))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "[]"
