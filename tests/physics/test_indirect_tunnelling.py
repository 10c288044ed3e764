"""Phonon-assisted (indirect) band-to-band tunnelling in Si, Ge and SiGe.

Sources: Kane, J. Appl. Phys. 32, 83 (1961) (direct rate and the F^2.5 phonon-assisted
form; from memory); Hurkx, Klaassen & Knuvers, IEEE Trans. Electron Devices 39, 331
(1992), Si: A = 4e14 cm^-3 s^-1 (with F in V/cm), B = 1.9e7 V/cm, P = 2.5 (from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants

from sub60.physics import Design, solve_bias
from sub60.physics.indirect_tunnelling import (
    SI_INDIRECT,
    indirect_band_to_band,
    kane_direct_rate,
    rates_for,
)
from sub60.physics.materials import alloy_semiconductor, check_tunnelling_material, get_semiconductor
from sub60.physics.transport import fermi


@pytest.mark.parametrize("field_V_per_cm", [3e5, 1e6, 2e6, 5e6])
def test_si_uniform_field_rate_is_hurkx(field_V_per_cm):
    """G = 4e14 F^2.5 exp(-1.9e7/F) [cm^-3 s^-1], F in V/cm (Hurkx et al. 1992, from
    memory), to 1e-12 relative."""
    expected = 4e14 * field_V_per_cm**2.5 * math.exp(-1.9e7 / field_V_per_cm)
    assert SI_INDIRECT.rate_per_cm3_s(field_V_per_cm) == pytest.approx(expected, rel=1e-12)
    assert SI_INDIRECT.field_power == 2.5


def test_kane_direct_rate_formula():
    """Kane 1961 direct rate G = q^2 F^2 m_r^1/2 / (18 pi hbar^2 Eg^1/2)
    exp(-pi m_r^1/2 Eg^3/2 / (2 q hbar F)), recomputed in SI with scipy.constants, for
    Ge's Gamma gap 0.80 eV and m_r 0.0207 m0 at 1 and 3 MV/cm."""
    q, hbar, m0 = constants.e, constants.hbar, constants.m_e
    eg, mr = 0.80 * q, 0.0207 * m0
    rate = kane_direct_rate(0.80, 0.0207)
    for f_cm in (1e6, 3e6):
        f = f_cm * 100.0
        g = q**2 * f**2 * math.sqrt(mr) / (18 * math.pi * hbar**2 * math.sqrt(eg)) \
            * math.exp(-math.pi * math.sqrt(mr) * eg**1.5 / (2 * q * hbar * f))
        assert rate.rate_per_cm3_s(f_cm) == pytest.approx(g * 1e-6, rel=1e-10)


def test_kane_direct_exponent_matches_the_wkb_check_value():
    """The exponent of Kane's rate is the two-band WKB exponent: InAs, band mass 0.026
    (m_r = 0.013), Eg 0.354 eV, F = 1 MV/cm -> exp(-B/F) = 0.2550 (REFERENCES §1,
    derived)."""
    rate = kane_direct_rate(0.354, 0.013)
    assert math.exp(-rate.exponent_field_V_per_cm / 1e6) == pytest.approx(0.2550, abs=5e-4)


def test_gap_scaling_of_the_exponent():
    """B scales as Eg^3/2 (Kane's exponent at a fixed tunnelling mass): the Ge indirect
    B is Si's times (Eg_Ge/Eg_Si)^1.5 at 300 K (an estimate, said so in the module)."""
    si, ge = get_semiconductor("Si"), get_semiconductor("Ge")
    (r_si,) = rates_for(si, 300.0)
    r_ge = rates_for(ge, 300.0)
    assert r_si.exponent_field_V_per_cm == pytest.approx(1.9e7, rel=1e-12)
    ratio = (ge.bandgap_eV(300.0) / si.bandgap_eV(300.0)) ** 1.5
    assert r_ge[0].exponent_field_V_per_cm == pytest.approx(1.9e7 * ratio, rel=1e-12)
    assert [r.label for r in r_ge] == ["indirect", "Gamma"]
    assert r_ge[1].reference_gap_eV == pytest.approx(0.80, abs=0.01)  # Ge Gamma gap, 300 K


def test_path_integral_recovers_the_uniform_field_rate():
    """Linear bands (uniform field F = 1 MV/cm) over a long path: eq. (3) equals the
    local rate times the generating volume, q t G(F) int (f_s - f_d) dE / (qF) [derived],
    to 0.5 % (trapezoid on the spectrum's energies)."""
    si = get_semiconductor("Si")
    eg = float(si.bandgap_eV(300.0))
    x = np.linspace(0.0, 200.0, 4001)  # nm
    ev = 0.3 - 0.1 * x  # 0.1 eV/nm = 1 MV/cm
    ec = ev + eg
    kT = constants.k * 300.0 / constants.e
    spec = indirect_band_to_band(si, 300.0, 7.0, x, ec, ev, 0.0, -0.5, kT)
    e = np.linspace(-3.0, 3.0, 200001)
    occ = fermi(e, 0.0, kT) - fermi(e, -0.5, kT)
    g = SI_INDIRECT.rate_per_cm3_s(1e6)
    expected = constants.e * 7e-7 * g * np.trapezoid(occ, e) / 1e6 * 100.0  # A/m = uA/um
    print(f"path integral {spec.current_uA_per_um:.5e}, local x volume {expected:.5e} uA/um")
    assert spec.current_uA_per_um == pytest.approx(expected, rel=5e-3)
    assert spec.pair_currents_uA_per_um == {"indirect": spec.current_uA_per_um}


def test_equilibrium_and_no_window_give_zero():
    """f_s = f_d: no current; bands that never overlap: no current."""
    si = get_semiconductor("Si")
    x = np.linspace(0.0, 50.0, 201)
    ev = -0.01 * x
    spec = indirect_band_to_band(si, 300.0, 7.0, x, ev + 1.12, ev, 0.0, 0.0, 0.0259)
    assert spec.current_uA_per_um == 0.0
    flat = np.zeros_like(x)
    spec = indirect_band_to_band(si, 300.0, 7.0, x, flat + 1.12, flat, 0.0, -0.3, 0.0259)
    assert spec.current_uA_per_um == 0.0


def test_group_iv_statement_replaces_the_not_modelled_warning():
    """Si, Ge, SiGe: the statement says what the phonon-assisted model leaves out, not
    that currents would be wrong."""
    for rec in (get_semiconductor("Si"), get_semiconductor("Ge"), alloy_semiconductor("SiGe", 0.4)):
        text = check_tunnelling_material(rec)
        assert "phonon-assisted model" in text and "leaves out" in text
        assert "would be wrong" not in text


def test_si_tunnel_fet_far_below_inas():
    """Same geometry and bias (source 1e20 cm^-3, gate work function 4.3 eV, Vg = 1 V,
    Vd = 0.5 V): the Si tunnel FET carries orders of magnitude less band-to-band
    current than InAs (> 1e3x), and sits in the sub-uA/um class of published Si tunnel
    FETs (planar Si devices with on-currents well below 1 uA/um at ~1 V; reviewed by
    Seabaugh & Zhang, Proc. IEEE 98, 2095 (2010); from memory): 1e-5 to 1 uA/um."""
    common = dict(source_doping_cm3=1e20, gate_workfunction_eV=4.3)
    si = solve_bias(Design(material="Si", **common), 1.0, 0.5)
    inas = solve_bias(Design(material="InAs", **common), 1.0, 0.5)
    print(f"Si {si.btbt_uA_per_um:.3e} uA/um, InAs {inas.btbt_uA_per_um:.3e} uA/um")
    assert 1e-5 <= si.btbt_uA_per_um <= 1.0
    assert inas.btbt_uA_per_um > 1e3 * si.btbt_uA_per_um
    assert set(si.pair_currents_uA_per_um) == {"indirect"}
    assert not any("would be wrong" in w for w in si.warnings)


def test_ge_direct_path_beside_the_indirect_one():
    """Ge: both paths carry current; at a high gate voltage the direct Gamma path
    dominates (its exponent is smaller: the Gamma gap is only 0.14 eV above L; direct
    tunnelling dominates in Ge, Kao et al., IEEE Trans. Electron Devices 59, 292 (2012);
    from memory). SiGe with 30 % Ge lies between Si and Ge."""
    common = dict(source_doping_cm3=1e20, gate_workfunction_eV=4.3)
    ge = solve_bias(Design(material="Ge", **common), 1.0, 0.5)
    parts = ge.pair_currents_uA_per_um
    print(parts)
    assert parts["indirect"] > 0 and parts["Gamma"] > parts["indirect"]
    si = solve_bias(Design(material="Si", **common), 1.0, 0.5)
    sige = solve_bias(Design(material="SiGe", composition_x=0.3, **common), 1.0, 0.5)
    assert si.btbt_uA_per_um < sige.btbt_uA_per_um < ge.btbt_uA_per_um
