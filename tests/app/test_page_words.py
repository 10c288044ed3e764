"""Smaller page defects: messages in the words of the controls, the gate-sweep entries
refused with a message (not silently rewritten), the demo-design note going once the
design is changed by hand, and the 2D map labelled as the bulk band edge.

The reference is the page's own contract (README: "a bad value is refused with a message
naming the field and the allowed range") — common practice, no source.
Explorer(background=False) runs each computation at once in the test's thread.
"""

from __future__ import annotations

import re

from sub60.app.layout import Explorer
from sub60.app.sharing import updates_from_query
from sub60.app.state import FIELD_LABELS, ExplorerState, plain_words


def _fresh(**settings) -> Explorer:
    e = Explorer(ExplorerState(vg_points=11, **settings), background=False)
    e.panel()
    return e


def test_design_messages_use_the_words_of_the_controls():
    e = _fresh()
    e.state.param.update(source_length_nm=5.0, gate_source_offset_nm=8.0)
    text = e.error_text
    assert "source length − gate–source overlap must be at least 1 nm" in text, text
    assert not re.search(r"[a-z]+_[a-z_]+", text.replace("&#95;", "_")), text  # no field names
    assert "source length = 5 nm" in e.controls.eot.object
    e.state.gate_source_offset_nm = 0.0
    assert e.error_text == ""
    _, problems = updates_from_query({"ls_nm": "5", "overlap_nm": "8"})
    assert problems and "source_length_nm" not in problems[0], problems


def test_every_field_name_has_words():
    for name in FIELD_LABELS:
        if "_" in name:
            words = plain_words(f"{name} must be set")
            assert name not in words and words.endswith(" must be set"), (name, words)


def test_gate_sweep_entries_are_checked_with_a_message():
    e = _fresh()
    w = e.widgets["vg_sweep_V"]
    w._start_edit.value = 0.7  # typed: a first voltage above the last
    assert e.state.vg_sweep_V == (-0.4, 0.6)
    assert w._start_edit.value == -0.4  # the box shows the kept value, not the last one
    assert "Gate sweep (V)" in e.error_text and "0.7" in e.error_text
    w._end_edit.value = 5.0  # outside the gate-voltage range
    assert e.state.vg_sweep_V == (-0.4, 0.6) and w._end_edit.value == 0.6
    assert "from -1.5 to 2 V" in e.error_text
    w._start_edit.value = -0.2  # a good value: taken at once, the message goes
    assert e.state.vg_sweep_V == (-0.2, 0.6) and e.error_text == ""
    assert e.jobs.curves["tfet"].vg_V[0] == -0.2


def test_demo_note_goes_when_the_design_is_changed_by_hand():
    e = _fresh()
    assert e.load_preset("high-on-current")
    report = e.snapshots.report
    assert report.visible and "Demo design" in report.object
    e.state.vg_V = 0.25  # a change by hand
    assert not report.visible and report.object == ""
    assert e.snapshots.presets.value == ""


def test_map_is_labelled_as_the_bulk_edge():
    e = _fresh()
    assert e.figures.map.title.text.startswith("Bulk Ec ")  # the bulk conduction-band edge
    assert "no confinement shift" in e.figures.map.title.text
    bars = [r for r in e.figures.map.below if type(r).__name__ == "ColorBar"]
    assert bars and bars[0].title == "bulk Ec (eV)"
