"""A sweep against a real Dask cluster started with Dask's own commands, losing a worker.

A scheduler and two single-threaded workers (``python -m distributed.cli.dask_scheduler``
and ``... dask_worker``, random ports on 127.0.0.1, no nanny so that the process we kill
is the worker itself) run a 20-design sweep through ``sub60 sweep --scheduler``. One
worker is killed (SIGKILL) once a few designs are done; Dask reschedules its tasks on the
other worker and the table must still hold all 20 designs, each with its metrics.
(Fault tolerance of the scheduler: documented Dask behaviour; the check is our own.)
Every process started here is stopped by its pid.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

from sub60.app.sweep_engine import read_table

ROOT = Path(__file__).resolve().parents[2]
SPEC = """title = "20 cheap designs for the lost-worker check"
[[knob]]
field = "body_thickness_nm"
low = 5.0
high = 9.75
steps = 20
[bias]
vg_V = [-0.1, 0.6, 15]
vd_V = 0.3
"""


def _wait_for(pred, timeout: float, what: str):
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        value = pred()
        if value:
            return value
        time.sleep(0.05)
    raise AssertionError(f"timed out waiting for {what}")


def test_sweep_through_a_scheduler_survives_a_killed_worker(tmp_path: Path) -> None:
    env = {**os.environ, "OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1"}
    sched_file = tmp_path / "scheduler.json"
    log = open(tmp_path / "cluster.log", "w")  # noqa: SIM115 - closed in finally
    procs: list[subprocess.Popen] = []
    try:
        procs.append(subprocess.Popen(
            [sys.executable, "-m", "distributed.cli.dask_scheduler", "--host", "127.0.0.1",
             "--port", "0", "--no-dashboard", "--dashboard-address", "127.0.0.1:0",
             "--scheduler-file", str(sched_file)],
            stdout=log, stderr=subprocess.STDOUT, env=env))
        _wait_for(lambda: sched_file.exists() and sched_file.stat().st_size > 0, 30, "the scheduler")
        address = json.loads(sched_file.read_text())["address"]
        assert address.startswith("tcp://127.0.0.1:")
        for _ in range(2):
            procs.append(subprocess.Popen(
                [sys.executable, "-m", "distributed.cli.dask_worker", "--scheduler-file", str(sched_file),
                 "--host", "127.0.0.1", "--nthreads", "1", "--no-nanny", "--no-dashboard",
                 "--dashboard-address", "127.0.0.1:0"],
                stdout=log, stderr=subprocess.STDOUT, env=env))
        from distributed import Client

        with Client(address, timeout="30s") as c:
            c.wait_for_workers(2, timeout=40)
        victim = procs[1]

        spec = tmp_path / "twenty.toml"
        spec.write_text(SPEC)
        out = tmp_path / "out"
        sweep = subprocess.Popen(
            [sys.executable, "-m", "sub60.app", "sweep", str(spec), "--out", str(out),
             "--scheduler", address], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
            env=env, cwd=ROOT)
        procs.append(sweep)
        cache = out / "cache"
        done_at_kill = _wait_for(lambda: len(list(cache.glob("*/*.json"))) >= 3 and
                                 len(list(cache.glob("*/*.json"))), 180, "three designs done")
        assert victim.poll() is None, "the worker ended by itself"
        os.kill(victim.pid, signal.SIGKILL)
        victim.wait(10)
        # generous guards, not speed checks: on a loaded 2-core machine a cold worker
        # (imports, first compilation of the kernels) takes tens of seconds per design
        stdout, stderr = sweep.communicate(timeout=300)
        assert sweep.returncode == 0, stderr
        assert done_at_kill < 20, "the sweep finished before the worker was killed"
        rows = read_table(out)
        assert len(rows) == 20, stdout
        assert [r["body_thickness_nm"] for r in rows] == [5.0 + 0.25 * i for i in range(20)]
        assert all(r["status"] == "ok" and r["ss_min_mV_per_dec"] is not None for r in rows), \
            [r["error"] for r in rows if r["status"] != "ok"]
        assert "20 designs: 20 computed, 0 from the cache, 0 failed" in stdout
        assert victim.returncode == -signal.SIGKILL
    finally:
        for p in reversed(procs):
            if p.poll() is None:
                p.terminate()
                try:
                    p.wait(10)
                except subprocess.TimeoutExpired:
                    p.kill()
                    p.wait(5)
        log.close()
