"""Benchmark of the carrier densities (a script, not a test): prints medians and ratios
measured in one run.

    python tests/bench_densities.py [--rounds 5]

On the default design and grid, alternating in rounds: `BandParameters.densities` (the
compiled kernel, `physics/_fermi_compiled.py`) against `densities_reference` (numpy),
then a warm solve (dVg = 20 mV) and a cold solve with the kernel and with the numpy path
(the kernel switched off), and the charge-neutral bisection of the doping profile with
its early stop against all 80 steps. Medians over the rounds of per-round medians.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

from sub60.physics import poisson
from sub60.physics.design import Design
from sub60.physics.electrostatics import solve_electrostatics
from sub60.physics.structure import build_frame, problem_at_bias

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from tests.physics.test_fermi_compiled import _bisect_80_steps  # noqa: E402  (the 80-step reference)


def _median_ms(fn, number: int) -> float:
    samples = []
    for _ in range(number):
        t = time.perf_counter()
        fn()
        samples.append(time.perf_counter() - t)
    return 1e3 * float(np.median(samples))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rounds", type=int, default=5)
    rounds = ap.parse_args().rounds
    design = Design()
    es0 = solve_electrostatics(design, 0.2, 0.3)
    frame = build_frame(design)
    problem = problem_at_bias(frame, 0.22, 0.3)
    bands = problem.bands
    args = (es0.psi_V, es0.efn_eV[:, None], es0.efp_eV[:, None])
    net = frame.donors_cm3 - frame.acceptors_cm3
    efn = np.broadcast_to(problem.efn_eV, net.shape)
    efp = np.broadcast_to(problem.efp_eV, net.shape)
    lo, hi = np.full(net.shape, -8.0), np.full(net.shape, 4.0)
    kernel = poisson._compiled_densities
    res: dict[str, list[float]] = {}

    def add(key: str, value: float) -> None:
        res.setdefault(key, []).append(value)

    for _ in range(rounds):
        add("densities, numpy", _median_ms(lambda: bands.densities_reference(*args), 200))
        add("densities, kernel", _median_ms(lambda: bands.densities(*args), 200))
        add("bisection, 80 steps", _median_ms(
            lambda: _bisect_80_steps(bands, net, efn, efp, lo, hi), 20))
        add("bisection, early stop", _median_ms(
            lambda: poisson._bisect_neutral(bands, net, efn, efp, lo, hi), 20))
        for tag, fn in (("numpy", lambda *a: None), ("kernel", kernel)):
            poisson._compiled_densities = fn
            add(f"warm solve, {tag}", _median_ms(
                lambda: solve_electrostatics(design, 0.22, 0.3, initial=es0), 20))
            add(f"cold solve, {tag}", _median_ms(lambda: solve_electrostatics(design, 0.2, 0.3), 10))
        poisson._compiled_densities = kernel
    print(f"Carrier densities, default design, grid {es0.psi_V.shape[0]} x {es0.psi_V.shape[1]}, "
          f"{rounds} rounds")
    for key, values in res.items():
        print(f"  {key:24s} median {np.median(values):8.3f} ms")
    for slow, fast in (("densities, numpy", "densities, kernel"),
                       ("bisection, 80 steps", "bisection, early stop"),
                       ("warm solve, numpy", "warm solve, kernel"),
                       ("cold solve, numpy", "cold solve, kernel")):
        print(f"  {slow} / {fast.split(', ')[1]}: {np.median(res[slow]) / np.median(res[fast]):.2f}")


if __name__ == "__main__":
    main()
