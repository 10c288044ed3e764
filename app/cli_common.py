"""What the `sub60` commands share: usage errors, the argument parser, voltage sweeps,
design files and `--set name=value` overrides, and the solve wrapper.

Both `app.cli` (the `sub60` command) and `app.snapshot_cli` (`sub60 snapshot ...`)
import this module; it imports neither, so the two do not import each other.
"""

from __future__ import annotations

import argparse
import json
import re
import sys
from collections.abc import Callable
from typing import Any

import numpy as np

from sub60.app.messages import short_error


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


def warn_design(design) -> list[str]:
    """Print the model's warnings about a design on stderr; returns them."""
    from sub60.physics import design_warnings

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
    from sub60.physics import Design

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


