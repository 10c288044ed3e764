"""Interband selection rules of the confined subband pairs.

Lab notebook: the envelope overlap of each (valence, conduction) pair and the share of
the interband momentum matrix element carried by heavy and light holes for transport in
the plane of the body, each checked against its source; the per-pair currents of a bias
point against the total.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from sub60.physics.design import Design
from sub60.physics.simulate import Simulator
from sub60.physics.subbands import MOMENTUM_WEIGHT, device_subbands
from sub60.physics.transport import BandProfile, band_to_band

# Basis of the 8 zone-centre Bloch functions used below: orbital part in (S, X, Y, Z) x
# spin (up, down) -> index 2*orbital + spin.
S, X, Y, Z = range(4)
UP, DOWN = 0, 1


def ket(*terms: tuple[complex, int, int]) -> np.ndarray:
    v = np.zeros(8, complex)
    for amp, orb, spin in terms:
        v[2 * orb + spin] += amp
    return v


def p_along(axis: int) -> np.ndarray:
    """Momentum operator along X, Y or Z in this basis, in units of P = <S|p_x|X>: by
    cubic symmetry the only non-zero elements are <S|p_a|A> = P (a = x, y, z),
    spin-diagonal (Kane 1957; Chuang 1995, ch. 4 — common practice, no source needed)."""
    m = np.zeros((8, 8), complex)
    for spin in (UP, DOWN):
        m[2 * S + spin, 2 * axis + spin] = 1.0
        m[2 * axis + spin, 2 * S + spin] = 1.0
    return m


# J = 3/2 and J = 1/2 valence states quantised along Z (the confinement axis), Chuang,
# Physics of Optoelectronic Devices (Wiley 1995), ch. 4 (phases from memory; the squared
# matrix elements do not depend on them).
R2, R3, R6 = math.sqrt(2), math.sqrt(3), math.sqrt(6)
HH_UP = ket((-1 / R2, X, UP), (-1j / R2, Y, UP))
HH_DOWN = ket((1 / R2, X, DOWN), (-1j / R2, Y, DOWN))
LH_UP = ket((-1 / R6, X, DOWN), (-1j / R6, Y, DOWN), (2 / R6, Z, UP))
LH_DOWN = ket((1 / R6, X, UP), (-1j / R6, Y, UP), (2 / R6, Z, DOWN))
SO_UP = ket((1 / R3, X, DOWN), (1j / R3, Y, DOWN), (1 / R3, Z, UP))
SO_DOWN = ket((1 / R3, X, UP), (-1j / R3, Y, UP), (-1 / R3, Z, DOWN))
S_UP, S_DOWN = ket((1, S, UP)), ket((1, S, DOWN))


def coupling(hole_pair: tuple[np.ndarray, np.ndarray], axis: int) -> float:
    """sum over both conduction spins of |<S|p_axis|v>|^2 for one hole state [P^2]."""
    op = p_along(axis)
    v = hole_pair[0]
    return float(sum(abs(np.vdot(c, op @ v)) ** 2 for c in (S_UP, S_DOWN)))


def test_basis_is_orthonormal():
    """The six valence states form an orthonormal set (a check of the basis typed above)."""
    states = np.array([HH_UP, HH_DOWN, LH_UP, LH_DOWN, SO_UP, SO_DOWN])
    assert np.allclose(states.conj() @ states.T, np.eye(6), atol=1e-12)


def test_inplane_momentum_weights_derived_and_chuang():
    """Interband |p_x|^2 for transport in the plane of a well quantised along z.

    Chuang, Physics of Optoelectronic Devices (Wiley 1995), ch. 9, band-edge momentum
    matrix elements of a quantum well (from memory): TE (in-plane) HH 3/2 M_b^2, LH 1/2
    M_b^2; TM (along z) HH 0, LH 2 M_b^2; with M_b^2 = P^2/3. Derived here from the basis:
    HH P^2/2, LH P^2/6, SO P^2/3 (sum rule: P^2); along z LH 2/3 P^2.
    """
    hh, lh, so = coupling((HH_UP,), X), coupling((LH_UP,), X), coupling((SO_UP,), X)
    mb2 = 1 / 3
    assert hh == pytest.approx(1.5 * mb2, abs=1e-12)
    assert lh == pytest.approx(0.5 * mb2, abs=1e-12)
    assert so == pytest.approx(1 / 3, abs=1e-12)
    assert hh + lh + so == pytest.approx(1.0, abs=1e-12)  # sum rule
    assert coupling((HH_UP,), Z) == pytest.approx(0.0, abs=1e-12)
    assert coupling((LH_UP,), Z) == pytest.approx(2 * mb2, abs=1e-12)
    # the bulk two-band channel along x is the light hole quantised along x: 2/3 P^2 (the
    # z result above, by cubic symmetry); sub60's weights are the shares of that channel
    bulk = coupling((LH_UP,), Z)
    assert MOMENTUM_WEIGHT["HH"] == pytest.approx(hh / bulk, abs=1e-12)
    assert MOMENTUM_WEIGHT["LH"] == pytest.approx(lh / bulk, abs=1e-12)
    assert MOMENTUM_WEIGHT["HH"] + MOMENTUM_WEIGHT["LH"] == pytest.approx(1.0)


def test_parity_forbidden_pairs_vanish_in_the_symmetric_double_gate():
    """Envelope overlap <C1|HH2> = 0 by parity in a symmetric well; equal-parity pairs
    keep a large overlap (infinite-well limit: delta_nm, e.g. Chuang 1995, ch. 9 and
    Davies, The Physics of Low-dimensional Semiconductors, 1998 — from memory)."""
    sb = device_subbands(Design())  # symmetric double gate
    w = sb.pair_weights()
    lv = [s.label for s in sb.valence]
    lc = [s.label for s in sb.conduction]
    idx = {(v, c): (i, j) for i, v in enumerate(lv) for j, c in enumerate(lc)}
    for pair in (("HH2", "C1"), ("HH1", "C2"), ("LH1", "C2")):
        assert w[idx[pair]] < 1e-12, pair
    for pair, kind in ((("HH1", "C1"), "HH"), (("HH2", "C2"), "HH"), (("LH1", "C1"), "LH")):
        overlap2 = w[idx[pair]] / MOMENTUM_WEIGHT[kind]
        assert 0.85 < overlap2 <= 1.0 + 1e-9, (pair, overlap2)
    # an asymmetric (single-gate) stack breaks parity a little
    single = device_subbands(dataclasses.replace(Design(), gate_layout="single")).pair_weights()
    assert 0.0 < single[idx[("HH2", "C1")]] < 0.05


def test_pair_weights_scale_the_pair_current():
    """A weight multiplies its pair's current; the pair currents sum to the total
    (eq. (1) of physics.transport — a consistency check, no outside source)."""
    x = np.linspace(0.0, 20.0, 201)
    field = 0.05  # eV/nm
    ec = 0.2 - field * (x - 10.0)
    ev = ec - 0.4
    cb = [BandProfile("C1", ec, 0.03)]
    vb = [BandProfile("HH1", ev, 0.04), BandProfile("LH1", ev - 0.02, 0.06)]
    full = band_to_band(x, cb, vb, 0.0, -0.3, 0.0259)
    w = np.array([[0.75], [0.0]])
    part = band_to_band(x, cb, vb, 0.0, -0.3, 0.0259, pair_weights=w)
    assert part.pair_currents_uA_per_um["LH1-C1"] == 0.0
    assert part.pair_currents_uA_per_um["HH1-C1"] == pytest.approx(
        0.75 * full.pair_currents_uA_per_um["HH1-C1"], rel=1e-12)
    assert sum(full.pair_currents_uA_per_um.values()) == pytest.approx(full.current_uA_per_um)


def test_bias_point_reports_pair_currents():
    """The default design's bias point lists every pair; forbidden ones carry nothing."""
    bp = Simulator().solve_bias(Design(), 0.31, 0.3)
    pairs = bp.pair_currents_uA_per_um
    assert set(pairs) == {f"{v}-{c}" for v in bp.valence_labels for c in bp.conduction_labels}
    assert pairs["HH2-C1"] == 0.0
    assert sum(pairs.values()) == pytest.approx(bp.btbt_uA_per_um, rel=1e-12)
    assert pairs["HH1-C1"] > pairs["LH1-C1"] > 0.0
