"""The one table writer (`app.tables`): its CSV text, and the same columns from the
command line and from a snapshot. The format is sub60's own (no outside source)."""

from __future__ import annotations

import csv
import io
import math

import numpy as np
import pytest

from sub60.app.cli import main
from sub60.app.snapshot_bundle import bands_csv, transfer_csv
from sub60.app.tables import csv_text, output_table
from sub60.physics.design import Design
from sub60.physics.simulate import Simulator


def test_csv_text_layout():
    text = csv_text({"vg_V": [0.1, 0.2], "id_uA_per_um": [1.234567890123, math.nan]},
                    {"vd_V": 0.3, "voff_V": None})
    assert text == ("# vd_V = 0.3\n# voff_V = \nvg_V,id_uA_per_um\n"
                    "0.1,1.23456789\n0.2,\n")


def test_csv_text_refuses_ragged_columns_and_bad_names():
    with pytest.raises(ValueError, match="one length"):
        csv_text({"a_V": [1.0, 2.0], "b_V": [1.0]})
    with pytest.raises(ValueError, match="column name"):
        csv_text({"a,b_V": [1.0]})


def test_output_table_refuses_gate_voltages_that_print_alike():
    c = Simulator().output_curve(Design(), 0.3, np.linspace(0.0, 0.2, 3))
    with pytest.raises(ValueError, match="appears twice"):
        output_table([c, c])


def rows(text: str) -> list[list[str]]:
    return list(csv.reader(line for line in io.StringIO(text) if not line.startswith("#")))


def test_cli_and_snapshot_write_the_same_bands_and_transfer_columns(capsys):
    sim = Simulator()
    bp = sim.solve_bias(Design(), 0.3, 0.3)
    vg = np.linspace(0.0, 0.2, 3)
    main(["bands", "--vg", "0.3", "--vd", "0.3", "--format", "csv"])
    cli_bands = rows(capsys.readouterr().out)
    snap_bands = rows(bands_csv(bp).decode())
    assert cli_bands[0] == snap_bands[0]
    # two independent solves (the CLI's may start warm): equal to 1 ueV, as in test_cli
    np.testing.assert_allclose(np.array(cli_bands[1:], float), np.array(snap_bands[1:], float),
                               rtol=0, atol=1e-6)

    main(["transfer", "--vg", "0:0.2:3", "--vd", "0.3", "--twin", "--format", "csv"])
    cli_transfer = rows(capsys.readouterr().out)
    main_curve = sim.transfer_curve(Design(), vg, 0.3)
    twin = sim.transfer_curve(Design().twin(), vg, 0.3)
    snap_transfer = rows(transfer_csv(main_curve, twin).decode())
    assert cli_transfer[0] == snap_transfer[0]

    def numbers(r: list[list[str]]) -> np.ndarray:
        return np.array([[float(x) if x else math.nan for x in row] for row in r[1:]])

    # two independent sweeps: equal to the Newton tolerance (as in test_cli)
    np.testing.assert_allclose(numbers(cli_transfer), numbers(snap_transfer), rtol=1e-5,
                               equal_nan=True)


def test_tradeoff_table_of_an_exponential_curve():
    """Id = I0 10^(Vg/S) with S = 60 mV/dec: Voff = S log10(Ioff/I0) and Ion = Id(Voff + Vdd)
    = Ioff 10^(Vdd/S) for every target the sweep holds (the definitions of Voff and Ion in
    `physics.figures_of_merit`; worked by hand)."""
    from types import SimpleNamespace

    from sub60.app.tables import tradeoff_table
    from sub60.physics.design import Design

    s_V, i0 = 0.060, 1e-9
    vg = np.linspace(-0.2, 0.8, 201)
    ids = i0 * 10.0 ** (vg / s_V)
    curve = SimpleNamespace(vg_V=vg, id_uA_per_um=ids, vg_refined_V=None,
                            id_refined_uA_per_um=None, design=Design())
    targets = np.array([1e-14, 1e-6, 1e-3, 1e-2, 1.0])
    table = tradeoff_table(curve, 0.3, targets)
    # 1e-14 is below the lowest current of the sweep (4.6e-13); 1.0 needs Voff + Vdd = 0.84 V > 0.8 V
    assert np.isnan(table["ion_uA_per_um"][[0, 4]]).all()
    np.testing.assert_allclose(table["voff_V"][1:4], s_V * np.log10(targets[1:4] / i0),
                               atol=1e-9)
    np.testing.assert_allclose(table["ion_uA_per_um"][1:4], targets[1:4] * 10 ** (0.3 / s_V),
                               rtol=1e-6)
