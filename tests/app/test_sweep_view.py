"""The sweep tab without a browser: the form is checked like a sweep file, a large grid asks
for a confirmation, a session's cluster is closed with the session, and the lower-priority
task gives the same results as the plain one.

Bounds are the design record's (`sub60.physics.FIELD_RANGES`, e.g. body thickness 2–30 nm)
and the sweep file's (`app.sweep_spec.LARGE_SWEEP`); the Pareto front and the central
differences are checked against their definitions (common practice, no source).
"""

from __future__ import annotations

import math
import os
import re
import threading
from pathlib import Path

import pytest

from sub60.app import sweep_session, sweep_view
from sub60.app.state import ExplorerState
from sub60.app.sweep_engine import (
    BACKGROUND_NICENESS,
    evaluate_design,
    evaluate_design_in_background,
    model_version,
    pareto_front,
)
from sub60.app.sweep_session import SweepSession, check_scheduler_address
from sub60.app.sweep_spec import LARGE_SWEEP, SpecError, spec_from_text
from sub60.app.sweep_view import SweepView
from sub60.physics import Design


def _view(session: SweepSession | None = None) -> SweepView:
    return SweepView(ExplorerState(), lambda: (1.0, "two-band"), [], lambda fn, *a: fn(*a),
                     session=session)


def test_default_form_is_a_valid_sweep_of_the_present_design() -> None:
    v = _view()
    spec = v.read_spec()
    assert spec.knob_fields == ("body_thickness_nm", "source_doping_cm3")
    assert spec.size() == 9
    assert spec.knobs[1].spacing == "log"  # dopings in decades by default
    present = v.state.design()
    for d in spec.designs():  # every field not varied is the explorer's
        assert d.replace(body_thickness_nm=present.body_thickness_nm,
                         source_doping_cm3=present.source_doping_cm3) == present


@pytest.mark.parametrize(("cls", "text", "expected"), [
    ("high", "50", ["Body thickness (nm)", "[2, 30]"]),       # FIELD_RANGES: 2-30 nm
    ("high", "abc", ["Body thickness (nm), to", "not a number"]),
    ("low", "nan", ["Body thickness (nm), from", "not a finite number"]),
])
def test_a_bad_range_is_refused_naming_the_field(cls: str, text: str, expected: list[str]) -> None:
    v = _view()
    getattr(v.knobs[0], cls).value = text
    assert v.start() is False
    assert v.message.visible
    for e in expected:
        assert e in v.message.object, v.message.object
    assert not v.session.running and v.session._root is None  # nothing ran, nothing written


def test_text_field_takes_values_and_an_unknown_one_is_refused() -> None:
    v = _view()
    v.knobs[1].field.value = "oxide"
    v.knobs[1].values.value = "HfO2, Unobtainium"
    with pytest.raises(SpecError, match="Gate dielectric"):
        v.read_spec()
    v.knobs[1].values.value = "HfO2, Al2O3"
    spec = v.read_spec()
    assert spec.knobs[1].values == ("HfO2", "Al2O3") and spec.size() == 6


def test_a_grid_above_the_limit_asks_for_a_confirmation() -> None:
    v = _view()
    v.knobs[0].steps.value = 100
    v.knobs[1].steps.value = 30
    assert 100 * 30 > LARGE_SWEEP
    assert v.start() is False
    assert v.confirm.visible and "3,000" in v.confirm.label
    assert "3,000 designs" in v.message.object
    assert v.read_spec(confirmed=True).size() == 3000


def test_scheduler_address_is_checked() -> None:
    assert check_scheduler_address(" tcp://10.0.0.5:8786 ") == "tcp://10.0.0.5:8786"
    for bad in ("10.0.0.5:8786", "http://x:1", "tcp://a b:1"):
        with pytest.raises(ValueError, match="Scheduler address"):
            check_scheduler_address(bad)
    v = _view()
    v.run_on.value = "Dask scheduler"
    v.address.value = "localhost:8786"
    assert v.start() is False and "Scheduler address" in v.message.object


def test_background_task_lowers_its_thread_priority_only_and_gives_the_same_result() -> None:
    spec = spec_from_text('[[knob]]\nfield = "body_thickness_nm"\nvalues = [7.0]\n'
                          '[bias]\nvg_V = [-0.1, 0.6, 6]\n')
    inputs = {"design": Design().to_dict(), "bias": spec.bias.to_dict(),
              "physics": spec.physics.to_dict(), "model": model_version()}
    seen: dict[str, object] = {}

    def run() -> None:
        seen["result"] = evaluate_design_in_background(inputs)
        seen["nice"] = os.getpriority(os.PRIO_PROCESS, 0)

    before = os.getpriority(os.PRIO_PROCESS, 0)
    t = threading.Thread(target=run)
    t.start()
    t.join()
    plain = evaluate_design(inputs)
    assert seen["nice"] >= BACKGROUND_NICENESS
    assert os.getpriority(os.PRIO_PROCESS, 0) == before  # this thread is untouched
    assert seen["result"]["metrics"] == plain["metrics"] and plain["status"] == "ok"


def test_session_runs_a_sweep_and_a_sensitivity_then_closes_its_cluster(tmp_path: Path) -> None:
    """A real local cluster (1 worker process) owned by the session: a 2-design sweep, the
    sensitivity of the present design, then `close` ends the cluster and the files."""
    session = SweepSession()
    v = _view(session)
    v.knobs[0].values.value = "6, 8"          # body thickness 6 and 8 nm
    v._remove_knob(v.knobs[1])
    v.vg_from.value, v.vg_points.value = "-0.1", 8
    v.workers.value = 1
    done = threading.Event()
    streamed: list[list[int]] = []  # the rows shown by each draw while the sweep ran

    def post(fn, *a) -> None:
        fn(*a)
        if fn == v._draw_streamed:
            streamed.append([r["index"] for r in v.rows])
        if fn in (v._sweep_done, v._sensitivity_done):
            done.set()

    v.post = post
    assert v.start(), v.message.object
    assert done.wait(600)
    assert [r["status"] for r in v.rows] == ["ok", "ok"], v.rows
    # the first rows to arrive are drawn at once (then at most every STREAM_EVERY_S)
    assert streamed and all(set(s) <= {0, 1} and s for s in streamed), streamed
    assert v.map_pane.object.name == "sweep_map"
    front = pareto_front(v.rows)
    assert 1 <= len(front) <= 2
    cluster = session._cluster
    assert cluster is not None and session.cluster_running()

    # sensitivity at the present design (7 nm), central difference over 7 +- 0.35 nm
    done.clear()
    assert v.start_sensitivity(), v.message.object
    assert done.wait(600)
    item = next(i for i in v.sensitivities if i["metric"] == "ion_uA_per_um")
    assert item["field"] == "body_thickness_nm"
    assert item["value"] is None or math.isfinite(item["value"])
    assert v.sens_pane.object.name == "sweep_sensitivity"

    # a design of the sweep goes into the explorer
    assert v.load_design(1) and v.state.body_thickness_nm == 8.0

    root = session.root
    assert root.exists()
    v.close()
    session._pool.shutdown(wait=True)
    assert str(cluster.status) == "Status.closed"
    assert session._client is None and not root.exists()


def test_a_page_beyond_the_local_cluster_limit_is_told_to_wait() -> None:
    """With every local-cluster place taken (by other pages), a sweep is refused with a
    message naming the control, before any process starts."""
    taken = 0
    while sweep_session._local_clusters.acquire(blocking=False):
        taken += 1
    try:
        v = _view()
        v.knobs[0].values.value = "6"
        v._remove_knob(v.knobs[1])
        done = threading.Event()
        v.post = lambda fn, *a: (fn(*a), done.set() if fn == v._sweep_done else None)
        assert v.start(), v.message.object
        assert done.wait(60)
        assert "Local workers" in v.message.object and "scheduler address" in v.message.object
        assert not v.session.cluster_running()
        v.close()
    finally:
        for _ in range(taken):
            sweep_session._local_clusters.release()


def test_the_tab_uses_no_deprecated_panel_option() -> None:
    """Panel 1.9 deprecates Button(button_type=...) for color=... (PendingDeprecationWarning,
    panel/widgets/button.py); the tab is built with what the installed Panel wants."""
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error", PendingDeprecationWarning)
        warnings.simplefilter("error", DeprecationWarning)
        v = _view()
    assert v.run.color == "primary" and v.knobs[0].remove.color == "light"
    v.close()


def test_streamed_rows_are_drawn_at_most_once_per_interval_and_only_for_the_running_sweep(
        monkeypatch) -> None:
    """Rows arrive on the sweep's thread; a draw is posted for the first ones, then none
    while one is waiting or within `STREAM_EVERY_S`; the rows of a run that has ended, or
    of an earlier run, are never drawn."""
    monkeypatch.setattr(sweep_view, "STREAM_EVERY_S", 1e9)
    v = _view()
    posted: list[tuple] = []
    drawn: list[list[int]] = []
    v.post = lambda fn, *a: posted.append((fn, a))
    v._show_rows = lambda spec, rows, new_selectors: drawn.append([r["index"] for r in rows])
    spec = v.read_spec()
    run = v._new_stream()
    v._rows_arrived(run, spec, [{"index": 3}])
    v._rows_arrived(run, spec, [{"index": 1}])   # a draw is waiting: none posted
    assert len(posted) == 1
    fn, args = posted.pop()
    fn(*args)                                     # the page's event loop runs it
    assert drawn == [[1, 3]]                      # every row so far, in sweep order
    v._rows_arrived(run, spec, [{"index": 0}])   # within the interval: kept, not posted
    assert not posted
    monkeypatch.setattr(sweep_view, "STREAM_EVERY_S", 0.0)
    monkeypatch.setattr(sweep_view, "STREAM_SHARE", 0.0)
    v._rows_arrived(run, spec, [{"index": 2}])
    fn, args = posted.pop()
    v._end_stream()                               # the sweep ended before the draw ran
    fn(*args)
    assert drawn == [[1, 3]]
    old, new = run, v._new_stream()
    v._rows_arrived(old, spec, [{"index": 5}])   # rows of the earlier run: dropped
    assert not posted and new == old + 1
    v.close()


def test_every_design_field_has_a_knob_label_with_the_unit_of_its_name() -> None:
    """The knob list, the map and front axes, the hover and the command-line summary name
    fields by their control labels; the unit a label states is the one the field's name
    carries (the project's units-in-names convention), and a number without a unit says
    (–)."""
    from sub60.app.state import label_of
    from sub60.app.sweep_plots import knob_text, knob_unit
    from sub60.physics import FIELD_RANGES

    units = {"_nm": "nm", "_cm3": "cm⁻³", "_eV": "eV", "_K": "K", "_meV": "meV", "_ns": "ns",
             "_ohm_um": "Ω·µm", "_cm2eV": "cm⁻²eV⁻¹", "_nm_per_dec": "nm/decade"}
    assert set(sweep_view.KNOB_CHOICES.values()) == set(FIELD_RANGES)
    for f, spec in FIELD_RANGES.items():
        label = label_of(f)
        assert not re.search(r"[a-z0-9]_[a-z]", label), (f, label)  # no snake_case name
        if spec.kind is not float:
            assert knob_unit(f) == "", (f, label)
            continue
        suffix = max((s for s in units if f.endswith(s)), key=len, default=None)
        if suffix is None:
            assert label.endswith("(–)"), (f, label)
        else:
            assert knob_unit(f) == units[suffix], (f, label)
    assert knob_text("heterointerface_nm", -2.0) == "Heterointerface from the gate edge -2 nm"
    assert knob_text("source_material", "GaSb") == "Source semiconductor GaSb"


def test_heterojunction_source_knobs_in_the_form() -> None:
    """The source material (values, 'same' = homojunction) and the heterointerface (a range)
    as knobs of the form; a source composition on a homojunction is refused, the message
    naming the fields in words."""
    v = _view()
    v.knobs[0].field.value = "heterointerface_nm"
    v.knobs[0].low.value, v.knobs[0].high.value, v.knobs[0].steps.value = "-2", "2", 3
    v.knobs[1].field.value = "source_material"
    v.knobs[1].values.value = "same, GaSb"
    spec = v.read_spec()
    assert spec.knob_fields == ("heterointerface_nm", "source_material") and spec.size() == 6
    assert sum(d.is_heterojunction for d in spec.designs()) == 3
    v.knobs[1].field.value = "source_composition_x"
    v.knobs[1].values.value = ""
    v.knobs[1].low.value, v.knobs[1].high.value, v.knobs[1].steps.value = "0.2", "0.4", 2
    assert v.start() is False
    text = v.message.object
    assert "Source alloy composition x (–)" in text and "source semiconductor" in text, text
    assert "source_material" not in text and "source_composition_x" not in text, text
    v.close()


def _rows(spec, n: int) -> list[dict]:
    """The first ``n`` designs of ``spec`` with made-up metrics (invented numbers for this
    check of the drawing only; no physics is claimed)."""
    from sub60.app.sweep_engine import METRICS

    rows = []
    for i, d in enumerate(spec.designs()[:n]):
        row = {"index": i, "status": "ok", **{f: getattr(d, f) for f in spec.knob_fields}}
        row.update({m: 1.0 + i + j for j, m in enumerate(METRICS)})
        rows.append(row)
    return rows


def test_streamed_draws_pour_rows_into_the_shown_figures_until_their_shape_changes() -> None:
    """While a sweep streams, each draw updates the shown map and Pareto front in place (the
    same figure objects, so the browser is sent data, not new figures, and the front's click
    callback stays); their sources, colour ranges and titles are those a fresh figure of all
    the rows would have. A new metric is another figure."""
    from bokeh.models import ColorBar

    from sub60.app.sweep_plots import metric_map, pareto_plot

    v = _view()
    spec = v.read_spec()
    v._show_rows(spec, _rows(spec, 3), new_selectors=True)
    map_fig, front_fig, front_src = v.map_pane.object, v.pareto_pane.object, v._pareto_source
    rows = _rows(spec, 9)
    v._show_rows(spec, rows, new_selectors=False)
    assert v.map_pane.object is map_fig and v.pareto_pane.object is front_fig
    assert v._pareto_source is front_src and len(front_src.data["index"]) == 9
    fresh = metric_map(rows, spec.knob_fields, v.map_x.value, v.map_y.value, v.map_metric.value,
                       grid=True, axes={k.field: k.grid() for k in spec.knobs})
    shown = map_fig.select_one({"name": "sweep_map_source"})
    assert shown.data == fresh.select_one({"name": "sweep_map_source"}).data
    bar, fresh_bar = map_fig.select_one(ColorBar), fresh.select_one(ColorBar)
    assert (bar.color_mapper.low, bar.color_mapper.high) == (fresh_bar.color_mapper.low,
                                                             fresh_bar.color_mapper.high)
    fresh_front, _, _ = pareto_plot(rows, spec.knob_fields, v.pareto_against.value,
                                    v.colour_by.value)
    assert front_fig.title.text == fresh_front.title.text and "9 designs" in front_fig.title.text
    assert (front_fig.y_range.start, front_fig.y_range.end) == (fresh_front.y_range.start,
                                                                fresh_front.y_range.end)
    other = next(m for m in v.map_metric.options.values() if m != v.map_metric.value)
    v.map_metric.value = other  # another metric: another colour bar, a new figure
    assert v.map_pane.object is not map_fig
    v.close()
