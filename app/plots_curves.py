"""Live plots of curves: transfer Id-Vg, point swing vs current, output Id-Vd, and the
overlays of the pinned designs (on the band diagram and the transfer plot) and of a
measured file's curves (markers on the transfer and output plots).

Each builder makes its Bokeh figure once, with named data sources, and updates those
sources in place.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from bokeh.core.properties import value
from bokeh.models import (
    BasicTicker,
    BasicTickFormatter,
    ColumnDataSource,
    HoverTool,
    Label,
    Legend,
    LegendItem,
    LinearScale,
    LogScale,
    LogTicker,
    LogTickFormatter,
    Range1d,
    Span,
)
from bokeh.plotting import figure

from sub60.app.plot_style import COLOURS, ID_FLOOR_UA_PER_UM, TOOLS, positive_or_nan
from sub60.app.theme import OUTPUT_COLOURS, PIN_COLOURS

N_OUTPUT_SLOTS = len(OUTPUT_COLOURS)
N_PIN_SLOTS = len(PIN_COLOURS)
#: Legend names of the first device: tunnel FET (p+ source) or MOSFET (n+ source).
DEVICE_NAMES = ("tunnel FET", "MOSFET (n+ source)")
_DEVICES = (("twin", "MOSFET twin", COLOURS["twin"], "dashed"),
            ("tfet", "tunnel FET", COLOURS["tfet"], "solid"))


def _rename_device(fig, name: str) -> None:
    for item in fig.legend[0].items:
        if item.label in (value(n) for n in DEVICE_NAMES) and item.label != value(name):
            item.label = value(name)


class TransferPlot:
    """Transfer curves of the design ('tfet') and its twin on a log axis, the thermionic
    limit slope, the Ioff target and the marker of the present bias."""

    def __init__(self) -> None:
        f = figure(name="transfer_plot", title="Transfer curve", y_axis_type="log",
                   x_axis_label="Gate voltage Vg (V)", y_axis_label="Drain current Id (µA/µm)",
                   tools=TOOLS)
        self.transfer_sources = {}
        for key, label, colour, dash in _DEVICES:
            src = ColumnDataSource({"vg": [], "id": [], "btbt": [], "therm": [], "ss": []},
                                   name=f"transfer_{key}_source")
            r = f.line("vg", "id", source=src, line_color=colour, line_width=2.4,
                       line_dash=dash, legend_label=label, name=f"transfer_{key}")
            f.scatter("vg", "id", source=src, size=3.5, color=colour, legend_label=label)
            f.add_tools(HoverTool(renderers=[r], tooltips=[
                ("", label), ("Vg", "@vg{0.000} V"), ("Id", "@id{0.00e+0} µA/µm"),
                ("band-to-band", "@btbt{0.00e+0}"), ("thermionic", "@therm{0.00e+0}"),
                ("SS", "@ss{0.0} mV/dec")]))
            self.transfer_sources[key] = src
        self.limit_source = ColumnDataSource({"vg": [], "id": []}, name="limit_source")
        lim = f.line("vg", "id", source=self.limit_source, line_color=COLOURS["limit"],
                     line_dash="dotted", line_width=2, name="limit_line")
        f.add_tools(HoverTool(renderers=[lim], tooltips=[("", "thermionic limit slope")]))
        self.limit_item = LegendItem(label=value("thermionic limit"), renderers=[lim])
        self.ioff_span = Span(location=1e-3, dimension="width", line_color=COLOURS["target"],
                              line_dash="dashdot", line_width=1)
        f.add_layout(self.ioff_span)
        self.ioff_label = Label(x=6, y=1e-3, x_units="screen", text="Ioff target",
                                text_font_size="10px", text_color=COLOURS["target_text"],
                                y_offset=2)
        f.add_layout(self.ioff_label)
        self.vg_marker_source = ColumnDataSource({"vg": [], "id": []}, name="vg_marker_source")
        mk = f.scatter("vg", "id", source=self.vg_marker_source, marker="diamond", size=13,
                       fill_color=COLOURS["marker"], line_color="white", legend_label="present Vg")
        f.add_tools(HoverTool(renderers=[mk], tooltips=[
            ("present bias", ""), ("Vg", "@vg{0.000} V"), ("Id", "@id{0.00e+0} µA/µm")]))
        self.vg_span = Span(location=0.3, dimension="height", line_color=COLOURS["marker"],
                            line_alpha=0.35, line_width=1)
        f.add_layout(self.vg_span)
        f.legend[0].items = [*f.legend[0].items, self.limit_item]
        #: other sources with an "id" column the current axis makes room for (measured)
        self.extra_sources: list[ColumnDataSource] = []
        self.figure = f
        self.limit_line = lim
        self.linear = False  # the current axis: log (default) or linear

    def set_linear(self, linear: bool) -> None:
        """The current axis linear (from 0, on-currents readable) or logarithmic (from the
        lowest drawn current). The thermionic-limit slope is a line only on the log axis,
        so it is hidden on the linear one."""
        if linear == self.linear:
            return
        self.linear = linear
        f = self.figure
        axis = f.yaxis[0]
        if linear:
            f.y_scale = LinearScale()
            axis.ticker = BasicTicker()
            axis.formatter = BasicTickFormatter(precision=1, power_limit_low=-3)
        else:
            f.y_scale = LogScale()
            axis.ticker = LogTicker()
            axis.formatter = LogTickFormatter()
        f.y_range.only_visible = linear
        self.limit_line.visible = not linear
        self.limit_item.visible = not linear
        self._floor_axis()

    def show(self, key: str, vg: np.ndarray, ids: np.ndarray, btbt: np.ndarray | None,
             therm: np.ndarray | None, ss: np.ndarray) -> None:
        """One device's curve: gate voltages [V], currents for the log axis [uA/um], the
        band-to-band and thermionic parts (None: unknown) and point swing [mV/dec]."""
        nan = np.full_like(vg, np.nan)
        self.transfer_sources[key].data = {
            "vg": vg, "id": ids, "btbt": nan if btbt is None else np.asarray(btbt, float),
            "therm": nan if therm is None else np.asarray(therm, float), "ss": ss}
        self._floor_axis()

    def _floor_axis(self) -> None:
        """The current axis starts at the lowest drawn current (model curves and the
        measured points), not below `ID_FLOOR_UA_PER_UM` (its end follows the data); a
        linear axis starts at 0."""
        if self.linear:
            self.figure.y_range.start = 0.0
            return
        sources = [*self.transfer_sources.values(), *self.extra_sources]
        lows = [np.nanmin(v) for src in sources
                if (v := np.asarray(src.data["id"], float)).size and np.isfinite(v).any()]
        low = max(min(lows), ID_FLOOR_UA_PER_UM) if lows else ID_FLOOR_UA_PER_UM
        self.figure.y_range.start = low / 2

    def show_marker(self, vg_V: float, current_uA_per_um: float) -> None:
        """The present bias on the curve (no marker for a current that is not positive)."""
        self.vg_marker_source.data = {"vg": [vg_V],
                                      "id": [current_uA_per_um if current_uA_per_um > 0
                                             else np.nan]}
        self.vg_span.location = vg_V

    def show_limits(self, limit_mV_per_dec: float, text: str, ioff_uA_per_um: float,
                    anchor_vg: float | None, anchor_id: float | None, vg_end: float) -> None:
        """Thermionic-limit slope from (anchor_vg [V], anchor_id [uA/um]) over 0.5 to 5
        decades towards vg_end [V], and the Ioff target [uA/um]."""
        self.limit_item.label = value(text)
        self.ioff_span.location = ioff_uA_per_um
        self.ioff_label.y = ioff_uA_per_um
        if anchor_vg is None or anchor_id is None or not anchor_id > 0:
            self.limit_source.data = {"vg": [], "id": []}
            return
        limit = limit_mV_per_dec
        decades = max(0.5, min(5.0, (vg_end - anchor_vg) * 1e3 / limit))
        self.limit_source.data = {"vg": [anchor_vg, anchor_vg + decades * limit * 1e-3],
                                  "id": [anchor_id, anchor_id * 10 ** decades]}

    def name_device(self, name: str) -> None:
        """Legend name of the first device (one of `DEVICE_NAMES`)."""
        _rename_device(self.figure, name)


def rising_branch(vg: np.ndarray, ids: np.ndarray, ss: np.ndarray, ss_top: float
                  ) -> dict[str, np.ndarray]:
    """Columns (id, ss, vg) of a curve's rising branch for the swing plot: the points
    above its current minimum (the swing diverges at the minimum and is negative on the
    ambipolar side) with a current above `ID_FLOOR_UA_PER_UM`; a swing above ``ss_top``
    [mV/dec] is a gap in the line, not a vertical spike."""
    vg, ids, ss = (np.asarray(a, float) for a in (vg, ids, ss))
    ok = np.isfinite(ids) & np.isfinite(ss) & (ss > 0) & (ids >= ID_FLOOR_UA_PER_UM)
    if np.isfinite(ids).any():
        ok &= np.arange(ids.size) > int(np.nanargmin(ids))
    ss = np.where(ss <= ss_top, ss, np.nan)
    return {"id": ids[ok], "ss": ss[ok], "vg": vg[ok]}


class SwingPlot:
    """Point swing against current for both devices, with the thermionic limit and the
    Ioff target."""

    def __init__(self) -> None:
        f = figure(name="swing_plot", title="Point swing vs current", x_axis_type="log",
                   x_axis_label="Drain current Id (µA/µm)", y_axis_label="SS (mV/dec)",
                   y_range=Range1d(0, 200), tools=TOOLS)
        self.swing_sources = {}
        for key, label, colour, dash in _DEVICES:
            src = ColumnDataSource({"id": [], "ss": [], "vg": []}, name=f"swing_{key}_source")
            r = f.line("id", "ss", source=src, line_color=colour, line_width=2.4,
                       line_dash=dash, legend_label=label)
            f.scatter("id", "ss", source=src, size=3.5, color=colour, legend_label=label)
            f.add_tools(HoverTool(renderers=[r], tooltips=[
                ("", label), ("Id", "@id{0.00e+0} µA/µm"), ("SS", "@ss{0.0} mV/dec"),
                ("Vg", "@vg{0.000} V")]))
            self.swing_sources[key] = src
        self.swing_limit = Span(location=59.5, dimension="width", line_color=COLOURS["limit"],
                                line_dash="dotted", line_width=2)
        f.add_layout(self.swing_limit)
        self.swing_limit_label = Label(x=8, y=59.5, x_units="screen", text="", y_offset=3,
                                       text_align="left", text_font_size="11px",
                                       text_color=COLOURS["limit"], name="swing_limit_label")
        f.add_layout(self.swing_limit_label)
        self.swing_ioff = Span(location=1e-3, dimension="height", line_color=COLOURS["target"],
                               line_dash="dashdot", line_width=1)
        f.add_layout(self.swing_ioff)
        self.figure = f

    def show(self, key: str, vg: np.ndarray, ids: np.ndarray, ss: np.ndarray) -> None:
        """One device's rising branch: the points above its current minimum (the swing
        diverges at the minimum and is negative on the ambipolar side), with a current
        above `ID_FLOOR_UA_PER_UM`; a swing beyond the axis is a gap in the line, not a
        vertical spike."""
        self.swing_sources[key].data = rising_branch(vg, ids, ss, self.figure.y_range.end)

    def show_limits(self, limit_mV_per_dec: float, text: str, ioff_uA_per_um: float) -> None:
        """The thermionic limit [mV/dec] (the axis reaches 2.5 times it) and Ioff target."""
        self.swing_limit.location = limit_mV_per_dec
        self.swing_limit_label.update(y=limit_mV_per_dec, text=text)
        self.figure.y_range.end = max(200.0, 2.5 * limit_mV_per_dec)
        self.swing_ioff.location = ioff_uA_per_um

    def name_device(self, name: str) -> None:
        """Legend name of the first device (one of `DEVICE_NAMES`)."""
        _rename_device(self.figure, name)


class OutputPlot:
    """Output curves Id-Vd, one slot per gate voltage (`N_OUTPUT_SLOTS`), and the present
    drain voltage."""

    def __init__(self) -> None:
        f = figure(name="output_plot", title="Output curves (tunnel FET)",
                   x_axis_label="Drain voltage Vd (V)", y_axis_label="Id (µA/µm)", tools=TOOLS)
        self.output_sources = []
        self.output_items = []
        for k in range(N_OUTPUT_SLOTS):
            src = ColumnDataSource({"vd": [], "id": [], "vg": []}, name=f"output_source_{k}")
            r = f.line("vd", "id", source=src, line_color=OUTPUT_COLOURS[k], line_width=2.2)
            f.add_tools(HoverTool(renderers=[r], tooltips=[
                ("Vg", "@vg{0.00} V"), ("Vd", "@vd{0.000} V"), ("Id", "@id{0.000e+0} µA/µm")]))
            self.output_sources.append(src)
            self.output_items.append(LegendItem(label=value(" "), renderers=[r], visible=False))
        # hidden while it has no visible entry (a column layout of no entries fails in
        # the browser: "Out of bounds")
        self.legend = Legend(items=self.output_items, visible=False, name="output_legend")
        f.add_layout(self.legend)
        self.vd_span = Span(location=0.3, dimension="height", line_color=COLOURS["marker"],
                            line_alpha=0.35, line_width=1)
        f.add_layout(self.vd_span)
        self.figure = f

    def show(self, curves: Sequence) -> None:
        """Output curves (`physics.simulate.OutputCurve`), lowest Vg first; unused slots
        are emptied."""
        for k in range(N_OUTPUT_SLOTS):
            if k < len(curves):
                c = curves[k]
                vd = np.asarray(c.vd_V, float)
                self.output_sources[k].data = {"vd": vd, "id": np.asarray(c.id_uA_per_um, float),
                                               "vg": np.full_like(vd, c.vg_V)}
                self.output_items[k].label = value(f"Vg = {c.vg_V + 0.0:.2f} V".replace("-0.00", "0.00"))
                self.output_items[k].visible = True
            else:
                self.output_sources[k].data = {"vd": [], "id": [], "vg": []}
                self.output_items[k].visible = False
        self.legend.visible = any(item.visible for item in self.legend.items)


class PinOverlays:
    """Overlay slots of the pinned designs: conduction and valence edges on the band
    diagram (thin dashed), the tunnel-FET curve on the transfer plot, its point swing on
    the swing plot and its output curve at the present Vg (dashed) on the output plot;
    each slot has its colour (`PIN_COLOURS`) and one legend entry (click to hide) on the
    band and transfer plots."""

    def __init__(self, band, transfer, swing=None, output=None) -> None:
        # every slot's lines, sources, tools and legend entries are made when the slot is
        # first drawn (a page opens without the 8 slots' 24 lines nobody may need)
        self.band, self.transfer = band, transfer
        self.pin_band_sources: dict[int, ColumnDataSource] = {}
        self.pin_transfer_sources: dict[int, ColumnDataSource] = {}
        self.pin_swing_sources: dict[int, ColumnDataSource] = {}
        self.pin_output_sources: dict[int, ColumnDataSource] = {}
        self.swing, self.output = swing, output
        self.pin_band_items: dict[int, LegendItem] = {}
        self.pin_transfer_items: dict[int, LegendItem] = {}
        self.pin_legends = {}
        for key, fig, where in (("band", band, "top_right"), ("transfer", transfer, "top_left")):
            leg = Legend(items=[], location=where, click_policy="hide", visible=False,
                         name=f"pin_{key}_legend", title="pinned", title_text_font_size="10px",
                         title_text_font_style="italic", background_fill_alpha=0.8,
                         label_text_font_size="10px", spacing=0, padding=3,
                         margin=18 if key == "band" else 4,  # below the region labels
                         glyph_width=16, glyph_height=12, label_height=12)
            fig.add_layout(leg)
            self.pin_legends[key] = leg

    def _make_slot(self, k: int) -> None:
        """The slot's band edges and transfer curve with their tools and legend entries
        (once)."""
        if k in self.pin_band_sources:
            return
        band, transfer, colour = self.band, self.transfer, PIN_COLOURS[k]
        src_band = ColumnDataSource({"x_nm": [], "ec_eV": [], "ev_eV": [], "name": []},
                                    name=f"pin_band_source_{k}")
        rs = [band.line("x_nm", edge, source=src_band, line_color=colour, line_width=1.4,
                        line_dash="dashed", line_alpha=0.95, name=f"pin_band_{tag}_{k}")
              for edge, tag in (("ec_eV", "ec"), ("ev_eV", "ev"))]
        band.add_tools(HoverTool(renderers=rs, tooltips=[
            ("pinned", "@name"), ("x", "@x_nm{0.0} nm"), ("Ec", "@ec_eV{0.000} eV"),
            ("Ev", "@ev_eV{0.000} eV")]))
        src_transfer = ColumnDataSource({"vg": [], "id": [], "name": []},
                                        name=f"pin_transfer_source_{k}")
        rt = transfer.line("vg", "id", source=src_transfer, line_color=colour,
                           line_width=1.8, name=f"pin_transfer_{k}")
        transfer.add_tools(HoverTool(renderers=[rt], tooltips=[
            ("pinned", "@name"), ("Vg", "@vg{0.000} V"), ("Id", "@id{0.00e+0} µA/µm")]))
        for r in (*rs, rt):
            r.nonselection_glyph = r.muted_glyph = "auto"  # as `plot_style.slim_renderers`
        self.pin_band_sources[k] = src_band
        self.pin_transfer_sources[k] = src_transfer
        self.pin_band_items[k] = LegendItem(label=value(" "), renderers=rs, visible=False)
        self.pin_transfer_items[k] = LegendItem(label=value(" "), renderers=[rt], visible=False)
        for key, items in (("band", self.pin_band_items), ("transfer", self.pin_transfer_items)):
            self.pin_legends[key].items = [items[j] for j in sorted(items)]  # slot order

    def show(self, slot: int, name: str, bias=None, curve=None) -> None:
        """A pinned design in a slot: its name, and (when given) its band edges at the
        present bias (`physics.simulate.BiasPoint`) and its transfer curve
        (`physics.simulate.TransferCurve`); what is not given stays as it was."""
        self._make_slot(slot)
        for item in (self.pin_band_items[slot], self.pin_transfer_items[slot]):
            item.label = value(name)
            item.visible = True
        if bias is not None:
            x = np.asarray(bias.x_nm, float)
            self.pin_band_sources[slot].data = {
                "x_nm": x, "ec_eV": np.asarray(bias.subband_ec_eV, float),
                "ev_eV": np.asarray(bias.subband_ev_eV, float), "name": [name] * x.size}
        else:
            src = self.pin_band_sources[slot]
            src.data = {**src.data, "name": [name] * len(src.data["x_nm"])}
        if curve is not None:
            vg = np.asarray(curve.vg_V, float)
            ids = positive_or_nan(curve.id_uA_per_um)
            self.pin_transfer_sources[slot].data = {"vg": vg, "id": ids,
                                                    "name": [name] * vg.size}
            if self.swing is not None:
                cols = rising_branch(vg, ids, curve.ss_mV_per_dec, self.swing.y_range.end)
                self._swing_source(slot).data = {**cols, "name": [name] * cols["id"].size}
        else:
            src = self.pin_transfer_sources[slot]
            src.data = {**src.data, "name": [name] * len(src.data["vg"])}
        for src in (self.pin_swing_sources.get(slot), self.pin_output_sources.get(slot)):
            if src is not None:
                n = len(next(iter(src.data.values())))
                src.data = {**src.data, "name": [name] * n}
        self._update_legends()

    def _swing_source(self, slot: int) -> ColumnDataSource:
        """The slot's source on the swing plot (its line made on first use)."""
        if slot not in self.pin_swing_sources:
            src = ColumnDataSource({"id": [], "ss": [], "vg": [], "name": []},
                                   name=f"pin_swing_source_{slot}")
            r = self.swing.line("id", "ss", source=src, line_color=PIN_COLOURS[slot],
                                line_width=1.6, name=f"pin_swing_{slot}")
            r.nonselection_glyph = r.muted_glyph = "auto"  # as `plot_style.slim_renderers`
            self.swing.add_tools(HoverTool(renderers=[r], tooltips=[
                ("pinned", "@name"), ("Id", "@id{0.00e+0} µA/µm"), ("SS", "@ss{0.0} mV/dec"),
                ("Vg", "@vg{0.000} V")]))
            self.pin_swing_sources[slot] = src
        return self.pin_swing_sources[slot]

    def _output_source(self, slot: int) -> ColumnDataSource:
        """The slot's source on the output plot (its line made on first use)."""
        if slot not in self.pin_output_sources:
            src = ColumnDataSource({"vd": [], "id": [], "vg": [], "name": []},
                                   name=f"pin_output_source_{slot}")
            r = self.output.line("vd", "id", source=src, line_color=PIN_COLOURS[slot],
                                 line_width=1.6, line_dash="dashed", name=f"pin_output_{slot}")
            r.nonselection_glyph = r.muted_glyph = "auto"
            self.output.add_tools(HoverTool(renderers=[r], tooltips=[
                ("pinned", "@name"), ("Vg", "@vg{0.00} V"), ("Vd", "@vd{0.000} V"),
                ("Id", "@id{0.000e+0} µA/µm")]))
            self.pin_output_sources[slot] = src
        return self.pin_output_sources[slot]

    def show_output(self, slot: int, name: str, curve) -> None:
        """A pinned design's output curve (`physics.simulate.OutputCurve`) on the output
        plot (dashed, in the slot's colour)."""
        if self.output is None:
            return
        vd = np.asarray(curve.vd_V, float)
        self._output_source(slot).data = {
            "vd": vd, "id": np.asarray(curve.id_uA_per_um, float),
            "vg": np.full_like(vd, curve.vg_V), "name": [name] * vd.size}

    def clear(self, slot: int) -> None:
        """Empty a slot."""
        if slot not in self.pin_band_sources:
            return  # never drawn
        self.pin_band_sources[slot].data = {"x_nm": [], "ec_eV": [], "ev_eV": [], "name": []}
        self.pin_transfer_sources[slot].data = {"vg": [], "id": [], "name": []}
        for src in (self.pin_swing_sources.get(slot), self.pin_output_sources.get(slot)):
            if src is not None:
                src.data = {k: [] for k in src.data}
        for item in (self.pin_band_items[slot], self.pin_transfer_items[slot]):
            item.visible = False
            for r in item.renderers:  # a slot used again starts shown
                r.visible = True
        self._update_legends()

    def _update_legends(self) -> None:
        n = sum(1 for item in self.pin_transfer_items.values() if item.visible)
        for leg in self.pin_legends.values():
            leg.visible = n > 0
            leg.ncols = 1 if n <= 4 else 2


class MeasuredOverlay:
    """A measured file's curves as markers (open circles, no line) on the transfer plot
    and the output plot, each with one legend entry "measured (file name)" that is shown
    only while there are points.

    Sources ``measured_transfer_source`` (vg, id, vd) and ``measured_output_source``
    (vd, id, vg); renderers ``measured_transfer`` and ``measured_output``.
    """

    def __init__(self, transfer: TransferPlot, output: OutputPlot) -> None:
        colour = COLOURS["measured"]
        self._transfer = transfer
        self.transfer_source = ColumnDataSource({"vg": [], "id": [], "vd": []},
                                                name="measured_transfer_source")
        rt = transfer.figure.scatter("vg", "id", source=self.transfer_source, marker="circle",
                                     size=6.5, fill_color=None, line_color=colour,
                                     line_width=1.4, name="measured_transfer")
        transfer.figure.add_tools(HoverTool(renderers=[rt], tooltips=[
            ("", "measured"), ("Vd", "@vd{0.00} V"), ("Vg", "@vg{0.000} V"),
            ("Id", "@id{0.00e+0} µA/µm")]))
        self.output_source = ColumnDataSource({"vd": [], "id": [], "vg": []},
                                              name="measured_output_source")
        ro = output.figure.scatter("vd", "id", source=self.output_source, marker="circle",
                                   size=6, fill_color=None, line_color=colour, line_width=1.4,
                                   name="measured_output")
        output.figure.add_tools(HoverTool(renderers=[ro], tooltips=[
            ("", "measured"), ("Vg", "@vg{0.00} V"), ("Vd", "@vd{0.000} V"),
            ("Id", "@id{0.000e+0} µA/µm")]))
        self.transfer_item = LegendItem(label=value("measured"), renderers=[rt], visible=False)
        self.output_item = LegendItem(label=value("measured"), renderers=[ro], visible=False)
        transfer.figure.legend[0].items = [*transfer.figure.legend[0].items, self.transfer_item]
        output.legend.items = [*output.legend.items, self.output_item]
        self._output = output
        transfer.extra_sources.append(self.transfer_source)

    def show(self, name: str, transfer: Sequence = (), output: Sequence = ()) -> None:
        """The measured curves of a file called ``name``: transfer curves
        (`physics.MeasuredTransfer`) and output curves (`physics.MeasuredOutput`);
        currents that are not positive are left out of the log axis."""
        label = value(f"measured ({name})")
        vg = [np.asarray(c.vg_V, float) for c in transfer]
        self.transfer_source.data = {
            "vg": np.concatenate(vg) if vg else np.array([]),
            "id": (np.concatenate([positive_or_nan(c.id_uA_per_um) for c in transfer])
                   if vg else np.array([])),
            "vd": (np.concatenate([np.full(v.size, c.vd_V) for v, c in zip(vg, transfer,
                                                                             strict=True)])
                   if vg else np.array([]))}
        vd = [np.asarray(c.vd_V, float) for c in output]
        self.output_source.data = {
            "vd": np.concatenate(vd) if vd else np.array([]),
            "id": (np.concatenate([np.asarray(c.id_uA_per_um, float) for c in output])
                   if vd else np.array([])),
            "vg": (np.concatenate([np.full(v.size, c.vg_V) for v, c in zip(vd, output,
                                                                             strict=True)])
                   if vd else np.array([]))}
        self.transfer_item.label = self.output_item.label = label
        self.transfer_item.visible = bool(vg)
        self.output_item.visible = bool(vd)
        self._output.legend.visible = any(i.visible for i in self._output.legend.items)
        self._transfer._floor_axis()

    def clear(self) -> None:
        """No measured curve."""
        self.show("", (), ())


class TradeoffPlot:
    """Ion against the Ioff target (log–log) of the design, its MOSFET twin and the
    pinned designs, each from its computed transfer curve (`app.tables.tradeoff_table`),
    with the present Ioff target marked. Made when its section is first opened."""

    def __init__(self) -> None:
        f = figure(name="tradeoff_plot", title="Ion against the Ioff target",
                   x_axis_type="log", y_axis_type="log", tools=TOOLS,
                   x_axis_label="Ioff target (µA/µm)",
                   y_axis_label="Ion at Voff + Vdd (µA/µm)")
        self.sources: dict[str, ColumnDataSource] = {}
        renderers = []
        lines = [(key, label, colour, dash, 2.4) for key, label, colour, dash in _DEVICES]
        lines += [(f"pin_{k}", "", colour, "solid", 1.8) for k, colour in enumerate(PIN_COLOURS)]
        items = []
        for key, label, colour, dash, width in lines:
            src = ColumnDataSource({"ioff": [], "ion": [], "voff": [], "name": []},
                                   name=f"tradeoff_{key}_source")
            r = f.line("ioff", "ion", source=src, line_color=colour, line_width=width,
                       line_dash=dash, name=f"tradeoff_{key}")
            r.nonselection_glyph = r.muted_glyph = "auto"
            renderers.append(r)
            items.append(LegendItem(label=value(label or " "), renderers=[r],
                                    visible=bool(label)))
            self.sources[key] = src
        f.add_tools(HoverTool(renderers=renderers, tooltips=[
            ("", "@name"), ("Ioff target", "@ioff{0.00e+0} µA/µm"), ("Voff", "@voff{0.000} V"),
            ("Ion", "@ion{0.00e+0} µA/µm")]))
        self.items = dict(zip([key for key, *_ in lines], items, strict=True))
        self.legend = Legend(items=items, location="top_left", click_policy="hide",
                             label_text_font_size="11px", background_fill_alpha=0.8,
                             name="tradeoff_legend")
        f.add_layout(self.legend)
        self.ioff_span = Span(location=1e-3, dimension="height", line_color=COLOURS["target"],
                              line_dash="dashdot", line_width=1)
        f.add_layout(self.ioff_span)
        self.ioff_label = Label(x=1e-3, y=6, y_units="screen", text="present Ioff target",
                                text_font_size="10px", text_color=COLOURS["target_text"],
                                x_offset=3)
        f.add_layout(self.ioff_label)
        f.frame_width, f.frame_height = 420, 260
        self.figure = f

    def show(self, key: str, name: str | None, table: dict | None) -> None:
        """One line ('tfet', 'twin' or 'pin_<slot>'): its legend name (None: keep) and its
        `app.tables.tradeoff_table` (None: empty, hidden from the legend)."""
        item = self.items[key]
        if table is None:
            self.sources[key].data = {"ioff": [], "ion": [], "voff": [], "name": []}
            item.visible = False
            return
        label = name or item.label.value
        n = len(table["ioff_uA_per_um"])
        self.sources[key].data = {"ioff": np.asarray(table["ioff_uA_per_um"], float),
                                  "ion": positive_or_nan(table["ion_uA_per_um"]),
                                  "voff": np.asarray(table["voff_V"], float),
                                  "name": [label] * n}
        if name is not None:
            item.label = value(name)
        item.visible = True

    def show_target(self, ioff_uA_per_um: float) -> None:
        """The present Ioff target [uA/um]."""
        self.ioff_span.location = ioff_uA_per_um
        self.ioff_label.x = ioff_uA_per_um
