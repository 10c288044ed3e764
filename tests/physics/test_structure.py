"""From a Design to a Poisson problem: doping, band parameters, boundary conditions.

Sources beside each check: the junction profile and the boundary conditions are the
definitions of `physics.structure`'s docstring (common practice, no source); kT and the
effective densities of states are recomputed here from scipy.constants (exact SI k, e,
h; CODATA m_e) with N = 2 (m kT / (2 pi hbar^2))^(3/2) (Sze & Ng, Physics of
Semiconductor Devices, 3rd ed., 2007, ch. 1).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc

from sub60.physics.design import Design
from sub60.physics.materials import get_semiconductor
from sub60.physics.structure import (
    band_parameters,
    build_frame,
    doping_profile,
    problem_at_bias,
)


def test_abrupt_doping_regions():
    d = Design(doping_gradient_nm_per_dec=0.0, source_doping_cm3=4e19, drain_doping_cm3=5e17,
               channel_doping_cm3=-2e16)
    x = np.array([0.0, 10.0, 20.0, 20.5, 35.0, 49.5, 50.0, 60.0])
    donors, acceptors = doping_profile(d, x)
    np.testing.assert_array_equal(acceptors, [4e19, 4e19, 4e19, 2e16, 2e16, 2e16, 0, 0])
    np.testing.assert_array_equal(donors, [0, 0, 0, 0, 0, 0, 5e17, 5e17])


def test_graded_junction_falls_one_decade_per_gradient_length():
    """Source dopant 10^(-(x - x_j)/g) beyond the junction: one decade per g nm."""
    g = 2.0
    d = Design(doping_gradient_nm_per_dec=g, channel_doping_cm3=0.0, source_type="n")
    xj = d.source_junction_nm
    donors, acceptors = doping_profile(d, np.array([xj, xj + g, xj + 3 * g]))
    src = donors - d.drain_doping_cm3 * 10.0 ** (-(d.drain_junction_nm - np.array(
        [xj, xj + g, xj + 3 * g])) / g)
    np.testing.assert_allclose(src, d.source_doping_cm3 * np.array([1.0, 0.1, 1e-3]), rtol=1e-12)
    assert np.all(acceptors == 0.0)


def test_band_parameters_from_scipy_constants():
    d = Design(material="InAs", temperature_K=300.0)
    b = band_parameters(d)
    rec = get_semiconductor("InAs")
    assert b.kT_eV == pytest.approx(sc.k * 300.0 / sc.e, rel=1e-15)
    assert b.kT_eV == pytest.approx(0.025852, abs=5e-7)  # kT/q at 300 K, to its 5 digits

    def dos(m):
        return 2.0 * (m * sc.m_e * sc.k * 300.0 / (2 * math.pi * sc.hbar**2)) ** 1.5 * 1e-6

    assert b.nc_cm3 == pytest.approx(dos(rec.electron_dos_mass), rel=1e-12)
    assert b.nv_cm3 == pytest.approx(dos(rec.hole_dos_mass), rel=1e-12)
    assert b.chi_eV == rec.electron_affinity_eV
    assert b.eg_eV == pytest.approx(rec.bandgap_eV(300.0), rel=1e-15)


@pytest.mark.parametrize("layout", ["double", "single"])
def test_gate_and_back_plane_boundary_values(layout):
    """Gates: psi = V_g - phi_m; a single gate's back plane is grounded gate metal:
    psi = -phi_m (module docstring)."""
    d = Design(gate_layout=layout, gate_source_offset_nm=-2.0)
    frame = build_frame(d)
    prob = problem_at_bias(frame, 0.4, 0.2)
    x = frame.mesh.x_nm
    gated = (x >= d.gate_start_nm - 1e-9) & (x <= d.gate_end_nm + 1e-9)
    np.testing.assert_array_equal(frame.gate_nodes[:, -1], gated)
    assert np.all(prob.dirichlet_psi_V[frame.gate_nodes] == 0.4 - d.gate_workfunction_eV)
    if layout == "double":
        np.testing.assert_array_equal(frame.gate_nodes[:, 0], gated)
        assert not frame.back_nodes.any()
    else:
        assert frame.back_nodes[:, 0].all()
        assert np.all(prob.dirichlet_psi_V[frame.back_nodes] == -d.gate_workfunction_eV)


@pytest.mark.parametrize("source_type", ["p", "n"])
def test_ohmic_contacts_are_charge_neutral(source_type):
    """Ohmic ends: p - n + N_D - N_A = 0 at the contact potential (module docstring),
    evaluated with the Fermi-Dirac densities of the charge model."""
    d = Design(source_type=source_type)
    frame = build_frame(d)
    vd = 0.3
    prob = problem_at_bias(frame, 0.2, vd)
    net = frame.donors_cm3 - frame.acceptors_cm3
    for i, efn in ((0, 0.0 if source_type == "n" else -vd), (-1, -vd)):
        j = np.flatnonzero(frame.contact_nodes[i])[0]
        psi = prob.dirichlet_psi_V[i, j]
        n, p, _, _ = frame.bands.densities(np.array([psi]), np.array([efn]), np.array([0.0]))
        assert abs(p[0] - n[0] + net[i]) <= 1e-9 * abs(net[i])


def test_frames_are_cached_and_sized():
    d = Design(gate_length_nm=33.0)
    f = build_frame(d)
    assert build_frame(d) is f
    assert build_frame(d, resolution=1.5) is not f
    assert f.built_for(d, 1.0, True) and not f.built_for(d, 1.5, True)
    # the banded Newton matrix alone is (ny + 1) rows of nx * ny doubles
    assert f.nbytes >= (f.mesh.ny + 1) * f.mesh.nx * f.mesh.ny * 8
    assert len(repr(f)) < 100
