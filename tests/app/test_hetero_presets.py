"""The heterojunction demo presets (our own scenarios, tests/make_hetero_presets.py) keep
their notes' promises: more on-current than the homojunction of the body at the same
supply and off target, and the alignment the note names."""

from __future__ import annotations

import re

import pytest

from sub60.app.presets import load_preset
from sub60.physics import Simulator, heterointerface_offsets


def _ion(design, settings) -> float:
    sw, ms = settings.transfer_sweep, settings.metric_settings
    m = Simulator().transfer_curve(design, sw.gate_voltages(), sw.vd_V,
                                   ioff_target_uA_per_um=ms.ioff_target_uA_per_um,
                                   vdd_V=ms.vdd_V).metrics
    assert m.ion_uA_per_um.value is not None, m
    return m.ion_uA_per_um.value


@pytest.mark.parametrize("name, kind, factor", [
    ("broken-gap-switch", "broken gap (type III)", 3.0),
    ("sige-source-tunnel-fet", "staggered (type II)", 5.0)])
def test_heterojunction_preset_beats_its_homojunction(name, kind, factor):
    s = load_preset(name)
    assert s.design.is_heterojunction
    assert heterointerface_offsets(s.design).kind == kind
    hetero, homo = _ion(s.design, s), _ion(s.design.homojunction(), s)
    assert hetero >= factor * homo, (hetero, homo)
    # the note quotes both on-currents; they must still be what the model gives
    numbers = [float(v) for v in re.findall(r"\(([0-9.]+) uA/um\)", s.note)]
    assert numbers and numbers[0] == pytest.approx(homo, rel=0.05), (numbers, homo)
