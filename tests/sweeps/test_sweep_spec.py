"""Sweep specifications: hostile files refused before anything runs, and the designs drawn.

A refused spec must name the key and the allowed range (the design record's rule, applied
to sweeps: project contract, no outside source). The sampling checks use published
properties of the designs: a Latin hypercube of n points puts exactly one point in each
of the n equal strata of every axis (McKay, Beckman and Conover, Technometrics 21, 239
(1979)); a grid is the Cartesian product of the knobs' values; log spacing puts equal
ratios between neighbours (definition).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from sub60.app.cli import main
from sub60.app.sweep_spec import LARGE_SWEEP, SpecError, spec_from_text
from sub60.physics.design import FIELD_RANGES

BODY = """
[[knob]]
field = "body_thickness_nm"
low = 4.0
high = 8.0
steps = 3
"""

# (spec text, words the message must hold)
HOSTILE = [
    ('[[knob]]\nfield = "gate_colour"\nvalues = [1]', ["knob[0].field", "gate_colour", "known"]),
    ('[[knob]]\nfield = "body_thickness_nm"\nlow = nan\nhigh = 8.0\nsteps = 3',
     ["body_thickness_nm.low", "not a finite number", "[2, 30]"]),
    ('[[knob]]\nfield = "body_thickness_nm"\nlow = 4.0\nhigh = inf\nsteps = 3',
     ["body_thickness_nm.high", "not a finite number"]),
    ('[[knob]]\nfield = "body_thickness_nm"\nlow = 4.0\nhigh = 50.0\nsteps = 3',
     ["body_thickness_nm.high", "outside the allowed range [2, 30]"]),
    ('[[knob]]\nfield = "gate_workfunction_eV"\nvalues = [4.5, nan]', ["gate_workfunction_eV", "finite"]),
    ('[[knob]]\nfield = "body_thickness_nm"\nlow = "4"\nhigh = 8.0\nsteps = 3',
     ["body_thickness_nm.low", "expected a number"]),
    ('[[knob]]\nfield = "body_thickness_nm"\nlow = 8.0\nhigh = 4.0\nsteps = 3', ["low = 8", "above high"]),
    ('[[knob]]\nfield = "body_thickness_nm"\nlow = 4.0\nhigh = 8.0\nsteps = 100000',
     ["body_thickness_nm.steps", "[1, 10000]"]),
    ("".join(f'[[knob]]\nfield = "{f}"\nlow = {FIELD_RANGES[f].low}\nhigh = {FIELD_RANGES[f].high}\n'
             'steps = 100\n' for f in ("body_thickness_nm", "gate_length_nm", "oxide_thickness_nm",
                                       "gate_workfunction_eV", "temperature_K", "drain_length_nm")),
     ["1,000,000,000,000 designs", "at most 1,000,000"]),
    ("".join(f'[[knob]]\nfield = "{f}"\nvalues = [{FIELD_RANGES[f].low}]\n'
             for f in ("body_thickness_nm", "gate_length_nm", "oxide_thickness_nm",
                       "gate_workfunction_eV", "temperature_K", "drain_length_nm", "source_length_nm")),
     ["7 knobs", "1 to 6"]),
    ("title = 'x'", ["0 knobs", "1 to 6"]),
    (BODY + BODY, ["body_thickness_nm: varied twice"]),
    (BODY + "[fixed]\nbody_thickness_nm = 5.0", ["fixed.body_thickness_nm", "also a knob"]),
    (BODY + "[fixed]\nbody_colour = 5.0", ["fixed.body_colour", "unknown design field"]),
    (BODY + "[fixed]\ntemperature_K = 1000.0", ["fixed.temperature_K", "[150, 450]"]),
    (BODY + "[physics]\ntunnelling_model = 'three-band'", ["physics.tunnelling_model", "'two-band'"]),
    (BODY + "[physics]\nresolution = 40.0", ["physics.resolution", "[0.5, 3]"]),
    (BODY + "[bias]\nvg_V = [-3.0, 0.5, 11]", ["bias.vg_V start", "[-1.5, 2]"]),
    (BODY + "[bias]\nvg_V = [0.0, 0.5, 1000000]", ["bias.vg_V points", "[3, 401]"]),
    (BODY + "[bias]\nvd_V = nan", ["bias.vd_V", "not a finite number"]),
    (BODY + "[bias]\nioff_target_uA_per_um = -1.0", ["bias.ioff_target_uA_per_um", "outside"]),
    (BODY + "[bias]\nvdd = 0.3", ["bias.vdd: unknown key", "vdd_V"]),
    (BODY + "[sampling]\nmethod = 'random-walk'", ["sampling.method", "'sobol'"]),
    (BODY.replace("steps = 3\n", "") + "[sampling]\nmethod = 'sobol'", ["sampling.count: missing"]),
    ("colour = 1\n" + BODY, ["spec.colour: unknown key"]),
    (BODY + "colour = 1", ["knob[0].colour: unknown key"]),
    ('[[knob]]\nfield = "channel_doping_cm3"\nlow = -1e18\nhigh = 1e18\nsteps = 3\nspacing = "log"',
     ["channel_doping_cm3.spacing", "positive range"]),
    ('[[knob]]\nfield = "material"\nlow = 1.0\nhigh = 2.0\nsteps = 2', ["knob material", "list of values"]),
    ('[[knob]]\nfield = "material"\nvalues = ["InAs", "Unobtainium"]', ["material", "Unobtainium", "known"]),
    # every design is built: the gate must keep 2 nm (Design's combination rule)
    ('[fixed]\ngate_source_offset_nm = -8.0\n[[knob]]\nfield = "gate_length_nm"\nlow = 5.0\nhigh = 15.0\n'
     'steps = 3', ["1 of 3 designs are invalid", "gate_source_offset_nm", "gate_length_nm = 5.0"]),
    ("[[knob]\nfield=", ["not valid TOML"]),
    # heterojunction source: the design record's ranges and rules (FIELD_RANGES: x in [0, 1],
    # heterointerface in [-10, 10] nm; source materials the record's names or 'same')
    ('[[knob]]\nfield = "source_material"\nvalues = ["same", "Unobtainium"]',
     ["source_material", "Unobtainium", "'same'", "GaSb"]),
    ('[[knob]]\nfield = "source_material"\nlow = 0.0\nhigh = 1.0\nsteps = 2',
     ["knob source_material", "list of values", "'same'"]),
    ('[[knob]]\nfield = "source_material"\nvalues = ["GaSb", 3]',
     ["knob source_material.values", "expected text"]),
    ('[fixed]\nsource_material = "InGaAs"\n[[knob]]\nfield = "source_composition_x"\nlow = 0.5\n'
     'high = 1.5\nsteps = 3', ["source_composition_x.high", "[0, 1]"]),
    ('[fixed]\nsource_material = "InGaAs"\n[[knob]]\nfield = "source_composition_x"\nlow = nan\n'
     'high = 1.0\nsteps = 3', ["source_composition_x.low", "not a finite number", "[0, 1]"]),
    ('[fixed]\nsource_material = "GaSb"\n[[knob]]\nfield = "heterointerface_nm"\nlow = -2.0\n'
     'high = 12.0\nsteps = 3', ["heterointerface_nm.high", "[-10, 10]"]),
    ('[fixed]\nsource_material = "Vibranium"\n[[knob]]\nfield = "body_thickness_nm"\nvalues = [5.0]',
     ["fixed.source_material", "Vibranium", "'same'"]),
    # combination rules, checked on every design: x needs an alloy source; the interface
    # must lie 1 nm inside the source contact (source 5 nm, gate from x = 5 nm: >= -4 nm)
    ('[[knob]]\nfield = "source_composition_x"\nlow = 0.5\nhigh = 1.0\nsteps = 2',
     ["2 of 2 designs are invalid", "source_composition_x", "source_material = 'same'"]),
    ('[fixed]\nmaterial = "InAs"\nsource_material = "GaSb"\nsource_length_nm = 5.0\n'
     '[[knob]]\nfield = "heterointerface_nm"\nlow = -9.0\nhigh = 1.0\nsteps = 3',
     ["1 of 3 designs are invalid", "heterointerface_nm", "[-4,", "heterointerface_nm = -9.0"]),
]


@pytest.mark.parametrize(("text", "words"), HOSTILE, ids=[f"hostile{i}" for i in range(len(HOSTILE))])
def test_hostile_spec_refused_naming_the_field(text: str, words: list[str]) -> None:
    with pytest.raises(SpecError) as err:
        spec_from_text(text).designs()
    for w in words:
        assert w in str(err.value), (w, str(err.value))


def test_hostile_spec_refused_by_the_command_line_before_anything_runs(tmp_path: Path, capsys) -> None:
    spec = tmp_path / "bad.toml"
    spec.write_text('[[knob]]\nfield = "body_thickness_nm"\nlow = 4.0\nhigh = nan\nsteps = 3\n')
    out = tmp_path / "out"
    assert main(["sweep", str(spec), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert "body_thickness_nm.high" in err and "not a finite number" in err
    assert len(err.strip().splitlines()) == 1
    assert not out.exists()  # nothing ran, nothing written


def test_large_grid_needs_confirmation(tmp_path: Path, capsys) -> None:
    n = int(math.isqrt(LARGE_SWEEP)) + 1  # n * n > LARGE_SWEEP
    text = "".join(f'[[knob]]\nfield = "{f}"\nlow = 5.0\nhigh = 10.0\nsteps = {n}\n'
                   for f in ("body_thickness_nm", "gate_length_nm"))
    with pytest.raises(SpecError, match="--allow-large"):
        spec_from_text(text)
    assert spec_from_text(text, allow_large=True).size() == n * n
    spec = tmp_path / "large.toml"
    spec.write_text(text)
    assert main(["sweep", str(spec), "--out", str(tmp_path / "o")]) == 2
    assert "--allow-large" in capsys.readouterr().err


def test_bad_command_line_options(tmp_path: Path, capsys) -> None:
    spec = tmp_path / "s.toml"
    spec.write_text(BODY)
    assert main(["sweep", str(spec), "--out", str(tmp_path / "o"), "--workers", "0"]) == 2
    assert "--workers" in capsys.readouterr().err
    assert main(["sweep", str(spec), "--out", str(tmp_path / "o"), "--scheduler", "127.0.0.1"]) == 2
    assert "--scheduler" in capsys.readouterr().err
    assert main(["sweep", str(tmp_path / "missing.toml"), "--out", str(tmp_path / "o")]) == 2
    assert "cannot read" in capsys.readouterr().err


def test_grid_is_the_cartesian_product_with_log_spaced_dopings() -> None:
    spec = spec_from_text(BODY + '[[knob]]\nfield = "source_doping_cm3"\nlow = 1e19\nhigh = 1e21\nsteps = 3\n'
                          '[[knob]]\nfield = "oxide"\nvalues = ["hfo2", "SiO2"]\n')
    pts = spec.points()
    assert len(pts) == spec.size() == 3 * 3 * 2
    assert {(p["body_thickness_nm"], p["source_doping_cm3"], p["oxide"]) for p in pts} == {
        (b, s, o) for b in (4.0, 6.0, 8.0) for s in (1e19, 1e20, 1e21) for o in ("HfO2", "SiO2")}
    assert len(spec.designs()) == 18  # the oxide spelling is the record's canonical one


def test_extended_range_reproduces_the_same_values_bit_for_bit() -> None:
    a = spec_from_text('[[knob]]\nfield = "gate_workfunction_eV"\nlow = 4.7\nhigh = 4.9\nsteps = 3')
    b = spec_from_text('[[knob]]\nfield = "gate_workfunction_eV"\nlow = 4.7\nhigh = 5.2\nsteps = 6')
    va = [p["gate_workfunction_eV"] for p in a.points()]
    vb = [p["gate_workfunction_eV"] for p in b.points()]
    assert va == [4.7, 4.8, 4.9] and vb[:3] == va  # np.linspace alone gives 4.800000000000001


@pytest.mark.parametrize("method", ["sobol", "latin-hypercube"])
def test_space_filling_designs_stay_in_range_and_fill_strata(method: str) -> None:
    n = 16
    spec = spec_from_text(
        '[[knob]]\nfield = "body_thickness_nm"\nlow = 4.0\nhigh = 12.0\n'
        '[[knob]]\nfield = "drain_doping_cm3"\nlow = 1e17\nhigh = 1e19\n'
        f'[sampling]\nmethod = "{method}"\ncount = {n}\nseed = 3\n')
    pts = spec.points()
    assert len(pts) == n
    body = np.array([p["body_thickness_nm"] for p in pts])
    drain = np.log10([p["drain_doping_cm3"] for p in pts])  # log spaced by default
    assert body.min() >= 4.0 and body.max() <= 12.0 and drain.min() >= 17 and drain.max() <= 19
    # one point per stratum of each axis: Latin hypercube property (McKay et al. 1979); a
    # scrambled Sobol' set of 2^m points is a (0, m, 2) net in base 2 and has it as well
    for u in ((body - 4.0) / 8.0, (drain - 17) / 2):
        assert sorted(np.minimum((u * n).astype(int), n - 1)) == list(range(n))
    assert spec.points() == pts  # the seed fixes the designs


def test_the_readme_example_is_a_valid_spec() -> None:
    text = (Path(__file__).resolve().parents[2] / "README.md").read_text(encoding="utf-8")
    section = text.split("## Design sweeps", 1)[1]
    toml = section.split("```toml\n", 1)[1].split("```", 1)[0]
    spec = spec_from_text(toml)
    assert spec.size() == 24 and len(spec.designs()) == 24
    assert spec.knob_fields == ("body_thickness_nm", "source_doping_cm3", "oxide")


# ---------------------------------------------------------------------- the shared number rules
# The sweep file is one more door: the same rules as --design and snapshots
# (app.number_rules; the project's own input rules, no source).
@pytest.mark.parametrize("text, fmt, needle", [
    ('{"knob": [], "knob": []}', "json", "appears twice"),
    ('{"fixed": {"body_thickness_nm": NaN}}', "json", "NaN"),
    ('{"fixed": {"title": "\\udcff"}}', "json", "surrogate"),
    ('[[knob]]\nfield = "gate_length_nm"\nvalues = [20.0]\n[fixed]\nbody_thickness_nm = '
     + "9" * 400 + "\n", "toml", "401 digits"),
    ('[[knob]]\nfield = "gate_length_nm"\nlow = 20.0\nhigh = ' + "9" * 400 + "\nsteps = 2\n",
     "toml", "about 401 digits"),
    ('[fixed]\nnote = "\\udcff"\n', "toml", "not valid TOML"),
])
def test_sweep_file_follows_the_shared_number_rules(text, fmt, needle):
    with pytest.raises(SpecError, match=needle):
        spec_from_text(text, fmt)


def test_heterojunction_source_fields_are_knobs() -> None:
    """source_material (text: explicit values, 'same' = homojunction), source_composition_x
    and heterointerface_nm (numbers: ranges) vary like any field; each design is the
    design record's, so `is_heterojunction` tells which are heterojunctions."""
    spec = spec_from_text(
        '[fixed]\nmaterial = "InAs"\n'
        '[[knob]]\nfield = "source_material"\nvalues = ["same", "GaSb", "InGaAs"]\n'
        '[[knob]]\nfield = "heterointerface_nm"\nlow = -2.0\nhigh = 2.0\nsteps = 3\n')
    designs = spec.designs()
    assert spec.size() == len(designs) == 9
    assert {(d.source_material, d.heterointerface_nm) for d in designs} == {
        (m, h) for m in ("same", "GaSb", "InGaAs") for h in (-2.0, 0.0, 2.0)}
    assert [d.is_heterojunction for d in designs[:3]] == [False] * 3  # 'same': homojunction
    assert all(d.is_heterojunction for d in designs[3:])  # InGaAs at x = 0 is GaAs, not InAs
    alloy = spec_from_text(
        '[fixed]\nmaterial = "InAs"\nsource_material = "InGaAs"\n'
        '[[knob]]\nfield = "source_composition_x"\nlow = 0.5\nhigh = 1.0\nsteps = 3\n')
    xs = [d.source_composition_x for d in alloy.designs()]
    assert xs == [0.5, 0.75, 1.0]
    assert all(d.source_semiconductor.name != d.semiconductor.name for d in alloy.designs()[:2])
