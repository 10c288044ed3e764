"""Fitting knobs to measured curves: the covariance, identifiability, and recovery of known
knob values from noisy model curves.

The recovery curves are made by the model itself with stated knob values and 5 %
log-normal noise (synthetic, our own scenario; no measurement). A knob is "recovered"
when the fitted value lies within 3 standard uncertainties of the true one: for a
Gaussian estimate that holds with probability 0.997 (normal distribution, any statistics
text; from memory), so with fixed seeds the test is deterministic and a wrong
uncertainty (too small by 3x or more) fails it.
"""

from __future__ import annotations

import threading

import numpy as np
import pytest

from sub60.physics import (
    FIT_KNOBS,
    Design,
    MeasuredTransfer,
    Simulator,
    fit_transfer,
    knob_uncertainty,
)

# ------------------------------------------------------------------ the covariance alone


def test_covariance_of_a_straight_line_matches_numpy_polyfit():
    """C = s^2 (J^T J)^-1 of y = a x + b equals numpy.polyfit(..., cov=True), whose
    documented covariance is scaled by chi^2 / (m - n) (numpy documentation)."""
    rng = np.random.default_rng(3)
    x = np.linspace(0.0, 1.0, 25)
    y = 2.0 * x + 0.5 + 0.05 * rng.standard_normal(x.size)
    (a, b), cov = np.polyfit(x, y, 1, cov=True)
    jac = np.column_stack([x, np.ones_like(x)])
    residual = a * x + b - y
    sigma, corr, problems = knob_uncertainty(jac, residual, ["a", "b"], np.array([10.0, 10.0]))
    assert problems == []
    assert sigma == pytest.approx(np.sqrt(np.diag(cov)), rel=1e-9)
    assert corr[0, 1] == pytest.approx(cov[0, 1] / np.sqrt(cov[0, 0] * cov[1, 1]), rel=1e-9)


def test_degenerate_correlated_and_dead_knobs_are_reported():
    x = np.linspace(0.0, 1.0, 30)
    r = 0.01 * np.sin(7 * x)
    spans = np.ones(3)
    # two identical columns: the null direction names both
    sigma, _, problems = knob_uncertainty(np.column_stack([x, x, x ** 2]), r, ["p", "q", "s"], spans)
    assert sigma[0] is None and sigma[1] is None and sigma[2] is not None
    assert any("p and q" in p for p in problems)
    # nearly the same column: |correlation| above the limit
    near = x + 1e-3 * np.cos(5 * x)
    sigma, corr, problems = knob_uncertainty(np.column_stack([x, near]), r, ["p", "q"], spans)
    assert abs(corr[0, 1]) > 0.95 and sigma == [None, None]
    assert any("correlation" in p for p in problems)
    # a knob with no effect
    sigma, _, problems = knob_uncertainty(np.column_stack([x, 0 * x]), r, ["p", "q"], spans)
    assert sigma[1] is None and any("no effect" in p for p in problems)


# ------------------------------------------------------------------ the fit on the model
TRUE = Design(tail_energy_source_meV=25.0, tail_energy_channel_meV=25.0,
              gate_workfunction_eV=4.95)
VG = np.linspace(-0.1, 0.5, 21)
VD = 0.3


@pytest.fixture(scope="module")
def simulator():
    return Simulator()


@pytest.fixture(scope="module")
def clean_curve(simulator):
    return simulator.transfer_curve(TRUE, VG, VD, refine=False).id_uA_per_um


@pytest.mark.parametrize("seed", [11, 12, 13])
def test_fit_recovers_known_knobs_within_their_uncertainty(simulator, clean_curve, seed):
    """Work-function shift +50 meV and band tails of 25 meV recovered from 5 % noise."""
    rng = np.random.default_rng(seed)
    noisy = clean_curve * np.exp(0.05 * rng.standard_normal(VG.size))
    start = TRUE.replace(gate_workfunction_eV=4.9, tail_energy_source_meV=15.0,
                         tail_energy_channel_meV=15.0)
    seen: list[int] = []
    res = fit_transfer([MeasuredTransfer(VD, VG, noisy)], start,
                       ["workfunction_shift", "tail_energy"], simulator=simulator,
                       progress=lambda n, rms: seen.append(n))
    assert res.identifiable and res.problems == ()
    got = res.values()
    shift, tail = res.knobs
    assert shift.uncertainty < 0.01 and tail.uncertainty < 3.0  # informative, not vacuous
    assert abs(got["workfunction_shift"] - 0.05) <= 3 * shift.uncertainty
    assert abs(got["tail_energy"] - 25.0) <= 3 * tail.uncertainty
    assert res.design.gate_workfunction_eV == pytest.approx(4.9 + got["workfunction_shift"])
    assert res.design.tail_energy_source_meV == res.design.tail_energy_channel_meV == got["tail_energy"]
    # residual scatter of 5 % log-normal noise: 0.05 / ln 10 = 0.0217 decades
    assert 0.012 < res.rms_decades < 0.035
    assert seen and seen == sorted(seen) and res.curve_evaluations >= seen[-1]
    assert res.bias_points > 0
    cols = res.columns()
    assert set(cols) >= {"vg_V", "measured_id_uA_per_um", "fit_id_uA_per_um", "residual_decades"}


def test_source_and_channel_tails_are_reported_as_not_separable(simulator, clean_curve):
    """With the gate work function free, one transfer curve cannot tell the source tail
    from the channel tail: the model's tail kernel is symmetric in the two Urbach energies
    (`physics.band_tails`, eq. 3) and what is left of their difference looks like a gate
    shift. The pair is reported (|correlation| > 0.95) and neither tail gets a value with
    an uncertainty; the shift, which the curve does fix, keeps its own."""
    noisy = clean_curve * np.exp(0.05 * np.random.default_rng(5).standard_normal(VG.size))
    res = fit_transfer([MeasuredTransfer(VD, VG, noisy)], TRUE,
                       ["tail_source", "tail_channel", "workfunction_shift"],
                       simulator=simulator, max_evaluations=8)
    assert not res.identifiable
    assert any("tail_source and tail_channel" in p for p in res.problems), res.problems
    source, channel, shift = res.knobs
    assert source.uncertainty is None and channel.uncertainty is None
    assert not source.determined and "not determined" in source.text()
    assert shift.determined and shift.uncertainty < 0.01
    assert abs(res.correlation[0, 1]) > 0.95


def test_two_drain_voltages_are_fitted_together(simulator, clean_curve):
    """Both curves of a long-layout file enter one fit; the shift (exact, no re-solve) is
    recovered from clean model curves to well within the 20 mV lattice step."""
    low = simulator.transfer_curve(TRUE, VG, 0.1, refine=False).id_uA_per_um
    curves = [MeasuredTransfer(0.1, VG, low), MeasuredTransfer(VD, VG, clean_curve)]
    res = fit_transfer(curves, TRUE.replace(gate_workfunction_eV=4.9), ["workfunction_shift"],
                       simulator=simulator)
    assert [c.vd_V for c in res.curves] == [0.1, VD]
    assert res.values()["workfunction_shift"] == pytest.approx(0.05, abs=2e-3)
    assert res.columns()["vd_V"].size == 2 * VG.size


def test_cancel_stops_the_fit():
    stop = threading.Event()
    stop.set()
    curve = MeasuredTransfer(VD, VG, np.logspace(-6, 1, VG.size))
    with pytest.raises(InterruptedError):
        fit_transfer([curve], TRUE, ["tail_energy"], cancel=stop)


@pytest.mark.parametrize("free,kw,words", [
    ([], {}, "at least one knob"),
    (["speed"], {}, "unknown knob"),
    (["tail_energy", "tail_energy"], {}, "given twice"),
    (["tail_energy", "tail_source"], {}, "same design field"),
    (["tail_energy"], {"bounds": {"tail_energy": (0.0, 500.0)}}, "allowed"),
    (["tail_energy"], {"start": {"tail_energy": 200.0}}, "outside its bounds"),
    (["tail_energy"], {"bounds": {"trap_density": (1e10, 1e12)}}, "not a free knob"),
    (["tail_energy"], {"model_step_V": 1.0}, "model_step_V"),
])
def test_bad_fit_settings_are_refused(free, kw, words):
    curve = MeasuredTransfer(VD, VG, np.logspace(-6, 1, VG.size))
    with pytest.raises(ValueError, match=words):
        fit_transfer([curve], TRUE, free, **kw)


def test_every_knob_sets_existing_design_fields_within_their_ranges():
    from sub60.physics import FIELD_RANGES

    for knob in FIT_KNOBS.values():
        for name in knob.fields:
            spec = FIELD_RANGES[name]
            if not knob.offset:
                assert spec.low <= knob.low < knob.high <= spec.high, knob.name
