"""The design sweeps of one explorer session: its Dask client, its runs, its files (no UI).

`SweepSession` runs a sweep or a sensitivity study of one page off the page's event
loop, on one worker thread of its own: the engine (`app.sweep_engine.run_sweep`) blocks
while it waits for Dask, so it never runs in a callback. The Dask client is made on
first use, on the session's local cluster (worker processes on this machine, started by
this session) or on a scheduler address (an existing cluster, not started here), and is
kept for the next runs of the same target; `close` (the page is gone) cancels the run,
closes the client and the cluster this session started, and deletes the session's
files. One run at a time: a second is refused until the first ends or is cancelled.

A local cluster's tasks run at a lower CPU priority
(`sweep_engine.evaluate_design_in_background`): `app.jobs.PriorityGate` orders points
inside the server process and cannot reach worker processes, so the operating system's
scheduler gives the explorer's band diagrams the cores first instead.

Results and progress reach the page through callbacks called from the worker thread;
the view hands them over to its own event loop.
"""

from __future__ import annotations

import logging
import os
import shutil
import tempfile
import threading
import weakref
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path
from typing import Any

from sub60.app.sweep_engine import (
    METRICS,
    Progress,
    SweepResult,
    evaluate_design,
    evaluate_design_in_background,
    local_cluster,
    run_sweep,
    sensitivity,
)
from sub60.app.sweep_spec import SweepSpec
from sub60.physics import Design

log = logging.getLogger("sub60.app")

#: Scheduler address schemes accepted (as the command line's --scheduler).
SCHEDULER_SCHEMES = ("tcp://", "tls://", "ws://", "wss://")
#: Seconds to reach a scheduler before giving up.
CONNECT_TIMEOUT_S = 10.0
#: Local worker processes a page may start [-].
LOCAL_WORKERS_RANGE = (1, max(1, os.cpu_count() or 1))

#: Local clusters the pages of one server may hold at once: each is a set of worker
#: processes as large as the machine, kept until its page closes (engineering choice for
#: a shared 2-core machine, no source). A page beyond it is told to wait or to give a
#: scheduler address.
MAX_LOCAL_CLUSTERS = 2
_local_clusters = threading.BoundedSemaphore(MAX_LOCAL_CLUSTERS)


class ClusterLimit(RuntimeError):
    """Every local-cluster place of the server is taken by other pages."""


#: Every live `SweepSession` (for tests and diagnostics counting open clusters).
LIVE_SWEEP_SESSIONS: weakref.WeakSet = weakref.WeakSet()


class SweepBusy(RuntimeError):
    """A run was asked for while another one of the same session is running."""


def check_scheduler_address(address: str) -> str:
    """The address stripped, or ValueError naming the field and the form expected."""
    a = address.strip()
    if not a.startswith(SCHEDULER_SCHEMES) or len(a) > 300 or any(c.isspace() for c in a):
        raise ValueError(f"Scheduler address: expected tcp://HOST:PORT (or tls://, ws://, "
                         f"wss://), got {address[:80]!r}")
    return a


def check_local_workers(n: Any) -> int:
    """A number of local worker processes, or ValueError naming the allowed range."""
    lo, hi = LOCAL_WORKERS_RANGE
    if isinstance(n, bool) or not isinstance(n, int) or not lo <= n <= hi:
        raise ValueError(f"Local workers: {n!r} outside the allowed range [{lo}, {hi}] "
                         "(the cores of this machine)")
    return n


class SweepSession:
    """Sweeps and sensitivities of one page, on a Dask cluster, off the event loop.

    Parameters
    ----------
    root : folder for this session's results and cache (default: a new temporary
        folder, deleted by `close`).
    """

    def __init__(self, root: str | Path | None = None) -> None:
        self._own_root = root is None
        self._root = None if root is None else Path(root)
        self.closed = threading.Event()
        self._pool = ThreadPoolExecutor(1, thread_name_prefix="sub60-page-sweep")
        self._lock = threading.Lock()
        self._cancel = threading.Event()
        self._running = False
        self._client: Any = None
        self._cluster: Any = None
        self._target: tuple[str, Any] | None = None  # ("local", n) or ("scheduler", address)
        self.last: SweepResult | None = None
        self.last_spec: SweepSpec | None = None
        LIVE_SWEEP_SESSIONS.add(self)

    # ------------------------------------------------------------------ state
    @property
    def running(self) -> bool:
        return self._running

    @property
    def root(self) -> Path:
        """The session's folder (a temporary one is made on first use)."""
        with self._lock:
            if self._root is None:
                self._root = Path(tempfile.mkdtemp(prefix="sub60-page-sweep-"))
            return self._root

    @property
    def sweep_dir(self) -> Path:
        return self.root / "sweep"

    @property
    def sensitivity_dir(self) -> Path:
        return self.root / "sensitivity"

    def cluster_running(self) -> bool:
        """Whether this session holds a local cluster now."""
        return self._cluster is not None

    # ------------------------------------------------------------------ runs
    def run(self, spec: SweepSpec, *, scheduler: str | None, workers: int | None,
            on_progress: Callable[[Progress], None], on_done: Callable[[Any], None],
            on_start: Callable[[str], None] | None = None,
            on_rows: Callable[[list[dict[str, Any]]], None] | None = None) -> None:
        """Run a sweep in the background; ``on_done`` gets the `SweepResult` or the
        exception (SpecError for an invalid design, OSError for an unreachable
        scheduler); ``on_rows`` (optional) gets the rows as they arrive (see
        `sweep_engine.run_sweep`). Raises SweepBusy while another run of this session is
        going."""
        def work(client: Any, task: Callable[..., Any]) -> SweepResult:
            res = run_sweep(spec, self.sweep_dir, client=client, progress=on_progress,
                            on_rows=on_rows, cancel=self._cancel, task=task)
            self.last, self.last_spec = res, spec
            return res

        # every design validated before a cluster starts
        self._submit(self._job, scheduler, workers, on_start, on_done, work, spec.designs)

    def run_sensitivity(self, design: Design, fields: list[str], spec: SweepSpec, *,
                        scheduler: str | None, workers: int | None,
                        on_progress: Callable[[Progress], None],
                        on_done: Callable[[Any], None],
                        on_start: Callable[[str], None] | None = None) -> None:
        """Normalised sensitivities of every metric to ``fields`` at ``design`` (central
        differences, `sweep_engine.sensitivity`) on the same cluster; ``on_done`` gets the
        list of items or the exception."""
        def work(client: Any, task: Callable[..., Any]) -> list[dict[str, Any]]:
            return sensitivity(design, fields, spec, self.sensitivity_dir, metrics=METRICS,
                               client=client, progress=on_progress, cancel=self._cancel,
                               task=task)

        self._submit(self._job, scheduler, workers, on_start, on_done, work, None)

    def cancel(self) -> None:
        """Ask the running sweep to stop (the rows computed so far are kept)."""
        self._cancel.set()

    def _submit(self, fn: Callable[..., None], *args: Any) -> None:
        with self._lock:
            if self.closed.is_set():
                return
            if self._running:
                raise SweepBusy("a sweep of this page is running; cancel it or wait for it")
            self._running = True
            self._cancel = threading.Event()
        try:
            self._pool.submit(fn, *args)
        except RuntimeError:  # the pool was shut down: the session closed meanwhile
            self._running = False

    def _job(self, scheduler: str | None, workers: int | None,
             on_start: Callable[[str], None] | None, on_done: Callable[[Any], None],
             work: Callable[[Any, Callable[..., Any]], Any],
             check: Callable[[], Any] | None) -> None:
        """One run on the session's thread: ``check()`` (before any cluster starts), the
        client of the target, ``work(client, task)``; its outcome (or the exception) goes
        to ``on_done``; the session is free for the next run afterwards."""
        outcome: Any
        try:
            if check is not None:
                check()
            client, task = self._client_for(scheduler, workers, on_start)
            outcome = work(client, task)
        except Exception as exc:  # noqa: BLE001 - handed to the page as a message
            outcome = exc
        try:
            self._deliver(on_done, outcome)
        finally:
            self._running = False

    def _deliver(self, on_done: Callable[[Any], None], outcome: Any) -> None:
        if self.closed.is_set():
            return
        try:
            on_done(outcome)
        except Exception:  # noqa: BLE001 - a page that cannot take it must not kill the thread
            log.exception("sub60: delivering a sweep result failed")

    # ------------------------------------------------------------------ the cluster
    def _client_for(self, scheduler: str | None,
                    workers: int | None,
                    on_start: Callable[[str], None] | None) -> tuple[Any, Callable[..., Any]]:
        """The client of the target (made once, kept for the next runs), and the task."""
        from distributed import Client

        target: tuple[str, Any] = (("scheduler", check_scheduler_address(scheduler)) if scheduler
                                   else ("local", check_local_workers(
                                       workers or LOCAL_WORKERS_RANGE[1])))
        if self._client is not None and self._target == target:
            return self._client, self._task(target)
        self._shutdown_cluster()
        if target[0] == "scheduler":
            if on_start:
                on_start(f"connecting to {target[1]}…")
            client = Client(target[1], timeout=f"{CONNECT_TIMEOUT_S}s")
        else:
            if on_start:
                on_start(f"starting a local cluster of {target[1]} worker"
                         f"{'s' if target[1] > 1 else ''}…")
            if not _local_clusters.acquire(blocking=False):
                raise ClusterLimit(f"Local workers: {MAX_LOCAL_CLUSTERS} pages of this server run "
                                   "local clusters already; wait until one is closed, or give a "
                                   "Dask scheduler address")
            try:
                cluster = local_cluster(target[1])
            except BaseException:
                _local_clusters.release()
                raise
            with self._lock:
                self._cluster = cluster
            client = Client(cluster)
        with self._lock:
            self._client, self._target = client, target
        if self.closed.is_set():  # closed while the cluster was starting
            self._shutdown_cluster()
            raise InterruptedError("the page was closed")
        return client, self._task(target)

    @staticmethod
    def _task(target: tuple[str, Any]) -> Callable[..., Any]:
        return evaluate_design_in_background if target[0] == "local" else evaluate_design

    def _shutdown_cluster(self) -> None:
        with self._lock:
            client, cluster = self._client, self._cluster
            self._client = self._cluster = self._target = None
        for thing in (client, cluster):
            if thing is not None:
                try:
                    thing.close()
                except Exception:  # noqa: BLE001 - already gone (a lost scheduler)
                    pass
        if cluster is not None:
            _local_clusters.release()

    def close(self, wait: bool = False) -> None:
        """End the session's sweeps: cancel the run, close the client and the local
        cluster (after the run has stopped, on the session's thread), delete the files
        of a temporary folder. ``wait``: return only once all that is done."""
        if self.closed.is_set():
            return
        self.closed.set()
        self._cancel.set()
        self._pool.submit(self._finish)
        self._pool.shutdown(wait=wait)

    def _finish(self) -> None:
        self._shutdown_cluster()
        if self._own_root and self._root is not None:
            shutil.rmtree(self._root, ignore_errors=True)
