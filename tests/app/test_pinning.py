"""Pinned designs, their comparison, snapshots opened in the page and links (no browser).

The reference for every number the comparison shows is the physics package called
directly with the same settings (`physics.simulate.Simulator`): a pinned design's row
must hold exactly the figures of merit of its own transfer curve, and each difference
must be the pinned value minus the present one. Explorer(background=False) runs each
computation at once in the test's thread.
"""

from __future__ import annotations

import datetime as dt
import math
import re

import numpy as np
import pytest

from sub60.app.layout import Explorer
from sub60.app.pinning import (
    MAX_PINS,
    METRIC_COLUMNS,
    PIN_COLOURS,
    PinBoard,
    PinError,
    difference_text,
)
from sub60.app.presets import list_presets
from sub60.app.session_files import UPLOAD_LIMIT_BYTES
from sub60.app.sharing import (
    LINKED_PARAMETERS,
    QUERY_KEYS,
    query_from_state,
    query_of_search,
    settings_from_state,
    state_updates,
    updated_search,
    updates_from_query,
)
from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import MAX_NAME_CHARS, TransferSweep
from sub60.app.state import COMPUTED_PARAMETERS, ExplorerState
from sub60.physics.design import Design
from sub60.physics.simulate import Simulator

POINTS = 11  # short sweeps keep these tests quick
SWEEP = TransferSweep(-0.4, 0.6, POINTS, 0.3)


def _explorer(**settings) -> Explorer:
    e = Explorer(ExplorerState(vg_points=POINTS, **settings), background=False)
    e.panel()
    return e


def _tfet_metrics(design: Design, vd: float = 0.3):
    vg = np.linspace(-0.4, 0.6, POINTS)
    return Simulator().transfer_curve(design, vg, vd, ioff_target_uA_per_um=1e-3,
                                      vdd_V=0.3).metrics


# ------------------------------------------------------------------ the pin board
def test_pin_board_names_slots_colours_and_limit():
    board = PinBoard()
    designs = [Design(body_thickness_nm=5.0 + i) for i in range(MAX_PINS)]
    pins = [board.add("", d, SWEEP) for d in designs]
    assert [p.name for p in pins] == [f"Design {c}" for c in "ABCDEFGH"]
    assert [p.slot for p in pins] == list(range(MAX_PINS))
    assert len({p.colour for p in pins}) == MAX_PINS == len(PIN_COLOURS)  # distinct colours
    with pytest.raises(PinError, match="8 designs are pinned"):
        board.add("one more", Design(body_thickness_nm=20.0), SWEEP)
    board.remove(2)
    again = board.add(None, Design(body_thickness_nm=21.0), SWEEP)
    assert (again.slot, again.name, again.colour) == (2, "Design C", PIN_COLOURS[2])


def test_pin_board_refuses_bad_names_and_repeated_designs():
    board = PinBoard()
    first = board.add("  thin   body ", Design(), SWEEP)
    assert first.name == "thin body"  # spaces tidied
    with pytest.raises(PinError, match="pinned already"):
        board.add("again", Design(), SWEEP)
    other = board.add("thick", Design(body_thickness_nm=9.0), SWEEP)
    with pytest.raises(PinError, match="another pinned design"):
        board.rename(other.slot, "thin body")
    with pytest.raises(PinError, match="control character"):
        board.rename(other.slot, "a\x07b")
    with pytest.raises(PinError, match="lone surrogate"):  # it could not be saved as UTF-8
        board.rename(other.slot, "pin \udcff")
    with pytest.raises(PinError, match=f"limit is {MAX_NAME_CHARS}"):
        board.rename(other.slot, "x" * (MAX_NAME_CHARS + 1))
    with pytest.raises(PinError, match="needs a name"):
        board.rename(other.slot, "   ")
    assert board.rename(other.slot, "9 nm body").name == "9 nm body"


def test_difference_text_follows_the_table_convention():
    """The table's own convention (no source): SS and lengths as differences in their
    unit, currents and ratios as percentages within a factor of ten and as factors
    beyond; the sign is pinned minus present."""
    assert difference_text("ion_uA_per_um", 112.0, 100.0) == "+12 %"
    assert difference_text("ion_uA_per_um", 55.0, 100.0) == "\u221245 %"
    assert difference_text("ss_min_mV_per_dec", 57.0, 60.1) == "\u22123.1 mV/dec"
    assert difference_text("body_thickness_nm", 9.0, 7.0) == "+2 nm"
    assert difference_text("ion_ioff", 2.5e5, 1e4) == "×25"
    assert difference_text("i60_uA_per_um", 0.4, 10.0) == "÷25"
    assert difference_text("ion_uA_per_um", 100.0, 100.0) == "same"
    assert difference_text("ion_uA_per_um", None, 100.0) is None
    assert difference_text("material", "InAs", "GaSb") is None
    assert difference_text("material", "InAs", "InAs") == "same"


# ------------------------------------------------------------------ comparison == physics
def test_pinned_design_rows_and_overlays_equal_physics():
    e = _explorer()
    pin = e.pin_present("reference")
    assert pin is not None and pin.name == "reference"
    e.state.body_thickness_nm = 9.0
    e.state.vg_V = 0.4
    present_m = _tfet_metrics(Design(body_thickness_nm=9.0))
    pinned_m = _tfet_metrics(Design())
    rows = {r.key: r for r in e.comparison()}
    assert set(rows) == {"present", "pin-0"}
    for key, ref in (("present", present_m), ("pin-0", pinned_m)):
        for name, _, _ in METRIC_COLUMNS:
            want, got = getattr(ref, name).value, rows[key].metrics[name]
            assert (want is None) == (got is None), (key, name)
            if want is not None:
                assert got == pytest.approx(want, rel=1e-6), (key, name)
    diffs = rows["pin-0"].differences
    for name, _, _ in METRIC_COLUMNS:
        a, b = getattr(pinned_m, name).value, getattr(present_m, name).value
        assert diffs[name] == difference_text(name, a, b), name
    ss = re.fullmatch(r"([+\u2212])([0-9.]+) mV/dec", diffs["ss_min_mV_per_dec"])
    signed = float(ss.group(2)) * (1 if ss.group(1) == "+" else -1)
    assert signed == pytest.approx(pinned_m.ss_min_mV_per_dec.value
                                   - present_m.ss_min_mV_per_dec.value, abs=0.05)
    assert diffs["body_thickness_nm"] == "\u22122 nm"
    # the same numbers are in the page's table (data-value hooks)
    cells = e.pin_view.compare.rows[0].cells.object
    shown = float(re.search(r'data-row="pin-0" data-col="ss_min_mV_per_dec" '
                            r'data-value="([^"]+)"', cells).group(1))
    assert shown == pytest.approx(pinned_m.ss_min_mV_per_dec.value, rel=1e-9)
    # overlays: the pinned design's band edges at the present bias, its transfer curve
    bp = Simulator().solve_bias(Design(), 0.4, 0.3)
    band = e.figures.pin_band_sources[0].data
    np.testing.assert_allclose(band["x_nm"], bp.x_nm)
    # 1e-6 eV: the Newton tolerance is 1e-8 V; warm starts differ from a fresh solve
    np.testing.assert_allclose(band["ec_eV"], bp.subband_ec_eV, rtol=0, atol=1e-6)
    np.testing.assert_allclose(band["ev_eV"], bp.subband_ev_eV, rtol=0, atol=1e-6)
    tc = Simulator().transfer_curve(Design(), SWEEP.gate_voltages(), 0.3)
    np.testing.assert_allclose(e.figures.pin_transfer_sources[0].data["id"],
                               tc.id_uA_per_um, rtol=1e-5)
    assert e.figures.pin_transfer_items[0].label["value"] == "reference"
    assert e.figures.pin_legends["transfer"].visible


def test_rename_unpin_and_load_into_controls():
    e = _explorer()
    a = e.pin_present("")
    e.state.gate_length_nm = 40.0
    b = e.pin_present("long gate")
    assert (a.slot, b.slot) == (0, 1)
    assert e.rename_pin(0, "long gate") is None  # taken: refused, old name kept
    assert "Not renamed" in e.pin_view.compare.message.object
    assert e.pin_view.compare.rows[0].name.value == "Design A"
    e.rename_pin(0, "short gate")
    assert e.figures.pin_band_items[0].label["value"] == "short gate"
    e.load_pin(0)
    assert e.state.design() == Design()
    assert e.comparison()[1].differences["gate_length_nm"] == "same"
    e.unpin(1)
    assert not e.figures.pin_transfer_items[1].visible
    assert len(e.figures.pin_transfer_sources[1].data["vg"]) == 0
    assert [p.name for p in e.pins.pins] == ["short gate"] and 1 not in e.pin_view.compare.rows
    e.unpin(0)
    assert not e.figures.pin_legends["band"].visible and not e.pin_view.compare.header.visible


# ------------------------------------------------------------------ settings and links
def _changed_state() -> ExplorerState:
    st = ExplorerState()
    st.param.update(material="GaSb", body_thickness_nm=6.5, gate_length_nm=40.0,
                    source_doping_log10_cm3=math.log10(2e19), channel_dopant="p",
                    channel_doping_log10_cm3=17.0, oxide="custom", oxide_permittivity=25.0,
                    gate_layout="single", vg_V=0.25, vd_V=0.45, vg_sweep_V=(-0.3, 0.7),
                    vg_points=31, vdd_V=0.4, ioff_log10_uA_per_um=-4.0)
    return st


def test_snapshot_settings_restore_every_control():
    st = _changed_state()
    settings = settings_from_state(st, [])
    assert settings.design == st.design()
    updates, notes = state_updates(settings)
    assert notes == []
    back = ExplorerState()
    back.param.update(**updates)
    for name in COMPUTED_PARAMETERS:
        if name == "oxide_permittivity" or isinstance(getattr(st, name), str):
            assert getattr(back, name) == getattr(st, name), name
        else:
            assert getattr(back, name) == pytest.approx(getattr(st, name), rel=1e-12), name


def test_snapshot_values_outside_the_controls_are_refused_by_name():
    settings = settings_from_state(ExplorerState(), []).replace(
        transfer_sweep=TransferSweep(-0.4, 0.6, 201, 0.3))
    with pytest.raises(SnapshotError, match=r"Points per transfer curve.*11 to 81"):
        state_updates(settings)


def test_link_round_trip_and_readable_values():
    st = _changed_state()
    query = query_from_state(st)
    assert set(query) == set(QUERY_KEYS.values())
    assert query["src_cm3"] == "2e19" and query["ch_cm3"] == "1e17"
    assert query["vg_sweep"] == "-0.3,0.7" and query["ioff_uA_um"] == "0.0001"
    updates, problems = updates_from_query(query)
    assert problems == []
    back = ExplorerState()
    back.param.update(**updates)
    assert back.design() == st.design()
    for name in LINKED_PARAMETERS:
        got, want = getattr(back, name), getattr(st, name)
        if isinstance(want, str):
            assert got == want, name
        else:
            assert np.allclose(got, want, rtol=1e-9), name


def test_page_address_keeps_other_keys_and_writes_changed_settings_as_text():
    st = ExplorerState(source_doping_log10_cm3=math.log10(4e19))
    search = updated_search("?utm_source=mail&body_nm=7", st, {"source_doping_log10_cm3"})
    assert query_of_search(search) == {"utm_source": "mail", "body_nm": "7",
                                       "src_cm3": "4e19"}  # not 4e+19
    everything = query_of_search(updated_search("", st))
    assert everything == query_from_state(st)
    st.vg_sweep_V = (-0.2, 0.5)
    assert "vg_sweep=-0.2,0.5" in updated_search(search, st, {"vg_sweep_V"})


def test_bad_link_values_are_ignored_by_name_and_the_others_apply():
    updates, problems = updates_from_query({
        "body_nm": "abc", "vd": "99", "material": "Unobtainium", "vg_sweep": "0.5,0.1",
        "T_K": "nan", "lg_nm": "40", "utm_source": "mail"})
    assert updates == {"gate_length_nm": 40.0}
    text = "\n".join(problems)
    for label in ("Body thickness (nm)", "Drain voltage (V)", "Body semiconductor",
                  "Gate sweep (V)", "Temperature (K)"):
        assert label in text, label
    assert len(problems) == 5
    # a combination the design does not allow: an underlap longer than the gate
    updates, problems = updates_from_query({"overlap_nm": "-29", "body_nm": "8"})
    assert updates == {"body_thickness_nm": 8.0}
    assert len(problems) == 1 and "Gate–source overlap" in problems[0]


def test_explorer_from_a_link_shows_what_was_ignored():
    e = Explorer.from_query({"body_nm": "abc", "lg_nm": "40", "vg_points": "11"},
                            background=False)
    e.panel()
    assert e.state.gate_length_nm == 40.0
    assert "Body thickness (nm)" in e.error_text and "ignored" in e.error_text
    e.state.vd_V = 0.35  # a change by hand clears the note
    assert "ignored" not in e.error_text


# ------------------------------------------------------------------ snapshots in the page
def test_export_then_import_restores_controls_pins_and_verifies():
    a = _explorer(body_thickness_nm=8.0)
    a.pin_present("eight")
    a.state.param.update(vd_V=0.35, gate_length_nm=36.0)
    name, data = a.export_bytes(dt.datetime(2024, 5, 6, 7, 8, 9, tzinfo=dt.UTC))
    assert name == "sub60-snapshot-2024-05-06T070809Z.zip"
    settings, _ = import_snapshot(data)
    assert settings.created_utc == "2024-05-06T07:08:09Z"
    b = Explorer(background=False)
    b.panel()
    assert b.import_bytes(data, name)
    for n in COMPUTED_PARAMETERS:
        assert getattr(b.state, n) == getattr(a.state, n), n
    assert [(p.name, p.design, p.sweep) for p in b.pins.pins] == \
        [(p.name, p.design, p.sweep) for p in a.pins.pins]
    report = b.snapshots.report.object
    assert "recomputed figures of merit match the stored ones" in report
    assert "report ok" in report
    stored = settings.stored.design.metrics
    shown = b.jobs.curves["tfet"].metrics.to_dict()
    for k, v in stored.items():
        assert (v is None) == (shown[k] is None), k
        if v is not None:
            assert shown[k] == pytest.approx(v, rel=1e-6), k
    assert len(b.figures.pin_transfer_sources[0].data["vg"]) == POINTS


def test_a_file_that_cannot_be_used_leaves_the_page_unchanged(monkeypatch):
    e = _explorer()
    e.pin_present("")
    before = {n: getattr(e.state, n) for n in COMPUTED_PARAMETERS}
    assert not e.import_bytes(b'{"schema": "sub60.snapshot", "schema_version": 99}', "new.json")
    assert "new.json not opened" in e.error_text and "future schema version" in e.error_text
    calls = []
    monkeypatch.setattr("sub60.app.session_files.import_snapshot", lambda *a, **k: calls.append(a))
    assert not e.import_bytes(b"PK" + bytes(UPLOAD_LIMIT_BYTES), "big.zip")
    assert calls == [], "a file over the limit must be refused before it is parsed"
    assert "over the page's limit of 10 MB" in e.error_text
    assert {n: getattr(e.state, n) for n in COMPUTED_PARAMETERS} == before
    assert [p.name for p in e.pins.pins] == ["Design A"]


def test_demo_design_loads_into_the_controls_with_its_pins():
    presets = list_presets()
    assert presets, "no demo designs in assets/presets"
    name, settings = next(((n, s) for n, s in presets.items() if s.pinned),
                          next(iter(presets.items())))
    e = _explorer()
    assert e.load_preset(name)
    assert e.state.design() == settings.design
    assert (e.state.vg_sweep_V, e.state.vg_points) == (
        (settings.transfer_sweep.vg_start_V, settings.transfer_sweep.vg_stop_V),
        settings.transfer_sweep.vg_points)
    assert [p.name for p in e.pins.pins] == [p.name for p in settings.pinned]
    assert settings.title.split(":")[0] in e.snapshots.report.object
