"""Verification of the finite-volume Poisson solver (physics.poisson) on the linear,
fixed-charge problem  -div(eps_r grad psi) = (q/eps0) rho  (lengths in nm, psi in V).

Two checks against something outside the project:

1. Method of manufactured solutions (Roache, Verification and Validation in Computational
   Science and Engineering, Hermosa, 1998; from memory): a smooth exact potential on a
   two-permittivity stack, its source computed analytically, non-uniform grids refined by
   halving every cell. The observed order of the largest nodal error must be >= 1.8 for
   every pair of levels; the design order of a node-centred finite-volume scheme is 2
   (common practice, no source).
2. The device cross-section (oxide / body / oxide, abrupt p+ / i / n+ fixed charge, gate
   and contact Dirichlet nodes) against an independent bilinear finite-element solution
   with scikit-fem. Both discretise the same PDE, so their nodal values converge to the
   same solution; the finite-element load uses q/eps0 from scipy.constants (CODATA values),
   not the project's constant, so this check also covers the charge scaling.
"""

import numpy as np
import scipy.constants as sc
from skfem import (
    Basis,
    BilinearForm,
    ElementQuad0,
    ElementQuad1,
    LinearForm,
    MeshQuad,
    asm,
    condense,
    solve,
)
from skfem.helpers import dot, grad

from sub60.physics.mesh import Mesh
from sub60.physics.poisson import QE_V_NM2_CM3, BandParameters, PoissonProblem, solve_poisson

# any positive numbers: the charge model is unused with carriers=False
_BANDS = BandParameters(chi_eV=4.9, eg_eV=0.35, nc_cm3=1e17, nv_cm3=1e19, kT_eV=0.0259)


def _linear_problem(mesh, dirichlet, values_V, donors_cm3, acceptors_cm3, extra_cm3=None):
    nx = mesh.nx
    return PoissonProblem(mesh=mesh, donors_cm3=donors_cm3, acceptors_cm3=acceptors_cm3,
                          bands=_BANDS, dirichlet=dirichlet, dirichlet_psi_V=values_V,
                          efn_eV=np.zeros(nx), efp_eV=np.zeros(nx), carriers=False,
                          extra_charge_cm3=extra_cm3)


# --- 1. manufactured solution -------------------------------------------------------------

LX_NM, LY_NM, Y_INTERFACE_NM = 2.0, 3.0, 1.0
EPS_BELOW, EPS_ABOVE = 3.9, 15.0  # SiO2-like below, a semiconductor-like value above
KX = np.pi / LX_NM


def _mms_x(x):
    return np.sin(KX * x) + 0.5 * x / LX_NM + 0.2


def _mms_x2(x):
    """d^2/dx^2 of `_mms_x` [nm^-2]."""
    return -(KX**2) * np.sin(KX * x)


def _mms_flux(y):
    """w(y) = eps g'(y): smooth across the interface by construction [V nm^-1]."""
    return np.cos(y) + 0.5


def _mms_flux_dy(y):
    return -np.sin(y)


def _mms_g(y):
    """g(y) = int_0^y w/eps + 0.1: continuous, and eps g' = w continuous [V]."""
    below = (np.sin(y) + 0.5 * y) / EPS_BELOW
    at_interface = (np.sin(Y_INTERFACE_NM) + 0.5 * Y_INTERFACE_NM) / EPS_BELOW
    above = at_interface + (np.sin(y) - np.sin(Y_INTERFACE_NM)
                            + 0.5 * (y - Y_INTERFACE_NM)) / EPS_ABOVE
    return np.where(y <= Y_INTERFACE_NM, below, above) + 0.1


def _mms_source(x, y, eps):
    """-div(eps grad psi) for psi = X(x) g(y) with eps constant on one side [V nm^-2]."""
    return -(eps * _mms_x2(x) * _mms_g(y) + _mms_x(x) * _mms_flux_dy(y))


def _halve(a):
    return np.sort(np.concatenate([a, 0.5 * (a[1:] + a[:-1])]))


def _mms_base_axes():
    """x: random cell sizes (0.5..1.5 relative, fixed seed); y: geometric grading (ratio
    1.35) in each layer, a node on the interface."""
    h = np.random.default_rng(7).uniform(0.5, 1.5, 8)
    x = np.concatenate([[0.0], np.cumsum(h)]) * LX_NM / h.sum()
    r = 1.35
    hb = r ** np.arange(3)
    yb = np.concatenate([[0.0], np.cumsum(hb[::-1])]) * Y_INTERFACE_NM / hb.sum()
    ha = r ** np.arange(6)
    ya = Y_INTERFACE_NM + np.concatenate([[0.0], np.cumsum(ha)]) * (LY_NM - Y_INTERFACE_NM) / ha.sum()
    return x, np.concatenate([yb, ya[1:]])


def _mms_error(x, y):
    """Largest nodal error of the finite-volume solution on one grid [V]."""
    nx, ny = x.size, y.size
    below_cell = 0.5 * (y[1:] + y[:-1]) < Y_INTERFACE_NM
    # the source enters as extra_charge * semiconductor control area: flag every cell
    # semiconductor so that it acts everywhere; the permittivity carries the stack
    mesh = Mesh(x_nm=x, y_nm=y, cell_permittivity=np.where(below_cell, EPS_BELOW, EPS_ABOVE),
                cell_semiconductor=np.ones(ny - 1, bool))
    xg, yg = np.meshgrid(x, y, indexing="ij")
    exact = _mms_x(xg) * _mms_g(yg)
    f_below, f_above = _mms_source(xg, yg, EPS_BELOW), _mms_source(xg, yg, EPS_ABOVE)
    f = np.where(yg < Y_INTERFACE_NM, f_below, f_above)
    # interface node: its control volume is half in each material and the source jumps
    # there; use the control-volume average of the two one-sided limits
    j = int(np.flatnonzero(np.isclose(y, Y_INTERFACE_NM))[0])
    hb, ha = y[j] - y[j - 1], y[j + 1] - y[j]
    f[:, j] = (hb * f_below[:, j] + ha * f_above[:, j]) / (hb + ha)
    boundary = np.zeros((nx, ny), bool)
    boundary[[0, -1], :] = True
    boundary[:, [0, -1]] = True
    # residual = A psi - QE * area * rho, A psi ~ integral of -div(eps grad psi) [V]
    problem = _linear_problem(mesh, boundary, np.where(boundary, exact, 0.0), np.zeros(nx),
                              np.zeros(nx), extra_cm3=f / QE_V_NM2_CM3)
    psi = solve_poisson(problem, np.zeros((nx, ny))).psi_V
    return float(np.max(np.abs(psi - exact)))


def test_manufactured_solution_second_order_on_nonuniform_two_material_grid():
    # Roache 1998 (from memory): observed order log2(e_k / e_k+1) under halving;
    # design order 2 (common practice, no source); 1.8 leaves room for pre-asymptotics.
    x, y = _mms_base_axes()
    errors = []
    for _ in range(5):  # 9 x 10 ... 129 x 145 nodes
        errors.append(_mms_error(x, y))
        x, y = _halve(x), _halve(y)
    errors = np.array(errors)
    orders = np.log2(errors[:-1] / errors[1:])
    assert np.all(orders >= 1.8), f"max errors {errors} [V], observed orders {orders}"


# --- 2. device cross-section against scikit-fem --------------------------------------------

T_OX_NM, T_BODY_NM, EPS_OX, EPS_BODY = 2.0, 7.0, 22.0, 15.15  # HfO2-like / InAs (Ioffe NSM)
LENGTH_NM, XJ_SOURCE_NM, XJ_DRAIN_NM = 70.0, 20.0, 50.0
N_SOURCE_ACC, N_CHANNEL_DON, N_DRAIN_DON = 4e19, 1e15, 2e18  # [cm^-3]
PSI_GATE, PSI_SOURCE, PSI_DRAIN = -4.5, -5.2, -4.6  # [V]
# q/eps0 [V m] * (1e-18 m^2/nm^2) * (1e6 m^-3 per cm^-3), independent of physics.poisson
Q_OVER_EPS0_V_NM2_CM3 = sc.e / sc.epsilon_0 * 1e-12

# Where a Dirichlet boundary meets a zero-field one (contact ends at the oxide interfaces,
# gate edges on the outer surfaces) the exact potential behaves like r^lambda with
# lambda = 1/2 (gate edges) and lambda = (2/pi) atan(sqrt(eps_body/eps_ox)) = 0.44
# (contact ends; separation of variables across the interface, derived). The
# error there pollutes the whole field at O(h) and nodal values near the point converge
# only as h^lambda, so uniform refinement cannot reach 1 mV: the grid is graded
# geometrically (growth G_SWITCH per cell) down to H_MIN_NM at those points.
H_MIN_NM, G_SWITCH = 2e-4, 0.12


def _graded_nodes(length_nm, required_nm, refine, h_max_nm, growth):
    """Nodes on [0, length] with spacing min(h_max, h_k + growth * max(0, |s - p_k| - w_k))
    for refine = [(p_k, h_k, w_k)]. Like physics.mesh.graded_axis, but its density is
    sampled geometrically near each p_k so that spacings far below length/20000 are
    honoured."""
    s = [np.linspace(0.0, length_nm, 4001)]
    for p, h, w in refine:
        d = h * 1.02 ** np.arange(int(np.log(2 * length_nm / h) / np.log(1.02)) + 1)
        s += [p - w - d, p + w + d, np.linspace(p - w, p + w, 201)]
    s = np.unique(np.clip(np.concatenate(s), 0.0, length_nm))
    hs = np.full(s.shape, float(h_max_nm))
    for p, h, w in refine:
        hs = np.minimum(hs, h + growth * np.maximum(0.0, np.abs(s - p) - w))
    density = np.concatenate([[0.0], np.cumsum(0.5 * (1 / hs[1:] + 1 / hs[:-1]) * np.diff(s))])
    pts = sorted({0.0, float(length_nm), *required_nm})
    nodes = [0.0]
    for a, b in zip(pts[:-1], pts[1:], strict=True):
        ca, cb = np.interp([a, b], s, density)
        n = max(1, int(np.ceil(cb - ca - 1e-9)))
        seg = np.interp(np.linspace(ca, cb, n + 1)[1:], density, s)
        seg[-1] = b
        nodes.extend(seg.tolist())
    return np.array(nodes)


def _device_mesh():
    """Double-gate stack, the default device spacings (0.2 / 0.25 nm at the junctions,
    2 nm elsewhere in x; 0.5 nm in y) plus grading to H_MIN_NM at the switch points."""
    x_switch = (0.0, XJ_SOURCE_NM, XJ_DRAIN_NM, LENGTH_NM)
    y_lo, y_hi = T_OX_NM, T_OX_NM + T_BODY_NM
    height = 2 * T_OX_NM + T_BODY_NM
    y_switch = (0.0, y_lo, y_hi, height)
    x = _graded_nodes(LENGTH_NM, [XJ_SOURCE_NM, XJ_DRAIN_NM],
                      [(XJ_SOURCE_NM, 0.2, 5.0), (XJ_DRAIN_NM, 0.25, 4.0)]
                      + [(p, H_MIN_NM, 0.0) for p in x_switch], 2.0, G_SWITCH)
    y = _graded_nodes(height, [y_lo, 0.5 * (y_lo + y_hi), y_hi],
                      [(p, H_MIN_NM, 0.0) for p in y_switch], 0.5, G_SWITCH)
    yc = 0.5 * (y[1:] + y[:-1])
    semi = (yc > y_lo) & (yc < y_hi)
    mesh = Mesh(x_nm=x, y_nm=y, cell_permittivity=np.where(semi, EPS_BODY, EPS_OX),
                cell_semiconductor=semi)
    switches = [(a, b) for a in (0.0, LENGTH_NM) for b in (y_lo, y_hi)]
    switches += [(a, b) for a in (XJ_SOURCE_NM, XJ_DRAIN_NM) for b in (0.0, height)]
    return mesh, switches


def _net_charge_cm3(x_nm):
    """Abrupt p+ / i / n+ fixed charge N_D - N_A [cm^-3]."""
    return np.where(x_nm < XJ_SOURCE_NM, -N_SOURCE_ACC,
                    np.where(x_nm < XJ_DRAIN_NM, N_CHANNEL_DON, N_DRAIN_DON))


def _control_volume_doping(x_nm):
    """Donors and acceptors per node: averages of the abrupt profile over each node's
    control volume (a junction node's volume straddles the step) [cm^-3]."""
    faces = np.concatenate([[x_nm[0]], 0.5 * (x_nm[1:] + x_nm[:-1]), [x_nm[-1]]])
    lo, hi = faces[:-1], faces[1:]

    def fraction(a, b):
        return np.clip(np.minimum(hi, b) - np.maximum(lo, a), 0.0, None) / (hi - lo)

    acceptors = N_SOURCE_ACC * fraction(-np.inf, XJ_SOURCE_NM)
    donors = (N_CHANNEL_DON * fraction(XJ_SOURCE_NM, XJ_DRAIN_NM)
              + N_DRAIN_DON * fraction(XJ_DRAIN_NM, np.inf))
    return donors, acceptors


def _fem_potential(mesh, dirichlet, values_V):
    """Bilinear (Q1) Galerkin solution on the same nodes, piecewise-constant permittivity
    and charge per element (scikit-fem) [V]."""
    x, y = mesh.x_nm, mesh.y_nm
    fem_mesh = MeshQuad.init_tensor(x, y)
    basis = Basis(fem_mesh, ElementQuad1())
    cells = basis.with_element(ElementQuad0())
    centre = fem_mesh.p[:, fem_mesh.t].mean(axis=1)
    row = np.searchsorted(y, centre[1]) - 1  # y cell of each element
    semi = mesh.cell_semiconductor[row]
    source = Q_OVER_EPS0_V_NM2_CM3 * _net_charge_cm3(centre[0]) * semi  # [V nm^-2]

    @BilinearForm
    def stiffness(u, v, w):
        return w.eps * dot(grad(u), grad(v))

    @LinearForm
    def load(v, w):
        return w.f * v

    a = asm(stiffness, basis, eps=cells.interpolate(mesh.cell_permittivity[row]))
    b = asm(load, basis, f=cells.interpolate(source))
    i = np.searchsorted(x, fem_mesh.p[0])
    j = np.searchsorted(y, fem_mesh.p[1])
    assert np.array_equal(x[i], fem_mesh.p[0]) and np.array_equal(y[j], fem_mesh.p[1])
    u = solve(*condense(a, b, x=values_V[i, j], D=np.flatnonzero(dirichlet[i, j])))
    psi = np.empty((mesh.nx, mesh.ny))
    psi[i, j] = u
    return psi


def test_device_cross_section_matches_scikit_fem_within_1mV():
    # Independent Q1 finite-element solution (scikit-fem); FV and FEM converge to the same
    # PDE solution, 1 mV tolerance (about 0.05 % of the ~2 V potential range).
    mesh, switches = _device_mesh()
    nx, ny = mesh.nx, mesh.ny
    x, y = mesh.x_nm, mesh.y_nm
    gate = np.zeros((nx, ny), bool)
    gated = (x >= XJ_SOURCE_NM) & (x <= XJ_DRAIN_NM)
    gate[:, 0] = gated
    gate[:, -1] = gated
    contact = np.zeros((nx, ny), bool)
    contact[0] = mesh.node_semiconductor
    contact[-1] = mesh.node_semiconductor
    dirichlet = gate | contact
    values = np.zeros((nx, ny))
    values[gate] = PSI_GATE
    values[0, contact[0]] = PSI_SOURCE
    values[-1, contact[-1]] = PSI_DRAIN
    donors, acceptors = _control_volume_doping(x)
    solution = solve_poisson(_linear_problem(mesh, dirichlet, values, donors, acceptors),
                             np.zeros((nx, ny)))
    reference = _fem_potential(mesh, dirichlet, values)
    xg, yg = np.meshgrid(x, y, indexing="ij")
    distance = np.min([np.hypot(xg - a, yg - b) for a, b in switches], axis=0)
    # nodes within 10 H_MIN_NM of a switch point converge as h^lambda (see above): left out
    compared = distance > 10 * H_MIN_NM
    diff = np.abs(solution.psi_V - reference)[compared]
    k = np.unravel_index(np.argmax(np.where(compared, np.abs(solution.psi_V - reference), 0)),
                         (nx, ny))
    assert diff.max() <= 1e-3, (
        f"max |psi_FV - psi_FEM| = {diff.max():.4g} V at x = {x[k[0]]:.3f} nm, "
        f"y = {y[k[1]]:.3f} nm; FEM range [{reference.min():.3f}, {reference.max():.3f}] V, "
        f"FV range [{solution.psi_V.min():.3f}, {solution.psi_V.max():.3f}] V, "
        f"FV residual {solution.residual_V:.3g} V")
