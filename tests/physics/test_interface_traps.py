"""Interface traps at the gate-oxide interfaces (`sub60.physics.interface_traps`).

Lab notebook: the trapped charge against the closed-form Fermi-Dirac integral of a
uniform density; the SRH occupation against the Fermi function; the U-shaped profile's
closed-form integral against quadrature; the Newton Jacobian against finite differences
and the order of Newton's convergence; and the subthreshold swing of a long-gate,
thin-body double-gate MOSFET twin against SS = (ln 10)(kT/q)(1 + (C_dep + C_it)/C_ox)
with C_it = q^2 D_it (Sze & Ng, Physics of Semiconductor Devices, 3rd ed., 2007,
sec. 6.2.4), where C_dep ~ 0.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import quad

from sub60.physics.design import Design
from sub60.physics.electrostatics import solve_electrostatics
from sub60.physics.interface_traps import (
    U_SHAPE_EDGE_RATIO,
    build_interface_traps,
    interface_trap_density,
    srh_occupation,
    traps_below,
)
from sub60.physics.simulate import Simulator
from sub60.physics.structure import build_frame, gate_oxide_interface_nodes

KT = sc.k * 300.0 / sc.e  # [eV]
EG = 0.74  # [eV], an In0.53Ga0.47As-like gap (any value does)
NC, NV = 2.1e17, 7.7e18  # [cm^-3], of the order of In0.53Ga0.47As (from memory; any value does)


def equilibrium_traps(d_mid: float, profile: str, neutral: float):
    nodes = np.ones((1, 1), bool)
    width = np.ones((1, 1))
    return build_interface_traps(nodes, width, EG, NC, NV, KT, 0.0, 0.0, d_mid, profile, neutral)


def boltzmann_carriers(ef_eV: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """n, p and d/dpsi for a Fermi level ef above midgap (bands fixed, psi moving the
    bands down: d(E_F - E_c)/d psi = +1)."""
    n = NC * np.exp((ef_eV - EG / 2) / KT)
    p = NV * np.exp((-EG / 2 - ef_eV) / KT)
    return n, p, n / KT, -p / KT


def test_srh_occupation_is_fermi_dirac_in_equilibrium():
    """Shockley & Read (1952), eq. 3.6 with equal capture: in equilibrium f is the Fermi
    function 1/(1 + exp((E - E_F)/kT)) (Sze & Ng sec. 1.5) — to round-off."""
    e = np.linspace(-EG / 2, EG / 2, 41)
    for ef in (-0.2, 0.0, 0.13):
        n, p, _, _ = boltzmann_carriers(np.array(ef))
        n1 = NC * np.exp((e - EG / 2) / KT)
        p1 = NV * np.exp((-EG / 2 - e) / KT)
        f = srh_occupation(n, p, n1, p1)
        np.testing.assert_allclose(f, 1.0 / (1.0 + np.exp((e - ef) / KT)), rtol=1e-12)


@pytest.mark.parametrize("neutral", [0.0, 0.12, -0.3])
def test_uniform_trap_charge_matches_the_closed_form_fermi_integral(neutral):
    """A uniform D over [E_v, E_c] holds int D f dE = D kT ln((1 + e^{(E_F-E_v)/kT}) /
    (1 + e^{(E_F-E_c)/kT})) electrons (the elementary integral of the Fermi function,
    common practice, no source); with donor-like traps below E_0 the charge is
    D (E_0 - E_v) - that (Sze & Ng sec. 4.3.3 sign convention) — within 1e-6 relative."""
    d = 3e12
    traps = equilibrium_traps(d, "uniform", neutral)
    ef = np.linspace(-0.3, 0.3, 13)
    n, p, dn, dp = boltzmann_carriers(ef)
    sigma, _ = traps.sheet_charge(n, p, dn, dp)
    filled = d * KT * (np.logaddexp(0, (ef + EG / 2) / KT) - np.logaddexp(0, (ef - EG / 2) / KT))
    exact = d * (neutral + EG / 2) - filled
    np.testing.assert_allclose(sigma, exact, rtol=1e-6, atol=1e-6 * d * EG)
    # at E_F = E_0 at least 9 kT from both edges the interface is neutral but for the
    # band-edge terms (< 1e-3 D kT); above E_0 it is negative, below positive
    n0, p0, dn0, dp0 = boltzmann_carriers(np.array([neutral]))
    if EG / 2 - abs(neutral) > 9 * KT:
        assert abs(traps.sheet_charge(n0, p0, dn0, dp0)[0][0]) < 1e-3 * d * KT
    assert np.all(sigma[ef > neutral + 5 * KT] < 0) and np.all(sigma[ef < neutral - 5 * KT] > 0)


def test_u_shaped_profile_and_its_closed_form_integral():
    """The stated U: minimum D_mid at midgap, R D_mid at both edges (R = 10, our choice),
    symmetric; its closed-form integral against scipy quad (to 1e-10)."""
    d = 1e12
    e = np.linspace(-EG / 2, EG / 2, 201)
    u = interface_trap_density(e, EG, d, "u-shaped")
    assert u[100] == pytest.approx(d) and u.min() == pytest.approx(d)
    assert u[0] == pytest.approx(U_SHAPE_EDGE_RATIO * d) and u[-1] == pytest.approx(U_SHAPE_EDGE_RATIO * d)
    np.testing.assert_allclose(u, u[::-1], rtol=1e-12)
    assert interface_trap_density(np.array([EG]), EG, d, "u-shaped")[0] == 0.0  # none outside the gap
    for level in (-0.2, 0.0, 0.3, 1.0):
        numeric, _ = quad(lambda x: float(interface_trap_density(np.array(x), EG, d, "u-shaped")),
                          -EG / 2, min(level, EG / 2), epsabs=0, epsrel=1e-12)
        assert traps_below(level, EG, d, "u-shaped") == pytest.approx(numeric, rel=1e-10)
    with pytest.raises(ValueError, match="interface_trap_profile"):
        interface_trap_density(e, EG, d, "v-shaped")


@pytest.mark.parametrize("profile", ["uniform", "u-shaped"])
def test_trap_jacobian_matches_finite_differences(profile):
    """d sigma / d psi of the Newton Jacobian against a central difference of the charge
    (h = 1e-6 V) — within 1e-5 relative."""
    traps = equilibrium_traps(2e12, profile, 0.05)
    ef = np.linspace(-0.33, 0.33, 23)
    n, p, dn, dp = boltzmann_carriers(ef)
    _, ds = traps.sheet_charge(n, p, dn, dp)
    h = 1e-6
    up = traps.sheet_charge(*boltzmann_carriers(ef + h))[0]
    down = traps.sheet_charge(*boltzmann_carriers(ef - h))[0]
    np.testing.assert_allclose(ds, (up - down) / (2 * h), rtol=1e-5)
    assert np.all(ds <= 0)


def test_newton_stays_quadratic_with_traps():
    """With traps in the Jacobian, Newton's last updates shrink quadratically:
    u_{k+1} <= C u_k^2 with C of order 1/V (common practice: the order of convergence of
    an exact Newton step, no source). The structure without traps has none attached."""
    assert build_frame(Design()).interface_traps is None
    d = Design(interface_trap_density_cm2eV=2e13, interface_trap_profile="u-shaped")
    es = solve_electrostatics(d, 0.25, 0.3)
    h = es.history
    assert es.iterations <= 8
    ratios = [h[k + 1] / h[k] ** 2 for k in range(len(h) - 1) if h[k] < 0.05]
    assert ratios and max(ratios) < 10.0, h
    q = es.interface_charge_cm2
    mask = gate_oxide_interface_nodes(d, es.frame.mesh)
    assert np.all(q[~mask] == 0) and np.any(q[mask] != 0)


# ------------------------------------------------------------ the MOSFET twin's swing
LONG_TWIN = Design(material="In0.53Ga0.47As", source_type="n", gate_length_nm=100.0,
                   body_thickness_nm=5.0, source_doping_cm3=1e20, drain_doping_cm3=1e20)


def sze_swing_mV(design: Design, dit_cm2eV: float) -> float:
    """SS = (ln 10)(kT/q)(1 + (C_dep + C_it)/C_ox), C_it = q^2 D_it (Sze & Ng 3rd ed.,
    sec. 6.2.4). A fully depleted, undoped, symmetric double-gate body carries no charge
    in subthreshold: the potential across it is flat and C_dep = 0; each interface then
    sees C_ox against C_it, so the ratio is that of one side."""
    cox = design.gate_permittivity * sc.epsilon_0 / (design.oxide_thickness_nm * 1e-9)  # [F/m^2]
    cit = sc.e * dit_cm2eV * 1e4  # q^2 D_it with D_it per eV = per (q V) [F/m^2]
    return math.log(10) * sc.k * design.temperature_K / sc.e * 1e3 * (1 + cit / cox)


@pytest.mark.parametrize("dit", [0.0, 5e12, 2e13, 5e13])
def test_long_twin_swing_follows_sze_with_uniform_traps(dit):
    """Point swing of the twin at Vd = 50 mV in deep subthreshold (Vg -0.2 to 0 V) —
    within 3 % of Sze & Ng's formula (the issue asks for 10 %; measured: < 0.3 %)."""
    d = LONG_TWIN.replace(interface_trap_density_cm2eV=dit)
    vg = np.linspace(-0.2, 0.0, 5)
    curve = Simulator().transfer_curve(d, vg, 0.05, refine=False)
    ss = float(np.median(curve.ss_mV_per_dec))
    assert ss == pytest.approx(sze_swing_mV(d, dit), rel=0.03)


def test_long_twin_swing_follows_the_local_u_shaped_density():
    """With the U-shaped profile the swing at each gate voltage follows C_it = q^2
    D_it(E_F) at the interface Fermi level of the barrier top (Sze & Ng sec. 4.3.3 and
    6.2.4; E_F - E_mid read from the solved interface potential) — within 10 %."""
    d = LONG_TWIN.replace(interface_trap_density_cm2eV=1e13, interface_trap_profile="u-shaped")
    sim = Simulator()
    dv = 0.01
    for vg in (-0.3, -0.1, 0.05):
        lo, hi = sim.solve_bias(d, vg - dv / 2, 0.05), sim.solve_bias(d, vg + dv / 2, 0.05)
        ss = 1e3 * dv / math.log10(hi.current_uA_per_um / lo.current_uA_per_um)
        es = sim.solve_bias(d, vg, 0.05).electrostatics
        j = int(np.flatnonzero(gate_oxide_interface_nodes(d, es.frame.mesh)[0])[-1])
        mid = np.argmin(np.abs(es.x_nm - 0.5 * (d.source_junction_nm + d.drain_junction_nm)))
        bands = es.frame.bands
        e_mid = -bands.chi_eV - es.psi_V[mid, j] - bands.eg_eV / 2  # bulk midgap at the interface
        dit_local = float(interface_trap_density(np.array(-e_mid), bands.eg_eV, 1e13, "u-shaped"))
        assert ss == pytest.approx(sze_swing_mV(d, dit_local), rel=0.10), (vg, ss, dit_local)


def test_trap_swing_does_not_depend_on_the_grid():
    """The trap charge sits on the interface nodes as a sheet (exact in the finite-volume
    balance of a node on the interface), so refining the grid 1.5x moves the twin's
    swing with D_it = 2e13 by less than 0.5 % (a grid-convergence check, no outside
    source)."""
    d = LONG_TWIN.replace(interface_trap_density_cm2eV=2e13)
    vg = np.linspace(-0.2, 0.0, 3)
    swings = [float(np.median(Simulator(resolution=r).transfer_curve(d, vg, 0.05, refine=False)
                              .ss_mV_per_dec)) for r in (1.0, 1.5)]
    assert swings[1] == pytest.approx(swings[0], rel=0.005)
    assert swings[0] == pytest.approx(sze_swing_mV(d, 2e13), rel=0.03)
