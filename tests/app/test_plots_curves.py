"""The live curve plots' display rules (no browser): the current axis floor, the swing
plot's rising branch without a spike at the current minimum, and one metrics row for an
n+ source design (it is its own twin). Curves here are synthetic (a V-shaped ambipolar
current, made up for the test); the swing is its definition, SS = dVg / dlog10(Id)
(Sze & Ng, Physics of Semiconductor Devices, 3rd ed., sec. 6.2.4)."""

from __future__ import annotations

import numpy as np

from sub60.app.messages import MessageBoard
from sub60.app.plot_style import ID_FLOOR_UA_PER_UM
from sub60.app.plots import ExplorerFigures
from sub60.app.results_view import ResultsView
from sub60.app.state import ExplorerState


def _v_shaped(vg: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """log10 Id falls 8 decades/V left of 0 V and rises 10 decades/V right of it (made
    up); SS [mV/dec] from centred differences, as the physics computes it."""
    log_id = np.where(vg < 0.0, -8.0 * vg, 10.0 * vg) - 6.0
    ss = 1e3 / np.gradient(log_id, vg)
    return 10.0 ** log_id, ss


def test_transfer_axis_stops_at_the_floor():
    figs = ExplorerFigures()
    vg = np.linspace(-0.4, 0.6, 41)
    ids = np.logspace(-55, 1, 41)  # a deep off state, 1e-55 uA/um
    figs.show_transfer("tfet", vg, ids)
    assert figs.transfer.y_range.start == ID_FLOOR_UA_PER_UM / 2
    figs.show_transfer("tfet", vg, np.logspace(-6, 1, 41))  # above the floor: its own low
    assert figs.transfer.y_range.start == 1e-6 / 2


def test_swing_plot_keeps_the_rising_branch_without_a_spike():
    figs = ExplorerFigures()
    vg = np.linspace(-0.4, 0.6, 41)
    ids, ss = _v_shaped(vg)
    figs.show_transfer("tfet", vg, ids, ss=ss)
    data = figs.swing_sources["tfet"].data
    vg_min = vg[np.argmin(ids)]
    assert len(data["vg"]) > 0 and np.all(np.asarray(data["vg"]) > vg_min)
    shown = np.asarray(data["ss"], float)
    top = figs.swing.y_range.end
    assert np.all(np.isnan(shown) | (shown <= top)), shown
    # the rising branch (100 mV/dec) is drawn where it is defined
    np.testing.assert_allclose(shown[np.isfinite(shown)][1:-1], 100.0, rtol=1e-9)


def test_an_n_source_design_has_one_metrics_row():
    state = ExplorerState(source_type="n")
    view = ResultsView(state, MessageBoard(), [])
    view.show_metrics(stale=True)
    html = view.metrics.object
    assert 'data-device="tfet"' in html and 'data-device="twin"' not in html
    state.source_type = "p"
    view.show_metrics(stale=True)
    assert 'data-device="twin"' in view.metrics.object
