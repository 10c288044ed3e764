"""Write the demo measured curve of the fit workflow (a script, not a test).

    python tests/make_fit_demo.py [--out assets/measured/demo-tfet-transfer.csv]

SYNTHETIC: the curve is computed by the sub60 model itself, for a scenario of our own
(the default InAs tunnel FET with a process of stated non-idealities), and 5 % log-normal
noise is added (seed below); it is not a measurement of any device. The file says so in
its header. The knob values it was made with (`DEMO_KNOBS`) are what `sub60 fit` should
recover; the README's fit figure and `tests/bench_fit.py` read this file.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np

from sub60.physics import Design, Simulator

#: The demo's "process": shifts and non-idealities on the default design (our scenario).
DEMO_KNOBS = {"gate_workfunction_eV": 4.94, "interface_trap_density_cm2eV": 2e12,
              "tail_energy_source_meV": 20.0, "tail_energy_channel_meV": 20.0}
#: The nominal design a user would start the fit from (the default, ideal device).
START = Design()
VG_V = np.linspace(-0.2, 0.6, 41)
VD_V = 0.3
NOISE = 0.05  # relative, log-normal
SEED = 2026
OUT = Path(__file__).resolve().parents[1] / "assets" / "measured" / "demo-tfet-transfer.csv"


def demo_design() -> Design:
    """The design the demo curve was computed with."""
    return START.replace(**DEMO_KNOBS)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", type=Path, default=OUT)
    a = ap.parse_args()
    curve = Simulator().transfer_curve(demo_design(), VG_V, VD_V, refine=False)
    rng = np.random.default_rng(SEED)
    measured_A_per_um = 1e-6 * curve.id_uA_per_um * np.exp(NOISE * rng.standard_normal(VG_V.size))
    knobs = ", ".join(f"{k} = {v:g}" for k, v in DEMO_KNOBS.items())
    lines = [
        "# SYNTHETIC DEMO DATA - not a measurement of any device.",
        "# Made by tests/make_fit_demo.py from the sub60 model (default InAs tunnel FET) with",
        f"# {knobs};",
        f"# {100 * NOISE:g} % log-normal noise, seed {SEED}. Vd = {VD_V:g} V.",
        f"Vg [V],Id@Vd={VD_V:g} [A/um]",
    ]
    lines += [f"{v:.4f},{i:.5e}" for v, i in zip(VG_V, measured_A_per_um, strict=True)]
    a.out.parent.mkdir(parents=True, exist_ok=True)
    a.out.write_text("\n".join(lines) + "\n", encoding="utf-8")
    print(f"wrote {a.out} ({VG_V.size} points)")


if __name__ == "__main__":
    main()
