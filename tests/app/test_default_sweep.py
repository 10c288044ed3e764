"""One default transfer sweep for the page, the command line and new snapshots, and the
page states its gate-voltage step.

Before, the page swept -0.4...0.6 V in 41 points, `sub60 transfer` -0.3...0.6 V in 46
and a new snapshot -0.2...0.6 V in 41: one design had three SS_min values. The check is
that every door uses the same gate voltages (`app.state.DEFAULT_GATE_SWEEP`) and that the
page's figures of merit equal those of the command line's default run; the step is
(stop - start)/(points - 1) (arithmetic, no source). A snapshot keeps the sweep it stores.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from sub60.app.cli import build_parser, main
from sub60.app.cli_common import parse_sweep
from sub60.app.layout import Explorer
from sub60.app.session_files import snapshot_of_session
from sub60.app.snapshot_schema import SnapshotSettings, TransferSweep
from sub60.app.state import DEFAULT_GATE_SWEEP, ExplorerState


def test_page_command_line_and_snapshot_share_one_default_sweep():
    # the page's sweep, kept: -0.4 V to 0.6 V in 25 mV steps, written as a user types them
    expected = np.array([float(f"{-0.4 + 0.025 * k:.4f}") for k in range(41)])
    np.testing.assert_array_equal(DEFAULT_GATE_SWEEP.gate_voltages(), expected)
    np.testing.assert_array_equal(ExplorerState().sweep_gate_voltages(), expected)
    cli = build_parser().parse_args(["transfer"])
    np.testing.assert_array_equal(parse_sweep(cli.vg, "vg"), expected)
    np.testing.assert_array_equal(SnapshotSettings().transfer_sweep.gate_voltages(), expected)
    np.testing.assert_array_equal(TransferSweep().gate_voltages(), expected)


def test_the_page_states_the_gate_voltage_step():
    st = ExplorerState()
    assert DEFAULT_GATE_SWEEP.step_V == pytest.approx(0.025)
    assert st.vg_step_text() == "Vg step 25 mV"
    st.vg_points = 21
    assert st.vg_step_text() == "Vg step 50 mV"
    st.vg_sweep_V = (0.0, 0.6)
    assert st.vg_step_text() == "Vg step 30 mV"
    e = Explorer(ExplorerState(vg_points=11), background=False)
    assert "Vg step 100 mV" in e.controls.sweep_step.object
    e.state.vg_points = 51
    assert "Vg step 20 mV" in e.controls.sweep_step.object


def test_page_metrics_equal_the_command_line_default_run(capsys):
    e = Explorer(background=False)
    e.panel()
    page = e.jobs.curves["tfet"].metrics
    assert "Vg step 25 mV" in e.figures.transfer.xaxis[0].axis_label
    assert main(["transfer"]) == 0
    cli = json.loads(capsys.readouterr().out)["metrics"]
    for name in ("ss_min_mV_per_dec", "ss_avg4_mV_per_dec", "i60_uA_per_um", "ion_uA_per_um",
                 "voff_V"):
        assert getattr(page, name).value == pytest.approx(cli[name], rel=1e-9), name


def test_an_old_snapshot_keeps_its_stored_sweep():
    e = Explorer(ExplorerState(vg_points=11), background=False)
    e.panel()
    settings = snapshot_of_session(e.state, e.pins, e.simulator).replace(
        transfer_sweep=TransferSweep(-0.2, 0.6, 11, 0.3))  # the old snapshot default range
    assert e.import_bytes(settings.to_json().encode(), "settings.json")
    assert e.state.vg_sweep_V == (-0.2, 0.6) and e.state.vg_points == 11
    np.testing.assert_allclose(e.jobs.curves["tfet"].vg_V, np.linspace(-0.2, 0.6, 11))
