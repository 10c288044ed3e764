"""Browser test: the tunnelling model is chosen in the page, as a user does (open the
"Tunnelling model" card, click the exact transmission), and the band diagram's current,
the page address and the Transmission plot follow. The reference is the physics package
called directly with the same model (`Simulator(model=...)`, `compare_transmissions`);
the transmissions themselves are checked against published results in
tests/physics/test_quantum.py."""

from __future__ import annotations

import math

import numpy as np
import pytest

from sub60.physics import Design, Simulator, compare_transmissions
from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

TIMEOUT_MS = 120_000


def test_exact_transmission_chosen_in_the_page(browser, app_url):
    page, _, errors = open_app(browser, app_url)
    try:
        # the default page draws WKB and exact T(E) of the main pair, with their legend
        legend = page.evaluate("() => sub60.model('transmission_legend').items"
                               ".map(i => i.label.value)")
        assert legend == ["WKB (two-band)", "exact two-band"], legend
        page.get_by_text("Tunnelling model", exact=True).first.click()
        choice = page.get_by_text("Exact quantum transmission, two-band model")
        choice.click()
        page.wait_for_function(
            "() => sub60.byClass('sub60-header').text.includes('exact two-band transmission')"
            " && location.search.includes('model=two-band-exact')", timeout=TIMEOUT_MS)
        sim = Simulator(model="two-band-exact")
        bp = sim.solve_bias(Design(), 0.3, 0.3)
        page.wait_for_function(
            "(i) => Math.abs(sub60.data('vg_marker_source').id[0] - i) < 1e-4 * i",
            arg=bp.current_uA_per_um, timeout=TIMEOUT_MS)
        ref = compare_transmissions(bp, wkb_model="two-band")
        shown = page.evaluate("() => sub60.data('transmission_source')")
        np.testing.assert_allclose(shown["energy_eV"], ref.energy_eV, atol=1e-6)
        np.testing.assert_allclose(shown["wkb"], ref.wkb, rtol=1e-4)
        exact = np.asarray(shown["exact"], float)
        ok = np.isfinite(exact)
        assert ok.sum() > 0.9 * exact.size
        np.testing.assert_allclose(exact[ok], ref.exact[ok], rtol=1e-4)
        # the curves follow too: the transfer curve is the exact model's
        page.wait_for_function("() => sub60.allDone(41)", timeout=TIMEOUT_MS)
        vg = page.evaluate("() => sub60.data('transfer_tfet_source').vg")
        ids = page.evaluate("() => sub60.data('transfer_tfet_source').id")
        k = int(np.argmin(np.abs(np.asarray(vg) - 0.3)))
        ref_id = sim.solve_bias(Design(), float(vg[k]), 0.3).current_uA_per_um
        assert math.isclose(ids[k], ref_id, rel_tol=1e-4), (ids[k], ref_id)
        assert not errors, errors
    finally:
        page.close()
