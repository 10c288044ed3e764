"""Measured curves: read a table of drain currents, normalise it, take its figures of merit.

A measured file is text: comma-, semicolon-, tab- or whitespace-separated columns, with
or without a header line, ``#`` comment lines anywhere, an optional UTF-8 byte-order
mark, and decimal commas with a semicolon or tab separator (``0,25;1,3e-6``). Two
layouts are understood:

long
    one row per bias point: a gate-voltage column, a drain-voltage column (optional when
    the file holds one curve and the caller gives the drain voltage) and a current
    column; the rows of each drain voltage form one transfer curve. When the gate voltage
    is the one held fixed (few values) and the drain voltage swept, the rows of each gate
    voltage form an output curve instead.
wide
    a gate-voltage column and one current column per drain voltage, each naming its drain
    voltage in the header (``Id@Vd=0.3``, ``id_vd_0.05``, ``Id (Vd=0.3 V) [A/um]``); or a
    drain-voltage column and one current column per gate voltage (``Id@Vg=0.5``): output
    curves.

Header names are matched without case, spaces, underscores and units: ``vg``, ``vgs``,
``vgate``, ``gate voltage`` for the gate; ``vd``, ``vds``, ``vdrain``, ``drain voltage``
for the drain; ``id``, ``ids``, ``idrain``, ``drain current``, ``current`` for the
current. The current's unit comes from the header, in brackets or parentheses
(``Id [A/um]``, ``Id (uA/um)``) or as a name suffix (``id_uA_per_um``, the names sub60
writes), or from the caller (``current_unit``); one of `CURRENT_UNITS`. A current in A
needs the device width (``width_um``) to become a current per width. Without a header
the columns are, in order, V_g and I_d (two columns) or V_g, V_d and I_d (three), and
the unit must be given.

The reader evaluates nothing (numbers are matched by a strict pattern before
``float``), writes nothing, reads at most `MAX_MEASURED_BYTES`, and refuses a bad file
with one `ValueError` naming the line and the problem.

The figures of merit of a measured transfer curve are those of the model, from the same
function (`sub60.physics.metrics.figures_of_merit`); samples with I_d <= 0 are missing,
as for the model.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from sub60.physics.design import VD_RANGE_V, VG_RANGE_V
from sub60.physics.metrics import Metrics, figures_of_merit

#: Largest measured file read [B] (a 41-point curve is about 1 kB; engineering choice).
MAX_MEASURED_BYTES = 2 * 1024 * 1024
#: Largest number of data rows, columns, and characters on a line (engineering choices).
MAX_ROWS = 20_000
MAX_COLUMNS = 64
MAX_LINE_CHARS = 2_000
#: Fewest points of one curve: a swing needs three samples.
MIN_POINTS = 3

#: Current units understood and their factor to µA/µm (SI prefixes; A/m = µA/µm and
#: mA/mm = µA/µm exactly). "A" is an absolute current: divided by the width.
CURRENT_UNITS: dict[str, float] = {
    "A": 1e6, "mA": 1e3, "uA": 1.0, "nA": 1e-3,
    "A/um": 1e6, "mA/um": 1e3, "uA/um": 1.0, "nA/um": 1e-3, "pA/um": 1e-6,
    "A/m": 1.0, "mA/mm": 1.0, "uA/mm": 1e-3, "A/mm": 1e3,
}
_ABSOLUTE_UNITS = ("A", "mA", "uA", "nA")

_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_GATE_NAMES = ("vg", "vgs", "vgate", "gatevoltage", "vgv")
_DRAIN_NAMES = ("vd", "vds", "vdrain", "drainvoltage", "vdv")
_CURRENT_NAMES = ("id", "ids", "idrain", "draincurrent", "current", "i")


@dataclass(frozen=True)
class MeasuredTransfer:
    """One measured transfer curve Id(Vg) at a fixed drain voltage.

    Parameters
    ----------
    vd_V : float
        drain voltage [V]
    vg_V : numpy.ndarray
        gate voltages, strictly increasing [V]
    id_uA_per_um : numpy.ndarray
        drain current per width at each gate voltage [µA/µm]; values <= 0 are kept
        (noise) and count as missing for every operation on log10(Id)
    """

    vd_V: float
    vg_V: np.ndarray
    id_uA_per_um: np.ndarray

    def metrics(self, temperature_K: float = 300.0, ioff_target_uA_per_um: float = 1e-3,
                vdd_V: float = 0.3, ss_floor_uA_per_um: float | None = None) -> Metrics:
        """Figures of merit by `sub60.physics.metrics.figures_of_merit`, the model's own
        (temperature [K], Ioff target [µA/µm], supply [V], SS_min floor [µA/µm])."""
        return figures_of_merit(self.vg_V, self.id_uA_per_um, temperature_K=temperature_K,
                                ioff_target_uA_per_um=ioff_target_uA_per_um, vdd_V=vdd_V,
                                ss_floor_uA_per_um=ss_floor_uA_per_um)

    def columns(self) -> dict[str, np.ndarray]:
        """vg_V and id_uA_per_um as numpy columns."""
        return {"vg_V": np.asarray(self.vg_V, float),
                "id_uA_per_um": np.asarray(self.id_uA_per_um, float)}

    def __repr__(self) -> str:
        return (f"MeasuredTransfer(Vd = {self.vd_V:g} V, Vg = {self.vg_V[0]:g} to "
                f"{self.vg_V[-1]:g} V, {self.vg_V.size} points)")


@dataclass(frozen=True)
class MeasuredOutput:
    """One measured output curve Id(Vd) at a fixed gate voltage: vg_V [V], vd_V strictly
    increasing [V], id_uA_per_um [µA/µm]."""

    vg_V: float
    vd_V: np.ndarray
    id_uA_per_um: np.ndarray

    def __repr__(self) -> str:
        return (f"MeasuredOutput(Vg = {self.vg_V:g} V, Vd = {self.vd_V[0]:g} to "
                f"{self.vd_V[-1]:g} V, {self.vd_V.size} points)")


@dataclass(frozen=True)
class MeasuredData:
    """The curves of one measured file.

    Parameters
    ----------
    transfer : tuple of MeasuredTransfer
        transfer curves, by increasing drain voltage (empty for an output file)
    output : tuple of MeasuredOutput
        output curves, by increasing gate voltage (empty for a transfer file)
    unit : str
        the current unit of the file (one of `CURRENT_UNITS`) [-]
    width_um : float or None
        device width used to normalise an absolute current [µm]
    comments : tuple of str
        the file's ``#`` comment lines, without the ``#`` (a demo file says there that it
        is synthetic)
    """

    transfer: tuple[MeasuredTransfer, ...]
    output: tuple[MeasuredOutput, ...]
    unit: str
    width_um: float | None = None
    comments: tuple[str, ...] = field(default=())

    @property
    def n_points(self) -> int:
        """Number of measured points in all curves [-]."""
        return sum(c.vg_V.size for c in self.transfer) + sum(c.vd_V.size for c in self.output)

    def __repr__(self) -> str:
        kind = (f"{len(self.transfer)} transfer curve(s)" if self.transfer
                else f"{len(self.output)} output curve(s)")
        return f"MeasuredData({kind}, {self.n_points} points, current in {self.unit})"


# ----------------------------------------------------------------------------- reading
def read_measured(source: str | bytes, current_unit: str | None = None,
                  width_um: float | None = None, drain_voltage_V: float | None = None) -> MeasuredData:
    """Read a measured transfer (or output) table.

    Parameters
    ----------
    source : str or bytes
        the file's content (bytes are decoded as UTF-8; at most `MAX_MEASURED_BYTES`)
    current_unit : str or None
        unit of the current when the header gives none, one of `CURRENT_UNITS` ("µ" may
        be written "u"); must agree with the header's when both are given
    width_um : float or None
        device width, needed for an absolute current (A, mA, uA, nA) [µm]
    drain_voltage_V : float or None
        drain voltage of a file with one transfer curve and no drain-voltage column [V]

    Returns
    -------
    MeasuredData
        curves with currents in µA/µm

    Raises
    ------
    ValueError
        one message naming the line (and column) and the problem
    """
    text = _decode(source)
    unit_arg = _canonical_unit(current_unit, "current_unit") if current_unit is not None else None
    if width_um is not None:
        if isinstance(width_um, bool) or not isinstance(width_um, (int, float)) \
                or not math.isfinite(width_um) or not 1e-3 <= width_um <= 1e6:
            raise ValueError(f"width_um: {width_um!r} is not a device width; allowed "
                             "[0.001, 1e+06] µm")
        width_um = float(width_um)
    if drain_voltage_V is not None:
        drain_voltage_V = _check_voltage(drain_voltage_V, "drain_voltage_V", VD_RANGE_V, "V_d")
    lines = text.splitlines()
    comments: list[str] = []
    rows: list[tuple[int, str]] = []
    for number, line in enumerate(lines, start=1):
        if len(line) > MAX_LINE_CHARS:
            raise ValueError(f"line {number}: longer than {MAX_LINE_CHARS} characters; "
                             "not a table of numbers")
        stripped = line.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            comments.append(stripped[1:].strip())
            continue
        rows.append((number, stripped))
    if not rows:
        raise ValueError("line 1: no data rows (the file is empty or holds only comments)")
    if len(rows) > MAX_ROWS + 1:
        raise ValueError(f"line {rows[MAX_ROWS + 1][0]}: more than {MAX_ROWS} data rows")
    sep = _separator(rows[0][1])
    first = _split(rows[0][1], sep)
    header_line = None
    if not all(_is_number(f, sep) for f in first):
        header_line, header = rows[0][0], first
        rows = rows[1:]
        if not rows:
            raise ValueError(f"line {header_line}: a header but no data rows")
    else:
        header = None
    ncol = len(header) if header is not None else len(first)
    if ncol > MAX_COLUMNS:
        raise ValueError(f"line {header_line or rows[0][0]}: {ncol} columns; at most "
                         f"{MAX_COLUMNS}")
    if ncol < 2:
        raise ValueError(f"line {header_line or rows[0][0]}: one column; a curve needs a "
                         "voltage and a current column")
    table = np.empty((len(rows), ncol))
    for i, (number, line) in enumerate(rows):
        fields = _split(line, sep)
        if len(fields) != ncol:
            raise ValueError(f"line {number}: {len(fields)} fields, expected {ncol} "
                             f"(separator {_SEPARATOR_NAMES[sep]})")
        for j, f in enumerate(fields):
            table[i, j] = _number(f, sep, number, j + 1)
    numbers = [n for n, _ in rows]
    if header is None:
        roles = _positional_roles(ncol, rows[0][0])
        unit = unit_arg
        if unit is None:
            raise ValueError(f"line {rows[0][0]}: no header, so the current unit must be "
                             "given (current_unit, one of " + ", ".join(CURRENT_UNITS) + ")")
    else:
        roles, unit = _header_roles(header, header_line, unit_arg)
    factor = CURRENT_UNITS[unit]
    if unit in _ABSOLUTE_UNITS:
        if width_um is None:
            raise ValueError(f"line {header_line or rows[0][0]}: the current is in {unit}, "
                             "an absolute current; give the device width (width_um) to "
                             "normalise it to µA/µm")
        factor = factor / width_um
    transfer, output = _curves(table, roles, numbers, factor, drain_voltage_V, header_line)
    return MeasuredData(tuple(transfer), tuple(output), unit,
                        width_um if unit in _ABSOLUTE_UNITS else None, tuple(comments))


def _decode(source: str | bytes) -> str:
    if isinstance(source, str):
        if len(source) > MAX_MEASURED_BYTES:
            raise ValueError(f"line 1: the file is larger than the limit of "
                             f"{MAX_MEASURED_BYTES // 1024} kB")
        text = source
    elif isinstance(source, (bytes, bytearray)):
        if len(source) > MAX_MEASURED_BYTES:
            raise ValueError(f"line 1: the file is larger than the limit of "
                             f"{MAX_MEASURED_BYTES // 1024} kB")
        try:
            text = bytes(source).decode("utf-8")
        except UnicodeDecodeError as exc:
            line = bytes(source)[:exc.start].count(b"\n") + 1
            raise ValueError(f"line {line}: not UTF-8 text (byte {exc.start}); save the "
                             "table as UTF-8 or ASCII") from None
    else:
        raise ValueError(f"source: expected the file's text or bytes, got "
                         f"{type(source).__name__}")
    text = text.removeprefix("\ufeff")
    bad = next((i for i, ch in enumerate(text)
                if ch == "\x00" or (ord(ch) < 32 and ch not in "\t\n\r\f\v")), None)
    if bad is not None:
        raise ValueError(f"line {text.count(chr(10), 0, bad) + 1}: holds a control "
                         f"character (code {ord(text[bad])}); not a text table")
    if not text.strip():
        raise ValueError("line 1: the file is empty")
    return text


_SEPARATOR_NAMES = {"\t": "tab", ";": "semicolon", ",": "comma", None: "whitespace"}


def _separator(line: str) -> str | None:
    for sep in ("\t", ";", ","):
        if sep in line:
            return sep
    return None


def _split(line: str, sep: str | None) -> list[str]:
    parts = line.split(sep) if sep is not None else line.split()
    return [p.strip().strip('"').strip() for p in parts]


def _is_number(text: str, sep: str | None) -> bool:
    return _NUMBER.fullmatch(_decimal_point(text, sep)) is not None


def _decimal_point(text: str, sep: str | None) -> str:
    """A decimal comma becomes a point when the separator is not a comma."""
    if sep != "," and text.count(",") == 1 and "." not in text:
        return text.replace(",", ".")
    return text


def _number(text: str, sep: str | None, line: int, column: int) -> float:
    shown = ascii(text[:40])
    if not text:
        raise ValueError(f"line {line}, column {column}: empty field; every row needs a "
                         "value in every column")
    t = _decimal_point(text, sep)
    if _NUMBER.fullmatch(t) is None:
        raise ValueError(f"line {line}, column {column}: {shown} is not a number")
    value = float(t)
    if not math.isfinite(value):
        raise ValueError(f"line {line}, column {column}: {shown} is not a finite number")
    return value


def _canonical_unit(text: str, where: str) -> str:
    """'µA/µm', 'uA/um', 'A_per_um', 'a/um' -> the key of `CURRENT_UNITS`."""
    t = text.strip().replace("µ", "u").replace("\u03bc", "u").replace("_per_", "/")
    t = t.replace(" ", "")
    if t in CURRENT_UNITS:
        return t
    for key in CURRENT_UNITS:  # the ampere and the metre in any case; a prefix exactly
        if t.lower() == key.lower() and (key[0] == "A" or t[0] == key[0]):
            return key
    raise ValueError(f"{where}: unit {ascii(text)} unknown; known: " + ", ".join(CURRENT_UNITS))


def _check_voltage(value: Any, name: str, limits: tuple[float, float], label: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float, np.floating, np.integer)):
        raise ValueError(f"{name}: expected a number, got {value!r}")
    value = float(value)
    if not (math.isfinite(value) and limits[0] <= value <= limits[1]):
        raise ValueError(f"{name}: {value!r} V outside the allowed {label} range "
                         f"[{limits[0]:g}, {limits[1]:g}] V")
    return value


def _positional_roles(ncol: int, line: int) -> list[tuple[str, float | None]]:
    if ncol == 2:
        return [("vg", None), ("id", None)]
    if ncol == 3:
        return [("vg", None), ("vd", None), ("id", None)]
    raise ValueError(f"line {line}: {ncol} columns and no header; without a header the "
                     "columns must be V_g, I_d or V_g, V_d, I_d (add a header naming them)")


_BRACKETS = re.compile(r"[\[(]([^\])]*)[\])]")
_BIAS = re.compile(
    r"v_?([gd])s?\s*[=:_]?\s*([+-]?(?:\d+[.,]?\d*|[.,]\d+)(?:e[+-]?\d+)?)\s*(mv|v)?",
    re.IGNORECASE)
_SUFFIX_UNIT = re.compile(r"_((?:[munp]?a)(?:_per_[mu]?m)?|v)$", re.IGNORECASE)


def _classify(name: str, line: int) -> tuple[str, float | None, str | None]:
    """One header name -> (role "vg" | "vd" | "id", the bias it names [V] or None, its
    current unit or None)."""
    where = f"line {line}: column {ascii(name)}"
    bias: tuple[str, float] | None = None
    unit: str | None = None
    volts = False

    def read_bias(m: re.Match) -> tuple[str, float]:
        value = float(m.group(2).replace(",", ".")) * (1e-3 if (m.group(3) or "").lower() == "mv" else 1.0)
        return ("vd" if m.group(1).lower() == "d" else "vg"), value

    for m in _BRACKETS.finditer(name):
        inner = m.group(1).strip()
        b = _BIAS.fullmatch(inner)
        if b:
            bias = read_bias(b)
        elif inner.lower() == "v":
            volts = True
        else:
            unit = _canonical_unit(inner, where)
    rest = _BRACKETS.sub(" ", name).strip()
    m = _SUFFIX_UNIT.search(rest)
    if m is not None:
        token = m.group(1)
        if token.lower() == "v":
            volts = True
        else:
            unit = _canonical_unit(token, where)
        rest = rest[:m.start()]
    if "@" in rest:
        rest, at = rest.split("@", 1)
        b = _BIAS.search(at)
        if b is None:
            raise ValueError(f"{where}: after '@' a bias is expected, e.g. 'Id@Vd=0.3'")
        bias = read_bias(b)
    else:
        b = _BIAS.search(rest)
        if b is not None and b.start() > 0 and rest[b.start() - 1] in "_ ":
            bias = read_bias(b)
            rest = rest[:b.start()]
    rest = rest.strip(" _")
    key = re.sub(r"[\s_\-.]", "", rest.lower())
    if key in _GATE_NAMES or key in _DRAIN_NAMES:
        if unit is not None:
            raise ValueError(f"{where}: a voltage column with a current unit ({unit})")
        return ("vg" if key in _GATE_NAMES else "vd"), None, None
    if key in _CURRENT_NAMES:
        if volts:
            raise ValueError(f"{where}: a current column in volts")
        if bias is None:
            return "id", None, unit
        return f"id@{bias[0]}", bias[1], unit
    raise ValueError(f"{where} is neither a gate voltage (vg, vgs), a drain voltage "
                     "(vd, vds) nor a drain current (id, ids, current)")


def _header_roles(header: list[str], line: int, unit_arg: str | None
                  ) -> tuple[list[tuple[str, float | None]], str]:
    roles: list[tuple[str, float | None]] = []
    units: set[str] = set()
    for name in header:
        if not name:
            raise ValueError(f"line {line}: an empty column name")
        role, bias, unit = _classify(name, line)
        if unit is not None:
            units.add(unit)
        roles.append((role, bias))
    kinds = [r for r, _ in roles]
    if len(units) > 1:
        raise ValueError(f"line {line}: the current columns have different units ("
                         + ", ".join(sorted(units)) + "); use one")
    unit = units.pop() if units else None
    if unit is not None and unit_arg is not None and unit != unit_arg:
        raise ValueError(f"line {line}: the header gives the current in {unit}, but "
                         f"current_unit = {unit_arg} was chosen; drop one")
    unit = unit or unit_arg
    for role in ("vg", "vd", "id"):
        if kinds.count(role) > 1:
            raise ValueError(f"line {line}: two {_ROLE_NAMES[role]} columns")
    currents = [r for r in kinds if r.startswith("id")]
    if not currents:
        raise ValueError(f"line {line}: no drain-current column (names id, ids, current)")
    if "vg" not in kinds and "vd" not in kinds:
        raise ValueError(f"line {line}: no gate-voltage column (names vg, vgs) nor "
                         "drain-voltage column (vd, vds)")
    if len(currents) > 1:
        if "id" in kinds:
            name = header[kinds.index("id")]
            raise ValueError(f"line {line}: several current columns, and {ascii(name)} names "
                             "no bias (write e.g. 'Id@Vd=0.3')")
        if len(set(currents)) > 1:
            raise ValueError(f"line {line}: the current columns name both drain and gate "
                             "voltages; one file holds transfer or output curves")
        values = [v for r, v in roles if r.startswith("id@")]
        if len(set(values)) != len(values):
            raise ValueError(f"line {line}: two current columns at the same bias")
    if unit is None:
        raise ValueError(f"line {line}: the header gives no current unit (e.g. 'Id [A/um]'); "
                         "choose one (current_unit, one of " + ", ".join(CURRENT_UNITS) + ")")
    return roles, unit


_ROLE_NAMES = {"vg": "gate-voltage", "vd": "drain-voltage", "id": "current"}


def _curves(table: np.ndarray, roles: list[tuple[str, float | None]], numbers: list[int],
            factor: float, vd_given: float | None, header_line: int | None
            ) -> tuple[list[MeasuredTransfer], list[MeasuredOutput]]:
    kinds = [r for r, _ in roles]
    lines = np.asarray(numbers)
    where = header_line or int(lines[0])
    transfer: list[MeasuredTransfer] = []
    output: list[MeasuredOutput] = []
    wide = [(k, v) for k, (r, v) in enumerate(roles) if r.startswith("id@")]
    if wide:
        terminal = roles[wide[0][0]][0][3:]
        if vd_given is not None:
            raise ValueError(f"line {where}: the column names give the bias of each curve; "
                             "leave drain_voltage_V unset")
        swept = "vd" if terminal == "vg" else "vg"
        if swept not in kinds:
            raise ValueError(f"line {where}: the current columns name the {terminal} of each "
                             f"curve, so a {_ROLE_NAMES[swept]} column is needed")
        if kinds.count(swept) and (("vd" if swept == "vg" else "vg") in kinds):
            raise ValueError(f"line {where}: a {_ROLE_NAMES[terminal]} column beside current "
                             "columns that name it; use one layout")
        x = table[:, kinds.index(swept)]
        for k, fixed in sorted(wide, key=lambda kv: kv[1]):
            curve = _one_curve(x, table[:, k] * factor, lines, swept, fixed)
            (transfer if swept == "vg" else output).append(curve)
        return transfer, output
    idx_i = kinds.index("id")
    current = table[:, idx_i] * factor
    if "vg" in kinds and "vd" in kinds:
        vg, vd = table[:, kinds.index("vg")], table[:, kinds.index("vd")]
        n_vg, n_vd = np.unique(vg).size, np.unique(vd).size
        if vd_given is not None:
            raise ValueError("drain_voltage_V: the file has a drain-voltage column; leave "
                             "drain_voltage_V unset")
        swept, fixed_col = ("vg", vd) if n_vg >= n_vd else ("vd", vg)
        x = vg if swept == "vg" else vd
        for fixed in np.unique(fixed_col):
            sel = fixed_col == fixed
            curve = _one_curve(x[sel], current[sel], lines[sel], swept, float(fixed))
            (transfer if swept == "vg" else output).append(curve)
        return transfer, output
    if "vg" in kinds:
        if vd_given is None:
            raise ValueError(f"line {where}: no drain-voltage column; give the drain voltage "
                             "of the curve (drain_voltage_V)")
        transfer.append(_one_curve(table[:, kinds.index("vg")], current, lines, "vg", vd_given))
        return transfer, output
    raise ValueError(f"line {where}: a drain-voltage sweep needs the gate voltage: a 'vg' "
                     "column or current columns named like 'Id@Vg=0.5'")


def _one_curve(x: np.ndarray, current: np.ndarray, lines: np.ndarray, swept: str,
               fixed: float | None) -> MeasuredTransfer | MeasuredOutput:
    fixed_name, fixed_range = ("V_d", VD_RANGE_V) if swept == "vg" else ("V_g", VG_RANGE_V)
    swept_name, swept_range = ("V_g", VG_RANGE_V) if swept == "vg" else ("V_d", VD_RANGE_V)
    lo, hi = fixed_range
    if not lo <= fixed <= hi:
        raise ValueError(f"line {int(lines[0])}: {fixed_name} = {fixed:g} V outside the allowed "
                         f"range [{lo:g}, {hi:g}] V")
    lo, hi = swept_range
    bad = np.flatnonzero((x < lo) | (x > hi))
    if bad.size:
        k = int(bad[0])
        raise ValueError(f"line {int(lines[k])}: {swept_name} = {x[k]:g} V outside the allowed "
                         f"range [{lo:g}, {hi:g}] V")
    if x.size < MIN_POINTS:
        raise ValueError(f"line {int(lines[0])}: the curve at {fixed_name} = {fixed:g} V has "
                         f"{x.size} point(s); at least {MIN_POINTS} are needed")
    order = np.argsort(x, kind="stable")
    xs, cs, ls = x[order], current[order], lines[order]
    same = np.flatnonzero(np.diff(xs) == 0)
    if same.size:
        k = int(same[0])
        raise ValueError(f"line {int(max(ls[k], ls[k + 1]))}: {swept_name} = {xs[k]:g} V "
                         f"appears twice in the curve at {fixed_name} = {fixed:g} V (a forward "
                         "and a reverse sweep? keep one)")
    if not np.any(cs > 0):
        raise ValueError(f"line {int(lines[0])}: the curve at {fixed_name} = {fixed:g} V has no "
                         "positive current (an n-type curve is expected; p-type data: "
                         "change the sign)")
    if not np.all(np.isfinite(cs)):
        k = int(np.flatnonzero(~np.isfinite(cs))[0])
        raise ValueError(f"line {int(ls[k])}: the current overflows after unit conversion")
    if swept == "vg":
        return MeasuredTransfer(float(fixed), xs, cs)
    return MeasuredOutput(float(fixed), xs, cs)
