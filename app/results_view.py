"""The live results of the explorer page: plots, metrics strip, progress and status.

`ResultsView` draws what the session's jobs (`app.jobs.SessionJobs`) deliver: the band
diagram and its companions for a bias point, transfer curves as they stream in, output
curves, the thermionic-limit line, the figures of merit; a failed solve becomes a message
naming the setting last changed, and the plots keep (or get back) the last good result.
It never computes physics and never decides what is stale: only newest results reach it.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
import panel as pn

from sub60.app.jobs import PriorityGate, SessionJobs, SweepRequest
from sub60.app.messages import (
    MessageBoard,
    html_escape,
    refused_value_message,
    solver_message,
    validity_notes_html,
    value_message,
)
from sub60.app.metrics_strip import models_text
from sub60.app.nonideal_view import breakdown_html, breakdown_pane
from sub60.app.number_rules import InputError, parse_number
from sub60.app.plot_style import style_figure
from sub60.app.plots import ExplorerFigures, metrics_html
from sub60.app.plots_curves import DEVICE_NAMES, TradeoffPlot
from sub60.app.state import ExplorerState, vg_step_text
from sub60.app.tables import tradeoff_table
from sub60.physics import VG_RANGE_V, SolverError, check_tunnelling_material


class ResultsView:
    """Figures and result panes of one session (a `app.jobs.JobListener`).

    Parameters
    ----------
    state : the session's settings.
    messages : the page's error messages.
    css : stylesheets of the page's HTML panes.
    """

    def __init__(self, state: ExplorerState, messages: MessageBoard, css: Sequence[str]) -> None:
        self.state = state
        self.messages = messages
        self.jobs: SessionJobs | None = None  # set by the page once the jobs exist
        self.last_changed: str | None = None  # setting named by a solver-failure message
        self.figures = ExplorerFigures()
        css = list(css)
        self.metrics = pn.pane.HTML("", css_classes=["metrics-strip"], stylesheets=css,
                                    sizing_mode="stretch_width", margin=(0, 8))
        self.progress = pn.indicators.Progress(value=0, max=100, width=170, height=14,
                                               bar_color="info", css_classes=["sweep-progress"],
                                               margin=(6, 8, 0, 8))
        self.status = pn.pane.HTML("Starting…", css_classes=["sweep-status"], stylesheets=css,
                                   width=260, margin=(0, 8))
        # the model's validity warnings of the band diagram shown (design and bias); the
        # material's own warning has its pane in the page, so it is not repeated here
        # (always visible, empty when there is nothing to say: toggling its visibility
        # made the browser report "Out of bounds" on a design change)
        self.notes = pn.pane.HTML("", css_classes=["validity-notes"],
                                  stylesheets=css, sizing_mode="stretch_width", margin=(2, 8))
        self.measured: tuple[str, Any] | None = None  # (file name, physics.MeasuredData)
        self._stale = True
        self.breakdown = breakdown_pane(css)  # off-state current by mechanism
        self._breakdown: dict | None = None
        # the figures stretch over their rows' widths (`ExplorerFigures.WIDTH_SHARES`); the
        # map's wider right margin gives both rows the same margins in all (16 px), so the
        # band diagram and the map under it get the same width
        self.plot_panes = {k: pn.pane.Bokeh(fig, margin=(2, 6, 2, 2) if k == "map" else (2, 2))
                           for k, fig in self.figures.figures.items()}
        p = self.plot_panes
        # the transfer plot's current axis: log (default) or linear
        self.transfer_axis = pn.widgets.RadioButtonGroup(
            name="Current axis", options={"log current axis": "log",
                                          "linear current axis": "linear"},
            value="log", color="light", width=250, height=28, margin=(0, 4, 2, 66),
            css_classes=["transfer-axis"])
        self.transfer_axis.param.watch(
            lambda e: self.figures.transfer_plot.set_linear(e.new == "linear"), "value")
        # Ion against the Ioff target: its figure is made and filled when the section is
        # first opened (a page opens without it)
        self.pins: Any = None  # the page's `app.pin_jobs.PinJobs`: pinned curves
        self.tradeoff: TradeoffPlot | None = None
        self._css = css
        self.tradeoff_card = pn.Card(
            title="Ion–Ioff trade-off: Ion against the Ioff target", collapsed=True,
            sizing_mode="stretch_width", margin=(4, 8), header_background="#eef2f5",
            css_classes=["tradeoff-card"])
        self.tradeoff_card.param.watch(self._open_tradeoff, "collapsed")
        # a reference band diagram at a second gate voltage, drawn quietly under the present
        self.reference_on = pn.widgets.Checkbox(name="Reference band diagram at Vg =",
                                                value=False, margin=(6, 4, 0, 66),
                                                css_classes=["reference-on"])
        self.reference_vg = pn.widgets.TextInput(value="0", width=62, height=28,
                                                 margin=(2, 2), css_classes=["reference-vg"])
        self.reference_unit = pn.pane.HTML('<div class="ctl-label">V</div>', stylesheets=css,
                                           margin=(8, 2, 0, 0))
        self.reference_voff = pn.widgets.Button(label="set to Voff (off state)",
                                                color="light", height=28, margin=(2, 4),
                                                css_classes=["reference-voff"])
        self._reference_value = 0.0
        self._reference_restoring = False
        self._reference_key: tuple | None = None
        self.reference_on.param.watch(lambda _e: self.request_reference(), "value")
        self.reference_vg.param.watch(self._reference_typed, "value")
        self.reference_voff.on_click(lambda _e: self._reference_at_voff())
        reference_row = pn.Row(self.reference_on, self.reference_vg, self.reference_unit,
                               self.reference_voff, margin=0)
        self.plots = pn.Column(
            pn.Row(p["band"], p["spectrum"], p["transmission"],
                   p["transfer"],
                   sizing_mode="stretch_width", margin=0, styles={"flex-wrap": "wrap"}),
            # the plots' own options, in one line between the rows (the rows' figures
            # stretch over their widths: nothing is stacked under a single figure)
            pn.Row(reference_row, pn.layout.HSpacer(), self.transfer_axis,
                   sizing_mode="stretch_width",
                   margin=0, css_classes=["plot-options"]),
            pn.Row(p["map"], p["output"], p["swing"], sizing_mode="stretch_width", margin=0,
                   styles={"flex-wrap": "wrap"}),
            self.tradeoff_card,
            sizing_mode="stretch_width", margin=(0, 4), css_classes=["sub60-plots"],
            stylesheets=css)
        self.show_metrics(stale=True)

    # ------------------------------------------------------------------ reference bias
    def _reference_typed(self, event: Any) -> None:
        if self._reference_restoring:
            return
        label = "Reference gate voltage (V)"
        lo, hi = VG_RANGE_V
        try:
            value = parse_number(str(event.new), label, lo, hi)
        except InputError:
            try:
                typed = float(event.new)
            except (TypeError, ValueError):
                typed = float("nan")
            self.messages.set("input", refused_value_message(label, typed, lo, hi,
                                                             self._reference_value))
            self._reference_restoring = True  # the box shows the kept value again
            try:
                self.reference_vg.value = f"{self._reference_value:g}"
            finally:
                self._reference_restoring = False
            return
        self.messages.clear("input")
        self._reference_value = value
        self.request_reference()

    def _reference_at_voff(self) -> None:
        """The reference at the design's Voff (the off state), when its curve has one."""
        tc = self.jobs.present_curve() if self.jobs is not None else None
        voff = tc.metrics.voff_V.value if tc is not None else None
        if voff is None:
            self.messages.set("input", "**Reference gate voltage (V)**: the present transfer "
                              "curve has no V<sub>off</sub> yet (it does not cross the "
                              "I<sub>off</sub> target, or it is computing).")
            return
        self.reference_vg.value = f"{voff:.3f}"
        self.reference_on.value = True

    def request_reference(self) -> None:
        """Solve the reference band diagram of the present design and Vd when it is on and
        not yet drawn (on the bias worker, after the present band diagram)."""
        bp = self.jobs.last_bias if self.jobs is not None else None
        if not self.reference_on.value or bp is None:
            self._reference_key = None
            self.figures.band_plot.show_reference(None)
            return
        key = (bp.design, self._reference_value, float(bp.vd_V))
        if key == self._reference_key:
            return
        self._reference_key = key
        self.jobs.submit("bias", self._reference_job, key)

    def _reference_job(self, key: tuple) -> None:
        design, vg, vd = key
        jobs = self.jobs
        try:
            with jobs.gate.hold(PriorityGate.PINNED):
                bp = jobs.simulator.solve_bias(design, vg, vd)
        except (ValueError, SolverError) as exc:
            jobs.post(self._reference_failed, key, exc)
            return
        jobs.post(self._reference_solved, key, bp)

    def _reference_solved(self, key: tuple, bp: Any) -> None:
        if key == self._reference_key and self.reference_on.value:
            self.figures.band_plot.show_reference(bp)

    def _reference_failed(self, key: tuple, exc: Exception) -> None:
        if key == self._reference_key:
            self._reference_key = None
            self.figures.band_plot.show_reference(None)
            self.messages.set("input", "**Reference gate voltage (V)**: not solved ("
                              + self._failure_message(exc, "reference band diagram") + ")")

    # ------------------------------------------------------------------ trade-off
    def _open_tradeoff(self, event: Any) -> None:
        if event.new or self.tradeoff is not None:
            if not event.new:
                self.refresh_tradeoff()
            return
        self.tradeoff = TradeoffPlot()
        style_figure(self.tradeoff.figure)
        note = pn.pane.HTML(
            '<div class="note">For each I<sub>off</sub> target, V<sub>off</sub> is where the '
            "computed transfer curve crosses it and I<sub>on</sub> is the current at "
            "V<sub>off</sub> + V<sub>dd</sub>, interpolated between the curve's points (no new "
            "solve); a gap: the curve does not reach that target, or V<sub>off</sub> + "
            "V<sub>dd</sub> lies beyond the gate sweep. Pinned designs in their colours."
            "</div>", stylesheets=self._css, width=300, margin=(8, 12))
        self.tradeoff_card.objects = [pn.Row(pn.pane.Bokeh(self.tradeoff.figure, margin=(2, 2)),
                                             note, margin=0)]
        self.refresh_tradeoff()

    def refresh_tradeoff(self) -> None:
        """Fill the trade-off plot from the present and pinned curves (only once opened)."""
        plot = self.tradeoff
        if plot is None or self.jobs is None:
            return
        vdd = float(self.state.vdd_V)
        curves = self.jobs.curves
        p_source = self.state.source_type == "p"
        for key in ("tfet", "twin"):
            tc = curves.get(key)
            if tc is None or (key == "twin" and not p_source):
                plot.show(key, None, None)
            else:
                name = (DEVICE_NAMES[0] if p_source else DEVICE_NAMES[1]) if key == "tfet" \
                    else "MOSFET twin"
                plot.show(key, name, tradeoff_table(tc, vdd))
        shown = set()
        if self.pins is not None:
            for pin in self.pins.board.pins:
                tc = self.pins.fresh_curve(pin)
                if tc is not None:
                    plot.show(f"pin_{pin.slot}", f"pinned: {pin.name}", tradeoff_table(tc, vdd))
                    shown.add(pin.slot)
        for slot in range(len(plot.items) - 2):
            if slot not in shown:
                plot.show(f"pin_{slot}", None, None)
        plot.show_target(self.state.ioff_target_uA_per_um)

    # ------------------------------------------------------------------ texts
    def show_metrics(self, stale: bool) -> None:
        """The figures of merit of the last complete curves (dimmed when stale)."""
        curves = self.jobs.curves if self.jobs is not None else {}
        first = ("Tunnel FET (p+ source)" if self.state.source_type == "p"
                 else "MOSFET (n+ source)")
        rows = [("tfet", first, getattr(curves.get("tfet"), "metrics", None))]
        if self.state.source_type == "p":  # an n+ source design is its own twin: one row
            rows.append(("twin", "MOSFET twin (n+ source)",
                         getattr(curves.get("twin"), "metrics", None)))
        if self.state.any_nonideal:  # non-idealities: the ideal device beside
            rows.insert(1, ("ideal", "same, ideal (non-idealities off)",
                            getattr(curves.get("ideal"), "metrics", None)))
        if self.measured is not None:  # a measured file: its curves by the same metrics code
            name, data = self.measured
            settings = {"temperature_K": self.state.temperature_K, "vdd_V": self.state.vdd_V,
                        "ioff_target_uA_per_um": self.state.ioff_target_uA_per_um}
            for k, c in enumerate(data.transfer):
                rows.append((f"measured-{k}", f"measured ({name}), V<sub>d</sub> = "
                             f"{c.vd_V:g} V", c.metrics(**settings)))
        self._stale = stale
        body = metrics_html(rows, self.state.temperature_K, self.state.vdd_V,
                            models_text(self.state.charge_model, self.state.tunnelling_model))
        self.metrics.object = f'<div class="{"stale" if stale else "fresh"}">{body}</div>'

    def show_measured(self, name: str, data: Any = None) -> None:
        """A measured file's curves (`physics.MeasuredData`, None: none) on the transfer
        and output plots, and a metrics row per transfer curve (its figures of merit by
        the model's own code, at the page's temperature, Ioff target and supply)."""
        self.measured = None if data is None else (html_escape(name), data)
        self.figures.show_measured(name, data)
        self.show_metrics(stale=self._stale)

    def _failure_message(self, exc: Exception, what: str) -> str:
        if isinstance(exc, SolverError):
            return solver_message(exc, self.last_changed, what)
        if isinstance(exc, ValueError):
            return value_message(exc)
        return (f"**The {what} could not be computed** (an internal error, "
                f"{html_escape(type(exc).__name__)}; the server's log has the details). "
                "The plots show the last valid result.")

    def _set_progress(self, done: int, total: int) -> None:
        self.progress.value = int(round(100 * min(done, total) / max(total, 1)))
        self.status.object = f"Computing curves… {min(done, total)}/{total} points"

    # ------------------------------------------------------------------ bias point
    def bias_solved(self, bp: Any, transmissions: Any = None) -> None:
        self.figures.show_bias(bp, transmissions)
        self.request_reference()  # the reference follows the design and Vd
        self.messages.clear("bias")
        self.show_notes(getattr(bp, "warnings", ()))

    def show_notes(self, warnings: Sequence[str]) -> None:
        """Show the model's validity warnings (none: the note is hidden)."""
        try:  # the body record (an alloy at its composition, too)
            material = check_tunnelling_material(self.state.design().semiconductor)
        except ValueError:
            material = None
        notes = [w for w in warnings if w != material]
        self.notes.object = validity_notes_html(notes)

    def bias_failed(self, exc: Exception) -> None:
        self.messages.set("bias", self._failure_message(exc, "band diagram"))

    # ------------------------------------------------------------------ sweeps
    def sweep_started(self, transfer: bool, output: bool, total: int) -> None:
        self.progress.value = 0
        parts = [p for p, on in (("transfer curves", transfer), ("output curves", output)) if on]
        if not parts:
            return
        self.status.object = f"Computing {' and '.join(parts)}…"
        if transfer:
            self.show_metrics(stale=True)
            if self._breakdown is not None or self.state.any_nonideal:
                self.breakdown.object = breakdown_html(self._breakdown or {}, pending=True)
            self.figures.transfer.title.text = "Transfer curve · updating…"
        if output:
            self.figures.output.title.text = f"{self.figures.output_title} · updating…"

    def transfer_partial(self, key: str, vg: np.ndarray, ids: np.ndarray, done: int,
                         total: int) -> None:
        self.figures.show_transfer(key, vg, ids)
        if key == "ideal":
            self.figures.nonideal.set_visible(True)
        self._set_progress(done, total)

    def transfer_solved(self, key: str, tc: Any, request: SweepRequest, done: int,
                        total: int) -> None:
        self.figures.show_transfer(key, tc.vg_V, tc.id_uA_per_um, tc.btbt_uA_per_um,
                                   tc.thermionic_uA_per_um, tc.ss_mV_per_dec)
        self._set_progress(done, total)
        if key == "twin":  # both curves are complete
            self.figures.transfer.title.text = "Transfer curve"
            vg = request.vg_V
            self.figures.transfer.xaxis.axis_label = (
                f"Gate voltage Vg (V) · {vg_step_text(vg[0], vg[-1], vg.size)}")
            self.messages.clear("sweep")
            self.show_metrics(stale=False)
            anchor_vg, anchor_id = self.jobs.limit_anchor(request.ioff_uA_per_um)
            self.figures.show_limits(request.design.temperature_K, request.ioff_uA_per_um,
                                     anchor_vg, anchor_id, float(request.vg_V[-1]))
            self.refresh_tradeoff()

    def nonideal_solved(self, ideal: Any, breakdown: dict | None) -> None:
        """The ideal device's curve (dashed) and the off-state breakdown, or neither."""
        overlay = self.figures.nonideal
        if ideal is None:
            overlay.clear()
        else:
            self.figures.show_transfer("ideal", ideal.vg_V, ideal.id_uA_per_um, None, None,
                                       ideal.ss_mV_per_dec)
            overlay.set_visible(True)
        self._breakdown = breakdown
        self.breakdown.object = breakdown_html(breakdown)

    def outputs_solved(self, curves: list, complete: bool, done: int, total: int) -> None:
        self.figures.show_outputs(curves)
        self._set_progress(done, total)
        if complete:
            self.figures.output.title.text = self.figures.output_title

    def sweep_finished(self, seconds: float) -> None:
        self.progress.value = 100
        self.status.object = f"Curves up to date ({seconds:.1f} s)"
        self.messages.clear("sweep")

    def sweep_failed(self, exc: Exception) -> None:
        self.messages.set("sweep", self._failure_message(exc, "curves"))
        # put back the last complete curves over any partly streamed ones
        for key, tc in self.jobs.curves.items():
            self.figures.show_transfer(key, tc.vg_V, tc.id_uA_per_um, tc.btbt_uA_per_um,
                                       tc.thermionic_uA_per_um, tc.ss_mV_per_dec)
        self.figures.show_outputs(self.jobs.outputs)
        self.figures.transfer.title.text = "Transfer curve (last good result)"
        self.figures.output.title.text = "Output curves (last good result)"
        self.show_metrics(stale=False)
        self.status.object = "Curves not updated — see the message"
