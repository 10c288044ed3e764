"""Browser test: no legend covers data. Every curve of the band diagram, transfer,
swing and output plots is drawn inside the plot's frame (the area between the axes), so
a legend whose drawn box lies outside that frame covers no curve, at the desk look and in
presentation mode. Boxes are read from Bokeh's own views (``Bokeh.index``) in canvas
pixels."""

from __future__ import annotations

import pytest

from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

PLOTS = ("band_plot", "transfer_plot", "swing_plot", "output_plot")

OVERLAPS = """(names) => names.map(name => {
  const fig = sub60.model(name);
  const view = Bokeh.index.find_one(fig);
  const f = view.frame.bbox;
  const legends = [...fig.center, ...fig.above, ...fig.below, ...fig.left, ...fig.right]
    .filter(m => m.type === 'Legend' && m.visible && m.items.some(i => i.visible !== false));
  return legends.map(leg => {
    const b = Bokeh.index.find_one(leg).bbox;
    const w = Math.min(b.x1, f.x1) - Math.max(b.x0, f.x0);
    const h = Math.min(b.y1, f.y1) - Math.max(b.y0, f.y0);
    return {plot: name, legend: leg.name || leg.id, overlap_px2: Math.max(0, w) * Math.max(0, h)};
  });
}).flat()"""


def _assert_no_legend_in_frames(page) -> None:
    rows = page.evaluate(OVERLAPS, list(PLOTS))
    main = [r for r in rows if not str(r["legend"]).startswith("pin_")]
    assert len(main) == len(PLOTS), rows  # each plot has its legend, and it is drawn
    covering = [r for r in main if r["overlap_px2"] > 0]
    assert not covering, covering


def test_legends_cover_no_data(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        _assert_no_legend_in_frames(page)
        page.get_by_role("button", name="Presentation mode").click()
        page.wait_for_function("() => sub60.presenting()", timeout=60_000)
        _assert_no_legend_in_frames(page)
        assert not errors, errors
    finally:
        page.close()
