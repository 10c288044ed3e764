"""Snapshot files and demo designs of one explorer session (no Panel, no Bokeh).

`snapshot_of_session` and `export_session` turn the page's settings, numerical model and
pinned designs into a snapshot file; `open_snapshot` reads an uploaded file into the
parameter values that restore it, refusing (with the reason) anything the page cannot
use before it changes a thing; `presets` lists the demo designs of assets/presets.
"""

from __future__ import annotations

import datetime as _dt
import functools
import logging
from dataclasses import dataclass
from typing import Any

from sub60.app.messages import html_escape
from sub60.app.pinning import PinBoard, PinError
from sub60.app.presets import list_presets
from sub60.app.sharing import settings_from_state, state_updates
from sub60.app.snapshot_bundle import export_snapshot
from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import ModelSettings, SnapshotSettings
from sub60.app.state import ExplorerState

#: Largest snapshot the page opens [bytes]; the file travels base64-encoded over the
#: page's websocket (20 MB per message by default), so the page takes less than the file
#: format's own limit (`app.snapshot.MAX_SNAPSHOT_BYTES`).
UPLOAD_LIMIT_BYTES = 10 * 1024 * 1024

log = logging.getLogger("sub60.app")


class FileRefused(ValueError):
    """A file the page does not open; the message says why, for the page (escaped)."""


@dataclass
class OpenedSnapshot:
    """A snapshot ready to be applied to a page."""

    settings: SnapshotSettings
    report: Any                 # app.snapshot's import report (stored vs. recomputed)
    updates: dict[str, Any]     # parameter values for one state.param.update
    notes: list[str]            # what the page cannot show exactly as the file states it


def snapshot_of_session(state: ExplorerState, board: PinBoard, simulator: Any,
                        measured: Any = None) -> SnapshotSettings:
    """The snapshot settings of a page: controls, numerical model, pinned designs, and
    the measured-curve card's file and fit (`app.snapshot_measured.MeasuredSnapshot`,
    None: no file open)."""
    model = ModelSettings(simulator.resolution, state.tunnelling_model)
    settings = settings_from_state(state, [p.record() for p in board.pins], model)
    return settings if measured is None else settings.replace(measured=measured)


def export_session(settings: SnapshotSettings,
                   created: _dt.datetime | None = None) -> tuple[str, bytes]:
    """(file name, zip bytes) of a snapshot, every curve recomputed from scratch."""
    when = (created or _dt.datetime.now(_dt.UTC)).replace(microsecond=0)
    stamp = when.isoformat().replace("+00:00", "Z")
    data = export_snapshot(settings, created_utc=stamp)
    return f"sub60-snapshot-{when:%Y-%m-%dT%H%M%S}Z.zip", data


def open_snapshot(data: bytes, filename: str = "the file") -> OpenedSnapshot:
    """Read an uploaded snapshot (zip or settings.json) and check that the page can show
    every value and pinned name.

    Raises
    ------
    FileRefused
        over `UPLOAD_LIMIT_BYTES`, not a snapshot, or a value outside a control's range;
        the message names the file and the reason, escaped for the page.
    """
    label = html_escape(filename)
    if len(data) > UPLOAD_LIMIT_BYTES:
        raise FileRefused(f"**{label} not opened**: {len(data)} bytes, over the page's limit "
                          f"of {UPLOAD_LIMIT_BYTES / 1024 / 1024:g} MB. Nothing was changed.")
    try:
        settings, report = import_snapshot(bytes(data), max_bytes=UPLOAD_LIMIT_BYTES)
        updates, notes = state_updates(settings)
        PinBoard().replace_all(settings.pinned, settings.transfer_sweep)  # names usable?
    except (SnapshotError, PinError) as exc:
        raise FileRefused(f"**{label} not opened**: {html_escape(str(exc))}. "
                          "Nothing was changed.") from exc
    return OpenedSnapshot(settings, report, updates, notes)


def open_preset(name: str) -> OpenedSnapshot:
    """A demo design of assets/presets, ready to be applied (FileRefused if unusable)."""
    settings = presets().get(name)
    if settings is None:
        raise FileRefused(f"**Demo design {html_escape(repr(name))} not found**.")
    try:
        updates, notes = state_updates(settings)
    except SnapshotError as exc:
        raise FileRefused(f"**Demo design {html_escape(repr(name))} not loaded**: "
                          f"{html_escape(str(exc))}") from exc
    return OpenedSnapshot(settings, None, updates, notes)


@functools.lru_cache(maxsize=1)
def presets() -> dict[str, SnapshotSettings]:
    """The demo designs of assets/presets (read once per process; bad files skipped)."""
    return list_presets(on_error=lambda name, exc: log.warning("preset %r skipped: %s",
                                                               name, exc))


def preset_labels() -> dict[str, str]:
    """Preset name -> short label (its title up to the colon)."""
    return {name: (s.title or name).split(":")[0] for name, s in presets().items()}
