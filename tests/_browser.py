"""Helpers of the browser tests (``test_ui*.py``): read text through shadow roots, wait for it, open a tab.

Panel and Bokeh render every component in its own shadow DOM, so Playwright's ``inner_text`` misses most of
the page; :data:`DEEP_TEXT_JS` walks the shadow roots instead.
"""

from __future__ import annotations

import contextlib
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]

#: JavaScript: the visible text of every element matching a CSS selector, looking inside shadow roots
#: (Panel/Bokeh render each component in its own shadow DOM); style/script text is left out.
DEEP_TEXT_JS = """(sel) => {
  const out = [];
  const find = (n) => { if (n.matches && n.matches(sel)) out.push(n);
    if (n.shadowRoot) find(n.shadowRoot); for (const c of n.children || []) find(c); };
  find(document.body);
  const text = (n) => { if (n.nodeType === 3) return n.textContent;
    if (n.nodeType !== 1 && n.nodeType !== 11) return '';
    if (n.nodeType === 1 && ['STYLE', 'SCRIPT', 'LINK'].includes(n.tagName)) return '';
    let t = ''; if (n.shadowRoot) t += text(n.shadowRoot);
    for (const c of n.childNodes) t += text(c);
    return t + ' '; };
  return out.map(text).join(' | ').replace(/\\s+/g, ' ');
}"""


def text(page, selector: str) -> str:
    """The visible text of every element matching ``selector`` (shadow roots included), joined by ' | '."""
    return page.evaluate(DEEP_TEXT_JS, selector)


def wait_text(page, selector: str, needle: str, timeout=45000):
    page.wait_for_function(f"([sel, n]) => ({DEEP_TEXT_JS})(sel).includes(n)", arg=[selector, needle],
                           timeout=timeout)


def open_tab(page, label: str, ready: str):
    """Click a tab until its content (``ready`` selector) is there: a click sent while the page is still
    settling can be lost, so it is repeated."""
    for _ in range(10):
        page.locator(".bk-tab", has_text=label).first.click()
        try:
            page.locator(ready).first.wait_for(state="attached", timeout=4000)
            return
        except Exception:
            continue
    raise AssertionError(f"the tab {label!r} did not open")


@contextlib.contextmanager
def netstretch_server(log_path: Path, env: dict | None = None):
    """``netstretch serve`` in a subprocess on a free port (``env``: the server's environment, e.g. a results
    library); yields the base URL once a first page was built, and stops the server afterwards."""
    port = _free_port()
    log = log_path.open("w")  # the server's output, for when a browser test fails
    proc = subprocess.Popen(
        [sys.executable, "-m", "network_models.cli", "serve", "--port", str(port), "--address", "127.0.0.1"],
        cwd=ROOT, stdout=log, stderr=subprocess.STDOUT, env=env,
    )
    url = f"http://127.0.0.1:{port}/"
    try:
        deadline = time.monotonic() + 60
        while True:
            if proc.poll() is not None:
                pytest.fail(f"the app server exited with code {proc.returncode} before it answered")
            try:  # the port answers: the server is up (the first page build itself takes a few seconds)
                with socket.create_connection(("127.0.0.1", port), timeout=2):
                    break
            except OSError:
                pass
            if time.monotonic() > deadline:
                pytest.fail("the app server did not answer within 60 s")
            time.sleep(0.3)
        # warm-up: build one session so the tests' first page does not pay the imports
        with contextlib.suppress(OSError), urllib.request.urlopen(url, timeout=60):
            pass
        yield url
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
        log.close()
