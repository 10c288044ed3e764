"""Numbers too large for a float: the design record and the bias check name the field.

Python integers have no size limit, but ``float(10**400)`` raises OverflowError (an IEEE
754 double ends near 1.8e308: IEEE Std 754-2008, binary64) and an integer of over 4300
digits cannot be turned into text (CPython's integer-string conversion limit, Python
3.11 documentation, "Integer string conversion length limitation"). Either must be a
ValueError naming the field and the allowed range, like any other bad value.
"""

from __future__ import annotations

import numpy as np
import pytest

from sub60.physics import Design, check_bias


@pytest.mark.parametrize("value", [10**400, -10**400, 10**5000, 2**1100],
                         ids=["400 digits", "-400 digits", "5000 digits", "2^1100"])
def test_huge_integer_in_a_design_is_a_value_error_naming_the_field(value):
    with pytest.raises(ValueError, match=r"body_thickness_nm: an integer of about \d+ digits is "
                                         r"too large; allowed \[2, 30\]"):
        Design(body_thickness_nm=value)


def test_huge_integer_bias_is_a_value_error_naming_the_terminal():
    with pytest.raises(ValueError, match=r"vg_V: an integer of about 401 digits is too large; "
                                         r"allowed \[-1.5, 2\] V"):
        check_bias(10**400, 0.1)
    with pytest.raises(ValueError, match=r"vd_V: .* too large"):
        check_bias(0.1, -10**5000)


def test_ordinary_integers_still_work():
    assert Design(body_thickness_nm=10).body_thickness_nm == 10.0
    assert Design(body_thickness_nm=np.int64(12)).body_thickness_nm == 12.0
    assert check_bias(1, 0) == (1.0, 0.0)
    with pytest.raises(ValueError, match=r"body_thickness_nm: 1e\+300 outside the allowed range"):
        Design(body_thickness_nm=10**300)
