"""The shared browser fixture (tests/conftest.py) is the one place browser tests get Chromium: without a
browser they skip, and with NETSTRETCH_REQUIRE_BROWSER=1 (CI) the same test FAILS (issue #22)."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

TESTS = Path(__file__).resolve().parent


def _run(tmp_path: Path, require: bool) -> subprocess.CompletedProcess:
    for name in ("conftest.py", "_browser.py"):
        shutil.copy(TESTS / name, tmp_path / name)
    (tmp_path / "test_uses_browser.py").write_text(
        "def test_page(chromium_browser):\n    chromium_browser.new_context().close()\n", "utf-8")
    env = {k: v for k, v in os.environ.items() if k not in ("NETSTRETCH_CHROMIUM", "NETSTRETCH_REQUIRE_BROWSER")}
    env.update(NETSTRETCH_CHROMIUM=str(tmp_path / "no-chromium-here"), PATH=str(tmp_path),
               PYTHONPATH=str(tmp_path))
    if require:
        env["NETSTRETCH_REQUIRE_BROWSER"] = "1"
    return subprocess.run([sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider", "-rs", str(tmp_path)],
                          cwd=tmp_path, env=env, capture_output=True, text=True, timeout=120)


def test_a_missing_browser_skips_by_default(tmp_path):
    r = _run(tmp_path, require=False)
    assert r.returncode == 0 and "1 skipped" in r.stdout, r.stdout + r.stderr


def test_a_missing_browser_fails_when_browsers_are_required(tmp_path):
    r = _run(tmp_path, require=True)
    assert r.returncode == 1 and "NETSTRETCH_REQUIRE_BROWSER=1" in r.stdout, r.stdout + r.stderr
