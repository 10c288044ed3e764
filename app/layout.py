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
  keeps the last good plots.

With ``background=False`` (tests, scripts) every computation runs at once in the
calling thread.
"""

from __future__ import annotations

import logging
import math
import threading
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np
import panel as pn
from bokeh.models import CustomJSTickFormatter
from panel.io.document import hold
from panel.io.state import set_curdoc

from app.plots import ExplorerFigures, metrics_html
from app.state import (
    COMPUTED_PARAMETERS,
    DESIGN_PARAMETERS,
    ExplorerState,
    label_of,
)
from physics.materials import check_tunnelling_material, eot_nm, get_semiconductor
from physics.poisson import SolverError
from physics.structure import gate_dielectric

log = logging.getLogger("sub60.app")

ASSETS = Path(__file__).resolve().parent.parent / "assets"
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
        from physics.simulate import Simulator

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
                           for k in ("bias", "sweep")}
        self._shown_transfer: tuple | None = None
        self._shown_output: tuple | None = None
        self._curves: dict[str, object] = {}      # last complete transfer curves
        self._outputs: list = []                   # last complete output curves
        self._errors: dict[str, str] = {}
        self._last_changed: str | None = None
        self._sweep_started = 0.0
        self.last_bias = None
        self._css = stylesheet()
        self._build_panes()
        self._build_controls()
        self.state.param.watch(self._on_change, [*COMPUTED_PARAMETERS, "presentation"])

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

        self.cards = [
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
                              sizing_mode="stretch_width", css_classes=["sub60-main"], margin=0)
        self._update_material_warning()
        self._solve_bias_now()
        if self._doc is not None and self._doc.session_context is not None:
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
        self._request_bias()
        self._request_sweeps()

    def _sync_enabled(self) -> None:
        self.widgets["oxide_permittivity"].disabled = self.state.oxide != "custom"
        self.widgets["buried_oxide_thickness_nm"].disabled = self.state.gate_layout != "single"

    def _design_or_error(self):
        try:
            design = self.state.design()
        except ValueError as exc:
            self._set_error("design", self._value_message(exc))
            return None
        self._clear_error("design")
        return design

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
                        vdd_V=job["vdd"], progress=progress, cancelled=superseded)
                    done += job["vg"].size
                    self._post(self._apply_transfer, g, key, tc, job, done, total)
            if need_output:
                curves = []
                for vg in job["out_vg"]:
                    if superseded():
                        return
                    curves.append(sim.output_curve(job["design"], float(vg), job["out_vd"]))
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


def create_app() -> pn.viewable.Viewable:
    """A fresh explorer page (one per browser session)."""
    return Explorer().panel()
