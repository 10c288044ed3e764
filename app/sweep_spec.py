"""The sweep specification: which design fields vary, over what, and how each design is biased.

A sweep file is TOML (or JSON with the same structure)::

    title = "InAs tunnel FET: body, oxide and source doping"

    [fixed]                       # design fields held constant (others: Design defaults)
    material = "InAs"
    gate_length_nm = 20

    [[knob]]                      # 1 to 6 knobs
    field = "body_thickness_nm"
    low = 4.0
    high = 10.0
    steps = 4                     # grid points (grid sampling only)

    [[knob]]
    field = "source_doping_cm3"
    low = 1e19
    high = 1e20
    steps = 3
    spacing = "log"               # default for positive doping ranges; else "linear"

    [[knob]]
    field = "oxide"
    values = ["HfO2", "Al2O3"]    # an explicit list (any field, text fields need one)

    [sampling]
    method = "grid"               # "grid", "sobol" or "latin-hypercube"
    count = 64                    # designs drawn (sobol / latin-hypercube only)
    seed = 1

    [bias]
    vg_V = [-0.4, 0.6, 41]        # gate sweep: start, stop, number of points [V]
    vd_V = 0.3                    # drain voltage [V]
    ioff_target_uA_per_um = 1e-3  # Ioff target for Voff and Ion [uA/um]
    vdd_V = 0.3                   # supply: Ion = Id(Voff + Vdd) [V]

    [physics]
    tunnelling_model = "two-band" # or "one-band"
    resolution = 1.0              # grid refinement factor [-]

Everything is checked when the file is read, before any design is computed: unknown keys
and fields, NaN/inf, values outside the design record's ranges (`FIELD_RANGES`), bias
outside the solver's ranges, too many knobs and sweeps beyond the hard limit each raise
`SpecError` naming the field and the allowed range. Every design of the sweep is built
(and so validated, combination rules included) by `SweepSpec.designs()`.

UI-free: this module imports no Panel/Bokeh and calls only the physics public API.
"""

from __future__ import annotations

import math
import numbers
import tomllib
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from sub60.app.number_rules import InputError, check_document, parse_json
from sub60.app.state import DEFAULT_GATE_SWEEP
from sub60.physics import FIELD_RANGES, TUNNELLING_MODELS, VD_RANGE_V, VG_RANGE_V, Design

#: Knobs per sweep.
MAX_KNOBS = 6
#: Designs a sweep may hold without an explicit confirmation (``--allow-large``).
LARGE_SWEEP = 2_000
#: Designs no sweep may hold, confirmed or not (a million transfer curves is a cluster-week).
MAX_DESIGNS = 1_000_000
#: Values of one knob.
MAX_KNOB_VALUES = 10_000
#: Gate-sweep points per transfer curve (as the command line's --vg).
VG_POINTS_RANGE = (3, 401)
#: Ioff target [uA/um] and supply [V] accepted. Engineering choice, no source.
IOFF_RANGE_UA_PER_UM = (1e-12, 1e3)
VDD_RANGE_V = (0.05, 2.0)
#: Grid refinement factor of the solver [-].
RESOLUTION_RANGE = (0.5, 3.0)
SAMPLING_METHODS = ("grid", "sobol", "latin-hypercube")
#: Largest spec file read [bytes].
MAX_SPEC_BYTES = 1_000_000
#: Significant digits kept of every generated knob value, so that the same point reached
#: by two different ranges (an extended sweep) is the same design, bit for bit.
SIGNIFICANT_DIGITS = 12


class SpecError(ValueError):
    """A sweep specification that cannot run; the message names the key and the allowed values."""


def _canon(x: float) -> float:
    return float(f"{x:.{SIGNIFICANT_DIGITS}g}")


def _number(value: Any, where: str, low: float | None = None, high: float | None = None) -> float:
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (numbers.Real, np.integer)):
        raise SpecError(f"{where}: expected a number, got {value!r}"
                        + (f"; allowed [{low:g}, {high:g}]" if low is not None else ""))
    rng = f"[{low:g}, {high:g}]" if low is not None else "a finite number"
    try:
        value = float(value)
    except OverflowError:  # an integer too large for a float
        digits = int(int(value).bit_length() * math.log10(2)) + 1
        raise SpecError(f"{where}: an integer of about {digits} digits is not a finite "
                        f"number; allowed {rng}") from None
    if not math.isfinite(value):
        raise SpecError(f"{where}: {value} is not a finite number; allowed {rng}")
    if low is not None and not low <= value <= high:
        raise SpecError(f"{where}: {value:g} outside the allowed range {rng}")
    return value


def _integer(value: Any, where: str, low: int, high: int) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
        raise SpecError(f"{where}: expected a whole number in [{low}, {high}], got {value!r}")
    if not low <= int(value) <= high:
        raise SpecError(f"{where}: {value} outside the allowed range [{low}, {high}]")
    return int(value)


def _known_keys(table: dict, allowed: tuple[str, ...], where: str) -> None:
    if not isinstance(table, dict):
        raise SpecError(f"{where}: expected a table of keys, got {type(table).__name__}")
    unknown = sorted(set(table) - set(allowed))
    if unknown:
        raise SpecError(f"{where}.{unknown[0]}: unknown key; allowed: " + ", ".join(allowed))


@dataclass(frozen=True)
class Knob:
    """One varied design field: a range (low..high, linear or log spaced) or explicit values.

    Parameters
    ----------
    field : design field name (a key of `FIELD_RANGES`)
    values : explicit values (numbers in the field's unit, or text for text fields)
    low, high : range ends, in the field's unit (see the field name)
    steps : grid points over the range [-]
    spacing : "linear" or "log"
    """

    field: str
    values: tuple[Any, ...] | None = None
    low: float | None = None
    high: float | None = None
    steps: int | None = None
    spacing: str = "linear"

    @property
    def numeric(self) -> bool:
        return FIELD_RANGES[self.field].kind is float

    def grid(self) -> list[Any]:
        """The knob's grid values (explicit values, or `steps` points over the range)."""
        if self.values is not None:
            return list(self.values)
        assert self.low is not None and self.high is not None and self.steps is not None
        if self.steps == 1:
            return [_canon(self.low)]
        if self.spacing == "log":
            pts = np.geomspace(self.low, self.high, self.steps)
        else:
            pts = np.linspace(self.low, self.high, self.steps)
        return [_canon(float(v)) for v in pts]

    def at(self, u: float) -> Any:
        """The knob's value at a unit-interval coordinate u in [0, 1) (space-filling sampling)."""
        if self.values is not None:
            return self.values[min(int(u * len(self.values)), len(self.values) - 1)]
        assert self.low is not None and self.high is not None
        if self.spacing == "log":
            return _canon(float(10 ** (math.log10(self.low)
                                       + u * (math.log10(self.high) - math.log10(self.low)))))
        return _canon(self.low + u * (self.high - self.low))

    def size(self) -> int:
        return len(self.values) if self.values is not None else int(self.steps or 1)

    def to_dict(self) -> dict[str, Any]:
        if self.values is not None:
            return {"field": self.field, "values": list(self.values)}
        out: dict[str, Any] = {"field": self.field, "low": self.low, "high": self.high,
                               "spacing": self.spacing}
        if self.steps is not None:
            out["steps"] = self.steps
        return out


@dataclass(frozen=True)
class BiasPlan:
    """How each design is measured: a gate sweep at one drain voltage, and the metric settings.

    Parameters
    ----------
    vg_start_V, vg_stop_V : gate sweep ends [V]
    vg_points : number of gate voltages [-]
    vd_V : drain voltage [V]
    ioff_target_uA_per_um : Ioff target defining Voff [uA/um]
    vdd_V : supply; Ion = Id(Voff + Vdd) [V]
    """

    vg_start_V: float = DEFAULT_GATE_SWEEP.start_V
    vg_stop_V: float = DEFAULT_GATE_SWEEP.stop_V
    vg_points: int = DEFAULT_GATE_SWEEP.points
    vd_V: float = 0.3
    ioff_target_uA_per_um: float = 1e-3
    vdd_V: float = 0.3

    def vg_V(self) -> np.ndarray:
        """The gate voltages [V] (the same numbers as ``sub60 transfer --vg START:STOP:N``)."""
        return np.linspace(self.vg_start_V, self.vg_stop_V, self.vg_points)

    def to_dict(self) -> dict[str, Any]:
        return {"vg_V": [self.vg_start_V, self.vg_stop_V, self.vg_points], "vd_V": self.vd_V,
                "ioff_target_uA_per_um": self.ioff_target_uA_per_um, "vdd_V": self.vdd_V}


@dataclass(frozen=True)
class PhysicsOptions:
    """Model options passed to the simulator: tunnelling model and grid refinement."""

    tunnelling_model: str = "two-band"
    resolution: float = 1.0

    def to_dict(self) -> dict[str, Any]:
        return {"tunnelling_model": self.tunnelling_model, "resolution": self.resolution}


@dataclass(frozen=True)
class SweepSpec:
    """A validated sweep: knobs, sampling, fixed fields, bias plan and physics options."""

    knobs: tuple[Knob, ...]
    fixed: dict[str, Any] = field(default_factory=dict)
    method: str = "grid"
    count: int | None = None
    seed: int = 0
    bias: BiasPlan = BiasPlan()
    physics: PhysicsOptions = PhysicsOptions()
    title: str = ""

    @property
    def knob_fields(self) -> tuple[str, ...]:
        return tuple(k.field for k in self.knobs)

    def size(self) -> int:
        """Number of designs the sweep holds (without building them)."""
        if self.method == "grid":
            return math.prod(k.size() for k in self.knobs)
        return int(self.count or 0)

    def points(self) -> list[dict[str, Any]]:
        """The knob values of each design, in sweep order."""
        if self.method == "grid":
            grids = [k.grid() for k in self.knobs]
            mesh = np.stack(np.meshgrid(*[np.arange(len(g)) for g in grids], indexing="ij"),
                            axis=-1).reshape(-1, len(grids))
            return [{k.field: grids[j][int(i)] for j, (k, i) in enumerate(zip(self.knobs, row,
                                                                             strict=True))}
                    for row in mesh]
        from scipy.stats import qmc

        d = len(self.knobs)
        try:
            engine = (qmc.Sobol(d, scramble=True, rng=self.seed) if self.method == "sobol"
                      else qmc.LatinHypercube(d, rng=self.seed))
        except TypeError:  # scipy < 1.15 names the generator `seed`
            engine = (qmc.Sobol(d, scramble=True, seed=self.seed) if self.method == "sobol"
                      else qmc.LatinHypercube(d, seed=self.seed))
        with warnings.catch_warnings():  # Sobol balance needs 2^m points; any count is allowed
            warnings.simplefilter("ignore", UserWarning)
            u = engine.random(int(self.count or 0))
        return [{k.field: k.at(float(row[j])) for j, k in enumerate(self.knobs)} for row in u]

    def designs(self) -> list[Design]:
        """Every design of the sweep, validated (SpecError names the first invalid one)."""
        out = []
        bad: list[str] = []
        for pt in self.points():
            try:
                out.append(Design.from_dict({**self.fixed, **pt}))
            except ValueError as exc:
                bad.append(f"{exc} (at " + ", ".join(f"{k} = {v}" for k, v in pt.items()) + ")")
        if bad:
            raise SpecError(f"{len(bad)} of {len(out) + len(bad)} designs are invalid; the first: "
                            f"{bad[0]}")
        return out

    def to_dict(self) -> dict[str, Any]:
        """The spec as a JSON-safe dictionary (readable back by `spec_from_dict`)."""
        sampling: dict[str, Any] = {"method": self.method, "seed": self.seed}
        if self.count is not None:
            sampling["count"] = self.count
        return {"title": self.title, "fixed": dict(self.fixed),
                "knob": [k.to_dict() for k in self.knobs], "sampling": sampling,
                "bias": self.bias.to_dict(), "physics": self.physics.to_dict()}


# ------------------------------------------------------------------ parsing
def _check_field(name: Any, value: Any, where: str) -> Any:
    """One design field checked by the design record itself (its canonical spelling back).

    Combination rules (a custom oxide's permittivity, the gate overlap) involve other
    fields and are checked on the whole designs by `SweepSpec.designs`.
    """
    if not isinstance(name, str) or name not in FIELD_RANGES:
        raise SpecError(f"{where}.{name}: unknown design field; known: " + ", ".join(FIELD_RANGES))
    if name == "oxide_permittivity" and value is None:
        return None
    try:
        return getattr(Design(**{name: value}), name)
    except ValueError as exc:
        if str(exc).startswith(f"{name}:"):
            detail = str(exc)[len(name) + 1:].lstrip()
            # "fixed.oxide: ...", "knob oxide.values: ..." (the field named once)
            raise SpecError(f"{where}: {detail}" if name in where
                            else f"{where}.{name}: {detail}") from None
        return value  # valid alone; only a combination with defaults failed
def _parse_knob(raw: Any, i: int, method: str) -> Knob:
    where = f"knob[{i}]"
    _known_keys(raw, ("field", "values", "low", "high", "steps", "spacing"), where)
    name = raw.get("field")
    if not isinstance(name, str):
        raise SpecError(f"{where}.field: expected a design field name; known: " + ", ".join(FIELD_RANGES))
    if name not in FIELD_RANGES:
        raise SpecError(f"{where}.field: {name!r} is not a design field; known: "
                        + ", ".join(FIELD_RANGES))
    spec = FIELD_RANGES[name]
    where = f"knob {name}"
    if "values" in raw:
        extra = sorted(set(raw) & {"low", "high", "steps", "spacing"})
        if extra:
            raise SpecError(f"{where}: give either values or low/high/steps, not both ({extra[0]})")
        vals = raw["values"]
        if not isinstance(vals, list) or not 1 <= len(vals) <= MAX_KNOB_VALUES:
            raise SpecError(f"{where}.values: expected a list of 1 to {MAX_KNOB_VALUES} values")
        checked = []
        for v in vals:
            if spec.kind is float:
                checked.append(_canon(_number(v, f"{where}.values", spec.low, spec.high)))
            else:
                if not isinstance(v, str):
                    raise SpecError(f"{where}.values: expected text, got {v!r}; allowed {spec.describe()}")
                checked.append(_check_field(name, v, f"{where}.values"))
        if len(set(checked)) != len(checked):
            raise SpecError(f"{where}.values: a value is listed twice")
        return Knob(name, values=tuple(checked))
    if spec.kind is not float:
        raise SpecError(f"{where}: a text field takes a list of values; allowed {spec.describe()}")
    for k in ("low", "high"):
        if k not in raw:
            raise SpecError(f"{where}.{k}: missing; allowed {spec.describe()}")
    low = _number(raw["low"], f"{where}.low", spec.low, spec.high)
    high = _number(raw["high"], f"{where}.high", spec.low, spec.high)
    if not low <= high:
        raise SpecError(f"{where}: low = {low:g} is above high = {high:g}")
    default_spacing = "log" if name.endswith("_doping_cm3") and low > 0 else "linear"
    spacing = raw.get("spacing", default_spacing)
    if spacing not in ("linear", "log"):
        raise SpecError(f"{where}.spacing: {spacing!r} not allowed; allowed 'linear', 'log'")
    if spacing == "log" and not low > 0:
        raise SpecError(f"{where}.spacing: log spacing needs a positive range, got low = {low:g}")
    steps = None
    if method == "grid":
        if "steps" not in raw:
            raise SpecError(f"{where}.steps: missing (grid sampling); allowed [1, {MAX_KNOB_VALUES}]")
        steps = _integer(raw["steps"], f"{where}.steps", 1, MAX_KNOB_VALUES)
        if steps == 1 and low != high:
            raise SpecError(f"{where}.steps: one step needs low = high")
    elif "steps" in raw:
        raise SpecError(f"{where}.steps: only for grid sampling; {method} draws sampling.count designs")
    return Knob(name, low=low, high=high, steps=steps, spacing=spacing)


def spec_from_dict(data: Any, allow_large: bool = False) -> SweepSpec:
    """A validated `SweepSpec` from a parsed TOML/JSON document.

    Raises
    ------
    SpecError
        naming the key, the value and the allowed range; also when the sweep holds more
        than `LARGE_SWEEP` designs and ``allow_large`` is False, or more than `MAX_DESIGNS`.
    """
    _known_keys(data, ("title", "fixed", "knob", "sampling", "bias", "physics"), "spec")
    title = data.get("title", "")
    if not isinstance(title, str) or len(title) > 200:
        raise SpecError("title: expected text of at most 200 characters")

    sampling = data.get("sampling", {})
    _known_keys(sampling, ("method", "count", "seed"), "sampling")
    method = sampling.get("method", "grid")
    if method not in SAMPLING_METHODS:
        raise SpecError(f"sampling.method: {method!r} not allowed; allowed "
                        + ", ".join(repr(m) for m in SAMPLING_METHODS))
    count = None
    if method == "grid":
        if "count" in sampling:
            raise SpecError("sampling.count: only for sobol / latin-hypercube; a grid's size is "
                            "the product of the knobs' steps")
    else:
        if "count" not in sampling:
            raise SpecError(f"sampling.count: missing ({method}); allowed [1, {MAX_DESIGNS}]")
        count = _integer(sampling["count"], "sampling.count", 1, MAX_DESIGNS)
    seed = _integer(sampling.get("seed", 0), "sampling.seed", 0, 2**32 - 1)

    knobs_raw = data.get("knob")
    if not isinstance(knobs_raw, list) or not 1 <= len(knobs_raw) <= MAX_KNOBS:
        n = len(knobs_raw) if isinstance(knobs_raw, list) else 0
        raise SpecError(f"knob: {n} knobs given; allowed 1 to {MAX_KNOBS} ([[knob]] tables)")
    knobs = tuple(_parse_knob(k, i, method) for i, k in enumerate(knobs_raw))
    names = [k.field for k in knobs]
    dup = sorted({n for n in names if names.count(n) > 1})
    if dup:
        raise SpecError(f"knob {dup[0]}: varied twice")

    fixed = data.get("fixed", {})
    if not isinstance(fixed, dict):
        raise SpecError("fixed: expected a table of design fields")
    both = sorted(set(fixed) & set(names))
    if both:
        raise SpecError(f"fixed.{both[0]}: also a knob; a field is either fixed or varied")
    fixed = {k: _check_field(k, v, "fixed") for k, v in fixed.items()}

    b = data.get("bias", {})
    _known_keys(b, ("vg_V", "vd_V", "ioff_target_uA_per_um", "vdd_V"), "bias")
    default = BiasPlan()
    vg = b.get("vg_V", [default.vg_start_V, default.vg_stop_V, default.vg_points])
    if not isinstance(vg, list) or len(vg) != 3:
        raise SpecError("bias.vg_V: expected [start, stop, points] [V, V, -]")
    lo, hi = VG_RANGE_V
    v0 = _number(vg[0], "bias.vg_V start", lo, hi)
    v1 = _number(vg[1], "bias.vg_V stop", lo, hi)
    if not v0 < v1:
        raise SpecError(f"bias.vg_V: start {v0:g} V must be below stop {v1:g} V")
    n = _integer(vg[2], "bias.vg_V points", *VG_POINTS_RANGE)
    bias = BiasPlan(v0, v1, n, _number(b.get("vd_V", default.vd_V), "bias.vd_V", *VD_RANGE_V),
                    _number(b.get("ioff_target_uA_per_um", default.ioff_target_uA_per_um),
                            "bias.ioff_target_uA_per_um", *IOFF_RANGE_UA_PER_UM),
                    _number(b.get("vdd_V", default.vdd_V), "bias.vdd_V", *VDD_RANGE_V))

    p = data.get("physics", {})
    _known_keys(p, ("tunnelling_model", "resolution"), "physics")
    model = p.get("tunnelling_model", "two-band")
    if model not in TUNNELLING_MODELS:
        raise SpecError(f"physics.tunnelling_model: {model!r} not allowed; allowed "
                        + ", ".join(repr(m) for m in TUNNELLING_MODELS))
    physics = PhysicsOptions(model, _number(p.get("resolution", 1.0), "physics.resolution",
                                            *RESOLUTION_RANGE))

    spec = SweepSpec(knobs, dict(fixed), method, count, seed, bias, physics, title)
    size = spec.size()
    if size > MAX_DESIGNS:
        raise SpecError(f"knob: the grid holds {size:,} designs; allowed at most {MAX_DESIGNS:,}")
    if size > LARGE_SWEEP and not allow_large:
        raise SpecError(f"knob: the sweep holds {size:,} designs, more than {LARGE_SWEEP:,}; "
                        "confirm with --allow-large")
    return spec


def load_spec(path: str | Path, allow_large: bool = False) -> SweepSpec:
    """Read and validate a sweep file (.toml, or .json); SpecError on any problem."""
    path = Path(path)
    try:
        with open(path, "rb") as fh:
            raw = fh.read(MAX_SPEC_BYTES + 1)
    except OSError as exc:
        raise SpecError(f"{path}: cannot read ({exc.strerror})") from None
    if len(raw) > MAX_SPEC_BYTES:
        raise SpecError(f"{path}: larger than {MAX_SPEC_BYTES:,} bytes")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise SpecError(f"{path}: not UTF-8 text") from None
    return spec_from_text(text, "json" if path.suffix.lower() == ".json" else "toml", allow_large,
                          str(path))


def spec_from_text(text: str, fmt: str = "toml", allow_large: bool = False,
                   name: str = "spec") -> SweepSpec:
    """Parse and validate a sweep spec given as TOML or JSON text."""
    try:
        if fmt == "json":  # the strict JSON rules of every other door (app.number_rules)
            data = parse_json(text.encode("utf-8", "surrogatepass"), name)
        else:
            data = check_document(tomllib.loads(text.removeprefix("\ufeff")), name)
    except InputError as exc:
        raise SpecError(str(exc)) from None
    except tomllib.TOMLDecodeError as exc:
        raise SpecError(f"{name}: not valid TOML ({exc})") from None
    return spec_from_dict(data, allow_large)
