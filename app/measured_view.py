"""The measured-curve card: open a measured transfer curve, see it beside the fit, fit knobs.

A collapsible card under the plots. The user opens a table (or the synthetic demo curve
shipped in ``assets/measured``), read by `sub60.physics.read_measured` (units from the
header or chosen here, a width for a current in A, a drain voltage for a file without
one); a bad file leaves a one-line message naming the line and changes nothing else.
The card shows the measured points (open circles) with their figures of merit (the
model's own `figures_of_merit`), runs `sub60.physics.fit_transfer` on the knobs the
user frees, off the event loop with a progress line and a Stop button, then draws the
fitted model and the residuals, lists each knob ± its uncertainty (or why it is not
determined), and can put the fitted design into the explorer (where it can be pinned).

Each card belongs to one session; its Bokeh figures are made per card. Test hooks (css
classes): ``measured-file``, ``measured-demo``, ``measured-knobs``, ``measured-fit``,
``measured-status``, ``measured-fitted``.
"""

from __future__ import annotations

import threading
from collections.abc import Callable, Sequence
from importlib.resources import files
from typing import Any

import numpy as np
import panel as pn

from sub60.app.messages import html_escape
from sub60.app.snapshot_measured import MeasuredSnapshot
from sub60.app.state import ExplorerState
from sub60.physics import CURRENT_UNITS, FIT_KNOBS, MeasuredData, read_measured

#: The knobs freed when the card opens (the demo's).
DEFAULT_KNOBS = ("workfunction_shift", "trap_density", "tail_energy")
HEADER_UNIT = "from the file's header"
DEMO_NAME = "demo-tfet-transfer.csv"


def demo_bytes() -> bytes:
    """The synthetic demo curve shipped with sub60 (its header says it is synthetic)."""
    return files("sub60.assets").joinpath("measured", DEMO_NAME).read_bytes()


def _fmt(v: float | None) -> str:
    return "n/a" if v is None else f"{v:.4g}"


def metrics_html(data: MeasuredData, result: Any = None, **settings: float) -> str:
    """Figures of merit of each measured curve (and of the fit beside it) as a table;
    ``settings``: temperature_K, ioff_target_uA_per_um, vdd_V of `figures_of_merit`."""
    heads = {"ss_min_mV_per_dec": "SS<sub>min</sub> [mV/dec]",
             "ss_avg4_mV_per_dec": "SS<sub>avg4</sub> [mV/dec]",
             "i60_uA_per_um": "I<sub>60</sub> [µA/µm]", "ion_uA_per_um": "I<sub>on</sub> [µA/µm]"}
    rows = []
    fits = {c.vd_V: c for c in result.curves} if result is not None else {}
    for c in data.transfer:
        m = c.metrics(**settings).to_dict()
        cells = "".join(f"<td>{_fmt(m[k])}</td>" for k in heads)
        rows.append(f"<tr><td>measured, V<sub>d</sub> = {c.vd_V:g} V</td>{cells}</tr>")
        if c.vd_V in fits:
            f = fits[c.vd_V].metrics("fit", **settings).to_dict()
            cells = "".join(f"<td>{_fmt(f[k])}</td>" for k in heads)
            rows.append(f"<tr class='fit'><td>fit, V<sub>d</sub> = {c.vd_V:g} V</td>{cells}</tr>")
    head = "".join(f"<th>{h}</th>" for h in heads.values())
    return (f"<table class='sub60-measured'><thead><tr><th></th>{head}</tr></thead>"
            f"<tbody>{''.join(rows)}</tbody></table>")


def knobs_html(result: Any) -> str:
    """Each fitted knob ± its standard uncertainty, the problems, the evaluations."""
    rows = "".join(f"<li><b>{html_escape(k.name)}</b>: {html_escape(k.text())}</li>"
                   for k in result.knobs)
    problems = "".join(f"<li class='warn'>{html_escape(p)}</li>" for p in result.problems)
    return (f"<ul>{rows}{problems}</ul><div>rms residual {result.rms_decades:.3f} decades; "
            f"{result.curve_evaluations} model curves ({result.bias_points} bias points) in "
            f"{result.elapsed_s:.1f} s. Fitted knobs are what this model needs, not measured "
            "process values.</div>")


class MeasuredCard:
    """The collapsible measured-curve card of one session (``view``).

    Parameters
    ----------
    state : the session's settings (the fit starts from its design; the fitted design
        can be put back into it).
    css : stylesheets of the card's HTML panes.
    post : runs ``fn(*args)`` on the page's event loop (the fit reports from a thread).
    background : run the fit on a thread of its own (False: at once, for tests).
    on_data : called with (file name, MeasuredData) when a file is opened (the page puts
        its points on the main transfer and output plots and its metrics in the strip).
    """

    def __init__(self, state: ExplorerState, css: Sequence[str],
                 post: Callable[..., None], background: bool = True,
                 on_data: Callable[[str, MeasuredData | None], None] | None = None) -> None:
        self.state, self.post, self.background = state, post, background
        self.on_data = on_data
        self.data: MeasuredData | None = None
        self.name = ""
        self._generation = 0  # a fit's result for an older file or snapshot is dropped
        self.result: Any = None
        self._cancel: threading.Event | None = None
        self._thread: threading.Thread | None = None
        self.file = pn.widgets.FileInput(accept=".csv,.tsv,.txt,.dat", multiple=False, width=260,
                                         css_classes=["measured-file"])
        self.demo = pn.widgets.Button(label="Open the synthetic demo curve", width=240,
                                      css_classes=["measured-demo"])
        self.unit = pn.widgets.Select(label="Current unit", options=[HEADER_UNIT, *CURRENT_UNITS],
                                      width=170)
        self.width_um = pn.widgets.FloatInput(label="Width for a current in A [µm]", value=None,
                                              start=1e-3, end=1e6, width=190)
        self.vd = pn.widgets.FloatInput(label="Vd of a file without one [V]", value=None,
                                        start=-0.6, end=1.0, step=0.05, width=190)
        self.knobs = pn.widgets.MultiChoice(label="Knobs to fit", options=list(FIT_KNOBS),
                                            value=list(DEFAULT_KNOBS), width=520,
                                            css_classes=["measured-knobs"])
        self.fit_button = pn.widgets.Button(label="Fit", color="primary", disabled=True,
                                            width=90, css_classes=["measured-fit"])
        self.stop_button = pn.widgets.Button(label="Stop", disabled=True, width=80)
        self.use_button = pn.widgets.Button(label="Put the fitted design in the explorer",
                                            disabled=True, width=300)
        self.progress = pn.indicators.Progress(value=0, max=100, width=200, height=14,
                                               active=False)
        self.status = pn.pane.HTML("", stylesheets=list(css), sizing_mode="stretch_width",
                                   css_classes=["measured-status"])
        self.table = pn.pane.HTML("", stylesheets=list(css), sizing_mode="stretch_width")
        self.fitted = pn.pane.HTML("", stylesheets=list(css), sizing_mode="stretch_width",
                                   css_classes=["measured-fitted"])
        # the data sources now, the figures when the card is first opened (`_opened`): a
        # page opens without making them
        from bokeh.models import ColumnDataSource

        self._data_src = ColumnDataSource({"vg": [], "id": []})
        self._fit_src = ColumnDataSource({"vg": [], "id": []})
        self._res_src = ColumnDataSource({"vg": [], "r": []})
        self.plot = pn.pane.Bokeh(None, sizing_mode="stretch_width")
        self.file.param.watch(self._file_changed, "value")
        self.demo.on_click(lambda _e: self.open(demo_bytes(), DEMO_NAME))
        self.fit_button.on_click(lambda _e: self.start_fit())
        self.stop_button.on_click(lambda _e: self.stop())
        self.use_button.on_click(lambda _e: self.use_fitted())
        self._content = [
            pn.pane.HTML("<div>A measured transfer curve beside the model: open a table "
                         "(CSV, TSV or whitespace; units from its header or chosen here), "
                         "free a few knobs and fit them (least squares on log<sub>10</sub> "
                         "I<sub>d</sub>).</div>", stylesheets=list(css)),
            pn.Row(self.file, self.demo, self.unit, self.width_um, self.vd),
            pn.Row(self.knobs, self.fit_button, self.stop_button, self.progress),
            self.status, self.plot, self.table, self.fitted, self.use_button]
        # filled when first opened (as the sidebar's folded cards, `app.controls`): the
        # page opens without sending the Bokeh models of a card nobody has opened yet
        self.view = pn.Card(title="Measured curve: open and fit", collapsed=True,
                            sizing_mode="stretch_width", css_classes=["sub60-measured-card"])
        self.view.param.watch(self._opened, "collapsed")

    def _opened(self, event: Any) -> None:
        if not event.new and not self.view.objects:
            self.plot.object = self._figure()
            self.view.objects = list(self._content)

    # ------------------------------------------------------------------ reading
    def _file_changed(self, event: Any) -> None:
        if event.new:
            self.open(event.new, self.file.filename or "the file")

    def open(self, content: bytes, name: str) -> bool:
        """Read a measured table; a bad one leaves a message and the card as it was."""
        unit = None if self.unit.value == HEADER_UNIT else self.unit.value
        try:
            data = read_measured(content, current_unit=unit, width_um=self.width_um.value,
                                 drain_voltage_V=self.vd.value)
        except ValueError as exc:
            self._say(f"{html_escape(name)} not read: {html_escape(str(exc))}", "error")
            return False
        self.data, self.result, self.name = data, None, name
        self._generation += 1
        if self.on_data is not None:
            self.on_data(name, data)
        note = f" The file says: {html_escape(data.comments[0])}" if data.comments else ""
        if data.transfer:
            self._say(f"{html_escape(name)}: {len(data.transfer)} transfer curve(s), "
                      f"{data.n_points} points (current in {html_escape(data.unit)}), shown "
                      f"on the transfer plot.{note}", "done")
        else:
            self._say(f"{html_escape(name)}: {len(data.output)} output curve(s) (I<sub>d</sub>"
                      f"–V<sub>d</sub>), {data.n_points} points, shown on the output plot; the "
                      f"fit needs a transfer curve (I<sub>d</sub>–V<sub>g</sub>).{note}", "done")
        self.fit_button.disabled = not data.transfer
        self.use_button.disabled = True
        self.fitted.object = ""
        self._redraw()
        return True

    # ------------------------------------------------------------------ snapshots
    def snapshot(self) -> MeasuredSnapshot | None:
        """The open file, the freed knobs and the last fit, for a snapshot (None: no
        file is open)."""
        if self.data is None:
            return None
        return MeasuredSnapshot(self.name, self.data, tuple(self.knobs.value), self.result)

    def restore(self, m: MeasuredSnapshot) -> None:
        """A snapshot's file and fit back in the card, on the plots and in the strip."""
        self.stop()
        self._generation += 1
        self.data, self.result, self.name = m.data, m.fit, m.name
        if self.on_data is not None:
            self.on_data(m.name, m.data)
        if m.free:
            self.knobs.value = list(m.free)
        self.fit_button.disabled = not m.data.transfer or self._thread is not None
        self.use_button.disabled = m.fit is None
        self.fitted.object = "" if m.fit is None else knobs_html(m.fit)
        self._say(f"{html_escape(m.name)}: {m.data.n_points} measured points from the "
                  "snapshot" + (", with its fit (not recomputed)." if m.fit is not None
                                else "."), "done")
        self._redraw()

    # ------------------------------------------------------------------ the fit
    def start_fit(self) -> bool:
        """Fit the free knobs to the open curve, from the explorer's present design."""
        if self.data is None or self._thread is not None:
            return False
        try:
            design = self.state.design()
        except ValueError as exc:
            self._say(f"No fit: the design is not valid ({html_escape(str(exc))}).", "error")
            return False
        self._cancel = threading.Event()
        self.fit_button.disabled, self.stop_button.disabled = True, False
        self.progress.active, self.progress.value = True, -1
        self._say("Fitting " + html_escape(", ".join(self.knobs.value)) + " …", "busy")
        args = (self.data, design, list(self.knobs.value), self._cancel, self._generation)
        if not self.background:
            self._run(*args)
            return True
        self._thread = threading.Thread(target=self._run, args=args, daemon=True,
                                        name="sub60-fit")
        self._thread.start()
        return True

    def _run(self, data: MeasuredData, design: Any, free: list[str],
             cancel: threading.Event, generation: int | None = None) -> None:
        from sub60.physics import fit_transfer

        def progress(n: int, rms: float) -> None:
            self.post(self._say, f"Fitting: model curve {n}, rms residual {rms:.3f} decades",
                      "busy")

        try:
            result: Any = fit_transfer(data, design, free, progress=progress, cancel=cancel)
        except InterruptedError:
            result = "stopped"
        except Exception as exc:  # a bad setting or a failed solve: say it, keep the page
            result = exc
        self.post(self._fit_done, result, generation)

    def _fit_done(self, result: Any, generation: int | None = None) -> None:
        self._thread = None
        self.fit_button.disabled = self.data is None or not self.data.transfer
        self.stop_button.disabled = True
        self.progress.active, self.progress.value = False, 0
        if generation is not None and generation != self._generation:
            return  # another file or a snapshot was opened meanwhile: not its fit
        if isinstance(result, str):
            self._say("Fit stopped.", "error")
            return
        if isinstance(result, Exception):
            self._say(f"Fit failed: {html_escape(str(result))}", "error")
            return
        self.result = result
        self.progress.value = 100
        self._say("Fit done." + (" Some knobs are not determined (below)." if result.problems
                                 else ""), "done")
        self.fitted.object = knobs_html(result)
        self.use_button.disabled = False
        self._redraw()

    def stop(self) -> None:
        """Stop a running fit at its next model point."""
        if self._cancel is not None:
            self._cancel.set()

    def use_fitted(self) -> bool:
        """Put the fitted design into the explorer (one update; it can then be pinned)."""
        if self.result is None:
            return False
        self.state.set_design(self.result.design)
        self._say("The fitted design is in the explorer.", "done")
        return True

    def close(self) -> None:
        """Stop a running fit; nothing more is delivered to the page."""
        self.stop()
        self.post = lambda *_a, **_k: None

    # ------------------------------------------------------------------ drawing
    def _say(self, html: str, kind: str) -> None:
        self.status.object = f"<div class='note {kind}'>{html}</div>"

    def _figure(self) -> Any:
        from bokeh.layouts import column
        from bokeh.plotting import figure

        top = figure(height=330, sizing_mode="stretch_width", y_axis_type="log",
                     x_axis_label="Vg [V]", y_axis_label="Id [µA/µm]",
                     title="Measured curve (open circles) and fitted model (line)",
                     tools="pan,box_zoom,wheel_zoom,reset,save")
        top.scatter("vg", "id", source=self._data_src, size=7, fill_color=None,
                    line_color="#222222", line_width=1.5, legend_label="measured")
        top.line("vg", "id", source=self._fit_src, line_color="#c0392b", line_width=2.5,
                 legend_label="fit")
        top.legend.location = "top_left"
        bottom = figure(height=170, sizing_mode="stretch_width", x_range=top.x_range,
                        x_axis_label="Vg [V]", y_axis_label="log10(fit/data)",
                        tools="pan,box_zoom,reset")
        bottom.line("vg", "r", source=self._res_src, line_color="#c0392b")
        bottom.scatter("vg", "r", source=self._res_src, size=5, color="#c0392b")
        return column(top, bottom, sizing_mode="stretch_width")

    def _redraw(self) -> None:
        if self.data is None:
            return
        if not self.data.transfer:
            self._data_src.data = {"vg": [], "id": []}
            self._fit_src.data = {"vg": [], "id": []}
            self._res_src.data = {"vg": [], "r": []}
            self.table.object = ""
            return
        vg = np.concatenate([c.vg_V for c in self.data.transfer])
        current = np.concatenate([c.id_uA_per_um for c in self.data.transfer])
        keep = current > 0
        self._data_src.data = {"vg": vg[keep], "id": current[keep]}
        if self.result is not None:
            c = self.result.curves
            gap = [np.array([np.nan])] * len(c)  # one line per drain voltage
            self._fit_src.data = {
                "vg": np.concatenate([x for k in c for x in (k.vg_V, gap[0])]),
                "id": np.concatenate([x for k in c for x in (k.fit_uA_per_um, gap[0])])}
            self._res_src.data = {
                "vg": np.concatenate([x for k in c for x in (k.vg_V, gap[0])]),
                "r": np.concatenate([x for k in c for x in (k.residual_decades, gap[0])])}
        else:
            self._fit_src.data = {"vg": [], "id": []}
            self._res_src.data = {"vg": [], "r": []}
        self.table.object = metrics_html(
            self.data, self.result, temperature_K=self.state.temperature_K,
            ioff_target_uA_per_um=self.state.ioff_target_uA_per_um, vdd_V=self.state.vdd_V)
