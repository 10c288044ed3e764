"""The design record: validation, geometry, JSON round trip and the gate stack.

Sources beside each check. The EOT definition, EOT = t_ox * eps_SiO2 / eps_ox, is
common practice (no source); eps_SiO2 = 3.9 and the high-k permittivities are those of
Robertson, Eur. Phys. J. Appl. Phys. 28, 265 (2004), Table 1 (HfO2: 22, inside the
20-25 the table gives).
"""

from __future__ import annotations

import dataclasses
import math

import pytest

from sub60.physics.design import FIELD_RANGES, VD_RANGE_V, VG_RANGE_V, Design, check_bias

#: Robertson 2004, Table 1: relative permittivities.
ROBERTSON_PERMITTIVITY = {"SiO2": 3.9, "Al2O3": 9.0, "ZrO2": 25.0}


@pytest.mark.parametrize("oxide", sorted(ROBERTSON_PERMITTIVITY))
def test_gate_permittivity_is_the_handbook_value(oxide):
    assert Design(oxide=oxide).gate_permittivity == ROBERTSON_PERMITTIVITY[oxide]


def test_hfo2_permittivity_inside_the_published_range():
    """Robertson 2004 gives 20-25 for HfO2."""
    assert 20.0 <= Design(oxide="HfO2").gate_permittivity <= 25.0


@pytest.mark.parametrize(("oxide", "eps", "t_nm"), [
    ("HfO2", None, 2.0), ("Al2O3", None, 3.0), ("ZrO2", None, 1.0), ("custom", 7.8, 1.0),
    ("custom", 39.0, 5.0),
])
def test_eot_is_thickness_times_3p9_over_permittivity(oxide, eps, t_nm):
    """EOT = t_ox * 3.9 / eps_ox (common practice; 3.9 from Robertson 2004, Table 1)."""
    d = Design(oxide=oxide, oxide_permittivity=eps, oxide_thickness_nm=t_nm)
    eps_ox = eps if eps is not None else d.gate_permittivity
    assert d.eot_nm == pytest.approx(t_nm * 3.9 / eps_ox, rel=1e-15)


def test_eot_of_sio2_is_its_thickness_and_the_default_is_0p35_nm():
    """SiO2 is its own reference; the default 2 nm HfO2 (eps 22) is 0.3545 nm of SiO2."""
    assert Design(oxide="SiO2", oxide_thickness_nm=1.7).eot_nm == pytest.approx(1.7, rel=1e-15)
    assert Design().eot_nm == pytest.approx(2.0 * 3.9 / 22.0, rel=1e-15)


def test_custom_dielectric_needs_its_permittivity():
    with pytest.raises(ValueError, match="oxide_permittivity"):
        Design(oxide="custom")
    assert Design(oxide="custom", oxide_permittivity=12.0).gate_dielectric.name == "custom"


def test_geometry_adds_up():
    """Regions tile the device: source, channel and drain lengths add up, the gate runs
    from source_length - offset to the drain junction (module docstring)."""
    d = Design(source_length_nm=15.0, gate_length_nm=40.0, drain_length_nm=25.0,
               gate_source_offset_nm=-3.0)
    assert d.source_junction_nm == 15.0
    assert d.drain_junction_nm == 55.0
    assert d.total_length_nm == 80.0
    assert d.gate_start_nm == 18.0
    assert d.gate_end_nm == d.drain_junction_nm


def test_json_round_trip_and_hash():
    """to_json/from_json is the identity; equal designs hash equal (they are cache keys)."""
    d = Design(material="GaSb", oxide="custom", oxide_permittivity=11.5, gate_layout="single",
               temperature_K=250.0, channel_doping_cm3=-1e16)
    back = Design.from_json(d.to_json())
    assert back == d and hash(back) == hash(d)
    assert Design.from_dict({}) == Design()


def test_twin_changes_only_the_source_type():
    d = Design(source_doping_cm3=1e20)
    t = d.twin()
    assert t.source_type == "n"
    assert dataclasses.replace(t, source_type="p") == d


@pytest.mark.parametrize("name", [k for k, s in FIELD_RANGES.items() if s.kind is float
                                  and k != "oxide_permittivity"])
def test_out_of_range_values_name_the_field_and_range(name):
    spec = FIELD_RANGES[name]
    for bad in (spec.low - abs(spec.low) - 1.0, spec.high + abs(spec.high) + 1.0, math.nan):
        with pytest.raises(ValueError, match=name) as err:
            Design(**{name: bad})
        assert f"{spec.low:g}" in str(err.value) and f"{spec.high:g}" in str(err.value)


def test_unknown_field_and_wrong_type_raise_value_error():
    with pytest.raises(ValueError, match="unknown design field"):
        Design(gate_lenght_nm=10.0)
    with pytest.raises(ValueError, match="body_thickness_nm"):
        Design(body_thickness_nm="thin")
    with pytest.raises(ValueError, match="material"):
        Design(material="unobtainium")


def test_material_and_oxide_names_are_case_insensitive():
    d = Design(material="inas", oxide="hfo2")
    assert (d.material, d.oxide) == ("InAs", "HfO2")


def test_bias_ranges():
    assert check_bias(VG_RANGE_V[1], VD_RANGE_V[0]) == (VG_RANGE_V[1], VD_RANGE_V[0])
    with pytest.raises(ValueError, match="vg_V"):
        check_bias(VG_RANGE_V[1] + 0.1, 0.0)
    with pytest.raises(ValueError, match="vd_V"):
        check_bias(0.0, math.inf)
