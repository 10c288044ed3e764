"""`sub60 fit`: fit a few knobs of a design to a measured transfer curve.

    sub60 fit DATA [--design FILE.json] [--set name=value ...] --free knob[,knob ...]
                   [--unit A/um] [--width UM] [--vd V] [--floor I] [--range knob=LOW:HIGH]
                   [--start knob=VALUE] [--step V] [--max-evals N] [--ioff I] [--vdd V]
                   [--format text|json|csv] [--table OUT.csv]

DATA is read by `sub60.physics.read_measured` (CSV/TSV/whitespace, units from the header
or ``--unit``, ``--width`` for an absolute current, ``--vd`` for a file without a
drain-voltage column). The knobs are those of `sub60.physics.FIT_KNOBS`. The text
output lists each fitted knob with its standard uncertainty (or "not determined" and
why), the figures of merit of data and fit side by side (the same `figures_of_merit`,
at the measured gate voltages), the residual and the model evaluations; ``json`` gives
the same as one record, ``csv`` the points (data, fit, residual) with the fitted values
as ``# name = value`` lines; ``--table`` also writes that CSV to a file.

A bad option, file or design value exits with status 2 and a one-line message naming it.
"""

from __future__ import annotations

import argparse
import json
import math
import sys

from sub60.app.cli_common import (
    UsageError,
    ioff_option,
    load_design,
    number_option,
    read_bounded,
    set_fields_help,
    solve,
    vdd_option,
    warn_design,
)


def add_fit_parser(sub) -> None:
    """Register `fit` on the `sub60` sub-parsers."""
    from sub60.physics import CURRENT_UNITS, FIT_KNOBS

    knobs = "\n".join(f"  {k.name:<20} {k.help}; [{k.low:g}, {k.high:g}] {k.unit}"
                      for k in FIT_KNOBS.values())
    sp = sub.add_parser("fit", help="fit knobs of a design to a measured transfer curve",
                        formatter_class=argparse.RawDescriptionHelpFormatter,
                        epilog=f"knobs for --free:\n{knobs}\n\n{set_fields_help()}")
    sp.add_argument("data", help="measured table (CSV, TSV or whitespace; header optional)")
    sp.add_argument("--design", help="design JSON file (the Design record); the start")
    sp.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                    help="override one design field (repeatable)")
    sp.add_argument("--free", required=True, metavar="KNOB[,KNOB...]",
                    help="knobs to fit, comma-separated (listed below)")
    sp.add_argument("--unit", help="current unit when the header gives none: "
                    + ", ".join(CURRENT_UNITS))
    sp.add_argument("--width", type=number_option("width", 1e-3, 1e6, "um"), metavar="UM",
                    help="device width for a current in A [um]")
    sp.add_argument("--vd", type=number_option("vd", -0.6, 1.0, "V"), metavar="V",
                    help="drain voltage of a file without a drain-voltage column [V]")
    sp.add_argument("--floor", type=number_option("floor", 0.0, 1e6, "uA/um"), default=0.0,
                    metavar="I", help="leave out measured points at or below this current "
                    "(instrument floor) [uA/um]")
    sp.add_argument("--range", action="append", default=[], metavar="KNOB=LOW:HIGH",
                    help="bounds of a knob, inside its allowed range (repeatable)")
    sp.add_argument("--start", action="append", default=[], metavar="KNOB=VALUE",
                    help="starting value of a knob (repeatable; default the design's)")
    sp.add_argument("--step", type=number_option("step", 1e-3, 0.1, "V"), default=0.02,
                    metavar="V", help="gate-voltage step of the model curve [V]")
    sp.add_argument("--max-evals", type=int, default=40, metavar="N",
                    help="most evaluations of the residuals (2 to 1000)")
    sp.add_argument("--ioff", type=ioff_option, default=1e-3, help="Ioff target [uA/um]")
    sp.add_argument("--vdd", type=vdd_option, default=0.3,
                    help="supply for Ion = Id(Voff + Vdd) [V]")
    sp.add_argument("--format", choices=("text", "json", "csv"), default="text")
    sp.add_argument("--table", metavar="OUT.csv",
                    help="also write the points (data, fit, residual) as CSV to this file")
    sp.set_defaults(fit_handler=run_fit)


def _pairs(items: list[str], option: str) -> dict[str, str]:
    out: dict[str, str] = {}
    for item in items:
        if "=" not in item:
            raise UsageError(f"--{option}: expected knob=value, got {ascii(item)}")
        k, v = (s.strip() for s in item.split("=", 1))
        out[k] = v
    return out


def _number(text: str, where: str) -> float:
    from sub60.app.number_rules import InputError, parse_number

    try:
        return parse_number(text, where)
    except InputError as exc:
        raise UsageError(str(exc)) from None


def read_data(a):
    """The measured curves of ``a.data`` (at most `MAX_MEASURED_BYTES`)."""
    from sub60.physics import MAX_MEASURED_BYTES, read_measured

    raw = read_bounded(a.data, MAX_MEASURED_BYTES)
    if raw is None:
        raise UsageError(f"{ascii(a.data)}: larger than the limit of "
                         f"{MAX_MEASURED_BYTES // 1024} kB for a measured file")
    try:
        return read_measured(raw, current_unit=a.unit, width_um=a.width, drain_voltage_V=a.vd)
    except ValueError as exc:
        raise UsageError(f"{ascii(a.data)}: {exc}") from None


def _metric_rows(result, settings: dict) -> list[dict]:
    rows = []
    for c in result.curves:
        meas = c.metrics("measured", **settings)
        fit = c.metrics("fit", **settings)
        rows.append({"vd_V": c.vd_V, "measured": meas.to_dict(), "fit": fit.to_dict(),
                     "measured_missing": {k: r for k, r in meas.reasons().items() if r},
                     "fit_missing": {k: r for k, r in fit.reasons().items() if r}})
    return rows


def _fmt(v) -> str:
    return "n/a" if v is None or (isinstance(v, float) and not math.isfinite(v)) else f"{v:.4g}"


def run_fit(a) -> tuple[str, int]:
    from sub60.physics import fit_transfer

    data = read_data(a)
    if not data.transfer:
        raise UsageError(f"{ascii(a.data)}: holds output curves (Id-Vd) only; the fit needs "
                         "transfer curves (Id-Vg)")
    design = load_design(a.design, a.set)
    warn_design(design)
    free = [k.strip() for k in a.free.split(",") if k.strip()]
    bounds = {}
    for k, v in _pairs(a.range, "range").items():
        parts = v.split(":")
        if len(parts) != 2:
            raise UsageError(f"--range: expected knob=LOW:HIGH, got {ascii(k + '=' + v)}")
        bounds[k] = (_number(parts[0], f"--range {k}: LOW"), _number(parts[1], f"--range {k}: HIGH"))
    start = {k: _number(v, f"--start {k}") for k, v in _pairs(a.start, "start").items()}
    if not 2 <= a.max_evals <= 1000:
        raise UsageError(f"--max-evals: {a.max_evals} outside [2, 1000]")

    def report(n: int, rms: float) -> None:
        if a.format == "text":
            print(f"sub60 fit: evaluation {n}: rms residual {rms:.4f} decades", file=sys.stderr)

    result = solve(lambda: fit_transfer(
        data, design, free, bounds=bounds or None, start=start or None, floor_uA_per_um=a.floor,
        model_step_V=a.step, max_evaluations=a.max_evals, progress=report))
    for p in result.problems:
        print(f"sub60: warning: {p}", file=sys.stderr)
    settings = {"temperature_K": design.temperature_K, "ioff_target_uA_per_um": a.ioff,
                "vdd_V": a.vdd}
    metrics = _metric_rows(result, settings)
    fitted = {k.name: {"value": k.value, "unit": k.unit, "uncertainty": k.uncertainty,
                       "uncertainty_in": "decades" if k.log else k.unit,
                       "determined": k.determined, "at_bound": k.at_bound, "start": k.start,
                       "low": k.low, "high": k.high} for k in result.knobs}
    comments = {"data": a.data, **{f"fit_{k}": v["value"] for k, v in fitted.items()},
                **{f"fit_{k}_uncertainty": v["uncertainty"] for k, v in fitted.items()},
                "rms_residual_decades": result.rms_decades,
                "curve_evaluations": result.curve_evaluations}
    if a.table:
        from sub60.app.atomic import write_bytes_atomic
        from sub60.app.tables import csv_bytes

        try:
            write_bytes_atomic(a.table, csv_bytes(result.columns(), comments))
        except OSError as exc:
            raise UsageError(f"--table: cannot write {ascii(a.table)} ({exc.strerror})") from None
    if a.format == "csv":
        from sub60.app.tables import csv_text

        return csv_text(result.columns(), comments), 0
    if a.format == "json":
        rec = {"data": {"file": a.data, "unit": data.unit, "width_um": data.width_um,
                        "points": data.n_points, "comments": list(data.comments)},
               "start_design": result.start_design.to_dict(), "design": result.design.to_dict(),
               "fitted": fitted, "problems": list(result.problems),
               "correlation": [[None if not math.isfinite(x) else float(x) for x in row]
                               for row in result.correlation],
               "rms_residual_decades": result.rms_decades, "converged": result.converged,
               "optimiser": result.message, "curve_evaluations": result.curve_evaluations,
               "bias_points": result.bias_points, "elapsed_s": result.elapsed_s,
               "metrics": metrics}
        return json.dumps(rec, indent=1), 0
    lines = [f"fit of {a.data}: {len(data.transfer)} transfer curve(s), {data.n_points} points "
             f"(current in {data.unit})"]
    if data.comments:
        lines.append("  file says: " + " | ".join(data.comments[:3]))
    width = max(len(k.name) for k in result.knobs)
    lines.append("fitted knobs (± one standard uncertainty, from the Jacobian):")
    for k in result.knobs:
        lines.append(f"  {k.name:<{width}}  {k.text()}")
    for p in result.problems:
        lines.append(f"  ! {p}")
    lines.append(f"rms residual {result.rms_decades:.4f} decades of Id; "
                 f"{result.curve_evaluations} model curves ({result.bias_points} bias points) "
                 f"in {result.elapsed_s:.1f} s; {result.message}")
    names = {"ss_min_mV_per_dec": "SS_min [mV/dec]", "ss_avg4_mV_per_dec": "SS_avg4 [mV/dec]",
             "i60_uA_per_um": "I60 [uA/um]", "voff_V": "Voff [V]",
             "ion_uA_per_um": "Ion [uA/um]", "ion_ioff": "Ion/Ioff"}
    for row in metrics:
        lines.append(f"figures of merit at Vd = {row['vd_V']:g} V (Ioff target {a.ioff:g} uA/um, "
                     f"Vdd {a.vdd:g} V):   measured      fit")
        for key, label in names.items():
            lines.append(f"  {label:<22} {_fmt(row['measured'][key]):>10}  {_fmt(row['fit'][key]):>10}")
    if a.table:
        lines.append(f"points written to {a.table}")
    lines.append("A design-exploration model with stated approximations, not calibrated TCAD: "
                 "fitted knobs are what this model needs, not measured process values.")
    return "\n".join(lines), 0
