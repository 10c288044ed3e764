"""The explorer page of one browser session: `Explorer`, a `pn.viewable.Viewer`.

The page puts together, each in its own module:

* the settings, `app.state.ExplorerState` (UI-free, with its enable rules);
* the session's work, `app.jobs.SessionJobs` and `app.pin_jobs.PinJobs` (UI-free: worker
  threads, generations that drop stale results, the last results);
* the views: the sidebar (`app.controls`), the plots and figures of merit
  (`app.results_view`), the pinned designs (`app.pin_view`), the snapshot card
  (`app.snapshot_view`), and the texts and messages (`app.messages`).

Each concern watches the settings it depends on: the header follows the design, the
material warning the material, the page address the linked settings, the presentation
toggle the layout; any setting that changes a result asks the jobs for a new band diagram
and new curves (one request per batch of changes, e.g. an opened snapshot). Results
reach the page through `DocumentPost`: the event loop (never a worker thread) schedules
them with ``doc.add_next_tick_callback``, and each runs under one ``hold`` so that an
update leaves as one message.

With ``background=False`` (tests, scripts) every computation runs at once in the
calling thread.
"""

from __future__ import annotations

import importlib.resources
import logging
import threading
import weakref
from collections.abc import Callable
from pathlib import Path
from typing import Any

import panel as pn
import param
from bokeh.models import CustomJS
from panel.io.document import hold
from panel.io.state import set_curdoc

from sub60.app.controls import SIDEBAR_WIDTH, Controls
from sub60.app.jobs import SessionJobs, shared_simulator
from sub60.app.material_card import MaterialCard
from sub60.app.measured_view import MeasuredCard
from sub60.app.messages import CAUTION, TITLE, MessageBoard, header_html, html_escape, value_message
from sub60.app.pin_jobs import PinJobs
from sub60.app.pin_view import PinView
from sub60.app.pinning import Pin, PinBoard
from sub60.app.results_view import ResultsView
from sub60.app.sharing import (
    LINKED_PARAMETERS,
    query_of_search,
    updated_search,
    updates_from_query,
)
from sub60.app.snapshot_schema import SnapshotSettings
from sub60.app.snapshot_view import SnapshotView
from sub60.app.state import (
    COMPUTED_PARAMETERS,
    DESIGN_PARAMETERS,
    MODEL_PARAMETERS,
    ExplorerState,
)
from sub60.app.sweep_view import SweepView
from sub60.app.whatif_bar import WhatIfBar
from sub60.physics import check_tunnelling_material

__all__ = ["CAUTION", "SIDEBAR_WIDTH", "TITLE", "Explorer", "create_app", "stylesheet"]

log = logging.getLogger("sub60.app")

ASSETS = Path(str(importlib.resources.files("sub60.assets")))

#: Every live `Explorer` (weak: for tests and diagnostics counting open sessions).
LIVE_EXPLORERS: weakref.WeakSet = weakref.WeakSet()


def stylesheet() -> str:
    """The explorer's stylesheet (assets/style.css), empty if missing."""
    try:
        return (ASSETS / "style.css").read_text(encoding="utf-8")
    except OSError:
        return ""



#: The P key (outside a text box or list) toggles the presentation mode, as the button does.
PRESENT_KEY_JS = """
if (!window.sub60PresentKey) {
  window.sub60PresentKey = true;
  document.addEventListener('keydown', (e) => {
    if ((e.key !== 'p' && e.key !== 'P') || e.ctrlKey || e.metaKey || e.altKey) { return; }
    const t = e.composedPath()[0];
    if (t && (['INPUT', 'TEXTAREA', 'SELECT'].includes(t.tagName) || t.isContentEditable)) {
      return;
    }
    for (const m of Bokeh.documents[0]._all_models.values()) {
      if (Array.isArray(m.css_classes) && m.css_classes.includes('presentation-toggle')) {
        m.active = !m.active;
        return;
      }
    }
  });
}
"""

#: The presentation toggle's looks, applied in the browser at the click (or P key) without
#: waiting for the server: the page's element takes the css class 'presenting'; the page's
#: stylesheet (`PAGE_CSS`) then hides the controls and sets the CSS variables that the
#: header, metrics and status text (assets/style.css) and the figures' rows read. The
#: page model takes the class silently (no change event in the browser): a change of a
#: model's classes makes Bokeh lay the whole page out again, model by model, with a style
#: read of every figure's lines and texts after each write (seconds a toggle). The browser
#: lays the page out by its stylesheets alone, as when the window is resized, and each
#: figure whose size changed redraws itself. The server's watcher
#: (`Explorer._on_presentation`) sets the same class on the model afterwards: the value the
#: browser holds already, so nothing changes there.
PRESENT_LOOKS_JS = """
const on = source.active;
const rest = page.css_classes.filter((c) => c !== 'presenting');
page.setv({css_classes: on ? [...rest, 'presenting'] : rest}, {silent: true});
const view = Bokeh.index.find_one(page);
if (view != null) { view.el.classList.toggle('presenting', on); }
"""
#: The page row's own stylesheet: in presentation the controls are not shown, the header,
#: metrics and status text grow (variables inherited by every pane below it: their
#: defaults in assets/style.css are the desk's sizes), and the figures' rows take their
#: heights from the window's (CSS variables inherited by every figure below:
#: `ExplorerFigures.DESK_ROW_HEIGHTS` at the desk). A window under 900 px tall (1280x720)
#: shows the first row under the header, what-if row and metrics, and the second row a
#: screen of its own under the what-if row when scrolled; a taller one (1920x1080) shows
#: both rows, and the plot options between them, on the first screen.
PAGE_CSS = """
:host(.presenting) .sub60-sidebar { display: none !important; }
:host(.presenting) {
  --sub60-row1-h: max(300px, calc(100vh - 366px));
  --sub60-row2-h: max(300px, calc(100vh - 75px));
  --sub60-title-size: 28px;
  --sub60-summary-size: 16px;
  --sub60-caution-size: 15px;
  --sub60-caution-long: none;
  --sub60-caution-short: block;
  --sub60-metrics-size: 19px;
  --sub60-metrics-head-size: 16px;
  --sub60-metrics-note-size: 12px;
  --sub60-badge-size: 15px;
  --sub60-badge-padding: 1px 6px;
  --sub60-status-size: 15px;
}
@media (min-height: 900px) {
  :host(.presenting) {
    --sub60-row1-h: max(300px, calc((100vh - 385px) / 2));
    --sub60-row2-h: max(300px, calc((100vh - 385px) / 2));
  }
}
"""


class Explorer(pn.viewable.Viewer):
    """One session of the explorer: settings, work and views of one browser page.

    Parameters
    ----------
    state : settings to start from (default: the default design).
    simulator : the `physics.simulate.Simulator` to use (default: the one shared by all
        sessions, `app.jobs.shared_simulator`: one bounded cache of solved points).
    background : compute on worker threads (server) or at once (tests).

    Notes
    -----
    When the served session ends (the page closed, or never connected and expired),
    `close` releases what the session holds: its work stops, its results are dropped,
    and Panel's registries no longer refer to its components.
    """

    state = param.ClassSelector(class_=ExplorerState, constant=True,
                                doc="The settings of this session.")

    def __init__(self, state: ExplorerState | None = None, simulator: Any = None,
                 background: bool = True) -> None:
        super().__init__(state=state or ExplorerState())
        self.background = background
        self._doc = None
        self._poster: DocumentPost | None = None  # posts results to the served document
        self._location = None
        self._importing = False  # the settings change because a file or demo was opened
        css = [stylesheet()]
        self.messages = MessageBoard()
        self.results = ResultsView(self.state, self.messages, css)
        self.figures = self.results.figures
        self.jobs = SessionJobs(
            self.state, simulator or shared_simulator(model=self.state.tunnelling_model),
            self.results, background)
        self.results.jobs = self.jobs
        self.pin_view = PinView(self.state, self.figures, css, self._post)
        self.pins: PinBoard = PinBoard()
        self.pin_jobs = PinJobs(self.jobs, self.pins, self.pin_view)
        self.pin_view.work = self.pin_jobs
        self.results.pins = self.pin_jobs  # pinned curves on the Ion–Ioff trade-off
        self.pin_view.on_curves = self.results.refresh_tradeoff
        self.pin_view.changed()
        self.snapshot_view = SnapshotView(self.jobs, self.pins, self.messages, css, self._post,
                                          self.apply_settings,
                                          measured=lambda: self.measured_card.snapshot())
        self.snapshots = self.snapshot_view.controls
        self.controls = Controls(self.state, css, self.snapshots, self.messages)
        self.sidebar = self.controls.sidebar
        self.widgets = self.controls.widgets
        self._build_panes(css)
        self._watchers: list = []
        self._watch()
        LIVE_EXPLORERS.add(self)

    @classmethod
    def from_query(cls, query: dict[str, str], **kw: Any) -> Explorer:
        """An explorer at the settings of a page address's query (see `app.sharing`);
        values that cannot be used are ignored with a message naming their control."""
        state = ExplorerState()
        updates, problems = updates_from_query(query)
        state.param.update(**updates)
        explorer = cls(state, **kw)
        if problems:
            explorer.messages.set("link", "**Some settings of the page address were ignored** "
                                  "(the defaults are shown for them):\n\n"
                                  + "\n".join(f"- {html_escape(p)}" for p in problems))
        return explorer

    # ------------------------------------------------------------------ page
    def _build_panes(self, css: list[str]) -> None:
        self.header = pn.pane.HTML(header_html(self.state), css_classes=["sub60-header"],
                                   stylesheets=css, sizing_mode="stretch_width", margin=(4, 8))
        self.alert = pn.pane.Alert("", alert_type="danger", visible=False,
                                   css_classes=["sub60-error"], sizing_mode="stretch_width",
                                   margin=(2, 8))
        self.material_warning = pn.pane.Alert("", alert_type="warning", visible=False,
                                              css_classes=["sub60-material-warning"],
                                              sizing_mode="stretch_width", margin=(2, 8))
        self.presentation_toggle = pn.widgets.Toggle.from_param(
            self.state.param.presentation, color="default", width=170, margin=(6, 8),
            css_classes=["presentation-toggle"])
        # material card: every parameter of the body material with its source
        self.material_card = MaterialCard(self.state, css)
        self.measured_card = MeasuredCard(self.state, css, self._post,  # app.measured_view
                                          on_data=self.results.show_measured)
        # the most used settings in one row above the results, shown in both modes (the
        # presentation mode hides only the sidebar): app.whatif_bar
        self.whatif = WhatIfBar(self.state, self.messages, css)
        r = self.results
        top = pn.Row(self.header,
                     pn.Column(self.presentation_toggle, r.progress, r.status,
                               width=280, margin=0),
                     sizing_mode="stretch_width", margin=0)
        self.main = pn.Column(top, self.whatif.view, r.metrics,
                              r.breakdown,  # breakdown: app.nonideal_view
                              self.material_warning, r.notes, self.alert, r.plots,
                              self.material_card.view, self.measured_card.view,
                              self.pin_view.compare.view, sizing_mode="stretch_width",
                              css_classes=["sub60-main"], margin=0)
        # design sweeps in a tab of their own (app.sweep_view, made when first asked for:
        # `sweep_view`); a picked design comes back here. The tab's contents are made and
        # reach the browser when the tab is first shown (its hundred-odd models need not
        # slow every page's opening)
        self._css = css
        self._sweep_view: SweepView | None = None
        self._sweep_slot = pn.Column(sizing_mode="stretch_width", margin=0)
        self.tabs = pn.Tabs(("Explorer", self.main), ("Design sweeps", self._sweep_slot),
                            sizing_mode="stretch_width", margin=0, css_classes=["sub60-tabs"],
                            stylesheets=css)
        self.tabs.param.watch(self._on_tab, "active")
        self._page = pn.Row(self.sidebar, self.tabs, sizing_mode="stretch_width", margin=0,
                            css_classes=["sub60-page"], stylesheets=[PAGE_CSS])
        self.presentation_toggle.jscallback(args={"page": self._page}, value=PRESENT_LOOKS_JS)

    def _watch(self) -> None:
        """One watcher per concern (each called once per batch of changes)."""
        watch = self.state.param.watch
        self._watchers = [
            (self.state, watch(self._on_presentation, "presentation")),
            (self.state, watch(self._refresh_header,
                               [*DESIGN_PARAMETERS, *MODEL_PARAMETERS])),
            (self.state, watch(self._refresh_material_warning, ["material", "composition_x"])),
            (self.state, watch(self._sync_url, list(LINKED_PARAMETERS))),
            (self.state, watch(self._on_settings, list(COMPUTED_PARAMETERS))),
            (self.messages, self.messages.param.watch(self._refresh_alert, "text")),
        ]

    def __panel__(self) -> pn.viewable.Viewable:
        """The page of this session; starts the first computations."""
        self._doc = pn.state.curdoc if self.background else None
        if self._doc is not None:
            self._poster = DocumentPost(self._doc)
            self.jobs.post = self._post
        self._refresh_material_warning()
        served = self._doc is not None and self._doc.session_context is not None
        if served:
            self._location = pn.state.location
            self._doc.js_on_event("document_ready", CustomJS(code=PRESENT_KEY_JS))
        design = self._design_or_error()
        if design is not None:
            self.jobs.solve_bias_now(design)
        if served:
            pn.state.onload(self._sync_url)  # the browser's address takes it once loaded
            pn.state.onload(self._request_sweeps)
            pn.state.on_session_destroyed(self._session_destroyed)
        else:
            self._request_sweeps()
        return self._page

    def panel(self) -> pn.viewable.Viewable:
        """The page of this session (same as `__panel__`)."""
        return self.__panel__()

    def close(self) -> None:
        """End this session: its work stops (queued points skipped, a running sweep
        stopped before its next point, nothing more delivered), its results and
        watchers are dropped. Safe to call more than once."""
        self.jobs.close()
        self.pin_jobs.close()
        if self._sweep_view is not None:
            self._sweep_view.close()
        self.material_card.close()
        self.measured_card.close()
        self.whatif.close()
        for owner, watcher in self._watchers:
            try:
                owner.param.unwatch(watcher)
            except Exception:  # already gone
                pass
        self._watchers = []
        self._doc = None
        self._poster = None
        self._location = None

    def _session_destroyed(self, _context: Any) -> None:
        """The served session ended (Bokeh's session-destroyed callback)."""
        doc = self._doc
        self.close()
        if doc is not None:
            release_document(doc, self._page)

    @property
    def simulator(self) -> Any:
        """The session's `physics.simulate.Simulator`."""
        return self.jobs.simulator

    @property
    def metrics(self) -> pn.pane.HTML:
        """The figures-of-merit strip."""
        return self.results.metrics

    @property
    def error_text(self) -> str:
        """The message shown in the page, '' when none."""
        return self.alert.object if self.alert.visible else ""

    # ------------------------------------------------------------------ watchers
    def _on_presentation(self, event) -> None:
        """The controls hide (or show) and the header, metrics and status text grow: the
        page takes the css class 'presenting' (the browser has done so at the click
        already: `PRESENT_LOOKS_JS`; its stylesheet `PAGE_CSS` sets what the panes below
        read). No other model changes: the figures stretch over the width they get
        (`ExplorerFigures.WIDTH_SHARES`) and over their rows' heights, so the browser
        resizes them all in the one layout of the page (resizing them one by one from
        here made the browser lay the page out for each, and so did a class on each pane)."""
        on = bool(event.new)
        page = self._page
        page.css_classes = [c for c in page.css_classes if c != "presenting"] + (
            ["presenting"] if on else [])

    @property
    def sweep_view(self) -> SweepView:
        """The design-sweeps tab's view (made at the first call)."""
        if self._sweep_view is None:
            sim = self.jobs
            self._sweep_view = SweepView(
                self.state, lambda: (sim.simulator.resolution, sim.simulator.model),
                self._css, self._post, on_load=lambda: setattr(self.tabs, "active", 0))
        return self._sweep_view

    @property
    def presenting(self) -> bool:
        """Whether the page shows the presentation look (controls hidden)."""
        return "presenting" in self._page.css_classes

    def _on_tab(self, event) -> None:
        if event.new == 1 and not self._sweep_slot.objects:
            self._sweep_slot.objects = [self.sweep_view.view]

    def _refresh_header(self, *_events) -> None:
        self.header.object = header_html(self.state)

    def _refresh_material_warning(self, *_events) -> None:
        try:
            record = self.state.design().semiconductor
        except ValueError:  # the design's own message is shown elsewhere
            record = None
        text = check_tunnelling_material(record) if record is not None else None
        self.material_warning.object = text or ""
        self.material_warning.visible = bool(text)

    def _refresh_alert(self, event) -> None:
        self.alert.object = event.new
        self.alert.visible = bool(event.new)

    def _sync_url(self, *events) -> None:
        """Write the linked settings into the page address (all, or the changed ones)."""
        if self._location is None:
            return
        names = {e.name for e in events} if events else None
        search = updated_search(self._location.search, self.state, names)
        if search != self._location.search:
            self._location.search = search

    def _on_settings(self, *events) -> None:
        """A setting that changes a result: new band diagram, curves and pinned results."""
        names = sorted(e.name for e in events)
        self.results.last_changed = names[0]
        if not self._importing:  # a change by hand: the view is no longer the file's
            self.messages.clear("link")
            self.snapshot_view.forget_demo()
        if self.jobs.transfer_stale():  # dimmed at once, not only when the worker starts
            self.results.show_metrics(stale=True)
        self._request_bias()
        self._request_sweeps()
        self.pin_jobs.request()
        self.pin_view.refresh()

    # ------------------------------------------------------------------ requests
    def _design_or_error(self):
        """The present design, or None with its message (pinning and export disabled)."""
        try:
            design = self.state.design()
        except ValueError as exc:
            self.messages.set("design", value_message(exc))
            self._enable_design_actions(False)
            return None
        self.messages.clear("design")
        self._enable_design_actions(True)
        return design

    def _enable_design_actions(self, valid: bool) -> None:
        self.snapshot_view.enable(valid)
        self.pin_view.enable(valid)

    def _request_bias(self) -> None:
        design = self._design_or_error()
        if design is not None:
            self.jobs.request_bias(design)

    def _request_sweeps(self) -> None:
        design = self._design_or_error()
        if design is not None:
            self.jobs.request_sweeps(design)

    # ------------------------------------------------------------------ snapshots
    def apply_settings(self, settings: SnapshotSettings, updates: dict) -> None:
        """Every control (the tunnelling model among them), the grid resolution, the
        pinned designs and the measured curves with their fit (when the snapshot holds
        them) of a snapshot, in one update of the state (one recomputation)."""
        m = settings.model
        sim = self.jobs.simulator
        new_model = m.resolution != sim.resolution
        if new_model:  # the state's tunnelling model follows with the updates
            self.jobs.use_simulator(shared_simulator(m.resolution, sim.model))
        self.pin_view.replace_all(settings.pinned, settings.transfer_sweep)
        if settings.measured is not None:  # a file without one leaves the card as it is
            self.measured_card.restore(settings.measured)
        before = (self.jobs.bias_generation, self.jobs.sweep_generation)
        self._importing = True
        try:
            self.state.param.update(**updates)
        finally:
            self._importing = False
        if before == (self.jobs.bias_generation, self.jobs.sweep_generation):
            # the controls were there already: only the model or the pins are new
            if new_model:
                self._request_bias()
                self._request_sweeps()
            self.pin_jobs.request()

    def export_bytes(self, *args: Any, **kw: Any) -> tuple[str, bytes]:
        """(file name, zip bytes) of a snapshot of the page (see `SnapshotView`)."""
        return self.snapshot_view.export_bytes(*args, **kw)

    def import_bytes(self, data: bytes, filename: str = "the file") -> bool:
        """Open a snapshot into the page (see `SnapshotView.import_bytes`)."""
        return self.snapshot_view.import_bytes(data, filename)

    def load_preset(self, name: str) -> bool:
        """Put a demo design into the page (see `SnapshotView.load_preset`)."""
        return self.snapshot_view.load_preset(name)

    # ------------------------------------------------------------------ pinned designs
    def pin_present(self, name: str | None = None) -> Pin | None:
        """Pin the present design (see `PinView.pin_present`)."""
        return self.pin_view.pin_present(name)

    def rename_pin(self, slot: int, name: str) -> Pin | None:
        """Rename a pinned design (see `PinView.rename_pin`)."""
        return self.pin_view.rename_pin(slot, name)

    def unpin(self, slot: int) -> None:
        """Take a pinned design away (see `PinView.unpin`)."""
        self.pin_view.unpin(slot)

    def load_pin(self, slot: int) -> None:
        """Put a pinned design into the controls (see `PinView.load_pin`)."""
        self.pin_view.load_pin(slot)

    def comparison(self) -> list:
        """The rows of the comparison table (see `PinJobs.comparison`)."""
        return self.pin_jobs.comparison()

    # ------------------------------------------------------------------ threads
    def _post(self, fn: Callable[..., Any], *args: Any) -> None:
        """Run fn(*args) on the document's event loop (or at once without a server)."""
        poster = self._poster
        if poster is None:
            fn(*args)
        else:
            poster(fn, *args)


class DocumentPost:
    """Runs ``fn(*args)`` on a served document's event loop, under the document's lock and
    one ``hold`` (an update's changes leave as one message), in the order posted.

    Worker threads never touch the document: ``doc.add_next_tick_callback`` records a
    document event, and while the event loop holds the document (every update does) that
    event goes into the hold's list, which the loop copies and empties when the hold ends;
    an event added from another thread in between was lost or left until the next hold
    (results that arrive at once: the page's last update, e.g. the complete output curves,
    never ran). A post from another thread hands the scheduling to the event loop
    (``IOLoop.add_callback`` is thread-safe and touches no document); both steps keep the
    order of the posts.

    Parameters
    ----------
    doc : the session's Bokeh document.
    loop : its event loop (default: the current one; create the poster on the loop's
        thread).
    """

    def __init__(self, doc: Any, loop: Any = None) -> None:
        from tornado.ioloop import IOLoop

        self.doc = doc
        # no running loop (a document not served): Bokeh schedules its callbacks itself
        self.loop = loop if loop is not None else IOLoop.current(instance=False)
        self.thread = threading.get_ident()  # the event loop's thread

    def __call__(self, fn: Callable[..., Any], *args: Any) -> None:
        doc = self.doc

        def run() -> None:
            with set_curdoc(doc), hold(doc):  # the update's changes leave as one message
                try:
                    fn(*args)
                except Exception:  # the page must survive a bad update
                    log.exception("sub60: page update failed")
            if self.loop is not None:  # the message may be left in Panel's write queue
                try:
                    for delay in STRANDED_WRITE_CHECKS_S:
                        self.loop.call_later(delay, resend_stranded_writes, doc)
                except RuntimeError:  # the loop is closed: the server is stopping
                    pass

        if self.loop is None or threading.get_ident() == self.thread:
            self._schedule(run)
            return
        try:
            self.loop.add_callback(self._schedule, run)
        except Exception:  # the loop is closed: the server is stopping
            log.debug("sub60: event loop gone, update dropped")

    def _schedule(self, run: Callable[[], None]) -> None:
        try:
            self.doc.add_next_tick_callback(run)
        except Exception:  # session already closed
            log.debug("sub60: session gone, update dropped")


#: Times after a page update at which messages left in Panel's write queue are sent [s]:
#: Panel's write task usually ends within a few ms of the update (common practice, no
#: source: a few checks spread over a second, each two dictionary lookups).
STRANDED_WRITE_CHECKS_S = (0.02, 0.25, 1.0)


def resend_stranded_writes(doc: Any) -> bool:
    """Send the messages of ``doc`` that Panel's write queue left behind; True when there
    were some.

    Panel (1.9) queues a page's messages while its websocket is busy (``_WRITE_MSGS``,
    flag ``_WRITE_BLOCK``) and a write task sends them. A task that ends clears the flag;
    a message queued while it awaited its last write got a new task, but that task finds
    the flag cleared and returns without sending. The message then waits for the next
    update of the page, and when it was the last one (the page's output curves arriving
    right after the transfer curves) the page never completes. Here such messages get the
    flag and a write task again, as Panel's own queueing gives them
    (`tests/app/test_document_post.py` makes the race happen)."""
    try:
        from panel.io import document as panel_document

        queued, writing = panel_document._WRITE_MSGS, panel_document._WRITE_BLOCK
        write, dispatch = panel_document._dispatch_msgs, panel_document._dispatch_write_task
    except (ImportError, AttributeError):  # another Panel: nothing of this to mend
        return False
    if doc not in queued or doc in writing:
        return False
    log.debug("sub60: page messages left in Panel's write queue, sent now")
    writing[doc] = True
    dispatch(doc, write, doc)
    return True


def release_document(doc: Any, page: pn.viewable.Viewable) -> None:
    """Drop what Panel's process-wide registries hold of an ended session: its entries
    in the view registry (kept for sessions that never connected) and the links whose
    source or target is one of the page's components (the editable sliders' links,
    which would otherwise keep every closed page alive)."""
    from panel.io.state import state
    from panel.links import Callback

    for ref, (pane, root, vdoc, _comm) in list(state._views.items()):
        if vdoc is doc:
            try:
                pane._cleanup(root)
            except Exception:  # a half-built page: drop it all the same
                log.debug("sub60: cleanup of an ended page failed", exc_info=True)
            state._views.pop(ref, None)
    mine = {id(o) for o in page.select()}
    for source, links in list(Callback.registry.items()):
        if id(source) in mine or any(id(getattr(k, "target", None)) in mine for k in links):
            Callback.registry.pop(source, None)


def create_app() -> pn.viewable.Viewable:
    """A fresh explorer page (one per browser session), at the settings of the page
    address's query string when it has one."""
    loc = pn.state.location
    search = loc.search if loc is not None and loc.search else ""
    return Explorer.from_query(query_of_search(search)).panel()
