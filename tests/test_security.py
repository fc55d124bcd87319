"""Issue #19: a server a lab can trust.  Every hostile input is BUILT IN THE TEST (names holding markup,
decompression bombs, oversized text, formula-leading cells, a second batch run, foreign hosts, wrong
passwords, hand-edited project files, absurd command-line values) and each test fails on the code before
the fix.

Sources: the HTML escaping rules are the WHATWG HTML standard's (a `<` in text starts a tag); the
formula-injection guard is the OWASP "CSV Injection" advice (cells starting with = + - @ tab CR);
DNS rebinding protection by a Host allowlist is common practice (RFC 7230 §5.4 defines Host); the
absolute zero of temperature (0 K) and SI prefixes are from scipy.constants.
"""

from __future__ import annotations

import io
import re
import subprocess
import sys
import zipfile
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.constants import R, zero_Celsius

ROOT = Path(__file__).resolve().parent.parent
HOSTILE = "<img src=x onerror=alert(1)>"
#: what a live tag looks like in markup; escaped text reads "&lt;img"
LIVE = re.compile(r"<img\b|<script\b|onerror=alert\(1\)>(?!&)", re.I)


def _live(text: str) -> bool:
    return "<img" in text.lower() or "<script" in text.lower()


def hostile_csv(name: str = HOSTILE, nu: float = 120.0) -> bytes:
    """Two specimens of an affine network, P = νRT(λ − λ⁻²) (Treloar 1975, ch. 4; R from scipy.constants),
    whose compound and specimen names hold markup."""
    T = zero_Celsius + 23
    lam = np.linspace(1.0, 2.5, 15)
    lines = [f"# compound: {name}", "# temperature: 23 °C", "specimen,stretch,stress (MPa)"]
    for k, scale in enumerate((1.0, 1.03)):
        P = scale * nu * R * T * (lam - lam**-2) / 1e6
        lines += [f"{name} {k},{a:.6f},{b:.8f}" for a, b in zip(lam, P, strict=True)]
    return ("\n".join(lines) + "\n").encode("utf-8")


# ----- 1. escaping at every sink --------------------------------------------------------------------------------
def test_hostile_names_are_text_in_every_view_and_the_report():
    pn = pytest.importorskip("panel")
    from app.main import create_app

    page = create_app(load_samples=False)
    dv, cmp = page.ns_data, page.ns_compare
    dv._on_upload(SimpleNamespace(new={f"{HOSTILE}.csv": hostile_csv()}))
    assert HOSTILE in cmp.state.data.compound_names(), "the hostile compound did not load"
    dv.fit.show_figures()
    cmp.show_specimens()
    cmp._run()
    # every HTML sink of the page: panes' markup, alerts/markdown (rendered as HTML), choosers whose labels
    # the browser renders as HTML (the multi-choice widget)
    for pane in page.select(lambda o: isinstance(o, (pn.pane.HTML, pn.pane.Markdown, pn.pane.Alert))):
        text = str(pane.object or "")
        assert not _live(text), f"{type(pane).__name__} {pane.css_classes}: {text[:300]}"
    for w in page.select(pn.widgets.MultiChoice):
        labels = list(w.options) if isinstance(w.options, dict) else [str(o) for o in w.options]
        assert not any(_live(lbl) for lbl in labels), f"multi-choice labels are markup: {labels}"
        assert HOSTILE in (list(w.options.values()) if isinstance(w.options, dict) else w.options) or \
            "ns-cmp-chosen" not in w.css_classes  # the value stays the name itself
    rep = cmp.state.report()
    report_html = rep.to_html()
    assert HOSTILE.replace("<", "&lt;").replace(">", "&gt;") in report_html  # the name is there, as text
    assert not _live(report_html)
    # the login page's error text (from the URL) is escaped by its template
    import jinja2

    from app.server import LOGIN_TEMPLATE

    out = jinja2.Environment().from_string(LOGIN_TEMPLATE.read_text("utf-8")).render(
        login_endpoint="/login", errormessage=HOSTILE)
    assert not _live(out) and "&lt;img" in out
