"""Browser tests of what a designer reaches for: number entries of the dopings and the
Ioff target, the transfer plot's linear axis, the copy-link button, the reference band
diagram, the Ion–Ioff trade-off and the pinned designs on the swing plot.

Allowed ranges are the design's own field ranges (`physics.FIELD_RANGES`) and the
state's bounds; expected values come from the physics package or the page address.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from playwright.sync_api import expect

from sub60.physics import FIELD_RANGES, VG_RANGE_V
from sub60.physics.design import Design
from sub60.physics.simulate import Simulator
from tests.app.conftest import ERROR_TEXT, open_app, open_cards, type_into, url_query

pytestmark = pytest.mark.browser



def test_doping_and_ioff_entries_take_typed_numbers(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        open_cards(page)
        # 4.2e19 is not on the slider's 0.05-decade steps (10**19.6 = 3.98e19, 10**19.65)
        type_into(page, "entry-source_doping_log10_cm3", "4.2e19")
        page.wait_for_function(
            "() => new URLSearchParams(location.search).get('src_cm3') === '4.2e19'",
            timeout=30_000)
        # the slider's value may come in a later update than the address: wait for it
        target = math.log10(4.2e19)
        page.wait_for_function(
            f"() => Math.abs(sub60.sliderOf('ctl-source_doping_log10_cm3').value - {target!r})"
            " < 1e-9", timeout=30_000)
        slider = page.evaluate("() => sub60.sliderOf('ctl-source_doping_log10_cm3').value")
        assert slider == pytest.approx(target, abs=1e-9)
        type_into(page, "entry-ioff_log10_uA_per_um", "2e-4")
        page.wait_for_function(
            "() => new URLSearchParams(location.search).get('ioff_uA_um') === '0.0002'",
            timeout=30_000)
        # the Ioff target line on the transfer plot follows (2e-4 uA/um)
        page.wait_for_function("() => sub60.doc()._all_models && [...sub60.doc()."
                               "_all_models.values()].some(m => m.type === 'Span' && "
                               "Math.abs(m.location - 2e-4) < 1e-12)", timeout=60_000)
        # a slider move shows in the box
        page.evaluate("() => { const s = sub60.sliderOf('ctl-drain_doping_log10_cm3');"
                      " s.value = 19; s.value_throttled = 19; }")
        expect(page.locator(".entry-drain_doping_log10_cm3 input")).to_have_value(
            "1e19", timeout=20_000)
        assert not errors, errors
    finally:
        page.close()


@pytest.mark.parametrize(("css", "text", "label", "low", "high"), [
    ("entry-source_doping_log10_cm3", "5e22", "Source doping (cm⁻³)",
     FIELD_RANGES["source_doping_cm3"].low, FIELD_RANGES["source_doping_cm3"].high),
    ("entry-ioff_log10_uA_per_um", "abc", "Ioff target (µA/µm)", 1e-8, 1.0),
])
def test_typed_doping_or_ioff_out_of_range_is_refused(browser, app_url, css, text, label,
                                                      low, high):
    page, _, errors = open_app(browser, app_url)
    try:
        open_cards(page)
        before = url_query(page)
        box_before = page.locator(f".{css} input").input_value()
        type_into(page, css, text)
        page.wait_for_function(f"() => ({ERROR_TEXT})().includes('not allowed')",
                               timeout=20_000)
        message = page.evaluate(ERROR_TEXT)
        assert label in message, message
        low_t = f"{low:g}".replace("e+", "e").replace("e-0", "e-").replace("e0", "e")
        high_t = f"{high:g}".replace("e+", "e").replace("e-0", "e-").replace("e0", "e")
        assert f"from {low_t} to {high_t}" in message, message
        expect(page.locator(f".{css} input")).to_have_value(box_before, timeout=10_000)
        assert url_query(page) == before
        type_into(page, css, box_before)  # a valid value takes the message away
        page.wait_for_function(f"() => ({ERROR_TEXT})() === ''", timeout=20_000)
        assert not errors, errors
    finally:
        page.close()


def test_transfer_current_axis_switches_to_linear_and_back(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        scale = "() => sub60.model('transfer_plot').y_scale.type"
        assert page.evaluate(scale) == "LogScale"
        page.locator(".transfer-axis button", has_text="linear current axis").click()
        # a linear axis starts at zero; the thermionic-limit slope (a line only on a log
        # axis) is hidden
        page.wait_for_function(f"() => ({scale})() === 'LinearScale' && "
                               "sub60.model('transfer_plot').y_range.start === 0 && "
                               "!sub60.model('limit_line').visible", timeout=20_000)
        page.locator(".transfer-axis button", has_text="log current axis").click()
        page.wait_for_function(f"() => ({scale})() === 'LogScale' && "
                               "sub60.model('transfer_plot').y_range.start > 0 && "
                               "sub60.model('limit_line').visible", timeout=20_000)
        assert not errors, errors
    finally:
        page.close()


class _Context:
    """A browser context as `open_app` uses a browser (``new_page(viewport=...)``)."""

    def __init__(self, context) -> None:
        self.context = context

    def new_page(self, viewport):
        page = self.context.new_page()
        page.set_viewport_size(viewport)
        return page


def test_copy_link_writes_the_page_link_and_says_pins_are_left_out(browser, app_url):
    context = browser.new_context(permissions=["clipboard-read", "clipboard-write"])
    try:
        page, _, errors = open_app(_Context(context), app_url)
        note = page.locator(".link-note")
        expect(note).to_contain_text("pinned designs are not in it")
        type_into(page, "ctl-vg_V", "0.1")
        page.wait_for_function("() => new URLSearchParams(location.search).get('vg') === '0.1'",
                               timeout=30_000)
        page.locator(".copy-link button").click()
        expect(note).to_contain_text("Link copied", timeout=10_000)
        copied = page.evaluate("() => navigator.clipboard.readText()")
        assert copied == page.url
        # the link reproduces the design: a new page opened on it has the same settings
        assert url_query(page)["vg"] == "0.1" and "src_cm3" in url_query(page)
        assert not errors, errors
    finally:
        context.close()


def _pinned_source(page, what: str, slot: int) -> dict | None:
    return page.evaluate(
        "([w, k]) => { const m = sub60.model('pin_' + w + '_source_' + k);"
        " return m ? sub60.data('pin_' + w + '_source_' + k) : null; }", [what, slot])


def test_pinned_design_on_swing_and_output_plots(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        # nothing pinned: no pinned lines on the swing and output plots yet
        assert _pinned_source(page, "swing", 0) is None
        page.locator(".pin-button button").click()
        page.wait_for_function(
            "() => { const s = sub60.model('pin_swing_source_0'); "
            "const o = sub60.model('pin_output_source_0'); "
            "return s && o && s.data.id.length > 0 && o.data.vd.length > 0; }",
            timeout=60_000)
        # the pinned design is the present one: its swing is the tunnel FET's, its output
        # curve the present output curve at the present Vg (the last listed)
        swing = _pinned_source(page, "swing", 0)
        tfet = page.evaluate("() => sub60.data('swing_tfet_source')")
        assert swing["id"] == pytest.approx(tfet["id"], rel=1e-12)
        assert swing["ss"] == pytest.approx(tfet["ss"], rel=1e-12, nan_ok=True)
        n = len(page.evaluate("() => sub60.model('output_legend').items.filter(i => i.visible)"))
        last = page.evaluate(f"() => sub60.data('output_source_{n - 1}')")
        out = _pinned_source(page, "output", 0)
        assert out["vg"][0] == pytest.approx(0.3) and last["vg"][0] == pytest.approx(0.3)
        assert out["id"] == pytest.approx(last["id"], rel=1e-9)
        # a new gate voltage: the pinned output curve follows (solved for the pin)
        type_into(page, "ctl-vg_V", "0.2")
        page.wait_for_function(
            "() => Math.abs(sub60.data('pin_output_source_0').vg[0] - 0.2) < 1e-9",
            timeout=60_000)
        assert not errors, errors
    finally:
        page.close()


def test_ion_ioff_tradeoff_opens_on_demand_and_matches_the_metrics(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        # a page opens without the trade-off figure (made when its section is opened)
        assert page.evaluate("() => sub60.model('tradeoff_plot') === null")
        page.locator(".tradeoff-card .card-header").first.click()
        page.wait_for_function(
            "() => { const s = sub60.model('tradeoff_tfet_source'); const t = "
            "sub60.model('tradeoff_twin_source'); return s && t && s.data.ioff.length > 0 "
            "&& t.data.ioff.length > 0; }", timeout=60_000)
        metrics = page.evaluate("() => sub60.metrics()")
        for key in ("tfet", "twin"):
            data = page.evaluate(f"() => sub60.data('tradeoff_{key}_source')")
            ioff = np.asarray(data["ioff"])
            ion = np.asarray(data["ion"])
            k = int(np.argmin(abs(np.log10(ioff) - math.log10(1e-3))))  # the present target
            assert ioff[k] == pytest.approx(1e-3)
            # the metrics strip's Ion at the present target (same curve, same definition)
            assert ion[k] == pytest.approx(metrics[key]["ion_uA_per_um"], rel=1e-3)
            # Ion grows with the Ioff target where both are defined (a rising curve)
            ok = np.isfinite(ion)
            assert ok.sum() >= 5 and np.all(np.diff(ion[ok]) > 0)
        # a pinned design joins the plot
        page.locator(".pin-button button").click()
        page.wait_for_function("() => sub60.data('tradeoff_pin_0_source').ioff.length > 0",
                               timeout=60_000)
        assert not errors, errors
    finally:
        page.close()


def test_reference_band_diagram_with_both_tunnel_windows(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        assert page.evaluate("() => sub60.data('reference_band_source').x_nm.length") == 0
        page.locator(".reference-on input").check()
        type_into(page, "reference-vg", "-0.3")
        # the reference at Vg = -0.3 V (present bias 0.3 V): the physics' own band edges
        # (`physics.simulate.Simulator.solve_bias`), and its drain-side (ambipolar) window
        page.wait_for_function(
            "() => sub60.model('band_plot').title.text.includes('reference Vg = -0.30 V') && "
            "sub60.data('reference_window_source').side.includes('drain side (ambipolar)')",
            timeout=60_000)
        ref = page.evaluate("() => sub60.data('reference_band_source')")
        bp = Simulator().solve_bias(Design(), -0.3, 0.3)
        np.testing.assert_allclose(ref["x_nm"], bp.x_nm, atol=1e-9)
        np.testing.assert_allclose(ref["ec_eV"], bp.subband_ec_eV, atol=2e-3)
        np.testing.assert_allclose(ref["ev_eV"], bp.subband_ev_eV, atol=2e-3)
        # the present band diagram is still the present bias's (source-side window open)
        present = page.evaluate("() => sub60.data('window_source')")
        assert "source side" in present["side"]
        # the title names the reference and its open window
        title = page.evaluate("() => sub60.model('band_plot').title.text")
        assert "reference Vg = -0.30 V" in title and "drain" in title, title
        # an out-of-range reference is refused with a message naming it and its range
        type_into(page, "reference-vg", "5")
        page.wait_for_function(f"() => ({ERROR_TEXT})().includes('Reference gate voltage')",
                               timeout=20_000)
        low, high = VG_RANGE_V
        assert f"from {low:g} to {high:g}" in page.evaluate(ERROR_TEXT)
        # switched off: the reference is taken away
        page.locator(".reference-on input").uncheck()
        page.wait_for_function("() => sub60.data('reference_band_source').x_nm.length === 0",
                               timeout=20_000)
        assert "reference" not in page.evaluate("() => sub60.model('band_plot').title.text")
        assert not errors, errors
    finally:
        page.close()


def test_snapshot_page_and_figures_carry_the_metrics_and_the_swing(browser, tmp_path):
    import io
    import json
    import zipfile

    from sub60.app import figures
    from sub60.app.snapshot_bundle import export_snapshot
    from sub60.app.theme import format_metric
    from tests.app.test_snapshot import small_settings

    data = export_snapshot(small_settings(), created_utc="2024-05-01T12:00:00Z")
    with zipfile.ZipFile(io.BytesIO(data)) as zf:
        names = set(zf.namelist())
        (tmp_path / "plots.html").write_bytes(zf.read("plots.html"))
        settings = zf.read("settings.json").decode()
    assert {"figures/swing.png", "figures/metrics.png", "figures/swing.svg",
            "figures/metrics.svg"} <= names
    assert {"swing", "metrics"} <= set(figures.FIGURE_NAMES)
    page = browser.new_page()
    errors: list[str] = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    try:
        page.goto((tmp_path / "plots.html").as_uri())
        page.wait_for_function("() => window.Bokeh && Bokeh.documents.length > 0")
        table = page.locator("table.metrics")
        expect(table).to_contain_text("SSmin")
        expect(table).to_contain_text("pinned: thin oxide")
        # the stored SSmin of the design (settings.json) in the page's number format
        stored = json.loads(settings)["stored"]["design"]["metrics"]["ss_min_mV_per_dec"]
        expect(table).to_contain_text(format_metric("ss_min_mV_per_dec", stored))
        titles = page.evaluate("() => [...Bokeh.documents[0]._all_models.values()]"
                               ".filter(m => m.type === 'Title').map(t => t.text)")
        assert any(t.startswith("Point swing against current") for t in titles), titles
        assert not errors, errors
    finally:
        page.close()
