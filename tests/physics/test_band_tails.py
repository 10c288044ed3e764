"""Exponential (Urbach) band tails in the band-to-band current.

Lab notebook: the tail kernel is a probability density with the mean of a sum of two
exponential variables; the kernel-weighted integral of a piecewise-exponential current
against mpmath; on the default tunnel FET, SS_min with a dominating tail against the
tail limit ln(10) E0 / (q eta) (derived in `physics.band_tails`, eq. (1); the swing
versus band-edge decay E0 of III-V tunnel FETs: Memisevic et al., IEEE EDL 38, 1661
(2017)); knobs off leave the ideal result bit for bit.
"""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest
from scipy.integrate import quad

from sub60.physics.band_tails import convolve_with_tails, tail_kernel, tail_survival
from sub60.physics.design import Design
from sub60.physics.simulate import Simulator


@pytest.mark.parametrize(("e0s", "e0c"), [(0.0, 0.02), (0.03, 0.0), (0.015, 0.04), (0.025, 0.025)])
def test_kernel_is_the_density_of_a_sum_of_exponentials(e0s: float, e0c: float) -> None:
    """Probability density of eps_s + eps_c, independent exponentials of means E0s, E0c
    (hypoexponential distribution; common practice, no source): integral 1, mean
    E0s + E0c, survival function consistent with the density (scipy quad)."""
    top = 60 * max(e0s, e0c)
    total, _ = quad(lambda e: float(tail_kernel(e, e0s, e0c)), 0, top, limit=200)
    mean, _ = quad(lambda e: e * float(tail_kernel(e, e0s, e0c)), 0, top, limit=200)
    assert total == pytest.approx(1.0, rel=1e-8)
    assert mean == pytest.approx(e0s + e0c, rel=1e-8)
    for eps in (0.01, 0.05, 0.1):
        rest, _ = quad(lambda e: float(tail_kernel(e, e0s, e0c)), eps, top, limit=200)
        assert tail_survival(eps, e0s, e0c) == pytest.approx(rest, rel=1e-7, abs=1e-14)


def test_convolution_of_a_piecewise_exponential_current_against_mpmath() -> None:
    """I(eps) = exp(eps/s) up to a knee eps_k, constant beyond: the integral of eq. (2)
    (a single tail) recomputed with mpmath quad; log-linear interpolation integrates it
    exactly when the knee is a node (tolerance from the fine trapezoid)."""
    s, e0, knee = 0.008, 0.02, 0.12
    nodes = np.array([0.0, 0.04, 0.08, knee, 0.2, 0.3])
    cur = np.exp(np.minimum(nodes, knee) / s)
    got = convolve_with_tails(nodes, cur, 0.0, e0)
    mp = mpmath.mpf
    ref = mpmath.quad(lambda e: mpmath.exp(-e / mp(e0)) / mp(e0)
                      * mpmath.exp(min(e, mp(knee)) / mp(s)), [0, knee, 1, mpmath.inf])
    assert got == pytest.approx(float(ref), rel=2e-3)


def _channel_edge(bp) -> float:
    d, x = bp.design, bp.x_nm
    ch = (x >= d.gate_start_nm) & (x <= d.gate_end_nm)
    return float(bp.subband_ec_eV[ch].min())


def test_tail_dominated_swing_approaches_the_tail_limit() -> None:
    """Default InAs tunnel FET, V_d = 0.3 V, channel conduction tail E0 = 15, 20, 30 meV
    (well above the ideal curve's e-folding energy, ~8 meV, and below that of its
    on-state rise, ~60 meV, where eq. (1) applies): SS_min / (ln(10) E0 / (q eta)) within
    15 %, eta = -dE_c/d(q V_g) of the channel's lowest subband from the ideal bias points
    at the gate voltage of SS_min (tail limit: derived, `physics.band_tails` eq. (1)).
    Measured 0.90-1.02: besides moving the channel edge the gate thins the tunnel
    barrier, which steepens the tail-limited swing a little below eq. (1)."""
    sim = Simulator()
    vg = np.linspace(-0.2, 0.4, 31)
    ideal = Design()
    ec = np.array([_channel_edge(sim.solve_bias(ideal, float(v), 0.3)) for v in vg])
    eta = -np.gradient(ec, vg)
    rows = []
    for e0 in (15.0, 20.0, 30.0):
        curve = sim.transfer_curve(ideal.replace(tail_energy_channel_meV=e0), vg, 0.3)
        m = curve.metrics
        # gate voltage of SS_min: where the refined curve passes the SS_min current
        up = np.flatnonzero(np.diff(curve.id_refined_uA_per_um) > 0)
        vg_r, id_r = curve.vg_refined_V[up], curve.id_refined_uA_per_um[up]
        at = float(vg_r[np.argmin(np.abs(np.log(id_r / m.ss_min_current_uA_per_um.value)))])
        limit = math.log(10) * e0 / float(np.interp(at, vg, eta))
        rows.append((e0, m.ss_min_mV_per_dec.value, limit, m.ss_min_mV_per_dec.value / limit))
    print("\nE0 [meV]  SS_min [mV/dec]  ln10 E0/eta [mV/dec]  ratio")
    for e0, ss, lim, r in rows:
        print(f"{e0:7.1f}  {ss:15.1f}  {lim:20.1f}  {r:6.3f}")
    for _, _, _, r in rows:
        assert 0.85 <= r <= 1.15


def test_tails_off_leave_the_ideal_point_bit_for_bit_and_add_current_when_on() -> None:
    """E0 = 0: the same currents as the ideal design; E0 > 0: a positive excess in the
    off state, and the mechanisms sum to the total (common practice, no source)."""
    sim = Simulator()
    base = Design()
    ideal = sim.solve_bias(base, 0.05, 0.3)
    explicit = sim.solve_bias(base.replace(tail_energy_source_meV=0.0,
                                           tail_energy_channel_meV=0.0), 0.05, 0.3)
    assert explicit.current_uA_per_um == ideal.current_uA_per_um
    assert ideal.tail_excess_uA_per_um == 0.0
    tails = sim.solve_bias(base.replace(tail_energy_source_meV=10.0,
                                        tail_energy_channel_meV=10.0), 0.05, 0.3)
    assert tails.btbt_uA_per_um == ideal.btbt_uA_per_um
    assert tails.tail_excess_uA_per_um > 0.1 * ideal.btbt_uA_per_um
    parts = tails.current_by_mechanism_uA_per_um
    assert sum(parts.values()) == pytest.approx(tails.current_uA_per_um, rel=1e-12)


def test_tail_excess_converged_against_a_finer_sampling(monkeypatch: pytest.MonkeyPatch) -> None:
    """Our own numerics: the tail excess with the default sampling (16 energies, 9 shifts)
    within 10 % of 64 energies and 16 shifts, across the subthreshold region of the
    default design with tails 15/15 meV (regression of our own, no external source)."""
    import sub60.physics.band_tails as bt

    d = Design(tail_energy_source_meV=15.0, tail_energy_channel_meV=15.0)
    vgs = (-0.1, 0.0, 0.1, 0.2)
    coarse = [Simulator().solve_bias(d, v, 0.3).tail_excess_uA_per_um for v in vgs]
    monkeypatch.setattr(bt, "N_TAIL_E", 64)
    monkeypatch.setattr(bt, "TAIL_OFFSETS", (-3.0, -2.0, -1.5, -1.0, -0.5, 0.0, 0.5, 1.0, 1.5,
                                             2.0, 3.0, 4.0, 5.5, 7.0, 9.0, 12.0))
    fine = [Simulator().solve_bias(d, v, 0.3).tail_excess_uA_per_um for v in vgs]
    print("\nVg [V]  excess coarse / fine: "
          + ", ".join(f"{v:+.1f}: {c / f:.3f}" for v, c, f in zip(vgs, coarse, fine, strict=True)))
    for c, f in zip(coarse, fine, strict=True):
        assert c == pytest.approx(f, rel=0.10)
