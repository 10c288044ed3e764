"""Computing a snapshot's results, and checking stored figures of merit against a
recomputation.

Reproducibility: stored and recomputed results are computed the same way
(`compute_results`): a fresh `Simulator` with the snapshot's model settings, the
transfer curves first (design, twin, pinned designs, each starting cold at its first
gate voltage and continuing along the sweep), then the bias point and the output
curves. With the same sub60 version the numbers agree to round-off. UI-free: the
physics public API only.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from sub60.app.snapshot_schema import CurveRecord, SnapshotSettings, StoredResults, TransferSweep
from sub60.physics import BiasPoint, Design, Metrics, OutputCurve, Simulator, TransferCurve

#: Agreement of recomputed and stored figures of merit: relative, with an absolute floor
#: in the metric's own unit for values that cross zero (e.g. a threshold voltage near 0 V).
METRIC_REL_TOL = 1e-9
METRIC_ABS_TOL = 1e-12


@dataclass(frozen=True)
class SnapshotResults:
    """Everything computed for one snapshot."""

    settings: SnapshotSettings
    bias_point: BiasPoint
    transfer: TransferCurve
    twin: TransferCurve
    pinned: tuple[TransferCurve, ...]
    output: tuple[OutputCurve, ...]

    def stored(self) -> StoredResults:
        """The results kept in settings.json."""
        w = self.bias_point.window_eV
        return StoredResults(
            CurveRecord.from_metrics(self.transfer.metrics),
            CurveRecord.from_metrics(self.twin.metrics),
            tuple(CurveRecord.from_metrics(c.metrics) for c in self.pinned),
            float(self.bias_point.current_uA_per_um),
            None if w is None else (float(w[0]), float(w[1])))


def _simulator_for(settings: SnapshotSettings, simulator: Simulator | None) -> Simulator:
    m = settings.model
    if simulator is None:
        return Simulator(resolution=m.resolution, model=m.tunnelling_model)
    if simulator.resolution != m.resolution or simulator.model != m.tunnelling_model:
        raise ValueError(f"simulator: resolution {simulator.resolution:g} / model "
                         f"{simulator.model!r} differ from the snapshot's {m.resolution:g} / "
                         f"{m.tunnelling_model!r}")
    return simulator


def _transfers(settings: SnapshotSettings, sim: Simulator
               ) -> tuple[TransferCurve, TransferCurve, tuple[TransferCurve, ...]]:
    ms = settings.metric_settings
    kw = {"ioff_target_uA_per_um": ms.ioff_target_uA_per_um, "vdd_V": ms.vdd_V}

    def sweep(design: Design, s: TransferSweep) -> TransferCurve:
        return sim.transfer_curve(design, s.gate_voltages(), s.vd_V, **kw)

    main = sweep(settings.design, settings.transfer_sweep)
    twin = sweep(settings.design.twin(), settings.transfer_sweep)
    pinned = tuple(sweep(p.design, p.transfer_sweep or settings.transfer_sweep)
                   for p in settings.pinned)
    return main, twin, pinned


def compute_results(settings: SnapshotSettings, simulator: Simulator | None = None,
                    include_output: bool = True) -> SnapshotResults:
    """Solve everything a snapshot shows, in the canonical order (see the module notes).

    Parameters
    ----------
    settings : SnapshotSettings
    simulator : Simulator or None
        None (recommended): a fresh simulator with the snapshot's model settings, so that
        an export and a later recomputation follow the same continuation path.
    include_output : bool
        also the output curves [-].
    """
    sim = _simulator_for(settings, simulator)
    main, twin, pinned = _transfers(settings, sim)
    bp = sim.solve_bias(settings.design, settings.bias.vg_V, settings.bias.vd_V)
    output: tuple[OutputCurve, ...] = ()
    if include_output:
        vd = settings.output_sweep.drain_voltages()
        output = tuple(sim.output_curve(settings.design, v, vd) for v in settings.output_sweep.vg_V)
    return SnapshotResults(settings, bp, main, twin, pinned, output)


@dataclass(frozen=True)
class Difference:
    """One recomputed value that differs from the stored one."""

    where: str
    quantity: str
    stored: float | None
    recomputed: float | None

    @property
    def relative(self) -> float | None:
        if self.stored is None or self.recomputed is None:
            return None
        scale = max(abs(self.stored), abs(self.recomputed))
        return abs(self.stored - self.recomputed) / scale if scale else 0.0

    def __str__(self) -> str:
        def fmt(v: float | None) -> str:
            return "undefined" if v is None else f"{v:.12g}"

        rel = self.relative
        tail = "" if rel is None else f" (relative difference {rel:.2e})"
        return (f"{self.where}: {self.quantity} stored {fmt(self.stored)}, "
                f"recomputed {fmt(self.recomputed)}{tail}")


def _agree(a: float | None, b: float | None) -> bool:
    if a is None or b is None:
        return a is None and b is None
    return math.isclose(a, b, rel_tol=METRIC_REL_TOL, abs_tol=METRIC_ABS_TOL)


def compare_stored(stored: StoredResults, fresh: StoredResults,
                   pinned_names: tuple[str, ...] = ()) -> list[Difference]:
    """Differences between two sets of stored results (relative `METRIC_REL_TOL`)."""
    out: list[Difference] = []
    pairs = [("design", stored.design, fresh.design), ("twin", stored.twin, fresh.twin)]
    for i, (a, b) in enumerate(zip(stored.pinned, fresh.pinned, strict=True)):
        name = pinned_names[i] if i < len(pinned_names) else str(i)
        pairs.append((f"pinned {name!r}", a, b))
    for where, a, b in pairs:
        for k in Metrics.METRIC_NAMES:
            if not _agree(a.metrics.get(k), b.metrics.get(k)):
                out.append(Difference(where, k, a.metrics.get(k), b.metrics.get(k)))
    if not _agree(stored.bias_current_uA_per_um, fresh.bias_current_uA_per_um):
        out.append(Difference("bias point", "current_uA_per_um", stored.bias_current_uA_per_um,
                              fresh.bias_current_uA_per_um))
    sw, fw = stored.window_eV, fresh.window_eV
    for i, label in enumerate(("window_e_min_eV", "window_e_max_eV")):
        a = None if sw is None else sw[i]
        b = None if fw is None else fw[i]
        if not _agree(a, b):
            out.append(Difference("bias point", label, a, b))
    return out


def verify_snapshot(settings: SnapshotSettings,
                    simulator: Simulator | None = None) -> list[Difference]:
    """Recompute the stored figures of merit and list the differences (empty = match).

    Settings without stored results give an empty list (nothing to compare).
    """
    if settings.stored is None:
        return []
    sim = _simulator_for(settings, simulator)
    main, twin, pinned = _transfers(settings, sim)
    bp = sim.solve_bias(settings.design, settings.bias.vg_V, settings.bias.vd_V)
    fresh = SnapshotResults(settings, bp, main, twin, pinned, ()).stored()
    return compare_stored(settings.stored, fresh, tuple(p.name for p in settings.pinned))

