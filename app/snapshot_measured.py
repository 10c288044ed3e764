"""A snapshot's measured curves and fit (schema version 4 and later): their JSON form and
its strict reading.

The ``measured`` member of settings.json holds the curves of the file the page had open
(currents already in µA/µm, as `physics.read_measured` gave them, so the original file
is not needed), the knobs the user had freed, and, when a fit was run, its settings
(free knobs, bounds, floor, lattice step, most evaluations) and its result (the fitted
and starting designs, each knob with its uncertainty or why it is not determined, the
correlation matrix, the fitted current at each measured point, the optimiser's verdict
and cost). Reading rebuilds the physics records (`MeasuredData`, `FitResult`), so a
re-opened snapshot shows the overlay and the fit without solving anything.

Reading is as strict as the rest of a snapshot: unknown or missing fields, wrong types,
non-finite numbers, voltages outside the model's ranges, gate or drain voltages that do
not increase, and more points than `MAX_STORED_POINTS` raise `SnapshotError` naming the
field. Nothing is evaluated and nothing is written. UI-free.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from sub60.app.snapshot_fields import FieldReader, SnapshotError, kind_of, read_number, show_value
from sub60.physics import (
    CURRENT_UNITS,
    FIELD_RANGES,
    FIT_KNOBS,
    VD_RANGE_V,
    VG_RANGE_V,
    Design,
    FitResult,
    FittedCurve,
    FittedKnob,
    MeasuredData,
    MeasuredOutput,
    MeasuredTransfer,
)

#: Limits of a stored measured file (engineering choices, no source): as many points as
#: `physics.read_measured` reads rows, a few curves, short comments.
MAX_STORED_POINTS = 20_000
MAX_STORED_CURVES = 16
MAX_COMMENTS = 20
MAX_COMMENT_CHARS = 300
MAX_FILE_NAME_CHARS = 120
MAX_PROBLEM_CHARS = 600
#: Largest stored current magnitude [µA/µm] (far beyond any device; a guard on the file).
MAX_CURRENT_UA_PER_UM = 1e12


@dataclass(frozen=True)
class MeasuredSnapshot:
    """What a page had open in its measured-curve card.

    name : the file's name as shown in the legend; data : its curves; free : the knobs
    the user had freed; fit : the last fit's result (None: no fit was run).
    """

    name: str
    data: MeasuredData
    free: tuple[str, ...] = ()
    fit: FitResult | None = None


# ---------------------------------------------------------------------- to JSON
def _floats(a: Any) -> list[float | None]:
    return [float(v) if math.isfinite(float(v)) else None for v in np.asarray(a, float).ravel()]


def measured_to_dict(m: MeasuredSnapshot) -> dict[str, Any]:
    """The ``measured`` member of settings.json (JSON-safe: NaN becomes null)."""
    d = m.data
    out: dict[str, Any] = {
        "name": m.name, "unit": d.unit, "width_um": d.width_um, "comments": list(d.comments),
        "transfer": [{"vd_V": float(c.vd_V), "vg_V": _floats(c.vg_V),
                      "id_uA_per_um": _floats(c.id_uA_per_um)} for c in d.transfer],
        "output": [{"vg_V": float(c.vg_V), "vd_V": _floats(c.vd_V),
                    "id_uA_per_um": _floats(c.id_uA_per_um)} for c in d.output],
        "free": list(m.free)}
    r = m.fit
    if r is not None:
        s = r.settings
        out["fit"] = {
            "free": list(s.get("free", [k.name for k in r.knobs])),
            "bounds": {k: [float(b[0]), float(b[1])] for k, b in s.get("bounds", {}).items()},
            "floor_uA_per_um": float(s.get("floor_uA_per_um", 0.0)),
            "model_step_V": float(s.get("model_step_V", 0.02)),
            "max_evaluations": int(s.get("max_evaluations", 40)),
            "design": r.design.to_dict(), "start_design": r.start_design.to_dict(),
            "knobs": [{"name": k.name, "value": k.value, "uncertainty": k.uncertainty,
                       "start": k.start, "low": k.low, "high": k.high,
                       "at_bound": k.at_bound, "determined": k.determined} for k in r.knobs],
            "correlation": [_floats(row) for row in np.atleast_2d(r.correlation)],
            "fit_uA_per_um": [_floats(c.fit_uA_per_um) for c in r.curves],
            "rms_decades": float(r.rms_decades), "problems": list(r.problems),
            "converged": bool(r.converged), "message": r.message,
            "curve_evaluations": int(r.curve_evaluations), "bias_points": int(r.bias_points),
            "elapsed_s": float(r.elapsed_s)}
    return out


# ---------------------------------------------------------------------- strict reading
def _array(v: Any, path: str, low: float, high: float, unit: str, allow_null: bool = False,
           increasing: bool = False) -> np.ndarray:
    if not isinstance(v, list):
        raise SnapshotError(f"{path}: expected an array, got {kind_of(v)}")
    if len(v) > MAX_STORED_POINTS:
        raise SnapshotError(f"{path}: {len(v)} values; the limit is {MAX_STORED_POINTS}")
    out = np.empty(len(v))
    for i, x in enumerate(v):
        if x is None and allow_null:
            out[i] = np.nan
            continue
        out[i] = read_number(x, f"{path}[{i}]", low, high, unit)
    if increasing and out.size and not np.all(np.diff(out) > 0):
        i = int(np.argmin(np.diff(out) > 0)) + 1
        raise SnapshotError(f"{path}[{i}]: {out[i]:g} {unit} does not increase on the value "
                            "before it")
    return out


def _text_list(v: Any, path: str, most: int, chars: int) -> tuple[str, ...]:
    if not isinstance(v, list):
        raise SnapshotError(f"{path}: expected an array, got {kind_of(v)}")
    if len(v) > most:
        raise SnapshotError(f"{path}: {len(v)} entries; the limit is {most}")
    return tuple(FieldReader({"t": t}, path, ("t",), ("t",)).text("t", chars) for t in v)


def _curves(v: Any, path: str, key: str, swept: str, fixed_range: tuple[float, float],
            swept_range: tuple[float, float]) -> list[tuple[float, np.ndarray, np.ndarray]]:
    if not isinstance(v, list):
        raise SnapshotError(f"{path}: expected an array, got {kind_of(v)}")
    if len(v) > MAX_STORED_CURVES:
        raise SnapshotError(f"{path}: {len(v)} curves; the limit is {MAX_STORED_CURVES}")
    out = []
    for i, item in enumerate(v):
        p = f"{path}[{i}]"
        o = FieldReader(item, p, (key, swept, "id_uA_per_um"), (key, swept, "id_uA_per_um"))
        fixed = o.number(key, *fixed_range, "V")
        x = _array(o.data[swept], o.at(swept), *swept_range, "V", increasing=True)
        cur = _array(o.data["id_uA_per_um"], o.at("id_uA_per_um"), -MAX_CURRENT_UA_PER_UM,
                     MAX_CURRENT_UA_PER_UM, "uA/um")
        if x.size < 3 or cur.size != x.size:
            raise SnapshotError(f"{o.at('id_uA_per_um')}: {cur.size} currents for {x.size} "
                                f"voltages; expected as many, at least 3")
        if any(fixed == f for f, _, _ in out):
            raise SnapshotError(f"{o.at(key)}: {fixed:g} V names another curve too")
        out.append((fixed, x, cur))
    return out


def _design(data: Any, path: str) -> Design:
    names = tuple(FIELD_RANGES)
    FieldReader(data, path, names, names)
    try:
        return Design.from_dict(data)
    except ValueError as exc:
        raise SnapshotError(f"{path}.{exc}") from None
    except (TypeError, OverflowError) as exc:
        raise SnapshotError(f"{path}: {exc}") from None


def _flag(o: FieldReader, key: str) -> bool:
    v = o.data[key]
    if not isinstance(v, bool):
        raise SnapshotError(f"{o.at(key)}: expected true/false, got {show_value(v)}")
    return v


def _knob_names(v: Any, path: str) -> tuple[str, ...]:
    names = _text_list(v, path, len(FIT_KNOBS), 40)
    for i, n in enumerate(names):
        if n not in FIT_KNOBS:
            raise SnapshotError(f"{path}[{i}]: {show_value(n)} is not a knob; known: "
                                + ", ".join(FIT_KNOBS))
    if len(set(names)) != len(names):
        raise SnapshotError(f"{path}: a knob is named twice")
    return names


_FIT_FIELDS = ("free", "bounds", "floor_uA_per_um", "model_step_V", "max_evaluations", "design",
               "start_design", "knobs", "correlation", "fit_uA_per_um", "rms_decades",
               "problems", "converged", "message", "curve_evaluations", "bias_points",
               "elapsed_s")
_KNOB_FIELDS = ("name", "value", "uncertainty", "start", "low", "high", "at_bound", "determined")


def _fit(data: Any, path: str, measured: MeasuredData) -> FitResult:
    o = FieldReader(data, path, _FIT_FIELDS, _FIT_FIELDS)
    free = _knob_names(o.data["free"], o.at("free"))
    if not free:
        raise SnapshotError(f"{o.at('free')}: no knob; a fit frees at least one")
    b = FieldReader(o.data["bounds"], o.at("bounds"), free, free)
    bounds = {}
    for name in free:
        knob = FIT_KNOBS[name]
        pair = _array(b.data[name], b.at(name), min(knob.low, 0.0), knob.high, knob.unit)
        if pair.size != 2 or not pair[0] < pair[1]:
            raise SnapshotError(f"{b.at(name)}: expected [low, high] with low < high")
        bounds[name] = (float(pair[0]), float(pair[1]))
    floor = o.number("floor_uA_per_um", 0.0, MAX_CURRENT_UA_PER_UM, "uA/um")
    step = o.number("model_step_V", 1e-3, 0.1, "V")
    most = o.integer("max_evaluations", 2, 1000)
    design = _design(o.data["design"], o.at("design"))
    start_design = _design(o.data["start_design"], o.at("start_design"))
    kv = o.data["knobs"]
    if not isinstance(kv, list) or len(kv) != len(free):
        raise SnapshotError(f"{o.at('knobs')}: expected an array of {len(free)} knobs (one per "
                            "free knob)")
    knobs = []
    for i, (item, name) in enumerate(zip(kv, free, strict=True)):
        p = f"{o.at('knobs')}[{i}]"
        ko = FieldReader(item, p, _KNOB_FIELDS, _KNOB_FIELDS)
        if ko.data["name"] != name:
            raise SnapshotError(f"{ko.at('name')}: {show_value(ko.data['name'])}; expected "
                                f"{name!r} (the free knobs' order)")
        k = FIT_KNOBS[name]
        lo, hi = bounds[name]
        value = ko.number("value", lo, hi, k.unit)
        sig = (None if ko.data["uncertainty"] is None
               else ko.number("uncertainty", 0.0, 1e30, "decades" if k.log else k.unit))
        knobs.append(FittedKnob(name, k.unit, value, sig, k.log, ko.number("start", lo, hi, k.unit),
                                ko.number("low", lo, hi, k.unit), ko.number("high", lo, hi, k.unit),
                                _flag(ko, "at_bound"), _flag(ko, "determined")))
    cv = o.data["correlation"]
    if not isinstance(cv, list) or len(cv) != len(free):
        raise SnapshotError(f"{o.at('correlation')}: expected {len(free)} rows")
    corr = np.array([_array(row, f"{o.at('correlation')}[{i}]", -1.0 - 1e-9, 1.0 + 1e-9, "",
                            allow_null=True) for i, row in enumerate(cv)])
    if corr.shape != (len(free), len(free)):
        raise SnapshotError(f"{o.at('correlation')}: expected {len(free)} × {len(free)} values")
    fv = o.data["fit_uA_per_um"]
    if not isinstance(fv, list) or len(fv) != len(measured.transfer):
        raise SnapshotError(f"{o.at('fit_uA_per_um')}: expected one array per measured transfer "
                            f"curve ({len(measured.transfer)})")
    curves = []
    for i, (c, f) in enumerate(zip(measured.transfer, fv, strict=True)):
        fit_i = _array(f, f"{o.at('fit_uA_per_um')}[{i}]", 0.0, MAX_CURRENT_UA_PER_UM, "uA/um")
        if fit_i.size != c.vg_V.size:
            raise SnapshotError(f"{o.at('fit_uA_per_um')}[{i}]: {fit_i.size} currents for "
                                f"{c.vg_V.size} measured points")
        # the same residual as physics.fit_transfer: log10(fit / measured) on used points
        meas = c.id_uA_per_um
        used = (meas > floor) & np.isfinite(meas)
        with np.errstate(divide="ignore", invalid="ignore"):
            res = np.where(used, np.log10(np.maximum(fit_i, 1e-300))
                           - np.log10(np.where(meas > 0, meas, 1.0)), np.nan)
        curves.append(FittedCurve(c.vd_V, c.vg_V, meas, fit_i, used, res))
    problems = _text_list(o.data["problems"], o.at("problems"), 20, MAX_PROBLEM_CHARS)
    message = o.text("message", MAX_PROBLEM_CHARS)
    settings = {"free": list(free), "floor_uA_per_um": floor, "model_step_V": step,
                "max_evaluations": most, "bounds": bounds}
    return FitResult(design=design, start_design=start_design, knobs=tuple(knobs),
                     correlation=corr, curves=tuple(curves),
                     rms_decades=o.number("rms_decades", 0.0, 1e3, "decades"),
                     problems=problems, converged=_flag(o, "converged"), message=message,
                     curve_evaluations=o.integer("curve_evaluations", 0, 10**6),
                     bias_points=o.integer("bias_points", 0, 10**9),
                     elapsed_s=o.number("elapsed_s", 0.0, 1e7, "s"), settings=settings)


_FIELDS = ("name", "unit", "width_um", "comments", "transfer", "output", "free", "fit")
_REQUIRED = ("name", "unit", "width_um", "comments", "transfer", "output", "free")


def measured_from_dict(data: Any, path: str = "measured") -> MeasuredSnapshot:
    """A `MeasuredSnapshot` from the ``measured`` member, read strictly (SnapshotError)."""
    o = FieldReader(data, path, _FIELDS, _REQUIRED)
    name = o.text("name", MAX_FILE_NAME_CHARS)
    unit = o.text("unit", 20)
    if unit not in CURRENT_UNITS:
        raise SnapshotError(f"{o.at('unit')}: {show_value(unit)} not allowed; allowed "
                            + ", ".join(CURRENT_UNITS))
    width = None if o.data["width_um"] is None else o.number("width_um", 1e-3, 1e6, "um")
    comments = _text_list(o.data["comments"], o.at("comments"), MAX_COMMENTS, MAX_COMMENT_CHARS)
    transfer = _curves(o.data["transfer"], o.at("transfer"), "vd_V", "vg_V", VD_RANGE_V,
                       VG_RANGE_V)
    output = _curves(o.data["output"], o.at("output"), "vg_V", "vd_V", VG_RANGE_V, VD_RANGE_V)
    if sum(x.size for _, x, _ in transfer + output) > MAX_STORED_POINTS:
        raise SnapshotError(f"{path}: more than {MAX_STORED_POINTS} points in all")
    if not transfer and not output:
        raise SnapshotError(f"{path}: no curve (transfer and output are both empty)")
    data_ = MeasuredData(
        transfer=tuple(MeasuredTransfer(f, x, i) for f, x, i in sorted(transfer, key=lambda t: t[0])),
        output=tuple(MeasuredOutput(f, x, i) for f, x, i in sorted(output, key=lambda t: t[0])),
        unit=unit, width_um=width, comments=comments)
    free = _knob_names(o.data["free"], o.at("free"))
    fit = None
    if o.has("fit") and o.data["fit"] is not None:
        if not data_.transfer:
            raise SnapshotError(f"{o.at('fit')}: a fit needs a transfer curve; there is none")
        fit = _fit(o.data["fit"], o.at("fit"), data_)
    return MeasuredSnapshot(name, data_, free, fit)
