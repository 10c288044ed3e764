"""Messages shown to the user: the page's header, EOT line and error messages, and the
one place that turns an exception into a short line (`short_error`, also used by the
command line). No Panel, no Bokeh.

`MessageBoard` holds the page's error messages by kind ('design', 'bias', 'sweep',
'link', 'snapshot'); its ``text`` parameter is what the page's error area shows, so a
view only links a pane to it. The message builders name the control a user has to
change (its label, from `app.state.label_of`), never an internal field name.
"""

from __future__ import annotations

import html
import math
from collections.abc import Sequence

import param

from sub60.app.state import ExplorerState, label_of, plain_words

#: The caution in one line, shown instead of `CAUTION` in presentation (style.css).
CAUTION_SHORT = ("Design-exploration model with stated approximations (see the desk view) "
                 "— not calibrated TCAD.")
CAUTION = ("Design-exploration model with stated approximations (semiclassical charge with "
           "confinement-shifted band edges or, as chosen, from the 2D subbands, two-band "
           "tunnelling by WKB or exact transmission, "
           "ballistic transport; band tails, traps, series resistance and gap narrowing "
           "only as switched on, by simple published models) — "
           "not calibrated TCAD; decisions rest on local practice and measurement.")
TITLE = "sub60 · tunnel FET explorer"


def html_escape(text: str) -> str:
    """Text for the page's Markdown/HTML messages (no markup from a file gets through)."""
    return html.escape(text, quote=True).replace("*", "&#42;").replace("_", "&#95;")


def short_error(exc: BaseException) -> str:
    """A one-line message for an exception: its ``summary`` field when it has one (e.g.
    `SolverError`, whose ``history`` field holds the residuals), else the first line of
    its text (the type name when it has none). Nothing parses message text further."""
    summary = getattr(exc, "summary", None)
    if isinstance(summary, str) and summary.strip():
        return summary.strip()
    text = str(exc).strip()
    return text.splitlines()[0] if text else type(exc).__name__


def value_message(exc: Exception) -> str:
    """The message of an invalid setting, naming its control when the error names a field."""
    text = str(exc)
    field, sep, rest = text.partition(":")
    if sep and " " not in field.strip():
        return (f"**{label_of(field.strip())}**: {html_escape(plain_words(rest.strip()))}. "
                "The plots show the last valid result.")
    return (f"**Invalid setting**: {html_escape(plain_words(text))}. The plots show the last "
            "valid result.")


def refused_value_message(label: str, value: float | None, low: float | None,
                          high: float | None, kept: float | None) -> str:
    """The message of a typed value that was refused: the control, the allowed range and
    the value kept (the plots are not recomputed)."""
    if value is None:
        typed = "An empty entry"
    elif not math.isfinite(value):
        typed = "The entry is not a number and"
    else:
        typed = f"{value:g}"
    allowed = ("any number" if low is None and high is None else
               f"from {low:g} to {high:g}" if low is not None and high is not None else
               f"at least {low:g}" if low is not None else f"at most {high:g}")
    kept_text = "" if kept is None else f" The last valid value, {kept:g}, is kept."
    return (f"**{html_escape(label)}**: {typed} is not allowed; allowed is {allowed}."
            f"{kept_text}")


def refused_power_message(label: str, text: str, low: str, high: str, unit: str,
                          kept: str) -> str:
    """The message of a typed doping or current that was refused: the control, the text
    typed, the allowed range (as written in the entry, e.g. '1e18' to '1e21') and the value
    kept (the plots are not recomputed)."""
    typed = ("An empty entry" if not text.strip() else
             f"{html_escape(text.strip()[:40])}")
    return (f"**{html_escape(label)}**: {typed} is not allowed; allowed is a number "
            f"from {low} to {high} {unit} (e.g. 4e19). The last valid value, {kept} {unit}, "
            "is kept.")


def refused_sweep_message(label: str, end: str, value: float | None, low: float,
                          high: float, kept: tuple[float, float]) -> str:
    """The message of a typed sweep end that was refused ('first' or 'last' ``end``): the
    control, the rule (first below last, both within [low, high]) and the sweep kept."""
    if value is None:
        typed = f"An empty {end} voltage"
    elif not math.isfinite(value):
        typed = f"The {end} voltage is not a number and"
    else:
        typed = f"A {end} voltage of {value:g} V"
    return (f"**{html_escape(label)}**: {typed} is not allowed; the first voltage must be "
            f"below the last, both from {low:g} to {high:g} V. The last valid sweep, "
            f"{kept[0]:g} to {kept[1]:g} V, is kept.")


def solver_message(exc: Exception, changed: str | None, what: str) -> str:
    """The message of a solve that did not converge after the change of a setting."""
    setting = label_of(changed) if changed else "the design"
    return (f"**The solver did not converge for the {what}** after the change of "
            f"**{setting}**. Try a smaller step or another value. The plots show the "
            f"last converged result.\n\n<small>{html_escape(short_error(exc))}</small>")


def validity_notes_html(warnings: Sequence[str]) -> str:
    """The model's validity warnings for the present design and bias, as a calm note
    ('' when none); a field named at the start of a warning is shown by its label."""
    if not warnings:
        return ""
    items = []
    for text in warnings:
        field, sep, rest = text.partition(" = ")
        if sep and " " not in field and label_of(field) != field:
            text = f"{label_of(field)} = {rest}"
        items.append(f"<li>{html_escape(text)}</li>")
    return ('<div class="validity-notes"><b>Model validity notes</b> (results shown, read '
            f'them with care):<ul>{"".join(items)}</ul></div>')


#: Short name of each tunnelling model, for the one-line design summary.
MODEL_SHORT = {"two-band": "two-band WKB", "one-band": "one-band WKB",
               "two-band-exact": "exact two-band transmission"}


def header_html(state: ExplorerState) -> str:
    """Title, one-line design summary (with its EOT) and the model's caution."""
    try:
        d = state.design()
        m = state.tunnelling_model
        eot = d.eot_nm
        layout = "double gate" if d.gate_layout == "double" else "single gate"
        src = "p+" if d.source_type == "p" else "n+"
        if d.is_heterojunction:
            src += f" {html.escape(d.source_semiconductor.name)}"
        summary = (f"{d.semiconductor.name} body {d.body_thickness_nm:g} nm · L<sub>g</sub> "
                   f"{d.gate_length_nm:g} nm · {layout} · {d.oxide} {d.oxide_thickness_nm:g} nm "
                   f"(EOT {eot:.2f} nm) · {src} source {d.source_doping_cm3:.1e} cm⁻³ · "
                   f"{d.temperature_K:g} K · {MODEL_SHORT.get(m, m)}")
    except ValueError:
        summary = "invalid design — see the message below"
    return (f'<div class="title">{TITLE}</div>'
            f'<div class="summary">{summary}</div>'
            f'<div class="caution">{CAUTION}</div>'
            f'<div class="caution short">{CAUTION_SHORT}</div>')


def eot_html(state: ExplorerState) -> str:
    """The equivalent oxide thickness of the gate stack [nm], under its controls."""
    try:
        d = state.design()
        eps = d.gate_permittivity
        return (f'<div class="eot">EOT = {d.eot_nm:.2f} nm '
                f'(ε<sub>r</sub> = {eps:g})</div>')
    except ValueError as exc:
        return f'<div class="eot">EOT unavailable: {html_escape(plain_words(str(exc)))}</div>'


class MessageBoard(param.Parameterized):
    """The error messages of one page, by kind; ``text`` is what the page shows."""

    text = param.String(default="", constant=True,
                        doc="Every present message, one paragraph each ('' when none).")

    def __init__(self, **params) -> None:
        super().__init__(**params)
        self._messages: dict[str, str] = {}

    def set(self, kind: str, message: str) -> None:
        """Show (or replace) the message of one kind."""
        self._messages[kind] = message
        self._publish()

    def clear(self, kind: str) -> None:
        """Take the message of one kind away (nothing when there is none)."""
        if self._messages.pop(kind, None) is not None:
            self._publish()

    def has(self, kind: str) -> bool:
        """Whether a message of this kind is shown."""
        return kind in self._messages

    def _publish(self) -> None:
        with param.parameterized.edit_constant(self):
            self.text = "\n\n".join(self._messages.values())
