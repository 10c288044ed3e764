"""The explorer page of one browser session: controls, plots, metrics, background work.

`Explorer` links an `ExplorerState` (the settings) to the physics and to the figures of
`app.plots`:

* a change of Vg or Vd solves one bias point on the *bias worker* and redraws the band
  diagram, the tunnel window, J(E), T(E) and the 2D map first;
* a change of the design, of Vd or of the sweep recomputes the transfer curves (tunnel
  FET and MOSFET twin) and the output curves on the *sweep worker*, streaming points
  into the plots with a progress bar; a newer request supersedes an older one (a
  generation counter read by the solver's ``cancelled`` callback), and the sweep yields
  to a pending bias point so that the band diagram stays quick;
* results reach the page through ``doc.add_next_tick_callback`` (Bokeh's thread-safe way
  to touch a served document); a failed solve shows a message naming the setting and
  keeps the last good plots;
* pinned designs (`app.pinning`) keep their band edges at the present bias (solved on the
  bias worker after the band diagram) and their transfer curves (on the sweep worker,
  after the present curves) on the plots, with a comparison table under the plots;
* a snapshot (`app.snapshot`) is exported and verified on a third worker; an import or a
  demo design restores every control in one update; the design, bias and sweep live in
  the page address (`app.sharing`), so that a link reproduces the view.

With ``background=False`` (tests, scripts) every computation runs at once in the
calling thread.
"""

from __future__ import annotations

import asyncio
import datetime as _dt
import functools
import importlib.resources
import io
import logging
import math
import threading
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path
from urllib.parse import parse_qsl, urlencode

import numpy as np
import panel as pn
from bokeh.models import CustomJSTickFormatter
from panel.io.document import hold
from panel.io.state import set_curdoc

from sub60.app.compare_panes import UPLOAD_LIMIT_BYTES, ComparisonPanel, SnapshotControls
from sub60.app.pinning import Pin, PinBoard, PinError, comparison_rows
from sub60.app.plots import ExplorerFigures, metrics_html
from sub60.app.sharing import (
    LINKED_PARAMETERS,
    query_from_state,
    settings_from_state,
    state_updates,
    updates_from_query,
)
from sub60.app.snapshot import (
    ModelSettings,
    SnapshotError,
    SnapshotSettings,
    TransferSweep,
    export_snapshot,
    import_snapshot,
    list_presets,
    verify_snapshot,
)
from sub60.app.state import (
    COMPUTED_PARAMETERS,
    DESIGN_PARAMETERS,
    ExplorerState,
    label_of,
)
from sub60.physics.materials import check_tunnelling_material, eot_nm, get_semiconductor
from sub60.physics.poisson import SolverError
from sub60.physics.structure import gate_dielectric

#: Sweep points solved at once across all sessions (one per core): sweeps of many
#: sessions interleave point by point, and single bias points never wait for them.
SWEEP_SLOTS = threading.BoundedSemaphore(2)

log = logging.getLogger("sub60.app")

ASSETS = Path(str(importlib.resources.files("sub60.assets")))
CAUTION = ("Design-exploration model with stated approximations (semiclassical charge with "
           "confinement-shifted band edges, WKB tunnelling, ballistic transport, no traps) — "
           "not calibrated TCAD; decisions rest on local practice and measurement.")
TITLE = "sub60 · tunnel FET explorer"
SIDEBAR_WIDTH = 330
OUTPUT_REST_S = 0.3  # quiet time after a gate-voltage move before the output curves [s]
STREAM_INTERVAL_S = 0.2  # least time between two partial transfer curves sent to the page [s]
_WIDGET_WIDTH = 290

_LOG_CM3 = CustomJSTickFormatter(code="return Math.pow(10, tick).toExponential(1).replace('e+', 'e')")
_LOG_CURRENT = CustomJSTickFormatter(code="""
const a = Math.pow(10, tick);
const units = [[1e3, 'mA/µm'], [1, 'µA/µm'], [1e-3, 'nA/µm'], [1e-6, 'pA/µm'], [1e-9, 'fA/µm']];
for (const [s, u] of units) {
  if (a >= 0.9999 * s) { return (a / s).toPrecision(2) + ' ' + u; }
}
return a.toExponential(1) + ' µA/µm';
""")


# Panel waits 50 ms after a widget event to batch further ones; a slider release or an
# entry is one complete event, so the explorer's controls pass it on at once.
class _NowFloatSlider(pn.widgets.FloatSlider):
    _debounce = 0


class _NowIntSlider(pn.widgets.IntSlider):
    _debounce = 0


class _NowFloatInput(pn.widgets.FloatInput):
    _debounce = 0


class _NowEditableFloatSlider(pn.widgets.EditableFloatSlider):
    _slider_widget = _NowFloatSlider
    _input_widget = _NowFloatInput


def stylesheet() -> str:
    """The explorer's stylesheet (assets/style.css), empty if missing."""
    try:
        return (ASSETS / "style.css").read_text(encoding="utf-8")
    except OSError:
        return ""


class Explorer:
    """One session of the explorer (state, simulator, figures, workers).

    Parameters
    ----------
    state : settings to start from (default: the default design).
    simulator : a `physics.simulate.Simulator` owned by this session.
    background : compute on worker threads (server) or at once (tests).
    """

    def __init__(self, state: ExplorerState | None = None, simulator=None,
                 background: bool = True) -> None:
        from sub60.physics.simulate import Simulator

        self.state = state or ExplorerState()
        self.simulator = simulator or Simulator()
        self.figures = ExplorerFigures()
        self.background = background
        self._doc = None
        self._lock = threading.Lock()
        self._bias_gen = 0
        self._sweep_gen = 0
        self._bias_pending = 0
        self._bias_idle = threading.Event()
        self._bias_idle.set()
        self._sweep_requested = threading.Event()
        self._pools: dict[str, ThreadPoolExecutor] = {}
        if background:
            self._pools = {k: ThreadPoolExecutor(1, thread_name_prefix=f"sub60-{k}")
                           for k in ("bias", "sweep", "io")}
        self._shown_transfer: tuple | None = None
        self._shown_output: tuple | None = None
        self._curves: dict[str, object] = {}      # last complete transfer curves
        self._outputs: list = []                   # last complete output curves
        self._errors: dict[str, str] = {}
        self._last_changed: str | None = None
        self._sweep_started = 0.0
        self.last_bias = None
        self._tfet_key: tuple | None = None        # what the shown tunnel-FET curve is of
        # pinned designs: the board, and what each slot shows (curve, keys of its results)
        self.pins = PinBoard()
        self._pin_curves: dict[int, object] = {}
        self._pin_curve_keys: dict[int, tuple] = {}
        self._pin_band_keys: dict[int, tuple] = {}
        self._pin_gen = 0
        self._importing = False
        self._report_token = 0
        self._location = None
        self._css = stylesheet()
        self._build_panes()
        self._build_controls()
        self.state.param.watch(self._on_change, [*COMPUTED_PARAMETERS, "presentation"])

    @classmethod
    def from_query(cls, query: dict[str, str], **kw) -> Explorer:
        """An explorer at the settings of a page address's query (see `app.sharing`);
        values that cannot be used are ignored with a message naming their control."""
        state = ExplorerState()
        updates, problems = updates_from_query(query)
        state.param.update(**updates)
        explorer = cls(state, **kw)
        if problems:
            explorer._set_error("link", "**Some settings of the page address were ignored** "
                                "(the defaults are shown for them):\n\n"
                                + "\n".join(f"- {p}" for p in problems))
        return explorer

    # ================================================================== page
    def _build_panes(self) -> None:
        css = [self._css]
        self.header = pn.pane.HTML(self._header_html(), css_classes=["sub60-header"],
                                   stylesheets=css, sizing_mode="stretch_width", margin=(4, 8))
        self.metrics = pn.pane.HTML(self._metrics_text(stale=True), css_classes=["metrics-strip"],
                                    stylesheets=css, sizing_mode="stretch_width", margin=(0, 8))
        self.alert = pn.pane.Alert("", alert_type="danger", visible=False,
                                   css_classes=["sub60-error"], sizing_mode="stretch_width",
                                   margin=(2, 8))
        self.material_warning = pn.pane.Alert("", alert_type="warning", visible=False,
                                              css_classes=["sub60-material-warning"],
                                              sizing_mode="stretch_width", margin=(2, 8))
        self.progress = pn.indicators.Progress(value=0, max=100, width=170, height=14,
                                               bar_color="info", css_classes=["sweep-progress"],
                                               margin=(6, 8, 0, 8))
        self.status = pn.pane.HTML("Starting…", css_classes=["sweep-status"], stylesheets=css,
                                   width=260, margin=(0, 8))
        self.presentation_toggle = pn.widgets.Toggle.from_param(
            self.state.param.presentation, color="default", width=170, margin=(6, 8))
        f = self.figures
        self.plot_panes = {k: pn.pane.Bokeh(fig, margin=(2, 2)) for k, fig in f.figures.items()}
        p = self.plot_panes
        self.plots = pn.Column(
            pn.Row(p["band"], p["spectrum"], p["transmission"], p["transfer"]),
            pn.Row(p["map"], p["output"], p["swing"]),
            margin=(0, 4))
        # widget events may arrive outside the document lock (button clicks are handled
        # in a coroutine): the actions touch the figures, so they run as a locked tick
        self.compare = ComparisonPanel(
            [self._css], lambda name: self._post(self.pin_present, name),
            lambda slot, name: self._post(self.rename_pin, slot, name),
            lambda slot: self._post(self.load_pin, slot),
            lambda slot: self._post(self.unpin, slot))
        self.compare.set_pins((), self.pins.default_name(), False)

    def _build_controls(self) -> None:
        s = self.state.param

        def slider(name: str, step: float, width: int = _WIDGET_WIDTH):
            par = s[name]
            lo, hi = par.bounds
            return _NowEditableFloatSlider.from_param(
                par, step=step, throttled=True, fixed_start=lo, fixed_end=hi, width=width,
                margin=(2, 10), css_classes=[f"ctl-{name}"])

        def log_slider(name: str, formatter):
            return _NowFloatSlider.from_param(s[name], throttled=True, format=formatter,
                                                     width=_WIDGET_WIDTH, margin=(4, 10),
                                                     css_classes=[f"ctl-{name}"])

        def choice(name: str, cls=pn.widgets.Select):
            return cls.from_param(s[name], width=_WIDGET_WIDTH, margin=(4, 10),
                                  css_classes=[f"ctl-{name}"])

        w = {}
        for name, step in (("vg_V", 0.01), ("vd_V", 0.01), ("vdd_V", 0.01),
                           ("body_thickness_nm", 0.1), ("gate_length_nm", 1.0),
                           ("source_length_nm", 1.0), ("drain_length_nm", 1.0),
                           ("gate_source_offset_nm", 0.5), ("buried_oxide_thickness_nm", 0.5),
                           ("doping_gradient_nm_per_dec", 0.1), ("oxide_thickness_nm", 0.05),
                           ("oxide_permittivity", 0.5), ("gate_workfunction_eV", 0.01),
                           ("temperature_K", 1.0)):
            w[name] = slider(name, step)
        lo, hi = s.vg_sweep_V.bounds
        w["vg_sweep_V"] = pn.widgets.EditableRangeSlider.from_param(
            s.vg_sweep_V, step=0.05, throttled=True, fixed_start=lo, fixed_end=hi,
            width=_WIDGET_WIDTH, margin=(2, 10), css_classes=["ctl-vg_sweep_V"])
        w["vg_points"] = _NowIntSlider.from_param(s.vg_points, step=2, throttled=True,
                                                         width=_WIDGET_WIDTH, margin=(4, 10),
                                                         css_classes=["ctl-vg_points"])
        w["ioff_log10_uA_per_um"] = log_slider("ioff_log10_uA_per_um", _LOG_CURRENT)
        for name in ("source_doping_log10_cm3", "channel_doping_log10_cm3",
                     "drain_doping_log10_cm3"):
            w[name] = log_slider(name, _LOG_CM3)
        for name in ("material", "oxide"):
            w[name] = choice(name)
        for name in ("gate_layout", "source_type", "channel_dopant"):
            w[name] = choice(name, pn.widgets.RadioButtonGroup)
        self.widgets = w
        self.eot = pn.pane.HTML(self._eot_text(), css_classes=["eot"], stylesheets=[self._css],
                                margin=(0, 12))
        ioff_note = pn.pane.HTML(
            '<div class="note">I<sub>off</sub> fixes V<sub>off</sub>; I<sub>on</sub> is taken '
            "at V<sub>off</sub> + V<sub>dd</sub>. Low-power logic targets are lower, about "
            "10–100 pA/µm; high-performance ones near 100 nA/µm (common practice).</div>",
            stylesheets=[self._css], margin=(0, 12))
        self.reset_button = pn.widgets.Button(label="Reset all settings to defaults",
                                              color="light", width=_WIDGET_WIDTH,
                                              margin=(8, 10), css_classes=["reset-button"])
        self.reset_button.on_click(lambda _event: self.state.reset())

        def labelled(name: str):  # button groups show no title of their own
            head = pn.pane.HTML(f'<div class="ctl-label">{s[name].label}</div>',
                                stylesheets=[self._css], margin=(4, 10, 0, 10))
            return pn.Column(head, w[name], margin=0)

        def card(title: str, *items, collapsed: bool = False):
            return pn.Card(*items, title=title, collapsed=collapsed, width=SIDEBAR_WIDTH - 14,
                           margin=(4, 4), header_background="#eef2f5",
                           css_classes=["control-group"])

        self.snapshots = SnapshotControls([self._css], _WIDGET_WIDTH, _preset_labels(),
                                          self._download)
        self.snapshots.presets.param.watch(self._on_preset, "value")
        self.snapshots.upload.param.watch(self._on_upload, "value")
        self.cards = [
            card("Demo designs and snapshots", *self.snapshots.items),
            card("Bias", w["vg_V"], w["vd_V"], w["vg_sweep_V"], w["vg_points"], w["vdd_V"],
                 w["ioff_log10_uA_per_um"], ioff_note),
            card("Structure", w["body_thickness_nm"], w["gate_length_nm"],
                 w["source_length_nm"], w["drain_length_nm"], labelled("gate_layout"),
                 w["gate_source_offset_nm"], w["buried_oxide_thickness_nm"]),
            card("Doping", labelled("source_type"), w["source_doping_log10_cm3"],
                 labelled("channel_dopant"),
                 w["channel_doping_log10_cm3"], w["drain_doping_log10_cm3"],
                 w["doping_gradient_nm_per_dec"], collapsed=True),
            card("Gate stack", w["oxide"], w["oxide_thickness_nm"], self.eot,
                 w["oxide_permittivity"], w["gate_workfunction_eV"], collapsed=True),
            card("Material and temperature", w["material"], w["temperature_K"],
                 collapsed=True),
        ]
        self.sidebar = pn.Column(
            pn.pane.HTML('<div class="side-title">Settings</div>', stylesheets=[self._css],
                         margin=(4, 10)),
            *self.cards, self.reset_button, width=SIDEBAR_WIDTH, scroll=True,
            css_classes=["sub60-sidebar"], styles={"max-height": "100vh"}, margin=0)
        self._sync_enabled()

    def panel(self) -> pn.viewable.Viewable:
        """The page of this session; starts the first computations."""
        self._doc = pn.state.curdoc if self.background else None
        top = pn.Row(self.header,
                     pn.Column(self.presentation_toggle, self.progress, self.status,
                               width=280, margin=0),
                     sizing_mode="stretch_width", margin=0)
        self.main = pn.Column(top, self.metrics, self.material_warning, self.alert, self.plots,
                              self.compare.view, sizing_mode="stretch_width",
                              css_classes=["sub60-main"], margin=0)
        self._update_material_warning()
        if self._doc is not None and self._doc.session_context is not None:
            self._location = pn.state.location
        self._solve_bias_now()
        if self._doc is not None and self._doc.session_context is not None:
            pn.state.onload(self._sync_url)  # the browser's address takes it once loaded
            pn.state.onload(self._request_sweeps)
            pn.state.on_session_destroyed(lambda _ctx: self.close())
        else:
            self._request_sweeps()
        return pn.Row(self.sidebar, self.main, sizing_mode="stretch_width", margin=0,
                      css_classes=["sub60-page"])

    def close(self) -> None:
        """Stop this session's work (supersede everything, drop the workers)."""
        self._bias_gen += 1
        self._sweep_gen += 1
        self._bias_idle.set()
        for pool in self._pools.values():
            pool.shutdown(wait=False, cancel_futures=True)

    # ================================================================== change handling
    def _on_change(self, *events) -> None:
        names = {e.name for e in events}
        if "presentation" in names:
            self._apply_presentation()
            names.discard("presentation")
        if not names:
            return
        self._last_changed = sorted(names)[0] if len(names) > 1 else next(iter(names))
        self._sync_enabled()
        self.eot.object = self._eot_text()
        self.header.object = self._header_html()
        if names & {"material"}:
            self._update_material_warning()
        if names & set(DESIGN_PARAMETERS) and "design" in self._errors:
            self._errors.pop("design")
        if not self._importing:  # a change by hand: the view is no longer the file's
            self._clear_error("link")
            if self.snapshots.presets.value:
                self.snapshots.presets.value = ""
        self._sync_url(names)
        try:
            stale = self.state.transfer_key() != self._shown_transfer
        except ValueError:
            stale = False  # the message says why; the strip keeps the last valid result
        if stale:  # dimmed at once, not only when the worker starts on the new curves
            self.metrics.object = self._metrics_text(stale=True)
        self._request_bias()
        self._request_sweeps()
        self._request_pin_work()
        self._refresh_comparison()

    def _sync_enabled(self) -> None:
        self.widgets["oxide_permittivity"].disabled = self.state.oxide != "custom"
        self.widgets["buried_oxide_thickness_nm"].disabled = self.state.gate_layout != "single"

    def _design_or_error(self):
        try:
            design = self.state.design()
        except ValueError as exc:
            self._set_error("design", self._value_message(exc))
            self._enable_design_actions(False)
            return None
        self._clear_error("design")
        self._enable_design_actions(True)
        return design

    def _enable_design_actions(self, valid: bool) -> None:
        """Pinning and export need a valid design."""
        self.snapshots.download.disabled = not valid
        self.compare.button.disabled = not valid or self.pins.full

    # ================================================================== bias point
    def _solve_bias_now(self) -> None:
        """First band diagram of the session, before the page is sent."""
        design = self._design_or_error()
        if design is None:
            return
        self._bias_gen += 1
        self._bias_job(self._bias_gen, design, self.state.vg_V, self.state.vd_V, post=False)

    def _request_bias(self) -> None:
        design = self._design_or_error()
        if design is None:
            return
        self._bias_gen += 1
        g = self._bias_gen
        with self._lock:
            self._bias_pending += 1
            self._bias_idle.clear()
        self._submit("bias", self._bias_job, g, design, float(self.state.vg_V),
                     float(self.state.vd_V))

    def _bias_job(self, g: int, design, vg: float, vd: float, post: bool = True) -> None:
        outcome: tuple = (_nothing,)
        try:
            if g == self._bias_gen:  # else a newer bias point is queued: skip this one
                shown = self.last_bias
                # continue from the bias point on screen, the nearest solved bias
                start = (shown.electrostatics if shown is not None and shown.design == design
                         else None)
                bp = self.simulator.solve_bias(design, vg, vd, initial=start)
                outcome = (self._apply_bias, g, bp)
        except (ValueError, SolverError) as exc:
            outcome = (self._fail, "bias", g, exc)
        finally:
            if post:  # the sweep worker resumes once the page holds this result
                self._post(self._bias_finished, *outcome)
        if not post:
            outcome[0](*outcome[1:])

    def _bias_finished(self, fn, *args) -> None:
        try:
            fn(*args)
        finally:
            with self._lock:
                self._bias_pending = max(0, self._bias_pending - 1)
                if self._bias_pending == 0:
                    self._bias_idle.set()

    def _apply_bias(self, g: int, bp) -> None:
        if g != self._bias_gen:
            return
        self.last_bias = bp
        self.figures.show_bias(bp)
        self._clear_error("bias")

    # ================================================================== sweeps
    def _request_sweeps(self) -> None:
        design = self._design_or_error()
        if design is None:
            return
        st = self.state
        self._sweep_gen += 1
        self._sweep_requested.set()
        job = {
            "g": self._sweep_gen, "design": design, "transfer_key": st.transfer_key(),
            "output_key": st.output_key(), "vg": st.sweep_gate_voltages(),
            "vd": float(st.vd_V), "ioff": st.ioff_target_uA_per_um, "vdd": float(st.vdd_V),
            "out_vg": st.output_gate_voltages(), "out_vd": st.output_drain_voltages(),
            "temperature_K": design.temperature_K,
        }
        self._submit("sweep", self._sweep_job, job)

    def _sweep_job(self, job: dict) -> None:
        g = job["g"]
        sim = self.simulator

        def superseded() -> bool:
            self._bias_idle.wait(timeout=1.0)  # let a pending band diagram go first
            return g != self._sweep_gen

        need_transfer = job["transfer_key"] != self._shown_transfer
        need_output = job["output_key"] != self._shown_output
        if self.background and need_output and not need_transfer:
            # a gate-voltage move: wait for the slider to rest before the output curves,
            # so that the next band diagram does not queue behind them
            end = time.perf_counter() + OUTPUT_REST_S
            while g == self._sweep_gen and (left := end - time.perf_counter()) > 0:
                self._sweep_requested.wait(left)  # a newer request ends the rest at once
                self._sweep_requested.clear()
            if g != self._sweep_gen:
                return
        n_t = 2 * job["vg"].size if need_transfer else 0
        n_o = job["out_vg"].size * job["out_vd"].size if need_output else 0
        total = max(n_t + n_o, 1)
        done = 0
        t0 = time.perf_counter()
        self._post(self._sweep_begin, g, need_transfer, need_output, total)
        try:
            if need_transfer:
                design = job["design"]
                for key, device in (("tfet", design), ("twin", design.twin())):
                    progress = self._progress_callback(g, key, device, job, done, total)
                    tc = sim.transfer_curve(
                        device, job["vg"], job["vd"], ioff_target_uA_per_um=job["ioff"],
                        vdd_V=job["vdd"], progress=progress, cancelled=superseded,
                        slots=SWEEP_SLOTS)
                    done += job["vg"].size
                    self._post(self._apply_transfer, g, key, tc, job, done, total)
            if need_output:
                curves = []
                for vg in job["out_vg"]:
                    if superseded():
                        return
                    curves.append(sim.output_curve(job["design"], float(vg), job["out_vd"],
                                                   slots=SWEEP_SLOTS))
                    done += job["out_vd"].size
                    self._post(self._apply_outputs, g, list(curves), job, done, total)
            self._post(self._sweep_end, g, time.perf_counter() - t0)
        except InterruptedError:
            return
        except (ValueError, SolverError) as exc:
            self._post(self._fail, "sweep", g, exc)

    def _progress_callback(self, g: int, key: str, device, job: dict, done: int, total: int):
        vgs, vd = job["vg"], job["vd"]
        last = [time.perf_counter()]

        def progress(i: int, n: int) -> None:
            now = time.perf_counter()
            if g != self._sweep_gen or i == n or now - last[0] < STREAM_INTERVAL_S:
                return  # the complete curve follows at once; partial ones at most 5 per second
            last[0] = now
            # points already solved are in the simulator's cache: no new solve here
            ids = np.array([self.simulator.solve_bias(device, float(v), vd).current_uA_per_um
                            for v in vgs[:i]])
            self._post(self._apply_partial, g, key, vgs[:i].copy(), ids, done + i, total)

        return progress

    def _sweep_begin(self, g: int, transfer: bool, output: bool, total: int) -> None:
        if g != self._sweep_gen:
            return
        self._sweep_started = time.perf_counter()
        self.progress.value = 0
        parts = [p for p, on in (("transfer curves", transfer), ("output curves", output)) if on]
        if parts:
            self.status.object = f"Computing {' and '.join(parts)}…"
            if transfer:
                self.metrics.object = self._metrics_text(stale=True)
                self.figures.transfer.title.text = "Transfer curve · updating…"
            if output:
                self.figures.output.title.text = f"{self.figures.output_title} · updating…"

    def _apply_partial(self, g: int, key: str, vg, ids, done: int, total: int) -> None:
        if g != self._sweep_gen:
            return
        self.figures.show_transfer(key, vg, ids)
        self._set_progress(done, total)

    def _apply_transfer(self, g: int, key: str, tc, job: dict, done: int, total: int) -> None:
        if g != self._sweep_gen:
            return
        self._curves[key] = tc
        self.figures.show_transfer(key, tc.vg_V, tc.id_uA_per_um, tc.btbt_uA_per_um,
                                   tc.thermionic_uA_per_um, tc.ss_mV_per_dec)
        self._set_progress(done, total)
        if key == "tfet":
            self._tfet_key = job["transfer_key"]
            self._refresh_comparison()
        if key == "twin":
            self._shown_transfer = job["transfer_key"]
            self.figures.transfer.title.text = "Transfer curve"
            self._clear_error("sweep")
            self.metrics.object = self._metrics_text(stale=False)
            self._show_limit_line(job)

    def _show_limit_line(self, job: dict) -> None:
        tc = self._curves.get("tfet")
        anchor_vg = anchor_id = None
        if tc is not None:
            m = tc.metrics
            if m.voff_V.value is not None:
                anchor_vg, anchor_id = m.voff_V.value, job["ioff"]
            else:
                ids = np.where(tc.id_uA_per_um > 0, tc.id_uA_per_um, np.inf)
                i = int(np.argmin(ids))
                if math.isfinite(ids[i]):
                    anchor_vg, anchor_id = float(tc.vg_V[i]), float(ids[i])
        self.figures.show_limits(job["temperature_K"], job["ioff"], anchor_vg, anchor_id,
                                 float(job["vg"][-1]))

    def _apply_outputs(self, g: int, curves: list, job: dict, done: int, total: int) -> None:
        if g != self._sweep_gen:
            return
        self.figures.show_outputs(curves)
        self._set_progress(done, total)
        if len(curves) == job["out_vg"].size:
            self._outputs = curves
            self._shown_output = job["output_key"]
            self.figures.output.title.text = self.figures.output_title

    def _sweep_end(self, g: int, seconds: float) -> None:
        if g != self._sweep_gen:
            return
        self.progress.value = 100
        self.status.object = f"Curves up to date ({seconds:.1f} s)"
        self._clear_error("sweep")

    def _set_progress(self, done: int, total: int) -> None:
        self.progress.value = int(round(100 * min(done, total) / max(total, 1)))
        self.status.object = f"Computing curves… {min(done, total)}/{total} points"

    # ================================================================== pinned designs
    def _present_sweep(self) -> TransferSweep:
        lo, hi = self.state.vg_sweep_V
        return TransferSweep(float(lo), float(hi), int(self.state.vg_points),
                             float(self.state.vd_V))

    def _pin_curve_key(self, pin: Pin) -> tuple:
        return (pin.design, pin.sweep, self.state.ioff_target_uA_per_um, float(self.state.vdd_V))

    def _pin_band_key(self, pin: Pin) -> tuple:
        return (pin.design, float(self.state.vg_V), float(self.state.vd_V))

    def pin_present(self, name: str | None = None) -> Pin | None:
        """Pin the present design with its sweep (the default name when name is empty);
        returns the pin, or None with the reason shown beside the pin button."""
        try:
            design = self.state.design()
            pin = self.pins.add(name, design, self._present_sweep())
        except ValueError as exc:  # PinError, or an invalid design
            self.compare.say(f"Not pinned: {exc}")
            return None
        self.compare.say("")
        self.compare.name.value = ""
        # the present results, when up to date, are the pin's: no new solve
        tc = self._curves.get("tfet")
        curve = tc if tc is not None and self._tfet_key == self.state.transfer_key() else None
        if curve is not None:
            self._pin_curves[pin.slot] = curve
            self._pin_curve_keys[pin.slot] = self._pin_curve_key(pin)
        bp = self.last_bias
        bias = bp if bp is not None and (bp.design, bp.vg_V, bp.vd_V) == self._pin_band_key(
            pin) else None
        if bias is not None:
            self._pin_band_keys[pin.slot] = self._pin_band_key(pin)
        self.figures.show_pin(pin.slot, pin.name, bias=bias, curve=curve)
        self._pins_changed()
        self._request_pin_work()
        return pin

    def rename_pin(self, slot: int, name: str) -> Pin | None:
        """Rename a pinned design (legends and table follow); a name that is not allowed
        is refused with a message and the old name put back."""
        old = self.pins.get(slot)
        if old is None or name == old.name:
            return old
        try:
            pin = self.pins.rename(slot, name)
        except PinError as exc:
            self.compare.say(f"Not renamed: {exc}")
            self.compare.set_pins(self.pins.pins, self.pins.default_name(), self.pins.full)
            return None
        self.compare.say("")
        self.figures.show_pin(slot, pin.name)
        self._pins_changed()
        return pin

    def unpin(self, slot: int) -> None:
        """Take a pinned design off the plots and out of the table."""
        if self.pins.remove(slot) is None:
            return
        for d in (self._pin_curves, self._pin_curve_keys, self._pin_band_keys):
            d.pop(slot, None)
        self.figures.clear_pin(slot)
        self.compare.say("")
        self._pins_changed()

    def load_pin(self, slot: int) -> None:
        """Put a pinned design and its sweep into the controls (one update)."""
        pin = self.pins.get(slot)
        if pin is None:
            return
        updates = dict(self.state.design_settings(pin.design), vd_V=pin.sweep.vd_V,
                       vg_sweep_V=(pin.sweep.vg_start_V, pin.sweep.vg_stop_V),
                       vg_points=pin.sweep.vg_points)
        try:
            self.state.param.update(**updates)
        except ValueError as exc:
            self.compare.say(f"Not loaded: {exc}")

    def _pins_changed(self) -> None:
        self.compare.set_pins(self.pins.pins, self.pins.default_name(), self.pins.full)
        self._enable_design_actions(self._errors.get("design") is None)
        self._refresh_comparison()

    def _request_pin_work(self) -> None:
        """Solve what the pinned designs still miss: band edges at the present bias on
        the bias worker (after the band diagram), transfer curves on the sweep worker."""
        if not len(self.pins):
            return
        pins = self.pins.pins
        bands = [p for p in pins if self._pin_band_keys.get(p.slot) != self._pin_band_key(p)]
        curves = [p for p in pins if self._pin_curve_keys.get(p.slot) != self._pin_curve_key(p)]
        if bands:
            self._submit("bias", self._pin_bands_job, self._bias_gen, bands,
                         float(self.state.vg_V), float(self.state.vd_V))
        if curves:
            self._pin_gen += 1
            self._submit("sweep", self._pin_curves_job, self._pin_gen, curves,
                         self.state.ioff_target_uA_per_um, float(self.state.vdd_V))

    def _pin_bands_job(self, g: int, pins: list[Pin], vg: float, vd: float) -> None:
        for pin in pins:
            if g != self._bias_gen:  # a newer bias point: these edges are out of date
                return
            try:
                bp = self.simulator.solve_bias(pin.design, vg, vd)
            except (ValueError, SolverError) as exc:
                self._post(self._pin_failed, pin, exc)
                continue
            self._post(self._apply_pin_band, pin, (pin.design, vg, vd), bp)

    def _pin_curves_job(self, g: int, pins: list[Pin], ioff: float, vdd: float) -> None:
        def superseded() -> bool:
            self._bias_idle.wait(timeout=1.0)  # the band diagram goes first
            return g != self._pin_gen

        for pin in pins:
            try:
                tc = self.simulator.transfer_curve(
                    pin.design, pin.sweep.gate_voltages(), pin.sweep.vd_V,
                    ioff_target_uA_per_um=ioff, vdd_V=vdd, cancelled=superseded, slots=SWEEP_SLOTS)
            except InterruptedError:
                return
            except (ValueError, SolverError) as exc:
                self._post(self._pin_failed, pin, exc)
                continue
            self._post(self._apply_pin_curve, pin, (pin.design, pin.sweep, ioff, vdd), tc)

    def _apply_pin_band(self, pin: Pin, key: tuple, bp) -> None:
        now = self.pins.get(pin.slot)
        if now is None or key != self._pin_band_key(now):
            return
        self._pin_band_keys[pin.slot] = key
        self.figures.show_pin(pin.slot, now.name, bias=bp)

    def _apply_pin_curve(self, pin: Pin, key: tuple, tc) -> None:
        now = self.pins.get(pin.slot)
        if now is None or key != self._pin_curve_key(now):
            return
        self._pin_curves[pin.slot] = tc
        self._pin_curve_keys[pin.slot] = key
        self.figures.show_pin(pin.slot, now.name, curve=tc)
        self._refresh_comparison()

    def _pin_failed(self, pin: Pin, exc: Exception) -> None:
        if self.pins.get(pin.slot) is None:
            return
        first = str(exc).split("; residual history")[0]
        self.compare.say(f"{pin.name}: not solved ({first})")

    def comparison(self) -> list:
        """The rows of the comparison table (`app.pinning.ComparisonRow`): the present
        design (figures of merit None while its curve is computing), then each pin."""
        try:
            design = self.state.design()
            key = self.state.transfer_key()
        except ValueError:
            present = None
        else:
            tc = self._curves.get("tfet")
            fresh = tc is not None and self._tfet_key == key
            present = (design, float(self.state.vd_V), tc.metrics if fresh else None)
        pinned = []
        for p in self.pins.pins:
            tc = self._pin_curves.get(p.slot)
            fresh = tc is not None and self._pin_curve_keys.get(p.slot) == self._pin_curve_key(p)
            pinned.append((p, tc.metrics if fresh else None))
        return comparison_rows(present, pinned)

    def _refresh_comparison(self) -> None:
        if len(self.pins):
            self.compare.show_rows(self.comparison())

    # ================================================================== page address
    def _sync_url(self, names=None) -> None:
        """Write the linked settings into the page address (all, or the changed ones)."""
        if self._location is None:
            return
        chosen = LINKED_PARAMETERS if names is None else [n for n in LINKED_PARAMETERS
                                                          if n in names]
        if not chosen:
            return
        # the query is written as text here: Location.update_query would parse the present
        # values back into numbers and spell them out again (4e19 -> 4e+19)
        query = dict(parse_qsl(self._location.search.lstrip("?"), keep_blank_values=True))
        query.update(query_from_state(self.state, chosen))
        search = "?" + urlencode(query, safe=",")
        if search != self._location.search:
            self._location.search = search

    # ================================================================== snapshots
    def snapshot_settings(self) -> SnapshotSettings:
        """The snapshot settings of the page: controls, numerical model, pinned designs."""
        model = ModelSettings(self.simulator.resolution, self.simulator.model)
        return settings_from_state(self.state, [p.record() for p in self.pins.pins], model)

    def export_bytes(self, created: _dt.datetime | None = None) -> tuple[str, bytes]:
        """(file name, zip bytes) of a snapshot of the page, recomputed from scratch."""
        settings = self.snapshot_settings()
        when = (created or _dt.datetime.now(_dt.UTC)).replace(microsecond=0)
        stamp = when.isoformat().replace("+00:00", "Z")
        data = export_snapshot(settings, created_utc=stamp)
        return f"sub60-snapshot-{when:%Y-%m-%dT%H%M%S}Z.zip", data

    async def _download(self):
        """FileDownload callback: export on the io worker, with a note meanwhile."""
        ctl = self.snapshots
        idle_note = ctl.export_note.object
        ctl.export_note.object = ('<div class="note busy">Preparing the snapshot: every curve '
                                  "is recomputed from scratch, a few seconds…</div>")
        ctl.download.loading = True
        try:
            loop = asyncio.get_running_loop()
            if self.background:
                name, data = await loop.run_in_executor(self._pools["io"], self.export_bytes)
            else:
                name, data = self.export_bytes()
        except (ValueError, SolverError) as exc:
            ctl.export_note.object = idle_note
            self._set_error("snapshot", f"**Snapshot not written**: {exc}")
            raise
        finally:
            ctl.download.loading = False
        self._clear_error("snapshot")
        ctl.download.filename = name
        ctl.export_note.object = (f'<div class="note done">Saved {name} '
                                  f"({len(data) / 1024:.0f} kB).</div>")
        return io.BytesIO(data)

    def _on_upload(self, event) -> None:
        data = event.new
        if not data:
            return
        name = self.snapshots.upload.filename or "the file"
        self._post(self._open_upload, data, name)

    def _open_upload(self, data: bytes, name: str) -> None:
        try:
            self.import_bytes(data, name)
        finally:
            self.snapshots.upload.clear()  # the same file can be chosen again

    def import_bytes(self, data: bytes, filename: str = "the file") -> bool:
        """Open a snapshot (zip or settings.json): restore every control, the pinned
        designs and the plots, then recompute its figures of merit in the background and
        report whether they equal the stored ones. A file that cannot be used leaves
        everything as it was, with the reason in the page's error area."""
        label = html_escape(filename)
        if len(data) > UPLOAD_LIMIT_BYTES:
            self._set_error("snapshot", f"**{label} not opened**: {len(data)} bytes, over the "
                            f"page's limit of {UPLOAD_LIMIT_BYTES / 1024 / 1024:g} MB. "
                            "Nothing was changed.")
            return False
        try:
            settings, report = import_snapshot(bytes(data), max_bytes=UPLOAD_LIMIT_BYTES)
            updates, notes = state_updates(settings)
            PinBoard().replace_all(settings.pinned, settings.transfer_sweep)  # names usable?
        except (SnapshotError, PinError) as exc:
            self._set_error("snapshot", f"**{label} not opened**: {html_escape(str(exc))}. "
                            "Nothing was changed.")
            return False
        self._clear_error("snapshot")
        self._apply_settings(settings, updates)
        self._report_token += 1
        heading = f"Opened {label}" + (f": {html_escape(settings.title)}" if settings.title
                                       else "")
        n = len(settings.pinned)
        notes = [f"every control restored, {n} pinned design{'s' if n != 1 else ''}", *notes]
        self.snapshots.show_report("busy" if report.has_stored else "info", heading,
                                   [*report.lines(), *notes])
        if report.has_stored:
            self._submit("io", self._verify_job, self._report_token, settings, report, notes,
                         heading)
        return True

    def _verify_job(self, token: int, settings, report, notes: list[str], heading: str) -> None:
        try:
            report.differences = verify_snapshot(settings)
            report.verified = True
            error = None
        except (ValueError, SolverError) as exc:
            error = f"the recomputation failed: {str(exc).split('; residual history')[0]}"
        self._post(self._show_verified, token, report, notes, heading, error)

    def _show_verified(self, token: int, report, notes: list[str], heading: str,
                       error: str | None) -> None:
        if token != self._report_token:
            return  # another file or demo design was opened since
        lines = [*report.lines(), *([error] if error else []), *notes]
        good = error is None and report.metrics_match and report.version_matches
        self.snapshots.show_report("ok" if good else "warn", heading, lines)

    def _on_preset(self, event) -> None:
        if event.new:
            self._post(self.load_preset, event.new)

    def load_preset(self, name: str) -> bool:
        """Put a demo design (assets/presets) into the controls, with its pinned designs."""
        settings = _presets().get(name)
        if settings is None:
            self._set_error("snapshot", f"**Demo design {name!r} not found**.")
            return False
        try:
            updates, notes = state_updates(settings)
        except SnapshotError as exc:
            self._set_error("snapshot", f"**Demo design {name!r} not loaded**: {exc}")
            return False
        self._clear_error("snapshot")
        self._apply_settings(settings, updates)
        self._report_token += 1
        self.snapshots.show_report("info", f"Demo design: {html_escape(settings.title or name)}",
                                   ([settings.note] if settings.note else []) + notes)
        return True

    def _apply_settings(self, settings: SnapshotSettings, updates: dict) -> None:
        """Every control, the numerical model and the pinned designs of a snapshot, in
        one update of the state (one recomputation)."""
        from sub60.physics.simulate import Simulator

        m = settings.model
        new_model = (m.resolution, m.tunnelling_model) != (self.simulator.resolution,
                                                           self.simulator.model)
        if new_model:
            self.simulator = Simulator(resolution=m.resolution, model=m.tunnelling_model)
            self.last_bias = None  # another grid: no warm start from the old one
            self._shown_transfer = self._shown_output = self._tfet_key = None
        for p in self.pins.pins:
            self.figures.clear_pin(p.slot)
        for d in (self._pin_curves, self._pin_curve_keys, self._pin_band_keys):
            d.clear()
        for p in self.pins.replace_all(settings.pinned, settings.transfer_sweep):
            self.figures.show_pin(p.slot, p.name)
        self.compare.say("")
        self._pins_changed()
        before = (self._bias_gen, self._sweep_gen)
        self._importing = True
        try:
            self.state.param.update(**updates)
        finally:
            self._importing = False
        if before == (self._bias_gen, self._sweep_gen):  # the controls were there already
            if new_model:
                self._request_bias()
                self._request_sweeps()
            self._request_pin_work()

    # ================================================================== errors
    def _fail(self, kind: str, g: int, exc: Exception) -> None:
        current = self._bias_gen if kind == "bias" else self._sweep_gen
        if g != current:
            return
        if isinstance(exc, SolverError):
            setting = label_of(self._last_changed) if self._last_changed else "the design"
            what = "band diagram" if kind == "bias" else "curves"
            first = str(exc).split("; residual history")[0]
            msg = (f"**The solver did not converge for the {what}** after the change of "
                   f"**{setting}**. Try a smaller step or another value. The plots show the "
                   f"last converged result.\n\n<small>{first}</small>")
        else:
            msg = self._value_message(exc)
        self._set_error(kind, msg)
        if kind == "sweep":
            # put back the last complete curves over any partly streamed ones
            for key, tc in self._curves.items():
                self.figures.show_transfer(key, tc.vg_V, tc.id_uA_per_um, tc.btbt_uA_per_um,
                                           tc.thermionic_uA_per_um, tc.ss_mV_per_dec)
            self.figures.show_outputs(self._outputs)
            self.figures.transfer.title.text = "Transfer curve (last good result)"
            self.figures.output.title.text = "Output curves (last good result)"
            self.metrics.object = self._metrics_text(stale=False)
            self.status.object = "Curves not updated — see the message"

    @staticmethod
    def _value_message(exc: Exception) -> str:
        text = str(exc)
        field, sep, rest = text.partition(":")
        if sep and " " not in field.strip():
            return (f"**{label_of(field.strip())}**: {rest.strip()}. The plots show the last "
                    "valid result.")
        return f"**Invalid setting**: {text}. The plots show the last valid result."

    def _set_error(self, kind: str, message: str) -> None:
        self._errors[kind] = message
        self._refresh_alert()

    def _clear_error(self, kind: str) -> None:
        if self._errors.pop(kind, None) is not None:
            self._refresh_alert()

    def _refresh_alert(self) -> None:
        self.alert.object = "\n\n".join(self._errors.values())
        self.alert.visible = bool(self._errors)

    @property
    def error_text(self) -> str:
        """The message shown in the page, '' when none."""
        return self.alert.object if self.alert.visible else ""

    # ================================================================== texts
    def _header_html(self) -> str:
        st = self.state
        try:
            d = st.design()
            eot = eot_nm(d.oxide_thickness_nm, gate_dielectric(d).permittivity)
            layout = "double gate" if d.gate_layout == "double" else "single gate"
            src = "p+" if d.source_type == "p" else "n+"
            summary = (f"{d.material} body {d.body_thickness_nm:g} nm · L<sub>g</sub> "
                       f"{d.gate_length_nm:g} nm · {layout} · {d.oxide} {d.oxide_thickness_nm:g} nm "
                       f"(EOT {eot:.2f} nm) · {src} source {d.source_doping_cm3:.1e} cm⁻³ · "
                       f"{d.temperature_K:g} K")
        except ValueError:
            summary = "invalid design — see the message below"
        return (f'<div class="title">{TITLE}</div>'
                f'<div class="summary">{summary}</div>'
                f'<div class="caution">{CAUTION}</div>')

    def _eot_text(self) -> str:
        try:
            d = self.state.design()
            eps = gate_dielectric(d).permittivity
            return (f'<div class="eot">EOT = {eot_nm(d.oxide_thickness_nm, eps):.2f} nm '
                    f'(ε<sub>r</sub> = {eps:g})</div>')
        except ValueError as exc:
            return f'<div class="eot">EOT unavailable: {exc}</div>'

    def _metrics_text(self, stale: bool) -> str:
        src = self.state.source_type
        tfet = self._curves.get("tfet")
        twin = self._curves.get("twin")
        first = "Tunnel FET (p+ source)" if src == "p" else "MOSFET (n+ source)"
        rows = [("tfet", first, getattr(tfet, "metrics", None)),
                ("twin", "MOSFET twin (n+ source)", getattr(twin, "metrics", None))]
        body = metrics_html(rows, self.state.temperature_K, self.state.vdd_V)
        return f'<div class="{"stale" if stale else "fresh"}">{body}</div>'

    def _update_material_warning(self) -> None:
        text = check_tunnelling_material(get_semiconductor(self.state.material))
        self.material_warning.object = text or ""
        self.material_warning.visible = bool(text)

    # ================================================================== presentation
    def _apply_presentation(self) -> None:
        on = self.state.presentation
        self.sidebar.visible = not on
        self.figures.set_presentation(on)
        for pane in (self.header, self.metrics, self.status):  # larger text (style.css)
            pane.css_classes = [c for c in pane.css_classes if c != "presenting"] + (
                ["presenting"] if on else [])

    # ================================================================== threads
    def _submit(self, pool: str, fn, *args) -> None:
        if not self.background:
            fn(*args)
            return
        future = self._pools[pool].submit(fn, *args)
        future.add_done_callback(_log_failure)

    def _post(self, fn, *args) -> None:
        """Run fn(*args) on the document's event loop (or at once without a server)."""
        doc = self._doc
        if doc is None:
            fn(*args)
            return

        def run() -> None:
            with set_curdoc(doc), hold(doc):  # the update's changes leave as one message
                try:
                    fn(*args)
                except Exception:  # the page must survive a bad update
                    log.exception("sub60: page update failed")

        try:
            doc.add_next_tick_callback(run)
        except Exception:  # session already closed
            log.debug("sub60: session gone, update dropped")


def _nothing() -> None:
    return None


def _log_failure(future) -> None:
    exc = future.exception() if not future.cancelled() else None
    if exc is not None:
        log.error("sub60: background job failed", exc_info=exc)


def html_escape(text: str) -> str:
    """Text for the page's Markdown/HTML messages (no markup from a file gets through)."""
    import html

    return html.escape(text, quote=True).replace("*", "&#42;").replace("_", "&#95;")


@functools.lru_cache(maxsize=1)
def _presets() -> dict[str, SnapshotSettings]:
    """The demo designs of assets/presets (read once per process; bad files skipped)."""
    return list_presets(on_error=lambda name, exc: log.warning("preset %r skipped: %s",
                                                               name, exc))


def _preset_labels() -> dict[str, str]:
    """Preset name -> short label (its title up to the colon)."""
    return {name: (s.title or name).split(":")[0] for name, s in _presets().items()}


def create_app() -> pn.viewable.Viewable:
    """A fresh explorer page (one per browser session), at the settings of the page
    address's query string when it has one."""
    loc = pn.state.location
    search = loc.search if loc is not None and loc.search else ""
    query = dict(parse_qsl(search.lstrip("?"), keep_blank_values=True))
    return Explorer.from_query(query).panel()
