"""Ballistic Landauer current: band-to-band tunnelling plus thermionic emission.

Per unit width (transverse wave-vector k conserved, spin in the factor 2; Datta,
Electronic Transport in Mesoscopic Systems, 1995, ch. 2 — from memory):

    I/W = (2q/h) sum_pairs int dk/2pi int dE T(E, k) [f_s(E) - f_d(E)]            (1)

Band-to-band part: for each (valence subband m, conduction subband n) pair, the
transverse kinetic energy raises the conduction edge by hbar^2 k^2 / 2 m_n and lowers
the valence edge by hbar^2 k^2 / 2 m_m, widening the gap the electron sees; an energy
carries current when it lies below the valence edge at the source end and above the
conduction edge at the drain end, with T = exp(-2 int kappa dx) through every in-gap
stretch between (`physics.tunneling`). Each pair's current is multiplied by its
interband coupling w_mn (envelope overlap squared times the hole kind's momentum-matrix
share, `physics.subbands.DeviceSubbands.pair_weights`): a parity-forbidden pair carries
no current. The weight multiplies the rate, as the squared interband matrix element does
in a transfer-Hamiltonian (golden-rule) picture; the WKB exponent of each pair keeps the
two-band kappa of its own masses.

A valence subband may carry a tabulated in-plane dispersion (`InPlaneDispersion`; the
coupled 4x4 k.p hole subbands of `physics.hole_subbands` with the 2D-subband charge):
its transverse edge shift |E_v(k) - E_v(0)| then replaces hbar^2 k^2 / 2 m_m, in the
range k_max(E) and in the contact condition of every (E, k) node of the WKB kernel
(`tunneling.wkb_exponent_transverse`, ``down_shift_eV``). The tunnelling mass stays
2 m_r of the band-edge masses (the two-band imaginary branch is the one the interband
momentum matrix element couples; the heavy/light-hole mixing that makes the coupled
subband heavy sets in tens of meV inside the band). The exact two-band model takes the
same k range, but its contacts are the two-band ones: a node that only the heavier
tabulated band offers gets T = 0 from it.

Thermionic part (T = 1 above the barrier): electrons over the highest point of each
conduction subband, holes under the lowest point of each valence subband. With the
transverse integral done analytically (int du F_0(eta - u^2) = sqrt(pi) F_1/2(eta)):

    I_n/W = (2q/h) kT sqrt(2 m kT)/(2 sqrt(pi) hbar) [F_1/2(eta_s) - F_1/2(eta_d)]    (2)

with eta = (E_F - E_top)/kT for electrons and (E_bottom - E_F)/kT with the roles of
source and drain exchanged for holes. Currents are in uA/um (= A/m), positive when
electrons flow from source to drain (V_d > 0), and exactly zero when f_s = f_d.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from sub60.physics.constants import (
    ELECTRON_MASS_KG,
    ELEMENTARY_CHARGE_C,
    G0_S,
    HBAR2_2M0_EV_NM2,
    HBAR_J_S,
    PLANCK_J_S,
)
from sub60.physics.quantum import two_band_transmission
from sub60.physics.statistics import fermi_half
from sub60.physics.tunneling import TUNNELLING_MODELS, wkb_exponent_transverse

N_K = 6  # Gauss-Legendre nodes of the transverse-k integral (per energy; 2e-4 rel. vs 40)
N_E = 48  # energies of each pair's current integral, over where it flows
N_E_SCAN = 100  # energies of the k = 0 scan and of the reported spectrum
PAIR_NEGLIGIBLE = 1e-6  # pairs below this share of the largest k = 0 current are skipped
_GL_K = np.polynomial.legendre.leggauss(N_K)


def fermi(energy_eV: np.ndarray, fermi_level_eV: float, kT_eV: float) -> np.ndarray:
    """Fermi–Dirac occupation [-]."""
    return 0.5 * (1.0 - np.tanh(0.5 * (np.asarray(energy_eV) - fermi_level_eV) / kT_eV))


@dataclass(frozen=True, eq=False)
class InPlaneDispersion:
    """A subband's tabulated in-plane dispersion as a transverse edge shift.

    q_nm2 : (nq,) k^2 of the table, ascending from 0 [1/nm^2]; shift_eV : (nq,) how far
    the state of that k lies from the k = 0 edge, into the band, |E(k) - E(0)| [eV].
    The shift is made non-decreasing (its running maximum, clipped at 0: a branch that
    first moves into the gap, as a light-hole subband can, is given no states there), so
    that the states a contact offers at depth d below its edge are exactly k^2 <=
    `k2_at`(d), an interval; linear in k^2 between the table's points (exact for a
    parabolic band) and beyond its end.
    """

    q_nm2: np.ndarray
    shift_eV: np.ndarray

    def __post_init__(self) -> None:
        q = np.asarray(self.q_nm2, float)
        sh = np.maximum.accumulate(np.maximum(np.asarray(self.shift_eV, float), 0.0))
        if q.ndim != 1 or q.size < 2 or q[0] != 0.0 or np.any(np.diff(q) <= 0):
            raise ValueError("q_nm2: k^2 values ascending from 0 (at least two)")
        if sh.shape != q.shape or sh[-1] <= 0.0:
            raise ValueError("shift_eV: one shift per k^2, not all zero")
        object.__setattr__(self, "q_nm2", q)
        object.__setattr__(self, "shift_eV", sh)
        # slope of the linear continuation beyond the table [eV nm^2]
        object.__setattr__(self, "_tail", max(float((sh[-1] - sh[-2]) / (q[-1] - q[-2])), 1e-12))

    def shift(self, k2_nm2: np.ndarray) -> np.ndarray:
        """|E(k) - E(0)| at k^2 [eV]."""
        k2 = np.asarray(k2_nm2, float)
        q, sh = self.q_nm2, self.shift_eV
        return np.where(k2 <= q[-1], np.interp(k2, q, sh), sh[-1] + self._tail * (k2 - q[-1]))

    def k2_at(self, depth_eV: np.ndarray) -> np.ndarray:
        """The largest k^2 whose state lies within ``depth_eV`` of the edge [1/nm^2]
        (0 for depth <= 0): the inverse of `shift`."""
        d = np.asarray(depth_eV, float)
        q, sh = self.q_nm2, self.shift_eV
        # on a flat stretch (the clipped start) np.interp takes its last point
        inside = np.interp(d, sh, q)
        return np.where(d <= 0.0, 0.0,
                        np.where(d <= sh[-1], inside, q[-1] + (d - sh[-1]) / self._tail))

    @classmethod
    def parabolic(cls, mass_rel: float, k_max_per_nm: float = 2.5, n: int = 41
                  ) -> InPlaneDispersion:
        """The table of a parabolic band hbar^2 k^2 / 2m (for checks)."""
        q = np.linspace(0.0, k_max_per_nm**2, n)
        return cls(q, HBAR2_2M0_EV_NM2 / mass_rel * q)


@dataclass(frozen=True)
class BandProfile:
    """One subband edge along x.

    edge_eV : (nx,) [eV]; mass : in-plane mass at the contact the carriers come from or
    go to (the drain end for a conduction subband, the source end for a valence one)
    [m0]; segment_mass : (nx-1,) in-plane mass of each cell, or None when ``mass``
    holds everywhere (a heterojunction: each region's own material) [m0];
    dispersion : the in-plane dispersion at that contact when it is not parabolic (a
    valence subband from the coupled 4x4 k.p model, `physics.hole_subbands`); None:
    parabolic with ``mass``.
    """

    label: str
    edge_eV: np.ndarray
    mass: float
    segment_mass: np.ndarray | None = None
    dispersion: InPlaneDispersion | None = None

    def masses(self, n_segments: int) -> np.ndarray:
        """(n_segments,) in-plane mass of each cell [m0]."""
        if self.segment_mass is None:
            return np.full(n_segments, float(self.mass))
        return np.asarray(self.segment_mass, float)


def tunnelling_mass(cb: BandProfile, vb: BandProfile, model: str = "two-band"):
    """Tunnelling mass of a pair [m0]: m_t = 2 m_r (two-band; `physics.tunneling` eq. (1))
    or the conduction mass (one-band); a number, or (nx-1,) per cell when either profile
    has segment masses (a heterojunction: the local material's masses)."""
    if cb.segment_mass is None and vb.segment_mass is None:
        m_r = cb.mass * vb.mass / (cb.mass + vb.mass)
        return cb.mass if model == "one-band" else 2 * m_r
    n = (cb.segment_mass if cb.segment_mass is not None else vb.segment_mass).size
    mc, mv = cb.masses(n), vb.masses(n)
    return mc if model == "one-band" else 2 * mc * mv / (mc + mv)


@dataclass(frozen=True)
class Spectrum:
    """Band-to-band spectral current.

    energy_eV : (nE,) [eV]; current_density : (nE,) J(E) [uA/um per eV];
    transmission : (nE,) T(E, k=0) of the dominant pair [-]; current_uA_per_um : total;
    pair_currents_uA_per_um : current of each (valence, conduction) pair, e.g.
    "HH1-C1", weighted by its coupling [uA/um] (they sum to the total).
    """

    energy_eV: np.ndarray
    current_density: np.ndarray
    transmission: np.ndarray
    current_uA_per_um: float
    pair_currents_uA_per_um: dict[str, float] = field(default_factory=dict)

    def columns(self) -> dict[str, np.ndarray]:
        """energy_eV, current_density_uA_per_um_per_eV and transmission_1 (T(E, k = 0))
        as numpy columns (the names of a snapshot's spectrum.csv)."""
        return {"energy_eV": np.asarray(self.energy_eV, float),
                "current_density_uA_per_um_per_eV": np.asarray(self.current_density, float),
                "transmission_1": np.asarray(self.transmission, float)}

    def to_table(self):
        """`columns` as a pandas DataFrame (a dict without pandas)."""
        from sub60.physics.tables import table

        return table(self.columns())

    def __repr__(self) -> str:
        return (f"Spectrum({self.energy_eV.size} energies, "
                f"{self.current_uA_per_um:.4g} uA/um)")


def thermionic_current(
    profiles: list[BandProfile], kind: str, efs_eV: float, efd_eV: float, kT_eV: float
) -> float:
    """Over-the-barrier current of a set of subbands, eq. (2) [uA/um].

    kind : "conduction" (electrons over the highest point) or "valence" (holes under the
    lowest point).
    """
    if kind not in ("conduction", "valence"):
        raise ValueError(f"kind: {kind!r} unknown; allowed 'conduction', 'valence'")
    total = 0.0
    for prof in profiles:
        m = prof.mass * ELECTRON_MASS_KG
        kT = kT_eV * ELEMENTARY_CHARGE_C
        pref = 2 * ELEMENTARY_CHARGE_C / PLANCK_J_S * kT * np.sqrt(2 * m * kT) \
            / (2 * np.sqrt(np.pi) * HBAR_J_S)
        if kind == "conduction":
            top = float(np.max(prof.edge_eV))
            total += pref * (fermi_half((efs_eV - top) / kT_eV) - fermi_half((efd_eV - top) / kT_eV))
        else:
            bottom = float(np.min(prof.edge_eV))
            total += pref * (fermi_half((bottom - efd_eV) / kT_eV)
                             - fermi_half((bottom - efs_eV) / kT_eV))
    return float(total)


def energy_grid(
    conduction: list[BandProfile], valence: list[BandProfile], efs_eV: float, efd_eV: float,
    kT_eV: float, n: int = N_E,
) -> np.ndarray | None:
    """Energies where band-to-band current can flow: below the source valence edge,
    above the drain conduction edge, inside the Fermi window widened by 12 kT [eV].
    None when that range is empty."""
    e_hi = min(max(p.edge_eV[0] for p in valence), max(efs_eV, efd_eV) + 12 * kT_eV)
    e_lo = max(min(p.edge_eV[-1] for p in conduction), min(efs_eV, efd_eV) - 12 * kT_eV)
    if e_hi <= e_lo:
        return None
    return np.linspace(e_lo, e_hi, n)


def _pair_transmission_integral(
    x_nm: np.ndarray, cb: BandProfile, vb: BandProfile, e: np.ndarray, model: str,
    k_integral: bool = True,
) -> tuple[np.ndarray, np.ndarray]:
    """For one (valence, conduction) subband pair: (1/pi) int_0^inf T(E, k) dk [1/m]
    (zero without ``k_integral``) and T(E, k = 0), at each energy."""
    m_t = tunnelling_mass(cb, vb, model)
    # transverse kinetic energy closes the source-valence/drain-conduction overlap:
    # energy E stays connected for a k^2 < min((Ev_src - E)/b, (E - Ec_drn)/a),
    # so each energy gets its own Gauss-Legendre nodes on [0, k_max(E)]; a tabulated
    # valence dispersion replaces (Ev_src - E)/b by its own k^2 at that depth
    a, b = HBAR2_2M0_EV_NM2 / cb.mass, HBAR2_2M0_EV_NM2 / vb.mass
    disp = vb.dispersion
    k2_v = (vb.edge_eV[0] - e) / b if disp is None else disp.k2_at(vb.edge_eV[0] - e)
    k2 = np.minimum(k2_v, (e - cb.edge_eV[-1]) / a)
    k_max = np.sqrt(np.clip(k2, 0.0, None))  # (nE,)
    xg, wg = _GL_K
    if k_integral:  # row 0: k = 0 (the reported transmission); then the nodes of each energy
        k = np.vstack([np.zeros_like(e), 0.5 * k_max[None, :] * (xg[:, None] + 1)])
        wk = np.vstack([np.zeros_like(e), 0.5 * k_max[None, :] * wg[:, None]])
    else:
        k, wk = np.zeros((1, e.size)), np.zeros((1, e.size))
    if model == "two-band-exact":
        trans = np.where(k_max[None, :] > 0,
                         two_band_transmission(x_nm, cb.edge_eV, vb.edge_eV, m_t, k, e), 0.0)
    else:
        down = None if disp is None else disp.shift(k * k)
        expo = wkb_exponent_transverse(x_nm, cb.edge_eV, vb.edge_eV, a, b, k, e, m_t, model,
                                       down_shift_eV=down)
        trans = np.where(k_max[None, :] > 0, np.exp(-expo), 0.0)
    # int dk/2pi over all k = (1/pi) int_0^inf dk ; k in 1/nm -> 1/m
    return (wk * trans).sum(axis=0) / np.pi * 1e9, trans[0]


def pair_transmission(
    x_nm: np.ndarray, cb: BandProfile, vb: BandProfile, energy_eV: np.ndarray,
    model: str = "two-band", k_integral: bool = True,
) -> tuple[np.ndarray, np.ndarray]:
    """Transmission of one (valence, conduction) subband pair.

    Parameters
    ----------
    x_nm : (nx,) [nm]; cb, vb : the pair's profiles; energy_eV : (nE,) [eV];
    model : one of TUNNELLING_MODELS; k_integral : also integrate over k.

    Returns
    -------
    (tk, t0) : (1/pi) int_0^inf T(E, k) dk [1/m] (zeros without ``k_integral``) and
    T(E, k = 0) [-], each (nE,).
    """
    if model not in TUNNELLING_MODELS:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {TUNNELLING_MODELS}")
    return _pair_transmission_integral(x_nm, cb, vb, np.asarray(energy_eV, float), model,
                                       k_integral)


def band_to_band(
    x_nm: np.ndarray, conduction: list[BandProfile], valence: list[BandProfile],
    efs_eV: float, efd_eV: float, kT_eV: float, model: str = "two-band",
    energies_eV: np.ndarray | None = None, pair_weights: np.ndarray | None = None,
) -> Spectrum:
    """Band-to-band spectral current and total, eq. (1) [uA/um].

    Parameters
    ----------
    x_nm : (nx,) path along transport [nm]; conduction, valence : subband profiles;
    efs_eV, efd_eV : source and drain Fermi levels [eV]; kT_eV : thermal energy [eV];
    model : "two-band" or "one-band" (WKB with that imaginary wave-vector) or
        "two-band-exact" (exact transmission of the two-band Hamiltonian,
        `physics.quantum`);
    energies_eV : a fixed energy grid for every pair; by default each pair is first
        scanned at k = 0 on `energy_grid` (N_E_SCAN points), and its current integrated
        on N_E cosine-spaced points spanning only the energies where it flows (J at
        k = 0 above 1e-7 of its peak; the k integral only narrows that range); a pair
        whose weighted k = 0 current is below PAIR_NEGLIGIBLE of the largest pair's is
        reported as 0. J(E)
        has square-root edges where the transverse range k_max(E) closes, which a
        uniform grid resolves poorly; in the cosine variable they are smooth.
    pair_weights : (n_valence, n_conduction) interband coupling of each pair [-]
        (`physics.subbands.DeviceSubbands.pair_weights`); None gives every pair weight 1
        (independent bulk-like channels). Pairs of weight below 1e-9 are skipped.
    """
    if model not in TUNNELLING_MODELS:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {TUNNELLING_MODELS}")
    fixed = energies_eV is not None
    e = np.asarray(energies_eV, float) if fixed else \
        energy_grid(conduction, valence, efs_eV, efd_eV, kT_eV, n=N_E_SCAN)
    if e is None:
        e0 = np.linspace(min(efs_eV, efd_eV) - 0.05, max(efs_eV, efd_eV) + 0.05, 3)
        return Spectrum(e0, np.zeros(3), np.zeros(3), 0.0)
    if efs_eV == efd_eV:
        return Spectrum(e, np.zeros_like(e), np.zeros_like(e), 0.0)

    def occupancy(en: np.ndarray) -> np.ndarray:
        return fermi(en, efs_eV, kT_eV) - fermi(en, efd_eV, kT_eV)

    occ = occupancy(e)
    density = np.zeros_like(e)
    t_best = np.zeros_like(e)
    current = 0.0
    pairs: dict[str, float] = {}
    scanned: list[tuple] = []
    for iv, vb in enumerate(valence):
        for ic, cb in enumerate(conduction):
            w = 1.0 if pair_weights is None else float(pair_weights[iv, ic])
            name = f"{vb.label}-{cb.label}"
            pairs[name] = 0.0
            if vb.edge_eV[0] - cb.edge_eV[-1] <= 0 or w < 1e-9:
                continue
            if fixed:
                tk, t0 = _pair_transmission_integral(x_nm, cb, vb, e, model)
                pair = w * G0_S * tk * occ  # (2q/h)(q 1 eV) per eV -> A/m per eV = uA/um per eV
                density += pair
                pairs[name] = float(np.trapezoid(pair, e))
                current += pairs[name]
                t_best = np.maximum(t_best, t0)
                continue
            _, t0 = _pair_transmission_integral(x_nm, cb, vb, e, model, k_integral=False)
            t_best = np.maximum(t_best, t0)
            j0 = np.abs(t0 * occ)
            if j0.max() > 0:
                scanned.append((name, cb, vb, w, j0, w * float(np.trapezoid(j0, e))))
    # full k integral for the pairs that matter: a pair whose k = 0 current is below
    # PAIR_NEGLIGIBLE of the largest one is left out (its share of the total is of that
    # order: the transverse integral changes a pair's current by a factor of a few)
    top = max((sc_[5] for sc_ in scanned), default=0.0)
    for name, cb, vb, w, j0, j0_total in scanned:
        if j0_total < PAIR_NEGLIGIBLE * top:
            continue
        on = np.flatnonzero(j0 > 1e-7 * j0.max())
        lo, hi = e[max(on[0] - 1, 0)], e[min(on[-1] + 1, e.size - 1)]
        # cosine-spaced energies: J(E) has square-root edges where k_max(E) -> 0 (the
        # source valence and drain conduction edges); in theta they are smooth
        theta = np.linspace(0.0, np.pi, N_E)
        e_fine = 0.5 * (lo + hi) - 0.5 * (hi - lo) * np.cos(theta)
        tk, _ = _pair_transmission_integral(x_nm, cb, vb, e_fine, model)
        pair = w * G0_S * tk * occupancy(e_fine)
        pairs[name] = float(np.trapezoid(pair * 0.5 * (hi - lo) * np.sin(theta), theta))
        current += pairs[name]
        density += np.interp(e, e_fine, pair, left=0.0, right=0.0)
    return Spectrum(e, density, t_best, current, pairs)


def tunnel_window(
    x_nm: np.ndarray, conduction_eV: np.ndarray, valence_eV: np.ndarray,
    channel: tuple[float, float], source_end_nm: float, efs_eV: float, efd_eV: float,
) -> tuple[float, float] | None:
    """Energy range where filled source valence states face empty channel conduction
    states, inside the Fermi window [eV]; None when closed.

    e_max = min(highest valence edge in the source, the upper Fermi level);
    e_min = max(lowest conduction edge in the channel, the lower Fermi level).
    """
    src = x_nm <= source_end_nm
    ch = (x_nm >= channel[0]) & (x_nm <= channel[1])
    e_max = min(float(np.max(valence_eV[src])), max(efs_eV, efd_eV))
    e_min = max(float(np.min(conduction_eV[ch])), min(efs_eV, efd_eV))
    return (e_min, e_max) if e_max > e_min else None
