"""Snapshots: the settings of one view, saved as one file and opened again.

A snapshot is a zip archive that the user downloads::

    settings.json          the view settings (the only member an import reads)
    README.txt             what the files are, and the model caution
    bands.csv              band diagram at the bias point
    spectrum.csv           band-to-band spectral current and transmission
    transfer.csv           Id-Vg of the design and of its MOSFET twin, with the point swing
    output.csv             Id-Vd, one column per gate voltage
    pinned.csv             Id-Vg of each pinned design (only when designs are pinned)
    figures/*.png, *.svg   static figures (matplotlib, `app.figures`)
    plots.html             the same plots, interactive, in one page that works offline

`settings.json` is sub60's own format (schema ``"sub60.snapshot"``, version 1)::

    schema            str    "sub60.snapshot"
    schema_version    int    1
    sub60_version     str    version of sub60 that wrote the file (export)
    created_utc       str    ISO 8601 time of the export, UTC (export)
    title, note       str    optional free text
    design            object the complete `physics.design.Design` record
    bias              object vg_V, vd_V [V] of the band diagram and spectrum
    transfer_sweep    object vg_start_V, vg_stop_V [V], vg_points [-], vd_V [V]
    output_sweep      object vg_V (list) [V], vd_start_V, vd_stop_V [V], vd_points [-]
    metric_settings   object vdd_V [V], ioff_target_uA_per_um [uA/um]
    model             object resolution [-], tunnelling_model ("two-band" | "one-band")
    pinned            list   of {name, design, transfer_sweep (optional)}
    stored            object figures of merit found at export (export): design, twin,
                             pinned (list), each {metrics, reasons}; bias
                             {current_uA_per_um, window_eV ([min, max] or null)}

An import validates strictly (`import_snapshot`): it reads members in memory only,
never writes anything, and raises `SnapshotError` naming the problem. The stored
figures of merit let `verify_snapshot` recompute and compare.

Reproducibility: stored and recomputed results are computed the same way
(`compute_results`): a fresh `Simulator` with the snapshot's model settings, the
transfer curves first (design, twin, pinned designs, each starting cold at its first
gate voltage and continuing along the sweep), then the bias point and the output
curves. With the same sub60 version the numbers agree to round-off.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import importlib.metadata
import importlib.resources
import io
import json
import math
import re
import stat
import warnings
import zipfile
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from sub60.physics.design import FIELD_RANGES, VD_RANGE_V, VG_RANGE_V, Design, check_bias
from sub60.physics.metrics import Metrics
from sub60.physics.simulate import BiasPoint, OutputCurve, Simulator, TransferCurve

# ---------------------------------------------------------------------- constants
SCHEMA_NAME = "sub60.snapshot"
SCHEMA_VERSION = 1
#: Version written when the installed package metadata cannot be read.
FALLBACK_VERSION = "0.1.0+unknown"

#: Largest snapshot accepted (zip or bare settings.json) [bytes].
MAX_SNAPSHOT_BYTES = 20 * 1024 * 1024
#: Largest settings.json accepted [bytes].
MAX_SETTINGS_BYTES = 1024 * 1024
#: Zip-bomb guards: members, and their total uncompressed size [bytes].
MAX_MEMBERS = 64
MAX_UNCOMPRESSED_BYTES = 64 * 1024 * 1024

#: Limits of the settings (engineering choices, no source).
VG_POINTS_RANGE = (3, 201)
VD_POINTS_RANGE = (2, 101)
MAX_OUTPUT_CURVES = 8
MAX_PINNED = 8
VDD_RANGE_V = (0.01, 2.0)
IOFF_TARGET_RANGE_UA_PER_UM = (1e-12, 1e3)
RESOLUTION_RANGE = (0.5, 3.0)
TUNNELLING_MODELS = ("two-band", "one-band")
MAX_TITLE_CHARS = 200
MAX_NOTE_CHARS = 4000
MAX_NAME_CHARS = 80

#: Agreement of recomputed and stored figures of merit: relative, with an absolute floor
#: in the metric's own unit for values that cross zero (e.g. a threshold voltage near 0 V).
METRIC_REL_TOL = 1e-9
METRIC_ABS_TOL = 1e-12

SETTINGS_MEMBER = "settings.json"
MODEL_CAUTION = ("sub60 is a design-exploration model (semiclassical charge with "
                 "confinement-shifted band edges, WKB tunnelling, ballistic Landauer current, "
                 "no traps), not calibrated TCAD: its numbers do not replace calibrated device "
                 "simulation or measurements.")

PRESET_DIR = Path(str(importlib.resources.files("sub60.assets"))) / "presets"


class SnapshotError(ValueError):
    """A snapshot or settings file that cannot be used; the message names the problem."""


def sub60_version() -> str:
    """Installed version of sub60 (package metadata), or `FALLBACK_VERSION`."""
    try:
        return importlib.metadata.version("sub60")
    except importlib.metadata.PackageNotFoundError:
        return FALLBACK_VERSION


# ---------------------------------------------------------------------- settings model
@dataclass(frozen=True)
class BiasSettings:
    """Bias of the band diagram and spectrum: gate and drain voltage [V]."""

    vg_V: float = 0.3
    vd_V: float = 0.3


@dataclass(frozen=True)
class TransferSweep:
    """Gate sweep of a transfer curve: first and last gate voltage [V], number of points
    [-], drain voltage [V]."""

    vg_start_V: float = -0.2
    vg_stop_V: float = 0.6
    vg_points: int = 41
    vd_V: float = 0.3

    def gate_voltages(self) -> np.ndarray:
        """Gate voltages of the sweep [V]."""
        return np.linspace(self.vg_start_V, self.vg_stop_V, self.vg_points)


@dataclass(frozen=True)
class OutputSweep:
    """Output curves: gate voltages [V] and the drain sweep (first, last [V], points)."""

    vg_V: tuple[float, ...] = (0.0, 0.1, 0.2, 0.3)
    vd_start_V: float = 0.0
    vd_stop_V: float = 0.6
    vd_points: int = 13

    def drain_voltages(self) -> np.ndarray:
        """Drain voltages of each output curve [V]."""
        return np.linspace(self.vd_start_V, self.vd_stop_V, self.vd_points)


@dataclass(frozen=True)
class MetricSettings:
    """Settings of the figures of merit: supply for Ion [V] and Ioff target [uA/um]."""

    vdd_V: float = 0.3
    ioff_target_uA_per_um: float = 1e-3


@dataclass(frozen=True)
class ModelSettings:
    """Numerical model: grid refinement factor [-] and imaginary wave-vector model."""

    resolution: float = 1.0
    tunnelling_model: str = "two-band"


@dataclass(frozen=True)
class PinnedDesign:
    """A design drawn beside the present one; its own sweep, or None for the main one."""

    name: str
    design: Design
    transfer_sweep: TransferSweep | None = None


@dataclass(frozen=True)
class CurveRecord:
    """Figures of merit of one transfer curve: value by name (None when undefined) and
    the reason of each undefined one."""

    metrics: dict[str, float | None]
    reasons: dict[str, str]

    @classmethod
    def from_metrics(cls, m: Metrics) -> CurveRecord:
        return cls(dict(m.to_dict()), {k: v for k, v in m.reasons().items() if v is not None})


@dataclass(frozen=True)
class StoredResults:
    """Results found at export, kept to be compared with a recomputation."""

    design: CurveRecord
    twin: CurveRecord
    pinned: tuple[CurveRecord, ...]
    bias_current_uA_per_um: float
    window_eV: tuple[float, float] | None


@dataclass(frozen=True)
class SnapshotSettings:
    """Everything that defines one view: design, bias, sweeps, metric settings, pins.

    ``sub60_version``, ``created_utc`` and ``stored`` are filled in by an export (or come
    from an imported file); they are None for settings made in memory.
    """

    design: Design = field(default_factory=Design)
    bias: BiasSettings = field(default_factory=BiasSettings)
    transfer_sweep: TransferSweep = field(default_factory=TransferSweep)
    output_sweep: OutputSweep = field(default_factory=OutputSweep)
    metric_settings: MetricSettings = field(default_factory=MetricSettings)
    model: ModelSettings = field(default_factory=ModelSettings)
    pinned: tuple[PinnedDesign, ...] = ()
    title: str | None = None
    note: str | None = None
    sub60_version: str | None = None
    created_utc: str | None = None
    stored: StoredResults | None = None

    def __post_init__(self) -> None:
        # the same checks as an import, so settings made in code are valid too
        _validated(self)

    def replace(self, **changes: Any) -> SnapshotSettings:
        """A new validated settings record with some fields changed."""
        return dataclasses.replace(self, **changes)

    def to_dict(self) -> dict[str, Any]:
        """The settings.json document (JSON-safe, no NaN)."""
        return _settings_to_dict(self)

    def to_json(self) -> str:
        """settings.json text."""
        return json.dumps(self.to_dict(), indent=1, allow_nan=False) + "\n"

    @classmethod
    def from_dict(cls, data: Any) -> SnapshotSettings:
        """Settings from a settings.json document, validated strictly (SnapshotError)."""
        return _settings_from_dict(data)


# ---------------------------------------------------------------------- to JSON
def _sweep_dict(s: TransferSweep) -> dict[str, Any]:
    return {"vg_start_V": s.vg_start_V, "vg_stop_V": s.vg_stop_V, "vg_points": s.vg_points,
            "vd_V": s.vd_V}


def _curve_dict(c: CurveRecord) -> dict[str, Any]:
    return {"metrics": dict(c.metrics), "reasons": dict(c.reasons)}


def _settings_to_dict(s: SnapshotSettings) -> dict[str, Any]:
    out: dict[str, Any] = {"schema": SCHEMA_NAME, "schema_version": SCHEMA_VERSION}
    if s.sub60_version is not None:
        out["sub60_version"] = s.sub60_version
    if s.created_utc is not None:
        out["created_utc"] = s.created_utc
    if s.title is not None:
        out["title"] = s.title
    if s.note is not None:
        out["note"] = s.note
    out["design"] = s.design.to_dict()
    out["bias"] = {"vg_V": s.bias.vg_V, "vd_V": s.bias.vd_V}
    out["transfer_sweep"] = _sweep_dict(s.transfer_sweep)
    o = s.output_sweep
    out["output_sweep"] = {"vg_V": list(o.vg_V), "vd_start_V": o.vd_start_V,
                           "vd_stop_V": o.vd_stop_V, "vd_points": o.vd_points}
    out["metric_settings"] = {"vdd_V": s.metric_settings.vdd_V,
                              "ioff_target_uA_per_um": s.metric_settings.ioff_target_uA_per_um}
    out["model"] = {"resolution": s.model.resolution,
                    "tunnelling_model": s.model.tunnelling_model}
    pins = []
    for p in s.pinned:
        item: dict[str, Any] = {"name": p.name, "design": p.design.to_dict()}
        if p.transfer_sweep is not None:
            item["transfer_sweep"] = _sweep_dict(p.transfer_sweep)
        pins.append(item)
    out["pinned"] = pins
    if s.stored is not None:
        st = s.stored
        out["stored"] = {
            "design": _curve_dict(st.design), "twin": _curve_dict(st.twin),
            "pinned": [_curve_dict(c) for c in st.pinned],
            "bias": {"current_uA_per_um": st.bias_current_uA_per_um,
                     "window_eV": None if st.window_eV is None else list(st.window_eV)}}
    return out


# ---------------------------------------------------------------------- strict reading
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")
_VERSION_TEXT = re.compile(r"[0-9A-Za-z][0-9A-Za-z.+_-]{0,63}")


class _Obj:
    """A JSON object read field by field; every read names its path in errors."""

    def __init__(self, data: Any, path: str, known: tuple[str, ...],
                 required: tuple[str, ...]) -> None:
        if not isinstance(data, dict):
            raise SnapshotError(f"{path}: expected a JSON object, got {_kind(data)}")
        unknown = [k for k in data if k not in known]
        if unknown:
            raise SnapshotError(f"{_join(path, unknown[0])}: unknown field; known fields: "
                                + ", ".join(known))
        for k in required:
            if k not in data:
                raise SnapshotError(f"{_join(path, k)}: missing (required)")
        self.data = data
        self.path = path

    def has(self, key: str) -> bool:
        return key in self.data

    def at(self, key: str) -> str:
        return _join(self.path, key)

    def number(self, key: str, low: float, high: float, unit: str = "") -> float:
        return _number(self.data[key], self.at(key), low, high, unit)

    def integer(self, key: str, low: int, high: int) -> int:
        v = self.data[key]
        if isinstance(v, bool) or not isinstance(v, int):
            raise SnapshotError(f"{self.at(key)}: expected an integer, got {_show(v)}")
        if not low <= v <= high:
            raise SnapshotError(f"{self.at(key)}: {v} outside the allowed range [{low}, {high}]")
        return v

    def text(self, key: str, max_chars: int, multiline: bool = False) -> str:
        v = self.data[key]
        if not isinstance(v, str):
            raise SnapshotError(f"{self.at(key)}: expected text, got {_show(v)}")
        if len(v) > max_chars:
            raise SnapshotError(f"{self.at(key)}: {len(v)} characters; the limit is {max_chars}")
        bad = _CONTROL.search(v) if multiline else re.search(r"[\x00-\x1f\x7f]", v)
        if bad:
            raise SnapshotError(f"{self.at(key)}: control character {bad.group()!r} not allowed")
        return v


def _join(path: str, key: str | int) -> str:
    if isinstance(key, int):
        return f"{path}[{key}]"
    return f"{path}.{key}" if path else key


def _kind(v: Any) -> str:
    return {dict: "an object", list: "an array", str: "text", bool: "true/false",
            type(None): "null", int: "a number", float: "a number"}.get(type(v), type(v).__name__)


def _show(v: Any) -> str:
    text = json.dumps(v) if isinstance(v, (str, int, float, bool, type(None))) else _kind(v)
    return text if len(text) <= 40 else text[:37] + "..."


def _number(v: Any, path: str, low: float, high: float, unit: str = "") -> float:
    u = f" {unit}" if unit else ""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise SnapshotError(f"{path}: expected a number, got {_show(v)}")
    v = float(v)
    if not math.isfinite(v):
        raise SnapshotError(f"{path}: {v} is not a finite number")
    if not low <= v <= high:
        raise SnapshotError(f"{path}: {v:g}{u} outside the allowed range [{low:g}, {high:g}]{u}")
    return v


def _design(data: Any, path: str) -> Design:
    names = tuple(FIELD_RANGES)
    _Obj(data, path, names, names)  # every field: a stored design must not lean on defaults
    try:
        return Design.from_dict(data)
    except ValueError as exc:
        raise SnapshotError(f"{path}.{exc}") from None
    except (TypeError, OverflowError) as exc:  # defensive: never a traceback for a file
        raise SnapshotError(f"{path}: {exc}") from None


def _transfer_sweep(data: Any, path: str) -> TransferSweep:
    keys = ("vg_start_V", "vg_stop_V", "vg_points", "vd_V")
    o = _Obj(data, path, keys, keys)
    lo = o.number("vg_start_V", *VG_RANGE_V, "V")
    hi = o.number("vg_stop_V", *VG_RANGE_V, "V")
    if not lo < hi:
        raise SnapshotError(f"{o.at('vg_stop_V')}: {hi:g} V must be above vg_start_V = {lo:g} V")
    return TransferSweep(lo, hi, o.integer("vg_points", *VG_POINTS_RANGE),
                         o.number("vd_V", *VD_RANGE_V, "V"))


def _output_sweep(data: Any, path: str) -> OutputSweep:
    keys = ("vg_V", "vd_start_V", "vd_stop_V", "vd_points")
    o = _Obj(data, path, keys, keys)
    vgs = o.data["vg_V"]
    if not isinstance(vgs, list):
        raise SnapshotError(f"{o.at('vg_V')}: expected an array of gate voltages, got {_kind(vgs)}")
    if not 1 <= len(vgs) <= MAX_OUTPUT_CURVES:
        raise SnapshotError(f"{o.at('vg_V')}: {len(vgs)} gate voltages; allowed 1 to "
                            f"{MAX_OUTPUT_CURVES}")
    values = tuple(_number(v, f"{o.at('vg_V')}[{i}]", *VG_RANGE_V, "V") for i, v in enumerate(vgs))
    if len(set(values)) != len(values):
        raise SnapshotError(f"{o.at('vg_V')}: gate voltages repeat")
    lo = o.number("vd_start_V", *VD_RANGE_V, "V")
    hi = o.number("vd_stop_V", *VD_RANGE_V, "V")
    if not lo < hi:
        raise SnapshotError(f"{o.at('vd_stop_V')}: {hi:g} V must be above vd_start_V = {lo:g} V")
    return OutputSweep(values, lo, hi, o.integer("vd_points", *VD_POINTS_RANGE))


def _curve_record(data: Any, path: str) -> CurveRecord:
    o = _Obj(data, path, ("metrics", "reasons"), ("metrics", "reasons"))
    names = Metrics.METRIC_NAMES
    m = _Obj(o.data["metrics"], o.at("metrics"), names, names)
    metrics: dict[str, float | None] = {}
    for k in names:
        v = m.data[k]
        metrics[k] = None if v is None else _number(v, m.at(k), -math.inf, math.inf)
    r = _Obj(o.data["reasons"], o.at("reasons"), names, ())
    reasons = {k: r.text(k, 1000) for k in r.data}
    return CurveRecord(metrics, reasons)


def _stored(data: Any, path: str, n_pinned: int) -> StoredResults:
    keys = ("design", "twin", "pinned", "bias")
    o = _Obj(data, path, keys, keys)
    pins = o.data["pinned"]
    if not isinstance(pins, list):
        raise SnapshotError(f"{o.at('pinned')}: expected an array, got {_kind(pins)}")
    if len(pins) != n_pinned:
        raise SnapshotError(f"{o.at('pinned')}: {len(pins)} records for {n_pinned} pinned designs")
    b = _Obj(o.data["bias"], o.at("bias"), ("current_uA_per_um", "window_eV"),
             ("current_uA_per_um", "window_eV"))
    current = b.number("current_uA_per_um", -math.inf, math.inf, "uA/um")
    w = b.data["window_eV"]
    window = None
    if w is not None:
        if not isinstance(w, list) or len(w) != 2:
            raise SnapshotError(f"{b.at('window_eV')}: expected null or [e_min, e_max], "
                                f"got {_show(w)}")
        lo, hi = (_number(v, f"{b.at('window_eV')}[{i}]", -math.inf, math.inf, "eV")
                  for i, v in enumerate(w))
        if lo > hi:
            raise SnapshotError(f"{b.at('window_eV')}: e_min {lo:g} eV above e_max {hi:g} eV")
        window = (lo, hi)
    return StoredResults(_curve_record(o.data["design"], o.at("design")),
                         _curve_record(o.data["twin"], o.at("twin")),
                         tuple(_curve_record(p, f"{o.at('pinned')}[{i}]")
                               for i, p in enumerate(pins)),
                         current, window)


_TOP_FIELDS = ("schema", "schema_version", "sub60_version", "created_utc", "title", "note",
               "design", "bias", "transfer_sweep", "output_sweep", "metric_settings", "model",
               "pinned", "stored")
_TOP_REQUIRED = ("schema", "schema_version", "design", "bias", "transfer_sweep", "output_sweep",
                 "metric_settings")


def _check_schema(data: Any) -> None:
    if not isinstance(data, dict):
        raise SnapshotError(f"top level: expected a JSON object, got {_kind(data)}")
    if "schema" not in data:
        raise SnapshotError(f"schema: missing; this is not a sub60 snapshot (expected schema "
                            f"{SCHEMA_NAME!r})")
    if data["schema"] != SCHEMA_NAME:
        raise SnapshotError(f"schema: {_show(data['schema'])} is another schema; sub60 reads "
                            f"{SCHEMA_NAME!r}")
    if "schema_version" not in data:
        raise SnapshotError("schema_version: missing (required)")
    v = data["schema_version"]
    if isinstance(v, bool) or not isinstance(v, int):
        raise SnapshotError(f"schema_version: expected an integer, got {_show(v)}")
    if v > SCHEMA_VERSION:
        raise SnapshotError(f"schema_version: {v} is a future schema version; this sub60 "
                            f"({sub60_version()}) reads up to {SCHEMA_VERSION}; update sub60")
    if v < 1:
        raise SnapshotError(f"schema_version: {v} is not a schema version (1 to {SCHEMA_VERSION})")


def _settings_from_dict(data: Any) -> SnapshotSettings:
    _check_schema(data)
    o = _Obj(data, "", _TOP_FIELDS, _TOP_REQUIRED)
    version = created = title = note = None
    if o.has("sub60_version"):
        version = o.text("sub60_version", 64)
        if not _VERSION_TEXT.fullmatch(version):
            raise SnapshotError(f"sub60_version: {_show(version)} is not a version string")
    if o.has("created_utc"):
        created = o.text("created_utc", 40)
        _parse_utc(created)
    if o.has("title"):
        title = o.text("title", MAX_TITLE_CHARS)
    if o.has("note"):
        note = o.text("note", MAX_NOTE_CHARS, multiline=True)
    design = _design(o.data["design"], "design")
    b = _Obj(o.data["bias"], "bias", ("vg_V", "vd_V"), ("vg_V", "vd_V"))
    try:
        vg, vd = check_bias(b.data["vg_V"], b.data["vd_V"])
    except ValueError as exc:
        raise SnapshotError(f"bias.{exc}") from None
    sweep = _transfer_sweep(o.data["transfer_sweep"], "transfer_sweep")
    output = _output_sweep(o.data["output_sweep"], "output_sweep")
    ms = _Obj(o.data["metric_settings"], "metric_settings", ("vdd_V", "ioff_target_uA_per_um"),
              ("vdd_V", "ioff_target_uA_per_um"))
    metric_settings = MetricSettings(
        ms.number("vdd_V", *VDD_RANGE_V, "V"),
        ms.number("ioff_target_uA_per_um", *IOFF_TARGET_RANGE_UA_PER_UM, "uA/um"))
    model = ModelSettings()
    if o.has("model"):
        mo = _Obj(o.data["model"], "model", ("resolution", "tunnelling_model"),
                  ("resolution", "tunnelling_model"))
        name = mo.text("tunnelling_model", 40)
        if name not in TUNNELLING_MODELS:
            raise SnapshotError(f"model.tunnelling_model: {_show(name)} not allowed; allowed "
                                + ", ".join(repr(m) for m in TUNNELLING_MODELS))
        model = ModelSettings(mo.number("resolution", *RESOLUTION_RANGE), name)
    pinned: list[PinnedDesign] = []
    if o.has("pinned"):
        pins = o.data["pinned"]
        if not isinstance(pins, list):
            raise SnapshotError(f"pinned: expected an array, got {_kind(pins)}")
        if len(pins) > MAX_PINNED:
            raise SnapshotError(f"pinned: {len(pins)} pinned designs; the limit is {MAX_PINNED}")
        for i, item in enumerate(pins):
            path = f"pinned[{i}]"
            po = _Obj(item, path, ("name", "design", "transfer_sweep"), ("name", "design"))
            name = po.text("name", MAX_NAME_CHARS)
            ps = (_transfer_sweep(po.data["transfer_sweep"], po.at("transfer_sweep"))
                  if po.has("transfer_sweep") else None)
            if any(p.name == name for p in pinned):
                raise SnapshotError(f"{po.at('name')}: {_show(name)} names another pinned "
                                    "design too")
            pinned.append(PinnedDesign(name, _design(po.data["design"], po.at("design")), ps))
    stored = _stored(o.data["stored"], "stored", len(pinned)) if o.has("stored") else None
    return _build(design=design, bias=BiasSettings(vg, vd), transfer_sweep=sweep,
                  output_sweep=output, metric_settings=metric_settings, model=model,
                  pinned=tuple(pinned), title=title, note=note, sub60_version=version,
                  created_utc=created, stored=stored)


def _parse_utc(text: str) -> _dt.datetime:
    try:
        t = _dt.datetime.fromisoformat(text)
    except ValueError:
        raise SnapshotError(f"created_utc: {_show(text)} is not an ISO 8601 time") from None
    if t.utcoffset() != _dt.timedelta(0):
        raise SnapshotError(f"created_utc: {_show(text)} must be UTC (end in Z or +00:00)")
    return t


def _validated(s: SnapshotSettings) -> None:
    """Validate settings built in code by a round trip through the strict reader, and
    keep the reader's normalised values."""
    if not isinstance(s.design, Design):
        raise SnapshotError(f"design: expected a Design, got {type(s.design).__name__}")
    try:
        doc = _settings_to_dict(s)
    except (AttributeError, TypeError) as exc:
        raise SnapshotError(f"settings: malformed ({exc})") from None
    clean = _settings_from_dict(doc)
    for f in dataclasses.fields(SnapshotSettings):  # normalised values (floats, names)
        object.__setattr__(s, f.name, getattr(clean, f.name))


def _build(**fields: Any) -> SnapshotSettings:
    """A SnapshotSettings of values the reader has just validated (skips __post_init__,
    which would validate them again, endlessly)."""
    obj = object.__new__(SnapshotSettings)
    for f in dataclasses.fields(SnapshotSettings):
        object.__setattr__(obj, f.name, fields[f.name])
    return obj


# ---------------------------------------------------------------------- bytes -> settings
def _parse_json(raw: bytes, what: str) -> Any:
    """Strict JSON: UTF-8, no NaN/Infinity, no overflowing numbers, no repeated keys."""
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise SnapshotError(f"{what}: not UTF-8 text (bad byte at offset {exc.start})") from None

    def constant(name: str) -> float:
        raise SnapshotError(f"{what}: {name} is not allowed; numbers must be finite")

    def parse_float(s: str) -> float:
        v = float(s)
        if not math.isfinite(v):
            raise SnapshotError(f"{what}: the number {s[:40]} is too large (not finite)")
        return v

    def parse_int(s: str) -> int:
        if len(s.lstrip("-")) > 30:
            raise SnapshotError(f"{what}: the integer {s[:40]} is too large")
        return int(s)

    def pairs(items: list[tuple[str, Any]]) -> dict[str, Any]:
        out: dict[str, Any] = {}
        for k, v in items:
            if k in out:
                raise SnapshotError(f"{what}: the key {k!r} appears twice in one object")
            out[k] = v
        return out

    try:
        return json.loads(text, parse_constant=constant, parse_float=parse_float,
                          parse_int=parse_int, object_pairs_hook=pairs)
    except json.JSONDecodeError as exc:
        raise SnapshotError(f"{what}: not valid JSON ({exc.msg} at line {exc.lineno} "
                            f"column {exc.colno})") from None
    except RecursionError:
        raise SnapshotError(f"{what}: JSON nested too deeply") from None


def _mb(n: int) -> str:
    return f"{n / 1024 / 1024:.3g} MB"


def _over(what: str, size: int, limit: int) -> SnapshotError:
    return SnapshotError(f"{what}: {size} bytes, over the limit of {_mb(limit)} ({limit} bytes)")


_SAFE_NAME = re.compile(r"[A-Za-z0-9_][A-Za-z0-9._-]*(/[A-Za-z0-9_][A-Za-z0-9._-]*)*/?")


def _check_member(info: zipfile.ZipInfo) -> None:
    name = info.filename
    if "\\" in name:
        raise SnapshotError(f"zip member {name!r}: backslash in the path is not allowed")
    if name.startswith("/"):
        raise SnapshotError(f"zip member {name!r}: absolute path is not allowed")
    if re.match(r"[A-Za-z]:", name):
        raise SnapshotError(f"zip member {name!r}: drive letter in the path is not allowed")
    if ".." in name.split("/"):
        raise SnapshotError(f"zip member {name!r}: '..' in the path is not allowed")
    if not _SAFE_NAME.fullmatch(name):
        raise SnapshotError(f"zip member {name!r}: unusual characters in the path; "
                            "allowed are letters, digits, '.', '_', '-' and '/'")
    mode = info.external_attr >> 16
    if stat.S_ISLNK(mode):
        raise SnapshotError(f"zip member {name!r}: symbolic links are not allowed")
    if info.flag_bits & 0x1:
        raise SnapshotError(f"zip member {name!r}: encrypted members are not supported")


def _settings_from_zip(data: bytes, max_settings_bytes: int) -> tuple[bytes, list[str]]:
    """The raw settings.json of a zip, read in memory; checks every member's header."""
    try:
        zf = zipfile.ZipFile(io.BytesIO(data))
    except (zipfile.BadZipFile, zipfile.LargeZipFile, ValueError, EOFError) as exc:
        raise SnapshotError(f"snapshot: not a valid zip archive ({exc})") from None
    with zf:
        infos = zf.infolist()
        if len(infos) > MAX_MEMBERS:
            raise SnapshotError(f"snapshot: {len(infos)} zip members; the limit is {MAX_MEMBERS}")
        seen: set[str] = set()
        total = 0
        for info in infos:
            _check_member(info)
            key = info.filename.lower()
            if key in seen:
                raise SnapshotError(f"zip member {info.filename!r}: appears twice in the archive "
                                    "(names that differ only in case count as one)")
            seen.add(key)
            total += info.file_size
        if total > MAX_UNCOMPRESSED_BYTES:
            raise SnapshotError(f"snapshot: members expand to {total} bytes, over the limit of "
                                f"{_mb(MAX_UNCOMPRESSED_BYTES)} (possible zip bomb)")
        names = [i.filename for i in infos]
        matches = [i for i in infos if i.filename == SETTINGS_MEMBER]
        if not matches:
            raise SnapshotError(f"snapshot: missing {SETTINGS_MEMBER} (the archive holds "
                                + (", ".join(names[:8]) or "nothing") + ")")
        info = matches[0]
        if info.compress_type not in (zipfile.ZIP_STORED, zipfile.ZIP_DEFLATED):
            raise SnapshotError(f"zip member {SETTINGS_MEMBER!r}: unsupported compression "
                                f"(method {info.compress_type}); use deflate or none")
        if info.file_size > max_settings_bytes:
            raise _over(SETTINGS_MEMBER, info.file_size, max_settings_bytes)
        try:
            with zf.open(info) as fh:  # in memory; capped whatever the header claims
                raw = fh.read(max_settings_bytes + 1)
        except (zipfile.BadZipFile, OSError, EOFError, ValueError) as exc:
            raise SnapshotError(f"zip member {SETTINGS_MEMBER!r}: cannot be read ({exc})") from None
        if len(raw) > max_settings_bytes:
            raise SnapshotError(f"{SETTINGS_MEMBER}: over the limit of {_mb(max_settings_bytes)} "
                                "(more data than its zip header states)")
        return raw, names


@dataclass
class ImportReport:
    """What an import found.

    source : "zip" or "settings.json"; members : names inside a zip;
    file_version : sub60 version that wrote the file (None when not stated);
    current_version : this sub60; version_matches : the two are equal;
    has_stored : the file holds figures of merit to compare;
    verified : a recomputation was made; differences : what it found (empty = match).
    """

    source: str
    members: list[str]
    file_version: str | None
    current_version: str
    has_stored: bool
    verified: bool = False
    differences: list[Difference] = field(default_factory=list)

    @property
    def version_matches(self) -> bool:
        return self.file_version == self.current_version

    @property
    def metrics_match(self) -> bool | None:
        """True/False after a verification with stored results; None otherwise."""
        if not (self.verified and self.has_stored):
            return None
        return not self.differences

    def lines(self) -> list[str]:
        """A short human-readable account."""
        out = [f"read {self.source}"
               + (f" ({len(self.members)} members)" if self.source == "zip" else "")]
        if self.file_version is None:
            out.append(f"written by an unstated sub60 version; this is {self.current_version}")
        elif self.version_matches:
            out.append(f"written by this sub60 version ({self.current_version})")
        else:
            out.append(f"written by sub60 {self.file_version}; this is {self.current_version}: "
                       "differences are reported, not treated as errors")
        if not self.has_stored:
            out.append("no stored figures of merit to compare")
        elif not self.verified:
            out.append("figures of merit not recomputed yet")
        elif not self.differences:
            out.append(f"recomputed figures of merit match the stored ones "
                       f"(relative {METRIC_REL_TOL:g})")
        else:
            out.append(f"{len(self.differences)} recomputed value(s) differ from the stored ones:")
            out.extend(f"  {d}" for d in self.differences)
        return out


def import_snapshot(data: bytes, max_bytes: int = MAX_SNAPSHOT_BYTES, *,
                    max_settings_bytes: int = MAX_SETTINGS_BYTES, verify: bool = False,
                    simulator: Simulator | None = None) -> tuple[SnapshotSettings, ImportReport]:
    """Read a snapshot zip or a bare settings.json, strictly; nothing is written.

    Parameters
    ----------
    data : bytes
        the file's content (zip archive or settings.json text).
    max_bytes : int
        largest accepted input [bytes].
    max_settings_bytes : int
        largest accepted settings.json [bytes].
    verify : bool
        also recompute the figures of merit and compare (`verify_snapshot`) [-].
    simulator : Simulator or None
        for the recomputation; None: a fresh one with the snapshot's model settings.

    Returns
    -------
    (SnapshotSettings, ImportReport)

    Raises
    ------
    SnapshotError
        naming the problem: not a zip/JSON, too large, zip tricks, schema, types,
        NaN/inf, unknown fields, out-of-range values.
    """
    if not isinstance(data, (bytes, bytearray, memoryview)):
        raise SnapshotError(f"snapshot: expected bytes, got {type(data).__name__}")
    data = bytes(data)
    if not data:
        raise SnapshotError("snapshot: the file is empty")
    if len(data) > max_bytes:
        raise _over("snapshot", len(data), max_bytes)
    members: list[str] = []
    if data[:2] == b"PK":
        raw, members = _settings_from_zip(data, max_settings_bytes)
        source = "zip"
    elif data.lstrip(b" \t\r\n\xef\xbb\xbf")[:1] == b"{":
        if len(data) > max_settings_bytes:
            raise _over(SETTINGS_MEMBER, len(data), max_settings_bytes)
        raw, source = data, SETTINGS_MEMBER
    else:
        raise SnapshotError("snapshot: neither a zip archive nor a JSON settings file")
    doc = _parse_json(raw, SETTINGS_MEMBER)
    try:
        settings = _settings_from_dict(doc)
    except SnapshotError as exc:
        raise SnapshotError(f"{SETTINGS_MEMBER}: {exc}") from None
    report = ImportReport(source, members, settings.sub60_version, sub60_version(),
                          settings.stored is not None)
    if verify:
        report.differences = verify_snapshot(settings, simulator)
        report.verified = True
    return settings, report


# ---------------------------------------------------------------------- computation
@dataclass(frozen=True)
class SnapshotResults:
    """Everything computed for one snapshot."""

    settings: SnapshotSettings
    bias_point: BiasPoint
    transfer: TransferCurve
    twin: TransferCurve
    pinned: tuple[TransferCurve, ...]
    output: tuple[OutputCurve, ...]

    def stored(self) -> StoredResults:
        """The results kept in settings.json."""
        w = self.bias_point.window_eV
        return StoredResults(
            CurveRecord.from_metrics(self.transfer.metrics),
            CurveRecord.from_metrics(self.twin.metrics),
            tuple(CurveRecord.from_metrics(c.metrics) for c in self.pinned),
            float(self.bias_point.current_uA_per_um),
            None if w is None else (float(w[0]), float(w[1])))


def _simulator_for(settings: SnapshotSettings, simulator: Simulator | None) -> Simulator:
    m = settings.model
    if simulator is None:
        return Simulator(resolution=m.resolution, model=m.tunnelling_model)
    if simulator.resolution != m.resolution or simulator.model != m.tunnelling_model:
        raise ValueError(f"simulator: resolution {simulator.resolution:g} / model "
                         f"{simulator.model!r} differ from the snapshot's {m.resolution:g} / "
                         f"{m.tunnelling_model!r}")
    return simulator


def _transfers(settings: SnapshotSettings, sim: Simulator
               ) -> tuple[TransferCurve, TransferCurve, tuple[TransferCurve, ...]]:
    ms = settings.metric_settings
    kw = {"ioff_target_uA_per_um": ms.ioff_target_uA_per_um, "vdd_V": ms.vdd_V}

    def sweep(design: Design, s: TransferSweep) -> TransferCurve:
        return sim.transfer_curve(design, s.gate_voltages(), s.vd_V, **kw)

    main = sweep(settings.design, settings.transfer_sweep)
    twin = sweep(settings.design.twin(), settings.transfer_sweep)
    pinned = tuple(sweep(p.design, p.transfer_sweep or settings.transfer_sweep)
                   for p in settings.pinned)
    return main, twin, pinned


def compute_results(settings: SnapshotSettings, simulator: Simulator | None = None,
                    include_output: bool = True) -> SnapshotResults:
    """Solve everything a snapshot shows, in the canonical order (see the module notes).

    Parameters
    ----------
    settings : SnapshotSettings
    simulator : Simulator or None
        None (recommended): a fresh simulator with the snapshot's model settings, so that
        an export and a later recomputation follow the same continuation path.
    include_output : bool
        also the output curves [-].
    """
    sim = _simulator_for(settings, simulator)
    main, twin, pinned = _transfers(settings, sim)
    bp = sim.solve_bias(settings.design, settings.bias.vg_V, settings.bias.vd_V)
    output: tuple[OutputCurve, ...] = ()
    if include_output:
        vd = settings.output_sweep.drain_voltages()
        output = tuple(sim.output_curve(settings.design, v, vd) for v in settings.output_sweep.vg_V)
    return SnapshotResults(settings, bp, main, twin, pinned, output)


@dataclass(frozen=True)
class Difference:
    """One recomputed value that differs from the stored one."""

    where: str
    quantity: str
    stored: float | None
    recomputed: float | None

    @property
    def relative(self) -> float | None:
        if self.stored is None or self.recomputed is None:
            return None
        scale = max(abs(self.stored), abs(self.recomputed))
        return abs(self.stored - self.recomputed) / scale if scale else 0.0

    def __str__(self) -> str:
        def fmt(v: float | None) -> str:
            return "undefined" if v is None else f"{v:.12g}"

        rel = self.relative
        tail = "" if rel is None else f" (relative difference {rel:.2e})"
        return (f"{self.where}: {self.quantity} stored {fmt(self.stored)}, "
                f"recomputed {fmt(self.recomputed)}{tail}")


def _agree(a: float | None, b: float | None) -> bool:
    if a is None or b is None:
        return a is None and b is None
    return math.isclose(a, b, rel_tol=METRIC_REL_TOL, abs_tol=METRIC_ABS_TOL)


def compare_stored(stored: StoredResults, fresh: StoredResults,
                   pinned_names: tuple[str, ...] = ()) -> list[Difference]:
    """Differences between two sets of stored results (relative `METRIC_REL_TOL`)."""
    out: list[Difference] = []
    pairs = [("design", stored.design, fresh.design), ("twin", stored.twin, fresh.twin)]
    for i, (a, b) in enumerate(zip(stored.pinned, fresh.pinned, strict=True)):
        name = pinned_names[i] if i < len(pinned_names) else str(i)
        pairs.append((f"pinned {name!r}", a, b))
    for where, a, b in pairs:
        for k in Metrics.METRIC_NAMES:
            if not _agree(a.metrics.get(k), b.metrics.get(k)):
                out.append(Difference(where, k, a.metrics.get(k), b.metrics.get(k)))
    if not _agree(stored.bias_current_uA_per_um, fresh.bias_current_uA_per_um):
        out.append(Difference("bias point", "current_uA_per_um", stored.bias_current_uA_per_um,
                              fresh.bias_current_uA_per_um))
    sw, fw = stored.window_eV, fresh.window_eV
    for i, label in enumerate(("window_e_min_eV", "window_e_max_eV")):
        a = None if sw is None else sw[i]
        b = None if fw is None else fw[i]
        if not _agree(a, b):
            out.append(Difference("bias point", label, a, b))
    return out


def verify_snapshot(settings: SnapshotSettings,
                    simulator: Simulator | None = None) -> list[Difference]:
    """Recompute the stored figures of merit and list the differences (empty = match).

    Settings without stored results give an empty list (nothing to compare).
    """
    if settings.stored is None:
        return []
    sim = _simulator_for(settings, simulator)
    main, twin, pinned = _transfers(settings, sim)
    bp = sim.solve_bias(settings.design, settings.bias.vg_V, settings.bias.vd_V)
    fresh = SnapshotResults(settings, bp, main, twin, pinned, ()).stored()
    return compare_stored(settings.stored, fresh, tuple(p.name for p in settings.pinned))


# ---------------------------------------------------------------------- export
def _fmt(x: float) -> str:
    return f"{x:.10g}" if math.isfinite(x) else ""


def _csv(header: list[str], columns: list[np.ndarray]) -> bytes:
    """CSV text: one header row with units in the names, then rows; non-finite -> empty."""
    n = {len(c) for c in columns}
    if len(n) > 1:
        raise ValueError("columns of different lengths")
    rows = [",".join(header)]
    for row in zip(*columns, strict=True):
        rows.append(",".join(_fmt(float(x)) for x in row))
    return ("\n".join(rows) + "\n").encode("utf-8")


def bands_csv(bp: BiasPoint) -> bytes:
    """x_nm, every subband edge [eV], source and drain Fermi levels [eV]."""
    x = np.asarray(bp.x_nm, float)
    head = ["x_nm"] + [f"{lab}_eV" for lab in bp.conduction_labels] \
        + [f"{lab}_eV" for lab in bp.valence_labels] + ["efs_eV", "efd_eV"]
    cols = [x, *np.asarray(bp.conduction_eV, float), *np.asarray(bp.valence_eV, float),
            np.full(x.shape, bp.efs_eV), np.full(x.shape, bp.efd_eV)]
    return _csv(head, cols)


def spectrum_csv(bp: BiasPoint) -> bytes:
    """energy_eV, J(E) [uA/um per eV], T(E) at zero transverse momentum [-]."""
    s = bp.spectrum
    return _csv(["energy_eV", "current_density_uA_per_um_per_eV", "transmission_1"],
                [np.asarray(s.energy_eV, float), np.asarray(s.current_density, float),
                 np.asarray(s.transmission, float)])


def transfer_csv(main: TransferCurve, twin: TransferCurve) -> bytes:
    """vg_V, Id and point swing of the design and of its twin."""
    return _csv(["vg_V", "design_id_uA_per_um", "design_ss_mV_per_dec", "twin_id_uA_per_um",
                 "twin_ss_mV_per_dec"],
                [main.vg_V, main.id_uA_per_um, main.ss_mV_per_dec, twin.id_uA_per_um,
                 twin.ss_mV_per_dec])


def pinned_csv(names: tuple[str, ...], curves: tuple[TransferCurve, ...]) -> bytes:
    """Long format: pin index, vg_V, Id, point swing (names in settings.json)."""
    idx, vg, cur, ss = [], [], [], []
    for i, c in enumerate(curves):
        idx.append(np.full(c.vg_V.shape, i + 1.0))
        vg.append(c.vg_V)
        cur.append(c.id_uA_per_um)
        ss.append(c.ss_mV_per_dec)
    del names  # names may hold commas; the index refers to settings.json "pinned"
    return _csv(["pin_index_1", "vg_V", "id_uA_per_um", "ss_mV_per_dec"],
                [np.concatenate(a) if a else np.array([]) for a in (idx, vg, cur, ss)])


def output_csv(curves: tuple[OutputCurve, ...]) -> bytes:
    """vd_V and one Id column per gate voltage."""
    head = ["vd_V"] + [f"id_uA_per_um_at_vg_{c.vg_V:g}_V" for c in curves]
    return _csv(head, [curves[0].vd_V] + [c.id_uA_per_um for c in curves])


def readme_text(settings: SnapshotSettings, members: list[str]) -> str:
    """README.txt of a snapshot: the files and the model caution."""
    d = settings.design
    lines = [
        "sub60 snapshot",
        "==============",
        "",
        f"Written by sub60 {settings.sub60_version} at {settings.created_utc}."
        + (f" Title: {settings.title}" if settings.title else ""),
        f"Design: {d.material}, {d.gate_layout} gate, {d.source_type}+ source "
        f"({'tunnel FET' if d.source_type == 'p' else 'MOSFET'}), body {d.body_thickness_nm:g} nm, "
        f"gate length {d.gate_length_nm:g} nm, T = {d.temperature_K:g} K.",
        "",
        "CAUTION: " + MODEL_CAUTION,
        "",
        "Files",
        "-----",
        "settings.json       the view settings (design, bias, sweeps, figure-of-merit",
        "                    settings, pinned designs) and the figures of merit found at",
        "                    export. Open it in sub60 (or: sub60 snapshot check FILE) to",
        "                    restore the view and recompute.",
        "bands.csv           band diagram at the bias point: position x_nm, each subband",
        "                    edge (C = conduction, HH/LH = heavy/light hole) [eV], source",
        "                    and drain Fermi levels efs_eV, efd_eV.",
        "spectrum.csv        band-to-band spectral current density J(E) [uA/um per eV] and",
        "                    the transmission of the dominant subband pair at zero",
        "                    transverse momentum [-].",
        "transfer.csv        Id-Vg at the transfer drain voltage: the design (design_*) and",
        "                    its MOSFET twin, the same device with an n+ source (twin_*);",
        "                    currents per width [uA/um], point swing [mV/dec]; empty where",
        "                    the swing is undefined.",
        "output.csv          Id-Vd [uA/um], one column per gate voltage.",
    ]
    if "pinned.csv" in members:
        lines += ["pinned.csv          Id-Vg of each pinned design; pin_index_1 counts the",
                  "                    entries of settings.json \"pinned\" from 1."]
    lines += [
        "figures/*.png, .svg static figures: band diagram with the tunnel window shaded,",
        "                    spectrum, transfer curves with the (ln 10)kT/q reference, output",
        "                    curves; each caption states the key settings.",
        "plots.html          the same plots, interactive; opens offline in a browser.",
        "",
        "Voltages [V], energies [eV] with the source Fermi level at 0 eV, currents per",
        "micrometre of width [uA/um].",
        "",
    ]
    return "\n".join(lines)


def _utc_now() -> str:
    now = _dt.datetime.now(_dt.UTC).replace(microsecond=0)
    return now.isoformat().replace("+00:00", "Z")


def stamp(settings: SnapshotSettings, results: SnapshotResults,
          created_utc: str | None = None) -> SnapshotSettings:
    """Settings with the export fields filled in: version, creation time, stored results."""
    return settings.replace(sub60_version=sub60_version(),
                            created_utc=created_utc or _utc_now(), stored=results.stored())


def snapshot_members(results: SnapshotResults, created_utc: str | None = None
                     ) -> dict[str, bytes]:
    """File name -> content of every member of the snapshot (deterministic names)."""
    from sub60.app import figures

    settings = stamp(results.settings, results, created_utc)
    results = dataclasses.replace(results, settings=settings)
    members: dict[str, bytes] = {SETTINGS_MEMBER: settings.to_json().encode("utf-8")}
    members["bands.csv"] = bands_csv(results.bias_point)
    members["spectrum.csv"] = spectrum_csv(results.bias_point)
    members["transfer.csv"] = transfer_csv(results.transfer, results.twin)
    if results.output:
        members["output.csv"] = output_csv(results.output)
    if results.pinned:
        members["pinned.csv"] = pinned_csv(tuple(p.name for p in settings.pinned),
                                           results.pinned)
    for name, content in figures.static_figures(results).items():
        members[f"figures/{name}"] = content
    members["plots.html"] = figures.interactive_page(results).encode("utf-8")
    members["README.txt"] = readme_text(settings, list(members)).encode("utf-8")
    order = [SETTINGS_MEMBER, "README.txt"]
    return {k: members[k] for k in order + sorted(k for k in members if k not in order)}


def export_snapshot(settings: SnapshotSettings, simulator: Simulator | None = None, *,
                    created_utc: str | None = None) -> bytes:
    """The snapshot zip of a view: settings, CSV curves, figures, an offline page.

    Parameters
    ----------
    settings : SnapshotSettings
    simulator : Simulator or None
        None (recommended): a fresh simulator, see `compute_results`.
    created_utc : str or None
        creation time to record (ISO 8601, UTC); None: now.

    Returns
    -------
    bytes
        the zip archive (deflate; member times are the creation time).
    """
    results = compute_results(settings, simulator)
    members = snapshot_members(results, created_utc)
    stamped = json.loads(members[SETTINGS_MEMBER])["created_utc"]
    when = _parse_utc(stamped)
    date_time = (max(when.year, 1980), when.month, when.day, when.hour, when.minute, when.second)
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, content in members.items():
            info = zipfile.ZipInfo(name, date_time)
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = 0o644 << 16
            zf.writestr(info, content)
    return buf.getvalue()


# ---------------------------------------------------------------------- presets
def _preset_files() -> dict[str, Path]:
    if not PRESET_DIR.is_dir():
        return {}
    return {p.stem: p for p in sorted(PRESET_DIR.glob("*.json"))}


def load_preset(name: str) -> SnapshotSettings:
    """The settings of a demo preset of assets/presets/ (SnapshotError if unknown/invalid)."""
    files = _preset_files()
    if name not in files:
        known = ", ".join(files) or "none found in " + str(PRESET_DIR)
        raise SnapshotError(f"preset {name!r}: unknown; known presets: {known}")
    settings, _ = import_snapshot(files[name].read_bytes())
    return settings


def list_presets(on_error: Callable[[str, Exception], None] | None = None
                 ) -> dict[str, SnapshotSettings]:
    """Every readable preset by name. A preset that fails to load is skipped with a
    warning (or passed to ``on_error``), so one bad file does not take the others down;
    an absent presets folder gives an empty dictionary."""
    out: dict[str, SnapshotSettings] = {}
    for name in _preset_files():
        try:
            out[name] = load_preset(name)
        except (SnapshotError, OSError) as exc:
            if on_error is not None:
                on_error(name, exc)
            else:
                warnings.warn(f"preset {name!r} skipped: {exc}", stacklevel=2)
    return out
