"""Snapshots and the alloy composition field of the design record.

A version-1 file (written before the field existed) opens with ``composition_x`` at its
default, 0, and says so; a snapshot of an alloy design carries its composition (round
trip)."""

from __future__ import annotations

import json

from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import DESIGN_FIELDS_V1, SnapshotSettings, added_design_fields
from sub60.physics.design import Design


def test_version_1_snapshot_opens_with_composition_at_its_default():
    doc = SnapshotSettings().to_dict()
    assert doc["design"]["composition_x"] == 0.0
    doc["schema_version"] = 1
    doc["design"] = {k: v for k, v in doc["design"].items() if k in DESIGN_FIELDS_V1}
    settings, report = import_snapshot(json.dumps(doc).encode())
    assert settings.design == Design() and settings.design.composition_x == 0.0
    assert "composition_x" in added_design_fields(1) and "composition_x" in report.added_fields


def test_alloy_design_round_trips():
    design = Design(material="SiGe", composition_x=0.25)
    doc = SnapshotSettings(design=design).to_dict()
    settings, _ = import_snapshot(json.dumps(doc).encode())
    assert settings.design == design and settings.design.semiconductor.name == "SiGe (x = 0.25)"
