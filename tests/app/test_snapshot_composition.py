"""Snapshots and the alloy composition field added to the design record.

A snapshot written before the field existed (no ``design.composition_x``) opens as the
same design; a snapshot of an alloy design carries its composition (round trip)."""

from __future__ import annotations

import json

from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import SnapshotSettings
from sub60.physics.design import Design


def test_old_snapshot_without_composition_opens_unchanged():
    doc = SnapshotSettings().to_dict()
    assert doc["design"]["composition_x"] == 0.0
    del doc["design"]["composition_x"]
    settings, _ = import_snapshot(json.dumps(doc).encode())
    assert settings.design == Design()


def test_alloy_design_round_trips():
    design = Design(material="SiGe", composition_x=0.25)
    doc = SnapshotSettings(design=design).to_dict()
    settings, _ = import_snapshot(json.dumps(doc).encode())
    assert settings.design == design and settings.design.semiconductor.name == "SiGe (x = 0.25)"
