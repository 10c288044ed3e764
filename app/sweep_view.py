"""The "Design sweeps" tab of the explorer: set up a sweep, run it on Dask, read the results.

`SweepView` is one session's sweep tab:

* **Setup.** 1 to 6 knobs (a design field with a range — from, to, steps, linear or log
  spacing — or a list of values), the sampling (grid, Sobol or Latin hypercube), the bias
  plan of every design (gate sweep, Vd, Vdd, Ioff target) and where to run (local
  worker processes, or the address of a running Dask scheduler). Every field not varied
  takes the present design of the Explorer tab; the physics options are the session's.
  The form becomes a sweep document checked by `app.sweep_spec.spec_from_dict` (the same
  rules as a sweep file); a refusal names the field and its allowed range, and a grid
  larger than `sweep_spec.LARGE_SWEEP` asks for a confirmation first.
* **Run.** `app.sweep_session.SweepSession` runs it off the event loop; progress (done,
  computed, cached, failed, rate, ETA) arrives through the page's ``post``; Cancel keeps
  the rows computed so far. The rows stream into the map and the Pareto front while the
  sweep runs: they are gathered on the sweep's thread and drawn through ``post`` at most
  once per `STREAM_EVERY_S`, less often as a long sweep goes on (`STREAM_SHARE`; a draw
  rebuilds both figures of this session).
* **Results.** A map of any figure of merit over any two knobs, the Pareto front of Ion
  against the average (or minimum) swing coloured by a chosen knob — a click on a design
  puts it into the explorer — and the normalised sensitivities of the present design to
  the numeric knobs (central differences, run on the same engine) as ranked bars; the
  results table can be downloaded as CSV.

Every widget and figure is made per session, in `__init__` or when results arrive.
"""

from __future__ import annotations

import io
import math
import re
import threading
import time
from collections.abc import Callable, Sequence
from typing import Any

import panel as pn

from sub60.app.messages import html_escape, short_error
from sub60.app.state import ExplorerState, label_of, plain_words
from sub60.app.sweep_engine import TABLE_NAME, Progress, SweepResult
from sub60.app.sweep_plots import (
    METRIC_LABELS,
    PARETO_AGAINST,
    message_plot,
    metric_map,
    pareto_plot,
    refresh_in_place,
    sensitivity_plot,
)
from sub60.app.sweep_session import (
    LOCAL_WORKERS_RANGE,
    SweepBusy,
    SweepSession,
    check_scheduler_address,
)
from sub60.app.sweep_spec import (
    LARGE_SWEEP,
    MAX_KNOBS,
    SAMPLING_METHODS,
    SpecError,
    SweepSpec,
    spec_from_dict,
)
from sub60.physics import FIELD_RANGES, Design

#: Design fields offered as knobs, by their control label.
KNOB_CHOICES: dict[str, str] = {label_of(f): f for f in FIELD_RANGES}
#: Knobs of a new page: a 3 x 3 grid around the default design (a scenario of our own).
DEFAULT_KNOBS: tuple[tuple[str, str, str, int], ...] = (
    ("body_thickness_nm", "5", "10", 3),
    ("source_doping_cm3", "1e19", "1e20", 3),
)
SAMPLING_LABELS = {"Grid": "grid", "Sobol sample": "sobol", "Latin hypercube": "latin-hypercube"}
assert set(SAMPLING_LABELS.values()) == set(SAMPLING_METHODS)
RUN_ON = ("This machine", "Dask scheduler")
#: Shortest time between two draws of the rows of a running sweep [s] (each draw rebuilds
#: the map and the Pareto front; engineering choice, no source).
STREAM_EVERY_S = 0.5
#: ... and at least this share of the time the sweep has run: draws grow rarer as a long
#: sweep goes on (at most about 35 in the first minute, 75 in an hour). BokehJS keeps a replaced
#: figure's models in its document's model map until the page closes (observed with Bokeh
#: 3.9: only the latest figure is reachable from the roots), so the number of draws is
#: what a long sweep costs the browser. Engineering choice, no source.
STREAM_SHARE = 0.1


def _number(text: str, where: str) -> float:
    """A number typed into a field, or SpecError naming the field."""
    t = (text or "").strip().replace("−", "-").replace("×10^", "e")
    try:
        v = float(t)
    except ValueError:
        raise SpecError(f"{where}: {text!r} is not a number") from None
    if not math.isfinite(v):
        raise SpecError(f"{where}: {text!r} is not a finite number")
    return v


def _values(text: str, field: str, where: str) -> list[Any]:
    parts = [p.strip() for p in (text or "").split(",") if p.strip()]
    if FIELD_RANGES[field].kind is float:
        return [_number(p, where) for p in parts]
    return parts


class KnobRow:
    """The widgets of one knob: field, from, to, steps, spacing, or a list of values."""

    def __init__(self, field: str, low: str = "", high: str = "", steps: int = 3,
                 on_remove: Callable[[KnobRow], None] | None = None) -> None:
        self.field = pn.widgets.Select(options=KNOB_CHOICES, value=field, width=230,
                                       margin=(2, 4), css_classes=["sweep-knob-field"])
        self.low = pn.widgets.TextInput(value=low, width=82, margin=(2, 4),
                                        css_classes=["sweep-knob-low"])
        self.high = pn.widgets.TextInput(value=high, width=82, margin=(2, 4),
                                         css_classes=["sweep-knob-high"])
        self.steps = pn.widgets.IntInput(value=steps, start=1, end=10_000, width=68,
                                         margin=(2, 4), css_classes=["sweep-knob-steps"])
        self.spacing = pn.widgets.Select(options=["linear", "log"], width=78, margin=(2, 4),
                                         css_classes=["sweep-knob-spacing"])
        self.values = pn.widgets.TextInput(value="", width=150, margin=(2, 4),
                                           placeholder="or values: a, b, c",
                                           css_classes=["sweep-knob-values"])
        self.remove = pn.widgets.Button(label="✕", width=38, margin=(2, 4), color="light",
                                        description="Take this knob away")
        if on_remove is not None:
            self.remove.on_click(lambda _e: on_remove(self))
        self.field.param.watch(self._field_changed, "value")
        self._field_changed()
        self.view = pn.Row(self.field, self.low, self.high, self.steps, self.spacing, self.values,
                           self.remove, margin=0)

    def _field_changed(self, *_events: Any) -> None:
        name = self.field.value
        text = FIELD_RANGES[name].kind is not float
        for w in (self.low, self.high, self.steps, self.spacing):
            w.disabled = text
        if text:
            self.values.placeholder = FIELD_RANGES[name].describe()[:60]
        else:
            spec = FIELD_RANGES[name]
            self.values.placeholder = "or values: a, b, c"
            self.low.placeholder = f"{spec.low:g}"
            self.high.placeholder = f"{spec.high:g}"
            self.spacing.value = "log" if name.endswith("_doping_cm3") and spec.low > 0 else "linear"

    def document(self, method: str) -> dict[str, Any]:
        """The knob as a sweep-file table (numbers parsed; the spec checks the ranges)."""
        name = self.field.value
        label = label_of(name)
        if self.values.value.strip() or FIELD_RANGES[name].kind is not float:
            vals = _values(self.values.value, name, f"{label}, values")
            return {"field": name, "values": vals}
        out: dict[str, Any] = {"field": name, "low": _number(self.low.value, f"{label}, from"),
                               "high": _number(self.high.value, f"{label}, to"),
                               "spacing": self.spacing.value}
        if method == "grid":
            out["steps"] = int(self.steps.value if self.steps.value is not None else 0)
        return out


class SweepView:
    """The sweep tab of one session.

    Parameters
    ----------
    state : the session's settings (the present design; a picked design goes there).
    physics : returns the session's (resolution, tunnelling model).
    css : stylesheets of the page's HTML panes.
    post : runs ``fn(*args)`` on the document's event loop (results come from a thread).
    on_load : called after a design of the sweep was put into the explorer (the page
        shows the explorer).
    session : the `SweepSession` to run on (default: a new one).
    """

    def __init__(self, state: ExplorerState, physics: Callable[[], tuple[float, str]],
                 css: Sequence[str], post: Callable[..., None],
                 on_load: Callable[[], None] | None = None,
                 session: SweepSession | None = None) -> None:
        self.state = state
        self.physics = physics
        self.post = post
        self.on_load = on_load
        self.session = session or SweepSession()
        self.spec: SweepSpec | None = None       # of the results shown
        self.rows: list[dict[str, Any]] = []     # of the results shown
        self.sensitivities: list[dict[str, Any]] = []
        self._confirmed_size: int | None = None  # a large grid the user confirmed
        self._pareto_source: Any = None
        # rows of the running sweep, gathered on its thread (`_rows_arrived`)
        self._stream_lock = threading.Lock()
        self._stream_run = 0            # the run whose rows are streamed; 0: none
        self._runs = 0
        self._stream_rows: list[dict[str, Any]] = []
        self._stream_posted = False     # a draw is posted and not yet run
        self._stream_at = -math.inf     # when the last draw was posted [s, monotonic]
        self._stream_t0 = 0.0           # when the streamed run started [s, monotonic]
        self._stream_drawn = 0          # the run whose selectors are set
        css = list(css)

        # ---------------------------------------------------------------- setup
        self.knobs: list[KnobRow] = [KnobRow(f, lo, hi, n, self._remove_knob)
                                     for f, lo, hi, n in DEFAULT_KNOBS]
        self.knob_rows = pn.Column(*[k.view for k in self.knobs], margin=0)
        self.add_knob = pn.widgets.Button(label="+ Add a knob", width=130, margin=(4, 4),
                                          color="light")
        self.add_knob.on_click(self._add_knob)
        heads = "".join(f'<span style="display:inline-block;width:{w}px">{t}</span>'
                        for t, w in (("Design field (knob)", 238), ("from", 90), ("to", 90),
                                     ("steps", 76), ("spacing", 86), ("or a list of values", 150)))
        knob_head = pn.pane.HTML(f'<div class="sweep-head">{heads}</div>', stylesheets=css,
                                 margin=(0, 4), height=18)
        self.method = pn.widgets.Select(label="Sampling", options=SAMPLING_LABELS, value="grid",
                                        width=120)
        self.count = pn.widgets.IntInput(label="Designs drawn", value=16, start=1, end=1_000_000,
                                         width=95, disabled=True)
        self.seed = pn.widgets.IntInput(label="Seed", value=1, start=0, end=2**32 - 1, width=70,
                                        disabled=True)
        self.method.param.watch(self._method_changed, "value")
        lo, hi = state.vg_sweep_V
        self.vg_from = pn.widgets.TextInput(label="Vg from (V)", value=f"{lo:g}", width=70,
                                            css_classes=["sweep-vg-from"])
        self.vg_to = pn.widgets.TextInput(label="Vg to (V)", value=f"{hi:g}", width=70,
                                          css_classes=["sweep-vg-to"])
        self.vg_points = pn.widgets.IntInput(label="Vg points", value=int(state.vg_points),
                                             start=3, end=401, width=72,
                                             css_classes=["sweep-vg-points"])
        self.vd = pn.widgets.TextInput(label="Vd (V)", value=f"{float(state.vd_V):g}", width=62)
        self.vdd = pn.widgets.TextInput(label="Vdd for Ion (V)", value=f"{float(state.vdd_V):g}",
                                        width=95)
        self.ioff = pn.widgets.TextInput(label="Ioff target (µA/µm)",
                                         value=f"{state.ioff_target_uA_per_um:g}", width=115)
        self.run_on = pn.widgets.RadioButtonGroup(options=list(RUN_ON), value=RUN_ON[0],
                                                  color="default", width=250)
        self.workers = pn.widgets.IntInput(label="Local workers (processes)",
                                           value=LOCAL_WORKERS_RANGE[1], start=LOCAL_WORKERS_RANGE[0],
                                           end=LOCAL_WORKERS_RANGE[1], width=170,
                                           css_classes=["sweep-workers"])
        self.address = pn.widgets.TextInput(label="Scheduler address", value="",
                                            placeholder="tcp://HOST:8786", width=250,
                                            disabled=True)
        self.run_on.param.watch(self._run_on_changed, "value")
        self.run = pn.widgets.Button(label="Run sweep", color="primary", width=130,
                                     css_classes=["sweep-run"])
        self.confirm = pn.widgets.Button(label="Confirm", color="warning", width=220,
                                         visible=False, css_classes=["sweep-confirm"])
        self.cancel = pn.widgets.Button(label="Cancel", width=90, disabled=True,
                                        css_classes=["sweep-cancel"])
        self.run.on_click(lambda _e: self.start())
        self.confirm.on_click(lambda _e: self.start(confirmed=True))
        self.cancel.on_click(lambda _e: self.session.cancel())
        self.progress = pn.indicators.Progress(value=0, max=100, width=300, height=14,
                                               bar_color="info", margin=(6, 8, 0, 8),
                                               css_classes=["sweep-page-progress"])
        self.status = pn.pane.HTML("No sweep yet.", css_classes=["sweep-page-status"],
                                   stylesheets=css, width=520, margin=(2, 8))
        self.message = pn.pane.Alert("", alert_type="danger", visible=False,
                                     css_classes=["sweep-message"], sizing_mode="stretch_width",
                                     margin=(2, 8))
        self.download = pn.widgets.FileDownload(callback=self._csv, filename="sweep-results.csv",
                                                label="Download the results (CSV)", width=220,
                                                disabled=True, color="light")
        note = pn.pane.HTML(
            '<div class="note">Fields not varied take the present design of the Explorer '
            "tab; the tunnelling model and grid are the session's. Each design is one "
            "transfer curve on Dask; a rerun takes computed designs from the cache.</div>",
            stylesheets=css, sizing_mode="stretch_width", margin=(0, 8))
        plan = pn.Row(self.method, self.count, self.seed, self.vg_from,
                      self.vg_to, self.vg_points, self.vd, self.vdd, self.ioff, margin=0)
        setup = pn.Column(knob_head, self.knob_rows, self.add_knob, plan, margin=(4, 4))
        where = pn.Column(self.run_on, self.workers, self.address,
                          pn.Row(self.run, self.cancel), self.confirm, margin=(4, 4))
        self.setup = pn.Card(
            pn.Row(setup, where, sizing_mode="stretch_width"), note, self.message,
            title="Sweep setup", collapsible=True, sizing_mode="stretch_width", margin=(4, 8),
            css_classes=["sweep-setup"])

        # ---------------------------------------------------------------- results
        metric_opts = {v: k for k, v in METRIC_LABELS.items()}
        self.map_metric = pn.widgets.Select(label="Map of", options=metric_opts,
                                            value="ion_uA_per_um", width=140)
        self.map_x = pn.widgets.Select(label="across", options={}, width=115)
        self.map_y = pn.widgets.Select(label="and", options={}, width=115)
        self.pareto_against = pn.widgets.Select(label="Ion against", options=PARETO_AGAINST,
                                                value="ss_avg4_mV_per_dec", width=150)
        self.colour_by = pn.widgets.Select(label="coloured by", options={}, width=170)
        self.sens_metric = pn.widgets.Select(label="Sensitivity of", options=metric_opts,
                                             value="ion_uA_per_um", width=150)
        self.sens_run = pn.widgets.Button(label="At the present design", width=165,
                                          margin=(23, 8, 4, 8), css_classes=["sweep-sensitivity-run"])
        self.sens_run.on_click(lambda _e: self.start_sensitivity())
        for w in (self.map_metric, self.map_x, self.map_y):
            w.param.watch(lambda _e: self._draw_map(), "value")
        for w in (self.pareto_against, self.colour_by):
            w.param.watch(lambda _e: self._draw_pareto(), "value")
        self.sens_metric.param.watch(lambda _e: self._draw_sensitivity(), "value")
        self.map_pane = pn.pane.Bokeh(message_plot("sweep_map_empty", "Map of a figure of merit",
                                                   "run a sweep to fill this map"), margin=(2, 2))
        self.pareto_pane = pn.pane.Bokeh(message_plot("sweep_pareto_empty", "Pareto front",
                                                      "run a sweep to see its Pareto front"),
                                         margin=(2, 2))
        self.sens_pane = pn.pane.Bokeh(message_plot("sweep_sensitivity_empty", "Sensitivities",
                                                    "press “At the present design”"),
                                       margin=(2, 2))
        self.sens_notes = pn.pane.HTML("", stylesheets=css, width=420, margin=(0, 8),
                                       css_classes=["sweep-sensitivity-notes"])
        self.picked = pn.pane.HTML("", stylesheets=css, sizing_mode="stretch_width",
                                   margin=(0, 8), css_classes=["sweep-picked"])
        results = pn.Row(
            pn.Column(pn.Row(self.map_metric, self.map_x, self.map_y), self.map_pane),
            pn.Column(pn.Row(self.pareto_against, self.colour_by), self.pareto_pane,
                      pn.pane.HTML('<div class="note">Click a design to put it into the '
                                   "explorer.</div>", stylesheets=css, margin=(0, 8))),
            pn.Column(pn.Row(self.sens_metric, self.sens_run), self.sens_pane, self.sens_notes),
            margin=0)
        self.view = pn.Column(
            self.setup,
            pn.Row(pn.Column(self.progress, self.status, margin=0), self.download, self.picked,
                   sizing_mode="stretch_width", margin=(0, 4)),
            results, sizing_mode="stretch_width", margin=0, css_classes=["sweep-view"])

    # ------------------------------------------------------------------ the form
    def _add_knob(self, *_e: Any) -> None:
        if len(self.knobs) >= MAX_KNOBS:
            self._say(f"At most {MAX_KNOBS} knobs per sweep.")
            return
        used = {k.field.value for k in self.knobs}
        field = next(f for f in FIELD_RANGES if f not in used)
        row = KnobRow(field, "", "", 3, self._remove_knob)
        self.knobs.append(row)
        self.knob_rows.append(row.view)
        self.add_knob.disabled = len(self.knobs) >= MAX_KNOBS
        self._confirmed_size = None

    def _remove_knob(self, row: KnobRow) -> None:
        if len(self.knobs) <= 1:
            self._say("A sweep needs at least one knob.")
            return
        self.knobs.remove(row)
        self.knob_rows.objects = [k.view for k in self.knobs]
        self.add_knob.disabled = False

    def _method_changed(self, event: Any) -> None:
        grid = event.new == "grid"
        self.count.disabled = self.seed.disabled = grid
        for k in self.knobs:
            k.steps.disabled = not grid or FIELD_RANGES[k.field.value].kind is not float

    def _run_on_changed(self, event: Any) -> None:
        local = event.new == RUN_ON[0]
        self.workers.disabled = not local
        self.address.disabled = local

    def document(self) -> dict[str, Any]:
        """The form as a sweep document (the structure of a sweep file).

        Raises SpecError naming the field when a number cannot be read or the present
        design is invalid.
        """
        method = self.method.value
        knobs = [k.document(method) for k in self.knobs]
        try:
            design = self.state.design()
        except ValueError as exc:
            raise SpecError(f"the present design of the Explorer tab is invalid: {exc}") from None
        varied = {k["field"] for k in knobs}
        fixed = {k: v for k, v in design.to_dict().items() if k not in varied and v is not None}
        sampling: dict[str, Any] = {"method": method}
        if method != "grid":
            sampling.update(count=self.count.value, seed=self.seed.value)
        resolution, model = self.physics()
        return {
            "title": "sweep from the page", "fixed": fixed, "knob": knobs, "sampling": sampling,
            "bias": {"vg_V": [_number(self.vg_from.value, "Vg from (V)"),
                              _number(self.vg_to.value, "Vg to (V)"),
                              self.vg_points.value],
                     "vd_V": _number(self.vd.value, "Vd (V)"),
                     "ioff_target_uA_per_um": _number(self.ioff.value, "Ioff target (µA/µm)"),
                     "vdd_V": _number(self.vdd.value, "Vdd for Ion (V)")},
            "physics": {"tunnelling_model": model, "resolution": resolution},
        }

    def read_spec(self, confirmed: bool = False) -> SweepSpec:
        """The validated sweep of the form (SpecError with the field's label otherwise);
        a sweep larger than `LARGE_SWEEP` designs needs ``confirmed``."""
        doc = self.document()
        try:
            return spec_from_dict(doc, allow_large=confirmed)
        except SpecError as exc:
            raise SpecError(_labelled(str(exc))) from None

    # ------------------------------------------------------------------ running
    def _target(self) -> tuple[str | None, int | None]:
        if self.run_on.value == RUN_ON[1]:
            try:
                return check_scheduler_address(self.address.value or ""), None
            except ValueError as exc:
                raise SpecError(str(exc)) from None
        return None, self.workers.value

    def start(self, confirmed: bool = False) -> bool:
        """Check the form and start the sweep; False (with a message) when refused."""
        self.confirm.visible = False
        try:
            scheduler, workers = self._target()
            try:
                spec = self.read_spec(confirmed=confirmed)
            except SpecError:
                big = self._large_size()
                if big is None:
                    raise
                self._confirmed_size = None
                self.confirm.label = f"Confirm: run {big:,} designs"
                self.confirm.visible = True
                self._say(f"This sweep holds {big:,} designs, more than {LARGE_SWEEP:,}: at about "
                          f"1 s per design and worker that is {_hours(big, workers)}. Press "
                          "“Confirm” to run it anyway.")
                return False
            if spec.size() <= LARGE_SWEEP:
                spec.designs()  # every design checked now (a large one: on the sweep's thread)
        except SpecError as exc:
            self._say(_labelled(str(exc)))  # (a message labelled already stays as it is)
            return False
        run = self._new_stream()
        # the page shows the run before it starts: its end may be delivered at once
        return self._launch(
            f"Sweep of {spec.size():,} designs: starting…",
            lambda **hooks: self.session.run(
                spec, scheduler=scheduler, workers=workers,
                on_rows=lambda rows: self._rows_arrived(run, spec, rows), **hooks),
            self._sweep_done, spec)

    def _large_size(self) -> int | None:
        """The size of a valid sweep refused only for being large, else None."""
        try:
            spec = spec_from_dict(self.document(), allow_large=True)
        except SpecError:
            return None
        return spec.size() if spec.size() > LARGE_SWEEP else None

    def start_sensitivity(self) -> bool:
        """Sensitivities of every metric to the numeric knobs at the present design."""
        try:
            design = self.state.design()
            spec = self.read_spec(confirmed=True)  # its bias plan and physics; its grid unused
            scheduler, workers = self._target()
        except (SpecError, ValueError) as exc:
            self._say(str(exc))
            return False
        fields = [f for f in spec.knob_fields if FIELD_RANGES[f].kind is float]
        if not fields:
            self._say("Sensitivity needs a numeric knob (a text field such as the material has "
                      "no derivative).")
            return False
        return self._launch(
            f"Sensitivity: {2 * len(fields) + 1} designs (the present one and ±5 % in "
            f"{len(fields)} knob{'s' if len(fields) > 1 else ''})…",
            lambda **hooks: self.session.run_sensitivity(design, fields, spec,
                                                         scheduler=scheduler,
                                                         workers=workers, **hooks),
            self._sensitivity_done, design)

    def _launch(self, status: str, run: Any, done: Any, *done_args: Any) -> bool:
        """Show the run as started, then start it with the page's progress, end
        (``done(result, *done_args)``) and status hooks, each posted to this page's event
        loop; a refused start is told and undone."""
        self._say("")
        self._busy(True)
        self.progress.value = 0
        self.status.object = status
        try:
            run(on_progress=lambda p: self.post(self._show_progress, p),
                on_done=lambda out: self.post(done, out, *done_args),
                on_start=lambda t: self.post(self._show_status, t))
        except (SweepBusy, ValueError) as exc:
            self._busy(False)
            self._say(str(exc))
            return False
        return True

    def _busy(self, on: bool) -> None:
        self.run.disabled = on
        self.sens_run.disabled = on
        self.cancel.disabled = not on
        self.progress.bar_color = "info"
        self.progress.active = False

    def _say(self, text: str) -> None:
        self.message.object = html_escape(text)
        self.message.visible = bool(text)

    def _show_status(self, text: str) -> None:
        self.status.object = html_escape(text[:1].upper() + text[1:])

    def _show_progress(self, p: Progress) -> None:
        self.progress.value = int(round(100 * p.done / max(p.total, 1)))
        self.status.object = html_escape(p.line())

    # ------------------------------------------------------------------ streaming rows
    def _new_stream(self) -> int:
        """A new run's rows start streaming (those of an earlier run are dropped)."""
        with self._stream_lock:
            self._runs += 1
            self._stream_run = self._runs
            self._stream_rows = []
            self._stream_posted = False
            self._stream_at = -math.inf
            self._stream_t0 = time.monotonic()
            return self._runs

    def _rows_arrived(self, run: int, spec: SweepSpec, rows: list[dict[str, Any]]) -> None:
        """New rows of a running sweep (on the sweep's thread): kept, and a draw posted
        unless one is waiting or the last was posted less than `STREAM_EVERY_S` (or
        `STREAM_SHARE` of the run's time so far) ago; the rows then wait for the next
        batch, or for the end of the sweep."""
        with self._stream_lock:
            if run != self._stream_run:
                return
            self._stream_rows.extend(rows)
            now = time.monotonic()
            wait = max(STREAM_EVERY_S, STREAM_SHARE * (now - self._stream_t0))
            if self._stream_posted or now - self._stream_at < wait:
                return
            self._stream_posted, self._stream_at = True, now
        self.post(self._draw_streamed, run, spec)

    def _draw_streamed(self, run: int, spec: SweepSpec) -> None:
        """Draw the rows so far of the running sweep (on the event loop); nothing when the
        sweep has ended meanwhile (its end draws them all)."""
        with self._stream_lock:
            self._stream_posted = False
            if run != self._stream_run:
                return
            rows = sorted(self._stream_rows, key=lambda r: r["index"])
        self._show_rows(spec, rows, new_selectors=self._stream_drawn != run)
        self._stream_drawn = run

    def _end_stream(self) -> None:
        with self._stream_lock:
            self._stream_run = 0
            self._stream_rows = []

    def _show_rows(self, spec: SweepSpec, rows: list[dict[str, Any]], new_selectors: bool) -> None:
        """Show ``rows`` of ``spec`` in the map and the Pareto front (selectors set to the
        sweep's knobs first when ``new_selectors``)."""
        self.spec, self.rows = spec, rows
        if new_selectors:
            knob_opts = {label_of(f): f for f in spec.knob_fields}
            fields = list(spec.knob_fields)
            with _batched(self):
                self.map_x.options = knob_opts
                self.map_y.options = knob_opts
                self.map_x.value = fields[0]
                self.map_y.value = fields[1] if len(fields) > 1 else fields[0]
                self.colour_by.options = knob_opts
                self.colour_by.value = fields[-1] if len(fields) > 1 else fields[0]
        self._draw_map()
        self._draw_pareto()

    def _sweep_done(self, outcome: Any, spec: SweepSpec) -> None:
        self._busy(False)
        self._end_stream()
        if not isinstance(outcome, SweepResult):
            self.progress.bar_color = "danger"
            self._say(_labelled(short_error(outcome)) if isinstance(outcome, SpecError)
                      else f"The sweep did not run: {short_error(outcome)}")
            self.status.object = "Sweep not run."
            return
        res = outcome
        self.spec, self.rows = spec, res.rows
        self.progress.value = 100 if not res.cancelled else self.progress.value
        self.progress.bar_color = "warning" if res.cancelled or res.failed else "success"
        where = f" on {res.workers} worker{'s' if res.workers != 1 else ''}" if res.workers else ""
        self.status.object = html_escape(
            f"{res.total} designs: {res.computed} computed, {res.cached} from the cache, "
            f"{res.failed} failed" + (", cancelled" if res.cancelled else "")
            + f"; {res.wall_s:.1f} s{where}.")
        if res.failed:
            first = next(r for r in res.rows if r["status"] == "failed")
            self._say(f"{res.failed} design(s) failed; the first (#{first['index']}): "
                      f"{first['error'][:300]}")
        self.download.disabled = res.table_path is None
        # the selectors chosen while the rows streamed in stay
        self._show_rows(spec, res.rows, new_selectors=self._stream_drawn != self._runs)
        self._stream_drawn = self._runs

    def _sensitivity_done(self, outcome: Any, design: Design) -> None:
        self._busy(False)
        if not isinstance(outcome, list):
            self.progress.bar_color = "danger"
            self._say(f"The sensitivity did not run: {_labelled(short_error(outcome))}")
            self.status.object = "Sensitivity not computed."
            return
        self.sensitivities = outcome
        self.progress.value = 100
        self.progress.bar_color = "success"
        self.status.object = "Sensitivity at the present design: done."
        self._draw_sensitivity()

    # ------------------------------------------------------------------ drawing
    def _draw_map(self) -> None:
        if getattr(self, "_holding", False) or self.spec is None:
            return
        grid = self.spec.method == "grid"
        axes = {k.field: k.grid() for k in self.spec.knobs} if grid else None
        fig = metric_map(self.rows, self.spec.knob_fields, self.map_x.value,
                         self.map_y.value, self.map_metric.value, grid=grid, axes=axes)
        if not refresh_in_place(self.map_pane.object, fig):  # same shape: only data is sent
            self.map_pane.object = fig

    def _draw_pareto(self) -> None:
        if getattr(self, "_holding", False) or self.spec is None:
            return
        fig, source, _front = pareto_plot(self.rows, self.spec.knob_fields,
                                          self.pareto_against.value, self.colour_by.value)
        if source is not None and self._pareto_source is not None and refresh_in_place(
                self.pareto_pane.object, fig):
            return  # the shown figure and its source (with its click callback) now hold the rows
        self._pareto_source = source
        if source is not None:
            source.selected.on_change("indices", self._picked)
        self.pareto_pane.object = fig

    def _draw_sensitivity(self) -> None:
        if not self.sensitivities:
            return
        fig, notes = sensitivity_plot(self.sensitivities, self.sens_metric.value)
        self.sens_pane.object = fig
        self.sens_notes.object = ('<div class="note">' + "<br>".join(html_escape(n) for n in notes)
                                  + "</div>" if notes else "")

    # ------------------------------------------------------------------ picking a design
    def _picked(self, _attr: str, _old: Any, new: list[int]) -> None:
        if not new or self._pareto_source is None:
            return
        index = int(self._pareto_source.data["index"][new[0]])
        self.load_design(index)

    def load_design(self, index: int) -> bool:
        """Put design ``index`` of the shown sweep into the explorer (one update)."""
        row = next((r for r in self.rows if r["index"] == index), None)
        if row is None:
            return False
        try:
            design = Design.from_dict({k: row[k] for k in FIELD_RANGES if k in row})
            self.state.set_design(design)
        except ValueError as exc:
            self._say(f"Design #{index} not loaded: {exc}")
            return False
        knobs = ", ".join(f"{label_of(f)} = {row[f]}" for f in self.spec.knob_fields)
        self.picked.object = (f'<div class="note done">Design #{index} ({html_escape(knobs)}) '
                              "is in the explorer.</div>")
        if self.on_load is not None:
            self.on_load()
        return True

    # ------------------------------------------------------------------ files
    def _csv(self) -> io.BytesIO:
        path = self.session.sweep_dir / f"{TABLE_NAME}.csv"
        try:
            return io.BytesIO(path.read_bytes())
        except OSError:
            return io.BytesIO(b"")

    def close(self) -> None:
        """The page is gone: stop the run, close the session's cluster, drop the files."""
        self.session.close()


class _batched:
    """Option changes of the result selectors draw once, after the block."""

    def __init__(self, view: SweepView) -> None:
        self.view = view

    def __enter__(self) -> None:
        self.view._holding = True

    def __exit__(self, *exc: object) -> None:
        self.view._holding = False


def _labelled(text: str) -> str:
    """A spec message led by the control label (with its unit) of the design field it
    names, every field name in it in words ('source_material = ...' -> 'source
    semiconductor = ...')."""
    words = {"low": "from", "high": "to"}  # the form's column heads
    text = re.sub(r"\bknob (\w+)\.(low|high|steps|values|spacing)\b",
                  lambda m: f"{m.group(1)}, {words.get(m.group(2), m.group(2))}", text)
    for f in sorted(FIELD_RANGES, key=len, reverse=True):
        if f in text:
            return f"{label_of(f)} — {plain_words(text)}"
    return plain_words(text)


def _hours(designs: int, workers: int | None) -> str:
    s = designs / max(workers or 1, 1)
    return f"about {s / 3600:.1f} h on this machine" if s > 5400 else f"about {s / 60:.0f} min"
