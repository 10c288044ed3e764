"""Snapshots written before the non-ideality fields (interface traps, series resistance)
existed (schema version 1) still open, with those non-idealities off (the design
record's defaults); version-2 files store them."""

from __future__ import annotations

import json

import pytest

from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_schema import (
    SCHEMA_VERSION,
    PinnedDesign,
    SnapshotSettings,
    TransferSweep,
    added_design_fields,
)
from sub60.physics import Design

NEW_FIELDS = ("interface_trap_density_cm2eV", "interface_trap_profile",
              "interface_trap_neutral_level_eV", "source_resistance_ohm_um",
              "drain_resistance_ohm_um")


def settings() -> SnapshotSettings:
    return SnapshotSettings(
        design=Design(body_thickness_nm=5.0),
        pinned=(PinnedDesign("thin oxide", Design(oxide_thickness_nm=1.5),
                             TransferSweep(-0.2, 0.5, 15, 0.3)),),
        title="older file")


def test_a_design_without_the_non_ideality_fields_opens_with_them_off():
    data = json.loads(settings().to_json())
    data["schema_version"] = 1
    assert set(NEW_FIELDS) <= set(added_design_fields(1))
    for design in (data["design"], data["pinned"][0]["design"]):
        for name in added_design_fields(1):  # a version-1 file holds none of them
            del design[name]
    back = SnapshotSettings.from_dict(data)
    assert back.design == Design(body_thickness_nm=5.0)
    assert back.design.interface_trap_density_cm2eV == 0.0
    assert back.design.source_resistance_ohm_um == back.design.drain_resistance_ohm_um == 0.0
    assert back.pinned[0].design == Design(oxide_thickness_nm=1.5)


def test_the_non_ideality_fields_round_trip_and_older_fields_stay_required():
    s = settings().replace(design=Design(interface_trap_density_cm2eV=3e12,
                                         interface_trap_profile="u-shaped",
                                         source_resistance_ohm_um=120.0))
    back = SnapshotSettings.from_dict(json.loads(s.to_json()))
    assert back.design == s.design and back.schema_version == SCHEMA_VERSION
    data = json.loads(s.to_json())
    del data["design"]["temperature_K"]
    with pytest.raises(SnapshotError, match="design.temperature_K: missing"):
        SnapshotSettings.from_dict(data)
