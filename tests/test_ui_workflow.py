"""Browser tests of the connected workflow (system Chromium, headless): one data store across tabs, stale
marks and what a download carries, save → reopen a project, and messages that stay next to their button.

Fixtures (server, browser) are in conftest.py; the text and tab helpers in _browser.py.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest
from _browser import DEEP_TEXT_JS as JS
from _browser import open_tab, text, wait_text
from scipy.constants import R

pytestmark = pytest.mark.ui

def gauss_csv(nu: float) -> bytes:
    # affine network P = νRT(λ − λ⁻²) at 23 °C (Treloar 1975, ch. 4); R from scipy.constants (CODATA)
    lam = np.linspace(1.0, 3.0, 21)
    P = nu * R * 296.15 * (lam - lam**-2) / 1e6
    return ("# temperature: 23 °C\nstretch,stress (MPa)\n"
            + "\n".join(f"{a:.6f},{b:.8f}" for a, b in zip(lam, P, strict=True))).encode()


def upload_trial(page, name="TRIAL-7_uniaxial.csv", nu=130.0):
    open_tab(page, "Test data", ".ns-upload input[type=file]")
    page.locator(".ns-upload input[type=file]").first.set_input_files(
        files=[{"name": name, "mimeType": "text/csv", "buffer": gauss_csv(nu)}])
    wait_text(page, ".ns-fit-summary", name)


def g0_values(summary: str) -> list[str]:
    return re.findall(r"G₀ = ([0-9.]+) MPa", summary)


def test_a_file_uploaded_in_the_data_view_appears_in_compare(app_page):
    page = app_page
    upload_trial(page)
    wait_text(page, ".ns-messages-files", "available in Compare")
    open_tab(page, "Compare", ".ns-cmp-run")
    wait_text(page, ".ns-cmp-compounds", "TRIAL-7")
    assert "TRIAL-7_uniaxial.csv" in text(page, ".ns-cmp-compounds")
    assert "TRIAL-7" in text(page, ".ns-cmp-chosen")


def test_service_temperature_marks_the_summary_stale_until_recomputed(app_page):
    page = app_page
    open_tab(page, "Compare", ".ns-cmp-run")
    wait_text(page, ".ns-cmp-summary", "Summary")
    box = page.locator(".ns-cmp-service input").first
    box.fill("100")
    box.press("Enter")
    wait_text(page, ".ns-cmp-stale", "out of date")
    assert page.locator(".ns-cmp-dl-json button").first.is_disabled()
    assert "out of date" in text(page, ".ns-cmp-dl-html").lower()
    page.locator(".ns-cmp-run button").first.click()
    page.wait_for_function(f"() => !({JS})('.ns-cmp-stale').includes('out of date')", timeout=90000)
    page.locator(".ns-cmp-dl-json button").first.wait_for(state="visible")
    with page.expect_download(timeout=60000) as dl:
        page.locator(".ns-cmp-dl-json button").first.click()
    doc = json.loads(Path(dl.value.path()).read_text("utf-8"))
    assert doc["service_temperature_K"] == pytest.approx(100.0 + 273.15)


def test_save_and_reopen_a_project_gives_the_same_numbers(app_page, chromium_browser, app_server, tmp_path):
    page = app_page
    upload_trial(page, "TRIAL-8_uniaxial.csv", 170.0)
    before = g0_values(text(page, ".ns-fit-summary"))
    assert before
    with page.expect_download(timeout=60000) as dl:
        page.locator(".ns-project-save button").first.click()
    path = tmp_path / "saved.nsproj.zip"
    dl.value.save_as(str(path))
    ctx = chromium_browser.new_context(viewport={"width": 1366, "height": 768})
    try:
        other = ctx.new_page()
        other.goto(app_server)
        other.wait_for_selector(".ns-stress-plot canvas", timeout=60000)
        other.locator(".ns-project-open input[type=file]").first.set_input_files(str(path))
        wait_text(other, ".ns-messages-project", "Opened")
        open_tab(other, "Test data", ".ns-upload input[type=file]")
        wait_text(other, ".ns-fit-summary", "TRIAL-8_uniaxial.csv")
        assert g0_values(text(other, ".ns-fit-summary")) == before
    finally:
        ctx.close()


def test_a_message_posted_by_a_button_stays_next_to_it(app_page):
    page = app_page
    open_tab(page, "Test data", ".ns-upload input[type=file]")
    wait_text(page, ".ns-fit-summary", "Fitted to")
    button = page.locator(".ns-to-explorer button").first
    button.scroll_into_view_if_needed()
    button.click()
    wait_text(page, ".ns-messages-fit-actions", "explorer now draws")
    page.wait_for_timeout(1500)  # still there after the callback returned
    assert "explorer now draws" in text(page, ".ns-messages-fit-actions")
    msg = page.locator(".ns-messages-fit-actions").first.bounding_box()
    btn = button.bounding_box()
    assert msg is not None and btn is not None
    assert 0 <= msg["y"] - btn["y"] < 200  # right under the button, not at the top of the page


def test_a_raw_export_without_geometry_asks_for_it_once_and_then_fits(app_page):
    # the invented German raw export (force first, decimal commas; sample_sets/make_raw_exports.py, made with a
    # neo-Hookean G = 0.48 MPa) with its gauge length, width and thickness lines taken out: the page asks for
    # exactly those three, reads the file with the typed values, and the fit gives back the modulus.
    # Neo-Hookean small-strain modulus = G (Treloar 1975, ch. 4); tolerance = the export's own noise (1 %).
    page = app_page
    raw = (Path(__file__).resolve().parent.parent / "sample_sets" / "raw_exports" / "QM-R7_zugversuch_de.csv")
    keep = [ln for ln in raw.read_bytes().split(b"\n") if not ln.startswith((b"Messl", b"Breite", b"Dicke"))]
    open_tab(page, "Test data", ".ns-upload input[type=file]")
    page.locator(".ns-upload input[type=file]").first.set_input_files(
        files=[{"name": "QM-R7_ohne_Masse.csv", "mimeType": "text/csv", "buffer": b"\n".join(keep)}])
    for item, value in (("gauge_length", "20"), ("width", "4"), ("thickness", "2")):
        box = page.locator(f".ns-missing-{item} input").first
        box.wait_for(state="visible", timeout=45000)
        box.fill(value)
        box.press("Enter")
    page.locator(".ns-missing-read button").first.click()
    wait_text(page, ".ns-fit-summary", "QM-R7_ohne_Masse.csv")
    summary = text(page, ".ns-fit-summary")
    assert "Fitted to: QM-R7_ohne_Masse.csv (" in summary  # the upload alone, not the sample compounds
    g0 = [float(v) for v in g0_values(summary)]
    assert g0 and all(v == pytest.approx(0.48, rel=0.02) for v in g0), g0
