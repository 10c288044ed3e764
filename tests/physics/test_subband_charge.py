"""The 2D-subband charge of the body (`physics.subband_charge`, Design.charge_model).

Checks against sources outside the project:
- one subband's sheet density: the 2D density of states m/(pi hbar^2) (spin included)
  times the Fermi integral of order 0, kT ln(1 + e^eta) (Davies, The Physics of
  Low-dimensional Semiconductors, 1998, ch. 3 — from memory), against a direct numerical
  integral of DOS x Fermi function with scipy.integrate.quad and constants from
  scipy.constants;
- the 3D limit: the subbands of an infinite well, E_n = hbar^2 pi^2 n^2 / (2 m t^2),
  summed and divided by t tend to the bulk N_c F_1/2(eta) as t grows (Sze & Ng,
  Physics of Semiconductor Devices, 2007, ch. 1; F_1/2 = -Li_3/2(-e^eta), DLMF §25.12,
  evaluated with mpmath), with the first-order error of the Euler–Maclaurin sum
  (a missing half n = 0 term: error x t tends to a constant), measured as an order;
- the Newton Jacobian of the charge, eq. (3): against central finite differences;
- the comparison with the semiclassical charge on the default design.
"""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import quad

from sub60.physics.design import Design
from sub60.physics.electrostatics import solve_electrostatics
from sub60.physics.poisson import QE_V_NM2_CM3
from sub60.physics.structure import build_frame, problem_at_bias
from sub60.physics.subband_charge import ColumnCharge, sheet_density_cm2

KT = sc.k * 300.0 / sc.e  # [eV]


@pytest.mark.parametrize("eta", [-6.0, -1.0, 0.0, 2.0, 8.0])
def test_single_subband_sheet_density_is_the_2d_dos_times_the_fermi_function(eta):
    mass = 0.041
    dos = mass * sc.m_e / (math.pi * sc.hbar**2) * sc.e * 1e-4  # [cm^-2 eV^-1]
    # sheet = int_0^inf DOS f(E) dE, subband edge at 0, Fermi level at eta kT
    integral, _ = quad(lambda e: dos / (1.0 + math.exp((e - eta * KT) / KT)), 0.0, 60 * KT + max(eta, 0) * KT)
    assert sheet_density_cm2(mass, np.array(eta), KT) == pytest.approx(integral, rel=1e-9)


def _infinite_well_column(t_nm: float, mass: float, n_states: int) -> ColumnCharge:
    hb = sc.hbar**2 / (2 * mass * sc.m_e) / sc.e * 1e18  # hbar^2 / 2m [eV nm^2]
    e_n = hb * (np.pi * np.arange(1, n_states + 1) / t_nm) ** 2
    return ColumnCharge(electron=np.ones(n_states, bool), energy_eV=e_n[:, None],
                        mass=np.full((n_states, 1), mass), thickness_nm=t_nm,
                        chi_eV=np.zeros(1), eg_eV=np.ones(1), kT_eV=KT)


def _bulk_cm3(mass: float, eta: float) -> float:
    nc = 2.0 * (mass * sc.m_e * sc.k * 300.0 / (2 * math.pi * sc.hbar**2)) ** 1.5 * 1e-6
    f_half = float(mpmath.re(-mpmath.polylog(1.5, -mpmath.exp(eta))))  # F_1/2, DLMF §25.12
    return nc * f_half


@pytest.mark.parametrize("eta", [-3.0, 0.0, 4.0])
def test_subband_sum_tends_to_the_bulk_density_as_the_well_thickens(eta):
    mass = 0.067
    bulk = _bulk_cm3(mass, eta)
    errors = []
    thicknesses = (80.0, 160.0, 320.0, 640.0, 1280.0)
    for t in thicknesses:
        col = _infinite_well_column(t, mass, n_states=4000)
        # psi = 0 and chi = 0: E_c = 0; the electron Fermi level eta kT above it
        n, _, _, _ = col.densities(np.zeros(1), np.array([eta * KT]), np.array([-5.0]))
        errors.append(abs(n[0] / bulk - 1.0))
    assert errors[-1] < 0.01
    orders = [math.log2(errors[i] / errors[i + 1]) for i in range(len(errors) - 1)]
    assert all(0.9 < o < 1.1 for o in orders), orders  # first order in 1/t (Euler–Maclaurin)


@pytest.fixture(scope="module")
def frames():
    d = Design()
    return build_frame(d.replace(charge_model="subbands")), build_frame(d)


def test_charge_jacobian_matches_finite_differences(frames):
    frame, _ = frames
    es = solve_electrostatics(frame.design, 0.25, 0.3)
    prob = problem_at_bias(frame, 0.25, 0.3)
    sbc = frame.subband_charge
    psi = es.psi_V.copy()
    nx, ny = psi.shape
    area = frame.operator.area_semi

    def term(p):  # the charge term q area (n - p) of the residual, per node [V]
        n, pp, _, _, _ = sbc.evaluate(p, prob.efn_eV, prob.efp_eV)
        return (QE_V_NM2_CM3 * area * (n - pp)).ravel()

    _, _, _, _, band = sbc.evaluate(psi, prob.efn_eV, prob.efp_eV)
    jac = np.zeros((nx * ny, nx * ny))
    for r in range(ny + 1):  # upper band -> full symmetric matrix
        d = ny - r
        k = np.arange(d, nx * ny)
        jac[k - d, k] = band[r, d:]
        jac[k, k - d] = band[r, d:]
    rng = np.random.default_rng(3)
    for i in (5, nx // 3, nx // 2, nx - 10):
        v = np.zeros((nx, ny))
        v[i, :] = rng.normal(size=ny) * 1e-4
        v[i, ~frame.mesh.node_semiconductor] = 0.0
        fd = (term(psi + v) - term(psi - v)) / 2.0
        exact = jac @ v.ravel()
        assert np.max(np.abs(fd - exact)) <= 1e-6 * np.max(np.abs(exact)) + 1e-14


def test_sheet_charge_on_the_mesh_is_the_sum_of_the_subbands(frames):
    frame, _ = frames
    sbc = frame.subband_charge
    prob = problem_at_bias(frame, 0.1, 0.3)
    es = solve_electrostatics(frame.design, 0.1, 0.3)
    n, p, _, _, _ = sbc.evaluate(es.psi_V, prob.efn_eV, prob.efp_eV)
    sheet_nodes = (n[:, sbc.rows] * sbc.dy_semi_nm).sum(axis=1) * 1e-7  # [cm^-2]
    edges = sbc._edges(es.psi_V[:, sbc.rows])
    eta = (prob.efn_eV[None, :] - edges) / sbc.kT_eV
    direct = np.where(sbc.electron[:, None], sheet_density_cm2(sbc.mass, eta, sbc.kT_eV), 0).sum(0)
    np.testing.assert_allclose(sheet_nodes, direct, rtol=1e-12)


def test_comparison_with_the_semiclassical_charge_on_the_default_design(frames):
    """Both charges are neutral at the contacts (sheet = doping x thickness). With the
    coupled (4x4 k.p) hole subbands the 2D density of states of HH1 is that of a mass
    0.27-0.44 m0 (`physics.hole_subbands`), near the bulk DOS mass 0.467 m0 of the
    semiclassical charge, so the p+ source's Fermi level lies about as far below the
    highest hole subband as semiclassically below the shifted edge: 0.102 against
    0.084 eV (the figures the README quotes; with the uncoupled in-plane mass 0.035 m0
    it was 0.41 eV)."""
    sub, semi = frames
    t = sub.design.body_thickness_nm
    depth = {}
    for frame in (sub, semi):
        es = solve_electrostatics(frame.design, 0.0, 0.3)
        j = slice(*np.flatnonzero(frame.mesh.node_semiconductor)[[0, -1]] + [0, 1])
        dy = frame.mesh.dy_semiconductor_nm[j]
        sheet_src = float((es.p_cm3[0, j] * dy).sum()) * 1e-7
        sheet_drn = float((es.n_cm3[-1, j] * dy).sum()) * 1e-7
        assert sheet_src == pytest.approx(frame.design.source_doping_cm3 * t * 1e-7, rel=1e-6)
        assert sheet_drn == pytest.approx(frame.design.drain_doping_cm3 * t * 1e-7, rel=1e-3)
        # hole Fermi level (0) below the highest hole subband edge at the source contact
        ev_top = es.bulk_ev_eV[0] - frame.bands.dev_eV
        depth[frame.design.charge_model] = ev_top - 0.0
    print(depth)
    assert 0.07 < depth["semiclassical"] < 0.1
    assert 0.09 < depth["subbands"] < 0.12
    assert abs(depth["subbands"] - depth["semiclassical"]) < 0.03


def test_subband_charge_cautions_name_a_deep_source_and_the_single_valley():
    from sub60.physics.simulate import design_warnings
    from sub60.physics.subband_charge import contact_fermi_depth_eV

    d = Design(charge_model="subbands")
    depth = contact_fermi_depth_eV(d, d.source_doping_cm3, electrons=False)
    assert 0.09 < depth < 0.12  # the figure the README quotes (0.102 eV; coupled holes)
    assert not any("beyond the first subband edge" in w for w in design_warnings(d))
    # a source doped 10x: the coupled DOS still puts its Fermi level well inside
    heavy = d.replace(source_doping_cm3=4e20)
    deep = contact_fermi_depth_eV(heavy, heavy.source_doping_cm3, electrons=False)
    assert deep > 0.3
    assert any("beyond the first subband edge" in w for w in design_warnings(heavy))
    assert not design_warnings(Design())
    assert any("one conduction valley" in w
               for w in design_warnings(Design(material="Si", charge_model="subbands")))


def test_mesh_weights_converge_at_second_order():
    """The weights that give each column's subband edge and spread its charge,
    u_j = |phi(y_j)|^2 dy_j / sum, integrate a smooth profile across the body at second
    order in the mesh spacing (trapezoid rule with linear interpolation of |phi|^2;
    common practice, no source): reference, the same body integral on the fine
    confinement grid of the state."""
    from sub60.physics.subband_charge import column_weights
    from sub60.physics.subbands import charge_subbands

    d = Design()
    t = d.body_thickness_nm
    y0 = d.oxide_thickness_nm  # the body's bottom face in mesh coordinates
    for state in (charge_subbands(d).conduction[0], charge_subbands(d).valence[2]):
        y, rho = state.y_nm, state.density
        body = (y >= y0 - 1e-9) & (y <= y0 + t + 1e-9)

        def profile(yy):
            return np.cos(1.3 * (yy - y0)) + 0.2 * (yy - y0) ** 2

        ref = np.trapezoid(rho[body] * profile(y[body]), y[body]) / np.trapezoid(rho[body], y[body])
        errors = []
        for cells in (4, 8, 16, 32):  # 1.75 … 0.22 nm; the reference grid is 0.05 nm
            nodes = np.linspace(y0, y0 + t, cells + 1)
            dy = np.full(cells + 1, t / cells)
            dy[[0, -1]] *= 0.5
            errors.append(abs(column_weights(y, rho, nodes, dy) @ profile(nodes) - ref))
        orders = [math.log2(errors[i] / errors[i + 1]) for i in range(len(errors) - 1)]
        assert all(1.8 < o < 2.3 for o in orders[:2]) and orders[2] > 1.8, (state.label, orders)
