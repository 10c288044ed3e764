"""The what-if bar: a compact row of the settings a designer changes most in front of an
audience (gate and drain voltage, body thickness, gate length, EOT, source doping, body
material, temperature), typed or stepped, above the plots and visible in presentation
mode (when the sidebar is hidden).

Each entry edits the session's `app.state.ExplorerState` directly (the sidebar's widgets
are linked to the same settings, so both always show the same values: one source of
truth). A typed value outside a setting's range, or an emptied box, is refused with the
page's message for typed values (kind 'input', naming the entry and its range); the box
goes back to the value kept and nothing is recomputed. EOT is typed as such and set
through the dielectric thickness (EOT = t_ox · 3.9 / ε_ox at the present dielectric);
the source doping is typed in cm⁻³ (``4e19``) and kept as its log10 by the state.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import panel as pn
import param
from bokeh.models import CustomJSTickFormatter

from sub60.app.messages import MessageBoard, refused_value_message
from sub60.app.state import ExplorerState

#: Decimals kept of a typed value (as the sidebar's entries: no float noise).
VALUE_DECIMALS = 10


class _NowFloatInput(pn.widgets.FloatInput):
    """A number entry whose value is passed on at once (Panel otherwise waits 50 ms to
    batch more events; a typed value or an arrow click is one complete change)."""

    _debounce = 0

    def _process_property_change(self, msg: dict) -> dict:
        # a whole number of 1e16 or more (a doping such as 1.5e20) arrives from the
        # browser's JSON as a Python int too large for NumPy, on which Panel's own check
        # fails: values are floats here
        msg = {k: float(v) if k in ("value", "value_throttled") and isinstance(v, int)
               and not isinstance(v, bool) else v for k, v in msg.items()}
        return super()._process_property_change(msg)


@dataclass(frozen=True)
class Knob:
    """One entry of the bar.

    name : the entry's key and css class suffix (``whatif-<name>``).
    label : the entry's title, also the name its messages use.
    setting : the state parameter it edits.
    step : the step of the arrows (in the entry's unit).
    to_setting, from_setting : the entry's unit to the setting's and back (None: same).
    """

    name: str
    label: str
    setting: str
    step: float
    to_setting: Callable[[float], float] | None = None
    from_setting: Callable[[float], float] | None = None


def _log10(v: float) -> float:
    return math.log10(v) if v > 0 else math.nan


#: The bar's number entries, left to right (the body material follows them).
KNOBS: tuple[Knob, ...] = (
    Knob("vg", "Gate Vg (V)", "vg_V", 0.05),
    Knob("vd", "Drain Vd (V)", "vd_V", 0.05),
    Knob("body", "Body (nm)", "body_thickness_nm", 0.5),
    Knob("lg", "Gate length (nm)", "gate_length_nm", 5.0),
    Knob("eot", "EOT (nm)", "oxide_thickness_nm", 0.05),  # converted at the present oxide
    Knob("nsource", "Source doping (cm⁻³)", "source_doping_log10_cm3", 1e19,
         to_setting=_log10, from_setting=lambda v: 10.0 ** v),
    Knob("temp", "Temperature (K)", "temperature_K", 10.0),
)
ENTRY_WIDTH = {"nsource": 150, "lg": 122}
#: How the doping entry shows its value: 4e19, 1.25e20 (what a designer types).
EXPONENT_JS = ("const s = tick.toExponential(2).replace('e+', 'e');"
               "return s.replace(/\\.?0+e/, 'e');")
#: Settings the EOT entry's value depends on.
EOT_SETTINGS = ("oxide_thickness_nm", "oxide", "oxide_permittivity")

WHATIF_CSS = """
:host { --font-size: 15px; }
label, .bk-input-group > label { font-size: 13px; font-weight: 600; color: #14324f; }
.bk-input { font-size: 15px; font-variant-numeric: tabular-nums; }
"""


class WhatIfBar:
    """The what-if bar of one session.

    Parameters
    ----------
    state : the session's settings (shared with the sidebar).
    messages : the page's messages (a refused value: kind 'input', cleared by the next
        accepted value).
    css : stylesheets of the page.
    """

    def __init__(self, state: ExplorerState, messages: MessageBoard | None,
                 css: Sequence[str]) -> None:
        self.state = state
        self.messages = messages
        self._restoring = False
        sheets = [*css, WHATIF_CSS]
        self.entries: dict[str, pn.widgets.FloatInput] = {}
        for knob in KNOBS:
            # a Bokeh model per session (never shared between documents)
            fmt = CustomJSTickFormatter(code=EXPONENT_JS) if knob.name == "nsource" else None
            entry = _NowFloatInput(name=knob.label, value=self._shown(knob), step=knob.step,
                                   width=ENTRY_WIDTH.get(knob.name, 110), margin=(2, 6),
                                   format=fmt, css_classes=[f"whatif-{knob.name}"],
                                   stylesheets=sheets)
            entry.param.watch(lambda e, k=knob: self._typed(k, e.new), "value")
            self.entries[knob.name] = entry
        self.material = pn.widgets.Select.from_param(
            state.param.material, name="Body material", width=150, margin=(2, 6),
            css_classes=["whatif-material"], stylesheets=sheets)
        title = pn.pane.HTML('<div class="whatif-title">What if…</div>', stylesheets=list(css),
                             margin=(22, 6, 0, 8))
        self.view = pn.FlexBox(title, *self.entries.values(), self.material,
                               flex_wrap="wrap", align_items="flex-end",
                               sizing_mode="stretch_width", margin=(2, 4),
                               css_classes=["sub60-whatif"], stylesheets=list(css))
        watched = {k.setting for k in KNOBS} | set(EOT_SETTINGS)
        self._watcher = state.param.watch(self._follow, sorted(watched))

    # ------------------------------------------------------------------ conversions
    def _eot_per_tox(self) -> float | None:
        """EOT / t_ox of the present dielectric [-] (None: no valid design)."""
        try:
            d = self.state.design()
        except ValueError:
            return None
        return d.eot_nm / d.oxide_thickness_nm if d.oxide_thickness_nm > 0 else None

    def _shown(self, knob: Knob) -> float | None:
        """The value the entry shows for the present settings."""
        v = float(getattr(self.state, knob.setting))
        if knob.name == "eot":
            ratio = self._eot_per_tox()
            return None if ratio is None else round(v * ratio, 4)
        if knob.from_setting is not None:
            v = knob.from_setting(v)
            return float(f"{v:.3g}")  # a doping to 3 significant digits
        return round(v, VALUE_DECIMALS)

    def _setting_bounds(self, knob: Knob) -> tuple[float, float]:
        lo, hi = self.state.param[knob.setting].bounds
        return float(lo), float(hi)

    def _entry_bounds(self, knob: Knob) -> tuple[float, float] | None:
        """The allowed range in the entry's unit (None: unknown at this design)."""
        lo, hi = self._setting_bounds(knob)
        if knob.name == "eot":
            ratio = self._eot_per_tox()
            return None if ratio is None else (lo * ratio, hi * ratio)
        if knob.from_setting is not None:
            return knob.from_setting(lo), knob.from_setting(hi)
        return lo, hi

    # ------------------------------------------------------------------ events
    def _typed(self, knob: Knob, value: float | None) -> None:
        """A value typed or stepped in an entry: set it, or refuse it with a message."""
        if self._restoring:
            return
        entry = self.entries[knob.name]
        if value is None or not math.isfinite(float(value)):
            self._refuse(knob, None if value is None else float(value))
            return
        value = float(value)
        lo, hi = self._setting_bounds(knob)
        if knob.name == "eot":
            ratio = self._eot_per_tox()
            new = value / ratio if ratio else math.nan
        elif knob.to_setting is not None:
            new = knob.to_setting(value)
        else:
            new = value
        new = round(new, VALUE_DECIMALS)
        # a relative slack of 1e-9 lets a range end typed as shown (rounded) pass
        slack = 1e-9 * max(abs(lo), abs(hi), 1.0)
        if not (math.isfinite(new) and lo - slack <= new <= hi + slack):
            self._refuse(knob, value)
            return
        new = min(max(new, lo), hi)
        if self.messages is not None:
            self.messages.clear("input")
        if abs(float(getattr(self.state, knob.setting)) - new) > 1e-12:
            self.state.param.update(**{knob.setting: new})
        shown = self._shown(knob)
        if shown is not None and entry.value != shown:  # the value as kept (e.g. rounded)
            self._show(entry, shown)

    def _refuse(self, knob: Knob, value: float | None) -> None:
        entry = self.entries[knob.name]
        kept = self._shown(knob)
        self._show(entry, kept)
        if self.messages is None:
            return
        bounds = self._entry_bounds(knob)
        lo, hi = bounds if bounds is not None else (None, None)
        if knob.from_setting is not None and lo is not None:  # a doping: 3 digits
            lo, hi = float(f"{lo:.3g}"), float(f"{hi:.3g}")
        self.messages.set("input", refused_value_message(knob.label, value, lo, hi, kept))

    def _show(self, entry: pn.widgets.FloatInput, value: float | None) -> None:
        self._restoring = True
        try:
            entry.value = value
        finally:
            self._restoring = False

    def _follow(self, *events: param.parameterized.Event) -> None:
        """The settings changed (here, in the sidebar, by a snapshot or a reset): every
        entry shows the value kept."""
        names = {e.name for e in events}
        for knob in KNOBS:
            if knob.setting in names or (knob.name == "eot" and names & set(EOT_SETTINGS)):
                shown = self._shown(knob)
                if self.entries[knob.name].value != shown:
                    self._show(self.entries[knob.name], shown)

    def close(self) -> None:
        """Stop following the settings (the session ended)."""
        try:
            self.state.param.unwatch(self._watcher)
        except Exception:  # already gone
            pass
