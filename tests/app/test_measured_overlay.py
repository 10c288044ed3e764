"""A measured file on the explorer's own plots and in its metrics strip (no browser).

Check value: a curve I = I0 10^(Vg / S) has the swing S = dVg / dlog10(I) at every point
(the definition of the subthreshold swing; common practice, no source), so its SS_min
and SS_avg4 in the strip are S. The strip's measured row must also equal the physics
package's `figures_of_merit` on the file's columns (the model's own code).
"""

from __future__ import annotations

import re

import numpy as np
import pytest

from sub60.app.layout import Explorer
from sub60.app.measured_view import demo_bytes
from sub60.app.state import ExplorerState
from sub60.physics import figures_of_merit, read_measured

SWING_MV = 80.0


def _exponential_file() -> bytes:
    vg = np.linspace(-0.2, 0.6, 41)  # 1e-8.5 to 1e1.5 µA/µm: 4 decades above Ioff
    ids = 1e-6 * 10 ** (vg / (SWING_MV * 1e-3))  # µA/µm
    rows = "".join(f"{v:.4f},{i:.8e}\n" for v, i in zip(vg, ids, strict=True))
    return ("Vg,Id@Vd=0.3 [uA/um]\n" + rows).encode()


@pytest.fixture(scope="module")
def explorer() -> Explorer:
    e = Explorer(ExplorerState(vg_points=11), background=False)
    e.panel()
    return e


def _cell(html: str, device: str, metric: str) -> float:
    m = re.search(rf'data-device="{device}" data-metric="{metric}" data-value="([^"]+)"', html)
    assert m, (device, metric)
    return float(m.group(1))


def test_measured_points_are_markers_with_their_legend_entry(explorer):
    card, fig = explorer.measured_card, explorer.results.figures
    assert card.open(demo_bytes(), "demo-tfet-transfer.csv")
    src = fig.measured.transfer_source
    assert len(src.data["vg"]) == 41 and set(src.data["vd"]) == {0.3}
    renderer = fig.transfer.select_one({"name": "measured_transfer"})
    assert renderer.glyph.marker == "circle" and renderer.glyph.fill_color is None  # no line
    assert fig.measured.transfer_item.visible
    assert fig.measured.transfer_item.label.value == "measured (demo-tfet-transfer.csv)"
    assert fig.measured.transfer_item in fig.transfer.legend[0].items
    assert not fig.measured.output_item.visible  # a transfer file: nothing on the output plot


def test_measured_metrics_row_is_the_models_code_and_the_definition(explorer):
    card, results = explorer.measured_card, explorer.results
    assert card.open(_exponential_file(), "exp.csv")
    html = results.metrics.object
    assert "measured (exp.csv), V<sub>d</sub> = 0.3 V" in html
    assert _cell(html, "measured-0", "ss_min_mV_per_dec") == pytest.approx(SWING_MV, rel=1e-3)
    assert _cell(html, "measured-0", "ss_avg4_mV_per_dec") == pytest.approx(SWING_MV, rel=1e-3)
    data = read_measured(_exponential_file())
    c = data.transfer[0]
    ref = figures_of_merit(c.vg_V, c.id_uA_per_um, temperature_K=explorer.state.temperature_K,
                           ioff_target_uA_per_um=explorer.state.ioff_target_uA_per_um,
                           vdd_V=explorer.state.vdd_V)
    for name in ("ion_uA_per_um", "ioff_uA_per_um", "voff_V"):
        want = getattr(ref, name).value
        assert want is not None and _cell(html, "measured-0", name) == pytest.approx(want)
    # no point reaches 60 mV/dec: I60 is not defined, a dash with its reason
    assert ref.i60_uA_per_um.value is None
    assert 'data-device="measured-0" data-metric="i60_uA_per_um" data-value=""' in html
    # the model's own row stays beside it
    assert 'data-device="tfet"' in html


def test_output_file_goes_on_the_output_plot(explorer):
    card, fig = explorer.measured_card, explorer.results.figures
    text = b"Vd,Id@Vg=0.5 [uA/um],Id@Vg=0.6 [uA/um]\n0,0,0\n0.1,1,2\n0.2,2,3\n"
    assert card.open(text, "out.csv")
    assert len(fig.measured.output_source.data["vd"]) == 6
    assert fig.measured.output_item.visible and fig.output_plot.legend.visible
    assert fig.measured.output_item.label.value == "measured (out.csv)"
    assert not fig.measured.transfer_item.visible and not len(fig.measured.transfer_source.data["vg"])
    assert card.fit_button.disabled and "output plot" in card.status.object
    assert 'data-device="measured' not in explorer.results.metrics.object


def test_bad_file_changes_nothing_on_the_plots(explorer):
    card, fig = explorer.measured_card, explorer.results.figures
    assert card.open(demo_bytes(), "demo.csv")
    before = dict(fig.measured.transfer_source.data)
    assert not card.open(b"Vg,Id\n0,1\n0.1,x\n", "bad.csv")
    assert fig.measured.transfer_source.data["vg"] is before["vg"]
    assert "line 3" in card.status.object
