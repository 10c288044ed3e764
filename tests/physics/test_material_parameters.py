"""`material_parameters`: the list behind the page's material card.

Every row must carry a non-empty source, and its numbers must be those of the record,
recomputed here from published formulas: the Varshni law (Varshni, Physica 34, 149
(1967)), the effective density of states 2 (m kT / 2 pi hbar^2)^1.5 with CODATA
constants from scipy.constants (Sze & Ng, Physics of Semiconductor Devices, 3rd ed.,
ch. 1), the [001] hole masses 1/(g1 -+ 2 g2) (Luttinger, Phys. Rev. 102, 1030 (1956)),
and Si's Nc = 2.86e19 cm^-3 at 300 K (Green, J. Appl. Phys. 67, 2944 (1990)).
"""

from __future__ import annotations

import math

import pytest
import scipy.constants as sc

from sub60.physics import Design, material_parameters
from sub60.physics.materials import get_semiconductor, satellite_valleys


def _rows(design: Design, t: float = 300.0) -> dict[str, object]:
    return {p.label: p for p in material_parameters(design.semiconductor, t)}


@pytest.mark.parametrize("design", [
    Design(), Design(material="Si"), Design(material="Ge"), Design(material="GaSb"),
    Design(material="InGaAs", composition_x=0.53), Design(material="SiGe", composition_x=0.4),
    Design(material="AlGaSb", composition_x=0.8), Design(material="InAsSb", composition_x=0.1),
])
def test_every_row_has_a_value_and_a_source(design):
    rows = material_parameters(design.semiconductor, 300.0)
    assert len(rows) >= 20
    for p in rows:
        assert p.source.strip(), p.label
        assert isinstance(p.value, str) or math.isfinite(p.value), p.label


def test_gap_follows_the_varshni_law():
    # InAs, VMR 2001: Eg0 0.417 eV, alpha 0.276 meV/K, beta 93 K
    rows = _rows(Design(material="InAs"), 250.0)
    assert rows["Band gap Eg(T)"].value == pytest.approx(0.417 - 0.276e-3 * 250**2 / (250 + 93))
    assert rows["Varshni α"].value == pytest.approx(0.276) and rows["Varshni α"].unit == "meV/K"


def test_densities_of_states_and_hole_masses():
    rows = _rows(Design(material="Si"))
    assert rows["Conduction-band DOS Nc(T)"].value == pytest.approx(2.86e19, rel=2e-3)  # Green
    m = rows["Electron DOS mass"].value * sc.m_e
    nc = 2 * (m * sc.k * 300.0 / (2 * math.pi * sc.hbar**2)) ** 1.5 * 1e-6
    assert rows["Conduction-band DOS Nc(T)"].value == pytest.approx(nc, rel=1e-9)
    g1, g2, _ = get_semiconductor("GaAs").luttinger
    rows = _rows(Design(material="GaAs"))
    assert rows["Heavy hole, along [001]"].value == pytest.approx(1 / (g1 - 2 * g2))
    assert rows["Light hole, along [001]"].value == pytest.approx(1 / (g1 + 2 * g2))


def test_valley_gaps_of_each_kind_of_body():
    rows = _rows(Design(material="InGaAs", composition_x=0.53))
    for v in satellite_valleys(Design(material="InGaAs", composition_x=0.53).semiconductor):
        assert rows[f"{v.name}-valley gap (T)"].value == pytest.approx(v.gap_eV(300.0))
    si = _rows(Design(material="Si"))
    assert si["X-valley gap (T)"].value == pytest.approx(si["Band gap Eg(T)"].value)
    assert si["L-valley gap (T)"].value > si["X-valley gap (T)"].value
    ge = _rows(Design(material="Ge"))
    assert ge["L-valley gap (T)"].value == pytest.approx(ge["Band gap Eg(T)"].value)
    # Ge's direct gap at 300 K is about 0.80 eV (Sze & Ng, ch. 1; from memory)
    assert ge["Direct Γ gap (T)"].value == pytest.approx(0.80, abs=0.01)
    assert ge["Kind of gap"].value == "indirect"


def test_temperature_must_be_positive():
    with pytest.raises(ValueError, match="temperature_K"):
        material_parameters(get_semiconductor("InAs"), 0.0)
