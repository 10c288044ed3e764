"""A second physics process owned by the server, for the twin's transfer curve (no UI).

Two cores, but one server process: its solver threads share the GIL and OpenBLAS's
level-2 calls, so two threads solve a curve hardly faster than one (measured in
DEVELOPERS.md). After a design change the page waits for two transfer curves, the
tunnel FET's and its MOSFET twin's; here the twin's is computed in one separate process
started with the server, while the server's own sweep thread computes the tunnel FET's.

What crosses the process boundary is small: the design, the sweep and the figure-of-merit
settings go in, the finished `TransferCurve` comes back (~5 kB pickled). The process keeps
its own `Simulator` per numerical model, so a design seen again is served from its cache.
Its numbers are those of the server's simulator: a new design's curve starts cold in both,
and the same continuation follows (tests/app/test_curve_process.py compares them bit for
bit).

A running task is cancelled through a flag shared with the process, read before each
bias point (a newer design supersedes it). A process that dies is replaced at the next
request, and the sweep that met the failure computes the twin in the server instead.
Without a started process (scripts, tests, the command line) nothing changes: the
session's sweep computes both curves itself.
"""

from __future__ import annotations

import ctypes
import itertools
import logging
import multiprocessing
import os
import sys
import threading
import time
from concurrent.futures import Future, ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from typing import Any

import numpy as np

from sub60.physics import Design

log = logging.getLogger("sub60.app")

#: Cancellation flags shared with the process; task ``n`` reads flag ``n % FLAGS`` [-].
FLAGS = 1024
#: How often the process checks that the server is still there [s].
PARENT_CHECK_S = 1.0
#: Deaths of the process after which the server stops starting new ones [-].
MAX_FAILURES = 3
#: Scheduling niceness added to the process [-]: on two cores shared with the browser,
#: the sweep thread's tunnel-FET curve and the page's band diagram go first, the process
#: takes what is left.
PROCESS_NICE = 10
#: Cache budget of each of the process's simulators [B] (as the server's shared ones).
PROCESS_CACHE_BYTES = 192 * 2**20

# ------------------------------------------------------------------ inside the process
_flags: Any = None
_simulators: dict[tuple[float, str], Any] = {}


def stacks_on_signal() -> None:
    """``kill -USR1 <pid>`` prints every thread's stack to the process's own error output
    (the server's and this process's: a page that waits for good can then be diagnosed
    without stopping anything)."""
    import faulthandler
    import signal

    if not hasattr(signal, "SIGUSR1"):
        return
    try:  # sys.__stderr__: a test's captured stream has no descriptor
        faulthandler.register(signal.SIGUSR1, file=sys.__stderr__, all_threads=True)
    except (AttributeError, ValueError, OSError) as exc:  # io.UnsupportedOperation is both
        log.debug("sub60: no stack dump on SIGUSR1 (%s)", exc)


def _start(flags: Any, parent: int) -> None:
    """Initializer of the process: keep the flags, end with the server (``parent``, the
    server's id as the server gave it: a server that ended while this process was still
    starting, when its parent is already another process, ends it at once too), load the
    compiled kernels (one small bias point) so that the first real task is not slow."""
    global _flags
    _flags = flags
    stacks_on_signal()

    def watch() -> None:  # a server killed without closing the pool leaves no orphan
        while os.getppid() == parent:
            time.sleep(PARENT_CHECK_S)
        os._exit(0)

    threading.Thread(target=watch, name="sub60-parent-watch", daemon=True).start()
    try:  # the session's own sweep thread and the band diagram first (PROCESS_NICE)
        os.nice(PROCESS_NICE)
    except (AttributeError, OSError):
        pass
    from sub60.physics import solve_bias

    solve_bias(Design(), 0.0, 0.1)


def _simulator(resolution: float, model: str) -> Any:
    from sub60.physics import Simulator

    key = (float(resolution), model)
    sim = _simulators.get(key)
    if sim is None:
        sim = _simulators[key] = Simulator(resolution=resolution, model=model,
                                           cache_bytes=PROCESS_CACHE_BYTES)
    return sim


def _transfer_task(number: int, resolution: float, model: str, design: Design,
                   vg_V: np.ndarray, vd_V: float, ioff_uA_per_um: float, vdd_V: float) -> Any:
    """In the process: the transfer curve, stopped (InterruptedError) once flagged."""
    flag = number % FLAGS

    def cancelled() -> bool:
        return bool(_flags[flag]) if _flags is not None else False

    return _simulator(resolution, model).transfer_curve(
        design, vg_V, vd_V, ioff_target_uA_per_um=ioff_uA_per_um, vdd_V=vdd_V,
        cancelled=cancelled)


def _output_task(number: int, resolution: float, model: str, design: Design,
                 vg_V: np.ndarray, vd_V: np.ndarray) -> list:
    """In the process: output curves at each gate voltage, stopped (InterruptedError)
    once flagged (checked before each curve)."""
    sim = _simulator(resolution, model)
    curves = []
    for vg in vg_V:
        if _flags is not None and _flags[number % FLAGS]:
            raise InterruptedError("output curves superseded")
        curves.append(sim.output_curve(design, float(vg), vd_V))
    return curves


def _ready() -> int:
    return os.getpid()


# ------------------------------------------------------------------ in the server
class RemoteCurve:
    """One transfer curve being computed in the process."""

    def __init__(self, future: Future, flags: Any, number: int, pool: Any = None) -> None:
        self.future = future
        self._flags = flags
        self._number = number
        self.pool = pool  # the executor it was given to

    def cancel(self) -> None:
        """Stop it: a queued task never starts, a running one stops before its next point."""
        self.future.cancel()
        self._flags[self._number % FLAGS] = 1


class CurveProcess:
    """The server's second physics process (one, shared by all sessions)."""

    def __init__(self) -> None:
        self._ctx = multiprocessing.get_context("spawn")
        self._flags = self._ctx.RawArray(ctypes.c_uint8, FLAGS)
        self._numbers = itertools.count()
        self._lock = threading.Lock()
        self._pool: ProcessPoolExecutor | None = None
        self.closed = False
        self.failures = 0  # processes that died

    def start(self) -> None:
        """Start the process now (the server's start), so that the first page does not
        wait for it (importing and loading the kernels take ~2 s)."""
        with self._lock:
            self._ensure()

    def _ensure(self) -> ProcessPoolExecutor:
        if self._pool is None:
            self._pool = ProcessPoolExecutor(1, mp_context=self._ctx, initializer=_start,
                                             initargs=(self._flags, os.getpid()))
            self._pool.submit(_ready)  # starts the process at once, not at the first task
        return self._pool

    def pid(self) -> int | None:
        """The process's id, once it is ready (started if needed; None when closed; for
        tests and benchmarks)."""
        with self._lock:
            if self.closed:
                return None
            pool = self._ensure()
        return pool.submit(_ready).result(timeout=120)

    def transfer_curve(self, simulator: Any, design: Design, vg_V: np.ndarray, vd_V: float,
                       ioff_uA_per_um: float, vdd_V: float) -> RemoteCurve | None:
        """Start ``design``'s transfer curve with ``simulator``'s numerical model in the
        process; None when closed or the process cannot be started."""
        return self._submit(_transfer_task, float(simulator.resolution), simulator.model,
                            design, np.asarray(vg_V, float), float(vd_V),
                            float(ioff_uA_per_um), float(vdd_V))

    def output_curves(self, simulator: Any, design: Design, vg_V: np.ndarray,
                      vd_V: np.ndarray) -> RemoteCurve | None:
        """Start ``design``'s output curves at the gate voltages ``vg_V`` [V] (a list of
        `OutputCurve`, in that order) in the process; None as in `transfer_curve`."""
        return self._submit(_output_task, float(simulator.resolution), simulator.model,
                            design, np.asarray(vg_V, float), np.asarray(vd_V, float))

    def _submit(self, fn: Any, *args: Any) -> RemoteCurve | None:
        with self._lock:
            if self.closed:
                return None
            number = next(self._numbers)
            self._flags[number % FLAGS] = 0
            try:
                future = self._ensure().submit(fn, number, *args)
            except (BrokenProcessPool, RuntimeError) as exc:
                log.warning("sub60: the curve process is gone (%s)", exc)
                if not self._count_failure():
                    return None
                try:
                    future = self._ensure().submit(fn, number, *args)
                except (BrokenProcessPool, RuntimeError, OSError):
                    self._count_failure()
                    return None
            return RemoteCurve(future, self._flags, number, self._pool)

    def _count_failure(self) -> bool:
        """Drop a dead pool; False (and closed for good) after `MAX_FAILURES` deaths, so
        that a process that cannot live costs no more starts. Under ``_lock``."""
        pool, self._pool = self._pool, None
        _stop(pool)
        self.failures += 1
        if self.failures >= MAX_FAILURES:
            self.closed = True
            log.warning("sub60: the curve process died %d times; every curve is computed in "
                        "the server from now on", self.failures)
            return False
        return True

    def broken(self, remote: RemoteCurve) -> None:
        """The process died or hung under ``remote``: it is stopped, and the next request
        starts a new one (at most `MAX_FAILURES` failures in all; a newer process is left
        alone)."""
        with self._lock:
            if self._pool is not None and self._pool is remote.pool:
                self._count_failure()

    def close(self) -> None:
        """Stop the process (the server stops)."""
        with self._lock:
            self.closed = True
            pool, self._pool = self._pool, None
        _stop(pool)


def _stop(pool: ProcessPoolExecutor | None) -> None:
    """Shut a pool down and kill its process: a process that hangs would not end by
    itself (its queued tasks are cancelled; its running one ends with it)."""
    if pool is None:
        return
    processes = list((getattr(pool, "_processes", None) or {}).values())
    pool.shutdown(wait=False, cancel_futures=True)
    for proc in processes:
        try:
            proc.kill()
        except (OSError, ValueError):  # already gone, or its handle closed
            pass


#: The server's curve process, set by `sub60.app.server.serve` (None: no process, every
#: curve is computed in the session's sweep thread).
CURVE_PROCESS: CurveProcess | None = None


def start_curve_process() -> CurveProcess:
    """Start the server's curve process (idempotent)."""
    global CURVE_PROCESS
    if CURVE_PROCESS is None or CURVE_PROCESS.closed:
        CURVE_PROCESS = CurveProcess()
    CURVE_PROCESS.start()
    return CURVE_PROCESS


def stop_curve_process() -> None:
    """Stop the server's curve process, if any."""
    global CURVE_PROCESS
    if CURVE_PROCESS is not None:
        CURVE_PROCESS.close()
        CURVE_PROCESS = None
