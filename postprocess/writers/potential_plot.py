"""potential.png: the electrostatic solution's potential over the cross-section
(V) for the worst-case terminal voltages (the unit-norm voltages of the
largest stored energy, see :mod:`racfield.fem.capacitance`), with labelled
equipotentials, the bare conductors, their insulation shells and the layers'
tape, on the walls of geometry.png.  Written only with ``[dielectric]``.
Lengths in mm; an axisymmetric model is drawn at its true radius
r = x + inner_radius; an open model is shown around its window.
"""

from __future__ import annotations

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

from racfield.fem.capacitance import terminal_map
from racfield.geometry.layout import insulation_strips

from ..plotting import linear_subtriangles, new_figure, save
from ..report import Report
from .geometry_plot import draw_walls, fit_height, label_axes

POTENTIAL_MAP = "cividis"   #: perceptually uniform (and readable with colour-vision deficiency)
EQUIPOTENTIALS = 8          #: about this many labelled equipotentials
BAR_LABEL = "potential (V) for unit terminal voltages"


def electrode_voltages(report: Report) -> np.ndarray:
    """The worst case's electrode potentials (V): every conductor (case order),
    then the core: 0 V grounded, or, floating, the potential at which it holds
    no net charge (from the per-metre Maxwell matrix)."""
    result = report.sweep.capacitance
    _, t = terminal_map(report.case, report.sweep.conductors)
    turns = t @ np.asarray(result.worst_voltages, dtype=float)
    core = 0.0
    if result.core == "floating":
        c = np.asarray(result.conductor_f_per_m, dtype=float)
        core = -float(c[-1, :-1] @ turns) / float(c[-1, -1])
    return np.append(turns, core)


def voltages_text(report: Report) -> str:
    """The worst case's terminal voltages, one "winding start/end" pair per winding."""
    result = report.sweep.capacitance
    values = dict(zip(result.terminals, (float(v) for v in result.worst_voltages)))
    parts = [f"{w.name} {values[f'{w.name}.start']:+.3f}/{values[f'{w.name}.end']:+.3f}"
             for w in report.case.windings]
    return "; ".join(parts) + " V (start/end)"


def _outlines(ax: Axes, report: Report, s_mm: float) -> None:
    """Every conductor's bare outline (solid), its insulation's outer outline
    (dashed) and the layers' tape strips (dotted), in mm."""
    bare, shells = [], []
    for c in report.sweep.conductors:
        x, y = c.x * 1e3 + s_mm, c.y * 1e3
        tx, ty = (v * 1e3 for v in c.insulation)
        if c.shape == "round":
            bare.append(Circle((x, y), c.width / 2 * 1e3))
            if tx > 0:
                shells.append(Circle((x, y), c.width / 2 * 1e3 + tx))
            continue
        w, h = c.width * 1e3, c.height * 1e3
        bare.append(Rectangle((x - w / 2, y - h / 2), w, h))
        if tx > 0 or ty > 0:
            shells.append(Rectangle((x - w / 2 - tx, y - h / 2 - ty), w + 2 * tx, h + 2 * ty))
    tapes = [Rectangle((x0 * 1e3 + s_mm, y0 * 1e3), (x1 - x0) * 1e3, (y1 - y0) * 1e3)
             for x0, x1, y0, y1 in insulation_strips(report.case)]
    ax.add_collection(PatchCollection(shells, facecolors="none", edgecolors="0.85", linewidths=0.4,
                                      linestyles="--", zorder=3))
    ax.add_collection(PatchCollection(tapes, facecolors="none", edgecolors="0.85", linewidths=0.4,
                                      linestyles=":", zorder=3))
    ax.add_collection(PatchCollection(bare, facecolors="none", edgecolors="white", linewidths=0.6, zorder=3.1))


def _label_format(levels: np.ndarray) -> str:
    """The fewest decimals (up to 4) that write every equipotential's level exactly."""
    for decimals in range(5):
        if np.allclose(np.round(levels, decimals), levels, rtol=0.0, atol=1e-9 * max(np.ptp(levels), 1e-30)):
            return f"%.{decimals}f"
    return "%.4f"


def _spread(ax: Axes, texts: list) -> None:
    """Keep the labels inside the view and apart (a twelfth of it): drop the others."""
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    kept: list[tuple[float, float]] = []
    for text in texts:
        x, y = text.get_position()
        u, v = (x - x0) / (x1 - x0), (y - y0) / (y1 - y0)
        if not (0.03 <= u <= 0.97 and 0.03 <= v <= 0.97) or any(np.hypot(u - a, v - b) < 0.08 for a, b in kept):
            text.remove()
            continue
        kept.append((u, v))
        text.set_rotation(0)
        text.set_path_effects([Stroke(linewidth=1.6, foreground="black"), Normal()])


def _equipotentials(ax: Axes, tri: Triangulation, values: np.ndarray, electrodes: np.ndarray) -> None:
    """A handful of labelled equipotentials strictly between the lowest and the
    highest of the ``electrodes``' potentials (V), none at an electrode's own
    (it would outline the electrode, or trace the walls)."""
    low, high = float(electrodes.min()), float(electrodes.max())
    levels = MaxNLocator(EQUIPOTENTIALS).tick_values(low, high)
    margin = 0.02 * (high - low)
    levels = levels[(levels > low + margin) & (levels < high - margin)]
    levels = levels[np.min(np.abs(levels[:, None] - electrodes[None, :]), axis=1) > margin]
    if levels.size == 0:
        return
    lines = ax.tricontour(tri, values, levels=levels, colors="white", linewidths=0.6, alpha=0.85, zorder=0.45,
                          linestyles="solid")
    _spread(ax, ax.clabel(lines, fmt=_label_format(levels), fontsize=7, inline=False))


def _title(report: Report) -> str:
    words = f"worst case: terminal voltages {voltages_text(report)}; core {report.sweep.capacitance.core}"
    return f"{report.case.title}\nelectric potential, model estimate\n" + "\n".join(textwrap.wrap(words, 90))


def potential_figure(report: Report) -> Figure | None:
    """The potential map of ``report``'s electrostatic solution (None without
    ``[dielectric]``).  Its first axes' first collection is the map, coloured
    from the lowest to the highest electrode potential (V): by the maximum
    principle nothing between the electrodes lies outside that range."""
    result = getattr(report.sweep, "capacitance", None)
    if result is None:
        return None
    case = report.case
    s_mm = (case.axis_offset or 0.0) * 1e3
    points = np.asarray(result.nodes, dtype=float) * 1e3
    values = np.asarray(result.potential, dtype=float)
    tri = Triangulation(points[0] + s_mm, points[1], linear_subtriangles(np.asarray(result.triangles)))
    electrodes = electrode_voltages(report)
    low, high = float(electrodes.min()), float(electrodes.max())
    if high <= low:   # every electrode at one potential: a range around it
        low, high = low - 0.5, high + 0.5
    figure = new_figure(6.5, 6.5)
    figure.set_layout_engine("compressed")  # suits fixed-aspect axes
    ax = figure.add_subplot()
    draw_walls(ax, report, s_mm, core_face="none", window_face="none")
    mappable = ax.tripcolor(tri, values, cmap=colormaps[POTENTIAL_MAP], shading="gouraud", vmin=low, vmax=high,
                            zorder=0.4)
    _equipotentials(ax, tri, values, electrodes)
    _outlines(ax, report, s_mm)
    ax.set_aspect("equal")
    fit_height(figure, ax, extra=1.6)
    label_axes(ax, case.model.axisymmetric)
    ax.set_title(_title(report), fontsize=9)
    bar = figure.colorbar(mappable, ax=ax, shrink=0.85)
    bar.set_label(BAR_LABEL)
    return figure


def write(report: Report, directory: Path) -> list[Path]:
    figure = potential_figure(report)
    if figure is None:
        return []
    return [save(figure, directory / "potential.png")]
