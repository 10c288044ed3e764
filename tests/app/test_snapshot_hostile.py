"""Hostile snapshot files: every one must be refused with a message naming the problem,
and nothing may be written while reading it.

Each case is one change to a valid snapshot (checked to import cleanly first), so a case
fails for its stated reason and for no other. Sources of the format rules checked:

- zip layout (local header signature PK\\x03\\x04, general-purpose flag bit 0 =
  encrypted, Unix mode in the high 16 bits of the external attributes): PKWARE
  APPNOTE.TXT, sections 4.3.7, 4.4.4 and 4.4.15 (section numbers from memory);
- JSON: RFC 8259 section 6 — NaN and Infinity are not JSON numbers, so Python's
  extension that reads them must be refused; section 4 — names within an object
  SHOULD be unique (a repeated key is ambiguous, refused here);
- ISO 8601 times with a UTC designator (Z or +00:00);
- the limits themselves (20 MB, 1 MB, 64 members, 64 MB expanded, 3-201 points) are
  engineering choices of sub60 (common practice, no source).
"""

from __future__ import annotations

import builtins
import copy
import io
import json
import stat
import zipfile

import pytest

from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_reader import (
    MAX_MEMBERS,
    MAX_SETTINGS_BYTES,
    MAX_SNAPSHOT_BYTES,
    MAX_UNCOMPRESSED_BYTES,
    import_snapshot,
)
from sub60.app.snapshot_schema import SCHEMA_VERSION, PinnedDesign, SnapshotSettings
from sub60.physics.design import Design
from sub60.physics.metrics import Metrics


def valid_doc() -> dict:
    """A complete settings.json with stored results (values only need to be well-formed:
    these tests never recompute)."""
    s = SnapshotSettings(pinned=(PinnedDesign("thin oxide", Design(oxide_thickness_nm=1.5)),))
    doc = s.to_dict()
    doc["sub60_version"] = "0.1.0"
    doc["created_utc"] = "2024-05-01T12:00:00Z"
    rec = {"metrics": {name: 1.0 for name in Metrics.METRIC_NAMES}, "reasons": {}}
    doc["stored"] = {"design": rec, "twin": copy.deepcopy(rec), "pinned": [copy.deepcopy(rec)],
                     "bias": {"current_uA_per_um": 1.0, "window_eV": [-0.2, 0.0]}}
    return doc


def as_json(doc) -> bytes:
    return json.dumps(doc).encode()


def make_zip(members: list[tuple[str | zipfile.ZipInfo, bytes]]) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, content in members:
            zf.writestr(name, content)
    return buf.getvalue()


def valid_zip(extra: list[tuple[str | zipfile.ZipInfo, bytes]] = ()) -> bytes:
    return make_zip([("settings.json", as_json(valid_doc())), ("README.txt", b"hello"),
                     *extra])


def mutated(change) -> bytes:
    doc = valid_doc()
    change(doc)
    return as_json(doc)


def symlink_zip() -> bytes:
    info = zipfile.ZipInfo("settings.json")
    info.create_system = 3  # Unix, so the mode bits are meaningful
    info.external_attr = (stat.S_IFLNK | 0o777) << 16
    return make_zip([(info, b"/etc/passwd")])


def encrypted_zip() -> bytes:
    # zipfile cannot write encrypted members: set the flag bit in both headers by hand
    data = bytearray(valid_zip())
    local = data.find(b"PK\x03\x04")
    central = data.find(b"PK\x01\x02")
    data[local + 6] |= 0x1
    data[central + 8] |= 0x1
    return bytes(data)


def bomb_zip() -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("settings.json", as_json(valid_doc()))
        with zf.open("padding.bin", "w") as fh:
            chunk = bytes(1 << 20)
            for _ in range(MAX_UNCOMPRESSED_BYTES // len(chunk) + 1):
                fh.write(chunk)
    return buf.getvalue()


def big_settings_zip() -> bytes:
    doc = valid_doc()
    doc["note"] = "x"  # padding after the JSON keeps it valid; the size must refuse it
    text = json.dumps(doc) + " " * (MAX_SETTINGS_BYTES + 10)
    return make_zip([("settings.json", text.encode())])


def set_path(path: list, value):
    def change(doc):
        node = doc
        for key in path[:-1]:
            node = node[key]
        node[path[-1]] = value
    return change


def delete_path(path: list):
    def change(doc):
        node = doc
        for key in path[:-1]:
            node = node[key]
        del node[path[-1]]
    return change


#: (id, data factory, fragments the message must contain)
CASES = [
    ("empty", lambda: b"", ["empty"]),
    ("not-zip-nor-json", lambda: b"\x89GIF garbage \x00\x01", ["neither a zip", "JSON"]),
    ("truncated-zip", lambda: valid_zip()[:40], ["not a valid zip"]),
    ("too-large-input", lambda: b"PK" + bytes(MAX_SNAPSHOT_BYTES),
     ["snapshot", "over the limit of 20 MB"]),
    ("too-large-settings-json", lambda: as_json(valid_doc()) + b" " * MAX_SETTINGS_BYTES,
     ["settings.json", "over the limit of 4 MB"]),
    ("too-large-settings-in-zip", big_settings_zip, ["settings.json", "over the limit of 4 MB"]),
    ("zip-bomb", bomb_zip, ["zip bomb", "limit of 64 MB"]),
    ("too-many-members",
     lambda: valid_zip([(f"m{i}.txt", b"x") for i in range(MAX_MEMBERS)]), ["members", "64"]),
    ("missing-settings", lambda: make_zip([("README.txt", b"hi")]), ["missing settings.json"]),
    ("absolute-path", lambda: valid_zip([("/etc/cron.d/x", b"x")]), ["/etc/cron.d/x", "absolute"]),
    ("dot-dot", lambda: valid_zip([("figures/../../evil.sh", b"x")]), ["'..'"]),
    ("backslash", lambda: valid_zip([("figures\\evil.png", b"x")]), ["backslash"]),
    ("drive-letter", lambda: valid_zip([("C:/Windows/evil.dll", b"x")]), ["drive letter"]),
    ("control-char-name", lambda: valid_zip([("fig\x07.png", b"x")]), ["unusual characters"]),
    ("symlink", symlink_zip, ["symbolic link"]),
    ("duplicate-member", lambda: valid_zip([("Settings.JSON", b"{}")]), ["appears twice"]),
    ("encrypted", encrypted_zip, ["encrypted"]),
    ("bad-json", lambda: b'{"schema": "sub60.snapshot",', ["not valid JSON", "line 1"]),
    ("not-utf8", lambda: b'{"title": "\xff\xfe"}', ["not UTF-8"]),
    ("nan-literal", lambda: as_json(valid_doc()).replace(b'"vg_V": 0.3', b'"vg_V": NaN', 1),
     ["NaN is not allowed"]),
    ("infinity-literal",
     lambda: as_json(valid_doc()).replace(b'"vg_V": 0.3', b'"vg_V": -Infinity', 1),
     ["-Infinity is not allowed"]),
    ("overflowing-float",
     lambda: as_json(valid_doc()).replace(b'"vg_V": 0.3', b'"vg_V": 1e999', 1),
     ["1e999", "too large"]),
    ("huge-integer",
     lambda: as_json(valid_doc()).replace(b'"vg_points": 41', b'"vg_points": ' + b"9" * 400, 1),
     ["integer", "too large"]),
    ("duplicate-key", lambda: b'{"schema": "sub60.snapshot", "schema": "other"}',
     ["'schema' appears twice"]),
    ("deep-nesting", lambda: b'{"title": ' + b"[" * 100000 + b"]" * 100000 + b"}",
     ["nested too deeply"]),
    ("top-level-array", lambda: b"[1, 2, 3]", ["neither a zip"]),
    ("top-level-not-object-in-zip", lambda: make_zip([("settings.json", b"[1, 2]")]),
     ["top level: expected a JSON object, got an array"]),
    ("no-schema", lambda: mutated(delete_path(["schema"])), ["schema: missing", "not a sub60"]),
    ("other-schema", lambda: mutated(set_path(["schema"], "other.tool.state")),
     ['"other.tool.state"', "another schema"]),
    ("future-version", lambda: mutated(set_path(["schema_version"], SCHEMA_VERSION + 1)),
     [f"schema_version: {SCHEMA_VERSION + 1}", "future schema version"]),
    ("version-as-text", lambda: mutated(set_path(["schema_version"], "1")),
     ["schema_version", "expected an integer"]),
    ("unknown-top-field", lambda: mutated(set_path(["colour_theme"], "dark")),
     ["colour_theme: unknown field"]),
    ("unknown-design-field", lambda: mutated(set_path(["design", "fin_count"], 3)),
     ["design.fin_count: unknown field"]),
    ("unknown-sweep-field", lambda: mutated(set_path(["transfer_sweep", "step_V"], 0.1)),
     ["transfer_sweep.step_V: unknown field"]),
    ("unknown-pinned-field", lambda: mutated(set_path(["pinned", 0, "colour"], "red")),
     ["pinned[0].colour: unknown field"]),
    ("unknown-stored-metric",
     lambda: mutated(set_path(["stored", "twin", "metrics", "gm_uS_per_um"], 1.0)),
     ["stored.twin.metrics.gm_uS_per_um: unknown field"]),
    ("unknown-model-field", lambda: mutated(set_path(["model", "threads"], 4)),
     ["model.threads: unknown field"]),
    ("text-for-number", lambda: mutated(set_path(["design", "body_thickness_nm"], "7")),
     ["design.body_thickness_nm", "expected a number"]),
    ("bool-for-integer", lambda: mutated(set_path(["transfer_sweep", "vg_points"], True)),
     ["transfer_sweep.vg_points", "expected an integer"]),
    ("float-for-integer", lambda: mutated(set_path(["output_sweep", "vd_points"], 12.5)),
     ["output_sweep.vd_points", "expected an integer"]),
    ("object-for-list", lambda: mutated(set_path(["output_sweep", "vg_V"], {"a": 1})),
     ["output_sweep.vg_V", "expected an array"]),
    ("design-out-of-range", lambda: mutated(set_path(["design", "body_thickness_nm"], 50.0)),
     ["design.body_thickness_nm", "outside the allowed range [2, 30]"]),
    ("unknown-material", lambda: mutated(set_path(["design", "material"], "Unobtainium")),
     ["design.material", "unknown material"]),
    ("design-field-missing", lambda: mutated(delete_path(["design", "temperature_K"])),
     ["design.temperature_K: missing"]),
    ("bias-out-of-range", lambda: mutated(set_path(["bias", "vg_V"], 5.0)),
     ["bias.vg_V", "outside the allowed range"]),
    ("too-many-points", lambda: mutated(set_path(["transfer_sweep", "vg_points"], 5000)),
     ["transfer_sweep.vg_points", "[3, 201]"]),
    ("reversed-sweep", lambda: mutated(set_path(["transfer_sweep", "vg_stop_V"], -0.5)),
     ["transfer_sweep.vg_stop_V", "must be above vg_start_V"]),
    ("too-many-pinned",
     lambda: mutated(lambda d: d.__setitem__("pinned", [
         {"name": f"p{i}", "design": Design().to_dict()} for i in range(9)])),
     ["pinned", "limit is 8"]),
    ("not-utc", lambda: mutated(set_path(["created_utc"], "2024-05-01T12:00:00+02:00")),
     ["created_utc", "must be UTC"]),
    ("control-char-title", lambda: mutated(set_path(["title"], "ok\x1b[2Jclear")),
     ["title", "control character"]),
    ("control-char-note", lambda: mutated(set_path(["note"], "line\r\nnext\x00")),
     ["note", "control character '\\x00'"]),
    ("stored-pinned-count", lambda: mutated(set_path(["stored", "pinned"], [])),
     ["stored.pinned", "0 records for 1 pinned"]),
    ("negative-ioff", lambda: mutated(set_path(["metric_settings", "ioff_target_uA_per_um"], -1)),
     ["metric_settings.ioff_target_uA_per_um", "outside the allowed range"]),
    ("str-not-bytes", lambda: as_json(valid_doc()).decode(), ["expected bytes", "str"]),
]


@pytest.fixture
def no_writes(monkeypatch, tmp_path):
    """Run in an empty working directory, with every way of writing a file blocked."""
    monkeypatch.chdir(tmp_path)
    real_open = builtins.open

    def guarded_open(file, mode="r", *args, **kwargs):
        if any(c in mode for c in "wax+"):
            raise AssertionError(f"import tried to write {file!r}")
        return real_open(file, mode, *args, **kwargs)

    def refuse(*args, **kwargs):
        raise AssertionError("import tried to extract a zip member")

    monkeypatch.setattr(builtins, "open", guarded_open)
    monkeypatch.setattr(io, "open", guarded_open)
    monkeypatch.setattr(zipfile.ZipFile, "extract", refuse)
    monkeypatch.setattr(zipfile.ZipFile, "extractall", refuse)
    yield tmp_path
    assert list(tmp_path.iterdir()) == []


def test_the_unmodified_files_import(no_writes):
    """Control: the base of every hostile case is valid, as JSON and as a zip."""
    for data in (as_json(valid_doc()), valid_zip()):
        settings, report = import_snapshot(data)
        assert settings.pinned[0].name == "thin oxide"
        assert report.has_stored and not report.verified


def test_enough_distinct_cases():
    assert len({c[0] for c in CASES}) == len(CASES) >= 20


@pytest.mark.parametrize("name,factory,fragments", CASES, ids=[c[0] for c in CASES])
def test_hostile_file_is_refused(no_writes, name, factory, fragments):
    data = factory()
    with pytest.raises(SnapshotError) as err:
        import_snapshot(data)
    message = str(err.value)
    for fragment in fragments:
        assert fragment in message, f"{name}: {fragment!r} not in {message!r}"
    assert "\n" not in message and len(message) < 400
    assert isinstance(err.value, ValueError)


def test_settings_made_in_code_are_validated_too():
    from sub60.app.snapshot_schema import TransferSweep

    with pytest.raises(SnapshotError, match=r"transfer_sweep\.vg_points: 2 outside"):
        SnapshotSettings(transfer_sweep=TransferSweep(vg_points=2))
    with pytest.raises(SnapshotError, match=r"names another pinned design"):
        SnapshotSettings(pinned=(PinnedDesign("a", Design()), PinnedDesign("a", Design())))
