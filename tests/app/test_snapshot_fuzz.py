"""Byte-mutation fuzz of snapshot files, and text that is not Unicode.

A snapshot read by the page or by ``sub60 snapshot check`` is a file from anywhere: the
reader must turn every damaged file into one `SnapshotError` (a message, exit status 1),
never another exception (the page would show nothing, the command a traceback).

The fuzz flips, inserts and deletes bytes of a snapshot zip laid out as an export writes
it (settings.json first, deflate, the member time and mode an export sets), in three
places: the settings.json member (local header and deflate stream), the central
directory with the end record, and anywhere. Before this check was added, 481 of 20,000
such cases of a real exported snapshot raised `zlib.error` (a corrupt deflate stream)
or `NotImplementedError` (a "zip file version" the reader does not know). The normal run
does `N_CASES`; ``--long`` does `N_CASES_LONG`, and also a real export (solved).

Format facts used: the local file header is 30 bytes with the compressed size at offset
18 and the name and extra-field lengths at 26 and 28; the end of central directory
record starts with ``PK\\x05\\x06`` and holds the directory's offset at 16; "version
needed to extract" is at offset 6 of a central directory entry (PKWARE APPNOTE.TXT
sections 4.3.7, 4.3.12 and 4.3.16; offsets from memory, checked by the zipfile module
reading the unmodified file). Lone surrogates are not Unicode scalar values and cannot
be encoded as UTF-8 (The Unicode Standard, section 3.9, D76 and D92; RFC 8259 section
8.2 says such JSON strings have unpredictable behaviour).
"""

from __future__ import annotations

import io
import json
import random
import struct
import zipfile
import zlib

import pytest

from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import PinnedDesign, SnapshotSettings
from sub60.physics.design import Design

from .test_snapshot_hostile import valid_doc

N_CASES = 5000
N_CASES_LONG = 50000


def settings_doc() -> dict:
    """A complete settings.json with stored results, titled (the hostile-file tests' own
    well-formed document, never solved)."""
    doc = valid_doc()
    doc["title"], doc["note"] = "fuzz base", "two lines\nof note"
    return doc


def export_like_zip(doc: dict) -> bytes:
    """A zip with an export's layout and member settings (see `snapshot_bundle`)."""
    rng = random.Random(7)
    members = {"settings.json": (json.dumps(doc, indent=1) + "\n").encode(),
               "README.txt": b"sub60 snapshot\n" * 20,
               "bands.csv": "".join(f"{i},{i * 0.01:.6f},{-i * 0.02:.6f}\n"
                                    for i in range(200)).encode(),
               "figures/bands.png": bytes(rng.randrange(256) for _ in range(3000))}
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, content in members.items():
            info = zipfile.ZipInfo(name, (2024, 5, 1, 12, 0, 0))
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = 0o644 << 16
            zf.writestr(info, content)
    return buf.getvalue()


def regions(data: bytes) -> list[tuple[int, int]]:
    """Byte ranges to mutate: the first member (settings.json), the central directory
    to the end, the whole file."""
    name_len, extra_len = struct.unpack("<HH", data[26:30])
    compressed = struct.unpack("<I", data[18:22])[0]
    end = data.rfind(b"PK\x05\x06")
    directory = struct.unpack("<I", data[end + 16:end + 20])[0]
    return [(0, 30 + name_len + extra_len + compressed), (directory, len(data)), (0, len(data))]


def mutate(data: bytes, rng: random.Random, where: list[tuple[int, int]]) -> bytes:
    """1 to 8 random byte changes (replace, flip a bit, insert, delete) in one region."""
    lo, hi = where[rng.randrange(len(where))]
    b = bytearray(data)
    for _ in range(rng.choice((1, 1, 1, 2, 3, 8))):
        pos = rng.randrange(lo, min(hi, len(b)))
        op = rng.randrange(3)
        if op == 0:
            b[pos] = rng.randrange(256) if rng.random() < 0.5 else b[pos] ^ (1 << rng.randrange(8))
        elif op == 1:
            b[pos:pos] = bytes(rng.randrange(256) for _ in range(rng.choice((1, 1, 2, 4))))
        else:
            del b[pos:pos + rng.choice((1, 1, 2, 4))]
    return bytes(b)


def fuzz(data: bytes, n: int, seed: int) -> tuple[dict[str, int], dict[str, bytes]]:
    """Outcome counts of `n` mutated files, and one example file per unexpected error."""
    import_snapshot(data)  # the unmodified file imports
    rng = random.Random(seed)
    where = regions(data)
    counts = {"imported": 0, "SnapshotError": 0}
    unexpected: dict[str, bytes] = {}
    for _ in range(n):
        case = mutate(data, rng, where)
        try:
            import_snapshot(case)
            counts["imported"] += 1
        except SnapshotError as exc:
            counts["SnapshotError"] += 1
            str(exc).encode("utf-8")  # the message can be printed
        except Exception as exc:  # noqa: BLE001 - counting exactly these is the test
            key = f"{type(exc).__name__}: {str(exc)[:80]}"
            counts[type(exc).__name__] = counts.get(type(exc).__name__, 0) + 1
            unexpected.setdefault(key, case)
    return counts, unexpected


def _report(counts: dict[str, int], unexpected: dict[str, bytes]) -> str:
    return f"outcomes {counts}; unexpected errors: " + "; ".join(list(unexpected)[:10])


def test_fuzz_of_an_export_like_snapshot_raises_only_snapshot_errors(pytestconfig):
    n = N_CASES_LONG if pytestconfig.getoption("--long") else N_CASES
    counts, unexpected = fuzz(export_like_zip(settings_doc()), n, seed=2024)
    assert not unexpected, _report(counts, unexpected)
    assert sum(counts.values()) == n
    # the mutations reach the reader's refusals, and some leave the file usable
    assert counts["SnapshotError"] > n // 2 and counts["imported"] > 0, counts


@pytest.mark.slow
def test_fuzz_of_a_real_export_raises_only_snapshot_errors():
    """A snapshot as `export_snapshot` writes it (solved: only with --long)."""
    from sub60.app.snapshot_bundle import export_snapshot

    data = export_snapshot(SnapshotSettings(), created_utc="2024-05-01T12:00:00Z")
    counts, unexpected = fuzz(data, N_CASES_LONG, seed=5)
    assert not unexpected, _report(counts, unexpected)


# ---------------------------------------------------------------- the failures fuzzing found
def _settings_data_offset(data: bytes) -> int:
    name_len, extra_len = struct.unpack("<HH", data[26:30])
    return 30 + name_len + extra_len


def test_corrupt_deflate_stream_is_a_snapshot_error():
    data = bytearray(export_like_zip(settings_doc()))
    start = _settings_data_offset(data)
    data[start:start + 1] = bytes([0b111])  # final block of the reserved type 3: invalid
    with pytest.raises(zlib.error):  # what the standard reader does with it
        with zipfile.ZipFile(io.BytesIO(bytes(data))) as zf:
            zf.read("settings.json")
    with pytest.raises(SnapshotError, match=r"settings.json.: cannot be read \(Error -3"):
        import_snapshot(bytes(data))


def test_unknown_zip_version_is_a_snapshot_error():
    data = bytearray(export_like_zip(settings_doc()))
    end = data.rfind(b"PK\x05\x06")
    directory = struct.unpack("<I", data[end + 16:end + 20])[0]
    assert data[directory:directory + 4] == b"PK\x01\x02"
    data[directory + 6] = 99  # "version needed to extract" 9.9: above what zipfile reads
    with pytest.raises(NotImplementedError):
        with zipfile.ZipFile(io.BytesIO(bytes(data))) as zf:
            zf.read("settings.json")
    with pytest.raises(SnapshotError, match="zip file version"):
        import_snapshot(bytes(data))


# ---------------------------------------------------------------- text that is not Unicode
def _with(change) -> bytes:
    doc = settings_doc()
    change(doc)
    return json.dumps(doc).encode()  # ensure_ascii: a lone surrogate becomes "\\udcff"


SURROGATE_CASES = {
    "pin name": lambda d: d["pinned"][0].__setitem__("name", "pin \udcff"),
    "title": lambda d: d.__setitem__("title", "\udcff"),
    "note": lambda d: d.__setitem__("note", "a\ud800b"),
    "reason": lambda d: d["stored"]["design"]["reasons"].__setitem__("vth_V", "\udfff"),
    "material": lambda d: d["design"].__setitem__("material", "InAs\udcff"),
    "key": lambda d: d.__setitem__("\udcff", 1),
}


@pytest.mark.parametrize("name", SURROGATE_CASES)
def test_lone_surrogates_in_a_file_are_refused(name):
    raw = _with(SURROGATE_CASES[name])
    assert b"\\ud" in raw
    with pytest.raises(SnapshotError, match="surrogate") as info:
        import_snapshot(raw)
    str(info.value).encode("utf-8")  # the message itself is printable text


@pytest.mark.parametrize("field", ["title", "note"])
def test_lone_surrogates_in_settings_made_in_code_are_refused(field):
    with pytest.raises(SnapshotError, match=f"{field}: holds a lone surrogate"):
        SnapshotSettings(**{field: "x\udcff"})
    with pytest.raises(SnapshotError, match=r"pinned\[0\]\.name: holds a lone surrogate"):
        SnapshotSettings(pinned=(PinnedDesign("\udcff", Design()),))


def test_a_paired_surrogate_escape_is_ordinary_text():
    """JSON writes characters beyond U+FFFF as a surrogate pair: that is one character."""
    settings, _ = import_snapshot(_with(lambda d: d.__setitem__("title", "chip \U0001F600")))
    assert settings.title == "chip \U0001F600"


def test_export_with_a_title_that_is_not_utf8_exits_2(tmp_path, capsys):
    """``--title $'\\xff'``: Python reads the byte as the lone surrogate U+DCFF."""
    from sub60.app.cli import main

    out = tmp_path / "s.zip"
    code = main(["snapshot", "export", "--title", "\udcff", "--out", str(out)])
    _, err = capsys.readouterr()
    assert code == 2
    assert err.startswith("sub60: error: title: holds a lone surrogate"), err
    assert len(err.strip().splitlines()) == 1
    assert not out.exists()
