"""Browser test of the smaller page defects, typed as a user does: a design message in
the words of the controls (no internal field names) that goes when fixed; a gate-sweep
first voltage above the last refused with a message naming "Gate sweep" while the box
shows the kept value (it was silently rewritten to the last voltage); the demo-design
note gone after a change by hand; the 2D map titled as the bulk band edge. The reference
is the README's promise of a message naming the field and its range (common practice,
no source)."""

from __future__ import annotations

import pytest

from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

TIMEOUT_MS = 120_000
ALERT = "() => { const a = sub60.byClass('sub60-error'); return a.visible ? a.text : ''; }"


def _type(page, css: str, text: str, nth: int = 0) -> None:
    entry = page.locator(css).nth(nth)
    entry.click()
    entry.press("Control+a")
    entry.type(text)
    entry.press("Enter")


def test_small_page_defects(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        title = page.evaluate("() => sub60.model('map_plot').title.text")
        assert title.startswith("Bulk Ec ") and "no confinement" in title

        # the gate sweep: a first voltage above the last is refused, with a message
        _type(page, ".ctl-vg_sweep_V input", "0.7", 0)
        page.wait_for_function(f"() => ({ALERT})().includes('Gate sweep')", timeout=TIMEOUT_MS)
        assert "0.7" in page.evaluate(ALERT)
        assert page.locator(".ctl-vg_sweep_V input").nth(0).input_value() == "-0.4"
        # a good first voltage is taken at once and the message goes
        _type(page, ".ctl-vg_sweep_V input", "-0.3", 0)
        page.wait_for_function(f"() => ({ALERT})() === '' && "
                               "sub60.data('transfer_tfet_source').vg[0] === -0.3",
                               timeout=TIMEOUT_MS)

        # a design message in the words of the controls
        _type(page, ".ctl-source_length_nm input", "5")
        page.wait_for_function("() => sub60.data('map_source').dw[0] < 60", timeout=TIMEOUT_MS)
        _type(page, ".ctl-gate_source_offset_nm input", "8")
        page.wait_for_function(f"() => ({ALERT})().includes('must be at least 1 nm')",
                               timeout=TIMEOUT_MS)
        text = page.evaluate(ALERT).replace("&#95;", "_")
        assert "source length − gate–source overlap" in text, text
        assert "_nm" not in text, text
        _type(page, ".ctl-gate_source_offset_nm input", "0")
        page.wait_for_function(f"() => ({ALERT})() === ''", timeout=TIMEOUT_MS)

        # a demo design's note goes once the design is changed by hand
        page.locator(".ctl-preset select").select_option(index=1)
        report = page.locator(".snapshot-report")
        report.get_by_text("Demo design").wait_for(timeout=TIMEOUT_MS)
        _type(page, ".ctl-vg_V input", "0.25")
        report.get_by_text("Demo design").wait_for(state="hidden", timeout=TIMEOUT_MS)
        assert not errors, errors
    finally:
        page.close()
