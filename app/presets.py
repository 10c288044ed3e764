"""Demo presets: snapshot settings shipped as package data (``sub60.assets/presets``),
found through `importlib.resources`. UI-free.
"""

from __future__ import annotations

import importlib.resources
import warnings
from collections.abc import Callable
from pathlib import Path

from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import SnapshotSettings

PRESET_DIR = Path(str(importlib.resources.files("sub60.assets"))) / "presets"


def _preset_files() -> dict[str, Path]:
    if not PRESET_DIR.is_dir():
        return {}
    return {p.stem: p for p in sorted(PRESET_DIR.glob("*.json"))}


def load_preset(name: str) -> SnapshotSettings:
    """The settings of a demo preset of assets/presets/ (SnapshotError if unknown/invalid)."""
    files = _preset_files()
    if name not in files:
        known = ", ".join(files) or "none found in " + str(PRESET_DIR)
        raise SnapshotError(f"preset {name!r}: unknown; known presets: {known}")
    settings, _ = import_snapshot(files[name].read_bytes())
    return settings


def list_presets(on_error: Callable[[str, Exception], None] | None = None
                 ) -> dict[str, SnapshotSettings]:
    """Every readable preset by name. A preset that fails to load is skipped with a
    warning (or passed to ``on_error``), so one bad file does not take the others down;
    an absent presets folder gives an empty dictionary."""
    out: dict[str, SnapshotSettings] = {}
    for name in _preset_files():
        try:
            out[name] = load_preset(name)
        except (SnapshotError, OSError) as exc:
            if on_error is not None:
                on_error(name, exc)
            else:
                warnings.warn(f"preset {name!r} skipped: {exc}", stacklevel=2)
    return out
