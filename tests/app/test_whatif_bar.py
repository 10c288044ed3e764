"""The what-if bar (app.whatif_bar) on the page's settings, without a browser: one source
of truth with the sidebar, typed values checked against the settings' ranges, EOT and the
source doping in the units a designer types."""

from __future__ import annotations

import math

import pytest

from sub60.app.layout import Explorer
from sub60.app.whatif_bar import KNOBS


@pytest.fixture()
def page() -> Explorer:
    e = Explorer(background=False)
    yield e
    e.close()


def test_typed_values_reach_the_settings_and_the_sidebar(page):
    bar = page.whatif
    bar.entries["vg"].value = 0.0  # the value a designer types most
    assert page.state.vg_V == 0.0 and page.widgets["vg_V"].value == 0.0
    bar.entries["body"].value = 9.5
    assert page.state.body_thickness_nm == 9.5
    assert page.widgets["body_thickness_nm"].value == 9.5
    assert page.figures.map_source.data["dh"][0] == pytest.approx(9.5 + 4.0)  # recomputed
    bar.material.value = "GaSb"
    assert page.state.material == "GaSb" and page.widgets["material"].value == "GaSb"


def test_the_bar_follows_the_sidebar_and_a_reset(page):
    page.widgets["gate_length_nm"].value = 40.0
    assert page.whatif.entries["lg"].value == 40.0
    page.state.temperature_K = 250.0
    assert page.whatif.entries["temp"].value == 250.0
    page.state.reset()
    for knob in KNOBS:
        assert page.whatif.entries[knob.name].value == page.whatif._shown(knob)
    assert page.whatif.entries["temp"].value == 300.0


@pytest.mark.parametrize("name, value, good", [
    ("vg", 2.5, 0.1), ("vd", -1.0, 0.2), ("body", 50.0, 8.0), ("lg", 3.0, 35.0),
    ("nsource", 1e23, 5e19), ("vg", None, 0.0)])
def test_a_value_out_of_range_is_refused_with_the_entry_and_its_range(page, name, value,
                                                                       good):
    bar = page.whatif
    knob = next(k for k in KNOBS if k.name == name)
    before = getattr(page.state, knob.setting)
    generation = page.jobs.bias_generation
    bar.entries[name].value = value
    assert getattr(page.state, knob.setting) == before  # kept, nothing recomputed
    assert page.jobs.bias_generation == generation
    assert bar.entries[name].value == bar._shown(knob)  # the box shows the kept value
    text = page.error_text
    assert knob.label in text and "allowed is from" in text, text
    bar.entries[name].value = good
    assert page.error_text == ""  # the message goes with the next accepted value


def test_source_doping_is_typed_in_cm3(page):
    page.whatif.entries["nsource"].value = 1e20
    assert page.state.source_doping_log10_cm3 == pytest.approx(20.0)
    assert page.state.design().source_doping_cm3 == pytest.approx(1e20, rel=1e-9)
    page.state.source_doping_log10_cm3 = math.log10(2.5e19)
    assert page.whatif.entries["nsource"].value == pytest.approx(2.5e19)


def test_eot_is_typed_as_such_and_set_through_the_dielectric_thickness(page):
    """EOT = t_ox * eps_SiO2 / eps_ox with eps_SiO2 = 3.9 (the definition of the
    equivalent oxide thickness; e.g. Sze & Ng, Physics of Semiconductor Devices, 3rd ed.,
    ch. 6; the value 3.9 from memory)."""
    page.state.oxide = "HfO2"
    eps = page.state.design().gate_permittivity
    page.whatif.entries["eot"].value = 0.5
    assert page.state.oxide_thickness_nm == pytest.approx(0.5 * eps / 3.9, rel=1e-6)
    assert page.state.design().eot_nm == pytest.approx(0.5, rel=1e-6)
    page.state.oxide_thickness_nm = 3.0  # the sidebar's thickness: EOT follows
    assert page.whatif.entries["eot"].value == pytest.approx(3.0 * 3.9 / eps, abs=1e-4)
