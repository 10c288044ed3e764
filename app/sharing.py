"""The settings of a page in and out: snapshot settings, and the page address.

Two ways to carry a view elsewhere:

* a snapshot (`app.snapshot`): `settings_from_state` turns the page's settings and its
  pinned designs into `SnapshotSettings`; `state_updates` gives the parameter values that
  restore them, checked against the ranges of the page's controls (a file may hold values
  that the file format allows but a control does not offer);
* a link: the design, the bias and the sweep live in the query string of the page's
  address. `query_from_state` writes one readable key per control (dopings and the
  off-current target as plain numbers, e.g. ``src_cm3=4e19``); `updates_from_query` reads
  them back field by field, so that one bad value is ignored with a message naming its
  control while the others still apply.

Nothing here imports Panel or Bokeh.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from typing import Any
from urllib.parse import parse_qsl, urlencode

from sub60.app.nonideal import NONIDEAL_QUERY_KEYS
from sub60.app.number_rules import InputError, parse_integer, parse_number
from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_schema import (
    BiasSettings,
    MetricSettings,
    ModelSettings,
    OutputSweep,
    PinnedDesign,
    SnapshotSettings,
    TransferSweep,
)
from sub60.app.state import (
    CHANNEL_DOPING_FLOOR_CM3,
    DESIGN_PARAMETERS,
    ExplorerState,
    label_of,
    plain_words,
)

# ---------------------------------------------------------------------- snapshots


def settings_from_state(state: ExplorerState, pinned: Sequence[PinnedDesign] = (),
                        model: ModelSettings | None = None) -> SnapshotSettings:
    """The snapshot settings of a page: its design, bias, sweeps, figure-of-merit
    settings, numerical model and pinned designs (ValueError if the design is invalid).

    The output sweep is the one the page draws (`ExplorerState.output_gate_voltages`,
    `ExplorerState.output_drain_voltages`); the transfer sweep runs at the page's Vd.
    """
    lo, hi = state.vg_sweep_V
    vd = float(state.vd_V)
    out_vd = state.output_drain_voltages()
    return SnapshotSettings(
        design=state.design(),
        bias=BiasSettings(float(state.vg_V), vd),
        transfer_sweep=TransferSweep(float(lo), float(hi), int(state.vg_points), vd),
        output_sweep=OutputSweep(tuple(float(v) for v in state.output_gate_voltages()),
                                 float(out_vd[0]), float(out_vd[-1]), int(out_vd.size)),
        metric_settings=MetricSettings(float(state.vdd_V), state.ioff_target_uA_per_um),
        model=model or ModelSettings(),
        pinned=tuple(pinned),
    )


def state_updates(settings: SnapshotSettings) -> tuple[dict[str, Any], list[str]]:
    """Parameter values of `ExplorerState` that restore a snapshot's view.

    Returns
    -------
    (updates, notes)
        updates : parameter name -> value, for one ``state.param.update(**updates)``;
        notes : what the page cannot show exactly as the file states it (e.g. an output
        sweep of its own), one sentence each.

    Raises
    ------
    SnapshotError
        when a value lies outside the range of the control that shows it; the message
        names the control and its range.
    """
    scratch = ExplorerState()
    updates: dict[str, Any] = dict(scratch.design_settings(settings.design))
    sweep = settings.transfer_sweep
    notes: list[str] = []
    if sweep.vd_V != settings.bias.vd_V:
        notes.append(f"The file's transfer curves run at Vd = {sweep.vd_V:g} V and its band "
                     f"diagram at Vd = {settings.bias.vd_V:g} V; the page uses one drain "
                     f"voltage for both: {sweep.vd_V:g} V.")
    ms = settings.metric_settings
    updates.update(
        tunnelling_model=settings.model.tunnelling_model,
        vg_V=settings.bias.vg_V, vd_V=sweep.vd_V,
        vg_sweep_V=(sweep.vg_start_V, sweep.vg_stop_V), vg_points=sweep.vg_points,
        vdd_V=ms.vdd_V, ioff_log10_uA_per_um=math.log10(ms.ioff_target_uA_per_um))
    for name, value in updates.items():
        try:
            setattr(scratch, name, value)
        except ValueError:
            raise SnapshotError(_outside_control(name, value, scratch)) from None
    try:
        shown = scratch.design()
    except ValueError as exc:
        raise SnapshotError(f"design: {exc}") from None
    if shown != settings.design:
        changed = [f for f in settings.design.to_dict()
                   if getattr(shown, f) != getattr(settings.design, f)]
        notes.append("The controls show " + ", ".join(
            f"{label_of(f)} = {getattr(shown, f):g}" if isinstance(getattr(shown, f), float)
            else f"{label_of(f)} = {getattr(shown, f)}" for f in changed)
            + " (the nearest value they offer); the file states "
            + ", ".join(f"{getattr(settings.design, f)}" for f in changed) + ".")
    page_out = (tuple(float(v) for v in scratch.output_gate_voltages()),
                tuple(float(v) for v in scratch.output_drain_voltages()))
    file_out = (tuple(settings.output_sweep.vg_V),
                tuple(float(v) for v in settings.output_sweep.drain_voltages()))
    if not _same_floats(page_out[0], file_out[0]) or not _same_floats(page_out[1], file_out[1]):
        notes.append("The page draws its output curves at its own gate voltages (up to the "
                     "present Vg); the file's output sweep is not shown.")
    return updates, notes


def _same_floats(a: Sequence[float], b: Sequence[float]) -> bool:
    return len(a) == len(b) and all(math.isclose(x, y, abs_tol=1e-9)
                                    for x, y in zip(a, b, strict=True))


def _outside_control(name: str, value: Any, state: ExplorerState) -> str:
    par = state.param[name]
    shown = value
    label = par.label
    bounds = getattr(par, "bounds", None)
    if name.endswith("_log10_cm3"):
        shown = f"{10.0 ** value:.3g} cm⁻³"
        bounds = bounds and tuple(f"{10.0 ** b:.3g}" for b in bounds)
    elif name == "ioff_log10_uA_per_um":
        shown = f"{10.0 ** value:.3g} µA/µm"
        bounds = bounds and tuple(f"{10.0 ** b:.3g}" for b in bounds)
    objects = getattr(par, "objects", None)
    if bounds:
        allowed = f"the control offers {bounds[0]} to {bounds[1]}"
    elif objects:
        allowed = "the control offers " + ", ".join(str(o) for o in objects)
    else:
        allowed = "the control does not offer it"
    return f"{label}: {shown} is outside what the page can show; {allowed}"


# ---------------------------------------------------------------------- links

#: Query key of each setting in the page's address (short, readable, with units).
QUERY_KEYS: dict[str, str] = {
    "material": "material", "composition_x": "x", "source_material": "src_material",
    "source_composition_x": "src_x", "heterointerface_nm": "hj_nm", "temperature_K": "T_K",
    "body_thickness_nm": "body_nm", "gate_length_nm": "lg_nm",
    "source_length_nm": "ls_nm", "drain_length_nm": "ld_nm",
    "gate_layout": "gates", "gate_source_offset_nm": "overlap_nm",
    "buried_oxide_thickness_nm": "box_nm",
    "source_type": "source", "source_doping_log10_cm3": "src_cm3",
    "channel_dopant": "ch_dopant", "channel_doping_log10_cm3": "ch_cm3",
    "drain_doping_log10_cm3": "drain_cm3", "doping_gradient_nm_per_dec": "grad_nm_dec",
    "oxide": "oxide", "oxide_thickness_nm": "tox_nm", "oxide_permittivity": "eps_ox",
    "gate_workfunction_eV": "wf_eV",
    "vg_V": "vg", "vd_V": "vd", "vg_sweep_V": "vg_sweep", "vg_points": "vg_points",
    "vdd_V": "vdd", "ioff_log10_uA_per_um": "ioff_uA_um",
    "tunnelling_model": "model",
    **NONIDEAL_QUERY_KEYS,  # non-idealities: app.nonideal
}
#: Settings kept in the address: the design, the bias, the transfer sweep and the
#: tunnelling model.
LINKED_PARAMETERS: tuple[str, ...] = tuple(QUERY_KEYS)
_PARAM_OF_KEY = {v: k for k, v in QUERY_KEYS.items()}
_POWERS = ("source_doping_log10_cm3", "channel_doping_log10_cm3", "drain_doping_log10_cm3",
           "ioff_log10_uA_per_um")
_DESIGN_FIELD_PARAM = {"source_doping_cm3": "source_doping_log10_cm3",
                       "channel_doping_cm3": "channel_doping_log10_cm3",
                       "drain_doping_cm3": "drain_doping_log10_cm3"}


def format_number(value: float, digits: int = 10) -> str:
    """A number as short readable text: 7, 0.35, 4e19, 1e-3 (no '+', no padding)."""
    text = f"{float(value):.{digits}g}"
    if "e" in text:
        mant, exp = text.split("e")
        text = f"{mant}e{int(exp)}"
    return text


def query_value(state: ExplorerState, name: str) -> str:
    """The query-string text of one setting."""
    v = getattr(state, name)
    if name in _POWERS:
        return format_number(10.0 ** v, 4)
    if name == "vg_sweep_V":
        return f"{format_number(v[0])},{format_number(v[1])}"
    if name == "vg_points":
        return str(int(v))
    if isinstance(v, str):
        return v
    return format_number(v)


def query_from_state(state: ExplorerState,
                     names: Iterable[str] = LINKED_PARAMETERS) -> dict[str, str]:
    """Query key -> text of the linked settings (all of them by default)."""
    return {QUERY_KEYS[n]: query_value(state, n) for n in names if n in QUERY_KEYS}


def _parse(name: str, raw: str, state: ExplorerState) -> Any:
    """The parameter value of one query text (ValueError with a short reason)."""
    par = state.param[name]
    text = raw.strip()
    objects = getattr(par, "objects", None)
    if objects:
        values = list(objects.values()) if isinstance(objects, dict) else list(objects)
        for v in values:
            if str(v).lower() == text.lower():
                return v
        raise ValueError(f"{raw!r} is not one of " + ", ".join(str(v) for v in values))
    if name == "vg_sweep_V":
        parts = text.split(",")
        if len(parts) != 2:
            raise ValueError(f"{ascii(raw)} is not two voltages 'first,last'")
        lo, hi = (_finite(p, raw) for p in parts)
        if not lo < hi:
            raise ValueError(f"{ascii(raw)}: the first gate voltage must be below the last")
        return (lo, hi)
    if name == "vg_points":
        try:
            return parse_integer(text, name)
        except InputError:
            raise ValueError(f"{ascii(raw)} is not a whole number written with ASCII digits") \
                from None
    value = _finite(text, raw)
    if name in _POWERS:
        if name == "channel_doping_log10_cm3" and 0 <= value < CHANNEL_DOPING_FLOOR_CM3:
            raise ValueError(f"{raw!r} is below the lowest channel doping offered, "
                             f"{CHANNEL_DOPING_FLOOR_CM3:g} cm⁻³")
        if not value > 0:
            raise ValueError(f"{raw!r} must be a positive number")
        return math.log10(value)
    return value


def _finite(text: str, raw: str) -> float:
    """A number by the shared rules (`app.number_rules`): ASCII digits, finite."""
    try:
        return parse_number(text, "value")
    except InputError:
        raise ValueError(f"{ascii(raw)} is not a number written with ASCII digits "
                         "(e.g. 0.3 or 4e19)") from None


def _range_text(name: str, state: ExplorerState) -> str:
    bounds = getattr(state.param[name], "bounds", None)
    if not bounds:
        return ""
    lo, hi = bounds
    if name in _POWERS:
        return f"; allowed {format_number(10.0 ** lo, 3)} to {format_number(10.0 ** hi, 3)}"
    return f"; allowed {format_number(lo)} to {format_number(hi)}"


def updates_from_query(query: Mapping[str, str], base: ExplorerState | None = None
                       ) -> tuple[dict[str, Any], list[str]]:
    """Parameter values of a page address's query, each checked on its own.

    Parameters
    ----------
    query : query key -> text (unknown keys are left alone: they may belong to others).
    base : settings the query changes (default: the default settings).

    Returns
    -------
    (updates, problems)
        the values that apply (for one ``state.param.update``), and one message per
        ignored value naming its control, e.g. "Body thickness (nm): 'abc' is not a
        number".
    """
    scratch = ExplorerState()
    if base is not None:
        scratch.param.update(**{n: getattr(base, n) for n in LINKED_PARAMETERS})
    updates: dict[str, Any] = {}
    problems: list[str] = []
    for key, raw in query.items():
        name = _PARAM_OF_KEY.get(key)
        if name is None:
            continue
        try:
            value = _parse(name, str(raw), scratch)
        except ValueError as exc:
            problems.append(f"{label_of(name)} ({key}): {exc}")
            continue
        try:
            setattr(scratch, name, value)  # the control's own bounds
        except ValueError:
            problems.append(f"{label_of(name)} ({key}): {raw!r} is outside the control's "
                            f"range{_range_text(name, scratch)}")
            continue
        updates[name] = value
    # alloy composition: only an alloy body takes one (the state would ignore it)
    if updates.get("composition_x", 0.0) != 0.0 and not scratch.composition_enabled:
        problems.append(f"{label_of('composition_x')} ({QUERY_KEYS['composition_x']}): "
                        f"{scratch.material} is not an alloy, so it takes no composition")
        updates.pop("composition_x")
        scratch.composition_x = 0.0
    # combination rules of the design (e.g. an underlap longer than the gate)
    for _ in range(len(DESIGN_PARAMETERS)):
        try:
            scratch.design()
            break
        except ValueError as exc:
            field, _, rest = str(exc).partition(":")
            name = _DESIGN_FIELD_PARAM.get(field.strip(), field.strip())
            culprit = name if name in updates else next(
                (n for n in reversed(list(updates)) if n in DESIGN_PARAMETERS), None)
            if culprit is None:
                break
            problems.append(f"{label_of(culprit)} ({QUERY_KEYS[culprit]}): "
                            f"{plain_words(rest.strip() or str(exc))}")
            updates.pop(culprit)
            default = base if base is not None else ExplorerState()
            setattr(scratch, culprit, getattr(default, culprit))
    return updates, problems


def query_of_search(search: str) -> dict[str, str]:
    """The query of a page address's search part ('?a=1&b=2' -> {'a': '1', 'b': '2'})."""
    return dict(parse_qsl(search.lstrip("?"), keep_blank_values=True))


def updated_search(search: str, state: ExplorerState,
                   names: Iterable[str] | None = None) -> str:
    """The search part of the page address with the linked settings of ``state`` (all of
    them, or those among ``names``) written in; other keys are kept as they are.

    The query is written as text here: reading the present values back as numbers and
    spelling them out again would change them (4e19 -> 4e+19).
    """
    chosen = [n for n in LINKED_PARAMETERS if names is None or n in names]
    query = query_of_search(search)
    query.update(query_from_state(state, chosen))
    return "?" + urlencode(query, safe=",")
