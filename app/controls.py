"""The sidebar of the explorer page: one widget per setting, made from the state.

Every widget is made from a parameter of `app.state.ExplorerState` (``from_param``), so
widget and setting stay linked both ways; the enable rules are the state's derived
parameters, linked to the widgets' ``disabled``. The tick formatters of the log sliders
are Bokeh models: each `Controls` makes its own, because a Bokeh model belongs to one
document (one browser session) and must never be shared between sessions.
"""

from __future__ import annotations

from collections.abc import Sequence

import panel as pn
from bokeh.models import CustomJSTickFormatter

from sub60.app.compare_panes import SnapshotControls
from sub60.app.messages import eot_html
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
    ("gate_workfunction_eV", 0.01), ("temperature_K", 1.0))
DOPINGS = ("source_doping_log10_cm3", "channel_doping_log10_cm3", "drain_doping_log10_cm3")
#: Widget name -> derived state parameter that enables it.
ENABLE_RULES = {"oxide_permittivity": "custom_permittivity_enabled",
                "buried_oxide_thickness_nm": "buried_oxide_enabled"}


# Panel waits 50 ms after a widget event to batch further ones; a slider release or an
# entry is one complete event, so the explorer's controls pass it on at once.
class _NowFloatSlider(pn.widgets.FloatSlider):
    _debounce = 0


class _NowIntSlider(pn.widgets.IntSlider):
    _debounce = 0


class _NowFloatInput(pn.widgets.FloatInput):
    _debounce = 0


class _NowEditableFloatSlider(pn.widgets.EditableFloatSlider):
    _slider_widget = _NowFloatSlider
    _input_widget = _NowFloatInput


def log_cm3_formatter() -> CustomJSTickFormatter:
    """A new formatter of doping sliders (log10 cm^-3 shown as 4.0e19)."""
    return CustomJSTickFormatter(code=LOG_CM3_JS)


def log_current_formatter() -> CustomJSTickFormatter:
    """A new formatter of the Ioff slider (log10 uA/um shown in a readable unit)."""
    return CustomJSTickFormatter(code=LOG_CURRENT_JS)


class Controls:
    """The sidebar of one session: cards of widgets, the reset button.

    Parameters
    ----------
    state : the session's settings.
    css : stylesheets of the page's HTML panes.
    snapshots : the demo design and snapshot widgets (first card).
    """

    def __init__(self, state: ExplorerState, css: Sequence[str],
                 snapshots: SnapshotControls) -> None:
        self.state = state
        self._css = list(css)
        self.widgets = self._make_widgets()
        self.eot = pn.pane.HTML(eot_html(state), css_classes=["eot"], stylesheets=self._css,
                                margin=(0, 12))
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
        for widget, rule in ENABLE_RULES.items():
            self.widgets[widget].disabled = not getattr(state, rule)
        state.param.watch(self._apply_enable_rule, list(ENABLE_RULES.values()))
        # the EOT line says why when the design is invalid: any design setting counts
        state.param.watch(self._refresh_eot, list(DESIGN_PARAMETERS))

    def _apply_enable_rule(self, *events) -> None:
        rules = {rule: widget for widget, rule in ENABLE_RULES.items()}
        for e in events:
            self.widgets[rules[e.name]].disabled = not e.new

    def _refresh_eot(self, *_events) -> None:
        self.eot.object = eot_html(self.state)

    def _make_widgets(self) -> dict[str, pn.widgets.Widget]:
        s = self.state.param
        w: dict[str, pn.widgets.Widget] = {}
        for name, step in EDITABLE_STEPS:
            lo, hi = s[name].bounds
            w[name] = _NowEditableFloatSlider.from_param(
                s[name], step=step, throttled=True, fixed_start=lo, fixed_end=hi,
                width=WIDGET_WIDTH, margin=(2, 10), css_classes=[f"ctl-{name}"])
        lo, hi = s.vg_sweep_V.bounds
        w["vg_sweep_V"] = pn.widgets.EditableRangeSlider.from_param(
            s.vg_sweep_V, step=0.05, throttled=True, fixed_start=lo, fixed_end=hi,
            width=WIDGET_WIDTH, margin=(2, 10), css_classes=["ctl-vg_sweep_V"])
        w["vg_points"] = _NowIntSlider.from_param(s.vg_points, step=2, throttled=True,
                                                  width=WIDGET_WIDTH, margin=(4, 10),
                                                  css_classes=["ctl-vg_points"])
        log_sliders = [("ioff_log10_uA_per_um", log_current_formatter())]
        log_sliders += [(name, log_cm3_formatter()) for name in DOPINGS]
        for name, formatter in log_sliders:
            w[name] = _NowFloatSlider.from_param(s[name], throttled=True, format=formatter,
                                                 width=WIDGET_WIDTH, margin=(4, 10),
                                                 css_classes=[f"ctl-{name}"])
        for name in ("material", "oxide"):
            w[name] = pn.widgets.Select.from_param(s[name], width=WIDGET_WIDTH,
                                                   margin=(4, 10), css_classes=[f"ctl-{name}"])
        for name in ("gate_layout", "source_type", "channel_dopant"):
            w[name] = pn.widgets.RadioButtonGroup.from_param(
                s[name], width=WIDGET_WIDTH, margin=(4, 10), css_classes=[f"ctl-{name}"])
        return w

    def _labelled(self, name: str) -> pn.Column:
        """A button group under its label (button groups show no title of their own)."""
        head = pn.pane.HTML(f'<div class="ctl-label">{self.state.param[name].label}</div>',
                            stylesheets=self._css, margin=(4, 10, 0, 10))
        return pn.Column(head, self.widgets[name], margin=0)

    def _make_cards(self, snapshots: SnapshotControls) -> list[pn.Card]:
        w = self.widgets

        def card(title: str, *items, collapsed: bool = False) -> pn.Card:
            return pn.Card(*items, title=title, collapsed=collapsed, width=SIDEBAR_WIDTH - 14,
                           margin=(4, 4), header_background="#eef2f5",
                           css_classes=["control-group"])

        ioff_note = pn.pane.HTML(
            '<div class="note">I<sub>off</sub> fixes V<sub>off</sub>; I<sub>on</sub> is taken '
            "at V<sub>off</sub> + V<sub>dd</sub>. Low-power logic targets are lower, about "
            "10–100 pA/µm; high-performance ones near 100 nA/µm (common practice).</div>",
            stylesheets=self._css, margin=(0, 12))
        return [
            card("Demo designs and snapshots", *snapshots.items),
            card("Bias", w["vg_V"], w["vd_V"], w["vg_sweep_V"], w["vg_points"], w["vdd_V"],
                 w["ioff_log10_uA_per_um"], ioff_note),
            card("Structure", w["body_thickness_nm"], w["gate_length_nm"],
                 w["source_length_nm"], w["drain_length_nm"], self._labelled("gate_layout"),
                 w["gate_source_offset_nm"], w["buried_oxide_thickness_nm"]),
            card("Doping", self._labelled("source_type"), w["source_doping_log10_cm3"],
                 self._labelled("channel_dopant"), w["channel_doping_log10_cm3"],
                 w["drain_doping_log10_cm3"], w["doping_gradient_nm_per_dec"], collapsed=True),
            card("Gate stack", w["oxide"], w["oxide_thickness_nm"], self.eot,
                 w["oxide_permittivity"], w["gate_workfunction_eV"], collapsed=True),
            card("Material and temperature", w["material"], w["temperature_K"],
                 collapsed=True),
        ]
