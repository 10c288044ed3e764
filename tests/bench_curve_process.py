"""The server's curve process against the sweep thread alone (a script, not a test).

    python tests/bench_curve_process.py [--rounds 5]

One session's sweep after a design change (`SessionJobs`, the default page's sweeps:
41-point tunnel FET and twin, 4 output curves of 13 points), with and without the curve
process (`sub60.app.curve_process`), alternating, a new body thickness every time (nothing
cached), fresh simulators. Prints the medians of the times until the tunnel FET's curve,
both transfer curves (with metrics) and the output curves are delivered, and the ratios
measured in this run. No browser: the page's drawing comes on top (tests/bench_app.py).
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from sub60.app.curve_process import CurveProcess
from sub60.app.jobs import SessionJobs
from sub60.app.state import ExplorerState
from sub60.physics import Simulator


class _Clock:
    """A listener that notes when the results arrive [s after start]."""

    def __init__(self) -> None:
        self.t0 = time.perf_counter()
        self.at: dict[str, float] = {}

    def __getattr__(self, name: str):
        if name.startswith("_"):
            raise AttributeError(name)

        def note(*args) -> None:
            now = time.perf_counter() - self.t0
            if name == "transfer_solved":
                self.at[args[0]] = now
            elif name == "outputs_solved" and args[1]:
                self.at["outputs"] = now
        return note


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rounds", type=int, default=5)
    ap.add_argument("--tails", type=float, default=0.0,
                    help="source band-tail energy [meV] (> 0: a non-ideal design)")
    args = ap.parse_args()
    proc = CurveProcess()
    proc.start()
    proc.pid()  # ready
    state = ExplorerState()
    state.tail_energy_source_meV = args.tails
    times: dict[str, list] = {"thread alone": [], "with process": []}
    body = 5.0
    for _ in range(args.rounds):
        for mode in times:
            body += 0.05
            state.body_thickness_nm = round(body, 3)
            clock = _Clock()
            jobs = SessionJobs(state, Simulator(), clock, background=False,
                               curve_process=proc if mode == "with process" else None)
            clock.t0 = time.perf_counter()
            jobs.request_sweeps(state.design())
            times[mode].append((clock.at["tfet"], clock.at["twin"], clock.at["outputs"]))
    proc.close()
    print(f"one design change, medians of {args.rounds} (band tails {args.tails:g} meV)")
    med = {m: np.median(np.array(v), axis=0) for m, v in times.items()}
    for m, (a, b, c) in med.items():
        print(f"  {m:13s}: tunnel FET {1000 * a:6.0f} ms   both curves {1000 * b:6.0f} ms   "
              f"output curves too {1000 * c:6.0f} ms")
    r = med["with process"] / med["thread alone"]
    print(f"  ratio        : tunnel FET {r[0]:.2f}   both curves {r[1]:.2f}   "
          f"output curves too {r[2]:.2f}")


if __name__ == "__main__":
    main()
