"""The session's job controller without a browser: stale results never reach the page.

`SessionJobs` runs on real worker threads here; the page's event loop is played by a
queue that the test drains (what ``doc.add_next_tick_callback`` does in a served page).
The simulator is a stand-in that records its calls and can be held at a point, so the
order of events is fixed by the test, not by timing. The rule checked is the controller's
own (no source): a result is shown only when no newer request was made since.
"""

from __future__ import annotations

import queue
import threading
from types import SimpleNamespace

import numpy as np
import pytest

from sub60.app.jobs import LIVE_SESSIONS, PriorityGate, SessionJobs
from sub60.app.pin_jobs import PinJobs
from sub60.app.pinning import PinBoard
from sub60.app.snapshot_schema import TransferSweep
from sub60.app.state import ExplorerState
from sub60.physics.design import Design

TIMEOUT_S = 30.0  # bound on waiting for a worker (a hang fails the test instead of it)


class FakeSimulator:
    """Records calls; ``hold`` makes the next solve wait until ``release``."""

    resolution = "fast"
    model = "wkb"

    def __init__(self) -> None:
        self.bias_calls: list[tuple] = []
        self.curve_calls: list[tuple] = []
        self.output_calls: list[float] = []
        self._gate = threading.Event()
        self._gate.set()
        self.waiting = threading.Event()

    def hold(self) -> None:
        self._gate.clear()
        self.waiting.clear()

    def release(self) -> None:
        self._gate.set()

    def _pause(self) -> None:
        self.waiting.set()
        assert self._gate.wait(TIMEOUT_S), "the test never released the solver"

    def solve_bias(self, design, vg, vd, initial=None):
        self.bias_calls.append((design, vg, vd))
        self._pause()
        return SimpleNamespace(design=design, vg_V=vg, vd_V=vd, electrostatics=None,
                               current_uA_per_um=1.0, pair_currents_uA_per_um={})

    def transfer_curve(self, device, vg, vd, ioff_target_uA_per_um, vdd_V, progress=None,
                       cancelled=None, slots=None):
        self.curve_calls.append((device, float(vd), ioff_target_uA_per_um))
        self._pause()
        if cancelled is not None and cancelled():
            raise InterruptedError
        ids = np.ones_like(vg)
        metrics = SimpleNamespace(voff_V=SimpleNamespace(value=None))
        return SimpleNamespace(vg_V=vg, id_uA_per_um=ids, metrics=metrics, design=device)

    def output_curve(self, design, vg, vds, slots=None):
        self.output_calls.append(vg)
        return SimpleNamespace(vg_V=vg, vd_V=vds)


class Recorder:
    """A listener that records what would be drawn."""

    def __init__(self) -> None:
        self.events: list[tuple] = []

    def __getattr__(self, name):
        if name.startswith("_"):
            raise AttributeError(name)
        return lambda *args: self.events.append((name, *args))

    def named(self, name: str) -> list[tuple]:
        return [e for e in self.events if e[0] == name]


class Page:
    """The document's event loop: posted deliveries wait in a queue until drained."""

    def __init__(self) -> None:
        self.queue: queue.Queue = queue.Queue()

    def post(self, fn, *args) -> None:
        self.queue.put((fn, args))

    def drain(self) -> int:
        n = 0
        while True:
            try:
                fn, args = self.queue.get_nowait()
            except queue.Empty:
                return n
            fn(*args)
            n += 1


def _session(background: bool = True):
    state = ExplorerState(vg_points=11)
    sim, listener, page = FakeSimulator(), Recorder(), Page()
    jobs = SessionJobs(state, sim, listener, background=background)
    if background:
        jobs.post = page.post
    return state, sim, listener, page, jobs


def _settle(jobs: SessionJobs, *workers: str) -> None:
    """Wait until the workers ran everything queued so far (one thread each, FIFO)."""
    for w in workers:
        jobs.executor(w).submit(lambda: None).result(timeout=TIMEOUT_S)


def test_a_bias_point_superseded_while_solving_is_never_drawn():
    state, sim, listener, page, jobs = _session()
    design = state.design()
    sim.hold()
    jobs.request_bias(design)            # generation 1 starts solving and waits
    assert sim.waiting.wait(TIMEOUT_S)
    state.vg_V = 0.1
    jobs.request_bias(design)            # generation 2, queued behind it
    state.vg_V = 0.2
    jobs.request_bias(design)            # generation 3: generation 2 is skipped unsolved
    assert not jobs.bias_idle.is_set()   # the sweep worker would wait for the page
    sim.release()
    _settle(jobs, "bias")
    page.drain()
    assert [c[1] for c in sim.bias_calls] == [0.3, 0.2]  # generation 2 was never solved
    shown = listener.named("bias_solved")
    assert [e[1].vg_V for e in shown] == [0.2]           # only the newest is drawn
    assert jobs.last_bias.vg_V == 0.2 and jobs.bias_idle.is_set()
    jobs.close()


def test_a_superseded_sweep_stops_and_sends_nothing():
    state, sim, listener, page, jobs = _session()
    sim.hold()
    jobs.request_sweeps(state.design())              # generation 1 waits in its first curve
    assert sim.waiting.wait(TIMEOUT_S)
    state.body_thickness_nm = 9.0
    jobs.request_sweeps(state.design())              # generation 2 supersedes it
    sim.release()
    _settle(jobs, "sweep")
    page.drain()
    # generation 1 asked for the tunnel FET only, then stopped at the cancelled check
    bodies = [c[0].body_thickness_nm for c in sim.curve_calls]
    assert bodies == [7.0, 9.0, 9.0]
    started = listener.named("sweep_started")
    assert len(started) == 1                         # generation 1's start was dropped
    solved = listener.named("transfer_solved")
    assert [(e[1], e[2].design.body_thickness_nm) for e in solved] == [("tfet", 9.0),
                                                                       ("twin", 9.0)]
    assert all(e[3].design.body_thickness_nm == 9.0 for e in solved)  # the request's design
    assert jobs.shown_transfer == state.transfer_key() and not jobs.transfer_stale()
    assert len(listener.named("sweep_finished")) == 1
    jobs.close()


def test_only_what_changed_is_recomputed():
    state, sim, listener, _page, jobs = _session(background=False)
    jobs.request_sweeps(state.design())
    assert len(sim.curve_calls) == 2 and len(sim.output_calls) == 4
    assert jobs.present_curve() is jobs.curves["tfet"]
    state.vg_V = 0.4          # the transfer curves do not depend on Vg: outputs only
    jobs.request_sweeps(state.design())
    assert len(sim.curve_calls) == 2 and len(sim.output_calls) == 8
    assert listener.named("sweep_started")[-1][1:] == (False, True, 4 * 13)
    state.vdd_V = 0.4         # a metric setting: transfer curves again, outputs kept
    assert jobs.transfer_stale() and jobs.present_curve() is None
    jobs.request_sweeps(state.design())
    assert len(sim.curve_calls) == 4 and len(sim.output_calls) == 8


def test_results_in_flight_after_close_are_dropped():
    state, sim, listener, page, jobs = _session()
    sim.hold()
    jobs.request_bias(state.design())
    assert sim.waiting.wait(TIMEOUT_S)
    pool = jobs.executor("bias")
    jobs.close()
    sim.release()
    pool.shutdown(wait=True)  # the job in flight finishes: nothing reaches the page
    assert page.drain() == 0
    assert listener.named("bias_solved") == []


def test_a_pinned_result_of_a_removed_or_changed_pin_is_dropped():
    state, sim, _listener, page, jobs = _session()
    board, pin_listener = PinBoard(), Recorder()
    pins = PinJobs(jobs, board, pin_listener)
    sweep = TransferSweep(-0.4, 0.6, 11, 0.3)
    a = board.add("A", Design(body_thickness_nm=8.0), sweep)
    b = board.add("B", Design(body_thickness_nm=9.0), sweep)
    pins.request()
    _settle(jobs, "bias", "sweep")
    board.remove(a.slot)
    pins.forget(a.slot)
    state.ioff_log10_uA_per_um = -4.0  # B's curve was computed at the old Ioff target
    page.drain()
    bands = pin_listener.named("pin_band_solved")
    assert [e[1].name for e in bands] == ["B"]       # A was unpinned meanwhile
    assert pin_listener.named("pin_curve_solved") == []  # both curves are stale
    pins.request()                                   # B's curve again, at the new target
    _settle(jobs, "sweep")
    page.drain()
    curves = pin_listener.named("pin_curve_solved")
    assert [e[1].name for e in curves] == ["B"]
    assert sim.curve_calls[-1][2] == pytest.approx(1e-4)
    assert pins.fresh_curve(b) is not None and pins.fresh_curve(a) is None
    jobs.close()


class PointCounter(FakeSimulator):
    """A stand-in whose sweeps go point by point like `Simulator.transfer_curve` (asking
    ``cancelled()`` before each point, solving it in a slot) and count the points."""

    def __init__(self) -> None:
        super().__init__()
        self.points = 0
        self.first_point = threading.Event()

    def transfer_curve(self, device, vg, vd, ioff_target_uA_per_um, vdd_V, progress=None,
                       cancelled=None, slots=None):
        for _ in vg:
            if cancelled is not None and cancelled():
                raise InterruptedError
            with slots:
                self.points += 1
                self.first_point.set()
                self._pause()
        return super().transfer_curve(device, vg, vd, ioff_target_uA_per_um, vdd_V)

    def output_curve(self, design, vg, vds, slots=None):
        self.points += len(vds)
        return super().output_curve(design, vg, vds)


def test_a_closed_session_stops_computing_at_once():
    """Closing mid-sweep: the point being solved finishes, no other point is solved,
    queued bias points and pin curves are skipped, nothing is delivered."""
    state = ExplorerState(vg_points=11)
    sim, listener, page = PointCounter(), Recorder(), Page()
    jobs = SessionJobs(state, sim, listener, background=True, gate=PriorityGate(2))
    jobs.post = page.post
    board = PinBoard()
    pins = PinJobs(jobs, board, Recorder())
    board.add("A", Design(body_thickness_nm=8.0), TransferSweep(-0.4, 0.6, 11, 0.3))
    sim.hold()
    jobs.request_sweeps(state.design())
    assert sim.first_point.wait(TIMEOUT_S)
    jobs.request_bias(state.design())   # queued behind nothing, but the solver is held
    pins.request()                       # pin band edges and a pin curve, queued
    page.drain()
    solved = sim.points
    bias_calls = len(sim.bias_calls)
    jobs.close()
    pins.close()
    sim.release()
    for pool in jobs._pools.values():
        pool.shutdown(wait=True)
    assert sim.points == solved          # only the point in flight when it closed
    assert len(sim.bias_calls) <= bias_calls + 1  # at most the bias point in flight
    assert len(sim.curve_calls) == 0     # no sweep completed
    assert page.drain() == 0             # nothing delivered to the closed page
    jobs.request_bias(state.design())    # a request after close is ignored
    assert len(sim.bias_calls) <= bias_calls + 1


def test_a_closed_session_is_no_longer_referenced():
    import gc

    state, _sim, _listener, page, jobs = _session()
    jobs.request_sweeps(state.design())
    _settle(jobs, "sweep")
    jobs.close(wait=True)
    page.drain()  # deliveries posted before the close hold the session until run
    gc.collect()  # sessions of earlier tests left for the collector are not counted
    n = len(LIVE_SESSIONS)
    del jobs
    gc.collect()
    assert len(LIVE_SESSIONS) == n - 1


def test_bias_points_take_a_slot_before_waiting_sweep_points():
    """The shared gate: when a slot frees, a waiting bias point gets it before sweep
    points that waited longer; a page's first band diagram before both."""
    gate = PriorityGate(1)
    order: list[str] = []
    gate.acquire(PriorityGate.SWEEP)       # the only slot is busy

    def take(name: str, priority: int) -> threading.Thread:
        def run() -> None:
            with gate.hold(priority):
                order.append(name)
        t = threading.Thread(target=run)
        t.start()
        return t

    threads = []
    for name, priority in [("sweep-1", PriorityGate.SWEEP), ("sweep-2", PriorityGate.SWEEP),
                           ("bias", PriorityGate.BIAS), ("first", PriorityGate.FIRST)]:
        n = len(gate.waiting())
        threads.append(take(name, priority))
        while len(gate.waiting()) == n:  # polling the gate's own queue, not a fixed wait
            threading.Event().wait(0.001)
    gate.release()
    for t in threads:
        t.join(TIMEOUT_S)
    assert order == ["first", "bias", "sweep-1", "sweep-2"]
    with gate:                             # a plain `with` waits as a sweep point
        assert gate.waiting() == []


def test_deliveries_run_out_of_order_never_show_an_older_result():
    """The page's event loop may run two posted deliveries out of order (seen in the
    browser with curves from the shared cache: the 4-curve output update, then the
    2-curve one). An older partial result never replaces a newer one, and "sweep
    started" after a result of the same sweep is dropped (else "updating" stays)."""
    state, sim, listener, page, jobs = _session()
    design = state.design()
    jobs.request_sweeps(design)
    _settle(jobs, "sweep")
    posted = []
    while True:
        try:
            posted.append(page.queue.get_nowait())
        except queue.Empty:
            break
    # run them in reverse: the newest first
    for fn, args in reversed(posted):
        fn(*args)
    started = listener.named("sweep_started")
    assert not started  # it came after the results of its own sweep
    outputs = listener.named("outputs_solved")
    assert len(outputs) == 1 and len(outputs[0][1]) == state.output_gate_voltages().size
    solved = listener.named("transfer_solved")
    assert sorted(e[1] for e in solved) == ["tfet", "twin"]  # each curve is its own stream
    # in order, everything is shown
    state.vg_V = 0.1
    state.body_thickness_nm = 8.0
    jobs.request_sweeps(state.design())
    _settle(jobs, "sweep")
    listener.events.clear()
    page.drain()
    assert listener.named("sweep_started") and len(listener.named("transfer_solved")) == 2


def test_an_unexpected_failure_in_a_sweep_is_told_to_the_page_not_left_updating():
    """A sweep that dies of anything (here a RuntimeError from the solver) ends with
    `sweep_failed`, so the page says so instead of keeping its 'updating…' titles."""
    state, sim, listener, page, jobs = _session(background=False)

    def broken(*args, **kwargs):
        raise RuntimeError("out of luck")

    sim.transfer_curve = broken
    jobs.request_sweeps(state.design())
    failed = listener.named("sweep_failed")
    assert len(failed) == 1 and isinstance(failed[0][1], RuntimeError)
    assert not listener.named("sweep_finished")


def _updating(listener: Recorder) -> dict[str, bool]:
    """Whether each plot's title would still say "updating…" after the events so far
    (`ResultsView`: set by a sweep's start, cleared by the complete curves or a failure)."""
    titles = {"transfer": False, "output": False}
    for e in listener.events:
        if e[0] == "sweep_started":
            titles["transfer"] |= e[1]
            titles["output"] |= e[2]
        elif e[0] == "transfer_solved" and e[1] == "twin":
            titles["transfer"] = False
        elif e[0] == "outputs_solved" and e[2]:
            titles["output"] = False
        elif e[0] == "sweep_failed":
            titles = {"transfer": False, "output": False}
    return titles


@pytest.mark.parametrize("knob", ["vg_V", "body_thickness_nm"])
def test_a_change_undone_before_its_curves_arrive_leaves_no_updating_title(knob):
    """A change whose sweep has started on the page (titles "updating…", partial curves
    possibly drawn) and is undone before its curves arrive: the page shows neither the
    old curves as if complete nor keeps "updating…" (seen as an output plot whose title
    stayed for good). Stated rule of the app, no source."""
    state, sim, listener, page, jobs = _session(background=False)
    jobs.post = page.post
    design = state.design()
    jobs.request_sweeps(design)
    page.drain()
    assert _updating(listener) == {"transfer": False, "output": False}
    old = getattr(state, knob)
    setattr(state, knob, old + (0.1 if knob == "vg_V" else 1.0))
    jobs.request_sweeps(state.design())
    fn, args = page.queue.get_nowait()  # only the new sweep's start reaches the page
    fn(*args)
    assert any(_updating(listener).values())
    setattr(state, knob, old)  # undone before the curves arrive
    jobs.request_sweeps(state.design())
    page.drain()
    assert _updating(listener) == {"transfer": False, "output": False}
    assert not jobs.transfer_stale() and jobs.shown_output == state.output_key()
