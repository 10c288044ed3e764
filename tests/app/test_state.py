"""Unit tests of the explorer state and of the page it drives (no browser, no server).

The reference for every number shown is the physics package called directly with the
same settings: the page must show exactly what `physics.simulate.Simulator` computes.
Explorer(background=False) runs each computation at once in the test's thread.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
import scipy.constants as sc

from sub60.app.layout import CAUTION, Explorer
from sub60.app.messages import CAUTION_SHORT
from sub60.app.plots import format_current, metrics_html, uniform_map, window_outline
from sub60.app.server import allowed_origins, is_loopback, loopback_warning
from sub60.app.state import (
    COMPUTED_PARAMETERS,
    DESIGN_PARAMETERS,
    ExplorerState,
    label_of,
)
from sub60.physics.design import FIELD_RANGES, VD_RANGE_V, VG_RANGE_V, Design
from sub60.physics.metrics import figures_of_merit
from sub60.physics.poisson import SolverError
from sub60.physics.simulate import Simulator

VG_SWEEP = np.linspace(-0.4, 0.6, 41)  # default sweep of the state [V]


@pytest.fixture(scope="module")
def explorer() -> Explorer:
    """One synchronous explorer shared by the tests that only read it at defaults."""
    e = Explorer(background=False)
    e.panel()
    return e


def _fresh(points: int = 11) -> Explorer:
    """A synchronous explorer; short transfer sweeps unless a test compares them."""
    e = Explorer(ExplorerState(vg_points=points), background=False)
    e.panel()
    return e


# ------------------------------------------------------------------ the state class
def test_default_state_is_the_default_design():
    assert ExplorerState().design() == Design()


def test_parameter_bounds_are_the_design_field_ranges():
    st = ExplorerState()
    for name in DESIGN_PARAMETERS:
        p = st.param[name]
        assert p.doc and p.label, name
        if name in FIELD_RANGES and FIELD_RANGES[name].low is not None:
            spec = FIELD_RANGES[name]
            assert p.bounds == (spec.low, spec.high), name
    for name, field in (("source_doping_log10_cm3", "source_doping_cm3"),
                        ("drain_doping_log10_cm3", "drain_doping_cm3")):
        spec = FIELD_RANGES[field]
        assert st.param[name].bounds == pytest.approx((math.log10(spec.low),
                                                       math.log10(spec.high)))
    assert 10 ** st.param["channel_doping_log10_cm3"].bounds[1] == pytest.approx(
        FIELD_RANGES["channel_doping_cm3"].high)
    assert st.param["vg_V"].bounds == VG_RANGE_V
    assert st.param["vd_V"].bounds == VD_RANGE_V


def test_labels_name_quantity_and_unit():
    st = ExplorerState()
    for name in COMPUTED_PARAMETERS:
        label = st.param[name].label
        assert label[0].isupper() and " " in label, label
        if name.endswith(("_nm", "_V", "_K", "_eV", "_cm3", "_nm_per_dec")):
            assert "(" in label and ")" in label, label
    assert st.param["vg_V"].label == "Gate voltage (V)"
    assert st.param["body_thickness_nm"].label == "Body thickness (nm)"


def test_log_doping_settings_give_the_design_doping():
    st = ExplorerState()
    st.param.update(source_doping_log10_cm3=math.log10(2e19), channel_dopant="p",
                    channel_doping_log10_cm3=17.0, drain_doping_log10_cm3=math.log10(5e18))
    d = st.design()
    assert d.source_doping_cm3 == 2e19
    assert d.channel_doping_cm3 == -1e17
    assert d.drain_doping_cm3 == 5e18
    # and back: the settings of a design reproduce it
    st2 = ExplorerState()
    st2.set_design(d)
    assert st2.design() == d


def test_custom_permittivity_only_with_a_custom_dielectric():
    st = ExplorerState(oxide_permittivity=30.0)
    assert st.design().oxide_permittivity is None
    st.oxide = "custom"
    assert st.design().oxide_permittivity == 30.0


def test_reset_restores_every_default():
    st = ExplorerState()
    st.param.update(body_thickness_nm=12.0, vg_V=0.5, material="GaSb", vg_points=21,
                    oxide="custom")
    st.reset()
    assert st.design() == Design()
    assert (st.vg_V, st.vg_points) == (0.3, 41)


def test_output_gate_voltages_end_at_the_present_gate_voltage():
    st = ExplorerState(vg_V=0.45)
    np.testing.assert_allclose(st.output_gate_voltages(), [0.15, 0.25, 0.35, 0.45])
    st.vg_V = VG_RANGE_V[0] + 0.05  # fewer curves near the bottom of the range
    assert st.output_gate_voltages().size == 1
    vd = ExplorerState(vd_V=0.85).output_drain_voltages()
    assert vd[0] == 0.0 and vd[-1] >= 0.85


def test_label_of_design_fields():
    assert label_of("body_thickness_nm") == "Body thickness (nm)"
    assert label_of("source_doping_cm3") == "Source doping (cm⁻³)"
    assert label_of("vg_V") == "Gate voltage (V)"


# ------------------------------------------------------------------ page == physics
def test_band_plot_holds_the_physics_bias_point():
    e = _fresh()
    e.state.vg_V = 0.45
    bp = Simulator().solve_bias(Design(), 0.45, 0.3)
    data = e.figures.band_source.data
    np.testing.assert_array_equal(data["x_nm"], bp.x_nm)
    # 1e-6 eV: the Newton tolerance is 1e-8 V; warm starts differ from a fresh solve
    np.testing.assert_allclose(data["ec_eV"], bp.subband_ec_eV, rtol=0, atol=1e-6)
    np.testing.assert_allclose(data["ev_eV"], bp.subband_ev_eV, rtol=0, atol=1e-6)
    for label, edge in zip(bp.conduction_labels, bp.conduction_eV, strict=True):
        np.testing.assert_allclose(data[label], edge, rtol=0, atol=1e-6)
    spec = e.figures.spectrum_source.data
    np.testing.assert_allclose(spec["j"], bp.spectrum.current_density, rtol=1e-5,
                               atol=1e-6 * np.max(np.abs(bp.spectrum.current_density)))
    win = e.figures.window_source.data
    assert bp.window_eV is not None
    assert win["e_min"][0] == pytest.approx(bp.window_eV[0], abs=1e-6)
    assert win["e_max"][0] == pytest.approx(bp.window_eV[1], abs=1e-6)
    fermi = e.figures.fermi_source.data
    assert list(fermi["y"]) == pytest.approx([0.0, -0.3])
    marker = e.figures.vg_marker_source.data
    assert marker["vg"][0] == 0.45
    assert marker["id"][0] == pytest.approx(bp.current_uA_per_um, rel=1e-5)


def test_design_change_recomputes_transfer_curves_and_metrics_as_physics():
    e = _fresh(points=41)
    e.state.body_thickness_nm = 9.0
    design = Design(body_thickness_nm=9.0)
    sim = Simulator()
    for key, device in (("tfet", design), ("twin", design.twin())):
        tc = sim.transfer_curve(device, VG_SWEEP, 0.3, ioff_target_uA_per_um=1e-3, vdd_V=0.3)
        data = e.figures.transfer_sources[key].data
        np.testing.assert_allclose(data["vg"], VG_SWEEP)
        np.testing.assert_allclose(data["id"], tc.id_uA_per_um, rtol=1e-5)
        shown = e.jobs.curves[key].metrics
        for name in tc.metrics.METRIC_NAMES:
            want, got = getattr(tc.metrics, name).value, getattr(shown, name).value
            assert (want is None) == (got is None), name
            if want is not None:
                assert got == pytest.approx(want, rel=1e-4, abs=1e-12), name
        shown_html = re.search(f'data-device="{key}" data-metric="ss_min_mV_per_dec" '
                               'data-value="([^"]+)"', e.metrics.object)
        assert float(shown_html.group(1)) == pytest.approx(tc.metrics.ss_min_mV_per_dec.value,
                                                           rel=1e-4)
    assert e.figures.map_source.data["dh"][0] == pytest.approx(2 + 9 + 2)
    assert len(e.figures.output_sources[0].data["vd"]) > 0


def test_thermionic_limit_line_has_the_ln10_kT_over_q_slope():
    e = _fresh()
    for temperature in (300.0, 400.0):
        e.state.temperature_K = temperature
        vg, ids = (np.asarray(e.figures.limit_source.data[k], float) for k in ("vg", "id"))
        slope_mV_per_dec = 1e3 * (vg[1] - vg[0]) / math.log10(ids[1] / ids[0])
        # (ln 10) k T / q from scipy.constants (CODATA), independent of physics.metrics
        expected = math.log(10) * sc.k * temperature / sc.e * 1e3
        assert slope_mV_per_dec == pytest.approx(expected, rel=1e-9)
        assert e.figures.swing_limit.location == pytest.approx(expected, rel=1e-9)
    assert "thermionic limit" in e.figures.limit_item.label["value"]


def test_solver_failure_names_the_setting_and_keeps_the_last_plot(monkeypatch):
    e = _fresh()
    before = np.array(e.figures.band_source.data["ec_eV"], copy=True)

    def fail(*_args, **_kw):
        raise SolverError("electrostatics at Vg = 0.5 V, Vd = 0.3 V: no convergence", [1.0, 0.5])

    monkeypatch.setattr(e.simulator, "solve_bias", fail)
    monkeypatch.setattr(e.simulator, "transfer_curve", fail)
    e.state.vg_V = 0.5
    assert e.alert.visible
    assert "Gate voltage (V)" in e.error_text and "did not converge" in e.error_text
    np.testing.assert_array_equal(e.figures.band_source.data["ec_eV"], before)
    monkeypatch.undo()
    e.state.vg_V = 0.31  # a good solve clears the message
    assert not e.alert.visible


def test_invalid_value_message_names_the_setting(monkeypatch):
    e = _fresh()

    def bad(*_args, **_kw):
        raise ValueError("body_thickness_nm: 1 outside the allowed range [2, 30]")

    monkeypatch.setattr(e.simulator, "solve_bias", bad)
    e.state.vg_V = 0.33
    assert "Body thickness (nm)" in e.error_text and "[2, 30]" in e.error_text


def test_indirect_gap_material_shows_a_warning(explorer):
    e = _fresh()
    assert not e.material_warning.visible
    e.state.material = "Si"
    assert e.material_warning.visible and "indirect" in e.material_warning.object


def test_presentation_mode_hides_controls_and_leaves_the_figures_alone(explorer):
    """The controls hide and the header, metrics and status text grow through one css
    class of the page (its stylesheet sets what the panes below read); no other model
    changes, no figure property among them (each model whose classes or size change made
    the browser lay the whole page out again)."""
    e = _fresh()
    f = e.figures
    before = {k: (fig.frame_width, fig.frame_height, fig.height, fig.sizing_mode,
                  dict(fig.styles), fig.title.text_font_size)
              for k, fig in f.figures.items()}
    classes = {id(o): list(o.css_classes) for o in e._page.select()
               if hasattr(o, "css_classes") and o is not e._page}
    e.state.presentation = True
    assert e.presenting  # the page's class hides the sidebar (its stylesheet)
    assert "presenting" in e._page.css_classes
    assert {id(o): list(o.css_classes) for o in e._page.select()
            if hasattr(o, "css_classes") and o is not e._page} == classes
    assert {k: (fig.frame_width, fig.frame_height, fig.height, fig.sizing_mode,
                dict(fig.styles), fig.title.text_font_size)
            for k, fig in f.figures.items()} == before
    e.state.presentation = False
    assert not e.presenting and "presenting" not in e._page.css_classes


def test_caution_and_metrics_are_in_the_page(explorer):
    assert "not calibrated TCAD" in CAUTION
    assert CAUTION in explorer.header.object
    # its one-line form, shown instead in presentation (style.css), says the same at the end
    assert CAUTION_SHORT.endswith("not calibrated TCAD.") and CAUTION_SHORT in explorer.header.object
    assert "SS<sub>min</sub>" in explorer.metrics.object


def test_sessions_own_their_state():
    a, b = _fresh(), _fresh()
    assert a.jobs is not b.jobs and a.figures.band is not b.figures.band
    a.state.vd_V = 0.4
    assert b.state.vd_V == 0.3
    assert list(b.figures.fermi_source.data["y"]) == pytest.approx([0.0, -0.3])


# ------------------------------------------------------------------ display helpers
def test_window_outline_of_a_uniform_field_has_width_gap_over_field():
    """Linear bands E_c = c - F x, E_v = E_c - E_g: the classical forbidden stretch at
    any energy is E_g / F long (elementary geometry of parallel lines)."""
    x = np.linspace(0.0, 50.0, 2001)
    field, gap = 0.02, 0.36  # [eV/nm], [eV]
    ec = 0.5 - field * x
    ev = ec - gap
    xs, ys = window_outline(x, ec, ev, (-0.3, 0.0))
    n = len(xs) // 2
    width = np.asarray(xs[n:][::-1]) - np.asarray(xs[:n])
    np.testing.assert_allclose(width, gap / field, rtol=1e-9)
    assert min(ys) > -0.3 and max(ys) < 0.0
    assert window_outline(x, ec, ev, None) == ([], [])


def test_uniform_map_reproduces_a_bilinear_field():
    """Bilinear interpolation is exact for f = a + b x + c y + d x y."""
    x = np.array([0.0, 0.3, 1.0, 2.5, 4.0])
    y = np.array([0.0, 0.1, 0.5, 2.0])
    xx, yy = np.meshgrid(x, y, indexing="ij")
    f = lambda X, Y: 1.0 + 2.0 * X - 0.5 * Y + 0.25 * X * Y  # noqa: E731
    xu, yu, image = uniform_map(x, y, f(xx, yy), nx=9, ny=7)
    assert image.shape == (7, 9)
    np.testing.assert_allclose(np.diff(xu), np.diff(xu)[0])
    ref = f(*np.meshgrid(xu, yu, indexing="xy"))
    np.testing.assert_allclose(image, ref, rtol=1e-12, atol=1e-12)


def test_missing_metric_shows_its_reason():
    vg = np.linspace(0.0, 0.6, 31)
    ids = 1e-6 * 10 ** (vg / 0.1)  # 100 mV/dec everywhere: never below the limit
    m = figures_of_merit(vg, ids, 300.0, 1e-3, 0.3)
    assert m.i60_uA_per_um.value is None
    page = metrics_html([("tfet", "Tunnel FET", m)], 300.0, 0.3)
    assert m.i60_uA_per_um.reason.split(" (")[0] in page
    assert 'data-metric="i60_uA_per_um" data-value=""' in page
    assert 'data-metric="ss_min_mV_per_dec" data-value="100' in page
    assert "Carrier charge" not in page  # no models line unless given


def test_metrics_strip_names_the_models_in_use():
    from sub60.app.metrics_strip import models_text

    vg = np.linspace(0.0, 0.6, 31)
    m = figures_of_merit(vg, 1e-6 * 10 ** (vg / 0.1), 300.0, 1e-3, 0.3)
    for charge in ("semiclassical", "subbands"):
        page = metrics_html([("tfet", "Tunnel FET", m)], 300.0, 0.3,
                            models_text(charge, "two-band"))
        assert f"Carrier charge: {charge} (" in page and "Tunnelling: two-band." in page


def test_current_format_picks_a_readable_unit():
    assert format_current(1e-3) == "1 nA/µm"
    assert format_current(2.5e-5) == "25 pA/µm"
    assert format_current(88.3) == "88.3 µA/µm"


# ------------------------------------------------------------------ server settings
def test_loopback_detection_and_origins():
    # address classes of RFC 5735 / RFC 4291 (127.0.0.0/8 and ::1 are loopback)
    assert is_loopback("127.0.0.1") and is_loopback("::1") and is_loopback("localhost")
    assert is_loopback("127.1.2.3")
    assert not is_loopback("0.0.0.0") and not is_loopback("192.168.1.20")
    assert allowed_origins("127.0.0.1", 5006) == ["127.0.0.1:5006", "localhost:5006"]
    assert allowed_origins("10.0.0.5", 7000) == ["10.0.0.5:7000"]
    assert loopback_warning("127.0.0.1", 5006) is None
    assert "not a loopback" in loopback_warning("0.0.0.0", 5006)


def test_sessions_share_no_bokeh_model():
    """A Bokeh model belongs to one document: two pages rendered into two documents
    must not hold a single model in common (slider formatters included)."""
    from bokeh.document import Document

    roots = []
    for e in (_fresh(), _fresh()):
        for card in e.controls.cards:  # cards that start collapsed get controls when opened
            card.collapsed = False
        doc = Document()
        root = e.__panel__().get_root(doc)
        doc.add_root(root)
        roots.append({m.id: m for m in doc.models})
    shared = set(roots[0]) & set(roots[1])
    assert not shared, sorted(type(roots[0][i]).__name__ for i in shared)
    formats = [{m.id for m in r.values() if type(m).__name__ == "CustomJSTickFormatter"}
               for r in roots]
    # Ioff and three dopings in the sidebar, the what-if bar's doping entry: one per page
    assert len(formats[0]) == len(formats[1]) == 5


def test_design_message_goes_when_the_combination_is_fixed():
    """The design's own rule (physics.design): the gate starts at least 1 nm inside the
    source, source_length_nm - gate_source_offset_nm >= 1."""
    e = _fresh()
    e.state.param.update(source_length_nm=5.0, gate_source_offset_nm=4.5)
    assert e.alert.visible and "Gate–source overlap" in e.error_text
    assert e.snapshots.download.disabled and e.pin_view.compare.button.disabled
    e.state.gate_source_offset_nm = 0.0
    assert not e.alert.visible and e.error_text == ""
    assert not e.snapshots.download.disabled and not e.pin_view.compare.button.disabled
    assert e.figures.map_source.data["dw"][0] > 0  # the plots follow the fixed design


def test_enable_rules_follow_the_state():
    e = _fresh()
    permittivity, box = (e.widgets[n] for n in ("oxide_permittivity",
                                                 "buried_oxide_thickness_nm"))
    assert permittivity.disabled and box.disabled
    e.state.param.update(oxide="custom", gate_layout="single")
    assert e.state.custom_permittivity_enabled and e.state.buried_oxide_enabled
    assert not permittivity.disabled and not box.disabled
    e.state.reset()
    assert permittivity.disabled and box.disabled
    with pytest.raises(TypeError):  # derived: set by the state's rules only
        e.state.buried_oxide_enabled = True


def test_collapsed_cards_make_their_controls_when_first_opened():
    """A page opens without the Panel widgets of its collapsed cards (stated rule of
    `app.controls.folded_card`); opened, a card's controls show the settings as they are
    then (changed meanwhile by a file, a link or the what-if bar), with their enable rules
    and labels, and they edit the state like the others (app invariant; no source)."""
    e = _fresh()
    cards = {c.title: c for c in e.controls.cards}
    assert "temperature_K" not in e.widgets and "oxide_thickness_nm" not in e.widgets
    assert "source_doping_log10_cm3" not in e.controls.entries
    assert "vg_V" in e.widgets and "body_thickness_nm" in e.widgets  # open cards
    e.state.param.update(temperature_K=250.0, material="InGaAs", oxide="custom")
    for title in ("Material and temperature", "Gate stack", "Doping", "Non-idealities"):
        assert len(cards[title].objects) == 0
        cards[title].collapsed = False
        assert len(cards[title].objects) > 0
    temperature = e.widgets["temperature_K"]
    assert temperature.value == 250.0
    assert not e.widgets["oxide_permittivity"].disabled  # custom oxide: enabled
    assert not e.widgets["composition_x"].disabled  # an alloy body
    assert e.widgets["composition_x"].name == e.state.composition_text
    temperature.value = 280.0
    assert e.state.temperature_K == 280.0
    e.controls.entries["source_doping_log10_cm3"].box.value = "2e19"
    assert e.state.source_doping_log10_cm3 == pytest.approx(math.log10(2e19))
    e.state.oxide = "SiO2"
    assert e.widgets["oxide_permittivity"].disabled


def test_page_document_passes_bokeh_integrity_checks():
    """The served explorer skips Bokeh's per-page integrity checks (`app.server.configure`),
    so they run here on a whole page (every card opened, a pinned design drawn): no
    error, and no warning but the empty placeholders of views made when first opened
    (Bokeh's own `check_integrity`)."""
    from bokeh.core.validation.check import check_integrity
    from bokeh.document import Document

    e = _fresh()
    for card in e.controls.cards:
        card.collapsed = False
    assert e.pin_present("A") is not None
    doc = Document()
    doc.add_root(e.__panel__().get_root(doc))
    issues = check_integrity(set(doc.models))
    assert issues.error == []
    assert {w.name for w in issues.warning} <= {"EMPTY_LAYOUT"}
