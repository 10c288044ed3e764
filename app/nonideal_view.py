"""The non-idealities on the explorer page: their sidebar card, the ideal curves drawn
dashed beside the non-ideal ones, the band-tail fringes of the band diagram and the
off-state current split by mechanism.

The settings are `app.nonideal.NonIdealSettings` (part of the session's state); the ideal
curve and the breakdown are computed by the session's jobs (`app.jobs`), off the event
loop. Nothing here computes physics; every Bokeh model is made per session.
"""

from __future__ import annotations

import html
import math
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np
import panel as pn
from bokeh.models import ColumnDataSource, HoverTool

from sub60.app.nonideal import MECHANISMS, dominant_mechanism
from sub60.app.plot_style import COLOURS

#: Entry-box sliders of the non-ideality card and their step (in the setting's unit).
NONIDEAL_STEPS: tuple[tuple[str, float], ...] = (
    ("tail_energy_source_meV", 0.5), ("tail_energy_channel_meV", 0.5),
    ("tat_lifetime_ns", 0.1), ("tat_trap_level_eV", 0.01),
    ("interface_trap_density_cm2eV", 1e11), ("interface_trap_neutral_level_eV", 0.01),
    ("source_resistance_ohm_um", 10.0), ("drain_resistance_ohm_um", 10.0),
)
#: Button groups of the card.
NONIDEAL_CHOICES: tuple[str, ...] = ("interface_trap_profile", "bandgap_narrowing")

IDEAL_LABEL = "tunnel FET, ideal"
#: Fill of the band-tail fringes (the band colours, light).
TAIL_ALPHA = 0.55


def nonideal_makers(state: Any, width: int) -> dict[str, Callable[[], Any]]:
    """Functions making the card's choice widgets, by setting name (its sliders are the
    sidebar's editable sliders, `NONIDEAL_STEPS`)."""
    return {name: (lambda name=name: pn.widgets.RadioButtonGroup.from_param(
        state.param[name], width=width, margin=(4, 10), css_classes=[f"ctl-{name}"]))
        for name in NONIDEAL_CHOICES}


def nonideal_card(controls: Any, folded_card: Callable[..., pn.Card], width: int) -> pn.Card:
    """The collapsed "Non-idealities" card of the sidebar (`app.controls.Controls`):
    the typical-process and ideal buttons, then one control per setting, made when the
    card is first opened (`app.controls.folded_card`)."""
    state, w, css = controls.state, controls.widgets, controls._css

    def items() -> list:
        typical = pn.widgets.Button(label="Typical III–V process", width=width // 2 - 4,
                                    margin=(4, 2, 4, 10), css_classes=["ni-typical"])
        ideal = pn.widgets.Button(label="Ideal (all off)", width=width // 2 - 4,
                                  margin=(4, 10, 4, 2), css_classes=["ni-ideal"])
        typical.on_click(lambda _e: state.set_typical_process())
        ideal.on_click(lambda _e: state.set_ideal())
        w["nonideal_typical"], w["nonideal_ideal"] = typical, ideal
        note = pn.pane.HTML(
            '<div class="note">Typical process: our own illustration (README): tails 15 meV, '
            "τ = 1 ns at midgap, U-shaped D<sub>it</sub> 2e12 cm⁻²eV⁻¹, R<sub>s</sub> = "
            "R<sub>d</sub> = 100 Ω·µm. When any is on, the ideal device is drawn dashed.</div>",
            stylesheets=css, margin=(0, 12))

        def labelled(name: str) -> pn.Column:
            head = pn.pane.HTML(f'<div class="ctl-label">{state.param[name].label}</div>',
                                stylesheets=css, margin=(4, 10, 0, 10))
            return pn.Column(head, w[name], margin=0)

        return [pn.Row(typical, ideal, margin=0), note,
                w["tail_energy_source_meV"], w["tail_energy_channel_meV"],
                w["tat_lifetime_ns"], w["tat_trap_level_eV"],
                w["interface_trap_density_cm2eV"], labelled("interface_trap_profile"),
                w["interface_trap_neutral_level_eV"],
                w["source_resistance_ohm_um"], w["drain_resistance_ohm_um"],
                labelled("bandgap_narrowing")]

    return folded_card("Non-idealities", items, collapsed=True)


class IdealOverlay:
    """The ideal tunnel FET's curves (dashed) on the transfer and swing plots, and the
    band-tail fringes on the band diagram, of one `app.plots.ExplorerFigures`.

    The curve sources are registered under the key ``'ideal'`` of the transfer and swing
    plots, so `ExplorerFigures.show_transfer('ideal', ...)` draws them.
    """

    def __init__(self, figures: Any) -> None:
        colour = COLOURS["tfet"]
        tp, sp = figures.transfer_plot, figures.swing_plot
        src = ColumnDataSource({"vg": [], "id": [], "btbt": [], "therm": [], "ss": []},
                               name="transfer_ideal_source")
        r = tp.figure.line("vg", "id", source=src, line_color=colour, line_width=2.0,
                           line_dash=[7, 4], line_alpha=0.8, legend_label=IDEAL_LABEL,
                           name="transfer_ideal")
        tp.figure.add_tools(HoverTool(renderers=[r], tooltips=[
            ("", IDEAL_LABEL), ("Vg", "@vg{0.000} V"), ("Id", "@id{0.00e+0} µA/µm"),
            ("SS", "@ss{0.0} mV/dec")]))
        tp.transfer_sources["ideal"] = src
        ssrc = ColumnDataSource({"id": [], "ss": [], "vg": []}, name="swing_ideal_source")
        r2 = sp.figure.line("id", "ss", source=ssrc, line_color=colour, line_width=2.0,
                            line_dash=[7, 4], line_alpha=0.8, legend_label=IDEAL_LABEL,
                            name="swing_ideal")
        sp.figure.add_tools(HoverTool(renderers=[r2], tooltips=[
            ("", IDEAL_LABEL), ("Id", "@id{0.00e+0} µA/µm"), ("SS", "@ss{0.0} mV/dec")]))
        sp.swing_sources["ideal"] = ssrc
        self._figures = (tp.figure, sp.figure, figures.band)
        self.transfer_source, self.swing_source = src, ssrc
        self.renderers = (r, r2)
        # band tails: E0-wide fringes below Ec in the channel, above Ev in the source
        band = figures.band
        self.tail_source = ColumnDataSource({"x": [], "lo": [], "hi": []},
                                            name="tail_channel_source")
        self.source_tail_source = ColumnDataSource({"x": [], "lo": [], "hi": []},
                                                   name="tail_source_source")
        self.tail_renderers = (
            band.varea("x", "lo", "hi", source=self.tail_source, fill_color=COLOURS["conduction"],
                       fill_alpha=TAIL_ALPHA, name="tail_channel",
                       legend_label="band tails (E₀)"),
            band.varea("x", "lo", "hi", source=self.source_tail_source,
                       fill_color=COLOURS["valence"], fill_alpha=TAIL_ALPHA,
                       name="tail_source", legend_label="band tails (E₀)"))
        self.set_visible(False)
        _legend_visible(self._figures, self.tail_renderers[0], False)
        for r in self.tail_renderers:
            r.visible = False

    def set_visible(self, on: bool) -> None:
        """Show or hide the ideal curves and their legend entries (their data stay)."""
        for r in self.renderers:
            r.visible = on
            _legend_visible(self._figures, r, on)

    def clear(self) -> None:
        """No ideal curve (the design is ideal). Sources already empty are left alone: every
        data assignment is a message to the page and a repaint of its plot, and an ideal
        design clears the overlay after each of its transfer curves."""
        for src in (self.transfer_source, self.swing_source):
            _fill_or_empty(src, None)
        self.set_visible(False)

    def show_tails(self, bp: Any) -> None:
        """Fringes E₀ wide below the channel's conduction edge and above the source's
        valence edge of a bias point (none when the design has no tails)."""
        d = bp.design
        x = np.asarray(bp.x_nm, float)
        ec = np.asarray(bp.subband_ec_eV, float)
        ev = np.asarray(bp.subband_ev_eV, float)
        e_ch = d.tail_energy_channel_meV * 1e-3
        e_src = d.tail_energy_source_meV * 1e-3
        ch = (x >= d.source_junction_nm) & (x <= d.drain_junction_nm)
        src = x <= d.source_junction_nm
        _fill_or_empty(self.tail_source, {"x": x[ch], "lo": ec[ch] - e_ch, "hi": ec[ch]}
                       if e_ch > 0 else None)
        _fill_or_empty(self.source_tail_source,
                       {"x": x[src], "lo": ev[src], "hi": ev[src] + e_src} if e_src > 0 else None)
        for r, on in zip(self.tail_renderers, (e_ch > 0, e_src > 0), strict=True):
            r.visible = on
        _legend_visible(self._figures, self.tail_renderers[0], e_ch > 0 or e_src > 0)


def _fill_or_empty(source: Any, data: dict | None) -> None:
    """Give ``source`` new data, or (None) empty it unless it already is empty: each
    assignment is a message to the page and a repaint of its plot."""
    if data is not None:
        source.data = data
    elif any(len(v) for v in source.data.values()):
        source.data = {k: [] for k in source.data}


def _legend_visible(figures: Sequence[Any], renderer: Any, on: bool) -> None:
    """Show the legend entry of ``renderer`` only while it is drawn."""
    for fig in figures:
        for legend in fig.legend:
            for item in legend.items:
                if renderer in item.renderers:
                    item.visible = on


def _fmt(v: float | None) -> str:
    if v is None or not math.isfinite(v):
        return "—"
    return f"{v:.2e}".replace("e-0", "e-").replace("e+0", "e")


def breakdown_html(breakdown: dict[str, Any] | None, pending: bool = False) -> str:
    """The off-state current at Voff by mechanism: a row of bars (share of the total on a
    linear scale) with the values in µA/µm; empty when there is nothing to show."""
    if breakdown is None:
        return ""
    if pending:
        return '<div class="ni-breakdown stale">Off-state current by mechanism: updating…</div>'
    total = breakdown.get("total_uA_per_um")
    if total is None:
        reason = html.escape(str(breakdown.get("reason", "")))
        return (f'<div class="ni-breakdown"><b>Off-state current by mechanism</b>: '
                f"— ({reason})</div>")
    rows = []
    for key, label in MECHANISMS:
        v = breakdown.get(f"{key}_uA_per_um") or 0.0
        share = 100.0 * v / total if total > 0 else 0.0
        rows.append(
            f'<tr data-mechanism="{key}" data-value="{v:.6g}"><td class="ni-name">{label}</td>'
            f'<td class="ni-bar"><div style="width:{max(share, 0.0):.1f}%;"></div></td>'
            f'<td class="ni-val">{_fmt(v)} µA/µm</td><td class="ni-share">{share:.1f} %</td></tr>')
    top = dominant_mechanism(breakdown)
    head = (f"<b>Off-state current by mechanism</b> at V<sub>off</sub> = "
            f"{breakdown['vg_V']:.3f} V, V<sub>d</sub> = {breakdown['vd_V']:.2f} V "
            f"(total {_fmt(total)} µA/µm; largest: <b>{top}</b>)")
    return f'<div class="ni-breakdown">{head}<table>{"".join(rows)}</table></div>'


#: Styles of the breakdown pane (page stylesheet addition).
BREAKDOWN_CSS = """
.ni-breakdown { font-size: 14px; color: #222; padding: 2px 0 4px 0; }
.ni-breakdown.stale { color: #888; }
.ni-breakdown table { border-collapse: collapse; margin-top: 2px; }
.ni-breakdown td { padding: 1px 8px 1px 0; white-space: nowrap; }
.ni-breakdown td.ni-name { min-width: 110px; }
.ni-breakdown td.ni-bar { width: 260px; }
.ni-breakdown td.ni-bar div { height: 12px; background: BAR; min-width: 1px; }
.ni-breakdown td.ni-val, .ni-breakdown td.ni-share { text-align: right;
  font-variant-numeric: tabular-nums; }
""".replace("BAR", COLOURS["tfet"])


def breakdown_pane(css: Sequence[str]) -> pn.pane.HTML:
    """A new (empty) pane of the off-state breakdown."""
    return pn.pane.HTML("", css_classes=["ni-breakdown-pane"],
                        stylesheets=[*css, BREAKDOWN_CSS], sizing_mode="stretch_width",
                        margin=(0, 8))
