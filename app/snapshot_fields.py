"""Strict reading of a parsed JSON document, field by field (the snapshot reader's tools).

Every read names the field's path in its error (e.g. ``transfer_sweep.vg_points: 0
outside the allowed range [3, 201]``) and raises `SnapshotError`. UI-free; standard
library only.
"""

from __future__ import annotations

import json
import math
import re
from typing import Any


class SnapshotError(ValueError):
    """A snapshot or settings file that cannot be used; the message names the problem."""


_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")
_SURROGATE = re.compile(r"[\ud800-\udfff]")


_LIST_CHARS = 280  # an error message stays one short line


def _short_list(names: tuple[str, ...]) -> str:
    """Names joined by commas, cut after about 280 characters with the count left out."""
    text = ", ".join(names)
    if len(text) <= _LIST_CHARS:
        return text
    shown = text[:_LIST_CHARS].rsplit(", ", 1)[0]
    return f"{shown} and {len(names) - shown.count(', ') - 1} more"


class FieldReader:
    """A JSON object read field by field; every read names its path in errors."""

    def __init__(self, data: Any, path: str, known: tuple[str, ...],
                 required: tuple[str, ...]) -> None:
        if not isinstance(data, dict):
            raise SnapshotError(f"{path}: expected a JSON object, got {kind_of(data)}")
        unknown = [k for k in data if k not in known]
        if unknown:
            raise SnapshotError(f"{join_path(path, unknown[0])}: unknown field; known fields: "
                                + _short_list(known))
        for k in required:
            if k not in data:
                raise SnapshotError(f"{join_path(path, k)}: missing (required)")
        self.data = data
        self.path = path

    def has(self, key: str) -> bool:
        return key in self.data

    def at(self, key: str) -> str:
        return join_path(self.path, key)

    def number(self, key: str, low: float, high: float, unit: str = "") -> float:
        return read_number(self.data[key], self.at(key), low, high, unit)

    def integer(self, key: str, low: int, high: int) -> int:
        v = self.data[key]
        if isinstance(v, bool) or not isinstance(v, int):
            raise SnapshotError(f"{self.at(key)}: expected an integer, got {show_value(v)}")
        if not low <= v <= high:
            raise SnapshotError(f"{self.at(key)}: {v} outside the allowed range [{low}, {high}]")
        return v

    def text(self, key: str, max_chars: int, multiline: bool = False) -> str:
        v = self.data[key]
        if not isinstance(v, str):
            raise SnapshotError(f"{self.at(key)}: expected text, got {show_value(v)}")
        if len(v) > max_chars:
            raise SnapshotError(f"{self.at(key)}: {len(v)} characters; the limit is {max_chars}")
        if _SURROGATE.search(v):  # not Unicode text: cannot be written as UTF-8 or shown
            raise SnapshotError(f"{self.at(key)}: holds a lone surrogate (\\ud800-\\udfff), "
                                "which is not a character; a byte that is not UTF-8 text?")
        bad = _CONTROL.search(v) if multiline else re.search(r"[\x00-\x1f\x7f]", v)
        if bad:
            raise SnapshotError(f"{self.at(key)}: control character {bad.group()!r} not allowed")
        return v


def join_path(path: str, key: str | int) -> str:
    if isinstance(key, int):
        return f"{path}[{key}]"
    return f"{path}.{key}" if path else key


def kind_of(v: Any) -> str:
    return {dict: "an object", list: "an array", str: "text", bool: "true/false",
            type(None): "null", int: "a number", float: "a number"}.get(type(v), type(v).__name__)


def show_value(v: Any) -> str:
    text = json.dumps(v) if isinstance(v, (str, int, float, bool, type(None))) else kind_of(v)
    return text if len(text) <= 40 else text[:37] + "..."


def read_number(v: Any, path: str, low: float, high: float, unit: str = "") -> float:
    u = f" {unit}" if unit else ""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise SnapshotError(f"{path}: expected a number, got {show_value(v)}")
    v = float(v)
    if not math.isfinite(v):
        raise SnapshotError(f"{path}: {v} is not a finite number")
    if not low <= v <= high:
        raise SnapshotError(f"{path}: {v:g}{u} outside the allowed range [{low:g}, {high:g}]{u}")
    return v
