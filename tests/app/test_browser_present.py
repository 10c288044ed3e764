"""Browser tests of the presentation look at projector sizes (1280x720, 1920x1080).

With the controls hidden every figure lies inside the window, the rightmost figure of each
row ends near the window's right edge (no empty band), and nothing drawn on a figure's
canvas (title, axes with their labels, legends, colour bar) reaches past the canvas's
edges: the boxes are read from Bokeh's own views (``Bokeh.index``). The what-if bar is
in view, and a gate voltage typed there reaches the band diagram and the sidebar's gate
voltage. Screenshots of both looks at both sizes go to ``tmp_path`` (or to the folder
named by SUB60_SHOTS, to look at them).

The checks are geometry of our own layout (common practice, no source): a projector
shows the browser window as it is, so a box outside the window or the canvas is not seen.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

FIGURES = ("band_plot", "spectrum_plot", "transmission_plot", "transfer_plot", "map_plot",
           "output_plot", "swing_plot")
ROW_ENDS = ("transfer_plot", "swing_plot")  # the rightmost figure of each row
ERROR_TEXT = "() => { const a = sub60.byClass('sub60-error'); return a.visible ? a.text : ''; }"

#: Every figure's box in the window and the boxes of what its canvas draws (canvas px).
BOXES_JS = """(names) => names.map((name) => {
  const fig = sub60.model(name);
  const view = Bokeh.index.find_one(fig);
  const r = view.el.getBoundingClientRect();
  const parts = [];
  const models = [fig.title, ...fig.above, ...fig.below, ...fig.left, ...fig.right,
                  ...fig.center.filter((m) => m.type === 'Legend')];
  for (const m of models) {
    const v = Bokeh.index.find_one(m);
    if (!m.visible || v == null || v.bbox == null) { continue; }
    if (m.type === 'Legend' && !m.items.some((i) => i.visible !== false)) { continue; }
    const b = v.bbox;
    parts.push({what: m.type + (m.name ? ' ' + m.name : ''), x0: b.x0, x1: b.x1, y0: b.y0,
                y1: b.y1});
  }
  // the title's text as drawn (a title is not wrapped: a long one runs off the canvas)
  const t = fig.title;
  const ctx = document.createElement('canvas').getContext('2d');
  ctx.font = `${t.text_font_style} ${t.text_font_size} ${t.text_font}`;
  const tv = Bokeh.index.find_one(t);
  parts.push({what: 'title text', x0: tv.bbox.x0,
              x1: tv.bbox.x0 + t.offset + ctx.measureText(t.text).width, y0: tv.bbox.y0,
              y1: tv.bbox.y1});
  return {name, left: r.left, right: r.right, top: r.top, bottom: r.bottom,
          width: view.bbox.width, height: view.bbox.height,
          frame_height: view.frame.bbox.height, parts};
})"""

#: Resolves once every figure's width and height have stayed the same over three frames.
SETTLED_JS = """async (names) => {
  const frame = () => new Promise((r) => requestAnimationFrame(r));
  const widths = () => JSON.stringify(names.map((n) => {
    const b = Bokeh.index.find_one(sub60.model(n)).bbox; return [b.width, b.height]; }));
  let last = widths(); let same = 0;
  for (let k = 0; k < 600 && same < 3; k++) {
    await frame();
    const now = widths();
    if (now === last) { same += 1; } else { same = 0; last = now; }
  }
  return same >= 3;
}"""


#: The figures wholly in view on the first screen in presentation, by window height: at
#: 720 px the first row (the second, nearly a window's height tall, is wholly in view
#: under the what-if row once scrolled to), at 1080 px both rows.
FIRST_SCREEN = {720: FIGURES[:4], 1080: FIGURES}
#: The frame heights at the desk (1600x1000) [px], as they were before the figures' heights
#: followed their rows (`ExplorerFigures.FRAME_HEIGHTS`).
DESK_FRAMES = {"band_plot": 345, "spectrum_plot": 345, "transmission_plot": 345,
               "transfer_plot": 345, "map_plot": 195, "output_plot": 195, "swing_plot": 195}


def _in_view(page, names, top: float, height: int) -> list[dict]:
    """Every named figure lies between ``top`` and the window's bottom edge (its whole box,
    so its title, frame, axes and legend, which stay inside it: `_check_layout`)."""
    boxes = page.evaluate(BOXES_JS, list(names))
    for b in boxes:
        assert b["top"] >= top - 0.5 and b["bottom"] <= height + 0.5, (b["name"], b["top"],
                                                                         b["bottom"], height)
    return boxes


def _shot_dir(tmp_path: Path) -> Path:
    folder = os.environ.get("SUB60_SHOTS")
    if folder:
        Path(folder).mkdir(parents=True, exist_ok=True)
        return Path(folder)
    return tmp_path


def _settle(page) -> None:
    assert page.evaluate(SETTLED_JS, list(FIGURES))


def _check_layout(page, width: int) -> None:
    boxes = page.evaluate(BOXES_JS, list(FIGURES))
    for b in boxes:
        assert b["left"] >= -0.5 and b["right"] <= width + 0.5, b  # inside the window
        for part in b["parts"]:  # nothing cut at the canvas's edges
            assert part["x0"] >= -0.5 and part["x1"] <= b["width"] + 0.5, (b["name"], part)
            assert part["y0"] >= -0.5 and part["y1"] <= b["height"] + 0.5, (b["name"], part)
    ends = {b["name"]: b for b in boxes if b["name"] in ROW_ENDS}
    for name, b in ends.items():  # no empty band on the right
        assert b["right"] >= width - 24, (name, b["right"], width)
    legends = {b["name"] for b in boxes for p in b["parts"] if p["what"].startswith("Legend")}
    assert {"band_plot", "transfer_plot", "swing_plot", "output_plot"} <= legends, legends


@pytest.mark.parametrize("size, vg", [((1280, 720), 0.0), ((1920, 1080), -0.15)])
def test_presentation_fills_the_window_and_takes_a_typed_vg(browser, app_url, tmp_path,
                                                            size, vg):
    width, height = size
    shots = _shot_dir(tmp_path)
    page, _, errors = open_app(browser, app_url)
    try:
        page.set_viewport_size({"width": 1600, "height": 1000})
        _settle(page)
        # the desk view keeps its frames (one height per row: common energy axis of the band
        # diagram, J(E) and T(E)) and its figures inside their canvases
        desk = page.evaluate(BOXES_JS, list(FIGURES))
        for b in desk:
            assert abs(b["frame_height"] - DESK_FRAMES[b["name"]]) <= 3, b
        _check_layout(page, 1600)
        page.set_viewport_size({"width": width, "height": height})
        _settle(page)
        page.screenshot(path=str(shots / f"desk-{width}x{height}.png"))
        assert page.evaluate("() => Bokeh.index.find_one(sub60.model('band_plot'))"
                             ".el.getBoundingClientRect().left") > 300  # controls shown
        page.locator("body").click(position={"x": 5, "y": height - 5})
        page.keyboard.press("p")
        page.wait_for_function("() => sub60.presenting()", timeout=60_000)
        _settle(page)
        page.screenshot(path=str(shots / f"presentation-{width}x{height}.png"))
        page.screenshot(path=str(shots / f"presentation-{width}x{height}-page.png"),
                        full_page=True)
        _check_layout(page, width)
        # the figures fill the screen: those of the first screen are wholly in view, as
        # tall as the window leaves them (frames of at least 200 px, no empty band below)
        first = FIRST_SCREEN[height]
        boxes = _in_view(page, first, 0, height)
        assert min(b["frame_height"] for b in boxes) >= 200, boxes
        assert height - max(b["bottom"] for b in boxes) < 40  # no empty band below
        rest = [f for f in FIGURES if f not in first]
        if rest:  # the second row: scrolled to just under the what-if row (it stays on top)
            bar_js = ("() => Bokeh.index.find_one(sub60.byClass('sub60-whatif'))"
                      ".el.getBoundingClientRect()")
            bar_height = page.evaluate(bar_js)["height"]
            target = page.evaluate("""([n, y]) => Bokeh.index.find_one(sub60.model(n)).el
              .getBoundingClientRect().top + scrollY - y""", [rest[0], bar_height + 4])
            page.evaluate("(y) => window.scrollTo(0, y)", target)
            page.wait_for_function("(y) => Math.abs(window.scrollY - y) < 2", arg=target)
            bar = page.evaluate(bar_js)
            assert abs(bar["top"]) < 1, bar  # the what-if row in view above the figures
            boxes = _in_view(page, rest, bar["bottom"], height)
            assert min(b["frame_height"] for b in boxes) >= 200, boxes
            page.screenshot(path=str(shots / f"presentation-{width}x{height}-second-row.png"))
            page.evaluate("() => window.scrollTo(0, 0)")
        # the figures took the controls' place: the first starts at the window's left edge
        assert page.evaluate("() => Bokeh.index.find_one(sub60.model('band_plot'))"
                             ".el.getBoundingClientRect().left") < 12
        # the what-if bar is in view, also with the page scrolled down to the plots
        bar = page.locator(".whatif-vg input").first
        most = page.evaluate("() => document.scrollingElement.scrollHeight - innerHeight")
        assert most > 100  # the page is taller than the window: scrolled, the bar must stay
        for scroll in (0, min(450, most)):
            page.evaluate("(y) => window.scrollTo(0, y)", scroll)
            page.wait_for_function("(y) => Math.abs(window.scrollY - y) < 2", arg=scroll)
            box = bar.bounding_box()
            assert box is not None and 0 <= box["y"] and box["y"] + box["height"] <= height, \
                (scroll, box)
            assert box["x"] >= 0 and box["x"] + box["width"] <= width
        page.screenshot(path=str(shots / f"presentation-{width}x{height}-scrolled.png"))
        # a gate voltage typed there reaches the band diagram and the sidebar's control
        old = page.evaluate("() => sub60.data('band_source').x_nm.length")
        assert old > 0
        bar.fill(f"{vg}")
        bar.press("Enter")
        page.wait_for_function(
            "(v) => Math.abs(sub60.data('vg_marker_source').vg[0] - v) < 1e-9", arg=vg,
            timeout=120_000)
        page.wait_for_function(
            "(v) => Math.abs(sub60.sliderOf('ctl-vg_V').value - v) < 1e-9", arg=vg,
            timeout=60_000)
        # a value out of range is refused with a message naming the entry and its range
        bar.fill("2.5")
        bar.press("Enter")
        page.wait_for_function(f"() => ({ERROR_TEXT})().includes('Gate Vg (V)')",
                               timeout=60_000)
        text = page.evaluate(ERROR_TEXT)
        assert "from -1.5 to 2" in text and "2.5" in text, text
        # the entry shows the value kept again, the sidebar and the plots keep it
        page.wait_for_function("(v) => Math.abs(sub60.byClass('whatif-vg').value - v) < 1e-9",
                               arg=vg, timeout=60_000)
        assert abs(page.evaluate("() => sub60.sliderOf('ctl-vg_V').value") - vg) < 1e-9
        # a doping typed as a designer writes it (1.5e20 reaches the server as a whole
        # number too large for NumPy: it was lost on the way), and an EOT
        doping = page.locator(".whatif-nsource input").first
        assert doping.input_value() == "4e19"
        doping.fill("1.5e20")
        doping.press("Enter")
        page.wait_for_function(
            "() => sub60.byClass('sub60-header').text.includes('source 1.5e+20 cm')",
            timeout=60_000)
        eot = page.locator(".whatif-eot input").first
        eot.fill("0.8")
        eot.press("Enter")
        page.wait_for_function("() => sub60.byClass('sub60-header').text.includes('EOT 0.80 nm')",
                               timeout=60_000)
        page.keyboard.press("Escape")
        page.locator("body").click(position={"x": 5, "y": height - 5})
        page.keyboard.press("p")
        page.wait_for_function("() => sub60.desk()", timeout=60_000)
        _settle(page)
        page.screenshot(path=str(shots / f"desk-after-{width}x{height}.png"))
        assert not errors, errors
    finally:
        page.close()


#: Counts Bokeh's layouts of the whole page (its root view's ``update_layout``: every
#: model whose classes, size or styles change makes Bokeh lay out the page again, model
#: by model, reading every figure's styles after each write).
COUNT_LAYOUTS_JS = """() => {
  let v = Bokeh.index.find_one(sub60.byClass('sub60-page'));
  while (v.parent != null && typeof v.parent.update_layout === 'function') { v = v.parent; }
  window.sub60Layouts = 0;
  const own = v.update_layout;
  v.update_layout = function (...a) { window.sub60Layouts += 1; return own.apply(this, a); };
  return v.model.type;
}"""


def test_presentation_toggle_leaves_the_page_layout_to_the_browser(browser, app_url):
    """Toggling the presentation look makes no Bokeh layout of the whole page (the page's
    class changes in the browser; its stylesheets resize the figures, as a window resize
    does): before, a class on the page, header, metrics and status made four a toggle.
    The look is there all the same (controls hidden, title enlarged; `sub60.presenting`),
    and every figure ends inside the window with nothing cut (`_check_layout`)."""
    page, _, errors = open_app(browser, app_url)
    try:
        page.evaluate(COUNT_LAYOUTS_JS)
        button = page.get_by_role("button", name="Presentation mode")
        button.click()
        page.wait_for_function("() => sub60.presenting()", timeout=60_000)
        _settle(page)
        _check_layout(page, 1600)
        assert page.evaluate("() => window.sub60Layouts") == 0
        button.click()
        page.wait_for_function("() => sub60.desk()", timeout=60_000)
        _settle(page)
        assert page.evaluate("() => window.sub60Layouts") == 0
        assert not errors, errors
    finally:
        page.close()
