"""Browser test: the model's validity warnings (`physics.design_warnings` and the bias
point's own, e.g. strong band bending across the body) reach the page as a visible note,
and follow the design. The expected warnings are
those the physics package gives for the same design and bias, called directly."""

from __future__ import annotations

import pytest

from sub60.physics import Design, Simulator, design_warnings
from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

NOTES = ("() => { const n = sub60.byClass('validity-notes');"
         " return n ? n.text : ''; }")


def test_validity_warnings_are_shown_and_cleared(browser, app_url):
    # a drain doped so heavily that the parabolic DOS puts E_F deep in the band
    assert design_warnings(Design(drain_doping_cm3=1e19)), "the reference gives no warning"
    page, _, errors = open_app(browser, app_url + "?drain_cm3=1e19")
    try:
        page.wait_for_function(f"() => ({NOTES})().includes('overstated')", timeout=30_000)
        text = page.evaluate(NOTES)
        assert "Drain doping" in text and "drain_doping_cm3" not in text, text
        assert page.locator(".validity-notes").first.is_visible()
        # a thick body bends the bands across it more than the subband spacing
        assert Simulator().solve_bias(Design(body_thickness_nm=20), 0.3, 0.3).warnings
        entry = page.locator(".ctl-body_thickness_nm input")
        entry.click()
        entry.press("Control+a")
        entry.type("20")
        entry.press("Enter")
        page.wait_for_function(f"() => ({NOTES})().includes('band edge varies')",
                               timeout=30_000)
        # back to a 7 nm body: the bending note goes, the doping note stays
        entry.click()
        entry.press("Control+a")
        entry.type("7")
        entry.press("Enter")
        page.wait_for_function(f"() => !({NOTES})().includes('band edge varies') && "
                               f"({NOTES})().includes('overstated')", timeout=30_000)
        assert errors == [], errors
    finally:
        page.close()
