"""Electrostatics shared between designs that differ only in current-only fields.

Band tails (Urbach kernel on the band-to-band current) and trap-assisted generation
(SRH with Hurkx enhancement) enter this model's current only, never its charge: the
Poisson problem of two designs that differ only there is the same. Consistency check
(no outside source): a point computed from the other design's electrostatics equals a
point solved anew, to the solver's tolerance; a design that differs in anything else
(here the interface-trap density, which is a charge) is refused.
"""

from __future__ import annotations

import numpy as np
import pytest

from sub60.physics import Design, Simulator
from sub60.physics.simulate import CURRENT_ONLY_FIELDS, same_electrostatics

BASE = Design().replace(tail_energy_source_meV=15.0, tail_energy_channel_meV=15.0)
TAILS = BASE.replace(tail_energy_source_meV=25.0, tail_energy_channel_meV=25.0,
                     tat_lifetime_ns=10.0)


def test_current_only_fields_are_design_fields():
    for name in CURRENT_ONLY_FIELDS:
        assert hasattr(BASE, name)
    assert same_electrostatics(BASE, TAILS)
    assert not same_electrostatics(BASE, BASE.replace(interface_trap_density_cm2eV=1e12))
    assert not same_electrostatics(BASE.replace(source_resistance_ohm_um=100.0),
                                   TAILS.replace(source_resistance_ohm_um=100.0))


@pytest.mark.parametrize("vg", [0.0, 0.3])
def test_shared_point_equals_a_fresh_solve(vg):
    sim = Simulator()
    sim.solve_bias(BASE, vg, 0.3)
    shared = sim.solve_bias(TAILS, vg, 0.3, electrostatics_from=BASE)
    assert shared.electrostatics.design == TAILS
    assert shared.timings_s["poisson"] == 0.0  # no Poisson solve
    fresh = Simulator().solve_bias(TAILS, vg, 0.3)
    np.testing.assert_allclose(shared.electrostatics.psi_V, fresh.electrostatics.psi_V,
                               atol=1e-6)
    assert shared.current_uA_per_um == pytest.approx(fresh.current_uA_per_um, rel=1e-4)
    assert shared.tail_excess_uA_per_um == pytest.approx(fresh.tail_excess_uA_per_um,
                                                         rel=1e-4)


def test_another_charge_is_refused():
    sim = Simulator()
    sim.solve_bias(BASE, 0.2, 0.3)
    with pytest.raises(ValueError, match="electrostatics_from"):
        sim.solve_bias(BASE.replace(interface_trap_density_cm2eV=1e12), 0.2, 0.3,
                       electrostatics_from=BASE)
