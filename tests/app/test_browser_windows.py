"""Browser test: the band diagram draws the drain-side (ambipolar) tunnel window where the
spectral current J(E) flows through it. At Vg = -0.3 V the default tunnel FET has no
source-side window (the physics' own `BiasPoint.window_eV` is None) while about 1 µA/µm
tunnels from the channel valence band into the drain conduction band; the reference is
the physics package called directly: the energies carrying J(E) must lie inside the drawn
window, widened by the Fermi tails (a few kT, Sze & Ng, Physics of Semiconductor
Devices, 3rd ed., sec. 2.4: the occupation difference f_s - f_d decays as exp(-|dE|/kT)
outside the Fermi window)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import Boltzmann, elementary_charge

from sub60.physics import Design, Simulator
from tests.app.conftest import open_app

pytestmark = pytest.mark.browser

KT_EV = Boltzmann * 300.0 / elementary_charge


def test_drain_side_window_is_drawn_where_ambipolar_current_flows(browser, app_url):
    design = Design()
    bp = Simulator().solve_bias(design, -0.3, 0.3)
    assert bp.window_eV is None and bp.btbt_uA_per_um > 0.1  # the case of the defect
    page, _, errors = open_app(browser, app_url)
    try:
        entry = page.locator(".ctl-vg_V input")
        entry.click()
        entry.press("Control+a")
        entry.type("-0.3")
        entry.press("Enter")
        page.wait_for_function("() => sub60.data('vg_marker_source').vg[0] === -0.3",
                               timeout=30_000)
        win = page.evaluate("() => { const d = sub60.model('window_source').data;"
                            " return {side: Array.from(d.side), e_min: Array.from(d.e_min),"
                            " e_max: Array.from(d.e_max),"
                            " xs: Array.from(d.xs, a => Array.from(a))}; }")
        assert win["side"] == ["drain side (ambipolar)"], win["side"]
        lo, hi = win["e_min"][0], win["e_max"][0]
        assert hi > lo
        # the outline spans the channel-drain junction
        xs = np.asarray(win["xs"][0])
        assert xs.min() < design.drain_junction_nm < xs.max() + 1e-9
        assert xs.min() >= design.gate_start_nm - 1e-9
        # where J(E) flows (above 1 % of its peak) lies within the window +- 5 kT
        e = np.asarray(bp.spectrum.energy_eV)
        j = np.abs(np.asarray(bp.spectrum.current_density))
        flowing = e[j >= 0.01 * j.max()]
        assert flowing.min() >= lo - 5 * KT_EV and flowing.max() <= hi + 5 * KT_EV, \
            (flowing.min(), flowing.max(), lo, hi)
        label = page.evaluate("() => sub60.model('window_closed_label').text")
        assert "drain-side window open" in label, label
        assert not errors, errors
    finally:
        page.close()
