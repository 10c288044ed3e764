"""The results of the pinned designs of one session: what is solved, what is stale (no UI).

Each pinned design shows its band edges at the present bias, its transfer curve (with
its own sweep, the present Ioff target and Vdd) and its output curve at the present Vg
(over the page's drain voltages). `PinJobs` remembers which results the
plots hold (by a key of everything they depend on), asks the session's workers for what
is missing — band edges on the bias worker after the band diagram, transfer curves on the
sweep worker after the present curves — and drops a result that a newer request, a
rename, an unpin or a change of the settings made stale.
"""

from __future__ import annotations

from typing import Any, Protocol

from sub60.app.jobs import PriorityGate, SessionJobs
from sub60.app.pinning import Pin, PinBoard, comparison_rows
from sub60.physics import SolverError


class PinListener(Protocol):
    """What a view does with the results of the pinned designs (through ``post``)."""

    def pin_band_solved(self, pin: Pin, bp: Any) -> None: ...
    def pin_curve_solved(self, pin: Pin, tc: Any) -> None: ...
    def pin_output_solved(self, pin: Pin, oc: Any) -> None: ...
    def pin_failed(self, pin: Pin, exc: Exception) -> None: ...


class PinJobs:
    """Results of the pinned designs of one session.

    Parameters
    ----------
    jobs : the session's workers, generations and present results.
    board : the session's pinned designs.
    listener : receives the results (see `PinListener`).
    """

    def __init__(self, jobs: SessionJobs, board: PinBoard, listener: PinListener) -> None:
        self.jobs = jobs
        self.board = board
        self.listener = listener
        self.generation = 0
        self.curves: dict[int, Any] = {}       # slot -> TransferCurve
        self._curve_keys: dict[int, tuple] = {}
        self._band_keys: dict[int, tuple] = {}
        self._output_keys: dict[int, tuple] = {}

    # ------------------------------------------------------------------ keys
    def curve_key(self, pin: Pin) -> tuple:
        """Everything a pinned transfer curve and its metrics depend on."""
        st = self.jobs.state
        return (pin.design, pin.sweep, st.tunnelling_model, st.ioff_target_uA_per_um,
                float(st.vdd_V))

    def band_key(self, pin: Pin) -> tuple:
        """Everything a pinned design's band edges depend on."""
        st = self.jobs.state
        return (pin.design, float(st.vg_V), float(st.vd_V))

    def output_key(self, pin: Pin) -> tuple:
        """Everything a pinned design's output curve depends on (at the present Vg)."""
        st = self.jobs.state
        return (pin.design, st.tunnelling_model, float(st.vg_V),
                tuple(float(v) for v in st.output_drain_voltages()))

    def fresh_curve(self, pin: Pin) -> Any:
        """The pin's transfer curve when it is of the present settings, else None."""
        tc = self.curves.get(pin.slot)
        return tc if tc is not None and self._curve_keys.get(pin.slot) == self.curve_key(
            pin) else None

    # ------------------------------------------------------------------ bookkeeping
    def adopt_present(self, pin: Pin) -> tuple[Any, Any]:
        """A new pin takes the present results when they are its own (no new solve);
        returns (bias point or None, transfer curve or None) to draw at once."""
        curve = self.jobs.present_curve()
        if curve is not None:
            self.curves[pin.slot] = curve
            self._curve_keys[pin.slot] = self.curve_key(pin)
        bp = self.jobs.last_bias
        bias = bp if bp is not None and (bp.design, bp.vg_V, bp.vd_V) == self.band_key(
            pin) else None
        if bias is not None:
            self._band_keys[pin.slot] = self.band_key(pin)
        return bias, curve

    def adopt_present_output(self, pin: Pin) -> Any:
        """A new pin takes the present output curve at the present Vg when the page shows
        it complete for its design (no new solve); returns it, or None."""
        jobs, st = self.jobs, self.jobs.state
        try:
            shown = jobs.shown_output == st.output_key()
        except ValueError:
            return None
        if not shown or not jobs.outputs or jobs.outputs[-1].design != pin.design:
            return None
        oc = jobs.outputs[-1]
        if abs(oc.vg_V - float(st.vg_V)) > 1e-9:
            return None
        self._output_keys[pin.slot] = self.output_key(pin)
        return oc

    def close(self) -> None:
        """The page is gone: running pin sweeps stop at their next point (the session's
        jobs are closed by their owner), the results held are dropped."""
        self.generation += 1
        self.forget()

    def forget(self, slot: int | None = None) -> None:
        """Drop the results of one slot (of every slot when None)."""
        for d in (self.curves, self._curve_keys, self._band_keys, self._output_keys):
            if slot is None:
                d.clear()
            else:
                d.pop(slot, None)

    # ------------------------------------------------------------------ work
    def request(self) -> None:
        """Solve what the pinned designs still miss at the present settings."""
        if not len(self.board):
            return
        pins = self.board.pins
        st = self.jobs.state
        bands = [p for p in pins if self._band_keys.get(p.slot) != self.band_key(p)]
        curves = [p for p in pins if self._curve_keys.get(p.slot) != self.curve_key(p)]
        outputs = [p for p in pins if self._output_keys.get(p.slot) != self.output_key(p)]
        if bands:
            self.jobs.submit("bias", self._bands_job, self.jobs.bias_generation, bands,
                             float(st.vg_V), float(st.vd_V))
        if curves or outputs:
            self.generation += 1
            self.jobs.submit("sweep", self._curves_job, self.generation, curves,
                             st.tunnelling_model, st.ioff_target_uA_per_um, float(st.vdd_V),
                             outputs, float(st.vg_V), st.output_drain_voltages())

    def _bands_job(self, g: int, pins: list[Pin], vg: float, vd: float) -> None:
        jobs = self.jobs
        for pin in pins:
            # a newer bias point (or a closed page): these edges are stale
            if g != jobs.bias_generation or jobs.closed.is_set():
                return
            try:
                with jobs.gate.hold(PriorityGate.PINNED):
                    bp = jobs.simulator.solve_bias(pin.design, vg, vd)
            except (ValueError, SolverError) as exc:
                self.jobs.post(self._deliver_failure, pin, exc)
                continue
            self.jobs.post(self._deliver_band, pin, (pin.design, vg, vd), bp)

    def _curves_job(self, g: int, pins: list[Pin], model: str, ioff: float, vdd: float,
                    outputs: list[Pin] = (), vg: float = 0.0, vd: Any = ()) -> None:
        def superseded() -> bool:  # asked before every point
            if self.jobs.closed.is_set():
                return True
            self.jobs.bias_idle.wait(timeout=1.0)  # the band diagram goes first
            return g != self.generation or self.jobs.closed.is_set()

        for pin in pins:
            try:
                tc = self.jobs.simulator.transfer_curve(
                    pin.design, pin.sweep.gate_voltages(), pin.sweep.vd_V,
                    ioff_target_uA_per_um=ioff, vdd_V=vdd, cancelled=superseded,
                    slots=self.jobs.gate)
            except InterruptedError:
                return
            except (ValueError, SolverError) as exc:
                self.jobs.post(self._deliver_failure, pin, exc)
                continue
            self.jobs.post(self._deliver_curve, pin, (pin.design, pin.sweep, model, ioff, vdd),
                           tc)
        for pin in outputs:  # after every transfer curve: one output curve per pin
            if superseded():
                return
            try:
                oc = self.jobs.simulator.output_curve(pin.design, vg, vd, slots=self.jobs.gate)
            except (ValueError, SolverError) as exc:
                self.jobs.post(self._deliver_failure, pin, exc)
                continue
            key = (pin.design, model, vg, tuple(float(v) for v in vd))
            self.jobs.post(self._deliver_output, pin, key, oc)

    def _deliver_band(self, pin: Pin, key: tuple, bp: Any) -> None:
        now = self.board.get(pin.slot)
        if now is None or key != self.band_key(now):
            return
        self._band_keys[pin.slot] = key
        self.listener.pin_band_solved(now, bp)

    def _deliver_curve(self, pin: Pin, key: tuple, tc: Any) -> None:
        now = self.board.get(pin.slot)
        if now is None or key != self.curve_key(now):
            return
        self.curves[pin.slot] = tc
        self._curve_keys[pin.slot] = key
        self.listener.pin_curve_solved(now, tc)

    def _deliver_output(self, pin: Pin, key: tuple, oc: Any) -> None:
        now = self.board.get(pin.slot)
        if now is None or key != self.output_key(now):
            return
        self._output_keys[pin.slot] = key
        self.listener.pin_output_solved(now, oc)

    def _deliver_failure(self, pin: Pin, exc: Exception) -> None:
        if self.board.get(pin.slot) is not None:
            self.listener.pin_failed(pin, exc)

    # ------------------------------------------------------------------ table
    def comparison(self) -> list:
        """The rows of the comparison table (`app.pinning.ComparisonRow`): the present
        design (figures of merit None while its curve is computing), then each pin."""
        st = self.jobs.state
        try:
            design = st.design()
        except ValueError:
            present = None
        else:
            tc = self.jobs.present_curve()
            present = (design, float(st.vd_V), tc.metrics if tc is not None else None)
        pinned = []
        for p in self.board.pins:
            tc = self.fresh_curve(p)
            pinned.append((p, tc.metrics if tc is not None else None))
        return comparison_rows(present, pinned)
