"""Electrostatics against published values: junctions, scale length, equilibrium.

Lab notebook: each check names its source beside the number.
"""

from __future__ import annotations

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc
from scipy.optimize import brentq

from sub60.physics.design import Design
from sub60.physics.electrostatics import solve_electrostatics
from sub60.physics.materials import get_semiconductor
from sub60.physics.mesh import Mesh, graded_axis
from sub60.physics.poisson import BandParameters, PoissonProblem, neutral_potential, solve_poisson
from sub60.physics.structure import band_parameters


# ----------------------------------------------------------------- helpers
def junction_problem(bands: BandParameters, na_cm3: float, nd_cm3: float, length_nm: float,
                     eps: float, fine_nm: float) -> PoissonProblem:
    """An ungated, 1D-like abrupt p+/n+ junction at equilibrium: one semiconductor
    layer, ohmic ends, zero normal field on the faces."""
    xj = 0.5 * length_nm
    x = graded_axis(length_nm, [xj], [(xj, fine_nm, 0.05 * length_nm)],
                    h_max_nm=length_nm / 100, growth=0.1)
    y = np.array([0.0, 1.0, 2.0])
    mesh = Mesh(x, y, np.array([eps, eps]), np.array([True, True]))
    donors = np.where(x > xj, nd_cm3, 0.0)
    acceptors = np.where(x <= xj, na_cm3, 0.0)
    zeros = np.zeros(x.size)
    dirichlet = np.zeros((x.size, 3), bool)
    dirichlet[[0, -1], :] = True
    psi_end = neutral_potential(bands, np.array([-na_cm3, nd_cm3]), 0.0, 0.0)
    values = np.zeros((x.size, 3))
    values[0, :], values[-1, :] = psi_end
    return PoissonProblem(mesh, donors, acceptors, bands, dirichlet, values, zeros, zeros)


def solve_from_neutral(problem: PoissonProblem):
    net = problem.donors_cm3 - problem.acceptors_cm3
    psi0 = neutral_potential(problem.bands, net, 0.0, 0.0)
    start = np.repeat(psi0[:, None], problem.mesh.ny, axis=1)
    return solve_poisson(problem, start)


def mp_neutral_psi(bands: BandParameters, net_cm3: float) -> float:
    """Charge-neutral potential at equilibrium (E_F = 0) from mpmath's polylog,
    independent of sub60's Fermi–Dirac code: F_1/2(eta) = -Li_3/2(-e^eta) (DLMF 25.12)."""
    kT = mp.mpf(bands.kT_eV)

    def f12(eta):
        return -mp.re(mp.polylog(1.5, -mp.exp(eta)))

    def charge(psi):
        ec = -bands.chi_eV - psi + bands.dec_eV
        ev = -bands.chi_eV - bands.eg_eV - psi - bands.dev_eV
        return (bands.nv_cm3 * f12(ev / kT) - bands.nc_cm3 * f12(-ec / kT) + net_cm3) / abs(net_cm3)

    guess = float(neutral_potential(bands, np.array([net_cm3]), 0.0, 0.0)[0])
    return float(mp.findroot(charge, (guess - 0.05, guess + 0.05), solver="illinois", tol=1e-24))


# ----------------------------------------------------------------- d. built-in potential
@pytest.mark.parametrize("material, na, nd", [("InAs", 4e19, 2e18), ("GaAs", 1e19, 1e18),
                                               ("In0.53Ga0.47As", 1e19, 5e18)])
def test_builtin_potential_degenerate_fermi_dirac(material, na, nd):
    """Long ungated p+/n+ junction: psi(n side) - psi(p side) in the quasi-neutral
    interior equals the Fermi–Dirac built-in potential computed independently with
    mpmath, within 1 meV (Sze & Ng, Physics of Semiconductor Devices, 3rd ed., ch. 2:
    V_bi is the difference of the neutral potentials; F_1/2 from DLMF 25.12)."""
    rec = get_semiconductor(material)
    nc, nv = rec.effective_dos_cm3(300.0)
    bands = BandParameters(rec.electron_affinity_eV, rec.bandgap_eV(300.0), nc, nv,
                           sc.k * 300 / sc.e)
    prob = junction_problem(bands, na, nd, 400.0, rec.permittivity, 0.1)
    sol = solve_from_neutral(prob)
    x = prob.mesh.x_nm
    psi = sol.psi_V[:, 1]
    ip, in_ = np.argmin(np.abs(x - 60.0)), np.argmin(np.abs(x - 340.0))
    vbi_solver = psi[in_] - psi[ip]
    vbi_ref = mp_neutral_psi(bands, nd) - mp_neutral_psi(bands, -na)
    assert abs(vbi_solver - vbi_ref) < 1e-3, (vbi_solver, vbi_ref)


def test_builtin_potential_nondegenerate_limit_and_depletion_width():
    """Nondegenerate abrupt junction, the worked example of REFERENCES §9 (a published
    homework solution; Sze & Ng ch. 2 formulas): NA = 1e16, ND = 1e15, ni = 1e10 cm^-3,
    kT/q = 0.025 V -> V_bi = (kT/q) ln(NA ND / ni^2) = 0.633 V; the solver within 1 meV.
    Depletion width from the solved charge vs W = sqrt(2 eps V_bi (NA+ND)/(q NA ND))
    within 10 %."""
    kT, ni, na, nd, eps = 0.025, 1e10, 1e16, 1e15, 11.7
    nc = nv = 2.86e19  # Si at 300 K (Green, J. Appl. Phys. 67, 2944 (1990))
    eg = 2 * kT * np.log(nc / ni)  # chosen so that sqrt(Nc Nv) exp(-Eg/2kT) = ni
    bands = BandParameters(4.05, eg, nc, nv, kT)
    vbi_formula = kT * np.log(na * nd / ni**2)
    assert vbi_formula == pytest.approx(0.633, abs=5e-4)  # REFERENCES §9 example
    prob = junction_problem(bands, na, nd, 8000.0, eps, 2.0)
    sol = solve_from_neutral(prob)
    x, psi = prob.mesh.x_nm, sol.psi_V[:, 1]
    ip, in_ = np.argmin(np.abs(x - 600.0)), np.argmin(np.abs(x - 7400.0))
    assert psi[in_] - psi[ip] == pytest.approx(vbi_formula, abs=1e-3)
    # depletion width: depleted dopant charge on each side divided by the doping
    n, p = sol.n_cm3[:, 1], sol.p_cm3[:, 1]
    xj = 4000.0
    nside, pside = x > xj, x <= xj
    wn = np.trapezoid(np.where(nside, (nd - n) / nd, 0.0), x)
    wp = np.trapezoid(np.where(pside, (na - p) / na, 0.0), x)
    w_solver_um = (wn + wp) * 1e-3
    w_formula_um = np.sqrt(2 * eps * sc.epsilon_0 * vbi_formula * (na + nd)
                           / (sc.e * na * nd * 1e6)) * 1e6
    assert w_formula_um == pytest.approx(0.94, rel=0.02)  # REFERENCES §9: 0.949 um
    assert w_solver_um == pytest.approx(w_formula_um, rel=0.10)


# ----------------------------------------------------------------- f. scale length
def ftw_double_gate_lambda(eps_s, eps_ox, ts, tox):
    """Lowest root of eps_s tan(pi tox/lam) tan(pi ts/(2 lam)) = eps_ox (Frank, Taur &
    Wong, IEEE EDL 19, 385 (1998); REFERENCES §5) -> the longest scale length [nm]."""
    f = lambda k: eps_s * np.tan(k * tox) * np.tan(k * ts / 2) - eps_ox  # noqa: E731
    kmax = min(np.pi / (2 * tox), np.pi / ts) * (1 - 1e-9)
    return np.pi / brentq(f, 1e-6, kmax)


def three_layer_lambda(eps_b, tb, eps_s, ts, eps_ox, tox):
    """Single gate on a buried oxide over a grounded plane: lowest mode of
    -div(eps grad) with Dirichlet at the plane and the gate, by the mode matching that
    gives the Frank–Taur–Wong equation (REFERENCES §5 [derived]); for tb -> 0 it
    reduces to eps_s tan(pi tox/lam) + eps_ox tan(pi ts/lam) = 0."""
    def top(k):
        y0, d0 = np.sin(k * tb), eps_b * k * np.cos(k * tb)
        y1 = y0 * np.cos(k * ts) + d0 / (eps_s * k) * np.sin(k * ts)
        d1 = -eps_s * k * y0 * np.sin(k * ts) + d0 * np.cos(k * ts)
        return y1 * np.cos(k * tox) + d1 / (eps_ox * k) * np.sin(k * tox)
    ks = np.linspace(1e-4, np.pi / (tb + ts + tox) * 3, 20000)
    v = top(ks)
    i = np.flatnonzero(np.sign(v[1:]) != np.sign(v[:-1]))[0]
    return np.pi / brentq(top, ks[i], ks[i + 1])


def test_three_layer_mode_reduces_to_ftw_single_gate():
    """Check of the test's own reference: tb -> 0 gives the FTW single-gate root."""
    eps_s, eps_ox, ts, tox = 12.9, 22.0, 6.0, 2.0
    f = lambda k: eps_s * np.tan(k * tox) + eps_ox * np.tan(k * ts)  # noqa: E731
    k = brentq(f, np.pi / (2 * ts) * 1.000001, min(np.pi / ts, np.pi / (2 * tox)) * 0.999999)
    assert three_layer_lambda(3.9, 1e-6, eps_s, ts, eps_ox, tox) == pytest.approx(np.pi / k, rel=1e-5)
    # and the exact special case eps_ox = eps_s: lambda = ts + tox (REFERENCES §5)
    assert three_layer_lambda(eps_s, 1e-6, eps_s, ts, eps_s, tox) == pytest.approx(ts + tox, rel=1e-5)
    assert ftw_double_gate_lambda(eps_s, eps_s, ts, tox) == pytest.approx(ts + 2 * tox, rel=1e-6)


def decay_length_nm(es, x_from, x_to):
    """Decay length of psi - psi(channel centre) on the body mid-plane [nm]."""
    d = es.design
    x = es.x_nm
    psi = es.psi_V[:, es.frame.body_j]
    centre = np.argmin(np.abs(x - (d.source_junction_nm + 0.5 * d.gate_length_nm)))
    dpsi = np.abs(psi - psi[centre])
    sel = (x >= d.source_junction_nm + x_from) & (x <= d.source_junction_nm + x_to)
    slope = np.polyfit(x[sel], np.log(dpsi[sel]), 1)[0]
    return -1.0 / slope


@pytest.mark.parametrize("layout", ["double", "single"])
def test_scale_length_frank_taur_wong(layout):
    """Gated, nearly intrinsic GaAs body in subthreshold: the potential decays from the
    source junction into the channel as exp(-pi x / lambda); the decay length is within
    10 % of lambda/pi, lambda the lowest root of the FTW equation (double gate) or of its
    mode-matching extension to a buried oxide on a grounded plane (single gate)."""
    d = Design(material="GaAs", body_thickness_nm=6.0, oxide_thickness_nm=2.0, oxide="HfO2",
               gate_length_nm=80.0, source_doping_cm3=1e19, drain_doping_cm3=1e19,
               channel_doping_cm3=1e14, doping_gradient_nm_per_dec=0.0, gate_layout=layout,
               buried_oxide_thickness_nm=4.0, gate_workfunction_eV=4.9)
    es = solve_electrostatics(d, 0.0, 0.0, quantum_correction=False)
    from sub60.physics.materials import get_dielectric

    eps_s, eps_ox = get_semiconductor("GaAs").permittivity, get_dielectric("HfO2").permittivity
    if layout == "double":
        lam = ftw_double_gate_lambda(eps_s, eps_ox, 6.0, 2.0)
    else:
        lam = three_layer_lambda(3.9, 4.0, eps_s, 6.0, eps_ox, 2.0)
    measured = decay_length_nm(es, lam * 0.6, lam * 2.2)
    assert measured == pytest.approx(lam / np.pi, rel=0.10), (measured, lam / np.pi)


# ----------------------------------------------------------------- g. equilibrium
def test_equilibrium_flat_fermi_level_mass_action_and_neutral_contacts():
    """At V_d = 0: one Fermi level everywhere; n p = n_i^2 where nondegenerate (within 1 %,
    n_i^2 = Nc Nv exp(-E_g,eff/kT) with the confinement-shifted gap; Sze & Ng ch. 1);
    zero net charge far inside the contacts."""
    d = Design(source_length_nm=60.0, drain_length_nm=100.0)
    es = solve_electrostatics(d, 0.1, 0.0)
    assert np.all(es.efn_eV == 0.0) and np.all(es.efp_eV == 0.0)
    b = es.frame.bands
    ni2 = b.nc_cm3 * b.nv_cm3 * np.exp(-(b.eg_eV + b.dec_eV + b.dev_eV) / b.kT_eV)
    semi = es.frame.mesh.node_semiconductor
    n, p = es.n_cm3[:, semi], es.p_cm3[:, semi]
    nondeg = (n < 0.01 * b.nc_cm3) & (p < 0.01 * b.nv_cm3)
    assert nondeg.sum() > 100
    np.testing.assert_allclose((n * p)[nondeg] / ni2, 1.0, rtol=0.01)
    net = es.frame.donors_cm3 - es.frame.acceptors_cm3
    psi_neutral = neutral_potential(b, net, 0.0, 0.0)
    for x0 in (5.0, d.total_length_nm - 5.0):  # 5 nm inside each end, >= 55 nm from the gate
        i = np.argmin(np.abs(es.x_nm - x0))
        rho = p[i] - n[i] + net[i]
        assert np.max(np.abs(rho)) < 1e-3 * abs(net[i])
        assert np.max(np.abs(es.psi_V[i, semi] - psi_neutral[i])) < 1e-3  # [V]


def test_bias_out_of_range_and_convergence_reporting():
    """Bad bias names the terminal and range (common practice, no source)."""
    with pytest.raises(ValueError, match="vg_V"):
        solve_electrostatics(Design(), 5.0, 0.3)
    with pytest.raises(ValueError, match="vd_V"):
        solve_electrostatics(Design(), 0.0, float("nan"))


def test_nonconvergence_raises_with_history():
    """A Newton run that cannot converge (1 step allowed) raises with its history."""
    from sub60.physics.poisson import SolverError

    with pytest.raises(SolverError, match="residual history"):
        solve_electrostatics(Design(gate_length_nm=31.0), 0.3, 0.3, max_iter=1)


def test_band_parameters_use_material_record():
    """Charge model parameters come from the material record (REFERENCES §3)."""
    b = band_parameters(Design(material="GaAs"))
    rec = get_semiconductor("GaAs")
    assert b.eg_eV == pytest.approx(rec.bandgap_eV(300.0))
    assert b.chi_eV == rec.electron_affinity_eV
