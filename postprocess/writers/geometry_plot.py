"""geometry.png: the window as modelled, every turn outlined and filled by its
winding's colour, with turn numbers when there are few turns.

:func:`window_figure` draws the window (walls, core body, symmetry plane or
axis, layer margins) and the conductors with given face colours; it is the
drawing base of geometry.png and of conductor_loss.png.  Lengths in mm; an
axisymmetric model is drawn at its true radius r = x + inner_radius.
"""

from __future__ import annotations

from pathlib import Path
from types import SimpleNamespace
from typing import Sequence

import numpy as np
from matplotlib import colormaps
from matplotlib.axes import Axes
from matplotlib.collections import PatchCollection
from matplotlib.colors import to_rgb
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Circle, Patch, Rectangle

from racfield.fem.whole_turns import end_section
from racfield.geometry.turn_length import describe

from ..plotting import LINE_MAP, line_colours, new_figure, save
from ..report import Report

CORE_GREY = "#9a9a96"        #: ideal-core walls
CORE_BODY = "#b9b9b4"        #: core body of finite permeability
WINDOW_FACE = "#f4f4f2"
TURN_NUMBER_LIMIT = 48       #: turns are numbered when the window holds at most this many
AXIS_IN_VIEW = 2.0           #: the axis r = 0 is drawn when inner_radius <= this many window widths


def winding_colours(report: Report) -> dict[str, tuple]:
    """Winding name -> RGBA, the same order and colour map as rac_over_rdc.png."""
    colours = line_colours(len(report.windings), colormaps[LINE_MAP])
    return {w.name: c for w, c in zip(report.windings, colours)}


def _text_colour(face) -> str:
    r, g, b = to_rgb(face)
    return "black" if 0.2126 * r + 0.7152 * g + 0.0722 * b > 0.45 else "white"


def _legs_without_gaps(y0: float, y1: float, gaps: list[tuple[float, float]]) -> list[tuple[float, float]]:
    """The pieces of the leg y0..y1 left between the gaps (bottom, top of each gap)."""
    pieces, start = [], y0
    for bottom, top in sorted(gaps):
        if bottom > start:
            pieces.append((start, bottom))
        start = max(start, top)
    if start < y1:
        pieces.append((start, y1))
    return pieces


def label_axes(ax: Axes, axisymmetric: bool) -> None:
    """The section's axis labels in mm: r and z for rings, x and y otherwise."""
    if axisymmetric:
        ax.set_xlabel("r, radius from the axis (mm)")
        ax.set_ylabel("z, height above the window bottom (mm)")
    else:
        ax.set_xlabel("x, from the inner wall (mm)")
        ax.set_ylabel("y, from the window bottom (mm)")


def fit_height(figure, ax: Axes, columns: int = 1, extra: float = 1.4) -> None:
    """Size the figure to the drawn section's aspect (``columns`` sections side by side)."""
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    figure.set_size_inches(6.5 * columns, min(max(3.2, 4.8 * (y1 - y0) / (x1 - x0) + extra), 9.5))


def draw_walls(ax: Axes, report: Report, s_mm: float, *, core_face=CORE_BODY, window_face=WINDOW_FACE) -> list:
    """Walls, core body, symmetry plane or axis; sets the view limits.  Returns
    legend handles for what was drawn.  ``core_face``, ``window_face``: the
    fill of the core body and of an ideal-core window ("none": outlines only,
    over a map drawn beneath)."""
    case = report.case
    window = case.window
    w_mm, h_mm = window.width * 1e3, window.height * 1e3
    axisymmetric = case.model.axisymmetric
    handles: list = []
    show_axis = axisymmetric and window.inner_radius <= AXIS_IN_VIEW * window.width
    core = case.core
    if core is not None:
        left = s_mm - core.centre_leg_width / 2 * 1e3
        right = s_mm + w_mm + core.outer_leg_width * 1e3
        yoke = core.yoke_thickness * 1e3
        centre_gaps = [((g.at - g.length / 2) * 1e3, (g.at + g.length / 2) * 1e3) for g in core.gaps if g.leg == "centre"]
        outer_gaps = [((g.at - g.length / 2) * 1e3, (g.at + g.length / 2) * 1e3) for g in core.gaps if g.leg == "outer"]
        blocks = [(left, -yoke, right - left, yoke), (left, h_mm, right - left, yoke)]
        blocks += [(left, y0, s_mm - left, y1 - y0) for y0, y1 in _legs_without_gaps(0.0, h_mm, centre_gaps)]
        blocks += [(s_mm + w_mm, y0, right - s_mm - w_mm, y1 - y0) for y0, y1 in _legs_without_gaps(0.0, h_mm, outer_gaps)]
        for x, y, dx, dy in blocks:
            ax.add_patch(Rectangle((x, y), dx, dy, facecolor=core_face, edgecolor="0.45", linewidth=0.6, zorder=1))
        handles.append(Patch(facecolor=CORE_BODY, edgecolor="0.45",
                             label=f"core, \u03bcr = {core.relative_permeability:g}"
                             + (f", {len(core.gaps)} gap{'s' if len(core.gaps) != 1 else ''}" if core.gaps else "")))
        pad = 0.05 * (right - left)
        ax.set_xlim(left - (0.3 if axisymmetric else 1.0) * pad, right + pad)
        ax.set_ylim(-yoke - pad, h_mm + yoke + pad)
        if not axisymmetric:
            ax.axvline(left, color="0.35", linewidth=0.9, linestyle="-.", zorder=2)
            handles.append(Line2D([], [], color="0.35", linewidth=0.9, linestyle="-.",
                                  label="centre-leg symmetry plane"))
        show_axis = axisymmetric
    elif window.boundary == "ideal-core":
        wall = 0.06 * max(w_mm, h_mm)
        ax.add_patch(Rectangle((s_mm - wall, -wall), w_mm + 2 * wall, h_mm + 2 * wall, facecolor=CORE_GREY,
                               edgecolor="none", zorder=0))
        ax.add_patch(Rectangle((s_mm, 0.0), w_mm, h_mm, facecolor=window_face, edgecolor="0.3", linewidth=0.8,
                               zorder=0.5))
        handles.append(Patch(facecolor=CORE_GREY, label="ideal-core walls (\u03bcr \u2192 \u221e)"))
        ax.set_xlim((-wall if show_axis else s_mm - wall), s_mm + w_mm + wall)
        ax.set_ylim(-wall, h_mm + wall)
    else:
        ax.add_patch(Rectangle((s_mm, 0.0), w_mm, h_mm, fill=False, edgecolor="0.5", linestyle=":",
                               linewidth=0.9, zorder=0.5))
        handles.append(Line2D([], [], color="0.5", linestyle=":", linewidth=0.9, label="window outline (open boundary: air)"))
        pad = 0.15 * max(w_mm, h_mm)
        ax.set_xlim(-0.3 * pad if show_axis else s_mm - pad, s_mm + w_mm + pad)
        ax.set_ylim(-pad, h_mm + pad)
        if window.boundary == "open-wall":
            # the magnetic wall x = 0 (e.g. the centre leg's face beside the end turns), air on x > 0 only
            ax.add_patch(Rectangle((s_mm - pad, -pad), pad, h_mm + 2 * pad, facecolor=CORE_GREY,
                                   edgecolor="none", zorder=0))
            handles.append(Patch(facecolor=CORE_GREY, label="magnetic wall (\u03bcr \u2192 \u221e)"))
    margins = (window.margin_inner, window.margin_outer, window.margin_bottom, window.margin_top)
    if any(m > 0 for m in margins):
        inner, outer, bottom, top = (m * 1e3 for m in margins)
        ax.add_patch(Rectangle((s_mm + inner, bottom), w_mm - inner - outer, h_mm - bottom - top, fill=False,
                               edgecolor="0.55", linestyle="--", linewidth=0.6, zorder=0.6))
        handles.append(Line2D([], [], color="0.55", linestyle="--", linewidth=0.6, label="margins (keep-out)"))
    if axisymmetric:
        if show_axis:
            ax.axvline(0.0, color="0.2", linewidth=0.9, linestyle=(0, (8, 3, 2, 3)), zorder=2)
            handles.append(Line2D([], [], color="0.2", linewidth=0.9, linestyle=(0, (8, 3, 2, 3)),
                                  label="axis of rotation (r = 0)"))
        else:
            ax.annotate(f"axis r = 0 is {s_mm:.4g} mm to the left", xy=(0.01, 0.01), xycoords="axes fraction",
                        fontsize=7, color="0.3")
    return handles


def _draw_conductors(ax: Axes, report: Report, faces: Sequence, s_mm: float, numbers: bool) -> bool:
    """Every conductor outlined and filled by ``faces``; turn numbers inside when
    ``numbers``, the count is small and they fit.  Returns whether any was numbered."""
    conductors = report.sweep.conductors
    patches = []
    for c in conductors:
        x, y = c.x * 1e3 + s_mm, c.y * 1e3
        if c.shape == "round":
            patches.append(Circle((x, y), c.width / 2 * 1e3))
        else:
            patches.append(Rectangle((x - c.width / 2 * 1e3, y - c.height / 2 * 1e3), c.width * 1e3, c.height * 1e3))
    ax.add_collection(PatchCollection(patches, facecolors=list(faces), edgecolors="0.15", linewidths=0.6, zorder=3))
    ax.set_aspect("equal")
    if not numbers or len(conductors) > TURN_NUMBER_LIMIT:
        return False
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    figure = ax.get_figure()
    # points per mm of the drawing (the axes take about 5 of the 6.5 inches, or the height limit)
    panels = len(figure.axes)
    scale = 72.0 * min(5.0 / panels / (x1 - x0), (figure.get_size_inches()[1] - 1.6) / (y1 - y0))
    numbered = False
    for c, face in zip(conductors, faces):
        upright = c.shape != "round" and c.height > 2.5 * c.width
        across = (c.width if upright or c.shape == "round" else c.height) * 1e3 * scale
        along = (c.height if upright else c.width) * 1e3 * scale
        size = min(7.0, 0.7 * across, along / (0.65 * len(str(c.turn)) + 0.3))
        if size >= 4.0:  # smaller numbers would not be readable: leave them out
            numbered = True
            ax.text(c.x * 1e3 + s_mm, c.y * 1e3, str(c.turn), ha="center", va="center", fontsize=size,
                    rotation=90 if upright else 0, color=_text_colour(face), zorder=4)
    return numbered


def window_figure(report: Report, faces: Sequence, title: str, *, numbers: bool = True,
                  legend: Sequence = ()) -> tuple[Figure, Axes]:
    """The window with every conductor outlined and filled by ``faces`` (one
    colour per conductor, in the order of ``report.sweep.conductors``); turn
    numbers inside the conductors when ``numbers``, the count is small and
    they fit (the title then says so).  With ``[end_turns]`` the end-turn
    section (the same turns beside the centre leg's face) is drawn beside it.
    ``legend``: extra handles (e.g. winding patches) before the wall entries."""
    case = report.case
    s_mm = case.window.inner_radius * 1e3 if case.model.axisymmetric else 0.0
    sections = [(case, "")]
    if report.sweep.sections is not None:
        sections = [(case, "window section"), (end_section(case), "end-turn section, "
                     f"{float(np.mean(report.sweep.end_weights)) * 100:.3g} % of each turn's length")]
    figure = new_figure(6.5 * len(sections), 6.5)
    figure.set_layout_engine("compressed")  # suits fixed-aspect axes
    handles = list(legend)
    numbered = False
    axes = []
    for k, (section, label) in enumerate(sections):
        ax = figure.add_subplot(1, len(sections), k + 1)
        axes.append(ax)
        ax.set_facecolor("white")
        drawn = draw_walls(ax, SimpleNamespace(case=section), s_mm)
        handles += [h for h in drawn if h.get_label() not in [x.get_label() for x in handles]]
        if k == 0:
            fit_height(figure, ax, len(sections))
        numbered |= _draw_conductors(ax, report, faces, s_mm, numbers)
        label_axes(ax, case.model.axisymmetric)
        if label:
            ax.set_title(label, fontsize=8)
    if numbered:
        note = "numbers: turn within its winding"
        title += f"; {note}" if len(title.splitlines()[-1]) + len(note) < 80 else f"\n{note}"
    if len(sections) == 1:
        axes[0].set_title(title, fontsize=9)
    else:
        figure.suptitle(title, fontsize=9)
    figure.legend(handles=handles, frameon=False, fontsize=7, loc="outside lower center", ncols=2)
    return figure, axes[0]


def write(report: Report, directory: Path) -> list[Path]:
    if not report.sweep.conductors:
        return []
    colours = winding_colours(report)
    faces = [colours[c.winding] for c in report.sweep.conductors]
    legend = [Patch(facecolor=colours[w.name], edgecolor="0.15", label=f"{w.name} ({w.turns} turns)")
              for w in report.windings]
    case = report.case
    scale = ("axisymmetric: every turn a ring" if case.model.axisymmetric
             else f"planar cross-section, {describe(case, report.sweep.conductors)}")
    figure, _ = window_figure(report, faces, f"{case.title}\n{scale}", legend=legend)
    return [save(figure, directory / "geometry.png")]
