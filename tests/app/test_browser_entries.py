"""Browser tests of typed entries: values typed into a control's box and confirmed with
Enter, as a user does, reach the plots and the page address, or are refused with a message
naming the control and its allowed range while the plots keep the last valid result.

The allowed ranges are the design's own field ranges (`physics.FIELD_RANGES`,
`VG_RANGE_V`, `VD_RANGE_V`) and the state's bounds; the expected band diagram is the
physics package called directly (as in ``test_browser.py``).
"""

from __future__ import annotations

import re

import pytest
from playwright.sync_api import expect

from sub60.physics import FIELD_RANGES, VD_RANGE_V, VG_RANGE_V
from tests.app.conftest import ERROR_TEXT, open_app, type_into, url_query

pytestmark = pytest.mark.browser



def _range(field: str) -> tuple[float, float]:
    return float(FIELD_RANGES[field].low), float(FIELD_RANGES[field].high)


def _fill(page, name: str, text: str) -> None:
    """Put text into a box at once, as a paste or the browser's autofill does (no key-up
    inside the box before Enter), then confirm with Enter."""
    entry = page.locator(f".ctl-{name} input")
    entry.fill(text)
    entry.press("Enter")


def test_typed_zero_as_first_edit_reaches_plots_and_link(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        _fill(page, "vg_V", "0")
        page.wait_for_function("() => sub60.data('vg_marker_source').vg[0] === 0",
                               timeout=30_000)
        page.wait_for_function("() => new URLSearchParams(location.search).get('vg') === '0'",
                               timeout=10_000)
        _fill(page, "vd_V", "0")
        # the drain Fermi level is -Vd [eV]
        page.wait_for_function("() => Math.abs(sub60.data('fermi_source').y[1]) < 1e-12",
                               timeout=30_000)
        page.wait_for_function("() => new URLSearchParams(location.search).get('vd') === '0'",
                               timeout=10_000)
        assert not errors, errors
    finally:
        page.close()


@pytest.mark.parametrize(("name", "text", "label", "low", "high"), [
    ("body_thickness_nm", "50", "Body thickness (nm)", *_range("body_thickness_nm")),
    ("gate_length_nm", "3", "Gate length (nm)", *_range("gate_length_nm")),
    ("vg_V", "2.5", "Gate voltage (V)", *VG_RANGE_V),
    ("vd_V", "-1", "Drain voltage (V)", *VD_RANGE_V),
    ("vdd_V", "0", "Supply Vdd for Ion (V)", 0.05, 1.0),
])
def test_out_of_range_typed_value_is_refused_with_a_message(browser, app_url, name, text,
                                                             label, low, high):
    page, _, errors = open_app(browser, app_url)
    try:
        band_before = page.evaluate("() => sub60.data('band_source')")
        query_before = url_query(page)
        box_before = page.locator(f".ctl-{name} input").input_value()
        type_into(page, f"ctl-{name}", text)
        page.wait_for_function(f"() => ({ERROR_TEXT})().includes('not allowed')",
                               timeout=20_000)
        message = page.evaluate(ERROR_TEXT)
        assert label in message, message
        assert re.search(rf"from {low:g} to {high:g}", message), message
        # the box shows the kept value, the plots and the link did not change
        expect(page.locator(f".ctl-{name} input")).to_have_value(box_before, timeout=10_000)
        assert page.evaluate("() => sub60.data('band_source')") == band_before
        assert url_query(page) == query_before
        # a valid value afterwards takes the message away
        type_into(page, f"ctl-{name}", box_before)
        page.wait_for_function(f"() => ({ERROR_TEXT})() === ''", timeout=20_000)
        assert not errors, errors
    finally:
        page.close()


def test_gate_voltage_by_arrow_keys_has_no_float_noise(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        handle = page.locator(".ctl-vg_V .noUi-handle")
        handle.focus()
        for _ in range(36):  # 0.3 V + 36 steps of 0.01 V: 0.6599999999999997 in floats
            handle.press("ArrowRight")
        page.wait_for_function("() => Math.abs(sub60.data('vg_marker_source').vg[0] - 0.66)"
                               " < 1e-9", timeout=30_000)
        expect(page.locator(".ctl-vg_V input")).to_have_value(re.compile(r"0\.6\d*"),
                                                              timeout=10_000)
        box = page.locator(".ctl-vg_V input").input_value()
        assert re.fullmatch(r"-?\d+(\.\d{1,2})?", box), box  # a multiple of the 0.01 V step
        assert re.fullmatch(r"-?\d+(\.\d{1,2})?", url_query(page)["vg"]), url_query(page)
        assert not errors, errors
    finally:
        page.close()
