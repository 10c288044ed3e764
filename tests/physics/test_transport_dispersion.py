"""Transport with a tabulated (non-parabolic) in-plane valence dispersion.

`transport.InPlaneDispersion` replaces the parabolic transverse edge shift hbar^2 k^2/2m_v
of the source valence subband by a table |E(k) - E(0)| (the coupled 4x4 k.p hole
subbands of `physics.hole_subbands` with the 2D-subband charge). Checks:
- a table of a parabolic band gives the parabolic results (linear interpolation in k^2
  is exact for hbar^2 k^2/2m), and the per-node kernel given the parabolic shifts
  returns the parabolic kernel's exponents bit for bit (same arithmetic, common
  practice, no source);
- the transverse integral (1/pi) int_0^k_max T(E, k) dk with k_max(E) from a tabulated
  Kane non-parabolic band E(1 + alpha E) = hbar^2 k^2 / 2m (E. O. Kane, J. Phys. Chem.
  Solids 1, 249 (1957) — from memory) against scipy.integrate.quad with k_max from the
  closed-form inverse;
- the current of a uniform-field junction with the coupled HH1 dispersion of the default
  body against the parabolic one: equal within 1 % where T(E, k) falls off in k well
  before either contact's k range ends (weak field: Kane's transverse factor
  exp(-pi hbar k^2 Eg^1/2 / (q F sqrt(2 m_t))), Kane, J. Appl. Phys. 32, 83 (1961) —
  from memory), and never smaller with the heavier (coupled) band, which offers more
  states at every depth (Landauer counting, Datta 1995 ch. 2 — from memory);
- charge and transport count the same hole states: the sheet density of the transport
  table, 2 int k dk/(2 pi) f (k-space density 1/(2 pi)^2, two branches; Davies, The
  Physics of Low-dimensional Semiconductors, 1998, ch. 3 — from memory), by
  scipy.integrate.quad, equals the charge's eq. (2) of `physics.hole_subbands`.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy import integrate

from sub60.physics.design import Design
from sub60.physics.simulate import Simulator, _transport_profiles
from sub60.physics.subbands import region_subbands
from sub60.physics.transport import (
    BandProfile,
    InPlaneDispersion,
    band_to_band,
    pair_transmission,
)
from sub60.physics.tunneling import wkb_exponent_shifts_reference, wkb_exponent_transverse

HBAR2_2M0 = sc.hbar**2 / (2 * sc.m_e) / sc.e * 1e18  # [eV nm^2], from scipy.constants
KT = sc.k * 300.0 / sc.e
X_NM = np.linspace(0.0, 10.0, 101)


def junction(field: float, eg: float = 0.354, length: float = 10.0):
    """Uniform-field p+/n+ junction: source valence edge 0 eV, drain conduction edge
    eg - field * length [eV]."""
    x = np.linspace(0.0, length, 201)
    return x, eg - field * x, -field * x


def test_parabolic_shifts_through_the_node_kernel_are_bit_identical():
    rng = np.random.default_rng(7)
    x = np.cumsum(rng.uniform(0.1, 0.4, 90))
    ec = 0.6 - 0.5 * np.tanh((x - x.mean()) / 3.0)
    ev = ec - 0.45
    e = np.linspace(ec[-1] + 0.02, ev[0] - 0.02, 23)
    k = rng.uniform(0.0, 0.5, (5, e.size))
    a, b = HBAR2_2M0 / 0.038, HBAR2_2M0 / 0.035
    for model in ("two-band", "one-band"):
        plain = wkb_exponent_transverse(x, ec, ev, a, b, k, e, 0.036, model)
        shifted = wkb_exponent_transverse(x, ec, ev, a, b, k, e, 0.036, model,
                                          down_shift_eV=b * k**2)
        np.testing.assert_array_equal(shifted, plain)
        # and the per-segment-mass (heterojunction) kernel with the same shifts
        seg = np.full(x.size - 1, 0.036)
        np.testing.assert_array_equal(
            wkb_exponent_transverse(x, ec, ev, a, b, k, e, seg, model, down_shift_eV=b * k**2),
            wkb_exponent_transverse(x, ec, ev, a, b, k, e, seg, model))


@pytest.mark.parametrize("model", ["two-band", "one-band"])
def test_node_kernel_matches_its_plain_python_reference(model):
    """A non-parabolic valence shift (not b k^2): compiled kernel against the reference
    loop, 1e-12 relative."""
    rng = np.random.default_rng(11)
    x = np.cumsum(rng.uniform(0.1, 0.4, 70))
    ec = 0.6 - 0.5 * np.tanh((x - x.mean()) / 3.0)
    ev = ec - 0.45
    e = np.linspace(ec[-1] + 0.01, ev[0] - 0.01, 13)
    k = rng.uniform(0.0, 0.8, (4, e.size))
    up = HBAR2_2M0 / 0.038 * k**2
    down = 0.2 * np.tanh(5.0 * k**2)  # flattening at large k, like a coupled HH1
    got = wkb_exponent_transverse(x, ec, ev, HBAR2_2M0 / 0.038, 0.0, k, e, 0.036, model,
                                  down_shift_eV=down)
    ref = wkb_exponent_shifts_reference(x, ec, ev, up, down, k, e, 0.036, model)
    fin = np.isfinite(ref)
    assert np.array_equal(fin, np.isfinite(got))
    np.testing.assert_allclose(got[fin], ref[fin], rtol=1e-12)


@pytest.mark.parametrize("model", ["two-band", "one-band", "two-band-exact"])
def test_parabolic_table_reproduces_the_parabolic_current(model):
    x, ec, ev = junction(0.1)
    m_v = 0.035
    cb = [BandProfile("C1", ec, 0.038)]
    plain = band_to_band(x, cb, [BandProfile("HH1", ev, m_v)], 0.0, -0.3, KT, model)
    table = band_to_band(x, cb, [BandProfile("HH1", ev, m_v,
                                             dispersion=InPlaneDispersion.parabolic(m_v))],
                         0.0, -0.3, KT, model)
    assert plain.current_uA_per_um > 0
    assert table.current_uA_per_um == pytest.approx(plain.current_uA_per_um, rel=1e-9)


def test_table_inverse_and_monotone_envelope():
    """`k2_at` inverts `shift`; a branch that first moves into the gap (negative shift)
    gets no states there (its running maximum, clipped at 0)."""
    q = np.linspace(0.0, 4.0, 41)
    d = InPlaneDispersion(q, -0.02 * q + 0.05 * q**2)
    assert np.all(np.diff(d.shift_eV) >= 0) and d.shift_eV[0] == 0.0
    k2 = np.linspace(0.5, 6.0, 23)  # beyond the table: the linear continuation
    np.testing.assert_allclose(d.k2_at(d.shift(k2)), k2, rtol=1e-12)
    assert d.k2_at(np.array([-0.1, 0.0]))[0] == 0.0


@pytest.mark.parametrize("energy", [-0.12, -0.25, -0.4, -0.55])
def test_transverse_integral_against_quad_on_a_tabulated_kane_band(energy):
    """(1/pi) int_0^k_max T(E, k) dk of `pair_transmission` with the valence band
    tabulated from Kane's non-parabolic E(1 + alpha E) = hbar^2 k^2/2m (401 points)
    against scipy quad of the same T(E, k) (sub60's WKB exponent at each k) up to the
    closed-form k_max(E) = min(k_v, k_c); 1e-4 relative (6 Gauss-Legendre nodes)."""
    x, ec, ev = junction(0.1)
    m_v, alpha, m_c = 0.035, 1.5, 0.038
    q = np.linspace(0.0, 6.25, 401)
    a_v = HBAR2_2M0 / m_v
    shift = (-1.0 + np.sqrt(1.0 + 4.0 * alpha * a_v * q)) / (2.0 * alpha)  # E(k) closed form
    vb = BandProfile("HH1", ev, m_v, dispersion=InPlaneDispersion(q, shift))
    cb = BandProfile("C1", ec, m_c)
    m_t = 2 * m_c * m_v / (m_c + m_v)
    tk, _ = pair_transmission(x, cb, vb, np.array([energy]), "two-band")
    depth = ev[0] - energy
    k_v = math.sqrt(depth * (1.0 + alpha * depth) / a_v)
    k_c = math.sqrt((energy - ec[-1]) / (HBAR2_2M0 / m_c))
    k_max = min(k_v, k_c)

    def t(k: float) -> float:
        kk = np.array([[k]])
        down = np.array([[np.interp(k * k, q, shift)]])
        expo = wkb_exponent_transverse(x, ec, ev, HBAR2_2M0 / m_c, a_v, kk, np.array([energy]),
                                       m_t, down_shift_eV=down)[0, 0]
        return math.exp(-expo) if np.isfinite(expo) else 0.0

    ref, _ = integrate.quad(t, 0.0, k_max * (1 - 1e-9), epsabs=0.0, epsrel=1e-8, limit=200)
    assert tk[0] == pytest.approx(ref / math.pi * 1e9, rel=1e-4)


@pytest.fixture(scope="module")
def coupled_hh1() -> InPlaneDispersion:
    from sub60.physics.hole_subbands import inplane_dispersions

    return inplane_dispersions(Design(charge_model="subbands"))["HH1"]


def test_coupled_hh1_is_heavier_than_the_band_edge_mass(coupled_hh1):
    """The coupled HH1 lies above the parabolic 0.035 m0 band (fewer meV per k^2): more
    states at each depth (`physics.hole_subbands`: DOS mass 0.05-0.9 m0)."""
    k2 = np.linspace(0.01, 1.0, 50)
    assert np.all(coupled_hh1.shift(k2) < HBAR2_2M0 / 0.035 * k2)


@pytest.mark.parametrize("field", [0.02, 0.03])
def test_weak_field_current_agrees_with_the_parabolic_band(coupled_hh1, field):
    """Weak field, long path: T(E, k) falls off in k (Kane's transverse factor) long
    before either contact's k range closes, so the heavier coupled band changes the
    current by < 1 % (measured +0.3 % and +0.9 % at 0.02 and 0.03 V/nm, Vd = 0.3 V);
    it never removes current. (At 0.01 V/nm the 6 Gauss-Legendre k nodes spread over
    the coupled band's wider k range miss 2 % of the narrow fall-off; on the default
    design 6 against 40 nodes differ by < 0.2 %.)"""
    x, ec, ev = junction(field, length=0.9 / field)
    cb = [BandProfile("C1", ec, 0.038)]
    m_v = 0.035
    plain = band_to_band(x, cb, [BandProfile("HH1", ev, m_v)], 0.0, -0.3, KT)
    coupled = band_to_band(x, cb, [BandProfile("HH1", ev, m_v, dispersion=coupled_hh1)],
                           0.0, -0.3, KT)
    assert plain.current_uA_per_um > 0
    assert coupled.current_uA_per_um == pytest.approx(plain.current_uA_per_um, rel=0.01)
    assert coupled.current_uA_per_um >= plain.current_uA_per_um * (1 - 1e-6)


def test_strong_field_current_is_larger_with_the_coupled_band(coupled_hh1):
    """Strong field (short path, slow fall-off in k): the wider k range of the heavier
    band adds current (measured +31 % at 0.5 V/nm, Vd = 0.3 V)."""
    x, ec, ev = junction(0.5, length=1.8)
    cb = [BandProfile("C1", ec, 0.038)]
    plain = band_to_band(x, cb, [BandProfile("HH1", ev, 0.035)], 0.0, -0.3, KT)
    coupled = band_to_band(x, cb, [BandProfile("HH1", ev, 0.035, dispersion=coupled_hh1)],
                           0.0, -0.3, KT)
    assert coupled.current_uA_per_um > 1.2 * plain.current_uA_per_um


def test_transport_table_holds_the_charge_states():
    """Sheet density 2 int k dk/(2 pi) f(shift(k^2) - F) of the transport table of HH1
    (scipy quad in q = k^2) against the charge's eq. (2) (`HoleDispersion.sheet_cm2`)
    at Fermi levels from non-degenerate to 4 kT inside the subband: within 2 % (the
    charge sums the two branches, transport takes their mean: equal in the symmetric
    double gate; the charge interpolates monotonically in q, transport linearly)."""
    from sub60.physics.hole_subbands import hole_dos_ratio, inplane_dispersions

    d = Design(charge_model="subbands")
    table = inplane_dispersions(d)["HH1"]
    disp = hole_dos_ratio(d).dispersion
    for eta in (-4.0, 0.0, 2.0, 4.0):
        fermi = eta * KT  # hole Fermi level above the edge, into the band [eV]
        want = disp.sheet_cm2(0, np.array([disp.edge_eV[0] + fermi]), KT)[0][0]

        def f(qq: float, fermi: float = fermi) -> float:
            return 1.0 / (1.0 + math.exp((float(table.shift(qq)) - fermi) / KT))

        qmax = float(table.k2_at(fermi + 40 * KT))
        got, _ = integrate.quad(f, 0.0, qmax, limit=400, epsrel=1e-8)
        got = 2.0 * got / (4.0 * math.pi) * 1e14  # 2 branches, dk k/(2 pi) = dq/(4 pi); cm^-2
        assert got == pytest.approx(want, rel=0.02), eta


def test_only_the_subband_charge_gives_transport_the_coupled_dispersion():
    """charge_model "subbands": the valence profiles carry the coupled dispersions the
    charge uses; "semiclassical": none (parabolic, the former results bit for bit)."""
    for model, has in (("subbands", True), ("semiclassical", False)):
        bp = Simulator().solve_bias(Design(charge_model=model), 0.3, 0.3)
        _, _, vprof = _transport_profiles(bp.electrostatics, region_subbands(bp.design),
                                          bp.conduction_eV, bp.valence_eV)
        assert all((p.dispersion is not None) == has for p in vprof)
