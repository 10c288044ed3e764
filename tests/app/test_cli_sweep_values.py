"""The command line's voltage sweeps carry no float noise: a sweep START:STOP:N gives the
voltages a user reads off the grid (the grid points of -0.3:0.6:46 are the multiples of
0.02 V; checked against exact decimal arithmetic with `fractions.Fraction`)."""

from __future__ import annotations

import json
from fractions import Fraction

from sub60.app.cli_common import parse_sweep


def test_sweep_voltages_are_the_decimal_grid_points():
    values = parse_sweep("-0.3:0.6:46", "vg")
    exact = [Fraction(-3, 10) + k * Fraction(9, 10) / 45 for k in range(46)]
    assert [float(x) for x in exact] == values.tolist()
    text = json.dumps(values.tolist())
    assert "-0.28," in text and "e-" not in text and "999999" not in text, text
    assert "-0.0" not in json.dumps(parse_sweep("-0.2:0.2:3", "vd").tolist())
