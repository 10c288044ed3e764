"""Satellite (L, X) conduction valleys of the III-Vs and the warning when one of them,
confined, lies below the Gamma subband the tunnelling model uses.

Lab notebook. Valley gaps and masses: Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89,
5815 (2001), from memory (confirm before relying on an exact figure). Confinement mass of
an ellipsoidal valley for a (001) well: m_z = 1/(w_zz), w the inverse-mass tensor (Stern
& Howard, Phys. Rev. 163, 816 (1967) — from memory).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from sub60.physics.design import Design
from sub60.physics.materials import SATELLITE_VALLEYS, SEMICONDUCTORS
from sub60.physics.simulate import design_warnings
from sub60.physics.subbands import device_subbands, satellite_edges, valley_warning


def test_every_direct_gap_iii_v_has_l_and_x_valleys():
    for name, rec in SEMICONDUCTORS.items():
        if rec.direct_gap:
            assert [v.name for v in SATELLITE_VALLEYS[name]] == ["L", "X"], name


@pytest.mark.parametrize("material", ["GaAs", "GaSb", "InAs"])
def test_l_valley_confinement_mass_is_the_inverse_mass_tensor_zz(material):
    """Rotate diag(1/m_t, 1/m_t, 1/m_l) so that the long axis lies along [111]; m_z is
    1/w_zz (Stern & Howard 1967)."""
    valley = SATELLITE_VALLEYS[material][0]
    n = np.ones(3) / np.sqrt(3.0)
    w = (np.eye(3) - np.outer(n, n)) / valley.transverse_mass + np.outer(n, n) / valley.longitudinal_mass
    assert valley.confinement_masses()[0] == pytest.approx(1.0 / w[2, 2], rel=1e-12)
    x = SATELLITE_VALLEYS[material][1]
    assert x.confinement_masses() == (x.longitudinal_mass, x.transverse_mass)


def test_gasb_gamma_l_spacing_at_300K():
    """GaSb: Eg_Gamma = 0.812 - 0.417e-3 T^2/(T + 140), Eg_L = 0.875 - 0.597e-3 T^2/(T + 140)
    (VMR 2001, from memory): the L valley lies only ~26 meV above Gamma at 300 K."""
    t = 300.0
    gamma = 0.812 - 0.417e-3 * t**2 / (t + 140.0)
    ell = 0.875 - 0.597e-3 * t**2 / (t + 140.0)
    valley = SATELLITE_VALLEYS["GaSb"][0]
    assert valley.gap_eV(t) - SEMICONDUCTORS["GaSb"].bandgap_eV(t) == pytest.approx(ell - gamma)
    assert ell - gamma == pytest.approx(0.026, abs=0.002)


def test_thin_gasb_body_warns_that_the_lowest_state_is_l_like():
    """7 nm GaSb: confinement lifts Gamma C1 by ~0.07 eV, more than the Gamma-L spacing plus
    the heavy L valley's own confinement: the warning names the L valley (the physics of
    issue 11 item 5; no published number for this body)."""
    d = dataclasses.replace(Design(), material="GaSb")
    edges = satellite_edges(d)
    assert edges["L"] < device_subbands(d).conduction[0].energy_eV < edges["X"]
    text = valley_warning(d)
    assert text is not None and "L-like" in text
    assert text in design_warnings(d)
    # a thicker body brings Gamma C1 back below L
    assert valley_warning(dataclasses.replace(d, body_thickness_nm=15.0)) is None


def test_default_inas_design_has_no_valley_warning():
    d = Design()
    assert valley_warning(d) is None
    assert min(satellite_edges(d).values()) > 0.5  # L and X lie far above InAs's Gamma
