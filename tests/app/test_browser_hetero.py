"""Browser test of a heterojunction source, as a user works it: pick a source material,
type the interface position into its entry box, and see the band diagram mark the
interface with its offsets (from `physics.heterointerface_offsets`, itself checked against
the VMR 2001 table in tests/physics/test_heterojunction.py) and the header name it.
"""

from __future__ import annotations

import pytest
from playwright.sync_api import expect

from sub60.physics import Design, heterointerface_offsets
from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

TIMEOUT_MS = 240_000
LABEL = "() => { const m = sub60.model('heterointerface_label'); return [m.visible, m.text]; }"
LINE = "() => { const m = sub60.model('heterointerface_line'); return [m.visible, m.location]; }"


def test_source_material_and_interface_typed_mark_the_band_diagram(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        page.get_by_text("Material and temperature").click()
        entry = page.locator(".ctl-heterointerface_nm input")
        expect(entry).to_be_disabled(timeout=TIMEOUT_MS)  # a homojunction: no interface
        assert page.evaluate(LABEL)[0] is False
        page.locator(".ctl-source_material select").select_option(label="GaSb")
        expect(entry).to_be_enabled(timeout=TIMEOUT_MS)
        entry.click()
        entry.press("Control+a")
        entry.type("-2")
        entry.press("Enter")
        page.wait_for_function(
            "() => { const q = new URLSearchParams(location.search); "
            "return q.get('src_material') === 'GaSb' && q.get('hj_nm') === '-2'; }",
            timeout=TIMEOUT_MS)
        off = heterointerface_offsets(Design(source_material="GaSb", heterointerface_nm=-2.0))
        page.wait_for_function(f"() => ({LINE})()[0] && ({LINE})()[1] === {off.position_nm}",
                               timeout=TIMEOUT_MS)
        visible, text = page.evaluate(LABEL)
        assert visible and text.startswith("GaSb → InAs"), text
        assert f"ΔEc {off.conduction_step_eV:+.2f} eV" in text and "broken gap" in text, text
        assert "p+ GaSb source" in page.evaluate("() => sub60.byClass('sub60-header').text")
        # back to the body's material: the marker goes away
        page.locator(".ctl-source_material select").select_option(
            label="Same as the body (homojunction)")
        expect(entry).to_be_disabled(timeout=TIMEOUT_MS)
        page.wait_for_function(f"() => !({LINE})()[0]", timeout=TIMEOUT_MS)
        assert not errors, errors
    finally:
        page.close()
