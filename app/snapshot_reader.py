"""Reading a snapshot file: a zip archive or a bare settings.json, in memory, strictly.

A hostile file cannot make the reader write, extract, expand without bound or follow a
link: the input size, the member count, the total expanded size and the settings.json
size are capped; member names with absolute paths, drive letters, ``..``, backslashes or
unusual characters, symbolic links, encrypted members and repeated names are refused;
JSON with NaN/Infinity, overflowing numbers or repeated keys is refused. Every refusal
is a `SnapshotError` naming the problem. UI-free.
"""

from __future__ import annotations

import io
import re
import stat
import zipfile
import zlib
from dataclasses import dataclass, field
from typing import Any

from sub60.app.number_rules import InputError, parse_json
from sub60.app.snapshot_check import METRIC_REL_TOL, Difference, verify_snapshot
from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_schema import (
    SCHEMA_VERSION,
    SETTINGS_MEMBER,
    SnapshotSettings,
    added_design_fields,
    physics_notes,
    sub60_version,
)
from sub60.physics import Simulator

#: Largest snapshot accepted (zip or bare settings.json) [bytes].
MAX_SNAPSHOT_BYTES = 20 * 1024 * 1024
#: Largest settings.json accepted [bytes] (a measured file's curves and fit, at most
#: `app.snapshot_measured.MAX_STORED_POINTS` points, take up to about 1.5 MB of it).
MAX_SETTINGS_BYTES = 4 * 1024 * 1024
#: Zip-bomb guards: members, and their total uncompressed size [bytes].
MAX_MEMBERS = 64
MAX_UNCOMPRESSED_BYTES = 64 * 1024 * 1024


# ---------------------------------------------------------------------- bytes -> settings
def _parse_json(raw: bytes, what: str) -> Any:
    """Strict JSON by the shared rules (`app.number_rules.parse_json`): UTF-8, no
    NaN/Infinity, no overflowing numbers, no repeated keys, no lone surrogates."""
    try:
        return parse_json(raw, what)
    except InputError as exc:
        raise SnapshotError(str(exc)) from None


def _mb(n: int) -> str:
    return f"{n / 1024 / 1024:.3g} MB"


def _over(what: str, size: int, limit: int) -> SnapshotError:
    return SnapshotError(f"{what}: {size} bytes, over the limit of {_mb(limit)} ({limit} bytes)")


_SAFE_NAME = re.compile(r"[A-Za-z0-9_][A-Za-z0-9._-]*(/[A-Za-z0-9_][A-Za-z0-9._-]*)*/?")


def _check_member(info: zipfile.ZipInfo) -> None:
    name = info.filename
    if "\\" in name:
        raise SnapshotError(f"zip member {name!r}: backslash in the path is not allowed")
    if name.startswith("/"):
        raise SnapshotError(f"zip member {name!r}: absolute path is not allowed")
    if re.match(r"[A-Za-z]:", name):
        raise SnapshotError(f"zip member {name!r}: drive letter in the path is not allowed")
    if ".." in name.split("/"):
        raise SnapshotError(f"zip member {name!r}: '..' in the path is not allowed")
    if not _SAFE_NAME.fullmatch(name):
        raise SnapshotError(f"zip member {name!r}: unusual characters in the path; "
                            "allowed are letters, digits, '.', '_', '-' and '/'")
    mode = info.external_attr >> 16
    if stat.S_ISLNK(mode):
        raise SnapshotError(f"zip member {name!r}: symbolic links are not allowed")
    if info.flag_bits & 0x1:
        raise SnapshotError(f"zip member {name!r}: encrypted members are not supported")


#: What the standard zip reader raises on a damaged or unusual archive besides its own
#: BadZipFile: a corrupt deflate stream (zlib.error), an unsupported zip version or
#: feature (NotImplementedError), a password needed (RuntimeError), header fields that
#: do not fit (struct.error is a subclass of Exception only; OverflowError, ValueError,
#: EOFError, OSError), a member name that is not text (UnicodeDecodeError).
_ZIP_FAILURES = (zipfile.BadZipFile, zipfile.LargeZipFile, zlib.error, NotImplementedError,
                 RuntimeError, OverflowError, ValueError, EOFError, OSError, LookupError)


def _settings_from_zip(data: bytes, max_settings_bytes: int) -> tuple[bytes, list[str]]:
    """The raw settings.json of a zip, read in memory; every failure of the zip reader on
    a damaged archive becomes one `SnapshotError`."""
    try:
        return _read_zip(data, max_settings_bytes)
    except SnapshotError:
        raise
    except _ZIP_FAILURES as exc:
        raise SnapshotError(f"snapshot: a damaged or unsupported zip archive ({_reason(exc)})") \
            from None
    except Exception as exc:  # noqa: BLE001 - a hostile file: one message, never a traceback
        raise SnapshotError(f"snapshot: a damaged zip archive ({_reason(exc)})") from None


def _reason(exc: BaseException) -> str:
    text = str(exc).strip() or type(exc).__name__
    return ascii(text)[1:-1][:160]


def _read_zip(data: bytes, max_settings_bytes: int) -> tuple[bytes, list[str]]:
    """The raw settings.json of a zip, read in memory; checks every member's header."""
    try:
        zf = zipfile.ZipFile(io.BytesIO(data))
    except (zipfile.BadZipFile, zipfile.LargeZipFile, ValueError, EOFError) as exc:
        raise SnapshotError(f"snapshot: not a valid zip archive ({exc})") from None
    with zf:
        infos = zf.infolist()
        if len(infos) > MAX_MEMBERS:
            raise SnapshotError(f"snapshot: {len(infos)} zip members; the limit is {MAX_MEMBERS}")
        seen: set[str] = set()
        total = 0
        for info in infos:
            _check_member(info)
            key = info.filename.lower()
            if key in seen:
                raise SnapshotError(f"zip member {info.filename!r}: appears twice in the archive "
                                    "(names that differ only in case count as one)")
            seen.add(key)
            total += info.file_size
        if total > MAX_UNCOMPRESSED_BYTES:
            raise SnapshotError(f"snapshot: members expand to {total} bytes, over the limit of "
                                f"{_mb(MAX_UNCOMPRESSED_BYTES)} (possible zip bomb)")
        names = [i.filename for i in infos]
        matches = [i for i in infos if i.filename == SETTINGS_MEMBER]
        if not matches:
            raise SnapshotError(f"snapshot: missing {SETTINGS_MEMBER} (the archive holds "
                                + (", ".join(names[:8]) or "nothing") + ")")
        info = matches[0]
        if info.compress_type not in (zipfile.ZIP_STORED, zipfile.ZIP_DEFLATED):
            raise SnapshotError(f"zip member {SETTINGS_MEMBER!r}: unsupported compression "
                                f"(method {info.compress_type}); use deflate or none")
        if info.file_size > max_settings_bytes:
            raise _over(SETTINGS_MEMBER, info.file_size, max_settings_bytes)
        try:
            with zf.open(info) as fh:  # in memory; capped whatever the header claims
                raw = fh.read(max_settings_bytes + 1)
        except _ZIP_FAILURES as exc:
            raise SnapshotError(f"zip member {SETTINGS_MEMBER!r}: cannot be read "
                                f"({_reason(exc)})") from None
        if len(raw) > max_settings_bytes:
            raise SnapshotError(f"{SETTINGS_MEMBER}: over the limit of {_mb(max_settings_bytes)} "
                                "(more data than its zip header states)")
        return raw, names


@dataclass
class ImportReport:
    """What an import found.

    source : "zip" or "settings.json"; members : names inside a zip;
    file_version : sub60 version that wrote the file (None when not stated);
    current_version : this sub60; version_matches : the two are equal;
    has_stored : the file holds figures of merit to compare;
    added_fields : design fields this sub60 has that the file's schema version predates
    (read at their defaults: non-ideal physics off, materials as before);
    verified : a recomputation was made; differences : what it found (empty = match);
    physics_notes : physics revisions that concern the stored design
    (`snapshot_schema.physics_notes`), shown with the differences they explain.
    """

    source: str
    members: list[str]
    file_version: str | None
    current_version: str
    has_stored: bool
    added_fields: tuple[str, ...] = ()
    verified: bool = False
    differences: list[Difference] = field(default_factory=list)
    physics_notes: tuple[str, ...] = ()

    @property
    def version_matches(self) -> bool:
        return self.file_version == self.current_version

    @property
    def metrics_match(self) -> bool | None:
        """True/False after a verification with stored results; None otherwise."""
        if not (self.verified and self.has_stored):
            return None
        return not self.differences

    def lines(self) -> list[str]:
        """A short human-readable account."""
        out = [f"read {self.source}"
               + (f" ({len(self.members)} members)" if self.source == "zip" else "")]
        if self.file_version is None:
            out.append(f"written by an unstated sub60 version; this is {self.current_version}")
        elif self.version_matches:
            out.append(f"written by this sub60 version ({self.current_version})")
        else:
            out.append(f"written by sub60 {self.file_version}; this is {self.current_version}: "
                       "differences are reported, not treated as errors")
        if self.added_fields:
            out.append("an older snapshot layout: settings added since are at their defaults "
                       "(non-ideal physics off, materials as before): "
                       + ", ".join(self.added_fields))
        if not self.has_stored:
            out.append("no stored figures of merit to compare")
        elif not self.verified:
            out.append("figures of merit not recomputed yet")
        elif not self.differences:
            out.append(f"recomputed figures of merit match the stored ones "
                       f"(relative {METRIC_REL_TOL:g})")
        else:
            out.append(f"{len(self.differences)} recomputed value(s) differ from the stored ones:")
            out.extend(f"  {d}" for d in self.differences)
        if self.physics_notes and not (self.verified and not self.differences):
            out.extend(self.physics_notes)
        return out


def import_snapshot(data: bytes, max_bytes: int = MAX_SNAPSHOT_BYTES, *,
                    max_settings_bytes: int = MAX_SETTINGS_BYTES, verify: bool = False,
                    simulator: Simulator | None = None) -> tuple[SnapshotSettings, ImportReport]:
    """Read a snapshot zip or a bare settings.json, strictly; nothing is written.

    Parameters
    ----------
    data : bytes
        the file's content (zip archive or settings.json text).
    max_bytes : int
        largest accepted input [bytes].
    max_settings_bytes : int
        largest accepted settings.json [bytes].
    verify : bool
        also recompute the figures of merit and compare (`verify_snapshot`) [-].
    simulator : Simulator or None
        for the recomputation; None: a fresh one with the snapshot's model settings.

    Returns
    -------
    (SnapshotSettings, ImportReport)

    Raises
    ------
    SnapshotError
        naming the problem: not a zip/JSON, too large, zip tricks, schema, types,
        NaN/inf, unknown fields, out-of-range values.
    """
    if not isinstance(data, (bytes, bytearray, memoryview)):
        raise SnapshotError(f"snapshot: expected bytes, got {type(data).__name__}")
    data = bytes(data)
    if not data:
        raise SnapshotError("snapshot: the file is empty")
    if len(data) > max_bytes:
        raise _over("snapshot", len(data), max_bytes)
    members: list[str] = []
    if data[:2] == b"PK":
        raw, members = _settings_from_zip(data, max_settings_bytes)
        source = "zip"
    elif data.lstrip(b" \t\r\n\xef\xbb\xbf")[:1] == b"{":
        if len(data) > max_settings_bytes:
            raise _over(SETTINGS_MEMBER, len(data), max_settings_bytes)
        raw, source = data, SETTINGS_MEMBER
    else:
        raise SnapshotError("snapshot: neither a zip archive nor a JSON settings file")
    doc = _parse_json(raw, SETTINGS_MEMBER)
    try:
        settings = SnapshotSettings.from_dict(doc)
    except SnapshotError as exc:
        raise SnapshotError(f"{SETTINGS_MEMBER}: {exc}") from None
    report = ImportReport(source, members, settings.sub60_version, sub60_version(),
                          settings.stored is not None,
                          added_design_fields(settings.schema_version or SCHEMA_VERSION,
                                              doc.get("design") if isinstance(doc, dict) else None),
                          physics_notes=physics_notes(settings.design))
    if verify:
        report.differences = verify_snapshot(settings, simulator)
        report.verified = True
    return settings, report

