"""The measured-curve card without a browser: open, refuse, fit, put the design back.

The demo curve is SYNTHETIC (tests/make_fit_demo.py: the model with stated knobs and 5 %
log-normal noise); its work-function shift of +40 meV on the default design must be
found within 3 standard uncertainties (99.7 % for a Gaussian estimate; from memory) when
the other knobs are set to the values it was made with.
"""

from __future__ import annotations

import numpy as np
import pytest

from sub60.app.measured_view import MeasuredCard, demo_bytes, metrics_html
from sub60.app.state import ExplorerState


@pytest.fixture
def card():
    state = ExplorerState()
    return MeasuredCard(state, [], lambda fn, *a: fn(*a), background=False)


def test_demo_opens_and_shows_its_points_and_metrics(card):
    assert card.open(demo_bytes(), "demo.csv")
    assert "SYNTHETIC" in card.status.object
    assert len(card._data_src.data["vg"]) == 41
    assert "SS<sub>min</sub>" in card.table.object
    assert not card.fit_button.disabled


def test_the_card_is_filled_when_first_opened(card):
    assert card.view.collapsed and not card.view.objects  # nothing sent before it is opened
    assert card.plot.object is None  # nor its figures made
    card.open(demo_bytes(), "demo.csv")  # a file opened before: its points are drawn
    card.view.collapsed = False
    assert card.plot in card.view.objects and card.fit_button in card.view.objects[2].objects
    top = card.plot.object.children[0]
    assert any(getattr(r, "data_source", None) is card._data_src for r in top.renderers)
    assert len(card._data_src.data["vg"]) == 41


def test_a_bad_file_leaves_a_message_and_the_card_unchanged(card):
    card.open(demo_bytes(), "demo.csv")
    before = card.data
    assert not card.open(b"Vg,Id [A/um]\n0,1\n0.1,<script>\n0.2,3\n", "bad<1>.csv")
    assert card.data is before
    assert "line 3" in card.status.object and "&lt;script&gt;" in card.status.object
    assert "bad&lt;1&gt;.csv" in card.status.object


def test_fit_runs_and_the_fitted_design_goes_to_the_explorer(card):
    state = card.state
    state.set_design(state.design().replace(interface_trap_density_cm2eV=2e12,
                                            tail_energy_source_meV=20.0,
                                            tail_energy_channel_meV=20.0))
    card.open(demo_bytes(), "demo.csv")
    card.knobs.value = ["workfunction_shift"]
    assert card.start_fit()
    res = card.result
    assert res is not None and "Fit done" in card.status.object
    (shift,) = res.knobs
    assert abs(shift.value - 0.04) <= 3 * shift.uncertainty
    assert len(card._fit_src.data["vg"]) == 42  # 41 points and the gap after the curve
    assert np.nanmax(np.abs(card._res_src.data["r"])) < 0.1
    assert "± " in card.fitted.object and "rms residual" in card.fitted.object
    assert "fit, V<sub>d</sub>" in metrics_html(card.data, res)
    assert card.use_fitted()
    assert state.gate_workfunction_eV == pytest.approx(4.9 + shift.value)


def test_stop_before_the_first_point_says_stopped(card):
    card.open(demo_bytes(), "demo.csv")
    card.knobs.value = ["tail_energy"]
    card._cancel = None
    # a fit stopped at once: the card reports it and can fit again
    import threading

    stop = threading.Event()
    stop.set()
    card._run(card.data, card.state.design(), ["tail_energy"], stop)
    assert "stopped" in card.status.object
    assert not card.fit_button.disabled


def test_the_card_uses_no_deprecated_panel_option() -> None:
    """Panel 1.9 deprecates Button(button_type=...) for color=... (PendingDeprecationWarning,
    panel/widgets/button.py); the card, opened, is built with what the installed Panel
    wants."""
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error", PendingDeprecationWarning)
        warnings.simplefilter("error", DeprecationWarning)
        c = MeasuredCard(ExplorerState(), [], lambda fn, *a: fn(*a), background=False)
        c.view.collapsed = False
    assert c.fit_button.color == "primary"
