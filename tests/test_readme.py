"""The README's numbers and example come from the code (examples as tests).

1. Section "The default design": the table of figures of merit of the default design
   and of its MOSFET twin, and the EOT in its text, are recomputed with the command the
   section names (``sub60 transfer --twin --vg=-0.3:0.6:46``: Vd = 0.3 V, Ioff target
   1e-3 uA/um, Vdd = 0.3 V) and must agree to the printed precision (half a unit of the
   last printed digit).
2. Section "Use it as a library": its Python example runs as written.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

README = Path(__file__).resolve().parents[1] / "README.md"

#: README row label -> Metrics field.
ROWS = {
    "SS_min": "ss_min_mV_per_dec",
    "SS_avg over 4 decades above Ioff": "ss_avg4_mV_per_dec",
    "I60": "i60_uA_per_um",
    "Voff (Id = Ioff)": "voff_V",
    "Ion = Id(Voff + 0.3 V)": "ion_uA_per_um",
}


def section(title_start: str) -> str:
    """Text of the README section whose '## ' title starts with ``title_start``."""
    text = README.read_text(encoding="utf-8")
    parts = re.split(r"^## ", text, flags=re.M)
    found = [p for p in parts if p.startswith(title_start)]
    assert found, f"README has no section starting with {title_start!r}"
    return found[0]


def printed_number(cell: str) -> tuple[float, float] | None:
    """(value, half a unit of its last printed digit) of a cell like '19.6 mV/dec' or
    '−0.206 V' (Unicode minus); None for a cell without a number ('— (...)')."""
    m = re.match(r"^\s*([−-]?\d+(?:\.(\d+))?)", cell)
    if m is None:
        return None
    decimals = len(m.group(2) or "")
    return float(m.group(1).replace("−", "-")), 0.5 * 10.0**-decimals


def readme_table() -> dict[str, tuple[str, str]]:
    """Row label -> (tunnel FET cell, twin cell) of the default-design table."""
    rows = {}
    for line in section("The default design").splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 3 and cells[0] in ROWS:
            rows[cells[0]] = (cells[1], cells[2])
    assert set(rows) == set(ROWS), f"README table rows changed: {sorted(rows)}"
    return rows


@pytest.fixture(scope="module")
def curves():
    from sub60.physics.design import Design
    from sub60.physics.simulate import Simulator

    vg = np.linspace(-0.3, 0.6, 46)
    kw = {"ioff_target_uA_per_um": 1e-3, "vdd_V": 0.3}
    d = Design()
    return (Simulator().transfer_curve(d, vg, 0.3, **kw),
            Simulator().transfer_curve(d.twin(), vg, 0.3, **kw))


def test_default_design_table_matches_the_code(curves):
    table = readme_table()
    for label, field in ROWS.items():
        for cell, curve in zip(table[label], curves, strict=True):
            metric = getattr(curve.metrics, field)
            printed = printed_number(cell)
            if printed is None:  # "— (why)": the code must also have no value
                assert metric.value is None, f"{label}: README has none, code {metric}"
                continue
            value, tol = printed
            assert metric.value is not None, f"{label}: README {cell!r}, code: {metric.reason}"
            assert abs(metric.value - value) <= tol * (1 + 1e-9), \
                f"{label}: README {cell!r}, code {metric.value!r}"


def test_default_design_text_matches_the_code():
    """EOT and the thermionic limit quoted in the section's text and table."""
    from sub60.physics.design import Design
    from sub60.physics.metrics import thermionic_limit_mV_per_dec

    text = section("The default design")
    eot = re.search(r"EOT (\d+\.\d+) nm", text)
    assert eot is not None
    value, tol = printed_number(eot.group(1))
    assert abs(Design().eot_nm - value) <= tol
    limit = re.search(r"never below (\d+\.\d+) mV/dec", text)
    assert limit is not None
    value, tol = printed_number(limit.group(1))
    assert abs(thermionic_limit_mV_per_dec(300.0) - value) <= tol


def test_library_example_runs(capsys):
    """The example of "Use it as a library" runs as written and prints its results."""
    blocks = re.findall(r"```python\n(.*?)```", section("Use it as a library"), flags=re.S)
    assert blocks, "no python example in the library section"
    for code in blocks:
        exec(compile(code, "README example", "exec"), {"__name__": "readme_example"})
    assert "BiasPoint(" in capsys.readouterr().out


def test_subband_charge_table_matches_the_code(curves):
    """The 'Carrier charge from the subbands' table: the default (semiclassical) column
    is the tunnel FET of the default-design table, the other the same sweep with
    charge_model="subbands"; the twin row gives Ion / I60 of both twins."""
    from sub60.physics.design import Design
    from sub60.physics.simulate import Simulator

    rows = {}
    for line in section("Carrier charge from the subbands").splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 3 and (cells[0] in ROWS or cells[0] == "twin Ion / I60"):
            rows[cells[0]] = (cells[1], cells[2])
    assert set(rows) == set(ROWS) | {"twin Ion / I60"}
    vg = np.linspace(-0.3, 0.6, 46)
    kw = {"ioff_target_uA_per_um": 1e-3, "vdd_V": 0.3}
    d = Design(charge_model="subbands")
    sub = (Simulator().transfer_curve(d, vg, 0.3, **kw),
           Simulator().transfer_curve(d.twin(), vg, 0.3, **kw))
    for label, field in ROWS.items():
        for cell, curve in zip(rows[label], (curves[0], sub[0]), strict=True):
            value, tol = printed_number(cell)
            assert abs(getattr(curve.metrics, field).value - value) <= tol * (1 + 1e-9), label
    for cell, twin in zip(rows["twin Ion / I60"], (curves[1], sub[1]), strict=True):
        ion, i60 = (printed_number(part) for part in cell.split("µA")[0].split("/"))
        assert abs(twin.metrics.ion_uA_per_um.value - ion[0]) <= ion[1] * (1 + 1e-9)
        assert abs(twin.metrics.i60_uA_per_um.value - i60[0]) <= i60[1] * (1 + 1e-9)
