"""The background work of one explorer session: workers, generations, caches (no UI).

`SessionJobs` owns the session's simulator and its three single-thread workers:

* the *bias* worker solves one bias point (band diagram, J(E), T(E), 2D map) and the
  WKB and exact two-band T(E) of its main subband pair beside each other;
* the *sweep* worker computes the transfer curves (tunnel FET and MOSFET twin) and the
  output curves, streaming partial transfer curves at most every `STREAM_INTERVAL_S`;
* the *io* worker exports and verifies snapshots.

Every request takes a new *generation* number; a result whose generation is no longer
the newest is dropped, and a running sweep stops at its next point (the solver's
``cancelled`` callback). The sweep yields to a pending bias point, so that the band
diagram stays quick while curves are computing; across sessions, every point is solved
in a slot of one `PriorityGate` (one slot per core) that serves a page's first band
diagram, then band diagrams, then pinned band edges, then sweep points.

Closing (the page is gone) stops everything at once: queued jobs are skipped, a running
sweep stops before its next point, nothing more is delivered, the results are dropped.
The solved points are cached once for all sessions (`shared_simulator`, bounded by
`SHARED_CACHE_BYTES`), so a session holds no cache of its own. The simulator follows the
tunnelling model of the settings (`ExplorerState.tunnelling_model`): a change of model
takes the shared simulator of that model at the same grid resolution.

Results reach the page through ``post(fn, *args)``: the view passes a function that runs
``fn`` on its document's event loop; by default it runs at once in the calling thread.
What is done with a result is the listener's (`JobListener`) business; generations,
caches and the rule of what is stale are decided here. With ``background=False`` every
job runs at once in the calling thread (tests, scripts).
"""

from __future__ import annotations

import heapq
import itertools
import logging
import math
import os
import threading
import time
import weakref
from collections.abc import Callable, Iterator
from concurrent.futures import Future, ThreadPoolExecutor
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Any, Protocol

import numpy as np

from sub60.app.state import ExplorerState
from sub60.physics import Design, SolverError, compare_transmissions


class PriorityGate:
    """Slots for solving points, shared by every session, granted by priority.

    A point is solved while holding one slot (one per core). When a slot frees, the
    waiting request of the most urgent priority gets it (first come first served within
    a priority), so a sweep point takes a slot only when no bias point is waiting: the
    band diagram of the page a user is touching comes before the curves of every page.
    Used as a plain context manager (as `Simulator.transfer_curve`'s ``slots``) it
    waits at the `SWEEP` priority.

    Parameters
    ----------
    slots : points solved at once [-].
    """

    FIRST = 0   # the first band diagram of a new page
    BIAS = 1    # a band diagram after a control change
    PINNED = 2  # band edges of pinned designs
    SWEEP = 3   # transfer and output curve points

    def __init__(self, slots: int) -> None:
        if slots < 1:
            raise ValueError(f"slots: expected at least 1, got {slots!r}")
        self.slots = slots
        self._free = slots
        self._queue: list[tuple[int, int]] = []
        self._tickets = itertools.count()
        self._cv = threading.Condition()

    def acquire(self, priority: int = SWEEP) -> None:
        """Wait for a slot; requests of a smaller ``priority`` number go first."""
        with self._cv:
            me = (priority, next(self._tickets))
            heapq.heappush(self._queue, me)
            while not (self._free > 0 and self._queue[0] == me):
                self._cv.wait()
            heapq.heappop(self._queue)
            self._free -= 1
            self._cv.notify_all()  # the next in line may take another free slot

    def release(self) -> None:
        """Give a slot back."""
        with self._cv:
            self._free = min(self.slots, self._free + 1)
            self._cv.notify_all()

    @contextmanager
    def hold(self, priority: int) -> Iterator[None]:
        """Hold one slot at ``priority`` for the duration of the block."""
        self.acquire(priority)
        try:
            yield
        finally:
            self.release()

    def waiting(self) -> list[int]:
        """Priorities of the requests waiting now (most urgent first)."""
        with self._cv:
            return sorted(p for p, _ in self._queue)

    def __enter__(self) -> PriorityGate:
        self.acquire(self.SWEEP)
        return self

    def __exit__(self, *exc: object) -> None:
        self.release()


#: Points solved at once across all sessions (one per core), bias points first: sweeps
#: of many sessions interleave point by point behind every waiting band diagram.
SWEEP_SLOTS = PriorityGate(2)

#: Budget of the solved-point cache shared by all sessions of one numerical model [B]
#: (results are pure functions of design and bias, so sessions share them).
SHARED_CACHE_BYTES = 192 * 2**20
_MAX_SHARED_MODELS = 4  # numerical models (resolution, tunnelling model) kept at once
_shared: dict[tuple, Any] = {}
_shared_lock = threading.Lock()

#: Every live `SessionJobs` (weak: for tests and diagnostics counting open sessions).
LIVE_SESSIONS: weakref.WeakSet = weakref.WeakSet()
#: Which transfer curve of an ideal design the server's curve process computes: 'twin'
#: (the tunnel FET's is then streamed from here, its points cached here for the band
#: diagram, pins and exports) or 'tfet' (beside the band diagram and the twin here).
#: Chosen by measurement (README, "Explorer speed": 'tfet' was slower and erratic on a
#: loaded machine); SUB60_REMOTE_CURVE overrides it (benchmarks).
REMOTE_CURVE = os.environ.get("SUB60_REMOTE_CURVE", "twin")
if REMOTE_CURVE not in ("tfet", "twin"):
    raise ValueError(f"SUB60_REMOTE_CURVE: {REMOTE_CURVE!r} unknown; allowed 'tfet', 'twin'")
#: How long the sweep thread waits for the curve process beyond the time its own share
#: took: `REMOTE_PATIENCE` times that, at least `REMOTE_MIN_WAIT_S` [-, s]; then the
#: process is taken as hung, replaced, and the curve computed in the server.
REMOTE_PATIENCE = 4.0
REMOTE_MIN_WAIT_S = 30.0
OUTPUT_REST_S = 0.3  # quiet time after a gate-voltage move before the output curves [s]
STREAM_INTERVAL_S = 0.2  # least time between two partial transfer curves sent to the page [s]
WORKERS = ("bias", "sweep", "io")

log = logging.getLogger("sub60.app")

Post = Callable[..., None]


def post_now(fn: Callable[..., Any], *args: Any) -> None:
    """Run a result's delivery at once (no document: tests and scripts)."""
    fn(*args)


def post_nowhere(fn: Callable[..., Any], *args: Any) -> None:
    """Drop a result (the session is closed)."""


def shared_simulator(resolution: float = 1.0, model: str = "two-band") -> Any:
    """The `Simulator` of a numerical model shared by every session: one byte-bounded,
    thread-safe cache of solved points (`SHARED_CACHE_BYTES`) instead of one per page.
    At most `_MAX_SHARED_MODELS` models are kept; a session holding an older one keeps
    it until it closes."""
    from sub60.physics import Simulator

    key = (float(resolution), model)
    with _shared_lock:
        sim = _shared.pop(key, None)
        if sim is None:
            sim = Simulator(resolution=resolution, model=model, cache_bytes=SHARED_CACHE_BYTES)
        _shared[key] = sim  # most recently used last
        while len(_shared) > _MAX_SHARED_MODELS:
            _shared.pop(next(iter(_shared)))
        return sim


class JobListener(Protocol):
    """What a view does with the results of `SessionJobs` (called through ``post``, only
    for results of the newest generation)."""

    def bias_solved(self, bp: Any, transmissions: Any = None) -> None: ...
    def bias_failed(self, exc: Exception) -> None: ...
    def sweep_started(self, transfer: bool, output: bool, total: int) -> None: ...
    def transfer_partial(self, key: str, vg: np.ndarray, ids: np.ndarray, done: int,
                         total: int) -> None: ...
    def transfer_solved(self, key: str, tc: Any, request: SweepRequest, done: int,
                        total: int) -> None: ...
    def outputs_solved(self, curves: list, complete: bool, done: int, total: int) -> None: ...
    def sweep_finished(self, seconds: float) -> None: ...
    def sweep_failed(self, exc: Exception) -> None: ...
    # non-idealities (app.nonideal): the ideal curve (None: the design is ideal) and the
    # off-state current by mechanism (None: idem)
    def nonideal_solved(self, ideal: Any, breakdown: dict | None) -> None: ...


@dataclass(frozen=True)
class SweepRequest:
    """Everything one sweep job computes (read from the state when it is requested)."""

    generation: int
    design: Design
    transfer_key: tuple
    output_key: tuple
    vg_V: np.ndarray            # gate voltages of the transfer curves [V]
    vd_V: float                 # drain voltage of the transfer curves [V]
    ioff_uA_per_um: float       # off-current target [uA/um]
    vdd_V: float                # supply for Ion [V]
    output_vg_V: np.ndarray     # gate voltages of the output curves [V]
    output_vd_V: np.ndarray     # drain voltages of the output curves [V]

    @classmethod
    def of(cls, state: ExplorerState, design: Design, generation: int) -> SweepRequest:
        """The sweeps of the present settings (design already validated)."""
        return cls(generation, design, state.transfer_key(), state.output_key(),
                   state.sweep_gate_voltages(), float(state.vd_V),
                   state.ioff_target_uA_per_um, float(state.vdd_V),
                   state.output_gate_voltages(), state.output_drain_voltages())


def log_failure(future: Future) -> None:
    """Log a background job that raised (a job must never fail silently)."""
    exc = future.exception() if not future.cancelled() else None
    if exc is not None:
        log.error("sub60: background job failed", exc_info=exc)


class SessionJobs:
    """Workers, generations and last results of one session.

    Parameters
    ----------
    state : the session's settings (read when a job is requested).
    simulator : a `physics.simulate.Simulator` owned by this session.
    listener : receives the results (see `JobListener`).
    background : compute on worker threads (server) or at once (tests).
    gate : the slots shared with the other sessions (default `SWEEP_SLOTS`).
    """

    def __init__(self, state: ExplorerState, simulator: Any, listener: JobListener,
                 background: bool = True, gate: PriorityGate | None = None,
                 curve_process: Any = None) -> None:
        self.state = state
        # the server's curve process (`sub60.app.curve_process`); with background work the
        # one the server started is used when this is None
        self._curve_process = curve_process
        self.simulator = simulator
        self._model = state.tunnelling_model  # the settings' model the simulator follows
        self.listener = listener
        self.background = background
        self.gate = gate if gate is not None else SWEEP_SLOTS
        self.closed = threading.Event()
        self.post: Post = post_now
        self.bias_generation = 0
        self.sweep_generation = 0
        self._lock = threading.Lock()
        self._bias_pending = 0
        self.bias_idle = threading.Event()
        self.bias_idle.set()
        self._sweep_requested = threading.Event()
        self._pools: dict[str, ThreadPoolExecutor] = {}
        if background:
            self._pools = {k: ThreadPoolExecutor(1, thread_name_prefix=f"sub60-{k}")
                           for k in WORKERS}
        # last complete results, and what they are of
        self.last_bias: Any = None
        self.curves: dict[str, Any] = {}        # key ('tfet', 'twin') -> TransferCurve
        self.outputs: list = []                  # complete output curves
        self.shown_transfer: tuple | None = None
        self.shown_output: tuple | None = None
        self.tfet_key: tuple | None = None       # transfer key of curves['tfet']
        self._shown_step: tuple[int, dict] = (0, {})  # (sweep, {stream: points shown})
        LIVE_SESSIONS.add(self)

    # ------------------------------------------------------------------ workers
    def submit(self, worker: str, fn: Callable[..., Any], *args: Any) -> None:
        """Run fn(*args) on a worker ('bias', 'sweep', 'io'), or at once."""
        if self.closed.is_set():
            return
        if not self.background:
            fn(*args)
            return
        self._pools[worker].submit(fn, *args).add_done_callback(log_failure)

    def executor(self, worker: str) -> ThreadPoolExecutor | None:
        """The thread pool of a worker (None without background work)."""
        return self._pools.get(worker)

    def close(self, wait: bool = False) -> None:
        """End this session's work (its page is gone): supersede every request, skip
        the queued jobs, stop a running sweep before its next point, deliver nothing
        more, drop the workers and the results held. ``wait``: also join the workers
        (at most the point being solved finishes first)."""
        self.closed.set()
        self.bias_generation += 1
        self.sweep_generation += 1
        self.post = post_nowhere
        self.bias_idle.set()
        self._sweep_requested.set()  # ends a sweep's rest at once
        for pool in self._pools.values():
            pool.shutdown(wait=wait, cancel_futures=True)
        self.last_bias = None
        self.curves = {}
        self.outputs = []

    def use_simulator(self, simulator: Any) -> None:
        """Another numerical model: nothing solved with the old one is reused."""
        self.simulator = simulator
        self.last_bias = None  # another grid: no warm start from the old one
        self.shown_transfer = self.shown_output = self.tfet_key = None

    def follow_model(self) -> None:
        """Take the shared simulator of the settings' tunnelling model when it changed
        (same grid resolution); nothing solved with the old model is reused."""
        model = self.state.tunnelling_model
        if model != self._model:
            self._model = model
            self.use_simulator(shared_simulator(self.simulator.resolution, model))

    def transfer_stale(self) -> bool:
        """Whether the shown curves are not those of the present (valid) settings."""
        try:
            return self.state.transfer_key() != self.shown_transfer
        except ValueError:
            return False  # an invalid design: the strip keeps the last valid result

    def present_curve(self) -> Any:
        """The tunnel-FET transfer curve of the present settings, None if not computed."""
        tc = self.curves.get("tfet")
        try:
            fresh = tc is not None and self.tfet_key == self.state.transfer_key()
        except ValueError:
            return None
        return tc if fresh else None

    # ------------------------------------------------------------------ bias point
    def solve_bias_now(self, design: Design) -> None:
        """First band diagram of the session, in the calling thread, delivered at once."""
        self.follow_model()
        self.bias_generation += 1
        self._bias_job(self.bias_generation, design, float(self.state.vg_V),
                       float(self.state.vd_V), post=False)

    def request_bias(self, design: Design) -> None:
        """Solve the present bias point on the bias worker (supersedes older requests)."""
        self.follow_model()
        self.bias_generation += 1
        g = self.bias_generation
        with self._lock:
            self._bias_pending += 1
            self.bias_idle.clear()
        self.submit("bias", self._bias_job, g, design, float(self.state.vg_V),
                    float(self.state.vd_V))

    def _bias_job(self, g: int, design: Design, vg: float, vd: float, post: bool = True) -> None:
        outcome: tuple = (_nothing,)
        try:
            if g == self.bias_generation:  # else a newer bias point is queued: skip this one
                shown = self.last_bias
                # continue from the bias point on screen, the nearest solved bias
                start = (shown.electrostatics if shown is not None and shown.design == design
                         else None)
                # the first band diagram of a page goes before every other waiting point
                with self.gate.hold(PriorityGate.BIAS if post else PriorityGate.FIRST):
                    bp = None if self.closed.is_set() else self.simulator.solve_bias(
                        design, vg, vd, initial=start)
                if bp is not None:
                    outcome = (self._deliver_bias, g, bp, self.transmissions(bp))
        except (ValueError, SolverError) as exc:
            outcome = (self._deliver_bias_failure, g, exc)
        finally:
            if post:  # the sweep worker resumes once the page holds this result
                self.post(self._bias_finished, *outcome)
        if not post:
            outcome[0](*outcome[1:])

    def _bias_finished(self, fn: Callable[..., None], *args: Any) -> None:
        try:
            fn(*args)
        finally:
            with self._lock:
                self._bias_pending = max(0, self._bias_pending - 1)
                if self._bias_pending == 0:
                    self.bias_idle.set()

    def transmissions(self, bp: Any) -> Any:
        """WKB and exact two-band T(E, k = 0) of the bias point's main subband pair
        (`physics.compare_transmissions`; the WKB of the one-band model when that model is
        chosen, else the two-band one), or None when no pair carries current."""
        wkb = "one-band" if self.simulator.model == "one-band" else "two-band"
        try:
            return compare_transmissions(bp, wkb_model=wkb)
        except ValueError:
            log.debug("sub60: no transmission comparison", exc_info=True)
            return None

    def _deliver_bias(self, g: int, bp: Any, transmissions: Any = None) -> None:
        if g != self.bias_generation or self.closed.is_set():
            return
        self.last_bias = bp
        self.listener.bias_solved(bp, transmissions)

    def _deliver_bias_failure(self, g: int, exc: Exception) -> None:
        if g == self.bias_generation:
            self.listener.bias_failed(exc)

    # ------------------------------------------------------------------ sweeps
    def request_sweeps(self, design: Design) -> None:
        """Transfer and output curves of the present settings, on the sweep worker; only
        what differs from the shown curves is computed."""
        self.follow_model()
        self.sweep_generation += 1
        self._sweep_requested.set()
        self.submit("sweep", self._sweep_job,
                    SweepRequest.of(self.state, design, self.sweep_generation))

    def _current(self, g: int) -> bool:
        return g == self.sweep_generation and not self.closed.is_set()

    def _sweep_job(self, job: SweepRequest) -> None:
        g = job.generation

        def superseded() -> bool:  # asked before every point
            if self._current(g):
                self.bias_idle.wait(timeout=1.0)  # let a pending band diagram go first
            return not self._current(g)

        if not self._current(g):
            return

        need_transfer = job.transfer_key != self.shown_transfer
        need_output = job.output_key != self.shown_output
        if self.background and need_output and not need_transfer:
            # a gate-voltage move: wait for the slider to rest before the output curves,
            # so that the next band diagram does not queue behind them
            end = time.perf_counter() + OUTPUT_REST_S
            while self._current(g) and (left := end - time.perf_counter()) > 0:
                self._sweep_requested.wait(left)  # a newer request ends the rest at once
                self._sweep_requested.clear()
            if not self._current(g):
                return
        nonideal = not job.design.is_ideal
        n_t = (3 if nonideal else 2) * job.vg_V.size if need_transfer else 0
        n_o = job.output_vg_V.size * job.output_vd_V.size if need_output else 0
        total = max(n_t + n_o, 1)
        done = 0
        t0 = time.perf_counter()
        self.post(self._deliver_started, g, need_transfer, need_output, total)
        sim = self.simulator
        # with the server's curve process: one transfer curve is computed there while the
        # sweep thread computes the other (and the band diagram is drawn), and output
        # curves there too. `REMOTE_CURVE` says which curve of an ideal design goes there;
        # with non-idealities on the tunnel FET stays here, where its cached electrostatics
        # serve the ideal curve, and the twin goes there (then all output curves too).
        remote = remote_out = None
        process = self.curve_process()
        remote_key = None
        n_remote = 0
        if process is not None:
            if need_transfer:
                remote_key = "twin" if nonideal else REMOTE_CURVE
            if need_output:
                n = job.output_vg_V.size
                if not need_transfer:
                    n_remote = n // 2  # a gate-voltage move: half each
                elif remote_key == "twin":  # the process is done first: it takes more
                    n_remote = n if nonideal else n - 1
                else:
                    n_remote = n // 2
        devices = {"tfet": job.design, "twin": job.design.twin()}
        try:
            sent = time.perf_counter()  # both tasks go to the process now
            if remote_key is not None:
                remote = process.transfer_curve(sim, devices[remote_key], job.vg_V, job.vd_V,
                                                job.ioff_uA_per_um, job.vdd_V)
                if remote is None:
                    remote_key = None
            if n_remote:
                remote_out = process.output_curves(sim, job.design, job.output_vg_V[:n_remote],
                                                   job.output_vd_V)
            if need_transfer:
                solved: dict[str, Any] = {}
                for key in ("tfet", "twin"):
                    if key == remote_key:
                        continue
                    base = 0 if key == "tfet" else job.vg_V.size
                    solved[key] = sim.transfer_curve(
                        devices[key], job.vg_V, job.vd_V,
                        ioff_target_uA_per_um=job.ioff_uA_per_um, vdd_V=job.vdd_V,
                        progress=self._progress_callback(g, key, devices[key], job, base, total),
                        cancelled=superseded, slots=self.gate)
                    if key == "tfet":  # shown at once; the twin waits for the tunnel FET
                        done += job.vg_V.size
                        self.post(self._deliver_transfer, g, key, solved[key], job, done, total)
                        done = self._nonideal_job(g, job, solved[key], done, total, superseded)
                if remote_key is not None:
                    tc = self._remote_result(g, remote, process, sent)
                    remote = None
                    if tc is None:
                        if not self._current(g):
                            return
                        tc = sim.transfer_curve(  # the process failed: computed here
                            devices[remote_key], job.vg_V, job.vd_V,
                            ioff_target_uA_per_um=job.ioff_uA_per_um, vdd_V=job.vdd_V,
                            cancelled=superseded, slots=self.gate)
                    solved[remote_key] = tc
                    if remote_key == "tfet":
                        done += job.vg_V.size
                        self.post(self._deliver_transfer, g, "tfet", tc, job, done, total)
                done += job.vg_V.size
                self.post(self._deliver_transfer, g, "twin", solved["twin"], job, done, total)
            if need_output:
                curves: list = []
                first = n_remote if remote_out is not None else 0  # the process has those
                for vg in job.output_vg_V[first:]:
                    if superseded():
                        return
                    curves.append(sim.output_curve(job.design, float(vg), job.output_vd_V,
                                                   slots=self.gate))
                    done += job.output_vd_V.size
                    if not first:
                        self.post(self._deliver_outputs, g, list(curves), job, done, total)
                if first:
                    theirs = self._remote_result(g, remote_out, process, sent)
                    remote_out = None
                    if theirs is None:
                        if not self._current(g):
                            return
                        theirs = []  # the process failed: its curves are computed here
                        for vg in job.output_vg_V[:first]:
                            if superseded():
                                return
                            theirs.append(sim.output_curve(job.design, float(vg),
                                                           job.output_vd_V, slots=self.gate))
                    done += first * job.output_vd_V.size
                    self.post(self._deliver_outputs, g, list(theirs) + curves, job, done, total)
            self.post(self._deliver, g, self.listener.sweep_finished, time.perf_counter() - t0)
        except InterruptedError:
            return
        except (ValueError, SolverError) as exc:
            self.post(self._deliver, g, self.listener.sweep_failed, exc)
        except Exception as exc:  # noqa: BLE001 - the page must not wait for a dead sweep
            log.error("sub60: a sweep failed", exc_info=exc)
            self.post(self._deliver, g, self.listener.sweep_failed, exc)
        finally:
            for task in (remote, remote_out):
                if task is not None:
                    task.cancel()

    def curve_process(self) -> Any:
        """The server's curve process this session's sweeps use (None: none; every curve
        is computed in the sweep thread)."""
        if not self.background:
            return self._curve_process
        if self._curve_process is not None:
            return self._curve_process
        from sub60.app import curve_process

        return curve_process.CURVE_PROCESS

    def _remote_result(self, g: int, remote: Any, process: Any, since: float) -> Any:
        """A result from the curve process, once done; None when superseded (cancelled)
        or when the process failed or did not answer in time (the caller then computes it
        here). A solver failure in the process is raised here as it would be in the sweep
        thread.

        ``since`` is when the task was sent (`time.perf_counter`); the sweep thread has
        worked on its own share since then. The process gets `REMOTE_PATIENCE` times that
        long again, and at least `REMOTE_MIN_WAIT_S`: a process that hangs is then stopped
        and replaced, and the page still gets its curve."""
        from concurrent.futures import CancelledError
        from concurrent.futures import TimeoutError as FutureTimeout
        from concurrent.futures.process import BrokenProcessPool

        now = time.perf_counter()
        deadline = now + max(REMOTE_MIN_WAIT_S, REMOTE_PATIENCE * (now - since))
        while True:
            if not self._current(g):
                remote.cancel()
                return None
            if time.perf_counter() > deadline:
                log.warning("sub60: the curve process did not answer within %.1f s; stopped, "
                            "and the curve computed in the server instead", deadline - since)
                process.broken(remote)
                return None
            try:
                return remote.future.result(timeout=0.02)
            except FutureTimeout:
                continue
            except InterruptedError:  # cancelled in the process by a newer request
                return None
            except CancelledError:
                return None
            except (ValueError, SolverError):
                raise
            except BrokenProcessPool as exc:
                log.warning("sub60: the curve process died (%s); computed in the server instead",
                            exc)
                process.broken(remote)
                return None
            except Exception as exc:  # noqa: BLE001 - never lose a sweep to the process
                log.warning("sub60: the curve process failed (%r); computed in the server instead",
                            exc)
                return None

    def _nonideal_job(self, g: int, job: SweepRequest, tc: Any, done: int, total: int,
                      superseded: Callable[[], bool]) -> int:
        """With any non-ideality on: the ideal device's transfer curve (the same design
        with `NON_IDEAL_OFF`) and the off-state current by mechanism at the design's
        Voff; else nothing (the listener is told). Returns the points done."""
        from sub60.app.nonideal import ideal_design, off_state_breakdown

        if job.design.is_ideal:
            self.curves.pop("ideal", None)
            self.post(self._deliver, g, self.listener.nonideal_solved, None, None)
            return done
        sim = self.simulator
        ideal = ideal_design(job.design)
        progress = self._progress_callback(g, "ideal", ideal, job, done, total)
        itc = sim.transfer_curve(ideal, job.vg_V, job.vd_V,
                                 ioff_target_uA_per_um=job.ioff_uA_per_um, vdd_V=job.vdd_V,
                                 progress=progress, cancelled=superseded, slots=self.gate)
        done += job.vg_V.size
        if superseded():
            raise InterruptedError

        def solve_bias(d: Design, vg: float, vd: float) -> Any:
            with self.gate.hold(PriorityGate.SWEEP):
                return sim.solve_bias(d, vg, vd)

        br = off_state_breakdown(solve_bias, job.design, tc.metrics.voff_V.value, job.vd_V)
        self.post(self._deliver_nonideal, g, itc, br)
        return done

    def _deliver_nonideal(self, g: int, itc: Any, br: dict) -> None:
        if not self._current(g):
            return
        self.curves["ideal"] = itc
        self.listener.nonideal_solved(itc, br)

    def _progress_callback(self, g: int, key: str, device: Design, job: SweepRequest,
                           done: int, total: int) -> Callable[[int, int], None]:
        vgs, vd = job.vg_V, job.vd_V
        last = [time.perf_counter()]

        def progress(i: int, n: int) -> None:
            now = time.perf_counter()
            if not self._current(g) or i == n or now - last[0] < STREAM_INTERVAL_S:
                return  # the complete curve follows at once; partial ones at most 5 per second
            last[0] = now
            # points already solved are in the simulator's cache: no new solve here
            ids = np.array([self.simulator.solve_bias(device, float(v), vd).current_uA_per_um
                            for v in vgs[:i]])
            self.post(self._deliver_partial, g, key, vgs[:i].copy(), ids, done + i, total)

        return progress

    def _deliver(self, g: int, fn: Callable[..., None], *args: Any) -> None:
        # _current is False once closed: nothing reaches a closed page
        if self._current(g):
            fn(*args)

    def _in_order(self, g: int, stream: str, done: int) -> bool:
        """Whether a result of sweep ``g`` on one ``stream`` (a transfer curve's key,
        'outputs', or 'started' for the sweep's start) that completes ``done`` points is
        not older than one already shown. Updates are posted in order, but the page's
        event loop may run two of them out of order when they come in quick succession
        (points from the shared cache): an older partial result must not replace a newer
        one, and the start of a sweep must not come after any of its results."""
        if self._shown_step[0] != g:
            self._shown_step = (g, {})
        shown = self._shown_step[1]
        if stream == "started":
            if shown:
                return False
        elif done < shown.get(stream, -1):
            return False
        shown[stream] = done
        return True

    def _deliver_started(self, g: int, transfer: bool, output: bool, total: int) -> None:
        # after a result of the same sweep, "updating" would stay on the titles for good
        if self._current(g) and self._in_order(g, "started", 0):
            # from here the page no longer shows the last complete curves as such (titles
            # "updating…", partial curves): a later request for those same settings (a
            # change undone before its curves arrived) must send them again
            if transfer:
                self.shown_transfer = None
            if output:
                self.shown_output = None
            self.listener.sweep_started(transfer, output, total)

    def _deliver_partial(self, g: int, key: str, vg: np.ndarray, ids: np.ndarray, done: int,
                         total: int) -> None:
        if self._current(g) and self._in_order(g, key, done):
            self.listener.transfer_partial(key, vg, ids, done, total)

    def _deliver_transfer(self, g: int, key: str, tc: Any, job: SweepRequest, done: int,
                          total: int) -> None:
        if not self._current(g) or not self._in_order(g, key, done):
            return
        self.curves[key] = tc
        if key == "tfet":
            self.tfet_key = job.transfer_key
        else:
            self.shown_transfer = job.transfer_key
        self.listener.transfer_solved(key, tc, job, done, total)

    def _deliver_outputs(self, g: int, curves: list, job: SweepRequest, done: int,
                         total: int) -> None:
        if not self._current(g) or not self._in_order(g, "outputs", done):
            return
        complete = len(curves) == job.output_vg_V.size
        if complete:
            self.outputs = curves
            self.shown_output = job.output_key
        self.listener.outputs_solved(curves, complete, done, total)

    def limit_anchor(self, ioff_uA_per_um: float) -> tuple[float | None, float | None]:
        """(Vg [V], Id [uA/um]) where the thermionic-limit line of the transfer plot
        starts: the tunnel FET's Voff at the Ioff target, else its lowest current."""
        tc = self.curves.get("tfet")
        if tc is None:
            return None, None
        m = tc.metrics
        if m.voff_V.value is not None:
            return m.voff_V.value, ioff_uA_per_um
        ids = np.where(tc.id_uA_per_um > 0, tc.id_uA_per_um, np.inf)
        i = int(np.argmin(ids))
        if math.isfinite(ids[i]):
            return float(tc.vg_V[i]), float(ids[i])
        return None, None


def _nothing() -> None:
    return None
