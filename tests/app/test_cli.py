"""The `sub60` command line: records, CSV, design files, overrides and usage errors.

The physics behind each command is checked in tests/physics; here the command line must
(1) print the documented keys, (2) print the same numbers as the Python interface
(`physics.simulate`) for the same design, solved independently, and (3) turn every bad
input into exit status 2 with one line on stderr naming the culprit. The expected key
sets are those of the design document's interface section (no outside source: the
project's own contract); records may carry more keys (e.g. model warnings).
"""

from __future__ import annotations

import csv
import io
import json
import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from sub60.app.cli import main
from sub60.physics.design import Design
from sub60.physics.simulate import Simulator

ROOT = Path(__file__).resolve().parents[2]

BANDS_KEYS = {"design", "vg_V", "vd_V", "x_nm", "ec_eV", "ev_eV", "efs_eV", "efd_eV", "window",
              "current_uA_per_um"}
METRIC_KEYS = {"ss_min_mV_per_dec", "ss_avg4_mV_per_dec", "i60_uA_per_um", "ioff_uA_per_um",
               "voff_V", "ion_uA_per_um", "ion_ioff", "vth_V"}
TRANSFER_KEYS = {"design", "vd_V", "vg_V", "id_uA_per_um", "ss_mV_per_dec", "metrics"}
#: Unit suffixes of sub60's column names (DEVELOPERS.md conventions).
UNIT_SUFFIXES = ("_nm", "_eV", "_V", "_uA_per_um", "_mV_per_dec")

# Small sweeps keep the run short. Starts are >= 0 on purpose: a negative START is tested
# separately (test_negative_values_after_an_option).
SWEEP = "0:0.2:5"


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def json_of(capsys, *argv: str) -> dict:
    code, out, err = run(capsys, *argv)
    assert code == 0, err
    return json.loads(out)


def csv_of(text: str) -> tuple[list[str], list[dict[str, str]], dict[str, str]]:
    """Header, rows and '# key = value' comment lines of a sub60 CSV."""
    comments = {}
    body = []
    for line in text.splitlines():
        if line.startswith("#"):
            key, _, value = line[1:].partition("=")
            comments[key.strip()] = value.strip()
        else:
            body.append(line)
    reader = csv.DictReader(io.StringIO("\n".join(body)))
    rows = list(reader)
    return list(reader.fieldnames or []), rows, comments


def number(text: str) -> float:
    return float(text) if text != "" else math.nan


def assert_matches_bias_point(rec: dict, bp) -> None:
    """A bands record against an independently solved bias point: same grid, edges to
    1 ueV, current to 1e-5 (Newton tolerance of two solves from different starts)."""
    np.testing.assert_array_equal(rec["x_nm"], bp.x_nm)
    np.testing.assert_allclose(rec["ec_eV"], bp.subband_ec_eV, rtol=0, atol=1e-6)
    np.testing.assert_allclose(rec["ev_eV"], bp.subband_ev_eV, rtol=0, atol=1e-6)
    assert rec["efs_eV"] == bp.efs_eV and rec["efd_eV"] == bp.efd_eV
    if bp.window_eV is None:
        assert rec["window"] is None
    else:
        assert rec["window"]["e_min_eV"] == pytest.approx(bp.window_eV[0], abs=1e-6)
        assert rec["window"]["e_max_eV"] == pytest.approx(bp.window_eV[1], abs=1e-6)
    assert rec["current_uA_per_um"] == pytest.approx(bp.current_uA_per_um, rel=1e-5)


# ----------------------------------------------------------------- bands
def test_bands_json_matches_solve_bias(capsys):
    rec = json_of(capsys, "bands", "--vg", "0.2", "--vd", "0.3")
    assert BANDS_KEYS <= set(rec)
    assert rec["design"] == Design().to_dict()
    assert rec["vg_V"] == 0.2 and rec["vd_V"] == 0.3
    assert len(rec["x_nm"]) == len(rec["ec_eV"]) == len(rec["ev_eV"]) > 10
    w = rec["window"]
    assert w is None or set(w) == {"e_min_eV", "e_max_eV"}
    assert_matches_bias_point(rec, Simulator().solve_bias(Design(), 0.2, 0.3))


def test_bands_via_subprocess_matches_solve_bias():
    """The real entry point in a separate interpreter: exit 0, JSON on stdout."""
    proc = subprocess.run([sys.executable, "-m", "sub60.app.cli", "bands", "--vg", "0.25", "--vd", "0.3"],
                          cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    rec = json.loads(proc.stdout)
    assert BANDS_KEYS <= set(rec)
    assert_matches_bias_point(rec, Simulator().solve_bias(Design(), 0.25, 0.3))


def test_bands_csv_has_units_and_the_json_numbers(capsys):
    rec = json_of(capsys, "bands", "--vg", "0.2", "--vd", "0.3")
    code, out, err = run(capsys, "bands", "--vg", "0.2", "--vd", "0.3", "--format", "csv")
    assert code == 0, err
    header, rows, comments = csv_of(out)
    # the column names of a snapshot's bands.csv: every subband edge, then the Fermi levels
    bp = Simulator().solve_bias(Design(), 0.2, 0.3)
    subbands = [f"{lab}_eV" for lab in (*bp.conduction_labels, *bp.valence_labels)]
    assert header == ["x_nm", *subbands, "efs_eV", "efd_eV"]
    assert all(h.endswith(UNIT_SUFFIXES) for h in header)
    assert len(rows) == len(rec["x_nm"])

    def column(name: str) -> np.ndarray:
        return np.array([number(r[name]) for r in rows])

    # printed to 10 significant digits; the JSON's edges are the extreme subbands
    np.testing.assert_allclose(column("x_nm"), rec["x_nm"], rtol=1e-9, atol=1e-12)
    conduction = np.array([column(f"{lab}_eV") for lab in bp.conduction_labels])
    valence = np.array([column(f"{lab}_eV") for lab in bp.valence_labels])
    np.testing.assert_allclose(conduction.min(axis=0), rec["ec_eV"], rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(valence.max(axis=0), rec["ev_eV"], rtol=1e-9, atol=1e-9)
    assert set(column("efs_eV")) == {rec["efs_eV"]} and set(column("efd_eV")) == {rec["efd_eV"]}
    assert float(comments["current_uA_per_um"]) == pytest.approx(rec["current_uA_per_um"],
                                                                   rel=1e-9)
    # the models that made the numbers, in both formats
    assert rec["models"]["charge"] == Design().charge_model == comments["charge_model"]
    assert rec["models"]["tunnelling"] == "two-band" == comments["tunnelling_model"]


def test_bands_name_the_subband_charge_model_when_set(capsys):
    rec = json_of(capsys, "bands", "--vg", "0.2", "--vd", "0.3", "--set",
                  "charge_model=subbands")
    assert rec["models"]["charge"] == "subbands"
    assert "2D density of states" in rec["models"]["charge_note"]


# ----------------------------------------------------------------- transfer
def test_transfer_twin_json(capsys):
    rec = json_of(capsys, "transfer", "--vg", SWEEP, "--vd", "0.3", "--twin")
    assert TRANSFER_KEYS | {"twin"} <= set(rec)
    assert TRANSFER_KEYS <= set(rec["twin"])
    assert METRIC_KEYS <= set(rec["metrics"])
    assert METRIC_KEYS <= set(rec["twin"]["metrics"])
    assert rec["twin"]["design"] == Design().twin().to_dict()
    vg = np.linspace(0.0, 0.2, 5)
    for part, design in ((rec, Design()), (rec["twin"], Design().twin())):
        np.testing.assert_allclose(part["vg_V"], vg, rtol=0, atol=1e-15)
        assert part["vd_V"] == 0.3
        assert len(part["id_uA_per_um"]) == len(part["ss_mV_per_dec"]) == 5
        # the same curve from the Python interface, solved by a fresh simulator
        tc = Simulator().transfer_curve(design, vg, 0.3)
        np.testing.assert_allclose(part["id_uA_per_um"], tc.id_uA_per_um, rtol=1e-5)
        for key in METRIC_KEYS:
            value = part["metrics"][key]
            expected = getattr(tc.metrics, key).value
            if expected is None:
                assert value is None, key
                assert key in part["metrics_missing"]  # a missing metric says why
            else:
                assert value == pytest.approx(expected, rel=1e-4, abs=1e-9), key
        # SS_min is read from the refined curve (physics.metrics.refine_curve) above the
        # floor Ioff/100, not from the printed swings of the requested samples; it equals
        # the Python interface's value (checked above)


@pytest.mark.parametrize("model", ["one-band", "two-band-exact"])
def test_transfer_model_option_matches_the_simulator_of_that_model(capsys, model):
    """`--model` selects the transmission: the CLI's curve is the Python interface's
    `Simulator(model=...)` curve (an identity of the two doors, no source), and it
    differs from the default two-band WKB curve."""
    rec = json_of(capsys, "transfer", "--vg", SWEEP, "--vd", "0.3", "--model", model)
    vg = np.linspace(0.0, 0.2, 5)
    tc = Simulator(model=model).transfer_curve(Design(), vg, 0.3)
    np.testing.assert_allclose(rec["id_uA_per_um"], tc.id_uA_per_um, rtol=1e-5)
    default = Simulator().transfer_curve(Design(), vg, 0.3)
    assert not np.allclose(rec["id_uA_per_um"], default.id_uA_per_um, rtol=1e-3)


def test_transfer_csv_with_twin(capsys):
    rec = json_of(capsys, "transfer", "--vg", SWEEP, "--vd", "0.3", "--twin")
    code, out, err = run(capsys, "transfer", "--vg", SWEEP, "--vd", "0.3", "--twin",
                         "--format", "csv")
    assert code == 0, err
    header, rows, comments = csv_of(out)
    assert header == ["vg_V", "design_id_uA_per_um", "design_ss_mV_per_dec",
                      "twin_id_uA_per_um", "twin_ss_mV_per_dec"]  # as a snapshot's transfer.csv
    assert all(h.endswith(UNIT_SUFFIXES) for h in header)
    assert len(rows) == 5
    np.testing.assert_allclose([number(r["design_id_uA_per_um"]) for r in rows],
                               rec["id_uA_per_um"], rtol=1e-9)
    np.testing.assert_allclose([number(r["twin_id_uA_per_um"]) for r in rows],
                               rec["twin"]["id_uA_per_um"], rtol=1e-9)
    assert set(comments) >= {"vd_V"} | METRIC_KEYS
    # the twin's figures of merit too, as in the JSON record (they were left out)
    assert set(comments) >= {f"twin_{k}" for k in METRIC_KEYS}
    for k, v in rec["twin"]["metrics"].items():
        shown = comments[f"twin_{k}"]
        assert (shown == "") if v is None else float(shown) == pytest.approx(v, rel=1e-12), k


def test_help_lists_the_design_fields_of_set(capsys):
    """`--help` of every command with --set lists each design field with its range
    (`physics.FIELD_RANGES`) and default (`Design()`)."""
    from sub60.physics import FIELD_RANGES, Design

    for command in (["bands"], ["transfer"], ["output"], ["snapshot", "export"]):
        with pytest.raises(SystemExit) as stop:
            main([*command, "--help"])
        assert stop.value.code == 0
        out = capsys.readouterr().out
        lines = {line.split()[0]: line for line in out.splitlines()
                 if line.startswith("  ") and line.split() and line.split()[0] in FIELD_RANGES}
        assert set(lines) == set(FIELD_RANGES), command
        assert "[1e+17, 1e+21]" in lines["source_doping_cm3"]
        assert "[nm]" in lines["body_thickness_nm"] and "[2, 30]" in lines["body_thickness_nm"]
        assert f"default {Design().body_thickness_nm:g}" in lines["body_thickness_nm"]


# ----------------------------------------------------------------- output
def test_output_json_and_csv(capsys):
    rec = json_of(capsys, "output", "--vg", "0.2", "--vd", "0:0.3:4")
    assert {"design", "vg_V", "vd_V", "id_uA_per_um"} <= set(rec)
    assert rec["vg_V"] == 0.2
    np.testing.assert_allclose(rec["vd_V"], np.linspace(0, 0.3, 4), atol=1e-15)
    ids = rec["id_uA_per_um"]
    # No bias, no current: f_s = f_d (Landauer; Datta 1995 ch. 2, from memory).
    assert ids[0] == 0.0
    assert all(i > 0 for i in ids[1:])
    ref = Simulator().output_curve(Design(), 0.2, np.linspace(0, 0.3, 4))
    np.testing.assert_allclose(ids, ref.id_uA_per_um, rtol=1e-5, atol=1e-12)

    multi = json_of(capsys, "output", "--vg", "0.1:0.2:2", "--vd", "0:0.3:4")
    assert multi["vg_V"] == [0.1, 0.2] and len(multi["id_uA_per_um"]) == 2
    code, out, err = run(capsys, "output", "--vg", "0.1:0.2:2", "--vd", "0:0.3:4",
                         "--format", "csv")
    assert code == 0, err
    header, rows, _ = csv_of(out)
    assert header[0] == "vd_V" and len(header) == 3
    assert all(h.endswith(UNIT_SUFFIXES) for h in header)
    np.testing.assert_allclose([number(r[header[2]]) for r in rows], multi["id_uA_per_um"][1],
                               rtol=1e-9, atol=1e-12)


# ----------------------------------------------------------------- design file, --set
CUSTOM = Design(body_thickness_nm=6.0, gate_length_nm=40.0, oxide="Al2O3",
                gate_workfunction_eV=4.7, source_doping_cm3=5e19, temperature_K=250.0)


@pytest.mark.parametrize("wrapped", [False, True], ids=["record", "snapshot-like"])
def test_design_file_round_trip(capsys, tmp_path, wrapped):
    """--design FILE.json with Design.to_dict(): the record printed back is the same
    design, and the bands are those of that design. A snapshot-like file holding the
    record under "design" is read the same way."""
    data = {"design": CUSTOM.to_dict(), "note": "other snapshot content"} if wrapped \
        else CUSTOM.to_dict()
    path = tmp_path / "design.json"
    path.write_text(json.dumps(data), encoding="utf-8")
    rec = json_of(capsys, "bands", "--design", str(path), "--vg", "0.2", "--vd", "0.3")
    assert rec["design"] == CUSTOM.to_dict()
    assert Design.from_dict(rec["design"]) == CUSTOM
    assert_matches_bias_point(rec, Simulator().solve_bias(CUSTOM, 0.2, 0.3))


def test_set_overrides_default_and_file(capsys, tmp_path):
    path = tmp_path / "design.json"
    path.write_text(CUSTOM.to_json(), encoding="utf-8")
    rec = json_of(capsys, "bands", "--design", str(path), "--set", "body_thickness_nm=5",
                  "--set", "oxide=SiO2", "--set", "source_type=n", "--vg", "0.2")
    expected = CUSTOM.replace(body_thickness_nm=5.0, oxide="SiO2", source_type="n")
    assert rec["design"] == expected.to_dict()
    alone = json_of(capsys, "bands", "--set", "gate_length_nm=45", "--vg", "0.2")
    assert alone["design"] == Design(gate_length_nm=45.0).to_dict()
    assert_matches_bias_point(alone, Simulator().solve_bias(Design(gate_length_nm=45.0),
                                                            0.2, 0.3))


# ----------------------------------------------------------------- usage errors
def bad_files(tmp: Path) -> dict[str, Path]:
    files = {
        "truncated": ('{"material": "InAs",', "utf-8"),
        "list": ("[1, 2]", "utf-8"),
        "typo": ('{"gate_lenght_nm": 30}', "utf-8"),
        "range": ('{"body_thickness_nm": 0.1}', "utf-8"),
    }
    out = {}
    for name, (text, enc) in files.items():
        out[name] = tmp / f"{name}.json"
        out[name].write_text(text, encoding=enc)
    out["binary"] = tmp / "binary.json"
    out["binary"].write_bytes(b"\xff\xfe\x00\x81 not text")
    out["missing"] = tmp / "no-such-file.json"
    out["directory"] = tmp
    return out


ERROR_CASES = [
    # (argv, text the message must contain); {f:NAME} is a file from bad_files
    (["bands", "--bogus"], "--bogus"),                                # bad option
    (["frobnicate"], "frobnicate"),                                   # bad command
    (["bands", "--format", "xml"], "--format"),                       # bad choice
    (["transfer", "--ioff", "abc"], "--ioff"),                        # bad number
    (["bands", "--vg", "abc"], "--vg"),                               # bad value
    (["bands", "--vg", "5"], "--vg"),                                 # bias out of range
    (["bands", "--vd", "2"], "--vd"),
    (["bands", "--vg", "nan"], "--vg"),
    (["bands", "--set", "body_thickness_nm=100"], "body_thickness_nm"),  # out of range
    (["bands", "--set", "body_thickness_nm=abc"], "body_thickness_nm"),  # bad value
    (["bands", "--set", "temperature_K=nan"], "temperature_K"),
    (["bands", "--set", "material=Unobtainium"], "Unobtainium"),
    (["bands", "--set", "source_type=x"], "source_type"),
    (["bands", "--set", "oxide=custom"], "oxide_permittivity"),
    (["bands", "--set", "nosuch_nm=1"], "nosuch_nm"),                 # unknown field
    (["bands", "--set", "body_thickness_nm"], "--set"),               # no '='
    (["transfer", "--vg", "0:1"], "--vg"),                            # bad sweep syntax
    (["transfer", "--vg", "0:1:0"], "--vg"),
    (["transfer", "--vg", "0:1:2.5"], "--vg"),
    (["transfer", "--vg", "0:0.1:3", "--vd", "0:0.2:3"], "--vd"),     # sweep where one V
    (["bands", "--vg", "0:0.2:3"], "--vg"),
    (["transfer", "--vg", "0:0.1:3", "--ioff", "0"], "ioff"),
    (["bands", "--design", "{f:missing}"], "--design"),               # unreadable files
    (["bands", "--design", "{f:directory}"], "--design"),
    (["bands", "--design", "{f:binary}"], "--design"),
    (["bands", "--design", "{f:truncated}"], "--design"),
    (["bands", "--design", "{f:list}"], "--design"),
    (["bands", "--design", "{f:typo}"], "gate_lenght_nm"),            # unknown field in file
    (["bands", "--design", "{f:range}"], "body_thickness_nm"),
]


def expand(argv: list[str], files: dict[str, Path]) -> list[str]:
    return [str(files[a[3:-1]]) if a.startswith("{f:") else a for a in argv]


@pytest.mark.parametrize("argv, culprit", ERROR_CASES,
                         ids=[" ".join(a) for a, _ in ERROR_CASES])
def test_usage_error_exits_2_with_one_line(capsys, tmp_path, argv, culprit):
    code, out, err = run(capsys, *expand(argv, bad_files(tmp_path)))
    assert code == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("sub60: error:")
    assert culprit in lines[0]
    assert "Traceback" not in err


@pytest.mark.parametrize("argv, culprit", [
    (["bands", "--set", "nosuch_nm=1"], "nosuch_nm"),
    (["bands", "--design", "{f:binary}"], "--design"),
], ids=["unknown field", "binary design file"])
def test_usage_error_in_a_real_process(tmp_path, argv, culprit):
    """Exit status and stderr as a shell sees them: 2, one line, no traceback."""
    proc = subprocess.run([sys.executable, "-m", "sub60.app.cli", *expand(argv, bad_files(tmp_path))],
                          cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2
    assert proc.stdout == ""
    assert "Traceback" not in proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and culprit in lines[0]


@pytest.mark.parametrize("argv", [
    ["bands", "--vg", "-0.1", "--vd", "0.3"],
    ["transfer", "--vg", "-0.1:0.1:3", "--vd", "0.3"],
    ["output", "--vg", "0.2", "--vd", "-0.2:0:3"],
], ids=["negative V", "negative sweep start", "negative Vd sweep"])
def test_negative_values_after_an_option(capsys, argv):
    """A negative voltage or sweep written as the next word (`--vg -0.1:0.1:3`, the form
    the usage text and the default sweep use) is a value, not an option."""
    code, out, err = run(capsys, *argv)
    assert code == 0, err
    assert json.loads(out)["vd_V"] is not None
