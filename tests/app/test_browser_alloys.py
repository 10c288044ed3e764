"""Browser test of an alloy body, as a user works it: pick an alloy family, type a
composition into the entry box, see the band diagram recompute and the material card
follow; a composition outside [0, 1] is refused with a message naming the control and
its range (the design field's range, `physics.FIELD_RANGES["composition_x"]`).

The expected band gap is the physics package's record (`Design.semiconductor`) at the
same composition, itself checked against VMR 2001 in tests/physics/test_alloys.py.
"""

from __future__ import annotations

import pytest
from playwright.sync_api import expect

from sub60.physics import Design
from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

TIMEOUT_MS = 240_000
ERROR_TEXT = "() => { const a = sub60.byClass('sub60-error'); return a.visible ? a.text : ''; }"
CARD_TEXT = "() => sub60.byClass('material-card').text"


def _type(page, text: str) -> None:
    entry = page.locator(".ctl-composition_x input")
    entry.click()
    entry.press("Control+a")
    entry.type(text)
    entry.press("Enter")


def test_alloy_composition_typed_recomputes_plots_and_card(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        page.get_by_text("Material and temperature").click()
        page.get_by_text("Body material data and sources").click()
        entry = page.locator(".ctl-composition_x input")
        expect(entry).to_be_disabled()  # InAs: no composition
        band_before = page.evaluate("() => sub60.data('band_source')")
        page.locator(".ctl-material select").select_option(label="InGaAs alloy: In(x)Ga(1−x)As")
        expect(entry).to_be_enabled(timeout=TIMEOUT_MS)
        expect(page.locator(".ctl-composition_x")).to_contain_text(
            "In fraction x of In(x)Ga(1−x)As")
        _type(page, "0.7")
        page.wait_for_function(
            "() => new URLSearchParams(location.search).get('x') === '0.7' && "
            "new URLSearchParams(location.search).get('material') === 'InGaAs'",
            timeout=TIMEOUT_MS)
        page.wait_for_function(f"() => ({CARD_TEXT})().includes('InGaAs (x = 0.7)')",
                               timeout=TIMEOUT_MS)
        gap = Design(material="InGaAs", composition_x=0.7).semiconductor.bandgap_eV(300.0)
        assert f"{gap:.4g}" in page.evaluate(CARD_TEXT)
        # the band diagram is that of the new body: its gap is wider than InAs's
        page.wait_for_function(
            "(before) => { const d = sub60.data('band_source'); "
            "return JSON.stringify(d) !== JSON.stringify(before); }",
            arg=band_before, timeout=TIMEOUT_MS)
        page.wait_for_function("() => sub60.curvesDone(41)", timeout=TIMEOUT_MS)
        assert "InGaAs (x = 0.7)" in page.evaluate("() => sub60.byClass('sub60-header').text")
        # a value outside [0, 1] is refused with the control's name and range
        _type(page, "1.3")
        page.wait_for_function(f"() => ({ERROR_TEXT})().includes('not allowed')",
                               timeout=TIMEOUT_MS)
        message = page.evaluate(ERROR_TEXT)
        assert "In fraction x of In(x)Ga(1−x)As" in message and "from 0 to 1" in message, message
        expect(entry).to_have_value("0.7", timeout=TIMEOUT_MS)
        assert "x=0.7" in page.url
        # back to a fixed material: x goes to 0 and the control is disabled again
        page.locator(".ctl-material select").select_option(label="Si")
        expect(entry).to_be_disabled(timeout=TIMEOUT_MS)
        expect(entry).to_have_value("0", timeout=TIMEOUT_MS)
        page.wait_for_function(f"() => ({CARD_TEXT})().includes('Thurmond')",  # Si's gap source
                               timeout=TIMEOUT_MS)
        assert not errors, errors
    finally:
        page.close()
