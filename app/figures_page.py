"""The offline page of a snapshot: the figures of merit as a table and its plots,
interactive, in one HTML file.

The band diagram, the tunnelling spectrum, the transfer and output curves, the point
swing against current, and the transmission T(E, k = 0) of the main subband pair by WKB
and by the exact two-band solver side by side, as the explorer's Transmission plot draws
them (`physics.compare_transmissions`).

`bokeh.embed.file_html` with the Bokeh library inlined, so the page opens without a
network. Export-figures layer, beside `app.figures` (captions, curve labels and the
thermionic reference are shared with the static figures); it never imports the
snapshot writer or the explorer's UI modules.
"""

from __future__ import annotations

import html
from typing import TYPE_CHECKING

import numpy as np

from sub60.app.figures import (
    caption_text,
    labelled_curves,
    metrics_rows,
    positive_only,
    reference_anchor,
    rising_swing,
)
from sub60.app.theme import PALETTE as COLOURS
from sub60.app.theme import output_ramp
from sub60.physics import compare_transmissions, thermionic_limit_mV_per_dec

if TYPE_CHECKING:
    from sub60.app.snapshot_check import SnapshotResults


def interactive_page(results: SnapshotResults) -> str:
    """One standalone HTML page: the figures-of-merit table and the five plots; Bokeh
    inlined, no network needed."""
    from bokeh.embed import file_html
    from bokeh.layouts import column, gridplot
    from bokeh.models import BoxAnnotation, Div, HoverTool, Span
    from bokeh.plotting import figure
    from bokeh.resources import INLINE

    s = results.settings
    bp = results.bias_point
    d = s.design
    size = {"width": 560, "height": 360, "tools": "pan,box_zoom,wheel_zoom,reset,save"}

    bands = figure(title=f"Band diagram at Vg = {bp.vg_V:g} V, Vd = {bp.vd_V:g} V",
                   x_axis_label="x (nm)", y_axis_label="energy (eV)", **size)
    bands.add_layout(BoxAnnotation(left=d.gate_start_nm, right=d.gate_end_nm,
                                   fill_color=COLOURS["gate"], fill_alpha=0.6, level="underlay"))
    if bp.window_eV is not None:
        bands.add_layout(BoxAnnotation(bottom=bp.window_eV[0], top=bp.window_eV[1],
                                       fill_color=COLOURS["window"], fill_alpha=0.3))
    x = np.asarray(bp.x_nm, float)
    for i, (lab, edge) in enumerate(zip(bp.conduction_labels, bp.conduction_eV, strict=True)):
        bands.line(x, np.asarray(edge, float), color=COLOURS["conduction"][min(i, 3)],
                   line_width=2 if i == 0 else 1, legend_label=lab)
    for i, (lab, edge) in enumerate(zip(bp.valence_labels, bp.valence_eV, strict=True)):
        bands.line(x, np.asarray(edge, float), color=COLOURS["valence"][min(i, 5)],
                   line_width=2 if i == 0 else 1, legend_label=lab)
    bands.line([x[0], d.source_junction_nm], [bp.efs_eV] * 2, color=COLOURS["fermi"],
               line_dash="dashed", legend_label="source Fermi level")
    bands.line([d.drain_junction_nm, x[-1]], [bp.efd_eV] * 2, color=COLOURS["fermi"],
               line_dash="dashdot", legend_label="drain Fermi level")

    spec = figure(title="Tunnelling spectrum J(E)", x_axis_label="energy (eV)",
                  y_axis_label="J(E) (µA/µm per eV)", **size)
    e = np.asarray(bp.spectrum.energy_eV, float)
    if e.size:
        spec.line(e, np.asarray(bp.spectrum.current_density, float), color=COLOURS["design"],
                  line_width=2, legend_label="J(E)")
    if bp.window_eV is not None:
        spec.add_layout(BoxAnnotation(left=bp.window_eV[0], right=bp.window_eV[1],
                                      fill_color=COLOURS["window"], fill_alpha=0.3))

    trans = figure(title=f"Transfer curves at Vd = {s.transfer_sweep.vd_V:g} V",
                   x_axis_label="Vg (V)", y_axis_label="Id (µA/µm)", y_axis_type="log", **size)
    colours = [COLOURS["design"], COLOURS["twin"], *COLOURS["pinned"]]
    dashes = ["solid", "dashed"] + ["dotted"] * len(COLOURS["pinned"])
    curves = labelled_curves(results)
    for (label, c), colour, dash in zip(curves, colours, dashes, strict=False):
        i = positive_only(c.id_uA_per_um)
        keep = np.isfinite(i)
        trans.line(np.asarray(c.vg_V, float)[keep], i[keep], color=colour, line_dash=dash,
                   line_width=2, legend_label=label)
    m = results.transfer.metrics
    trans.add_layout(Span(location=m.ioff_target_uA_per_um, dimension="width",
                          line_color=COLOURS["junction"], line_width=1))
    anchor = reference_anchor(curves)
    if anchor is not None:
        limit = thermionic_limit_mV_per_dec(d.temperature_K)
        vg = np.asarray(results.transfer.vg_V, float)
        ref = anchor[1] * 10.0 ** ((vg - anchor[0]) * 1e3 / limit)
        allc = np.concatenate([positive_only(c.id_uA_per_um) for _, c in curves])
        if np.any(np.isfinite(allc)):
            keep = (ref >= np.nanmin(allc) / 3) & (ref <= np.nanmax(allc) * 3)
            trans.line(vg[keep], ref[keep], color=COLOURS["limit"], line_dash="dotted",
                       legend_label=f"(ln 10)kT/q = {limit:.1f} mV/dec")
    trans.legend.location = "bottom_right"

    out = figure(title="Output curves", x_axis_label="Vd (V)", y_axis_label="Id (µA/µm)", **size)
    for c, colour in zip(results.output, output_ramp(len(results.output)), strict=True):
        out.line(np.asarray(c.vd_V, float), np.asarray(c.id_uA_per_um, float), color=colour,
                 line_width=2, legend_label=f"Vg = {c.vg_V:g} V")
    if results.output:
        out.legend.location = "top_left"

    limit = thermionic_limit_mV_per_dec(d.temperature_K)
    top = max(200.0, 2.5 * limit)
    swing = figure(title=f"Point swing against current at Vd = {s.transfer_sweep.vd_V:g} V",
                   x_axis_label="Id (µA/µm)", y_axis_label="SS (mV/dec)", x_axis_type="log",
                   y_range=(0, top), **size)
    for (label, c), colour, dash in zip(curves, colours, dashes, strict=False):
        ids, ss = rising_swing(c, top)
        if ids.size:
            swing.line(ids, ss, color=colour, line_dash=dash, line_width=2, legend_label=label)
    swing.add_layout(Span(location=limit, dimension="width", line_color=COLOURS["limit"],
                          line_dash="dotted", line_width=1.5))
    swing.add_layout(Span(location=m.ioff_target_uA_per_um, dimension="height",
                          line_color=COLOURS["junction"], line_width=1))
    if swing.legend:
        swing.legend.location = "top_left"

    tfig = transmission_figure(results, size)
    for p in (bands, spec, trans, out, tfig, swing):
        p.add_tools(HoverTool(tooltips=[("x", "$x{0.000}"), ("y", "$y{0.000e}")]))
        p.legend.label_text_font_size = "8pt"
        p.legend.click_policy = "hide"

    caption = caption_text(d, bp.vd_V, bp.vg_V, s.sub60_version).split("\n")
    title = html.escape(s.title) if s.title else "sub60 snapshot"
    header = Div(text=(f"<h2>{title}</h2><p>{html.escape(caption[0])}; band diagram at "
                       f"{html.escape(caption[1])}</p>"
                       f"<p><b>Caution:</b> {html.escape(caption[2])}. Created "
                       f"{html.escape(str(s.created_utc))}.</p>"), width=1140)
    heads, rows = metrics_rows(curves)
    th = "".join(f"<th style='padding:2px 10px'>{html.escape(h)}</th>" for h in heads)
    trs = "".join(
        f"<tr><th style='text-align:left;padding:2px 10px'>{html.escape(label)}</th>"
        + "".join(f"<td style='padding:2px 10px;text-align:right'>{html.escape(c)}</td>"
                  for c in cells) + "</tr>" for label, cells in rows)
    table = Div(text=(
        f"<h3>Figures of merit at Vd = {s.transfer_sweep.vd_V:g} V</h3>"
        f"<table class='metrics' style='border-collapse:collapse;font-size:13px'>"
        f"<tr><th></th>{th}</tr>{trs}</table>"
        f"<p style='font-size:12px'>Ion at Vg = Voff + {m.vdd_V:g} V; Voff where Id = the Ioff "
        f"target {m.ioff_target_uA_per_um:.3g} µA/µm; thermionic limit (ln 10)kT/q = "
        f"{limit:.1f} mV/dec at {d.temperature_K:g} K; — = not defined for that curve.</p>"),
        width=1140)
    page = column(header, table, gridplot([[bands, spec], [trans, out], [tfig, swing]],
                                          toolbar_location="right"))
    return file_html(page, INLINE, title="sub60 snapshot")


#: transmissions below this are left out of the log axis [-]
_T_FLOOR = 1e-30


def transmission_figure(results: SnapshotResults, size: dict):
    """T(E, k = 0) of the bias point's main subband pair: WKB (the one-band decay when
    that model is the snapshot's, else two-band) and the exact two-band transmission,
    whatever the snapshot's model, as in the explorer; a note when no pair carries
    current."""
    from bokeh.models import Label
    from bokeh.plotting import figure

    bp = results.bias_point
    wkb = "one-band" if results.settings.model.tunnelling_model == "one-band" else "two-band"
    try:
        tc = compare_transmissions(bp, wkb_model=wkb)
    except ValueError:
        tc = None
    pair = f" of {tc.pair}" if tc is not None else ""
    fig = figure(title=f"Transmission{pair} at Vg = {bp.vg_V:g} V, k\u22a5 = 0",
                 x_axis_label="energy (eV)", y_axis_label="T(E) (\u2013)", y_axis_type="log",
                 **size)
    if tc is None:
        fig.add_layout(Label(x=10, y=150, x_units="screen", y_units="screen",
                             text="no band-to-band current at this bias"))
        return fig
    e = np.asarray(tc.energy_eV, float)
    for values, colour, dash, label in (
            (tc.wkb, COLOURS["design"], "solid", f"WKB ({wkb})"),
            (tc.exact, COLOURS["twin"], "dashed", "exact two-band")):
        t = positive_only(np.asarray(values, float))
        keep = np.isfinite(t) & (t >= _T_FLOOR)
        fig.line(e[keep], t[keep], color=colour, line_dash=dash, line_width=2,
                 legend_label=label)
    fig.legend.location = "bottom_right"
    return fig
