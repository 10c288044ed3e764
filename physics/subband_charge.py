"""Carrier charge of the thin body from its 2D confinement subbands.

The alternative to the quantum-corrected semiclassical charge of `physics.poisson`
(bulk 3D density of states with the band edges shifted by the lowest subbands). Each
column x of the body holds, per subband n with in-plane mass m_n (the masses transport
uses, `physics.subbands`), the sheet density of a 2D parabolic band of spin-degenerate
states (e.g. Davies, The Physics of Low-dimensional Semiconductors, 1998, ch. 3 — from
memory; the 2D density of states m/(pi hbar^2) times the Fermi integral of order 0):

    N_n(x) = (m_n kT / pi hbar^2) ln(1 + exp((F(x) - E_n(x)) / kT))           (1)

(electrons; holes with E_n - F), distributed across the body with the state's envelope,

    n(x, y) = sum_n N_n(x) |phi_n(y)|^2.                                      (2)

The subband edge follows the local potential by first-order perturbation, as for
transport, E_n(x) = E_n^0 + sum_j u_n,j E_c(x, y_j) (`physics.subbands`, eq. (1)),
with u_n,j = |phi_n(y_j)|^2 dy_j the quadrature weight of node j, the semiconductor part
of its control volume, renormalised to sum 1. The same weights put the charge on the
nodes, so the charge term of the Poisson residual at node (i, j),
q dx_i sum_n N_n(x_i) u_n,j, has the derivative

    d/d psi_(i,j') = q dx_i sum_n (dN_n/dF) u_n,j u_n,j'                      (3)

a symmetric, positive semi-definite block within each column: it fits inside the band
of the banded Cholesky Newton matrix (unknowns ordered y fastest), so Newton keeps its
exact Jacobian and its speed (`physics.poisson`).

Holes: each valence subband's sheet density is eq. (1) times the density-of-states
ratio r_n(eta) of its coupled in-plane dispersion (4x4 Luttinger–Kohn, heavy/light-hole
mixing; `physics.hole_subbands`, eq. (3)), so m_n r_n(eta) is its Fermi-level- and
temperature-dependent DOS mass (HH1 of the default InAs body: 0.27 m0 non-degenerate,
0.44 m0 at the p+ source's Fermi level, against the uncoupled 0.035 m0); the Jacobian,
eq. (3), takes the derivative of the product.

Limits, stated: the envelopes are those of the flat well (no self-consistent
Schrödinger–Poisson: the potential across the body moves the edges, eq. (1) of
`physics.subbands`, but does not reshape phi_n); conduction in-plane dispersions are
parabolic with the subband-edge masses m*(1 + 2 alpha E_n); the hole dispersions come
from a well with the semiconductor's Luttinger parameters in the dielectrics (see
`hole_subbands.design_well`) placed on the uncoupled edges; subbands up to
`subbands.CHARGE_CUTOFF_EV` hold charge; a
heterojunction's interface node takes the subbands of the side it is assigned to by
`heterojunction.source_nodes` (the semiclassical charge splits its control volume).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.special import expit

from sub60.physics.constants import ELECTRON_MASS_KG, ELEMENTARY_CHARGE_C, HBAR_J_S, QE_V_NM2_CM3

#: 2D density of states of a band of mass m0, spin included, m0 / (pi hbar^2) [cm^-2 eV^-1]
DOS_2D_CM2_PER_EV: float = ELECTRON_MASS_KG / (math.pi * HBAR_J_S**2) * ELEMENTARY_CHARGE_C * 1e-4
# 1 cm^-2 spread over 1 nm is 1e7 cm^-3
_CM3_PER_CM2_NM = 1e7


def sheet_density_cm2(mass_rel: np.ndarray, eta: np.ndarray, kT_eV: float) -> np.ndarray:
    """Sheet density of 2D parabolic subbands, eq. (1) [cm^-2].

    mass_rel : in-plane mass [m0]; eta : (F - E_n) / kT for electrons, (E_n - F) / kT
    for holes [-]; kT_eV : thermal energy [eV].
    """
    return DOS_2D_CM2_PER_EV * np.asarray(mass_rel) * kT_eV * np.logaddexp(0.0, eta)


def coupled_sheet(mass_rel: np.ndarray, eta: np.ndarray, kT_eV: float, ratio_value: np.ndarray,
                  ratio_slope: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Sheet density eq. (1) times the density-of-states ratio r(eta) of the subband's
    coupled in-plane dispersion (`physics.hole_subbands`, eq. (3); r = 1: parabolic)
    [cm^-2], and its derivative by the Fermi level |dN/dF| [cm^-2 / eV].

    ratio_value, ratio_slope : tables (eta.shape..., n_eta) of r and dr/deta.
    """
    from sub60.physics.hole_subbands import interpolate_ratio

    r, dr = interpolate_ratio(ratio_value, ratio_slope, eta)
    ln = np.logaddexp(0.0, eta)
    dos = DOS_2D_CM2_PER_EV * np.asarray(mass_rel)
    return dos * kT_eV * ln * r, dos * (expit(eta) * r + ln * dr)


def column_weights(y_fine_nm: np.ndarray, density: np.ndarray, y_nodes_nm: np.ndarray,
                   dy_semi_nm: np.ndarray) -> np.ndarray:
    """Weights u_j of |phi|^2 on the mesh rows that hold semiconductor, summing to 1 [-].

    |phi|^2 interpolated linearly at each node times the semiconductor part of the node's
    control-volume height; zero on dielectric nodes.
    """
    rho = np.interp(y_nodes_nm, y_fine_nm, density, left=0.0, right=0.0)
    w = rho * dy_semi_nm
    total = w.sum()
    if total <= 0.0:
        raise ValueError("the subband envelope does not overlap the body's mesh rows")
    return w / total


@dataclass(frozen=True, eq=False)
class SubbandCharge:
    """2D-subband charge of a design's body on a mesh, eqs. (1)-(3).

    Arrays over the subbands k of both kinds (conduction first, then valence):
    ``electron`` (K,) True for conduction subbands; ``energy_eV`` (K, nx) confinement
    energy above E_c (conduction) or below E_v (valence) of each column's material;
    ``mass`` (K, nx) in-plane mass [m0]; ``region`` (nx,) the material region of each
    column (0 the body, 1 a heterojunction's source); ``region_weights`` (R, K, nb) u_k,j
    of each region on the body rows ``rows`` (slice of the mesh rows that hold
    semiconductor); ``dy_semi_nm`` (nb,); ``dx_nm`` (nx,); ``chi_eV``, ``eg_eV`` (nx,)
    affinity and gap [eV]; ``kT_eV``.
    """

    electron: np.ndarray
    energy_eV: np.ndarray
    mass: np.ndarray
    region: np.ndarray
    region_weights: np.ndarray
    rows: slice
    ny: int
    dy_semi_nm: np.ndarray
    dx_nm: np.ndarray
    chi_eV: np.ndarray
    eg_eV: np.ndarray
    kT_eV: float
    #: (R, K, n_eta) density-of-states ratio r and dr/deta of each region's subbands
    #: (`physics.hole_subbands`, eq. (3); 1 and 0 for the conduction subbands)
    ratio_value: np.ndarray | None = None
    ratio_slope: np.ndarray | None = None

    def __post_init__(self) -> None:
        nb = self.region_weights.shape[2]
        if self.ratio_value is None:
            shape = self.region_weights.shape[:2] + (2,)
            object.__setattr__(self, "ratio_value", np.ones(shape))
            object.__setattr__(self, "ratio_slope", np.zeros(shape))
        # per column (K, nx, n_eta)
        object.__setattr__(self, "_col_value", self.ratio_value[self.region].transpose(1, 0, 2).copy())
        object.__setattr__(self, "_col_slope", self.ratio_slope[self.region].transpose(1, 0, 2).copy())
        masks = [self.region == r for r in range(self.region_weights.shape[0])]
        # upper-band products P[k, d, b] = u[k, b - d] u[k, b] (b >= d) of eq. (3)
        pairs = np.zeros(self.region_weights.shape[:2] + (nb, nb))
        for d in range(nb):
            pairs[:, :, d, d:] = self.region_weights[:, :, : nb - d] * self.region_weights[:, :, d:]
        object.__setattr__(self, "_masks", masks)
        object.__setattr__(self, "_pairs", pairs.reshape(pairs.shape[0], pairs.shape[1], nb * nb))

    @property
    def weights(self) -> np.ndarray:
        """(K, nx, nb) u_k,j of every column [-]."""
        return self.region_weights[self.region].transpose(1, 0, 2)

    @property
    def nbytes(self) -> int:
        return int(self.energy_eV.nbytes + self.mass.nbytes + self.region_weights.nbytes
                   + self._pairs.nbytes)

    def _by_region(self, left: np.ndarray, right_of_region, width: int) -> np.ndarray:
        """Row i of the result: left[:, i] @ right_of_region(r(i)), region by region."""
        out = np.empty((left.shape[1], width))
        for r, mask in enumerate(self._masks):
            out[mask] = left[:, mask].T @ right_of_region(r)
        return out

    def _edges(self, psi_body: np.ndarray) -> np.ndarray:
        """(K, nx) subband edges [eV]: conduction E_n, valence E_m (first-order, eq. (1))."""
        ec = -self.chi_eV[:, None] - psi_body  # (nx, nb)
        avg_ec = np.empty(self.energy_eV.shape)
        for r, mask in enumerate(self._masks):
            avg_ec[:, mask] = self.region_weights[r] @ ec[mask].T
        e = self.electron[:, None]
        return np.where(e, avg_ec + self.energy_eV, avg_ec - self.eg_eV[None, :] - self.energy_eV)

    def evaluate(self, psi_V: np.ndarray, efn_eV: np.ndarray, efp_eV: np.ndarray):
        """Node densities and the Jacobian of the charge.

        Parameters
        ----------
        psi_V : (nx, ny) potential [V]; efn_eV, efp_eV : (nx,) quasi-Fermi levels [eV].

        Returns
        -------
        n, p : (nx, ny) [cm^-3]; dn, dp : (nx, ny) their derivatives by the node's own
        potential [cm^-3 / V]; band : (ny + 1, nx * ny) the derivative of the charge
        term of the residual, q dx sum_k (dN_k/dF) u u^T, in LAPACK's upper banded form
        (row ny the diagonal) [V / V].
        """
        nx = psi_V.shape[0]
        kT = self.kT_eV
        psi_body = psi_V[:, self.rows]
        edges = self._edges(psi_body)
        e = self.electron[:, None]
        eta = np.where(e, efn_eV[None, :] - edges, edges - efp_eV[None, :]) / kT
        # (K, nx) sheets and |dN/dE_n| [cm^-2 / eV]
        sheet, dsheet = coupled_sheet(self.mass, eta, kT, self._col_value, self._col_slope)
        inv_dy = _CM3_PER_CM2_NM / self.dy_semi_nm
        w = self.region_weights
        nb = w.shape[2]
        ne = self._by_region(np.where(e, sheet, 0.0), lambda r: w[r], nb) * inv_dy
        nh = self._by_region(np.where(e, 0.0, sheet), lambda r: w[r], nb) * inv_dy
        dne = self._by_region(np.where(e, dsheet, 0.0), lambda r: w[r] ** 2, nb) * inv_dy
        dnh = self._by_region(np.where(e, 0.0, dsheet), lambda r: w[r] ** 2, nb) * inv_dy
        n = np.zeros_like(psi_V)
        p = np.zeros_like(psi_V)
        dn = np.zeros_like(psi_V)
        dp = np.zeros_like(psi_V)
        n[:, self.rows], p[:, self.rows] = ne, nh
        dn[:, self.rows], dp[:, self.rows] = dne, -dnh
        # eq. (3): per column i the block C_ik u_k u_k^T, upper band offsets d = 0..nb-1
        coef = QE_V_NM2_CM3 * _CM3_PER_CM2_NM * self.dx_nm[None, :] * dsheet  # (K, nx)
        block = self._by_region(coef, lambda r: self._pairs[r], nb * nb).reshape(nx, nb, nb)
        band = np.zeros((self.ny + 1, nx, self.ny))
        j0 = self.rows.start
        band[self.ny - nb + 1:, :, j0:j0 + nb] = block.transpose(1, 0, 2)[::-1]
        return n, p, dn, dp, band.reshape(self.ny + 1, nx * self.ny)

    def column_model(self) -> ColumnCharge:
        """The charge of a column at uniform potential, for charge-neutral contacts."""
        thickness = float(self.dy_semi_nm.sum())
        return ColumnCharge(self.electron, self.energy_eV, self.mass, thickness, self.chi_eV,
                            self.eg_eV, self.kT_eV, self._col_value, self._col_slope)


@dataclass(frozen=True, eq=False)
class ColumnCharge:
    """Mean densities of a body column at uniform potential psi (the weights sum to 1,
    so every subband edge moves with the bulk edge): n = sum_n N_n / t [cm^-3].

    The same interface as `poisson.BandParameters` for `poisson.neutral_potential`:
    ``densities``, ``at``, ``bracket_eV``; arrays along the first axis are x.
    """

    electron: np.ndarray
    energy_eV: np.ndarray  # (K, nx)
    mass: np.ndarray  # (K, nx)
    thickness_nm: float
    chi_eV: np.ndarray  # (nx,)
    eg_eV: np.ndarray  # (nx,)
    kT_eV: float
    ratio_value: np.ndarray | None = None  # (K, nx, n_eta), eq. (3) of `hole_subbands`
    ratio_slope: np.ndarray | None = None

    def __post_init__(self) -> None:
        if self.ratio_value is None:
            object.__setattr__(self, "ratio_value", np.ones(self.mass.shape + (2,)))
            object.__setattr__(self, "ratio_slope", np.zeros(self.mass.shape + (2,)))

    def at(self, index) -> ColumnCharge:
        """The columns at some nodes along x."""
        return ColumnCharge(self.electron, self.energy_eV[:, index], self.mass[:, index],
                            self.thickness_nm, self.chi_eV[index], self.eg_eV[index], self.kT_eV,
                            self.ratio_value[:, index], self.ratio_slope[:, index])

    def densities(self, psi_V, efn_eV, efp_eV):
        """n, p [cm^-3] and dn/dpsi, dp/dpsi [cm^-3 / V] of columns at potential psi (nx,)."""
        psi = np.asarray(psi_V, float)
        ec = -self.chi_eV - psi
        e = self.electron[:, None]
        edges = np.where(e, ec + self.energy_eV, ec - self.eg_eV - self.energy_eV)
        efn = np.broadcast_to(np.asarray(efn_eV, float), psi.shape)
        efp = np.broadcast_to(np.asarray(efp_eV, float), psi.shape)
        eta = np.where(e, efn - edges, edges - efp) / self.kT_eV
        scale = _CM3_PER_CM2_NM / self.thickness_nm
        rv = np.broadcast_to(self.ratio_value, eta.shape + self.ratio_value.shape[-1:])
        rs = np.broadcast_to(self.ratio_slope, rv.shape)
        sheet, dsheet = coupled_sheet(self.mass, eta, self.kT_eV, rv, rs)
        sheet, dsheet = sheet * scale, dsheet * scale
        n = np.where(e, sheet, 0.0).sum(axis=0)
        p = np.where(e, 0.0, sheet).sum(axis=0)
        dn = np.where(e, dsheet, 0.0).sum(axis=0)
        dp = -np.where(e, 0.0, dsheet).sum(axis=0)
        return n, p, dn, dp

    def bracket_eV(self, net_cm3, efn_eV, efp_eV):
        """Potentials [V] between which the neutral one lies (lo: holes dominate)."""
        net = np.asarray(net_cm3, float)
        # degenerate depth of a 2D band of the lowest subbands' total DOS, linear in N
        dos = _CM3_PER_CM2_NM / self.thickness_nm * DOS_2D_CM2_PER_EV
        gn = dos * np.where(self.electron[:, None], self.mass, 0.0).sum(axis=0)
        gp = dos * np.where(self.electron[:, None], 0.0, self.mass).sum(axis=0)
        deep_n = np.maximum(net, 0.0) / gn
        deep_p = np.maximum(-net, 0.0) / gp
        top = np.max(self.energy_eV, axis=0)
        lo = -self.chi_eV - self.eg_eV - top - np.maximum(efn_eV, efp_eV) - 2.0 - deep_p
        hi = -self.chi_eV + top - np.minimum(efn_eV, efp_eV) + 2.0 + deep_n
        return lo, hi


def build_subband_charge(design, mesh, x_source: np.ndarray | None = None) -> SubbandCharge:
    """The 2D-subband charge of a design on its mesh.

    Parameters
    ----------
    design : Design; mesh : Mesh (`structure.build_mesh`); x_source : (nx,) True at the
    nodes of source material of a heterojunction (None: a homojunction).
    """
    from sub60.physics.constants import thermal_energy_eV
    from sub60.physics.hole_subbands import ETA_MAX, ETA_MIN, ETA_STEP, hole_dos_ratio
    from sub60.physics.subbands import charge_subbands

    dy = mesh.dy_semiconductor_nm
    semi = np.flatnonzero(dy > 0)
    rows = slice(int(semi[0]), int(semi[-1]) + 1)
    y_rows = mesh.y_nm[rows]
    dy_rows = dy[rows]
    nx = mesh.nx

    def region(d):
        sb = charge_subbands(d)
        states = list(sb.conduction) + list(sb.valence)
        return (states, d)

    regions = [region(design)]
    if x_source is not None and np.any(x_source):
        regions.append(region(design.source_body_design()))
    # the same subband count in every region: the smallest of each kind
    def kinds(states):
        return ([s for s in states if s.kind == "conduction"], [s for s in states if s.kind != "conduction"])
    n_c = min(len(kinds(r[0])[0]) for r in regions)
    n_v = min(len(kinds(r[0])[1]) for r in regions)
    K = n_c + n_v
    electron = np.r_[np.ones(n_c, bool), np.zeros(n_v, bool)]
    energy = np.empty((K, nx))
    mass = np.empty((K, nx))
    weights = np.empty((len(regions), K, rows.stop - rows.start))
    n_eta = int(round((ETA_MAX - ETA_MIN) / ETA_STEP)) + 1
    ratio_value = np.ones((len(regions), K, n_eta))
    ratio_slope = np.zeros((len(regions), K, n_eta))
    chi = np.empty(nx)
    eg = np.empty(nx)
    masks = [np.ones(nx, bool)] if len(regions) == 1 else [~x_source, x_source]
    for r, ((states, d), mask) in enumerate(zip(regions, masks, strict=True)):
        rec = d.semiconductor
        c, v = kinds(states)
        coupled = hole_dos_ratio(d)  # the valence subbands of charge_subbands(d), in order
        ratio_value[r, n_c:] = coupled.value[:n_v]
        ratio_slope[r, n_c:] = coupled.slope[:n_v]
        sel = c[:n_c] + v[:n_v]
        energy[:, mask] = np.array([s.energy_eV for s in sel])[:, None]
        mass[:, mask] = np.array([s.inplane_mass for s in sel])[:, None]
        u = np.array([column_weights(s.y_nm, s.density, y_rows, dy_rows) for s in sel])
        weights[r] = u
        eg[mask] = float(rec.bandgap_eV(design.temperature_K))
    if len(regions) == 1:
        chi[:] = design.semiconductor.electron_affinity_eV
    else:
        from sub60.physics.heterojunction import source_affinity_eV

        chi[:] = np.where(x_source, source_affinity_eV(design), design.semiconductor.electron_affinity_eV)
    region = np.zeros(nx, int) if len(regions) == 1 else x_source.astype(int)
    return SubbandCharge(electron, energy, mass, region, weights, rows, mesh.ny, dy_rows,
                         mesh.dx_nm, chi, eg, thermal_energy_eV(design.temperature_K),
                         ratio_value, ratio_slope)


def contact_fermi_depth_eV(design, doping_cm3: float, electrons: bool) -> float:
    """How far the Fermi level of a neutral flat column lies inside the band, measured
    from the lowest conduction (highest valence) subband edge, eq. (1) [eV]: the
    sheet sum_n N_n equals doping x body thickness (holes: with the coupled density of
    states of `physics.hole_subbands`). Positive: degenerate."""
    from sub60.physics.constants import thermal_energy_eV
    from sub60.physics.hole_subbands import hole_dos_ratio
    from sub60.physics.subbands import charge_subbands

    sb = charge_subbands(design)
    states = sb.conduction if electrons else sb.valence
    e0 = np.array([s.energy_eV for s in states])
    m = np.array([s.inplane_mass for s in states])
    kT = thermal_energy_eV(design.temperature_K)
    if electrons:
        rv, rs = np.ones((len(states), 2)), np.zeros((len(states), 2))
    else:
        rv, rs = hole_dos_ratio(design).value, hole_dos_ratio(design).slope
    target = doping_cm3 * design.body_thickness_nm * 1e-7
    lo, hi = e0[0] - 3.0, e0[0] + 3.0  # F (into the band, from the bulk edge) [eV]
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        if coupled_sheet(m, (mid - e0) / kT, kT, rv, rs)[0].sum() > target:
            hi = mid
        else:
            lo = mid
    return 0.5 * (lo + hi) - float(e0[0])
