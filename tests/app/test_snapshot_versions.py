"""Snapshot schema versions: files written by an earlier sub60 still open.

Version 1 (sub60 0.2.0) stored exactly the 18 design fields of that release; version 2
added the non-ideal physics and the alloy composition; version 3 stores every field of
the design record, including the heterojunction source. The version-1 files used here
are the presets shipped with 0.2.0 (`assets/presets`, unchanged since; our own
scenarios). Design rule of the format
(common practice for versioned file formats, no source): an older file opens with the
fields it predates at their defaults, and the reader says which they are.
"""

from __future__ import annotations

import dataclasses
import json
from importlib.resources import files

import pytest

from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import (
    DESIGN_FIELDS_V1,
    DESIGN_FIELDS_V2,
    HETEROJUNCTION_FIELDS,
    OPTIONAL_DESIGN_FIELDS,
    SCHEMA_VERSION,
    SnapshotSettings,
    added_design_fields,
    design_fields,
)
from sub60.physics import FIELD_RANGES, Design

PRESET = "low-power-switch.json"


def _v1_document() -> dict:
    doc = json.loads(files("sub60.assets").joinpath("presets", PRESET).read_text("utf-8"))
    assert doc["schema_version"] == 1
    assert sorted(doc["design"]) == sorted(DESIGN_FIELDS_V1)
    return doc


def test_version_1_file_opens_with_later_fields_at_their_defaults():
    doc = _v1_document()
    settings, report = import_snapshot(json.dumps(doc).encode())
    assert settings.schema_version == 1
    default = Design()
    for name in added_design_fields(1):
        assert getattr(settings.design, name) == getattr(default, name), name
    for name in DESIGN_FIELDS_V1:
        assert getattr(settings.design, name) == pytest.approx(doc["design"][name]) \
            if isinstance(doc["design"][name], float) else getattr(settings.design, name) == \
            doc["design"][name], name
    assert report.added_fields == added_design_fields(1)
    said = " ".join(report.lines())
    assert ("settings added since are at their defaults" in said) == bool(report.added_fields)


def test_export_writes_the_current_version_with_every_design_field():
    settings, _ = import_snapshot(json.dumps(_v1_document()).encode())
    out = settings.to_dict()
    assert out["schema_version"] == SCHEMA_VERSION == 4
    assert sorted(out["design"]) == sorted(FIELD_RANGES)
    again = SnapshotSettings.from_dict(json.loads(json.dumps(out)))
    assert again.design == settings.design
    assert again.schema_version == SCHEMA_VERSION


def test_each_version_requires_exactly_its_own_design_fields():
    doc = _v1_document()
    missing = json.loads(json.dumps(doc))
    del missing["design"]["gate_workfunction_eV"]
    with pytest.raises(SnapshotError, match="gate_workfunction_eV"):
        SnapshotSettings.from_dict(missing)
    current = SnapshotSettings.from_dict(doc).to_dict()
    del current["design"]["temperature_K"]
    with pytest.raises(SnapshotError, match="temperature_K"):
        SnapshotSettings.from_dict(current)
    assert design_fields(SCHEMA_VERSION) + OPTIONAL_DESIGN_FIELDS == tuple(FIELD_RANGES)


def test_version_3_file_without_the_charge_model_opens_with_the_semiclassical_charge():
    """The charge model came after version 3 with a default that keeps what a version-3
    file meant: a file without it opens (the reader names the field), one with it keeps
    it (version 4 added only the optional measured member)."""
    current = SnapshotSettings.from_dict(_v1_document()).to_dict()
    assert current["schema_version"] == SCHEMA_VERSION
    assert current["design"]["charge_model"] == "semiclassical"
    current["schema_version"] = 3
    del current["design"]["charge_model"]
    settings, report = import_snapshot(json.dumps(current).encode())
    assert settings.design.charge_model == "semiclassical"
    assert report.added_fields == ("charge_model",)
    current["design"]["charge_model"] = "subbands"
    settings, report = import_snapshot(json.dumps(current).encode())
    assert settings.design.charge_model == "subbands" and report.added_fields == ()
    assert SnapshotSettings.from_dict(settings.to_dict()).design.charge_model == "subbands"
    current["design"]["charge_model"] = "quantum"
    with pytest.raises(SnapshotError, match="charge_model"):
        SnapshotSettings.from_dict(current)


def test_version_1_file_may_not_hold_fields_of_a_later_version():
    added = added_design_fields(1)
    if not added:
        pytest.skip("no design field has been added since version 1")
    doc = _v1_document()
    field = next(f for f in dataclasses.fields(Design) if f.name == added[0])
    doc["design"][added[0]] = getattr(Design(), field.name)
    with pytest.raises(SnapshotError, match=added[0]):
        SnapshotSettings.from_dict(doc)


def _v2_document() -> dict:
    doc = json.loads(files("sub60.assets").joinpath("presets", "ingaas-tunnel-fet.json")
                     .read_text("utf-8"))
    assert doc["schema_version"] == 2
    assert sorted(doc["design"]) == sorted(DESIGN_FIELDS_V2)
    return doc


def test_version_2_file_opens_as_a_homojunction():
    """A version-2 preset (written before heterojunction sources) opens with the source
    of the body material, and the reader names the fields it predates."""
    settings, report = import_snapshot(json.dumps(_v2_document()).encode())
    assert settings.schema_version == 2
    assert not settings.design.is_heterojunction
    assert settings.design.source_material == "same"
    assert report.added_fields == HETEROJUNCTION_FIELDS + OPTIONAL_DESIGN_FIELDS \
        == added_design_fields(2)


def test_version_2_file_may_not_hold_the_heterojunction_fields():
    doc = _v2_document()
    doc["design"]["source_material"] = "GaSb"
    with pytest.raises(SnapshotError, match="source_material"):
        SnapshotSettings.from_dict(doc)


def test_heterojunction_design_round_trips_through_the_current_version():
    settings = SnapshotSettings.from_dict(_v2_document())
    hetero = settings.replace(design=settings.design.replace(
        source_material="GaAsSb", source_composition_x=0.4, heterointerface_nm=-1.5))
    again = SnapshotSettings.from_dict(json.loads(hetero.to_json()))
    assert again.design == hetero.design and again.design.is_heterojunction
