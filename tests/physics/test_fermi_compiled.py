"""The compiled Fermi–Dirac and carrier-density kernels (`sub60.physics._fermi_compiled`)
and the early-stopping charge-neutral bisection (`sub60.physics.poisson`).

References: the numpy paths they replace (`statistics.fermi_half_and_minus_half`,
`BandParameters.densities_reference`, the 80-step bisection written out below), and for
the integrals themselves F_j(eta) = -Li_{j+1}(-exp(eta)) by mpmath's polylog (NIST DLMF
§25.12), as in tests/physics/test_statistics.py.
"""

from __future__ import annotations

import mpmath
import numpy as np
import pytest

from sub60.physics import poisson
from sub60.physics._fermi_compiled import densities_compiled, fermi_half_and_minus_half_compiled
from sub60.physics.design import Design
from sub60.physics.electrostatics import solve_electrostatics
from sub60.physics.poisson import BandParameters, neutral_potential, solve_poisson
from sub60.physics.statistics import fermi_half_and_minus_half
from sub60.physics.structure import build_frame, initial_guess, problem_at_bias

#: the contract: kernel and numpy path agree to round-off [relative]; the kernels do the
#: same operations and use numpy's exp, so the tests below also find them bit-identical
ROUND_OFF = 1e-13


def _eta_values() -> np.ndarray:
    rng = np.random.default_rng(7)
    edges = [-40.0, 25.0, np.nextafter(-40.0, -41.0), np.nextafter(-40.0, 0.0),
             np.nextafter(25.0, 0.0), np.nextafter(25.0, 26.0), 0.0, -745.0, 709.0]
    return np.concatenate([np.linspace(-800.0, 1e4, 20001), rng.uniform(-45.0, 30.0, 20000),
                           np.linspace(-41.0, 26.0, 6701), edges, [np.nan, -np.inf]])


def _assert_round_off(reference: np.ndarray, value: np.ndarray) -> None:
    assert value.shape == reference.shape
    assert np.array_equal(np.isnan(reference), np.isnan(value))
    assert np.array_equal(reference == 0.0, value == 0.0)
    assert np.array_equal(reference, value, equal_nan=True)  # same operations, numpy's exp
    ok = np.isfinite(reference) & (reference != 0.0)
    assert np.all(np.isfinite(value[ok]))
    rel = np.abs(value[ok] - reference[ok]) / np.abs(reference[ok])
    assert rel.max() <= ROUND_OFF, rel.max()


def test_pair_kernel_matches_the_numpy_path():
    """F_1/2, F_-1/2 on eta in [-800, 1e4], the table edges -40 and 25 and NaN: the kernel
    equals the numpy path to round-off (reference: `fermi_half_and_minus_half`)."""
    eta = _eta_values()
    half, minus_half = fermi_half_and_minus_half(eta)
    k_half, k_minus_half = fermi_half_and_minus_half_compiled(eta)
    _assert_round_off(half, k_half)
    _assert_round_off(minus_half, k_minus_half)
    grid = eta.reshape(-1)[: 3 * 1000].reshape(3, 1000)  # shape kept
    assert fermi_half_and_minus_half_compiled(grid)[0].shape == (3, 1000)


@pytest.mark.parametrize("eta", [-60.0, -40.0, -12.5, -1.0, 0.0, 0.3, 4.7, 18.0, 25.0, 40.0, 300.0])
def test_pair_kernel_against_mpmath_polylog(eta):
    """Kernel values vs -Li_{j+1}(-e^eta) by mpmath at 40 digits (DLMF §25.12): <= 1e-8."""
    half, minus_half = fermi_half_and_minus_half_compiled(np.array([eta]))
    with mpmath.workdps(40):
        z = -mpmath.exp(mpmath.mpf(eta))
        ref_half = float(mpmath.re(-mpmath.polylog(1.5, z)))
        ref_minus_half = float(mpmath.re(-mpmath.polylog(0.5, z)))
    assert half[0] == pytest.approx(ref_half, rel=1e-8)
    assert minus_half[0] == pytest.approx(ref_minus_half, rel=1e-8)


@pytest.fixture(scope="module")
def default_solution():
    design = Design()
    frame = build_frame(design)
    problem = problem_at_bias(frame, 0.2, 0.3)
    return frame, problem, solve_electrostatics(design, 0.2, 0.3)


def _assert_densities_round_off(reference, value) -> None:
    for r, v in zip(reference, value, strict=True):
        _assert_round_off(np.asarray(r), np.asarray(v))


def test_densities_kernel_matches_numpy_on_a_solved_device(default_solution):
    """n, p, dn/dpsi, dp/dpsi of the default design at its solved potential (the Newton
    call's shapes: psi (nx, ny), quasi-Fermi levels (nx, 1)) and on a charge-neutral
    column (all (nx,)): kernel == numpy path to round-off."""
    frame, problem, es = default_solution
    bands = problem.bands
    assert not bands.varies and bands.interface is None
    psi = es.psi_V
    args = (psi, es.efn_eV[:, None], es.efp_eV[:, None])
    _assert_densities_round_off(bands.densities_reference(*args), bands.densities(*args))
    column = psi[:, psi.shape[1] // 2]
    args = (column, es.efn_eV, es.efp_eV)
    _assert_densities_round_off(bands.densities_reference(*args), bands.densities(*args))
    # deep accumulation / depletion: every branch of the integrals is visited
    wide = np.linspace(-30.0, 30.0, 4001).reshape(1, -1)
    args = (wide, np.zeros((1, 1)), np.zeros((1, 1)))
    _assert_densities_round_off(bands.densities_reference(*args), bands.densities(*args))


def test_densities_of_numbers_are_numbers():
    """0-d input gives floats, as the numpy path does."""
    bands = BandParameters(4.05, 1.12, 2.8e19, 1.04e19, 0.02585)
    out = bands.densities(0.3, 0.0, -0.1)
    ref = bands.densities_reference(0.3, 0.0, -0.1)
    assert all(isinstance(v, float) for v in out)
    np.testing.assert_allclose(out, ref, rtol=ROUND_OFF)


def test_arrays_along_x_and_interfaces_take_the_numpy_path():
    """A heterojunction (parameters along x) and an interface node are not compiled:
    `densities` is the numpy path bit for bit; more than two dimensions fall back too."""
    chi = np.array([4.05, 4.05, 4.0, 4.0])
    hetero = BandParameters(chi, 1.12, 2.8e19, 1.04e19, 0.02585)
    psi = np.linspace(-0.5, 0.5, 12).reshape(4, 3)
    efn, efp = np.zeros((4, 1)), np.full((4, 1), -0.1)
    for r, v in zip(hetero.densities_reference(psi, efn, efp), hetero.densities(psi, efn, efp),
                    strict=True):
        assert np.array_equal(r, v)
    scalar = BandParameters(4.05, 1.12, 2.8e19, 1.04e19, 0.02585)
    with_interface = BandParameters(chi, 1.12, 2.8e19, 1.04e19, 0.02585,
                                    interface=(2, 0.5, scalar))
    for r, v in zip(with_interface.densities_reference(psi, efn, efp),
                    with_interface.densities(psi, efn, efp), strict=True):
        assert np.array_equal(r, v)
    assert densities_compiled(4.05, 1.12, 2.8e19, 1.04e19, 0.02585, 0.0, 0.0,
                              np.zeros((2, 2, 2)), 0.0, 0.0) is None


def test_newton_solution_with_the_kernel_matches_the_numpy_path(default_solution, monkeypatch):
    """The default design's Poisson problem solved with the kernel and with the numpy
    densities: the potentials agree far below the Newton tolerance (1e-8 V)."""
    frame, problem, _ = default_solution
    start = initial_guess(frame, problem)
    fast = solve_poisson(problem, start, frame.operator)
    monkeypatch.setattr(poisson, "_compiled_densities", lambda *args: None)
    slow = solve_poisson(problem, start, frame.operator)
    assert np.max(np.abs(fast.psi_V - slow.psi_V)) < 1e-10
    np.testing.assert_allclose(fast.n_cm3, slow.n_cm3, rtol=1e-8, atol=1e-30)


class _Counting:
    """A charge model that counts its `densities` calls."""

    def __init__(self, bands):
        self.bands = bands
        self.calls = 0
        self.kT_eV = bands.kT_eV

    def densities(self, psi, efn, efp):
        self.calls += 1
        return self.bands.densities(psi, efn, efp)


def _bisect_80_steps(bands, net, efn, efp, lo, hi) -> np.ndarray:
    """The bisection as it was: always 80 halvings."""
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        n, p, _, _ = bands.densities(mid, efn, efp)
        positive = (p - n + net) > 0
        lo = np.where(positive, mid, lo)
        hi = np.where(positive, hi, mid)
    return 0.5 * (lo + hi)


@pytest.mark.parametrize("charge_model", ["semiclassical", "subbands"])
def test_early_stopping_bisection_is_bit_identical_to_80_steps(charge_model):
    """Neutral potentials of the default design's doping (and of a column with NaN and
    infinite brackets): the early-stopping bisection returns the 80-step result bit for
    bit, with fewer evaluations."""
    frame = build_frame(Design(charge_model=charge_model))
    problem = problem_at_bias(frame, 0.1, 0.3)
    bands = frame.charge_bands
    net = frame.donors_cm3 - frame.acceptors_cm3
    efn = np.broadcast_to(problem.efn_eV, net.shape)
    efp = np.broadcast_to(problem.efp_eV, net.shape)
    if hasattr(bands, "bracket_eV"):
        lo, hi = bands.bracket_eV(net, efn, efp)
    else:
        lo, hi = np.full(net.shape, -8.0), np.full(net.shape, 4.0)
    counting = _Counting(bands)
    fast = poisson._bisect_neutral(counting, net, efn, efp, lo, hi)
    slow = _bisect_80_steps(bands, net, efn, efp, lo, hi)
    assert np.array_equal(fast, slow)
    assert 0 < counting.calls < 80
    if not hasattr(bands, "bracket_eV"):
        assert np.array_equal(neutral_potential(bands, net, problem.efn_eV, problem.efp_eV),
                              _reference_neutral(bands, net, problem.efn_eV, problem.efp_eV))
        lo2, hi2 = lo.copy(), hi.copy()
        lo2[:3], hi2[:3] = np.nan, [np.inf, np.nan, np.inf]
        lo2[2] = -np.inf
        with np.errstate(invalid="ignore"):  # -inf + inf in the midpoint
            fast = poisson._bisect_neutral(bands, net, efn, efp, lo2, hi2)
            slow = _bisect_80_steps(bands, net, efn, efp, lo2, hi2)
        assert np.array_equal(fast, slow, equal_nan=True)


def _reference_neutral(bands, net, efn_eV, efp_eV):
    """`neutral_potential` with the 80-step bisection (its bracket recomputed as there)."""
    original = poisson._bisect_neutral
    try:
        poisson._bisect_neutral = _bisect_80_steps
        return poisson.neutral_potential(bands, net, efn_eV, efp_eV)
    finally:
        poisson._bisect_neutral = original
