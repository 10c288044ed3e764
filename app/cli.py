"""The `sub60` command line: serve the explorer, or print band diagrams and curves.

    sub60 serve [--port 5006] [--show] [--host 127.0.0.1]
    sub60 bands    [--design FILE.json] [--set name=value ...] --vg V --vd V [--format json|csv]
    sub60 transfer [--design FILE.json] [--set ...] --vg START:STOP:N --vd V [--twin]
    sub60 output   [--design FILE.json] [--set ...] --vg V --vd START:STOP:N

A bad option or design value exits with status 2 and a one-line message naming it.
"""

from __future__ import annotations

import os

# one BLAS thread: the banded solvers are small and erratic with two (see physics/__init__)
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import csv
import io
import json
import math
import re
import sys
from typing import Any

import numpy as np


class UsageError(Exception):
    """A bad option or value: reported in one line, exit status 2."""


class _Parser(argparse.ArgumentParser):
    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        # let "--vg -0.2:0.6:41" read the sweep as a value, not as an option
        self._negative_number_matcher = re.compile(r"^-(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?(:.*)?$")

    def error(self, message: str) -> None:  # one line, status 2, no usage dump
        raise UsageError(message)


def parse_sweep(text: str, name: str) -> np.ndarray:
    """'V' or 'START:STOP:N' -> voltages [V]."""
    parts = text.split(":")
    try:
        if len(parts) == 1:
            values = np.array([float(parts[0])])
        elif len(parts) == 3:
            n = int(parts[2])
            if not 1 <= n <= 2001:
                raise UsageError(f"--{name}: N = {n} outside [1, 2001]")
            values = np.linspace(float(parts[0]), float(parts[1]), n)
        else:
            raise ValueError
    except ValueError:
        raise UsageError(f"--{name}: expected V or START:STOP:N, got {text!r}") from None
    if not np.all(np.isfinite(values)):
        raise UsageError(f"--{name}: values must be finite, got {text!r}")
    return values


def parse_value(text: str) -> Any:
    """Value of a --set override: number, 'none', or text."""
    if text.lower() in ("none", "null"):
        return None
    try:
        return float(text)
    except ValueError:
        return text


def _warn(design) -> list[str]:
    from sub60.physics.simulate import design_warnings

    notes = list(design_warnings(design))
    for n in notes:
        print(f"sub60: warning: {n}", file=sys.stderr)
    return notes


def load_design(path: str | None, overrides: list[str]):
    """Design from a JSON file (or the default) with name=value overrides."""

    data: dict[str, Any] = {}
    if path:
        try:
            with open(path, encoding="utf-8") as fh:
                data = json.load(fh)
        except OSError as exc:
            raise UsageError(f"--design: cannot read {path!r} ({exc.strerror})") from None
        except UnicodeDecodeError:
            raise UsageError(f"--design: {path!r} is not UTF-8 text") from None
        except json.JSONDecodeError as exc:
            raise UsageError(f"--design: {path!r} is not valid JSON ({exc.msg}, line {exc.lineno})") \
                from None
        if isinstance(data, dict) and "design" in data and isinstance(data["design"], dict):
            data = data["design"]
        if not isinstance(data, dict):
            raise UsageError(f"--design: {path!r} must hold a JSON object")
    return apply_overrides(data, overrides)


def apply_overrides(data: dict[str, Any], overrides: list[str]):
    """A Design from a field dictionary with `--set name=value` overrides applied."""
    from sub60.physics.design import Design

    data = dict(data)
    for item in overrides:
        if "=" not in item:
            raise UsageError(f"--set: expected name=value, got {item!r}")
        key, value = item.split("=", 1)
        data[key.strip()] = parse_value(value.strip())
    try:
        return Design.from_dict(data)
    except ValueError as exc:
        raise UsageError(str(exc)) from None


def _clean(values) -> list:
    """JSON-safe list: non-finite numbers become null."""
    return [float(v) if math.isfinite(v) else None for v in np.asarray(values, float).ravel()]


def _metrics_dict(tc) -> tuple[dict, dict]:
    m = tc.metrics
    names = {"ss_min_mV_per_dec": m.ss_min_mV_per_dec, "ss_avg4_mV_per_dec": m.ss_avg4_mV_per_dec,
             "i60_uA_per_um": m.i60_uA_per_um, "ioff_uA_per_um": m.ioff_uA_per_um,
             "voff_V": m.voff_V, "ion_uA_per_um": m.ion_uA_per_um, "ion_ioff": m.ion_ioff,
             "vth_V": m.vth_V}
    values = {k: v.value for k, v in names.items()}
    notes = {k: v.reason for k, v in names.items() if v.value is None}
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
    return {"vg_V": bp.vg_V, "vd_V": bp.vd_V, "x_nm": _clean(bp.x_nm), "ec_eV": _clean(bp.ec_eV),
            "ev_eV": _clean(bp.ev_eV), "efs_eV": bp.efs_eV, "efd_eV": bp.efd_eV,
            "window": None if w is None else {"e_min_eV": w[0], "e_max_eV": w[1]},
            "current_uA_per_um": bp.current_uA_per_um}


def _csv(header: list[str], columns: list, comments: dict | None = None) -> str:
    buf = io.StringIO()
    for k, v in (comments or {}).items():
        buf.write(f"# {k} = {'' if v is None else v}\n")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for row in zip(*columns, strict=True):
        w.writerow(["" if (isinstance(x, float) and not math.isfinite(x)) else f"{x:.10g}"
                    for x in row])
    return buf.getvalue()


def _single(values: np.ndarray, name: str) -> float:
    if values.size != 1:
        raise UsageError(f"--{name}: this command takes one voltage, got a sweep of {values.size}")
    return float(values[0])


def _solve(fn, *args):
    from sub60.physics.poisson import SolverError

    try:
        return fn(*args)
    except ValueError as exc:
        raise UsageError(str(exc)) from None
    except SolverError as exc:
        raise UsageError(f"solver: {exc}") from None


def cmd_bands(a) -> str:
    from sub60.physics.simulate import solve_bias

    d = load_design(a.design, a.set)
    bp = _solve(solve_bias, d, _single(parse_sweep(a.vg, "vg"), "vg"),
                _single(parse_sweep(a.vd, "vd"), "vd"))
    rec = {"design": d.to_dict(), **bands_record(bp), "warnings": _warn(d)}
    if a.format == "csv":
        w = rec["window"]
        return _csv(["x_nm", "ec_eV", "ev_eV"], [bp.x_nm, bp.ec_eV, bp.ev_eV],
                    {"vg_V": bp.vg_V, "vd_V": bp.vd_V, "efs_eV": bp.efs_eV, "efd_eV": bp.efd_eV,
                     "window_e_min_eV": None if w is None else w["e_min_eV"],
                     "window_e_max_eV": None if w is None else w["e_max_eV"],
                     "current_uA_per_um": rec["current_uA_per_um"]})
    return json.dumps(rec, indent=1)


def cmd_transfer(a) -> str:
    from sub60.physics.simulate import transfer_curve

    d = load_design(a.design, a.set)
    vg = parse_sweep(a.vg, "vg")
    vd = _single(parse_sweep(a.vd, "vd"), "vd")
    kw = {"ioff_target_uA_per_um": a.ioff, "vdd_V": a.vdd}
    tc = _solve(lambda: transfer_curve(d, vg, vd, **kw))
    rec = {"design": d.to_dict(), **transfer_record(tc), "warnings": _warn(d)}
    twin = None
    if a.twin:
        twin = _solve(lambda: transfer_curve(d.twin(), vg, vd, **kw))
        rec["twin"] = {"design": d.twin().to_dict(), **transfer_record(twin)}
    if a.format == "csv":
        cols = [tc.vg_V, tc.id_uA_per_um, tc.ss_mV_per_dec]
        head = ["vg_V", "id_uA_per_um", "ss_mV_per_dec"]
        if twin is not None:
            cols += [twin.id_uA_per_um, twin.ss_mV_per_dec]
            head += ["twin_id_uA_per_um", "twin_ss_mV_per_dec"]
        return _csv(head, cols, {"vd_V": vd, **rec["metrics"]})
    return json.dumps(rec, indent=1)


def cmd_output(a) -> str:
    from sub60.physics.simulate import output_curve

    d = load_design(a.design, a.set)
    vgs = parse_sweep(a.vg, "vg")
    vd = parse_sweep(a.vd, "vd")
    curves = [_solve(output_curve, d, float(v), vd) for v in vgs]
    if a.format == "csv":
        head = ["vd_V"] + [f"id_uA_per_um_at_vg_{v:g}_V" for v in vgs]
        return _csv(head, [vd] + [c.id_uA_per_um for c in curves])
    ids = [_clean(c.id_uA_per_um) for c in curves]
    return json.dumps({"design": d.to_dict(), "vg_V": float(vgs[0]) if vgs.size == 1 else _clean(vgs),
                       "vd_V": _clean(vd), "id_uA_per_um": ids[0] if vgs.size == 1 else ids},
                      indent=1)


def cmd_serve(a) -> str:
    from sub60.app.server import serve

    serve(port=a.port, host=a.host, show=a.show)
    return ""


def build_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="sub60", description="Explore thin-body tunnel FETs and their MOSFET twins: "
                "band diagrams, tunnel window, band-to-band current and transfer curves.")
    sub = p.add_subparsers(dest="command", parser_class=_Parser)
    s = sub.add_parser("serve", help="serve the browser explorer on 127.0.0.1")
    s.add_argument("--port", type=int, default=5006)
    s.add_argument("--host", default="127.0.0.1", help="address to listen on (default loopback)")
    s.add_argument("--show", action="store_true", help="open the browser")

    def common(sp, vg_default: str | None, vd_default: str | None):
        sp.add_argument("--design", help="design JSON file (the Design record)")
        sp.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                        help="override one design field (repeatable)")
        sp.add_argument("--vg", default=vg_default, required=vg_default is None,
                        help="gate voltage V or sweep START:STOP:N [V]")
        sp.add_argument("--vd", default=vd_default, required=vd_default is None,
                        help="drain voltage V or sweep START:STOP:N [V]")
        sp.add_argument("--format", choices=("json", "csv"), default="json")

    common(sub.add_parser("bands", help="band diagram at one bias"), "0.3", "0.3")
    t = sub.add_parser("transfer", help="transfer curve Id-Vg with figures of merit")
    common(t, "-0.3:0.6:46", "0.3")
    t.add_argument("--twin", action="store_true", help="also the n+ source MOSFET twin")
    t.add_argument("--ioff", type=float, default=1e-3, help="Ioff target [uA/um]")
    t.add_argument("--vdd", type=float, default=0.3, help="supply for Ion = Id(Voff + Vdd) [V]")
    common(sub.add_parser("output", help="output curves Id-Vd"), "0.3", "0:0.5:11")
    from sub60.app.snapshot_cli import add_snapshot_parser

    add_snapshot_parser(sub)
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
            from sub60.app.snapshot_cli import run_snapshot

            out, status = run_snapshot(a)
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
