"""Browser test of the Design tab's modulus → strand density card (system Chromium, headless): a designer
types a modulus, picks the polymer and reads the table, the below-entanglements sentence and, for a bad
value, a sentence beside the inputs — never a traceback."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from _browser import open_tab, text, wait_text
from scipy.constants import R

pytestmark = pytest.mark.ui

T23 = 296.15  # 23 °C in K


def _type(page, selector: str, value: str):
    box = page.locator(f"{selector} input").first
    box.fill(value)
    box.press("Enter")


def test_modulus_card_in_the_browser(app_page):
    from network_models.formatting import number

    page = app_page
    open_tab(page, "Design", ".ns-modulus-card")
    page.locator(".ns-mod-polymer select").first.select_option(value="NBR-33")
    _type(page, ".ns-mod-value", "0.62 MPa")
    wait_text(page, ".ns-mod-result", "Below the entanglement modulus")
    result = text(page, ".ns-mod-result")
    # affine, all of G: ν = G/(RT) (Treloar 1975, ch. 4), R from scipy.constants (CODATA)
    assert number(0.62e6 / (R * T23), 4) in result
    assert "cannot be separated" in result and "NBR-33" in result
    shot = Path(os.environ.get("NETSTRETCH_SCREENSHOT_DIR", "/tmp")) / "ns-modulus-card.png"
    page.locator(".ns-modulus-card").first.screenshot(path=str(shot))
    assert shot.stat().st_size > 1000
    # a value without a unit: a sentence beside the inputs, the page keeps working
    _type(page, ".ns-mod-value", "0.62")
    wait_text(page, ".ns-messages-modulus", "unit")
    assert "Traceback" not in text(page, ".ns-messages-modulus")
    # E of a stiffer compound: E = 3G, no below-entanglements sentence
    page.locator(".ns-mod-kind button", has_text="E").first.click()
    _type(page, ".ns-mod-value", "3 MPa")
    wait_text(page, ".ns-mod-result", number(3e6 / 3 / (R * T23), 4))
    assert "Below the entanglement modulus" not in text(page, ".ns-mod-result")
    assert not page.ns_errors, page.ns_errors
