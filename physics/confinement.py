"""Quantum confinement across the body: 1D Schrödinger subbands between oxide barriers.

y is the confinement axis (across the oxide / body / oxide stack). The envelope function
phi(y) of a carrier with a position-dependent effective mass m(y) obeys the
BenDaniel–Duke equation [1]_

    -(hbar^2 / 2) d/dy [ (1 / m(y)) dphi/dy ] + V(y) phi = E phi,

so that phi and (1/m) dphi/dy are continuous at every interface ([1]_; [2]_ ch. 4). In
the semiconductor the conduction band is non-parabolic,

    E_kin (1 + alpha E_kin) = hbar^2 k^2 / (2 m*),      E_kin = E - V(y),

which is the same as a parabolic band with the energy-dependent mass
m(E, y) = m* (1 + alpha E_kin) ([3]_, [4]_). The eigenproblem is then nonlinear in E and
is solved state by state for the fixed point E_n = lambda_n(E_n), where lambda_n(E) is
the n-th eigenvalue with the masses frozen at energy E. In the infinite-well limit this
gives E_n (1 + alpha E_n) = E_n,parabolic exactly.

Holes are treated as particles in the inverted valence-band profile: the caller passes
the hole potential energy (E_v,ref - E_v(y)) and the hole mass along y.

References
----------
.. [1] D. J. BenDaniel and C. B. Duke, "Space-charge effects on electron tunneling",
   Phys. Rev. 152, 683 (1966). https://doi.org/10.1103/PhysRev.152.683
.. [2] J. H. Davies, *The Physics of Low-dimensional Semiconductors*, Cambridge
   University Press (1998), ch. 4 (from memory).
.. [3] E. O. Kane, "Band structure of indium antimonide", J. Phys. Chem. Solids 1, 249
   (1957) (two-band non-parabolicity; from memory).
.. [4] D. F. Nelson, R. C. Miller and D. A. Kleinman, "Band nonparabolicity effects in
   semiconductor quantum wells", Phys. Rev. B 35, 7770 (1987) (energy-dependent mass in
   the well; from memory).
.. [5] I.-H. Tan, G. L. Snider, L. D. Chang and E. L. Hu, "A self-consistent solution of
   Schrödinger–Poisson equations using a nonuniform mesh", J. Appl. Phys. 68, 4071
   (1990) (box-integration form on a non-uniform mesh; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.linalg import eigh_tridiagonal

from sub60.physics.constants import HBAR2_2M0_EV_NM2

# The two-band mass factor 1 + alpha (E - V) is floored so that the mass stays positive
# far below the local band edge (beyond the opposite band edge the two-band model no
# longer describes the carrier). The floor keeps m(E) non-decreasing in E, which the
# fixed-point solve relies on. Common practice, no source.
_MIN_MASS_FACTOR = 0.05

# Tolerance of the per-state energy fixed point [eV].
_ENERGY_TOL_EV = 1e-12


@dataclass(frozen=True)
class Subbands:
    """Bound states of the 1D confinement problem.

    Attributes
    ----------
    energies_eV : numpy.ndarray, shape (n_states,)
        subband energies, ascending, on the scale of the potential passed in [eV].
    wavefunctions : numpy.ndarray, shape (n_states, ny)
        real envelope functions phi_n(y_nm), normalised so that
        ``trapezoid(phi_n**2, y_nm) == 1`` [nm^-1/2]; zero at both ends of the range.
        Each starts positive from the left end (sign convention).
    y_nm : numpy.ndarray, shape (ny,)
        node positions [nm].
    """

    energies_eV: np.ndarray
    wavefunctions: np.ndarray
    y_nm: np.ndarray

    @property
    def n_states(self) -> int:
        """Number of states held."""
        return int(self.energies_eV.shape[0])

    def density(self) -> np.ndarray:
        """Probability densities |phi_n(y)|^2, shape (n_states, ny) [nm^-1]."""
        return self.wavefunctions**2


def _cell_values(values: np.ndarray | float, n_nodes: int, name: str) -> tuple[np.ndarray, bool]:
    """Broadcast node (ny) or cell (ny - 1) data to cell values.

    Node data are averaged onto cells (arithmetic mean); cell data are used as given.
    Returns the cell values and whether the input was given per node.
    """
    arr = np.asarray(values, dtype=float)
    if arr.ndim == 0:
        return np.full(n_nodes - 1, float(arr)), True
    if arr.shape == (n_nodes,):
        return 0.5 * (arr[1:] + arr[:-1]), True
    if arr.shape == (n_nodes - 1,):
        return arr.copy(), False
    raise ValueError(
        f"{name} must be a scalar, or have {n_nodes} node values or {n_nodes - 1} cell "
        f"values; got shape {arr.shape}"
    )


class _Discretisation:
    """Box-integration (finite-volume) form of the BenDaniel–Duke operator.

    Unknowns are phi at the interior nodes 1..ny-2 (phi = 0 at both ends). Integrating
    the equation over the control volume [y_{i-1/2}, y_{i+1/2}] of node i gives ([5]_)

        -C [ (phi_{i+1} - phi_i) / (m_{i+1/2} d_i) - (phi_i - phi_{i-1}) / (m_{i-1/2} d_{i-1}) ]
            + V_i h_i phi_i = E h_i phi_i,

    with C = hbar^2 / (2 m0), d_i = y_{i+1} - y_i, h_i = (d_{i-1} + d_i) / 2 and
    m_{i+1/2} the mass of cell i. The flux (1/m) dphi/dy is taken once per cell, so the
    BenDaniel–Duke matching at a node on an interface is built in. The generalised
    problem H phi = E B phi with B = diag(h) is made a standard symmetric tridiagonal
    one by psi = B^{1/2} phi.
    """

    def __init__(
        self,
        y_nm: np.ndarray,
        potential_eV: np.ndarray | float,
        mass_rel: np.ndarray | float,
        nonparabolicity_per_eV: np.ndarray | float,
    ) -> None:
        y = np.asarray(y_nm, dtype=float)
        if y.ndim != 1 or y.size < 3:
            raise ValueError("y_nm must be a 1D array of at least 3 nodes")
        d = np.diff(y)
        if not np.all(np.isfinite(y)) or np.any(d <= 0.0):
            raise ValueError("y_nm must be finite and strictly increasing")
        n = y.size
        v_cell, v_nodes = _cell_values(potential_eV, n, "potential_eV")
        m_cell, m_nodes = _cell_values(mass_rel, n, "mass_rel")
        a_cell, _ = _cell_values(nonparabolicity_per_eV, n, "nonparabolicity_per_eV")
        for arr, name in ((v_cell, "potential_eV"), (m_cell, "mass_rel"),
                          (a_cell, "nonparabolicity_per_eV")):
            if not np.all(np.isfinite(arr)):
                raise ValueError(f"{name} must be finite")
        if np.any(m_cell <= 0.0):
            raise ValueError("mass_rel must be positive")
        if np.any(a_cell < 0.0):
            raise ValueError("nonparabolicity_per_eV must be non-negative")
        if m_nodes:
            # harmonic mean of the node masses on each cell (series resistance of the flux)
            m_node = np.broadcast_to(np.asarray(mass_rel, dtype=float), (n,))
            m_cell = 2.0 / (1.0 / m_node[1:] + 1.0 / m_node[:-1])

        self.y = y
        self.d = d
        self.h = 0.5 * (d[1:] + d[:-1])  # control volumes of the interior nodes
        if v_nodes:
            v_node = np.broadcast_to(np.asarray(potential_eV, dtype=float), (n,))
            self.potential_term = v_node[1:-1] * self.h
        else:
            self.potential_term = 0.5 * (v_cell[1:] * d[1:] + v_cell[:-1] * d[:-1])
        self.v_cell = v_cell
        self.m_cell = m_cell
        self.a_cell = a_cell
        self.parabolic = not np.any(a_cell > 0.0)
        self.inv_sqrt_h = 1.0 / np.sqrt(self.h)
        self.off_scale = self.inv_sqrt_h[1:] * self.inv_sqrt_h[:-1]

    def tridiagonal(self, energy_eV: float | None) -> tuple[np.ndarray, np.ndarray]:
        """Diagonal and off-diagonal of B^{-1/2} H(E) B^{-1/2} [eV].

        ``energy_eV=None`` gives the parabolic operator (band-edge masses m*).
        """
        if energy_eV is None:
            mass = self.m_cell
        else:
            factor = 1.0 + self.a_cell * (energy_eV - self.v_cell)
            mass = self.m_cell * np.maximum(factor, _MIN_MASS_FACTOR)
        t = HBAR2_2M0_EV_NM2 / (mass * self.d)  # flux coupling of each cell [eV nm]
        diag = (t[1:] + t[:-1] + self.potential_term) * (self.inv_sqrt_h**2)
        off = -t[1:-1] * self.off_scale
        return diag, off

    def eigen(
        self, energy_eV: float | None, first: int, last: int, vectors: bool
    ) -> tuple[np.ndarray, np.ndarray | None]:
        """Eigenvalues first..last (0-based, inclusive) of H(E) [eV], and phi on all nodes."""
        diag, off = self.tridiagonal(energy_eV)
        if not vectors:
            w = eigh_tridiagonal(diag, off, eigvals_only=True, select="i",
                                 select_range=(first, last))
            return w, None
        w, psi = eigh_tridiagonal(diag, off, select="i", select_range=(first, last))
        phi = np.zeros((w.size, self.y.size))
        phi[:, 1:-1] = (psi * self.inv_sqrt_h[:, None]).T
        return w, phi


def _fix_sign(phi: np.ndarray) -> np.ndarray:
    """Make each wavefunction start positive from the left end."""
    out = phi.copy()
    for row in out:
        big = np.abs(row) > 1e-3 * np.max(np.abs(row))
        if row[np.argmax(big)] < 0.0:
            row *= -1.0
    return out


def _nonparabolic_energy(disc: _Discretisation, index: int, start_eV: float) -> float:
    """Fixed point E = lambda_index(E) of the energy-dependent problem [eV].

    With alpha >= 0 every cell mass m(E) is non-decreasing in E, so the kinetic operator
    and hence each eigenvalue lambda_n(E) is non-increasing in E (Courant–Fischer
    min-max). g(E) = lambda_n(E) - E is then strictly decreasing with one root, and for
    any E0 the root lies between E0 and E1 = lambda_n(E0); Brent's method finishes it.
    """

    def g(energy: float) -> float:
        return float(disc.eigen(energy, index, index, vectors=False)[0][0]) - energy

    e0 = start_eV
    g0 = g(e0)
    if abs(g0) <= _ENERGY_TOL_EV:
        return e0
    e1 = e0 + g0
    g1 = g(e1)
    if abs(g1) <= _ENERGY_TOL_EV:
        return e1
    if g0 * g1 > 0.0:  # only through round-off of a near-converged bracket
        return e1 if abs(g1) < abs(g0) else e0
    lo, hi = (e0, e1) if e0 < e1 else (e1, e0)
    from scipy.optimize import brentq  # loaded on first use: scipy.optimize is slow to import

    return float(brentq(g, lo, hi, xtol=_ENERGY_TOL_EV, rtol=4 * np.finfo(float).eps))


def solve_subbands(
    y_nm: np.ndarray,
    potential_eV: np.ndarray,
    mass_rel: np.ndarray,
    n_states: int = 3,
    nonparabolicity_per_eV: np.ndarray | float = 0.0,
) -> Subbands:
    """Lowest subbands of the 1D BenDaniel–Duke equation on a (non-uniform) grid.

    Parameters
    ----------
    y_nm : numpy.ndarray, shape (ny,)
        strictly increasing node positions along the confinement axis [nm]; may be
        non-uniform. phi = 0 is imposed at the first and last node (Dirichlet), so the
        barriers must be thick enough for the states to decay before the ends.
    potential_eV : numpy.ndarray, shape (ny,) or (ny - 1,)
        potential energy of the carrier at each node, or on each cell [eV]. For holes,
        the inverted valence-band profile.
    mass_rel : numpy.ndarray or float, shape (ny,) or (ny - 1,)
        band-edge effective mass along y at each node, or on each cell [m0]. Node masses
        are combined on each cell by their harmonic mean.
    n_states : int
        number of states to return (lowest first) [-].
    nonparabolicity_per_eV : numpy.ndarray or float, shape (ny,) or (ny - 1,)
        non-parabolicity alpha at each node or cell [1/eV]; 0 in the barriers. A scalar
        applies everywhere.

    Returns
    -------
    Subbands
        energies [eV] (ascending, on the scale of ``potential_eV``), wavefunctions
        normalised to trapezoid(phi^2, y) = 1 [nm^-1/2], and the grid [nm].

    Notes
    -----
    Discretisation: box integration of
    -(hbar^2/2) d/dy[(1/m) dphi/dy] + V phi = E phi ([1]_, [5]_) into the symmetric
    tridiagonal problem of :class:`_Discretisation`, solved with LAPACK's tridiagonal
    bisection and inverse iteration (``scipy.linalg.eigh_tridiagonal``). Because the end
    nodes carry phi = 0, the trapezoid rule on the grid equals the B inner product, so
    the parabolic states are exactly orthonormal in it.

    Non-parabolicity: the cell mass is m(E) = m* (1 + alpha (E - V_cell)) ([3]_, [4]_),
    i.e. E_kin (1 + alpha E_kin) = hbar^2 k^2 / (2 m*). Each state solves
    E_n = lambda_n(E_n) with the masses frozen at E_n. States from different E are not
    mutually orthogonal (the Hamiltonian depends on E).

    Accuracy: second order in the spacing for piecewise-smooth data when every material
    interface is a node and the mass, potential and alpha are given per cell (a single
    node value at a jump is ambiguous and gives first order).
    If fewer than ``n_states`` states are bound, the upper ones are states of the box
    closed by the Dirichlet ends.
    """
    disc = _Discretisation(y_nm, potential_eV, mass_rel, nonparabolicity_per_eV)
    n_states = int(n_states)
    if not 1 <= n_states <= disc.h.size:
        raise ValueError(f"n_states must be between 1 and {disc.h.size} (interior nodes)")

    energies, phi = disc.eigen(None, 0, n_states - 1, vectors=True)
    if not disc.parabolic:
        energies = np.array(
            [_nonparabolic_energy(disc, n, float(energies[n])) for n in range(n_states)]
        )
        phi = np.vstack([disc.eigen(float(energies[n]), n, n, vectors=True)[1]
                         for n in range(n_states)])
    phi = _fix_sign(phi)
    y = disc.y.copy()
    for arr in (energies, phi, y):
        arr.setflags(write=False)
    return Subbands(energies_eV=energies, wavefunctions=phi, y_nm=y)


def well_subbands(
    body_thickness_nm: float,
    barrier_thickness_nm: float,
    barrier_height_eV: float,
    well_mass_rel: float,
    barrier_mass_rel: float,
    n_states: int = 3,
    nonparabolicity_per_eV: float = 0.0,
    spacing_nm: float = 0.05,
) -> Subbands:
    """Subbands of a square well [barrier | body | barrier].

    Parameters
    ----------
    body_thickness_nm : float
        thickness of the semiconductor body t; the body spans 0 <= y <= t [nm].
    barrier_thickness_nm : float
        thickness of each barrier; phi = 0 at its outer face [nm].
    barrier_height_eV : float
        potential step from the body band edge to the barrier (band offset) [eV].
    well_mass_rel : float
        band-edge effective mass in the body [m0].
    barrier_mass_rel : float
        effective mass in the barriers [m0].
    n_states : int
        number of states [-].
    nonparabolicity_per_eV : float
        non-parabolicity alpha of the body [1/eV] (the barriers are parabolic).
    spacing_nm : float
        largest grid spacing; the body and each barrier get a whole number of equal
        cells, so both interfaces are nodes [nm].

    Returns
    -------
    Subbands
        energies relative to the body's band edge [eV], wavefunctions [nm^-1/2] and the
        grid from -barrier_thickness to t + barrier_thickness [nm].

    Notes
    -----
    Mass, potential and alpha are passed per cell, so the BenDaniel–Duke matching at the
    interfaces is exact in the box-integration form and the energies converge at second
    order in the spacing (see :func:`solve_subbands`). Reference solution: the even/odd
    transcendental equations, k tan(kt/2)/m_w = kappa/m_b and
    -k cot(kt/2)/m_w = kappa/m_b ([2]_ ch. 4).
    """
    t = float(body_thickness_nm)
    tb = float(barrier_thickness_nm)
    h = float(spacing_nm)
    if not (t > 0.0 and tb > 0.0 and h > 0.0):
        raise ValueError("thicknesses and spacing must be positive")
    n_body = max(2, int(np.ceil(t / h - 1e-9)))
    n_bar = max(1, int(np.ceil(tb / h - 1e-9)))
    y = np.concatenate([
        np.linspace(-tb, 0.0, n_bar + 1)[:-1],
        np.linspace(0.0, t, n_body + 1),
        np.linspace(t, t + tb, n_bar + 1)[1:],
    ])
    in_body = np.r_[np.zeros(n_bar, bool), np.ones(n_body, bool), np.zeros(n_bar, bool)]
    potential = np.where(in_body, 0.0, float(barrier_height_eV))
    mass = np.where(in_body, float(well_mass_rel), float(barrier_mass_rel))
    alpha = np.where(in_body, float(nonparabolicity_per_eV), 0.0)
    return solve_subbands(y, potential, mass, n_states=n_states, nonparabolicity_per_eV=alpha)


def _trapezoid_weights(y_nm: np.ndarray) -> np.ndarray:
    """Trapezoid-rule weights of a node grid [nm]."""
    d = np.diff(y_nm)
    w = np.zeros_like(y_nm)
    w[:-1] += 0.5 * d
    w[1:] += 0.5 * d
    return w


def subband_weights(sub: Subbands, y_nodes_nm: np.ndarray) -> np.ndarray:
    """Quadrature weights of |phi_n|^2 on another (coarser) grid.

    Parameters
    ----------
    sub : Subbands
        the states.
    y_nodes_nm : numpy.ndarray, shape (m,)
        strictly increasing node positions of the target grid, e.g. the y nodes of the
        2D electrostatics [nm].

    Returns
    -------
    numpy.ndarray, shape (n_states, m)
        W with W[n] @ f ~= integral |phi_n(y)|^2 f(y) dy for a profile f sampled on
        ``y_nodes_nm`` [-]. Each row sums to 1.

    Notes
    -----
    |phi_n|^2 is interpolated linearly onto the target nodes (zero outside the range of
    ``sub.y_nm``), multiplied by the trapezoid weights of the target grid, and each row
    is renormalised to 1. First-order perturbation theory then gives the subband edge
    along x, E_n(x) = E_n0 + W[n] @ dV(x, y_nodes), for a potential change dV that is
    slow on the scale of the grid (e.g. [2]_ on perturbation theory; from memory).
    """
    yq = np.asarray(y_nodes_nm, dtype=float)
    if yq.ndim != 1 or yq.size < 2 or np.any(np.diff(yq) <= 0.0):
        raise ValueError("y_nodes_nm must be a strictly increasing 1D array of >= 2 nodes")
    quad = _trapezoid_weights(yq)
    rho = np.vstack([np.interp(yq, sub.y_nm, row, left=0.0, right=0.0)
                     for row in sub.density()])
    w = rho * quad[None, :]
    total = w.sum(axis=1, keepdims=True)
    if np.any(total <= 0.0):
        raise ValueError("y_nodes_nm does not overlap the wavefunctions")
    return w / total
