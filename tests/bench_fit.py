"""Benchmark of a fit (a script, not a test): prints medians measured in one run.

    python tests/bench_fit.py [--repeats 3] [--step 0.02] [--only before|after]

A 3-knob fit (work-function shift, interface-trap density, band-tail energy) of the
default design to the 41-point synthetic demo curve (assets/measured/demo-tfet-transfer.csv,
made by tests/make_fit_demo.py), each repeat with a new Simulator (no cached points);
beside it one 41-point transfer curve of the demo design, so that the fit's cost reads
as a number of curves. Prints medians, the ratio to the 20 s target, the model
evaluations (curves, bias points) and the recovered knobs against the demo's values.
"""

from __future__ import annotations

import argparse
import importlib.util
import time
from pathlib import Path

import numpy as np

from sub60.physics import Design, Simulator, fit_transfer, read_measured

HERE = Path(__file__).resolve().parent
DEMO = HERE.parent / "assets" / "measured" / "demo-tfet-transfer.csv"
FREE = ["workfunction_shift", "trap_density", "tail_energy"]
TARGET_S = 20.0


def _demo_module():
    spec = importlib.util.spec_from_file_location("make_fit_demo", HERE / "make_fit_demo.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


#: The fit's options compared in one run, alternately: the former path (every curve
#: solved anew, each point started by extrapolation along its curve; the optimiser's
#: tolerances alone end the fit) and the present default (electrostatics shared by
#: curves that differ only in band tails; other curves start each point from the last
#: solved design's point at the same bias; the fit ends once the next Gauss-Newton step
#: is below 0.1 standard uncertainty of every knob).
VARIANTS = {"before": {"reuse_electrostatics": False, "stop_when_settled": False},
            "after": {}}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--step", type=float, default=0.02,
                    help="gate-voltage step of the model lattice [V] (fit_transfer's model_step_V)")
    ap.add_argument("--only", choices=["before", "after"], default=None,
                    help="run one variant only")
    a = ap.parse_args()
    demo = _demo_module()
    data = read_measured(DEMO.read_bytes())
    start = Design()
    Simulator().transfer_curve(demo.demo_design(), demo.VG_V, demo.VD_V, refine=False)  # warm-up
    variants = {k: v for k, v in VARIANTS.items() if a.only is None or k.startswith(a.only)}
    curve_s: list[float] = []
    fit_s: dict[str, list[float]] = {k: [] for k in variants}
    cpu_s: dict[str, list[float]] = {k: [] for k in variants}
    results: dict[str, list] = {k: [] for k in variants}
    for i in range(a.repeats):
        d = demo.demo_design().replace(tail_energy_source_meV=20.0 + 1e-3 * (i + 1))
        t = time.perf_counter()
        Simulator().transfer_curve(d, demo.VG_V, demo.VD_V, refine=False)
        curve_s.append(time.perf_counter() - t)
        for name, opts in (variants.items() if i % 2 == 0 else reversed(variants.items())):
            t, c = time.perf_counter(), time.process_time()
            results[name].append(fit_transfer(data, start, FREE, simulator=Simulator(),
                                              model_step_V=a.step, **opts))
            fit_s[name].append(time.perf_counter() - t)
            cpu_s[name].append(time.process_time() - c)
    med_curve = float(np.median(curve_s))
    print(f"3-knob fit ({', '.join(FREE)}) to the 41-point demo curve, model lattice "
          f"{1e3 * a.step:g} mV, medians of {a.repeats} (variants alternated in one run)")
    print(f"  one 41-point curve        {med_curve:8.2f} s")
    truth = {"workfunction_shift": demo.DEMO_KNOBS["gate_workfunction_eV"] - start.gate_workfunction_eV,
             "trap_density": demo.DEMO_KNOBS["interface_trap_density_cm2eV"],
             "tail_energy": demo.DEMO_KNOBS["tail_energy_source_meV"]}
    meds = {}
    for name in variants:
        med_fit = meds[name] = float(np.median(fit_s[name]))
        res = results[name][-1]
        print(f"  {name}")
        print(f"    fit                     {med_fit:8.2f} s   ratio to the {TARGET_S:g} s target "
              f"{med_fit / TARGET_S:.2f}   fit / curve {med_fit / med_curve:.1f}")
        print(f"    CPU time of the process {float(np.median(cpu_s[name])):8.2f} s (less sensitive "
              "to other jobs on the machine)")
        print(f"    model curves per fit    {int(np.median([r.curve_evaluations for r in results[name]]))}"
              f"   bias points solved {int(np.median([r.bias_points for r in results[name]]))}")
        print(f"    rms residual {res.rms_decades:.4f} decades (5 % noise: 0.0217); {res.message}")
        for k in res.knobs:
            if k.log:
                err = np.log10(k.value / truth[k.name])
                unit = "decades"
            else:
                err, unit = k.value - truth[k.name], k.unit
            sig = k.uncertainty if k.uncertainty is not None else float("nan")
            print(f"    {k.name:<20} fitted {k.value:10.4g}  true {truth[k.name]:10.4g}  "
                  f"error {err:+.3g} {unit}  uncertainty {sig:.3g} {unit}  "
                  f"error/uncertainty {err / sig:+.2f}")
        if res.problems:
            print("    problems: " + "; ".join(res.problems))
    if len(meds) == 2:
        b, f = meds.values()
        cb, cf = (float(np.median(cpu_s[k])) for k in variants)
        print(f"  after / before            {f / b:.2f} (wall)   {cf / cb:.2f} (CPU)")


if __name__ == "__main__":
    main()
