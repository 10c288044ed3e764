"""Live plots of one bias point: the band diagram, J(E) and T(E) beside it, the 2D map.

Each builder makes its Bokeh figure(s) once, with named data sources, and `show` updates
those sources in place from a `physics.simulate.BiasPoint`.
"""

from __future__ import annotations

import math

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
    LegendItem,
    LinearColorMapper,
    Range1d,
    Span,
)
from bokeh.plotting import figure

from sub60.app.plot_style import (
    COLOURS,
    T_FLOOR,
    TOOLS,
    drain_side_window,
    positive_or_nan,
    rows_between,
    uniform_map,
    window_outline,
)
from sub60.app.theme import MAP_PALETTE, format_current
from sub60.physics import heterointerface_offsets


class BandPlot:
    """Band diagram along the channel: subband edges, Fermi levels, the tunnel window, the
    gate and region labels. Subband lines are made when a label first appears."""

    TITLE = "Band diagram along the channel"

    def __init__(self, x_range: Range1d, energy_range: Range1d) -> None:
        self.energy_range = energy_range
        #: Subband label -> its line renderer.
        self.renderers: dict[str, object] = {}
        f = figure(name="band_plot", title=self.TITLE,
                   x_axis_label="Position along transport x (nm)",
                   y_axis_label="Energy (eV), source Fermi level at 0",
                   x_range=x_range, y_range=energy_range, tools=TOOLS)
        self.gate_box = BoxAnnotation(left=20, right=50, fill_color=COLOURS["gate"],
                                      fill_alpha=0.6, line_alpha=0, level="underlay",
                                      name="gate_box")
        f.add_layout(self.gate_box)
        self.region_labels = {}
        for key in ("source", "gate", "drain"):
            lab = Label(x=0, y=0, text=key, text_font_size="11px", text_baseline="top",
                        text_color=COLOURS["muted_text"], text_align="center", y_offset=-4,
                        name=f"{key}_label")
            f.add_layout(lab)
            self.region_labels[key] = lab
        self.window_source = ColumnDataSource(
            {"xs": [[]], "ys": [[]], "e_min": [np.nan], "e_max": [np.nan], "width_meV": [np.nan],
             "side": [""]}, name="window_source")
        win = f.patches("xs", "ys", source=self.window_source, fill_color=COLOURS["window"],
                        fill_alpha=0.45, line_color=COLOURS["window_line"], line_width=1,
                        legend_label="tunnel windows")
        f.add_tools(HoverTool(renderers=[win], tooltips=[
            ("tunnel window", "@side"), ("energies", "@e_min{0.000} to @e_max{0.000} eV"),
            ("width", "@width_meV{0} meV")]))
        self.window_closed = Label(x=0, y=0, text="", text_font_size="11px",
                                   text_color=COLOURS["window_text"], text_align="center",
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
        # heterojunction source: the interface and its band offsets (hidden otherwise)
        self.interface_line = Span(location=0, dimension="height", line_color="#444444",
                                   line_dash="dotted", line_width=1.5, visible=False,
                                   name="heterointerface_line")
        f.add_layout(self.interface_line)
        self.interface_label = Label(x=0, y=0, text="", text_font_size="11px",
                                     text_color="#333333", text_align="left", x_offset=4,
                                     y_offset=-18, text_baseline="top",
                                     background_fill_color="white",
                                     background_fill_alpha=0.85, visible=False,
                                     name="heterointerface_label")
        f.add_layout(self.interface_label)
        # one legend entry per band family; subband names are in the hover
        self.band_items = {
            "c": LegendItem(label=value("conduction subbands"), renderers=[], visible=False),
            "v": LegendItem(label=value("valence subbands"), renderers=[], visible=False)}
        leg = f.legend[0]
        leg.items = [*leg.items, self.band_items["c"], self.band_items["v"]]
        self.figure = f
        # the reference band diagram (`show_reference`); made with the figure: lines added
        # to the band diagram once in the browser left its legends undrawn
        self.reference_source: ColumnDataSource | None = None
        self.reference_window_source: ColumnDataSource | None = None
        self._reference_renderers()
        self.present_extent: tuple[float, float] = (-1.0, 0.6)  # energies drawn [eV]
        self.reference_extent: tuple[float, float] | None = None

    @property
    def labels(self) -> list[Label]:
        """Text labels drawn on the plot (their font follows the presentation mode)."""
        return [*self.region_labels.values(), *self.fermi_labels.values(), self.window_closed,
                self.interface_label]

    def line(self, label: str, kind: str, rank: int):
        """The renderer of one subband edge ("c" or "v" family, rank 0 = the band edge),
        made on first use."""
        if label in self.renderers:
            return self.renderers[label]
        colour = {("c", 0): COLOURS["conduction"], ("v", 0): COLOURS["valence"],
                  ("v", 1): COLOURS["valence_3"]}.get(
            (kind, rank), COLOURS["conduction_2"] if kind == "c" else COLOURS["valence_2"])
        width = 2.6 if rank == 0 else 1.4
        dash = "solid" if rank == 0 else "dashed"
        r = self.figure.line("x_nm", label, source=self.band_source, line_color=colour,
                             line_width=width, line_dash=dash, name=f"band_{label}")
        self.figure.add_tools(HoverTool(renderers=[r], tooltips=[
            ("subband", label), ("x", "@x_nm{0.0} nm"), ("E", f"@{{{label}}}{{0.000}} eV")]))
        item = self.band_items["c" if kind == "c" else "v"]
        item.renderers = [*item.renderers, r]
        if not item.visible:
            item.visible = True
        r.nonselection_glyph = r.muted_glyph = "auto"  # as `plot_style.slim_renderers`
        self.renderers[label] = r
        return r

    def show(self, bp) -> float:
        """Subband edges, regions, Fermi levels and tunnel window of a bias point; sets the
        shared energy range. Returns the height of the region labels [eV]."""
        d = bp.design
        x = np.asarray(bp.x_nm, float)
        data = {"x_nm": x, "ec_eV": np.asarray(bp.subband_ec_eV, float),
                "ev_eV": np.asarray(bp.subband_ev_eV, float)}
        labels = []
        for rank, (lab, edge) in enumerate(zip(bp.conduction_labels, bp.conduction_eV,
                                               strict=True)):
            data[lab] = np.asarray(edge, float)
            labels.append((lab, "c", rank))
        order = np.argsort([-float(np.max(v)) for v in bp.valence_eV])
        for rank, i in enumerate(order):
            data[bp.valence_labels[i]] = np.asarray(bp.valence_eV[i], float)
            labels.append((bp.valence_labels[i], "v", rank))
        for name in self.renderers:
            if name not in data:
                data[name] = np.full_like(x, np.nan)
        self.band_source.data = data
        for lab, kind, rank in labels:
            self.line(lab, kind, rank)
        for name, r in self.renderers.items():
            r.visible = name in bp.conduction_labels or name in bp.valence_labels

        # regions, Fermi levels, window
        self.figure.x_range.start, self.figure.x_range.end = float(x[0]), float(x[-1])
        self.gate_box.left, self.gate_box.right = d.gate_start_nm, d.gate_end_nm
        self.region_labels["source"].x = 0.5 * d.source_junction_nm
        self.region_labels["gate"].x = 0.5 * (d.gate_start_nm + d.gate_end_nm)
        self.region_labels["drain"].x = 0.5 * (d.drain_junction_nm + d.total_length_nm)
        self.region_labels["source"].text = f"{'p' if d.source_type == 'p' else 'n'}+ source"
        self.region_labels["gate"].text = "gate"
        self.region_labels["drain"].text = "n+ drain"
        self.fermi_source.data = {
            "x0": [float(x[0]), d.drain_junction_nm], "x1": [d.source_junction_nm, float(x[-1])],
            "y": [bp.efs_eV, bp.efd_eV],
            "label": ["source Fermi level", "drain Fermi level"]}
        self.fermi_labels["efs"].update(x=float(x[0]) + 0.5, y=bp.efs_eV)
        self.fermi_labels["efd"].update(x=d.drain_junction_nm + 0.5, y=bp.efd_eV)
        self.show_windows(bp, data["ec_eV"], data["ev_eV"])
        self.present_extent = (min(float(np.nanmin(data["ev_eV"])), bp.efs_eV, bp.efd_eV),
                               max(float(np.nanmax(data["ec_eV"])), bp.efs_eV, bp.efd_eV))
        self.window_closed.x = self.region_labels["gate"].x
        self.show_interface(d, 0.0)
        self._fit_energy()
        return float(self.energy_range.end)

    def show_interface(self, design, top_eV: float) -> None:
        """The heterointerface as a dotted line, labelled with its band offsets (body minus
        source, VMR 2001 table) and the alignment; hidden for a homojunction."""
        off = heterointerface_offsets(design)
        self.interface_line.visible = self.interface_label.visible = off is not None
        if off is None:
            return
        self.interface_line.location = off.position_nm
        kind = off.kind.split(" (")[0]
        overlap = (f"overlap {1e3 * off.confined_overlap_eV:.0f} meV with confinement"
                   if off.confined_overlap_eV > 0 else
                   f"tunnel gap {-off.confined_overlap_eV:.2f} eV with confinement")
        self.interface_label.update(
            x=off.position_nm, y=top_eV,
            text=(f"{off.source} → {off.body}: ΔEc {off.conduction_step_eV:+.2f} eV, "
                  f"ΔEv {off.valence_step_eV:+.2f} eV\n{kind}, {overlap}"))


    def show_windows(self, bp, ec_eV: np.ndarray, ev_eV: np.ndarray) -> None:
        """The source-side tunnel window (the physics' own) and the drain-side (ambipolar)
        one, each drawn where it is open; the label says which are closed."""
        cols, shown = window_columns(bp, ec_eV, ev_eV)
        self.window_source.data = cols
        if not any(shown.values()):
            self.window_closed.text = "tunnel windows closed"
        elif not shown["source side"]:
            self.window_closed.text = "source-side window closed · drain-side window open"
        else:
            self.window_closed.text = ""

    # ------------------------------------------------------------ reference bias
    def _reference_renderers(self) -> None:
        """The reference band diagram's lines and window outlines (empty until shown)."""
        f = self.figure
        self.reference_source = ColumnDataSource({"x_nm": [], "ec_eV": [], "ev_eV": []},
                                                 name="reference_band_source")
        self.reference_window_source = ColumnDataSource(
            {"xs": [], "ys": [], "e_min": [], "e_max": [], "width_meV": [], "side": []},
            name="reference_window_source")
        win = f.patches("xs", "ys", source=self.reference_window_source, fill_alpha=0,
                        line_color=COLOURS["reference"], line_dash="dashed", line_width=1.2,
                        name="reference_windows")
        lines = [f.line("x_nm", edge, source=self.reference_source,
                        line_color=COLOURS["reference"], line_width=1.6, line_dash="dotted",
                        name=f"reference_{edge}") for edge in ("ec_eV", "ev_eV")]
        for r in (win, *lines):
            r.nonselection_glyph = r.muted_glyph = "auto"  # as `plot_style.slim_renderers`
        f.add_tools(HoverTool(renderers=lines, tooltips=[
            ("reference", "@x_nm{0.0} nm"), ("Ec", "@ec_eV{0.000} eV"),
            ("Ev", "@ev_eV{0.000} eV")]))

    def show_reference(self, bp) -> None:
        """A band diagram at a reference gate voltage (`physics.simulate.BiasPoint`,
        None: hidden), in a quieter style: first subband edges dotted grey, its open
        tunnel windows (source and drain side) as dashed outlines; the energy axis
        covers it too."""
        if bp is None:
            if len(self.reference_source.data["x_nm"]):
                self.reference_source.data = {"x_nm": [], "ec_eV": [], "ev_eV": []}
                self.reference_window_source.data = {k: [] for k in
                                                     self.reference_window_source.data}
                self.figure.title.text = self.TITLE
            self.reference_extent = None
            return
        ec = np.asarray(bp.subband_ec_eV, float)
        ev = np.asarray(bp.subband_ev_eV, float)
        self.reference_source.data = {"x_nm": np.asarray(bp.x_nm, float), "ec_eV": ec,
                                      "ev_eV": ev}
        cols, shown = window_columns(bp, ec, ev)
        self.reference_window_source.data = cols
        sides = [side.split(" ")[0] for side, on in shown.items() if on]
        windows = {0: "windows closed", 1: f"{sides[0] if sides else ''} window open",
                   2: "both windows open"}[len(sides)]
        # named in the title (the legend below the plot is laid out once, when the page
        # opens)
        self.figure.title.text = (f"Band diagram · grey: reference Vg = "
                                  f"{bp.vg_V + 0.0:.2f} V, {windows}")
        self.reference_extent = (min(float(np.nanmin(ev)), bp.efs_eV, bp.efd_eV),
                                 max(float(np.nanmax(ec)), bp.efs_eV, bp.efd_eV))
        self._fit_energy()

    def _fit_energy(self) -> None:
        """The energy axis over the present band diagram and the reference (if shown)."""
        lo, hi = self.present_extent
        if self.reference_extent is not None:
            lo, hi = min(lo, self.reference_extent[0]), max(hi, self.reference_extent[1])
        pad = 0.06 * (hi - lo) + 0.02
        self.energy_range.start, self.energy_range.end = lo - pad, hi + 2.5 * pad
        top = hi + 2.5 * pad
        for lab in self.region_labels.values():
            lab.y = top
        self.window_closed.y = top
        self.interface_label.y = top


def window_columns(bp, ec_eV: np.ndarray, ev_eV: np.ndarray) -> tuple[dict, dict]:
    """Outlines of a bias point's source-side tunnel window (the physics' own) and its
    drain-side (ambipolar) one, each where it is open: (patch columns, {side: open})."""
    d = bp.design
    x = np.asarray(bp.x_nm, float)
    drain = drain_side_window(x, ec_eV, ev_eV, (d.gate_start_nm, d.gate_end_nm),
                              d.drain_junction_nm, bp.efs_eV, bp.efd_eV)
    cols: dict[str, list] = {k: [] for k in ("xs", "ys", "e_min", "e_max", "width_meV",
                                             "side")}
    shown = {}
    for side, window, mask in (("source side", bp.window_eV, x <= d.gate_end_nm),
                               ("drain side (ambipolar)", drain, x >= d.gate_start_nm)):
        # each outline is traced over its own junction (source + channel, channel + drain)
        xs, ys = window_outline(x[mask], ec_eV[mask], ev_eV[mask], window)
        shown[side] = bool(window is not None and xs)
        if shown[side]:
            lo, hi = window
            for k, v in (("xs", xs), ("ys", ys), ("e_min", lo), ("e_max", hi),
                         ("width_meV", 1e3 * (hi - lo)), ("side", side)):
                cols[k].append(v)
    return cols, shown


class SpectrumPlots:
    """Spectral current J(E) and transmission T(E) (log), on the band diagram's energy
    axis, with the Fermi levels and the total band-to-band current. T(E) is drawn twice
    for the main subband pair at k⊥ = 0: by WKB and by the exact two-band transmission
    (`physics.compare_transmissions`), with a legend under the plot."""

    #: Legend texts of the two transmissions (the WKB one names its decay model).
    WKB_LABEL = "WKB ({})"
    EXACT_LABEL = "exact two-band"

    def __init__(self, energy_range: Range1d) -> None:
        self.spectrum_source = ColumnDataSource({"energy_eV": [], "j": [], "t": []},
                                                name="spectrum_source")
        s = figure(name="spectrum_plot", title="Spectral current", y_range=energy_range,
                   x_axis_label="J(E) (µA/µm/eV)", tools=TOOLS)
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
        # WKB and exact T(E) of one pair on one energy grid (NaN below T_FLOOR: gaps)
        self.transmission_source = ColumnDataSource(
            {"energy_eV": [], "wkb": [], "exact": []}, name="transmission_source")
        t = figure(name="transmission_plot", title="Transmission", y_range=energy_range,
                   x_axis_type="log", x_range=Range1d(1e-12, 1.5),
                   x_axis_label="T(E), k⊥ = 0", tools=TOOLS)
        tw = t.line("wkb", "energy_eV", source=self.transmission_source,
                    line_color=COLOURS["transmission"], line_width=2,
                    legend_label=self.WKB_LABEL.format("two-band"), name="transmission_wkb")
        te = t.line("exact", "energy_eV", source=self.transmission_source,
                    line_color=COLOURS["transmission_exact"], line_width=2, line_dash="dashed",
                    legend_label=self.EXACT_LABEL, name="transmission_exact")
        t.legend[0].name = "transmission_legend"
        t.add_tools(HoverTool(renderers=[tw, te], tooltips=[
            ("E", "@energy_eV{0.000} eV"), ("T WKB", "@wkb{0.00e+0}"),
            ("T exact", "@exact{0.00e+0}")], mode="hline"))
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
                # digits as the ticks need them (0.5 was drawn as "0" with none)
                fig.xaxis.formatter = BasicTickFormatter(power_limit_low=-2,
                                                         power_limit_high=3)
            for _ in range(2):
                span = Span(location=0, dimension="width", line_color=COLOURS["fermi"],
                            line_dash="dashed", line_width=1)
                fig.add_layout(span)
                self.fermi_spans.append(span)
        self.spectrum, self.transmission = s, t

    @property
    def labels(self) -> list[Label]:
        """Text labels drawn on the plots."""
        return [self.spectrum_total, self.transmission_note]

    def show(self, bp, transmissions=None) -> None:
        """J(E), Fermi levels and total current of a bias point; the WKB and exact T(E)
        of ``transmissions`` (a `physics.TransmissionComparison`; values below `T_FLOOR`
        as gaps), or none with a note when no subband pair carries current."""
        sp = bp.spectrum
        self.spectrum_source.data = {"energy_eV": np.asarray(sp.energy_eV, float),
                                     "j": np.asarray(sp.current_density, float),
                                     "t": positive_or_nan(sp.transmission, T_FLOOR)}
        tc = transmissions
        if tc is None:
            self.transmission_source.data = {"energy_eV": [], "wkb": [], "exact": []}
            finite = np.array([])
        else:
            wkb = positive_or_nan(tc.wkb, T_FLOOR)
            exact = positive_or_nan(tc.exact, T_FLOOR)
            self.transmission_source.data = {"energy_eV": np.asarray(tc.energy_eV, float),
                                             "wkb": wkb, "exact": exact}
            both = np.concatenate([wkb, exact])
            finite = both[np.isfinite(both)]
            self.transmission.legend[0].items[0].label = value(
                self.WKB_LABEL.format(tc.wkb_model))
            pair = tc.pair.replace("-", "–")
            self.transmission.xaxis.axis_label = f"T(E) {pair}, k⊥ = 0"
        t_lo = 10.0 ** math.floor(math.log10(float(finite.min()))) if finite.size else 1e-12
        t_lo = max(t_lo, 1e-30)
        self.transmission.x_range.start = t_lo
        self.transmission.x_range.end = 1.5
        k_lo = int(round(math.log10(t_lo)))
        step = max(1, int(math.ceil(-k_lo / 2)))
        self.t_ticker.ticks = [10.0 ** k for k in range(0, k_lo - 1, -step)][::-1]
        if tc is None:
            self.transmission_note.text = "no subband pair\ncarries current"
        elif not finite.size:
            self.transmission_note.text = f"T < {T_FLOOR:.0e}\neverywhere"
        else:
            self.transmission_note.text = ratio_note(tc.wkb, tc.exact)
        for span, level in zip(self.fermi_spans, (bp.efs_eV, bp.efd_eV) * 2, strict=True):
            span.location = level
        self.spectrum_total.text = f"BTBT total\n{format_current(bp.btbt_uA_per_um)}"


def ratio_note(wkb: np.ndarray, exact: np.ndarray, within: float = 1e-3) -> str:
    """'exact/WKB' and the range of that ratio where the WKB T(E) is within a factor
    ``within`` of its peak (where the current flows); '' when there is none."""
    wkb, exact = np.asarray(wkb, float), np.asarray(exact, float)
    top = np.nanmax(wkb) if wkb.size else 0.0
    keep = (wkb >= within * top) & (wkb > 0) & np.isfinite(exact) if top > 0 else wkb > 1
    if not keep.any():
        return ""
    r = exact[keep] / wkb[keep]
    return f"exact/WKB\n{r.min():.2g}–{r.max():.2g}"


class MapPlot:
    """Bulk conduction-band edge over the cross-section (resampled to a uniform image),
    with the body boundaries and the gate(s); labelled as the bulk edge, without the
    confinement shift that the band diagram's subbands carry."""

    def __init__(self, x_range: Range1d) -> None:
        self.colour_mapper = LinearColorMapper(palette=list(MAP_PALETTE), low=-1, high=1)
        # the bulk edge (the band diagram draws the confined subbands): said in the title
        f = figure(name="map_plot",
                   title="Bulk Ec over the cross-section (no confinement shift)",
                   x_range=x_range, y_range=Range1d(0, 11),
                   x_axis_label="x (nm)", y_axis_label="y (nm)", tools=TOOLS)
        self.map_source = ColumnDataSource({"image": [], "x": [], "y": [], "dw": [], "dh": []},
                                           name="map_source")
        img = f.image("image", x="x", y="y", dw="dw", dh="dh", source=self.map_source,
                      color_mapper=self.colour_mapper)
        f.add_tools(HoverTool(renderers=[img], tooltips=[
            ("x", "$x{0.0} nm"), ("y", "$y{0.0} nm"), ("bulk Ec", "@image{0.000} eV")]))
        # under the map (across it, not beside it): the map then has the band diagram's
        # borders, so with the same width both frames line up on their common x axis
        bar = ColorBar(color_mapper=self.colour_mapper, title="bulk Ec (eV)", height=10,
                       orientation="horizontal", title_text_font_size="11px",
                       major_label_text_font_size="10px", name="map_colour_bar")
        f.add_layout(bar, "below")
        self.colour_bar = bar
        self.body_spans = [Span(location=0, dimension="width", line_color="white",
                                line_dash="dashed", line_width=1, line_alpha=0.8)
                           for _ in range(2)]
        for s in self.body_spans:
            f.add_layout(s)
        self.gates_source = ColumnDataSource({"x0": [], "x1": [], "y": [], "label": []},
                                             name="gates_source")
        g = f.segment("x0", "y", "x1", "y", source=self.gates_source,
                      line_color=COLOURS["gate_bar"], line_width=6)
        f.add_tools(HoverTool(renderers=[g], tooltips=[("", "@label")]))
        f.xgrid.visible = False
        f.ygrid.visible = False
        self.figure = f

    def show(self, bp) -> None:
        """The map of a bias point; colours span the body's range of the edge."""
        d = bp.design
        es = bp.electrostatics
        xu, yu, image = uniform_map(es.x_nm, es.y_nm, es.ec_map_eV)
        # sent as float32 (115 instead of 230 kB a bias point): 1e-7 eV at 1 eV, far
        # below the colour scale's resolution and the hover's 1 meV
        self.map_source.data = {"image": [image.astype(np.float32)], "x": [float(xu[0])],
                                "y": [float(yu[0])],
                                "dw": [float(xu[-1] - xu[0])], "dh": [float(yu[-1] - yu[0])]}
        body = es.frame.mesh.body_bounds_nm()
        lo_b = float(np.min(es.ec_map_eV[:, rows_between(es.y_nm, body)]))
        hi_b = float(np.max(es.ec_map_eV[:, rows_between(es.y_nm, body)]))
        self.colour_mapper.low, self.colour_mapper.high = lo_b, hi_b
        self.figure.y_range.start, self.figure.y_range.end = float(yu[0]), float(yu[-1])
        for span, yb in zip(self.body_spans, body, strict=True):
            span.location = float(yb)
        gx = [d.gate_start_nm, d.gate_end_nm]
        top = float(yu[-1])
        gates = {"x0": [gx[0]], "x1": [gx[1]], "y": [top], "label": ["gate"]}
        if d.gate_layout == "double":
            gates = {"x0": [gx[0], gx[0]], "x1": [gx[1], gx[1]], "y": [top, float(yu[0])],
                     "label": ["top gate", "bottom gate"]}
        self.gates_source.data = gates
