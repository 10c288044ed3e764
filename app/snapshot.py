"""Snapshots: the settings of one view, saved as one file and opened again.

A snapshot is a zip archive that the user downloads::

    settings.json          the view settings (the only member an import reads)
    README.txt             what the files are, and the model caution
    bands.csv              band diagram at the bias point
    spectrum.csv           band-to-band spectral current and transmission
    transfer.csv           Id-Vg of the design and of its MOSFET twin, with the point swing
    output.csv             Id-Vd, one column per gate voltage
    pinned.csv             Id-Vg of each pinned design (only when designs are pinned)
    figures/*.png, *.svg   static figures (matplotlib, `app.figures`)
    plots.html             the same plots, interactive, in one page that works offline

`settings.json` is sub60's own format (schema ``"sub60.snapshot"``, version 1)::

    schema            str    "sub60.snapshot"
    schema_version    int    1
    sub60_version     str    version of sub60 that wrote the file (export)
    created_utc       str    ISO 8601 time of the export, UTC (export)
    title, note       str    optional free text
    design            object the complete `physics.design.Design` record
    bias              object vg_V, vd_V [V] of the band diagram and spectrum
    transfer_sweep    object vg_start_V, vg_stop_V [V], vg_points [-], vd_V [V]
    output_sweep      object vg_V (list) [V], vd_start_V, vd_stop_V [V], vd_points [-]
    metric_settings   object vdd_V [V], ioff_target_uA_per_um [uA/um]
    model             object resolution [-], tunnelling_model ("two-band" | "one-band")
    pinned            list   of {name, design, transfer_sweep (optional)}
    stored            object figures of merit found at export (export): design, twin,
                             pinned (list), each {metrics, reasons}; bias
                             {current_uA_per_um, window_eV ([min, max] or null)}

An import validates strictly (`import_snapshot`): it reads members in memory only,
never writes anything, and raises `SnapshotError` naming the problem. The stored
figures of merit let `verify_snapshot` recompute and compare.

The code is split by concern, in layers (each imports only those above it in this list):

    app.snapshot_fields   strict field-by-field reading of JSON, `SnapshotError`
    app.snapshot_schema   the settings records, their JSON form and validation
    app.snapshot_check    computing a snapshot's results, verifying stored ones
    app.snapshot_reader   bytes -> settings: zip and JSON checks against hostile files
    app.presets           demo presets shipped as package data
    app.tables            curves as tables {column_with_unit: array}, the CSV writer
    app.snapshot_bundle   the zip archive (export layer: calls app.figures)

This module re-exports their public names so that ``from sub60.app.snapshot import ...``
keeps working; new code imports from the module that defines the name.
"""

from __future__ import annotations

from sub60.app.presets import PRESET_DIR, list_presets, load_preset
from sub60.app.snapshot_bundle import (
    bands_csv,
    export_snapshot,
    output_csv,
    pinned_csv,
    readme_text,
    snapshot_members,
    spectrum_csv,
    stamp,
    transfer_csv,
)
from sub60.app.snapshot_check import (
    METRIC_ABS_TOL,
    METRIC_REL_TOL,
    Difference,
    SnapshotResults,
    compare_stored,
    compute_results,
    verify_snapshot,
)
from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_reader import (
    MAX_MEMBERS,
    MAX_SETTINGS_BYTES,
    MAX_SNAPSHOT_BYTES,
    MAX_UNCOMPRESSED_BYTES,
    ImportReport,
    import_snapshot,
)
from sub60.app.snapshot_schema import (
    FALLBACK_VERSION,
    IOFF_TARGET_RANGE_UA_PER_UM,
    MAX_NAME_CHARS,
    MAX_NOTE_CHARS,
    MAX_OUTPUT_CURVES,
    MAX_PINNED,
    MAX_TITLE_CHARS,
    MODEL_CAUTION,
    RESOLUTION_RANGE,
    SCHEMA_NAME,
    SCHEMA_VERSION,
    SETTINGS_MEMBER,
    TUNNELLING_MODELS,
    VD_POINTS_RANGE,
    VDD_RANGE_V,
    VG_POINTS_RANGE,
    BiasSettings,
    CurveRecord,
    MetricSettings,
    ModelSettings,
    OutputSweep,
    PinnedDesign,
    SnapshotSettings,
    StoredResults,
    TransferSweep,
    sub60_version,
)

__all__ = [
    "FALLBACK_VERSION", "IOFF_TARGET_RANGE_UA_PER_UM", "MAX_MEMBERS", "MAX_NAME_CHARS",
    "MAX_NOTE_CHARS", "MAX_OUTPUT_CURVES", "MAX_PINNED", "MAX_SETTINGS_BYTES",
    "MAX_SNAPSHOT_BYTES", "MAX_TITLE_CHARS", "MAX_UNCOMPRESSED_BYTES", "METRIC_ABS_TOL",
    "METRIC_REL_TOL", "MODEL_CAUTION", "PRESET_DIR", "RESOLUTION_RANGE", "SCHEMA_NAME",
    "SCHEMA_VERSION", "SETTINGS_MEMBER", "TUNNELLING_MODELS", "VDD_RANGE_V", "VD_POINTS_RANGE",
    "VG_POINTS_RANGE", "BiasSettings", "CurveRecord", "Difference", "ImportReport",
    "MetricSettings", "ModelSettings", "OutputSweep", "PinnedDesign", "SnapshotError",
    "SnapshotResults", "SnapshotSettings", "StoredResults", "TransferSweep", "bands_csv",
    "compare_stored", "compute_results", "export_snapshot", "import_snapshot", "list_presets",
    "load_preset", "output_csv", "pinned_csv", "readme_text", "snapshot_members",
    "spectrum_csv", "stamp", "sub60_version", "transfer_csv", "verify_snapshot",
]
