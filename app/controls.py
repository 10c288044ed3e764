"""The sidebar of the explorer page: one widget per setting, made from the state.

Every widget is made from a parameter of `app.state.ExplorerState` (``from_param``), so
widget and setting stay linked both ways; the enable rules are the state's derived
parameters, linked to the widgets' ``disabled``. The tick formatters of the log sliders
are Bokeh models: each `Controls` makes its own, because a Bokeh model belongs to one
document (one browser session) and must never be shared between sessions.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import Any

import panel as pn
import param
from bokeh.models import CustomJSTickFormatter
from panel.links import Callback

from sub60.app.compare_panes import SnapshotControls
from sub60.app.messages import (
    MessageBoard,
    eot_html,
    refused_power_message,
    refused_sweep_message,
    refused_value_message,
)
from sub60.app.nonideal_view import NONIDEAL_STEPS, nonideal_card, nonideal_makers
from sub60.app.number_rules import InputError, parse_number
from sub60.app.sharing import format_number
from sub60.app.state import DESIGN_PARAMETERS, ExplorerState

SIDEBAR_WIDTH = 330
WIDGET_WIDTH = 290

#: JavaScript of the slider labels: 10**tick as a doping [cm^-3] and as a current.
LOG_CM3_JS = "return Math.pow(10, tick).toExponential(1).replace('e+', 'e')"
LOG_CURRENT_JS = """
const a = Math.pow(10, tick);
const units = [[1e3, 'mA/µm'], [1, 'µA/µm'], [1e-3, 'nA/µm'], [1e-6, 'pA/µm'], [1e-9, 'fA/µm']];
for (const [s, u] of units) {
  if (a >= 0.9999 * s) { return (a / s).toPrecision(2) + ' ' + u; }
}
return a.toExponential(1) + ' µA/µm';
"""

#: Sliders with an entry box, and their step (in the parameter's unit).
EDITABLE_STEPS: tuple[tuple[str, float], ...] = (
    ("vg_V", 0.01), ("vd_V", 0.01), ("vdd_V", 0.01),
    ("body_thickness_nm", 0.1), ("gate_length_nm", 1.0), ("source_length_nm", 1.0),
    ("drain_length_nm", 1.0), ("gate_source_offset_nm", 0.5),
    ("buried_oxide_thickness_nm", 0.5), ("doping_gradient_nm_per_dec", 0.1),
    ("oxide_thickness_nm", 0.05), ("oxide_permittivity", 0.5),
    ("gate_workfunction_eV", 0.01), ("temperature_K", 1.0),
    ("source_composition_x", 0.01), ("heterointerface_nm", 0.5))
EDITABLE_STEPS += NONIDEAL_STEPS  # the non-idealities card (app.nonideal_view)
DOPINGS = ("source_doping_log10_cm3", "channel_doping_log10_cm3", "drain_doping_log10_cm3")
#: Log sliders with an entry box for the plain number (4e19, 1e-3): setting, entry unit.
POWER_ENTRIES: tuple[tuple[str, str], ...] = tuple(
    (name, "cm⁻³") for name in DOPINGS) + (("ioff_log10_uA_per_um", "µA/µm"),)
#: Width of those entry boxes [px] (the slider beside takes the rest of the row).
POWER_ENTRY_WIDTH = 84
#: Widget name -> derived state parameter that enables it.
ENABLE_RULES = {"oxide_permittivity": "custom_permittivity_enabled",
                "buried_oxide_thickness_nm": "buried_oxide_enabled",
                "source_composition_x": "source_composition_enabled",
                "heterointerface_nm": "heterointerface_enabled"}


# Panel waits 50 ms after a widget event to batch further ones; a slider release or an
# entry is one complete event, so the explorer's controls pass it on at once.
class _NowFloatSlider(pn.widgets.FloatSlider):
    _debounce = 0


class _NowIntSlider(pn.widgets.IntSlider):
    _debounce = 0


class _NowFloatInput(pn.widgets.FloatInput):
    _debounce = 0


#: Decimals kept of a slider or entry value: removes float noise such as 0.6599999999999997
#: (0.3 + 36 steps of 0.01) without changing any value a user can type (1e-10 of a unit).
VALUE_DECIMALS = 10


class _NowEditableFloatSlider(pn.widgets.EditableFloatSlider):
    """A slider with an entry box whose typed values are checked here, on the server.

    * A typed value is passed on at once as the throttled value too: the entry's Bokeh
      model starts with its throttled value unset (0 once seen), so a first typed 0 sent
      no throttled change and the setting, linked to the throttled value, stayed put.
    * A value outside the setting's bounds is refused with a message (``on_refused``
      gets its text; ``on_accepted`` is called for every accepted typed value), the box
      goes back to the last valid value and nothing is recomputed. The entry has no
      bounds of its own: its browser side would clamp silently and stretch the slider.
    * Values are rounded to `VALUE_DECIMALS` decimals (no float noise in box or link).
    """

    _slider_widget = _NowFloatSlider
    _input_widget = _NowFloatInput

    def __init__(self, **params) -> None:
        self.on_refused: Callable[[str], None] | None = None
        self.on_accepted: Callable[[], None] | None = None
        self._restoring = False
        super().__init__(**params)
        # Panel widens the slider in the browser to any typed value; refused values must
        # leave the slider as it was, so that browser-side link is dropped.
        Callback.registry.pop(self._value_edit, None)

    @param.depends("start", "end", "fixed_start", "fixed_end", watch=True)
    def _update_bounds(self) -> None:
        super()._update_bounds()
        self._value_edit.param.update(start=None, end=None)

    @param.depends("value", watch=True)
    def _update_value(self) -> None:
        # The slider is told only of a real change, not of a rounding (a rounded value sent
        # back would race the user's next arrow key or drag and lose that step).
        if self.value is not None and (self._slider.value is None or
                                       abs(self._slider.value - self.value) > 1e-9):
            self._slider.value = self.value
        self._value_edit.value = self.value

    def _sync_value(self, event) -> None:
        if event.name not in ("value", "value_throttled"):
            return
        typed = event.obj is self._value_edit
        if typed and self._restoring:
            return
        if event.new is None:  # an emptied box
            if typed:
                self._refuse(None)
            return
        new = round(float(event.new), VALUE_DECIMALS)
        lo, hi = self.fixed_start, self.fixed_end
        if not (math.isfinite(new) and (lo is None or new >= lo) and (hi is None or new <= hi)):
            self._refuse(new)
            return
        updates = {event.name: new}
        if typed:
            updates["value_throttled"] = new  # a typed value is complete at once
        with param.edit_constant(self):
            self.param.update(**updates)
        if new != event.new:  # rounded: show the rounded value
            self._update_value()
        if typed and self.on_accepted is not None:
            self.on_accepted()

    def _refuse(self, value: float | None) -> None:
        self._restoring = True
        try:
            self._value_edit.value = self.value  # the box shows the kept value again
        finally:
            self._restoring = False
        if self.on_refused is not None:
            self.on_refused(refused_value_message(self.label or self.name, value,
                                                  self.fixed_start, self.fixed_end,
                                                  self.value))


class _CheckedRangeSlider(pn.widgets.EditableRangeSlider):
    """A range slider with two entry boxes whose typed ends are checked here, on the
    server: a first voltage not below the last, a value outside the bounds or not a
    number is refused with a message naming the control (``on_refused``), and both boxes
    show the kept sweep again; an accepted typed end is complete at once (also the
    throttled value) and calls ``on_accepted``. Panel's browser-side callbacks, which
    silently rewrote a first voltage above the last into the last, are dropped."""

    def __init__(self, **params) -> None:
        self.on_refused: Callable[[str], None] | None = None
        self.on_accepted: Callable[[], None] | None = None
        self._restoring = False
        super().__init__(**params)
        for box in (self._start_edit, self._end_edit):
            Callback.registry.pop(box, None)

    @param.depends("start", "end", "fixed_start", "fixed_end", watch=True)
    def _update_bounds(self) -> None:
        super()._update_bounds()
        for box in (self._start_edit, self._end_edit):  # no silent clamping in the browser
            box.param.update(start=None, end=None)

    def _sync_start_value(self, event) -> None:
        self._typed(event, 0)

    def _sync_end_value(self, event) -> None:
        self._typed(event, 1)

    def _typed(self, event, index: int) -> None:
        if event.name not in ("value", "value_throttled") or self._restoring:
            return
        kept = tuple(self.value)
        new = None if event.new is None else round(float(event.new), VALUE_DECIMALS)
        pair = list(kept)
        if new is not None:
            pair[index] = new
        lo, hi = self.fixed_start, self.fixed_end
        ok = (new is not None and math.isfinite(new) and (lo is None or new >= lo)
              and (hi is None or new <= hi) and pair[0] < pair[1])
        if not ok:
            self._restoring = True
            try:
                self._start_edit.value, self._end_edit.value = kept
            finally:
                self._restoring = False
            if self.on_refused is not None:
                self.on_refused(refused_sweep_message(
                    self.label or self.name, ("first", "last")[index], new, lo, hi, kept))
            return
        if tuple(pair) != kept:
            with param.edit_constant(self):
                self.param.update(value=tuple(pair), value_throttled=tuple(pair))
        if self.on_accepted is not None:
            self.on_accepted()


class PowerEntry:
    """An entry box beside a log slider: the setting as a plain number in its unit
    (``4e19`` cm⁻³, ``1e-3`` µA/µm), typed and confirmed with Enter, checked here by the
    shared number rules (`app.number_rules`). A value outside the slider's range or not a
    number is refused with a message naming the control and its range (``on_refused``),
    the box shows the kept value again and nothing is recomputed; an accepted value sets
    the setting exactly (not rounded to the slider's 0.05-decade steps) and calls
    ``on_accepted``. The box follows the setting when the slider or a file moves it."""

    def __init__(self, state: ExplorerState, name: str, unit: str,
                 on_refused: Callable[[str], None] | None = None,
                 on_accepted: Callable[[], None] | None = None) -> None:
        self.state, self.name, self.unit = state, name, unit
        self.on_refused, self.on_accepted = on_refused, on_accepted
        self._restoring = False
        self.box = pn.widgets.TextInput(name=unit, value=self.text(), width=POWER_ENTRY_WIDTH,
                                        margin=(4, 10, 4, 0), css_classes=[f"entry-{name}"])
        self.box.param.watch(self._typed, "value")
        # Enter on an unchanged box (the kept value typed again after a refusal) sends no
        # new value; it is taken as confirming that value
        self.box.param.watch(self._entered, "enter_pressed")
        state.param.watch(self._follow, name)

    def text(self) -> str:
        """The setting as entry text (4 significant digits, as in the page address)."""
        return format_number(10.0 ** getattr(self.state, self.name), 4)

    def _show(self, text: str) -> None:
        self._restoring = True
        try:
            self.box.value = text
        finally:
            self._restoring = False

    def _follow(self, _event: Any) -> None:
        self._show(self.text())

    def _entered(self, _event: Any) -> None:
        if self.box.value_input == self.box.value:
            self._take(self.box.value)

    def _typed(self, event: Any) -> None:
        if not self._restoring:
            self._take(event.new)

    def _take(self, typed: Any) -> None:
        lo, hi = self.state.param[self.name].bounds
        low, high = 10.0 ** lo, 10.0 ** hi
        label = self.state.param[self.name].label.split(" (")[0] + f" ({self.unit})"
        try:  # the ends as shown in the message are allowed (rounding of 10**log10)
            value = parse_number(str(typed), label, low * (1 - 1e-9), high * (1 + 1e-9))
        except InputError:
            kept = self.text()
            self._show(kept)
            if self.on_refused is not None:
                self.on_refused(refused_power_message(
                    label, str(typed), format_number(low, 3), format_number(high, 3),
                    self.unit, kept))
            return
        new = min(max(math.log10(value), lo), hi)
        if new != getattr(self.state, self.name):
            setattr(self.state, self.name, new)
        self._follow(None)
        if self.on_accepted is not None:
            self.on_accepted()


def log_cm3_formatter() -> CustomJSTickFormatter:
    """A new formatter of doping sliders (log10 cm^-3 shown as 4.0e19)."""
    return CustomJSTickFormatter(code=LOG_CM3_JS)


def log_current_formatter() -> CustomJSTickFormatter:
    """A new formatter of the Ioff slider (log10 uA/um shown in a readable unit)."""
    return CustomJSTickFormatter(code=LOG_CURRENT_JS)



def folded_card(title: str, items: Sequence[Any] | Callable[[], Sequence[Any]],
                collapsed: bool = False) -> pn.Card:
    """A card of the sidebar. A card that starts collapsed gets its controls when it is
    first opened: a page opens without building the browser side of controls nobody has
    looked at yet (each slider with its entry box is about a hundred Bokeh properties to
    create, send and draw). ``items`` may be a function that makes them: a collapsed card
    then calls it when first opened, so that not even the Panel widgets of its controls
    are made for a page that never opens it (`Controls.widgets` makes a widget asked for
    earlier, bound to the state like the others, so values are always the settings')."""
    kw = dict(title=title, collapsed=collapsed, width=SIDEBAR_WIDTH - 14, margin=(4, 4),
              header_background="#eef2f5", css_classes=["control-group"])
    if not collapsed:
        return pn.Card(*(items() if callable(items) else items), **kw)
    box = pn.Card(**kw)
    pending: list[Any] = [items]

    def fill(event: Any) -> None:
        if not event.new and pending:  # opened for the first time
            made = pending.pop()
            box.objects = list(made() if callable(made) else made)

    box.param.watch(fill, "collapsed")
    return box


class LazyWidgets(dict):
    """The sidebar's widgets by setting name, each made when first asked for (`dict`
    semantics otherwise: ``name in widgets`` and iteration see the widgets made so far).

    Parameters
    ----------
    make : makes the widget of a name (KeyError for an unknown name).
    """

    def __init__(self, make: Callable[[str], Any]) -> None:
        super().__init__()
        self._make = make

    def __missing__(self, name: str) -> Any:
        widget = self._make(name)
        self[name] = widget
        return widget


class Controls:
    """The sidebar of one session: cards of widgets, the reset button.

    Parameters
    ----------
    state : the session's settings.
    css : stylesheets of the page's HTML panes.
    snapshots : the demo design and snapshot widgets (first card).
    messages : the page's messages; a refused typed value is shown there (kind 'input')
        until a value is accepted.
    """

    def __init__(self, state: ExplorerState, css: Sequence[str],
                 snapshots: SnapshotControls, messages: MessageBoard | None = None) -> None:
        self.state = state
        self.messages = messages
        self._css = list(css)
        self._on_refused = (lambda text: messages.set("input", text)) if messages else None
        self._on_accepted = (lambda: messages.clear("input")) if messages else None
        self._makers = self._widget_makers()
        #: The controls by setting name, each made when first shown or asked for (the
        #: collapsed cards' controls when the card is first opened).
        self.widgets: dict[str, pn.widgets.Widget] = LazyWidgets(self._make_widget)
        #: Entry boxes of the dopings and the Ioff target, beside their log sliders.
        self.entries: dict[str, PowerEntry] = LazyWidgets(self._make_entry)
        self.eot = pn.pane.HTML(eot_html(state), css_classes=["eot"], stylesheets=self._css,
                                margin=(0, 12))
        self.sweep_step = pn.pane.HTML(self._step_html(), css_classes=["vg-step"],
                                       stylesheets=self._css, margin=(0, 12))
        state.param.watch(self._refresh_step, ["vg_sweep_V", "vg_points"])
        self.reset_button = pn.widgets.Button(label="Reset all settings to defaults",
                                              color="light", width=WIDGET_WIDTH,
                                              margin=(8, 10), css_classes=["reset-button"])
        self.reset_button.on_click(lambda _event: self.state.reset())
        self.cards = self._make_cards(snapshots)
        self.sidebar = pn.Column(
            pn.pane.HTML('<div class="side-title">Settings</div>', stylesheets=self._css,
                         margin=(4, 10)),
            *self.cards, self.reset_button, width=SIDEBAR_WIDTH, scroll=True,
            css_classes=["sub60-sidebar"], styles={"max-height": "100vh"}, margin=0)
        state.param.watch(self._apply_enable_rule, list(ENABLE_RULES.values()))
        state.param.watch(self._apply_composition_rules,
                          ["composition_enabled", "composition_text"])
        state.param.watch(self._apply_source_composition_text, ["source_composition_text"])
        # the EOT line says why when the design is invalid: any design setting counts
        state.param.watch(self._refresh_eot, list(DESIGN_PARAMETERS))

    # ------------------------------------------------------------ widgets made on demand
    def _make_widget(self, name: str) -> pn.widgets.Widget:
        """The widget of a setting (`widgets` calls this once per name), with its enable
        rule, label and refusal messages as they stand now."""
        if name not in self._makers:
            raise KeyError(name)
        widget = self._makers[name]()
        rule = ENABLE_RULES.get(name)
        if rule is not None:
            widget.disabled = not getattr(self.state, rule)
        if name == "source_composition_x":
            widget.name = self.state.source_composition_text
        if hasattr(widget, "on_refused") and self._on_refused is not None:
            widget.on_refused, widget.on_accepted = self._on_refused, self._on_accepted
        return widget

    def _make_entry(self, name: str) -> PowerEntry:
        units = dict(POWER_ENTRIES)
        if name not in units:
            raise KeyError(name)
        return PowerEntry(self.state, name, units[name], self._on_refused, self._on_accepted)

    # ------------------------------------------------------------ alloy composition
    def _composition_slider(self) -> pn.widgets.Widget:
        """The composition slider with its entry box: enabled for alloy bodies only, its
        label says what x is for the chosen family (derived settings of the state)."""
        s = self.state.param
        lo, hi = s.composition_x.bounds
        return _NowEditableFloatSlider.from_param(
            s.composition_x, step=0.01, throttled=True, fixed_start=lo, fixed_end=hi,
            name=self.state.composition_text, width=WIDGET_WIDTH, margin=(2, 10),
            css_classes=["ctl-composition_x"], disabled=not self.state.composition_enabled)

    def _apply_composition_rules(self, *_events) -> None:
        if "composition_x" in self.widgets:
            self.widgets["composition_x"].param.update(
                disabled=not self.state.composition_enabled, name=self.state.composition_text)

    def _apply_source_composition_text(self, event: Any) -> None:
        if "source_composition_x" in self.widgets:
            self.widgets["source_composition_x"].name = event.new

    def _apply_enable_rule(self, *events) -> None:
        rules = {rule: widget for widget, rule in ENABLE_RULES.items()}
        for e in events:
            if rules[e.name] in self.widgets:
                self.widgets[rules[e.name]].disabled = not e.new

    def _step_html(self) -> str:
        return f'<div class="note">{self.state.vg_step_text()} between the sweep\'s ends</div>'

    def _refresh_step(self, *_events) -> None:
        self.sweep_step.object = self._step_html()

    def _refresh_eot(self, *_events) -> None:
        self.eot.object = eot_html(self.state)

    def _widget_makers(self) -> dict[str, Callable[[], pn.widgets.Widget]]:
        """A function making each setting's widget (`_make_widget` calls them)."""
        s = self.state.param
        m: dict[str, Callable[[], pn.widgets.Widget]] = {}

        def editable(name: str, step: float) -> pn.widgets.Widget:
            lo, hi = s[name].bounds
            return _NowEditableFloatSlider.from_param(
                s[name], step=step, throttled=True, fixed_start=lo, fixed_end=hi,
                width=WIDGET_WIDTH, margin=(2, 10), css_classes=[f"ctl-{name}"])

        for name, step in EDITABLE_STEPS:
            m[name] = lambda name=name, step=step: editable(name, step)

        def sweep() -> pn.widgets.Widget:
            lo, hi = s.vg_sweep_V.bounds
            return _CheckedRangeSlider.from_param(
                s.vg_sweep_V, step=0.05, throttled=True, fixed_start=lo, fixed_end=hi,
                width=WIDGET_WIDTH, margin=(2, 10), css_classes=["ctl-vg_sweep_V"])

        m["vg_sweep_V"] = sweep
        m["vg_points"] = lambda: _NowIntSlider.from_param(
            s.vg_points, step=2, throttled=True, width=WIDGET_WIDTH, margin=(4, 10),
            css_classes=["ctl-vg_points"])
        m["composition_x"] = self._composition_slider

        def log_slider(name: str, formatter: Any) -> pn.widgets.Widget:
            # a short title: the unit is the entry box's title beside it (`PowerEntry`)
            return _NowFloatSlider.from_param(s[name], throttled=True, format=formatter,
                                              name=s[name].label.split(" (")[0],
                                              width=WIDGET_WIDTH - POWER_ENTRY_WIDTH - 10,
                                              margin=(4, 10), css_classes=[f"ctl-{name}"])

        m["ioff_log10_uA_per_um"] = lambda: log_slider("ioff_log10_uA_per_um",
                                                       log_current_formatter())
        for name in DOPINGS:
            m[name] = lambda name=name: log_slider(name, log_cm3_formatter())
        for name in ("material", "source_material", "oxide"):
            m[name] = lambda name=name: pn.widgets.Select.from_param(
                s[name], width=WIDGET_WIDTH, margin=(4, 10), css_classes=[f"ctl-{name}"])
        for name in ("tunnelling_model", "charge_model"):
            m[name] = lambda name=name: pn.widgets.RadioBoxGroup.from_param(
                s[name], inline=False, width=WIDGET_WIDTH, margin=(6, 10, 0, 10),
                css_classes=[f"ctl-{name}"])
        for name in ("gate_layout", "source_type", "channel_dopant"):
            m[name] = lambda name=name: pn.widgets.RadioButtonGroup.from_param(
                s[name], width=WIDGET_WIDTH, margin=(4, 10), css_classes=[f"ctl-{name}"])
        m.update(nonideal_makers(self.state, WIDGET_WIDTH))  # app.nonideal_view
        return m

    def _labelled(self, name: str) -> pn.Column:
        """A button group under its label (button groups show no title of their own)."""
        head = pn.pane.HTML(f'<div class="ctl-label">{self.state.param[name].label}</div>',
                            stylesheets=self._css, margin=(4, 10, 0, 10))
        return pn.Column(head, self.widgets[name], margin=0)

    def _with_entry(self, name: str) -> pn.Row:
        """A log slider and its entry box in one row."""
        return pn.Row(self.widgets[name], self.entries[name].box, margin=0)

    def _make_cards(self, snapshots: SnapshotControls) -> list[pn.Card]:
        w = self.widgets
        entry = self._with_entry

        def card(title: str, *items, collapsed: bool = False) -> pn.Card:
            return folded_card(title, items, collapsed)

        ioff_note = pn.pane.HTML(
            '<div class="note">I<sub>off</sub> fixes V<sub>off</sub>; I<sub>on</sub> is taken '
            "at V<sub>off</sub> + V<sub>dd</sub>. Low-power logic targets are lower, about "
            "10–100 pA/µm; high-performance ones near 100 nA/µm (common practice).</div>",
            stylesheets=self._css, margin=(0, 12))
        model_note = lambda: pn.pane.HTML(  # noqa: E731 - made when its card opens
            '<div class="note">WKB integrates the decay of the wave through the gap; the '
            "exact two-band transmission solves the same two-band Hamiltonian by transfer "
            "matrices along the same subband edges (slower). The Transmission plot draws "
            "both at the present bias.</div>", stylesheets=self._css, margin=(0, 12))
        charge_note = lambda: pn.pane.HTML(  # noqa: E731 - made when its card opens
            '<div class="note">The 2D subbands count the holes with the density of states '
            "of coupled heavy/light-hole subbands (4×4 k·p) and the electrons with the "
            "in-plane masses transport uses; transport then moves holes with the same "
            "coupled dispersion. The bulk states stay the default (the subbands cost more "
            "per design); the metrics strip names the model in use. See the README.</div>",
            stylesheets=self._css, margin=(0, 12))
        return [
            card("Demo designs and snapshots", *snapshots.items),
            card("Bias", w["vg_V"], w["vd_V"], w["vg_sweep_V"], w["vg_points"], self.sweep_step,
                 w["vdd_V"],
                 entry("ioff_log10_uA_per_um"), ioff_note),
            card("Structure", w["body_thickness_nm"], w["gate_length_nm"],
                 w["source_length_nm"], w["drain_length_nm"], self._labelled("gate_layout"),
                 w["gate_source_offset_nm"], w["buried_oxide_thickness_nm"]),
            # collapsed: their controls are made when first opened (`folded_card`)
            folded_card("Doping", lambda: [
                self._labelled("source_type"), entry("source_doping_log10_cm3"),
                self._labelled("channel_dopant"), entry("channel_doping_log10_cm3"),
                entry("drain_doping_log10_cm3"), w["doping_gradient_nm_per_dec"]],
                collapsed=True),
            folded_card("Gate stack", lambda: [
                w["oxide"], w["oxide_thickness_nm"], self.eot, w["oxide_permittivity"],
                w["gate_workfunction_eV"]], collapsed=True),
            folded_card("Material and temperature", lambda: [
                w["material"], w["composition_x"], w["source_material"],
                w["source_composition_x"], w["heterointerface_nm"], w["temperature_K"]],
                collapsed=True),
            folded_card("Tunnelling model", lambda: [w["tunnelling_model"], model_note()],
                        collapsed=True),
            folded_card("Carrier charge", lambda: [w["charge_model"], charge_note()],
                        collapsed=True),
            nonideal_card(self, folded_card, WIDGET_WIDTH),  # app.nonideal_view
        ]
