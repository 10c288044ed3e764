"""One set of rules for every number and JSON file sub60 reads, whatever the door.

The doors are the command line (``--set name=value``, ``--vg``/``--vd``/``--sweep``
voltages, ``--vdd``, ``--ioff``, ``--output-vg``, ``--design FILE``), the page address
(`app.sharing`) and the snapshot reader (`app.snapshot_reader`). All of them use this
module, so a value refused at one door is refused at every other, with a message that
names the field and the allowed range.

Rules (the project's own choices; common practice, no source unless stated):

- A number is written in ASCII: an optional sign, digits with an optional decimal point,
  an optional exponent (``0.3``, ``-1.5e-3``, ``.5``, ``4E19``), at most
  `MAX_NUMBER_CHARS` characters; spaces or tabs around it are ignored. Refused: other
  digits (full-width ``１``, Arabic-Indic ``١``), digit separators (``1_0``), ``nan``,
  ``inf``, hexadecimal, and any value that is not finite (``1e999``).
- A whole number is ASCII digits with an optional sign, at most `MAX_INTEGER_DIGITS`
  digits (an integer in a JSON file too: ``10**400`` is refused, not turned into inf).
- A JSON file is UTF-8; one leading byte order mark is ignored (RFC 8259 section 8.1
  lets a parser ignore it); NaN/Infinity, repeated keys in one object (RFC 8259
  section 4: names SHOULD be unique), text holding lone surrogates (not Unicode scalar
  values, RFC 8259 section 8.2) and nesting deeper than `MAX_JSON_DEPTH` are refused.
- The ranges of the figure-of-merit settings (`VDD_RANGE_V`,
  `IOFF_TARGET_RANGE_UA_PER_UM`) live here; the design and bias ranges live with the
  physics (`sub60.physics.FIELD_RANGES`, `VG_RANGE_V`, `VD_RANGE_V`).

UI-free; standard library only.
"""

from __future__ import annotations

import json
import math
import re
from typing import Any

#: Limits of the figure-of-merit settings (engineering choices, no source).
VDD_RANGE_V = (0.01, 2.0)
IOFF_TARGET_RANGE_UA_PER_UM = (1e-12, 1e3)

#: Longest number text [characters]; longest whole number [digits].
MAX_NUMBER_CHARS = 40
MAX_INTEGER_DIGITS = 30
#: Deepest JSON nesting accepted (a snapshot nests 5 deep) [levels].
MAX_JSON_DEPTH = 32

_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_INTEGER = re.compile(r"[+-]?[0-9]+")
#: Text that was meant as a number but is not in the accepted form (any Unicode digits,
#: separators): refused rather than read as a name.
_NUMBER_LIKE = re.compile(r"[+-]?[\d._]+(?:[eE][+-]?[\d_]+)?")
_SURROGATE = re.compile(r"[\ud800-\udfff]")


class InputError(ValueError):
    """A value or file that breaks the rules; the message names the field."""


def _show(text: str) -> str:
    shown = ascii(text)  # ascii(): lone surrogates and odd digits printed as escapes
    return shown if len(shown) <= 44 else shown[:40] + "...'"


def _range(low: float | None, high: float | None, unit: str) -> str:
    if low is None and high is None:
        return ""
    u = f" {unit}" if unit else ""
    return f"; allowed [{low:g}, {high:g}]{u}"


def check_range(value: float, name: str, low: float | None = None, high: float | None = None,
                unit: str = "") -> float:
    """`value` if within [low, high] (either bound None: open) else InputError."""
    if (low is not None and value < low) or (high is not None and value > high):
        u = f" {unit}" if unit else ""
        raise InputError(f"{name}: {value:g}{u} outside the allowed range "
                         f"[{'-inf' if low is None else f'{low:g}'}, "
                         f"{'inf' if high is None else f'{high:g}'}]{u}")
    return value


def looks_like_number(text: str) -> bool:
    """True when `text` was evidently meant as a number (accepted form or not)."""
    t = text.strip(" \t")
    if _NUMBER_LIKE.fullmatch(t.strip("\ufeff\u00a0\u3000")):  # a byte order mark, odd spaces
        return True
    try:
        float(t)
    except (ValueError, OverflowError):
        return False
    return True  # Python reads it (e.g. 'inf', '1_0', ' ١ '), so it meant a number


def parse_number(text: str, name: str, low: float | None = None, high: float | None = None,
                 unit: str = "") -> float:
    """A finite number from text written by the rules (module notes), range-checked.

    Parameters
    ----------
    text : str
        the number as typed.
    name : str
        field or option named in errors.
    low, high : float or None
        allowed range, both ends included [unit]; None: open.
    unit : str
        unit shown in errors.

    Returns
    -------
    float

    Raises
    ------
    InputError
        naming the field, the value and the allowed range.
    """
    if not isinstance(text, str):
        raise InputError(f"{name}: expected number text, got {type(text).__name__}")
    t = text.strip(" \t")
    if len(t) > MAX_NUMBER_CHARS:
        raise InputError(f"{name}: {len(t)} characters is too long for a number "
                         f"(the limit is {MAX_NUMBER_CHARS}){_range(low, high, unit)}")
    if not _NUMBER.fullmatch(t):
        raise InputError(f"{name}: {_show(text)} is not a number; write it with ASCII digits, "
                         f"e.g. 0.3 or -1.5e-3 (no separators){_range(low, high, unit)}")
    value = float(t)
    if not math.isfinite(value):
        raise InputError(f"{name}: {_show(text)} is too large (not finite){_range(low, high, unit)}")
    return check_range(value, name, low, high, unit)


def parse_integer(text: str, name: str, low: int | None = None, high: int | None = None) -> int:
    """A whole number from ASCII digits (optional sign), range-checked (InputError)."""
    if not isinstance(text, str):
        raise InputError(f"{name}: expected number text, got {type(text).__name__}")
    t = text.strip(" \t")
    if not _INTEGER.fullmatch(t):
        raise InputError(f"{name}: {_show(text)} is not a whole number written with ASCII "
                         f"digits{_range(low, high, '')}")
    if len(t.lstrip("+-")) > MAX_INTEGER_DIGITS:
        raise InputError(f"{name}: {len(t.lstrip('+-'))} digits is too large for a whole number"
                         f"{_range(low, high, '')}")
    value = int(t)
    check_range(value, name, low, high)
    return value


def check_text(value: str, name: str) -> str:
    """`value` unless it holds lone surrogates (not Unicode text; e.g. a byte that was not
    UTF-8 in a command-line argument, or ``"\\udcff"`` in JSON): InputError."""
    bad = _SURROGATE.search(value)
    if bad:
        raise InputError(f"{name}: holds {ascii(bad.group())[1:-1]}, which is not a character "
                         "(a lone surrogate, or a byte that is not UTF-8 text)")
    return value


def parse_json(raw: bytes, what: str, max_depth: int = MAX_JSON_DEPTH) -> Any:
    """A JSON document read strictly by the rules (module notes).

    Parameters
    ----------
    raw : bytes
        the file's content.
    what : str
        name of the file or field in errors.
    max_depth : int
        deepest nesting of arrays and objects accepted [levels].

    Raises
    ------
    InputError
        naming the problem: not UTF-8, not JSON, NaN/Infinity, too large a number,
        repeated key, lone surrogate, too deep.
    """
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(f"{what}: not UTF-8 text (bad byte at offset {exc.start})") from None
    if text.startswith("\ufeff"):
        text = text[1:]

    def constant(name: str) -> float:
        raise InputError(f"{what}: {name} is not allowed; numbers must be finite")

    def parse_float(s: str) -> float:
        v = float(s)
        if not math.isfinite(v):
            raise InputError(f"{what}: the number {s[:40]} is too large (not finite)")
        return v

    def parse_int(s: str) -> int:
        if len(s.lstrip("-")) > MAX_INTEGER_DIGITS:
            raise InputError(f"{what}: the integer {s[:40]}... ({len(s.lstrip('-'))} digits) is "
                             f"too large; the limit is {MAX_INTEGER_DIGITS} digits")
        return int(s)

    def pairs(items: list[tuple[str, Any]]) -> dict[str, Any]:
        out: dict[str, Any] = {}
        for k, v in items:
            if k in out:
                raise InputError(f"{what}: the key {ascii(k)} appears twice in one object")
            out[k] = v
        return out

    try:
        doc = json.loads(text, parse_constant=constant, parse_float=parse_float,
                         parse_int=parse_int, object_pairs_hook=pairs)
    except json.JSONDecodeError as exc:
        raise InputError(f"{what}: not valid JSON ({exc.msg} at line {exc.lineno} "
                         f"column {exc.colno})") from None
    except RecursionError:
        raise InputError(f"{what}: JSON nested too deeply (the limit is {max_depth} levels)") \
            from None
    _check_tree(doc, what, max_depth)
    return doc


def check_document(doc: Any, what: str, max_depth: int = MAX_JSON_DEPTH) -> Any:
    """A document parsed elsewhere (e.g. TOML) held to the same rules as `parse_json`'s:
    no lone surrogates, nesting at most ``max_depth`` levels; returns it, or InputError."""
    _check_tree(doc, what, max_depth)
    return doc


def _check_tree(doc: Any, what: str, max_depth: int) -> None:
    """Depth and text of a parsed document, walked without recursion."""
    stack: list[tuple[Any, int]] = [(doc, 0)]
    while stack:
        node, depth = stack.pop()
        if isinstance(node, str):
            if _SURROGATE.search(node):
                raise InputError(f"{what}: the text {_show(node)} holds a lone surrogate "
                                 "(\\ud800-\\udfff), which is not a character")
        elif isinstance(node, (dict, list)):
            if depth >= max_depth:
                raise InputError(f"{what}: JSON nested too deeply (the limit is {max_depth} "
                                 "levels)")
            items = node.items() if isinstance(node, dict) else enumerate(node)
            for k, v in items:
                if isinstance(k, str):
                    stack.append((k, depth + 1))
                stack.append((v, depth + 1))
