"""Checks of the 1D confinement (BenDaniel–Duke Schrödinger) solver.

Every reference below is computed independently of physics.confinement: closed-form
infinite-well levels, the non-parabolic relation E(1 + alpha E) = E_parabolic, the
BenDaniel–Duke even/odd transcendental equations solved with scipy.optimize.brentq, the
Hellmann–Feynman theorem and first-order perturbation theory.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import constants
from scipy.optimize import brentq

from sub60.physics.confinement import Subbands, solve_subbands, subband_weights, well_subbands

# hbar^2 / (2 m0) [eV nm^2] recomputed here from scipy.constants (CODATA, exact SI).
C_EV_NM2 = constants.hbar**2 / (2.0 * constants.m_e) / constants.e * 1e18

# InAs electron mass and non-parabolicity (REFERENCES.md §8; mass from Vurgaftman, Meyer,
# Ram-Mohan, J. Appl. Phys. 89, 5815 (2001)).
M_INAS = 0.026
ALPHA_INAS = 2.275


def infinite_well_eV(n: int, mass_rel: float, t_nm: float) -> float:
    """E_n = hbar^2 pi^2 n^2 / (2 m* t^2) (Davies 1998 ch. 4, from memory)."""
    return C_EV_NM2 * np.pi**2 * n**2 / (mass_rel * t_nm**2)


def nonparabolic_from_parabolic(e_par: float, alpha: float) -> float:
    """Positive root of E (1 + alpha E) = E_par (two-band relation, REFERENCES.md §8)."""
    return 2.0 * e_par / (1.0 + np.sqrt(1.0 + 4.0 * alpha * e_par))


def bdd_finite_well_eV(
    t_nm: float, v_eV: float, m_w: float, m_b: float, alpha: float = 0.0
) -> np.ndarray:
    """Bound levels of a symmetric square well from the BenDaniel–Duke matching.

    Even: k tan(k t/2) / m_w = kappa / m_b;  odd: -k cot(k t/2) / m_w = kappa / m_b
    (Davies 1998 ch. 4, from memory), with k^2 = 2 m* E (1 + alpha E) / hbar^2 and the
    well mass m_w(E) = m* (1 + alpha E) (Nelson, Miller, Kleinman, Phys. Rev. B 35, 7770
    (1987), from memory); kappa^2 = 2 m_b (V - E) / hbar^2. Written without poles as
    (k/m_w) sin - (kappa/m_b) cos = 0 and (k/m_w) cos + (kappa/m_b) sin = 0, and solved
    with scipy.optimize.brentq on every sign change of a fine scan.
    """

    def parts(e):
        mw = m_w * (1.0 + alpha * e)
        k = np.sqrt(m_w * e * (1.0 + alpha * e) / C_EV_NM2)
        kappa = np.sqrt(m_b * (v_eV - e) / C_EV_NM2)
        return k / mw, kappa / m_b, k * t_nm / 2.0

    def even(e):
        a, b, x = parts(e)
        return a * np.sin(x) - b * np.cos(x)

    def odd(e):
        a, b, x = parts(e)
        return a * np.cos(x) + b * np.sin(x)

    grid = np.linspace(1e-9 * v_eV, v_eV * (1 - 1e-9), 20001)
    roots = []
    for f in (even, odd):
        vals = f(grid)
        for i in np.nonzero(np.sign(vals[:-1]) != np.sign(vals[1:]))[0]:
            roots.append(brentq(f, grid[i], grid[i + 1], xtol=1e-15, rtol=1e-15))
    return np.sort(np.array(roots))


def box(t_nm: float, spacing_nm: float) -> np.ndarray:
    return np.linspace(0.0, t_nm, int(round(t_nm / spacing_nm)) + 1)


# --- a. infinite-well limit -------------------------------------------------------------


def test_prefactor_matches_reference_value():
    """hbar^2 pi^2 / (2 m0 (1 nm)^2) = 0.376030 eV (REFERENCES.md §8, derived from
    scipy.constants) — to the 6 quoted digits."""
    assert C_EV_NM2 * np.pi**2 == pytest.approx(0.376030, abs=5e-7)


@pytest.mark.parametrize("grid", ["uniform", "stretched"])
@pytest.mark.parametrize("mass", [0.067, M_INAS])
def test_infinite_well_levels(grid, mass):
    """Dirichlet at the body faces: E_n = hbar^2 pi^2 n^2 / (2 m* t^2), n = 1..3
    (Davies 1998 ch. 4, from memory), within 0.1 %, on a uniform and on a smoothly
    non-uniform grid."""
    t = 10.0
    if grid == "uniform":
        y = box(t, 0.05)
    else:
        s = np.linspace(0.0, 1.0, 241)
        y = t * (s - 0.08 * np.sin(2 * np.pi * s) / (2 * np.pi))  # spacing varies +-8 %
    sub = solve_subbands(y, np.zeros_like(y), np.full_like(y, mass), n_states=3)
    exact = np.array([infinite_well_eV(n, mass, t) for n in (1, 2, 3)])
    np.testing.assert_allclose(sub.energies_eV, exact, rtol=1e-3)


# --- b. convergence order ---------------------------------------------------------------


@pytest.mark.parametrize(
    "t, v, mw, mb, alpha, tb",
    [
        (10.0, 0.3, 0.067, 0.092, 0.0, 20.0),  # GaAs-like well
        (5.0, 2.25, M_INAS, 0.4, 0.0, 3.2),  # InAs in HfO2-like barriers
        (5.0, 2.25, M_INAS, 0.4, ALPHA_INAS, 3.2),  # the same, non-parabolic
    ],
)
def test_convergence_order_of_ground_state(t, v, mw, mb, alpha, tb):
    """Observed order of E1 against the brentq BenDaniel–Duke root over 4 halvings of the
    spacing: >= 1.8 each (second-order box integration expected; common practice, no
    source)."""
    exact = bdd_finite_well_eV(t, v, mw, mb, alpha)[0]
    spacings = [0.2, 0.1, 0.05, 0.025, 0.0125]
    errors = np.array([
        abs(well_subbands(t, tb, v, mw, mb, n_states=1, nonparabolicity_per_eV=alpha,
                          spacing_nm=h).energies_eV[0] - exact)
        for h in spacings
    ])
    orders = np.log2(errors[:-1] / errors[1:])
    assert np.all(orders >= 1.8), (errors, orders)


# --- c. non-parabolic infinite well -----------------------------------------------------


def test_nonparabolic_infinite_well_inas():
    """InAs, m* = 0.026, alpha = 2.275 /eV, t = 10 nm: parabolic E1 = 0.1446 eV and
    E(1 + alpha E) = E_par -> 0.1147 eV (REFERENCES.md §8, derived; recomputed here).
    Solver within 0.5 meV of the recomputed root, and the relation to 1e-4 relative for
    n = 1..3."""
    t = 10.0
    e_par = np.array([infinite_well_eV(n, M_INAS, t) for n in (1, 2, 3)])
    e_np = np.array([nonparabolic_from_parabolic(e, ALPHA_INAS) for e in e_par])
    # the recomputed values agree with the rounded figures of REFERENCES.md §8
    assert e_par[0] == pytest.approx(0.1446, abs=5e-5)
    assert e_np[0] == pytest.approx(0.1147, abs=5e-5)

    y = box(t, 0.02)
    sub = solve_subbands(y, np.zeros_like(y), np.full_like(y, M_INAS), n_states=3,
                         nonparabolicity_per_eV=ALPHA_INAS)
    e = sub.energies_eV
    assert abs(e[0] - e_np[0]) < 0.5e-3
    np.testing.assert_allclose(e * (1.0 + ALPHA_INAS * e), e_par, rtol=1e-4)


def test_nonparabolic_fixed_point_is_exact_in_the_discrete_problem():
    """In a uniform well the energy-dependent operator is H_par / (1 + alpha E), so the
    fixed point must satisfy E (1 + alpha E) = E_par of the same grid to round-off
    (algebraic identity of the two-band relation, REFERENCES.md §8)."""
    y = box(10.0, 0.1)
    args = (y, np.zeros_like(y), np.full_like(y, M_INAS))
    par = solve_subbands(*args, n_states=3).energies_eV
    e = solve_subbands(*args, n_states=3, nonparabolicity_per_eV=ALPHA_INAS).energies_eV
    np.testing.assert_allclose(e * (1.0 + ALPHA_INAS * e), par, rtol=1e-11)


# --- d. finite wells against the transcendental equations -------------------------------


@pytest.mark.parametrize(
    "t, v, mw, mb, alpha, tb, n_check, h",
    [
        (10.0, 0.3, 0.067, 0.092, 0.0, 30.0, 3, 0.05),  # GaAs-like well, 3 bound states
        (5.0, 2.25, M_INAS, 0.4, 0.0, 3.0, 2, 0.025),  # InAs in HfO2-like barriers
        (5.0, 2.25, M_INAS, 0.4, ALPHA_INAS, 3.0, 3, 0.025),  # same, non-parabolic
    ],
)
def test_finite_well_against_bdd_equations(t, v, mw, mb, alpha, tb, n_check, h):
    """Lowest bound levels against the BenDaniel–Duke even/odd equations solved with
    brentq (Davies 1998 ch. 4, from memory; non-parabolic well mass after Nelson et al.
    1987, from memory), within 0.5 meV. The stiff InAs/HfO2 case (kappa h = 0.24 in the
    barrier at 0.05 nm, error 0.75-0.93 meV there) is run at 0.025 nm."""
    exact = bdd_finite_well_eV(t, v, mw, mb, alpha)
    assert exact.size >= n_check
    sub = well_subbands(t, tb, v, mw, mb, n_states=n_check, nonparabolicity_per_eV=alpha,
                        spacing_nm=h)
    np.testing.assert_allclose(sub.energies_eV, exact[:n_check], rtol=0, atol=0.5e-3)


# --- e. normalisation, orthogonality and weights ----------------------------------------


@pytest.fixture(scope="module")
def gaas_well() -> Subbands:
    return well_subbands(10.0, 8.0, 0.3, 0.067, 0.092, n_states=3, spacing_nm=0.05)


def test_normalisation_and_orthogonality(gaas_well):
    """trapezoid(phi_m phi_n, y) = delta_mn (Sturm–Liouville orthogonality of a Hermitian
    operator; BenDaniel & Duke 1966), to 1e-12; Dirichlet ends."""
    phi, y = gaas_well.wavefunctions, gaas_well.y_nm
    gram = np.array([[np.trapezoid(a * b, y) for b in phi] for a in phi])
    np.testing.assert_allclose(gram, np.eye(3), atol=1e-12)
    assert np.all(phi[:, 0] == 0.0) and np.all(phi[:, -1] == 0.0)
    assert np.all(np.diff(gaas_well.energies_eV) > 0)


def test_nonparabolic_states_are_normalised():
    """Each non-parabolic state is normalised to 1 (definition of the output)."""
    sub = well_subbands(5.0, 2.0, 2.25, M_INAS, 0.4, n_states=3,
                        nonparabolicity_per_eV=ALPHA_INAS)
    norms = np.trapezoid(sub.wavefunctions**2, sub.y_nm, axis=1)
    np.testing.assert_allclose(norms, 1.0, atol=1e-12)


def test_wavefunction_parity_and_node_count(gaas_well):
    """State n of a symmetric well has parity (-1)^(n-1) and n-1 interior zeros
    (Sturm oscillation theorem; Davies 1998 ch. 4, from memory)."""
    phi = gaas_well.wavefunctions
    for n, row in enumerate(phi):
        np.testing.assert_allclose(row[::-1], (-1) ** n * row, atol=1e-9)
        inner = row[np.abs(row) > 1e-6 * np.abs(row).max()]
        assert np.count_nonzero(np.diff(np.sign(inner))) == n


def test_weights_sum_to_one_and_keep_constants(gaas_well):
    """Rows of W sum to 1 within 1e-12 and W @ c = c (definition of a normalised
    quadrature of |phi|^2; common practice, no source)."""
    y_coarse = np.linspace(-8.0, 18.0, 53)
    w = subband_weights(gaas_well, y_coarse)
    assert w.shape == (3, y_coarse.size)
    np.testing.assert_allclose(w.sum(axis=1), 1.0, atol=1e-12)
    np.testing.assert_allclose(w @ np.full(y_coarse.size, -0.37), -0.37, atol=1e-12)


def test_weights_give_centroid_of_symmetric_well(gaas_well):
    """W @ y = <y> = t/2 for every state of a symmetric well (|phi|^2 is even about t/2
    for even and odd states), on a coarse grid symmetric about t/2."""
    y_coarse = np.linspace(-8.0, 18.0, 27)
    w = subband_weights(gaas_well, y_coarse)
    np.testing.assert_allclose(w @ y_coarse, 5.0, atol=1e-12)


def tilted_well(field_eV_per_nm: float, n_states: int = 2) -> Subbands:
    """10 nm GaAs-like well, 0.3 eV / m 0.092 barriers of 6 nm, potential V0(y) + F y.

    The interface nodes take the control-volume average of the step, and the masses are
    given per cell."""
    h, t, tb = 0.05, 10.0, 6.0
    y = np.linspace(-tb, t + tb, int(round((t + 2 * tb) / h)) + 1)
    step = np.where((y > 1e-9) & (y < t - 1e-9), 0.0, 0.3)
    step[np.isclose(y, 0.0) | np.isclose(y, t)] = 0.15
    mid = 0.5 * (y[1:] + y[:-1])
    mass = np.where((mid > 0) & (mid < t), 0.067, 0.092)
    return solve_subbands(y, step + field_eV_per_nm * y, mass, n_states=n_states)


def test_tilted_well_weights_give_centroid():
    """In a tilted well W @ y equals <y> = trapezoid(y |phi|^2, y): exactly on the
    solver's own grid, and with second-order error on coarser grids containing the
    interfaces (trapezoid rule, common practice, no source)."""
    sub = tilted_well(0.02)
    exact = np.trapezoid(sub.y_nm * sub.wavefunctions**2, sub.y_nm, axis=1)
    np.testing.assert_allclose(subband_weights(sub, sub.y_nm) @ sub.y_nm, exact, atol=1e-12)
    errors = []
    for h in (0.5, 0.25, 0.125):
        yc = np.linspace(-6.0, 16.0, int(round(22.0 / h)) + 1)
        errors.append(np.max(np.abs(subband_weights(sub, yc) @ yc - exact)))
    assert errors[-1] < 2e-3
    assert np.all(np.log2(np.array(errors[:-1]) / np.array(errors[1:])) >= 1.8), errors


def test_first_order_perturbation_with_weights(gaas_well):
    """E_n(V0 + a g) = E_n0 + a <n|g|n> + O(a^2) (first-order perturbation theory, e.g.
    Davies 1998, from memory), g a Gaussian bump: W on a 0.25 nm grid predicts the
    1 meV-bump shift within 0.5 %, and the residual on the solver grid grows as a^2
    (log10 of its ratio for a 10x larger bump is 2 within 0.05)."""
    y = gaas_well.y_nm
    mid = 0.5 * (y[1:] + y[:-1])
    mass = np.where((mid > 0) & (mid < 10.0), 0.067, 0.092)
    base = np.where((y > 1e-9) & (y < 10.0 - 1e-9), 0.0, 0.3)
    base[np.isclose(y, 0.0) | np.isclose(y, 10.0)] = 0.15
    e0 = solve_subbands(y, base, mass, n_states=3).energies_eV
    np.testing.assert_allclose(e0, gaas_well.energies_eV, atol=1e-12)  # same problem

    def bump(yy):
        return np.exp(-(((yy - 3.0) / 1.5) ** 2))

    yc = np.linspace(-8.0, 18.0, 105)
    residual = []
    for a in (1e-3, 1e-2):
        shift = solve_subbands(y, base + a * bump(y), mass, n_states=3).energies_eV - e0
        if a == 1e-3:
            coarse = subband_weights(gaas_well, yc) @ (a * bump(yc))
            np.testing.assert_allclose(coarse, shift, rtol=5e-3)
        residual.append(np.abs(subband_weights(gaas_well, y) @ (a * bump(y)) - shift))
    np.testing.assert_allclose(np.log10(residual[1] / residual[0]), 2.0, atol=0.05)


# --- asymmetric potential ---------------------------------------------------------------


def test_tilted_well_energy_rises_and_state_moves_to_low_side():
    """V = V0(y) + F y: dE1/dF = <y> (Hellmann–Feynman theorem, R. P. Feynman, Phys. Rev.
    56, 340 (1939)) > 0, so E1 rises with F, and the centroid moves toward the low-
    potential face (y = 0). The derivative is checked by central differences to 1e-7
    (step error ~ df^2, 1e-8 at df = 1e-5 eV/nm)."""
    fields = [0.0, 0.005, 0.01, 0.02, 0.04]
    subs = [tilted_well(f, n_states=1) for f in fields]
    e1 = np.array([s.energies_eV[0] for s in subs])
    centroid = np.array([np.trapezoid(s.y_nm * s.wavefunctions[0] ** 2, s.y_nm) for s in subs])
    assert np.all(np.diff(e1) > 0)
    assert centroid[0] == pytest.approx(5.0, abs=1e-9)
    assert np.all(np.diff(centroid) < 0)
    f, df = 0.02, 1e-5
    slope = (tilted_well(f + df, 1).energies_eV[0] - tilted_well(f - df, 1).energies_eV[0]) / (
        2 * df)
    assert slope == pytest.approx(centroid[3], rel=1e-7)


# --- holes, inputs and speed ------------------------------------------------------------


def test_hole_levels_follow_their_own_mass():
    """Holes as particles in the inverted valence profile: heavy holes of InAs along
    [001], m_hh = 1/(gamma1 - 2 gamma2) with gamma1 = 20.0, gamma2 = 8.5 (Vurgaftman et
    al. 2001; Luttinger 1956, from memory), in a 1 eV-deep, 5 nm well: against the
    BenDaniel–Duke equations within 0.5 meV."""
    m_hh = 1.0 / (20.0 - 2 * 8.5)
    sub = well_subbands(5.0, 2.0, 1.0, m_hh, 0.4, n_states=3)
    exact = bdd_finite_well_eV(5.0, 1.0, m_hh, 0.4)
    np.testing.assert_allclose(sub.energies_eV, exact[:3], atol=0.5e-3)


def test_node_and_cell_inputs_agree_for_smooth_data():
    """Node and cell forms of the same smooth data (no interfaces) give the same levels
    to second order (consistency of the two input forms; common practice, no source)."""
    y = box(8.0, 0.02)
    v = 0.05 * np.sin(np.pi * y / 8.0)
    mid = 0.5 * (y[1:] + y[:-1])
    node = solve_subbands(y, v, 0.05 + 0.0 * y, n_states=3).energies_eV
    cell = solve_subbands(y, 0.05 * np.sin(np.pi * mid / 8.0), np.full(mid.size, 0.05),
                          n_states=3).energies_eV
    np.testing.assert_allclose(node, cell, atol=2e-5)


@pytest.mark.parametrize(
    "kwargs",
    [
        {"y_nm": np.array([0.0, 2.0, 1.0, 3.0])},
        {"mass_rel": np.array([0.1, 0.1])},
        {"mass_rel": np.array([0.1, -0.1, 0.1, 0.1])},
        {"n_states": 5},
        {"nonparabolicity_per_eV": -1.0},
    ],
)
def test_invalid_inputs_are_rejected(kwargs):
    """Bad grids, shapes, masses and state counts raise ValueError."""
    args = {"y_nm": np.arange(4.0), "potential_eV": np.zeros(4),
            "mass_rel": np.full(4, 0.1), "n_states": 1}
    args.update(kwargs)
    with pytest.raises(ValueError):
        solve_subbands(**args)
