"""Landauer band-to-band and thermionic currents against closed forms and independent
quadratures; the thermionic limit of the MOSFET twin; the default tunnel FET below it.

Lab notebook: each check names its source beside the number. Reference currents are
computed here from scipy.constants and scipy.integrate, independently of sub60's
Fermi–Dirac integrals, WKB code and quadrature grids.

Units: currents per width in A/m = uA/um; energies in eV; k in 1/nm.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy import integrate
from scipy.special import expit

from sub60.physics.design import Design
from sub60.physics.simulate import Simulator
from sub60.physics.transport import (
    G0_S,
    BandProfile,
    band_to_band,
    energy_grid,
    fermi,
    thermionic_current,
)

# hbar^2/(2 m0) [eV nm^2], recomputed here from scipy.constants.
HBAR2_2M0 = sc.hbar**2 / (2 * sc.m_e) / sc.e * 1e18
#: (2q/h) x (q per eV) x (1/2pi per unit k, k in 1/nm -> 1/m): prefactor of
#: I/W = (2q/h) int dk/2pi int dE (...) with E in eV, k in 1/nm, result in A/m.
LANDAUER_PER_WIDTH = 2 * sc.e / sc.h * sc.e / (2 * math.pi) * 1e9


def kT_eV(temperature_K: float) -> float:
    return sc.k * temperature_K / sc.e


def thermionic_limit_mV(temperature_K: float) -> float:
    """(ln 10) kT/q [mV/dec] from exact SI k and e (REFERENCES §6 [derived]; Sze & Ng,
    3rd ed., MOSFET subthreshold section, from memory)."""
    return math.log(10) * sc.k * temperature_K / sc.e * 1e3


def barrier(top_eV: float, x_nm: np.ndarray, length_nm: float = 10.0) -> np.ndarray:
    """A smooth barrier whose highest point is top_eV at the middle [eV]."""
    return top_eV - 0.3 * ((x_nm - 0.5 * length_nm) / (0.5 * length_nm)) ** 2


X_NM = np.linspace(0.0, 10.0, 101)


def fd(energy_eV: float, fermi_level_eV: float, kT: float) -> float:
    """Fermi–Dirac occupation for the references: scipy's logistic 1/(1 + e^(E-EF)/kT),
    independent of sub60's `transport.fermi`."""
    return float(expit((fermi_level_eV - energy_eV) / kT))


# ----------------------------------------------------------------- Landauer
def test_conductance_quantum_is_scipy_value():
    """G0 = 2e^2/h, exact since the 2019 SI (scipy.constants 'conductance quantum')."""
    g0, unit, _ = sc.physical_constants["conductance quantum"]
    assert unit == "S"
    assert G0_S == pytest.approx(g0, rel=1e-12)


@pytest.mark.parametrize("temperature_K", [77.0, 300.0])
def test_single_perfect_mode_conducts_one_quantum(temperature_K):
    """One fully transmitting mode at 1 mV: I = (2q/h) int T [f_s - f_d] dE with T = 1
    over a wide energy range gives I = G0 V within 1 % (Datta, Electronic Transport in
    Mesoscopic Systems, 1995, ch. 2, from memory; G0 from scipy.constants). Checks the
    occupation function `transport.fermi` and its sign convention (efd = efs - qV)."""
    v = 1e-3
    kT = kT_eV(temperature_K)
    g0 = sc.physical_constants["conductance quantum"][0]
    window, _ = integrate.quad(lambda e: float(fermi(e, 0.0, kT) - fermi(e, -v, kT)),
                               -1.0, 1.0, points=[-v, 0.0], limit=200, epsabs=1e-15)
    current_A = 2 * sc.e / sc.h * window * sc.e  # window in eV -> J
    assert current_A == pytest.approx(g0 * v, rel=0.01)


def test_broken_gap_without_barrier_counts_modes_per_width():
    """Through band_to_band itself: a path with no forbidden region (conduction edge 0.3 eV
    below the valence edge everywhere) has T = 1 for every connected (E, k). At 1 mV the
    current is then (2q/h) int dk/2pi int dE [f_s - f_d] over the connected region,
    i.e. G0 V x (modes per width) thermally averaged (Landauer, Datta 1995 ch. 2, from
    memory); the reference is an independent scipy quadrature. Within 1 %."""
    m = 0.03
    kT = kT_eV(300.0)
    v = 1e-3
    cb = [BandProfile("C", np.full(X_NM.size, -0.15), m)]
    vb = [BandProfile("V", np.full(X_NM.size, 0.15), m)]
    got = band_to_band(X_NM, cb, vb, 0.0, -v, kT).current_uA_per_um
    a = HBAR2_2M0 / m

    def modes_per_nm(e):  # connected |k| < kc: E < 0.15 - a k^2 and E > -0.15 + a k^2
        return 2 * math.sqrt(max(0.15 - abs(e), 0.0) / a)  # full k line, both signs

    def integrand(e):
        return (fd(e, 0.0, kT) - fd(e, -v, kT)) * modes_per_nm(e)

    ref = LANDAUER_PER_WIDTH * integrate.quad(integrand, -0.15, 0.15,
                                              points=[-v, 0.0], limit=200)[0]
    assert got > 0
    assert got == pytest.approx(ref, rel=0.01)


def uniform_junction(m: float = 0.03, eg: float = 0.354, f: float = 0.1):
    """p+/n+ junction in a uniform field over 10 nm: source valence edge at 0 eV, drain
    conduction edge at eg - 10 f = -0.646 eV; equal masses."""
    ec = eg - f * X_NM
    ev = -f * X_NM
    return [BandProfile("C1", ec, m)], [BandProfile("HH1", ev, m)]


def test_no_bias_no_band_to_band_current():
    """f_s = f_d: the Landauer current is exactly zero, at every energy (Datta 1995 ch. 2,
    from memory)."""
    cb, vb = uniform_junction()
    s = band_to_band(X_NM, cb, vb, 0.0, 0.0, kT_eV(300.0))
    assert s.current_uA_per_um == 0.0
    assert np.all(s.current_density == 0.0)


@pytest.mark.parametrize("vd", [0.05, 0.1, 0.3, -0.1, -0.3])
def test_current_sign_follows_drain_bias(vd):
    """Vd > 0 (efd below efs): electrons flow source -> drain, I > 0; Vd < 0: I < 0
    (sign convention of physics.transport; f_s - f_d changes sign with Vd)."""
    cb, vb = uniform_junction()
    current = band_to_band(X_NM, cb, vb, 0.0, -vd, kT_eV(300.0)).current_uA_per_um
    assert np.sign(current) == np.sign(vd)
    assert current != 0.0


@pytest.mark.parametrize("vd", [0.05, 0.1, 0.3, -0.1])
def test_uniform_field_current_against_kane_double_integral(vd):
    """Uniform-field junction, equal masses m (= m_t): with kappa_x^2 = kappa_0^2 + k^2
    (two-band dispersion, Kane 1961 — from memory) T(E, k) = exp(-[Kane exponent +
    pi hbar k^2 Eg^1/2 / (q F sqrt(2 m))]) for every connected energy (derived in
    physics.tunneling; Kane, J. Appl. Phys. 32, 83 (1961); Sze & Ng 3rd ed. for the k = 0
    exponent). Independent reference: scipy dblquad of
    (2q/h) int dk/2pi int dE T [f_s - f_d]. Tolerance 2 %: sub60 integrates k with 10
    Gauss nodes on [0, k_max] across the step where an energy stops being connected, and
    E on a 90-point grid (quadrature error, measured ~1.4 % at the smallest bias)."""
    m, eg, f = 0.03, 0.354, 0.1
    kT = kT_eV(300.0)
    cb, vb = uniform_junction(m, eg, f)
    got = band_to_band(X_NM, cb, vb, 0.0, -vd, kT).current_uA_per_um
    a = HBAR2_2M0 / m
    ec_drain = eg - f * X_NM[-1]
    kane_per_eg32 = (math.pi * math.sqrt(m * sc.m_e) * sc.e**1.5
                     / (2 * math.sqrt(2) * sc.e * sc.hbar * f * 1e9))

    penalty_per_k2 = (math.pi * sc.hbar * 1e18 * math.sqrt(eg * sc.e)
                      / (sc.e * f * 1e9 * math.sqrt(2 * m * sc.m_e)))  # per (1/nm)^2

    def integrand(e, k):
        t = math.exp(-kane_per_eg32 * eg**1.5 - penalty_per_k2 * k * k)
        return t * (fd(e, 0.0, kT) - fd(e, -vd, kT))

    k_max = math.sqrt((0.0 - ec_drain) / (2 * a))
    half, _ = integrate.dblquad(integrand, 0.0, k_max, lambda k: ec_drain + a * k * k,
                                lambda k: -a * k * k, epsabs=0.0, epsrel=1e-8)
    ref = LANDAUER_PER_WIDTH * 2 * half  # k and -k
    assert got == pytest.approx(ref, rel=0.02)


def test_spectral_current_vanishes_outside_the_overlap():
    """J(E) = 0 wherever source valence states do not face drain conduction states:
    above the source valence edge (0 eV) and below the drain conduction edge (-0.646 eV),
    even where f_s - f_d is not zero (physical requirement of the Landauer picture, Datta
    1995 ch. 2, from memory); J(E) > 0 inside the overlap."""
    cb, vb = uniform_junction()
    kT = kT_eV(300.0)
    vd = 0.3
    e = np.linspace(-1.0, 0.4, 141)
    s = band_to_band(X_NM, cb, vb, 0.0, -vd, kT, energies_eV=e)
    ev_source = vb[0].edge_eV[0]
    ec_drain = cb[0].edge_eV[-1]
    outside = (e >= ev_source) | (e <= ec_drain)
    occupancy = fermi(e, 0.0, kT) - fermi(e, -vd, kT)
    assert np.all(occupancy[outside] > 0)  # the zeros below are not from the occupation
    assert np.all(s.current_density[outside] == 0.0)
    inside = (e > ec_drain + 0.05) & (e < ev_source - 0.05)
    assert np.all(s.current_density[inside] > 0.0)
    grid = energy_grid(cb, vb, 0.0, -vd, kT)
    assert grid.min() >= ec_drain and grid.max() <= ev_source


def test_no_overlap_no_energy_window_no_current():
    """Source valence edge below the drain conduction edge: nothing to tunnel into."""
    m = 0.03
    cb = [BandProfile("C1", np.full(X_NM.size, 0.2), m)]
    vb = [BandProfile("HH1", np.full(X_NM.size, -0.2), m)]
    kT = kT_eV(300.0)
    assert energy_grid(cb, vb, 0.0, -0.3, kT) is None
    assert band_to_band(X_NM, cb, vb, 0.0, -0.3, kT).current_uA_per_um == 0.0


# ----------------------------------------------------------------- thermionic
@pytest.mark.parametrize("temperature_K", [200.0, 300.0, 400.0])
def test_thermionic_decade_per_ln10_kT(temperature_K):
    """Nondegenerate barrier (top >= 10 kT above both Fermi levels): raising the top by
    (ln 10) kT/q cuts the current by one decade, within 1 %; equivalently the fitted
    slope of log10 I against the barrier is -1/((ln 10) kT) within 1 % (Sze & Ng, 3rd
    ed., thermionic emission, from memory; the limit from scipy.constants)."""
    kT = kT_eV(temperature_K)
    step = thermionic_limit_mV(temperature_K) * 1e-3  # (ln 10) kT/q [eV]
    tops = 10 * kT + step * np.arange(6)
    currents = np.array([
        thermionic_current([BandProfile("C1", barrier(t, X_NM), 0.03)], "conduction",
                           0.0, -0.1, kT) for t in tops])
    assert np.all(currents > 0)
    np.testing.assert_allclose(currents[:-1] / currents[1:], 10.0, rtol=0.01)
    slope = np.polyfit(tops, np.log10(currents), 1)[0]
    assert slope == pytest.approx(-1.0 / step, rel=0.01)


def reference_thermionic(kind: str, extreme_eV: float, mass: float, efs: float, efd: float,
                         kT: float) -> float:
    """(2q/h) int dk/2pi int dE [f_s - f_d] over states above E_top + hbar^2k^2/2m
    (electrons) or below E_bottom - hbar^2k^2/2m (holes), scipy.integrate [A/m]."""
    a = HBAR2_2M0 / mass

    def occupancy(e):
        return fd(e, efs, kT) - fd(e, efd, kT)

    def inner(k):
        edge = extreme_eV + a * k * k if kind == "conduction" else extreme_eV - a * k * k
        lo, hi = (edge, edge + 60 * kT) if kind == "conduction" else (edge - 60 * kT, edge)
        mids = [p for p in (efs, efd) if lo < p < hi]
        return integrate.quad(occupancy, lo, hi, points=mids or None, limit=200,
                              epsabs=1e-14 * kT, epsrel=1e-9)[0]

    k_cut = math.sqrt((max(abs(efs - extreme_eV), abs(efd - extreme_eV)) + 60 * kT) / a)
    half = integrate.quad(inner, 0.0, k_cut, limit=200, epsrel=1e-7)[0]
    return LANDAUER_PER_WIDTH * 2 * half


@pytest.mark.parametrize(
    "kind, extreme, efd, temperature_K",
    [
        ("conduction", 0.15, -0.1, 300.0),   # nondegenerate, top 6 kT above efs
        ("conduction", -0.05, -0.2, 300.0),  # degenerate source (top below efs)
        ("conduction", 0.08, -0.3, 200.0),
        ("valence", -0.45, -0.1, 300.0),     # holes under the valence minimum
        ("valence", -0.25, -0.3, 400.0),     # degenerate drain holes
    ],
)
def test_thermionic_prefactor_against_double_integral(kind, extreme, efd, temperature_K):
    """The closed form (2q/h) kT sqrt(2 m kT)/(2 sqrt(pi) hbar) [F_1/2(eta_s) - F_1/2(eta_d)]
    against an independent numerical double integral over k and E of the Landauer
    expression with T = 1 above the barrier (Datta 1995 ch. 2, from memory): 1e-3."""
    kT = kT_eV(temperature_K)
    mass = 0.04
    x = X_NM
    edge = barrier(extreme, x) if kind == "conduction" else -barrier(-extreme, x)
    got = thermionic_current([BandProfile("b", edge, mass)], kind, 0.0, efd, kT)
    ref = reference_thermionic(kind, extreme, mass, 0.0, efd, kT)
    assert got > 0
    assert got == pytest.approx(ref, rel=1e-3)


def test_thermionic_zero_without_bias_and_additive_over_subbands():
    """f_s = f_d gives no current; two subbands carry the sum of their currents
    (Landauer sum over channels, Datta 1995 ch. 2, from memory)."""
    kT = kT_eV(300.0)
    one = BandProfile("C1", barrier(0.1, X_NM), 0.03)
    two = BandProfile("C2", barrier(0.2, X_NM), 0.05)
    assert thermionic_current([one, two], "conduction", 0.0, 0.0, kT) == 0.0
    both = thermionic_current([one, two], "conduction", 0.0, -0.2, kT)
    parts = (thermionic_current([one], "conduction", 0.0, -0.2, kT)
             + thermionic_current([two], "conduction", 0.0, -0.2, kT))
    assert both == pytest.approx(parts, rel=1e-12)


# ----------------------------------------------------------------- devices
@pytest.fixture(scope="module")
def simulator() -> Simulator:
    return Simulator()


#: Numerical margin on the thermionic limit: the point swing is a three-point
#: second-order difference of log10 Id on a 20-50 mV sweep, whose error near the
#: steepest point is O(dVg^2) and may fall either side, and the Poisson solution carries
#: its Newton tolerance. 0.5 % (0.3 mV/dec) covers both; a real sub-thermionic swing in a
#: thermionic device would break the bound by far more.
SS_MARGIN = 0.005

LONG_GATE = Design(gate_length_nm=60.0, body_thickness_nm=5.0, oxide_thickness_nm=2.0,
                   oxide="HfO2")


@pytest.mark.parametrize("temperature_K", [200.0, 300.0, 400.0])
@pytest.mark.parametrize("design", [Design(), LONG_GATE], ids=["default", "long-gate"])
def test_mosfet_twin_never_beats_the_thermionic_limit(simulator, design, temperature_K):
    """The n+/i/n+ twin conducts by thermionic emission only: SS_min >= (ln 10) kT/q
    (Sze & Ng 3rd ed., MOSFET subthreshold, from memory), minus the numerical margin."""
    twin = design.replace(temperature_K=temperature_K).twin()
    tc = simulator.transfer_curve(twin, np.linspace(-0.4, 0.2, 16), 0.3)
    ss_min = tc.metrics.ss_min_mV_per_dec.value
    assert ss_min is not None
    assert np.all(tc.btbt_uA_per_um == 0.0)  # n+ source: no valence states to tunnel from
    assert ss_min >= thermionic_limit_mV(temperature_K) * (1 - SS_MARGIN)


def test_long_gate_twin_is_close_to_the_thermionic_limit(simulator):
    """A long, well-tempered gate (60 nm, 5 nm body, 2 nm HfO2: double-gate natural length
    sqrt(eps_s t_s t_ox/(2 eps_ox)) ~ 1.9 nm, Suzuki et al. 1993, from memory; L/lambda ~ 30)
    controls the barrier almost one-to-one: SS_min within 10 % of (ln 10) kT/q at 300 K,
    Vd = 0.3 V (Sze & Ng 3rd ed., from memory)."""
    twin = LONG_GATE.twin()
    tc = simulator.transfer_curve(twin, np.linspace(-0.3, 0.1, 21), 0.3)
    limit = thermionic_limit_mV(300.0)
    ss_min = tc.metrics.ss_min_mV_per_dec.value
    assert ss_min is not None
    assert limit * (1 - SS_MARGIN) <= ss_min <= 1.10 * limit


def test_default_tunnel_fet_is_sub_thermionic(simulator):
    """The default design (p+ source tunnel FET) at 300 K, Vd = 0.3 V: SS_min below
    (ln 10) kT/q = 59.5 mV/dec (REFERENCES §6 [derived]) and a positive I60 (Vandenberghe
    et al., Appl. Phys. Lett. 102, 013510 (2013))."""
    d = Design()
    tc = simulator.transfer_curve(d, np.linspace(-0.2, 0.3, 21), 0.3)
    ss_min = tc.metrics.ss_min_mV_per_dec.value
    i60 = tc.metrics.i60_uA_per_um.value
    assert ss_min is not None and ss_min < thermionic_limit_mV(300.0)
    assert i60 is not None and i60 > 0.0
