"""Figures of the sweep view: a metric map over two knobs, the Pareto front, sensitivities.

Plot builders only: each takes the rows of a sweep (`app.sweep_engine` results, one dict
per design) or the items of a sensitivity study and returns a new Bokeh figure (one per
call: a figure belongs to one session's document). They compute no physics; the Pareto
front is `sweep_engine.pareto_front`.

- `metric_map`: one cell per pair of values of two knobs of a grid sweep, coloured by a
  figure of merit (the best over the other knobs, if any), the value written in the cell
  when there is room; a space-filling sample is drawn as points at their knob values.
- `pareto_plot`: every computed design in (SS or Ioff-free metric, Ion), coloured by a
  knob, the non-dominated designs joined; hover shows the design, a click selects it.
- `sensitivity_plot`: normalised sensitivities as ranked horizontal bars.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from typing import Any

import numpy as np
from bokeh.models import (
    BasicTicker,
    CategoricalColorMapper,
    ColorBar,
    ColumnDataSource,
    FactorRange,
    HoverTool,
    Label,
    LinearColorMapper,
    LogColorMapper,
    LogTicker,
    PrintfTickFormatter,
    Range1d,
    Span,
    TapTool,
)
from bokeh.palettes import Cividis256
from bokeh.plotting import figure

from sub60.app.plot_style import COLOURS, style_figure
from sub60.app.state import label_of
from sub60.app.sweep_engine import pareto_front
from sub60.app.theme import LARGER_IS_BETTER, MAP_PALETTE, PALETTE, PIN_COLOURS, format_doping

#: Figures of merit offered on the maps and bars, with plain-text labels (Bokeh draws no
#: HTML). Ioff is left out: it is the target of the bias plan, the same for every design.
METRIC_LABELS: dict[str, str] = {
    "ion_uA_per_um": "Ion (µA/µm)",
    "ss_avg4_mV_per_dec": "SS avg over 4 decades (mV/dec)",
    "ss_min_mV_per_dec": "SS min (mV/dec)",
    "i60_uA_per_um": "I60 (µA/µm)",
    "ion_ioff": "Ion/Ioff (–)",
    "voff_V": "Voff (V)",
    "vth_V": "Vth (V)",
    "ambipolar_uA_per_um": "Ambipolar current (µA/µm)",
}
#: Short names for titles and hover.
METRIC_SHORT: dict[str, str] = {
    "ion_uA_per_um": "Ion", "ss_avg4_mV_per_dec": "SS avg", "ss_min_mV_per_dec": "SS min",
    "i60_uA_per_um": "I60", "ion_ioff": "Ion/Ioff", "voff_V": "Voff", "vth_V": "Vth",
    "ambipolar_uA_per_um": "I ambipolar",
}
#: Metrics drawn on a log colour scale or axis (currents and ratios span decades).
LOG_METRICS = frozenset({"ion_uA_per_um", "i60_uA_per_um", "ion_ioff", "ambipolar_uA_per_um"})
#: Axes of the Pareto front against Ion: the swing to keep low.
PARETO_AGAINST: dict[str, str] = {"SS avg (4 decades)": "ss_avg4_mV_per_dec",
                                  "SS min": "ss_min_mV_per_dec"}
#: Cells of a map that still get their value written inside.
CELL_TEXT_LIMIT = 80
PLOT_WIDTH = 395
PLOT_HEIGHT = 430
#: Fill of a map cell whose figure of merit is undefined (its reason in the hover).
UNDEFINED_FILL = "#e9ecef"


def value_text(field: str, value: Any) -> str:
    """A knob value for an axis or a tooltip, e.g. '1×10¹⁹' for a doping, '6' for 6.0."""
    if isinstance(value, str):
        return value
    if value is None or not math.isfinite(value):
        return "—"
    if field.endswith("_doping_cm3"):
        return format_doping(value) if value > 0 else "−" + format_doping(-value)
    return f"{value:.4g}"


def metric_text(metric: str, value: float | None) -> str:
    """A figure of merit for a cell or a tooltip, in its unit's usual digits."""
    if value is None or not math.isfinite(value):
        return "—"
    if metric.endswith("mV_per_dec"):
        return f"{value:.1f}"
    if metric.endswith("_V"):
        return f"{value:.3f}"
    return f"{value:.3g}"


def _better_larger(metric: str) -> bool:
    return LARGER_IS_BETTER.get(metric, metric not in ("ambipolar_uA_per_um", "voff_V", "vth_V"))


def _new_figure(name: str, title: str, **kw: Any):
    fig = figure(name=name, title=title, width=kw.pop("width", PLOT_WIDTH),
                 height=kw.pop("height", PLOT_HEIGHT), tools="pan,box_zoom,wheel_zoom,reset,save",
                 **kw)
    style_figure(fig)
    return fig


def message_plot(name: str, title: str, text: str):
    """An empty figure with a line of text in it (before a sweep, or nothing to draw)."""
    fig = _new_figure(name, title, x_range=(0, 1), y_range=(0, 1))
    fig.axis.visible = False
    fig.grid.visible = False
    fig.add_layout(Label(x=0.5, y=0.5, text=text, text_align="center", text_baseline="middle",
                         text_font_size="13px", text_color=COLOURS["muted_text"]))
    return fig


def _colour_bar(mapper, title: str, log: bool, short_numbers: bool = False):
    bar = ColorBar(color_mapper=mapper, ticker=LogTicker() if log else BasicTicker(),
                   title=title, title_text_font_size="11px", major_label_text_font_size="11px",
                   width=12, padding=4)
    if short_numbers:  # dopings: 1e+19 rather than 1.000e+19
        bar.formatter = PrintfTickFormatter(format="%.0e")
    return bar


# ---------------------------------------------------------------------- streamed redraws
def _mappers(fig) -> list[Any]:
    """The colour mappers of ``fig``: its glyphs' fill transforms, then its colour bars'."""
    out = []
    for r in fig.renderers:
        fill = getattr(getattr(r, "glyph", None), "fill_color", None)
        if getattr(fill, "transform", None) is not None:
            out.append(fill.transform)
    out.extend(b.color_mapper for b in fig.select(type=ColorBar))
    return out


def _shape(fig) -> tuple[Any, ...]:
    """What must match for one figure's data to be poured into another: the figure's name,
    range and scale types, its renderers' glyph types and source names, its mappers' types,
    its colour bars' titles and its legend's size."""
    legend = fig.legend[0] if fig.legend else None
    return (fig.name, type(fig.x_range).__name__, type(fig.y_range).__name__,
            type(fig.x_scale).__name__, type(fig.y_scale).__name__,
            tuple((type(r.glyph).__name__, r.name, getattr(r.data_source, "name", None))
                  for r in fig.renderers if hasattr(r, "glyph")),
            tuple(type(m).__name__ for m in _mappers(fig)),
            tuple(b.title for b in fig.select(type=ColorBar)),
            len(legend.items) if legend is not None else -1,
            tuple(t.__class__.__name__ for t in fig.tools),
            fig.xaxis[0].axis_label, fig.yaxis[0].axis_label)


def refresh_in_place(old: Any, new: Any) -> bool:
    """Pour ``new``'s data into ``old`` when both figures have the same shape (`_shape`):
    sources, colour-mapper ranges and palettes, factor and explicit ranges, the title and
    the legend's labels. Returns False (``old`` untouched) when the shapes differ.

    A streamed redraw then sends data, not a new figure: the browser keeps the figure, its
    tools and a point being hovered, and draws no blank frame in between.
    """
    if old is None or new is None or _shape(old) != _shape(new):
        return False
    for ro, rn in zip([r for r in old.renderers if hasattr(r, "glyph")],
                      [r for r in new.renderers if hasattr(r, "glyph")], strict=True):
        ro.data_source.data = dict(rn.data_source.data)
        if ro.data_source.selected.indices:  # rows moved: a kept selection would be stale
            ro.data_source.selected.indices = []
    for mo, mn in zip(_mappers(old), _mappers(new), strict=True):
        if isinstance(mn, CategoricalColorMapper):
            mo.update(factors=list(mn.factors), palette=list(mn.palette))
        else:
            mo.update(low=mn.low, high=mn.high, palette=list(mn.palette))
    for axis in ("x_range", "y_range"):
        ro_, rn_ = getattr(old, axis), getattr(new, axis)
        if isinstance(rn_, FactorRange):
            if list(ro_.factors) != list(rn_.factors):
                ro_.factors = list(rn_.factors)
        elif isinstance(rn_, Range1d):
            ro_.update(start=rn_.start, end=rn_.end)
    old.title.text = new.title.text
    if old.legend:
        for io, in_ in zip(old.legend[0].items, new.legend[0].items, strict=True):
            io.label = in_.label
    return True


# ---------------------------------------------------------------------- the map
def metric_map(rows: Sequence[dict[str, Any]], knob_fields: Sequence[str], x_field: str,
               y_field: str, metric: str, grid: bool,
               axes: dict[str, Sequence[Any]] | None = None):
    """A figure of ``metric`` over two knobs (cells of a grid, or points of a sample).

    ``axes``: every value of each knob of a grid (its factors on the axes), so that the
    axes of a sweep still running are already those of the whole grid; by default the
    values present in ``rows``.
    """
    label = METRIC_LABELS[metric]
    ok = [r for r in rows if r.get("status") == "ok" and r.get(metric) is not None]
    others = [f for f in knob_fields if f not in (x_field, y_field)]
    title = f"{METRIC_SHORT[metric]} over {_short_label(x_field)} and {_short_label(y_field)}"
    if others:
        title += " (best over " + ", ".join(_short_label(f) for f in others) + ")"
    if not ok:
        return message_plot("sweep_map", title, f"no design has a defined {METRIC_SHORT[metric]}")
    larger = _better_larger(metric)
    log = metric in LOG_METRICS and all(r[metric] > 0 for r in ok)
    palette = list(MAP_PALETTE) if larger else list(MAP_PALETTE)[::-1]  # sand = the better end
    if x_field == y_field:
        y_field = None  # one knob: a strip
    cells: dict[tuple[Any, Any], dict[str, Any]] = {}
    for r in ok:
        key = (r[x_field], r[y_field] if y_field else "")
        best = cells.get(key)
        if best is None or (r[metric] > best[metric]) == larger and r[metric] != best[metric]:
            cells[key] = r
    values = np.array([c[metric] for c in cells.values()], float)
    lo, hi = float(values.min()), float(values.max())
    if hi == lo:
        lo, hi = (lo / 2, hi * 2) if log else (lo - 0.5, hi + 0.5)
    mapper = (LogColorMapper if log else LinearColorMapper)(palette=palette, low=lo, high=hi)

    def order(field: str | None) -> list[Any]:
        if field is None:
            return [""]
        seen = {r[field] for r in rows if r.get(field) is not None}
        seen.update((axes or {}).get(field, ()))
        return sorted(seen, key=lambda v: (isinstance(v, str), v))

    xs, ys = order(x_field), order(y_field)
    data: dict[str, list[Any]] = {"x": [], "y": [], "value": [], "text": [], "text_colour": [],
                                  "design": [], "hover": []}
    for (xv, yv), r in cells.items():
        v = r[metric]
        t = ((math.log10(v) - math.log10(lo)) / (math.log10(hi) - math.log10(lo)) if log
             else (v - lo) / (hi - lo))
        shade = t if larger else 1 - t
        data["x"].append(value_text(x_field, xv))
        data["y"].append(value_text(y_field, yv) if y_field else "")
        data["value"].append(v)
        data["text"].append(metric_text(metric, v))
        data["text_colour"].append("#ffffff" if shade < 0.55 else COLOURS["text"])
        data["design"].append(f"#{r['index']}")
        data["hover"].append(_design_hover(r, knob_fields))
    source = ColumnDataSource(data, name="sweep_map_source")
    hover = HoverTool(tooltips=[(METRIC_SHORT[metric], "@text"), ("design", "@design"),
                                ("", "@hover")])
    cell_renderers: list[Any] = []
    if grid:
        fig = _new_figure("sweep_map", title,
                          x_range=FactorRange(*[value_text(x_field, v) for v in xs]),
                          y_range=FactorRange(*([value_text(y_field, v) for v in ys]
                                                if y_field else [""])))
        cell_renderers.append(fig.rect("x", "y", width=0.96, height=0.96, source=source,
                                       fill_color={"field": "value", "transform": mapper},
                                       line_color=None))
        if len(cells) <= CELL_TEXT_LIMIT:
            fig.text("x", "y", text="text", source=source, text_align="center",
                     text_baseline="middle", text_font_size="12px", text_color="text_colour")
        blank = _undefined_cells(rows, x_field, y_field, metric, set(cells))
        if blank["x"]:
            empty = ColumnDataSource(blank, name="sweep_map_undefined_source")
            fig.rect("x", "y", width=0.96, height=0.96, source=empty, fill_color=UNDEFINED_FILL,
                     line_color=COLOURS["frame"], line_dash="dotted")
            fig.text("x", "y", text="text", source=empty, text_align="center",
                     text_baseline="middle", text_font_size="12px",
                     text_color=COLOURS["muted_text"])
            fig.add_tools(HoverTool(renderers=[fig.renderers[-2]], tooltips=[
                (METRIC_SHORT[metric], "undefined"), ("design", "@design"), ("why", "@why")]))
        fig.xgrid.visible = fig.ygrid.visible = False
    else:  # a space-filling sample: points at their knob values
        data["xv"] = [r[x_field] for r in cells.values()]
        data["yv"] = [r[y_field] if y_field else 0.0 for r in cells.values()]
        source.data = data
        kw = {}
        for axis, field in (("x", x_field), ("y", y_field)):
            if field and all(isinstance(r[field], str) for r in ok):
                kw[f"{axis}_range"] = FactorRange(*[value_text(field, v) for v in order(field)])
            elif field and field.endswith("_doping_cm3") and all(r[field] > 0 for r in ok):
                kw[f"{axis}_axis_type"] = "log"
        fig = _new_figure("sweep_map", title, **kw)
        cell_renderers.append(fig.scatter(
            "x" if "x_range" in kw else "xv", "y" if "y_range" in kw else "yv", source=source,
            size=11, fill_color={"field": "value", "transform": mapper}, line_color=COLOURS["frame"]))
    hover.renderers = cell_renderers
    fig.add_tools(hover)
    fig.xaxis.axis_label = label_of(x_field)
    fig.yaxis.axis_label = label_of(y_field) if y_field else ""
    fig.add_layout(_colour_bar(mapper, label, log), "right")
    return fig


def _undefined_cells(rows: Sequence[dict[str, Any]], x_field: str, y_field: str | None,
                     metric: str, defined: set[tuple[Any, Any]]) -> dict[str, list[Any]]:
    """Grid cells where no design has a defined ``metric``, with the first design's reason."""
    out: dict[str, list[Any]] = {"x": [], "y": [], "text": [], "design": [], "why": []}
    seen: set[tuple[Any, Any]] = set()
    for r in rows:
        key = (r.get(x_field), r.get(y_field) if y_field else "")
        if key in defined or key in seen or key[0] is None:
            continue
        seen.add(key)
        why = r.get("error") or ""
        if not why:
            missing = r.get("metrics_missing") or ""
            mark = missing.find(f"{metric}: ")
            why = (missing[mark + len(metric) + 2:].split("; ")[0] if mark >= 0
                   else missing or r.get("status", ""))
        out["x"].append(value_text(x_field, key[0]))
        out["y"].append(value_text(y_field, key[1]) if y_field else "")
        out["text"].append("n/a" if r.get("status") != "cancelled" else "not run")
        out["design"].append(f"#{r['index']}")
        out["why"].append(why[:200])
    return out


def _short_label(field: str) -> str:
    """The control label without its unit and explanation ('Gate–source overlap')."""
    return re.split(r" \(|,", label_of(field), maxsplit=1)[0]


def knob_unit(field: str) -> str:
    """The unit of a design field as its control label states it ('nm', 'cm⁻³'); '' for a
    dimensionless field ('(–)') or a text field (no parentheses)."""
    label = label_of(field)
    if not label.endswith(")") or " (" not in label:
        return ""
    unit = label.rsplit(" (", 1)[1][:-1]
    return "" if unit in ("–", "-") else unit


def knob_text(field: str, value: Any) -> str:
    """A knob and its value in words with the unit, e.g. 'Body thickness 5 nm'."""
    unit = knob_unit(field)
    return f"{_short_label(field)} {value_text(field, value)}" + (f" {unit}" if unit else "")


def _design_hover(r: dict[str, Any], knob_fields: Sequence[str]) -> str:
    return ", ".join(knob_text(f, r[f]) for f in knob_fields)


# ---------------------------------------------------------------------- the Pareto front
def pareto_plot(rows: Sequence[dict[str, Any]], knob_fields: Sequence[str], against: str,
                colour_field: str):
    """Ion against a swing for every computed design, coloured by a knob; the front joined.

    Returns (figure, source of the points, front rows). The points' ``index`` column holds
    each design's row index in the sweep, for a click to load it.
    """
    ok = [r for r in rows if r.get("status") == "ok" and r.get("ion_uA_per_um") is not None
          and r.get(against) is not None and r["ion_uA_per_um"] > 0]
    short = METRIC_SHORT[against]
    if not ok:
        return (message_plot("sweep_pareto", f"Ion against {short}",
                             "no design has both Ion and " + short), None, [])
    front = pareto_front(ok, maximize="ion_uA_per_um", minimize=against)
    title = f"Ion vs {short} · {len(ok)} designs, {len(front)} on the front"
    fig = _new_figure("sweep_pareto", title, y_axis_type="log")
    data: dict[str, list[Any]] = {
        "x": [r[against] for r in ok], "y": [r["ion_uA_per_um"] for r in ok],
        "index": [int(r["index"]) for r in ok],
        "ion": [metric_text("ion_uA_per_um", r["ion_uA_per_um"]) for r in ok],
        "swing": [metric_text(against, r[against]) for r in ok],
        "design": [_design_hover(r, knob_fields) for r in ok],
        **{f: [r[f] for r in ok] for f in knob_fields}}  # the knob values, as in the table
    colour = [r.get(colour_field) for r in ok]
    numeric = all(isinstance(v, (int, float)) for v in colour)
    if numeric:
        vals = np.array(colour, float)
        log = colour_field.endswith("_doping_cm3") and bool(np.all(vals > 0))
        lo, hi = float(vals.min()), float(vals.max())
        if hi == lo:
            lo, hi = (lo / 2, hi * 2) if log and lo > 0 else (lo - 0.5, hi + 0.5)
        mapper = (LogColorMapper if log else LinearColorMapper)(palette=Cividis256, low=lo, high=hi)
        data["colour"] = list(vals)
    else:
        factors = sorted({str(v) for v in colour})
        mapper = CategoricalColorMapper(factors=factors,
                                        palette=[PIN_COLOURS[i % len(PIN_COLOURS)]
                                                 for i in range(len(factors))])
        data["colour"] = [str(v) for v in colour]
        log = False
    source = ColumnDataSource(data, name="sweep_pareto_source")
    fx = [r[against] for r in front]
    fy = [r["ion_uA_per_um"] for r in front]
    fig.step(fx, fy, mode="after", line_color=COLOURS["text"], line_width=1.5, line_dash="dashed",
             legend_label=f"Pareto front ({len(front)})", name="sweep_front_line")
    group = {} if numeric else {"legend_group": "colour"}
    points = fig.scatter("x", "y", source=source, size=11, line_color="#4a4a4a", line_width=0.6,
                         fill_color={"field": "colour", "transform": mapper}, fill_alpha=0.9,
                         selection_line_color=PALETTE["marker"], selection_line_width=2.5,
                         nonselection_fill_alpha=0.5, nonselection_line_alpha=0.5, **group)
    fig.scatter(fx, fy, size=17, fill_color=None, line_color=COLOURS["text"], line_width=1.6,
                name="sweep_front_marks")
    fig.add_tools(HoverTool(renderers=[points], tooltips=[
        ("design", "#@index"), ("Ion", "@ion µA/µm"), (short, "@swing mV/dec"), ("", "@design")]))
    fig.add_tools(TapTool(renderers=[points]))
    fig.xaxis.axis_label = METRIC_LABELS[against]
    fig.yaxis.axis_label = METRIC_LABELS["ion_uA_per_um"]
    fig.legend.location = "bottom_right"
    fig.legend.label_text_font_size = "11px"
    fig.legend.background_fill_alpha = 0.8
    if not numeric:  # one entry per value: outside the frame, where no point hides under it
        legend = fig.legend[0]
        fig.legend.location = "top_left"
        fig.add_layout(legend, "right")
    if numeric:
        fig.add_layout(_colour_bar(mapper, label_of(colour_field), log,
                                   colour_field.endswith("_doping_cm3")), "right")
    xs, ys = np.array(data["x"], float), np.array(data["y"], float)
    pad = 0.08 * max(float(xs.max() - xs.min()), 0.05 * abs(float(xs.max())), 1.0)
    fig.x_range = Range1d(float(xs.min()) - pad, float(xs.max()) + pad)
    fig.y_range = Range1d(float(ys.min()) / 1.35, float(ys.max()) * 1.35)
    return fig, source, front


# ---------------------------------------------------------------------- sensitivities
def sensitivity_plot(items: Sequence[dict[str, Any]], metric: str):
    """Ranked horizontal bars of (x/M)·∂M/∂x of ``metric`` for each knob.

    Returns (figure, notes): notes list the knobs whose sensitivity is undefined and why.
    """
    mine = [i for i in items if i["metric"] == metric]
    have = sorted((i for i in mine if i["value"] is not None), key=lambda i: abs(i["value"]))
    notes = [_why_undefined(i) for i in mine if i["value"] is None]
    title = f"Sensitivity of {METRIC_SHORT[metric]} at the present design"
    if not have:
        return message_plot("sweep_sensitivity", title, "no sensitivity defined"), notes
    labels = [label_of(i["field"]) for i in have]  # smallest first: the largest on top
    vals = [i["value"] for i in have]
    source = ColumnDataSource({"label": labels, "value": vals,
                               "text": [f"{v:+.3g}" for v in vals],
                               "colour": [PALETTE["design"] if v >= 0 else PALETTE["valence"][0]
                                          for v in vals],
                               "align": ["left" if v >= 0 else "right" for v in vals],
                               "offset": [5 if v >= 0 else -5 for v in vals]},
                              name="sweep_sensitivity_source")
    span = max(abs(v) for v in vals) or 1.0
    fig = _new_figure("sweep_sensitivity", title, y_range=FactorRange(*labels),
                      x_range=(-1.65 * span, 1.65 * span))
    fig.hbar(y="label", right="value", height=0.6, source=source, fill_color="colour",
             line_color=None)
    fig.text(x="value", y="label", text="text", source=source, text_align="align",
             text_baseline="middle", text_font_size="12px", x_offset="offset",
             text_color=COLOURS["text"])
    fig.add_layout(Span(location=0, dimension="height", line_color=COLOURS["limit"], line_width=1))
    fig.add_tools(HoverTool(tooltips=[("knob", "@label"), ("(x/M)·∂M/∂x", "@text")]))
    fig.xaxis.axis_label = f"(x/M)·∂M/∂x of {METRIC_SHORT[metric]} (–): % change per % of the knob"
    fig.ygrid.visible = False
    return fig, notes


def _why_undefined(item: dict[str, Any]) -> str:
    """'Body thickness (nm): Ion undefined at 9.5: <its reason>' from a sensitivity item."""
    metric, reason = item["metric"], item["reason"] or ""
    head, _, rest = reason.partition(": ")
    at = head.rpartition(" = ")[2] if " = " in head else ""
    detail = rest
    mark = rest.find(f"{metric}: ")
    if mark >= 0:
        detail = rest[mark + len(metric) + 2:].split("; ")[0]
    where = f" at {at}" if at else ""
    return f"{label_of(item['field'])}: {METRIC_SHORT[metric]} undefined{where} ({detail[:160]})"
