"""Bokeh figures of the explorer and the functions that fill them from physics results.

`ExplorerFigures` is a thin container of the per-plot builders (`app.plots_bias`:
band diagram, J(E)/T(E), 2D map; `app.plots_curves`: transfer, swing, output, pinned
overlays). Each builder makes its figure once, with named data sources, and updates
those sources in place (`show_bias`, `show_transfer`, `show_outputs`): the browser then
redraws only what changed. The container adds the page sizes and the presentation look.
Display helpers live in `app.plot_style`, number formats and palettes in `app.theme`,
the metrics strip in `app.metrics_strip`; their names stay importable from here.

Test hooks: figures are named ``band_plot``, ``spectrum_plot``, ``transmission_plot``,
``transfer_plot``, ``swing_plot``, ``map_plot``, ``output_plot``; their sources
``band_source``, ``spectrum_source``, ``transmission_source`` (WKB and exact T(E)),
``window_source``, ``transfer_tfet_source``,
``transfer_twin_source``, ``vg_marker_source``, ``limit_source``, ``swing_tfet_source``,
``swing_twin_source``, ``map_source``, ``output_source_0`` ... ; pinned designs
(slot k = 0 ... 7), once drawn: ``pin_band_source_k``, ``pin_transfer_source_k``,
``pin_swing_source_k``, ``pin_output_source_k``; renderers
``pin_band_ec_k``, ``pin_band_ev_k``, ``pin_transfer_k``, legends ``pin_band_legend``,
``pin_transfer_legend``; a measured file: ``measured_transfer_source``,
``measured_output_source`` (renderers ``measured_transfer``, ``measured_output``).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from bokeh.models import Range1d

from sub60.app.metrics_strip import METRIC_COLUMNS, metrics_html
from sub60.app.nonideal_view import IdealOverlay
from sub60.app.plot_style import (
    COLOURS,
    TOOLS,
    positive_or_nan,
    slim_renderers,
    style_figure,
    style_legend,
    uniform_map,
    window_outline,
)
from sub60.app.plots_bias import BandPlot, MapPlot, SpectrumPlots
from sub60.app.plots_curves import (
    DEVICE_NAMES,
    N_OUTPUT_SLOTS,
    N_PIN_SLOTS,
    MeasuredOverlay,
    OutputPlot,
    PinOverlays,
    SwingPlot,
    TransferPlot,
)
from sub60.app.theme import (
    MAP_PALETTE,
    OUTPUT_COLOURS,
    PIN_COLOURS,
    PLOT_FONTS,
    format_current,
    format_ratio,
)
from sub60.physics import thermionic_limit_mV_per_dec

__all__ = ["COLOURS", "MAP_PALETTE", "METRIC_COLUMNS", "N_OUTPUT_SLOTS", "N_PIN_SLOTS",
           "OUTPUT_COLOURS", "PIN_COLOURS", "TOOLS", "ExplorerFigures", "format_current",
           "format_ratio", "metrics_html", "positive_or_nan", "uniform_map", "window_outline"]


class ExplorerFigures:
    """Every figure of the page and its data sources (one set per browser session).

    The builders are ``band_plot``, ``spectrum_plots``, ``map_plot``, ``transfer_plot``,
    ``swing_plot``, ``output_plot`` and ``pins``; their figures and data sources are
    also attributes of this object under their historical names (``band``,
    ``band_source``, ``transfer_sources``, ``pin_legends`` ...).
    """

    #: Rows of the figures: the band diagram, J(E), T(E) and the transfer curve on the
    #: first, the map, output and swing on the second.
    ROWS = {"band": 1, "spectrum": 1, "transmission": 1, "transfer": 1,
            "map": 2, "output": 2, "swing": 2}
    #: Plot-frame heights at the desk [px]: the band diagram, J(E) and T(E) share one frame
    #: height (common energy axis).
    FRAME_HEIGHTS = {"band": 345, "spectrum": 345, "transmission": 345, "transfer": 345,
                     "map": 195, "output": 195, "swing": 195}
    #: Bottom border of every figure of a row [px] (its x axis and the legend below: the
    #: largest of the row fits; one border for the whole row gives its figures one frame
    #: height, the energy axis of the band diagram, J(E) and T(E) included).
    ROW_BORDER_BOTTOM = {1: 118, 2: 116}
    TITLE_HEIGHT = 27  # the title's band above the frames [px] (15 px font)
    #: The figures' heights [px] are those of their rows, CSS variables set on the page
    #: (``--sub60-row1-h``, ``--sub60-row2-h``: `app.layout.PAGE_CSS`): at the desk these
    #: heights (the frame heights above), in presentation the window's height shared out.
    DESK_ROW_HEIGHTS = {1: TITLE_HEIGHT + FRAME_HEIGHTS["band"] + ROW_BORDER_BOTTOM[1],
                        2: TITLE_HEIGHT + FRAME_HEIGHTS["map"] + ROW_BORDER_BOTTOM[2]}
    #: Share of its row's width of each figure [-] (rows: band, J(E), T(E), transfer; map,
    #: output, swing; each row's shares add up to 1132, so the band diagram and the 2D map
    #: under it get the same width and, with the same borders, the same frame: common x
    #: axis). At a 1600 px window with the controls shown these are about the figures'
    #: widths in px.
    WIDTH_SHARES = {"band": 480, "spectrum": 145, "transmission": 145, "transfer": 362,
                    "map": 480, "output": 310, "swing": 342}
    #: Narrowest width of each figure [px]: its legend and axis labels fit. A row narrower
    #: than its figures' sum (a 1280 px window with the controls shown) wraps its last
    #: figure onto a line of its own instead of cutting legends.
    MIN_WIDTHS = {"band": 480, "spectrum": 130, "transmission": 150, "transfer": 380,
                  "map": 480, "output": 280, "swing": 300}
    LEFT_BORDER = {"band": 74, "map": 74, "spectrum": 6, "transmission": 6}
    #: Attributes of the builders shown here under the same name (the page and the tests
    #: use them).
    _SHARED = {
        "band_plot": ("gate_box", "region_labels", "window_source", "window_closed",
                      "band_source", "fermi_source", "fermi_labels", "band_items"),
        "spectrum_plots": ("spectrum_source", "transmission_source", "spectrum_total", "t_ticker",
                           "transmission_note", "fermi_spans", "spectrum", "transmission"),
        "map_plot": ("colour_mapper", "map_source", "body_spans", "gates_source"),
        "transfer_plot": ("transfer_sources", "limit_source", "limit_item", "ioff_span",
                          "ioff_label", "vg_marker_source", "vg_span"),
        "swing_plot": ("swing_sources", "swing_limit", "swing_limit_label", "swing_ioff"),
        "output_plot": ("output_sources", "output_items", "vd_span"),
        "pins": ("pin_band_sources", "pin_transfer_sources", "pin_band_items",
                 "pin_transfer_items", "pin_legends"),
    }

    def __init__(self) -> None:
        self.energy_range = Range1d(-1.2, 0.8, name="energy_range")
        self.x_range = Range1d(0.0, 70.0, name="position_range")
        self.output_title = "Output curves (tunnel FET)"
        self.band_plot = BandPlot(self.x_range, self.energy_range)
        self.spectrum_plots = SpectrumPlots(self.energy_range)
        self.transfer_plot = TransferPlot()
        self.swing_plot = SwingPlot()
        self.map_plot = MapPlot(self.x_range)
        self.output_plot = OutputPlot()
        self.band = self.band_plot.figure
        self._band_renderers = self.band_plot.renderers
        self.transfer = self.transfer_plot.figure
        self.swing = self.swing_plot.figure
        self.map = self.map_plot.figure
        self.output = self.output_plot.figure
        self.pins = PinOverlays(self.band, self.transfer, self.swing, self.output)
        self.nonideal = IdealOverlay(self)  # ideal curves, band-tail fringes
        self.measured = MeasuredOverlay(self.transfer_plot, self.output_plot)  # a file's points
        for builder, names in self._SHARED.items():
            for name in names:
                setattr(self, name, getattr(getattr(self, builder), name))
        self.figures = {"band": self.band, "spectrum": self.spectrum,
                        "transmission": self.transmission, "transfer": self.transfer,
                        "map": self.map, "output": self.output, "swing": self.swing}
        for fig in self.figures.values():
            style_figure(fig)
            slim_renderers(fig)
        # legends below the plot areas, out of the data's way (inside they covered the
        # valence band, the tunnel FET's current minimum, the Ioff crossing and the top
        # output curve); below, the band frame stays level with the J(E) and T(E) frames
        style_legend(self.band, side="below", columns=3)
        style_legend(self.transfer, side="below", columns=2)  # 3 across clip at 1600 px
        style_legend(self.swing, side="below", columns=2)
        style_legend(self.output, side="below", columns=2)  # 4 across clip below 1600 px
        style_legend(self.transmission, side="below", columns=1)
        self._size_and_fonts()

    # ------------------------------------------------------------------ updates
    def show_bias(self, bp, transmissions=None) -> None:
        """Band diagram, tunnel window, J(E), 2D map and the Vg marker of one bias point
        (`physics.simulate.BiasPoint`); the WKB and exact T(E) of ``transmissions`` (a
        `physics.TransmissionComparison`, None: no pair carries current)."""
        self.band_plot.show(bp)
        self.nonideal.show_tails(bp)
        self._name_devices(bp.design.source_type)
        self.spectrum_plots.show(bp, transmissions)
        self.map_plot.show(bp)
        self.transfer_plot.show_marker(bp.vg_V, bp.current_uA_per_um)
        self.output_plot.vd_span.location = bp.vd_V

    def _name_devices(self, source_type: str) -> None:
        """Legend names of the first device: tunnel FET (p+ source) or MOSFET (n+)."""
        name = DEVICE_NAMES[0] if source_type == "p" else DEVICE_NAMES[1]
        self.transfer_plot.name_device(name)
        self.swing_plot.name_device(name)
        title = "Output curves (tunnel FET)" if source_type == "p" else "Output curves (MOSFET)"
        self.output_title = title

    def show_transfer(self, key: str, vg: np.ndarray, current: np.ndarray,
                      btbt: np.ndarray | None = None, therm: np.ndarray | None = None,
                      ss: np.ndarray | None = None) -> None:
        """Transfer curve of 'tfet' or 'twin' (complete or partial) and its point swing."""
        vg = np.asarray(vg, float)
        ids = positive_or_nan(current)
        ss = np.full_like(vg, np.nan) if ss is None else np.asarray(ss, float)
        self.transfer_plot.show(key, vg, ids, btbt, therm, ss)
        self.swing_plot.show(key, vg, ids, ss)

    def show_limits(self, temperature_K: float, ioff_uA_per_um: float, anchor_vg: float | None,
                    anchor_id: float | None, vg_end: float) -> None:
        """Thermionic-limit slope line from (anchor_vg, anchor_id) on the transfer plot,
        the limit on the swing plot, and the Ioff target."""
        limit = thermionic_limit_mV_per_dec(temperature_K)
        text = f"thermionic limit {limit:.1f} mV/dec"
        self.swing_plot.show_limits(limit, text, ioff_uA_per_um)
        self.transfer_plot.show_limits(limit, text, ioff_uA_per_um, anchor_vg, anchor_id, vg_end)

    def show_outputs(self, curves: Sequence) -> None:
        """Output curves (`physics.simulate.OutputCurve`), lowest Vg first; unused slots
        are emptied."""
        self.output_plot.show(curves)

    def clear_outputs(self) -> None:
        self.show_outputs([])

    def show_measured(self, name: str, data=None) -> None:
        """A measured file's curves (`physics.MeasuredData`; None: none) as markers on
        the transfer and output plots, in the legend as "measured (name)"."""
        if data is None:
            self.measured.clear()
        else:
            self.measured.show(name, data.transfer, data.output)

    def show_pin(self, slot: int, name: str, bias=None, curve=None) -> None:
        """Show a pinned design in a slot: its name, and (when given) its band edges at
        the present bias (`physics.simulate.BiasPoint`) and its transfer curve
        (`physics.simulate.TransferCurve`); what is not given stays as it was."""
        self.pins.show(slot, name, bias, curve)

    def show_pin_output(self, slot: int, name: str, curve) -> None:
        """A pinned design's output curve (`physics.simulate.OutputCurve`)."""
        self.pins.show_output(slot, name, curve)

    def clear_pin(self, slot: int) -> None:
        """Empty a pinned-design slot."""
        self.pins.clear(slot)

    # ------------------------------------------------------------------ sizes
    def _size_and_fonts(self) -> None:
        """Sizes, borders and fonts of every figure. Each figure stretches over its share of
        its row (`WIDTH_SHARES`, as CSS flex-grow with a zero basis) and over its row's
        height, a CSS variable of the page (`DESK_ROW_HEIGHTS`; in presentation the
        window's height shared out, `app.layout.PAGE_CSS`): the browser lays the figures
        out again when the window or the page changes (the presentation mode hides the
        controls and sets the heights by a class of the page; no figure property changes
        then, and one reflow of the page resizes them all)."""
        for key, fig in self.figures.items():
            row = self.ROWS[key]
            fig.frame_width, fig.width, fig.frame_height = None, None, None
            fig.height = self.DESK_ROW_HEIGHTS[row]  # the layout's; CSS sets the drawn one
            fig.sizing_mode = "stretch_width"
            # CSS only (a model min_width would be summed by Panel into the page's own
            # minimum width, the hidden sidebar's included, and the page would overflow)
            fig.styles = {"flex": f"{self.WIDTH_SHARES[key]} 1 0px",
                          "min-width": f"{self.MIN_WIDTHS[key]}px",
                          "height": f"var(--sub60-row{row}-h, {self.DESK_ROW_HEIGHTS[row]}px)"}
            fig.min_border_bottom = self.ROW_BORDER_BOTTOM[row]
            fig.min_border_left = self.LEFT_BORDER.get(key, 58)
            fig.min_border_right = 12
            fig.title.text_font_size = PLOT_FONTS["title"]
            for axis in (*fig.xaxis, *fig.yaxis):
                axis.axis_label_text_font_size = PLOT_FONTS["axis_label"]
                axis.major_label_text_font_size = PLOT_FONTS["tick"]
            if key in ("spectrum", "transmission"):  # energy labels are on the band diagram
                fig.yaxis.major_label_text_font_size = "0px"
            for leg in fig.legend:
                if not str(leg.name or "").startswith("pin_"):  # pinned: a small inset
                    leg.label_text_font_size = PLOT_FONTS["legend"]
        for lab in (*self.band_plot.labels, *self.spectrum_plots.labels,
                    self.swing_limit_label):
            lab.text_font_size = PLOT_FONTS["label"]
        # drawn on the canvas (no stylesheet reaches them): sized for a projector in both
        # looks, the Ioff target's label as large as the axis labels, the map's colour bar
        # thicker with its labels at the ticks' size
        ioff = self.transfer_plot.ioff_label
        ioff.text_font_size = PLOT_FONTS["axis_label"]
        ioff.text_font_style = "bold"
        bar = self.map_plot.colour_bar
        bar.height = 14
        bar.title_text_font_size = PLOT_FONTS["axis_label"]
        bar.major_label_text_font_size = PLOT_FONTS["tick"]
