"""What the `sub60` commands share: usage errors, the argument parser, voltage sweeps,
design files and `--set name=value` overrides, and the solve wrapper.

Both `app.cli` (the `sub60` command) and `app.snapshot_cli` (`sub60 snapshot ...`)
import this module; it imports neither, so the two do not import each other.
"""

from __future__ import annotations

import argparse
import re
import sys
from collections.abc import Callable
from typing import Any

import numpy as np

from sub60.app.messages import short_error
from sub60.app.number_rules import (
    IOFF_TARGET_RANGE_UA_PER_UM,
    VDD_RANGE_V,
    InputError,
    check_text,
    looks_like_number,
    parse_integer,
    parse_json,
    parse_number,
)
from sub60.app.state import sweep_voltages


class UsageError(Exception):
    """A bad option or value: reported in one line, exit status 2."""


class Parser(argparse.ArgumentParser):
    """An argument parser whose errors are `UsageError` (one line, exit status 2) and
    that reads a negative sweep such as ``--vg -0.2:0.6:41`` as a value."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        # let "--vg -0.2:0.6:41" read the sweep as a value, not as an option
        self._negative_number_matcher = re.compile(r"^-(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?(:.*)?$")

    def error(self, message: str) -> None:  # one line, status 2, no usage dump
        raise UsageError(message)


#: Range of each voltage option [V] (the physics bias ranges, as snapshots use them).
def _voltage_range(name: str) -> tuple[float, float]:
    from sub60.physics import VD_RANGE_V, VG_RANGE_V

    return VD_RANGE_V if name.startswith("vd") else VG_RANGE_V


def parse_sweep(text: str, name: str) -> np.ndarray:
    """'V' or 'START:STOP:N' -> voltages [V], each number by the shared rules
    (`app.number_rules`) and within the bias range of `name` ("vg..." or "vd...");
    sweep voltages by `app.state.sweep_voltages` (rounded to 1e-12 V, `SWEEP_DECIMALS`:
    no float noise such as -5.55e-17 for 0), the same numbers as the page's."""
    lo, hi = _voltage_range(name)
    parts = text.split(":")
    try:
        if len(parts) == 1:
            return np.array([parse_number(parts[0], f"--{name}", lo, hi, "V")])
        if len(parts) == 3:
            n = parse_integer(parts[2], f"--{name}: N", 1, 2001)
            return sweep_voltages(parse_number(parts[0], f"--{name}: START", lo, hi, "V"),
                                  parse_number(parts[1], f"--{name}: STOP", lo, hi, "V"), n)
    except InputError as exc:
        raise UsageError(str(exc)) from None
    raise UsageError(f"--{name}: expected V or START:STOP:N, got {ascii(text)}")


def number_option(name: str, low: float, high: float, unit: str = "") -> Callable[[str], float]:
    """An argparse ``type`` reading one number by the shared rules, within [low, high]."""

    def read(text: str) -> float:
        try:
            return parse_number(text, name, low, high, unit)
        except InputError as exc:
            raise argparse.ArgumentTypeError(str(exc).removeprefix(f"{name}: ")) from None

    read.__name__ = name  # argparse names the type in some messages
    return read


#: --vdd and --ioff: the ranges a snapshot accepts (`app.number_rules`).
vdd_option = number_option("vdd", *VDD_RANGE_V, "V")
ioff_option = number_option("ioff", *IOFF_TARGET_RANGE_UA_PER_UM, "uA/um")


def parse_value(text: str, name: str = "value") -> Any:
    """Value of a --set override: a number (by the shared rules), 'none', or text.

    Text that was evidently meant as a number but breaks the rules (``1_0``, ``１``,
    ``inf``) is refused (UsageError) rather than passed on as a name.
    """
    if text.lower() in ("none", "null"):
        return None
    try:
        if looks_like_number(text):
            return parse_number(text, f"--set {name}")
        return check_text(text, f"--set {name}")
    except InputError as exc:
        raise UsageError(str(exc)) from None


def warn_design(design) -> list[str]:
    """Print the model's warnings about a design on stderr; returns them."""
    from sub60.physics import design_warnings

    notes = list(design_warnings(design))
    for n in notes:
        print(f"sub60: warning: {n}", file=sys.stderr)
    return notes


#: Largest design file read [bytes] (a design is under 1 kB; engineering choice).
MAX_DESIGN_FILE_BYTES = 1024 * 1024


def read_bounded(path: str, limit_bytes: int) -> bytes | None:
    """A file's bytes, reading at most ``limit_bytes + 1`` (so /dev/zero ends at once);
    None when the file is larger than the limit; UsageError when it cannot be read."""
    try:
        with open(path, "rb") as fh:
            data = fh.read(limit_bytes + 1)
    except OSError as exc:
        raise UsageError(f"{ascii(path)}: cannot read ({exc.strerror})") from None
    return None if len(data) > limit_bytes else data


def set_fields_help() -> str:
    """The design fields that ``--set NAME=VALUE`` accepts, one a line: name, meaning
    with its unit, allowed values and default (for the commands' ``--help``)."""
    from sub60.physics import FIELD_RANGES, Design

    default = Design()
    width = max(len(n) for n in FIELD_RANGES)
    lines = ["design fields for --set NAME=VALUE (units in the names; numbers like 4e19):"]
    for name, spec in FIELD_RANGES.items():
        value = getattr(default, name)
        shown = "none" if value is None else f"{value:g}" if isinstance(value, float) else value
        lines.append(f"  {name:<{width}}  {spec.help}; {spec.describe()}; default {shown}")
    return "\n".join(lines)


def load_design(path: str | None, overrides: list[str]):
    """Design from a JSON file (or the default) with name=value overrides; the file is
    read by the shared JSON rules (`app.number_rules.parse_json`) and at most
    `MAX_DESIGN_FILE_BYTES`."""

    data: Any = {}
    if path:
        try:
            raw = read_bounded(path, MAX_DESIGN_FILE_BYTES)
        except UsageError as exc:
            raise UsageError(f"--design: {exc}") from None
        if raw is None:
            raise UsageError(f"--design: {ascii(path)} is larger than the limit of "
                             f"{MAX_DESIGN_FILE_BYTES // 1024} kB for a design file")
        try:
            data = parse_json(raw, f"--design: {ascii(path)}")
        except InputError as exc:
            raise UsageError(str(exc)) from None
        if isinstance(data, dict) and "design" in data and isinstance(data["design"], dict):
            data = data["design"]
        if not isinstance(data, dict):
            raise UsageError(f"--design: {ascii(path)} must hold a JSON object")
    return apply_overrides(data, overrides)


def apply_overrides(data: dict[str, Any], overrides: list[str]):
    """A Design from a field dictionary with `--set name=value` overrides applied."""
    from sub60.physics import Design

    data = dict(data)
    for item in overrides:
        if "=" not in item:
            raise UsageError(f"--set: expected name=value, got {item!r}")
        key, value = item.split("=", 1)
        data[key.strip()] = parse_value(value.strip(), ascii(key.strip())[1:-1])
    try:
        return Design.from_dict(data)
    except ValueError as exc:
        raise UsageError(str(exc)) from None


def single_voltage(values: np.ndarray, name: str) -> float:
    """The one voltage of a parsed option [V]; UsageError for a sweep."""
    if values.size != 1:
        raise UsageError(f"--{name}: this command takes one voltage, got a sweep of {values.size}")
    return float(values[0])


def solve(fn: Callable[..., Any], *args: Any) -> Any:
    """Call a physics function; a bad value or a failed solve becomes a UsageError."""
    from sub60.physics import SolverError

    try:
        return fn(*args)
    except ValueError as exc:
        raise UsageError(str(exc)) from None
    except SolverError as exc:
        raise UsageError(f"solver: {short_error(exc)}") from None


