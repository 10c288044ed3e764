"""Reading measured curves: file variants, unit conversion, hostile files, metrics.

Unit factors are SI prefixes (BIPM SI Brochure, 9th ed., table 7: milli 1e-3, micro 1e-6,
nano 1e-9, pico 1e-12): 1 A/m = 1e-6 A/µm = 1 µA/µm, 1 mA/mm = 1 µA/µm, 1 A/µm = 1e6
µA/µm. The curves below are made-up numbers for the reader only (no device).
"""

from __future__ import annotations

import numpy as np
import pytest

from sub60.physics import (
    CURRENT_UNITS,
    MeasuredData,
    figures_of_merit,
    read_measured,
)
from sub60.physics.measured import MAX_MEASURED_BYTES, MAX_ROWS

VG = (0.0, 0.1, 0.2, 0.3)
I_UA = (1e-4, 1e-2, 1.0, 10.0)  # µA/µm


def _rows(sep: str, scale: float, decimal: str = ".") -> str:
    out = []
    for v, i in zip(VG, I_UA, strict=True):
        a, b = f"{v:g}", f"{i * scale:.6g}"
        out.append(sep.join((a.replace(".", decimal), b.replace(".", decimal))))
    return "\n".join(out) + "\n"


# (name, text, keywords, expected drain voltages) -- every variant holds the same curve(s)
VARIANTS = [
    ("csv, A/um in brackets", "Vg [V],Id [A/um]\n" + _rows(",", 1e-6), {"drain_voltage_V": 0.3},
     [0.3]),
    ("sub60's own column names", "vg_V,id_uA_per_um\n" + _rows(",", 1.0),
     {"drain_voltage_V": 0.3}, [0.3]),
    ("tab, uA/um with micro sign", "Vg\tId (\u00b5A/\u00b5m)\n" + _rows("\t", 1.0),
     {"drain_voltage_V": 0.3}, [0.3]),
    ("whitespace, A/m", "vgs   ids[A/m]\n" + _rows("   ", 1.0), {"drain_voltage_V": 0.3}, [0.3]),
    ("semicolon with decimal commas, mA/mm", "Vg;Id [mA/mm]\n" + _rows(";", 1.0, ","),
     {"drain_voltage_V": 0.3}, [0.3]),
    ("UTF-8 byte-order mark and CRLF", "\ufeffVg,Id [A/um]\r\n"
     + _rows(",", 1e-6).replace("\n", "\r\n"), {"drain_voltage_V": 0.3}, [0.3]),
    ("comments and blank lines", "# lab run 7\n\nVg,Id [A/um]\n# sweep up\n" + _rows(",", 1e-6)
     + "\n", {"drain_voltage_V": 0.3}, [0.3]),
    ("no header, unit given", _rows(" ", 1e-6), {"current_unit": "A/um", "drain_voltage_V": 0.3},
     [0.3]),
    ("absolute current in A with a width of 2 um", "Vg,Id [A]\n" + _rows(",", 2e-6),
     {"width_um": 2.0, "drain_voltage_V": 0.3}, [0.3]),
    ("nA/um, quoted fields", '"Vg","Id [nA/um]"\n'
     + "".join(f'"{v:g}","{i * 1e3:.6g}"\n' for v, i in zip(VG, I_UA, strict=True)),
     {"drain_voltage_V": 0.3}, [0.3]),
    ("unit given by the caller, header without unit", "Vg,Id\n" + _rows(",", 1e-6),
     {"current_unit": "A/um", "drain_voltage_V": 0.3}, [0.3]),
    ("long layout, two drain voltages", "Vg,Vd,Id [A/um]\n" + "".join(
        f"{v:g},{vd:g},{i * 1e-6 * k:.6g}\n" for vd, k in ((0.05, 1.0), (0.3, 1.0))
        for v, i in zip(VG, I_UA, strict=True)), {}, [0.05, 0.3]),
    ("wide layout, bias in the names", "Vg,Id@Vd=0.05 [A/um],Id@Vd=0.3 [A/um]\n" + "".join(
        f"{v:g},{i * 1e-6:.6g},{i * 1e-6:.6g}\n" for v, i in zip(VG, I_UA, strict=True)), {},
     [0.05, 0.3]),
    ("wide layout, sub60-style names", "vg_V id_vd_0.05_uA_per_um id_vd_300mV_uA_per_um\n"
     + "".join(f"{v:g} {i:.6g} {i:.6g}\n" for v, i in zip(VG, I_UA, strict=True)), {},
     [0.05, 0.3]),
    ("bias and unit in brackets", "Vg (V),Id (Vd=0.3 V) [A/um]\n" + _rows(",", 1e-6), {}, [0.3]),
    ("descending sweep", "Vg,Id [A/um]\n" + "".join(
        f"{v:g},{i * 1e-6:.6g}\n" for v, i in reversed(list(zip(VG, I_UA, strict=True)))),
     {"drain_voltage_V": 0.3}, [0.3]),
    ("bytes input", ("Vg,Id [A/um]\n" + _rows(",", 1e-6)).encode(), {"drain_voltage_V": 0.3},
     [0.3]),
]


@pytest.mark.parametrize("name,text,kw,vds", VARIANTS, ids=[v[0] for v in VARIANTS])
def test_file_variants_give_the_same_curve_in_uA_per_um(name, text, kw, vds):
    """Every variant holds the curve I_UA (µA/µm) at VG; units by SI prefixes (module doc)."""
    data = read_measured(text, **kw)
    assert isinstance(data, MeasuredData)
    assert [c.vd_V for c in data.transfer] == pytest.approx(vds)
    for c in data.transfer:
        np.testing.assert_allclose(c.vg_V, VG)
        np.testing.assert_allclose(c.id_uA_per_um, I_UA, rtol=1e-5)


def test_unit_factors_are_the_si_prefixes():
    """SI Brochure prefixes: A/m and mA/mm are both exactly µA/µm; A/µm is 1e6 µA/µm."""
    assert CURRENT_UNITS["A/m"] == CURRENT_UNITS["mA/mm"] == CURRENT_UNITS["uA/um"] == 1.0
    assert CURRENT_UNITS["A/um"] == 1e6
    assert CURRENT_UNITS["nA/um"] == pytest.approx(1e-3)


def test_output_curves_wide_and_long():
    wide = read_measured("Vd,Id@Vg=0.5 [uA/um],Id@Vg=0.6 [uA/um]\n0,0,0\n0.1,1,2\n0.2,2,3\n")
    assert not wide.transfer and [c.vg_V for c in wide.output] == [0.5, 0.6]
    np.testing.assert_allclose(wide.output[1].id_uA_per_um, [0, 2, 3])
    long = read_measured("vg vd id_uA_per_um\n" + "".join(
        f"{vg} {vd} {vd * vg}\n" for vg in (0.4, 0.6) for vd in (0.0, 0.1, 0.2, 0.3, 0.4)))
    assert [c.vg_V for c in long.output] == [0.4, 0.6]
    np.testing.assert_allclose(long.output[0].vd_V, [0, 0.1, 0.2, 0.3, 0.4])


def test_comments_are_kept():
    data = read_measured("# SYNTHETIC demo\nvg_V,id_uA_per_um\n" + _rows(",", 1.0),
                         drain_voltage_V=0.3)
    assert data.comments == ("SYNTHETIC demo",)


def test_measured_metrics_are_the_models_function():
    """The measured metrics come from `figures_of_merit` itself: identical records."""
    vg = np.linspace(0.0, 0.6, 31)
    current = 1e-5 * 10 ** (vg / 0.05) / (1 + 10 ** ((vg - 0.4) / 0.05))
    text = "vg_V,id_uA_per_um\n" + "".join(f"{float(v)!r},{float(i)!r}\n"
                                          for v, i in zip(vg, current, strict=True))
    curve = read_measured(text, drain_voltage_V=0.3).transfer[0]
    assert curve.metrics(ioff_target_uA_per_um=1e-4) == figures_of_merit(
        vg, current, ioff_target_uA_per_um=1e-4)
    assert curve.metrics().ss_min_mV_per_dec.value == pytest.approx(50.0, rel=0.05)


GOOD_HEAD = "Vg,Id [A/um]\n"
# (name, content, keywords, words the message must hold)
HOSTILE = [
    ("empty file", "", {}, ["line 1", "empty"]),
    ("only blanks", "\n  \n\t\n", {}, ["line 1", "empty"]),
    ("only comments", "# nothing\n# here\n", {}, ["no data rows"]),
    ("header without data", GOOD_HEAD, {"drain_voltage_V": 0.3}, ["line 1", "no data rows"]),
    ("binary with NUL", b"Vg,Id\x00\x01\x02\n", {}, ["line 1", "control character"]),
    ("not UTF-8", b"Vg,Id [A/um]\n0,1e-9\n\xff\xfe,1\n", {}, ["line 3", "not UTF-8"]),
    ("word in the data", GOOD_HEAD + "0,1e-9\n0.1,abc\n0.2,1e-7\n", {"drain_voltage_V": 0.3},
     ["line 3", "column 2", "'abc' is not a number"]),
    ("expression, not evaluated", GOOD_HEAD + "0,1e-9\n0.1,__import__('os')\n0.2,1e-7\n",
     {"drain_voltage_V": 0.3}, ["line 3", "not a number"]),
    ("formula", GOOD_HEAD + "0,1e-9\n0.1,=2*A1\n0.2,1e-7\n", {"drain_voltage_V": 0.3},
     ["line 3", "not a number"]),
    ("NaN", GOOD_HEAD + "0,1e-9\n0.1,nan\n0.2,1e-7\n", {"drain_voltage_V": 0.3},
     ["line 3", "'nan' is not a number"]),
    ("overflow 1e999", GOOD_HEAD + "0,1e-9\n0.1,1e999\n0.2,1e-7\n", {"drain_voltage_V": 0.3},
     ["line 3", "not a finite number"]),
    ("ragged row", GOOD_HEAD + "0,1e-9\n0.1,1e-8,5\n0.2,1e-7\n", {"drain_voltage_V": 0.3},
     ["line 3", "3 fields, expected 2"]),
    ("empty field", GOOD_HEAD + "0,1e-9\n0.1,\n0.2,1e-7\n", {"drain_voltage_V": 0.3},
     ["line 3", "empty field"]),
    ("repeated gate voltage", GOOD_HEAD + "0,1e-9\n0.1,1e-8\n0.1,2e-8\n0.2,1e-7\n",
     {"drain_voltage_V": 0.3}, ["line 4", "appears twice"]),
    ("gate voltage out of range", GOOD_HEAD + "0,1e-9\n0.1,1e-8\n7,1e-7\n",
     {"drain_voltage_V": 0.3}, ["line 4", "outside the allowed range"]),
    ("two points", GOOD_HEAD + "0,1e-9\n0.1,1e-8\n", {"drain_voltage_V": 0.3},
     ["2 point(s)", "at least 3"]),
    ("unknown unit", "Vg,Id [furlong]\n0,1\n0.1,2\n0.2,3\n", {"drain_voltage_V": 0.3},
     ["line 1", "furlong", "unknown"]),
    ("mega is not milli", "Vg,Id [MA/mm]\n0,1\n0.1,2\n0.2,3\n", {"drain_voltage_V": 0.3},
     ["line 1", "unknown"]),
    ("absolute current without width", "Vg,Id [A]\n0,1e-9\n0.1,1e-8\n0.2,1e-7\n",
     {"drain_voltage_V": 0.3}, ["line 1", "width"]),
    ("no unit anywhere", "Vg,Id\n0,1e-9\n0.1,1e-8\n0.2,1e-7\n", {"drain_voltage_V": 0.3},
     ["line 1", "no current unit"]),
    ("header and caller disagree", GOOD_HEAD + "0,1e-9\n0.1,1e-8\n0.2,1e-7\n",
     {"current_unit": "A", "width_um": 1.0, "drain_voltage_V": 0.3}, ["line 1", "A/um", "drop one"]),
    ("unknown column", "Vg,Temperature\n0,1\n0.1,2\n0.2,3\n", {}, ["line 1", "'Temperature'"]),
    ("no current column", "Vg,Vd\n0,1\n0.1,2\n0.2,3\n", {}, ["line 1", "no drain-current column"]),
    ("no drain voltage", GOOD_HEAD + "0,1e-9\n0.1,1e-8\n0.2,1e-7\n", {},
     ["line 1", "drain_voltage_V"]),
    ("wide without bias in a name", "Vg,Id [A/um],Id@Vd=0.3 [A/um]\n0,1,1\n0.1,2,2\n0.2,3,3\n",
     {}, ["line 1", "names no bias"]),
    ("same bias twice", "Vg,Id@Vd=0.3 [A/um],Id@Vd=0.3 [A/um]\n0,1,1\n0.1,2,2\n0.2,3,3\n", {},
     ["line 1", "same bias"]),
    ("no positive current", GOOD_HEAD + "0,-1e-9\n0.1,0\n0.2,-1e-7\n", {"drain_voltage_V": 0.3},
     ["no positive current"]),
    ("no header, no unit", "0 1e-9\n0.1 1e-8\n0.2 1e-7\n", {"drain_voltage_V": 0.3},
     ["line 1", "unit must be given"]),
    ("no header, four columns", "0 0.3 1e-9 5\n0.1 0.3 1e-8 5\n0.2 0.3 1e-7 5\n",
     {"current_unit": "A/um"}, ["line 1", "4 columns and no header"]),
    ("line too long", GOOD_HEAD + "0," + "1" * 3000 + "\n", {"drain_voltage_V": 0.3},
     ["line 2", "longer than"]),
    ("too large", "Vg,Id [A/um]\n" + "0,1\n" * (MAX_MEASURED_BYTES // 4 + 1), {},
     ["larger than the limit"]),
    ("too many rows", GOOD_HEAD + "".join(f"{k * 1e-5:.5f},1\n" for k in range(MAX_ROWS + 2)),
     {"drain_voltage_V": 0.3}, ["more than", "data rows"]),
    ("drain voltage out of range", "Vg,Id@Vd=5 [A/um]\n0,1\n0.1,2\n0.2,3\n", {},
     ["V_d = 5 V", "outside"]),
    ("drain voltage given twice", "Vg,Id@Vd=0.3 [A/um]\n0,1\n0.1,2\n0.2,3\n",
     {"drain_voltage_V": 0.3}, ["line 1", "leave drain_voltage_V unset"]),
    ("bad width", GOOD_HEAD + "0,1e-9\n0.1,1e-8\n0.2,1e-7\n",
     {"width_um": -1.0, "drain_voltage_V": 0.3}, ["width_um"]),
]


@pytest.mark.parametrize("name,content,kw,words", HOSTILE, ids=[h[0] for h in HOSTILE])
def test_hostile_files_are_refused_with_one_message(name, content, kw, words):
    with pytest.raises(ValueError) as info:
        read_measured(content, **kw)
    message = str(info.value)
    assert "\n" not in message
    for w in words:
        assert w in message, message


def test_at_least_fifteen_hostile_files():
    assert len(HOSTILE) >= 15
