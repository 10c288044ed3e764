"""Benchmark of the non-idealities (a script, not a test): prints medians measured in one run.

    python tests/bench_nonideal.py [--repeats 21]

A warm bias point (Poisson continued from the design's last solution 20 mV away, plus
subbands and currents) of the default tunnel FET at V_d = 0.3 V, ideal and with each
non-ideality on (band tails 15/15 meV, trap-assisted generation tau = 1 ns, band-gap
narrowing) and with all of them; samples of the variants are interleaved so that a
changing machine load hits them alike. Prints medians, the ratio to the ideal point and
the stage split (tunnelling, band tails, trap-assisted) of the all-on point.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from sub60.physics.design import Design
from sub60.physics.simulate import Simulator

VARIANTS = {
    "ideal": {},
    "band tails 15/15 meV": {"tail_energy_source_meV": 15.0, "tail_energy_channel_meV": 15.0},
    "trap-assisted, 1 ns": {"tat_lifetime_ns": 1.0},
    "band-gap narrowing": {"bandgap_narrowing": "on"},
    "all on": {"tail_energy_source_meV": 15.0, "tail_energy_channel_meV": 15.0,
               "tat_lifetime_ns": 1.0, "bandgap_narrowing": "on"},
}


def median_ms(samples: list[float]) -> float:
    return 1e3 * float(np.median(samples))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=21)
    a = ap.parse_args()
    designs = {k: Design(**v) for k, v in VARIANTS.items()}
    sims = {k: Simulator() for k in VARIANTS}
    for k, d in designs.items():  # compile, load, first solve
        sims[k].solve_bias(d, 0.1, 0.3)
    samples: dict[str, list[float]] = {k: [] for k in VARIANTS}
    stages: dict[str, list[float]] = {"tunnelling": [], "band_tails": [], "trap_assisted": []}
    for i in range(a.repeats):
        v = 0.1 + 0.02 * ((i % 2) + 1) + 1e-4 * i  # a new point each time, 20 mV away
        for k, d in designs.items():
            t = time.perf_counter()
            bp = sims[k].solve_bias(d, v, 0.3)
            samples[k].append(time.perf_counter() - t)
            if k == "all on":
                for s in stages:
                    stages[s].append(bp.timings_s.get(s, 0.0))
    base = median_ms(samples["ideal"])
    print("Warm bias point, default tunnel FET, V_d = 0.3 V (medians of "
          f"{a.repeats}, interleaved)")
    for k in VARIANTS:
        m = median_ms(samples[k])
        print(f"  {k:24s} {m:7.1f} ms   ratio to ideal {m / base:5.2f}")
    print("  all on, stages: " + ", ".join(f"{s} {median_ms(v):.1f} ms" for s, v in stages.items()))
    bp = sims["all on"].solve_bias(designs["all on"], 0.0, 0.3)
    parts = ", ".join(f"{k} {v:.3g}" for k, v in bp.current_by_mechanism_uA_per_um.items())
    print(f"  all on at V_g = 0: {parts} uA/um")


if __name__ == "__main__":
    main()
