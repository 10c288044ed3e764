"""The non-ideality fields of the design record.

Common practice, no source: defaults are the ideal device; a design file written
before the fields existed reads as the ideal device; bad values name the field and the
allowed range; `ideal()` switches every non-ideality off.
"""

from __future__ import annotations

import pytest

from sub60.physics import NON_IDEAL_OFF, Design


def test_defaults_are_the_ideal_device_and_old_files_read_as_ideal() -> None:
    d = Design()
    assert d.is_ideal
    assert {k: getattr(d, k) for k in NON_IDEAL_OFF} == NON_IDEAL_OFF
    old = {k: v for k, v in Design(gate_length_nm=40.0).to_dict().items() if k not in NON_IDEAL_OFF}
    assert Design.from_dict(old) == Design(gate_length_nm=40.0)
    on = Design(tail_energy_channel_meV=12.0, tat_lifetime_ns=5.0, bandgap_narrowing="on")
    assert not on.is_ideal
    assert on.ideal() == Design()
    assert Design.from_json(on.to_json()) == on


@pytest.mark.parametrize(("field", "value", "message"), [
    ("tail_energy_source_meV", -1.0, "outside the allowed range [0, 150]"),
    ("tail_energy_channel_meV", 151.0, "outside the allowed range [0, 150]"),
    ("tat_lifetime_ns", 1e-6, "too short; use 0 (off)"),
    ("tat_lifetime_ns", float("nan"), "not a finite number"),
    ("tat_trap_level_eV", 0.6, "outside the allowed range [-0.5, 0.5]"),
    ("bandgap_narrowing", True, "expected text"),
    ("bandgap_narrowing", "yes", "allowed one of 'off', 'on'"),
])
def test_bad_values_name_the_field_and_the_range(field: str, value: object, message: str) -> None:
    with pytest.raises(ValueError, match=field) as err:
        Design(**{field: value})
    assert message in str(err.value)
