"""WKB band-to-band tunnelling against closed-form uniform-field exponents.

Lab notebook: each check names its source beside the number. Reference exponents are
recomputed here from scipy.constants (exact SI h, e, m_e), never pasted.

Uniform field F: E_c(x) = E_g - qF x, E_v(x) = -qF x. An electron of energy E inside the
gap crosses the forbidden region over a length E_g/(qF) wherever that lies on the grid.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

from sub60.physics.tunneling import (
    WKB_MODELS,
    kappa_per_nm,
    wkb_exponent,
    wkb_exponent_transverse,
)


def production_kernel_k0(x, ec, ev, energies, mass, model="two-band"):
    """The production (compiled) kernel `wkb_exponent_transverse` at zero transverse
    wave-vector, row by row of (nk, nx) edges: (nk, nE) exponents, +inf (T = 0) for an
    energy with no path from the valence edge at the start to the conduction edge at
    the end."""
    ec2, ev2 = np.atleast_2d(ec), np.atleast_2d(ev)
    e = np.asarray(energies, float)
    k0 = np.zeros((1, e.size))
    return np.vstack([wkb_exponent_transverse(x, c, v, 0.0, 0.0, k0, e, mass, model)
                      for c, v in zip(ec2, ev2, strict=True)])


# InAs worked example, REFERENCES §1 [derived]: m* = 0.026 m0, Eg = 0.354 eV, F = 1 MV/cm.
M_INAS = 0.026
EG_INAS_EV = 0.354
F_V_PER_NM = 0.1  # 1 MV/cm = 1e8 V/m = 0.1 V/nm


def kane_exponent(mass_rel: float, eg_eV: float, field_V_per_m: float) -> float:
    """Kane's uniform-field exponent pi m^1/2 Eg^3/2 / (2 sqrt2 q hbar F), symmetric
    two-band model with band mass m (= 2 m_r). E. O. Kane, J. Appl. Phys. 32, 83 (1961);
    Sze & Ng, Physics of Semiconductor Devices, 3rd ed., 2007, tunnel-diode section
    (section from memory)."""
    m = mass_rel * sc.m_e
    eg = eg_eV * sc.e
    return math.pi * math.sqrt(m) * eg**1.5 / (2 * math.sqrt(2) * sc.e * sc.hbar * field_V_per_m)


def triangular_exponent(mass_rel: float, eg_eV: float, field_V_per_m: float) -> float:
    """One-band (parabolic) triangular-barrier exponent 4 sqrt(2m) Eg^3/2 / (3 q hbar F)
    (Fowler–Nordheim-type barrier; Sze & Ng 3rd ed., tunnel-diode section, from memory)."""
    m = mass_rel * sc.m_e
    eg = eg_eV * sc.e
    return 4 * math.sqrt(2 * m) * eg**1.5 / (3 * sc.e * sc.hbar * field_V_per_m)


def uniform_field(x_nm: np.ndarray, eg_eV: float = EG_INAS_EV,
                  f_V_per_nm: float = F_V_PER_NM) -> tuple[np.ndarray, np.ndarray]:
    """Linear band edges of a uniform field [eV]."""
    ev = -f_V_per_nm * x_nm
    return ev + eg_eV, ev


def coarse_nonuniform_grid(start_nm: float, stop_nm: float, seed: int = 7) -> np.ndarray:
    """A coarse, irregular grid: steps drawn in [0.1, 0.3] nm (mean 0.2 nm), fixed seed."""
    rng = np.random.default_rng(seed)
    steps = rng.uniform(0.1, 0.3, int(2 * (stop_nm - start_nm) / 0.2))
    x = start_nm + np.concatenate(([0.0], np.cumsum(steps)))
    return x[x <= stop_nm]


GRIDS = {
    "fine uniform 5 pm": np.linspace(-3.0, 9.0, 2401),
    "coarse non-uniform ~0.2 nm": coarse_nonuniform_grid(-3.0, 9.0),
}


# ----------------------------------------------------------------- uniform field
@pytest.mark.parametrize("grid", list(GRIDS), ids=list(GRIDS))
@pytest.mark.parametrize("engine", [wkb_exponent, production_kernel_k0], ids=["numpy", "compiled"])
def test_two_band_uniform_field_gives_kane_exponent(grid, engine):
    """Two-band kappa, equal masses: WKB = Kane's exponent (Kane 1961; Sze & Ng 3rd ed.)
    within 1 % of the exponent, for energies at several places in the gap."""
    x = GRIDS[grid]
    ec, ev = uniform_field(x)
    # Turning points of E = -0.4 .. +0.2 eV all fall inside x = -3 .. 9 nm.
    energies = np.array([-0.4, -0.25, -0.1, 0.0, 0.07, 0.2])
    got = np.ravel(engine(x, ec, ev, energies, M_INAS, "two-band"))
    ref = kane_exponent(M_INAS, EG_INAS_EV, F_V_PER_NM * 1e9)
    assert np.max(np.abs(got / ref - 1)) < 0.01
    # A uniform field looks the same from every energy in the gap: same exponent.
    assert np.ptp(got) / ref < 1e-3


@pytest.mark.parametrize("grid", list(GRIDS), ids=list(GRIDS))
@pytest.mark.parametrize("engine", [wkb_exponent, production_kernel_k0], ids=["numpy", "compiled"])
def test_one_band_uniform_field_gives_triangular_exponent(grid, engine):
    """One-band kappa: WKB = 4 sqrt(2m) Eg^3/2/(3 q hbar F) (triangular barrier, Sze & Ng
    3rd ed., from memory) within 1 %, same at every energy in the gap."""
    x = GRIDS[grid]
    ec, ev = uniform_field(x)
    energies = np.array([-0.4, -0.2, 0.0, 0.15])
    got = np.ravel(engine(x, ec, ev, energies, M_INAS, "one-band"))
    ref = triangular_exponent(M_INAS, EG_INAS_EV, F_V_PER_NM * 1e9)
    assert np.max(np.abs(got / ref - 1)) < 0.01
    assert np.ptp(got) / ref < 1e-3


def test_two_band_to_one_band_ratio_is_three_pi_over_sixteen():
    """Kane / triangular exponent = (pi/(2 sqrt2)) / (4 sqrt2/3) = 3 pi/16 exactly
    (REFERENCES §1, derived from the two closed forms); the WKB integrals keep it to 1 %."""
    x = GRIDS["fine uniform 5 pm"]
    ec, ev = uniform_field(x)
    two = wkb_exponent(x, ec, ev, [0.0], M_INAS, "two-band")[0]
    one = wkb_exponent(x, ec, ev, [0.0], M_INAS, "one-band")[0]
    closed = kane_exponent(M_INAS, 0.354, 1e8) / triangular_exponent(M_INAS, 0.354, 1e8)
    assert closed == pytest.approx(3 * math.pi / 16, rel=1e-12)
    assert two / one == pytest.approx(3 * math.pi / 16, rel=0.01)


def test_inas_worked_example_transmissions():
    """InAs, m* = 0.026, Eg = 0.354 eV, F = 1 MV/cm: Kane T ~ 0.2550, triangular T ~ 0.0983
    (REFERENCES §1 [derived]; recomputed from scipy.constants). The WKB transmissions
    exp(-exponent) match the closed forms within 1 % of the exponent; the closed forms
    themselves reproduce the quoted 4-digit values."""
    kane = kane_exponent(M_INAS, EG_INAS_EV, 1e8)
    tri = triangular_exponent(M_INAS, EG_INAS_EV, 1e8)
    assert math.exp(-kane) == pytest.approx(0.2550, abs=5e-5)
    assert math.exp(-tri) == pytest.approx(0.0983, abs=5e-5)
    x = GRIDS["fine uniform 5 pm"]
    ec, ev = uniform_field(x)
    t_two = math.exp(-production_kernel_k0(x, ec, ev, [0.0], M_INAS, "two-band")[0, 0])
    t_one = math.exp(-production_kernel_k0(x, ec, ev, [0.0], M_INAS, "one-band")[0, 0])
    assert abs(math.log(t_two) + kane) < 0.01 * kane
    assert abs(math.log(t_one) + tri) < 0.01 * tri


def test_exponent_scales_as_eg_three_halves_over_field():
    """Both closed forms scale as m^1/2 Eg^3/2 / F (Kane 1961): doubling F halves the WKB
    exponent, doubling m multiplies it by sqrt 2, 1 % each."""
    x = GRIDS["fine uniform 5 pm"]
    base = wkb_exponent(x, *uniform_field(x), [0.0], M_INAS)[0]
    double_f = wkb_exponent(x, *uniform_field(x, f_V_per_nm=0.2), [0.0], M_INAS)[0]
    double_m = wkb_exponent(x, *uniform_field(x), [0.0], 2 * M_INAS)[0]
    assert double_f / base == pytest.approx(0.5, rel=0.01)
    assert double_m / base == pytest.approx(math.sqrt(2), rel=0.01)


def test_energy_outside_the_gap_does_not_tunnel():
    """WKB: no forbidden region, no exponent (T = 1 is decided by the caller). An energy
    above every conduction edge or below every valence edge gives exactly 0."""
    x = np.linspace(0.0, 4.0, 41)
    ec, ev = uniform_field(x)  # ec in [-0.046, 0.354], ev in [-0.4, 0]
    out = wkb_exponent(x, ec, ev, [0.5, -0.5], M_INAS)
    assert np.all(out == 0.0)
    # the production kernel decides the connection itself: neither energy joins the
    # valence edge at the start (0 eV) to the conduction edge at the end (-0.046 eV),
    # so its transmission is 0 (exponent +inf)
    assert np.all(production_kernel_k0(x, ec, ev, [0.5, -0.5], M_INAS) == np.inf)


# ----------------------------------------------------------------- compiled vs reference
@st.composite
def random_profiles(draw):
    """Random band profiles: irregular x, positive local gap, 1-3 rows (transverse k)."""
    nx = draw(st.integers(2, 30))
    nk = draw(st.integers(1, 3))
    ne = draw(st.integers(1, 6))
    unit = st.floats(0.0, 1.0, allow_nan=False)
    steps = np.array(draw(st.lists(st.floats(0.01, 2.0), min_size=nx - 1, max_size=nx - 1)))
    x = np.concatenate(([0.0], np.cumsum(steps)))
    ev = np.array(draw(st.lists(st.lists(st.floats(-1.0, 1.0), min_size=nx, max_size=nx),
                                min_size=nk, max_size=nk)))
    gap = np.array(draw(st.lists(st.lists(st.floats(0.01, 1.5), min_size=nx, max_size=nx),
                                 min_size=nk, max_size=nk)))
    ec = ev + gap
    lo, hi = float(ev.min()) - 0.1, float(ec.max()) + 0.1
    energies = np.array([lo + (hi - lo) * draw(unit) for _ in range(ne)])
    mass = draw(st.floats(0.01, 1.0))
    model = draw(st.sampled_from(WKB_MODELS))
    return x, ec, ev, energies, mass, model


@settings(max_examples=300, deadline=None)
@given(random_profiles())
def test_compiled_kernel_matches_numpy_reference(case):
    """The production numba kernel (k = 0) against the numpy reference on random profiles:
    the same exponent to 1e-10 (relative, and absolute for exponents near 0) for every
    energy connecting the start's valence edge to the end's conduction edge, +inf for
    the others. The reference is the project's own plain-numpy implementation
    (regression equivalence, no outside source)."""
    x, ec, ev, energies, mass, model = case
    fast = production_kernel_k0(x, ec, ev, energies, mass, model)
    ref = wkb_exponent(x, ec, ev, energies, mass, model)
    assert fast.shape == ref.shape == (ec.shape[0], energies.size)
    connected = (energies[None, :] < ev[:, :1]) & (energies[None, :] > ec[:, -1:])
    np.testing.assert_allclose(fast[connected], ref[connected], rtol=1e-10, atol=1e-10)
    assert np.all(fast[~connected] == np.inf)


# ----------------------------------------------------------------- bad input
@pytest.mark.parametrize("engine", [wkb_exponent, production_kernel_k0], ids=["numpy", "compiled"])
@pytest.mark.parametrize("model", ["Kane", "three-band", ""])
def test_unknown_model_raises(engine, model):
    """An unknown tunnelling model is an error naming the models allowed."""
    x = np.linspace(0.0, 5.0, 11)
    ec, ev = uniform_field(x)
    with pytest.raises(ValueError, match="two-band"):
        engine(x, ec, ev, [0.0], M_INAS, model)
    with pytest.raises(ValueError, match="two-band"):
        kappa_per_nm(np.array([0.0]), np.array([0.3]), np.array([-0.1]), M_INAS, model)


@pytest.mark.parametrize("engine", [wkb_exponent, production_kernel_k0], ids=["numpy", "compiled"])
def test_unknown_model_raises_even_when_no_energy_is_in_the_gap(engine):
    """Validation must not depend on the data: a typo in the model name is an error even
    when no energy happens to lie inside the gap."""
    x = np.linspace(0.0, 5.0, 11)
    ec, ev = uniform_field(x)
    with pytest.raises(ValueError, match="two-band"):
        engine(x, ec, ev, [5.0], M_INAS, "Kane")


def test_transverse_kernel_matches_numpy_reference_per_energy():
    """One-band model: the production kernel (transverse k per energy, compiled) against
    the numpy reference `wkb_exponent` applied one energy at a time with the conduction
    edge raised by hbar^2 k^2/2m (for one parabolic band that shift is exact); agreement
    to 1e-10 relative."""
    rng = np.random.default_rng(3)
    x = np.cumsum(rng.uniform(0.1, 0.4, 120))
    ec = 0.6 - 0.5 * np.tanh((x - x.mean()) / 3.0) + 0.01 * rng.standard_normal(x.size)
    ev = ec - 0.5
    e = np.linspace(-0.3, 0.3, 17)
    k = rng.uniform(0.0, 0.4, (4, e.size))
    up, down = 0.038 / 0.026, 0.038 / 0.09
    got = wkb_exponent_transverse(x, ec, ev, up, down, k, e, 0.026, "one-band")
    for kk in range(k.shape[0]):
        for ie in range(e.size):
            ec_k, ev_k = ec + up * k[kk, ie] ** 2, ev - down * k[kk, ie] ** 2
            if e[ie] >= ev_k[0] or e[ie] <= ec_k[-1]:
                assert got[kk, ie] == np.inf
            else:
                ref = wkb_exponent(x, ec_k, ev_k, e[ie:ie + 1], 0.026, "one-band")[0]
                assert got[kk, ie] == pytest.approx(ref, rel=1e-10, abs=1e-12)


def test_two_band_transverse_penalty_in_a_uniform_field():
    """kappa_x^2 = kappa_0^2 + k^2 (two-band dispersion depends on |k|^2 only; Kane, J.
    Appl. Phys. 32, 83 (1961), transverse-energy factor — from memory). In a uniform field
    the exponent is then exactly Kane's plus pi hbar k^2 Eg^1/2 / (q F sqrt(2 m_t))
    (derived: int sqrt(a (c^2 - u^2)) du = pi sqrt(a) c^2 / 2). The rigid edge shift by
    hbar^2 k^2 / 2m_t used before gives a smaller penalty (half of it at midgap)."""
    m = 0.04
    x = np.linspace(-12.0, 12.0, 2401)
    ec, ev = EG_INAS_EV / 2 - F_V_PER_NM * x, -EG_INAS_EV / 2 - F_V_PER_NM * x
    h2m = sc.hbar**2 / (2 * sc.m_e * m) / sc.e * 1e18  # hbar^2/2m [eV nm^2]
    k = np.array([[0.0], [0.1], [0.2], [0.3]])  # 1/nm
    got = wkb_exponent_transverse(x, ec, ev, h2m, h2m, k, np.array([0.0]), m)[:, 0]
    f_si = F_V_PER_NM * 1e9
    penalty = (math.pi * sc.hbar * (k[:, 0] * 1e9) ** 2 * math.sqrt(EG_INAS_EV * sc.e)
               / (sc.e * f_si * math.sqrt(2 * m * sc.m_e)))
    want = kane_exponent(m, EG_INAS_EV, f_si) + penalty
    np.testing.assert_allclose(got, want, rtol=2e-4)
    # the former rigid shift of both edges: a smaller exponent at every k > 0
    rigid = np.array([wkb_exponent(x, ec + h2m * kk**2, ev - h2m * kk**2, [0.0], m)[0]
                      for kk in k[:, 0]])
    assert np.all((rigid - rigid[0])[1:] < 0.9 * penalty[1:])


@settings(max_examples=12, deadline=None)
@given(st.integers(0, 10_000))
def test_two_band_transverse_kernel_against_quad(seed):
    """The compiled two-band transverse kernel against scipy.integrate.quad of
    2 sqrt(max(kappa_0^2 + k^2, 0)) on the same piecewise-linear edges (independent
    quadrature, breakpoints at the nodes); 1e-3 relative (Gauss-Legendre with square-root
    turning points)."""
    from scipy import integrate

    from sub60.physics.constants import HBAR2_2M0_EV_NM2

    rng = np.random.default_rng(seed)
    x = np.cumsum(rng.uniform(0.05, 0.3, 150))
    ec = 0.5 - 0.45 * np.tanh((x - x.mean()) / 2.5)
    ev = ec - rng.uniform(0.3, 0.6)
    e = np.array([rng.uniform(ec[-1] + 0.05, ev[0] - 0.05)])
    m = rng.uniform(0.02, 0.08)
    k = rng.uniform(0.0, 0.3)
    got = wkb_exponent_transverse(x, ec, ev, 0.0, 0.0, np.array([[k]]), e, m)[0, 0]

    def kappa(xx: float) -> float:
        c = np.interp(xx, x, ec) - e[0]
        v = e[0] - np.interp(xx, x, ev)
        return math.sqrt(max(m / HBAR2_2M0_EV_NM2 * c * v / (c + v) + k * k, 0.0))

    ref = 2 * integrate.quad(kappa, x[0], x[-1], points=x[1:-1], limit=400,
                             epsabs=1e-10, epsrel=1e-10)[0]
    assert got == pytest.approx(ref, rel=1e-3)


@pytest.mark.parametrize("model", WKB_MODELS)
def test_plain_python_path_without_numba_equals_the_compiled_kernel_at_k_above_zero(
        monkeypatch, model):
    """Without numba the transverse exponent runs in plain Python (the per-node-shift
    reference with parabolic shifts); on a uniform field at k > 0 it gives the compiled
    kernel's exponent to 1e-10 (regression equivalence, no outside source)."""
    from sub60.physics import tunneling

    x = np.linspace(0.0, 12.0, 61)
    ec, ev = uniform_field(x)
    e = np.linspace(float(ec[-1]) + 0.02, float(ev[0]) - 0.02, 7)
    k = np.array([[0.0] * e.size, [0.3] * e.size, [0.8] * e.size])
    fast = wkb_exponent_transverse(x, ec, ev, 0.9, 1.1, k, e, 0.03, model)
    monkeypatch.setattr(tunneling, "_KERNEL", False)  # as when numba is missing
    slow = wkb_exponent_transverse(x, ec, ev, 0.9, 1.1, k, e, 0.03, model)
    finite = np.isfinite(fast)
    assert finite.sum() > e.size and np.array_equal(finite, np.isfinite(slow))
    np.testing.assert_allclose(slow[finite], fast[finite], rtol=1e-10)


@st.composite
def random_transverse_cases(draw):
    """Random two-band cases for the compiled kernels: irregular x, positive local gap,
    a transverse k per (row, energy) including k = 0, energies across and beyond the gap."""
    nx = draw(st.integers(2, 40))
    nk = draw(st.integers(1, 4))
    ne = draw(st.integers(1, 8))
    steps = np.array(draw(st.lists(st.floats(0.01, 2.0), min_size=nx - 1, max_size=nx - 1)))
    x = np.concatenate(([0.0], np.cumsum(steps)))
    ev = np.array(draw(st.lists(st.floats(-1.0, 1.0), min_size=nx, max_size=nx)))
    ec = ev + np.array(draw(st.lists(st.floats(0.01, 1.5), min_size=nx, max_size=nx)))
    lo, hi = float(ev.min()) - 0.2, float(ec.max()) + 0.2
    e = np.array(draw(st.lists(st.floats(lo, hi), min_size=ne, max_size=ne)))
    k = np.array(draw(st.lists(st.lists(st.floats(0.0, 1.5), min_size=ne, max_size=ne),
                               min_size=nk, max_size=nk)))
    k[0] = 0.0
    mass = np.array(draw(st.lists(st.floats(0.01, 1.0), min_size=nx - 1, max_size=nx - 1)))
    a, b = draw(st.floats(0.0, 2.0)), draw(st.floats(0.0, 2.0))
    return x, ec, ev, e, k, mass, a, b


@settings(max_examples=200, deadline=None)
@given(random_transverse_cases())
def test_compiled_kernels_skip_only_segments_that_add_exactly_zero(case):
    """The compiled two-band kernels skip segments lying deeper than q inside a band (no
    real kappa anywhere on them); the exponents equal, bit for bit, the plain-Python
    references that integrate every segment (regression equivalence, no outside source:
    the skipped segments' integral is exactly 0.0)."""
    from sub60.physics import tunneling
    from sub60.physics._wkb_compiled import (
        wkb_transverse_kernel,
        wkb_transverse_kernel_varying,
    )

    x, ec, ev, e, k, mass, a, b = case
    gl = (tunneling._GL_X, tunneling._GL_W)
    fast = wkb_transverse_kernel(x, ec, ev, a, b, k, e, float(mass[0]), True, *gl)
    ref = tunneling.wkb_exponent_shifts_reference(x, ec, ev, a * k**2, b * k**2, k, e,
                                                  float(mass[0]), "two-band")
    assert np.array_equal(fast, ref)
    fast_v = wkb_transverse_kernel_varying(x, ec, ev, a * k**2, b * k**2, k, e, mass, True, *gl)
    ref_v = tunneling.wkb_exponent_varying_reference(x, ec, ev, a, b, k, e, mass, "two-band")
    assert np.array_equal(fast_v, ref_v)


@pytest.mark.parametrize("mass", [0.02, 0.1, 0.4])
def test_compiled_kernels_skip_nothing_near_the_edges_on_a_fine_grid(mass):
    """The same equality on a fine grid (0.02 nm), where many whole segments lie just
    inside a band, within q of its edge, where kappa is still real at k > 0: a skip
    test looser than the exact one would change these exponents."""
    from sub60.physics import tunneling
    from sub60.physics._wkb_compiled import (
        wkb_transverse_kernel,
        wkb_transverse_kernel_varying,
    )

    x = np.linspace(0.0, 12.0, 601)
    ec, ev = uniform_field(x)
    e = np.linspace(float(ec[-1]) + 0.01, float(ev[0]) - 0.01, 9)
    k = np.array([np.zeros(e.size), np.full(e.size, 0.4), np.full(e.size, 1.2)])
    gl = (tunneling._GL_X, tunneling._GL_W)
    fast = wkb_transverse_kernel(x, ec, ev, 0.5, 0.7, k, e, mass, True, *gl)
    ref = tunneling.wkb_exponent_shifts_reference(x, ec, ev, 0.5 * k**2, 0.7 * k**2, k, e,
                                                  mass, "two-band")
    assert np.isfinite(fast[1:]).sum() >= 5 and np.array_equal(fast, ref)
    masses = np.full(x.size - 1, mass)
    fast_v = wkb_transverse_kernel_varying(x, ec, ev, 0.5 * k**2, 0.7 * k**2, k, e, masses,
                                           True, *gl)
    ref_v = tunneling.wkb_exponent_varying_reference(x, ec, ev, 0.5, 0.7, k, e, masses,
                                                     "two-band")
    assert np.array_equal(fast_v, ref_v)
