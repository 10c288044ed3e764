"""Pinned designs on the explorer page: the pin actions, their overlays and the table.

`PinView` carries out what the "Compare designs" section asks (pin, rename, load, unpin),
draws each pinned design's band edges and transfer curve as the session's `PinJobs`
deliver them, and keeps the comparison table (`app.compare_panes.ComparisonPanel`) in
step with the board.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

from sub60.app.compare_panes import ComparisonPanel
from sub60.app.messages import short_error
from sub60.app.pin_jobs import PinJobs
from sub60.app.pinning import Pin, PinBoard, PinError
from sub60.app.plots import ExplorerFigures
from sub60.app.snapshot_schema import PinnedDesign, TransferSweep
from sub60.app.state import ExplorerState


class PinView:
    """The pinned designs of one session (a `app.pin_jobs.PinListener`).

    Parameters
    ----------
    state : the session's settings.
    figures : the session's figures (pinned overlays are drawn there).
    css : stylesheets of the page's HTML panes.
    post : runs an action on the document's event loop, under its lock (widget events
        may arrive outside it, and the actions touch the figures).
    """

    def __init__(self, state: ExplorerState, figures: ExplorerFigures, css: Sequence[str],
                 post: Callable[..., None]) -> None:
        self.state = state
        self.figures = figures
        self.work: PinJobs | None = None  # set by the page once the jobs exist
        #: Called when the pinned curves change (e.g. the Ion–Ioff trade-off redraws).
        self.on_curves: Callable[[], None] = lambda: None
        self.design_valid = True
        self.compare = ComparisonPanel(
            list(css), lambda name: post(self.pin_present, name),
            lambda slot, name: post(self.rename_pin, slot, name),
            lambda slot: post(self.load_pin, slot),
            lambda slot: post(self.unpin, slot))

    @property
    def board(self) -> PinBoard:
        """The session's `app.pinning.PinBoard`."""
        return self.work.board

    def present_sweep(self) -> TransferSweep:
        """The transfer sweep of the present settings."""
        lo, hi = self.state.vg_sweep_V
        return TransferSweep(float(lo), float(hi), int(self.state.vg_points),
                             float(self.state.vd_V))

    # ------------------------------------------------------------------ actions
    def pin_present(self, name: str | None = None) -> Pin | None:
        """Pin the present design with its sweep (the default name when name is empty);
        returns the pin, or None with the reason shown beside the pin button."""
        try:
            design = self.state.design()
            pin = self.board.add(name, design, self.present_sweep())
        except ValueError as exc:  # PinError, or an invalid design
            self.compare.say(f"Not pinned: {exc}")
            return None
        self.compare.say("")
        self.compare.name.value = ""
        bias, curve = self.work.adopt_present(pin)  # up-to-date results: no new solve
        self.figures.show_pin(pin.slot, pin.name, bias=bias, curve=curve)
        if curve is not None:
            self.on_curves()
        output = self.work.adopt_present_output(pin)
        if output is not None:
            self.figures.show_pin_output(pin.slot, pin.name, output)
        self.changed()
        self.work.request()
        return pin

    def rename_pin(self, slot: int, name: str) -> Pin | None:
        """Rename a pinned design (legends and table follow); a name that is not allowed
        is refused with a message and the old name put back."""
        old = self.board.get(slot)
        if old is None or name == old.name:
            return old
        try:
            pin = self.board.rename(slot, name)
        except PinError as exc:
            self.compare.say(f"Not renamed: {exc}")
            self.compare.set_pins(self.board.pins, self.board.default_name(), self.board.full)
            return None
        self.compare.say("")
        self.figures.show_pin(slot, pin.name)
        self.changed()
        self.on_curves()
        return pin

    def unpin(self, slot: int) -> None:
        """Take a pinned design off the plots and out of the table."""
        if self.board.remove(slot) is None:
            return
        self.work.forget(slot)
        self.figures.clear_pin(slot)
        self.compare.say("")
        self.changed()
        self.on_curves()

    def load_pin(self, slot: int) -> None:
        """Put a pinned design and its sweep into the controls (one update)."""
        pin = self.board.get(slot)
        if pin is None:
            return
        updates = dict(self.state.design_settings(pin.design), vd_V=pin.sweep.vd_V,
                       vg_sweep_V=(pin.sweep.vg_start_V, pin.sweep.vg_stop_V),
                       vg_points=pin.sweep.vg_points)
        try:
            self.state.param.update(**updates)
        except ValueError as exc:
            self.compare.say(f"Not loaded: {exc}")

    def replace_all(self, pinned: Sequence[PinnedDesign], sweep: TransferSweep) -> None:
        """The pinned designs of a snapshot instead of the present ones."""
        for p in self.board.pins:
            self.figures.clear_pin(p.slot)
        self.work.forget()
        for p in self.board.replace_all(pinned, sweep):
            self.figures.show_pin(p.slot, p.name)
        self.compare.say("")
        self.changed()
        self.on_curves()

    # ------------------------------------------------------------------ table
    def enable(self, design_valid: bool) -> None:
        """Pinning needs a valid design and a free slot."""
        self.design_valid = design_valid
        self.compare.button.disabled = not design_valid or self.board.full

    def changed(self) -> None:
        """The board changed: rows, hint, button and table follow."""
        self.compare.set_pins(self.board.pins, self.board.default_name(), self.board.full)
        self.enable(self.design_valid)
        self.refresh()

    def refresh(self) -> None:
        """The comparison table at the present results."""
        if len(self.board):
            self.compare.show_rows(self.work.comparison())

    # ------------------------------------------------------------------ results
    def pin_band_solved(self, pin: Pin, bp: Any) -> None:
        self.figures.show_pin(pin.slot, pin.name, bias=bp)

    def pin_curve_solved(self, pin: Pin, tc: Any) -> None:
        self.figures.show_pin(pin.slot, pin.name, curve=tc)
        self.refresh()
        self.on_curves()

    def pin_output_solved(self, pin: Pin, oc: Any) -> None:
        self.figures.show_pin_output(pin.slot, pin.name, oc)

    def pin_failed(self, pin: Pin, exc: Exception) -> None:
        self.compare.say(f"{pin.name}: not solved ({short_error(exc)})")
