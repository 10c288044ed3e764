"""Figures of merit that do not depend on how the transfer curve is sampled.

Lab notebook. A synthetic tunnel-FET-like curve whose swing has a sharp minimum, known in
closed form, is sampled at 20 mV and at 2.5 mV and refined by `metrics.refine_curve`; the
figures must agree within 1 mV/dec (swings) or 3 % (I60), and with the exact values.

Sources: swing SS = dVg/dlog10(Id) (Sze & Ng, Physics of Semiconductor Devices, 3rd ed.,
2007, MOSFET subthreshold section — from memory for the section); I60 at 60 mV/dec
(Vandenberghe et al., Appl. Phys. Lett. 102, 013510 (2013)); four-decade average swing
(Lu & Seabaugh, IEEE J. Electron Devices Soc. 2(4), 44 (2014) — from memory); adaptive
refinement where the error indicator is largest: common practice, no source.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from sub60.physics.design import Design
from sub60.physics.metrics import figures_of_merit, refine_curve, refinement_voltages
from sub60.physics.simulate import Simulator

# SS(u) = S0 + K (u - U0)^2 with u = log10(Id [µA/µm]): minimum S0 at U0. Integrating
# dVg = SS du / 1000: Vg(u) = V0 + [S0 (u - U0) + K (u - U0)^3 / 3] / 1000.
S0, K, U0, V0 = 12.0, 6.0, -4.0, 0.1  # [mV/dec], [mV/dec per decade^2], [1], [V]


def vg_of_u(u: float) -> float:
    d = u - U0
    return V0 + 1e-3 * (S0 * d + K * d**3 / 3.0)


def current(vg: np.ndarray) -> np.ndarray:
    """Id(Vg) of the synthetic curve, by root finding on Vg(u) [µA/µm]."""
    return np.array([10.0 ** brentq(lambda u, v=v: vg_of_u(u) - v, -30.0, 30.0)
                     for v in np.atleast_1d(vg)])


def exact():
    ioff = 1e-3
    u_off = math.log10(ioff)
    return {
        "ss_min": S0,
        "i60": 10.0 ** (U0 + math.sqrt((60.0 - S0) / K)),  # SS = 60 on the upper side
        "ss_avg4": 1e3 * (vg_of_u(u_off + 4.0) - vg_of_u(u_off)) / 4.0,
    }


def metrics_from(step_V: float, refine: bool):
    vg = np.round(np.arange(-0.2, 0.5 + 1e-9, step_V), 9)
    ids = current(vg)
    if refine:
        vg, ids = refine_curve(vg, ids, current)
    return figures_of_merit(vg, ids, ss_floor_uA_per_um=1e-9)


def test_refined_figures_do_not_depend_on_the_base_step():
    coarse, fine = metrics_from(0.02, True), metrics_from(0.0025, True)
    ref = exact()
    for m in (coarse, fine):
        assert m.ss_min_mV_per_dec.value == pytest.approx(ref["ss_min"], abs=0.5)
        assert m.ss_avg4_mV_per_dec.value == pytest.approx(ref["ss_avg4"], rel=0.01)
        assert m.i60_uA_per_um.value == pytest.approx(ref["i60"], rel=0.03)
    assert abs(coarse.ss_min_mV_per_dec.value - fine.ss_min_mV_per_dec.value) <= 1.0
    assert abs(coarse.ss_avg4_mV_per_dec.value - fine.ss_avg4_mV_per_dec.value) <= 1.0
    assert coarse.i60_uA_per_um.value == pytest.approx(fine.i60_uA_per_um.value, rel=0.03)
    # the SS_min sample is reported with its current, near the exact 10^U0
    assert coarse.ss_min_current_uA_per_um.value == pytest.approx(10.0**U0, rel=0.5)


def test_without_refinement_a_20mV_step_misses_the_minimum():
    """The check above can fail: the unrefined 20 mV curve is off by more than 1 mV/dec."""
    plain = metrics_from(0.02, False)
    assert plain.ss_min_mV_per_dec.value - exact()["ss_min"] > 1.0


def test_refinement_stops_at_the_finest_step():
    vg = np.round(np.arange(-0.2, 0.5 + 1e-9, 0.0025), 9)
    assert refinement_voltages(vg, current(vg)).size == 0
    v, _ = refine_curve(np.round(np.arange(-0.2, 0.5 + 1e-9, 0.02), 9),
                        current(np.round(np.arange(-0.2, 0.5 + 1e-9, 0.02), 9)), current)
    assert np.min(np.diff(v)) >= 0.0025 * 0.5 - 1e-12


def test_ss_min_ignores_currents_below_the_floor():
    """An artefact of 5 mV/dec at 1e-9 µA/µm (below the floor Ioff/100 = 1e-5) is not SS_min;
    the 40 mV/dec branch above it is."""
    vg = np.linspace(0.0, 0.6, 121)
    log_i = np.where(vg < 0.1, -9.0 - (0.1 - vg) / 0.005, -9.0 + (vg - 0.1) / 0.040)
    ids = 10.0**log_i
    m = figures_of_merit(vg, ids)
    assert m.ss_min_mV_per_dec.value == pytest.approx(40.0, rel=5e-3)
    assert m.ss_min_current_uA_per_um.value >= 1e-5
    raw = figures_of_merit(vg, ids, ss_floor_uA_per_um=0.0)
    assert raw.ss_min_mV_per_dec.value < 10.0


def test_default_design_metrics_agree_between_20_and_2p5_mV_steps():
    """The simulated default design: SS_min, SS_avg4 (within 1 mV/dec) and I60 (within
    3 %) from a 20 mV and a 2.5 mV base sweep, both refined (the unrefined figures differed
    by 4 mV/dec in SS_min)."""
    d = Design()
    out = []
    for step in (0.02, 0.0025):
        vg = np.round(np.arange(-0.1, 0.44 + 1e-9, step), 9)
        out.append(Simulator().transfer_curve(d, vg, 0.3).metrics)
    a, b = out
    assert abs(a.ss_min_mV_per_dec.value - b.ss_min_mV_per_dec.value) <= 1.0
    assert abs(a.ss_avg4_mV_per_dec.value - b.ss_avg4_mV_per_dec.value) <= 1.0
    assert a.i60_uA_per_um.value == pytest.approx(b.i60_uA_per_um.value, rel=0.03)
    assert a.ss_min_current_uA_per_um.value >= a.ss_floor_uA_per_um


def test_refinement_rejects_bad_settings_by_name():
    vg = np.linspace(0.0, 0.2, 5)
    with pytest.raises(ValueError, match="ioff_target_uA_per_um"):
        refinement_voltages(vg, current(vg), ioff_target_uA_per_um=0.0)
    with pytest.raises(ValueError, match="ss_floor_uA_per_um"):
        figures_of_merit(vg, current(vg), ss_floor_uA_per_um=-1.0)
