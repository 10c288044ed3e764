"""The electrostatics of one design at one bias point: `solve_electrostatics`."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sub60.physics._cache import array_bytes
from sub60.physics.design import Design, check_bias
from sub60.physics.poisson import SolverError, solve_poisson
from sub60.physics.structure import DeviceFrame, build_frame, initial_guess, problem_at_bias


@dataclass(frozen=True)
class Electrostatics:
    """Converged 2D electrostatics of a design at (V_g, V_d).

    Attributes
    ----------
    design : Design
    vg_V, vd_V : bias [V]
    x_nm, y_nm : grid [nm]
    psi_V : (nx, ny) electrostatic potential (vacuum level at -q psi) [V]
    n_cm3, p_cm3 : (nx, ny) electron and hole densities, zero in the dielectrics [cm^-3]
    bulk_ec_eV, bulk_ev_eV : (nx,) bulk conduction and valence band edges on the body
        mid-plane (no confinement shift), source Fermi level at 0 [eV]; the subband
        edges the carriers see are `BiasPoint.subband_ec_eV` / `subband_ev_eV`
    efn_eV, efp_eV : (nx,) electron and hole quasi-Fermi levels [eV]
    iterations : Newton steps; residual_V : final scaled residual [V];
    history : largest Newton update of each step [V]
    frame : the bias-independent structure (mesh, doping, operator)
    interface_charge_cm2 : (nx, ny) charge of the gate-oxide interface traps in units of
        q, non-zero on the interface nodes only, or None without traps [cm^-2]
    """

    design: Design
    vg_V: float
    vd_V: float
    x_nm: np.ndarray
    y_nm: np.ndarray
    psi_V: np.ndarray
    n_cm3: np.ndarray
    p_cm3: np.ndarray
    bulk_ec_eV: np.ndarray
    bulk_ev_eV: np.ndarray
    efn_eV: np.ndarray
    efp_eV: np.ndarray
    iterations: int
    residual_V: float
    history: tuple[float, ...]
    frame: DeviceFrame
    interface_charge_cm2: np.ndarray | None = None

    @property
    def nbytes(self) -> int:
        """Bytes of this solution's own arrays (the shared `frame` not counted) [B]."""
        return array_bytes(self.psi_V, self.n_cm3, self.p_cm3, self.bulk_ec_eV,
                           self.bulk_ev_eV, self.efn_eV, self.efp_eV, self.interface_charge_cm2)

    def __repr__(self) -> str:
        return (f"Electrostatics({self.design.material}, Vg = {self.vg_V:g} V, "
                f"Vd = {self.vd_V:g} V, {self.x_nm.size} x {self.y_nm.size} nodes, "
                f"{self.iterations} Newton steps)")

    @property
    def ec_map_eV(self) -> np.ndarray:
        """(nx, ny) bulk conduction-band edge, the semiconductor affinity of each x
        throughout the column (the source material's in a heterojunction source) [eV]."""
        chi = self.frame.bands.chi_eV
        return -(chi if np.ndim(chi) == 0 else np.asarray(chi)[:, None]) - self.psi_V


def solve_electrostatics(
    design: Design,
    vg_V: float,
    vd_V: float,
    initial: Electrostatics | None = None,
    resolution: float = 1.0,
    quantum_correction: bool = True,
    max_iter: int = 60,
    max_step_V: float = 1.0,
) -> Electrostatics:
    """Solve the nonlinear 2D Poisson equation of a design at one bias point.

    Parameters
    ----------
    design : Design
    vg_V : gate voltage [V]; vd_V : drain voltage [V] (source grounded)
    initial : a previous solution of the same design and resolution to continue from
        (one of another design on the same grid only lends its potential as the start)
    resolution : grid refinement factor (1 = default spacing) [-]
    quantum_correction : shift the charge's band edges by the lowest subband energies
    max_iter : Newton steps allowed
    max_step_V : cap on one Newton update (damping) [V]

    Raises
    ------
    ValueError
        for a bias outside its range.
    SolverError
        when Newton does not converge (with the residual history).
    """
    vg_V, vd_V = check_bias(vg_V, vd_V)
    if initial is not None and initial.frame.built_for(design, resolution, quantum_correction):
        frame = initial.frame  # continue on the same structure, cached or not
        problem = problem_at_bias(frame, vg_V, vd_V)
        start = initial.psi_V
    else:
        frame = build_frame(design, resolution, quantum_correction)
        problem = problem_at_bias(frame, vg_V, vd_V)
        if initial is not None and _same_mesh(initial, frame):
            start = initial.psi_V  # another design on the same grid: its potential
        else:
            start = initial_guess(frame, problem)
    try:
        sol = solve_poisson(problem, start, frame.operator, max_iter=max_iter, max_step_V=max_step_V)
    except SolverError as exc:
        raise SolverError(f"electrostatics at Vg = {vg_V:g} V, Vd = {vd_V:g} V: {exc.summary}",
                          exc.history) from None
    j = frame.body_j
    psi_mid = sol.psi_V[:, j]
    b = frame.bands
    ec = -b.chi_eV - psi_mid
    return Electrostatics(
        design=design, vg_V=vg_V, vd_V=vd_V, x_nm=frame.mesh.x_nm, y_nm=frame.mesh.y_nm,
        psi_V=sol.psi_V, n_cm3=sol.n_cm3, p_cm3=sol.p_cm3, bulk_ec_eV=ec, bulk_ev_eV=ec - b.eg_eV,
        efn_eV=sol.efn_eV, efp_eV=sol.efp_eV, iterations=sol.iterations,
        residual_V=sol.residual_V, history=tuple(sol.history), frame=frame,
        interface_charge_cm2=sol.interface_charge_cm2)


def _same_mesh(es: Electrostatics, frame: DeviceFrame) -> bool:
    """True when a solution of another design lies on the grid of ``frame`` (same node
    coordinates), so that its potential can start Newton there."""
    return (es.psi_V.shape == (frame.mesh.x_nm.size, frame.mesh.y_nm.size)
            and np.array_equal(es.x_nm, frame.mesh.x_nm)
            and np.array_equal(es.y_nm, frame.mesh.y_nm))
