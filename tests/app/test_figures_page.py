"""The offline plots page of a snapshot (`app.figures_page`): the transmission figure.

Its check values come from the physics API itself (`physics.compare_transmissions`,
whose exact two-band and WKB solvers are verified against Kane's formula and the
two-band analysis in tests/physics/test_quantum.py); this test checks the page carries
them: the exact two-band T(E) beside the WKB one, with the same numbers.
"""

from __future__ import annotations

import numpy as np
import pytest

from sub60.app.figures_page import transmission_figure
from sub60.app.snapshot_check import compute_results
from sub60.app.snapshot_schema import ModelSettings, OutputSweep, SnapshotSettings, TransferSweep
from sub60.physics import compare_transmissions


def _results(model: str):
    s = SnapshotSettings(transfer_sweep=TransferSweep(-0.1, 0.4, 6, 0.3),
                         output_sweep=OutputSweep((0.3,), 0.0, 0.3, 3),
                         model=ModelSettings(tunnelling_model=model))
    return compute_results(s, include_output=False)


@pytest.mark.parametrize("model", ["two-band-exact", "one-band"])
def test_transmission_figure_draws_the_exact_two_band_beside_wkb(model):
    results = _results(model)
    fig = transmission_figure(results, {"width": 400, "height": 300})
    legend = {item.label["value"]: item.renderers[0] for item in fig.legend[0].items}
    wkb = "one-band" if model == "one-band" else "two-band"
    assert set(legend) == {f"WKB ({wkb})", "exact two-band"}
    ref = compare_transmissions(results.bias_point, wkb_model=wkb)
    assert ref is not None and ref.pair in fig.title.text
    for label, values in ((f"WKB ({wkb})", ref.wkb), ("exact two-band", ref.exact)):
        data = legend[label].data_source.data
        keep = values >= 1e-30
        np.testing.assert_allclose(data["y"], values[keep], rtol=1e-12)
        np.testing.assert_allclose(data["x"], ref.energy_eV[keep], rtol=1e-12)
    # two different curves (the exact one vanishes at the band edges, WKB does not)
    ratio = ref.exact[keep] / ref.wkb[keep]
    assert np.max(np.abs(ratio - 1.0)) > 0.05
