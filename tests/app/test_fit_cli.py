"""`sub60 fit`: the demo file fitted from the command line, its outputs and usage errors.

The demo curve (assets/measured/demo-tfet-transfer.csv, SYNTHETIC: made by
tests/make_fit_demo.py from the model with stated knob values and 5 % log-normal noise)
has a work-function shift of +40 meV on the default design; with the other knobs set to
the values it was made with, the fit must find that shift within 3 standard
uncertainties (99.7 % for a Gaussian estimate; from memory).
"""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest

from sub60.app.cli import main

ROOT = Path(__file__).resolve().parents[2]
DEMO = str(ROOT / "assets" / "measured" / "demo-tfet-transfer.csv")
#: the demo's non-idealities other than the work function (tests/make_fit_demo.py)
KNOWN = ["--set", "interface_trap_density_cm2eV=2e12", "--set", "tail_energy_source_meV=20",
         "--set", "tail_energy_channel_meV=20"]


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_fit_json_recovers_the_demo_shift(capsys, tmp_path):
    table = tmp_path / "points.csv"
    code, out, err = run(capsys, "fit", DEMO, *KNOWN, "--free", "workfunction_shift",
                         "--format", "json", "--table", str(table))
    assert code == 0, err
    rec = json.loads(out)
    shift = rec["fitted"]["workfunction_shift"]
    assert shift["determined"] and shift["unit"] == "eV"
    assert abs(shift["value"] - 0.04) <= 3 * shift["uncertainty"]
    assert rec["design"]["gate_workfunction_eV"] == pytest.approx(4.9 + shift["value"])
    assert rec["problems"] == [] and rec["curve_evaluations"] >= 1
    assert "SYNTHETIC" in rec["data"]["comments"][0]
    (row,) = rec["metrics"]
    assert row["vd_V"] == 0.3
    # data and fit agree on the swing within the noise: same figures_of_merit on both
    assert row["fit"]["ss_min_mV_per_dec"] == pytest.approx(row["measured"]["ss_min_mV_per_dec"],
                                                            rel=0.3)
    rows = list(csv.reader(line for line in io.StringIO(table.read_text())
                           if not line.startswith("#")))
    assert rows[0][:5] == ["vd_V", "vg_V", "measured_id_uA_per_um", "fit_id_uA_per_um",
                           "residual_decades"]
    assert len(rows) == 42
    assert "# fit_workfunction_shift" in table.read_text()


def test_fit_text_names_knobs_metrics_and_the_caution(capsys):
    code, out, err = run(capsys, "fit", DEMO, *KNOWN, "--free", "workfunction_shift",
                         "--range", "workfunction_shift=-0.1:0.1")
    assert code == 0, err
    assert "workfunction_shift" in out and "± " in out and " eV" in out
    assert "SS_min [mV/dec]" in out and "measured" in out
    assert "not calibrated TCAD" in out
    assert "evaluation 2: rms residual" in err  # progress on stderr (1: the start)


def test_fit_csv_to_stdout(capsys):
    code, out, err = run(capsys, "fit", DEMO, *KNOWN, "--free", "workfunction_shift",
                         "--format", "csv")
    assert code == 0, err
    assert out.splitlines()[0].startswith("# ")
    assert any(line.startswith("vd_V,vg_V,") for line in out.splitlines())


@pytest.mark.parametrize("args,words", [
    (["--free", "speed"], "unknown knob"),
    (["--free", "tail_energy", "--range", "tail_energy=5"], "LOW:HIGH"),
    (["--free", "tail_energy", "--range", "tail_energy=0:500"], "allowed"),
    (["--free", "tail_energy", "--start", "tail_energy=abc"], "--start tail_energy"),
    (["--free", "tail_energy", "--max-evals", "1"], "--max-evals"),
    (["--free", "tail_energy", "--unit", "A"], "drop one"),
    (["--free", "tail_energy", "--set", "gate_length_nm=1"], "gate_length_nm"),
])
def test_fit_usage_errors(capsys, args, words):
    code, out, err = run(capsys, "fit", DEMO, *args)
    assert code == 2 and out == ""
    assert words in err and err.count("\n") == 1, err


def test_fit_bad_files(capsys, tmp_path):
    missing = tmp_path / "none.csv"
    code, _, err = run(capsys, "fit", str(missing), "--free", "tail_energy")
    assert code == 2 and "cannot read" in err
    bad = tmp_path / "bad.csv"
    bad.write_text("Vg,Id [A/um]\n0,1e-9\n0.1,oops\n0.2,1e-7\n")
    code, _, err = run(capsys, "fit", str(bad), "--free", "tail_energy", "--vd", "0.3")
    assert code == 2 and "line 3" in err and "'oops' is not a number" in err
    out_only = tmp_path / "out.csv"
    out_only.write_text("Vd,Id@Vg=0.5 [uA/um]\n0,0\n0.1,1\n0.2,2\n")
    code, _, err = run(capsys, "fit", str(out_only), "--free", "tail_energy")
    assert code == 2 and "output curves" in err
