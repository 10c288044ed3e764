"""Benchmark of two physics kernels (a script, not a test): prints medians measured in one
run and their ratio to the targets of the design brief (targets: no source).

    python tests/bench_kernels.py [--repeats 15]

1. Fermi-Dirac integrals F_1/2 + F_-1/2 on 5000 random reduced Fermi levels (the size of
   a Poisson grid), target 0.5 ms.
2. A non-parabolic InAs well: 10 nm body, 2 nm barriers at 0.05 nm, 3 states, target
   20 ms.
3. The two-band WKB exponents of every subband pair of one default transfer curve (the
   kernel calls of its 70 solved points, recorded while it is computed): the production
   kernel, which takes all transverse k of one energy together segment by segment,
   against the node-by-node kernel (`wkb_transverse_kernel_shifts` with the parabolic
   shifts: the former algorithm); the two give the same bits (checked here) and the
   ratio is printed (no target).
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from sub60.physics import tunneling
from sub60.physics.confinement import well_subbands
from sub60.physics.statistics import fermi_half, fermi_minus_half

M_INAS = 0.026  # InAs Gamma-valley mass [m0] (the materials record)
ALPHA_INAS = 2.275  # its two-band non-parabolicity (1 - m)^2 / Eg0 [1/eV]


def _median_ms(fn, repeats: int, number: int = 1) -> float:
    fn()  # first call: tables, caches
    samples = []
    for _ in range(repeats):
        t = time.perf_counter()
        for _ in range(number):
            fn()
        samples.append((time.perf_counter() - t) / number)
    return 1e3 * float(np.median(samples))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=15)
    a = ap.parse_args()
    eta = np.random.default_rng(7).uniform(-40.0, 25.0, 5000)
    fd = _median_ms(lambda: (fermi_half(eta), fermi_minus_half(eta)), a.repeats, number=20)
    print(f"F_1/2 + F_-1/2 on 5000 points: median {fd:.3f} ms "
          f"(target 0.5 ms, ratio {fd / 0.5:.2f})")
    well = _median_ms(lambda: well_subbands(10.0, 2.0, 2.25, M_INAS, 0.4, n_states=3,
                                            nonparabolicity_per_eV=ALPHA_INAS), a.repeats)
    print(f"non-parabolic 10 nm InAs well, 3 states: median {well:.2f} ms "
          f"(target 20 ms, ratio {well / 20:.2f})")
    calls = _recorded_wkb_calls()
    column, by_node = _column_and_node_kernels()
    for args in calls:
        if not np.array_equal(column(*args), by_node(*args)):
            raise SystemExit("the column and node-by-node WKB kernels differ")
    t_col = _median_ms(lambda: [column(*c) for c in calls], a.repeats)
    t_node = _median_ms(lambda: [by_node(*c) for c in calls], a.repeats)
    print(f"two-band WKB, {len(calls)} pair calls of one default transfer curve: median "
          f"{t_col:.1f} ms by energy column, {t_node:.1f} ms node by node "
          f"(ratio {t_node / t_col:.2f}, same bits)")


def _recorded_wkb_calls() -> list[tuple]:
    """The arguments of every compiled two-band kernel call of one default transfer curve
    (-0.4..0.6 V, 41 points, refined), recorded while it is computed."""
    from sub60.physics import Design
    from sub60.physics.simulate import Simulator

    kernel = tunneling._compiled_kernel()
    calls: list[tuple] = []

    def record(*args):
        calls.append(args)
        return kernel(*args)

    saved = tunneling._KERNEL
    tunneling._KERNEL = record
    try:
        Simulator().transfer_curve(Design(), np.linspace(-0.4, 0.6, 41), 0.3)
    finally:
        tunneling._KERNEL = saved
    return calls


def _column_and_node_kernels():
    from sub60.physics._wkb_compiled import (
        wkb_transverse_kernel,
        wkb_transverse_kernel_shifts,
    )

    def by_node(x, ec, ev, a, b, kv, e, mass, two_band, gl_x, gl_w):
        k2 = kv**2
        return wkb_transverse_kernel_shifts(x, ec, ev, a * k2, b * k2, kv, e, mass, two_band,
                                            gl_x, gl_w)

    return wkb_transverse_kernel, by_node


if __name__ == "__main__":
    main()
