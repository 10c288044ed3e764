"""Benchmark of the physics core (a script, not a test): prints medians measured in one run.

    python tests/bench_physics.py [--repeats 15] [--charge-model subbands]

(every figure on the default design with the charge model given, by default the
design's default)

1. Electrostatics on the default design and grid: cold solve (charge-neutral start,
   structure cached), warm solve (continuation after dVg = 20 mV), Newton steps,
   unknowns, and the ratio (time per Newton step) / (one sparse LU factor + solve of the
   same Jacobian with scipy.sparse.linalg.splu), both measured here.
2. Pipeline: a 41-point transfer curve of the default design (fresh simulator each
   time, metrics refined adaptively) with the split Poisson / confinement /
   tunnelling+current, the same without refinement, and one warm bias point with its
   current for the WKB model and for the exact two-band model.
3. Thread limit: the cost of the scoped one-BLAS-thread limit the solver takes around
   each solve (cached threadpoolctl controller), beside a fresh
   ``threadpoolctl.threadpool_limits`` context, and its ratio to a warm solve.
"""

from __future__ import annotations

import argparse
import time

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spl

from sub60.physics.design import Design
from sub60.physics.electrostatics import solve_electrostatics
from sub60.physics.simulate import Simulator
from sub60.physics.structure import build_frame, problem_at_bias


def median_ms(samples: list[float]) -> float:
    return 1e3 * float(np.median(samples))


#: the design every section measures (the default, or --charge-model)
DESIGN = Design()


def bench_electrostatics(repeats: int) -> None:
    d = DESIGN
    build_frame(d.replace(gate_length_nm=31.0))  # one-time loads (Fermi-Dirac table, scipy)
    t0 = time.perf_counter()
    frame = build_frame(d)
    t_frame = time.perf_counter() - t0
    cold, warm, cold_it, warm_it, lu = [], [], [], [], []
    es0 = solve_electrostatics(d, 0.2, 0.3)
    for _ in range(repeats):
        t = time.perf_counter()
        es = solve_electrostatics(d, 0.2, 0.3)
        cold.append(time.perf_counter() - t)
        cold_it.append(es.iterations)
        t = time.perf_counter()
        es2 = solve_electrostatics(d, 0.22, 0.3, initial=es0)
        warm.append(time.perf_counter() - t)
        warm_it.append(es2.iterations)
    # the same Jacobian as a sparse matrix, factorised and solved by SuperLU
    prob = problem_at_bias(frame, 0.22, 0.3)
    _, _, dn, dp = prob.bands.densities(es2.psi_V, es2.efn_eV[:, None], es2.efp_eV[:, None])
    from sub60.physics.poisson import QE_V_NM2_CM3

    dq = ((dn - dp) * frame.operator.area_semi * QE_V_NM2_CM3).ravel()
    fixed = frame.operator.fixed
    a = frame.operator.matrix.tolil()
    a.setdiag(a.diagonal() + np.where(fixed, 0.0, dq))
    a = a.tocsc()
    rhs = np.random.default_rng(1).standard_normal(a.shape[0])
    for _ in range(repeats):
        t = time.perf_counter()
        spl.splu(a).solve(rhs)
        lu.append(time.perf_counter() - t)
    n_unknowns = int((~fixed).sum())
    per_step_warm = median_ms(warm) / np.median(warm_it)
    print("Electrostatics, default design and grid")
    print(f"  grid {frame.mesh.nx} x {frame.mesh.ny} nodes, {n_unknowns} unknowns "
          f"(sparse matrix nnz {sp.csc_matrix(a).nnz})")
    print(f"  structure build (mesh, subbands, operator), once per design: {1e3 * t_frame:.1f} ms")
    print(f"  cold solve:  median {median_ms(cold):7.2f} ms, Newton steps {int(np.median(cold_it))}")
    print(f"  warm solve:  median {median_ms(warm):7.2f} ms, Newton steps {int(np.median(warm_it))} "
          f"(dVg = 20 mV)")
    print(f"  sparse LU factor+solve of the same Jacobian (splu): median {median_ms(lu):.2f} ms")
    print(f"  time per Newton step (warm) / one LU factor+solve = {per_step_warm / median_ms(lu):.2f}")
    print(f"  time per Newton step (cold) / one LU factor+solve = "
          f"{median_ms(cold) / np.median(cold_it) / median_ms(lu):.2f}")


def bench_pipeline(repeats: int) -> None:
    d = DESIGN
    vg = np.linspace(-0.3, 0.5, 41)
    Simulator().transfer_curve(d, vg, 0.3)  # compile / warm the caches once
    totals, split = [], {"poisson": [], "confinement": [], "tunnelling": []}
    for _ in range(max(3, repeats // 3)):
        sim = Simulator()
        t = time.perf_counter()
        sim.transfer_curve(d, vg, 0.3)
        totals.append(time.perf_counter() - t)
        pts = [sim.solve_bias(d, float(v), 0.3) for v in vg]  # cached: read the timings
        for k in split:
            split[k].append(sum(p.timings_s[k] for p in pts))
    plain = []
    for _ in range(max(3, repeats // 3)):
        t = time.perf_counter()
        Simulator().transfer_curve(d, vg, 0.3, refine=False)
        plain.append(time.perf_counter() - t)
    n_refined = Simulator().transfer_curve(d, vg, 0.3).vg_refined_V.size
    print("Pipeline, default design")
    print(f"  41-point transfer curve (refined to {n_refined} points for the metrics): median "
          f"{median_ms(totals):.0f} ms (requested points: Poisson "
          f"{median_ms(split['poisson']):.0f} ms, confinement "
          f"{median_ms(split['confinement']):.0f} ms, tunnelling+current "
          f"{median_ms(split['tunnelling']):.0f} ms); without refinement "
          f"{median_ms(plain):.0f} ms")
    for model in ("two-band", "two-band-exact"):
        sim = Simulator(model=model)
        sim.solve_bias(d, 0.2, 0.3)
        warm = []
        for i in range(repeats):
            v = 0.2 + 0.02 * ((i % 2) + 1) + 1e-4 * i  # a new point each time, 20 mV away
            t = time.perf_counter()
            bp = sim.solve_bias(d, v, 0.3)
            warm.append(time.perf_counter() - t)
        print(f"  warm bias point with current, model {model}: median {median_ms(warm):.1f} ms "
              f"(Id = {bp.current_uA_per_um:.3g} uA/um)")


def bench_thread_limit(repeats: int) -> None:
    from threadpoolctl import threadpool_limits

    from sub60.physics._threads import single_blas_thread

    def cost(make) -> float:
        samples = []
        for _ in range(20 * repeats):
            t = time.perf_counter()
            with make():
                pass
            samples.append(time.perf_counter() - t)
        return median_ms(samples)

    scoped = cost(single_blas_thread)
    fresh = cost(lambda: threadpool_limits(1, "blas"))
    d = DESIGN
    es0 = solve_electrostatics(d, 0.2, 0.3)
    warm = []
    for _ in range(repeats):
        t = time.perf_counter()
        solve_electrostatics(d, 0.22, 0.3, initial=es0)
        warm.append(time.perf_counter() - t)
    print("Thread limit (one BLAS thread during a solve)")
    print(f"  scoped limit (cached controller): median {1e3 * scoped:.1f} us; fresh "
          f"threadpool_limits context: median {1e3 * fresh:.1f} us; scoped / warm solve = "
          f"{scoped / median_ms(warm):.4f}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=15)
    ap.add_argument("--charge-model", choices=("semiclassical", "subbands"), default=None,
                    help="Design.charge_model of the measured design (default: the default's)")
    a = ap.parse_args()
    global DESIGN
    if a.charge_model is not None:
        DESIGN = Design(charge_model=a.charge_model)
    print(f"design: default, charge_model {DESIGN.charge_model}")
    bench_electrostatics(a.repeats)
    bench_pipeline(a.repeats)
    bench_thread_limit(a.repeats)


if __name__ == "__main__":
    main()
