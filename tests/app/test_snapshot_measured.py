"""Snapshots with a measured file and its fit (schema version 4), and older files.

Design rule of the format (common practice for versioned file formats, no source): a
file of an older version opens unchanged; a newer member is refused in an older file.
The version-3 file (tests/app/files/snapshot-v3-settings.json) was written by sub60
before this version existed (its settings.json, our own scenario). The measured curve
is the SYNTHETIC demo (tests/make_fit_demo.py). The fit is a 1-knob fit of the
work-function shift (its solves are one model curve; the shift itself costs none).
"""

from __future__ import annotations

import copy
import json
from importlib.resources import files
from pathlib import Path

import numpy as np
import pytest

from sub60.app.layout import Explorer
from sub60.app.measured_view import DEMO_NAME, demo_bytes
from sub60.app.presets import PRESET_DIR
from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_measured import MeasuredSnapshot, measured_to_dict
from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import SCHEMA_VERSION, SnapshotSettings
from sub60.app.state import ExplorerState
from sub60.physics import Design, fit_transfer, read_measured

V3_FILE = Path(__file__).parent / "files" / "snapshot-v3-settings.json"


@pytest.fixture(scope="module")
def fitted():
    """The demo curve and a 1-knob fit of it (from the demo's trap and tail values)."""
    data = read_measured(demo_bytes())
    start = Design().replace(interface_trap_density_cm2eV=2e12, tail_energy_source_meV=20.0,
                             tail_energy_channel_meV=20.0)
    return data, fit_transfer(data, start, ["workfunction_shift"])


def _doc(data, fit) -> dict:
    s = SnapshotSettings(measured=MeasuredSnapshot(DEMO_NAME, data, ("workfunction_shift",), fit))
    return json.loads(s.to_json())


def test_measured_file_and_fit_round_trip(fitted):
    data, fit = fitted
    doc = _doc(data, fit)
    assert doc["schema_version"] == SCHEMA_VERSION == 4
    back = SnapshotSettings.from_dict(doc)
    m = back.measured
    assert m is not None and m.name == DEMO_NAME and m.free == ("workfunction_shift",)
    np.testing.assert_array_equal(m.data.transfer[0].vg_V, data.transfer[0].vg_V)
    np.testing.assert_array_equal(m.data.transfer[0].id_uA_per_um, data.transfer[0].id_uA_per_um)
    assert m.data.comments == data.comments and m.data.unit == data.unit
    r = m.fit
    assert r.design == fit.design and r.start_design == fit.start_design
    assert r.knobs == fit.knobs  # values, uncertainties, bounds, flags
    assert r.settings["bounds"] == fit.settings["bounds"] and r.settings["free"] == ["workfunction_shift"]
    np.testing.assert_array_equal(r.curves[0].fit_uA_per_um, fit.curves[0].fit_uA_per_um)
    # the residuals are rebuilt by the fit's own formula
    np.testing.assert_allclose(r.curves[0].residual_decades, fit.curves[0].residual_decades,
                               rtol=0, atol=1e-12)
    assert r.rms_decades == fit.rms_decades and r.curve_evaluations == fit.curve_evaluations
    assert measured_to_dict(m) == doc["measured"]


def test_not_determined_pairs_are_kept(fitted):
    data, fit = fitted
    doc = _doc(data, fit)
    doc["measured"]["fit"]["problems"] = ["trap_density and tail_energy: correlation 0.99"]
    doc["measured"]["fit"]["knobs"][0]["uncertainty"] = None
    doc["measured"]["fit"]["knobs"][0]["determined"] = False
    r = SnapshotSettings.from_dict(doc).measured.fit
    assert r.problems == ("trap_density and tail_energy: correlation 0.99",)
    assert not r.knobs[0].determined and "not determined" in r.knobs[0].text()


def test_version_3_file_opens_as_before():
    settings, report = import_snapshot(V3_FILE.read_bytes())
    assert settings.schema_version == 3 and settings.measured is None
    assert settings.design.interface_trap_density_cm2eV == 1e12
    # written before the optional charge model existed: it opens with the default
    assert report.added_fields == ("charge_model",)
    assert settings.design.charge_model == "semiclassical"
    assert "measured" not in settings.to_dict()


@pytest.mark.parametrize("name", sorted(p.name for p in PRESET_DIR.glob("*.json")))
def test_every_preset_opens_and_writes_the_current_version(name):
    raw = files("sub60.assets").joinpath("presets", name).read_bytes()
    settings, _ = import_snapshot(raw)
    out = settings.to_dict()
    assert out["schema_version"] == SCHEMA_VERSION and "measured" not in out
    assert SnapshotSettings.from_dict(json.loads(json.dumps(out))).design == settings.design


def _refused(doc: dict, *words: str) -> None:
    with pytest.raises(SnapshotError) as err:
        SnapshotSettings.from_dict(doc)
    for w in words:
        assert w in str(err.value), str(err.value)


def test_hostile_measured_members_are_refused_naming_the_field(fitted):
    data, fit = fitted
    good = _doc(data, fit)
    v3 = json.loads(V3_FILE.read_text("utf-8"))
    v3["measured"] = good["measured"]
    _refused(v3, "measured", "version-3")
    cases = [
        (("transfer", 0, "vg_V", 3), 9.0, "measured.transfer[0].vg_V[3]"),  # outside the range
        (("transfer", 0, "vg_V", 3), -0.5, "does not increase"),
        (("transfer", 0, "id_uA_per_um", 0), "1e-3", "expected a number"),
        (("unit",), "furlongs", "measured.unit"),
        (("free", 0), "gate_length", "is not a knob"),
        (("fit", "knobs", 0, "name"), "trap_density", "expected 'workfunction_shift'"),
        (("fit", "knobs", 0, "value"), 5.0, "measured.fit.knobs[0].value"),
        (("fit", "design", "material"), "Unobtainium", "measured.fit.design.material"),
        (("fit", "correlation", 0, 0), 3.0, "measured.fit.correlation[0][0]"),
        (("fit", "converged"), "yes", "expected true/false"),
        (("comments", 0), "a\x00b", "control character"),
    ]
    for path, value, words in cases:
        doc = copy.deepcopy(good)
        node = doc["measured"]
        for key in path[:-1]:
            node = node[key]
        node[path[-1]] = value
        _refused(doc, words)
    doc = copy.deepcopy(good)
    doc["measured"]["transfer"][0]["id_uA_per_um"].pop()
    _refused(doc, "40 currents for 41 voltages")
    doc = copy.deepcopy(good)
    doc["measured"]["extra"] = 1
    _refused(doc, "measured.extra: unknown field")
    doc = copy.deepcopy(good)
    doc["measured"]["transfer"][0]["vg_V"] = [0.0] * 20_001
    _refused(doc, "the limit is 20000")


def test_page_snapshot_reopens_with_the_overlay_and_the_fit(fitted):
    data, fit = fitted
    first = Explorer(ExplorerState(vg_points=11), background=False)
    first.panel()
    card = first.measured_card
    assert card.snapshot() is None
    assert card.open(demo_bytes(), DEMO_NAME)
    card.result = fit  # the fit of the fixture (the card's own fit is tested elsewhere)
    card.knobs.value = ["workfunction_shift"]
    _, zipped = first.export_bytes()
    second = Explorer(ExplorerState(vg_points=11), background=False)
    second.panel()
    assert second.import_bytes(zipped, "with-measured.zip")
    c2, fig = second.measured_card, second.results.figures
    assert c2.name == DEMO_NAME and c2.result is not None
    assert c2.result.knobs == fit.knobs
    assert "± " in c2.fitted.object and not c2.use_button.disabled
    assert len(fig.measured.transfer_source.data["vg"]) == 41
    assert fig.measured.transfer_item.label.value == f"measured ({DEMO_NAME})"
    assert 'data-device="measured-0"' in second.results.metrics.object
    assert len(c2._fit_src.data["vg"]) == 42
    assert "restored with their fit" in second.snapshot_view.controls.report.object
    # a file without measured curves leaves the card as it is
    assert second.import_bytes(V3_FILE.read_bytes(), "v3.json")
    assert second.measured_card.data is not None


def test_output_file_round_trips_without_a_fit():
    text = b"Vd,Id@Vg=0.5 [uA/um],Id@Vg=0.6 [uA/um]\n0,0,0\n0.1,1,2\n0.2,2,3\n"
    data = read_measured(text)
    s = SnapshotSettings(measured=MeasuredSnapshot("out.csv", data))
    back = SnapshotSettings.from_dict(json.loads(s.to_json())).measured
    assert not back.data.transfer and back.fit is None
    assert [c.vg_V for c in back.data.output] == [0.5, 0.6]
    np.testing.assert_array_equal(back.data.output[1].id_uA_per_um, [0, 2, 3])
    doc = json.loads(s.to_json())
    doc["measured"]["fit"] = _doc(read_measured(demo_bytes()), None)["measured"].get("fit", {})
    _refused(doc, "a fit needs a transfer curve")


def test_a_fit_of_an_older_file_is_not_shown(fitted):
    _, fit = fitted
    card = Explorer(ExplorerState(vg_points=11), background=False).measured_card
    assert card.open(demo_bytes(), DEMO_NAME)
    old = card._generation
    assert card.open(demo_bytes(), "again.csv")  # a new file while the fit ran
    card._fit_done(fit, old)
    assert card.result is None and card.fitted.object == ""
