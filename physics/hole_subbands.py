"""In-plane dispersion of the body's hole subbands from the coupled 4x4 Luttinger–Kohn model.

The uncoupled hole subbands of `physics.subbands` move in the plane with the Luttinger
masses 1/(g1 + g2) (heavy) and 1/(g1 - g2) (light). In a quantum well the heavy and
light holes mix away from k_par = 0 and the subbands become much heavier a few tens of
meV from their edge; their 2D density of states, which sets how deep a p+ source's
Fermi level lies, follows from the coupled dispersion computed here.

Hamiltonian. The 4x4 Luttinger–Kohn Hamiltonian of the J = 3/2 quartet (basis
|3/2, 3/2>, |3/2, 1/2>, |3/2, -1/2>, |3/2, -3/2>), written for hole energies (positive
into the valence band; Chuang, Physics of Optoelectronic Devices, Wiley 1995, ch. 4,
with the sign of the electron-energy form reversed — from memory):

        | P+Q   -S    R     0  |
    H = | -S*   P-Q   0     R  |  + V_h(y)                                      (1)
        | R*    0     P-Q   S  |
        | 0     R*    S*    P+Q|

    P = C g1 (k^2 + kz^2),          Q = C g2 (k^2 - 2 kz^2),
    R = -C sqrt3 gbar k^2,          S = 2 sqrt3 C g3 k kz,       C = hbar^2 / 2 m0,

in the axial approximation (gbar = (g2 + g3)/2 in R; k = k_par along x without loss of
generality, since the axial Hamiltonian depends only on |k_par|; e.g. Broido and Sham,
Phys. Rev. B 31, 888 (1985) — from memory). Bulk eigenvalues, each twice degenerate:
E = P -+ sqrt(Q^2 + |R|^2 + |S|^2) (the closed form the tests check).

Well. kz = -i d/dy across the body with position-dependent parameters in the operator
orderings kz g kz (second derivatives) and (g kz + kz g)/2 (first derivative, symmetrised
so that H is Hermitian; e.g. Chuang 1995, ch. 4 — from memory), on the box-integration
grid of `physics.confinement` (psi = 0 at the outer faces of the barriers). At k = 0
the four components decouple into the uncoupled heavy- (mass 1/(g1 - 2g2) along y) and
light-hole (1/(g1 + 2g2)) problems of `physics.confinement` on the same grid — the same
discretisation, hence the same numbers to round-off (tested). The first-derivative
term is discretised cell by cell from its bilinear form,
int g psi* phi' over a cell -> g_c (psi_i + psi_i+1)*/2 (phi_i+1 - phi_i), which gives
the Hermitian central difference +-i g_c / 2 between neighbours; second order in the
spacing where the parameters are smooth. The stack (`design_well`): the dielectrics'
hole barriers of `physics.subbands`, but the semiconductor's Luttinger parameters in
them too — with the dielectric's isotropic mass there (g2 = g3 = 0) the symmetrised
ordering binds a spurious interface state (see `design_well`). Only the in-plane shape
E_n(k) - E_n(0) is used, placed on the edges of `subbands.charge_subbands`.

Density of states. The n-th eigenvalues of the two axial blocks (`block_energies`,
each ordered by energy at every k) form subband n; its sheet density at hole Fermi level F (hole energies) is

    N_n(F) = sum_(b in n) int_0^inf k dk / (2 pi) f(E_b(k) - F)                 (2)

(k-space density 1/(2 pi)^2, axial symmetry; spin is inside the 4x4 model), computed by
quadrature in q = k^2 over the tabulated dispersion (interpolated monotonically in q),
with beyond the last k a tail linear in q whose integral is closed form. The charge
uses it as a ratio to the parabolic subband of the uncoupled in-plane mass m_n,

    r_n(eta) = N_n(F) / [(m_n kT / pi hbar^2) ln(1 + e^eta)],  eta = (F - E_n0)/kT   (3)

tabulated with its derivative on a uniform eta grid (cubic Hermite interpolation: the
charge and its Newton derivative stay consistent); m_n r_n(eta) is the temperature- and
Fermi-level-dependent density-of-states mass. Below the table r_n is its
non-degenerate (Boltzmann) limit, reached to e^eta; above it r_n is held.

Limits, stated: axial approximation (the [100]/[110] warping of g2 != g3 is averaged);
no split-off band (6x6) and no spin–orbit or bulk-inversion-asymmetry splitting; the
flat well (no potential across the body reshapes the states); the dielectric barrier
is isotropic; the charge is spread across the body with the k = 0 envelopes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from scipy.linalg import eig_banded

from sub60.physics.constants import HBAR2_2M0_EV_NM2

SQRT3 = math.sqrt(3.0)
#: largest in-plane wavevector of the dispersion [1/nm]: the lightest-mass hole branch of
#: InAs is ~1.3 eV deep there; beyond, each branch continues linearly in k^2 (eq. (2)).
K_MAX_PER_NM = 2.5
N_K = 41  # k points, denser near k = 0 (k = K_MAX s^2 ... see `_k_grid`)
N_Q = 801  # quadrature points in q = k^2 for eq. (2); 1500 and an eta step 0.25 move r < 0.7 %
#: eta = (F - E_n0) / kT range of the tables of eq. (3) and its step [-]
ETA_MIN, ETA_MAX, ETA_STEP = -10.0, 24.0, 0.5


def _cells_to_nodes(values: np.ndarray, d: np.ndarray) -> np.ndarray:
    """Control-volume integrals of a cell quantity at the interior nodes [.. nm]."""
    return 0.5 * (values[1:] * d[1:] + values[:-1] * d[:-1])


@dataclass(frozen=True, eq=False)
class LuttingerWell:
    """The 4x4 Luttinger–Kohn problem of eq. (1) on a node grid across the well.

    y_nm : (ny,) nodes (psi = 0 at both ends); v_cell : (ny-1,) hole potential energy
    [eV]; g1, g2, g3 : (ny-1,) Luttinger parameters of each cell [-] (an isotropic barrier
    of mass m: g1 = 1/m, g2 = g3 = 0); coupling : False drops R and S (the uncoupled
    heavy- and light-hole subbands, for checks).
    """

    y_nm: np.ndarray
    v_cell: np.ndarray
    g1: np.ndarray
    g2: np.ndarray
    g3: np.ndarray
    coupling: bool = True

    def _terms(self, k: float):
        """The pieces of eq. (1) at k, unscaled: control volumes h (n,); flux couplings
        t_hh, t_lh of each cell (n+1,); node diagonals diag_hh, diag_lh (n,); R at the
        nodes (n,) and S between node i and i+1 (n-1,) (None without coupling) [eV, nm]."""
        d = np.diff(self.y_nm)
        h = 0.5 * (d[1:] + d[:-1])
        c = HBAR2_2M0_EV_NM2
        g1, g2, g3 = self.g1, self.g2, self.g3
        k2 = k * k
        # kz g kz: flux couplings t_c = C g_c / d_c of each cell
        t_hh = c * (g1 - 2.0 * g2) / d
        t_lh = c * (g1 + 2.0 * g2) / d
        diag_hh = t_hh[1:] + t_hh[:-1] + _cells_to_nodes(self.v_cell + c * (g1 + g2) * k2, d)
        diag_lh = t_lh[1:] + t_lh[:-1] + _cells_to_nodes(self.v_cell + c * (g1 - g2) * k2, d)
        r = s = None
        if self.coupling:
            r = _cells_to_nodes(-c * SQRT3 * 0.5 * (g2 + g3) * k2, d)
            # S = 2 sqrt3 C k (g3 kz + kz g3)/2: element (i, i+1) of the first-derivative
            # operator is -i g_c / 2 (module docstring); S(i+1, i) is its conjugate
            s = 2.0 * SQRT3 * c * k * (-0.5j) * g3[1:-1]
        return h, t_hh, t_lh, diag_hh, diag_lh, r, s

    def blocks(self, k: float) -> tuple[np.ndarray, np.ndarray]:
        """The symmetrised H of node i with itself (n, 4, 4) and with node i+1 (n-1, 4, 4)
        [eV], B^(-1/2) H B^(-1/2) with B the control volumes."""
        h, t_hh, t_lh, diag_hh, diag_lh, r, s = self._terms(k)
        n = h.size
        A = np.zeros((n, 4, 4), complex)
        Bk = np.zeros((n - 1, 4, 4), complex)
        for a, dg in ((0, diag_hh), (1, diag_lh), (2, diag_lh), (3, diag_hh)):
            A[:, a, a] = dg
        for a, t in ((0, t_hh), (1, t_lh), (2, t_lh), (3, t_hh)):
            Bk[:, a, a] = -t[1:-1]
        if self.coupling:
            A[:, 0, 2] = A[:, 2, 0] = r
            A[:, 1, 3] = A[:, 3, 1] = r
            # H[0,1] = -S, H[2,3] = +S, H[1,0] = -S^dagger, H[3,2] = +S^dagger
            Bk[:, 0, 1] = -s
            Bk[:, 2, 3] = s
            Bk[:, 1, 0] = -np.conj(-s)  # (S^dagger)(i, i+1) = conj(S(i+1, i)) = conj(-s)
            Bk[:, 3, 2] = np.conj(-s)
        scale = 1.0 / np.sqrt(h)
        A *= (scale * scale)[:, None, None]
        Bk *= (scale[:-1] * scale[1:])[:, None, None]
        return A, Bk

    def dense(self, k: float) -> np.ndarray:
        """The full Hermitian matrix (unknowns node-major, 4 per node) [eV]."""
        A, Bk = self.blocks(k)
        n = A.shape[0]
        H = np.zeros((4 * n, 4 * n), complex)
        for i in range(n):
            H[4 * i:4 * i + 4, 4 * i:4 * i + 4] = A[i]
        for i in range(n - 1):
            H[4 * i:4 * i + 4, 4 * i + 4:4 * i + 8] = Bk[i]
            H[4 * i + 4:4 * i + 8, 4 * i:4 * i + 4] = Bk[i].conj().T
        return H

    def block_energies(self, k: float, count: int, sign: int) -> np.ndarray:
        """The lowest ``count`` eigenvalues of one 2x2 block of eq. (1) [eV], ascending.

        In the axial approximation a unitary change of basis, constant in y (it mixes
        |3/2, +-3/2> and |3/2, -+1/2> with phases of the k direction), splits eq. (1) into
        two blocks (Broido and Sham, Phys. Rev. B 31, 888 (1985) — from memory)

            | P+Q        R + s i S |
            | R - s i S  P-Q       |,     s = +1 (U), -1 (L),

        with R and S as in eq. (1) for k along x (R real, S Hermitian as an operator);
        valid for any profile V(y), the two blocks degenerate in a symmetric well. The
        tests check that their eigenvalues together are those of the 4x4 matrix.
        """
        h, t_hh, t_lh, diag_hh, diag_lh, r, s = self._terms(k)
        n = h.size
        scale = 1.0 / h
        band = np.zeros((4, 2 * n), complex)  # upper form, u = 3: node-major, (HH, LH)
        band[3, 0::2] = diag_hh * scale
        band[3, 1::2] = diag_lh * scale
        off = 1.0 / np.sqrt(h[:-1] * h[1:])
        band[1, 2::2] = -t_hh[1:-1] * off  # HH_i with HH_i+1
        band[1, 3::2] = -t_lh[1:-1] * off  # LH_i with LH_i+1
        if self.coupling:
            s_op = s * off  # S(i, i+1); S(i+1, i) = -s_op
            band[2, 1::2] = r * scale  # HH_i with LH_i: R
            band[0, 3::2] = sign * 1j * s_op  # HH_i with LH_i+1: +s i S(i, i+1)
            band[2, 2::2] = np.conj(sign * 1j * -s_op)  # LH_i with HH_i+1: conj of (HH_i+1, LH_i)
        return eig_banded(band, lower=False, eigvals_only=True, select="i",
                          select_range=(0, count - 1), check_finite=False)

    def energies(self, k: float, count: int) -> np.ndarray:
        """The lowest ``count`` pairs at in-plane wavevector k: (count, 2) [eV], the
        eigenvalues of the U and L blocks (`block_energies`)."""
        return np.stack([self.block_energies(k, count, +1), self.block_energies(k, count, -1)],
                        axis=1)


def _k_grid() -> np.ndarray:
    s = np.linspace(0.0, 1.0, N_K)
    return K_MAX_PER_NM * s**1.5


@dataclass(frozen=True, eq=False)
class HoleDispersion:
    """Coupled hole subbands of a flat well: ``k`` (nk,) [1/nm], ``energy_eV`` (2K, nk)
    hole energies of the 2K lowest branches (branches 2n, 2n+1, the n-th of the U and L
    blocks of `LuttingerWell.block_energies`, form subband n),
    ``edge_eV`` (K,) subband edges at k = 0 [eV], ``seconds`` the time to compute."""

    k: np.ndarray
    energy_eV: np.ndarray
    edge_eV: np.ndarray
    seconds: float

    def sheet_cm2(self, pair: int, fermi_eV: np.ndarray,
                  kT_eV: float) -> tuple[np.ndarray, np.ndarray]:
        """Eq. (2) for subband ``pair``: N_n(F) [cm^-2] and dN_n/dF [cm^-2/eV] at hole
        Fermi levels F (M,) [eV] (hole energies, on the scale of ``energy_eV``)."""
        q_tab = self.k**2
        qmax = float(q_tab[-1])
        q = np.linspace(0.0, qmax, N_Q)
        # trapezoid with fourth-order end corrections (equal interior weights keep the
        # Fermi-window integrals accurate; Press et al., Numerical Recipes, eq. 4.1.14 —
        # from memory)
        wq = np.full(N_Q, q[1] - q[0])
        ends = np.array([3.0 / 8.0, 7.0 / 6.0, 23.0 / 24.0])
        wq[:3] *= ends
        wq[-3:] *= ends[::-1]
        F = np.asarray(fermi_eV, float)[None, :]
        n_out = np.zeros(F.shape[1])
        d_out = np.zeros_like(n_out)
        from scipy.interpolate import PchipInterpolator

        for b in (2 * pair, 2 * pair + 1):
            e_q = PchipInterpolator(q_tab, self.energy_eV[b])(q)[:, None]
            x = (e_q - F) / kT_eV
            f = _fermi(x)
            dfdF = f * _fermi(-x) / kT_eV
            slope = (q_tab[-1] - q_tab[-2]) / (self.energy_eV[b, -1] - self.energy_eV[b, -2])
            slope = max(slope, 0.0)  # dq/dE of the tail [nm^-2 / eV]
            xe = (self.energy_eV[b, -1] - F[0]) / kT_eV
            tail = slope * kT_eV * np.logaddexp(0.0, -xe)
            tail_d = slope * _fermi(xe)
            n_out += (wq @ f + tail) / (4.0 * math.pi)
            d_out += (wq @ dfdF + tail_d) / (4.0 * math.pi)
        return n_out * 1e14, d_out * 1e14  # nm^-2 -> cm^-2

    def dos_mass(self, pair: int, depth_eV: np.ndarray) -> np.ndarray:
        """Density-of-states mass of subband ``pair`` at energies depth_eV below its edge
        [m0]: (hbar^2 / 2) d(k^2)/dE summed over its two branches / 2, i.e. pi hbar^2
        g(E) with g the 2D DOS (spin included) — a parabolic band of this mass has the
        same DOS at that energy."""
        out = np.zeros_like(np.asarray(depth_eV, float))
        for b in (2 * pair, 2 * pair + 1):
            e = self.energy_eV[b] - self.edge_eV[pair]
            # q(E) of the branch, assuming it is monotonic over the range asked
            dq = np.gradient(self.k**2, e)
            out = out + 0.5 * HBAR2_2M0_EV_NM2 * np.interp(depth_eV, e, dq)
        return out

    def secant_mass(self, pair: int, depth_eV: np.ndarray) -> np.ndarray:
        """The mass m with hbar^2 k^2 / 2m = E - E_n0 on the lower branch of ``pair``
        (what a parabolic in-plane band must use to put k at that energy) [m0]."""
        e = self.energy_eV[2 * pair] - self.edge_eV[pair]
        k2 = np.interp(depth_eV, e, self.k**2)
        return HBAR2_2M0_EV_NM2 * k2 / np.asarray(depth_eV, float)


def _fermi(x: np.ndarray) -> np.ndarray:
    return 0.5 * (1.0 - np.tanh(0.5 * x))


def dispersion(well: LuttingerWell, pairs: int, k: np.ndarray | None = None) -> HoleDispersion:
    """The lowest ``pairs`` hole subbands (2 x pairs branches) of ``well`` on a k grid."""
    import time

    t0 = time.perf_counter()
    kk = _k_grid() if k is None else np.asarray(k, float)
    e = np.array([well.energies(float(kv), pairs).ravel() for kv in kk]).T  # (2 pairs, nk)
    edge = 0.5 * (e[0::2, 0] + e[1::2, 0])
    return HoleDispersion(kk, e, edge, time.perf_counter() - t0)


#: grid spacing of the dispersion [nm]: the in-plane shape converges at second order
#: (tests); 0.2 nm keeps the cost of the default body's dispersion near 0.1 s
DISPERSION_SPACING_NM = 0.2


def design_well(design, spacing_nm: float = DISPERSION_SPACING_NM) -> LuttingerWell:
    """The body of a design as eq. (1): the dielectric stack of `physics.subbands._well`
    (its hole barriers V_h and barrier thickness) with the semiconductor's Luttinger
    parameters in the barriers too.

    Why not the barrier mass of `physics.subbands` (g1 = 1/m_bar, g2 = g3 = 0): with
    the symmetrised ordering of eq. (1), a jump of g3 at an interface acts as a
    k-proportional delta coupling of heavy and light holes that binds a spurious
    interface state whose energy falls without bound as k grows and as the grid is
    refined (found here: -0.27, -0.63, -0.77 eV at k = 2.5/nm with 0.2, 0.1, 0.05 nm
    spacing in the default body; non-symmetric splittings of g3 kz tried were worse).
    Continuous parameters remove it. The heavy-hole edges move by 0.2-5 meV (HH1 20.7
    against 20.5 meV in the default body), the light-hole ones much more (LH1 0.212
    against 0.106 eV: the uncoupled model's heavy oxide mass, 0.4 m0 against the light
    hole's 0.027 m0, lowers it), so only the in-plane shape is taken from here
    (`hole_dos_ratio`), not the edges.
    """
    from sub60.physics.subbands import BARRIER_NM, _well

    _, _, _, vh, _, _, y0 = _well(design)
    t = design.body_thickness_nm
    n_body = max(8, int(np.ceil(t / spacing_nm - 1e-9)))
    n_bar = max(2, int(np.ceil(BARRIER_NM / spacing_nm - 1e-9)))
    y = np.concatenate([np.linspace(-BARRIER_NM, 0.0, n_bar + 1)[:-1], np.linspace(0.0, t, n_body + 1),
                        np.linspace(t, t + BARRIER_NM, n_bar + 1)[1:]])
    bottom, top = float(vh[0]), float(vh[-1])
    v = np.r_[np.full(n_bar, bottom), np.zeros(n_body), np.full(n_bar, top)]
    g1, g2, g3 = design.semiconductor.luttinger
    one = np.ones(v.size)
    return LuttingerWell(y, v, g1 * one, g2 * one, g3 * one)


def uncoupled_edges(well: LuttingerWell, n_heavy: int, n_light: int) -> tuple[np.ndarray, np.ndarray]:
    """Heavy- and light-hole confinement energies of the same well from
    `physics.confinement` (masses 1/(g1 -+ 2 g2) along y) [eV]."""
    from sub60.physics.confinement import solve_subbands

    hh = solve_subbands(well.y_nm, well.v_cell, 1.0 / (well.g1 - 2.0 * well.g2), n_states=n_heavy)
    lh = solve_subbands(well.y_nm, well.v_cell, 1.0 / (well.g1 + 2.0 * well.g2), n_states=n_light)
    return hh.energies_eV, lh.energies_eV


@dataclass(frozen=True, eq=False)
class DosRatio:
    """Tables of r_n(eta), eq. (3), and dr_n/deta for the valence charge subbands of a
    design: ``value``, ``slope`` (K, n_eta) on eta = ETA_MIN + i ETA_STEP [-];
    ``dispersion`` the coupled subbands they come from."""

    value: np.ndarray
    slope: np.ndarray
    dispersion: HoleDispersion


@lru_cache(maxsize=64)
def hole_dos_ratio(design) -> DosRatio:
    """Eq. (3) for the valence subbands of `subbands.charge_subbands(design)` (cached per
    design), in their order; each subband's edge is its k = 0 energy, which equals the
    uncoupled one."""
    from sub60.physics.constants import thermal_energy_eV
    from sub60.physics.subband_charge import DOS_2D_CM2_PER_EV
    from sub60.physics.subbands import charge_subbands

    states = charge_subbands(design).valence
    K = len(states)
    n_h = sum(s.label.startswith("HH") for s in states)
    n_l = K - n_h
    well = design_well(design)
    # the coupled pairs at k = 0 are the uncoupled HH and LH states of the same well
    # (eq. (1) decouples there): label them, keep those of `charge_subbands`
    extra = 3
    hh, lh = uncoupled_edges(well, n_h + extra, n_l + extra)
    labels = sorted([(e, f"HH{i + 1}") for i, e in enumerate(hh)]
                    + [(e, f"LH{i + 1}") for i, e in enumerate(lh)])
    pairs = n_h + n_l + extra
    disp = dispersion(well, pairs)
    order = [lab for _, lab in labels][:pairs]
    rows = []
    for s in states:
        if s.label not in order:
            raise ValueError(f"subband {s.label} not among the coupled subbands computed")
        rows.append(order.index(s.label))
    # each subband's shape from its coupled pair, on the edge of `charge_subbands`
    edges0 = np.array([s.energy_eV for s in states])
    branches = np.array([2 * r + j for r in rows for j in (0, 1)])
    shift = np.repeat(edges0 - disp.edge_eV[rows], 2)[:, None]
    disp = HoleDispersion(disp.k, disp.energy_eV[branches] + shift, edges0, disp.seconds)
    kT = float(thermal_energy_eV(design.temperature_K))
    eta = np.arange(ETA_MIN, ETA_MAX + 0.5 * ETA_STEP, ETA_STEP)
    value = np.empty((K, eta.size))
    slope = np.empty_like(value)
    for n, s in enumerate(states):
        fermi = disp.edge_eV[n] + eta * kT  # hole Fermi level, hole energies
        sheet, dsheet = disp.sheet_cm2(n, fermi, kT)
        base = DOS_2D_CM2_PER_EV * s.inplane_mass * kT * np.logaddexp(0.0, eta)
        dbase = DOS_2D_CM2_PER_EV * s.inplane_mass * kT * _fermi(-eta)  # d base / d eta
        value[n] = sheet / base
        slope[n] = (dsheet * kT - value[n] * dbase) / base
    return DosRatio(value, slope, disp)


def interpolate_ratio(value: np.ndarray, slope: np.ndarray, eta: np.ndarray):
    """r and dr/deta at eta (shape S) from tables (S..., n_eta) of eq. (3) (cubic
    Hermite on the eta grid; held constant outside it, slope 0 there)."""
    n_eta = value.shape[-1]
    t = (np.asarray(eta, float) - ETA_MIN) / ETA_STEP
    inside = (t >= 0.0) & (t <= n_eta - 1)
    t = np.clip(t, 0.0, n_eta - 1 - 1e-9)
    i = np.floor(t).astype(int)[..., None]
    s = t - i[..., 0]

    def at(table, j):
        return np.take_along_axis(table, j, axis=-1)[..., 0]

    v0, v1 = at(value, i), at(value, i + 1)
    m0, m1 = at(slope, i) * ETA_STEP, at(slope, i + 1) * ETA_STEP
    s2, s3 = s * s, s * s * s
    r = (2 * s3 - 3 * s2 + 1) * v0 + (s3 - 2 * s2 + s) * m0 + (-2 * s3 + 3 * s2) * v1 + (s3 - s2) * m1
    dr = ((6 * s2 - 6 * s) * v0 + (3 * s2 - 4 * s + 1) * m0 + (-6 * s2 + 6 * s) * v1
          + (3 * s2 - 2 * s) * m1) / ETA_STEP
    return r, np.where(inside, dr, 0.0)


@lru_cache(maxsize=64)
def inplane_dispersions(design) -> dict:
    """The valence subbands' coupled in-plane dispersions as transverse edge shifts for
    transport: label -> `transport.InPlaneDispersion`, for every valence subband of
    `subbands.charge_subbands(design)` (cached per design).

    The shift of subband n at k is the mean of its two branches' hole energies (the U
    and L blocks of eq. (1), degenerate in a symmetric well) less its k = 0 edge, on the
    k grid of `hole_dos_ratio` — the same dispersion as the charge's density of states.
    """
    from sub60.physics.subbands import charge_subbands
    from sub60.physics.transport import InPlaneDispersion

    disp = hole_dos_ratio(design).dispersion
    states = charge_subbands(design).valence
    q = disp.k**2
    out = {}
    for n, s in enumerate(states):
        mean = 0.5 * (disp.energy_eV[2 * n] + disp.energy_eV[2 * n + 1])
        out[s.label] = InPlaneDispersion(q, mean - disp.edge_eV[n])
    return out
