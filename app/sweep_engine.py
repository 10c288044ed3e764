"""Run a sweep on Dask: one task per design, a content-addressed cache, a streamed results table.

Each design's transfer curve and figures of merit is one task, `evaluate_design`, a pure
function of (design, bias plan, physics options, model version). The task key is the
SHA-256 of the canonical JSON of those inputs (`task_key`), so Dask deduplicates equal
designs and the output directory's cache (``cache/<2 hex>/<key>.json``, one file per
design, written atomically) lets a rerun or an extended sweep compute only what is new.

The client is a `dask.distributed.LocalCluster` (one single-threaded worker process per
core) unless a scheduler address is given. Results arrive in completion order; the table
(``results.parquet`` and ``results.csv``, rows in sweep order) is rewritten atomically
every few seconds and at the end, so an interrupted sweep keeps what it computed. A
design whose solver fails is a row with the failure message; a task lost with its worker
is rescheduled by Dask (``retries``) and, if it is lost again, recorded as a failed row
that is not cached.

UI-free: this module imports no Panel/Bokeh; a page drives `run_sweep` through its
``progress`` callback and ``cancel`` event and reads the returned `SweepResult`.
"""

from __future__ import annotations

import dataclasses
import hashlib
import importlib.resources
import json
import math
import os
import socket
import threading
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import Any

from sub60.app.sweep_spec import SweepSpec
from sub60.physics import Design

#: Metric columns of the results table (the physics' figures of merit, in this order).
METRICS = ("ss_min_mV_per_dec", "ss_avg4_mV_per_dec", "i60_uA_per_um", "ioff_uA_per_um", "voff_V",
           "ion_uA_per_um", "ion_ioff", "vth_V", "ambipolar_uA_per_um")
#: Times Dask reruns a task that raised or whose worker was lost.
TASK_RETRIES = 2
#: Seconds between rewrites of the partial results table.
TABLE_EVERY_S = 5.0
CACHE_DIR = "cache"
#: Bias-point cache of a task's simulator [bytes]: room for a whole curve (401 points at
#: resolution 3 take ~0.4 GB); the simulator is dropped with the task.
CURVE_CACHE_BYTES = 2**30
#: LocalCluster options: loopback only; the scheduler's HTTP endpoint (always started by
#: Dask) on a random port, and no dashboard pages.
LOCAL_CLUSTER_OPTIONS: dict[str, Any] = {"host": "127.0.0.1", "dashboard_address": "127.0.0.1:0",
                                         "scheduler_kwargs": {"dashboard": False}}
#: Dask settings of the local clusters started here (passed by the nannies to their workers).
#: Dask's defaults poll for its dashboard: an event-loop tick every 20 ms in the scheduler,
#: each nanny and each worker, a system monitor every 0.5 s, the nanny's memory check every
#: 0.1 s and a statistical profiler sampling each worker every 10 ms. An idle 2-worker
#: cluster then burns ~0.12 core (measured here: 2.4 s CPU per 20 s; 0.34 s with these
#: settings), taken from the tasks on a small machine. No dashboard is served, so these
#: only slow down what nobody reads; the nanny still checks memory every second.
LOCAL_CLUSTER_CONFIG: dict[str, Any] = {
    "distributed.worker.profile.enabled": False,
    "distributed.admin.tick.interval": "1s",
    "distributed.admin.system-monitor.interval": "2s",
    "distributed.worker.memory.monitor-interval": "1s",
}
TABLE_NAME = "results"


# ------------------------------------------------------------------ model version and keys
@lru_cache(maxsize=1)
def model_version() -> str:
    """Version of the physics: the package version and a hash of the physics sources.

    Any edit to ``sub60.physics`` changes it, so cached results never outlive the model
    that produced them; a worker running other code is detected by comparing it.
    """
    import sub60

    h = hashlib.sha256()
    root = importlib.resources.files("sub60.physics")
    for item in sorted(root.iterdir(), key=lambda p: p.name):
        if item.name.endswith(".py"):
            h.update(item.name.encode())
            h.update(item.read_bytes())
    return f"{sub60.__version__}+{h.hexdigest()[:16]}"


def canonical_json(obj: Any) -> str:
    """Sorted-key, compact JSON; floats as Python's shortest round-trip repr."""
    return json.dumps(obj, sort_keys=True, separators=(",", ":"), allow_nan=False)


def task_inputs(design: Design, spec: SweepSpec, version: str) -> dict[str, Any]:
    """Everything a design's result depends on."""
    return {"design": design.to_dict(), "bias": spec.bias.to_dict(),
            "physics": spec.physics.to_dict(), "model": version}


def task_key(inputs: dict[str, Any]) -> str:
    """SHA-256 hex digest of the canonical JSON of the task's inputs."""
    return hashlib.sha256(canonical_json(inputs).encode()).hexdigest()


# ------------------------------------------------------------------ the task
def evaluate_design(inputs: dict[str, Any]) -> dict[str, Any]:
    """Transfer curve and figures of merit of one design (the Dask task; pure).

    Parameters
    ----------
    inputs : `task_inputs` dictionary (design fields, bias plan, physics options, model version)

    Returns
    -------
    dict
        ``status`` "ok" or "failed"; ``metrics`` {name: value or None}; ``missing``
        {name: reason} for undefined metrics; ``solver_notes`` and ``warnings`` (lists of
        text); ``error`` (text or None); ``cacheable`` (False for failures that are not a
        property of the inputs); ``compute_s`` wall time and ``cpu_s`` CPU time of the
        task's process [s] (cpu_s < compute_s: the task waited for a core); ``model`` (this
        worker's model version).
        A fresh `Simulator` per task: no warm start crosses designs, so the result depends
        on the inputs only.
    """
    from sub60.physics import Simulator, SolverError, design_warnings

    t0, c0 = time.perf_counter(), time.process_time()
    out: dict[str, Any] = {"status": "failed", "metrics": {}, "missing": {}, "solver_notes": [],
                           "warnings": [], "error": None, "cacheable": True,
                           "model": model_version(), "host": socket.gethostname()}
    if out["model"] != inputs["model"]:
        out.update(error=f"worker runs model {out['model']}, the sweep expects {inputs['model']}",
                   cacheable=False, compute_s=0.0, cpu_s=0.0)
        return out
    try:
        design = Design.from_dict(inputs["design"])
        b, p = inputs["bias"], inputs["physics"]
        import numpy as np

        vg = np.linspace(float(b["vg_V"][0]), float(b["vg_V"][1]), int(b["vg_V"][2]))
        # the cache must keep every point of the curve (~0.1 MB each at resolution 1) so
        # that the solver notes are read back below without solving again
        sim = Simulator(resolution=p["resolution"], model=p["tunnelling_model"],
                        cache_bytes=CURVE_CACHE_BYTES)
        tc = sim.transfer_curve(design, vg, b["vd_V"], ioff_target_uA_per_um=b["ioff_target_uA_per_um"],
                                vdd_V=b["vdd_V"])
        notes: list[str] = []
        for v in tc.vg_V:  # cached points: the notes of the fallbacks each one needed
            for n in sim.solve_bias(design, float(v), b["vd_V"]).solver_notes:
                if n not in notes:
                    notes.append(n)
        m = tc.metrics
        out.update(status="ok", solver_notes=notes, warnings=list(design_warnings(design)),
                   metrics={k: getattr(m, k).value for k in METRICS},
                   missing={k: getattr(m, k).reason for k in METRICS if getattr(m, k).value is None})
    except (SolverError, ValueError, ArithmeticError) as exc:
        out["error"] = f"{type(exc).__name__}: {exc}"
    except Exception as exc:  # noqa: BLE001 - any other failure is a row, never a lost sweep
        out.update(error=f"{type(exc).__name__}: {exc}", cacheable=False)
    out["compute_s"] = time.perf_counter() - t0
    out["cpu_s"] = time.process_time() - c0
    return out


#: Niceness of the worker thread running a design for a page's local cluster: the band
#: diagrams of the explorer (same machine, other process) then get the cores first, as
#: `app.jobs.PriorityGate` orders points inside the server (engineering choice, no source).
BACKGROUND_NICENESS = 10


def evaluate_design_in_background(inputs: dict[str, Any]) -> dict[str, Any]:
    """`evaluate_design` at a lower CPU priority (`BACKGROUND_NICENESS`) of its thread.

    On Linux the nice value is a property of each thread (setpriority(2), NOTES), so
    this lowers the worker thread that runs the task only; raising niceness needs no
    privilege, and where it is refused the task runs at the normal priority.
    """
    try:
        now = os.getpriority(os.PRIO_PROCESS, 0)
        if now < BACKGROUND_NICENESS:
            os.setpriority(os.PRIO_PROCESS, 0, BACKGROUND_NICENESS)
    except (AttributeError, OSError):  # not a POSIX system, or not allowed
        pass
    return evaluate_design(inputs)


# ------------------------------------------------------------------ cache and table files
def _atomic_write(path: Path, data: bytes) -> None:
    """Write ``data`` to ``path`` (folder created) through a temporary file and a rename."""
    from sub60.app.atomic import write_bytes_atomic

    path.parent.mkdir(parents=True, exist_ok=True)
    write_bytes_atomic(path, data)


class ResultCache:
    """Content-addressed store of task results: ``DIR/cache/<key[:2]>/<key>.json``."""

    def __init__(self, out_dir: str | Path):
        self.root = Path(out_dir) / CACHE_DIR

    def path(self, key: str) -> Path:
        return self.root / key[:2] / f"{key}.json"

    def get(self, key: str) -> dict[str, Any] | None:
        """The stored result, or None (also for a damaged entry, which is then recomputed)."""
        try:
            data = json.loads(self.path(key).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return None
        return data.get("result") if isinstance(data, dict) and data.get("key") == key else None

    def put(self, key: str, inputs: dict[str, Any], result: dict[str, Any]) -> None:
        body = json.dumps({"key": key, "inputs": inputs, "result": result}, indent=1,
                          allow_nan=False)
        _atomic_write(self.path(key), body.encode())

    def __len__(self) -> int:
        return sum(1 for _ in self.root.glob("*/*.json")) if self.root.exists() else 0


def _row(index: int, design: Design, key: str, result: dict[str, Any] | None, cached: bool,
         status: str | None = None, error: str | None = None) -> dict[str, Any]:
    row: dict[str, Any] = {"index": index}
    row.update(design.to_dict())
    r = result or {}
    row["status"] = status or r.get("status", "failed")
    metrics = r.get("metrics", {})
    for k in METRICS:
        v = metrics.get(k)
        row[k] = float(v) if v is not None and math.isfinite(v) else None
    row["metrics_missing"] = "; ".join(f"{k}: {v}" for k, v in r.get("missing", {}).items())
    row["solver_notes"] = "; ".join(r.get("solver_notes", []))
    row["warnings"] = " | ".join(r.get("warnings", []))
    row["error"] = error if error is not None else (r.get("error") or "")
    row["cached"] = cached
    row["compute_s"] = r.get("compute_s")
    row["cpu_s"] = r.get("cpu_s")
    row["key"] = key
    return row


def write_table(rows: list[dict[str, Any]], out_dir: str | Path, metadata: dict[str, Any]) -> Path:
    """Write the rows as ``results.parquet`` and ``results.csv`` (each atomically).

    Text columns hold "" rather than null; metric columns are null where undefined (the
    reason is in ``metrics_missing``). The Parquet schema metadata carries ``metadata``
    (the spec, the model version) as JSON under the key ``sub60_sweep``.
    """
    import io

    import pyarrow as pa
    import pyarrow.csv as pcsv
    import pyarrow.parquet as pq

    out = Path(out_dir)
    columns = list(rows[0]) if rows else ["index"]
    types = {"index": pa.int64(), "cached": pa.bool_(), "compute_s": pa.float64(),
             "cpu_s": pa.float64(),
             **{k: pa.float64() for k in METRICS}}
    for f in dataclasses.fields(Design):
        types[f.name] = pa.float64() if f.name in _float_fields() else pa.string()
    arrays = {c: pa.array([r.get(c) for r in rows], type=types.get(c, pa.string())) for c in columns}
    table = pa.table(arrays).replace_schema_metadata({"sub60_sweep": canonical_json(metadata)})
    buf = io.BytesIO()
    pq.write_table(table, buf)
    _atomic_write(out / f"{TABLE_NAME}.parquet", buf.getvalue())
    cbuf = io.BytesIO()
    pcsv.write_csv(table, cbuf)
    _atomic_write(out / f"{TABLE_NAME}.csv", cbuf.getvalue())
    return out / f"{TABLE_NAME}.parquet"


@lru_cache(maxsize=1)
def _float_fields() -> frozenset[str]:
    from sub60.physics import FIELD_RANGES

    return frozenset(k for k, s in FIELD_RANGES.items() if s.kind is float)


def read_table(out_dir: str | Path) -> list[dict[str, Any]]:
    """The rows of a sweep's ``results.parquet`` (as dictionaries, in sweep order)."""
    import pyarrow.parquet as pq

    return pq.read_table(Path(out_dir) / f"{TABLE_NAME}.parquet").to_pylist()


# ------------------------------------------------------------------ progress and result
@dataclass
class Progress:
    """State of a running sweep, passed to the progress callback.

    Attributes: total designs; done (rows known); computed / cached / failed counts;
    elapsed_s [s]; eta_s [s] (None until a design has been computed); rate [designs/s]
    of the computed ones.
    """

    total: int
    done: int = 0
    computed: int = 0
    cached: int = 0
    failed: int = 0
    elapsed_s: float = 0.0
    eta_s: float | None = None
    rate: float | None = None

    def line(self) -> str:
        eta = "" if self.eta_s is None else f", ETA {_duration(self.eta_s)}"
        rate = "" if self.rate is None else f", {self.rate:.2f} designs/s"
        return (f"{self.done}/{self.total} designs ({self.computed} computed, {self.cached} cached, "
                f"{self.failed} failed){rate}{eta}")


def _duration(s: float) -> str:
    s = max(0.0, s)
    if s < 90:
        return f"{s:.0f} s"
    if s < 5400:
        return f"{s / 60:.1f} min"
    return f"{s / 3600:.1f} h"


@dataclass
class SweepResult:
    """Outcome of a sweep: the rows (sweep order), counts and files written."""

    rows: list[dict[str, Any]]
    total: int
    computed: int
    cached: int
    failed: int
    cancelled: bool
    wall_s: float
    table_path: Path | None
    scheduler: str = ""
    workers: int = 0
    compute_s: list[float] = field(default_factory=list)
    cpu_s: list[float] = field(default_factory=list)

    def ok_rows(self) -> list[dict[str, Any]]:
        return [r for r in self.rows if r["status"] == "ok"]


def best_designs(rows: list[dict[str, Any]], metric: str = "ion_uA_per_um", n: int = 5,
                 largest: bool = True) -> list[dict[str, Any]]:
    """The n rows with the largest (or smallest) value of ``metric``, skipping undefined ones."""
    have = [r for r in rows if r.get("status") == "ok" and r.get(metric) is not None]
    return sorted(have, key=lambda r: r[metric], reverse=largest)[:n]


def pareto_front(rows: list[dict[str, Any]], maximize: str = "ion_uA_per_um",
                 minimize: str = "ss_avg4_mV_per_dec") -> list[dict[str, Any]]:
    """Rows not dominated in (largest ``maximize``, smallest ``minimize``), by ``minimize``.

    A row is dominated when another is at least as good in both and better in one.
    """
    have = [r for r in rows if r.get("status") == "ok" and r.get(maximize) is not None
            and r.get(minimize) is not None]
    have.sort(key=lambda r: (r[minimize], -r[maximize]))
    front, best = [], -math.inf
    for r in have:
        if r[maximize] > best:
            front.append(r)
            best = r[maximize]
    return front


# ------------------------------------------------------------------ the run
def _client(scheduler: str | None, workers: int | None, connect_timeout_s: float = 20.0):
    from distributed import Client

    if scheduler:
        return Client(scheduler, timeout=f"{connect_timeout_s}s"), None
    cluster = local_cluster(workers or os.cpu_count() or 1)
    return Client(cluster), cluster


def local_cluster(n_workers: int) -> Any:
    """A ``distributed.LocalCluster`` of ``n_workers`` single-threaded worker processes on
    127.0.0.1, with `LOCAL_CLUSTER_CONFIG` (its scheduler in this process)."""
    import dask
    from distributed import LocalCluster

    with dask.config.set(LOCAL_CLUSTER_CONFIG):
        return LocalCluster(n_workers=n_workers, threads_per_worker=1, processes=True,
                            **LOCAL_CLUSTER_OPTIONS)


def run_sweep(spec: SweepSpec, out_dir: str | Path, *, scheduler: str | None = None,
              workers: int | None = None, client: Any = None,
              progress: Callable[[Progress], None] | None = None,
              on_rows: Callable[[list[dict[str, Any]]], None] | None = None,
              cancel: threading.Event | None = None, retry_failed: bool = False,
              table_every_s: float = TABLE_EVERY_S,
              designs: list[Design] | None = None,
              connect_timeout_s: float = 20.0,
              task: Callable[[dict[str, Any]], dict[str, Any]] = evaluate_design) -> SweepResult:
    """Compute every design of ``spec`` not yet in the cache of ``out_dir``; write the table.

    Parameters
    ----------
    spec : a validated sweep (see `sweep_spec.load_spec`)
    out_dir : output folder (created): ``cache/``, ``results.parquet``, ``results.csv``,
        ``sweep.json``
    scheduler : address of a running Dask scheduler (``tcp://HOST:PORT``); default a
        LocalCluster of ``workers`` single-threaded processes (default: the cores)
    client : an existing ``distributed.Client`` to use instead (not closed here)
    progress : called with a `Progress` after each batch of finished designs
    on_rows : called after each batch with the rows that became known since the last call
        (the cached ones first; each row once, as in the final table; not the "cancelled"
        rows added at the end), so that a caller can show the results as they arrive
    cancel : when set, pending tasks are cancelled and the rows so far are written
    retry_failed : recompute designs whose cached result is a failure
    designs : run these designs instead of the spec's grid or sample (the spec still gives
        the bias plan, physics options and title); used by `sensitivity`
    connect_timeout_s : how long to try to reach ``scheduler`` [s] (then OSError)
    task : the function run per design: `evaluate_design`, or
        `evaluate_design_in_background` (a page's local cluster); same results

    Returns
    -------
    SweepResult
        rows in sweep order (status "ok", "failed" or "cancelled"), counts, wall time [s].

    Raises
    ------
    SpecError
        when a design of the sweep is invalid (before anything is computed).
    """
    t0 = time.perf_counter()
    spec_designs = None
    if designs is None:
        designs = spec_designs = spec.designs()  # every design validated before anything runs
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    version = model_version()
    cache = ResultCache(out)
    inputs = [task_inputs(d, spec, version) for d in designs]
    keys = [task_key(i) for i in inputs]
    rows: list[dict[str, Any] | None] = [None] * len(designs)
    by_key: dict[str, list[int]] = {}
    st = Progress(total=len(designs))
    fresh: list[int] = []  # rows known since the last `on_rows` call
    for i, k in enumerate(keys):
        hit = cache.get(k)
        if hit is not None and not (retry_failed and hit.get("status") != "ok"):
            rows[i] = _row(i, designs[i], k, hit, cached=True)
            fresh.append(i)
            st.cached += 1
            st.failed += hit.get("status") != "ok"
        else:
            by_key.setdefault(k, []).append(i)
    st.done = st.cached
    explicit = designs is not None and designs is not spec_designs
    meta = {"spec": spec.to_dict(), "model": version, "explicit_designs": explicit}
    res = SweepResult([], len(designs), 0, st.cached, 0, False, 0.0, None)
    compute_s: list[float] = []
    cpu_s: list[float] = []
    cancelled = False
    table_at = [time.perf_counter(), table_every_s]  # last rewrite, interval [s]
    ready = [t0]  # when the cluster was ready: the rate and ETA count from there

    def table(final: bool = False) -> Path | None:
        have = [r for r in rows if r is not None]
        return write_table(have, out, meta) if (have or final) else None

    def record(k: str, result: dict[str, Any] | None, error: str | None) -> None:
        """One finished task: cache it (when it is a property of its inputs), fill its rows."""
        first = by_key[k][0]
        if result is not None and result.get("cacheable") and result.get("model") == version:
            cache.put(k, inputs[first], result)
        if result is not None:
            compute_s.append(result.get("compute_s") or 0.0)
            cpu_s.append(result.get("cpu_s") or 0.0)
        for i in by_key[k]:
            rows[i] = _row(i, designs[i], keys[i], result, cached=False, error=error)
            fresh.append(i)
            st.done += 1
            st.computed += 1
            st.failed += rows[i]["status"] != "ok"

    def after_batch() -> None:
        st.elapsed_s = time.perf_counter() - t0
        if st.computed:
            st.rate = st.computed / max(time.perf_counter() - ready[0], 1e-9)
            st.eta_s = (st.total - st.done) / st.rate
        if progress is not None:
            progress(dataclasses.replace(st))
        if on_rows is not None and fresh:
            new = [rows[i] for i in fresh]
            fresh.clear()
            on_rows(new)
        now = time.perf_counter()
        if now - table_at[0] > table_at[1]:
            table()
            # a big table takes a while to write: never spend more than ~10 % of the time on it
            table_at[:] = [time.perf_counter(), max(table_every_s, 10 * (time.perf_counter() - now))]

    after_batch()
    if by_key:
        if client is not None:
            cl, own = client, None
        else:
            cl, own = _client(scheduler, workers, connect_timeout_s)
        try:
            res.scheduler = cl.scheduler.address
            res.workers = len(cl.scheduler_info().get("workers", {}))
            todo = {k: inputs[idx[0]] for k, idx in by_key.items()}
            ready[0] = time.perf_counter()
            cancelled = _gather(cl, todo, record, after_batch, cancel, task)
        finally:
            if client is None:
                cl.close()
                if own is not None:
                    own.close()
    for i, r in enumerate(rows):
        if r is None:
            rows[i] = _row(i, designs[i], keys[i], None, cached=False, status="cancelled",
                           error="sweep cancelled before this design ran")
    path = table(final=True)
    res.rows = [r for r in rows if r is not None]
    res.computed, res.failed, res.cancelled = st.computed, st.failed, cancelled
    res.cached, res.compute_s, res.cpu_s = st.cached, compute_s, cpu_s
    res.wall_s = time.perf_counter() - t0
    res.table_path = path
    summary = {"title": spec.title, "model": version, "designs": res.total, "computed": res.computed,
               "cached": res.cached, "failed": res.failed, "cancelled": cancelled,
               "wall_s": round(res.wall_s, 3), "scheduler": res.scheduler, "workers": res.workers,
               "finished_utc": time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime()),
               "explicit_designs": explicit, "spec": spec.to_dict()}
    _atomic_write(out / "sweep.json", json.dumps(summary, indent=1).encode())
    return res


def _gather(cl, todo: dict[str, dict[str, Any]],
            record: Callable[[str, dict[str, Any] | None, str | None], None],
            after_batch: Callable[[], None], cancel: threading.Event | None,
            task: Callable[[dict[str, Any]], dict[str, Any]] = evaluate_design) -> bool:
    """Submit one task per key and hand each result to ``record`` as it finishes.

    Returns True when cancelled (``cancel`` set, or KeyboardInterrupt): the tasks not yet
    finished are cancelled on the cluster. A task that raised after its retries, or whose
    worker was lost too often, is recorded with ``result=None`` and the error text.
    """
    from distributed import as_completed

    names = list(todo)
    futures = cl.map(task, [todo[k] for k in names],
                     key=[f"sub60-design-{k}" for k in names], pure=True, retries=TASK_RETRIES)
    key_of = {f.key: k for f, k in zip(futures, names, strict=True)}
    pending = {f.key: f for f in futures}
    ac = as_completed(futures)
    del futures  # finished results are released as they are recorded
    try:
        while not ac.is_empty():
            if cancel is not None and cancel.is_set():
                raise KeyboardInterrupt
            if not ac.has_ready():
                time.sleep(0.05)
                continue
            for f in ac.next_batch(block=False):
                pending.pop(f.key, None)
                try:
                    result, error = f.result(), None
                except Exception as exc:  # noqa: BLE001 - a lost worker (too often), a cancelled task
                    result, error = None, f"task lost: {type(exc).__name__}: {exc}"
                record(key_of[f.key], result, error)
                f.release()
            after_batch()
    except KeyboardInterrupt:
        cl.cancel(list(pending.values()))
        return True
    return False


class SweepJob:
    """A sweep running in a background thread, for a page or any caller that must not block.

    ``job = SweepJob(spec, out_dir, scheduler=...)`` starts at once; ``job.progress`` is
    the latest `Progress` (None before the first), ``job.cancel()`` asks it to stop (the
    rows so far are written), ``job.done`` tells whether it ended and ``job.result(timeout)``
    returns the `SweepResult` or raises what the sweep raised. ``on_progress`` (optional)
    is called from the sweep's thread: a UI must hand it over to its own event loop.
    """

    def __init__(self, spec: SweepSpec, out_dir: str | Path, *,
                 on_progress: Callable[[Progress], None] | None = None, **kw: Any):
        self._cancel = threading.Event()
        self._on_progress = on_progress
        self.progress: Progress | None = None
        self._result: SweepResult | None = None
        self._error: BaseException | None = None
        self._thread = threading.Thread(target=self._run, args=(spec, out_dir, kw),
                                        name="sub60-sweep", daemon=True)
        self._thread.start()

    def _report(self, p: Progress) -> None:
        self.progress = p
        if self._on_progress is not None:
            self._on_progress(p)

    def _run(self, spec: SweepSpec, out_dir: str | Path, kw: dict[str, Any]) -> None:
        try:
            self._result = run_sweep(spec, out_dir, progress=self._report, cancel=self._cancel, **kw)
        except BaseException as exc:  # noqa: BLE001 - handed to the caller by result()
            self._error = exc

    def cancel(self) -> None:
        self._cancel.set()

    @property
    def done(self) -> bool:
        return not self._thread.is_alive()

    def result(self, timeout: float | None = None) -> SweepResult:
        self._thread.join(timeout)
        if self._thread.is_alive():
            raise TimeoutError(f"sweep still running after {timeout} s")
        if self._error is not None:
            raise self._error
        assert self._result is not None
        return self._result


# ------------------------------------------------------------------ sensitivity
#: Relative step of the central differences [-]. Small enough for the curvature error
#: (O(h^2)) to stay below the solver's noise on the metrics, large enough for their
#: differences to rise above it; engineering choice, no source.
SENSITIVITY_STEP = 0.05


def sensitivity_designs(design: Design, fields: list[str] | tuple[str, ...],
                        rel_step: float = SENSITIVITY_STEP) -> list[tuple[str, float, Design, Design]]:
    """For each numeric field, the designs one step below and above ``design``.

    The step is ``rel_step`` of the value (of 1 for a zero value), shrunk near the ends of
    the field's range so that both neighbours are valid; returns (field, h, below, above)
    with ``h`` the half distance between the two values [field unit]. Fields whose range
    leaves no room, or whose neighbours break a combination rule, raise ValueError.
    """
    from sub60.physics import FIELD_RANGES

    out = []
    for name in fields:
        spec = FIELD_RANGES.get(name)
        if spec is None or spec.kind is not float:
            raise ValueError(f"{name}: not a numeric design field; sensitivity needs one of "
                             + ", ".join(k for k, v in FIELD_RANGES.items() if v.kind is float))
        x = getattr(design, name)
        if x is None:
            raise ValueError(f"{name}: not set in this design")
        h = rel_step * (abs(x) if x != 0 else 1.0)
        h = min(h, x - spec.low, spec.high - x)
        if not h > 0:
            raise ValueError(f"{name}: {x:g} sits at the end of its range {spec.describe()}; "
                             "no central difference")
        lo, hi = float(f"{x - h:.12g}"), float(f"{x + h:.12g}")
        out.append((name, (hi - lo) / 2, design.replace(**{name: lo}), design.replace(**{name: hi})))
    return out


def sensitivity(design: Design, fields: list[str] | tuple[str, ...], spec: SweepSpec,
                out_dir: str | Path, metrics: tuple[str, ...] = ("ion_uA_per_um", "ss_avg4_mV_per_dec"),
                rel_step: float = SENSITIVITY_STEP, **kw: Any) -> list[dict[str, Any]]:
    """Normalised sensitivities (x/M) dM/dx of metrics to design fields, ranked by size.

    Central differences, dM/dx = (M(x+h) - M(x-h)) / 2h, error O(h^2) (e.g. W. H. Press
    et al., *Numerical Recipes*, 3rd ed., section 5.7); the normalised form is the
    relative change of the metric per relative change of the field [-], so fields of
    different units compare. The 2 x len(fields) + 1 designs run as one sweep on the same
    engine (and cache) with ``spec``'s bias plan and physics options; ``kw`` goes to
    `run_sweep` (scheduler, workers, client, progress, cancel).

    Returns
    -------
    list of dict
        ``field``, ``metric``, ``value`` (None when a metric is undefined at one of the
        three designs, with ``reason``), ``derivative`` [metric unit / field unit], sorted
        by |value|, largest first, undefined ones last.
    """
    steps = sensitivity_designs(design, fields, rel_step)
    designs = [design] + [d for _, _, lo, hi in steps for d in (lo, hi)]
    sub = dataclasses.replace(spec, title=f"sensitivity at one design ({len(fields)} fields)")
    res = run_sweep(sub, out_dir, designs=designs, **kw)
    by_index = {r["index"]: r for r in res.rows}
    centre = by_index[0]
    out = []
    for j, (name, h, _, _) in enumerate(steps):
        lo, hi = by_index[1 + 2 * j], by_index[2 + 2 * j]
        x = getattr(design, name)
        for m in metrics:
            vals = (lo.get(m), centre.get(m), hi.get(m))
            item: dict[str, Any] = {"field": name, "metric": m, "value": None, "derivative": None,
                                    "reason": None}
            if any(v is None for v in vals):
                bad = [r for r in (lo, centre, hi) if r.get(m) is None]
                item["reason"] = (f"{m} undefined at {name} = {bad[0][name]!r}: "
                                  + (bad[0]["error"] or bad[0]["metrics_missing"] or bad[0]["status"]))
            elif vals[1] == 0:
                item["reason"] = f"{m} is 0 at the design; no relative change"
            else:
                deriv = (vals[2] - vals[0]) / (2 * h)
                item.update(derivative=deriv, value=deriv * x / vals[1])
            out.append(item)
    out.sort(key=lambda r: (r["value"] is None, -abs(r["value"] or 0.0)))
    return out
