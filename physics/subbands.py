"""Confinement subbands of a design's body and their edge profiles along x.

The body between its two dielectrics is a finite quantum well in y. For each carrier
kind the lowest states of the flat well are found with `physics.confinement`
(BenDaniel–Duke, non-parabolic conduction band); along x each subband edge follows the
2D potential weighted by the state's |phi(y)|^2 (first-order perturbation theory,
e.g. Davies, The Physics of Low-dimensional Semiconductors, 1998, ch. 6 — from memory):

    E_c,n(x) = E_c,n^0 + int |phi_n(y)|^2 E_c(x, y) dy                      (1)
    E_v,m(x) = -E_v,m^0 + int |phi_m(y)|^2 E_v(x, y) dy

with E_c,n^0 (E_v,m^0) the confinement energy above (below) the bulk edge.
Conduction: electron mass of the Gamma valley with Kane non-parabolicity alpha (taken
from the gap at the working temperature), E(1 + alpha E) = hbar^2 k^2 / 2m*; a subband
whose edge lies E_n above the band edge moves in the plane with the band's mass at that
energy, m_n = m* (1 + 2 alpha E_n) (differentiate E(1 + alpha E) = hbar^2 (k_n^2 +
k_par^2)/2m* at k_par = 0; e.g. Nag, Electron Transport in Compound Semiconductors,
Springer 1980 — from memory), used for transport and the transverse integral. Holes:
heavy and light holes with the Luttinger masses along [001] for confinement and in
the (001) plane for transport and transverse motion (Luttinger 1956; Davies 1998 —
from memory); the two kinds are treated as uncoupled.

Interband coupling of a (valence m, conduction n) pair, used to weight its tunnelling
current (`pair_weights`):

    w_mn = M_m |<phi_c,n | phi_v,m>|^2                                          (2)

The envelope overlap is the selection rule of the confined states (parity: in a
symmetric well only pairs of equal parity couple; Chuang, Physics of Optoelectronic
Devices, Wiley 1995, ch. 9 — from memory). M_m is the share of the bulk two-band
coupling carried by the hole kind for transport in the plane of the body. With the
Bloch functions of the J = 3/2 quartet quantised along the confinement axis z
(HH: (X + iY)/sqrt2, LH: [(X + iY) down - 2 Z up]/sqrt6 up to phases) and P = <S|p_x|X>,
summing over spins gives |<S|p_x|HH>|^2 = P^2/2, |<S|p_x|LH>|^2 = P^2/6 and, for the
split-off band, P^2/3 (derived here; these are the "TE" band-edge weights 3/2 M_b^2 and
1/2 M_b^2 with M_b^2 = P^2/3 of Chuang 1995, ch. 9 — from memory). The two-band (Kane)
tunnelling model represents the bulk channel along x: quantised along x, the light hole
carries 2/3 P^2 and the heavy hole none. Relative to that channel M_HH = (1/2)/(2/3) =
3/4 and M_LH = (1/6)/(2/3) = 1/4, which sum to 1: a thick body with nearly degenerate
HH and LH subbands gets back the bulk two-band current.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property, lru_cache

import numpy as np

from sub60.physics.confinement import solve_subbands, subband_weights
from sub60.physics.constants import HBAR2_2M0_EV_NM2
from sub60.physics.design import Design
from sub60.physics.materials import BURIED_OXIDE, get_dielectric

#: share of the bulk two-band interband coupling for in-plane transport, eq. (2) [-]
MOMENTUM_WEIGHT = {"conduction": 1.0, "HH": 0.75, "LH": 0.25}
N_CONDUCTION = 2
N_HEAVY = 2
N_LIGHT = 1
BARRIER_NM = 2.5  # barrier thickness kept in the well problem; |phi|^2 there is < 1e-9
SPACING_NM = 0.05


@dataclass(frozen=True, eq=False)
class Subband:
    """One confinement subband.

    label : e.g. "C1", "HH1", "LH1"; kind : "conduction" or "valence";
    energy_eV : confinement energy, above E_c (conduction) or below E_v (valence) [eV];
    inplane_mass : mass for motion along x and across the width [m0];
    y_nm, density : |phi(y)|^2 on the fine well grid [nm, 1/nm], y in mesh coordinates;
    wavefunction : phi(y), signed, normalised to trapezoid(phi^2, y) = 1 [nm^-1/2];
    momentum_weight : share of the bulk two-band coupling, eq. (2) [-].
    """

    label: str
    kind: str
    energy_eV: float
    inplane_mass: float
    y_nm: np.ndarray
    density: np.ndarray
    wavefunction: np.ndarray
    momentum_weight: float = 1.0


@dataclass(frozen=True, eq=False)
class DeviceSubbands:
    """The subbands of a design's body (bias independent)."""

    conduction: tuple[Subband, ...]
    valence: tuple[Subband, ...]
    #: (y [nm], body mask per cell, electron barrier per cell [eV], barrier mass [m0])
    electron_well: tuple = ()

    @property
    def conduction_shift_eV(self) -> float:
        """Lowest conduction subband above the bulk edge [eV] (feeds the charge)."""
        return self.conduction[0].energy_eV

    @property
    def valence_shift_eV(self) -> float:
        """Highest valence subband below the bulk edge [eV] (feeds the charge)."""
        return min(s.energy_eV for s in self.valence)

    def pair_weights(self) -> np.ndarray:
        """Interband coupling w_mn of each (valence m, conduction n) pair, eq. (2) [-].

        Returns
        -------
        (n_v, n_c) array: M_m |<phi_c,n|phi_v,m>|^2 (trapezoid rule on the common well
        grid); 0 for a parity-forbidden pair of a symmetric body.
        """
        return _pair_weights_cached(self)

    def profiles(self, y_nodes_nm: np.ndarray, ec_map_eV: np.ndarray, eg_eV: float):
        """Subband edge profiles along x, eq. (1).

        Parameters
        ----------
        y_nodes_nm : (ny,) mesh rows [nm]; ec_map_eV : (nx, ny) bulk conduction edge [eV];
        eg_eV : bulk gap [eV].

        Returns
        -------
        conduction : (n_c, nx) [eV]; valence : (n_v, nx) [eV]
        """
        wc = self._weights(y_nodes_nm, "conduction")
        wv = self._weights(y_nodes_nm, "valence")
        ec = wc @ ec_map_eV.T + np.array([s.energy_eV for s in self.conduction])[:, None]
        ev = wv @ (ec_map_eV.T - eg_eV) - np.array([s.energy_eV for s in self.valence])[:, None]
        return ec, ev

    def _weights(self, y_nodes_nm: np.ndarray, kind: str) -> np.ndarray:
        return _weights_cached(self, tuple(np.round(y_nodes_nm, 12)), kind)


@lru_cache(maxsize=64)
def _pair_weights_cached(sb: DeviceSubbands) -> np.ndarray:
    out = np.empty((len(sb.valence), len(sb.conduction)))
    for i, v in enumerate(sb.valence):
        for j, c in enumerate(sb.conduction):
            overlap = np.trapezoid(v.wavefunction * c.wavefunction, v.y_nm)
            out[i, j] = v.momentum_weight * c.momentum_weight * overlap**2
    return out


@lru_cache(maxsize=64)
def _weights_cached(sb: DeviceSubbands, y_nodes: tuple[float, ...], kind: str) -> np.ndarray:
    y = np.array(y_nodes)
    bands = sb.conduction if kind == "conduction" else sb.valence
    rows = []
    for s in bands:
        from sub60.physics.confinement import Subbands

        tmp = Subbands(energies_eV=np.array([s.energy_eV]),
                       wavefunctions=np.sqrt(s.density)[None, :], y_nm=s.y_nm)
        rows.append(subband_weights(tmp, y)[0])
    return np.array(rows)


def _stack(design: Design):
    """Bottom dielectric, body, top dielectric and the body's y position in the mesh."""
    top = design.gate_dielectric
    bottom = top if design.gate_layout == "double" else get_dielectric(BURIED_OXIDE)
    y0 = design.oxide_thickness_nm if design.gate_layout == "double" \
        else design.buried_oxide_thickness_nm
    return bottom, top, y0


def _well(design: Design):
    """The flat well across the body: (y [nm], body mask per cell, electron barrier
    per cell [eV], hole barrier per cell [eV], barrier mass per cell [m0], alpha of the
    body [1/eV], y of the body's bottom face in mesh coordinates [nm])."""
    sc_rec = design.semiconductor
    bottom, top, y0 = _stack(design)
    t = design.body_thickness_nm
    h = SPACING_NM
    n_body = max(20, int(np.ceil(t / h)))
    n_bar = int(np.ceil(BARRIER_NM / h))
    y = np.concatenate([np.linspace(-BARRIER_NM, 0.0, n_bar + 1)[:-1], np.linspace(0.0, t, n_body + 1),
                        np.linspace(t, t + BARRIER_NM, n_bar + 1)[1:]])
    # per-cell materials (BenDaniel-Duke matching exact at the interface nodes)
    body = np.r_[np.zeros(n_bar, bool), np.ones(n_body, bool), np.zeros(n_bar, bool)]
    below = np.r_[np.ones(n_bar, bool), np.zeros(n_body + n_bar, bool)]
    eg = sc_rec.bandgap_eV(design.temperature_K)

    def barrier(value_bottom: float, value_top: float) -> np.ndarray:
        return np.where(body, 0.0, np.where(below, value_bottom, value_top))

    # electron barrier: affinity difference; hole barrier: valence-band offset
    ve = barrier(sc_rec.electron_affinity_eV - bottom.electron_affinity_eV,
                 sc_rec.electron_affinity_eV - top.electron_affinity_eV)
    vh = barrier(bottom.electron_affinity_eV + bottom.bandgap_eV - sc_rec.electron_affinity_eV - eg,
                 top.electron_affinity_eV + top.bandgap_eV - sc_rec.electron_affinity_eV - eg)
    m_bar = barrier(bottom.tunnelling_mass, top.tunnelling_mass)
    alpha_body = sc_rec.nonparabolicity_at_per_eV(design.temperature_K)
    return y, body, ve, vh, m_bar, alpha_body, y0


def _states(design: Design, counts: tuple[int, int, int]) -> tuple[list[Subband], list[Subband]]:
    """The lowest (conduction, HH, LH) = ``counts`` flat-well states (a count may be 0):
    conduction states, and the valence states sorted by confinement energy."""
    y, body, ve, vh, m_bar, alpha_body, y0 = _well(design)
    kinds = _kinds(design, ve, vh, alpha_body)
    out = [_kind_states(y, body, m_bar, y0, *kinds[i], n) if n else []
           for i, n in enumerate(counts)]
    return out[0], sorted(out[1] + out[2], key=lambda s: s.energy_eV)


def _kinds(design: Design, ve, vh, alpha_body):
    """(potential, confinement mass, label, kind, in-plane mass, alpha per cell flag,
    alpha of the in-plane mass) of C, HH and LH."""
    rec = design.semiconductor
    return ((ve, rec.electron_mass, "C", "conduction", rec.electron_mass, True, alpha_body),
            (vh, rec.heavy_hole_mass_confined, "HH", "valence", rec.heavy_hole_mass_inplane,
             False, 0.0),
            (vh, rec.light_hole_mass_confined, "LH", "valence", rec.light_hole_mass_inplane,
             False, 0.0))


def _kind_states(y, body, m_bar, y0, v, m_well, labels, kind, inplane, nonparabolic,
                 a_inplane, n) -> list[Subband]:
    alpha = np.where(body, a_inplane, 0.0) if nonparabolic else 0.0
    mass = np.where(body, m_well, m_bar)
    sb = solve_subbands(y, v, mass, n_states=n, nonparabolicity_per_eV=alpha)
    weight = MOMENTUM_WEIGHT["conduction" if kind == "conduction" else labels]
    return [Subband(f"{labels}{i + 1}", kind, float(sb.energies_eV[i]),
                    inplane * (1.0 + 2.0 * a_inplane * float(sb.energies_eV[i])),
                    y + y0, sb.wavefunctions[i] ** 2, sb.wavefunctions[i].copy(), weight)
            for i in range(n)]


@lru_cache(maxsize=64)
def device_subbands(design: Design) -> DeviceSubbands:
    """Flat-well subbands of the design's body (cached per design)."""
    cond, val = _states(design, (N_CONDUCTION, N_HEAVY, N_LIGHT))
    y, body, ve, _, m_bar, _, _ = _well(design)
    return DeviceSubbands(conduction=tuple(cond), valence=tuple(val),
                          electron_well=(y, body, ve, m_bar))


#: Confinement energy up to which subbands hold charge (`charge_subbands`) [eV], and the
#: most states of each kind (C, HH, LH) kept. Engineering choice, no source: with the
#: Fermi level up to 0.4-0.5 eV beyond the first subband (a 4e20 source; 4e19 puts it
#: 0.10 eV in with the coupled hole subbands), a subband at 0.9 eV still lies ~16 kT
#: above it at 300 K.
CHARGE_CUTOFF_EV = 0.9
CHARGE_MAX_STATES = 24


@lru_cache(maxsize=64)
def charge_subbands(design: Design) -> DeviceSubbands:
    """The flat-well subbands that hold the carriers of the body's charge (cached).

    The same well, masses and labels as `device_subbands`, with every state of each
    kind whose confinement energy is below `CHARGE_CUTOFF_EV` (at least one, at most
    `CHARGE_MAX_STATES`); the lowest of each kind are those of `device_subbands`.
    """
    y, body, ve, vh, m_bar, alpha_body, y0 = _well(design)
    found = []
    for spec in _kinds(design, ve, vh, alpha_body):
        # first guess: the parabolic infinite well, E_n = hbar^2 pi^2 n^2 / (2 m t^2),
        # which lies above the finite, non-parabolic well's states: too few, never too many
        guess = design.body_thickness_nm / np.pi * np.sqrt(CHARGE_CUTOFF_EV / HBAR2_2M0_EV_NM2
                                                           * spec[1])
        n = int(min(CHARGE_MAX_STATES, np.ceil(guess) + 2))
        while True:
            states = _kind_states(y, body, m_bar, y0, *spec, n)
            below = [s for s in states if s.energy_eV < CHARGE_CUTOFF_EV]
            if len(below) < n or n >= CHARGE_MAX_STATES:
                found.append(below or states[:1])
                break
            n = min(2 * n, CHARGE_MAX_STATES)
    return DeviceSubbands(conduction=tuple(found[0]),
                          valence=tuple(sorted(found[1] + found[2], key=lambda s: s.energy_eV)),
                          electron_well=(y, body, ve, m_bar))


@lru_cache(maxsize=64)
def satellite_edges(design: Design) -> dict[str, float]:
    """Lowest confined state of each satellite valley set (L, X) of the body [eV].

    Energies above the bulk Gamma conduction edge, comparable with the confinement
    energy of C1 (`DeviceSubbands.conduction[0].energy_eV`): the valley offset
    E_g^valley(T) - E_g^Gamma(T) (Varshni laws of `materials.SATELLITE_VALLEYS`) plus the
    ground state of the same finite well with the valley's mass along the confinement
    axis, parabolic, the barrier lowered by the offset. Empty for materials without
    satellite data (Si, Ge: their indirect gap is flagged elsewhere).
    """
    from sub60.physics.materials import satellite_valleys

    rec = design.semiconductor
    valleys = satellite_valleys(rec)
    if not valleys:
        return {}
    y, body, ve, m_bar = device_subbands(design).electron_well
    eg = float(rec.bandgap_eV(design.temperature_K))
    out = {}
    for v in valleys:
        offset = v.gap_eV(design.temperature_K) - eg
        best = np.inf
        for m_z in v.confinement_masses():
            barrier = np.where(body, 0.0, np.maximum(ve - offset, 0.0))
            sb = solve_subbands(y, barrier, np.where(body, m_z, m_bar), n_states=1)
            best = min(best, offset + float(sb.energies_eV[0]))
        out[v.name] = best
    return out


def valley_warning(design: Design) -> str | None:
    """A sentence when a satellite valley's lowest confined state lies below the Gamma
    subband C1 that the tunnelling model uses (None otherwise)."""
    edges = satellite_edges(design)
    if not edges:
        return None
    c1 = device_subbands(design).conduction[0].energy_eV
    name = min(edges, key=edges.get)
    if edges[name] >= c1:
        return None
    return (f"the lowest conduction state of this {design.body_thickness_nm:g} nm "
            f"{design.material} body is {name}-like ({edges[name]:.3f} eV above the bulk "
            f"Gamma edge, Gamma C1 at {c1:.3f} eV): the tunnelling model uses the Gamma "
            "subbands only, so band-to-band currents (an indirect, phonon-assisted path "
            "here) and the electron charge are not reliable.")


@dataclass(frozen=True, eq=False)
class HeteroSubbands:
    """Subbands of a body whose source region is of another material (heterojunction).

    Each region has the flat-well subbands of its own material (masses, confinement
    energies, |phi(y)|^2) in the same dielectric stack; a subband keeps its label across
    the interface, and its edge profile, eq. (1), takes the source material's confinement
    energy and weights at the source nodes and the body's elsewhere. The conduction and
    valence tuples (labels, in-plane masses at the drain end) are the body's; the
    valence subbands of the source, reordered to the body's labels, are `source_valence`.

    Interband coupling, eq. (2): the envelope overlap of the source valence state with
    the body conduction state (tunnelling runs from the source's valence band into the
    channel's conduction band) times the hole kind's momentum-matrix share.
    """

    body: DeviceSubbands
    source: DeviceSubbands

    @property
    def conduction(self) -> tuple[Subband, ...]:
        return self.body.conduction

    @property
    def valence(self) -> tuple[Subband, ...]:
        return self.body.valence

    @property
    def source_conduction(self) -> tuple[Subband, ...]:
        """The source region's conduction subbands, in the body's label order."""
        by_label = {s.label: s for s in self.source.conduction}
        return tuple(by_label[s.label] for s in self.body.conduction)

    @property
    def source_valence(self) -> tuple[Subband, ...]:
        """The source region's valence subbands, in the body's label order."""
        by_label = {s.label: s for s in self.source.valence}
        return tuple(by_label[s.label] for s in self.body.valence)

    @property
    def conduction_shift_eV(self) -> float:
        return self.body.conduction_shift_eV

    @property
    def valence_shift_eV(self) -> float:
        return self.body.valence_shift_eV

    def interface_values(self, y_nodes_nm: np.ndarray, ec_column_eV: np.ndarray,
                         affinity_step_eV: float, eg_body_eV: float, eg_source_eV: float):
        """Subband edges on both sides of the heterointerface node, eq. (1) [eV].

        Parameters
        ----------
        y_nodes_nm : (ny,) [nm]; ec_column_eV : (ny,) bulk conduction edge of the body
        at the interface node [eV]; affinity_step_eV : chi_body - chi_source, the rise
        of the bulk conduction edge from the body side to the source side [eV];
        eg_body_eV, eg_source_eV : the bulk gaps [eV].

        Returns
        -------
        (cond_source, val_source, cond_body, val_body) : each (n,) [eV]
        """
        col = np.asarray(ec_column_eV, float)[None, :]
        cs, vs = self._source_in_body_order.profiles(y_nodes_nm, col + affinity_step_eV,
                                                     eg_source_eV)
        cb, vb = self.body.profiles(y_nodes_nm, col, eg_body_eV)
        return cs[:, 0], vs[:, 0], cb[:, 0], vb[:, 0]

    @cached_property
    def _source_in_body_order(self) -> DeviceSubbands:
        return DeviceSubbands(self.source_conduction, self.source_valence,
                              self.source.electron_well)

    def pair_weights(self) -> np.ndarray:
        """(n_v, n_c) coupling of source valence m with body conduction n, eq. (2) [-]."""
        out = np.empty((len(self.valence), len(self.conduction)))
        for i, v in enumerate(self.source_valence):
            for j, c in enumerate(self.conduction):
                overlap = np.trapezoid(v.wavefunction * c.wavefunction, v.y_nm)
                out[i, j] = v.momentum_weight * c.momentum_weight * overlap**2
        return out

    def profiles(self, y_nodes_nm: np.ndarray, ec_map_eV: np.ndarray, eg_eV,
                 source_nodes: np.ndarray | None = None):
        """Edge profiles along x, eq. (1), region by region.

        Parameters
        ----------
        y_nodes_nm : (ny,) [nm]; ec_map_eV : (nx, ny) bulk conduction edge [eV];
        eg_eV : bulk gap, a number or (nx,) [eV]; source_nodes : (nx,) True at the nodes
        of source material (none when omitted).

        Returns
        -------
        conduction : (n_c, nx) [eV]; valence : (n_v, nx) [eV]
        """
        cond, val = self.body.profiles(y_nodes_nm, ec_map_eV, eg_eV)
        if source_nodes is None or not np.any(source_nodes):
            return cond, val
        cond_s, val_s = self._source_in_body_order.profiles(y_nodes_nm, ec_map_eV, eg_eV)
        return (np.where(source_nodes[None, :], cond_s, cond),
                np.where(source_nodes[None, :], val_s, val))


@lru_cache(maxsize=64)
def region_subbands(design: Design) -> DeviceSubbands | HeteroSubbands:
    """The subbands of a design: `device_subbands` for a homojunction, `HeteroSubbands`
    (each region's own material) for a heterojunction source."""
    if not design.is_heterojunction:
        return device_subbands(design)
    return HeteroSubbands(device_subbands(design.homojunction()),
                          device_subbands(design.source_body_design()))
