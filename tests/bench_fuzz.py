"""Fuzz benchmark of the physics pipeline (a script, not a test): N random cases.

    python tests/bench_fuzz.py [--cases 500] [--seed 1] [--jobs 2] [--json out.json]
    python tests/bench_fuzz.py --seed 1 --case 17      # re-run one case and print it
    python tests/bench_fuzz.py --edge 0.25             # half the numbers on a range end

Each case draws a random design and one bias point with the samplers of
tests/physics/test_fuzz.py (the full documented ranges, a numpy generator instead of
hypothesis), solves it with a fresh `Simulator`, and checks the invariants of that
module. Printed: the converged fraction, the fallbacks used, every SolverError, crash
and invariant violation with its design, the numpy floating-point warnings met, the
largest first-order subband-gap shortfall below the bulk gap, and the time per case
(median, p95, slowest case). Times are cold solves of a new design (mesh, subbands and
Newton from the charge-neutral guess); each worker solves one warm-up case first so
that the one-off compilation of the tunnelling kernel is not counted.
"""

from __future__ import annotations

import argparse
import json
import sys
import time
import traceback
import warnings
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from sub60.physics.design import Design  # noqa: E402
from sub60.physics.simulate import Simulator  # noqa: E402
from tests.physics.test_fuzz import (  # noqa: E402
    RandomSource,
    draw_bias,
    draw_design_fields,
    gap_shortfall_eV,
    invariant_violations,
    solve_case,
    transverse_variation_eV,
)


def draw_case(seed: int, index: int, edge: float = 0.05) -> tuple[dict, float, float]:
    """Design fields and bias of case `index` of a run (reproducible from the seed)."""
    src = RandomSource(np.random.default_rng([seed, index]), edge)
    fields = draw_design_fields(src)
    vg, vd = draw_bias(src)
    return fields, vg, vd


def run_case(seed: int, index: int, edge: float = 0.05) -> dict:
    """Solve one case; a JSON-safe record of what happened."""
    fields, vg, vd = draw_case(seed, index, edge)
    rec: dict = {"index": index, "design": fields, "vg_V": vg, "vd_V": vd, "notes": [],
                 "violations": [], "warnings": [], "message": ""}
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        t0 = time.perf_counter()
        try:
            design = Design(**fields)
            bp, error, seconds = solve_case(design, vg, vd)
        except Exception as exc:  # a crash is a bug: keep its traceback
            rec.update(outcome="crash", seconds=time.perf_counter() - t0,
                       message=f"{type(exc).__name__}: {exc}",
                       traceback=traceback.format_exc(limit=6))
            bp = None
        else:
            rec["seconds"] = seconds
            if bp is None:
                rec.update(outcome="solver error", message=error)
            else:
                rec["outcome"] = "converged"
                rec["notes"] = list(bp.solver_notes)
                rec["violations"] = [list(v) for v in invariant_violations(bp)]
                short = gap_shortfall_eV(bp)
                i = int(np.argmax(short))
                rec["gap_shortfall_eV"] = float(short[i])
                rec["transverse_spread_eV"] = float(transverse_variation_eV(bp)[i])
                rec["current_uA_per_um"] = bp.current_uA_per_um
                rec["newton_steps"] = bp.electrostatics.iterations
                rec["grid"] = list(bp.electrostatics.psi_V.shape)
    rec["warnings"] = sorted({f"{w.category.__name__}: {w.message} ({Path(w.filename).name}:"
                              f"{w.lineno})" for w in caught})
    return rec


def _warm_up() -> None:
    Simulator().solve_bias(Design(), 0.3, 0.3)


def summarise(records: list[dict], seed: int, edge: float) -> None:
    n = len(records)
    times = np.array([r["seconds"] for r in records])
    by = {k: [r for r in records if r["outcome"] == k] for k in ("converged", "solver error", "crash")}
    conv = by["converged"]
    print(f"cases {n} (seed {seed}, edge {edge:g})")
    print(f"converged {len(conv)} ({len(conv) / n:.1%}); SolverError {len(by['solver error'])}; "
          f"crash {len(by['crash'])}")
    notes: dict[str, int] = {}
    for r in conv:
        for note in r["notes"]:
            key = note.split(" from ")[0]
            notes[key] = notes.get(key, 0) + 1
    print(f"fallbacks among the converged: {notes or 'none'}")
    print(f"time per case [s]: median {np.median(times):.3f}, p95 {np.percentile(times, 95):.3f}, "
          f"max {times.max():.3f}")
    slow = records[int(np.argmax(times))]
    print(f"slowest: case {slow['index']}, {slow['seconds']:.3f} s, {slow['outcome']}, "
          f"Vg = {slow['vg_V']!r} V, Vd = {slow['vd_V']!r} V, grid {slow.get('grid')}, "
          f"Newton steps {slow.get('newton_steps')}, notes {slow['notes']}")
    print(f"  design {json.dumps(slow['design'])}")
    for kind in ("solver error", "crash"):
        for r in by[kind]:
            print(f"{kind.upper()} case {r['index']}: Vg = {r['vg_V']!r} V, Vd = {r['vd_V']!r} V, "
                  f"{r['seconds']:.2f} s: {r['message'][:400]}")
            print(f"  design {json.dumps(r['design'])}")
            if kind == "crash":
                print("  " + r["traceback"].replace("\n", "\n  "))
    tags: dict[str, list[dict]] = {}
    for r in conv:
        for tag, _ in r["violations"]:
            tags.setdefault(tag, []).append(r)
    print(f"invariant violations by tag: { {k: len(v) for k, v in tags.items()} or 'none'}")
    for tag, rs in tags.items():
        for r in rs[:5]:
            text = next(t for g, t in r["violations"] if g == tag)
            print(f"  [{tag}] case {r['index']}: {text}; Vg = {r['vg_V']!r} V, Vd = {r['vd_V']!r} V")
            print(f"    design {json.dumps(r['design'])}")
    below = [r for r in conv if r["gap_shortfall_eV"] > 0]
    if below:
        worst = max(below, key=lambda r: r["gap_shortfall_eV"])
        print(f"subband gap below the bulk gap in {len(below)} converged cases; worst "
              f"{worst['gap_shortfall_eV'] * 1e3:.1f} meV (case {worst['index']}, E_c spread "
              f"across the body there {worst['transverse_spread_eV'] * 1e3:.0f} meV)")
    seen: dict[str, int] = {}
    for r in records:
        for w in r["warnings"]:
            seen[w] = seen.get(w, 0) + 1
    for w, k in sorted(seen.items(), key=lambda kv: -kv[1]):
        print(f"warning in {k} cases: {w[:300]}")


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", type=int, default=200, help="number of random cases")
    ap.add_argument("--seed", type=int, default=1, help="seed of the run")
    ap.add_argument("--jobs", type=int, default=1, help="worker processes")
    ap.add_argument("--edge", type=float, default=0.05,
                    help="chance that a drawn number sits on each end of its range")
    ap.add_argument("--json", type=Path, help="write every record to this file")
    ap.add_argument("--case", type=int, help="re-run only this case index and print it")
    args = ap.parse_args(argv)
    if args.case is not None:
        _warm_up()
        print(json.dumps(run_case(args.seed, args.case, args.edge), indent=2))
        return 0
    t0 = time.perf_counter()
    indices = range(args.cases)
    if args.jobs > 1:
        with ProcessPoolExecutor(args.jobs, initializer=_warm_up) as pool:
            records = list(pool.map(run_case, [args.seed] * args.cases, indices,
                                    [args.edge] * args.cases, chunksize=4))
    else:
        _warm_up()
        records = [run_case(args.seed, i, args.edge) for i in indices]
    wall = time.perf_counter() - t0
    summarise(records, args.seed, args.edge)
    print(f"wall time {wall:.1f} s with {args.jobs} job(s)")
    if args.json:
        args.json.write_text(json.dumps(records, indent=1))
    bad = sum(r["outcome"] == "crash" or bool(r["violations"]) for r in records)
    return 1 if bad else 0


if __name__ == "__main__":
    raise SystemExit(main())
