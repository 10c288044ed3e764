"""Coupled hole subbands of the body (`physics.hole_subbands`).

Checks against sources outside the project:
- at k = 0 the 4x4 Luttinger–Kohn Hamiltonian decouples (R and S are proportional to
  k_par; Chuang, Physics of Optoelectronic Devices, 1995, ch. 4 — from memory): its
  subband edges equal the uncoupled heavy- and light-hole energies of
  `physics.confinement` for the same well;
- the two axial blocks (Broido and Sham, Phys. Rev. B 31, 888 (1985) — from memory)
  together have the eigenvalues of the full 4x4 matrix, symmetric well or not;
- thick-well limit: the lowest subband tends to the minimum over k_z of the bulk heavy
  hole branch E = P - sqrt(Q^2 + |R|^2 + |S|^2) (bulk Luttinger eigenvalues in closed
  form, Chuang 1995 ch. 4 — from memory), error falling as 1/L, and the number of
  states below an energy tends to (L / pi) (q_heavy + q_light) (Weyl's counting of a
  box, common practice, no source) from both bulk branches;
- with g2 = g3 = 0 every coupling term vanishes and the hard-wall subbands are the
  closed form of the second-difference matrix, g1 hbar^2/2m0 [(2/h^2)(1 - cos(n pi h /
  L)) + k^2] (eigenvalues of the tridiagonal (-1, 2, -1) matrix; e.g. Strang,
  Introduction to Applied Mathematics, 1986 — from memory);
- with the coupling switched off the sheet density of eq. (2) is the 2D parabolic one,
  m kT ln(1 + e^eta) / (pi hbar^2) with m = 1/(g1 + g2) (Davies, The Physics of
  Low-dimensional Semiconductors, 1998, ch. 3 — from memory), constants from
  scipy.constants;
- the dispersion converges at second order in the grid spacing (measured order).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy.optimize import brentq, minimize_scalar

from sub60.physics import hole_subbands as hs
from sub60.physics.design import Design

C = sc.hbar**2 / (2 * sc.m_e) / sc.e * 1e18  # hbar^2 / 2 m0 [eV nm^2]
G = (20.0, 8.5, 9.2)  # InAs Luttinger parameters as in physics.materials (from memory)


def _box(L: float, h: float, g=G, coupling=True) -> hs.LuttingerWell:
    n = int(round(L / h))
    one = np.ones(n)
    return hs.LuttingerWell(np.linspace(0.0, L, n + 1), 0.0 * one, g[0] * one, g[1] * one,
                            g[2] * one, coupling)


def _bulk(k, kz, sign, g=G):
    g1, g2, g3 = g
    P = C * g1 * (k * k + kz * kz)
    Q = C * g2 * (k * k - 2 * kz * kz)
    R = C * math.sqrt(3) * 0.5 * (g2 + g3) * k * k
    S = 2 * math.sqrt(3) * C * g3 * k * kz
    return P + sign * math.sqrt(Q * Q + R * R + S * S)


@pytest.mark.parametrize("layout", ["double", "single"])
def test_subband_edges_at_k0_are_the_uncoupled_ones(layout):
    well = hs.design_well(Design(gate_layout=layout))
    e = well.energies(0.0, 8)
    hh, lh = hs.uncoupled_edges(well, 8, 8)
    merged = np.sort(np.r_[hh, lh])[:8]
    np.testing.assert_allclose(e[:, 0], merged, atol=1e-10)
    np.testing.assert_allclose(e[:, 1], merged, atol=1e-10)


def test_axial_blocks_have_the_eigenvalues_of_the_4x4_matrix():
    well = hs.design_well(Design())
    tilted = dataclasses.replace(well, v_cell=well.v_cell + np.linspace(0.0, 0.3, well.v_cell.size))
    for w in (well, tilted):
        for k in (0.3, 1.1, 2.0):
            full = np.linalg.eigvalsh(w.dense(k))[:12]
            np.testing.assert_allclose(np.sort(w.energies(k, 6).ravel()), full, atol=1e-10)
    # the tilted (asymmetric) well splits the pairs; the symmetric one does not
    assert np.ptp(well.energies(1.1, 3), axis=1).max() < 1e-10
    assert np.ptp(tilted.energies(1.1, 3), axis=1).max() > 1e-3


def test_thick_well_tends_to_the_bulk_branches():
    k = 0.5
    best = minimize_scalar(lambda q: _bulk(k, q, -1), bounds=(0.0, 3.0), method="bounded")
    assert best.x > 0.05  # the bulk heavy-hole branch's minimum lies off k_z = 0 here
    energy = 0.5
    q_h = brentq(lambda q: _bulk(k, q, -1) - energy, best.x, 20.0)
    q_l = brentq(lambda q: _bulk(k, q, +1) - energy, 0.0, 20.0)
    errors = []
    for L in (60.0, 120.0, 240.0):
        e = _box(L, 0.25).block_energies(k, 200, +1)
        errors.append(e[0] / best.fun - 1.0)
        weyl = L / math.pi * (q_h + q_l)
        assert abs(np.sum(e < energy) - weyl) <= 0.03 * weyl + 1
    assert 0 < errors[-1] < 2e-3
    assert errors[1] / errors[2] > 1.7 and errors[0] / errors[1] > 1.7  # ~ 1/L


def test_without_coupling_terms_the_subbands_are_closed_form():
    L, h = 7.0, 0.1
    n = np.arange(1, 6)
    lap = (2.0 / h**2) * (1.0 - np.cos(n * math.pi * h / L))  # discrete (n pi / L)^2
    iso = _box(L, h, g=(20.0, 0.0, 0.0))
    for k in (0.0, 0.7, 1.9):
        e = iso.energies(k, 10)[:, 0]
        expected = np.sort(np.repeat(C * 20.0 * (lap + k * k), 2))[:10]
        np.testing.assert_allclose(e, expected, rtol=1e-10)
        assert abs(e[0] / (C * 20.0 * ((math.pi / L) ** 2 + k * k)) - 1.0) < 2e-3  # continuum
    g1, g2 = 20.0, 8.5
    off = _box(L, h, g=(g1, g2, g2), coupling=False)
    k = 0.9
    hh = C * ((g1 - 2 * g2) * lap + (g1 + g2) * k * k)
    lh = C * ((g1 + 2 * g2) * lap + (g1 - g2) * k * k)
    np.testing.assert_allclose(off.energies(k, 6)[:, 0], np.sort(np.r_[hh, lh])[:6], rtol=1e-10)


@pytest.mark.parametrize("eta", [-5.0, 0.0, 4.0, 12.0])
def test_uncoupled_sheet_density_is_the_parabolic_2d_one(eta):
    g1, g2 = 20.0, 8.5
    # a 4 nm box: the uncoupled LH1 (ordered by energy, it would take over subband 0
    # where it crosses HH1) crosses 1.3 eV above the HH1 edge, far above these Fermi levels
    disp = hs.dispersion(_box(4.0, 0.1, g=(g1, g2, g2), coupling=False), 1)
    kT = sc.k * 300.0 / sc.e
    mass = 1.0 / (g1 + g2)
    dos = mass * sc.m_e / (math.pi * sc.hbar**2) * sc.e * 1e-4  # [cm^-2 eV^-1]
    fermi = np.array([disp.edge_eV[0] + eta * kT])
    sheet, dsheet = disp.sheet_cm2(0, fermi, kT)
    assert sheet[0] == pytest.approx(dos * kT * math.log1p(math.exp(eta)), rel=1e-3)
    assert dsheet[0] == pytest.approx(dos / (1.0 + math.exp(-eta)), rel=1e-3)


def test_dispersion_converges_at_second_order():
    d = Design()
    shifts = []
    for h in (0.4, 0.2, 0.1, 0.05):
        e = hs.design_well(d, h).energies(np.float64(0.6), 1)[0, 0] - \
            hs.design_well(d, h).energies(0.0, 1)[0, 0]
        shifts.append(e)
    errs = np.abs(np.diff(shifts))
    orders = np.log2(errs[:-1] / errs[1:])
    assert np.all((orders > 1.7) & (orders < 2.4)), orders


def test_hh1_is_heavier_than_the_uncoupled_mass_and_the_ratio_is_consistent():
    """Coupled HH1 of the default InAs body: heavier than 1/(g1 + g2) = 0.035 m0 at every
    Fermi level; the tabulated derivative of eq. (3) agrees with finite differences of
    its values."""
    d = Design()
    ratio = hs.hole_dos_ratio(d)
    assert np.all(ratio.value[0] > 1.5)
    eta = np.linspace(-8.0, 20.0, 57)
    v = np.broadcast_to(ratio.value[0], eta.shape + ratio.value.shape[-1:])
    s = np.broadcast_to(ratio.slope[0], v.shape)
    r, dr = hs.interpolate_ratio(v, s, eta)
    r_p, _ = hs.interpolate_ratio(v, s, eta + 1e-5)
    r_m, _ = hs.interpolate_ratio(v, s, eta - 1e-5)
    np.testing.assert_allclose(dr, (r_p - r_m) / 2e-5, rtol=1e-4, atol=1e-6)
    # the table's slopes are those of its own values (Hermite data consistent)
    mid = 0.5 * (ratio.value[0, 2:] - ratio.value[0, :-2]) / hs.ETA_STEP
    np.testing.assert_allclose(mid, ratio.slope[0, 1:-1], rtol=0.05, atol=0.05)
