"""The `sub60` command line: serve the explorer, or print band diagrams and curves.

    sub60 serve [--port 5006] [--show] [--host 127.0.0.1]
    sub60 bands    [--design FILE.json] [--set name=value ...] --vg V --vd V [--format json|csv]
    sub60 transfer [--design FILE.json] [--set ...] --vg START:STOP:N --vd V [--twin]
    sub60 output   [--design FILE.json] [--set ...] --vg V --vd START:STOP:N
    sub60 snapshot export|check|render ...      sub60 sweep SPEC --out DIR ...
    sub60 fit DATA [--design FILE.json] --free knob,knob ...   (see `app.fit_cli`)

``bands``, ``transfer`` and ``output`` take ``--model`` (a tunnelling model of
`sub60.physics.TUNNELLING_MODELS`; default two-band WKB). ``bands`` and ``transfer`` state
the models that made their numbers: JSON key ``models`` (``charge``: the design's
``charge_model`` with a ``charge_note``, ``tunnelling``), CSV lines ``# charge_model`` and
``# tunnelling_model``.

With ``--format csv`` the curves are written by the one table writer of sub60
(`app.tables`), with the column names of the snapshot files: ``bands`` gives ``x_nm``, one
``<subband>_eV`` column per subband (C1 ..., HH1, LH1 ...), ``efs_eV``, ``efd_eV``;
``transfer`` gives ``vg_V``, ``design_id_uA_per_um``, ``design_ss_mV_per_dec`` (and with
``--twin`` ``twin_id_uA_per_um``, ``twin_ss_mV_per_dec`` and the twin's figures of merit
as ``# twin_<metric>`` lines); ``output`` gives ``vd_V`` and
``id_uA_per_um_at_vg_<Vg>_V``. Scalars (bias, Fermi levels, figures of merit) come first
as ``# name = value`` lines.

When any non-ideality of the design is on (band tails, trap-assisted generation, interface
traps, series resistance, band-gap narrowing; `Design.is_ideal`), ``transfer`` also
solves the ideal device (the same design with `NON_IDEAL_OFF`) and records it beside the
non-ideal one: JSON keys ``ideal`` (curve and figures of merit) and
``off_state_by_mechanism`` (the current at Voff split into ``band_to_band_uA_per_um``,
``band_tails_uA_per_um``, ``trap_assisted_uA_per_um``, ``thermionic_uA_per_um``, with
``total_uA_per_um``, ``vg_V``, ``vd_V``); CSV columns ``ideal_id_uA_per_um``,
``ideal_ss_mV_per_dec`` and scalar lines ``ideal_<figure>`` and ``off_<mechanism>_uA_per_um``.
``bands`` then gives ``current_by_mechanism_uA_per_um`` and ``ideal_current_uA_per_um``.

A bad option or design value exits with status 2 and a one-line message naming it.
"""

from __future__ import annotations

import argparse
import json
import math
import sys

import numpy as np

from sub60.app.cli_common import (
    Parser,
    UsageError,
    apply_overrides,
    ioff_option,
    load_design,
    parse_sweep,
    parse_value,
    set_fields_help,
    single_voltage,
    solve,
    vdd_option,
    warn_design,
)
from sub60.app.nonideal import ideal_design, off_state_breakdown
from sub60.app.snapshot_cli import add_snapshot_parser, run_snapshot
from sub60.app.tables import bands_table, csv_text, output_table, transfer_table

#: Names kept importable here for older callers (they live in `app.cli_common`).
__all__ = ["UsageError", "apply_overrides", "build_parser", "load_design", "main",
           "parse_sweep", "parse_value"]


def _clean(values) -> list:
    """JSON-safe list: non-finite numbers become null."""
    return [float(v) if math.isfinite(v) else None for v in np.asarray(values, float).ravel()]


def _metrics_dict(tc) -> tuple[dict, dict]:
    """Figures of merit by `Metrics.METRIC_NAMES`, and the reason of each undefined one."""
    values = tc.metrics.to_dict()
    notes = {k: r for k, r in tc.metrics.reasons().items() if values[k] is None}
    return values, notes


def transfer_record(tc) -> dict:
    """JSON record of a transfer curve (keys of the command line and snapshots)."""
    values, notes = _metrics_dict(tc)
    return {"vd_V": tc.vd_V, "vg_V": _clean(tc.vg_V), "id_uA_per_um": _clean(tc.id_uA_per_um),
            "ss_mV_per_dec": _clean(tc.ss_mV_per_dec), "metrics": values,
            "metrics_missing": notes}


def bands_record(bp) -> dict:
    """JSON record of a band diagram at one bias."""
    w = bp.window_eV
    return {"vg_V": bp.vg_V, "vd_V": bp.vd_V, "x_nm": _clean(bp.x_nm), "ec_eV": _clean(bp.subband_ec_eV),
            "ev_eV": _clean(bp.subband_ev_eV), "efs_eV": bp.efs_eV, "efd_eV": bp.efd_eV,
            "window": None if w is None else {"e_min_eV": w[0], "e_max_eV": w[1]},
            "current_uA_per_um": bp.current_uA_per_um}


def _simulator(a):
    """The simulator of the chosen tunnelling model (`--model`)."""
    from sub60.physics import Simulator

    return Simulator(model=a.model)


def _models(a, d) -> dict:
    """Which models made the numbers: the carrier charge (`Design.charge_model`) and the
    tunnelling model (`--model`), each with a few words on what it is."""
    from sub60.physics import CHARGE_MODEL_NOTES

    return {"charge": d.charge_model, "charge_note": CHARGE_MODEL_NOTES[d.charge_model],
            "tunnelling": a.model}


def _model_comments(a, d) -> dict:
    """`_models` as the CSV's ``# name = value`` lines."""
    return {"charge_model": d.charge_model, "tunnelling_model": a.model}


def cmd_bands(a) -> str:
    d = load_design(a.design, a.set)
    bp = solve(_simulator(a).solve_bias, d, single_voltage(parse_sweep(a.vg, "vg"), "vg"),
                single_voltage(parse_sweep(a.vd, "vd"), "vd"))
    rec = {"design": d.to_dict(), **bands_record(bp), "models": _models(a, d),
           "warnings": warn_design(d)}
    extra: dict = {}
    if not d.is_ideal:
        ideal = solve(_simulator(a).solve_bias, ideal_design(d), bp.vg_V, bp.vd_V)
        rec["current_by_mechanism_uA_per_um"] = dict(bp.current_by_mechanism_uA_per_um)
        rec["ideal_current_uA_per_um"] = ideal.current_uA_per_um
        extra = {f"{k}_uA_per_um": v for k, v in rec["current_by_mechanism_uA_per_um"].items()}
        extra["ideal_current_uA_per_um"] = ideal.current_uA_per_um
    if a.format == "csv":
        w = rec["window"]
        return csv_text(bands_table(bp),
                        {"vg_V": bp.vg_V, "vd_V": bp.vd_V, "efs_eV": bp.efs_eV, "efd_eV": bp.efd_eV,
                         "window_e_min_eV": None if w is None else w["e_min_eV"],
                         "window_e_max_eV": None if w is None else w["e_max_eV"],
                         "current_uA_per_um": rec["current_uA_per_um"], **extra,
                         **_model_comments(a, d)})
    return json.dumps(rec, indent=1)


def cmd_transfer(a) -> str:
    transfer_curve = _simulator(a).transfer_curve
    d = load_design(a.design, a.set)
    vg = parse_sweep(a.vg, "vg")
    vd = single_voltage(parse_sweep(a.vd, "vd"), "vd")
    kw = {"ioff_target_uA_per_um": a.ioff, "vdd_V": a.vdd}
    tc = solve(lambda: transfer_curve(d, vg, vd, **kw))
    rec = {"design": d.to_dict(), **transfer_record(tc), "models": _models(a, d),
           "warnings": warn_design(d)}
    twin = None
    if a.twin:
        twin = solve(lambda: transfer_curve(d.twin(), vg, vd, **kw))
        rec["twin"] = {"design": d.twin().to_dict(), **transfer_record(twin)}
    comments = {"vd_V": vd, **_model_comments(a, d), **rec["metrics"]}
    table = transfer_table(tc, twin)
    if not d.is_ideal:
        sim = _simulator(a)
        ideal = solve(lambda: transfer_curve(ideal_design(d), vg, vd, **kw))
        rec["ideal"] = {"design": ideal_design(d).to_dict(), **transfer_record(ideal)}
        br = solve(lambda: off_state_breakdown(sim.solve_bias, d, tc.metrics.voff_V.value, vd))
        rec["off_state_by_mechanism"] = br
        cols = ideal.columns()
        table["ideal_id_uA_per_um"] = cols["id_uA_per_um"]
        table["ideal_ss_mV_per_dec"] = cols["ss_mV_per_dec"]
        comments.update({f"ideal_{k}": v for k, v in rec["ideal"]["metrics"].items()})
        comments.update({f"off_{k}": v for k, v in br.items() if k != "reason"})
    if a.format == "csv":
        if twin:
            comments.update({f"twin_{k}": v for k, v in rec["twin"]["metrics"].items()})
        return csv_text(table, comments)
    return json.dumps(rec, indent=1)


def cmd_output(a) -> str:
    output_curve = _simulator(a).output_curve
    d = load_design(a.design, a.set)
    vgs = parse_sweep(a.vg, "vg")
    vd = parse_sweep(a.vd, "vd")
    curves = [solve(output_curve, d, float(v), vd) for v in vgs]
    if a.format == "csv":
        try:
            return csv_text(output_table(curves))
        except ValueError as exc:
            raise UsageError(f"--vg: {exc}") from None
    ids = [_clean(c.id_uA_per_um) for c in curves]
    return json.dumps({"design": d.to_dict(), "vg_V": float(vgs[0]) if vgs.size == 1 else _clean(vgs),
                       "vd_V": _clean(vd), "id_uA_per_um": ids[0] if vgs.size == 1 else ids},
                      indent=1)


def cmd_serve(a) -> str:
    from sub60.app.server import serve

    serve(port=a.port, host=a.host, show=a.show)
    return ""


def build_parser() -> argparse.ArgumentParser:
    p = Parser(prog="sub60", description="Explore thin-body tunnel FETs and their MOSFET twins: "
                "band diagrams, tunnel window, band-to-band current and transfer curves.")
    sub = p.add_subparsers(dest="command", parser_class=Parser)
    s = sub.add_parser("serve", help="serve the browser explorer on 127.0.0.1")
    from sub60.app.server import port_number

    s.add_argument("--port", type=port_number, default=5006, help="TCP port, 1 to 65535")
    s.add_argument("--host", default="127.0.0.1", help="address to listen on (default loopback)")
    s.add_argument("--show", action="store_true", help="open the browser")

    from sub60.physics import TUNNELLING_MODELS

    def common(sp, vg_default: str | None, vd_default: str | None):
        sp.epilog = set_fields_help()
        sp.formatter_class = argparse.RawDescriptionHelpFormatter
        sp.add_argument("--design", help="design JSON file (the Design record)")
        sp.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                        help="override one design field (repeatable; the fields are listed "
                             "below)")
        sp.add_argument("--vg", default=vg_default, required=vg_default is None,
                        help="gate voltage V or sweep START:STOP:N [V]")
        sp.add_argument("--vd", default=vd_default, required=vd_default is None,
                        help="drain voltage V or sweep START:STOP:N [V]")
        sp.add_argument("--format", choices=("json", "csv"), default="json")
        sp.add_argument("--model", choices=TUNNELLING_MODELS, default=TUNNELLING_MODELS[0],
                        help="band-to-band transmission: WKB with the two-band or one-band "
                             "imaginary wave-vector, or the exact two-band transfer matrices "
                             f"(default {TUNNELLING_MODELS[0]})")

    common(sub.add_parser("bands", help="band diagram at one bias"), "0.3", "0.3")
    from sub60.app.state import DEFAULT_GATE_SWEEP

    t = sub.add_parser("transfer", help="transfer curve Id-Vg with figures of merit "
                       f"(default sweep {DEFAULT_GATE_SWEEP.option_text()}, the page's: "
                       f"{1e3 * DEFAULT_GATE_SWEEP.step_V:g} mV steps)")
    common(t, DEFAULT_GATE_SWEEP.option_text(), "0.3")
    t.add_argument("--twin", action="store_true", help="also the n+ source MOSFET twin")
    t.add_argument("--ioff", type=ioff_option, default=1e-3, help="Ioff target [uA/um]")
    t.add_argument("--vdd", type=vdd_option, default=0.3,
                   help="supply for Ion = Id(Voff + Vdd) [V]")
    common(sub.add_parser("output", help="output curves Id-Vd"), "0.3", "0:0.5:11")
    add_snapshot_parser(sub)
    from sub60.app.sweep_cli import add_sweep_parser
    add_sweep_parser(sub)
    from sub60.app.fit_cli import add_fit_parser
    add_fit_parser(sub)
    return p


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    try:
        a = parser.parse_args(argv)
        if a.command is None:
            parser.print_help()
            return 0
        handlers = {"bands": cmd_bands, "transfer": cmd_transfer, "output": cmd_output,
                    "serve": cmd_serve}
        status = 0
        if a.command == "snapshot":
            out, status = run_snapshot(a)
        elif a.command == "sweep":
            out, status = a.sweep_handler(a)
        elif a.command == "fit":
            out, status = a.fit_handler(a)
        else:
            out = handlers[a.command](a)
    except UsageError as exc:
        print(f"sub60: error: {exc}", file=sys.stderr)
        return 2
    if out:
        sys.stdout.write(out if out.endswith("\n") else out + "\n")
    return status


if __name__ == "__main__":
    sys.exit(main())
