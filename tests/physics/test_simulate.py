"""The pipeline and the library surface: results, tables, caches, errors, threads, import.

Physics checks name their source; the rest are stated invariants of the API (sizes,
names, bounds), checked against independent means (Python's csv module, threadpoolctl,
a fresh interpreter).
"""

from __future__ import annotations

import csv
import io
import json
import pickle
import subprocess
import sys
import threading

import numpy as np
import pytest

from sub60.physics._cache import ByteLRU
from sub60.physics.design import Design
from sub60.physics.metrics import Metrics, figures_of_merit, point_swing_mV_per_dec
from sub60.physics.poisson import SolverError
from sub60.physics.simulate import (
    DEFAULT_CACHE_BYTES,
    Simulator,
    output_columns,
)
from sub60.physics.tables import csv_text, table

VG = np.linspace(-0.1, 0.4, 11)


@pytest.fixture(scope="module")
def sim():
    return Simulator()


@pytest.fixture(scope="module")
def curve(sim):
    return sim.transfer_curve(Design(), VG, 0.3)


@pytest.fixture(scope="module")
def point(sim):
    return sim.solve_bias(Design(), 0.3, 0.3)


# ------------------------------------------------------------------ physics of the pipeline
def test_total_current_is_the_sum_of_its_parts(point):
    """Landauer current, band-to-band plus thermionic (physics/transport.py eqs. 1-2)."""
    assert point.current_uA_per_um == pytest.approx(
        point.btbt_uA_per_um + point.electron_thermionic_uA_per_um
        + point.hole_thermionic_uA_per_um, rel=1e-15)


def test_zero_drain_bias_carries_no_current(sim):
    """f_s = f_d at V_d = 0: no net current (Datta 1995, ch. 2 — from memory)."""
    assert sim.solve_bias(Design(), 0.3, 0.0).current_uA_per_um == 0.0


def test_subband_edges_lie_above_the_bulk_edges_by_confinement(point):
    """Confinement only raises the conduction and lowers the valence subbands (positive
    confinement energies; Davies 1998, ch. 4 — from memory): away from steep bending the
    lowest subband sits above the bulk mid-plane edge."""
    es = point.electrostatics
    flat = np.abs(np.gradient(es.bulk_ec_eV, point.x_nm)) < 1e-3  # [eV/nm]
    assert flat.sum() > 10
    assert np.all(point.subband_ec_eV[flat] > es.bulk_ec_eV[flat])
    assert np.all(point.subband_ev_eV[flat] < es.bulk_ev_eV[flat])
    # one name per edge: the ambiguous older `ec_eV` / `ev_eV` are gone from both results
    assert not hasattr(point, "ec_eV") and not hasattr(es, "ec_eV")


def test_curve_metrics_and_swing_are_those_of_its_points(curve):
    """The curve's figures of merit are `figures_of_merit` of its refined Id(Vg) (the
    requested samples plus those `refine_curve` added) and its point swing is
    `point_swing_mV_per_dec` of the requested samples (one definition of each)."""
    assert np.all(np.isin(VG, curve.vg_refined_V))
    ref = figures_of_merit(curve.vg_refined_V, curve.id_refined_uA_per_um, 300.0)
    assert ref.to_dict() == curve.metrics.to_dict()
    np.testing.assert_array_equal(point_swing_mV_per_dec(VG, curve.id_uA_per_um),
                                  curve.ss_mV_per_dec)
    np.testing.assert_allclose(curve.btbt_uA_per_um + curve.thermionic_uA_per_um,
                               curve.id_uA_per_um, rtol=1e-14)


def test_transfer_curve_has_no_temperature_argument(sim):
    """The temperature is the design's; the old ignored argument is gone."""
    with pytest.raises(TypeError):
        sim.transfer_curve(Design(), VG, 0.3, temperature_K=200.0)


def test_unknown_tunnelling_model_is_refused():
    with pytest.raises(ValueError, match="two-band"):
        Simulator(model="Kane")


# ------------------------------------------------------------------ reprs and tables
def test_reprs_are_short(point, curve, sim):
    out = sim.output_curve(Design(), 0.3, np.linspace(0.0, 0.3, 4))
    for obj in (point, point.electrostatics, point.spectrum, curve, curve.metrics, out, sim,
                point.electrostatics.frame):
        assert len(repr(obj)) < 300, type(obj).__name__
    assert "Vg = 0.3 V" in repr(point)


def test_transfer_table_columns(curve):
    cols = curve.columns()
    assert list(cols) == ["vg_V", "id_uA_per_um", "ss_mV_per_dec", "btbt_uA_per_um",
                          "thermionic_uA_per_um"]
    np.testing.assert_array_equal(cols["id_uA_per_um"], curve.id_uA_per_um)
    df = curve.to_table()
    pd = pytest.importorskip("pandas")
    assert isinstance(df, pd.DataFrame)
    np.testing.assert_array_equal(df["vg_V"].to_numpy(), VG)


def test_band_and_spectrum_tables(point):
    cols = point.band_columns()
    labels = [f"{lab}_eV" for lab in point.conduction_labels + point.valence_labels]
    assert list(cols) == ["x_nm", *labels, "efs_eV", "efd_eV"]
    np.testing.assert_array_equal(cols["C1_eV"], point.conduction_eV[0])
    assert list(point.band_columns(edges_only=True)) == ["x_nm", "ec_eV", "ev_eV"]
    spec = point.spectrum.columns()
    assert list(spec) == ["energy_eV", "current_density_uA_per_um_per_eV", "transmission_1"]
    # the spectrum integrates to the band-to-band current within the grid's accuracy
    integral = np.trapezoid(spec["current_density_uA_per_um_per_eV"], spec["energy_eV"])
    assert integral == pytest.approx(point.btbt_uA_per_um, rel=0.05)


def test_metrics_table_is_one_row(curve):
    cols = curve.metrics.columns()
    assert list(cols) == [*Metrics.METRIC_NAMES, *Metrics.SETTING_NAMES]
    assert all(v.shape == (1,) for v in cols.values())
    for name, value in curve.metrics.to_dict().items():
        assert (np.isnan(cols[name][0]) if value is None else cols[name][0] == value)


def test_tables_without_pandas_are_dicts(curve, monkeypatch):
    monkeypatch.setitem(sys.modules, "pandas", None)  # import pandas -> ImportError
    t = curve.to_table()
    assert isinstance(t, dict) and list(t) == list(curve.columns())


def test_output_columns_side_by_side(sim):
    vd = np.linspace(0.0, 0.3, 4)
    curves = [sim.output_curve(Design(), v, vd) for v in (0.1, 0.3)]
    cols = output_columns(curves)
    assert list(cols) == ["vd_V", "id_uA_per_um_at_vg_0.1_V", "id_uA_per_um_at_vg_0.3_V"]
    with pytest.raises(ValueError, match="drain voltages"):
        output_columns([curves[0], sim.output_curve(Design(), 0.2, vd[:3])])


def test_csv_text_reads_back_with_the_csv_module(curve):
    """Python's csv module reads the header and 10 significant digits back; non-finite
    values are empty fields; comments come first as '# name = value'."""
    text = csv_text(curve.to_table(), {"vd_V": 0.3, "note": None})
    lines = text.splitlines()
    assert lines[:2] == ["# vd_V = 0.3", "# note = "]
    rows = list(csv.reader(io.StringIO("\n".join(lines[2:]))))
    assert rows[0] == list(curve.columns())
    got = np.array([[float(v) if v else np.nan for v in r] for r in rows[1:]])
    for k, name in enumerate(rows[0]):
        ref = curve.columns()[name]
        finite = np.isfinite(ref)
        np.testing.assert_allclose(got[finite, k], ref[finite], rtol=1e-9)
        assert np.all(np.isnan(got[~finite, k]))
    with pytest.raises(ValueError, match="one length"):
        table({"a": np.zeros(2), "b": np.zeros(3)})


# ------------------------------------------------------------------ caches
def test_byte_lru_stays_under_its_bound_with_shared_parts():
    cache = ByteLRU(10_000, lambda v: v[0].nbytes, lambda v: (v[1], 4000))
    for i in range(50):  # 800 B each + a 4000 B part shared by groups of 10
        cache.put(i, (np.zeros(100), i // 10))
        assert cache.nbytes <= 10_000
    assert 0 < len(cache) < 50
    assert cache.get(0) is None and cache.get(49) is not None
    cache.put("huge", (np.zeros(2000), "x"))  # 16 kB > budget: not kept
    assert cache.get("huge") is None and cache.nbytes <= 10_000
    cache.clear()
    assert cache.nbytes == 0 and len(cache) == 0


def test_simulator_cache_is_bounded_by_bytes():
    """Fill a small cache past its bound: the bytes held (points + their structure once)
    stay under it and the oldest points go first."""
    probe = Simulator().solve_bias(Design(), 0.0, 0.3)
    budget = probe.electrostatics.frame.nbytes + 5 * probe.nbytes + probe.nbytes // 2
    sim = Simulator(cache_bytes=budget)
    for v in np.linspace(0.0, 0.3, 12):
        sim.solve_bias(Design(), float(v), 0.3)
        assert sim.cache_info().nbytes <= budget
    info = sim.cache_info()
    assert info.entries == 5 and info.max_bytes == budget
    assert DEFAULT_CACHE_BYTES == 64 * 2**20
    sim.clear_cache()
    assert sim.cache_info().nbytes == 0


def test_concurrent_solves_agree_and_restore_blas_threads():
    """Two threads solving the same points give identical results, and the BLAS thread
    counts are back to their values afterwards (threadpoolctl)."""
    threadpoolctl = pytest.importorskip("threadpoolctl")
    before = [i["num_threads"] for i in threadpoolctl.threadpool_info()]
    results: dict[int, list[float]] = {}

    def work(k: int) -> None:
        sim = Simulator()
        results[k] = [sim.solve_bias(Design(), float(v), 0.3).current_uA_per_um
                      for v in (0.1, 0.2, 0.3)]

    threads = [threading.Thread(target=work, args=(k,)) for k in range(2)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert results[0] == results[1]
    assert [i["num_threads"] for i in threadpoolctl.threadpool_info()] == before


def test_blas_is_single_threaded_only_inside_a_solve():
    threadpoolctl = pytest.importorskip("threadpoolctl")
    from sub60.physics._threads import single_blas_thread

    blas = [i for i in threadpoolctl.threadpool_info() if i["user_api"] == "blas"]
    if not blas:
        pytest.skip("no BLAS library loaded")
    outside = [i["num_threads"] for i in blas]
    with single_blas_thread(), single_blas_thread():  # nested: still one thread
        inside = [i["num_threads"] for i in threadpoolctl.threadpool_info()
                  if i["user_api"] == "blas"]
    assert inside == [1] * len(inside)
    assert [i["num_threads"] for i in threadpoolctl.threadpool_info()
            if i["user_api"] == "blas"] == outside


# ------------------------------------------------------------------ errors
def test_solver_error_fields_and_no_repeated_history():
    inner = SolverError("Newton did not converge in 60 steps", [1.0, 0.5, 0.25])
    outer = SolverError(f"electrostatics at Vg = 0.5 V: {inner.summary}", inner.history)
    again = SolverError(f"{outer.summary}; fallbacks also failed", outer.history)
    assert again.history == (1.0, 0.5, 0.25)
    assert str(again).count("residual history") == 1
    assert again.summary == ("electrostatics at Vg = 0.5 V: Newton did not converge in "
                             "60 steps; fallbacks also failed")
    assert str(SolverError("non-finite current")) == "non-finite current"
    back = pickle.loads(pickle.dumps(again))
    assert (back.summary, back.history, str(back)) == (again.summary, again.history, str(again))


def test_a_failed_solve_reports_summary_and_history():
    from sub60.physics.electrostatics import solve_electrostatics

    with pytest.raises(SolverError) as err:
        solve_electrostatics(Design(), 0.5, 0.3, max_iter=1)
    assert err.value.summary.startswith("electrostatics at Vg = 0.5 V, Vd = 0.3 V")
    assert "residual history" not in err.value.summary
    assert len(err.value.history) == 1


# ------------------------------------------------------------------ import
_PROBE = """
import json, threadpoolctl, numpy, scipy.linalg
def counts():
    return [i["num_threads"] for i in threadpoolctl.threadpool_info()]
before = counts()
import sub60, sub60.physics
from sub60.physics import Design
mid = counts()
sub60.solve_bias(Design(), 0.2, 0.3)
after = counts()
print(json.dumps({"before": before, "mid": mid, "after": after,
                  "physics": sorted(sub60.physics.__all__), "root": sorted(sub60._PHYSICS_API),
                  "public": sorted(n for n in vars(sub60.physics) if not n.startswith("_"))}))
"""


def test_import_has_no_side_effects_and_a_clean_namespace():
    """In a fresh interpreter: importing sub60 and sub60.physics leaves the BLAS thread
    counts alone, a solve restores them; the package exposes only its API (plus the
    submodules loaded), and the two API lists agree."""
    out = subprocess.run([sys.executable, "-c", _PROBE], capture_output=True, text=True,
                         check=True, timeout=120)
    r = json.loads(out.stdout)
    assert r["before"] == r["mid"] == r["after"]
    assert r["physics"] == r["root"]
    submodules = {"design", "simulate", "electrostatics", "poisson", "structure", "mesh",
                  "materials", "constants", "statistics", "subbands", "confinement",
                  "transport", "tunneling", "metrics", "tables", "quantum", "band_tails",
                  "bandgap_narrowing", "trap_assisted", "heterojunction"}
    assert set(r["public"]) <= set(r["physics"]) | submodules
    assert "scipy" not in r["public"] and "threadpool_limits" not in r["public"]


def test_design_import_is_light():
    """`from sub60.physics import Design` loads neither scipy.interpolate nor numba."""
    code = ("import sys; from sub60.physics import Design; Design(); "
            "print(any(m in sys.modules for m in ('scipy.interpolate', 'numba', 'scipy.linalg')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True, timeout=60)
    assert out.stdout.strip() == "False"


def test_refined_points_are_reused_and_equal_a_fresh_computation():
    """A transfer curve asked again (another page, same settings) takes the points its
    refinement added from the simulator instead of solving them again, and equals bit for
    bit the curve of a fresh simulator; the refinement points stay out of the cache of
    solved points, so that later sweeps follow the same continuation path (stated
    invariant of the API, checked by counting the Poisson solves; no source)."""
    vg = np.linspace(-0.2, 0.5, 15)
    sim = Simulator()
    first = sim.transfer_curve(Design(), vg, 0.3)
    added = first.vg_refined_V.size - vg.size
    assert added > 0  # the default design's curve is refined
    assert sim.cache_info().entries == vg.size  # refinement points are not stored
    solves = []
    solve = sim._electrostatics
    sim._electrostatics = lambda *a: solves.append(a[1]) or solve(*a)
    again = sim.transfer_curve(Design(), vg, 0.3)
    assert solves == []
    assert sim.cache_info().entries == vg.size
    fresh = Simulator().transfer_curve(Design(), vg, 0.3)
    for got in (first, again):
        for name in ("vg_V", "id_uA_per_um", "btbt_uA_per_um", "thermionic_uA_per_um",
                     "ss_mV_per_dec", "vg_refined_V", "id_refined_uA_per_um"):
            np.testing.assert_array_equal(getattr(got, name), getattr(fresh, name))
        assert got.metrics.to_dict() == fresh.metrics.to_dict()
    # other figure-of-merit settings refine afresh (their points are solved)
    sim.transfer_curve(Design(), vg, 0.3, ioff_target_uA_per_um=1e-4)
    assert solves
