"""Helpers of the browser tests (``test_ui*.py``): read text through shadow roots, wait for it, open a tab.

Panel and Bokeh render every component in its own shadow DOM, so Playwright's ``inner_text`` misses most of
the page; :data:`DEEP_TEXT_JS` walks the shadow roots instead.
"""

from __future__ import annotations

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
