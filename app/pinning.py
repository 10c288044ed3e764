"""Pinned designs: designs kept on the plots while the controls move on, and their table.

`PinBoard` holds the pinned designs of one session (at most `MAX_PINS`, distinct names,
each with a colour slot of `PIN_COLOURS` that it keeps until it is unpinned).
`comparison_rows` lines up the key settings and the figures of merit of the present
design and of every pinned one, with each pinned value's difference from the present
design (`difference_text`); `comparison_header_html` and `comparison_cells_html` draw
them as aligned rows. Nothing here imports Panel or Bokeh, and nothing computes physics:
the figures of merit come from `physics.simulate.TransferCurve.metrics`.
"""

from __future__ import annotations

import html
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from string import ascii_uppercase

from sub60.app.snapshot_schema import MAX_NAME_CHARS, MAX_PINNED, PinnedDesign, TransferSweep
from sub60.app.theme import (
    COMPARISON_METRICS,
    LARGER_IS_BETTER,
    METRIC_HEADINGS,
    PIN_COLOURS,
    format_doping,
    format_metric,
)
from sub60.physics import Design, Metrics

MAX_PINS = MAX_PINNED
MINUS = "\u2212"


class PinError(ValueError):
    """A pin request that cannot be met (board full, bad or repeated name...)."""


@dataclass(frozen=True)
class Pin:
    """One pinned design: its name, design, transfer sweep and colour slot."""

    name: str
    design: Design
    sweep: TransferSweep
    slot: int

    @property
    def colour(self) -> str:
        return PIN_COLOURS[self.slot]

    def record(self) -> PinnedDesign:
        """The snapshot record of this pin."""
        return PinnedDesign(self.name, self.design, self.sweep)


@dataclass
class PinBoard:
    """The pinned designs of one session, in the order they were pinned."""

    _pins: list[Pin] = field(default_factory=list)

    @property
    def pins(self) -> tuple[Pin, ...]:
        return tuple(self._pins)

    def __len__(self) -> int:
        return len(self._pins)

    @property
    def full(self) -> bool:
        return len(self._pins) >= MAX_PINS

    def get(self, slot: int) -> Pin | None:
        return next((p for p in self._pins if p.slot == slot), None)

    def default_name(self) -> str:
        """The first free name of 'Design A', 'Design B', ..."""
        taken = {p.name for p in self._pins}
        return next(f"Design {c}" for c in ascii_uppercase if f"Design {c}" not in taken)

    def check_name(self, name: str, slot: int | None = None) -> str:
        """A clean name (stripped), or PinError saying what is wrong with it."""
        clean = " ".join(str(name).split())
        if not clean:
            raise PinError("a pinned design needs a name")
        if len(clean) > MAX_NAME_CHARS:
            raise PinError(f"the name has {len(clean)} characters; the limit is {MAX_NAME_CHARS}")
        if re.search(r"[\x00-\x1f\x7f]", clean):
            raise PinError("the name holds a control character")
        if re.search(r"[\ud800-\udfff]", clean):  # a browser string can hold one
            raise PinError("the name holds a lone surrogate (\\ud800-\\udfff), which is not "
                           "a character")
        other = next((p for p in self._pins if p.name == clean and p.slot != slot), None)
        if other is not None:
            raise PinError(f"another pinned design is called {clean!r}")
        return clean

    def add(self, name: str | None, design: Design, sweep: TransferSweep) -> Pin:
        """Pin a design (its default name when name is empty); PinError when the board is
        full, the name is taken or the same design and sweep are pinned already."""
        if self.full:
            raise PinError(f"{MAX_PINS} designs are pinned, the most the plots show; unpin "
                           "one first")
        same = next((p for p in self._pins if p.design == design and p.sweep == sweep), None)
        if same is not None:
            raise PinError(f"this design is pinned already, as {same.name!r}")
        clean = self.check_name(name if name and name.strip() else self.default_name())
        slot = min(set(range(MAX_PINS)) - {p.slot for p in self._pins})
        pin = Pin(clean, design, sweep, slot)
        self._pins.append(pin)
        return pin

    def rename(self, slot: int, name: str) -> Pin:
        """Give the pin of a slot a new name (PinError if it is not allowed)."""
        old = self.get(slot)
        if old is None:
            raise PinError(f"no design is pinned in slot {slot}")
        pin = Pin(self.check_name(name, slot), old.design, old.sweep, slot)
        self._pins[self._pins.index(old)] = pin
        return pin

    def remove(self, slot: int) -> Pin | None:
        """Unpin the design of a slot; returns it (None if the slot was free)."""
        pin = self.get(slot)
        if pin is not None:
            self._pins.remove(pin)
        return pin

    def replace_all(self, records: Sequence[PinnedDesign], default_sweep: TransferSweep
                    ) -> tuple[Pin, ...]:
        """Pin the designs of a snapshot instead of the present ones (a record without a
        sweep of its own takes ``default_sweep``)."""
        if len(records) > MAX_PINS:
            raise PinError(f"{len(records)} pinned designs; the limit is {MAX_PINS}")
        board = PinBoard()
        for r in records:
            name = board.check_name(r.name)
            board._pins.append(Pin(name, r.design, r.transfer_sweep or default_sweep,
                                   len(board._pins)))
        self._pins = board._pins
        return self.pins


# ---------------------------------------------------------------------- comparison
#: Key settings of the table: (key, heading, unit).
SETTING_COLUMNS: tuple[tuple[str, str, str], ...] = (
    ("material", "Material", ""),
    ("body_thickness_nm", "Body", "nm"),
    ("gate_length_nm", "L<sub>g</sub>", "nm"),
    ("eot_nm", "EOT", "nm"),
    ("source_doping_cm3", "Source", "cm⁻³"),
    ("vd_V", "V<sub>d</sub>", "V"),
)
#: Figures of merit of the table: (metric name, heading, True when larger is better), from
#: `app.theme` (names of `Metrics.METRIC_NAMES`).
METRIC_COLUMNS: tuple[tuple[str, str, bool], ...] = tuple(
    (name, METRIC_HEADINGS[name], LARGER_IS_BETTER[name]) for name in COMPARISON_METRICS)
#: Quantities compared as differences (absolute, in their unit); the others as ratios.
_ABSOLUTE = {"ss_min_mV_per_dec": "mV/dec", "ss_avg4_mV_per_dec": "mV/dec",
             "body_thickness_nm": "nm", "gate_length_nm": "nm", "eot_nm": "nm", "vd_V": "V"}
#: Differences smaller than these are shown as "same" (display resolution, no source).
_SAME_ABS = {"mV/dec": 0.05, "nm": 5e-4, "V": 5e-4}
_SAME_REL = 5e-3


def key_settings(design: Design, vd_V: float) -> dict[str, float | str]:
    """The settings the table shows: material, body, gate length, EOT [nm], source
    doping [cm^-3] and drain voltage [V]."""
    return {"material": design.material, "body_thickness_nm": design.body_thickness_nm,
            "gate_length_nm": design.gate_length_nm,
            "eot_nm": design.eot_nm,
            "source_doping_cm3": design.source_doping_cm3, "vd_V": float(vd_V)}


def _signed(x: float, digits: str) -> str:
    text = f"{abs(x):{digits}}"
    return ("+" if x > 0 else MINUS) + text


def difference_text(key: str, pinned: float | str | None, present: float | str | None
                    ) -> str | None:
    """A pinned value's difference from the present one, e.g. '+12 %', '−3.1 mV/dec',
    '×25', '÷4.1', 'same'; None when either value is missing (or text differs: the
    other text)."""
    if pinned is None or present is None:
        return None
    if isinstance(pinned, str) or isinstance(present, str):
        return "same" if pinned == present else None
    if key in _ABSOLUTE:
        unit = _ABSOLUTE[key]
        d = float(pinned) - float(present)
        if abs(d) < _SAME_ABS[unit]:
            return "same"
        digits = ".1f" if unit == "mV/dec" else ".3g"
        return f"{_signed(d, digits)} {unit}"
    if not (pinned > 0 and present > 0):
        return None
    r = float(pinned) / float(present)
    if abs(r - 1.0) < _SAME_REL:
        return "same"
    if 0.1 <= r <= 10.0:
        return f"{_signed(100.0 * (r - 1.0), '.0f')} %"
    return f"×{r:.2g}" if r > 1 else f"÷{1.0 / r:.2g}"


def _better(key: str, pinned: float, present: float) -> bool | None:
    for name, _, larger in METRIC_COLUMNS:
        if name == key:
            if pinned == present:
                return None
            return (pinned > present) == larger
    return None


@dataclass(frozen=True)
class ComparisonRow:
    """One row of the comparison: the values and, for a pinned design, the differences
    from the present design (pinned minus present)."""

    key: str                                # "present" or "pin-<slot>"
    name: str
    colour: str | None
    settings: dict[str, float | str]
    metrics: dict[str, float | None] | None  # None while computing
    reasons: dict[str, str | None]
    differences: dict[str, str | None]
    better: dict[str, bool | None]


def comparison_rows(present: tuple[Design, float, Metrics | None] | None,
                    pinned: Sequence[tuple[Pin, Metrics | None]]) -> list[ComparisonRow]:
    """Rows of the comparison table: the present design first, then each pinned one.

    Parameters
    ----------
    present : (design, drain voltage [V], figures of merit or None while computing), or
        None when the present settings do not make a valid design.
    pinned : each pin with its figures of merit (None while computing).
    """
    rows: list[ComparisonRow] = []
    base_s: dict[str, float | str] = {}
    base_m: dict[str, float | None] | None = None
    if present is not None:
        design, vd, metrics = present
        base_s = key_settings(design, vd)
        base_m = metrics.to_dict() if metrics is not None else None
        rows.append(ComparisonRow("present", "Present design", None, base_s, base_m,
                                  metrics.reasons() if metrics is not None else {}, {}, {}))
    for pin, metrics in pinned:
        s = key_settings(pin.design, pin.sweep.vd_V)
        m = metrics.to_dict() if metrics is not None else None
        diffs: dict[str, str | None] = {}
        better: dict[str, bool | None] = {}
        for k, v in s.items():
            diffs[k] = difference_text(k, v, base_s.get(k))
        if m is not None:
            for k, _, _ in METRIC_COLUMNS:
                ref = base_m.get(k) if base_m is not None else None
                diffs[k] = difference_text(k, m[k], ref)
                if m[k] is not None and ref is not None and diffs[k] not in (None, "same"):
                    better[k] = _better(k, m[k], ref)
        rows.append(ComparisonRow(f"pin-{pin.slot}", pin.name, pin.colour, s, m,
                                  metrics.reasons() if metrics is not None else {}, diffs,
                                  better))
    return rows


def _setting_text(key: str, value: float | str) -> str:
    if isinstance(value, str):
        return html.escape(value)
    if key == "source_doping_cm3":
        return format_doping(value)
    if key == "eot_nm":
        return f"{value:.2f} nm"
    unit = {"vd_V": "V"}.get(key, "nm")
    return f"{value:g} {unit}"


_ALL_COLUMNS = [k for k, _, _ in SETTING_COLUMNS] + [k for k, _, _ in METRIC_COLUMNS]


def comparison_header_html() -> str:
    """The heading row of the comparison table (aligned with `comparison_cells_html`)."""
    heads = [(k, h, "setting") for k, h, _ in SETTING_COLUMNS] + \
        [(k, h, "metric") for k, h, _ in METRIC_COLUMNS]
    cells = "".join(f'<span class="cmp-cell cmp-{k} {kind}">{h}</span>' for k, h, kind in heads)
    return f'<div class="cmp-row cmp-head">{cells}</div>'


def comparison_cells_html(row: ComparisonRow) -> str:
    """The cells of one comparison row: each value, and under a pinned design's value its
    difference from the present design. Test hooks: ``data-row``, ``data-col``,
    ``data-value`` (empty when missing or pending) and ``data-diff``."""
    cells = []
    for k in _ALL_COLUMNS:
        attrs = f'data-row="{row.key}" data-col="{k}"'
        kind = "setting" if k in row.settings else "metric"
        if k in row.settings:
            v = row.settings[k]
            value_attr = html.escape(str(v), quote=True) if isinstance(v, str) else f"{v:.12g}"
            text = _setting_text(k, v)
        elif row.metrics is None:
            cells.append(f'<span class="cmp-cell cmp-{k} metric pending" {attrs} data-value="" '
                         f'data-diff="">…</span>')
            continue
        else:
            v = row.metrics.get(k)
            if v is None:
                tip = html.escape(row.reasons.get(k) or "not defined for this curve", quote=True)
                cells.append(f'<span class="cmp-cell cmp-{k} metric missing" {attrs} '
                             f'data-value="" data-diff="" title="{tip}">—</span>')
                continue
            value_attr = f"{v:.12g}"
            text = format_metric(k, v)
        diff = row.differences.get(k)
        sub = ""
        if row.key != "present":
            cls = {True: "better", False: "worse"}.get(row.better.get(k), "")
            if diff is None:
                sub = '<span class="diff">—</span>'
            else:
                tone = "same" if diff == "same" else cls
                sub = f'<span class="diff {tone}">{html.escape(diff)}</span>'
        diff_attr = html.escape(diff or "", quote=True)
        cells.append(f'<span class="cmp-cell cmp-{k} {kind}" {attrs} data-value="{value_attr}" '
                     f'data-diff="{diff_attr}"><span class="val">{text}</span>{sub}</span>')
    cls = "cmp-row present" if row.key == "present" else "cmp-row"
    return f'<div class="{cls}">{"".join(cells)}</div>'
