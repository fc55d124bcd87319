"""Browser test (system Chromium, headless) of two #21 app items: the stretch-as-elongation toggle redraws the
file preview in % (e = (λ − 1)·100 %, the definition of engineering strain in %, common practice), and a
negative crosshead speed typed in the per-file test conditions gets a sentence beside the fields while the
typed text stays — never a traceback."""

from __future__ import annotations

import pytest
from _browser import open_tab, text, wait_text

pytestmark = pytest.mark.ui


def test_elongation_toggle_and_conditions_in_the_browser(app_page):
    page = app_page
    open_tab(page, "Test data", ".ns-upload input[type=file]")
    wait_text(page, ".ns-preview", "stretch λ")
    page.locator(".ns-stretch-unit button", has_text="elongation").first.click()
    wait_text(page, ".ns-preview", "elongation (%)")
    assert "stretch λ" not in text(page, ".ns-preview")
    # a preview's first point of a tensile file is λ = 1: 0.00 % elongation
    assert "0.00" in text(page, ".ns-preview")
    box = page.locator(".ns-cond-speed input").first
    box.fill("-5 mm/min")
    box.press("Enter")
    page.locator(".ns-cond-apply button").first.click()
    wait_text(page, ".ns-cond-msg", "positive number")
    assert box.input_value() == "-5 mm/min"  # nothing typed is lost
    assert "Traceback" not in text(page, ".ns-cond-msg")
    assert not page.ns_errors, page.ns_errors
