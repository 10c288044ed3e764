"""The command line carries the heterojunction fields (`--set`, design files)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from sub60.app.cli import main
from sub60.physics.design import Design
from sub60.physics.simulate import Simulator

HETERO = Design(source_material="GaAsSb", source_composition_x=0.4, heterointerface_nm=-1.0)


def _json(capsys, *argv: str) -> dict:
    code = main(list(argv))
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


def test_set_makes_a_heterojunction_and_matches_solve_bias(capsys):
    rec = _json(capsys, "bands", "--set", "source_material=GaAsSb", "--set",
                "source_composition_x=0.4", "--set", "heterointerface_nm=-1", "--vg", "0.2")
    assert rec["design"] == HETERO.to_dict()
    bp = Simulator().solve_bias(HETERO, 0.2, 0.3)
    np.testing.assert_array_equal(rec["x_nm"], bp.x_nm)
    assert rec["current_uA_per_um"] == pytest.approx(bp.current_uA_per_um, rel=1e-5)


def test_design_file_without_the_fields_is_a_homojunction(capsys, tmp_path):
    data = Design().to_dict()
    for name in ("source_material", "source_composition_x", "heterointerface_nm"):
        del data[name]
    path = tmp_path / "old.json"
    path.write_text(json.dumps(data), encoding="utf-8")
    rec = _json(capsys, "bands", "--design", str(path), "--vg", "0.2")
    assert rec["design"]["source_material"] == "same"


@pytest.mark.parametrize("setting, culprit", [
    ("source_material=Unobtainium", "source_material"),
    ("heterointerface_nm=11", "heterointerface_nm"),
    ("source_composition_x=0.3", "source_composition_x")])
def test_bad_heterojunction_setting_is_one_line_naming_the_field(capsys, setting, culprit):
    code = main(["bands", "--set", setting])
    _, err = capsys.readouterr()
    assert code == 2 and culprit in err and "Traceback" not in err, err
    assert len(err.strip().splitlines()) == 1, err
