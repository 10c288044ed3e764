"""The pipeline: electrostatics -> subband profiles -> tunnelling and thermionic current.

`solve_bias` gives one bias point; `transfer_curve` and `output_curve` sweep one
terminal with continuation from point to point. A `Simulator` keeps a cache of solved
points and the last solution of each design (for warm starts); the module-level
functions use a shared default one. Separate sessions should own separate simulators.

Memory: the cache of solved points is a thread-safe LRU bounded by the bytes of the
arrays it holds (``cache_bytes``, default `DEFAULT_CACHE_BYTES` = 64 MiB, the device
structures its points refer to counted once each); the warm starts keep the last
solution of at most 16 designs. The shared default simulator of the module-level
functions has the same bound; `cache_info()` reports its occupancy and `clear_cache()`
empties it. Device structures are also cached process-wide (`structure.build_frame`,
`structure.FRAME_CACHE_BYTES`).

Results print short (``repr``) and export tables (``to_table()``: columns with units in
their names, a pandas DataFrame when pandas is installed; see `sub60.physics.tables`).
"""

from __future__ import annotations

import contextlib
import dataclasses
import threading
import time
from collections import OrderedDict
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from typing import TYPE_CHECKING, Any

import numpy as np

from sub60.physics._cache import ByteLRU, CacheInfo, array_bytes
from sub60.physics._threads import single_blas_thread
from sub60.physics.band_tails import band_tail_current
from sub60.physics.bandgap_narrowing import has_narrowing_model, narrowed_profiles
from sub60.physics.design import Design, check_bias
from sub60.physics.electrostatics import Electrostatics, solve_electrostatics
from sub60.physics.heterojunction import source_cells, source_nodes
from sub60.physics.materials import check_tunnelling_material, group_iv_germanium_fraction
from sub60.physics.metrics import (
    Metrics,
    figures_of_merit,
    point_swing_mV_per_dec,
    refine_curve,
)
from sub60.physics.poisson import SolverError
from sub60.physics.statistics import inverse_fermi_half
from sub60.physics.structure import band_parameters
from sub60.physics.subbands import region_subbands, valley_warning
from sub60.physics.tables import table
from sub60.physics.transport import (
    BandProfile,
    Spectrum,
    band_to_band,
    pair_transmission,
    thermionic_current,
    tunnel_window,
)
from sub60.physics.trap_assisted import trap_assisted_current
from sub60.physics.tunneling import TUNNELLING_MODELS

if TYPE_CHECKING:
    from sub60.physics.series_resistance import SeriesSolution

#: Default memory budget of a Simulator's cache of solved bias points [B].
DEFAULT_CACHE_BYTES = 64 * 2**20
#: Transfer curves whose refined Id(Vg) a Simulator keeps (`Simulator.transfer_curve`).
REFINED_CURVES = 256
#: Design fields that change only the current computed from a solved electrostatics (band
#: tails and trap-assisted generation act on the current alone in this model; the charge
#: and potential do not see them), so two designs that differ only here share their
#: electrostatics (`Simulator.transfer_curve`'s ``electrostatics_from``).
CURRENT_ONLY_FIELDS: tuple[str, ...] = ("tail_energy_source_meV", "tail_energy_channel_meV",
                                        "tat_lifetime_ns")


def same_electrostatics(a: Design, b: Design) -> bool:
    """True when designs a and b differ at most in `CURRENT_ONLY_FIELDS` and have no
    access resistance (whose self-consistent bias depends on the current)."""
    if a.source_resistance_ohm_um > 0 or a.drain_resistance_ohm_um > 0:
        return False
    blank = {f: 0.0 for f in CURRENT_ONLY_FIELDS}
    return dataclasses.replace(a, **blank) == dataclasses.replace(b, **blank)


def _design_label(d: Design) -> str:
    kind = "tunnel FET" if d.source_type == "p" else "MOSFET twin"
    return f"{d.material} {kind}"


@dataclass(frozen=True)
class BiasPoint:
    """Everything sub60 knows about one design at one bias.

    Attributes
    ----------
    electrostatics : the 2D solution
    x_nm : (nx,) [nm]
    conduction_eV : (n_c, nx) conduction subband edges, lowest first [eV]
    valence_eV : (n_v, nx) valence subband edges, highest first [eV]
    conduction_labels, valence_labels : subband names ("C1", "HH1", "LH1", ...)
    subband_ec_eV, subband_ev_eV : (nx,) lowest conduction / highest valence subband edge
        [eV] (``ec_eV`` / ``ev_eV`` are older names of the same; the bulk edges, without
        confinement, are ``electrostatics.bulk_ec_eV`` / ``bulk_ev_eV``)
    efs_eV, efd_eV : source and drain Fermi levels [eV]
    window_eV : (e_min, e_max) tunnel window, or None when closed [eV]
    spectrum : band-to-band J(E) and T(E)
    btbt_uA_per_um, electron_thermionic_uA_per_um, hole_thermionic_uA_per_um : parts
    pair_currents_uA_per_um : band-to-band current of each (valence, conduction) subband
        pair, e.g. {"HH1-C1": ...}, weighted by its interband coupling [uA/um]
    tail_excess_uA_per_um : band-to-band current through band-tail states, beyond the
        ideal (`physics.band_tails`; 0 without tails) [uA/um]
    trap_assisted_uA_per_um : trap-assisted (Shockley-Read-Hall with Hurkx field
        enhancement) generation current of the body (`physics.trap_assisted`; 0 when
        off) [uA/um]
    current_uA_per_um : total drain current per width [uA/um]
    current_by_mechanism_uA_per_um : the total split into band-to-band (ideal), band
        tails, trap-assisted and thermionic [uA/um]
    timings_s : wall time of each stage [s]
    warnings : model-validity warnings (e.g. an indirect-gap material)
    solver_notes : fallbacks the solve needed (bias ramp, damping, finer grid); empty if none
    series_resistance : with access resistances (``design.source_resistance_ohm_um``,
        ``drain_resistance_ohm_um``), the self-consistent solution of
        `sub60.physics.series_resistance` (intrinsic voltages, the current at the external
        bias without the resistances, solves used), else None. ``vg_V`` / ``vd_V`` are
        then the external voltages and ``electrostatics`` (bands, Fermi levels) is at the
        intrinsic ones.
    """

    design: Design
    vg_V: float
    vd_V: float
    electrostatics: Electrostatics
    x_nm: np.ndarray
    conduction_eV: np.ndarray
    valence_eV: np.ndarray
    conduction_labels: tuple[str, ...]
    valence_labels: tuple[str, ...]
    efs_eV: float
    efd_eV: float
    window_eV: tuple[float, float] | None
    spectrum: Spectrum
    btbt_uA_per_um: float
    electron_thermionic_uA_per_um: float
    hole_thermionic_uA_per_um: float
    timings_s: dict[str, float] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()
    solver_notes: tuple[str, ...] = ()
    pair_currents_uA_per_um: dict[str, float] = field(default_factory=dict)
    series_resistance: SeriesSolution | None = None
    tail_excess_uA_per_um: float = 0.0
    trap_assisted_uA_per_um: float = 0.0

    @property
    def subband_ec_eV(self) -> np.ndarray:
        """(nx,) lowest conduction subband edge along x [eV]."""
        return self.conduction_eV.min(axis=0)

    @property
    def subband_ev_eV(self) -> np.ndarray:
        """(nx,) highest valence subband edge along x [eV]."""
        return self.valence_eV.max(axis=0)

    @property
    def current_uA_per_um(self) -> float:
        """Total drain current per width: band-to-band, band-tail excess,
        trap-assisted and thermionic [uA/um] (the sum of
        `current_by_mechanism_uA_per_um`)."""
        return self.btbt_uA_per_um + self.electron_thermionic_uA_per_um \
            + self.hole_thermionic_uA_per_um + self.tail_excess_uA_per_um \
            + self.trap_assisted_uA_per_um

    @property
    def current_by_mechanism_uA_per_um(self) -> dict[str, float]:
        """The drain current split by mechanism [uA/um]: "band_to_band" (ideal),
        "band_tails" (excess through tail states), "trap_assisted" and "thermionic"
        (electrons and holes); they sum to `current_uA_per_um`."""
        return {"band_to_band": self.btbt_uA_per_um,
                "band_tails": self.tail_excess_uA_per_um,
                "trap_assisted": self.trap_assisted_uA_per_um,
                "thermionic": self.electron_thermionic_uA_per_um
                + self.hole_thermionic_uA_per_um}

    @property
    def nbytes(self) -> int:
        """Bytes of this point's own arrays (the shared device structure not counted) [B]."""
        s = self.spectrum
        return self.electrostatics.nbytes + array_bytes(
            self.conduction_eV, self.valence_eV, s.energy_eV, s.current_density, s.transmission)

    def __repr__(self) -> str:
        w = "closed" if self.window_eV is None else \
            f"{self.window_eV[0]:.3f} to {self.window_eV[1]:.3f} eV"
        return (f"BiasPoint({_design_label(self.design)}, Vg = {self.vg_V:g} V, "
                f"Vd = {self.vd_V:g} V, Id = {self.current_uA_per_um:.4g} uA/um, "
                f"window {w}, {self.x_nm.size} nodes along x)")

    def band_columns(self, edges_only: bool = False) -> dict[str, np.ndarray]:
        """Band profiles along x as numpy columns.

        Parameters
        ----------
        edges_only : bool
            False: ``x_nm``, one ``<label>_eV`` column per subband (``C1_eV``, ``C2_eV``,
            ``HH1_eV``, ...), ``efs_eV`` and ``efd_eV`` (the names of a snapshot's
            bands.csv). True: ``x_nm``, ``ec_eV``, ``ev_eV``: the lowest conduction and
            highest valence subband edges (the names of ``sub60 bands --format csv``).
        """
        x = np.asarray(self.x_nm, float)
        if edges_only:
            return {"x_nm": x, "ec_eV": np.asarray(self.subband_ec_eV, float),
                    "ev_eV": np.asarray(self.subband_ev_eV, float)}
        out = {"x_nm": x}
        for lab, row in zip(self.conduction_labels, np.asarray(self.conduction_eV, float),
                            strict=True):
            out[f"{lab}_eV"] = row
        for lab, row in zip(self.valence_labels, np.asarray(self.valence_eV, float), strict=True):
            out[f"{lab}_eV"] = row
        out["efs_eV"] = np.full(x.shape, float(self.efs_eV))
        out["efd_eV"] = np.full(x.shape, float(self.efd_eV))
        return out

    def to_table(self, edges_only: bool = False) -> Any:
        """`band_columns` as a pandas DataFrame (a dict of numpy columns without pandas)."""
        return table(self.band_columns(edges_only))

    def spectrum_table(self) -> Any:
        """Spectral band-to-band current J(E) and transmission T(E, k = 0):
        energy_eV, current_density_uA_per_um_per_eV, transmission_1 (DataFrame or dict)."""
        return table(self.spectrum.columns())


@dataclass(frozen=True)
class TransferCurve:
    """Id-Vg of a design at fixed V_d, with its figures of merit.

    vg_V, id_uA_per_um, btbt_uA_per_um, thermionic_uA_per_um, ss_mV_per_dec : at the
    requested gate voltages (the point swing from those samples alone); vg_refined_V,
    id_refined_uA_per_um : the requested samples plus those added by
    `physics.metrics.refine_curve`, from which the metrics are taken (equal to the
    requested ones without refinement). With access resistances (else None):
    intrinsic_id_uA_per_um, the current of the device without them at the same terminal
    voltages, and vg_intrinsic_V, vd_intrinsic_V, the voltages the intrinsic device sees
    at each requested point (`sub60.physics.series_resistance`).
    """

    design: Design
    vd_V: float
    vg_V: np.ndarray
    id_uA_per_um: np.ndarray
    btbt_uA_per_um: np.ndarray
    thermionic_uA_per_um: np.ndarray
    ss_mV_per_dec: np.ndarray
    metrics: Metrics
    vg_refined_V: np.ndarray | None = None
    id_refined_uA_per_um: np.ndarray | None = None
    intrinsic_id_uA_per_um: np.ndarray | None = None
    vg_intrinsic_V: np.ndarray | None = None
    vd_intrinsic_V: np.ndarray | None = None

    def columns(self) -> dict[str, np.ndarray]:
        """vg_V, id_uA_per_um, ss_mV_per_dec (point swing), btbt_uA_per_um and
        thermionic_uA_per_um as numpy columns; with access resistances also
        intrinsic_id_uA_per_um, vg_intrinsic_V and vd_intrinsic_V."""
        out = {"vg_V": np.asarray(self.vg_V, float),
               "id_uA_per_um": np.asarray(self.id_uA_per_um, float),
               "ss_mV_per_dec": np.asarray(self.ss_mV_per_dec, float),
               "btbt_uA_per_um": np.asarray(self.btbt_uA_per_um, float),
               "thermionic_uA_per_um": np.asarray(self.thermionic_uA_per_um, float)}
        if self.intrinsic_id_uA_per_um is not None:
            out["intrinsic_id_uA_per_um"] = np.asarray(self.intrinsic_id_uA_per_um, float)
            out["vg_intrinsic_V"] = np.asarray(self.vg_intrinsic_V, float)
            out["vd_intrinsic_V"] = np.asarray(self.vd_intrinsic_V, float)
        return out

    def to_table(self) -> Any:
        """`columns` as a pandas DataFrame (a dict of numpy columns without pandas)."""
        return table(self.columns())

    def __repr__(self) -> str:
        v = self.vg_V
        span = f"Vg = {v[0]:g} to {v[-1]:g} V ({v.size} points)" if v.size else "no points"
        return (f"TransferCurve({_design_label(self.design)}, {span}, Vd = {self.vd_V:g} V, "
                f"{self.metrics.summary()})")


@dataclass(frozen=True)
class OutputCurve:
    """Id-Vd of a design at fixed V_g; with access resistances also intrinsic_id_uA_per_um
    (the device without them at the same terminal voltages) and vd_intrinsic_V (the drain
    voltage the intrinsic device sees), else None."""

    design: Design
    vg_V: float
    vd_V: np.ndarray
    id_uA_per_um: np.ndarray
    intrinsic_id_uA_per_um: np.ndarray | None = None
    vd_intrinsic_V: np.ndarray | None = None

    def columns(self) -> dict[str, np.ndarray]:
        """vd_V and id_uA_per_um as numpy columns (`output_columns` puts several gate
        voltages side by side)."""
        return {"vd_V": np.asarray(self.vd_V, float),
                "id_uA_per_um": np.asarray(self.id_uA_per_um, float)}

    def to_table(self) -> Any:
        """`columns` as a pandas DataFrame (a dict of numpy columns without pandas)."""
        return table(self.columns())

    def __repr__(self) -> str:
        v = self.vd_V
        span = f"Vd = {v[0]:g} to {v[-1]:g} V ({v.size} points)" if v.size else "no points"
        last = f", Id = {self.id_uA_per_um[-1]:.4g} uA/um at the last point" if v.size else ""
        return f"OutputCurve({_design_label(self.design)}, Vg = {self.vg_V:g} V, {span}{last})"


def output_columns(curves: Sequence[OutputCurve]) -> dict[str, np.ndarray]:
    """Output curves of one drain sweep side by side: vd_V, then one
    ``id_uA_per_um_at_vg_<Vg>_V`` column per curve (the names of a snapshot's
    output.csv and of ``sub60 output --format csv``)."""
    if not curves:
        raise ValueError("curves: at least one output curve is needed")
    vd = np.asarray(curves[0].vd_V, float)
    for c in curves[1:]:
        if not np.array_equal(np.asarray(c.vd_V, float), vd):
            raise ValueError("curves: every output curve must share the drain voltages")
    out = {"vd_V": vd}
    for c in curves:
        name = f"id_uA_per_um_at_vg_{c.vg_V:g}_V"
        if name in out:
            raise ValueError(f"curves: gate voltage {c.vg_V:g} V appears twice")
        out[name] = np.asarray(c.id_uA_per_um, float)
    return out


def output_table(curves: Sequence[OutputCurve]) -> Any:
    """`output_columns` as a pandas DataFrame (a dict of numpy columns without pandas)."""
    return table(output_columns(curves))


def bias_point_from_electrostatics(es: Electrostatics, model: str = "two-band") -> BiasPoint:
    """Subband profiles, tunnel window and currents of a solved electrostatics.

    With the design's non-idealities on: band-gap narrowing of the transport profiles
    (`physics.bandgap_narrowing`), the band-tail excess of the band-to-band current
    (`physics.band_tails`) and the trap-assisted generation current
    (`physics.trap_assisted`); off, the result is the ideal one, bit for bit.
    """
    d = es.design
    t0 = time.perf_counter()
    sb = region_subbands(d)
    x = es.x_nm
    if d.is_heterojunction:
        cond, val = sb.profiles(es.y_nm, es.ec_map_eV, es.frame.bands.eg_eV,
                                source_nodes(d, x))
    else:
        cond, val = sb.profiles(es.y_nm, es.ec_map_eV, es.frame.bands.eg_eV)
    t1 = time.perf_counter()
    kT = es.frame.bands.kT_eV
    efs, efd = 0.0, -es.vd_V
    if d.bandgap_narrowing == "on":
        cond, val = narrowed_profiles(d, es.frame.donors_cm3, es.frame.acceptors_cm3, cond, val)
    x_t, cprof, vprof = _transport_profiles(es, sb, cond, val)
    weights = sb.pair_weights()
    indirect = group_iv_germanium_fraction(d.semiconductor) is not None
    if indirect:  # Si, Ge, SiGe body: indirect
        from sub60.physics.indirect_tunnelling import indirect_band_to_band  # loaded when used

        # a heterojunction: the rate parameters of a group-IV source (where the holes
        # start), the body's otherwise; the alignment enters through the path lengths
        rec = d.source_semiconductor if group_iv_germanium_fraction(
            d.source_semiconductor) is not None else d.semiconductor
        cond_t = np.array([p.edge_eV for p in cprof])
        val_t = np.array([p.edge_eV for p in vprof])
        spectrum = indirect_band_to_band(rec, d.temperature_K, d.body_thickness_nm,
                                         x_t, cond_t.min(axis=0), val_t.max(axis=0), efs, efd,
                                         kT, bulk_gap_eV=float(np.min(es.frame.bands.eg_eV)))
    else:
        spectrum = band_to_band(x_t, cprof, vprof, efs, efd, kT, model, pair_weights=weights)
    i_n = thermionic_current(cprof, "conduction", efs, efd, kT)
    i_p = thermionic_current(vprof, "valence", efs, efd, kT)
    if es.vd_V == 0:
        i_n = i_p = 0.0
    window = tunnel_window(x, cond.min(axis=0), val.max(axis=0), (d.gate_start_nm, d.gate_end_nm),
                           d.source_junction_nm, efs, efd)
    t2 = time.perf_counter()
    timings = {"confinement": t1 - t0, "tunnelling": t2 - t1}
    tail_excess = trap_assisted = 0.0
    if (d.tail_energy_source_meV > 0 or d.tail_energy_channel_meV > 0) and not indirect:
        src = x <= d.source_junction_nm
        ch = (x >= d.gate_start_nm) & (x <= d.gate_end_nm)
        closure = max(0.0, float(cond.min(axis=0)[ch].min() - val.max(axis=0)[src].max()))
        with_tails = band_tail_current(
            x_t, cprof, vprof, efs, efd, kT, spectrum.current_uA_per_um, weights,
            1e-3 * d.tail_energy_source_meV,
            1e-3 * d.tail_energy_channel_meV, closure, model)
        tail_excess = with_tails - spectrum.current_uA_per_um
        timings["band_tails"] = time.perf_counter() - t2
    if d.tat_lifetime_ns > 0 and es.vd_V != 0:
        t3 = time.perf_counter()
        trap_assisted = trap_assisted_current(es)
        timings["trap_assisted"] = time.perf_counter() - t3
    return BiasPoint(
        design=d, vg_V=es.vg_V, vd_V=es.vd_V, electrostatics=es, x_nm=x,
        conduction_eV=cond, valence_eV=val,
        conduction_labels=tuple(s.label for s in sb.conduction),
        valence_labels=tuple(s.label for s in sb.valence),
        efs_eV=efs, efd_eV=efd, window_eV=window, spectrum=spectrum,
        btbt_uA_per_um=spectrum.current_uA_per_um,
        pair_currents_uA_per_um=dict(spectrum.pair_currents_uA_per_um),
        electron_thermionic_uA_per_um=i_n, hole_thermionic_uA_per_um=i_p,
        tail_excess_uA_per_um=tail_excess, trap_assisted_uA_per_um=trap_assisted,
        timings_s=timings,
        warnings=design_warnings(d) + _bending_warning(es, sb))


def _transport_profiles(es: Electrostatics, sb, cond: np.ndarray, val: np.ndarray
                        ) -> tuple[np.ndarray, list[BandProfile], list[BandProfile]]:
    """The path and subband profiles that transport integrates.

    Homojunction: the mesh nodes, one in-plane mass per subband. Heterojunction: the
    interface node appears twice, first with the source material's edges (its affinity,
    gap and confinement at the node's potential) and then with the body's, so that the
    WKB and exact transmissions see a sharp step (a zero-length segment) instead of a
    one-cell ramp; each cell carries its own material's masses (`transport.BandProfile`),
    the conduction subbands the body's mass at the drain end and the valence subbands the
    source material's at the source end.
    """
    d = es.design
    x = es.x_nm
    if not d.is_heterojunction:
        disp = _valence_dispersions(d)
        return (x, [BandProfile(s.label, cond[i], s.inplane_mass)
                    for i, s in enumerate(sb.conduction)],
                [BandProfile(s.label, val[i], s.inplane_mass, dispersion=disp.get(s.label))
                 for i, s in enumerate(sb.valence)])
    bands = es.frame.bands
    ih = int(np.argmin(np.abs(x - d.heterointerface_position_nm)))
    chi, eg = np.asarray(bands.chi_eV), np.asarray(bands.eg_eV)
    cs, vs, cb, vb = sb.interface_values(es.y_nm, es.ec_map_eV[ih], float(chi[ih] - chi[ih - 1]),
                                         float(eg[ih]), float(eg[ih - 1]))
    # the source side's edges at the interface node, keeping any shift already applied
    # to the node's (body) edges (band-gap narrowing)
    x_t = np.insert(x, ih, x[ih])
    cond_t = np.insert(cond, ih, cond[:, ih] + (cs - cb), axis=1)
    val_t = np.insert(val, ih, val[:, ih] + (vs - vb), axis=1)
    cprof, vprof = _hetero_band_profiles(d, sb, x_t, cond_t, val_t)
    return x_t, cprof, vprof


def _hetero_band_profiles(design: Design, sb, x_nm: np.ndarray, cond: np.ndarray,
                          val: np.ndarray) -> tuple[list[BandProfile], list[BandProfile]]:
    cells = source_cells(design, x_nm)

    def seg(src, body):
        return np.where(cells, src.inplane_mass, body.inplane_mass)

    cprof = [BandProfile(b.label, cond[i], b.inplane_mass, seg(s, b))
             for i, (b, s) in enumerate(zip(sb.conduction, sb.source_conduction, strict=True))]
    # the valence states at the source end are the source material's
    disp = _valence_dispersions(design.source_body_design())
    vprof = [BandProfile(b.label, val[i], s.inplane_mass, seg(s, b), disp.get(s.label))
             for i, (b, s) in enumerate(zip(sb.valence, sb.source_valence, strict=True))]
    return cprof, vprof


def _valence_dispersions(design: Design) -> dict:
    """Transport's in-plane valence dispersions: with the 2D-subband charge
    (charge_model "subbands") the coupled 4x4 k.p dispersions its density of states
    uses (`hole_subbands.inplane_dispersions`), so that charge and transport count the
    same hole states; with the semiclassical charge none (parabolic with the band-edge
    in-plane masses, as before)."""
    if design.charge_model != "subbands":
        return {}
    from sub60.physics.hole_subbands import inplane_dispersions  # loaded when used

    return inplane_dispersions(design)


@dataclass(frozen=True)
class TransmissionComparison:
    """T(E) at k = 0 of one subband pair by WKB and by the exact two-band solver.

    pair : e.g. "HH1-C1"; energy_eV : (nE,) [eV]; wkb, exact : (nE,) T [-]; wkb_model :
    the WKB kappa model used ("two-band" or "one-band").
    """

    pair: str
    energy_eV: np.ndarray
    wkb: np.ndarray
    exact: np.ndarray
    wkb_model: str


def compare_transmissions(bp: BiasPoint, pair: str | None = None, n: int = 200,
                          wkb_model: str = "two-band") -> TransmissionComparison | None:
    """WKB and exact two-band T(E, k = 0) of a bias point's subband pair, side by side.

    Parameters
    ----------
    bp : a solved bias point; pair : "HH1-C1" etc., default the pair carrying the most
    band-to-band current; n : energies, uniform between the drain conduction edge and
    the source valence edge [-]; wkb_model : "two-band" or "one-band".

    Returns
    -------
    TransmissionComparison, or None when no pair carries current or the pair's source
    valence edge lies below its drain conduction edge (no band-to-band energies).
    """
    sb = region_subbands(bp.design)
    if pair is None:
        carrying = {k: v for k, v in bp.pair_currents_uA_per_um.items() if v != 0.0}
        if not carrying:
            return None
        pair = max(carrying, key=lambda k: abs(carrying[k]))
    names = [f"{v}-{c}" for v in bp.valence_labels for c in bp.conduction_labels]
    if pair not in names:
        raise ValueError(f"pair: {pair!r} unknown; allowed {', '.join(names)}")
    vlab, clab = pair.split("-")
    iv, ic = bp.valence_labels.index(vlab), bp.conduction_labels.index(clab)
    x_t, cprof, vprof = _transport_profiles(bp.electrostatics, sb, bp.conduction_eV,
                                            bp.valence_eV)
    cb, vb = cprof[ic], vprof[iv]
    lo, hi = cb.edge_eV[-1], vb.edge_eV[0]
    if hi <= lo:
        return None
    e = np.linspace(lo, hi, n + 2)[1:-1]
    _, t_wkb = pair_transmission(x_t, cb, vb, e, wkb_model, k_integral=False)
    _, t_exact = pair_transmission(x_t, cb, vb, e, "two-band-exact", k_integral=False)
    return TransmissionComparison(pair, e, t_wkb, t_exact, wkb_model)


def _bending_warning(es: Electrostatics, sb) -> tuple[str, ...]:
    """Warn when the band edge varies across the body by more than the C1-C2 spacing:
    first-order subband edges (and the confinement-shifted gap) are then unreliable."""
    semi = es.frame.mesh.node_semiconductor
    ec = es.ec_map_eV[:, semi]
    spread = float(np.max(ec.max(axis=1) - ec.min(axis=1)))
    spacing = sb.conduction[1].energy_eV - sb.conduction[0].energy_eV if len(sb.conduction) > 1 \
        else sb.conduction[0].energy_eV
    if spread > spacing:
        return (f"band edge varies by {spread:.2f} eV across the body, more than the C1-C2 "
                f"spacing ({spacing:.2f} eV): first-order subband edges are unreliable here.",)
    return ()


DEGENERACY_WARN_EV = 0.5  # Fermi level this far inside a band: parabolic DOS overstated
#: with the 2D subband charge: Fermi level this far beyond the first subband edge (about
#: the InAs gap; engineering choice, no source) [eV]
SUBBAND_DEGENERACY_WARN_EV = 0.3


def design_warnings(design: Design) -> tuple[str, ...]:
    """Warnings about the model's validity for a design (empty when none).

    An indirect gap (no phonon-assisted tunnelling), a body so thin that a satellite (L
    or X) valley's confined state lies below the Gamma subband C1, band-gap narrowing
    asked for a material without a model, and contacts doped
    so heavily that
    the parabolic density of states puts the Fermi level more than 0.5 eV inside the
    band (non-parabolicity and satellite valleys, not modelled in the charge, would
    hold it lower).
    """
    return _design_warnings(design)


@lru_cache(maxsize=256)
def _design_warnings(design: Design) -> tuple[str, ...]:
    out = []
    text = check_tunnelling_material(design.semiconductor)
    if text:
        out.append(text)
    valley = valley_warning(design)
    if valley:
        out.append(valley)
    if (design.tail_energy_source_meV > 0 or design.tail_energy_channel_meV > 0) \
            and group_iv_germanium_fraction(design.semiconductor) is not None:
        out.append("band tails are not modelled for the phonon-assisted tunnelling of "
                   f"{design.material}: no tail current added.")
    if design.bandgap_narrowing == "on" and not has_narrowing_model(design.material):
        out.append(f"bandgap_narrowing is on, but sub60 has no band-gap-narrowing model for "
                   f"{design.material}: no narrowing applied.")
    bands = band_parameters(design)
    nc_src, nv_src = design.source_semiconductor.effective_dos_cm3(design.temperature_K)
    n_src = ("source_doping_cm3", design.source_doping_cm3,
             nv_src if design.source_type == "p" else nc_src)
    for name, dop, dos in (n_src, ("drain_doping_cm3", design.drain_doping_cm3, bands.nc_cm3)):
        depth = bands.kT_eV * float(inverse_fermi_half(dop / dos))
        if depth > DEGENERACY_WARN_EV:
            where = design.source_semiconductor_name if name.startswith("source") \
                else design.material
            out.append(f"{name} = {dop:.3g} cm^-3 puts the Fermi level {depth:.2f} eV inside the "
                       f"band of {where} with the model's parabolic density of states; "
                       "real bands (non-parabolic, satellite valleys) hold it lower, so currents "
                       "from this contact are overstated.")
    if design.charge_model == "subbands":
        out.extend(_subband_charge_warnings(design))
    return tuple(out)


def _subband_charge_warnings(design: Design) -> list[str]:
    """Cautions of the 2D-subband charge (`physics.subband_charge`): one conduction valley
    only, and contacts whose Fermi level lies deep in a band (conduction: parabolic
    in-plane subbands; holes: coupled 4x4 k.p subbands without the split-off band)."""
    from sub60.physics.subband_charge import contact_fermi_depth_eV

    out = []
    rec = design.semiconductor
    if rec.electron_dos_mass > 1.05 * rec.electron_mass:
        out.append(f"charge_model 'subbands' counts one conduction valley of {design.material} "
                   "with its confinement masses; the valley degeneracy of its bulk density of "
                   "states is not in the subband charge, so electrons are undercounted.")
    src_design = design.source_body_design() if design.is_heterojunction else design
    for name, d, dop, electrons in (
            ("source_doping_cm3", src_design, design.source_doping_cm3, design.source_type == "n"),
            ("drain_doping_cm3", design, design.drain_doping_cm3, True)):
        depth = contact_fermi_depth_eV(d, dop, electrons)
        if depth > SUBBAND_DEGENERACY_WARN_EV:
            out.append(f"{name} = {dop:.3g} cm^-3 puts the Fermi level {depth:.2f} eV beyond the "
                       "first subband edge with the 2D subband charge; that deep, the "
                       "subbands' in-plane dispersions (parabolic for electrons, 4x4 k.p "
                       "without the split-off band for holes) and the single Gamma valley "
                       "are outside their range.")
    return out


class Simulator:
    """Solves bias points with caching and continuation (thread-safe).

    Parameters
    ----------
    resolution : float
        grid refinement factor [-].
    model : str
        tunnelling model, one of `TUNNELLING_MODELS`.
    cache_bytes : int
        memory budget of the cache of solved bias points [B]: the bytes of their arrays
        plus, once each, those of the device structures they refer to; least recently
        used points are dropped first (0: no cache).

    Notes
    -----
    Besides the cache, the last solution of at most 16 designs is kept for warm starts,
    and the points `transfer_curve` adds by refinement are kept per curve (at most
    `REFINED_CURVES`): keyed by the design, the drain voltage, the requested gate voltages,
    their currents and the figure-of-merit settings, and read by refinement only, so that
    the cache of solved points and the warm starts stay those of the requested points.
    """

    def __init__(self, resolution: float = 1.0, model: str = "two-band",
                 cache_bytes: int = DEFAULT_CACHE_BYTES):
        if model not in TUNNELLING_MODELS:
            raise ValueError(f"model: {model!r} unknown; allowed "
                             + ", ".join(repr(m) for m in TUNNELLING_MODELS))
        self.resolution = float(resolution)
        self.model = model
        self._cache: ByteLRU[BiasPoint] = ByteLRU(
            cache_bytes, lambda bp: bp.nbytes,
            lambda bp: (id(bp.electrostatics.frame), bp.electrostatics.frame.nbytes))
        self._last: OrderedDict[Design, Electrostatics] = OrderedDict()
        # (V_g, V_d, I / I_0) of the last two stored points with access resistances
        self._series_ratios: OrderedDict[Design, list[tuple[float, float, float]]] = OrderedDict()
        # refined Id(Vg) of the last transfer curves: (Vg, Id) with the added points
        self._refined: OrderedDict[tuple, tuple[np.ndarray, np.ndarray]] = OrderedDict()
        self._lock = threading.RLock()

    def __repr__(self) -> str:
        info = self._cache.info()
        return (f"Simulator(resolution={self.resolution:g}, model={self.model!r}, "
                f"{info.entries} points cached, {info.nbytes / 2**20:.1f} of "
                f"{info.max_bytes / 2**20:.0f} MiB)")

    def cache_info(self) -> CacheInfo:
        """Occupancy of the cache of solved points: entries, bytes, budget, hits, misses."""
        return self._cache.info()

    def clear_cache(self) -> None:
        """Drop the cached points and the warm starts."""
        with self._lock:
            self._cache.clear()
            self._last.clear()
            self._series_ratios.clear()
            self._refined.clear()

    def solve_bias(self, design: Design, vg_V: float, vd_V: float,
                   initial: Electrostatics | None = None, store: bool = True,
                   electrostatics_from: Design | None = None) -> BiasPoint:
        """One bias point; cached; warm-started from the design's last solution.

        ``store=False`` (used for the points a transfer curve adds by refinement) reads
        the cache but neither stores the point nor makes it the design's warm start, so
        that later sweeps follow the same continuation path with or without refinement.
        ``electrostatics_from``: a design that differs from ``design`` only in
        `CURRENT_ONLY_FIELDS` (`same_electrostatics`); when its point at this bias is
        cached, its electrostatics are used as they are (no Poisson solve) and only the
        current is computed.
        """
        vg_V, vd_V = check_bias(vg_V, vd_V)
        key = (design, vg_V, vd_V)
        hit = self._cache.get(key)
        if hit is not None:
            return hit
        shared = None
        if electrostatics_from is not None and electrostatics_from != design:
            if not same_electrostatics(design, electrostatics_from):
                raise ValueError("electrostatics_from: the designs differ in more than "
                                 + ", ".join(CURRENT_ONLY_FIELDS))
            shared = self._cache.get((electrostatics_from, vg_V, vd_V))
        with self._lock:
            start = initial or self._last.get(design)
        with single_blas_thread():
            if shared is not None:
                es, notes = dataclasses.replace(shared.electrostatics, design=design), ()
                bp = bias_point_from_electrostatics(es, self.model)
                bp.timings_s["poisson"] = 0.0
            elif design.source_resistance_ohm_um > 0 or design.drain_resistance_ohm_um > 0:
                bp, es, notes = self._series_point(design, vg_V, vd_V, start, store)
            else:
                t0 = time.perf_counter()
                es, notes = self._electrostatics(design, vg_V, vd_V, start)
                t1 = time.perf_counter()
                bp = bias_point_from_electrostatics(es, self.model)
                bp.timings_s["poisson"] = t1 - t0
        if notes:
            bp = dataclasses.replace(bp, solver_notes=notes)
        _check_finite(bp)
        if not store:
            return bp
        with self._lock:
            self._last[design] = es
            if len(self._last) > 16:
                self._last.pop(next(iter(self._last)))
        self._cache.put(key, bp)
        return bp

    def _series_point(self, design: Design, vg_V: float, vd_V: float, start: Electrostatics | None,
                      store: bool) -> tuple[BiasPoint, Electrostatics, tuple[str, ...]]:
        """A bias point with access resistances: intrinsic solves at V_gs' = V_g - I R_s,
        V_ds' = V_d - I (R_s + R_d) until the current is self-consistent
        (`series_resistance.solve_series_resistance`). The first solve (at the external
        bias) starts from ``start``; every later one from the same two anchors, ``start``
        and that first solution, extrapolated to its voltages (`_along`), never from the
        previous trial: the root finder needs I_int(V') to be a function of V' alone, and
        with the twin's barrier-top split of the quasi-Fermi levels the converged split
        node (hence the current, ~10 % with an interface-trap sheet) depends on the
        start. The ratio I / I_0 of the design's last two stored points, extrapolated to
        this bias, places the second solve. Timings are summed over the solves."""
        state: dict[str, Any] = {"start": start, "notes": ()}
        timings: dict[str, float] = {}

        def intrinsic(vg: float, vd: float) -> float:
            t0 = time.perf_counter()
            warm = _along(start, state["first"], vg, vd) if "first" in state else start
            es, notes = self._electrostatics(design, vg, vd, warm)
            state.setdefault("first", es)
            t1 = time.perf_counter()
            bp = bias_point_from_electrostatics(es, self.model)
            for stage, dt in {**bp.timings_s, "poisson": t1 - t0}.items():
                timings[stage] = timings.get(stage, 0.0) + dt
            state.update(start=es, bp=bp, notes=state["notes"] + tuple(
                n for n in notes if n not in state["notes"]))
            return bp.current_uA_per_um

        from sub60.physics.series_resistance import solve_series_resistance  # only with resistances

        with self._lock:
            history = list(self._series_ratios.get(design, ()))
        try:
            sol = solve_series_resistance(intrinsic, vg_V, vd_V, design.source_resistance_ohm_um,
                                          design.drain_resistance_ohm_um,
                                          ratio_guess=_extrapolate_ratio(history, vg_V, vd_V))
        except ArithmeticError as exc:
            raise SolverError(str(exc)) from None
        if store and sol.current_at_external_bias_uA_per_um != 0:
            ratio = sol.current_uA_per_um / sol.current_at_external_bias_uA_per_um
            with self._lock:
                self._series_ratios[design] = (history + [(vg_V, vd_V, ratio)])[-2:]
                self._series_ratios.move_to_end(design)
                if len(self._series_ratios) > 16:
                    self._series_ratios.pop(next(iter(self._series_ratios)))
        bp = dataclasses.replace(state["bp"], vg_V=vg_V, vd_V=vd_V, series_resistance=sol,
                                 timings_s=timings)
        return bp, state["start"], state["notes"]

    def _electrostatics(self, design: Design, vg_V: float, vd_V: float,
                        start: Electrostatics | None) -> tuple[Electrostatics, tuple[str, ...]]:
        """Solve with fallbacks; returns the solution and notes on what was needed.

        1. Newton from the warm start (or the charge-neutral guess);
        2. a bias ramp in 8 steps from the warm start, or from equilibrium at the same
           gate voltage (V_d = 0, then V_g) when there is none;
        3. heavier damping (updates capped at 0.1 V, 200 steps) from the last good state;
        4. a finer grid (1.5x) with heavier damping.
        """
        res = self.resolution
        try:
            return solve_electrostatics(design, vg_V, vd_V, initial=start, resolution=res), ()
        except SolverError as exc:
            first = exc
        anchor = start
        try:
            if anchor is None:  # equilibrium at Vg = 0 is the easiest point of a design
                anchor = solve_electrostatics(design, 0.0, 0.0, resolution=res, max_iter=200,
                                              max_step_V=0.1)
            es = anchor
            for f in np.linspace(0, 1, 9)[1:]:
                vg = anchor.vg_V + (vg_V - anchor.vg_V) * f
                vd = anchor.vd_V + (vd_V - anchor.vd_V) * f
                es = solve_electrostatics(design, vg, vd, initial=es, resolution=res, max_iter=100)
            return es, (f"bias ramp in 8 steps from Vg = {anchor.vg_V:g} V, Vd = {anchor.vd_V:g} V",)
        except SolverError:
            pass
        try:
            es = solve_electrostatics(design, vg_V, vd_V, initial=anchor, resolution=res,
                                      max_iter=200, max_step_V=0.1)
            return es, ("heavier damping (updates capped at 0.1 V)",)
        except SolverError:
            pass
        try:
            es = solve_electrostatics(design, vg_V, vd_V, resolution=1.5 * res, max_iter=200,
                                      max_step_V=0.1)
            return es, (f"finer grid ({1.5 * res:g}x) with heavier damping",)
        except SolverError as exc:
            raise SolverError(f"{first.summary}; bias ramp, heavier damping and a finer grid "
                              "also failed", exc.history) from None

    def transfer_curve(
        self, design: Design, vg_V: np.ndarray, vd_V: float,
        ioff_target_uA_per_um: float = 1e-3, vdd_V: float = 0.3,
        progress: Callable[[int, int], None] | None = None,
        cancelled: Callable[[], bool] | None = None,
        slots: threading.Semaphore | None = None,
        refine: bool = True, ss_floor_uA_per_um: float | None = None,
        electrostatics_from: Design | None = None, warm_from: Design | None = None,
    ) -> TransferCurve:
        """Id-Vg at fixed V_d with continuation along V_g, and its figures of merit.

        The temperature is the design's (``design.temperature_K``); ``ioff_target_uA_per_um``
        [uA/um] and ``vdd_V`` [V] set the figures of merit (`figures_of_merit`).
        progress(i, n) is called after each requested point; cancelled() before each
        point (True stops the sweep with InterruptedError); with ``slots`` each point is
        solved while holding one slot of that semaphore, so that many concurrent sweeps
        share the cores point by point and leave room for single bias points.

        With ``refine`` (default) the curve is then refined where the figures of merit
        are read (`physics.metrics.refine_curve`, bisection down to 2.5 mV), each new
        point warm-started from its nearest solved neighbour, so that the metrics do not
        depend on the requested spacing; ``ss_floor_uA_per_um`` is the SS_min floor
        (None: Ioff target / 100). ``electrostatics_from``: a design differing only in
        `CURRENT_ONLY_FIELDS` whose cached points lend their electrostatics (`solve_bias`).
        ``warm_from``: a nearby design on the same grid whose cached point at each bias
        (when there is one) starts Newton there, instead of the extrapolation along the
        curve (a fit's knob steps: the solution moves little between the two designs).
        """
        vg = np.asarray(vg_V, float)
        points: list[BiasPoint] = []
        for i, v in enumerate(vg):
            if cancelled is not None and cancelled():
                raise InterruptedError("transfer curve superseded")
            with slots if slots is not None else contextlib.nullcontext():
                start = _predict(points, float(v), "vg_V")
                if warm_from is not None and warm_from != design:
                    near = self._cache.get((warm_from, *check_bias(float(v), vd_V)))
                    start = near.electrostatics if near is not None else start
                bp = self.solve_bias(design, float(v), vd_V, initial=start,
                                     electrostatics_from=electrostatics_from)
            points.append(bp)
            if progress is not None:
                progress(i + 1, vg.size)
        current = np.array([p.current_uA_per_um for p in points])
        btbt = np.array([p.btbt_uA_per_um for p in points])
        # thermionic: what is neither band-to-band (ideal or through tails) nor trap-assisted
        therm = current - btbt - np.array([p.tail_excess_uA_per_um + p.trap_assisted_uA_per_um
                                           for p in points])
        settings = {"temperature_K": design.temperature_K,
                    "ioff_target_uA_per_um": ioff_target_uA_per_um, "vdd_V": vdd_V,
                    "ss_floor_uA_per_um": ss_floor_uA_per_um}
        vg_all, id_all = vg, current
        refined_key = (design, float(vd_V), vg.tobytes(), current.tobytes(),
                       float(ioff_target_uA_per_um), float(vdd_V),
                       None if ss_floor_uA_per_um is None else float(ss_floor_uA_per_um))
        if refine and vg.size >= 3 and np.all(np.diff(vg) > 0):
            with self._lock:
                known = self._refined.get(refined_key)
                if known is not None:
                    self._refined.move_to_end(refined_key)
        else:
            refine = False
        if refine and known is not None:
            # the same requested points (bit for bit) refine to the same points: refinement
            # is a function of them and of the settings alone (its points are not stored)
            vg_all, id_all = (a.copy() for a in known)
        elif refine:
            solved = {float(v): p for v, p in zip(vg, points, strict=True)}

            def evaluate(new: np.ndarray) -> np.ndarray:
                out = []
                for v in new:
                    if cancelled is not None and cancelled():
                        raise InterruptedError("transfer curve superseded")
                    with slots if slots is not None else contextlib.nullcontext():
                        bp = self.solve_bias(design, float(v), vd_V,
                                             initial=_between(solved, float(v)), store=False)
                    solved[float(v)] = bp
                    out.append(bp.current_uA_per_um)
                return np.array(out)

            vg_all, id_all = refine_curve(vg, current, evaluate, **settings)
            with self._lock:
                self._refined[refined_key] = (vg_all.copy(), id_all.copy())
                while len(self._refined) > REFINED_CURVES:
                    self._refined.pop(next(iter(self._refined)))
        metrics = figures_of_merit(vg_all, id_all, **settings)
        # the point swing of the requested samples alone: a refinement decision (which
        # can differ between two solves of the same curve at round-off) never changes it
        swing = point_swing_mV_per_dec(vg, current)
        series = _series_columns(points)
        return TransferCurve(design, float(vd_V), vg, current, btbt, therm, swing, metrics,
                             vg_all, id_all, series.get("intrinsic"), series.get("vg"),
                             series.get("vd"))

    def output_curve(self, design: Design, vg_V: float, vd_V: np.ndarray,
                     slots: threading.Semaphore | None = None) -> OutputCurve:
        """Id-Vd at fixed V_g with continuation along V_d (``slots``: as in transfer_curve)."""
        vd = np.asarray(vd_V, float)
        points: list[BiasPoint] = []
        for v in vd:
            with slots if slots is not None else contextlib.nullcontext():
                points.append(self.solve_bias(design, vg_V, float(v),
                                              initial=_predict(points, float(v), "vd_V")))
        out = [p.current_uA_per_um for p in points]
        series = _series_columns(points)
        return OutputCurve(design, float(vg_V), vd, np.array(out), series.get("intrinsic"),
                           series.get("vd"))


def _along(a: Electrostatics | None, b: Electrostatics | None, vg_V: float,
           vd_V: float) -> Electrostatics | None:
    """Warm start for (V_g, V_d) from two solutions: the potential extrapolated linearly
    along the line through their biases (the projection of the target on it, within twice
    their distance), else the latest one."""
    if a is None or b is None or a.frame is not b.frame:
        return b
    dg, dd = b.vg_V - a.vg_V, b.vd_V - a.vd_V
    norm = dg * dg + dd * dd
    if norm == 0:
        return b
    f = ((vg_V - b.vg_V) * dg + (vd_V - b.vd_V) * dd) / norm
    if not 0 < abs(f) <= 2:
        return b
    return dataclasses.replace(b, psi_V=b.psi_V + f * (b.psi_V - a.psi_V))


def _extrapolate_ratio(history: list[tuple[float, float, float]], vg_V: float,
                       vd_V: float) -> float | None:
    """I / I_0 at a bias predicted from the last two points of a sweep: linear along the
    terminal that moved, within twice the last step (the last ratio otherwise); None
    without history."""
    if not history:
        return None
    (vg2, vd2, r2) = history[-1]
    if len(history) < 2:
        return r2
    vg1, vd1, r1 = history[-2]
    if abs(vg2 - vg1) >= abs(vd2 - vd1) and vg2 != vg1:
        f = (vg_V - vg2) / (vg2 - vg1)
    elif vd2 != vd1:
        f = (vd_V - vd2) / (vd2 - vd1)
    else:
        return r2
    if not 0 < abs(f) <= 2:
        return r2
    return min(1.0, max(0.05, r2 + f * (r2 - r1)))


def _series_columns(points: list[BiasPoint]) -> dict[str, np.ndarray]:
    """Intrinsic current and voltages of solved points with access resistances ({} without)."""
    if not points or points[0].series_resistance is None:
        return {}
    sols = [p.series_resistance for p in points]
    return {"intrinsic": np.array([s.current_at_external_bias_uA_per_um for s in sols]),
            "vg": np.array([s.vg_intrinsic_V for s in sols]),
            "vd": np.array([s.vd_intrinsic_V for s in sols])}


def _check_finite(bp: BiasPoint) -> None:
    """A returned result holds no NaN or inf (raises SolverError otherwise)."""
    es = bp.electrostatics
    arrays = {"potential": es.psi_V, "electron density": es.n_cm3, "hole density": es.p_cm3,
              "subband edges": np.concatenate([bp.conduction_eV, bp.valence_eV]),
              "spectral current": bp.spectrum.current_density}
    for name, arr in arrays.items():
        if not np.all(np.isfinite(arr)):
            raise SolverError(f"non-finite {name} at Vg = {bp.vg_V:g} V, Vd = {bp.vd_V:g} V")
    if not np.isfinite(bp.current_uA_per_um):
        raise SolverError(f"non-finite current at Vg = {bp.vg_V:g} V, Vd = {bp.vd_V:g} V")


def _between(solved: dict[float, BiasPoint], v: float) -> Electrostatics:
    """Warm start for a gate voltage inside a solved sweep: the potential interpolated
    linearly between the solved neighbours on either side (the nearest one at an end)."""
    known = np.array(sorted(solved))
    k = int(np.searchsorted(known, v))
    if k == 0 or k == known.size:
        return solved[float(known[min(k, known.size - 1)])].electrostatics
    lo, hi = solved[float(known[k - 1])].electrostatics, solved[float(known[k])].electrostatics
    f = (v - lo.vg_V) / (hi.vg_V - lo.vg_V)
    return dataclasses.replace(lo, psi_V=lo.psi_V + f * (hi.psi_V - lo.psi_V))


def _predict(points: list[BiasPoint], v: float, terminal: str) -> Electrostatics | None:
    """Warm start for the next point of a sweep: the last solution, or a linear
    (secant) extrapolation of the last two potentials along the swept terminal."""
    if not points:
        return None
    last = points[-1].electrostatics
    if len(points) < 2:
        return last
    prev = points[-2].electrostatics
    dv = getattr(last, terminal) - getattr(prev, terminal)
    if dv == 0:
        return last
    f = (v - getattr(last, terminal)) / dv
    if not 0 < f <= 2:
        return last
    return dataclasses.replace(last, psi_V=last.psi_V + f * (last.psi_V - prev.psi_V))


_default = Simulator()


def solve_bias(design: Design, vg_V: float, vd_V: float) -> BiasPoint:
    """One bias point of a design at gate and drain voltages [V] (shared default
    simulator; its cache is bounded by `DEFAULT_CACHE_BYTES`, see `cache_info`)."""
    return _default.solve_bias(design, vg_V, vd_V)


def transfer_curve(design: Design, vg_V: np.ndarray, vd_V: float, **kw: Any) -> TransferCurve:
    """Id-Vg sweep of a design at gate voltages [V] and a drain voltage [V] (shared default
    simulator; keywords as `Simulator.transfer_curve`)."""
    return _default.transfer_curve(design, vg_V, vd_V, **kw)


def output_curve(design: Design, vg_V: float, vd_V: np.ndarray) -> OutputCurve:
    """Id-Vd sweep of a design at a gate voltage [V] and drain voltages [V] (shared
    default simulator)."""
    return _default.output_curve(design, vg_V, vd_V)


def cache_info() -> CacheInfo:
    """Occupancy of the shared default simulator's cache (entries, bytes, budget)."""
    return _default.cache_info()


def clear_cache() -> None:
    """Empty the shared default simulator's cache and warm starts."""
    _default.clear_cache()
