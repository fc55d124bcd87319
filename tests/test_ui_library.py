"""Browser test of the Library tab: a server started with a results library configured ($NETSTRETCH_LIBRARY)
holding the invented QC history; the tab draws the trend with the faulty batch flagged and finds compounds.
Skipped where no Chromium exists; mandatory in CI (NETSTRETCH_REQUIRE_BROWSER=1)."""

from __future__ import annotations

import contextlib
import os
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest
from _browser import open_tab, text, wait_text

pytestmark = pytest.mark.ui

ROOT = Path(__file__).resolve().parent.parent


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="module")
def library_server(tmp_path_factory):
    pytest.importorskip("sqlalchemy")
    from network_models.library import import_study

    folder = tmp_path_factory.mktemp("library")
    db = folder / "lab.sqlite"
    import_study("manifest", ROOT / "sample_sets" / "qc_history" / "qc_history.toml", str(db))
    port = _free_port()
    log = (folder / "server.log").open("w")
    env = dict(os.environ, NETSTRETCH_LIBRARY=str(db))
    proc = subprocess.Popen([sys.executable, "-m", "network_models.cli", "serve", "--port", str(port), "--address",
                             "127.0.0.1"], cwd=ROOT, stdout=log, stderr=subprocess.STDOUT, env=env)
    url = f"http://127.0.0.1:{port}/"
    deadline = time.monotonic() + 60
    while True:
        if proc.poll() is not None:
            pytest.fail(f"the app server exited with code {proc.returncode}")
        try:
            with socket.create_connection(("127.0.0.1", port), timeout=2):
                break
        except OSError:
            pass
        if time.monotonic() > deadline:
            proc.terminate()
            pytest.fail("the app server did not answer within 60 s")
        time.sleep(0.3)
    with contextlib.suppress(OSError), urllib.request.urlopen(url, timeout=60):
        pass
    yield url
    proc.terminate()
    try:
        proc.wait(timeout=10)
    except subprocess.TimeoutExpired:
        proc.kill()
    log.close()


def test_library_tab_trend_flags_the_faulty_batch_and_find_lists_matches(chromium_browser, library_server):
    ctx = chromium_browser.new_context(viewport={"width": 1366, "height": 900})
    page = ctx.new_page()
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    try:
        page.goto(library_server)
        page.wait_for_selector(".ns-stress-plot canvas", timeout=60000)
        open_tab(page, "Library", ".ns-lib-trend button")
        page.locator(".ns-lib-trend button").first.click()
        wait_text(page, ".ns-lib-points", "OUT OF CONTROL")
        rows = text(page, ".ns-lib-points")
        assert rows.count("OUT OF CONTROL") == 1 and "QM-M7-B13" in rows and "Montgomery" in rows
        assert page.locator(".ns-lib-chart svg").count() >= 1
        page.locator(".ns-lib-find button").first.click()
        wait_text(page, ".ns-lib-matches", "compound(s) meet")
        assert "QM-M7-" in text(page, ".ns-lib-matches")
        assert errors == [], errors
    finally:
        ctx.close()
