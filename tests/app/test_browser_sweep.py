"""Browser test: the page's figures of merit are those of `sub60 transfer` with its
default sweep (one default sweep everywhere: `app.state.DEFAULT_GATE_SWEEP`), and the
page states the gate-voltage step, in the sidebar and under the transfer curve. Before,
the page swept -0.4...0.6 V in 41 points and the command line -0.3...0.6 V in 46, and the
page did not say its step. The step is (stop - start)/(points - 1) (arithmetic)."""

from __future__ import annotations

import json

import pytest

from sub60.app.cli import main
from tests.app.conftest import open_app

pytestmark = pytest.mark.browser


def test_page_metrics_equal_the_command_line_default_and_state_the_step(browser, app_url,
                                                                         capsys):
    assert main(["transfer"]) == 0
    cli = json.loads(capsys.readouterr().out)["metrics"]
    page, _, errors = open_app(browser, app_url)
    try:
        shown = page.evaluate("() => sub60.metrics()")["tfet"]
        for name in ("ss_min_mV_per_dec", "ss_avg4_mV_per_dec", "i60_uA_per_um",
                     "ion_uA_per_um", "voff_V"):
            assert shown[name] == pytest.approx(cli[name], rel=1e-9), name
        assert page.locator(".vg-step").get_by_text("Vg step 25 mV").is_visible()
        label = page.evaluate("() => sub60.model('transfer_plot').below"
                              ".find(a => a.axis_label !== undefined).axis_label")
        assert label == "Gate voltage Vg (V) · Vg step 25 mV", label
        assert not errors, errors
    finally:
        page.close()
