"""Browser tests: the app in the system Chromium (headless), driven by Playwright's Python API.

Fixtures in conftest.py start one app server per test session and give each test its own browser context
(= its own app session).  Skipped where no Chromium exists; mandatory in CI (NETSTRETCH_REQUIRE_BROWSER=1).
"""

from __future__ import annotations

from pathlib import Path
from urllib.parse import urlparse

import pytest
from _browser import DEEP_TEXT_JS, open_tab, text, wait_text
from scipy.constants import R

pytestmark = pytest.mark.ui

SAMPLES = Path(__file__).resolve().parent.parent / "sample_sets"
LOCAL_HOSTS = {"localhost", "127.0.0.1", "::1", ""}

STRESS_AT = """(i) => { const s = Bokeh.documents[0].get_model_by_name('ns-stress-uniaxial');
                        return [s.data['lam'][i], s.data['affine'][i]]; }"""


#: select point k of the strand-density specimen plot in the browser, as a tap does; returns its specimen key
TAP_SPECIMEN = """(k) => {
  for (const m of Bokeh.documents[0].all_models) {
    const d = m.data;
    if (d && d.key && d.nu && m.selected) { m.selected.indices = [k]; return d.key[k]; }
  }
  return null; }"""


def open_data_tab(page):
    open_tab(page, "Test data", ".ns-upload input[type=file]")
    page.wait_for_function(f"() => ({DEEP_TEXT_JS})('.ns-fit-summary').includes('Fitted to')", timeout=30000)


def test_page_loads_offline_without_console_errors(app_page):
    page = app_page
    page.wait_for_timeout(500)
    hosts = {urlparse(u).hostname or "" for u in page.ns_requests if not u.startswith(("data:", "blob:"))}
    assert hosts <= LOCAL_HOSTS, f"requests left this machine: {sorted(hosts - LOCAL_HOSTS)}"
    assert page.ns_errors == [], f"console errors: {page.ns_errors}"
    # the caution is on the page (design brief), and no traceback anywhere
    body = text(page, "body")
    assert "do not replace validation testing" in body
    assert "Traceback" not in body


def test_strand_density_input_changes_plotted_stress(app_page):
    page = app_page
    lam0, p0 = page.evaluate(STRESS_AT, 100)
    box = page.locator(".ns-nu-input input").first
    box.fill("300")
    box.press("Enter")
    page.wait_for_function(f"() => ({STRESS_AT})(100)[1] !== {p0!r}", timeout=15000)
    lam1, p1 = page.evaluate(STRESS_AT, 100)
    assert lam1 == pytest.approx(lam0)
    # Affine (Kuhn–Wall–Flory) network in uniaxial tension: P = νRT(λ − λ⁻²) (Treloar, The Physics of
    # Rubber Elasticity, 3rd ed. 1975, ch. 4 [memory]); R from scipy.constants; default T = 23 °C.
    # Under the one G_e policy (network_models.entanglement) the entanglement part, on by default, adds the
    # plateau modulus ∝ T (polymer table) to every model's modulus, the affine one included.
    from network_models import get_polymer

    nr = get_polymer("NR")
    expected = (300.0 * R * 296.15 + nr.plateau_modulus * 296.15 / nr.plateau_temperature) * (lam1 - lam1**-2) / 1e6
    assert p1 == pytest.approx(expected, rel=1e-9)
    # the readout beside the control shows junction density μ_j = 2ν/f = 150 mol/m³ at f = 4 (definition)
    wait_text(page, ".ns-readout", "150 mol/m³")


def test_upload_shows_fit_and_crosslink_density(app_page):
    page = app_page
    open_data_tab(page)
    page.locator(".ns-upload input[type=file]").first.set_input_files(str(SAMPLES / "QM-S3_uniaxial_psi.txt"))
    wait_text(page, ".ns-fit-summary", "QM-S3_uniaxial_psi")
    summary = text(page, ".ns-fit-summary")
    assert "QM-S2" not in summary, "the upload should be fitted on its own"
    xl = text(page, ".ns-crosslinks")
    assert "strand density ν" in xl and "junction density" in xl
    assert "—" not in xl.split("assumes")[1].split("affine")[1][:40]  # first row has numbers
    assert "nan" not in xl.lower()


def test_garbage_upload_gives_message_and_keeps_data(app_page):
    page = app_page
    open_data_tab(page)
    before = text(page, ".ns-fit-summary")
    page.locator(".ns-upload input[type=file]").first.set_input_files(
        files=[{"name": "garbage.csv", "mimeType": "text/csv", "buffer": b"\x00\x01\x02\xff not a table\n;;\n"}])
    wait_text(page, ".ns-messages", "garbage.csv")
    msg = text(page, ".ns-messages")
    assert "Traceback" not in msg and "Error" not in msg.split("garbage.csv")[0]
    assert text(page, ".ns-fit-summary") == before
    # the app keeps working afterwards: the explorer still answers
    open_tab(page, "Force", ".ns-nu-input input")
    box = page.locator(".ns-nu-input input").first
    box.fill("200")
    box.press("Enter")
    wait_text(page, ".ns-readout", "100 mol/m³")  # μ_j = 2ν/f at f = 4


def test_hidden_tabs_build_on_first_view_and_compare_links_specimens(app_page):
    """The Mooney, moduli and Compare tabs are built when first opened; on Compare, choosing a specimen in
    the list selects it in the linked specimen plots (its line names it) without a console error."""
    page = app_page
    open_tab(page, "Mooney", ".ns-mooney-plot canvas")
    open_tab(page, "Moduli", ".ns-lock-table")
    open_tab(page, "Compare", ".ns-cmp-specimens")
    # the specimen card is placed collapsed (its plots are drawn when it is first opened): open it
    page.locator(".ns-cmp-specimens .card-header").first.click()
    page.locator(".ns-spec-pick select").first.wait_for(state="attached", timeout=30000)
    page.locator(".ns-spec-plots canvas").first.wait_for(state="attached", timeout=30000)
    sel = page.locator(".ns-spec-pick select").first
    options = sel.locator("option").all_inner_texts()
    assert len(options) > 3 and all(" · " in o for o in options)  # "compound · specimen"
    sel.select_option(label=options[3])
    wait_text(page, ".ns-spec-info", options[3])
    # a click on a point selects it in its plot's data source (as Bokeh's tap tool does): the server then
    # selects that specimen in every plot and in the list
    tapped = page.evaluate(TAP_SPECIMEN, 7)
    assert tapped in options and tapped != options[3]
    wait_text(page, ".ns-spec-info", tapped)
    assert sel.input_value() == tapped
    assert page.ns_errors == [], f"console errors: {page.ns_errors}"


def test_two_sessions_do_not_share_uploads(chromium_browser, app_server):
    ctxs = [chromium_browser.new_context(viewport={"width": 1366, "height": 768}) for _ in range(2)]
    try:
        pages = [c.new_page() for c in ctxs]
        for p in pages:
            p.goto(app_server)
            p.wait_for_selector(".ns-stress-plot canvas", timeout=60000)
            open_data_tab(p)
        a, b = pages
        a.locator(".ns-upload input[type=file]").first.set_input_files(str(SAMPLES / "QM-S1_uniaxial.csv"))
        wait_text(a, ".ns-fit-summary", "QM-S1_uniaxial (2).csv")
        b.wait_for_timeout(500)
        assert "QM-S1_uniaxial (2).csv" not in text(b, ".ns-files")
        assert "QM-S1_uniaxial (2).csv" in text(a, ".ns-files")
    finally:
        for c in ctxs:
            c.close()
