"""The snapshot settings: one view's settings as frozen records, their JSON form and its
strict validation (schema ``"sub60.snapshot"``, version 4; the file layout is described
in `app.snapshot`).

Versions: 1 stored the design fields of sub60 0.2.0 (`DESIGN_FIELDS_V1`); 2 added the
non-ideal physics and the alloy composition (`DESIGN_FIELDS_V2`); 3 stores every field of
`physics.design.Design`, including the heterojunction source (`HETEROJUNCTION_FIELDS`);
fields added to the design since, each with a default (`OPTIONAL_DESIGN_FIELDS`: the
charge model), may be absent from a version-3 or later file and then take their
default. 4 adds the optional ``measured`` member: a measured file's curves, the freed
knobs, and a fit's settings and result (`app.snapshot_measured`).
An older file still opens: the fields it predates take their defaults (off, a
homojunction, or as before), and `added_design_fields` names them so the reader can say
so.

`SnapshotSettings.from_dict` reads a parsed settings.json strictly: unknown fields,
missing fields, wrong types, non-finite numbers and out-of-range values raise
`SnapshotError` naming the field; a record made in code is validated the same way.
UI-free: the physics design record and the standard library only.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import importlib.metadata
import json
import math
import re
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from sub60.app.number_rules import IOFF_TARGET_RANGE_UA_PER_UM, VDD_RANGE_V
from sub60.app.snapshot_fields import (
    FieldReader,
    SnapshotError,
    kind_of,
    read_number,
    show_value,
)
from sub60.app.snapshot_measured import MeasuredSnapshot, measured_from_dict, measured_to_dict
from sub60.app.state import DEFAULT_GATE_SWEEP, sweep_voltages
from sub60.physics import FIELD_RANGES, TUNNELLING_MODELS, VD_RANGE_V, VG_RANGE_V, Design, Metrics, check_bias

# ---------------------------------------------------------------------- constants
SCHEMA_NAME = "sub60.snapshot"
SCHEMA_VERSION = 4
#: First version that may hold a ``measured`` member.
MEASURED_SINCE_VERSION = 4
#: The design fields a version-1 file holds (exactly these, every one required).
DESIGN_FIELDS_V1: tuple[str, ...] = (
    "material", "source_type", "source_doping_cm3", "channel_doping_cm3", "drain_doping_cm3",
    "doping_gradient_nm_per_dec", "body_thickness_nm", "gate_length_nm", "source_length_nm",
    "drain_length_nm", "oxide_thickness_nm", "oxide", "oxide_permittivity",
    "gate_workfunction_eV", "gate_layout", "buried_oxide_thickness_nm",
    "gate_source_offset_nm", "temperature_K")
#: The design fields version 3 added: the heterojunction source.
HETEROJUNCTION_FIELDS: tuple[str, ...] = ("source_material", "source_composition_x",
                                          "heterointerface_nm")
#: Design fields added after version 3 was published, each with a default that keeps
#: what older files meant: a file of any version may omit them (no version bump).
OPTIONAL_DESIGN_FIELDS: tuple[str, ...] = ("charge_model",)
#: The design fields a version-2 file holds (exactly these, every one required).
DESIGN_FIELDS_V2: tuple[str, ...] = tuple(f for f in FIELD_RANGES
                                          if f not in HETEROJUNCTION_FIELDS + OPTIONAL_DESIGN_FIELDS)
#: Version written when the installed package metadata cannot be read.
FALLBACK_VERSION = "0.2.0+unknown"

#: Limits of the settings (engineering choices, no source); the Vdd and Ioff target ranges
#: are shared with every other door (`app.number_rules`).
VG_POINTS_RANGE = (3, 201)
VD_POINTS_RANGE = (2, 101)
MAX_OUTPUT_CURVES = 8
MAX_PINNED = 8
RESOLUTION_RANGE = (0.5, 3.0)
MAX_TITLE_CHARS = 200
MAX_NOTE_CHARS = 4000
MAX_NAME_CHARS = 80

SETTINGS_MEMBER = "settings.json"
MODEL_CAUTION = ("sub60 is a design-exploration model (semiclassical charge with "
                 "confinement-shifted band edges or, as chosen, from the 2D subbands, WKB or "
                 "exact two-band tunnelling, ballistic "
                 "Landauer current; band tails, traps, series resistance and gap narrowing only "
                 "as switched on, by simple published models), not calibrated TCAD: its numbers "
                 "do not replace calibrated device simulation or measurements.")


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
    [-], drain voltage [V]. The default is the page's and the command line's
    (`app.state.DEFAULT_GATE_SWEEP`); a file always states its own."""

    vg_start_V: float = DEFAULT_GATE_SWEEP.start_V
    vg_stop_V: float = DEFAULT_GATE_SWEEP.stop_V
    vg_points: int = DEFAULT_GATE_SWEEP.points
    vd_V: float = 0.3

    def gate_voltages(self) -> np.ndarray:
        """Gate voltages of the sweep [V]."""
        return sweep_voltages(self.vg_start_V, self.vg_stop_V, self.vg_points)


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
    #: The measured-curve card's file and fit (None: no file open); not compared (it
    #: holds arrays), compare `measured_to_dict` of both.
    measured: MeasuredSnapshot | None = field(default=None, compare=False)
    #: Schema version of the file these settings were read from (None: made in code;
    #: an export always writes `SCHEMA_VERSION`).
    schema_version: int | None = field(default=None, compare=False)

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
    if s.measured is not None:
        out["measured"] = measured_to_dict(s.measured)
    return out



# ---------------------------------------------------------------------- strict reading
_VERSION_TEXT = re.compile(r"[0-9A-Za-z][0-9A-Za-z.+_-]{0,63}")


def design_fields(schema_version: int) -> tuple[str, ...]:
    """The design fields a file of ``schema_version`` must hold (`OPTIONAL_DESIGN_FIELDS`
    may come in addition)."""
    if schema_version == 1:
        return DESIGN_FIELDS_V1
    if schema_version == 2:
        return DESIGN_FIELDS_V2
    return tuple(f for f in FIELD_RANGES if f not in OPTIONAL_DESIGN_FIELDS)


#: Physics revisions that change what a stored design recomputes to, each as (the
#: design field and value it concerns, the note an import shows). Measured on the default
#: design with the README table's sweep (-0.3...0.6 V in 46, Vd 0.3 V, Ioff 1 nA/um).
PHYSICS_REVISIONS: tuple[tuple[str, str, str], ...] = (
    ("charge_model", "subbands",
     "physics revision: with charge_model 'subbands', transport now moves holes with the "
     "coupled 4x4 k.p in-plane dispersion the charge uses (before: the parabolic band-edge "
     "mass); snapshots written before it recompute slightly differently (default design: "
     "I60 -1.4 %, SS_min -0.09 %, SS_avg +0.02 %, Ion +0.01 %, Voff -0.03 mV); "
     "'semiclassical' designs are unchanged"),
)


def physics_notes(design: Design) -> tuple[str, ...]:
    """The `PHYSICS_REVISIONS` notes that concern a stored design."""
    return tuple(note for name, value, note in PHYSICS_REVISIONS
                 if getattr(design, name, None) == value)


def added_design_fields(schema_version: int, design: Any = None) -> tuple[str, ...]:
    """Design fields this sub60 has that a file of ``schema_version`` predates (they
    take their defaults when it is read); with the file's ``design`` object, the
    optional fields it omits count too, and those it holds do not."""
    held = set(design_fields(schema_version))
    if isinstance(design, dict):
        held |= {f for f in OPTIONAL_DESIGN_FIELDS if f in design}
    return tuple(f for f in FIELD_RANGES if f not in held)


def _design(data: Any, path: str, schema_version: int = SCHEMA_VERSION) -> Design:
    names = design_fields(schema_version)
    # every field of its version: a stored design must not lean on defaults (the
    # optional fields, added later with defaults, may be absent)
    known = names + tuple(f for f in OPTIONAL_DESIGN_FIELDS if f not in names)
    FieldReader(data, path, known, names)
    try:
        return Design.from_dict(data)
    except ValueError as exc:
        raise SnapshotError(f"{path}.{exc}") from None
    except (TypeError, OverflowError) as exc:  # defensive: never a traceback for a file
        raise SnapshotError(f"{path}: {exc}") from None


def _transfer_sweep(data: Any, path: str) -> TransferSweep:
    keys = ("vg_start_V", "vg_stop_V", "vg_points", "vd_V")
    o = FieldReader(data, path, keys, keys)
    lo = o.number("vg_start_V", *VG_RANGE_V, "V")
    hi = o.number("vg_stop_V", *VG_RANGE_V, "V")
    if not lo < hi:
        raise SnapshotError(f"{o.at('vg_stop_V')}: {hi:g} V must be above vg_start_V = {lo:g} V")
    return TransferSweep(lo, hi, o.integer("vg_points", *VG_POINTS_RANGE),
                         o.number("vd_V", *VD_RANGE_V, "V"))


def _output_sweep(data: Any, path: str) -> OutputSweep:
    keys = ("vg_V", "vd_start_V", "vd_stop_V", "vd_points")
    o = FieldReader(data, path, keys, keys)
    vgs = o.data["vg_V"]
    if not isinstance(vgs, list):
        raise SnapshotError(f"{o.at('vg_V')}: expected an array of gate voltages, got {kind_of(vgs)}")
    if not 1 <= len(vgs) <= MAX_OUTPUT_CURVES:
        raise SnapshotError(f"{o.at('vg_V')}: {len(vgs)} gate voltages; allowed 1 to "
                            f"{MAX_OUTPUT_CURVES}")
    values = tuple(read_number(v, f"{o.at('vg_V')}[{i}]", *VG_RANGE_V, "V") for i, v in enumerate(vgs))
    if len(set(values)) != len(values):
        raise SnapshotError(f"{o.at('vg_V')}: gate voltages repeat")
    lo = o.number("vd_start_V", *VD_RANGE_V, "V")
    hi = o.number("vd_stop_V", *VD_RANGE_V, "V")
    if not lo < hi:
        raise SnapshotError(f"{o.at('vd_stop_V')}: {hi:g} V must be above vd_start_V = {lo:g} V")
    return OutputSweep(values, lo, hi, o.integer("vd_points", *VD_POINTS_RANGE))


def _curve_record(data: Any, path: str) -> CurveRecord:
    o = FieldReader(data, path, ("metrics", "reasons"), ("metrics", "reasons"))
    names = Metrics.METRIC_NAMES
    m = FieldReader(o.data["metrics"], o.at("metrics"), names, names)
    metrics: dict[str, float | None] = {}
    for k in names:
        v = m.data[k]
        metrics[k] = None if v is None else read_number(v, m.at(k), -math.inf, math.inf)
    r = FieldReader(o.data["reasons"], o.at("reasons"), names, ())
    reasons = {k: r.text(k, 1000) for k in r.data}
    return CurveRecord(metrics, reasons)


def _stored(data: Any, path: str, n_pinned: int) -> StoredResults:
    keys = ("design", "twin", "pinned", "bias")
    o = FieldReader(data, path, keys, keys)
    pins = o.data["pinned"]
    if not isinstance(pins, list):
        raise SnapshotError(f"{o.at('pinned')}: expected an array, got {kind_of(pins)}")
    if len(pins) != n_pinned:
        raise SnapshotError(f"{o.at('pinned')}: {len(pins)} records for {n_pinned} pinned designs")
    b = FieldReader(o.data["bias"], o.at("bias"), ("current_uA_per_um", "window_eV"),
             ("current_uA_per_um", "window_eV"))
    current = b.number("current_uA_per_um", -math.inf, math.inf, "uA/um")
    w = b.data["window_eV"]
    window = None
    if w is not None:
        if not isinstance(w, list) or len(w) != 2:
            raise SnapshotError(f"{b.at('window_eV')}: expected null or [e_min, e_max], "
                                f"got {show_value(w)}")
        lo, hi = (read_number(v, f"{b.at('window_eV')}[{i}]", -math.inf, math.inf, "eV")
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
               "pinned", "stored", "measured")
_TOP_REQUIRED = ("schema", "schema_version", "design", "bias", "transfer_sweep", "output_sweep",
                 "metric_settings")


def _check_schema(data: Any) -> None:
    if not isinstance(data, dict):
        raise SnapshotError(f"top level: expected a JSON object, got {kind_of(data)}")
    if "schema" not in data:
        raise SnapshotError(f"schema: missing; this is not a sub60 snapshot (expected schema "
                            f"{SCHEMA_NAME!r})")
    if data["schema"] != SCHEMA_NAME:
        raise SnapshotError(f"schema: {show_value(data['schema'])} is another schema; sub60 reads "
                            f"{SCHEMA_NAME!r}")
    if "schema_version" not in data:
        raise SnapshotError("schema_version: missing (required)")
    v = data["schema_version"]
    if isinstance(v, bool) or not isinstance(v, int):
        raise SnapshotError(f"schema_version: expected an integer, got {show_value(v)}")
    if v > SCHEMA_VERSION:
        raise SnapshotError(f"schema_version: {v} is a future schema version; this sub60 "
                            f"({sub60_version()}) reads up to {SCHEMA_VERSION}; update sub60")
    if v < 1:
        raise SnapshotError(f"schema_version: {v} is not a schema version (1 to {SCHEMA_VERSION})")


def _settings_from_dict(data: Any) -> SnapshotSettings:
    _check_schema(data)
    o = FieldReader(data, "", _TOP_FIELDS, _TOP_REQUIRED)
    version = created = title = note = None
    if o.has("sub60_version"):
        version = o.text("sub60_version", 64)
        if not _VERSION_TEXT.fullmatch(version):
            raise SnapshotError(f"sub60_version: {show_value(version)} is not a version string")
    if o.has("created_utc"):
        created = o.text("created_utc", 40)
        parse_utc(created)
    if o.has("title"):
        title = o.text("title", MAX_TITLE_CHARS)
    if o.has("note"):
        note = o.text("note", MAX_NOTE_CHARS, multiline=True)
    schema_version = int(o.data["schema_version"])
    design = _design(o.data["design"], "design", schema_version)
    b = FieldReader(o.data["bias"], "bias", ("vg_V", "vd_V"), ("vg_V", "vd_V"))
    try:
        vg, vd = check_bias(b.data["vg_V"], b.data["vd_V"])
    except ValueError as exc:
        raise SnapshotError(f"bias.{exc}") from None
    sweep = _transfer_sweep(o.data["transfer_sweep"], "transfer_sweep")
    output = _output_sweep(o.data["output_sweep"], "output_sweep")
    ms = FieldReader(o.data["metric_settings"], "metric_settings", ("vdd_V", "ioff_target_uA_per_um"),
              ("vdd_V", "ioff_target_uA_per_um"))
    metric_settings = MetricSettings(
        ms.number("vdd_V", *VDD_RANGE_V, "V"),
        ms.number("ioff_target_uA_per_um", *IOFF_TARGET_RANGE_UA_PER_UM, "uA/um"))
    model = ModelSettings()
    if o.has("model"):
        mo = FieldReader(o.data["model"], "model", ("resolution", "tunnelling_model"),
                  ("resolution", "tunnelling_model"))
        name = mo.text("tunnelling_model", 40)
        if name not in TUNNELLING_MODELS:
            raise SnapshotError(f"model.tunnelling_model: {show_value(name)} not allowed; allowed "
                                + ", ".join(repr(m) for m in TUNNELLING_MODELS))
        model = ModelSettings(mo.number("resolution", *RESOLUTION_RANGE), name)
    pinned: list[PinnedDesign] = []
    if o.has("pinned"):
        pins = o.data["pinned"]
        if not isinstance(pins, list):
            raise SnapshotError(f"pinned: expected an array, got {kind_of(pins)}")
        if len(pins) > MAX_PINNED:
            raise SnapshotError(f"pinned: {len(pins)} pinned designs; the limit is {MAX_PINNED}")
        for i, item in enumerate(pins):
            path = f"pinned[{i}]"
            po = FieldReader(item, path, ("name", "design", "transfer_sweep"), ("name", "design"))
            name = po.text("name", MAX_NAME_CHARS)
            ps = (_transfer_sweep(po.data["transfer_sweep"], po.at("transfer_sweep"))
                  if po.has("transfer_sweep") else None)
            if any(p.name == name for p in pinned):
                raise SnapshotError(f"{po.at('name')}: {show_value(name)} names another pinned "
                                    "design too")
            pinned.append(PinnedDesign(name, _design(po.data["design"], po.at("design"), schema_version), ps))
    stored = _stored(o.data["stored"], "stored", len(pinned)) if o.has("stored") else None
    measured = None
    if o.has("measured"):
        if schema_version < MEASURED_SINCE_VERSION:
            raise SnapshotError(f"measured: not part of a version-{schema_version} file "
                                f"(measured curves are stored from version "
                                f"{MEASURED_SINCE_VERSION})")
        measured = measured_from_dict(o.data["measured"], "measured")
    return _build(design=design, bias=BiasSettings(vg, vd), transfer_sweep=sweep,
                  output_sweep=output, metric_settings=metric_settings, model=model,
                  pinned=tuple(pinned), title=title, note=note, sub60_version=version,
                  created_utc=created, stored=stored, measured=measured,
                  schema_version=schema_version)


def parse_utc(text: str) -> _dt.datetime:
    try:
        t = _dt.datetime.fromisoformat(text)
    except ValueError:
        raise SnapshotError(f"created_utc: {show_value(text)} is not an ISO 8601 time") from None
    if t.utcoffset() != _dt.timedelta(0):
        raise SnapshotError(f"created_utc: {show_value(text)} must be UTC (end in Z or +00:00)")
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
        if f.name != "schema_version":  # where the settings came from stays as given
            object.__setattr__(s, f.name, getattr(clean, f.name))


def _build(**fields: Any) -> SnapshotSettings:
    """A SnapshotSettings of values the reader has just validated (skips __post_init__,
    which would validate them again, endlessly)."""
    obj = object.__new__(SnapshotSettings)
    for f in dataclasses.fields(SnapshotSettings):
        object.__setattr__(obj, f.name, fields[f.name])
    return obj

