"""Nonlinear 2D Poisson equation with Fermi–Dirac carriers, solved by Newton's method.

    -div(eps0 eps_r grad psi) = q (p - n + N_D - N_A)                        (1)

finite volumes on a tensor grid (node-centred control volumes, harmonic-free face
permittivities because materials change only across y cells). psi is the electrostatic
potential with the vacuum level at -q psi, so that in the semiconductor

    E_c = -chi - q psi + dE_c,    E_v = E_c - E_g - dE_c - dE_v                (2)

with dE_c, dE_v the confinement shifts of the lowest subbands (quantum-corrected
semiclassical charge) and, with the quasi-Fermi levels E_Fn, E_Fp,

    n = N_c F_1/2((E_Fn - E_c)/kT),   p = N_v F_1/2((E_v - E_Fp)/kT)         (3)

(Sze & Ng, Physics of Semiconductor Devices, 3rd ed., 2007, ch. 1; F_j normalised as in
DLMF §25.12). Energies are in eV with the source Fermi level at 0. Optional interface
traps add a sheet charge q sigma(n, p) on interface nodes (`PoissonProblem.interface_traps`;
the node's control volume holds q sigma dx per unit depth), with d sigma/d psi in the
Jacobian's diagonal (non-positive, so the matrix stays symmetric positive definite).

Newton's method: the Jacobian of the finite-volume residual is the (symmetric, positive
definite) Laplacian plus a positive diagonal from dn/dpsi - dp/dpsi; unknowns are
ordered with y fastest so that the bandwidth is the short dimension and each step is
one banded Cholesky factorisation (LAPACK pbtrf via scipy.linalg). Once the updates are
small and shrinking, the factorisation is kept for the next steps (chord iteration:
a back-substitution costs a tenth of a factorisation); a chord step that fails to
lower the residual triggers a fresh factorisation. Dirichlet nodes
(gates, ohmic contacts) are kept as identity rows and columns. Steps are capped and
backtracked on the residual norm (damping); ``initial=`` continues from a previous
solution.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp

from sub60.physics._threads import single_blas_thread
from sub60.physics.constants import QE_V_NM2_CM3
from sub60.physics.mesh import Mesh
from sub60.physics.statistics import fermi_half_and_minus_half, inverse_fermi_half

# charge term of the residual = QE_V_NM2_CM3 * (control area [nm^2]) * density [cm^-3] -> [V]
# a sheet density sigma [cm^-2] on a node of width dx [nm] counts as sigma * dx * 1e7
# [cm^-3 nm^2] (1 cm^-2 = 1e7 nm cm^-3)
_SHEET_NM_PER_CM = 1e7


class SolverError(RuntimeError):
    """A solve that did not converge.

    Attributes
    ----------
    summary : str
        what failed, in one sentence, without the history (for messages; re-wrap with
        ``SolverError(f"context: {exc.summary}", exc.history)`` so the history is not
        repeated).
    history : tuple of float
        largest Newton update of each step [V], oldest first (empty when not a Newton
        failure).

    ``str(exc)`` is the summary followed once by the last 8 entries of the history.
    """

    def __init__(self, summary: str, history: Sequence[float] = ()):
        self.summary = str(summary)
        self.history = tuple(float(r) for r in history)
        super().__init__(self._message())

    def _message(self) -> str:
        if not self.history:
            return self.summary
        hist = ", ".join(f"{r:.2e}" for r in self.history[-8:])
        return f"{self.summary}; residual history [V]: {hist}"

    def __reduce__(self):  # picklable across processes (e.g. Dask workers)
        return (type(self), (self.summary, self.history))


@dataclass(frozen=True)
class BandParameters:
    """Semiconductor parameters entering the charge (2)-(3).

    chi_eV : electron affinity [eV]; eg_eV : gap [eV]; nc_cm3, nv_cm3 : effective
    densities of states [cm^-3]; kT_eV : thermal energy [eV]; dec_eV, dev_eV :
    confinement shifts of the lowest conduction / highest valence subband [eV].
    Each material parameter is a number, or an (nx,) array along x (a heterojunction:
    the material of each node); arrays apply along the first axis of the potential.
    """

    chi_eV: float
    eg_eV: float
    nc_cm3: float
    nv_cm3: float
    kT_eV: float
    dec_eV: float = 0.0
    dev_eV: float = 0.0
    #: a heterointerface node whose control volume is split between two materials:
    #: (node index along x, share of the volume on the source side, the source side's
    #: scalar BandParameters); its densities are the volume-weighted mean of both
    interface: tuple[int, float, BandParameters] | None = None

    @property
    def varies(self) -> bool:
        """True when any parameter is an array along x (a heterojunction)."""
        return any(np.ndim(v) for v in (self.chi_eV, self.eg_eV, self.nc_cm3, self.nv_cm3,
                                        self.dec_eV, self.dev_eV))

    def at(self, index: np.ndarray | int) -> BandParameters:
        """The parameters at some nodes along x (self when they do not vary)."""
        if not self.varies:
            return self

        def pick(v):
            return v if np.ndim(v) == 0 else np.asarray(v)[index]

        return BandParameters(pick(self.chi_eV), pick(self.eg_eV), pick(self.nc_cm3),
                              pick(self.nv_cm3), self.kT_eV, pick(self.dec_eV),
                              pick(self.dev_eV))  # (contacts: no interface node)

    def ec_eV(self, psi_V: np.ndarray) -> np.ndarray:
        """Confinement-shifted conduction edge (2) [eV]."""
        return -_along(self.chi_eV, psi_V) - psi_V + _along(self.dec_eV, psi_V)

    def ev_eV(self, psi_V: np.ndarray) -> np.ndarray:
        """Confinement-shifted valence edge (2) [eV]."""
        return (-_along(self.chi_eV, psi_V) - _along(self.eg_eV, psi_V) - psi_V
                - _along(self.dev_eV, psi_V))

    def densities(
        self, psi_V: np.ndarray, efn_eV: np.ndarray, efp_eV: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """n, p [cm^-3] and their derivatives dn/dpsi, dp/dpsi [cm^-3/V], eq. (3).

        Parameters of numbers without an interface node take the compiled kernel
        (`sub60.physics._fermi_compiled`, equal to this numpy path to a few units in
        the last place); arrays along x and interface nodes take the numpy path.
        """
        if self.interface is None and not self.varies:
            fused = _compiled_densities(self, psi_V, efn_eV, efp_eV)
            if fused is not None:
                return fused
        return self.densities_reference(psi_V, efn_eV, efp_eV)

    def densities_reference(
        self, psi_V: np.ndarray, efn_eV: np.ndarray, efp_eV: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """`densities` by whole-array numpy operations (the reference of the kernel)."""
        eta_n = (efn_eV - self.ec_eV(psi_V)) / self.kT_eV
        eta_p = (self.ev_eV(psi_V) - efp_eV) / self.kT_eV
        fn, fn1 = fermi_half_and_minus_half(eta_n)
        fp, fp1 = fermi_half_and_minus_half(eta_p)
        nc, nv = _along(self.nc_cm3, psi_V), _along(self.nv_cm3, psi_V)
        n = nc * fn
        p = nv * fp
        dn = nc * fn1 / self.kT_eV
        dp = -nv * fp1 / self.kT_eV
        if self.interface is not None and np.shape(psi_V)[:1] == np.shape(self.chi_eV):
            i, w, other = self.interface
            efn_i = np.asarray(efn_eV)[i] if np.ndim(efn_eV) else efn_eV
            efp_i = np.asarray(efp_eV)[i] if np.ndim(efp_eV) else efp_eV
            n_s, p_s, dn_s, dp_s = other.densities(np.asarray(psi_V)[i], efn_i, efp_i)
            n, p, dn, dp = (np.array(a, float, copy=True) for a in (n, p, dn, dp))
            n[i] = w * n_s + (1 - w) * n[i]
            p[i] = w * p_s + (1 - w) * p[i]
            dn[i] = w * dn_s + (1 - w) * dn[i]
            dp[i] = w * dp_s + (1 - w) * dp[i]
        return n, p, dn, dp


def _compiled_densities(bands: BandParameters, psi_V, efn_eV, efp_eV):
    """`BandParameters.densities` by the compiled kernel (parameters of numbers), or None
    when numba is missing or the arrays have more than two dimensions."""
    try:
        from sub60.physics._fermi_compiled import densities_compiled
    except ImportError:  # pragma: no cover - numba is a declared dependency
        return None
    return densities_compiled(float(bands.chi_eV), float(bands.eg_eV), float(bands.nc_cm3),
                              float(bands.nv_cm3), float(bands.kT_eV), float(bands.dec_eV),
                              float(bands.dev_eV), psi_V, efn_eV, efp_eV)


def _along(value, psi_V: np.ndarray):
    """A number as it is; an (nx,) array shaped to broadcast along the first axis of psi."""
    if np.ndim(value) == 0:
        return value
    return np.reshape(value, np.shape(value) + (1,) * (np.ndim(psi_V) - 1))


def neutral_potential(
    bands: BandParameters,
    net_doping_cm3: np.ndarray,
    efn_eV: np.ndarray | float,
    efp_eV: np.ndarray | float,
) -> np.ndarray:
    """Potential at which p - n + N_D - N_A = 0 (charge-neutral, ohmic) [V].

    Vectorised bisection: the net charge falls monotonically with psi, eq. (3).
    """
    net = np.asarray(net_doping_cm3, dtype=float)
    efn = np.broadcast_to(np.asarray(efn_eV, float), net.shape)
    efp = np.broadcast_to(np.asarray(efp_eV, float), net.shape)
    if hasattr(bands, "bracket_eV"):  # another charge model (`subband_charge.ColumnCharge`)
        lo, hi = bands.bracket_eV(net, efn, efp)
        return _bisect_neutral(bands, net, efn, efp, lo, hi)
    # bracket: holes dominate with E_v 2 eV (plus the degeneracy depth of the acceptors)
    # above every Fermi level, electrons with E_c 2 eV (plus that of the donors) below
    deep_n = bands.kT_eV * np.maximum(inverse_fermi_half(np.maximum(net, 1.0) / bands.nc_cm3), 0.0)
    deep_p = bands.kT_eV * np.maximum(inverse_fermi_half(np.maximum(-net, 1.0) / bands.nv_cm3), 0.0)
    lo = -bands.chi_eV - bands.eg_eV - bands.dev_eV - np.maximum(efn, efp) - 2.0 - deep_p
    hi = -bands.chi_eV + bands.dec_eV - np.minimum(efn, efp) + 2.0 + deep_n
    return _bisect_neutral(bands, net, efn, efp, lo, hi)


_BISECTION_STEPS = 80


def _bisect_neutral(bands, net, efn, efp, lo, hi) -> np.ndarray:
    """At most 80 halvings of [lo, hi] on the sign of p - n + net; psi [V].

    Stops as soon as every midpoint equals its lo or hi bit for bit (or is NaN): from
    then on no step changes 0.5 (lo + hi) (a step either keeps both ends or sets the
    other end to the midpoint, which is one of them), so the result is that of all 80
    steps, found in the ~55 that resolve a bracket of a few volts to round-off.
    """
    for _ in range(_BISECTION_STEPS):
        mid = 0.5 * (lo + hi)
        if np.all((mid == lo) | (mid == hi) | np.isnan(mid)):
            return mid
        n, p, _, _ = bands.densities(mid, efn, efp)
        positive = (p - n + net) > 0  # too much positive charge: raise psi
        lo = np.where(positive, mid, lo)
        hi = np.where(positive, hi, mid)
    return 0.5 * (lo + hi)


@dataclass(frozen=True)
class PoissonProblem:
    """Everything the Newton solver needs.

    mesh : the grid; donors_cm3, acceptors_cm3 : (nx,) doping along x, uniform across
    the body [cm^-3]; bands : charge model; dirichlet : (nx, ny) mask of fixed nodes;
    dirichlet_psi_V : their values [V]; efn_eV, efp_eV : (nx,) quasi-Fermi levels
    [eV]; carriers : False for a fixed-charge (linear) problem; split_efn : if set,
    (efs, efd, x_lo, x_hi): electrons take efs up to the conduction-band maximum
    between x_lo and x_hi and efd beyond it (top-of-barrier split for the MOSFET twin).
    extra_charge_cm3 : optional (nx, ny) fixed charge added to the doping at semiconductor
    nodes [cm^-3] (a manufactured source: how the solver is verified, see
    tests/physics/test_poisson_verification.py).
    interface_traps : optional trapped sheet charge at interface nodes, an object with
    ``nodes`` ((nx, ny) bool), ``width_nm`` ((nx, ny) [nm]) and ``sheet_charge(n, p, dn,
    dp) -> (sigma [cm^-2], d sigma / d psi [cm^-2 V^-1])`` evaluated on those nodes
    (`sub60.physics.interface_traps.InterfaceTraps`); it enters (1) as a surface charge
    q sigma on the node's control-volume face and its derivative enters the Jacobian.
    """

    mesh: Mesh
    donors_cm3: np.ndarray
    acceptors_cm3: np.ndarray
    bands: BandParameters
    dirichlet: np.ndarray
    dirichlet_psi_V: np.ndarray
    efn_eV: np.ndarray
    efp_eV: np.ndarray
    carriers: bool = True
    split_efn: tuple[float, float, float, float] | None = None
    extra_charge_cm3: np.ndarray | None = None
    interface_traps: Any = None
    #: optional charge model replacing ``bands.densities`` in the body: an object with
    #: ``evaluate(psi, efn, efp) -> (n, p, dn, dp, band)``, band the charge Jacobian in
    #: the upper banded form of the Newton matrix (`sub60.physics.subband_charge`)
    subband_charge: Any = None


@dataclass
class PoissonSolution:
    """Converged potential and carriers on the grid (all (nx, ny) unless stated)."""

    psi_V: np.ndarray
    n_cm3: np.ndarray
    p_cm3: np.ndarray
    efn_eV: np.ndarray  # (nx,)
    efp_eV: np.ndarray  # (nx,)
    iterations: int
    residual_V: float
    history: list[float] = field(default_factory=list)
    interface_charge_cm2: np.ndarray | None = None  # (nx, ny) trapped sheet charge / q, or None


class PoissonOperator:
    """Finite-volume Laplacian of a mesh, in banded and sparse form (built once)."""

    def __init__(self, mesh: Mesh, dirichlet: np.ndarray):
        nx, ny = mesh.nx, mesh.ny
        hx, hy = np.diff(mesh.x_nm), np.diff(mesh.y_nm)
        eps = mesh.cell_permittivity
        dx = mesh.dx_nm
        if mesh.cell_permittivity_xy is None:
            # face "area" (length per unit depth) of an x-face at node row j, eps-weighted
            ay = 0.5 * (np.concatenate([[0.0], hy * eps]) + np.concatenate([hy * eps, [0.0]]))
            cx = ay[None, :] / hx[:, None]  # (nx-1, ny) coupling (i,j)-(i+1,j)
            cy = dx[:, None] * (eps / hy)[None, :]  # (nx, ny-1) coupling (i,j)-(i,j+1)
        else:
            # per-cell permittivity: each face of a control volume crosses two cells
            # (half of each), eps-weighted by the cell it lies in
            e2 = mesh.cell_permittivity_xy
            fy = hy[None, :] * e2  # (nx-1, ny-1)
            pad = np.zeros((nx - 1, 1))
            cx = 0.5 * (np.hstack([pad, fy]) + np.hstack([fy, pad])) / hx[:, None]
            fx = hx[:, None] * e2
            padx = np.zeros((1, ny - 1))
            cy = 0.5 * (np.vstack([padx, fx]) + np.vstack([fx, padx])) / hy[None, :]
        self.shape = (nx, ny)
        self.area_semi = dx[:, None] * mesh.dy_semiconductor_nm[None, :]  # [nm^2]
        n = nx * ny
        diag = np.zeros((nx, ny))
        diag[:-1, :] += cx
        diag[1:, :] += cx
        diag[:, :-1] += cy
        diag[:, 1:] += cy
        k = np.arange(n).reshape(nx, ny)
        rows = np.concatenate([k[:-1, :].ravel(), k[:, :-1].ravel()])
        cols = np.concatenate([k[1:, :].ravel(), k[:, 1:].ravel()])
        vals = -np.concatenate([cx.ravel(), cy.ravel()])
        off = sp.coo_matrix((vals, (rows, cols)), shape=(n, n))
        self.matrix = (off + off.T + sp.diags(diag.ravel())).tocsr()
        # banded upper form for the Newton system, Dirichlet rows/columns -> identity
        fixed = dirichlet.ravel()
        self.fixed = fixed
        ab = np.zeros((ny + 1, n))
        ab[ny] = np.where(fixed, 1.0, diag.ravel())
        yc = np.zeros((nx, ny))
        yc[:, 1:] = -cy  # A[k-1, k] stored at column k
        yc = yc.ravel()
        yc[fixed | np.roll(fixed, 1)] = 0.0
        ab[ny - 1] = yc
        xc = np.zeros((nx, ny))
        xc[1:, :] = -cx  # A[k-ny, k] stored at column k
        xc = xc.ravel()
        xc[fixed | np.roll(fixed, ny)] = 0.0
        ab[0] = xc
        self.banded = ab

    def newton_matrix(self, charge_diag: np.ndarray, charge_band: np.ndarray | None = None
                      ) -> np.ndarray:
        """Banded Jacobian: Laplacian + diag(charge derivative) on free nodes, plus an
        optional banded charge derivative (rows and columns of fixed nodes dropped)."""
        ab = self.banded.copy()
        ab[-1] += np.where(self.fixed, 0.0, charge_diag)
        if charge_band is not None:
            ab += np.where(self._band_free, charge_band, 0.0)
        return ab

    @property
    def _band_free(self) -> np.ndarray:
        """(ny+1, n) True where the banded entry A[k-d, k] joins two free nodes."""
        mask = getattr(self, "_band_free_mask", None)
        if mask is None:
            ny1, n = self.banded.shape
            free = ~self.fixed
            mask = np.zeros((ny1, n), bool)
            for r in range(ny1):
                d = ny1 - 1 - r
                mask[r, d:] = free[d:] & free[: n - d]
            self._band_free_mask = mask
        return mask


def _efn_profile(problem: PoissonProblem, psi: np.ndarray, body_j: int) -> np.ndarray:
    if problem.split_efn is None:
        return problem.efn_eV
    efs, efd, lo, hi = problem.split_efn
    x = problem.mesh.x_nm
    inside = (x >= lo) & (x <= hi)
    ec_mid = -psi[:, body_j]
    i_top = np.flatnonzero(inside)[np.argmax(ec_mid[inside])]
    return np.where(np.arange(x.size) <= i_top, efs, efd)


def solve_poisson(
    problem: PoissonProblem,
    initial_psi_V: np.ndarray,
    operator: PoissonOperator | None = None,
    tol_V: float = 1e-8,
    max_iter: int = 60,
    max_step_V: float = 1.0,
) -> PoissonSolution:
    """Damped Newton solution of (1)-(3).

    Parameters
    ----------
    problem : PoissonProblem
    initial_psi_V : (nx, ny) starting potential [V]; Dirichlet values are imposed.
    operator : prebuilt PoissonOperator for this mesh and Dirichlet mask (reused).
    tol_V : convergence when the largest Newton update is below this [V].
    max_iter : Newton steps before giving up.
    max_step_V : cap on the largest update of one step [V] (damping).

    Raises
    ------
    SolverError
        when the iteration does not converge, with the residual history.

    Notes
    -----
    BLAS is limited to one thread during the solve (`sub60.physics._threads`).
    """
    with single_blas_thread():
        return _newton(problem, initial_psi_V, operator, tol_V, max_iter, max_step_V)


def _newton(problem: PoissonProblem, initial_psi_V: np.ndarray, operator: PoissonOperator | None,
            tol_V: float, max_iter: int, max_step_V: float) -> PoissonSolution:
    """The damped Newton loop of `solve_poisson`."""
    mesh = problem.mesh
    nx, ny = mesh.nx, mesh.ny
    op = operator or PoissonOperator(mesh, problem.dirichlet)
    psi = np.where(problem.dirichlet, problem.dirichlet_psi_V, initial_psi_V).ravel().copy()
    semi_nodes = np.broadcast_to(mesh.node_semiconductor[None, :], (nx, ny))
    doping = (problem.donors_cm3 - problem.acceptors_cm3)[:, None] * semi_nodes
    if problem.extra_charge_cm3 is not None:
        doping = doping + problem.extra_charge_cm3
    area = op.area_semi
    y_lo, y_hi = mesh.body_bounds_nm()
    body_j = int(np.argmin(np.abs(mesh.y_nm - 0.5 * (y_lo + y_hi))))
    free = ~op.fixed
    efp2 = problem.efp_eV[:, None]
    traps = problem.interface_traps
    if traps is not None:
        tmask = traps.nodes
        tflat = np.flatnonzero(tmask.ravel())
        sheet_scale = QE_V_NM2_CM3 * _SHEET_NM_PER_CM * traps.width_nm[tmask]

    sbc = problem.subband_charge

    def residual(psi_flat: np.ndarray, efn: np.ndarray):
        psi2 = psi_flat.reshape(nx, ny)
        band = None
        if problem.carriers and sbc is not None:
            n, p, dn, dp, band = sbc.evaluate(psi2, np.broadcast_to(efn, (nx,)),
                                              np.broadcast_to(problem.efp_eV, (nx,)))
            rho = p - n + doping
            dq = np.zeros_like(psi2)
        elif problem.carriers:
            n, p, dn, dp = problem.bands.densities(psi2, efn[:, None], efp2)
            rho = p - n + doping
            dq = (dn - dp) * area * QE_V_NM2_CM3
        else:
            n = p = np.zeros_like(psi2)
            rho = doping
            dq = np.zeros_like(psi2)
        f = op.matrix @ psi_flat - (QE_V_NM2_CM3 * area * rho).ravel()
        if traps is not None and problem.carriers:
            sigma, dsigma = traps.sheet_charge(n[tmask], p[tmask], dn[tmask], dp[tmask])
            f[tflat] -= sheet_scale * sigma
            dq[tmask] -= sheet_scale * dsigma
        f[~free] = 0.0
        if band is not None:  # the Jacobian's charge part: banded, its diagonal in dq too
            return f, (dq.ravel() + band[-1], band), n, p
        return f, (dq.ravel(), None), n, p

    history: list[float] = []
    efn = _efn_profile(problem, psi.reshape(nx, ny), body_j)
    f, dq, n, p = residual(psi, efn)
    factor = None
    fresh = False
    split_updates = 0
    for it in range(1, max_iter + 1):
        dq_diag, dq_band = dq
        diag = np.where(op.fixed, 1.0, op.banded[-1] + dq_diag)
        if factor is None:
            if dq_band is None:
                matrix = op.newton_matrix(dq_diag)
            else:  # the band holds the diagonal of the charge part already
                matrix = op.newton_matrix(dq_diag - dq_band[-1], dq_band)
            try:
                factor = sla.cholesky_banded(matrix, lower=False, check_finite=False)
            except np.linalg.LinAlgError as exc:
                raise SolverError(f"Newton matrix not positive definite ({exc})", history) from None
            fresh = True
        delta = sla.cho_solve_banded((factor, False), -f, check_finite=False)
        step = float(np.max(np.abs(delta)))
        if not np.isfinite(step):
            raise SolverError("non-finite Newton update", history)
        # damping cap for the nonlinear problem; the linear (fixed-charge) one is exact in one step
        t = min(1.0, max_step_V / step) if (step > 0 and problem.carriers) else 1.0
        norm0 = np.linalg.norm(f / diag)
        accepted = False
        for _ in range(12):  # backtracking on the scaled residual norm
            trial = psi + t * delta
            f_t, dq_t, n_t, p_t = residual(trial, efn)
            if np.linalg.norm(f_t / diag) <= norm0 * (1 - 1e-4 * t) or t * step < 1e-7:
                accepted = True
                break
            if not fresh:
                break  # a stale (chord) factor failed: refactor and retry this step
            t *= 0.5
        if not accepted and not fresh:
            factor = None
            continue
        history.append(t * step)
        psi, f, dq, n, p = trial, f_t, dq_t, n_t, p_t
        # chord iteration: keep the factorisation while the updates are small and shrink fast
        shrinking = len(history) < 2 or history[-1] < 0.25 * history[-2]
        if not (t == 1.0 and step < 1e-2 and shrinking):
            factor = None
        fresh = False
        if problem.split_efn is not None and split_updates < 6:
            # the barrier top can hop between nearly equal maxima of a flat band:
            # after a few moves the split stays where it is
            new_efn = _efn_profile(problem, psi.reshape(nx, ny), body_j)
            if not np.array_equal(new_efn, efn):
                split_updates += 1
                efn = new_efn
                f, dq, n, p = residual(psi, efn)
                factor = None
                continue
        res = float(np.max(np.abs(f / np.where(op.fixed, 1.0, op.banded[-1] + dq[0]))))
        if (t * step < tol_V or (step < 1e-4 and res < 0.1 * tol_V)) or not problem.carriers:
            trapped = None
            if traps is not None and problem.carriers:
                trapped = np.zeros((nx, ny))
                zero = np.zeros(tflat.size)
                trapped[tmask] = traps.sheet_charge(n[tmask], p[tmask], zero, zero)[0]
            return PoissonSolution(
                psi_V=psi.reshape(nx, ny), n_cm3=n * semi_nodes, p_cm3=p * semi_nodes,
                efn_eV=np.asarray(efn, float), efp_eV=np.asarray(problem.efp_eV, float),
                iterations=it, residual_V=res, history=history, interface_charge_cm2=trapped)
    raise SolverError(f"Newton did not converge in {max_iter} steps", history)
