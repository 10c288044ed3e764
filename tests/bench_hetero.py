"""Benchmark of heterojunction sources (a script, not a test): prints medians and ratios.

    python tests/bench_hetero.py [--repeats 15]

For each pair (a heterojunction design and the homojunction of its body material, same
geometry), a warm bias point with its current: continuation from a solved point 20 mV
away (as in a transfer sweep), for the WKB model and the exact two-band model, and the
split Poisson / confinement / tunnelling. Target (issue 13): heterojunction <= 1.5x the
homojunction. Timings interleave the two designs so that machine load hits both alike.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from sub60.physics.design import Design
from sub60.physics.simulate import Simulator

PAIRS = {
    "GaSb / InAs (broken gap)": Design(source_material="GaSb"),
    "GaAs0.4Sb0.6 / In0.53Ga0.47As (staggered)": Design(
        material="In0.53Ga0.47As", source_material="GaAsSb", source_composition_x=0.4),
    "Si0.5Ge0.5 / Si (staggered, phonon-assisted)": Design(
        material="Si", source_material="SiGe", source_composition_x=0.5,
        source_doping_cm3=1e20, gate_workfunction_eV=4.3),
}


def warm_points(design: Design, model: str, repeats: int) -> tuple[list[float], dict]:
    """Times of warm bias points [s] and the median split of the last ones [s]."""
    sim = Simulator(model=model)
    sim.solve_bias(design, 0.2, 0.3)
    times, split = [], {"poisson": [], "confinement": [], "tunnelling": []}
    for i in range(repeats):
        v = 0.2 + 0.02 * ((i % 2) + 1) + 1e-4 * i  # a new point each time, 20 mV away
        t = time.perf_counter()
        bp = sim.solve_bias(design, v, 0.3)
        times.append(time.perf_counter() - t)
        for k in split:
            split[k].append(bp.timings_s.get(k, 0.0))
    return times, {k: float(np.median(v)) for k, v in split.items()}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=15)
    args = parser.parse_args()
    for name, hetero in PAIRS.items():
        homo = hetero.homojunction()
        for model in ("two-band", "two-band-exact"):
            warm_points(hetero, model, 2)  # compile and fill the caches once
            warm_points(homo, model, 2)
            samples = {"hetero": [], "homo": []}
            splits = {}
            for _ in range(3):  # interleaved rounds
                for label, d in (("hetero", hetero), ("homo", homo)):
                    t, splits[label] = warm_points(d, model, max(1, args.repeats // 3))
                    samples[label] += t
            mh, mo = (1e3 * float(np.median(samples[k])) for k in ("hetero", "homo"))
            print(f"{name}, {model}: warm bias point median {mh:.1f} ms (homojunction "
                  f"{mo:.1f} ms), ratio {mh / mo:.2f}")
            for label in ("hetero", "homo"):
                s = splits[label]
                print(f"    {label}: Poisson {1e3 * s['poisson']:.1f} ms, confinement "
                      f"{1e3 * s['confinement']:.1f} ms, tunnelling {1e3 * s['tunnelling']:.1f} ms")


if __name__ == "__main__":
    main()
