"""current_density.png: |J| in the conductors with flux lines, at the highest frequency."""

from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib import colormaps
from matplotlib.collections import PolyCollection
from matplotlib.patches import Rectangle
from matplotlib.tri import Triangulation

from ..plotting import FIELD_MAP, linear_subtriangles, new_figure, save
from racfield.geometry.mesher import CORE

from racfield.geometry.case.units import format_frequency

from ..report import Report


def write(report: Report, directory: Path) -> list[Path]:
    snap = report.sweep.snapshot
    if snap is None:
        return []
    window = report.case.window
    # axisymmetric models are drawn at their true radius r = x + r0
    shift = report.case.axis_offset or 0.0
    x_mm, y_mm = (snap.points[0] + shift) * 1e3, snap.points[1] * 1e3
    s_mm = shift * 1e3
    region4 = np.tile(snap.region, 4)
    sub = linear_subtriangles(snap.triangles)
    everything = Triangulation(x_mm, y_mm, sub)
    metal = Triangulation(x_mm, y_mm, sub[region4 >= 0])

    figure = new_figure(6.5, 6.5)
    figure.set_layout_engine("compressed")  # suits fixed-aspect axes
    ax = figure.add_subplot()
    ax.set_facecolor("#f4f4f2")
    j_mm2 = np.abs(snap.current_density) * 1e-6
    mappable = ax.tripcolor(metal, j_mm2, cmap=colormaps[FIELD_MAP], shading="gouraud",
                            vmin=0.0, vmax=float(j_mm2.max()) or 1.0)
    flux = snap.potential.real
    if np.ptp(flux) > 0:
        ax.tricontour(everything, flux, levels=24, colors="#3b6ea8", linewidths=0.6, linestyles="solid", alpha=0.9)
    w_mm, h_mm = window.width * 1e3, window.height * 1e3
    core = report.case.core
    if core is not None:
        body = sub[region4 == CORE]
        ax.add_collection(PolyCollection(np.stack([x_mm[body], y_mm[body]], axis=-1), facecolors="#b9b9b4",
                                         edgecolors="none", zorder=-1))
        left = -core.centre_leg_width / 2 * 1e3 + s_mm
        right = (window.width + core.outer_leg_width) * 1e3 + s_mm
        yoke = core.yoke_thickness * 1e3
        pad = 0.05 * (right - left)
        ax.set_xlim(left, right + pad)
        ax.set_ylim(-yoke - pad, h_mm + yoke + pad)
        ax.axvline(left, color="0.4", linewidth=0.8, linestyle="-.")
    elif window.boundary == "ideal-core":
        wall = 0.06 * max(w_mm, h_mm)
        core = Rectangle((s_mm - wall, -wall), w_mm + 2 * wall, h_mm + 2 * wall, facecolor="#9a9a96",
                         edgecolor="none", zorder=-2)
        ax.add_patch(core)
        ax.add_patch(Rectangle((s_mm, 0), w_mm, h_mm, facecolor="#f4f4f2", edgecolor="none", zorder=-1))
        ax.set_xlim(s_mm - wall, s_mm + w_mm + wall)
        ax.set_ylim(-wall, h_mm + wall)
    else:
        ax.add_patch(Rectangle((s_mm, 0), w_mm, h_mm, fill=False, edgecolor="0.5", linestyle=":", linewidth=0.8))
        pad = 0.15 * max(w_mm, h_mm)
        # axisymmetric: from the axis (the mesh has no r < 0), also when the window starts there;
        # beside a magnetic wall the mesh has no x < 0 either
        wall = window.boundary == "open-wall"
        ax.set_xlim(0.0 if report.case.model.axisymmetric or wall else -pad, s_mm + w_mm + pad)
        if wall:
            ax.axvline(s_mm, color="0.4", linewidth=1.2, linestyle="-")
        ax.set_ylim(-pad, h_mm + pad)
    ax.set_aspect("equal")
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    figure.set_size_inches(6.5, min(max(3.0, 4.8 * (y1 - y0) / (x1 - x0) + 0.9), 9.5))
    if report.case.model.axisymmetric:
        ax.set_xlabel("r, radius from the axis (mm)")
        ax.set_ylabel("z, height above the window bottom (mm)")
    else:
        ax.set_xlabel("x, from the inner wall (mm)")
        ax.set_ylabel("y, from the window bottom (mm)")
    ax.set_title(f"|J| and flux lines at {format_frequency(snap.frequency)}", fontsize=10)
    bar = figure.colorbar(mappable, ax=ax, shrink=0.85)
    bar.set_label("|J| (A/mm\u00b2, RMS)")
    return [save(figure, directory / "current_density.png")]
