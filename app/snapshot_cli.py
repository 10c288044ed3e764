"""`sub60 snapshot ...`: write, re-render and check snapshot files without the browser.

    sub60 snapshot export [--design FILE | --preset NAME] [--set name=value ...]
                          [--vg V] [--vd V] [--sweep START:STOP:N] [--vdd V] [--ioff I]
                          [--output-vg V1,V2,...] --out SNAP.zip [--force]
    sub60 snapshot render SNAP.zip --out DIR [--force]
    sub60 snapshot check  SNAP.zip

Exit status: 0 fine; 1 the file's content is wrong or its figures of merit differ on
recomputation (same sub60 version); 2 a bad option, a missing or unreadable file, an
output that exists already (without --force), or a solve that fails (one line, its
`short_error`). Shares its argument handling with `sub60` through `app.cli_common`.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from sub60.app.cli_common import (
    UsageError,
    apply_overrides,
    ioff_option,
    load_design,
    parse_sweep,
    read_bounded,
    set_fields_help,
    solve,
    vdd_option,
)


def add_snapshot_parser(sub) -> None:
    """Register `snapshot` and its sub-commands on the `sub60` sub-parsers."""
    sp = sub.add_parser("snapshot", help="write, re-render or check a snapshot file")
    ss = sp.add_subparsers(dest="snapshot_command", parser_class=type(sp))
    e = ss.add_parser("export", help="compute a view and write its snapshot zip",
                      epilog=set_fields_help(),
                      formatter_class=argparse.RawDescriptionHelpFormatter)
    src = e.add_mutually_exclusive_group()
    src.add_argument("--design", help="design JSON file (the Design record, or settings)")
    src.add_argument("--preset", help="start from a demo preset (assets/presets/NAME.json)")
    e.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                   help="override one design field (repeatable; the fields are listed below)")
    e.add_argument("--vg", help="gate voltage of the band diagram [V]")
    e.add_argument("--vd", help="drain voltage of the band diagram and transfer curves [V]")
    from sub60.app.state import DEFAULT_GATE_SWEEP

    e.add_argument("--sweep", help="gate sweep of the transfer curves START:STOP:N [V] "
                   f"(default {DEFAULT_GATE_SWEEP.option_text()}, the page's; a preset "
                   "keeps its own)")
    e.add_argument("--vdd", type=vdd_option, help="supply for Ion = Id(Voff + Vdd) [V]")
    e.add_argument("--ioff", type=ioff_option, help="Ioff target [uA/um]")
    e.add_argument("--output-vg", help="gate voltages of the output curves, V1,V2,... [V]")
    e.add_argument("--title", help="title stored in the snapshot")
    e.add_argument("--out", required=True, help="snapshot zip to write")
    e.add_argument("--force", action="store_true", help="overwrite an existing file")
    r = ss.add_parser("render", help="re-render a snapshot's figures (PNG and SVG)")
    r.add_argument("snapshot", help="snapshot zip or settings.json")
    r.add_argument("--out", required=True, help="directory for the figures (created)")
    r.add_argument("--force", action="store_true", help="overwrite existing figure files")
    c = ss.add_parser("check", help="validate a snapshot and recompute its figures of merit")
    c.add_argument("snapshot", help="snapshot zip or settings.json")


def _read(path: str) -> bytes:
    """A snapshot file's bytes; SnapshotError when it is larger than any snapshot."""
    from sub60.app.snapshot_fields import SnapshotError
    from sub60.app.snapshot_reader import MAX_SNAPSHOT_BYTES

    data = read_bounded(path, MAX_SNAPSHOT_BYTES)
    if data is None:
        raise SnapshotError(f"snapshot: larger than the limit {MAX_SNAPSHOT_BYTES // 2**20} MB")
    return data


def _float(text: str | None, name: str) -> float | None:
    if text is None:
        return None
    values = parse_sweep(text, name)
    if values.size != 1:
        raise UsageError(f"--{name}: takes one voltage, got {text!r}")
    return float(values[0])


def _export_settings(a):
    """Settings of `snapshot export` from the options (UsageError for bad ones)."""
    from sub60.app.presets import load_preset
    from sub60.app.snapshot_fields import SnapshotError
    from sub60.app.snapshot_schema import (
        MetricSettings,
        OutputSweep,
        SnapshotSettings,
        TransferSweep,
    )

    try:
        base = load_preset(a.preset) if a.preset else SnapshotSettings()
    except SnapshotError as exc:
        raise UsageError(f"--preset: {exc}") from None
    if a.design or a.set:
        design = load_design(a.design, a.set) if a.design else _override(base.design, a.set)
    else:
        design = base.design
    vg = _float(a.vg, "vg")
    vd = _float(a.vd, "vd")
    bias = base.bias
    sweep = base.transfer_sweep
    if vg is not None or vd is not None:
        bias = type(bias)(vg if vg is not None else bias.vg_V, vd if vd is not None else bias.vd_V)
    if vd is not None:
        sweep = TransferSweep(sweep.vg_start_V, sweep.vg_stop_V, sweep.vg_points, vd)
    if a.sweep:
        parts = a.sweep.split(":")
        if len(parts) != 3:
            raise UsageError(f"--sweep: expected START:STOP:N, got {a.sweep!r}")
        values = parse_sweep(a.sweep, "sweep")
        sweep = TransferSweep(float(values[0]), float(values[-1]), int(values.size), sweep.vd_V)
    output = base.output_sweep
    if a.output_vg:
        parts = a.output_vg.split(",")
        if any(":" in p for p in parts):
            raise UsageError(f"--output-vg: expected V1,V2,..., got {ascii(a.output_vg)}")
        vgs = tuple(float(parse_sweep(p, "output-vg")[0]) for p in parts)
        output = OutputSweep(vgs, output.vd_start_V, output.vd_stop_V, output.vd_points)
    ms = base.metric_settings
    ms = MetricSettings(a.vdd if a.vdd is not None else ms.vdd_V,
                        a.ioff if a.ioff is not None else ms.ioff_target_uA_per_um)
    try:
        return base.replace(design=design, bias=bias, transfer_sweep=sweep, output_sweep=output,
                            metric_settings=ms, title=a.title if a.title else base.title,
                            sub60_version=None, created_utc=None, stored=None)
    except SnapshotError as exc:
        raise UsageError(str(exc)) from None


def _override(design, overrides: list[str]):
    """A design with `--set name=value` overrides, parsed as `sub60 bands` does."""
    return apply_overrides(design.to_dict(), overrides)


def _exists_check(path: Path, force: bool, option: str) -> None:
    if path.exists() and not force:
        raise UsageError(f"{option}: {str(path)!r} exists; use --force to overwrite")


def cmd_export(a) -> tuple[str, int]:
    from sub60.app.snapshot_bundle import export_snapshot

    out = Path(a.out)
    _exists_check(out, a.force, "--out")
    settings = _export_settings(a)
    data = solve(export_snapshot, settings)
    from sub60.app.atomic import write_bytes_atomic

    try:
        write_bytes_atomic(out, data)
    except OSError as exc:
        raise UsageError(f"--out: cannot write {str(out)!r} ({exc.strerror})") from None
    return f"wrote {out} ({len(data)} bytes)", 0


def _import(path: str):
    from sub60.app.snapshot_fields import SnapshotError
    from sub60.app.snapshot_reader import import_snapshot

    try:
        return import_snapshot(_read(path)), None
    except SnapshotError as exc:
        return None, f"{path}: {exc}"


def cmd_render(a) -> tuple[str, int]:
    from sub60.app import figures
    from sub60.app.snapshot_check import compute_results

    got, problem = _import(a.snapshot)
    if problem:
        return problem, 1
    settings, _ = got
    out = Path(a.out)
    if out.exists() and not out.is_dir():
        raise UsageError(f"--out: {str(out)!r} exists and is not a directory")
    names = [f"{n}.{f}" for n in figures.FIGURE_NAMES for f in figures.FORMATS]
    clash = [n for n in names if (out / n).exists()]
    if clash and not a.force:
        raise UsageError(f"--out: {str(out / clash[0])!r} exists; use --force to overwrite")
    contents = figures.static_figures(solve(compute_results, settings))
    from sub60.app.atomic import write_bytes_atomic

    try:
        out.mkdir(parents=True, exist_ok=True)
        for name, content in contents.items():
            write_bytes_atomic(out / name, content)
    except OSError as exc:
        raise UsageError(f"--out: cannot write into {str(out)!r} ({exc.strerror})") from None
    return f"wrote {len(contents)} figures to {out}: " + ", ".join(contents), 0


def cmd_check(a) -> tuple[str, int]:
    from sub60.app.snapshot_check import verify_snapshot

    got, problem = _import(a.snapshot)
    if problem:
        return problem, 1
    settings, report = got
    report.differences = solve(verify_snapshot, settings)
    report.verified = True
    lines = [f"{a.snapshot}: " + report.lines()[0]] + report.lines()[1:]
    bad = bool(report.differences) and report.version_matches
    lines.append("NOT OK: figures of merit differ" if bad else "OK")
    return "\n".join(lines), 1 if bad else 0


def run_snapshot(a: argparse.Namespace) -> tuple[str, int]:
    """Run `sub60 snapshot ...`; returns the text to print and the exit status."""
    handlers = {"export": cmd_export, "render": cmd_render, "check": cmd_check}
    if a.snapshot_command is None:
        raise UsageError("snapshot: expected one of export, render, check")
    return handlers[a.snapshot_command](a)
