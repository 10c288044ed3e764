"""Browser test of the measured-curve card: the synthetic demo curve opens as open
circles on the explorer's own transfer plot (legend "measured (file name)") with its
metrics row; a 1-knob fit of the work-function shift runs from the page and shows the
fitted value with its uncertainty; a bad file shows its message naming the line, and the
points on the plot stay.

Check values: the demo curve has 41 points (assets/measured/demo-tfet-transfer.csv,
SYNTHETIC: tests/make_fit_demo.py); the fitted shift must lie inside the knob's bounds
(`physics.FIT_KNOBS`); the line named for the bad file is the one that holds the bad
number (the file written here). No published value is involved: this is a page test.
"""

from __future__ import annotations

import re
import socket

import pytest

from sub60.physics import FIT_KNOBS
from tests.app.conftest import open_app, start_server, stop_server

pytestmark = pytest.mark.browser

#: This worktree's own port range (a free one is taken).
PORTS = range(5810, 5820)
#: The text a user reads in an HTML pane of the card (its markup decoded, tags dropped).
_TEXT = """() => {{ const t = document.createElement('textarea');
    t.innerHTML = sub60.byClass('{cls}').text;
    return new DOMParser().parseFromString(t.value, 'text/html').body.textContent; }}"""
STATUS = _TEXT.format(cls="measured-status")
FITTED = _TEXT.format(cls="measured-fitted")
LEGEND_ITEM = """(label) => [...sub60.doc()._all_models.values()].some(
    m => m.type === 'LegendItem' && m.label && m.label.value === label && m.visible)"""


def _port() -> int:
    for port in PORTS:
        with socket.socket() as s:
            try:
                s.bind(("127.0.0.1", port))
            except OSError:
                continue
            return port
    pytest.skip("no free port in 5810-5819")


@pytest.fixture(scope="module")
def fit_url(browser):
    proc = start_server(_port())
    try:
        port = proc.args[proc.args.index("--port") + 1]
        yield f"http://127.0.0.1:{port}/"
    finally:
        stop_server(proc)


def _open_card(page) -> None:
    page.locator(".card-header", has_text="Measured curve").first.click()
    page.locator(".measured-demo button").wait_for(state="visible", timeout=60_000)


def _load_demo(page) -> None:
    """Open the measured-curve card, load the demo curve, wait for its 41 points."""
    _open_card(page)
    page.locator(".measured-demo button").click()
    page.wait_for_function("() => sub60.data('measured_transfer_source').vg.length === 41",
                           timeout=60_000)


def test_demo_overlay_and_a_one_knob_fit(browser, fit_url, tmp_path):
    page, _, errors = open_app(browser, fit_url)
    try:
        _load_demo(page)
        assert page.evaluate(LEGEND_ITEM, "measured (demo-tfet-transfer.csv)")
        glyph = page.evaluate("() => { const g = sub60.model('measured_transfer').glyph; "
                              "return [g.marker.value, g.fill_color.value]; }")
        assert glyph == ["circle", None], glyph  # markers, not a line
        page.wait_for_function("() => { const m = sub60.metrics(); return m && m['measured-0'] "
                               "&& m['measured-0'].ss_min_mV_per_dec !== null; }",
                               timeout=60_000)
        # one knob: the work-function shift (costs no solve beyond the start curve)
        page.evaluate("() => { sub60.byClass('measured-knobs').value = ['workfunction_shift']; }")
        page.wait_for_timeout(500)
        page.locator(".measured-fit button").click()
        page.wait_for_function(f"() => ({FITTED})().includes('workfunction_shift')",
                               timeout=300_000)
        status = page.evaluate(STATUS)
        assert "Fit done" in status, status
        fitted = page.evaluate(FITTED)
        m = re.search(r"workfunction_shift: ([-+0-9.e]+) ± ([0-9.e+-]+) eV", fitted)
        assert m, fitted
        knob = FIT_KNOBS["workfunction_shift"]
        assert knob.low <= float(m.group(1)) <= knob.high and float(m.group(2)) > 0
        # the overlay stays on the main transfer plot beside the fit
        assert page.evaluate("() => sub60.data('measured_transfer_source').vg.length") == 41
        page.screenshot(path=str(tmp_path / "fit-card.png"), full_page=True)
        assert not errors, errors
    finally:
        page.close()


def test_bad_file_names_its_line_and_keeps_the_points(browser, fit_url, tmp_path):
    page, _, errors = open_app(browser, fit_url)
    try:
        _load_demo(page)
        bad = tmp_path / "bad-curve.csv"
        bad.write_text("Vg,Id [A/um]\n0,1e-9\n0.1,abc\n0.2,3e-9\n")
        page.locator(".measured-file input[type=file]").set_input_files(str(bad))
        page.wait_for_function(f"() => ({STATUS})().includes('not read')", timeout=60_000)
        status = page.evaluate(STATUS)
        assert "bad-curve.csv" in status and "line 3" in status, status
        assert page.evaluate("() => sub60.data('measured_transfer_source').vg.length") == 41
        assert page.evaluate(LEGEND_ITEM, "measured (demo-tfet-transfer.csv)")
        assert not errors, errors
    finally:
        page.close()
