"""Benchmark of a fit (a script, not a test): prints medians measured in one run.

    python tests/bench_fit.py [--repeats 3] [--step 0.02]

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


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--step", type=float, default=0.02,
                    help="gate-voltage step of the model lattice [V] (fit_transfer's model_step_V)")
    a = ap.parse_args()
    demo = _demo_module()
    data = read_measured(DEMO.read_bytes())
    start = Design()
    Simulator().transfer_curve(demo.demo_design(), demo.VG_V, demo.VD_V, refine=False)  # warm-up
    curve_s, fit_s, results = [], [], []
    for i in range(a.repeats):
        d = demo.demo_design().replace(tail_energy_source_meV=20.0 + 1e-3 * (i + 1))
        t = time.perf_counter()
        Simulator().transfer_curve(d, demo.VG_V, demo.VD_V, refine=False)
        curve_s.append(time.perf_counter() - t)
        t = time.perf_counter()
        results.append(fit_transfer(data, start, FREE, simulator=Simulator(),
                                    model_step_V=a.step))
        fit_s.append(time.perf_counter() - t)
    med_fit, med_curve = float(np.median(fit_s)), float(np.median(curve_s))
    res = results[-1]
    print(f"3-knob fit ({', '.join(FREE)}) to the 41-point demo curve, model lattice "
          f"{1e3 * a.step:g} mV, medians of {a.repeats}")
    print(f"  fit                       {med_fit:8.2f} s   ratio to the {TARGET_S:g} s target "
          f"{med_fit / TARGET_S:.2f}")
    print(f"  one 41-point curve        {med_curve:8.2f} s   fit / curve {med_fit / med_curve:.1f}")
    print(f"  model curves per fit      {int(np.median([r.curve_evaluations for r in results]))}"
          f"   bias points solved {int(np.median([r.bias_points for r in results]))}")
    print(f"  rms residual {res.rms_decades:.4f} decades (5 % noise: 0.0217); {res.message}")
    truth = {"workfunction_shift": demo.DEMO_KNOBS["gate_workfunction_eV"] - start.gate_workfunction_eV,
             "trap_density": demo.DEMO_KNOBS["interface_trap_density_cm2eV"],
             "tail_energy": demo.DEMO_KNOBS["tail_energy_source_meV"]}
    for k in res.knobs:
        if k.log:
            err = np.log10(k.value / truth[k.name])
            unit = "decades"
        else:
            err, unit = k.value - truth[k.name], k.unit
        sig = k.uncertainty if k.uncertainty is not None else float("nan")
        print(f"  {k.name:<20} fitted {k.value:10.4g}  true {truth[k.name]:10.4g}  "
              f"error {err:+.3g} {unit}  uncertainty {sig:.3g} {unit}  "
              f"error/uncertainty {err / sig:+.2f}")
    if res.problems:
        print("  problems: " + "; ".join(res.problems))


if __name__ == "__main__":
    main()
