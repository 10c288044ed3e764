"""Draw the README's Pareto-front figure from a sweep of a demo scenario of our own.

    python tests/figure_sweep_pareto.py [--out assets/sweep-pareto.png] [--runs DIR]
                                        [--workers 2]

The scenario (our own, for illustration; not a measured or published device): an InAs
double-gate tunnel FET of the default design (30 nm gate, 2 nm HfO2, 4.9 eV gate), body
thickness 4–10 nm x source doping 1e19–1e20 cm^-3, a 31-point gate sweep, Ion at
Ioff = 1 nA/µm and Vdd = 0.3 V. The sweep runs on the sweep engine (a local Dask
cluster; its cache in ``--runs`` makes a rerun instant), then matplotlib draws Ion
against the minimum swing (``--against ss_avg4_mV_per_dec`` for the average) for every
design, coloured by the source doping, with the Pareto front
(`app.sweep_engine.pareto_front`). In this scenario thin bodies switch most steeply and
thick ones carry more current, so the front against SS min is a trade-off; against SS
avg one design (8 nm, 4.6e19 cm^-3) is best in both. Like the benchmark scripts, this is a script, not a
test.
"""

from __future__ import annotations

import argparse
import math
import os
import tempfile
from pathlib import Path

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

ROOT = Path(__file__).resolve().parents[1]

SCENARIO = """
title = "Demo scenario of our own: InAs tunnel FET, body thickness x source doping"

[fixed]
material = "InAs"

[[knob]]
field = "body_thickness_nm"
low = 4.0
high = 10.0
steps = 4

[[knob]]
field = "source_doping_cm3"
low = 1e19
high = 1e20
steps = 4

[bias]
vg_V = [-0.3, 0.6, 31]
vd_V = 0.3
ioff_target_uA_per_um = 1e-3
vdd_V = 0.3
"""


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default=str(ROOT / "assets" / "sweep-pareto.png"))
    ap.add_argument("--runs", default=None, help="sweep folder (results and cache); default temporary")
    ap.add_argument("--workers", type=int, default=None)
    ap.add_argument("--against", default="ss_min_mV_per_dec",
                    choices=("ss_min_mV_per_dec", "ss_avg4_mV_per_dec"))
    a = ap.parse_args()

    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.colors import LogNorm
    from matplotlib.ticker import ScalarFormatter

    from sub60.app.sweep_engine import pareto_front, run_sweep
    from sub60.app.sweep_spec import spec_from_text

    spec = spec_from_text(SCENARIO)
    runs = a.runs or tempfile.mkdtemp(prefix="sub60-figure-")
    res = run_sweep(spec, runs, workers=a.workers)
    print(f"{res.total} designs: {res.computed} computed, {res.cached} cached, {res.failed} failed, "
          f"{res.wall_s:.0f} s")
    x = a.against
    ok = [r for r in res.rows if r["status"] == "ok" and r["ion_uA_per_um"] is not None
          and r[x] is not None]
    front = pareto_front(ok, minimize=x)
    undefined = len(res.rows) - len(ok)

    fig, ax = plt.subplots(figsize=(7.2, 4.6), dpi=150)
    sc = ax.scatter([r[x] for r in ok], [r["ion_uA_per_um"] for r in ok],
                    c=[r["source_doping_cm3"] for r in ok], norm=LogNorm(1e19, 1e20),
                    cmap="cividis", s=[18 * r["body_thickness_nm"] for r in ok],
                    edgecolors="#4a4a4a", linewidths=0.6, zorder=3)
    ax.step([r[x] for r in front], [r["ion_uA_per_um"] for r in front],
            where="post", color="#2b2f33", ls="--", lw=1.3, zorder=2,
            label=f"Pareto front ({len(front)} of {len(ok)} designs; labels: body, NA in cm⁻³)")
    for r in front:
        ax.annotate(f"{r['body_thickness_nm']:g} nm, {r['source_doping_cm3']:.2g}",
                    (r[x], r["ion_uA_per_um"]), textcoords="offset points", xytext=(7, 5),
                    fontsize=7.5, color="#2b2f33")
    kT = 1.380649e-23 * 300 / 1.602176634e-19  # thermal voltage at 300 K [V] (scipy.constants values)
    limit = 1e3 * math.log(10) * kT
    ax.set_yscale("log")
    ions = [r["ion_uA_per_um"] for r in ok]
    ax.set_ylim(min(ions) / 1.4, max(ions) * 1.4)
    ax.yaxis.set_major_formatter(ScalarFormatter())
    ax.yaxis.set_minor_formatter(ScalarFormatter())
    ax.tick_params(axis="y", which="both", labelsize=8)
    if ax.get_xlim()[1] > limit:
        ax.axvline(limit, color="#868e96", lw=1, ls=":", zorder=1)
        ax.text(limit, ax.get_ylim()[1], " 59.5 mV/dec (300 K)", color="#6c757d", fontsize=8,
                va="top", ha="left")
    ax.set_xlabel("SS min (mV/dec)" if x == "ss_min_mV_per_dec"
                  else "SS avg over four decades above Ioff (mV/dec)")
    ax.set_ylabel("Ion at Ioff = 1 nA/µm, Vdd = 0.3 V (µA/µm)")
    ax.set_title("Design sweep of a demo scenario of our own: InAs double-gate tunnel FET,\n"
                 "body 4–10 nm (marker size) × source doping 10¹⁹–10²⁰ cm⁻³ (colour)",
                 fontsize=10)
    cb = fig.colorbar(sc, ax=ax, pad=0.02)
    cb.set_label("source doping (cm⁻³)")
    ax.grid(True, which="both", color="#e9ecef", lw=0.6)
    ax.legend(loc="lower right", fontsize=8, framealpha=0.9)
    note = (f"sub60 design-exploration model (two-band WKB, ballistic), not calibrated TCAD. "
            f"{undefined} of {len(res.rows)} designs lack Ion or the swing in this gate sweep.")
    fig.text(0.01, 0.01, note, fontsize=7, color="#5c6670")
    fig.tight_layout(rect=(0, 0.03, 1, 1))
    out = Path(a.out)
    out.parent.mkdir(parents=True, exist_ok=True)
    fig.savefig(out)
    print(f"figure: {out}")
    for r in front:
        print(f"  front: body {r['body_thickness_nm']:g} nm, NA {r['source_doping_cm3']:.3g} cm^-3: "
              f"Ion {r['ion_uA_per_um']:.3g} uA/um, {x} {r[x]:.1f}")


if __name__ == "__main__":
    main()
