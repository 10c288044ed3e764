"""Benchmark of the two charge models (a script, not a test): medians measured in one run.

    python tests/bench_charge_model.py [--repeats 9]

On the default design, for Design.charge_model "semiclassical" and "subbands"
(`physics.subband_charge`), interleaved so that both see the same machine load:
- the one-time structure (mesh, operator and, for subbands, the charge subbands and the
  coupled hole dispersion, with their caches cleared),
- a cold electrostatics solve (charge-neutral start) and a warm one (continuation after
  dVg = 20 mV) with their Newton steps,
- a 41-point transfer curve (-0.3…0.5 V, Vd = 0.3 V, fresh simulator, metrics refined);
then the ratios subbands / semiclassical, and the default-design metrics of both (the
README table's sweep: -0.3…0.6 V in 46, Ioff 1 nA/µm, Vdd 0.3 V).
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from sub60.physics.design import Design
from sub60.physics.electrostatics import solve_electrostatics
from sub60.physics.simulate import Simulator
from sub60.physics.structure import _frame

MODELS = ("semiclassical", "subbands")


def median_ms(samples: list[float]) -> float:
    return 1e3 * float(np.median(samples))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeats", type=int, default=9)
    args = ap.parse_args()
    designs = {m: Design(charge_model=m) for m in MODELS}
    vg = np.linspace(-0.3, 0.5, 41)
    for d in designs.values():  # one-time loads and caches
        Simulator().transfer_curve(d, vg, 0.3)
    times: dict[str, dict[str, list[float]]] = {m: {k: [] for k in
                                                    ("frame", "cold", "warm", "curve")} for m in MODELS}
    steps: dict[str, dict[str, list[int]]] = {m: {"cold": [], "warm": []} for m in MODELS}
    for _ in range(args.repeats):
        for m, d in designs.items():
            from sub60.physics.hole_subbands import hole_dos_ratio, inplane_dispersions
            from sub60.physics.subbands import charge_subbands

            charge_subbands.cache_clear()
            hole_dos_ratio.cache_clear()
            inplane_dispersions.cache_clear()
            t = time.perf_counter()
            _frame(d, 1.0, True)
            times[m]["frame"].append(time.perf_counter() - t)
            t = time.perf_counter()
            es = solve_electrostatics(d, 0.2, 0.3)
            times[m]["cold"].append(time.perf_counter() - t)
            steps[m]["cold"].append(es.iterations)
            t = time.perf_counter()
            es2 = solve_electrostatics(d, 0.22, 0.3, initial=es)
            times[m]["warm"].append(time.perf_counter() - t)
            steps[m]["warm"].append(es2.iterations)
            t = time.perf_counter()
            Simulator().transfer_curve(d, vg, 0.3)
            times[m]["curve"].append(time.perf_counter() - t)
    print(f"default design, {args.repeats} repeats, medians")
    print(f"{'':28s}" + "".join(f"{m:>15s}" for m in MODELS) + f"{'ratio':>9s}")
    for key, label in (("frame", "structure (one-time) [ms]"), ("cold", "cold solve [ms]"),
                       ("warm", "warm solve [ms]"), ("curve", "41-point transfer [ms]")):
        a, b = (median_ms(times[m][key]) for m in MODELS)
        print(f"{label:28s}{a:15.1f}{b:15.1f}{b / a:9.2f}")
    for key in ("cold", "warm"):
        a, b = (float(np.median(steps[m][key])) for m in MODELS)
        print(f"{'Newton steps, ' + key:28s}{a:15.0f}{b:15.0f}")
    vt = np.linspace(-0.3, 0.6, 46)
    kw = {"ioff_target_uA_per_um": 1e-3, "vdd_V": 0.3}
    print("\ndefault-design metrics (tunnel FET | MOSFET twin)")
    for m, d in designs.items():
        row = []
        for dd in (d, d.twin()):
            met = Simulator().transfer_curve(dd, vt, 0.3, **kw).metrics
            row.append(" ".join(f"{getattr(met, f).value:.4g}" for f in (
                "ss_min_mV_per_dec", "ss_avg4_mV_per_dec", "i60_uA_per_um", "voff_V",
                "ion_uA_per_um")))
        print(f"{m:14s} SS_min SS_avg I60 Voff Ion: {row[0]} | {row[1]}")


if __name__ == "__main__":
    main()
