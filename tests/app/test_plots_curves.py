"""The live curve plots' display rules (no browser): the current axis floor, the swing
plot's rising branch without a spike at the current minimum, and one metrics row for an
n+ source design (it is its own twin). Curves here are synthetic (a V-shaped ambipolar
current, made up for the test); the swing is its definition, SS = dVg / dlog10(Id)
(Sze & Ng, Physics of Semiconductor Devices, 3rd ed., sec. 6.2.4)."""

from __future__ import annotations

import numpy as np

from sub60.app.messages import MessageBoard
from sub60.app.plot_style import ID_FLOOR_UA_PER_UM
from sub60.app.plots import ExplorerFigures
from sub60.app.results_view import ResultsView
from sub60.app.state import ExplorerState


def _v_shaped(vg: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """log10 Id falls 8 decades/V left of 0 V and rises 10 decades/V right of it (made
    up); SS [mV/dec] from centred differences, as the physics computes it."""
    log_id = np.where(vg < 0.0, -8.0 * vg, 10.0 * vg) - 6.0
    ss = 1e3 / np.gradient(log_id, vg)
    return 10.0 ** log_id, ss


def test_transfer_axis_stops_at_the_floor():
    figs = ExplorerFigures()
    vg = np.linspace(-0.4, 0.6, 41)
    ids = np.logspace(-55, 1, 41)  # a deep off state, 1e-55 uA/um
    figs.show_transfer("tfet", vg, ids)
    assert figs.transfer.y_range.start == ID_FLOOR_UA_PER_UM / 2
    figs.show_transfer("tfet", vg, np.logspace(-6, 1, 41))  # above the floor: its own low
    assert figs.transfer.y_range.start == 1e-6 / 2


def test_swing_plot_keeps_the_rising_branch_without_a_spike():
    figs = ExplorerFigures()
    vg = np.linspace(-0.4, 0.6, 41)
    ids, ss = _v_shaped(vg)
    figs.show_transfer("tfet", vg, ids, ss=ss)
    data = figs.swing_sources["tfet"].data
    vg_min = vg[np.argmin(ids)]
    assert len(data["vg"]) > 0 and np.all(np.asarray(data["vg"]) > vg_min)
    shown = np.asarray(data["ss"], float)
    top = figs.swing.y_range.end
    assert np.all(np.isnan(shown) | (shown <= top)), shown
    # the rising branch (100 mV/dec) is drawn where it is defined
    np.testing.assert_allclose(shown[np.isfinite(shown)][1:-1], 100.0, rtol=1e-9)


def test_an_n_source_design_has_one_metrics_row():
    state = ExplorerState(source_type="n")
    view = ResultsView(state, MessageBoard(), [])
    view.show_metrics(stale=True)
    html = view.metrics.object
    assert 'data-device="tfet"' in html and 'data-device="twin"' not in html
    state.source_type = "p"
    view.show_metrics(stale=True)
    assert 'data-device="twin"' in view.metrics.object


def test_an_ideal_design_sends_nothing_to_its_empty_overlays():
    """Every assignment of a source's data is a message to the page and a repaint of its
    plot. An ideal design (no tails, no ideal-curve overlay) clears the overlay after
    each transfer curve and draws tails at each bias point: once empty, those sources
    are left alone (common practice, no source: send only what changed)."""
    from types import SimpleNamespace

    from sub60.physics import Design

    figs = ExplorerFigures()
    overlay = figs.nonideal
    sources = (overlay.transfer_source, overlay.swing_source, overlay.tail_source,
               overlay.source_tail_source)
    from bokeh.document import Document

    doc = Document()  # what a page's document sends: its change events
    for fig in (figs.band, figs.transfer, figs.swing_plot.figure):
        doc.add_root(fig)
    names = {src.name for src in sources}
    sent: list[str] = []
    doc.on_change(lambda event: sent.append(event.model.name)
                  if getattr(event, "model", None) is not None and event.model.name in names
                  else None)
    x = np.linspace(0.0, 60.0, 7)
    bp = SimpleNamespace(design=Design(), x_nm=x, subband_ec_eV=np.full(7, 0.5),
                         subband_ev_eV=np.full(7, -0.5))
    for _ in range(3):
        overlay.clear()
        overlay.show_tails(bp)
    assert sent == []
    # a curve drawn there is cleared once, and tails of a design with tails are drawn
    figs.show_transfer("ideal", x / 100, np.logspace(-6, 0, 7), None, None, np.full(7, 60.0))
    sent.clear()
    overlay.clear()
    overlay.clear()
    assert sent == ["transfer_ideal_source", "swing_ideal_source"]
    tails = SimpleNamespace(**{**vars(bp), "design": Design(tail_energy_channel_meV=20.0)})
    sent.clear()
    overlay.show_tails(tails)
    overlay.show_tails(bp)
    overlay.show_tails(bp)
    assert sent == ["tail_channel_source", "tail_channel_source"]


def test_pinned_slots_are_made_when_first_drawn():
    """A page opens without the pinned designs' lines (app invariant, no source): slot k's
    source, lines and legend entries appear when it is first drawn, the legends list the
    slots in slot order, and emptying a slot never drawn changes nothing."""
    from types import SimpleNamespace

    f = ExplorerFigures()

    def names() -> set[str]:
        return {m.name for fig in (f.band, f.transfer) for m in fig.references() if m.name}

    assert not {n for n in names() if n.startswith(("pin_band_source", "pin_transfer"))
                and "legend" not in n}
    f.pins.clear(5)  # never drawn
    vg = np.linspace(0.0, 0.4, 5)
    curve = SimpleNamespace(vg_V=vg, id_uA_per_um=10.0 ** (vg * 10 - 6), ss_mV_per_dec=vg * 0 + 50)
    for slot, name in ((2, "B"), (0, "A")):
        f.pins.show(slot, name, curve=curve)
    made = names()
    for k in (0, 2):
        assert {f"pin_band_source_{k}", f"pin_transfer_source_{k}", f"pin_band_ec_{k}",
                f"pin_band_ev_{k}", f"pin_transfer_{k}"} <= made
    assert "pin_band_source_1" not in made
    legend = f.pins.pin_legends["transfer"]
    assert legend.visible and [i.label.value for i in legend.items] == ["A", "B"]
    assert f.pins.pin_transfer_sources[2].data["name"] == ["B"] * 5
    f.pins.clear(2)
    f.pins.clear(0)
    assert not legend.visible
