"""Browser tests of snapshots, links, pinned designs and demo designs.

The served explorer (fixtures of conftest.py) is driven in headless Chromium as a user
would: the snapshot is downloaded by clicking its button and uploaded through the file
field in a fresh page; a link is read from the address bar and opened in a fresh page.
Every wait is on the page's Bokeh document (``page.wait_for_function``), never a fixed
sleep. The reference of the round trips is the first page itself (its controls, metrics
strip and band diagram) and the figures of merit stored in the downloaded file; the
tolerances are those of test_browser.py (1e-5 eV on band edges, 1e-4 relative on
figures of merit: independent warm-started solves agree to the Newton tolerance).
"""

from __future__ import annotations

import math
from urllib.parse import parse_qs, urlsplit

import numpy as np
import pytest

from sub60.app.presets import PRESET_DIR
from sub60.app.snapshot_reader import import_snapshot
from tests.app.conftest import open_app, open_cards

pytestmark = pytest.mark.browser

E_TOL_EV = 1e-5
REL_METRIC = 1e-4
TIMEOUT_MS = 90_000

# Every control of the page by its css class (ctl-<parameter>), as the page shows it.
CONTROLS_JS = """() => {
  const out = {};
  for (const m of sub60.doc()._all_models.values()) {
    if (!Array.isArray(m.css_classes)) { continue; }
    const c = m.css_classes.find(k => k.startsWith('ctl-'));
    if (!c || c === 'ctl-preset' || c === 'ctl-label') { continue; }
    const name = c.slice(4);
    if (m.labels !== undefined && m.active !== undefined) { out[name] = m.labels[m.active]; }
    else if (m.options !== undefined) { out[name] = m.value; }
    else { const s = sub60.sliderOf(c); if (s) { out[name] = s.value; } }
  }
  return out;
}"""


def _controls(page) -> dict:
    open_cards(page)  # every control is on the page once its card has been opened
    return page.evaluate(CONTROLS_JS)


def _type(page, name: str, text: str) -> None:
    entry = page.locator(f".ctl-{name} input").first
    entry.fill(text)
    entry.press("Enter")


def _same_controls(a: dict, b: dict) -> None:
    assert set(a) == set(b) and len(a) >= 20, sorted(set(a) ^ set(b))
    for k, v in a.items():
        if isinstance(v, (int, float)):
            assert b[k] == pytest.approx(v, rel=1e-12, abs=1e-12), k
        elif isinstance(v, list):
            assert b[k] == pytest.approx(v, rel=1e-12, abs=1e-12), k
        else:
            assert b[k] == v, k


def _same_metrics(a: dict, b: dict) -> None:
    assert set(a) == set(b) == {"tfet", "twin"}
    for dev in a:
        for k, v in a[dev].items():
            w = b[dev][k]
            assert (v is None) == (w is None), (dev, k, v, w)
            if v is not None:
                assert math.isclose(w, v, rel_tol=REL_METRIC, abs_tol=1e-12), (dev, k, v, w)


def _band(page) -> dict[str, np.ndarray]:
    return {k: np.asarray(v, float) for k, v in
            page.evaluate("() => sub60.data('band_source')").items()}


def _pin_and_wait(page, slot: int, name: str = "") -> None:
    if name:
        page.locator(".pin-new-name input").fill(name)
    page.locator(".pin-button button").click()
    page.wait_for_function(  # a slot's lines are made when it is first drawn
        "(k) => sub60.model('pin_transfer_source_' + k)?.data.vg.length > 0 && "
        "sub60.model('pin_band_source_' + k)?.data.x_nm.length > 0 && "
        "sub60.byClass('pin-cells-' + k) !== undefined && "
        "sub60.byClass('pin-cells-' + k).text.includes('data-row')",
        arg=slot, timeout=TIMEOUT_MS)


def test_snapshot_download_then_upload_in_a_fresh_page(browser, app_url, tmp_path):
    first, _, errors = open_app(browser, app_url)
    try:
        _type(first, "body_thickness_nm", "8")
        first.wait_for_function("() => Math.abs(sub60.data('map_source').dh[0] - 12) < 1e-9",
                                timeout=TIMEOUT_MS)
        first.wait_for_function("() => sub60.curvesDone(41)", timeout=TIMEOUT_MS)
        _pin_and_wait(first, 0, "eight nm")
        _type(first, "vd_V", "0.35")
        first.wait_for_function("() => Math.abs(sub60.data('fermi_source').y[1] + 0.35) < 1e-9 "
                                "&& sub60.allDone(41)", timeout=TIMEOUT_MS)
        controls = _controls(first)
        metrics = first.evaluate("() => sub60.metrics()")
        with first.expect_download(timeout=TIMEOUT_MS) as info:
            first.locator(".snapshot-download a").click()
            # the export recomputes everything (seconds): a note says so meanwhile
            first.wait_for_function("() => sub60.byClass('export-note').text"
                                    ".includes('Preparing the snapshot')", timeout=TIMEOUT_MS)
        download = info.value
        assert download.suggested_filename.startswith("sub60-snapshot-")
        assert download.suggested_filename.endswith("Z.zip")
        path = tmp_path / download.suggested_filename
        download.save_as(path)
        assert first.locator(".export-note").get_by_text("Saved").is_visible()
        assert not errors, errors
    finally:
        first.close()
    data = path.read_bytes()
    settings, _ = import_snapshot(data)  # the file itself holds the page's settings
    assert settings.design.body_thickness_nm == 8.0 and settings.bias.vd_V == 0.35
    assert [p.name for p in settings.pinned] == ["eight nm"]

    second, _, errors = open_app(browser, app_url)
    try:
        assert _controls(second)["body_thickness_nm"] == 7.0  # a fresh page: the defaults
        second.locator(".snapshot-upload input[type=file]").set_input_files(str(path))
        second.wait_for_function(
            "() => sub60.byClass('snapshot-report').text.includes('match the stored ones') "
            "&& Math.abs(sub60.data('fermi_source').y[1] + 0.35) < 1e-9 && sub60.allDone(41)"
            " && sub60.model('pin_transfer_source_0')?.data.vg.length === 41",
            timeout=TIMEOUT_MS)
        _same_controls(controls, _controls(second))
        shown = second.evaluate("() => sub60.metrics()")
        _same_metrics(metrics, shown)
        stored = {"tfet": settings.stored.design.metrics, "twin": settings.stored.twin.metrics}
        _same_metrics({d: {k: stored[d][k] for k in shown[d]} for d in stored}, shown)
        report = second.locator(".snapshot-report")
        assert report.get_by_text("recomputed figures of merit match the stored ones").is_visible()
        assert second.evaluate("() => sub60.byClass('pin-name-0').value") == "eight nm"
        assert not errors, errors
    finally:
        second.close()


def test_link_reproduces_the_view_in_a_fresh_page(browser, app_url):
    first, _, errors = open_app(browser, app_url)
    try:
        _type(first, "gate_length_nm", "36")
        _type(first, "vd_V", "0.4")
        _type(first, "vg_V", "0.35")
        first.wait_for_function(
            "() => location.search.includes('lg_nm=36') && location.search.includes('vd=0.4')"
            " && location.search.includes('vg=0.35') && sub60.allDone(41) && "
            "Math.abs(sub60.data('vg_marker_source').vg[0] - 0.35) < 1e-9", timeout=TIMEOUT_MS)
        url = first.url
        controls = _controls(first)
        band = _band(first)
        metrics = first.evaluate("() => sub60.metrics()")
        assert not errors, errors
    finally:
        first.close()
    query = parse_qs(urlsplit(url).query)
    assert query["lg_nm"] == ["36"] and query["src_cm3"] == ["4e19"]  # readable values

    second, _, errors = open_app(browser, url)
    try:
        second.wait_for_function("() => Math.abs(sub60.data('vg_marker_source').vg[0] - 0.35)"
                                 " < 1e-9", timeout=TIMEOUT_MS)
        _same_controls(controls, _controls(second))
        again = _band(second)
        np.testing.assert_allclose(again["x_nm"], band["x_nm"], rtol=0, atol=1e-12)
        np.testing.assert_allclose(again["ec_eV"], band["ec_eV"], rtol=0, atol=E_TOL_EV)
        np.testing.assert_allclose(again["ev_eV"], band["ev_eV"], rtol=0, atol=E_TOL_EV)
        _same_metrics(metrics, second.evaluate("() => sub60.metrics()"))
        assert not errors, errors
    finally:
        second.close()


def test_bad_link_values_are_ignored_with_a_message(browser, app_url):
    page, _, errors = open_app(browser, app_url + "?body_nm=abc&lg_nm=36&vd=7")
    try:
        alert = page.locator(".sub60-error")
        assert alert.get_by_text("Body thickness (nm)").is_visible()
        assert alert.get_by_text("Drain voltage (V)").is_visible()
        c = _controls(page)
        assert (c["body_thickness_nm"], c["gate_length_nm"], c["vd_V"]) == (7.0, 36.0, 0.3)
        # and the address now holds the values shown
        page.wait_for_function("() => location.search.includes('body_nm=7') && "
                               "location.search.includes('vd=0.3')", timeout=TIMEOUT_MS)
        assert not errors, errors
    finally:
        page.close()


def test_two_pinned_designs_are_overlaid_and_tabled(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        _pin_and_wait(page, 0)
        _type(page, "body_thickness_nm", "9")
        page.wait_for_function("() => Math.abs(sub60.data('map_source').dh[0] - 13) < 1e-9 && "
                               "sub60.curvesDone(41)", timeout=TIMEOUT_MS)
        _pin_and_wait(page, 1, "thick body")
        rows = page.evaluate("""() => [0, 1].map(k => {
            const html = sub60.byClass('pin-cells-' + k).text;
            const t = document.createElement('textarea'); t.innerHTML = html;
            const doc = new DOMParser().parseFromString(t.value, 'text/html');
            const out = {};
            for (const c of doc.querySelectorAll('[data-col]')) {
              out[c.dataset.col] = [c.dataset.value, c.dataset.diff]; }
            return out; })""")
        assert rows[0]["body_thickness_nm"] == ["7", "\u22122 nm"]
        assert rows[1]["body_thickness_nm"] == ["9", "same"]
        assert rows[1]["ss_min_mV_per_dec"][1] == "same"  # the present design itself
        present = page.evaluate("() => sub60.metrics().tfet.ss_min_mV_per_dec")
        assert float(rows[1]["ss_min_mV_per_dec"][0]) == pytest.approx(present, rel=1e-9)
        info = page.evaluate("""() => {
            const f = sub60.model('transfer_plot'), b = sub60.model('band_plot');
            const named = (fig, n) => fig.renderers.find(r => r.name === n);
            return {
              transfer: [0, 1].map(k => named(f, 'pin_transfer_' + k).data_source.data.vg.length),
              band: [0, 1].map(k => ['ec', 'ev'].map(e =>
                named(b, 'pin_band_' + e + '_' + k).data_source.data.x_nm.length)),
              dash: named(b, 'pin_band_ec_0').glyph.line_dash,
              colours: [0, 1].map(k => named(f, 'pin_transfer_' + k).glyph.line_color),
              legend: sub60.model('pin_transfer_legend').items.filter(i => i.visible)
                .map(i => i.label.value),
              policy: sub60.model('pin_band_legend').click_policy,
            }; }""")
        assert info["transfer"] == [41, 41]
        assert all(n > 10 for pair in info["band"] for n in pair)
        assert info["dash"] and info["colours"][0] != info["colours"][1]
        assert info["legend"] == ["Design A", "thick body"]
        assert info["policy"] == "hide"
        page.locator(".pin-unpin-0 button").click()
        page.wait_for_function("() => sub60.model('pin_transfer_source_0').data.vg.length === 0"
                               " && sub60.byClass('pin-cells-0') === undefined",
                               timeout=TIMEOUT_MS)
        assert not errors, errors
    finally:
        page.close()


def test_demo_design_loads_into_the_controls(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        open_cards(page)
        page.locator(".ctl-preset select").select_option(label="MOSFET baseline")
        page.wait_for_function(
            "() => { const g = sub60.byClass('ctl-source_type'); "
            "return g.labels[g.active].startsWith('n+') && "
            "sub60.byClass('snapshot-report').text.includes('MOSFET baseline'); }",
            timeout=TIMEOUT_MS)
        page.wait_for_function("() => sub60.curvesDone(41) && "
                               "Math.abs(sub60.data('transfer_tfet_source').vg[0] + 0.6) < 1e-9",
                               timeout=TIMEOUT_MS)
        settings, _ = import_snapshot((PRESET_DIR / "mosfet-baseline.json").read_bytes())
        c = _controls(page)
        assert c["vg_sweep_V"] == pytest.approx([settings.transfer_sweep.vg_start_V,
                                                 settings.transfer_sweep.vg_stop_V])
        assert c["body_thickness_nm"] == settings.design.body_thickness_nm
        assert "source=n" in page.url
        assert not errors, errors
    finally:
        page.close()
