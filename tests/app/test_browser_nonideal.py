"""Browser test of the non-idealities card: a tail energy typed into its box, as a user
does, brings the ideal curve (dashed) beside the non-ideal one and the off-state current
by mechanism; an out-of-range value is refused with a message naming the control and the
design field's range (`physics.FIELD_RANGES`: 0-150 meV, the band-tail model's bounds).

The breakdown must add up to the total current at Voff (the definition of
`BiasPoint.current_by_mechanism_uA_per_um`; no outside source).
"""

from __future__ import annotations

import pytest

from sub60.physics import FIELD_RANGES
from tests.app.conftest import ERROR_TEXT, open_app, type_into

pytestmark = pytest.mark.browser

BREAKDOWN = "() => sub60.byClass('ni-breakdown-pane').text"
FIELD = "tail_energy_channel_meV"


def test_typed_tail_energy_shows_ideal_curve_and_breakdown(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        page.locator(".card-header", has_text="Non-idealities").first.click()
        page.locator(f".ctl-{FIELD} input").wait_for(state="visible", timeout=20_000)
        assert page.evaluate("() => sub60.data('transfer_ideal_source').vg.length") == 0
        type_into(page, f"ctl-{FIELD}", "10")
        page.wait_for_function("() => sub60.data('transfer_ideal_source').vg.length === 41",
                               timeout=240_000)
        page.wait_for_function(f"() => ({BREAKDOWN})().includes('band tails')",
                               timeout=240_000)
        assert page.evaluate("() => sub60.model('transfer_ideal').visible")
        dash = page.evaluate("() => JSON.stringify(sub60.model('transfer_ideal').glyph.line_dash)")
        assert "7" in dash and "4" in dash, dash  # dashed [7, 4]
        html = page.evaluate(BREAKDOWN)
        values = page.evaluate("""() => {
            const d = new DOMParser().parseFromString(
                (() => { const t = document.createElement('textarea');
                         t.innerHTML = sub60.byClass('ni-breakdown-pane').text;
                         return t.value; })(), 'text/html');
            return [...d.querySelectorAll('tr[data-mechanism]')].map(
                r => [r.dataset.mechanism, Number(r.dataset.value)]); }""")
        assert [k for k, _ in values] == ["band_to_band", "band_tails", "trap_assisted",
                                          "thermionic"], html
        assert dict(values)["band_tails"] > 0
        # the metrics strip gives the ideal device beside the non-ideal one
        page.wait_for_function("() => { const m = sub60.metrics(); return m && m.ideal && "
                               "m.ideal.ss_min_mV_per_dec !== null; }", timeout=120_000)
        m = page.evaluate("() => sub60.metrics()")
        assert m["ideal"]["ss_min_mV_per_dec"] < m["tfet"]["ss_min_mV_per_dec"]
        assert "tail_ch_meV=10" in page.url
        assert not errors, errors
    finally:
        page.close()


def test_out_of_range_tail_energy_is_refused_naming_the_field(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        page.locator(".card-header", has_text="Non-idealities").first.click()
        page.locator(f".ctl-{FIELD} input").wait_for(state="visible", timeout=20_000)
        type_into(page, f"ctl-{FIELD}", "200")
        page.wait_for_function(f"() => ({ERROR_TEXT})().includes('not allowed')",
                               timeout=20_000)
        message = page.evaluate(ERROR_TEXT)
        lo, hi = FIELD_RANGES[FIELD].low, FIELD_RANGES[FIELD].high
        assert "Channel band tail" in message and f"from {lo:g} to {hi:g}" in message, message
        assert page.evaluate("() => sub60.data('transfer_ideal_source').vg.length") == 0
        assert not errors, errors
    finally:
        page.close()
