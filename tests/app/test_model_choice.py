"""The tunnelling model chosen in the page, and the exact T(E) drawn beside the WKB one.

The reference for every number shown is the physics package called directly with the
same settings (`Simulator(model=...)`, `compare_transmissions`): the page must show what
the chosen model computes; a transmission drawn is a probability, 0 <= T <= 1 (common
practice, no source). The transmissions themselves are checked against published
results in tests/physics/test_quantum.py.
Explorer(background=False) runs each computation at once in the test's thread.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from sub60.app.layout import Explorer
from sub60.app.session_files import snapshot_of_session
from sub60.app.sharing import query_from_state, updates_from_query
from sub60.app.state import TUNNELLING_MODEL_NAMES, ExplorerState
from sub60.physics import TUNNELLING_MODELS, Design, Simulator, compare_transmissions


def _fresh(**settings) -> Explorer:
    """A synchronous explorer with short transfer sweeps."""
    e = Explorer(ExplorerState(vg_points=11, **settings), background=False)
    e.panel()
    return e


def test_every_tunnelling_model_is_offered_in_plain_words():
    objects = ExplorerState.param.tunnelling_model.objects
    assert sorted(objects.values()) == sorted(TUNNELLING_MODELS)
    for label, model in objects.items():
        assert label == TUNNELLING_MODEL_NAMES[model]
        assert model not in label  # plain words, not the code name
    assert ExplorerState().tunnelling_model == "two-band"  # WKB stays the default


def test_the_chosen_model_computes_the_band_diagram_and_the_curves():
    e = _fresh()
    wkb_current = e.figures.vg_marker_source.data["id"][0]
    e.state.tunnelling_model = "two-band-exact"
    assert e.simulator.model == "two-band-exact"
    sim = Simulator(model="two-band-exact")
    ref = sim.solve_bias(Design(), 0.3, 0.3)
    shown = e.figures.vg_marker_source.data["id"][0]
    assert shown == pytest.approx(ref.current_uA_per_um, rel=1e-4)
    assert shown != pytest.approx(wkb_current, rel=1e-3)  # the model did change
    tc = sim.transfer_curve(Design(), e.state.sweep_gate_voltages(), 0.3,
                            ioff_target_uA_per_um=1e-3, vdd_V=0.3)
    np.testing.assert_allclose(e.jobs.curves["tfet"].id_uA_per_um, tc.id_uA_per_um, rtol=1e-4)
    assert "exact two-band transmission" in e.header.object
    # and back: the shared WKB simulator again
    e.state.tunnelling_model = "two-band"
    assert e.simulator.model == "two-band"
    assert e.figures.vg_marker_source.data["id"][0] == pytest.approx(wkb_current, rel=1e-4)


def test_transmission_plot_draws_wkb_and_exact_of_the_main_pair():
    e = _fresh(tunnelling_model="one-band")
    bp = Simulator(model="one-band").solve_bias(Design(), 0.3, 0.3)
    ref = compare_transmissions(bp, wkb_model="one-band")
    assert ref is not None
    data = e.figures.transmission_source.data
    np.testing.assert_allclose(data["energy_eV"], ref.energy_eV, atol=1e-6)
    wkb, exact = np.asarray(data["wkb"], float), np.asarray(data["exact"], float)
    np.testing.assert_allclose(wkb, ref.wkb, rtol=1e-4)
    ok = np.isfinite(exact)
    np.testing.assert_allclose(exact[ok], ref.exact[ok], rtol=1e-4)
    assert np.nanmax(wkb) <= 1.0 and np.nanmax(exact) <= 1.0  # probabilities
    assert e.figures.transmission_note.text.startswith("exact/WKB\n")
    labels = [item.label.value for item in e.figures.transmission.legend[0].items]
    assert labels == ["WKB (one-band)", "exact two-band"]
    assert ref.pair.replace("-", "–") in e.figures.transmission.xaxis[0].axis_label


def test_snapshot_settings_carry_the_model_both_ways():
    e = _fresh(tunnelling_model="two-band-exact")
    settings = snapshot_of_session(e.state, e.pins, e.simulator)
    assert settings.model.tunnelling_model == "two-band-exact"
    text = settings.to_json()
    assert json.loads(text)["model"]["tunnelling_model"] == "two-band-exact"
    other = _fresh()
    assert other.import_bytes(text.encode(), "settings.json")
    assert other.state.tunnelling_model == "two-band-exact"
    assert other.simulator.model == "two-band-exact"
    ref = Simulator(model="two-band-exact").solve_bias(Design(), 0.3, 0.3)
    assert other.figures.vg_marker_source.data["id"][0] == pytest.approx(
        ref.current_uA_per_um, rel=1e-4)


def test_an_old_snapshot_without_a_model_opens_with_wkb():
    e = _fresh(tunnelling_model="one-band")
    doc = json.loads(snapshot_of_session(ExplorerState(), e.pins, e.simulator).to_json())
    del doc["model"]  # written before the model was stored
    assert e.import_bytes(json.dumps(doc).encode(), "settings.json")
    assert e.state.tunnelling_model == "two-band" and e.simulator.model == "two-band"


def test_the_link_carries_the_model():
    st = ExplorerState(tunnelling_model="two-band-exact")
    query = query_from_state(st)
    assert query["model"] == "two-band-exact"
    e = Explorer.from_query({"model": "two-band-exact", "vg_points": "11"},
                            background=False)
    e.panel()
    assert e.simulator.model == "two-band-exact"
    _, problems = updates_from_query({"model": "quantum"})
    assert len(problems) == 1 and problems[0].startswith("Tunnelling model (model)")

