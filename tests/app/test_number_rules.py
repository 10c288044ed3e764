"""One set of number rules at every door (`app.number_rules`).

Each door — the command line's ``--set``, ``--vg``/``--vd``/``--sweep``, ``--vdd``,
``--ioff``, ``--output-vg`` and ``--design FILE``, the page address and the snapshot
reader — must refuse the same texts with a message naming the field: full-width digits
(U+FF10-U+FF19) and Arabic-Indic digits (U+0660-U+0669), which Python's float() and
int() accept (Unicode category Nd, Python documentation of float()), digit separators
``1_0`` (PEP 515 syntax, accepted by float() and int() since Python 3.6), ``nan``/``inf``
and non-finite values; repeated JSON keys are refused by both JSON doors (RFC 8259
section 4: names SHOULD be unique), and one leading UTF-8 byte order mark is accepted by
both (RFC 8259 section 8.1 allows a parser to ignore it). The Vdd and Ioff target ranges
are those snapshots use. The rules themselves are the project's choices (common practice,
no source).
"""

from __future__ import annotations

import json
import subprocess
import sys
import time
from pathlib import Path

import pytest

from sub60.app.cli import main
from sub60.app.number_rules import (
    IOFF_TARGET_RANGE_UA_PER_UM,
    VDD_RANGE_V,
    InputError,
    parse_integer,
    parse_json,
    parse_number,
)
from sub60.app.sharing import updates_from_query
from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import SnapshotSettings

ROOT = Path(__file__).resolve().parents[2]

#: Texts every number door refuses.
BAD_NUMBERS = {
    "full-width": "\uff10.\uff13",         # ０.３
    "arabic-indic": "\u0660.\u0663",       # ٠.٣
    "underscore": "1_0",
    "inf": "inf",
    "nan": "nan",
    "hex": "0x1",
    "overflow": "1e999",
    "bom": "\ufeff0.3",
    "too long": "0." + "0" * 60 + "3",
}


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def one_line_error(capsys, *argv: str) -> str:
    code, out, err = run(capsys, *argv)
    assert code == 2, (code, out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("sub60: error:"), err
    assert "Traceback" not in err
    return lines[0]


# ---------------------------------------------------------------- the rules
@pytest.mark.parametrize("text", ["0.3", "-1.5e-3", ".5", "4E19", "+2", " 0.3\t", "7."])
def test_accepted_numbers(text):
    assert parse_number(text, "x") == float(text)


@pytest.mark.parametrize("kind", BAD_NUMBERS)
def test_refused_numbers_name_the_field_and_range(kind):
    with pytest.raises(InputError, match=r"^thickness: .*allowed \[2, 30\] nm$"):
        parse_number(BAD_NUMBERS[kind], "thickness", 2, 30, "nm")


@pytest.mark.parametrize("text", ["\uff11\uff10", "\u0661\u0660", "1_0", "1.0", "1e1", "9" * 31])
def test_refused_whole_numbers(text):
    with pytest.raises(InputError, match="^points: "):
        parse_integer(text, "points", 1, 100)
    assert parse_integer(" 10 ", "points", 1, 100) == 10


def test_json_rules():
    assert parse_json(b'\xef\xbb\xbf{"a": 1}', "f") == {"a": 1}          # one BOM: ignored
    for raw, culprit in [(b'{"a": 1, "a": 2}', "appears twice"), (b'{"a": NaN}', "NaN"),
                         (b'{"a": 1e999}', "not finite"), (b"[" * 40 + b"]" * 40, "deeply"),
                         (b"[" * 100000 + b"]" * 100000, "deeply"),
                         (b'{"a": ' + b"7" * 5000 + b"}", "5000 digits"),
                         (b'{"a": "\\udcff"}', "surrogate"), (b"\xff", "UTF-8")]:
        with pytest.raises(InputError, match=culprit):
            parse_json(raw, "f")


# ---------------------------------------------------------------- command line doors
DOORS = [
    (["bands", "--vg", "{v}"], "--vg"),
    (["bands", "--vd", "{v}"], "--vd"),
    (["transfer", "--vg", "0:0.2:{v}"], "--vg: N"),
    (["transfer", "--vg", "{v}:0.2:3"], "--vg: START"),
    (["transfer", "--vdd", "{v}"], "--vdd"),
    (["transfer", "--ioff", "{v}"], "--ioff"),
    (["bands", "--set", "body_thickness_nm={v}"], "--set body_thickness_nm"),
    (["snapshot", "export", "--vdd", "{v}", "--out", "never.zip"], "--vdd"),
    (["snapshot", "export", "--output-vg", "0.1,{v}", "--out", "never.zip"], "--output-vg"),
    (["snapshot", "export", "--sweep", "0:{v}:5", "--out", "never.zip"], "--sweep: STOP"),
]


@pytest.mark.parametrize("kind", ["full-width", "arabic-indic", "underscore", "inf", "bom"])
@pytest.mark.parametrize("argv, culprit", DOORS, ids=[" ".join(a) for a, _ in DOORS])
def test_command_line_doors_refuse_the_same_numbers(capsys, tmp_path, monkeypatch, argv, culprit,
                                                    kind):
    monkeypatch.chdir(tmp_path)
    value = "\uff11\uff10" if kind == "full-width" and "N" in culprit else BAD_NUMBERS[kind]
    line = one_line_error(capsys, *(a.replace("{v}", value) for a in argv))
    assert culprit in line
    assert "not" in line  # "is not a number" / "is not a whole number"
    assert not (tmp_path / "never.zip").exists()


@pytest.mark.parametrize("argv, culprit, low, high", [
    (["transfer", "--vdd", "1e308"], "--vdd", *VDD_RANGE_V),
    (["transfer", "--vdd", "0"], "--vdd", *VDD_RANGE_V),
    (["transfer", "--ioff", "1e9"], "--ioff", *IOFF_TARGET_RANGE_UA_PER_UM),
    (["snapshot", "export", "--vdd", "5", "--out", "never.zip"], "--vdd", *VDD_RANGE_V),
    (["snapshot", "export", "--ioff", "0", "--out", "never.zip"], "--ioff",
     *IOFF_TARGET_RANGE_UA_PER_UM),
], ids=["vdd 1e308", "vdd 0", "ioff 1e9", "export vdd 5", "export ioff 0"])
def test_vdd_and_ioff_have_the_snapshot_ranges(capsys, tmp_path, monkeypatch, argv, culprit,
                                               low, high):
    monkeypatch.chdir(tmp_path)
    line = one_line_error(capsys, *argv)
    assert culprit in line and f"allowed range [{low:g}, {high:g}]" in line


def test_snapshot_reader_uses_the_same_vdd_range():
    doc = SnapshotSettings().to_dict()
    doc["metric_settings"]["vdd_V"] = 1e308
    with pytest.raises(SnapshotError, match=r"metric_settings.vdd_V: .* outside the allowed "
                                            rf"range \[{VDD_RANGE_V[0]:g}, {VDD_RANGE_V[1]:g}\]"):
        import_snapshot(json.dumps(doc).encode())


# ---------------------------------------------------------------- design files
def write(tmp_path: Path, name: str, raw: bytes) -> str:
    path = tmp_path / name
    path.write_bytes(raw)
    return str(path)


@pytest.mark.parametrize("raw, culprit", [
    (b'{"body_thickness_nm": 8, "body_thickness_nm": 40}', "'body_thickness_nm' appears twice"),
    (b'{"body_thickness_nm": ' + b"9" * 400 + b"}", "(400 digits) is too large"),
    (b'{"body_thickness_nm": ' + b"9" * 5000 + b"}", "(5000 digits) is too large"),
    (b'{"body_thickness_nm": 1e400}', "too large (not finite)"),
    (b"[" * 5000 + b"]" * 5000, "nested too deeply"),
    (b'{"design": ' * 40 + b"{}" + b"}" * 40, "nested too deeply"),
    (b'{"material": "InAs\\udcff"}', "surrogate"),
    (b'{"body_thickness_nm": NaN}', "NaN is not allowed"),
], ids=["duplicate key", "400 digits", "5000 digits", "1e400", "deep list", "deep objects",
        "surrogate", "NaN"])
def test_design_file_follows_the_json_rules(capsys, tmp_path, raw, culprit):
    line = one_line_error(capsys, "bands", "--design", write(tmp_path, "d.json", raw))
    assert "--design" in line and culprit in line


def test_design_file_and_snapshot_both_accept_a_leading_bom(capsys, tmp_path):
    bom = b"\xef\xbb\xbf"
    path = write(tmp_path, "d.json", bom + b'{"body_thickness_nm": 8}')
    from sub60.app.cli_common import load_design

    assert load_design(path, []).body_thickness_nm == 8.0
    settings, _ = import_snapshot(bom + SnapshotSettings().to_json().encode())
    assert settings == SnapshotSettings()


def test_design_file_from_an_endless_device_fails_fast():
    """``--design /dev/zero`` reads at most 1 MB and stops (it grew to 22 GB before)."""
    if not Path("/dev/zero").exists():
        pytest.skip("no /dev/zero here")
    start = time.monotonic()
    proc = subprocess.run([sys.executable, "-m", "sub60.app.cli", "bands", "--design", "/dev/zero"],
                          cwd=ROOT, capture_output=True, text=True, timeout=120)
    elapsed = time.monotonic() - start
    assert proc.returncode == 2
    assert proc.stderr.strip() == ("sub60: error: --design: '/dev/zero' is larger than the "
                                   "limit of 1024 kB for a design file")
    assert elapsed < 100  # it finished (a timeout above would have raised); not a speed test


# ---------------------------------------------------------------- page address door
@pytest.mark.parametrize("kind", ["full-width", "arabic-indic", "underscore", "inf", "bom",
                                  "overflow"])
@pytest.mark.parametrize("key", ["body_nm", "vdd", "vg", "vg_points"])
def test_page_address_refuses_the_same_numbers(key, kind):
    value = BAD_NUMBERS[kind]
    updates, problems = updates_from_query({key: value})
    assert updates == {}
    assert len(problems) == 1 and f"({key})" in problems[0]
    assert "not a" in problems[0] or "outside" in problems[0]


def test_page_address_still_reads_ordinary_numbers():
    updates, problems = updates_from_query({"body_nm": "8", "vdd": " 0.4 ", "vg_points": "41",
                                            "vg_sweep": "-0.2,0.6"})
    assert problems == []
    assert updates["body_thickness_nm"] == 8.0 and updates["vdd_V"] == 0.4
    assert updates["vg_points"] == 41 and updates["vg_sweep_V"] == (-0.2, 0.6)
