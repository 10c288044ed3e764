"""The explorer's look, defined once: palettes, metric headings and number formats.

Used by the live page (`app.plots`), the export figures (`app.figures`) and the pin
table (`app.pinning`). Plain data and functions: no Panel, Bokeh or matplotlib import,
so UI-free modules may use the formats too.

Colours are the explorer's own (no source): a blue family for electrons/conduction, a
brick family for holes/valence, teal for the tunnel FET, ochre for its MOSFET twin.
"""

from __future__ import annotations

import math

import numpy as np

from sub60.physics import Metrics

# ---------------------------------------------------------------------- palettes
#: Named colours of every figure (page and export): subband families light to dark
#: rank, single colours for the rest.
PALETTE: dict[str, str | tuple[str, ...]] = {
    "conduction": ("#1f4e8c", "#6f95c9", "#9fb9dd", "#c3d3ea"),
    "valence": ("#a33a26", "#d98a72", "#c7643f", "#e6b3a3", "#b8553c", "#f0cfc4"),
    "fermi": "#303030",
    "window": "#f2b43c",
    "window_line": "#d08c00",
    "window_text": "#8a6d00",
    "gate": "#e3eaf1",
    "design": "#0e7a70",
    "twin": "#b07a10",
    "transmission": "#5b4b8a",
    "transmission_exact": "#c0397f",
    "pinned": ("#5a5f8c", "#8c5a7d", "#4f7f3a", "#7a6a55", "#3f6f8f", "#8f3f4f", "#6a6a6a",
               "#2f5f4f"),
    "limit": "#444444",
    "marker": "#d1341b",
    "text": "#2b2f33",
    "muted_text": "#5c6670",
    "grid": "#e9ecef",
    "junction": "#9aa0a6",
    "target": "#868e96",
    "target_text": "#6c757d",
    "gate_bar": "#adb5bd",
    "frame": "#ced4da",
    "measured": "#1b1b1b",
}

#: Font sizes of the live page's figures [CSS px], one set for the desk and the projector:
#: the figures widen with the window (and when the controls are hidden), their text is
#: drawn at these sizes (engineering choice, no source: 14 px axis labels stay readable
#: from the back of a meeting room on a 1920 px projector image).
PLOT_FONTS: dict[str, str] = {
    "title": "15px", "axis_label": "14px", "tick": "12.5px", "legend": "13px",
    "label": "12.5px", "small": "11.5px",
}

#: One colour per pinned-design slot, the same on the page and in an exported figure.
PIN_COLOURS: tuple[str, ...] = tuple(PALETTE["pinned"])
#: Output curves on the page, one per slot, lowest gate voltage lightest.
OUTPUT_COLOURS: tuple[str, ...] = ("#9cd3cb", "#57ada2", "#1f8578", "#0b4f47")
#: End points of the output-curve ramp of the export figures (light, dark) [RGB 0-255].
OUTPUT_RAMP_STOPS: tuple[tuple[int, int, int], ...] = ((0x9C, 0xD3, 0xCB), (0x0B, 0x4F, 0x47))
#: Stops of the 2D band-edge map's colour map: night blue -> teal -> sand [RGB 0-255].
MAP_STOPS: tuple[tuple[int, int, int], ...] = ((20, 33, 61), (27, 110, 125), (122, 186, 150),
                                               (246, 226, 164))


def ramp(stops: tuple[tuple[int, int, int], ...], n: int) -> list[str]:
    """n hex colours interpolated linearly through RGB stops [0-255]."""
    t = np.linspace(0.0, len(stops) - 1.0, n)
    out = []
    for v in t:
        i = min(int(v), len(stops) - 2)
        f = v - i
        rgb = [round(a + (b - a) * f) for a, b in zip(stops[i], stops[i + 1], strict=True)]
        out.append("#" + "".join(f"{c:02x}" for c in rgb))
    return out


def output_ramp(n: int) -> list[str]:
    """n colours of the export figures' output curves, light to dark (one curve: dark)."""
    lo, hi = (np.array(s, float) for s in OUTPUT_RAMP_STOPS)
    out = []
    for f in np.linspace(0.0, 1.0, n) if n > 1 else [1.0]:
        rgb = lo + f * (hi - lo)
        out.append("#" + "".join(f"{round(c):02x}" for c in rgb))
    return out


#: Sequential colour map of the 2D band-edge map (256 entries).
MAP_PALETTE: tuple[str, ...] = tuple(ramp(MAP_STOPS, 256))

# ---------------------------------------------------------------------- figures of merit
#: Column heading (HTML) of every figure of merit, by `Metrics.METRIC_NAMES`.
METRIC_HEADINGS: dict[str, str] = {
    "ss_min_mV_per_dec": "SS<sub>min</sub>",
    "ss_avg4_mV_per_dec": "SS<sub>avg</sub> (4 dec)",
    "i60_uA_per_um": "I<sub>60</sub>",
    "ioff_uA_per_um": "I<sub>off</sub>",
    "voff_V": "V<sub>off</sub>",
    "ion_uA_per_um": "I<sub>on</sub>",
    "ion_ioff": "I<sub>on</sub>/I<sub>off</sub>",
    "vth_V": "V<sub>th</sub>",
    "ambipolar_uA_per_um": "I<sub>amb</sub>",
}
#: True when a larger value is the better device (for the pin comparison's colours).
LARGER_IS_BETTER: dict[str, bool] = {
    "ss_min_mV_per_dec": False, "ss_avg4_mV_per_dec": False, "i60_uA_per_um": True,
    "ioff_uA_per_um": False, "ion_uA_per_um": True, "ion_ioff": True,
}
#: Figures of merit of the page's metrics strip, in their order.
STRIP_METRICS: tuple[str, ...] = ("ss_min_mV_per_dec", "ss_avg4_mV_per_dec", "i60_uA_per_um",
                                  "ion_uA_per_um", "ioff_uA_per_um", "ion_ioff", "voff_V")
#: Figures of merit of the pin comparison table, in their order.
COMPARISON_METRICS: tuple[str, ...] = ("ss_min_mV_per_dec", "ss_avg4_mV_per_dec", "i60_uA_per_um",
                                       "ion_uA_per_um", "ioff_uA_per_um", "ion_ioff")

for _names in (METRIC_HEADINGS, LARGER_IS_BETTER, STRIP_METRICS, COMPARISON_METRICS):
    _unknown = set(_names) - set(Metrics.METRIC_NAMES)
    if _unknown:  # the physics list is the one definition; this module only labels it
        raise ImportError(f"theme: unknown figure(s) of merit {sorted(_unknown)}")
if set(METRIC_HEADINGS) != set(Metrics.METRIC_NAMES):
    raise ImportError("theme: METRIC_HEADINGS must label every Metrics.METRIC_NAMES entry")

# ---------------------------------------------------------------------- number formats
_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")
DASH = "—"


def superscript(n: int) -> str:
    """An integer in superscript digits, e.g. -3 -> '⁻³'."""
    return str(n).translate(_SUPERSCRIPT)


def format_current(value_uA_per_um: float | None) -> str:
    """A current per width in the most readable unit, e.g. '1.00 nA/µm'."""
    if value_uA_per_um is None or not math.isfinite(value_uA_per_um):
        return DASH
    a = abs(value_uA_per_um)
    for scale, unit in ((1e3, "mA/µm"), (1.0, "µA/µm"), (1e-3, "nA/µm"), (1e-6, "pA/µm"),
                        (1e-9, "fA/µm")):
        if a >= scale:
            return f"{value_uA_per_um / scale:.3g} {unit}"
    return f"{value_uA_per_um:.2e} µA/µm"


def format_ratio(value: float | None) -> str:
    """A large ratio as mantissa x 10^n, e.g. '2.4×10³'."""
    if value is None or not math.isfinite(value) or value <= 0:
        return DASH
    exp = int(math.floor(math.log10(value)))
    mant = value / 10 ** exp
    return f"{mant:.2g}×10{superscript(exp)}" if exp >= 3 else f"{value:.3g}"


def format_metric(name: str, value: float) -> str:
    """A figure of merit in its display unit: swing [mV/dec], currents, the on/off
    ratio, voltages [V]."""
    if name.endswith("mV_per_dec"):
        return f"{value:.1f} mV/dec"
    if name.endswith("uA_per_um"):
        return format_current(value)
    if name == "ion_ioff":
        return format_ratio(value)
    return f"{value:.3f} V"


def format_doping(value_cm3: float) -> str:
    """A doping as mantissa x 10^n, e.g. '1×10²⁰' [cm^-3]."""
    mant, exp = f"{value_cm3:.2e}".split("e")
    return f"{float(mant):g}×10{superscript(int(exp))}"
