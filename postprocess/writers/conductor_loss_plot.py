"""conductor_loss.png: every turn filled by its loss at the highest frequency
(W per turn: the whole turn length in a planar model, the whole ring in an
axisymmetric one), on the drawing of geometry.png."""

from __future__ import annotations

from pathlib import Path

from matplotlib import colormaps
from matplotlib.cm import ScalarMappable
from matplotlib.colors import Normalize

from racfield.geometry.turn_length import describe

from ..plotting import FIELD_MAP, save
from racfield.geometry.case.units import format_frequency

from ..report import Report
from .geometry_plot import window_figure


def write(report: Report, directory: Path) -> list[Path]:
    if not report.sweep.conductors or len(report.sweep.frequencies) == 0:
        return []
    loss = report.conductor_loss_w()[-1]
    low, high = float(loss.min()), float(loss.max())
    if high <= low:  # all equal (or all zero): a range around the value
        low, high = low - 0.5 * abs(low) - 1e-30, high + 0.5 * abs(high) + 1e-30
    norm = Normalize(vmin=low, vmax=high)
    cmap = colormaps[FIELD_MAP]
    faces = [cmap(norm(p)) for p in loss]
    case = report.case
    per = "whole rings" if case.model.axisymmetric else describe(case, report.sweep.conductors, "turn length {} mm")
    frequency = format_frequency(float(report.sweep.frequencies[-1]))
    figure, ax = window_figure(report, faces, f"{case.title}\nloss of each turn at {frequency} ({per}); "
                               f"total {float(loss.sum()):.4g} W")
    bar = figure.colorbar(ScalarMappable(norm=norm, cmap=cmap), ax=ax, shrink=0.85)
    bar.set_label("loss per turn (W)")
    bar.formatter.set_powerlimits((-3, 4))
    return [save(figure, directory / "conductor_loss.png")]
