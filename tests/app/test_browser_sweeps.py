"""Browser tests of the "Design sweeps" tab: a small sweep run in the page fills the map and
the Pareto plot, a click on a design of the front puts it into the explorer, and a range
outside a field's bounds is refused with a message naming the field.

The bounds are the design record's (`sub60.physics.FIELD_RANGES`: body thickness 2–30 nm);
the sweep is 2 body thicknesses x 3 source dopings with a coarse gate sweep, so that it
stays short on a loaded machine. The Pareto front is checked against its definition
(no design is better in both Ion and SS avg than a design of the front; common practice,
no source).
"""

from __future__ import annotations

import math

import pytest

from tests.app.conftest import JS_HELPERS, VIEWPORT, open_cards

pytestmark = pytest.mark.browser

SWEEP_TIMEOUT_MS = 420_000  # cluster start and 6 designs on a shared 2-core machine


def _open_sweep_tab(browser, url: str):
    """A page on the app, its document loaded, the sweep tab shown; (page, errors)."""
    page = browser.new_page(viewport=VIEWPORT)
    errors: list[str] = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.on("console", lambda m: errors.append(m.text) if m.type == "error" else None)
    page.goto(url, wait_until="domcontentloaded", timeout=120_000)
    page.wait_for_function("() => window.Bokeh && Bokeh.documents.length > 0 && "
                           "Bokeh.documents[0].get_model_by_name('band_source') != null",
                           timeout=120_000)
    page.evaluate(JS_HELPERS)
    page.get_by_text("Design sweeps", exact=True).click()
    page.locator(".sweep-run button").wait_for(state="visible", timeout=20_000)
    return page, errors


def _type(page, css_class: str, text: str, row: int = 0) -> None:
    """Type into a field as a user does: select, type, Enter."""
    box = page.locator(f".{css_class} input").nth(row)
    box.click()
    box.fill(text)
    box.press("Enter")


# the text of the sweep tab's message (an Alert pane: HTML in its model's `text`)
MESSAGE_JS = """() => {
  const m = sub60.byClass('sweep-message');
  if (!m || !m.visible) { return ''; }
  const t = document.createElement('textarea'); t.innerHTML = m.text;
  return new DOMParser().parseFromString(t.value, 'text/html').body.textContent;
}"""


def test_range_outside_the_field_bounds_is_refused_naming_the_field(browser, app_url):
    page, errors = _open_sweep_tab(browser, app_url)
    try:
        _type(page, "sweep-knob-high", "50")  # body thickness: allowed 2-30 nm
        page.locator(".sweep-run button").click()
        page.wait_for_function(f"() => ({MESSAGE_JS})().includes('Body thickness')", timeout=20_000)
        text = page.evaluate(MESSAGE_JS)
        assert "Body thickness (nm)" in text and "[2, 30]" in text, text
        assert page.evaluate("() => sub60.byClass('sweep-cancel').disabled") is True  # nothing ran
        assert not errors, errors
    finally:
        page.close()


# the model of that name in the page now: reachable from the document's roots (BokehJS keeps
# the models of a replaced figure in its model map, so a name may be found more than once)
SHOWN_JS = """(name) => {
  for (const r of sub60.doc().roots()) {
    for (const m of r.references()) { if (m.name === name) { return m; } } }
  return null; }"""

POINT_ON_SCREEN = """(i) => {
  const src = (""" + SHOWN_JS + """)('sweep_pareto_source');
  const fig = [...sub60.doc()._all_models.values()].find(m => m.type === 'Figure' &&
    m.renderers.some(r => r.data_source === src));
  const view = Bokeh.index.find_one(fig);
  view.canvas_view.el.scrollIntoView({block: 'center'});
  const sx = view.frame.x_scale.compute(src.data.x[i]);
  const sy = view.frame.y_scale.compute(src.data.y[i]);
  const r = view.canvas_view.el.getBoundingClientRect();
  return [r.left + sx, r.top + sy];
}"""


def test_small_sweep_fills_map_and_front_and_a_click_loads_the_design(browser, app_url):
    page, errors = _open_sweep_tab(browser, app_url)
    try:
        _type(page, "sweep-knob-steps", "2", row=0)   # body thickness 5, 10 nm
        _type(page, "sweep-vg-from", "-0.2")
        _type(page, "sweep-vg-points", "9")            # coarse gate sweep
        page.locator(".sweep-run button").click()
        # the rows stream in while it runs: wait for its end (Cancel disabled again)
        page.wait_for_function(
            f"() => {{ const s = ({SHOWN_JS})('sweep_pareto_source');"
            " return s != null && s.data.x.length > 0 &&"
            " sub60.byClass('sweep-cancel').disabled === true; }", timeout=SWEEP_TIMEOUT_MS)
        cells = page.evaluate(
            f"() => {{ const shown = {SHOWN_JS}; const d = shown('sweep_map_source').data;"
            " const u = shown('sweep_map_undefined_source');"
            " return [d.x.length, u ? u.data.x.length : 0]; }")
        assert cells[0] >= 1 and sum(cells) == 6, cells  # every design of the 2 x 3 grid has its cell
        pts = page.evaluate(f"() => {{ const d = ({SHOWN_JS})('sweep_pareto_source').data;"
                            " const out = {}; for (const k in d) { out[k] = Array.from(d[k]); }"
                            " return out; }")
        n = len(pts["x"])
        assert 1 <= n <= 6
        # the design with the largest Ion is on the front by definition; no design beats it
        best = max(range(n), key=lambda i: pts["y"][i])
        assert not any(pts["y"][j] > pts["y"][best] and pts["x"][j] <= pts["x"][best]
                       for j in range(n))
        want_t = pts["body_thickness_nm"][best]
        want_na = pts["source_doping_cm3"][best]

        x, y = page.evaluate(POINT_ON_SCREEN, best)
        page.mouse.click(x, y)
        page.wait_for_function(
            "(t) => Math.abs(sub60.sliderOf('ctl-body_thickness_nm').value - t) < 1e-9",
            arg=want_t, timeout=30_000)
        open_cards(page)  # the doping controls are in a card that starts collapsed
        doping = page.evaluate("() => sub60.sliderOf('ctl-source_doping_log10_cm3').value")
        assert doping == pytest.approx(math.log10(want_na), abs=1e-6)
        page.wait_for_function("() => sub60.byClass('sub60-tabs').active === 0",
                               timeout=20_000)  # the page shows the explorer again
        assert not errors, errors
    finally:
        page.close()


# while the sweep runs: its Cancel is enabled (it is disabled again when the sweep ends)
STREAMING_JS = """() => {
  const shown = """ + SHOWN_JS + """;
  const running = sub60.byClass('sweep-cancel').disabled === false;
  const front = shown('sweep_pareto_source');
  const map = shown('sweep_map_source');
  if (!running || !front || !map || front.data.x.length === 0 || map.data.x.length === 0) {
    return null; }
  const fig = [...sub60.doc()._all_models.values()].find(m => m.type === 'Figure' &&
    m.renderers.some(r => r.data_source === map));
  return {front: front.data.x.length, cells: map.data.x.length,
          xs: fig.x_range.factors.length, ys: fig.y_range.factors.length};
}"""


def test_rows_fill_the_map_and_front_while_the_sweep_runs_and_cancel_keeps_them(browser, app_url):
    """A 3 x 3 grid on one worker process finishes its designs one by one: the front and the
    map get points while the sweep still runs (its Cancel still enabled), the map already on
    the whole grid's axes; Cancel then ends it with the rows computed so far shown."""
    page, errors = _open_sweep_tab(browser, app_url)
    try:
        _type(page, "sweep-workers", "1")
        page.locator(".sweep-run button").click()
        seen = page.wait_for_function(STREAMING_JS, timeout=SWEEP_TIMEOUT_MS).json_value()
        assert seen["front"] >= 1 and seen["cells"] >= 1, seen
        assert (seen["xs"], seen["ys"]) == (3, 3), seen  # axes of the whole grid at once
        page.locator(".sweep-cancel button").click()
        page.wait_for_function("() => sub60.byClass('sweep-cancel').disabled === true",
                               timeout=SWEEP_TIMEOUT_MS)
        status = page.evaluate("() => sub60.byClass('sweep-page-status').text")
        assert "9 designs" in status, status
        kept = page.evaluate(f"() => ({SHOWN_JS})('sweep_pareto_source').data.x.length")
        assert kept >= seen["front"]  # the rows drawn while running are still there
        assert not errors, errors
    finally:
        page.close()
