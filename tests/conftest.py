"""Shared fixtures.  Browser fixtures (marker ``ui``): the system Chromium driven by Playwright's Python API
and one app server per test session on a free local port.

Chromium is found from env ``NETSTRETCH_CHROMIUM`` or ``chromium`` on PATH; never downloaded.  Where it is
missing the browser tests skip with a reason — unless ``NETSTRETCH_REQUIRE_BROWSER=1`` (CI), which makes
that a failure.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path

import pytest
from hypothesis import settings

ROOT = Path(__file__).resolve().parent.parent

# CI runs the property tests on a fixed sequence of examples (reproducible, no timing deadline on a shared
# machine); a developer's run draws new examples each time and may find new cases — add those as @example.
settings.register_profile("ci", derandomize=True, deadline=None)

# the readers' last line of defence (labfiles.api.guarded) turns any exception into a DataError for the user;
# under the tests a programming error (IndexError, TypeError …) is re-raised so the fuzz tests catch a crash
os.environ["NETSTRETCH_STRICT_READERS"] = "1"
if os.environ.get("CI"):
    settings.load_profile("ci")

CHROMIUM_ARGS = [
    "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
    "--disable-sync", "--no-first-run", "--disable-quic",
]

from _browser import DEEP_TEXT_JS, netstretch_server  # noqa: E402  (the one copy; browser helpers live there)


def _require_browser() -> bool:
    return os.environ.get("NETSTRETCH_REQUIRE_BROWSER", "") == "1"


def _chromium_path() -> str | None:
    p = os.environ.get("NETSTRETCH_CHROMIUM") or shutil.which("chromium") or shutil.which("chromium-browser")
    return p if p and Path(p).exists() else None


@pytest.fixture(scope="session")
def chromium_path() -> str:
    """The system Chromium's path (skips where none exists; a failure under NETSTRETCH_REQUIRE_BROWSER=1)."""
    path = _chromium_path()
    if path is None:
        msg = "no Chromium found (set NETSTRETCH_CHROMIUM or install the 'chromium' package)"
        if _require_browser():
            pytest.fail(msg + " — NETSTRETCH_REQUIRE_BROWSER=1 makes this a failure")
        pytest.skip(msg)
    return path


@pytest.fixture(scope="session")
def chromium_browser():
    """A headless system Chromium (Playwright sync API), shared by the session's browser tests."""
    path = _chromium_path()
    if path is None:
        msg = ("no Chromium found (set NETSTRETCH_CHROMIUM or install the 'chromium' package); "
               "browser tests need the system Chromium")
        if _require_browser():
            pytest.fail(msg + " — NETSTRETCH_REQUIRE_BROWSER=1 makes this a failure")
        pytest.skip(msg)
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        if _require_browser():
            pytest.fail("the playwright Python package is missing (pip install -e '.[dev]')")
        pytest.skip("the playwright Python package is missing (pip install -e '.[dev]')")
    pw = sync_playwright().start()
    try:
        browser = pw.chromium.launch(executable_path=path, args=CHROMIUM_ARGS, headless=True)
    except Exception as exc:
        pw.stop()
        if _require_browser():
            pytest.fail(f"Chromium at {path} did not start: {exc}")
        pytest.skip(f"Chromium at {path} did not start: {exc}")
    yield browser
    browser.close()
    pw.stop()


@pytest.fixture(scope="session")
def app_server():
    """``netstretch serve`` in a subprocess on a free port; yields the base URL."""
    with netstretch_server(Path(tempfile.gettempdir()) / "netstretch_app_server.log") as url:
        yield url


@pytest.fixture(scope="session")
def deep_text_js() -> str:
    """The DEEP_TEXT_JS snippet (for ``page.evaluate(deep_text_js, selector)``)."""
    return DEEP_TEXT_JS


@pytest.fixture
def app_page(chromium_browser, app_server):
    """A fresh browser context (its own session) on the app at 1366×768, with requests and console
    errors recorded in ``page.ns_requests`` / ``page.ns_errors``."""
    ctx = chromium_browser.new_context(viewport={"width": 1366, "height": 768})
    page = ctx.new_page()
    page.ns_requests = []
    page.ns_errors = []
    page.on("request", lambda r: page.ns_requests.append(r.url))
    page.on("console", lambda m: page.ns_errors.append(m.text) if m.type == "error" else None)
    page.on("pageerror", lambda e: page.ns_errors.append(str(e)))
    page.goto(app_server)
    page.wait_for_selector(".ns-stress-plot canvas", timeout=60000)
    yield page
    ctx.close()
