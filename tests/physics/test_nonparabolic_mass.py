"""In-plane mass of non-parabolic conduction subbands, and alpha at the working temperature.

Lab notebook: Kane's two-band non-parabolicity alpha = (1 - m*/m0)^2 / Eg (Kane, J. Phys.
Chem. Solids 1, 249 (1957) — from memory; REFERENCES §3) with the Varshni gap of
Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001); the subband-edge mass is
checked against the curvature of the dispersion E(1 + alpha E) = hbar^2 k^2 / 2m*.
"""

from __future__ import annotations

import dataclasses
import math

import pytest

from sub60.physics.design import Design
from sub60.physics.materials import get_semiconductor
from sub60.physics.subbands import device_subbands


def test_alpha_from_the_gap_at_300K_inas():
    """InAs: Eg(300 K) = 0.417 - 0.276e-3 * 300^2 / (300 + 93) eV (VMR 2001, Table III);
    alpha = (1 - 0.026)^2 / Eg -> 2.68 /eV at 300 K, 2.28 /eV with the 0 K gap."""
    inas = get_semiconductor("InAs")
    eg300 = 0.417 - 0.276e-3 * 300.0**2 / (300.0 + 93.0)
    assert inas.nonparabolicity_at_per_eV(300.0) == pytest.approx((1 - 0.026) ** 2 / eg300,
                                                                   rel=1e-9)
    assert inas.nonparabolicity_at_per_eV(300.0) == pytest.approx(2.68, abs=0.01)
    assert inas.nonparabolicity_at_per_eV(0.0) == pytest.approx(2.275, abs=0.01)
    si = get_semiconductor("Si")  # indirect: constant Monte Carlo value
    assert si.nonparabolicity_at_per_eV(300.0) == si.nonparabolicity_per_eV


def curvature_mass(m_star: float, alpha: float, e_n: float) -> float:
    """Mass from the curvature of the subband dispersion at k_par = 0, independent of the
    closed form: E(k_par) solves E(1 + alpha E) = e_n(1 + alpha e_n) + hbar^2 k_par^2/2m*,
    so with u = hbar^2 k_par^2 / 2m0 [eV], m/m0 = 1 / (dE/du) at u = 0 (central difference)."""
    def energy(u: float) -> float:
        rhs = e_n * (1 + alpha * e_n) + u / m_star
        return (-1 + math.sqrt(1 + 4 * alpha * rhs)) / (2 * alpha)

    du = 1e-7
    return 2 * du / (energy(du) - energy(-du))


@pytest.mark.parametrize("temperature_K", [300.0, 150.0])
def test_conduction_subband_mass_is_the_band_mass_at_its_edge(temperature_K):
    """m_n = m*(1 + 2 alpha E_n) (derived from the Kane dispersion; e.g. Nag, Electron
    Transport in Compound Semiconductors, 1980 — from memory), checked against the
    numerical curvature for every conduction subband of the default InAs body."""
    d = dataclasses.replace(Design(), temperature_K=temperature_K)
    inas = get_semiconductor(d.material)
    alpha = inas.nonparabolicity_at_per_eV(temperature_K)
    sb = device_subbands(d)
    for s in sb.conduction:
        want = curvature_mass(inas.electron_mass, alpha, s.energy_eV)
        assert s.inplane_mass == pytest.approx(want, rel=1e-5), s.label
    # default design at 300 K: C1 ~0.088 eV above the edge, mass ~0.038 (1.47 x band edge)
    if temperature_K == 300.0:
        assert sb.conduction[0].inplane_mass / inas.electron_mass == pytest.approx(1.47, abs=0.02)
