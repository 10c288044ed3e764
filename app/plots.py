"""Bokeh figures of the explorer and the functions that fill them from physics results.

`ExplorerFigures` builds every figure once, with named data sources, and updates those
sources in place (`show_bias`, `show_transfer`, `show_outputs`): the browser then redraws
only what changed. Display helpers here reshape physics output for the screen (a tunnel
window outline, a uniform resampling of the 2D map, number formatting); they compute no
physics.

Test hooks: figures are named ``band_plot``, ``spectrum_plot``, ``transmission_plot``,
``transfer_plot``, ``swing_plot``, ``map_plot``, ``output_plot``; their sources
``band_source``, ``spectrum_source``, ``window_source``, ``transfer_tfet_source``,
``transfer_twin_source``, ``vg_marker_source``, ``limit_source``, ``swing_tfet_source``,
``swing_twin_source``, ``map_source``, ``output_source_0`` ... ; pinned designs
(slot k = 0 ... 7): ``pin_band_source_k``, ``pin_transfer_source_k``, renderers
``pin_band_ec_k``, ``pin_band_ev_k``, ``pin_transfer_k``, legends ``pin_band_legend``,
``pin_transfer_legend``.
"""

from __future__ import annotations

import html
import math
from collections.abc import Sequence

import numpy as np
from bokeh.core.properties import value
from bokeh.models import (
    BasicTickFormatter,
    BoxAnnotation,
    ColorBar,
    ColumnDataSource,
    FixedTicker,
    HoverTool,
    Label,
    Legend,
    LegendItem,
    LinearColorMapper,
    Range1d,
    Span,
)
from bokeh.plotting import figure

from sub60.app.figures import COLOURS as _FIGURE_COLOURS
from sub60.physics.metrics import thermionic_limit_mV_per_dec


def _ramp(stops: tuple[tuple[int, int, int], ...], n: int) -> list[str]:
    """n hex colours interpolated linearly through RGB stops."""
    t = np.linspace(0.0, len(stops) - 1.0, n)
    out = []
    for v in t:
        i = min(int(v), len(stops) - 2)
        f = v - i
        rgb = [round(a + (b - a) * f) for a, b in zip(stops[i], stops[i + 1], strict=True)]
        out.append("#" + "".join(f"{c:02x}" for c in rgb))
    return out


# Colours of the explorer's own look: a blue family for electrons/conduction, a brick
# family for holes/valence, teal for the tunnel FET, ochre for its MOSFET twin.
COLOURS = {
    "conduction": "#1f4e8c",
    "conduction_2": "#6f95c9",
    "valence": "#a33a26",
    "valence_2": "#d98a72",
    "valence_3": "#c7643f",
    "fermi": "#303030",
    "window": "#f2b43c",
    "gate": "#e3eaf1",
    "tfet": "#0e7a70",
    "twin": "#b07a10",
    "limit": "#444444",
    "marker": "#d1341b",
    "text": "#2b2f33",
    "grid": "#e9ecef",
}
OUTPUT_COLOURS = ("#9cd3cb", "#57ada2", "#1f8578", "#0b4f47")
#: One colour per pinned-design slot: the palette of the snapshot figures, so that a
#: pinned design has the same colour on the page and in an exported figure.
PIN_COLOURS: tuple[str, ...] = tuple(_FIGURE_COLOURS["pinned"])
N_PIN_SLOTS = len(PIN_COLOURS)
#: Sequential colour map of the 2D band-edge map (own ramp: night blue -> teal -> sand).
MAP_PALETTE = tuple(_ramp(((20, 33, 61), (27, 110, 125), (122, 186, 150), (246, 226, 164)), 256))
TOOLS = "pan,box_zoom,wheel_zoom,reset,save"
N_OUTPUT_SLOTS = 4
_T_FLOOR = 1e-30  # transmissions below this are drawn as gaps on the log axis [-]


# ---------------------------------------------------------------------- display helpers
def window_outline(x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray,
                   window_eV: tuple[float, float] | None, n: int = 32
                   ) -> tuple[list[float], list[float]]:
    """Outline of the tunnel window in the band diagram [nm], [eV].

    For each energy of the window, the region runs from the valence-side turning point
    (where the valence edge falls below the energy) to the conduction-side turning point
    (where the conduction edge first reaches it): the forbidden stretch an electron
    crosses. Empty lists when the window is closed.
    """
    if window_eV is None:
        return [], []
    e_lo, e_hi = window_eV
    pad = 1e-6 * max(e_hi - e_lo, 1e-9)
    left: list[tuple[float, float]] = []
    right: list[tuple[float, float]] = []
    for e in np.linspace(e_lo + pad, e_hi - pad, n):
        below = np.flatnonzero(ec_eV <= e)
        if below.size == 0 or below[0] == 0:
            continue
        i = below[0]
        x_c = _crossing(x_nm[i - 1], x_nm[i], ec_eV[i - 1], ec_eV[i], e)
        above = np.flatnonzero(ev_eV[:i] >= e)
        if above.size == 0:
            continue
        j = above[-1]
        x_v = x_nm[j] if j + 1 >= x_nm.size else _crossing(x_nm[j], x_nm[j + 1], ev_eV[j],
                                                            ev_eV[j + 1], e)
        if x_c > x_v:
            left.append((x_v, e))
            right.append((x_c, e))
    if len(left) < 2:
        return [], []
    pts = left + right[::-1]
    return [float(p[0]) for p in pts], [float(p[1]) for p in pts]


def _crossing(x0: float, x1: float, y0: float, y1: float, level: float) -> float:
    if y1 == y0:
        return float(x0)
    return float(x0 + (level - y0) * (x1 - x0) / (y1 - y0))


def uniform_map(x_nm: np.ndarray, y_nm: np.ndarray, values: np.ndarray, nx: int = 360,
                ny: int = 80) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Bilinear resampling of a (nx, ny) map on a non-uniform tensor grid onto a uniform
    one; returns (x, y, image) with image shaped (ny, nx) as Bokeh draws it."""
    xu = np.linspace(x_nm[0], x_nm[-1], nx)
    yu = np.linspace(y_nm[0], y_nm[-1], ny)
    along_x = np.stack([np.interp(xu, x_nm, values[:, j]) for j in range(y_nm.size)], axis=1)
    image = np.stack([np.interp(yu, y_nm, along_x[i]) for i in range(nx)], axis=1)
    return xu, yu, image


def positive_or_nan(values: np.ndarray, floor: float = 0.0) -> np.ndarray:
    """Values for a log axis: non-positive (or below floor) and non-finite become NaN."""
    v = np.asarray(values, float).copy()
    v[~np.isfinite(v) | (v <= floor)] = np.nan
    return v


def format_current(value_uA_per_um: float | None) -> str:
    """A current per width in the most readable unit, e.g. '1.00 nA/µm'."""
    if value_uA_per_um is None or not math.isfinite(value_uA_per_um):
        return "—"
    a = abs(value_uA_per_um)
    for scale, unit in ((1e3, "mA/µm"), (1.0, "µA/µm"), (1e-3, "nA/µm"), (1e-6, "pA/µm"),
                        (1e-9, "fA/µm")):
        if a >= scale:
            return f"{value_uA_per_um / scale:.3g} {unit}"
    return f"{value_uA_per_um:.2e} µA/µm"


def format_ratio(value: float | None) -> str:
    """A large ratio as mantissa x 10^n, e.g. '2.4×10³'."""
    if value is None or not math.isfinite(value) or value <= 0:
        return "—"
    exp = int(math.floor(math.log10(value)))
    mant = value / 10 ** exp
    sup = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")
    return f"{mant:.2g}×10{str(exp).translate(sup)}" if exp >= 3 else f"{value:.3g}"


# ---------------------------------------------------------------------- metrics strip
#: (metric attribute, column heading, formatter) of the metrics strip.
METRIC_COLUMNS: tuple[tuple[str, str], ...] = (
    ("ss_min_mV_per_dec", "SS<sub>min</sub>"),
    ("ss_avg4_mV_per_dec", "SS<sub>avg</sub> (4 dec)"),
    ("i60_uA_per_um", "I<sub>60</sub>"),
    ("ion_uA_per_um", "I<sub>on</sub>"),
    ("ioff_uA_per_um", "I<sub>off</sub> (target)"),
    ("ion_ioff", "I<sub>on</sub>/I<sub>off</sub>"),
    ("voff_V", "V<sub>off</sub>"),
)


def _format_metric(name: str, value: float) -> str:
    if name.endswith("mV_per_dec"):
        return f"{value:.1f} mV/dec"
    if name.endswith("uA_per_um"):
        return format_current(value)
    if name == "ion_ioff":
        return format_ratio(value)
    return f"{value:.3f} V"


def metrics_html(rows: Sequence[tuple[str, str, object | None]], temperature_K: float,
                 vdd_V: float) -> str:
    """The metrics strip as an HTML table.

    rows : (device key, heading, Metrics or None while computing). A missing metric shows
    a dash with a note number; the note gives its reason (also the cell's tooltip). Every
    cell carries ``data-device``, ``data-metric`` and ``data-value`` attributes (test
    hooks; data-value is empty when the metric is missing or pending).
    """
    limit = thermionic_limit_mV_per_dec(temperature_K)
    head = "".join(f"<th>{h}</th>" for _, h in METRIC_COLUMNS)
    reasons: list[str] = []
    body = []
    for key, heading, metrics in rows:
        cells = []
        for name, _ in METRIC_COLUMNS:
            attrs = f'data-device="{key}" data-metric="{name}"'
            if metrics is None:
                cells.append(f'<td {attrs} data-value="" class="pending">…</td>')
                continue
            m = getattr(metrics, name)
            if m.value is None:
                reason = m.reason or "undefined for this curve"
                if reason not in reasons:
                    reasons.append(reason)
                n = reasons.index(reason) + 1
                tip = html.escape(reason, quote=True)
                cells.append(f'<td {attrs} data-value="" class="missing" title="{tip}">'
                             f'—<sup>{n}</sup></td>')
                continue
            badge = ""
            if name in ("ss_min_mV_per_dec", "ss_avg4_mV_per_dec") and m.value < limit:
                badge = ' <span class="sub60">&lt; limit</span>'
            cells.append(f'<td {attrs} data-value="{m.value:.12g}">'
                         f'{_format_metric(name, m.value)}{badge}</td>')
        body.append(f'<tr><th class="device {key}">{heading}</th>{"".join(cells)}</tr>')
    notes = "".join(f'<div class="why"><sup>{i}</sup> {html.escape(r)}</div>'
                    for i, r in enumerate(reasons, start=1))
    note = (f"Thermionic limit (ln 10)·kT/q = {limit:.1f} mV/dec at {temperature_K:g} K; "
            f"I<sub>on</sub> at V<sub>g</sub> = V<sub>off</sub> + {vdd_V:g} V; "
            "— = not defined for this curve:")
    return (f'<table class="metrics"><thead><tr><th></th>{head}</tr></thead>'
            f'<tbody>{"".join(body)}</tbody></table>'
            f'<div class="metrics-note">{note}{notes}</div>')


# ---------------------------------------------------------------------- figures
def _style(fig) -> None:
    fig.toolbar.autohide = True
    fig.toolbar.logo = None
    fig.title.text_font_size = "13px"
    fig.title.text_color = COLOURS["text"]
    fig.title.text_font_style = "bold"
    fig.background_fill_color = "#ffffff"
    fig.border_fill_color = "#ffffff"
    fig.outline_line_color = "#ced4da"
    for axis in (*fig.xaxis, *fig.yaxis):
        axis.axis_label_text_font_size = "12px"
        axis.axis_label_text_font_style = "normal"
        axis.axis_label_text_color = COLOURS["text"]
        axis.major_label_text_font_size = "11px"
    fig.xgrid.grid_line_color = COLOURS["grid"]
    fig.ygrid.grid_line_color = COLOURS["grid"]


def _legend(fig, location: str = "top_right") -> None:
    if not fig.legend:
        return
    leg = fig.legend[0]
    leg.location = location
    leg.click_policy = "hide"
    leg.background_fill_alpha = 0.75
    leg.label_text_font_size = "11px"
    leg.spacing = 0
    leg.padding = 4
    leg.margin = 4
    leg.glyph_width = 18


class ExplorerFigures:
    """Every figure of the page and its data sources (one set per browser session)."""

    # Plot-frame sizes (width, height) [px] for a 1600 x 1000 screen: the band diagram,
    # J(E) and T(E) share one frame height (common energy axis); the 2D map sits under
    # the band diagram with the same frame width and left border (common x axis).
    SIZES = {
        "band": (462, 345), "spectrum": (110, 345), "transmission": (110, 345),
        "transfer": (266, 345), "map": (462, 195), "output": (212, 195), "swing": (246, 195),
    }
    SIZES_PRESENTING = {  # the controls are hidden: the plots take their width
        "band": (580, 365), "spectrum": (136, 365), "transmission": (136, 365),
        "transfer": (360, 365), "map": (580, 190), "output": (290, 190), "swing": (330, 190),
    }
    LEFT_BORDER = {"band": 66, "map": 66, "spectrum": 6, "transmission": 6}

    def __init__(self) -> None:
        self.energy_range = Range1d(-1.2, 0.8, name="energy_range")
        self.x_range = Range1d(0.0, 70.0, name="position_range")
        self._base_widths: dict[object, float] = {}
        self._presenting = False
        self.output_title = "Output curves (tunnel FET)"
        self._band_renderers: dict[str, object] = {}
        self._build_band()
        self._build_spectrum()
        self._build_transfer()
        self._build_swing()
        self._build_map()
        self._build_output()
        self._build_pins()
        self.figures = {"band": self.band, "spectrum": self.spectrum,
                        "transmission": self.transmission, "transfer": self.transfer,
                        "map": self.map, "output": self.output, "swing": self.swing}
        for fig in self.figures.values():
            _style(fig)
            for r in fig.renderers:
                if hasattr(r, "glyph") and hasattr(r.glyph, "line_width"):
                    self._base_widths[r.glyph] = r.glyph.line_width
        _legend(self.band, "bottom_left")
        _legend(self.transfer, "bottom_right")
        _legend(self.swing, "top_left")
        _legend(self.output, "top_left")
        self.set_presentation(False)

    # ------------------------------------------------------------------ band diagram
    def _build_band(self) -> None:
        f = figure(name="band_plot", title="Band diagram along the channel",
                   x_axis_label="Position along transport x (nm)",
                   y_axis_label="Energy (eV), source Fermi level at 0",
                   x_range=self.x_range, y_range=self.energy_range, tools=TOOLS)
        self.gate_box = BoxAnnotation(left=20, right=50, fill_color=COLOURS["gate"],
                                      fill_alpha=0.6, line_alpha=0, level="underlay",
                                      name="gate_box")
        f.add_layout(self.gate_box)
        self.region_labels = {}
        for key in ("source", "gate", "drain"):
            lab = Label(x=0, y=0, text=key, text_font_size="11px", text_baseline="top",
                        text_color="#5c6670", text_align="center", y_offset=-4,
                        name=f"{key}_label")
            f.add_layout(lab)
            self.region_labels[key] = lab
        self.window_source = ColumnDataSource(
            {"xs": [[]], "ys": [[]], "e_min": [np.nan], "e_max": [np.nan], "width_meV": [np.nan]},
            name="window_source")
        win = f.patches("xs", "ys", source=self.window_source, fill_color=COLOURS["window"],
                        fill_alpha=0.45, line_color="#d08c00", line_width=1,
                        legend_label="tunnel window")
        f.add_tools(HoverTool(renderers=[win], tooltips=[
            ("tunnel window", "@e_min{0.000} to @e_max{0.000} eV"),
            ("width", "@width_meV{0} meV")]))
        self.window_closed = Label(x=0, y=0, text="", text_font_size="11px",
                                   text_color="#8a6d00", text_align="center",
                                   text_baseline="top", y_offset=-20,
                                   name="window_closed_label")
        f.add_layout(self.window_closed)
        self.band_source = ColumnDataSource({"x_nm": [], "ec_eV": [], "ev_eV": []},
                                            name="band_source")
        self.fermi_source = ColumnDataSource(
            {"x0": [], "x1": [], "y": [], "label": []}, name="fermi_source")
        fl = f.segment("x0", "y", "x1", "y", source=self.fermi_source, line_color=COLOURS["fermi"],
                       line_dash="dashed", line_width=1.5, legend_label="Fermi levels")
        f.add_tools(HoverTool(renderers=[fl], tooltips=[("", "@label"), ("E", "@y{0.000} eV")]))
        self.fermi_labels = {k: Label(x=0, y=0, text=t, text_font_size="11px",
                                      text_color=COLOURS["fermi"], y_offset=-3,
                                      text_baseline="top", background_fill_color="white",
                                      background_fill_alpha=0.7, name=f"{k}_label")
                             for k, t in (("efs", "E_F source"), ("efd", "E_F drain"))}
        for lab in self.fermi_labels.values():
            f.add_layout(lab)
        # one legend entry per band family; subband names are in the hover
        self.band_items = {
            "c": LegendItem(label=value("conduction subbands"), renderers=[], visible=False),
            "v": LegendItem(label=value("valence subbands"), renderers=[], visible=False)}
        leg = f.legend[0]
        leg.items = [*leg.items, self.band_items["c"], self.band_items["v"]]
        self.band = f

    def _band_line(self, label: str, kind: str, rank: int):
        if label in self._band_renderers:
            return self._band_renderers[label]
        colour = {("c", 0): COLOURS["conduction"], ("v", 0): COLOURS["valence"],
                  ("v", 1): COLOURS["valence_3"]}.get(
            (kind, rank), COLOURS["conduction_2"] if kind == "c" else COLOURS["valence_2"])
        width = 2.6 if rank == 0 else 1.4
        dash = "solid" if rank == 0 else "dashed"
        r = self.band.line("x_nm", label, source=self.band_source, line_color=colour,
                           line_width=width, line_dash=dash, name=f"band_{label}")
        self.band.add_tools(HoverTool(renderers=[r], tooltips=[
            ("subband", label), ("x", "@x_nm{0.0} nm"), ("E", f"@{{{label}}}{{0.000}} eV")]))
        item = self.band_items["c" if kind == "c" else "v"]
        item.renderers = [*item.renderers, r]
        if not item.visible:
            item.visible = True
        self._base_widths[r.glyph] = width
        self._band_renderers[label] = r
        if self._presenting:
            r.glyph.line_width = width * 1.8
        return r

    # ------------------------------------------------------------------ spectrum
    def _build_spectrum(self) -> None:
        self.spectrum_source = ColumnDataSource({"energy_eV": [], "j": [], "t": []},
                                                name="spectrum_source")
        s = figure(name="spectrum_plot", title="Spectral current", y_range=self.energy_range,
                   x_axis_label="J(E) (µA/µm per eV)", tools=TOOLS)
        s.harea(x1=0, x2="j", y="energy_eV", source=self.spectrum_source,
                fill_color=COLOURS["tfet"], fill_alpha=0.18)
        jr = s.line("j", "energy_eV", source=self.spectrum_source, line_color=COLOURS["tfet"],
                    line_width=2)
        s.add_tools(HoverTool(renderers=[jr], tooltips=[
            ("E", "@energy_eV{0.000} eV"), ("J", "@j{0.000e+0} µA/µm/eV")], mode="hline"))
        self.spectrum_total = Label(x=4, y=4, x_units="screen", y_units="screen", text="",
                                    text_font_size="11px", text_color=COLOURS["text"],
                                    name="btbt_total_label", background_fill_color="white",
                                    background_fill_alpha=0.8)
        s.add_layout(self.spectrum_total)
        t = figure(name="transmission_plot", title="Transmission", y_range=self.energy_range,
                   x_axis_type="log", x_range=Range1d(1e-12, 1.5),
                   x_axis_label="T(E), k⊥ = 0", tools=TOOLS)
        tr = t.line("t", "energy_eV", source=self.spectrum_source, line_color="#5b4b8a",
                    line_width=2)
        t.add_tools(HoverTool(renderers=[tr], tooltips=[
            ("E", "@energy_eV{0.000} eV"), ("T", "@t{0.00e+0}")], mode="hline"))
        self.t_ticker = FixedTicker(ticks=[1e-12, 1e-6, 1.0], name="transmission_ticker")
        t.xaxis.ticker = self.t_ticker
        self.transmission_note = Label(x=4, y=4, x_units="screen", y_units="screen", text="",
                                       text_font_size="11px", text_color=COLOURS["text"],
                                       name="transmission_note")
        t.add_layout(self.transmission_note)
        self.fermi_spans = []
        for fig in (s, t):
            fig.yaxis.major_label_text_font_size = "0px"
            fig.yaxis.major_tick_line_color = None
            if fig is s:
                fig.xaxis.ticker.desired_num_ticks = 2
                fig.xaxis.formatter = BasicTickFormatter(precision=0, power_limit_low=-2,
                                                         power_limit_high=3)
            for _ in range(2):
                span = Span(location=0, dimension="width", line_color=COLOURS["fermi"],
                            line_dash="dashed", line_width=1)
                fig.add_layout(span)
                self.fermi_spans.append(span)
        self.spectrum, self.transmission = s, t

    # ------------------------------------------------------------------ transfer and swing
    def _build_transfer(self) -> None:
        f = figure(name="transfer_plot", title="Transfer curve", y_axis_type="log",
                   x_axis_label="Gate voltage Vg (V)", y_axis_label="Drain current Id (µA/µm)",
                   tools=TOOLS)
        self.transfer_sources = {}
        for key, label, colour, dash in (("twin", "MOSFET twin", COLOURS["twin"], "dashed"),
                                         ("tfet", "tunnel FET", COLOURS["tfet"], "solid")):
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
        self.ioff_span = Span(location=1e-3, dimension="width", line_color="#868e96",
                              line_dash="dashdot", line_width=1)
        f.add_layout(self.ioff_span)
        self.ioff_label = Label(x=6, y=1e-3, x_units="screen", text="Ioff target",
                                text_font_size="10px", text_color="#6c757d", y_offset=2)
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
        self.transfer = f

    def _build_swing(self) -> None:
        f = figure(name="swing_plot", title="Point swing vs current", x_axis_type="log",
                   x_axis_label="Drain current Id (µA/µm)", y_axis_label="SS (mV/dec)",
                   y_range=Range1d(0, 200), tools=TOOLS)
        self.swing_sources = {}
        for key, label, colour, dash in (("twin", "MOSFET twin", COLOURS["twin"], "dashed"),
                                         ("tfet", "tunnel FET", COLOURS["tfet"], "solid")):
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
        self.swing_ioff = Span(location=1e-3, dimension="height", line_color="#868e96",
                               line_dash="dashdot", line_width=1)
        f.add_layout(self.swing_ioff)
        self.swing = f

    # ------------------------------------------------------------------ 2D map
    def _build_map(self) -> None:
        self.colour_mapper = LinearColorMapper(palette=list(MAP_PALETTE), low=-1, high=1)
        f = figure(name="map_plot", title="Conduction-band edge over the cross-section",
                   x_range=self.x_range, y_range=Range1d(0, 11),
                   x_axis_label="x (nm)", y_axis_label="y (nm)", tools=TOOLS)
        self.map_source = ColumnDataSource({"image": [], "x": [], "y": [], "dw": [], "dh": []},
                                           name="map_source")
        img = f.image("image", x="x", y="y", dw="dw", dh="dh", source=self.map_source,
                      color_mapper=self.colour_mapper)
        f.add_tools(HoverTool(renderers=[img], tooltips=[
            ("x", "$x{0.0} nm"), ("y", "$y{0.0} nm"), ("Ec", "@image{0.000} eV")]))
        bar = ColorBar(color_mapper=self.colour_mapper, title="Ec (eV)", width=10,
                       title_text_font_size="11px", major_label_text_font_size="10px")
        f.add_layout(bar, "right")
        self.body_spans = [Span(location=0, dimension="width", line_color="white",
                                line_dash="dashed", line_width=1, line_alpha=0.8)
                           for _ in range(2)]
        for s in self.body_spans:
            f.add_layout(s)
        self.gates_source = ColumnDataSource({"x0": [], "x1": [], "y": [], "label": []},
                                             name="gates_source")
        g = f.segment("x0", "y", "x1", "y", source=self.gates_source, line_color="#adb5bd",
                      line_width=6)
        f.add_tools(HoverTool(renderers=[g], tooltips=[("", "@label")]))
        f.xgrid.visible = False
        f.ygrid.visible = False
        self.map = f

    # ------------------------------------------------------------------ output curves
    def _build_output(self) -> None:
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
        f.add_layout(Legend(items=self.output_items))
        self.vd_span = Span(location=0.3, dimension="height", line_color=COLOURS["marker"],
                            line_alpha=0.35, line_width=1)
        f.add_layout(self.vd_span)
        self.output = f

    # ------------------------------------------------------------------ pinned designs
    def _build_pins(self) -> None:
        """Overlay slots of the pinned designs: conduction and valence edges on the band
        diagram (thin dashed), the tunnel-FET curve on the transfer plot; each slot has
        its colour and one legend entry (click to hide), in a legend of its own."""
        self.pin_band_sources, self.pin_transfer_sources = [], []
        self.pin_band_items, self.pin_transfer_items = [], []
        for k, colour in enumerate(PIN_COLOURS):
            band = ColumnDataSource({"x_nm": [], "ec_eV": [], "ev_eV": [], "name": []},
                                    name=f"pin_band_source_{k}")
            rs = [self.band.line("x_nm", edge, source=band, line_color=colour, line_width=1.4,
                                 line_dash="dashed", line_alpha=0.95, name=f"pin_band_{tag}_{k}")
                  for edge, tag in (("ec_eV", "ec"), ("ev_eV", "ev"))]
            self.band.add_tools(HoverTool(renderers=rs, tooltips=[
                ("pinned", "@name"), ("x", "@x_nm{0.0} nm"), ("Ec", "@ec_eV{0.000} eV"),
                ("Ev", "@ev_eV{0.000} eV")]))
            transfer = ColumnDataSource({"vg": [], "id": [], "name": []},
                                        name=f"pin_transfer_source_{k}")
            rt = self.transfer.line("vg", "id", source=transfer, line_color=colour,
                                    line_width=1.8, name=f"pin_transfer_{k}")
            self.transfer.add_tools(HoverTool(renderers=[rt], tooltips=[
                ("pinned", "@name"), ("Vg", "@vg{0.000} V"), ("Id", "@id{0.00e+0} µA/µm")]))
            self.pin_band_sources.append(band)
            self.pin_transfer_sources.append(transfer)
            self.pin_band_items.append(LegendItem(label=value(" "), renderers=rs, visible=False))
            self.pin_transfer_items.append(LegendItem(label=value(" "), renderers=[rt],
                                                      visible=False))
        self.pin_legends = {}
        for key, fig, items, where in (("band", self.band, self.pin_band_items, "top_right"),
                                       ("transfer", self.transfer, self.pin_transfer_items,
                                        "top_left")):
            leg = Legend(items=items, location=where, click_policy="hide", visible=False,
                         name=f"pin_{key}_legend", title="pinned", title_text_font_size="10px",
                         title_text_font_style="italic", background_fill_alpha=0.8,
                         label_text_font_size="10px", spacing=0, padding=3,
                         margin=18 if key == "band" else 4,  # below the region labels
                         glyph_width=16, glyph_height=12, label_height=12)
            fig.add_layout(leg)
            self.pin_legends[key] = leg

    def show_pin(self, slot: int, name: str, bias=None, curve=None) -> None:
        """Show a pinned design in a slot: its name, and (when given) its band edges at
        the present bias (`physics.simulate.BiasPoint`) and its transfer curve
        (`physics.simulate.TransferCurve`); what is not given stays as it was."""
        for item in (self.pin_band_items[slot], self.pin_transfer_items[slot]):
            item.label = value(name)
            item.visible = True
        if bias is not None:
            x = np.asarray(bias.x_nm, float)
            self.pin_band_sources[slot].data = {
                "x_nm": x, "ec_eV": np.asarray(bias.ec_eV, float),
                "ev_eV": np.asarray(bias.ev_eV, float), "name": [name] * x.size}
        else:
            src = self.pin_band_sources[slot]
            src.data = {**src.data, "name": [name] * len(src.data["x_nm"])}
        if curve is not None:
            vg = np.asarray(curve.vg_V, float)
            self.pin_transfer_sources[slot].data = {
                "vg": vg, "id": positive_or_nan(curve.id_uA_per_um), "name": [name] * vg.size}
        else:
            src = self.pin_transfer_sources[slot]
            src.data = {**src.data, "name": [name] * len(src.data["vg"])}
        self._update_pin_legends()

    def clear_pin(self, slot: int) -> None:
        """Empty a pinned-design slot."""
        self.pin_band_sources[slot].data = {"x_nm": [], "ec_eV": [], "ev_eV": [], "name": []}
        self.pin_transfer_sources[slot].data = {"vg": [], "id": [], "name": []}
        for item in (self.pin_band_items[slot], self.pin_transfer_items[slot]):
            item.visible = False
            for r in item.renderers:  # a slot used again starts shown
                r.visible = True
        self._update_pin_legends()

    def _update_pin_legends(self) -> None:
        n = sum(1 for item in self.pin_transfer_items if item.visible)
        for leg in self.pin_legends.values():
            leg.visible = n > 0
            leg.ncols = 1 if n <= 4 else 2

    # ------------------------------------------------------------------ updates
    def show_bias(self, bp) -> None:
        """Band diagram, tunnel window, J(E), T(E), 2D map and the Vg marker of one
        bias point (`physics.simulate.BiasPoint`)."""
        d = bp.design
        x = np.asarray(bp.x_nm, float)
        data = {"x_nm": x, "ec_eV": np.asarray(bp.ec_eV, float),
                "ev_eV": np.asarray(bp.ev_eV, float)}
        labels = []
        for rank, (lab, edge) in enumerate(zip(bp.conduction_labels, bp.conduction_eV,
                                               strict=True)):
            data[lab] = np.asarray(edge, float)
            labels.append((lab, "c", rank))
        order = np.argsort([-float(np.max(v)) for v in bp.valence_eV])
        for rank, i in enumerate(order):
            data[bp.valence_labels[i]] = np.asarray(bp.valence_eV[i], float)
            labels.append((bp.valence_labels[i], "v", rank))
        for name in self._band_renderers:
            if name not in data:
                data[name] = np.full_like(x, np.nan)
        self.band_source.data = data
        for lab, kind, rank in labels:
            self._band_line(lab, kind, rank)
        for name, r in self._band_renderers.items():
            r.visible = name in bp.conduction_labels or name in bp.valence_labels

        # regions, Fermi levels, window
        self.x_range.start, self.x_range.end = float(x[0]), float(x[-1])
        self.gate_box.left, self.gate_box.right = d.gate_start_nm, d.gate_end_nm
        self.region_labels["source"].x = 0.5 * d.source_junction_nm
        self.region_labels["gate"].x = 0.5 * (d.gate_start_nm + d.gate_end_nm)
        self.region_labels["drain"].x = 0.5 * (d.drain_junction_nm + d.total_length_nm)
        self.region_labels["source"].text = f"{'p' if d.source_type == 'p' else 'n'}+ source"
        self._name_devices(d.source_type)
        self.region_labels["gate"].text = "gate"
        self.region_labels["drain"].text = "n+ drain"
        self.fermi_source.data = {
            "x0": [float(x[0]), d.drain_junction_nm], "x1": [d.source_junction_nm, float(x[-1])],
            "y": [bp.efs_eV, bp.efd_eV],
            "label": ["source Fermi level", "drain Fermi level"]}
        self.fermi_labels["efs"].update(x=float(x[0]) + 0.5, y=bp.efs_eV)
        self.fermi_labels["efd"].update(x=d.drain_junction_nm + 0.5, y=bp.efd_eV)
        xs, ys = window_outline(x, data["ec_eV"], data["ev_eV"], bp.window_eV)
        if bp.window_eV is not None and xs:
            lo, hi = bp.window_eV
            self.window_source.data = {"xs": [xs], "ys": [ys], "e_min": [lo], "e_max": [hi],
                                       "width_meV": [1e3 * (hi - lo)]}
            self.window_closed.text = ""
        else:
            self.window_source.data = {"xs": [], "ys": [], "e_min": [], "e_max": [],
                                       "width_meV": []}
            self.window_closed.text = "tunnel window closed"
        lo = min(float(np.nanmin(data["ev_eV"])), bp.efs_eV, bp.efd_eV)
        hi = max(float(np.nanmax(data["ec_eV"])), bp.efs_eV, bp.efd_eV)
        pad = 0.06 * (hi - lo) + 0.02
        self.energy_range.start, self.energy_range.end = lo - pad, hi + 2.5 * pad
        for lab in self.region_labels.values():
            lab.y = hi + 2.5 * pad
        self.window_closed.update(x=self.region_labels["gate"].x, y=hi + 2.5 * pad)

        # spectrum
        sp = bp.spectrum
        t = positive_or_nan(sp.transmission, _T_FLOOR)
        self.spectrum_source.data = {"energy_eV": np.asarray(sp.energy_eV, float),
                                     "j": np.asarray(sp.current_density, float), "t": t}
        finite = t[np.isfinite(t)]
        t_lo = 10.0 ** math.floor(math.log10(float(finite.min()))) if finite.size else 1e-12
        t_lo = max(t_lo, 1e-30)
        self.transmission.x_range.start = t_lo
        self.transmission.x_range.end = 1.5
        k_lo = int(round(math.log10(t_lo)))
        step = max(1, int(math.ceil(-k_lo / 2)))
        self.t_ticker.ticks = [10.0 ** k for k in range(0, k_lo - 1, -step)][::-1]
        self.transmission_note.text = "" if finite.size else f"T < {_T_FLOOR:.0e}\neverywhere"
        for span, level in zip(self.fermi_spans, (bp.efs_eV, bp.efd_eV) * 2, strict=True):
            span.location = level
        self.spectrum_total.text = f"BTBT total\n{format_current(bp.btbt_uA_per_um)}"

        # 2D map of the conduction-band edge
        es = bp.electrostatics
        xu, yu, image = uniform_map(es.x_nm, es.y_nm, es.ec_map_eV)
        self.map_source.data = {"image": [image], "x": [float(xu[0])], "y": [float(yu[0])],
                                "dw": [float(xu[-1] - xu[0])], "dh": [float(yu[-1] - yu[0])]}
        body = es.frame.mesh.body_bounds_nm()
        lo_b = float(np.min(es.ec_map_eV[:, _rows_between(es.y_nm, body)]))
        hi_b = float(np.max(es.ec_map_eV[:, _rows_between(es.y_nm, body)]))
        self.colour_mapper.low, self.colour_mapper.high = lo_b, hi_b
        self.map.y_range.start, self.map.y_range.end = float(yu[0]), float(yu[-1])
        for span, yb in zip(self.body_spans, body, strict=True):
            span.location = float(yb)
        gx = [d.gate_start_nm, d.gate_end_nm]
        top = float(yu[-1])
        gates = {"x0": [gx[0]], "x1": [gx[1]], "y": [top], "label": ["gate"]}
        if d.gate_layout == "double":
            gates = {"x0": [gx[0], gx[0]], "x1": [gx[1], gx[1]], "y": [top, float(yu[0])],
                     "label": ["top gate", "bottom gate"]}
        self.gates_source.data = gates

        # marker of the present bias on the transfer curve
        current = bp.current_uA_per_um
        self.vg_marker_source.data = {"vg": [bp.vg_V],
                                      "id": [current if current > 0 else np.nan]}
        self.vg_span.location = bp.vg_V
        self.vd_span.location = bp.vd_V

    def _name_devices(self, source_type: str) -> None:
        """Legend names of the first device: tunnel FET (p+ source) or MOSFET (n+)."""
        name = "tunnel FET" if source_type == "p" else "MOSFET (n+ source)"
        for fig in (self.transfer, self.swing):
            for item in fig.legend[0].items:
                if item.label == value("tunnel FET") or item.label == value("MOSFET (n+ source)"):
                    if item.label != value(name):
                        item.label = value(name)
        title = "Output curves (tunnel FET)" if source_type == "p" else "Output curves (MOSFET)"
        self.output_title = title

    def show_transfer(self, key: str, vg: np.ndarray, current: np.ndarray,
                      btbt: np.ndarray | None = None, therm: np.ndarray | None = None,
                      ss: np.ndarray | None = None) -> None:
        """Transfer curve of 'tfet' or 'twin' (complete or partial) and its point swing."""
        vg = np.asarray(vg, float)
        ids = positive_or_nan(current)
        nan = np.full_like(vg, np.nan)
        ss = nan if ss is None else np.asarray(ss, float)
        self.transfer_sources[key].data = {
            "vg": vg, "id": ids, "btbt": nan if btbt is None else np.asarray(btbt, float),
            "therm": nan if therm is None else np.asarray(therm, float), "ss": ss}
        ok = np.isfinite(ids) & np.isfinite(ss) & (ss > 0)
        self.swing_sources[key].data = {"id": ids[ok], "ss": ss[ok], "vg": vg[ok]}

    def show_limits(self, temperature_K: float, ioff_uA_per_um: float, anchor_vg: float | None,
                    anchor_id: float | None, vg_end: float) -> None:
        """Thermionic-limit slope line from (anchor_vg, anchor_id) on the transfer plot,
        the limit on the swing plot, and the Ioff target."""
        limit = thermionic_limit_mV_per_dec(temperature_K)
        text = f"thermionic limit {limit:.1f} mV/dec"
        self.limit_item.label = value(text)
        self.swing_limit.location = limit
        self.swing_limit_label.update(y=limit, text=text)
        self.swing.y_range.end = max(200.0, 2.5 * limit)
        self.ioff_span.location = ioff_uA_per_um
        self.ioff_label.y = ioff_uA_per_um
        self.swing_ioff.location = ioff_uA_per_um
        if anchor_vg is None or anchor_id is None or not anchor_id > 0:
            self.limit_source.data = {"vg": [], "id": []}
            return
        decades = max(0.5, min(5.0, (vg_end - anchor_vg) * 1e3 / limit))
        self.limit_source.data = {"vg": [anchor_vg, anchor_vg + decades * limit * 1e-3],
                                  "id": [anchor_id, anchor_id * 10 ** decades]}

    def show_outputs(self, curves: Sequence) -> None:
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

    def clear_outputs(self) -> None:
        self.show_outputs([])

    # ------------------------------------------------------------------ presentation
    def set_presentation(self, on: bool) -> None:
        """Projector look: larger figures, fonts and lines (on), or the desk look (off)."""
        self._presenting = bool(on)
        sizes = self.SIZES_PRESENTING if on else self.SIZES
        scale = 1.8 if on else 1.0
        grow = 1.45 if on else 1.0

        def font(px: float) -> str:
            return f"{round(px * grow)}px"

        for key, fig in self.figures.items():
            fig.frame_width, fig.frame_height = sizes[key]
            fig.min_border_left = round(self.LEFT_BORDER.get(key, 58) * (1.3 if on and key not in (
                "spectrum", "transmission") else 1.0))
            fig.min_border_right = 12
            fig.title.text_font_size = font(13)
            for axis in (*fig.xaxis, *fig.yaxis):
                axis.axis_label_text_font_size = font(12)
                axis.major_label_text_font_size = font(11)
            if key in ("spectrum", "transmission"):  # energy labels are on the band diagram
                fig.yaxis.major_label_text_font_size = "0px"
            for leg in fig.legend:
                leg.label_text_font_size = font(11)
            for r in fig.renderers:
                glyph = getattr(r, "glyph", None)
                if glyph in self._base_widths:
                    glyph.line_width = self._base_widths[glyph] * scale
        for lab in (*self.region_labels.values(), *self.fermi_labels.values(),
                    self.spectrum_total, self.window_closed, self.swing_limit_label,
                    self.transmission_note):
            lab.text_font_size = font(11)


def _rows_between(y_nm: np.ndarray, bounds: tuple[float, float]) -> np.ndarray:
    lo, hi = bounds
    return np.flatnonzero((y_nm >= lo - 1e-9) & (y_nm <= hi + 1e-9))
