"""The sweep engine on a real Dask LocalCluster (worker processes).

- Invariant (project contract, no outside source): a design's metrics in a sweep equal,
  to 1e-9 relative, those of `transfer_curve` and of `sub60 transfer` for the same design
  and bias plan — the sweep is the single-design path run elsewhere, not another model.
- A rerun computes nothing (every row from the content-addressed cache); an extended
  range computes only the new designs.
- A failing design is a row with its reason; cancelling keeps the rows computed so far.
"""

from __future__ import annotations

import json
import subprocess
import sys
import threading
from pathlib import Path

import pyarrow.parquet as pq
import pytest

from sub60.app.sweep_engine import (
    LOCAL_CLUSTER_CONFIG,
    METRICS,
    best_designs,
    evaluate_design,
    local_cluster,
    model_version,
    pareto_front,
    read_table,
    run_sweep,
    task_inputs,
)
from sub60.app.sweep_spec import BiasPlan, SweepSpec, spec_from_text
from sub60.physics import Design, Simulator

ROOT = Path(__file__).resolve().parents[2]
REL = 1e-9

# cheap designs: a short gate sweep through the subthreshold region of the default design
PLAN = '[bias]\nvg_V = [-0.1, 0.6, 15]\nvd_V = 0.3\nioff_target_uA_per_um = 1e-3\nvdd_V = 0.3\n'


@pytest.fixture(scope="module")
def client():
    from distributed import Client

    cluster = local_cluster(1)
    c = Client(cluster)
    yield c
    c.close()
    cluster.close()


def _same(a, b) -> bool:
    if a is None or b is None:
        return a is None and b is None
    return abs(a - b) <= REL * max(abs(a), abs(b))


def test_local_cluster_workers_run_with_the_quiet_settings(client) -> None:
    """The settings reach the worker processes, not only this one (the nanny passes its
    configuration on; Dask configuration reference, `distributed.worker.*` and
    `distributed.admin.*` keys). The tick interval is 20 ms by Dask's default: the test
    fails if the local cluster runs with the defaults."""
    import dask

    def settings() -> dict:
        return {k: dask.config.get(k) for k in LOCAL_CLUSTER_CONFIG}

    seen = client.run(settings)
    assert seen and all(v == LOCAL_CLUSTER_CONFIG for v in seen.values()), seen


def test_sweep_metrics_equal_transfer_curve_and_the_command_line(client, tmp_path: Path) -> None:
    spec = spec_from_text('[[knob]]\nfield = "body_thickness_nm"\nvalues = [5.0, 7.0]\n'
                          + PLAN)
    res = run_sweep(spec, tmp_path, client=client)
    assert res.computed == 2 and res.failed == 0
    for row in res.rows:
        design = Design.from_dict({k: row[k] for k in Design().to_dict()})
        tc = Simulator().transfer_curve(design, spec.bias.vg_V(), 0.3, ioff_target_uA_per_um=1e-3,
                                        vdd_V=0.3)
        direct = tc.metrics.to_dict()
        cli = subprocess.run(
            [sys.executable, "-m", "sub60.app", "transfer", "--vg", "-0.1:0.6:15", "--vd", "0.3",
             "--ioff", "1e-3", "--vdd", "0.3", "--set", f"body_thickness_nm={row['body_thickness_nm']!r}"],
            capture_output=True, text=True, check=True, cwd=ROOT)
        from_cli = json.loads(cli.stdout)["metrics"]
        assert direct["ion_uA_per_um"] is not None and direct["ss_min_mV_per_dec"] is not None
        for k in METRICS:
            assert _same(row[k], direct[k]), (k, row[k], direct[k])
            if k in from_cli:
                assert _same(row[k], from_cli[k]), (k, row[k], from_cli[k])


def test_rerun_computes_nothing_and_an_extension_only_the_new_designs(client, tmp_path: Path) -> None:
    knob = '[[knob]]\nfield = "gate_workfunction_eV"\nlow = 4.8\nhigh = {hi}\nsteps = {n}\n'
    first = spec_from_text(knob.format(hi=4.9, n=2) + PLAN)
    r1 = run_sweep(first, tmp_path, client=client)
    assert (r1.computed, r1.cached, len(r1.rows)) == (2, 0, 2)
    r2 = run_sweep(first, tmp_path, client=client)
    assert (r2.computed, r2.cached) == (0, 2)
    assert all(r["cached"] for r in r2.rows)
    extended = spec_from_text(knob.format(hi=5.0, n=3) + PLAN)  # 4.8, 4.9 and the new 5.0
    r3 = run_sweep(extended, tmp_path, client=client)
    assert (r3.computed, r3.cached, len(r3.rows)) == (1, 2, 3)
    assert [r["cached"] for r in r3.rows] == [True, True, False]
    for a, b in zip(r1.rows, r3.rows[:2], strict=True):  # cached rows carry the same numbers
        assert all(a[k] == b[k] for k in METRICS)
    # the table on disk: Parquet and CSV, rows in sweep order, the spec in the metadata
    rows = read_table(tmp_path)
    assert [r["gate_workfunction_eV"] for r in rows] == [4.8, 4.9, 5.0]
    meta = json.loads(pq.read_schema(tmp_path / "results.parquet").metadata[b"sub60_sweep"])
    assert meta["model"] == model_version() and meta["spec"]["knob"][0]["high"] == 5.0
    assert len((tmp_path / "results.csv").read_text().strip().splitlines()) == 4
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cache", "results.csv", "results.parquet",
                                                      "sweep.json"]  # no temporary file left


def test_failed_design_is_a_row_with_its_reason(client, tmp_path: Path) -> None:
    base = spec_from_text('[[knob]]\nfield = "body_thickness_nm"\nvalues = [5.0, 6.0]\n' + PLAN)
    # a plan outside the solver's bias range (bypassing the spec check) fails inside the task
    bad = SweepSpec(base.knobs, bias=BiasPlan(0.0, 0.5, 5, 5.0))
    res = run_sweep(bad, tmp_path, client=client)
    assert len(res.rows) == 2 and res.failed == 2 and not res.cancelled
    for r in res.rows:
        assert r["status"] == "failed" and "vd_V" in r["error"] and "[-0.6, 1]" in r["error"]
        assert all(r[k] is None for k in METRICS)


def test_task_refuses_another_model_version() -> None:
    inputs = task_inputs(Design(), spec_from_text(
        '[[knob]]\nfield = "body_thickness_nm"\nvalues = [5.0]\n' + PLAN), "0.0.0+other")
    out = evaluate_design(inputs)
    assert out["status"] == "failed" and not out["cacheable"] and "0.0.0+other" in out["error"]


def test_missing_metrics_carry_their_reason(tmp_path: Path, client) -> None:
    # a gate sweep that never reaches Ioff + Vdd: Ion undefined, with the metric's reason
    spec = spec_from_text('[[knob]]\nfield = "body_thickness_nm"\nvalues = [7.0]\n'
                          '[bias]\nvg_V = [-0.3, -0.1, 5]\nvd_V = 0.3\n')
    row = run_sweep(spec, tmp_path, client=client).rows[0]
    assert row["status"] == "ok" and row["ion_uA_per_um"] is None
    assert "ion_uA_per_um: " in row["metrics_missing"]


def test_cancel_keeps_the_rows_so_far_and_a_rerun_finishes(client, tmp_path: Path) -> None:
    spec = spec_from_text('[[knob]]\nfield = "body_thickness_nm"\nlow = 5.0\nhigh = 7.5\nsteps = 6\n'
                          + PLAN)
    cancel = threading.Event()

    def progress(p) -> None:
        if p.computed >= 1:
            cancel.set()

    res = run_sweep(spec, tmp_path, client=client, progress=progress, cancel=cancel)
    assert res.cancelled and 1 <= res.computed < 6 and len(res.rows) == 6
    assert {r["status"] for r in res.rows[res.computed:]} <= {"cancelled", "ok"}
    assert sum(r["status"] == "cancelled" for r in res.rows) == 6 - res.computed
    again = run_sweep(spec, tmp_path, client=client)
    assert not again.cancelled and again.cached == res.computed and again.computed == 6 - res.computed


def test_pareto_front_and_best_designs() -> None:
    rows = [{"status": "ok", "ion_uA_per_um": ion, "ss_avg4_mV_per_dec": ss, "index": i}
            for i, (ion, ss) in enumerate([(10, 50), (20, 60), (15, 70), (5, 40), (20, 55), (1, None)])]
    assert [r["index"] for r in pareto_front(rows)] == [3, 0, 4]  # (15, 70), (20, 60) dominated
    assert [r["index"] for r in best_designs(rows, n=2)] in ([1, 4], [4, 1])


def test_background_job_reports_progress_and_returns_the_result(client, tmp_path: Path) -> None:
    from sub60.app.sweep_engine import SweepJob

    spec = spec_from_text('[[knob]]\nfield = "body_thickness_nm"\nvalues = [5.5, 6.5]\n' + PLAN)
    seen = []
    job = SweepJob(spec, tmp_path, client=client, on_progress=seen.append)
    res = job.result(timeout=300)
    assert job.done and res.computed == 2 and len(res.rows) == 2
    assert seen[-1].done == 2 and job.progress is seen[-1]
    assert seen[-1].eta_s == 0 and seen[-1].rate > 0
    with pytest.raises(Exception, match="invalid"):  # an invalid design is raised by result()
        SweepJob(spec_from_text('[fixed]\ngate_source_offset_nm = -8.0\n[[knob]]\nfield = '
                                '"gate_length_nm"\nvalues = [5.0]\n'), tmp_path / "x").result(60)


def test_sensitivity_is_the_central_difference_of_independent_solves(client, tmp_path: Path) -> None:
    from sub60.app.sweep_engine import sensitivity, sensitivity_designs

    spec = spec_from_text('[[knob]]\nfield = "body_thickness_nm"\nvalues = [7.0]\n' + PLAN)
    centre = Design(body_thickness_nm=6.0)
    fields = ["body_thickness_nm", "gate_workfunction_eV"]
    ranked = sensitivity(centre, fields, spec, tmp_path, client=client)
    assert len(ranked) == 4
    defined = [r["value"] for r in ranked if r["value"] is not None]
    assert defined == sorted(defined, key=abs, reverse=True)
    # recompute one entry by hand: (M(x+h) - M(x-h)) / 2h * x / M(x), each curve solved
    # here with a fresh simulator (Numerical Recipes 3rd ed., 5.7: central difference)
    name, h, lo, hi = sensitivity_designs(centre, fields)[0]
    assert (lo.body_thickness_nm, hi.body_thickness_nm, h) == (5.7, 6.3, pytest.approx(0.3))

    def ion(d: Design) -> float:
        return Simulator().transfer_curve(d, spec.bias.vg_V(), 0.3).metrics.ion_uA_per_um.value

    expected = (ion(hi) - ion(lo)) / (2 * h) * 6.0 / ion(centre)
    got = next(r for r in ranked if r["field"] == name and r["metric"] == "ion_uA_per_um")
    assert got["value"] == pytest.approx(expected, rel=1e-9)
    seen = []  # the same request again: all 5 designs from the cache, the same ranking
    assert sensitivity(centre, fields, spec, tmp_path, client=client, progress=seen.append) == ranked
    assert (seen[-1].computed, seen[-1].cached) == (0, 5)
    with pytest.raises(ValueError, match="oxide: not a numeric design field"):
        sensitivity_designs(centre, ["oxide"])
    with pytest.raises(ValueError, match="temperature_K: 450 sits at the end of its range"):
        sensitivity_designs(Design(temperature_K=450.0), ["temperature_K"])


def test_unreachable_scheduler_is_an_error_before_anything_is_computed(tmp_path: Path) -> None:
    import socket

    with socket.socket() as s:  # a free loopback port with nothing listening
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    spec = spec_from_text('[[knob]]\nfield = "body_thickness_nm"\nvalues = [5.0]\n' + PLAN)
    with pytest.raises(OSError):
        run_sweep(spec, tmp_path, scheduler=f"tcp://127.0.0.1:{port}", connect_timeout_s=2)
    assert not list(tmp_path.glob("cache/*/*.json"))


def test_heterojunction_sweep_streams_its_rows_once_and_equals_transfer_curve(client,
                                                                              tmp_path: Path) -> None:
    """A knob over the source material (InAs body; 'same' = homojunction, GaSb source): each
    row reaches ``on_rows`` exactly once, cached ones first on a rerun; the heterojunction
    row carries the metrics of `transfer_curve` for that design (1e-9 relative, the
    project's contract); the summary names the knob by its control label."""
    from sub60.app.sweep_cli import summary

    spec = spec_from_text('[fixed]\nmaterial = "InAs"\n[[knob]]\nfield = "source_material"\n'
                          'values = ["same", "GaSb"]\n' + PLAN)
    batches: list[list[dict]] = []
    res = run_sweep(spec, tmp_path, client=client, on_rows=batches.append)
    streamed = [r for b in batches for r in b]
    assert sorted(r["index"] for r in streamed) == [0, 1]
    assert sorted(streamed, key=lambda r: r["index"]) == res.rows
    homo, hetero = res.rows
    assert (homo["source_material"], hetero["source_material"]) == ("same", "GaSb")
    design = Design.from_dict({k: hetero[k] for k in Design().to_dict()})
    assert design.is_heterojunction
    tc = Simulator().transfer_curve(design, spec.bias.vg_V(), 0.3, ioff_target_uA_per_um=1e-3,
                                    vdd_V=0.3)
    direct = tc.metrics.to_dict()
    for k in METRICS:
        assert _same(hetero[k], direct[k]), (k, hetero[k], direct[k])
    assert hetero["ion_uA_per_um"] != homo["ion_uA_per_um"]  # the source material matters
    text = summary(res, spec)
    assert "Source semiconductor = GaSb" in text and "source_material" not in text, text

    batches.clear()
    again = run_sweep(spec, tmp_path, client=client, on_rows=batches.append)
    assert again.cached == 2 and len(batches) == 1 and batches[0] == again.rows
