"""The metrics strip of the page: figures of merit of the present design and its twin as
one HTML table. Plain HTML text (no Panel or Bokeh); headings and number formats from
`app.theme`.
"""

from __future__ import annotations

import html
from collections.abc import Sequence

from sub60.app.theme import METRIC_HEADINGS, STRIP_METRICS, format_metric
from sub60.physics import thermionic_limit_mV_per_dec

#: (metric name, column heading) of the metrics strip: `app.theme.STRIP_METRICS`, whose
#: Ioff is the current at the Ioff target.
METRIC_COLUMNS: tuple[tuple[str, str], ...] = tuple(
    (name, METRIC_HEADINGS[name] + (" (target)" if name == "ioff_uA_per_um" else ""))
    for name in STRIP_METRICS)


def metrics_html(rows: Sequence[tuple[str, str, object | None]], temperature_K: float,
                 vdd_V: float, models: str = "") -> str:
    """The metrics strip as an HTML table.

    models : which models made the numbers (e.g. `models_text`), a line under the
    table (plain text, escaped here); empty: none.

    rows : (device key, heading, Metrics or None while computing). A missing metric shows
    a dash with a note number; the note gives its reason (also the cell's tooltip). Every
    cell carries ``data-device``, ``data-metric`` and ``data-value`` attributes (test
    hooks; data-value is empty when the metric is missing or pending).
    """
    limit = thermionic_limit_mV_per_dec(temperature_K)
    head = "".join(f"<th>{h}</th>" for _, h in METRIC_COLUMNS)
    reasons: list[str] = []
    body = []
    for key, heading, metrics in rows:
        cells = []
        for name, _ in METRIC_COLUMNS:
            attrs = f'data-device="{key}" data-metric="{name}"'
            if metrics is None:
                cells.append(f'<td {attrs} data-value="" class="pending">…</td>')
                continue
            m = getattr(metrics, name)
            if m.value is None:
                reason = m.reason or "undefined for this curve"
                if reason not in reasons:
                    reasons.append(reason)
                n = reasons.index(reason) + 1
                tip = html.escape(reason, quote=True)
                cells.append(f'<td {attrs} data-value="" class="missing" title="{tip}">'
                             f'—<sup>{n}</sup></td>')
                continue
            badge = ""
            if name in ("ss_min_mV_per_dec", "ss_avg4_mV_per_dec") and m.value < limit:
                badge = ' <span class="sub60">&lt; limit</span>'
            cells.append(f'<td {attrs} data-value="{m.value:.12g}">'
                         f'{format_metric(name, m.value)}{badge}</td>')
        body.append(f'<tr><th class="device {key}">{heading}</th>{"".join(cells)}</tr>')
    notes = "".join(f'<div class="why"><sup>{i}</sup> {html.escape(r)}</div>'
                    for i, r in enumerate(reasons, start=1))
    note = (f"Thermionic limit (ln 10)·kT/q = {limit:.1f} mV/dec at {temperature_K:g} K; "
            f"I<sub>on</sub> at V<sub>g</sub> = V<sub>off</sub> + {vdd_V:g} V; "
            "— = not defined for this curve:")
    used = (f'<div class="metrics-note metrics-models">{html.escape(models)}</div>'
            if models else "")
    return (f'<table class="metrics"><thead><tr><th></th>{head}</tr></thead>'
            f'<tbody>{"".join(body)}</tbody></table>'
            f'<div class="metrics-note">{note}{notes}</div>{used}')


def models_text(charge_model: str, tunnelling_model: str) -> str:
    """One line naming the carrier-charge and tunnelling models in use."""
    from sub60.physics import CHARGE_MODEL_NOTES

    return (f"Carrier charge: {charge_model} ({CHARGE_MODEL_NOTES[charge_model]}). "
            f"Tunnelling: {tunnelling_model}.")
