"""Figures of a snapshot: static (matplotlib, Agg, no browser) and one offline page (Bokeh).

Four figures, each with a caption stating the key settings (material, body thickness,
gate length, EOT, source doping, drain voltage, temperature) and the model caution:

- ``bands``    subband edges along x, the Fermi levels, the tunnel window shaded;
- ``spectrum`` band-to-band spectral current J(E) and transmission T(E);
- ``transfer`` Id-Vg on a log axis, the design and its MOSFET twin (and pinned designs),
  with a reference slope of (ln 10)kT/q per decade;
- ``output``   Id-Vd, one curve per gate voltage;
- ``swing``    point swing against current (the rising branch of each transfer curve),
  with the thermionic limit and the Ioff target;
- ``metrics``  the figures of merit of the design, its twin and the pinned designs as a
  table (the page's metrics strip and comparison, in one figure).

Static figures are exactly `FIGURE_SIZE_PX` pixels (PNG) and scalable (SVG); the same
plots as one interactive offline page are in `app.figures_page`. This is the export
figures layer: it reads the results (`app.snapshot_check.SnapshotResults`), never the
snapshot writer or the explorer's UI modules; colours come from `app.theme`.
"""

from __future__ import annotations

import io
import re
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from sub60.app.theme import METRIC_HEADINGS, PALETTE, STRIP_METRICS, format_metric, output_ramp
from sub60.physics import (
    BiasPoint,
    Design,
    OutputCurve,
    TransferCurve,
    heterointerface_offsets,
    thermionic_limit_mV_per_dec,
)

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from sub60.app.snapshot_check import SnapshotResults

#: Static figure size: inches and dots per inch -> pixels (width, height).
FIGURE_SIZE_IN = (8.0, 5.0)
FIGURE_DPI = 120
FIGURE_SIZE_PX = (round(FIGURE_SIZE_IN[0] * FIGURE_DPI), round(FIGURE_SIZE_IN[1] * FIGURE_DPI))
FIGURE_NAMES = ("bands", "spectrum", "transfer", "output", "swing", "metrics")
FORMATS = ("png", "svg")

#: The palette of the explorer (`app.theme.PALETTE`), by its historical name here.
COLOURS = PALETTE
_T_FLOOR = 1e-30  # transmissions below this are left out of the log axis [-]


# ---------------------------------------------------------------------- captions
def caption_text(design: Design, vd_V: float, vg_V: float | Sequence[float] | None = None,
                 version: str | None = None) -> str:
    """Three caption lines: the device, the bias and temperature, the model caution.

    Parameters
    ----------
    design : Design
    vd_V : float
        drain voltage of the figure [V].
    vg_V : float, sequence of float or None
        gate voltage(s) of the figure [V]; None for a gate sweep.
    version : str or None
        sub60 version that made the figure.
    """
    d = design
    eot = d.eot_nm
    kind = "tunnel FET" if d.source_type == "p" else "MOSFET"
    if vg_V is None:
        gate = ""
    elif isinstance(vg_V, (int, float)):
        gate = f"Vg = {vg_V:g} V, "
    else:
        gate = "Vg = " + ", ".join(f"{v:g}" for v in vg_V) + " V, "
    device = (f"{d.material} {d.gate_layout}-gate {kind}: body {d.body_thickness_nm:g} nm, "
              f"gate length {d.gate_length_nm:g} nm, EOT {eot:.2f} nm ({d.oxide} "
              f"{d.oxide_thickness_nm:g} nm), {d.source_type}+ source "
              f"{d.source_doping_cm3:.3g} cm\u207b\u00b3")
    bias = f"{gate}Vd = {vd_V:g} V, T = {d.temperature_K:g} K; carrier charge: {d.charge_model}"
    caution = ("sub60" + (f" {version}" if version else "")
               + " \u2014 design-exploration model, not calibrated TCAD")
    return "\n".join((device, bias, caution))


def _safe(label: str) -> str:
    """Legend text shown literally by matplotlib (no mathtext, not hidden by '_')."""
    return label.replace("$", r"\$").lstrip("_") or "?"


def positive_only(values: np.ndarray) -> np.ndarray:
    """A copy for a log axis: non-positive and non-finite values become NaN."""
    v = np.asarray(values, float).copy()
    v[~(np.isfinite(v) & (v > 0))] = np.nan
    return v


# ---------------------------------------------------------------------- matplotlib
def _figure(caption: str, width: float = 0.86) -> tuple[Figure, object]:
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=FIGURE_SIZE_IN, dpi=FIGURE_DPI)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.1, 0.22, width, 0.70))
    fig.text(0.01, 0.015, caption, fontsize=7.5, ha="left", va="bottom", color=COLOURS["text"])
    ax.grid(True, color=COLOURS["grid"], linewidth=0.8)
    ax.set_axisbelow(True)
    return fig, ax


def band_figure(bp: BiasPoint, caption: str) -> Figure:
    """Band diagram: subband edges along x, Fermi levels, tunnel window shaded."""
    d = bp.design
    fig, ax = _figure(caption)
    x = np.asarray(bp.x_nm, float)
    ax.axvspan(d.gate_start_nm, d.gate_end_nm, color=COLOURS["gate"], zorder=0, label="gate")
    for xj in (d.source_junction_nm, d.drain_junction_nm):
        ax.axvline(xj, color=COLOURS["junction"], linestyle=":", linewidth=0.8)
    off = heterointerface_offsets(d)
    if off is not None:  # heterojunction source: the interface and its offsets
        ax.axvline(off.position_nm, color="#444444", linestyle="--", linewidth=1.0,
                   label=f"{off.source} \u2192 {off.body}: \u0394Ec {off.conduction_step_eV:+.2f}, "
                         f"\u0394Ev {off.valence_step_eV:+.2f} eV ({off.kind.split(' (')[0]})")
    if bp.window_eV is not None:
        lo, hi = bp.window_eV
        ax.axhspan(lo, hi, color=COLOURS["window"], alpha=0.35, zorder=0.5,
                   label=f"tunnel window {lo:.3f} to {hi:.3f} eV")
    for i, (lab, edge) in enumerate(zip(bp.conduction_labels, bp.conduction_eV, strict=True)):
        ax.plot(x, edge, color=COLOURS["conduction"][min(i, 3)], linewidth=2.0 if i == 0 else 1.0,
                label=lab)
    for i, (lab, edge) in enumerate(zip(bp.valence_labels, bp.valence_eV, strict=True)):
        ax.plot(x, edge, color=COLOURS["valence"][min(i, 5)], linewidth=2.0 if i == 0 else 1.0,
                label=lab)
    ax.plot([x[0], d.source_junction_nm], [bp.efs_eV] * 2, color=COLOURS["fermi"],
            linestyle="--", linewidth=1.2, label="source Fermi level")
    ax.plot([d.drain_junction_nm, x[-1]], [bp.efd_eV] * 2, color=COLOURS["fermi"],
            linestyle="-.", linewidth=1.2, label="drain Fermi level")
    ax.set_xlim(x[0], x[-1])
    ax.set_xlabel("position along the channel x (nm)")
    ax.set_ylabel("energy (eV), source Fermi level at 0")
    state = "closed" if bp.window_eV is None else "open"
    ax.set_title(f"Band diagram at Vg = {bp.vg_V:g} V, Vd = {bp.vd_V:g} V (tunnel window {state})",
                 fontsize=10)
    ax.legend(fontsize=7, loc="upper right", ncol=2, framealpha=0.9)
    return fig


def spectrum_figure(bp: BiasPoint, caption: str) -> Figure:
    """Band-to-band spectral current J(E) (left axis) and transmission T(E) (right, log)."""
    fig, ax = _figure(caption, width=0.78)
    s = bp.spectrum
    e = np.asarray(s.energy_eV, float)
    if bp.window_eV is not None:
        ax.axvspan(*bp.window_eV, color=COLOURS["window"], alpha=0.3, label="tunnel window")
    if e.size:
        ax.plot(e, np.asarray(s.current_density, float), color=COLOURS["design"], linewidth=1.8,
                label="J(E)")
        ax2 = ax.twinx()
        t = positive_only(s.transmission)
        t[t < _T_FLOOR] = np.nan
        if np.any(np.isfinite(t)):
            ax2.semilogy(e, t, color=COLOURS["limit"], linestyle="--", linewidth=1.0,
                         label="T(E), k\u22a5 = 0")
            ax2.legend(fontsize=7, loc="upper left")
        ax2.set_ylabel("transmission (\u2013)")
    else:
        ax.text(0.5, 0.5, "no band-to-band current at this bias", transform=ax.transAxes,
                ha="center", va="center")
    ax.set_xlabel("energy (eV), source Fermi level at 0")
    ax.set_ylabel("J(E) (\u00b5A/\u00b5m per eV)")
    ax.set_title(f"Tunnelling spectrum at Vg = {bp.vg_V:g} V, Vd = {bp.vd_V:g} V: "
                 f"I_BTBT = {bp.btbt_uA_per_um:.3g} \u00b5A/\u00b5m", fontsize=10)
    ax.legend(fontsize=7, loc="upper right")
    return fig


def reference_anchor(curves: Sequence[tuple[str, TransferCurve]]
                     ) -> tuple[float, float] | None:
    """Point the thermionic reference passes through: (Voff, Ioff) of the first curve
    that has one, else the lowest current of the first curve [V, uA/um]."""
    for _, c in curves:
        m = c.metrics
        if m.voff_V.value is not None:
            return m.voff_V.value, m.ioff_target_uA_per_um
    i = positive_only(curves[0][1].id_uA_per_um)
    if not np.any(np.isfinite(i)):
        return None
    k = int(np.nanargmin(i))
    return float(curves[0][1].vg_V[k]), float(i[k])


def _transfer_label(label: str, c: TransferCurve) -> str:
    m = c.metrics
    parts = [label]
    if m.ss_min_mV_per_dec.value is not None:
        parts.append(f"SSmin {m.ss_min_mV_per_dec.value:.3g} mV/dec")
    if m.ion_uA_per_um.value is not None:
        parts.append(f"Ion {m.ion_uA_per_um.value:.3g} \u00b5A/\u00b5m")
    return ", ".join(parts)


def transfer_figure(curves: Sequence[tuple[str, TransferCurve]], caption: str) -> Figure:
    """Id-Vg on a log axis with the Ioff target, Ion point and (ln 10)kT/q reference.

    Parameters
    ----------
    curves : sequence of (label, TransferCurve)
        the design first, then its twin, then pinned designs.
    caption : str
    """
    fig, ax = _figure(caption)
    styles = [("-", COLOURS["design"], 2.0), ("--", COLOURS["twin"], 1.8)]
    styles += [(":", c, 1.6) for c in COLOURS["pinned"]]
    currents = []
    for (label, c), (ls, colour, lw) in zip(curves, styles, strict=False):
        i = positive_only(c.id_uA_per_um)
        currents.append(i)
        ax.semilogy(c.vg_V, i, linestyle=ls, color=colour, linewidth=lw,
                    label=_safe(_transfer_label(label, c)))
    allc = np.concatenate(currents) if currents else np.array([np.nan])
    main = curves[0][1]
    m = main.metrics
    temperature = main.design.temperature_K
    limit = thermionic_limit_mV_per_dec(temperature)
    if np.any(np.isfinite(allc)):
        ylo, yhi = np.nanmin(allc) / 3, np.nanmax(allc) * 3
        ax.set_ylim(ylo, yhi)
        anchor = reference_anchor(curves)
        if anchor is not None:
            vg = np.array([main.vg_V[0], main.vg_V[-1]], float)
            ref = anchor[1] * 10.0 ** ((vg - anchor[0]) * 1e3 / limit)
            ax.semilogy(vg, ref, color=COLOURS["limit"], linestyle=(0, (1, 2)), linewidth=1.0,
                        label=f"(ln 10)kT/q = {limit:.1f} mV/dec at {temperature:g} K")
        ax.axhline(m.ioff_target_uA_per_um, color=COLOURS["junction"], linewidth=0.8,
                   label=f"Ioff target {m.ioff_target_uA_per_um:.3g} \u00b5A/\u00b5m")
        if m.voff_V.value is not None and m.ion_uA_per_um.value is not None:
            ax.plot([m.voff_V.value + m.vdd_V], [m.ion_uA_per_um.value], "o",
                    color=COLOURS["marker"], markersize=5,
                    label=f"Ion at Voff + Vdd ({m.vdd_V:g} V)")
        ax.set_ylim(ylo, yhi)
    else:
        ax.text(0.5, 0.5, "no positive current to draw", transform=ax.transAxes, ha="center")
    ax.set_xlim(float(main.vg_V[0]), float(main.vg_V[-1]))
    ax.set_xlabel("gate voltage Vg (V)")
    ax.set_ylabel("drain current Id (\u00b5A/\u00b5m)")
    ax.set_title(f"Transfer curves at Vd = {main.vd_V:g} V", fontsize=10)
    ax.legend(fontsize=7, loc="lower right", framealpha=0.9)
    return fig


def output_figure(curves: Sequence[OutputCurve], caption: str) -> Figure:
    """Id-Vd, one curve per gate voltage."""
    fig, ax = _figure(caption)
    for c, colour in zip(curves, output_ramp(len(curves)), strict=True):
        ax.plot(c.vd_V, c.id_uA_per_um, color=colour, linewidth=1.8, marker=".", markersize=4,
                label=f"Vg = {c.vg_V:g} V")
    ax.set_xlabel("drain voltage Vd (V)")
    ax.set_ylabel("drain current Id (\u00b5A/\u00b5m)")
    ax.set_title("Output curves", fontsize=10)
    if curves:
        ax.legend(fontsize=7, loc="upper left")
    return fig


#: Lowest current of the swing figure [uA/um] (as the page's swing plot; engineering
#: choice, no source).
SWING_FLOOR_UA_PER_UM = 1e-10


def rising_swing(c: TransferCurve, ss_top: float = np.inf) -> tuple[np.ndarray, np.ndarray]:
    """(Id [uA/um], SS [mV/dec]) of a curve's rising branch: the points above its current
    minimum with Id >= `SWING_FLOOR_UA_PER_UM` and a positive swing; a swing above
    ``ss_top`` is NaN (a gap, not a spike)."""
    ids = np.asarray(c.id_uA_per_um, float)
    ss = np.asarray(c.ss_mV_per_dec, float)
    ok = np.isfinite(ids) & np.isfinite(ss) & (ss > 0) & (ids >= SWING_FLOOR_UA_PER_UM)
    if np.isfinite(ids).any():
        ok &= np.arange(ids.size) > int(np.nanargmin(ids))
    return ids[ok], np.where(ss[ok] <= ss_top, ss[ok], np.nan)


def swing_figure(curves: Sequence[tuple[str, TransferCurve]], caption: str) -> Figure:
    """Point swing against current (log) of each curve's rising branch, with the
    thermionic limit (ln 10)kT/q and the Ioff target."""
    fig, ax = _figure(caption)
    main = curves[0][1]
    temperature = main.design.temperature_K
    limit = thermionic_limit_mV_per_dec(temperature)
    top = max(200.0, 2.5 * limit)
    styles = [("-", COLOURS["design"], 2.0), ("--", COLOURS["twin"], 1.8)]
    styles += [(":", c, 1.6) for c in COLOURS["pinned"]]
    for (label, c), (ls, colour, lw) in zip(curves, styles, strict=False):
        ids, ss = rising_swing(c, top)
        ax.semilogx(ids, ss, linestyle=ls, color=colour, linewidth=lw, marker=".",
                    markersize=3, label=_safe(label))
    ax.axhline(limit, color=COLOURS["limit"], linestyle=(0, (1, 2)), linewidth=1.0,
               label=f"(ln 10)kT/q = {limit:.1f} mV/dec at {temperature:g} K")
    m = main.metrics
    ax.axvline(m.ioff_target_uA_per_um, color=COLOURS["junction"], linewidth=0.8,
               label=f"Ioff target {m.ioff_target_uA_per_um:.3g} \u00b5A/\u00b5m")
    ax.set_ylim(0, top)
    ax.set_xlabel("drain current Id (\u00b5A/\u00b5m)")
    ax.set_ylabel("point swing SS (mV/dec)")
    ax.set_title(f"Point swing against current at Vd = {main.vd_V:g} V", fontsize=10)
    ax.legend(fontsize=7, loc="upper left", framealpha=0.9)
    return fig


def plain_heading(name: str) -> str:
    """A metric's column heading without markup (SS<sub>min</sub> -> SSmin)."""
    return re.sub(r"<[^>]+>", "", METRIC_HEADINGS[name])


def metrics_rows(curves: Sequence[tuple[str, TransferCurve]]
                 ) -> tuple[list[str], list[tuple[str, list[str]]]]:
    """The figures of merit as text: (column headings, [(row label, cells)]), with the
    page's number formats (`app.theme.format_metric`); a missing value is '—'."""
    heads = [plain_heading(n) + (" (target)" if n == "ioff_uA_per_um" else "")
             for n in STRIP_METRICS]
    rows = []
    for label, c in curves:
        cells = []
        for name in STRIP_METRICS:
            v = getattr(c.metrics, name).value
            cells.append("—" if v is None else format_metric(name, v))
        rows.append((label, cells))
    return heads, rows


def metrics_figure(curves: Sequence[tuple[str, TransferCurve]], caption: str) -> Figure:
    """The figures of merit of each curve as a table, with the settings they are taken at
    (Ioff target, Vdd, the thermionic limit)."""
    fig, _ = _figure(caption)
    fig.axes[0].remove()
    ax = fig.add_axes((0.02, 0.22, 0.96, 0.70))  # the table takes the whole width
    ax.axis("off")
    heads, rows = metrics_rows(curves)
    text = [[_safe(label), *(_safe(c) for c in cells)] for label, cells in rows]
    n = len(heads)
    first = 0.25  # width of the label column [axes fraction]
    table = ax.table(cellText=text, colLabels=["", *heads], loc="upper center",
                     cellLoc="center", colWidths=[first] + [(1 - first) / n] * n,
                     bbox=(0.0, 0.3, 1.0, 0.62))
    table.auto_set_font_size(False)
    table.set_fontsize(8)
    for (row, col), cell in table.get_celld().items():
        cell.set_edgecolor(COLOURS["frame"])
        if row == 0:
            cell.set_text_props(weight="bold")
        if col == 0:
            cell.set_text_props(ha="left", weight="bold")
            cell.PAD = 0.02
    main = curves[0][1]
    m = main.metrics
    limit = thermionic_limit_mV_per_dec(main.design.temperature_K)
    ax.text(0.0, 0.12, f"Ion at Vg = Voff + {m.vdd_V:g} V; Voff where Id = the Ioff target "
            f"{m.ioff_target_uA_per_um:.3g} \u00b5A/\u00b5m; thermionic limit (ln 10)kT/q = "
            f"{limit:.1f} mV/dec at {main.design.temperature_K:g} K; — = not defined for "
            "that curve.", fontsize=7.5, transform=ax.transAxes, color=COLOURS["text"],
            wrap=True)
    ax.set_title(f"Figures of merit at Vd = {main.vd_V:g} V", fontsize=10)
    return fig


def labelled_curves(results: SnapshotResults) -> list[tuple[str, TransferCurve]]:
    """The transfer curves of a snapshot with their legend labels: design, twin, pins."""
    s = results.settings
    kind = "tunnel FET" if s.design.source_type == "p" else "MOSFET"
    out = [(f"design ({s.design.source_type}+ source, {kind})", results.transfer),
           ("MOSFET twin (n+ source)", results.twin)]
    out += [(f"pinned: {p.name}", c) for p, c in zip(s.pinned, results.pinned, strict=True)]
    return out


def figures_of(results: SnapshotResults) -> dict[str, Figure]:
    """The matplotlib figures of a snapshot, by name (`FIGURE_NAMES`; no output figure
    without output curves)."""
    s = results.settings
    bp = results.bias_point
    v = s.sub60_version
    out = {
        "bands": band_figure(bp, caption_text(s.design, bp.vd_V, bp.vg_V, v)),
        "spectrum": spectrum_figure(bp, caption_text(s.design, bp.vd_V, bp.vg_V, v)),
        "transfer": transfer_figure(labelled_curves(results),
                                    caption_text(s.design, s.transfer_sweep.vd_V, None, v)),
    }
    curves = labelled_curves(results)
    sweep_caption = caption_text(s.design, s.transfer_sweep.vd_V, None, v)
    out["swing"] = swing_figure(curves, sweep_caption)
    out["metrics"] = metrics_figure(curves, sweep_caption)
    if results.output:
        out["output"] = output_figure(
            results.output, caption_text(s.design, float(results.output[0].vd_V[-1]),
                                         [c.vg_V for c in results.output], v)
            .replace("Vd = ", "Vd up to ", 1))
    return out


def render(fig: Figure, fmt: str) -> bytes:
    """PNG (exactly `FIGURE_SIZE_PX`) or SVG bytes of a figure; no file, no date stamp."""
    import matplotlib

    if fmt not in FORMATS:
        raise ValueError(f"format: {fmt!r} not one of {FORMATS}")
    buf = io.BytesIO()
    meta = {"Date": None} if fmt == "svg" else {"Software": None}
    with matplotlib.rc_context({"svg.hashsalt": "sub60", "svg.fonttype": "path"}):
        fig.savefig(buf, format=fmt, dpi=FIGURE_DPI, metadata=meta)
    return buf.getvalue()


def static_figures(results: SnapshotResults) -> dict[str, bytes]:
    """File name ("bands.png", "bands.svg", ...) -> content, for every figure."""
    out: dict[str, bytes] = {}
    for name, fig in figures_of(results).items():
        for fmt in FORMATS:
            out[f"{name}.{fmt}"] = render(fig, fmt)
    return out
