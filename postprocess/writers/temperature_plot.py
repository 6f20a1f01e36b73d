"""temperature.png: the thermal solution's temperature over the cross-section
(degC), with labelled isotherms, the conductor outlines and the hot spot, on
the walls of geometry.png.  Written only when the run has a thermal solution
(``[thermal]``); without a steady state the last iterate is drawn and the
title says why.  Lengths in mm; an axisymmetric model is drawn at its true
radius r = x + inner_radius.
"""

from __future__ import annotations

import math
import textwrap
from pathlib import Path

import numpy as np
from matplotlib import colormaps
from matplotlib.axes import Axes
from matplotlib.collections import PatchCollection
from matplotlib.figure import Figure
from matplotlib.patches import Circle, Rectangle
from matplotlib.patheffects import Normal, Stroke
from matplotlib.ticker import MaxNLocator
from matplotlib.tri import Triangulation

from ..plotting import new_figure, save
from ..report import Report
from .geometry_plot import draw_walls, fit_height, label_axes

TEMPERATURE_MAP = "inferno"   #: perceptually uniform
ISOTHERMS = 6                 #: about this many labelled isotherms
MARKER = "#2fa4ff"            #: the hot spot's marker: a blue that stands out on inferno's yellows


def _triangulations(points_mm: np.ndarray, values: np.ndarray) -> tuple[Triangulation, Triangulation, np.ndarray]:
    """Every element's corners as its own triangle (the map: both sides of an
    insulation layer kept apart), and the same triangles with the corners
    that share both position and temperature merged (for isotherms that run
    on across elements; a thin layer's two sides stay apart).  Returns both
    and the merged values (degC)."""
    count = values.size // 3
    own = Triangulation(points_mm[0], points_mm[1], np.arange(3 * count).reshape(count, 3))
    keys = np.column_stack([points_mm[0], points_mm[1], values])
    unique, inverse = np.unique(keys, axis=0, return_inverse=True)
    merged = Triangulation(unique[:, 0], unique[:, 1], inverse.reshape(count, 3))
    return own, merged, unique[:, 2]


def _label_format(levels: np.ndarray) -> str:
    """Enough decimals to tell neighbouring isotherm labels apart."""
    step = float(np.min(np.diff(levels))) if levels.size > 1 else 1.0
    return f"%.{max(0, min(3, -math.floor(math.log10(step)))) if step > 0 else 0}f"


def _isotherms(ax: Axes, merged: Triangulation, values: np.ndarray, low: float, high: float, hot_y: float) -> None:
    """A handful of labelled isotherms strictly between ``low`` and ``high``
    (degC), labelled on the side away from the hot spot's note (``hot_y`` mm)."""
    if not high > low:
        return
    levels = MaxNLocator(ISOTHERMS).tick_values(low, high)
    margin = 0.02 * (high - low)   # not at the fixed boundary's value, where P2 wiggles would draw stray lines
    levels = levels[(levels > low + margin) & (levels < high - margin)]
    if levels.size == 0:
        return
    lines = ax.tricontour(merged, values, levels=levels, colors="white", linewidths=0.6, alpha=0.85, zorder=0.45)
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    target = y0 + (0.7 if hot_y > 0.5 * (y0 + y1) else 0.3) * (y1 - y0)
    places = []
    for path in lines.get_paths():   # each label at its isotherm's point farthest out, where they lie apart
        v = path.vertices
        inset_x, inset_y = 0.06 * (x1 - x0), 0.03 * (y1 - y0)   # a label whole inside the view
        v = v[(v[:, 0] >= x0 + inset_x) & (v[:, 0] <= x1 - inset_x) & (v[:, 1] >= y0 + inset_y)
              & (v[:, 1] <= y1 - inset_y)]
        if len(v):
            place = v[np.argmax(v[:, 0] - 0.05 * np.abs(v[:, 1] - target))]
            # labels of isotherms that come close there would overlap: keep the first
            if all(np.hypot((place[0] - p[0]) / (x1 - x0), (place[1] - p[1]) / (y1 - y0)) > 0.08 for p in places):
                places.append(tuple(place))
    texts = ax.clabel(lines, fmt=_label_format(levels), fontsize=7, inline=False, manual=places or False)
    for text in texts:
        text.set_rotation(0)
        text.set_path_effects([Stroke(linewidth=1.6, foreground="black"), Normal()])


def _outlines(ax: Axes, report: Report, s_mm: float) -> None:
    """Every conductor's bare outline (mm)."""
    patches = []
    for c in report.sweep.conductors:
        x, y = c.x * 1e3 + s_mm, c.y * 1e3
        if c.shape == "round":
            patches.append(Circle((x, y), c.width / 2 * 1e3))
        else:
            patches.append(Rectangle((x - c.width / 2 * 1e3, y - c.height / 2 * 1e3), c.width * 1e3, c.height * 1e3))
    ax.add_collection(PatchCollection(patches, facecolors="none", edgecolors="0.8", linewidths=0.5, zorder=3))


def _hot_spot(ax: Axes, x_mm: float, y_mm: float, value: float) -> None:
    """The hot spot marked and its temperature (degC) written beside it, towards the view's middle."""
    ax.plot([x_mm], [y_mm], marker="X", markersize=8, color=MARKER, markeredgecolor="white",
            markeredgewidth=0.8, linestyle="none", zorder=5)
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    dx = -1 if x_mm > 0.5 * (x0 + x1) else 1
    dy = -1 if y_mm > 0.5 * (y0 + y1) else 1
    ax.annotate(f"hot spot {value:.1f} degC", xy=(x_mm, y_mm), xytext=(18 * dx, 18 * dy),
                textcoords="offset points", ha="right" if dx < 0 else "left", va="top" if dy < 0 else "bottom",
                fontsize=8, zorder=6, bbox={"boxstyle": "round,pad=0.25", "facecolor": "white", "alpha": 0.85,
                                            "edgecolor": MARKER},
                arrowprops={"arrowstyle": "-", "color": MARKER, "linewidth": 1.0})


def _title(report: Report) -> str:
    thermal = report.sweep.thermal
    kind = "coupled" if thermal.coupled else "one-way"
    head = f"{report.case.title}\ntemperature ({kind}) at {thermal.operating_point}; model estimate"
    if not thermal.steady_state:
        return head + "\n" + "\n".join(textwrap.wrap(f"last iterate: {thermal.message}", 90))
    return head


def _colour_range(ax: Axes, points_mm: np.ndarray, values: np.ndarray, hot_spot: float) -> tuple[float, float]:
    """degC: from the lowest temperature in view (an open model's far boundary
    lies outside it) to the hot spot."""
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    shown = ((points_mm[0] >= x0) & (points_mm[0] <= x1) & (points_mm[1] >= y0) & (points_mm[1] <= y1)
             & np.isfinite(values))
    shown = values[shown] if shown.any() else values[np.isfinite(values)]
    hot = float(hot_spot) if math.isfinite(hot_spot) else float(shown.max())
    low, high = float(shown.min()), max(float(shown.max()), hot)
    if high <= low:   # a uniform field: a range around it
        low, high = low - 0.5, high + 0.5
    return low, high


def temperature_figure(report: Report) -> Figure | None:
    """The temperature map of ``report``'s thermal solution (None without one).
    Its first axes' first collection is the map; its colour range spans the
    lowest temperature in view and the hot spot (degC)."""
    thermal = report.sweep.thermal
    if thermal is None or np.asarray(thermal.map_values).size < 3:
        return None
    case = report.case
    s_mm = (case.axis_offset or 0.0) * 1e3
    points = np.asarray(thermal.map_points, dtype=float) * 1e3
    points[0] += s_mm
    values = np.asarray(thermal.map_values, dtype=float)
    figure = new_figure(6.5, 6.5)
    figure.set_layout_engine("compressed")  # suits fixed-aspect axes
    ax = figure.add_subplot()
    draw_walls(ax, report, s_mm, core_face="none", window_face="none")
    low, high = _colour_range(ax, points, values, thermal.hot_spot_c)
    own, merged, merged_values = _triangulations(points, values)
    mappable = ax.tripcolor(own, values, cmap=colormaps[TEMPERATURE_MAP], shading="gouraud",
                            vmin=low, vmax=high, zorder=0.4)
    x_hot, y_hot = thermal.hot_spot_at
    _isotherms(ax, merged, merged_values, low, high, y_hot * 1e3)
    _outlines(ax, report, s_mm)
    ax.set_aspect("equal")
    fit_height(figure, ax, extra=1.4)
    _hot_spot(ax, x_hot * 1e3 + s_mm, y_hot * 1e3, high)
    label_axes(ax, case.model.axisymmetric)
    ax.set_title(_title(report), fontsize=9)
    bar = figure.colorbar(mappable, ax=ax, shrink=0.85)
    bar.set_label("temperature (degC)")
    return figure


def write(report: Report, directory: Path) -> list[Path]:
    figure = temperature_figure(report)
    if figure is None:
        return []
    return [save(figure, directory / "temperature.png")]
