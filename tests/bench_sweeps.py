"""Benchmark of design sweeps on Dask: throughput, scaling, scheduler overhead, a big sweep.

    python tests/bench_sweeps.py [--designs 32] [--repeats 3] [--big 500] [--vg-points 46]
    python tests/bench_sweeps.py --quick      # a reduced run to check that it works (~2 min)
    python tests/bench_sweeps.py --dask-defaults --big 0   # the same with Dask's own settings

Prints, from one run (medians over the repeats; 1- and 2-worker runs interleaved):

- designs per second with 1 and 2 local worker processes (one thread each) on the same
  designs, and the scaling ratio;
- the scheduler overhead per task: (a) from the sweep itself, (wall x workers - sum of the
  tasks' own compute times) / tasks, against the median task, also without the per-sweep
  fixed cost (validation, cache reads, table writes: the wall time of a fully cached
  rerun); (b) the round trip of trivial tasks through the same cluster;
- the CPU share of the tasks (CPU / wall time inside each task): below 1 when other
  processes hold the cores, which then also caps the scaling ratio;
- the wall time of a ``--big``-design sweep on 2 local workers;
- an estimate for 100,000 designs on 64 workers from the measured per-task figures;
- a closing summary of those figures beside their targets (scaling ratio >= 1.7 on 2
  cores, overhead <= 5 % of a task), with the load average before and after: on a shared
  machine the figures are loaded, and the CPU share tells by how much.

Every sweep writes into a fresh temporary folder (no cache hits), on a cluster of its own
started with the engine's settings (only one cluster runs at a time). Worker start-up (process
spawn, imports, the compiled kernels' first call) is excluded by a warm-up task per worker
and reported separately. The machine may be shared: the figures are then noisy.
"""

from __future__ import annotations

import argparse
import os
import statistics
import tempfile
import time

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")


def _noop(i: int) -> int:
    return i


def _spec(n_body: int, n_wf: int, vg_points: int):
    from sub60.app.sweep_spec import spec_from_text

    return spec_from_text(
        f'title = "benchmark"\n[[knob]]\nfield = "body_thickness_nm"\nlow = 4.0\nhigh = 12.0\n'
        f'steps = {n_body}\n[[knob]]\nfield = "gate_workfunction_eV"\nlow = 4.7\nhigh = 5.1\n'
        f'steps = {n_wf}\n[bias]\nvg_V = [-0.3, 0.6, {vg_points}]\nvd_V = 0.3\n', allow_large=True)


def _cluster(n: int):
    from distributed import Client

    from sub60.app.sweep_engine import evaluate_design, local_cluster, model_version, task_inputs
    from sub60.physics import Design

    t0 = time.perf_counter()
    if DASK_DEFAULTS:  # for comparison: Dask's own settings, as before LOCAL_CLUSTER_CONFIG
        from distributed import LocalCluster

        from sub60.app.sweep_engine import LOCAL_CLUSTER_OPTIONS

        cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=True,
                               **LOCAL_CLUSTER_OPTIONS)
    else:
        cluster = local_cluster(n)  # the engine's own settings (`LOCAL_CLUSTER_CONFIG`)
    client = Client(cluster)
    started = time.perf_counter() - t0
    warm = task_inputs(Design(), _spec(2, 2, 5), model_version())
    for w in client.scheduler_info()["workers"]:  # imports and compiled kernels, once per worker
        client.submit(evaluate_design, warm, workers=[w], pure=False).result()
    return cluster, client, started, time.perf_counter() - t0


CPU_SHARE: dict[int, list[float]] = {1: [], 2: []}
DASK_DEFAULTS = False
FIXED_S: list[float] = []


def _sweep(client, spec) -> tuple[float, list[float], int]:
    from sub60.app.sweep_engine import run_sweep

    with tempfile.TemporaryDirectory(prefix="sub60-bench-") as out:
        res = run_sweep(spec, out, client=client)
        again = run_sweep(spec, out, client=client)  # all cached: the per-sweep fixed cost
    assert res.computed == res.total and res.cached == 0 and again.cached == res.total
    FIXED_S.append(again.wall_s)
    n = len(client.scheduler_info()["workers"])
    CPU_SHARE.setdefault(n, []).append(sum(res.cpu_s) / max(sum(res.compute_s), 1e-9))
    return res.wall_s, res.compute_s, res.failed


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--designs", type=int, default=32, help="designs of the scaling sweeps (even)")
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--big", type=int, default=500, help="designs of the big sweep (0: skip)")
    ap.add_argument("--vg-points", type=int, default=46, help="gate voltages per transfer curve")
    ap.add_argument("--noop", type=int, default=1000, help="trivial tasks for the round trip")
    ap.add_argument("--quick", action="store_true",
                    help="a reduced run: 8 designs, 1 repeat, a 40-design big sweep, 15 gate "
                         "voltages, 200 trivial tasks (checks the script; figures are rough)")
    ap.add_argument("--dask-defaults", action="store_true",
                    help="run the clusters with Dask's default settings instead of the "
                         "engine's LOCAL_CLUSTER_CONFIG (to compare the two)")
    a = ap.parse_args()
    global DASK_DEFAULTS
    DASK_DEFAULTS = a.dask_defaults
    if a.quick:
        a.designs, a.repeats, a.big, a.vg_points, a.noop = 8, 1, 40, 15, 200
    if a.designs < 2 or a.repeats < 1 or a.big < 0 or not 3 <= a.vg_points <= 401:
        ap.error("--designs >= 2, --repeats >= 1, --big >= 0, --vg-points in [3, 401]")
    load_before = os.getloadavg()[0]

    print(f"cores: {os.cpu_count()}, load average before: {load_before:.2f}"
          + (" (quick run)" if a.quick else "")
          + ("; clusters with Dask's default settings" if a.dask_defaults else
             "; clusters with the engine's settings"))
    spec = _spec(a.designs // 2, 2, a.vg_points)
    # one cluster at a time: an idle second cluster would take CPU from the measured one
    starts: dict[int, list[float]] = {1: [], 2: []}
    warms: dict[int, list[float]] = {1: [], 2: []}
    walls: dict[int, list[float]] = {1: [], 2: []}
    tasks: dict[int, list[float]] = {1: [], 2: []}
    failed = 0
    c2 = cl2 = None
    try:
        for _ in range(a.repeats):
            for n in (1, 2):
                c, cl, s, w = _cluster(n)
                starts[n].append(s)
                warms[n].append(w - s)
                try:
                    wall, comp, f = _sweep(cl, spec)
                finally:
                    cl.close()
                    c.close()
                walls[n].append(wall)
                tasks[n].extend(comp)
                failed += f
        print("cluster start (medians): " + ", ".join(
            f"{n} worker{'s' if n > 1 else ''} {statistics.median(starts[n]):.1f} s (+ warm-up "
            f"{statistics.median(warms[n]):.1f} s)" for n in (1, 2)))
        c2, cl2, _, _ = _cluster(2)
        n_d = spec.size()
        rate = {n: n_d / statistics.median(w) for n, w in walls.items()}
        print(f"\nscaling sweep: {n_d} designs, {a.vg_points} gate voltages each, {a.repeats} "
              f"repeat{'s' if a.repeats > 1 else ''} ({failed} failed designs in all)")
        for n in (1, 2):
            print(f"  {n} worker{'s' if n > 1 else ' '}: median wall {statistics.median(walls[n]):.2f} s "
                  f"-> {rate[n]:.3f} designs/s (walls {', '.join(f'{w:.2f}' for w in walls[n])})")
        print(f"  scaling ratio 2 workers / 1 worker: {rate[2] / rate[1]:.2f}")
        print("  CPU share of the tasks (CPU time / wall time inside the task; < 1: waiting for a "
              "core held by other processes): "
              + ", ".join(f"{n} worker{'s' if n > 1 else ''} {statistics.median(CPU_SHARE[n]):.2f}"
                          for n in (1, 2)))
        share = {n: statistics.median(CPU_SHARE[n]) for n in (1, 2)}
        cores = {n: n * share[n] for n in (1, 2)}
        print(f"  cores the tasks actually got: 1 worker {cores[1]:.2f}, 2 workers {cores[2]:.2f}; "
              f"scaling per core obtained: {rate[2] / rate[1] / (cores[2] / cores[1]):.2f} "
              "(1.00 = the engine adds no loss; the scaling ratio on idle cores would be about "
              f"{2 * rate[2] / rate[1] / (cores[2] / cores[1]):.2f})")
        task_med = statistics.median(tasks[1])
        print(f"  task compute time (inside the task, 1 worker): median {task_med:.3f} s, "
              f"min {min(tasks[1]):.3f} s, max {max(tasks[1]):.3f} s")
        for n in (1, 2):
            over = [(w * n - sum(tasks[n][i * n_d:(i + 1) * n_d])) / n_d
                    for i, w in enumerate(walls[n])]
            o = statistics.median(over)
            o_net = o - statistics.median(FIXED_S) * n / n_d
            print(f"  overhead per task, {n} worker{'s' if n > 1 else ''} (wall x workers - sum of task "
                  f"times) / tasks: {o * 1e3:.1f} ms = {100 * o / task_med:.1f} % of the median task; "
                  f"without the per-sweep fixed cost: {o_net * 1e3:.1f} ms = "
                  f"{100 * o_net / task_med:.1f} %")

        print(f"  per-sweep fixed cost (validate, read the cache, write the tables; a fully "
              f"cached rerun): median {statistics.median(FIXED_S) * 1e3:.0f} ms")
        t0 = time.perf_counter()
        futs = cl2.map(_noop, range(a.noop), pure=False)
        cl2.gather(futs)
        rt = (time.perf_counter() - t0) / a.noop
        print(f"  trivial tasks through the 2-worker cluster: {rt * 1e3:.2f} ms per task "
              f"({a.noop} tasks) = {100 * rt / task_med:.2f} % of the median task")

        big_wall = None
        if a.big:
            nb = max(2, round(a.big / 20))
            big = _spec(nb, 20, a.vg_points)
            big_wall, comp, f = _sweep(cl2, big)
            print(f"\nbig sweep: {big.size()} designs on 2 workers: wall {big_wall:.1f} s "
                  f"({big.size() / big_wall:.3f} designs/s, {f} failed; median task "
                  f"{statistics.median(comp):.3f} s)")

        # 100,000 designs on 64 workers: compute time divided over the workers, plus the
        # measured per-task overhead, bounded below by the scheduler's serial per-task cost
        n, w = 100_000, 64
        per_task = task_med
        over2 = statistics.median([(wl * 2 - sum(tasks[2][i * n_d:(i + 1) * n_d])) / n_d
                                   for i, wl in enumerate(walls[2])])
        est = n * (per_task + max(over2, 0.0)) / w
        floor = n * rt
        print(f"\nestimate, {n:,} designs on {w} workers: {n:,} x ({per_task:.3f} s task + "
              f"{max(over2, 0) * 1e3:.1f} ms overhead) / {w} = {est / 60:.1f} min "
              f"(scheduler floor {n:,} x {rt * 1e3:.2f} ms = {floor / 60:.1f} min; "
              f"cluster start and the per-worker warm-up of "
              f"~{statistics.median(warms[1]):.0f} s not included)")

        load_after = os.getloadavg()[0]
        ratio = rate[2] / rate[1]
        pct = 100 * over2 / task_med
        print("\nsummary (medians of this run)")
        print(f"  designs/s: 1 worker {rate[1]:.3f}, 2 workers {rate[2]:.3f}; ratio {ratio:.2f} "
              f"(target >= 1.7 on 2 cores: {'met' if ratio >= 1.7 else 'not met'}; CPU share "
              f"of the tasks {share[1]:.2f} / {share[2]:.2f})")
        print(f"  scheduler overhead per task, 2 workers: {over2 * 1e3:.1f} ms = {pct:.1f} % of "
              f"the median task (target <= 5 %: {'met' if pct <= 5 else 'not met'}; it includes "
              "the sweep's tail, when one worker has no task left, which weighs more in a "
              f"short sweep); trivial-task round trip {rt * 1e3:.2f} ms = "
              f"{100 * rt / task_med:.2f} %")
        if big_wall is not None:
            print(f"  {big.size()}-design sweep on 2 workers: {big_wall:.1f} s")
        print(f"  estimate, {n:,} designs on {w} workers: {est / 60:.1f} min")
        print(f"  load average (1 min) before {load_before:.2f}, after {load_after:.2f} on "
              f"{os.cpu_count()} cores" + ("; above the cores: the figures are loaded"
                                          if max(load_before, load_after) > (os.cpu_count() or 1)
                                          else ""))
    finally:
        if cl2 is not None:
            cl2.close()
            c2.close()
    print(f"load average after: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
