"""The heterojunction settings of the page's state and band diagram (no browser)."""

from __future__ import annotations

from sub60.app.plots_bias import BandPlot
from sub60.app.sharing import QUERY_KEYS
from sub60.app.state import DESIGN_PARAMETERS, ExplorerState
from sub60.physics import Design, Simulator, heterointerface_offsets

HETERO = Design(material="InGaAs", composition_x=0.53, source_material="GaAsSb",
                source_composition_x=0.4, heterointerface_nm=-2.0)


def test_state_round_trips_a_heterojunction_design():
    s = ExplorerState()
    assert not s.heterointerface_enabled and not s.source_composition_enabled
    s.set_design(HETERO)
    assert s.design() == HETERO
    assert s.heterointerface_enabled and s.source_composition_enabled
    assert "GaAs(x)Sb(1−x)" in s.source_composition_text


def test_a_fixed_source_takes_no_composition_and_same_is_a_homojunction():
    s = ExplorerState()
    s.set_design(HETERO)
    s.source_material = "GaSb"
    assert s.source_composition_x == 0.0 and not s.source_composition_enabled
    s.source_material = "same"
    assert not s.heterointerface_enabled and not s.design().is_heterojunction
    s.source_material = "InGaAs"  # InGaAs source at the body's composition: no interface
    s.source_composition_x = 0.53
    assert not s.heterointerface_enabled


def test_the_new_settings_are_design_settings_with_url_keys():
    for name in ("source_material", "source_composition_x", "heterointerface_nm"):
        assert name in DESIGN_PARAMETERS and name in QUERY_KEYS


def test_band_plot_marks_and_labels_the_heterointerface():
    from bokeh.models import Range1d

    plot = BandPlot(Range1d(0, 1), Range1d(0, 1))
    bp = Simulator().solve_bias(HETERO, 0.4, 0.3)
    plot.show(bp)
    off = heterointerface_offsets(HETERO)
    assert plot.interface_line.visible and plot.interface_line.location == off.position_nm == 18.0
    text = plot.interface_label.text
    assert text.startswith(f"{off.source} → {off.body}") and "staggered" in text
    assert f"{off.conduction_step_eV:+.2f}" in text and f"{off.valence_step_eV:+.2f}" in text
    plot.show(Simulator().solve_bias(Design(), 0.4, 0.3))
    assert not plot.interface_line.visible and not plot.interface_label.visible


def test_material_card_lists_the_source_record_and_the_offsets():
    from sub60.app.material_card import material_card_html

    s = ExplorerState()
    assert "Heterointerface" not in material_card_html(s)
    s.set_design(HETERO)
    html = material_card_html(s)
    off = heterointerface_offsets(HETERO)
    assert "Heterointerface at x = 18 nm" in html and f"{off.valence_step_eV:+.3f} eV" in html
    assert "Source: <b>GaAsSb (x = 0.4)</b>" in html and "Vurgaftman" in html
