"""The live page's plot style: its colour names (from `app.theme`), tools, figure and
legend styling, and the display helpers that reshape physics output for the screen (a
tunnel window outline, the drain-side window's energy range read off the band edges, a
uniform resampling of the 2D map, NaN for a log axis). They compute no physics.
"""

from __future__ import annotations

import numpy as np

from sub60.app.theme import PALETTE, PLOT_FONTS

# The page's names for the palette entries of `app.theme.PALETTE` (no new colours).
COLOURS: dict[str, str] = {
    "conduction": PALETTE["conduction"][0],
    "conduction_2": PALETTE["conduction"][1],
    "valence": PALETTE["valence"][0],
    "valence_2": PALETTE["valence"][1],
    "valence_3": PALETTE["valence"][2],
    "fermi": PALETTE["fermi"],
    "window": PALETTE["window"],
    "window_line": PALETTE["window_line"],
    "window_text": PALETTE["window_text"],
    "gate": PALETTE["gate"],
    "tfet": PALETTE["design"],
    "twin": PALETTE["twin"],
    "transmission": PALETTE["transmission"],
    "transmission_exact": PALETTE["transmission_exact"],
    "limit": PALETTE["limit"],
    "marker": PALETTE["marker"],
    "text": PALETTE["text"],
    "muted_text": PALETTE["muted_text"],
    "reference": "#6f7a85",  # the reference band diagram: a quiet grey
    "grid": PALETTE["grid"],
    "target": PALETTE["target"],
    "target_text": PALETTE["target_text"],
    "gate_bar": PALETTE["gate_bar"],
    "frame": PALETTE["frame"],
    "measured": PALETTE["measured"],
}
TOOLS = "pan,box_zoom,wheel_zoom,reset,save"
#: Lowest drain current the current axes reach [uA/um]: two decades below the lowest Ioff
#: target offered (1e-8 uA/um); currents below it (down to 1e-55 in deep off states) are
#: far below any measurable leakage and would squeeze the curves (engineering choice,
#: no source).
ID_FLOOR_UA_PER_UM = 1e-10
T_FLOOR = 1e-30  # transmissions below this are drawn as gaps on the log axis [-]


def style_figure(fig) -> None:
    """The page's look of one Bokeh figure: toolbar, fonts, colours, grid."""
    fig.toolbar.autohide = True
    fig.toolbar.logo = None
    fig.title.text_font_size = PLOT_FONTS["title"]
    fig.title.text_color = COLOURS["text"]
    fig.title.text_font_style = "bold"
    fig.background_fill_color = "#ffffff"
    fig.border_fill_color = "#ffffff"
    fig.outline_line_color = COLOURS["frame"]
    for axis in (*fig.xaxis, *fig.yaxis):
        axis.axis_label_text_font_size = PLOT_FONTS["axis_label"]
        axis.axis_label_text_font_style = "normal"
        axis.axis_label_text_color = COLOURS["text"]
        axis.major_label_text_font_size = PLOT_FONTS["tick"]
    fig.xgrid.grid_line_color = COLOURS["grid"]
    fig.ygrid.grid_line_color = COLOURS["grid"]


def slim_renderers(fig) -> None:
    """Let the browser derive the unselected and muted looks of every glyph ("auto")
    instead of sending two extra copies of each glyph: the page never selects or mutes
    curves (legends hide them), and a page holds over a hundred lines."""
    for r in fig.renderers:
        if hasattr(r, "nonselection_glyph"):
            r.nonselection_glyph = "auto"
            r.muted_glyph = "auto"


def style_legend(fig, location: str = "top_right", side: str | None = None,
                 columns: int = 3) -> None:
    """Place and style a figure's first legend (click to hide a curve).

    With ``side`` ('above', 'below', 'left', 'right') the legend leaves the plot area for
    that side panel (in ``columns`` columns above or below), so it never covers a curve;
    otherwise it sits inside at ``location``.
    """
    if not fig.legend:
        return
    leg = fig.legend[0]
    if side is not None:
        fig.center = [m for m in fig.center if m is not leg]
        leg.location = "top_left" if side in ("above", "below") else "top_center"
        if side in ("above", "below"):
            leg.orientation = "horizontal"
            leg.ncols = columns
            leg.spacing = 8
        fig.add_layout(leg, side)
    else:
        leg.location = location
    leg.click_policy = "hide"
    leg.background_fill_alpha = 0.75
    leg.label_text_font_size = PLOT_FONTS["legend"]
    if side is None:
        leg.spacing = 0
    leg.padding = 4
    leg.margin = 4
    leg.glyph_width = 18


# ---------------------------------------------------------------------- display helpers
def window_outline(x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray,
                   window_eV: tuple[float, float] | None, n: int = 32
                   ) -> tuple[list[float], list[float]]:
    """Outline of the tunnel window in the band diagram [nm], [eV].

    For each energy of the window, the region runs from the valence-side turning point
    (where the valence edge falls below the energy) to the conduction-side turning point
    (where the conduction edge first reaches it): the forbidden stretch an electron
    crosses. Empty lists when the window is closed.
    """
    if window_eV is None:
        return [], []
    e_lo, e_hi = window_eV
    pad = 1e-6 * max(e_hi - e_lo, 1e-9)
    left: list[tuple[float, float]] = []
    right: list[tuple[float, float]] = []
    for e in np.linspace(e_lo + pad, e_hi - pad, n):
        below = np.flatnonzero(ec_eV <= e)
        if below.size == 0 or below[0] == 0:
            continue
        i = below[0]
        x_c = _crossing(x_nm[i - 1], x_nm[i], ec_eV[i - 1], ec_eV[i], e)
        above = np.flatnonzero(ev_eV[:i] >= e)
        if above.size == 0:
            continue
        j = above[-1]
        x_v = x_nm[j] if j + 1 >= x_nm.size else _crossing(x_nm[j], x_nm[j + 1], ev_eV[j],
                                                            ev_eV[j + 1], e)
        if x_c > x_v:
            left.append((x_v, e))
            right.append((x_c, e))
    if len(left) < 2:
        return [], []
    pts = left + right[::-1]
    return [float(p[0]) for p in pts], [float(p[1]) for p in pts]


def drain_side_window(x_nm: np.ndarray, conduction_eV: np.ndarray, valence_eV: np.ndarray,
                      channel: tuple[float, float], drain_start_nm: float, efs_eV: float,
                      efd_eV: float) -> tuple[float, float] | None:
    """Energy range of the drain-side (ambipolar) tunnel window [eV]; None when closed.

    The mirror of the source-side window of `physics.transport.tunnel_window`: filled
    channel valence states (fed by the source) face empty drain conduction states, inside
    the Fermi window (band-to-band tunnelling at a reverse-biased junction, Sze & Ng,
    *Physics of Semiconductor Devices*, 3rd ed., sec. 2.4; the same window bounds the
    energies of `physics.transport.energy_grid`):

    e_max = min(highest valence edge in the channel, the upper Fermi level);
    e_min = max(lowest conduction edge in the drain, the lower Fermi level).

    Parameters
    ----------
    x_nm : positions along transport [nm].
    conduction_eV, valence_eV : lowest conduction and highest valence subband edge [eV].
    channel : first and last position of the gated channel [nm].
    drain_start_nm : position of the drain junction [nm].
    efs_eV, efd_eV : source and drain Fermi levels [eV].
    """
    x = np.asarray(x_nm, float)
    ch = (x >= channel[0]) & (x <= channel[1])
    drain = x >= drain_start_nm
    if not ch.any() or not drain.any():
        return None
    e_max = min(float(np.max(np.asarray(valence_eV)[ch])), max(efs_eV, efd_eV))
    e_min = max(float(np.min(np.asarray(conduction_eV)[drain])), min(efs_eV, efd_eV))
    return (e_min, e_max) if e_max > e_min else None


def _crossing(x0: float, x1: float, y0: float, y1: float, level: float) -> float:
    if y1 == y0:
        return float(x0)
    return float(x0 + (level - y0) * (x1 - x0) / (y1 - y0))


def uniform_map(x_nm: np.ndarray, y_nm: np.ndarray, values: np.ndarray, nx: int = 360,
                ny: int = 80) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Bilinear resampling of a (nx, ny) map on a non-uniform tensor grid onto a uniform
    one; returns (x, y, image) with image shaped (ny, nx) as Bokeh draws it."""
    xu = np.linspace(x_nm[0], x_nm[-1], nx)
    yu = np.linspace(y_nm[0], y_nm[-1], ny)
    along_x = np.stack([np.interp(xu, x_nm, values[:, j]) for j in range(y_nm.size)], axis=1)
    image = np.stack([np.interp(yu, y_nm, along_x[i]) for i in range(nx)], axis=1)
    return xu, yu, image


def positive_or_nan(values: np.ndarray, floor: float = 0.0) -> np.ndarray:
    """Values for a log axis: non-positive (or below floor) and non-finite become NaN."""
    v = np.asarray(values, float).copy()
    v[~np.isfinite(v) | (v <= floor)] = np.nan
    return v


def rows_between(y_nm: np.ndarray, bounds: tuple[float, float]) -> np.ndarray:
    """Indices of the grid lines y within [lo, hi] (with 1e-9 nm slack)."""
    lo, hi = bounds
    return np.flatnonzero((y_nm >= lo - 1e-9) & (y_nm <= hi + 1e-9))
