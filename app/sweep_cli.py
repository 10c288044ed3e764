"""`sub60 sweep SPEC --out DIR`: run a design sweep on Dask from the command line.

    sub60 sweep SPEC.toml --out DIR [--scheduler tcp://HOST:PORT] [--workers N]
                [--allow-large] [--retry-failed] [--quiet]

Prints progress (with an ETA) on stderr and a summary on stdout: designs computed, taken
from the cache and failed, and the best designs by Ion. Exit status: 0 every design has a
row (failed designs included: their reason is in the table); 2 a bad option or spec
(nothing is computed); 130 cancelled (Ctrl-C or SIGTERM): the rows computed so far are
written, the others are rows with status "cancelled", and a rerun computes only those.
"""

from __future__ import annotations

import argparse
import signal
import sys
import threading
import time


def add_sweep_parser(sub) -> None:
    """Register `sweep` on the `sub60` sub-parsers."""
    sp = sub.add_parser("sweep", help="run a design sweep (knobs x bias plan) on Dask")
    sp.add_argument("spec", help="sweep file (.toml or .json): knobs, fixed fields, bias, physics")
    sp.add_argument("--out", required=True, help="output folder: results.parquet/.csv and the cache")
    sp.add_argument("--scheduler", metavar="ADDR",
                    help="address of a running Dask scheduler, tcp://HOST:PORT (default: a local "
                         "cluster on this machine's cores)")
    sp.add_argument("--workers", type=int, metavar="N",
                    help="local worker processes, one thread each (default: the number of cores)")
    sp.add_argument("--allow-large", action="store_true",
                    help="confirm a sweep of more designs than the limit for unconfirmed sweeps")
    sp.add_argument("--retry-failed", action="store_true",
                    help="recompute designs whose cached result is a failure")
    sp.add_argument("--quiet", action="store_true", help="no progress lines")
    sp.set_defaults(sweep_handler=run_sweep)


def _fmt(v) -> str:
    return "-" if v is None else f"{v:.4g}"


def _value(v) -> str:
    """A knob value: text as it is, a number in at most 6 significant digits."""
    return v if isinstance(v, str) else _fmt(v) if v is None else f"{v:.6g}"


def summary(res, spec) -> str:
    """Counts, files and the five best designs by Ion (with their knob values, named by the
    page's control labels with units, and SS_avg4)."""
    from sub60.app.state import label_of  # the page's control labels, with their units
    from sub60.app.sweep_engine import best_designs, pareto_front

    lines = [f"sweep: {res.total} designs: {res.computed} computed, {res.cached} from the cache, "
             f"{res.failed} failed" + (", CANCELLED" if res.cancelled else "")
             + f"; wall time {res.wall_s:.1f} s"
             + (f" on {res.workers} workers ({res.scheduler})" if res.workers else "")]
    if res.table_path is not None:
        lines.append(f"results: {res.table_path} and {res.table_path.with_suffix('.csv')}")
    knobs = spec.knob_fields
    best = best_designs(res.rows, "ion_uA_per_um", 5)
    if best:
        lines.append(f"best by Ion at Ioff = {spec.bias.ioff_target_uA_per_um:g} uA/um, "
                     f"Vdd = {spec.bias.vdd_V:g} V:")
        for r in best:
            lines.append(f"  #{r['index']:<5d} Ion {_fmt(r['ion_uA_per_um'])} uA/um, SS_avg4 "
                         f"{_fmt(r['ss_avg4_mV_per_dec'])} mV/dec  "
                         + ", ".join(f"{label_of(k)} = {_value(r[k])}" for k in knobs))
    front = pareto_front(res.rows)
    if front:
        lines.append(f"Pareto front (Ion vs SS_avg4): {len(front)} designs, rows "
                     + ", ".join(str(r["index"]) for r in front[:20])
                     + (" ..." if len(front) > 20 else ""))
    left = sum(r["status"] == "cancelled" for r in res.rows)
    if left:
        lines.append(f"{left} designs not run (status 'cancelled'); the same command computes "
                     "only those")
    failed = [r for r in res.rows if r["status"] == "failed"]
    for r in failed[:3]:
        lines.append(f"  failed #{r['index']}: {r['error'][:200]}")
    return "\n".join(lines)


def run_sweep(a: argparse.Namespace) -> tuple[str, int]:
    """Run `sub60 sweep`; returns (summary text, exit status)."""
    from sub60.app.cli_common import UsageError
    from sub60.app.sweep_spec import SpecError, load_spec

    if a.workers is not None and a.scheduler:
        raise UsageError("--workers: only for the local cluster; an existing scheduler has its own")
    if a.workers is not None and not 1 <= a.workers <= 512:
        raise UsageError(f"--workers: {a.workers} outside [1, 512]")
    if a.scheduler and not a.scheduler.startswith(("tcp://", "tls://", "inproc://", "ws://", "wss://")):
        raise UsageError(f"--scheduler: expected an address like tcp://HOST:PORT, got {a.scheduler!r}")
    try:
        spec = load_spec(a.spec, allow_large=a.allow_large)
        spec.designs()  # every design validated before a cluster starts
    except SpecError as exc:
        raise UsageError(str(exc)) from None

    from sub60.app.sweep_engine import run_sweep as engine_run

    last = [0.0]

    def show(p) -> None:
        now = time.monotonic()
        if a.quiet or (now - last[0] < 1.0 and p.done < p.total):
            return
        last[0] = now
        print(f"sweep: {p.line()}", file=sys.stderr, flush=True)

    cancel = threading.Event()
    main_thread = threading.current_thread() is threading.main_thread()
    previous = signal.signal(signal.SIGTERM, lambda *_: cancel.set()) if main_thread else None
    try:
        res = engine_run(spec, a.out, scheduler=a.scheduler, workers=a.workers, progress=show,
                         cancel=cancel, retry_failed=a.retry_failed)
    except OSError as exc:
        raise UsageError(f"--scheduler/--out: {exc}") from None
    except KeyboardInterrupt:  # before the first design was collected
        return "sweep: cancelled while starting; nothing computed", 130
    finally:
        if main_thread:
            signal.signal(signal.SIGTERM, previous)
    return summary(res, spec), 130 if res.cancelled else 0
