"""Browser tests: drive the served explorer in headless Chromium as a user would.

The server runs as a subprocess (`python -m sub60.app serve`) on a free 127.0.0.1 port. Every
wait is on the page's Bokeh document (``page.wait_for_function``), never a fixed sleep.
The numbers read back from the page are checked against the physics package called
directly with the same settings (the reference the page must reproduce); the tolerance
1e-5 eV is 1000 times the Poisson solver's 1e-8 V Newton tolerance, which bounds the
difference between the server's warm-started solves and a fresh solve here.
"""

from __future__ import annotations

import math
from urllib.parse import urlsplit

import numpy as np
import pytest

from sub60.physics.design import Design
from sub60.physics.simulate import Simulator
from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

PLOTS = ("band_plot", "spectrum_plot", "transmission_plot", "transfer_plot", "swing_plot",
         "map_plot", "output_plot")
VG_SWEEP = np.linspace(-0.4, 0.6, 41)  # the default sweep of the page [V]
E_TOL_EV = 1e-5


def _band(page) -> dict[str, np.ndarray]:
    return {k: np.asarray(v, float) for k, v in page.evaluate("() => sub60.data('band_source')")
            .items()}


def test_page_is_served_locally_and_every_plot_holds_data(browser, app_url):
    page, requests, errors = open_app(browser, app_url)
    try:
        rows = page.evaluate("""(names) => Object.fromEntries(names.map(n => [n,
            Math.max(0, ...sub60.model(n).renderers.filter(r => r.data_source)
                .map(r => r.data_source.get_length() || 0))]))""", list(PLOTS))
        assert all(rows[name] > 0 for name in PLOTS), rows
        outputs = page.evaluate("() => [0, 1, 2, 3].map(k => "
                                "sub60.model('output_source_' + k).data.vd.length)")
        assert sum(1 for n in outputs if n > 0) >= 3, outputs
        hosts = {urlsplit(u).hostname for u in requests if not u.startswith(("data:", "blob:"))}
        assert hosts == {"127.0.0.1"}, f"requests left the machine: {sorted(hosts)}"
        assert not errors, errors
        # at the desk the full caution shows; its one-line form is for presentation mode
        assert page.locator("div.caution:not(.short)", has_text="not calibrated TCAD").is_visible()
        assert not page.locator("div.caution.short").is_visible()
        metrics = page.evaluate("() => sub60.metrics()")
        assert metrics["tfet"]["ss_min_mV_per_dec"] is not None
    finally:
        page.close()


def test_gate_voltage_by_keyboard_redraws_band_as_physics(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        handle = page.locator(".ctl-vg_V .noUi-handle")
        handle.focus()
        for _ in range(5):
            handle.press("ArrowRight")
        vg = page.evaluate("() => sub60.sliderOf('ctl-vg_V').value")
        assert vg > 0.3 + 1e-9, "the keyboard did not move the gate-voltage slider"
        page.wait_for_function("(v) => Math.abs(sub60.data('vg_marker_source').vg[0] - v) < 1e-9",
                               arg=vg, timeout=30_000)
        band = _band(page)
        bp = Simulator().solve_bias(Design(), vg, 0.3)
        np.testing.assert_allclose(band["x_nm"], bp.x_nm, rtol=0, atol=1e-12)
        np.testing.assert_allclose(band["ec_eV"], bp.subband_ec_eV, rtol=0, atol=E_TOL_EV)
        np.testing.assert_allclose(band["ev_eV"], bp.subband_ev_eV, rtol=0, atol=E_TOL_EV)
        marker = page.evaluate("() => sub60.data('vg_marker_source').id[0]")
        assert math.isclose(marker, bp.current_uA_per_um, rel_tol=1e-4)
        spectrum = page.evaluate("() => sub60.data('spectrum_source')")
        np.testing.assert_allclose(spectrum["energy_eV"], bp.spectrum.energy_eV, atol=E_TOL_EV)
        assert not errors, errors
    finally:
        page.close()


def test_body_thickness_typed_updates_band_and_metrics_as_physics(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        before = page.evaluate("() => sub60.metrics()")
        entry = page.locator(".ctl-body_thickness_nm input")
        entry.fill("9")
        entry.press("Enter")
        # the 2D map spans oxide + body + oxide = 2 + 9 + 2 nm once the new design is drawn
        page.wait_for_function("() => Math.abs(sub60.data('map_source').dh[0] - 13) < 1e-9",
                               timeout=30_000)
        page.wait_for_function(
            "(old) => sub60.curvesDone(41) && "
            "sub60.metrics().tfet.ss_min_mV_per_dec !== old", arg=before["tfet"][
                "ss_min_mV_per_dec"], timeout=60_000)
        design = Design(body_thickness_nm=9.0)
        sim = Simulator()
        bp = sim.solve_bias(design, 0.3, 0.3)
        band = _band(page)
        np.testing.assert_allclose(band["ec_eV"], bp.subband_ec_eV, rtol=0, atol=E_TOL_EV)
        metrics = page.evaluate("() => sub60.metrics()")
        for key, device in (("tfet", design), ("twin", design.twin())):
            tc = sim.transfer_curve(device, VG_SWEEP, 0.3, ioff_target_uA_per_um=1e-3, vdd_V=0.3)
            ids = page.evaluate(f"() => sub60.data('transfer_{key}_source').id")
            np.testing.assert_allclose(np.asarray(ids, float), tc.id_uA_per_um, rtol=1e-4)
            for name, value in metrics[key].items():
                expected = getattr(tc.metrics, name).value
                if expected is None:
                    assert value is None, (key, name, value)
                else:
                    assert math.isclose(value, expected, rel_tol=1e-3, abs_tol=1e-9), \
                        (key, name, value, expected)
        assert not errors, errors
    finally:
        page.close()


def test_presentation_mode_and_screenshot(browser, app_url, tmp_path):
    """The button and the P key hide the controls and enlarge the header and metrics;
    the figures keep their sizes (the page is not laid out figure by figure)."""
    presenting = "() => sub60.presenting()"
    desk = "() => sub60.desk()"
    page, _, errors = open_app(browser, app_url)
    try:
        frame = page.evaluate("() => sub60.model('band_plot').frame_width")
        page.get_by_role("button", name="Presentation mode").click()
        page.wait_for_function(presenting, timeout=60_000)
        assert page.evaluate("() => sub60.model('band_plot').frame_width") == frame
        shot = tmp_path / "presentation.png"
        page.screenshot(path=str(shot))
        assert shot.stat().st_size > 20_000
        page.get_by_role("button", name="Presentation mode").click()
        page.wait_for_function(desk, timeout=60_000)
        # the P key outside a text box does the same
        page.locator("body").click(position={"x": 5, "y": 990})
        page.keyboard.press("p")
        page.wait_for_function(presenting, timeout=60_000)
        page.keyboard.press("p")
        page.wait_for_function(desk, timeout=60_000)
        # a P typed into an entry box is text, not the shortcut
        entry = page.locator(".ctl-body_thickness_nm input").first
        entry.click()
        entry.press("p")
        page.wait_for_timeout(500)  # a wrong toggle would have reached the page by then
        assert page.evaluate(desk)
        assert not errors, errors
    finally:
        page.close()


def test_sessions_do_not_share_settings(browser, app_url):
    first, _, _ = open_app(browser, app_url)
    second, _, _ = open_app(browser, app_url)
    try:
        entry = first.locator(".ctl-vd_V input")
        entry.fill("0.4")
        entry.press("Enter")
        first.wait_for_function("() => Math.abs(sub60.data('fermi_source').y[1] + 0.4) < 1e-9",
                                timeout=30_000)
        # the other session still shows its own drain Fermi level, -Vd = -0.3 eV
        assert second.evaluate("() => sub60.data('fermi_source').y[1]") == pytest.approx(-0.3)
    finally:
        first.close()
        second.close()
