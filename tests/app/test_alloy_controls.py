"""Alloy bodies in the page, the links, the snapshots, the pins, the CLI and the presets.

The state's composition setting must reach `Design.composition_x` unchanged and come back
from every way a design is stored (page address, snapshot file, pin record). The
composition label names the element whose fraction x is, read from the alloy formulas of
`physics.materials.ALLOYS` (Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815
(2001) for the III-V conventions; Si(1-x)Ge(x) as usual, common practice). The material
card lists the numbers of `Design.semiconductor`; the values checked here are computed
independently from published formulas (Varshni law, Varshni, Physica 34, 149 (1967))
and from the record's own fields.
"""

from __future__ import annotations

import json

import pytest

from sub60.app.cli import main
from sub60.app.layout import Explorer
from sub60.app.material_card import material_card_html
from sub60.app.pinning import PinBoard
from sub60.app.presets import list_presets, load_preset
from sub60.app.sharing import (
    query_from_state,
    settings_from_state,
    state_updates,
    updates_from_query,
)
from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import TransferSweep
from sub60.app.state import NO_ALLOY_LABEL, ExplorerState, composition_label
from sub60.physics import Design, Simulator
from sub60.physics.materials import alloy_semiconductor, varshni_gap_eV


@pytest.mark.parametrize(("family", "label"), [
    ("InGaAs", "In fraction x of In(x)Ga(1−x)As"),
    ("AlGaSb", "Al fraction x of Al(x)Ga(1−x)Sb"),
    ("GaAsSb", "As fraction x of GaAs(x)Sb(1−x)"),
    ("InAsSb", "As fraction x of InAs(x)Sb(1−x)"),
    ("SiGe", "Ge fraction x of Si(1−x)Ge(x)"),
])
def test_composition_label_names_the_element_of_x(family, label):
    assert composition_label(family) == label
    state = ExplorerState(material=family)
    assert state.composition_enabled and state.composition_text == label


def test_composition_applies_to_alloys_only_and_resets_on_a_fixed_material():
    state = ExplorerState()
    assert not state.composition_enabled and state.composition_text == NO_ALLOY_LABEL
    state.param.update(material="InGaAs", composition_x=0.53)
    design = state.design()
    assert design.material == "InGaAs" and design.composition_x == 0.53
    assert design.semiconductor == alloy_semiconductor("InGaAs", 0.53)
    state.material = "SiGe"  # another alloy keeps x
    assert state.composition_x == 0.53 and state.design().semiconductor.name == "SiGe (x = 0.53)"
    state.material = "Si"  # a fixed material: x back to 0, the design stays valid
    assert state.composition_x == 0.0 and not state.composition_enabled
    assert state.design() == Design(material="Si")
    with pytest.raises(ValueError, match="composition_x"):
        state.composition_x = 1.5  # the control's bounds are the design field's


def test_material_picker_offers_fixed_materials_and_alloy_families():
    objects = ExplorerState.param.material.objects
    values = set(objects.values()) if isinstance(objects, dict) else set(objects)
    assert {"InAs", "GaSb", "Si", "Ge", "InGaAs", "AlGaSb", "GaAsSb", "InAsSb", "SiGe"} <= values


def test_set_design_and_reset_carry_the_composition():
    state = ExplorerState()
    design = Design(material="AlGaSb", composition_x=0.25)
    state.set_design(design)
    assert state.design() == design
    state.reset()
    assert state.design() == Design()


def test_page_address_round_trip_and_refusals():
    state = ExplorerState()
    state.param.update(material="InAsSb", composition_x=0.85)
    query = query_from_state(state)
    assert query["material"] == "InAsSb" and query["x"] == "0.85"
    updates, problems = updates_from_query(query)
    assert not problems
    again = ExplorerState()
    again.param.update(**updates)
    assert again.design() == state.design()
    # the order of the keys does not matter
    updates, problems = updates_from_query({"x": "0.3", "material": "SiGe"})
    assert not problems and updates == {"composition_x": 0.3, "material": "SiGe"}
    # a composition on a fixed material, or outside [0, 1]: ignored with a named message
    updates, problems = updates_from_query({"material": "InAs", "x": "0.4"})
    assert "composition_x" not in updates and "not an alloy" in problems[0]
    updates, problems = updates_from_query({"material": "InGaAs", "x": "1.2"})
    assert "composition_x" not in updates
    assert problems[0].startswith("Alloy composition x") and "allowed 0 to 1" in problems[0]


def test_snapshot_and_pins_round_trip():
    state = ExplorerState()
    state.set_design(Design(material="GaAsSb", composition_x=0.51))
    board = PinBoard()
    pinned = Design(material="SiGe", composition_x=0.3, body_thickness_nm=5.0)
    board.add("SiGe 30 %", pinned, TransferSweep())
    settings = settings_from_state(state, pinned=[p.record() for p in board.pins])
    read, _ = import_snapshot(settings.to_json().encode())
    assert read.design == state.design() and read.pinned[0].design == pinned
    updates, notes = state_updates(read)
    restored = ExplorerState()
    restored.param.update(**updates)
    assert restored.design() == state.design() and restored.composition_x == 0.51
    board2 = PinBoard()
    board2.replace_all(read.pinned, TransferSweep())
    assert board2.pins[0].design.semiconductor.name == "SiGe (x = 0.3)"


def test_material_card_lists_the_record_with_sources():
    state = ExplorerState()
    state.param.update(material="InGaAs", composition_x=0.53, temperature_K=300.0)
    html = material_card_html(state)
    record = alloy_semiconductor("InGaAs", 0.53)
    assert "InGaAs (x = 0.53)" in html and "Vurgaftman" in html
    # the gap at 300 K by the Varshni law, from the record's own Varshni parameters
    gap = varshni_gap_eV(record.eg0_eV, record.varshni_alpha_eV_per_K, record.varshni_beta_K,
                         300.0)
    assert f"<td class='mc-value'>{gap:.4g}</td>" in html
    for label in ("Electron affinity", "Luttinger γ1", "Relative permittivity", "Valence-band",
                  "Non-parabolicity", "L-valley gap", "X-valley gap"):
        assert label in html, label
    state.material = "Ge"
    html = material_card_html(state)
    assert "Direct Γ gap" in html and "<b>Ge</b>" in html


def test_explorer_follows_an_alloy_body():
    explorer = Explorer(background=False)
    try:
        explorer.panel()
        widget = explorer.widgets["composition_x"]
        assert widget.disabled
        explorer.state.param.update(material="SiGe", composition_x=0.2)
        assert not widget.disabled and widget.name == "Ge fraction x of Si(1−x)Ge(x)"
        assert "SiGe (x = 0.2)" in explorer.header.object
        assert "SiGe (x = 0.2)" in explorer.material_card.table.object
        assert explorer.material_warning.visible  # indirect gap: the model's caution
        explorer.state.material = "InAs"
        assert widget.disabled and widget.value == 0.0
        assert "<b>InAs</b>" in explorer.material_card.table.object
        assert not explorer.material_warning.visible
    finally:
        explorer.close()


def _json(capsys, *argv: str) -> dict:
    code = main(list(argv))
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


@pytest.mark.parametrize("command", ["bands", "transfer", "output"])
def test_cli_set_composition_then_material(capsys, command):
    argv = [command, "--set", "composition_x=0.53", "--set", "material=InGaAs"]
    argv += {"bands": ["--vg", "0.3"], "transfer": ["--vg", "0:0.2:3"],
             "output": ["--vg", "0.3", "--vd", "0:0.2:3"]}[command]
    record = _json(capsys, *argv)
    assert record["design"]["material"] == "InGaAs" and record["design"]["composition_x"] == 0.53


def test_cli_snapshot_export_with_composition(capsys, tmp_path):
    out = tmp_path / "alloy.zip"
    code = main(["snapshot", "export", "--set", "composition_x=0.53", "--set",
                 "material=InGaAs", "--sweep", "0:0.2:3", "--output-vg", "0.2",
                 "--out", str(out)])
    assert code == 0, capsys.readouterr().err
    settings, _ = import_snapshot(out.read_bytes())
    assert settings.design == Design(material="InGaAs", composition_x=0.53)


def test_cli_composition_on_a_fixed_material_is_a_usage_error(capsys):
    code = main(["bands", "--set", "composition_x=0.5", "--set", "material=InAs"])
    err = capsys.readouterr().err
    assert code == 2 and "composition_x" in err and err.count("\n") == 1


@pytest.mark.parametrize(("name", "material", "x"), [
    ("silicon-tunnel-fet", "Si", 0.0), ("ingaas-tunnel-fet", "InGaAs", 0.7)])
def test_demo_presets_of_our_own_load_in_the_page(name, material, x):
    settings = load_preset(name)
    assert name in list_presets()
    assert settings.schema_version == 2
    assert settings.design.material == material and settings.design.composition_x == x
    assert "our own demo" in (settings.title or "").lower()
    assert "our own demo scenario" in (settings.note or "").lower()
    updates, notes = state_updates(settings)
    assert not notes, notes  # the page shows the preset exactly as stored
    state = ExplorerState()
    state.param.update(**updates)
    assert state.design() == settings.design


def test_alloy_preset_keeps_its_promise():
    """What the In0.7Ga0.3As preset's note says: less on-current than the pinned InAs
    design at the same supply and off-current target, and less ambipolar leakage."""
    settings = load_preset("ingaas-tunnel-fet")
    ms, sw = settings.metric_settings, settings.transfer_sweep
    pinned = settings.pinned[0].design
    assert pinned == Design() and settings.design.replace(
        material="InAs", composition_x=0.0) == pinned  # only the body differs
    sim = Simulator()
    vg = sw.gate_voltages()
    assert vg[0] == -0.4
    alloy, inas = (sim.transfer_curve(d, vg, sw.vd_V, vdd_V=ms.vdd_V,
                                      ioff_target_uA_per_um=ms.ioff_target_uA_per_um)
                   for d in (settings.design, pinned))
    assert alloy.metrics.ion_uA_per_um.value < 0.5 * inas.metrics.ion_uA_per_um.value
    assert alloy.id_uA_per_um[0] < 0.1 * inas.id_uA_per_um[0]  # at Vg = -0.4 V
