"""Snapshot export -> import, figures, the offline page, the command line and presets.

External references of the checks:

- PNG: ISO/IEC 15948 (W3C PNG spec) section 5.2 signature 89 50 4E 47 0D 0A 1A 0A and
  section 11.2.2 IHDR — width and height are the first two 4-byte big-endian integers
  of the first chunk (section numbers from memory); read independently with
  matplotlib.image as well.
- SVG is XML in the namespace http://www.w3.org/2000/svg (W3C SVG 1.1).
- Thermionic limit (ln 10) kT/q from scipy.constants (CODATA), at 300 K 59.5 mV/dec.
- EOT = t_ox * 3.9 / eps_ox with eps(SiO2) = 3.9 (Sze & Ng, Physics of Semiconductor
  Devices, 3rd ed., appendix of properties, from memory).
- Recomputed figures of merit are compared with the physics API called directly
  (physics.simulate.Simulator), not through the snapshot code, to relative 1e-9 (the
  tolerance of the snapshot format; engineering choice, no source).
"""

from __future__ import annotations

import csv
import io
import json
import math
import re
import struct
import xml.etree.ElementTree as ET
import zipfile

import numpy as np
import pytest
from scipy import constants

from sub60.app import figures
from sub60.app.cli import main
from sub60.app.presets import list_presets, load_preset
from sub60.app.snapshot_bundle import export_snapshot
from sub60.app.snapshot_check import METRIC_REL_TOL, verify_snapshot
from sub60.app.snapshot_fields import SnapshotError
from sub60.app.snapshot_reader import import_snapshot
from sub60.app.snapshot_schema import (
    MODEL_CAUTION,
    OutputSweep,
    PinnedDesign,
    SnapshotSettings,
    TransferSweep,
)
from sub60.physics.design import Design
from sub60.physics.metrics import Metrics
from sub60.physics.simulate import Simulator

CREATED = "2024-05-01T12:00:00Z"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def small_settings() -> SnapshotSettings:
    """A quick view: 21-point sweeps, two output curves, one pinned design."""
    return SnapshotSettings(
        transfer_sweep=TransferSweep(-0.3, 0.5, 21, 0.3),
        output_sweep=OutputSweep((0.2, 0.3), 0.0, 0.4, 5),
        pinned=(PinnedDesign("thin oxide", Design(oxide_thickness_nm=1.5),
                             TransferSweep(-0.2, 0.5, 15, 0.3)),),
        title="round trip")


@pytest.fixture(scope="module")
def exported() -> tuple[SnapshotSettings, bytes]:
    s = small_settings()
    return s, export_snapshot(s, created_utc=CREATED)


def members(data: bytes) -> dict[str, bytes]:
    with zipfile.ZipFile(io.BytesIO(data)) as zf:
        return {i.filename: zf.read(i) for i in zf.infolist()}


def png_size(data: bytes) -> tuple[int, int]:
    assert data[:8] == PNG_SIGNATURE
    length, kind = struct.unpack(">I4s", data[8:16])
    assert kind == b"IHDR" and length == 13
    return struct.unpack(">II", data[16:24])


# ---------------------------------------------------------------------- round trip
def test_round_trip_restores_the_same_settings(exported):
    original, data = exported
    settings, report = import_snapshot(data)
    assert settings.design == original.design
    assert settings.bias == original.bias
    assert settings.transfer_sweep == original.transfer_sweep
    assert settings.output_sweep == original.output_sweep
    assert settings.metric_settings == original.metric_settings
    assert settings.model == original.model
    assert settings.pinned == original.pinned
    assert settings.title == "round trip"
    assert settings.created_utc == CREATED
    assert report.source == "zip" and report.version_matches and report.has_stored
    # a bare settings.json (the member itself) restores the same record
    bare, bare_report = import_snapshot(members(data)["settings.json"])
    assert bare == settings and bare_report.source == "settings.json"


def test_stored_metrics_equal_a_direct_recomputation(exported):
    """Stored figures of merit == physics API on fresh simulators, relative 1e-9."""
    original, data = exported
    settings, _ = import_snapshot(data)
    ms, sw = settings.metric_settings, settings.transfer_sweep
    kw = {"ioff_target_uA_per_um": ms.ioff_target_uA_per_um, "vdd_V": ms.vdd_V}
    vg = np.linspace(-0.3, 0.5, 21)  # the sweep as written in small_settings
    pin_vg = np.linspace(-0.2, 0.5, 15)
    direct = {
        "design": Simulator().transfer_curve(Design(), vg, 0.3, **kw),
        "twin": Simulator().transfer_curve(Design(source_type="n"), vg, 0.3, **kw),
        "pinned": Simulator().transfer_curve(Design(oxide_thickness_nm=1.5), pin_vg, 0.3, **kw),
    }
    stored = {"design": settings.stored.design, "twin": settings.stored.twin,
              "pinned": settings.stored.pinned[0]}
    compared = 0
    for key, curve in direct.items():
        fresh = curve.metrics.to_dict()
        assert set(stored[key].metrics) == set(Metrics.METRIC_NAMES)
        for name in Metrics.METRIC_NAMES:
            a, b = stored[key].metrics[name], fresh[name]
            assert (a is None) == (b is None), (key, name, a, b)
            if a is not None:
                assert math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-12), (key, name, a, b)
                compared += 1
    assert compared >= 15  # most metrics are defined for these curves
    assert sw.vd_V == 0.3
    # and the snapshot's own verification agrees
    assert verify_snapshot(settings) == []
    _, report = import_snapshot(data, verify=True)
    assert report.metrics_match is True


def tampered(data: bytes, change) -> bytes:
    """The snapshot with its settings.json changed (other members as they were)."""
    files = members(data)
    doc = json.loads(files["settings.json"])
    change(doc)
    files["settings.json"] = json.dumps(doc).encode()
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, content in files.items():
            zf.writestr(name, content)
    return buf.getvalue()


def test_a_changed_stored_metric_is_reported(exported):
    _, data = exported
    ion = json.loads(members(data)["settings.json"])["stored"]["design"]["metrics"][
        "ion_uA_per_um"]

    def nudge(doc):  # 1e-7 relative: 100 times the tolerance
        doc["stored"]["design"]["metrics"]["ion_uA_per_um"] = ion * (1 + 100 * METRIC_REL_TOL)
        doc["stored"]["twin"]["metrics"]["voff_V"] = None

    settings, _ = import_snapshot(tampered(data, nudge))
    diffs = verify_snapshot(settings)
    found = {(d.where, d.quantity) for d in diffs}
    assert found == {("design", "ion_uA_per_um"), ("twin", "voff_V")}
    ion_diff = next(d for d in diffs if d.quantity == "ion_uA_per_um")
    assert ion_diff.relative == pytest.approx(100 * METRIC_REL_TOL, rel=1e-3)
    assert "ion_uA_per_um" in str(ion_diff) and "recomputed" in str(ion_diff)


# ---------------------------------------------------------------------- contents
EXPECTED_MEMBERS = [
    "settings.json", "README.txt", "bands.csv",
    *(f"figures/{n}.{f}" for n in ("bands", "metrics", "output", "spectrum", "swing", "transfer")
      for f in ("png", "svg")),
    "output.csv", "pinned.csv", "plots.html", "spectrum.csv", "transfer.csv",
]


def test_member_names_are_fixed(exported):
    _, data = exported
    with zipfile.ZipFile(io.BytesIO(data)) as zf:
        assert zf.namelist() == EXPECTED_MEMBERS
        assert all(i.date_time == (2024, 5, 1, 12, 0, 0) for i in zf.infolist())


def test_figures_are_png_of_the_stated_size_and_svg(exported):
    import matplotlib.image

    _, data = exported
    files = members(data)
    width, height = figures.FIGURE_SIZE_PX
    assert (width, height) == (round(8.0 * 120), round(5.0 * 120))  # 8 x 5 in at 120 dpi
    for name in figures.FIGURE_NAMES:
        png = files[f"figures/{name}.png"]
        assert len(png) > 10_000
        assert png_size(png) == (width, height)
        pixels = matplotlib.image.imread(io.BytesIO(png), format="png")
        assert pixels.shape[:2] == (height, width)
        assert np.ptp(pixels[..., :3]) > 0.5  # something is drawn, not a blank image
        root = ET.fromstring(files[f"figures/{name}.svg"])
        assert root.tag == "{http://www.w3.org/2000/svg}svg"


def test_captions_state_the_key_settings():
    d = Design()
    text = figures.caption_text(d, 0.3, 0.25, "9.9")
    eot = d.oxide_thickness_nm * 3.9 / 22.0  # HfO2 permittivity of the project's record
    for part in ("InAs", "body 7 nm", "gate length 30 nm", f"EOT {eot:.2f} nm",
                 "4e+19 cm", "Vg = 0.25 V", "Vd = 0.3 V", "T = 300 K", "not calibrated TCAD",
                 "carrier charge: semiclassical"):
        assert part in text, part
    assert "carrier charge: subbands" in figures.caption_text(
        d.replace(charge_model="subbands"), 0.3, 0.25)


def test_transfer_reference_is_the_thermionic_limit():
    """The reference line of the transfer figure has the slope (ln 10) kT/q from
    scipy.constants, and its legend says so."""
    from sub60.app.snapshot_check import compute_results

    quick = SnapshotSettings(transfer_sweep=TransferSweep(-0.3, 0.5, 9, 0.3),
                             output_sweep=OutputSweep((0.3,), 0.0, 0.3, 3))
    fig = figures.figures_of(compute_results(quick))["transfer"]
    limit = math.log(10) * constants.k * 300.0 / constants.e * 1e3  # [mV/dec]
    ax = fig.axes[0]
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any(f"{limit:.1f} mV/dec" in t for t in labels), labels
    line = next(ln for ln in ax.get_lines() if "mV/dec at 300 K" in ln.get_label()
                and ln.get_label().startswith("(ln 10)"))
    vg, current = line.get_data()
    slope_mV_per_dec = (vg[-1] - vg[0]) * 1e3 / (math.log10(current[-1]) - math.log10(current[0]))
    assert slope_mV_per_dec == pytest.approx(limit, rel=1e-9)


def test_csv_headers_carry_units_and_match_the_curves(exported):
    _, data = exported
    files = members(data)

    def read(name):
        rows = list(csv.reader(io.StringIO(files[name].decode())))
        return rows[0], rows[1:]

    head, rows = read("transfer.csv")
    assert head == ["vg_V", "design_id_uA_per_um", "design_ss_mV_per_dec", "twin_id_uA_per_um",
                    "twin_ss_mV_per_dec"]
    assert [float(r[0]) for r in rows] == pytest.approx(np.linspace(-0.3, 0.5, 21), abs=1e-12)
    head, rows = read("bands.csv")
    assert head[0] == "x_nm" and head[-2:] == ["efs_eV", "efd_eV"]
    assert "C1_eV" in head and "HH1_eV" in head and all(h.endswith(("_eV", "_nm")) for h in head)
    assert {float(r[-1]) for r in rows} == {-0.3}  # drain Fermi level = -q Vd
    head, _ = read("spectrum.csv")
    assert head == ["energy_eV", "current_density_uA_per_um_per_eV", "transmission_1"]
    head, rows = read("output.csv")
    assert head == ["vd_V", "id_uA_per_um_at_vg_0.2_V", "id_uA_per_um_at_vg_0.3_V"]
    assert len(rows) == 5 and float(rows[0][1]) == pytest.approx(0.0, abs=1e-9)  # Id(Vd=0)=0
    text = files["pinned.csv"].decode()
    assert text.startswith("# pin_1 = thin oxide\n")  # each pin named, not only numbered
    rows = list(csv.reader(io.StringIO(text.split("\n", 1)[1])))
    head, rows = rows[0], rows[1:]
    assert head == ["pin_index_1", "vg_V", "id_uA_per_um", "ss_mV_per_dec"] and len(rows) == 15


def test_readme_and_offline_page(exported):
    _, data = exported
    files = members(data)
    readme = files["README.txt"].decode()
    assert "not calibrated TCAD" in readme and MODEL_CAUTION in readme
    for name in ("settings.json", "bands.csv", "spectrum.csv", "transfer.csv", "output.csv",
                 "plots.html"):
        assert name in readme
    page = files["plots.html"].decode()
    assert not re.search(r"<script[^>]*\bsrc\s*=\s*[\"']?\s*(https?:)?//", page, re.I)
    assert not re.search(r"<link[^>]*\bhref\s*=\s*[\"']?\s*(https?:)?//", page, re.I)
    assert "Bokeh" in page and len(page) > 300_000  # the library itself is inline
    assert "round trip" in page and "not calibrated TCAD" in page


# ---------------------------------------------------------------------- command line
def test_cli_export_render_check(tmp_path, capsys):
    snap = tmp_path / "view.zip"
    rc = main(["snapshot", "export", "--set", "body_thickness_nm=6", "--vg", "0.25", "--vd", "0.3",
               "--sweep", "-0.3:0.5:11", "--output-vg", "0.3", "--out", str(snap)])
    assert rc == 0 and snap.stat().st_size > 100_000
    settings, _ = import_snapshot(snap.read_bytes())
    assert settings.design.body_thickness_nm == 6.0 and settings.bias.vg_V == 0.25
    assert settings.transfer_sweep == TransferSweep(-0.3, 0.5, 11, 0.3)
    assert main(["snapshot", "export", "--out", str(snap)]) == 2  # exists, no --force
    assert "--force" in capsys.readouterr().err

    assert main(["snapshot", "check", str(snap)]) == 0
    assert capsys.readouterr().out.strip().endswith("OK")

    out = tmp_path / "figs"
    assert main(["snapshot", "render", str(snap), "--out", str(out)]) == 0
    names = sorted(p.name for p in out.iterdir())
    assert names == sorted(f"{n}.{f}" for n in figures.FIGURE_NAMES for f in figures.FORMATS)
    assert png_size((out / "bands.png").read_bytes()) == figures.FIGURE_SIZE_PX
    assert main(["snapshot", "render", str(snap), "--out", str(out)]) == 2
    assert "exists" in capsys.readouterr().err
    assert main(["snapshot", "render", str(snap), "--out", str(out), "--force"]) == 0

    # wrong content: exit 1 and the problem named
    bad = tmp_path / "bad.zip"
    bad.write_bytes(tampered(snap.read_bytes(), lambda d: d["design"].update(gate_length_nm=1e3)))
    capsys.readouterr()
    assert main(["snapshot", "check", str(bad)]) == 1
    assert "design.gate_length_nm" in capsys.readouterr().out

    # metrics differ with the same version: 1; with another version: reported, 0
    def nudge(doc):
        doc["stored"]["design"]["metrics"]["ss_min_mV_per_dec"] *= 1.01

    off = tmp_path / "off.zip"
    off.write_bytes(tampered(snap.read_bytes(), nudge))
    assert main(["snapshot", "check", str(off)]) == 1
    text = capsys.readouterr().out
    assert "ss_min_mV_per_dec" in text and "NOT OK" in text
    old = tmp_path / "old.zip"
    old.write_bytes(tampered(snap.read_bytes(),
                             lambda d: (nudge(d), d.update(sub60_version="0.0.1"))))
    assert main(["snapshot", "check", str(old)]) == 0
    text = capsys.readouterr().out
    assert "0.0.1" in text and "ss_min_mV_per_dec" in text

    # usage errors: 2
    assert main(["snapshot", "check", str(tmp_path / "missing.zip")]) == 2
    assert main(["snapshot", "export", "--sweep", "0:1", "--out", str(tmp_path / "x.zip")]) == 2
    assert main(["snapshot", "export", "--preset", "nope", "--out", str(tmp_path / "x.zip")]) == 2
    assert not (tmp_path / "x.zip").exists()


# ---------------------------------------------------------------------- presets
PRESETS = ("broken-gap-switch", "high-on-current", "ingaas-tunnel-fet", "low-power-switch",
           "mosfet-baseline", "sige-source-tunnel-fet", "silicon-tunnel-fet", "single-gate-soi",
           "typical-process")


def test_presets_load_validate_and_solve():
    found = list_presets()
    assert sorted(found) == list(PRESETS)
    for name in PRESETS:
        s = load_preset(name)
        assert s == found[name] and s.title
        bp = Simulator().solve_bias(s.design, s.bias.vg_V, s.bias.vd_V)
        assert math.isfinite(bp.current_uA_per_um) and bp.current_uA_per_um > 0
    assert load_preset("mosfet-baseline").design.source_type == "n"
    assert load_preset("single-gate-soi").design.gate_layout == "single"
    assert load_preset("low-power-switch").design == Design()
    assert load_preset("low-power-switch").metric_settings.vdd_V == 0.3
    with pytest.raises(SnapshotError, match="unknown; known presets: broken-gap-switch"):
        load_preset("nope")


def test_high_on_current_preset_delivers_more_on_current():
    """What the preset's note promises: more Ion at the same supply and Ioff target."""
    def ion(name):
        s = load_preset(name)
        ms, sw = s.metric_settings, s.transfer_sweep
        tc = Simulator().transfer_curve(s.design, sw.gate_voltages(), sw.vd_V,
                                        ioff_target_uA_per_um=ms.ioff_target_uA_per_um,
                                        vdd_V=ms.vdd_V)
        return tc.metrics.ion_uA_per_um.value, ms

    high, ms_high = ion("high-on-current")
    low, ms_low = ion("low-power-switch")
    assert ms_high == ms_low
    assert high > 1.2 * low


def test_presets_fall_back_gracefully(monkeypatch, tmp_path):
    import sub60.app.presets as presets

    monkeypatch.setattr(presets, "PRESET_DIR", tmp_path / "absent")
    assert list_presets() == {}
    with pytest.raises(SnapshotError, match="none found"):
        load_preset("low-power-switch")
    monkeypatch.setattr(presets, "PRESET_DIR", tmp_path)
    (tmp_path / "broken.json").write_text('{"schema": "sub60.snapshot", "schema_version": 1}')
    (tmp_path / "good.json").write_text(SnapshotSettings().to_json())
    with pytest.warns(UserWarning, match="broken"):
        assert list(list_presets()) == ["good"]


@pytest.mark.browser
def test_offline_page_renders_with_the_network_blocked(exported, tmp_path, browser):
    """plots.html opened from disk in headless Chromium (the shared session browser of
    tests/app/conftest.py): every request other than the file itself is blocked and
    recorded; the six plots must appear without any."""
    page_file = tmp_path / "plots.html"
    page_file.write_bytes(members(exported[1])["plots.html"])
    requests, errors = [], []

    def route(r):
        if r.request.url.startswith("file:"):
            r.continue_()
        else:
            requests.append(r.request.url)
            r.abort()

    page = browser.new_page()
    try:
        page.route("**/*", route)
        page.on("pageerror", lambda e: errors.append(str(e)))
        page.goto(page_file.as_uri())
        page.wait_for_function("window.Bokeh && Bokeh.documents.length > 0", timeout=30000)
        titles = page.evaluate("[...Bokeh.documents[0]._all_models.values()]"
                               ".filter(m => m.type === 'Figure').map(m => m.title.text)")
    finally:
        page.close()
    assert requests == [] and errors == []
    assert len(titles) == 6 and any(t.startswith("Band diagram") for t in titles)
    assert any(t.startswith("Transmission") for t in titles)
    assert any(t.startswith("Point swing against current") for t in titles)
