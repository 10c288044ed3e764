"""Doping-induced band-gap narrowing.

Lab notebook: the Si model of Slotboom & de Graaff, Solid-State Electron. 19, 857 (1976)
recomputed with mpmath at tabulated dopings; the III-V model of Jain, McGregor &
Roulston, J. Appl. Phys. 68, 3747 (1990) recomputed from its coefficient table (from
memory) with mpmath, and checked against the paper's own statement (abstract, read):
the N^(1/3) law holds for the p-type materials but not for the n-type ones; in the
pipeline, the minority-band shift of the transport profiles.
"""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest

from sub60.physics.bandgap_narrowing import (
    JAIN_COEFFICIENTS,
    bandgap_narrowing_eV,
    has_narrowing_model,
    narrowed_profiles,
)
from sub60.physics.design import Design
from sub60.physics.simulate import Simulator, design_warnings


@pytest.mark.parametrize(("doping", "expected_meV"), [(1e17, 6.364), (1e18, 42.40), (1e19, 83.4),
                                                      (1e20, 124.7)])
def test_slotboom_si_against_mpmath(doping: float, expected_meV: float) -> None:
    """dEg = 9 meV [ln(N/1e17) + sqrt(ln^2(N/1e17) + 0.5)] (Slotboom & de Graaff 1976,
    from memory), recomputed in mpmath: 1e-12; and the rounded values (9 sqrt(0.5) =
    6.364 meV at 1e17; 83.4 meV at 1e19) to 0.2 %."""
    ln = mpmath.log(mpmath.mpf(doping) / mpmath.mpf("1e17"))
    ref = mpmath.mpf("0.009") * (ln + mpmath.sqrt(ln**2 + mpmath.mpf("0.5")))
    got = float(bandgap_narrowing_eV("Si", "n", doping))
    assert got == pytest.approx(float(ref), rel=1e-12)
    assert float(bandgap_narrowing_eV("Si", "p", doping)) == got
    assert 1e3 * got == pytest.approx(expected_meV, rel=2e-3)


@pytest.mark.parametrize("material", sorted(JAIN_COEFFICIENTS))
@pytest.mark.parametrize("kind", ["n", "p"])
def test_jain_recomputed_from_the_table(material: str, kind: str) -> None:
    """dEg = A N^(1/3) + B N^(1/4) + C N^(1/2) from the table's A, B, C in mpmath at
    1e18 and 1e19 cm^-3: 1e-12."""
    c = JAIN_COEFFICIENTS[material][kind]
    for n in (1e18, 1e19):
        nn = mpmath.mpf(n)
        ref = (mpmath.mpf(c.a_eV_cm) * mpmath.cbrt(nn) + mpmath.mpf(c.b_eV_cm34) * nn ** mpmath.mpf(0.25)
               + mpmath.mpf(c.c_eV_cm32) * mpmath.sqrt(nn))
        assert float(bandgap_narrowing_eV(material, kind, n)) == pytest.approx(float(ref), rel=1e-12)


@pytest.mark.parametrize("material", sorted(JAIN_COEFFICIENTS))
def test_jain_cube_root_law_holds_for_p_type_only(material: str) -> None:
    """Jain et al. (abstract): 'The commonly used N^(1/3) relation is shown to be valid
    for the p-type materials considered, but not for n-type materials.' Log-slope of dEg
    over 1e18-1e20 cm^-3: p-type within 1/3 +- 0.04, n-type above 0.42."""
    def slope(kind: str) -> float:
        lo, hi = (float(bandgap_narrowing_eV(material, kind, n)) for n in (1e18, 1e20))
        return math.log10(hi / lo) / 2

    print(f"\n{material}: log-slope p {slope('p'):.3f}, n {slope('n'):.3f}")
    assert abs(slope("p") - 1 / 3) < 0.04
    assert slope("n") > 0.42


def test_materials_without_a_model_give_zero_and_a_warning() -> None:
    assert not has_narrowing_model("GaSb")
    assert float(bandgap_narrowing_eV("GaSb", "p", 1e19)) == 0.0
    assert any("no band-gap-narrowing model" in w
               for w in design_warnings(Design(material="GaSb", bandgap_narrowing="on")))
    with pytest.raises(ValueError, match="doping_type"):
        bandgap_narrowing_eV("GaAs", "x", 1e18)


def test_minority_band_shift_of_the_transport_profiles() -> None:
    """Where acceptors dominate the conduction profiles drop by dEg_p(N_A - N_D); where
    donors dominate the valence profiles rise by dEg_n(N_D - N_A); nothing else moves."""
    d = Design(bandgap_narrowing="on")
    donors = np.array([0.0, 0.0, 1e15, 5e17])
    acceptors = np.array([4e19, 1e18, 0.0, 0.0])
    cond = np.zeros((2, 4))
    val = -np.ones((3, 4))
    c2, v2 = narrowed_profiles(d, donors, acceptors, cond, val)
    dp = bandgap_narrowing_eV("InAs", "p", acceptors[:2])
    dn = bandgap_narrowing_eV("InAs", "n", donors[2:])
    np.testing.assert_allclose(c2[:, :2], -dp[None, :] * np.ones((2, 1)))
    np.testing.assert_array_equal(c2[:, 2:], 0.0)
    np.testing.assert_allclose(v2[:, 2:], -1 + dn[None, :] * np.ones((3, 1)))
    np.testing.assert_array_equal(v2[:, :2], -1.0)


def test_pipeline_with_narrowing() -> None:
    """Default InAs tunnel FET at V_g = 0.2 V: the source conduction subband sits lower by
    dEg_p(4e19) than without narrowing, the drain valence subband higher by dEg_n(5e17);
    the potential is the same (Poisson unchanged); off by default."""
    sim = Simulator()
    off = sim.solve_bias(Design(), 0.2, 0.3)
    on = sim.solve_bias(Design(bandgap_narrowing="on"), 0.2, 0.3)
    np.testing.assert_array_equal(on.electrostatics.psi_V, off.electrostatics.psi_V)
    d_src = float(bandgap_narrowing_eV("InAs", "p", 4e19))
    d_drn = float(bandgap_narrowing_eV("InAs", "n", 5e17))
    assert off.conduction_eV[0, 0] - on.conduction_eV[0, 0] == pytest.approx(d_src, rel=1e-6)
    assert on.valence_eV[0, -1] - off.valence_eV[0, -1] == pytest.approx(d_drn, rel=1e-6)
    assert on.current_uA_per_um != off.current_uA_per_um
