"""Browser test of the Compare tab's downloads (system Chromium, headless): the files a user gets are named
after the study and are what they say they are.  (In its own file after test_report.py: that file starts its
own Playwright, which must run before the shared browser fixture exists.)"""

from __future__ import annotations

import pytest
from _browser import open_tab, wait_text

pytestmark = pytest.mark.ui


def test_browser_downloads_carry_the_study_name(app_page, tmp_path):
    page = app_page
    open_tab(page, "Compare", ".ns-cmp-run")
    wait_text(page, ".ns-cmp-summary", "Summary", timeout=60000)
    for kind in ("xlsx", "svg"):
        with page.expect_download(timeout=60000) as dl:
            page.locator(f".ns-cmp-dl-{kind} button, .ns-cmp-dl-{kind} a").first.click()
        name = dl.value.suggested_filename
        assert name.startswith("Quillmere-Elastomer-Works") and not name.startswith("review"), name
        path = tmp_path / name
        dl.value.save_as(path)
        head = path.read_bytes()[:2]
        assert head == b"PK"  # xlsx and zip are both zip containers (PKWARE APPNOTE: local file header)
    # the PDF (this server has Chromium: the browser fixtures need it), printed off the event loop
    with page.expect_download(timeout=120000) as dl:
        page.locator(".ns-cmp-dl-pdf button, .ns-cmp-dl-pdf a").first.click()
    assert dl.value.suggested_filename.endswith(".pdf")
    path = tmp_path / "study.pdf"
    dl.value.save_as(path)
    assert path.read_bytes()[:5] == b"%PDF-"  # ISO 32000-1 §7.5.2: a PDF file begins with %PDF-
