"""Browser test of the Library tab: a server started with a results library configured ($NETSTRETCH_LIBRARY)
holding the invented QC history; the tab draws the trend with the faulty batch flagged and finds compounds.
Skipped where no Chromium exists; mandatory in CI (NETSTRETCH_REQUIRE_BROWSER=1)."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from _browser import netstretch_server, open_tab, text, wait_text

pytestmark = pytest.mark.ui

ROOT = Path(__file__).resolve().parent.parent


@pytest.fixture(scope="module")
def library_server(tmp_path_factory):
    pytest.importorskip("sqlalchemy")
    from network_models.library import import_study

    folder = tmp_path_factory.mktemp("library")
    db = folder / "lab.sqlite"
    import_study("manifest", ROOT / "sample_sets" / "qc_history" / "qc_history.toml", str(db))
    with netstretch_server(folder / "server.log", env=dict(os.environ, NETSTRETCH_LIBRARY=str(db))) as url:
        yield url


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
