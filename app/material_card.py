"""The material card: every parameter of the present body material with its source
(and, for a heterojunction source, the source material's and the interface's offsets).

A collapsible card under the plots. Its table lists the record of the design's body (a
fixed material or an alloy at its composition, `Design.semiconductor`) at the present
temperature, as `sub60.physics.material_parameters` gives it: value, unit and where the
number comes from. It follows the material, the composition and the temperature; while
the design is invalid it says so and keeps no stale numbers.
"""

from __future__ import annotations

from collections.abc import Sequence

import panel as pn

from sub60.app.messages import html_escape
from sub60.app.state import ExplorerState
from sub60.physics import heterointerface_offsets, material_parameters

#: Settings the card follows.
CARD_PARAMETERS: tuple[str, ...] = ("material", "composition_x", "temperature_K",
                                    "source_material", "source_composition_x",
                                    "heterointerface_nm")


def format_value(value: float | str) -> str:
    """A parameter value as short text: 4 significant digits, powers of ten as 1.05×10¹⁷."""
    if isinstance(value, str):
        return html_escape(value)
    if value != 0 and (abs(value) >= 1e5 or abs(value) < 1e-3):
        mant, exp = f"{value:.3e}".split("e")
        return f"{mant}×10<sup>{int(exp)}</sup>"
    return f"{value:.4g}"


def material_card_html(state: ExplorerState) -> str:
    """The card's table for the present settings (a short message for an invalid design)."""
    try:
        design = state.design()
    except ValueError as exc:
        return f'<div class="matcard-none">No material data: {html_escape(str(exc))}</div>'
    out = _record_table(design.semiconductor, design.temperature_K, "")
    off = heterointerface_offsets(design)
    if off is not None:  # a heterojunction source: its record and the interface offsets
        out += (f'<div class="matcard-head">Heterointerface at x = {off.position_nm:g} nm, '
                f"{html_escape(off.source)} → {html_escape(off.body)}: ΔE<sub>c</sub> "
                f"{off.conduction_step_eV:+.3f} eV, ΔE<sub>v</sub> {off.valence_step_eV:+.3f} "
                f"eV, {html_escape(off.kind)}; E<sub>v</sub>(source) − E<sub>c</sub>(body) "
                f"{off.bulk_overlap_eV:+.3f} eV in bulk, {off.confined_overlap_eV:+.3f} eV "
                "with confinement (valence-band offsets of Vurgaftman, Meyer & Ram-Mohan, "
                "J. Appl. Phys. 89, 5815 (2001), and the gaps below).</div>")
        out += _record_table(design.source_semiconductor, design.temperature_K, "Source: ")
    return out


def _record_table(record, temperature_K: float, prefix: str) -> str:
    rows = "".join(
        f"<tr><td class='mc-name'>{html_escape(p.label)}</td>"
        f"<td class='mc-value'>{format_value(p.value)}</td>"
        f"<td class='mc-unit'>{html_escape(p.unit)}</td>"
        f"<td class='mc-source'>{html_escape(p.source)}</td></tr>"
        for p in material_parameters(record, temperature_K))
    return (f'<div class="matcard-head">{prefix}<b>{html_escape(record.name)}</b> at '
            f"{temperature_K:g} K — the numbers the model uses, each with its source "
            "(“from memory” marks values not re-read in the source).</div>"
            '<table class="matcard"><thead><tr><th>Parameter</th><th>Value</th><th>Unit</th>'
            f"<th>Source</th></tr></thead><tbody>{rows}</tbody></table>")


class MaterialCard:
    """The collapsible material card of one session (``view``), kept up to date.

    Parameters
    ----------
    state : the session's settings.
    css : stylesheets of the page's HTML panes.
    """

    def __init__(self, state: ExplorerState, css: Sequence[str]) -> None:
        self.state = state
        self.table = pn.pane.HTML(material_card_html(state), stylesheets=list(css),
                                  css_classes=["material-card"], sizing_mode="stretch_width",
                                  margin=(2, 6))
        self.view = pn.Card(self.table, title="Body material data and sources", collapsed=True,
                            sizing_mode="stretch_width", margin=(6, 8),
                            header_background="#eef2f5", css_classes=["material-card-box"])
        self._watcher = state.param.watch(self.refresh, list(CARD_PARAMETERS))

    def refresh(self, *_events) -> None:
        """Rebuild the table from the present settings."""
        self.table.object = material_card_html(self.state)

    def close(self) -> None:
        """Stop following the settings."""
        self.state.param.unwatch(self._watcher)
