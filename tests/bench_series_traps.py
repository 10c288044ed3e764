"""Benchmark of interface traps and series resistance (a script, not a test): prints medians.

    python tests/bench_series_traps.py [--repeats 15]

On the default design at V_d = 0.3 V, with our own "typical process" scenario (U-shaped
D_it of 2e12 cm^-2 eV^-1 at midgap, R_s = R_d = 100 ohm um; an illustration, not a
measured process):

1. a warm bias point for the ideal device, with traps, with series resistance, and with
   both, at an off-state and an on-state gate voltage, two ways: stepping back and
   forth 20 mV from a solved point (as in tests/bench_physics.py), and stepping up 20 mV
   at a time as a sweep does (where the series loop's prediction from the last two
   points applies); medians of wall and CPU time (the process's own, less sensitive to
   other load on a shared machine) and their ratio to the ideal point, measured
   interleaved in one run;
2. the extra solves of the series-resistance loop along a 41-point transfer curve
   (mean, largest) and the curve's time beside the ideal one.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from sub60.physics.design import Design
from sub60.physics.simulate import Simulator

IDEAL = Design()
TRAPS = IDEAL.replace(interface_trap_density_cm2eV=2e12, interface_trap_profile="u-shaped")
SERIES = IDEAL.replace(source_resistance_ohm_um=100.0, drain_resistance_ohm_um=100.0)
BOTH = TRAPS.replace(source_resistance_ohm_um=100.0, drain_resistance_ohm_um=100.0)
CASES = {"ideal": IDEAL, "traps": TRAPS, "series R": SERIES, "traps + series R": BOTH}


def median_ms(samples: list[float]) -> float:
    return 1e3 * float(np.median(samples))


def bench_warm_points(repeats: int, sweep: bool) -> None:
    how = "steps of +20 mV, as in a sweep" if sweep else "20 mV back and forth"
    print(f"Warm bias point, default design, Vd = 0.3 V ({how})")
    for label, base in (("off state", 0.0), ("on state", 0.3)):
        sims = {name: Simulator() for name in CASES}
        for name, d in CASES.items():
            sims[name].solve_bias(d, base, 0.3)
        times: dict[str, list[float]] = {name: [] for name in CASES}
        cpu: dict[str, list[float]] = {name: [] for name in CASES}
        extra: list[int] = []
        for i in range(repeats):
            # a new point each time, 20 mV away
            v = base + 0.02 * (i + 1) if sweep else base + 0.02 * ((i % 2) + 1) + 1e-4 * i
            for name, d in CASES.items():  # interleaved: the same machine load for each
                t, c = time.perf_counter(), time.process_time()
                bp = sims[name].solve_bias(d, v, 0.3)
                times[name].append(time.perf_counter() - t)
                cpu[name].append(time.process_time() - c)
                if name == "traps + series R":
                    extra.append(bp.series_resistance.extra_solves)
        ideal, ideal_cpu = median_ms(times["ideal"]), median_ms(cpu["ideal"])
        print(f"  {label} (Vg from {base + 0.02:.2f} V, last Id {bp.current_uA_per_um:.3g} uA/um "
              "with both):")
        for name in CASES:
            m, c = median_ms(times[name]), median_ms(cpu[name])
            print(f"    {name:17s} median {m:7.1f} ms wall, {c:6.1f} ms CPU   ratio to ideal "
                  f"{m / ideal:4.2f} wall, {c / ideal_cpu:4.2f} CPU")
        print(f"    extra solves of the series loop (traps + series R): median "
              f"{np.median(extra):.0f}, largest {max(extra)}")


def bench_curve(repeats: int) -> None:
    vg = np.linspace(-0.3, 0.5, 41)
    out = {}
    for name in ("ideal", "traps + series R"):
        d = CASES[name]
        Simulator().transfer_curve(d, vg, 0.3, refine=False)  # structure built, kernels warm
        samples = []
        for _ in range(max(3, repeats // 5)):
            sim = Simulator()
            t = time.perf_counter()
            sim.transfer_curve(d, vg, 0.3, refine=False)
            samples.append(time.perf_counter() - t)
        out[name] = median_ms(samples)
        if name != "ideal":
            extra = [sim.solve_bias(d, float(v), 0.3).series_resistance.extra_solves for v in vg]
    print("41-point transfer curve, default design, Vd = 0.3 V, no refinement")
    print(f"  ideal {out['ideal']:.0f} ms; traps + series R {out['traps + series R']:.0f} ms "
          f"(ratio {out['traps + series R'] / out['ideal']:.2f}); extra solves per point: "
          f"mean {np.mean(extra):.2f}, largest {max(extra)}, points with none "
          f"{sum(e == 0 for e in extra)} of {len(extra)}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=15)
    a = ap.parse_args()
    bench_warm_points(a.repeats, sweep=False)
    bench_warm_points(a.repeats, sweep=True)
    bench_curve(a.repeats)


if __name__ == "__main__":
    main()
