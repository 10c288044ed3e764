"""Draw the README's fit figure: the synthetic demo curve, the fitted model and the residuals.

    python tests/figure_fit.py [--out assets/fit-demo.png]

The data are the SYNTHETIC demo curve of assets/measured/demo-tfet-transfer.csv (made by
tests/make_fit_demo.py from the model: default InAs tunnel FET, work function 4.94 eV,
D_it 2e12 cm^-2 eV^-1, band tails 20 meV, 5 % log-normal noise; not a measurement). The
fit starts from the ideal default design and frees the work-function shift, the
interface-trap density and the band-tail energy, as in the README's command. Top: data,
the starting (ideal) model and the fit, log scale; bottom: residual log10(fit / data)
with the +-1 sigma band of the noise. Like the benchmark scripts, a script, not a test.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "assets" / "measured" / "demo-tfet-transfer.csv"
FREE = ["workfunction_shift", "trap_density", "tail_energy"]


def main() -> None:
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from sub60.physics import Design, Simulator, fit_transfer, read_measured

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", type=Path, default=ROOT / "assets" / "fit-demo.png")
    a = ap.parse_args()
    data = read_measured(DEMO.read_bytes())
    start = Design()
    sim = Simulator()
    res = fit_transfer(data, start, FREE, simulator=sim)
    (c,) = res.curves
    ideal = sim.transfer_curve(start, c.vg_V, c.vd_V, refine=False)
    fig, (top, bottom) = plt.subplots(2, 1, figsize=(7.5, 6.2), sharex=True,
                                      gridspec_kw={"height_ratios": [3, 1.3]})
    top.semilogy(c.vg_V, c.measured_uA_per_um, "o", ms=5, mfc="none", color="#222222",
                 label="synthetic demo data (model + 5 % noise)")
    top.semilogy(ideal.vg_V, ideal.id_uA_per_um, "--", color="#8a8a8a", lw=1.6,
                 label="start: ideal default design")
    top.semilogy(c.vg_V, c.fit_uA_per_um, "-", color="#c0392b", lw=2.2, label="fit")
    lines = [f"{k.name}: {k.text().replace(' (×/÷', chr(10) + '    (×/÷')}" for k in res.knobs]
    top.text(0.98, 0.04, "\n".join(lines), transform=top.transAxes, ha="right", va="bottom",
             fontsize=8.5, family="monospace",
             bbox={"facecolor": "white", "edgecolor": "#cccccc", "alpha": 0.9})
    top.set_ylabel("I$_d$ [µA/µm]")
    top.set_title(f"Fit of 3 knobs to a synthetic transfer curve, V$_d$ = {c.vd_V:g} V "
                  f"({res.curve_evaluations} model curves)", fontsize=11)
    top.legend(loc="upper left", fontsize=9, frameon=False)
    top.grid(True, which="major", alpha=0.3)
    noise = 0.05 / np.log(10)
    bottom.axhspan(-noise, noise, color="#dddddd", label="±1σ of the noise")
    bottom.axhline(0, color="#555555", lw=0.8)
    bottom.plot(c.vg_V, c.residual_decades, "o-", ms=4, color="#c0392b", lw=1)
    bottom.set_ylabel("log$_{10}$(fit/data)")
    bottom.set_xlabel("V$_g$ [V]")
    bottom.legend(loc="upper left", fontsize=8, frameon=False)
    bottom.grid(True, alpha=0.3)
    fig.text(0.01, 0.005, "sub60: a design-exploration model, not calibrated TCAD. "
             "Synthetic data of our own scenario.", fontsize=7.5, color="#666666")
    fig.tight_layout(rect=(0, 0.02, 1, 1))
    a.out.parent.mkdir(parents=True, exist_ok=True)
    fig.savefig(a.out, dpi=130)
    print(f"wrote {a.out}: {res}")


if __name__ == "__main__":
    main()
