"""mmf.png: the MMF across the window from the field solution, with the ideal
ampere-turn staircase of Ampere's law over it and the layer faces marked."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..plotting import new_figure, save
from racfield.geometry.case.units import format_frequency

from ..report import Report, mmf_document


def write(report: Report, directory: Path) -> list[Path]:
    doc = mmf_document(report)
    if doc is None:
        return []
    shift = report.case.axis_offset or 0.0
    s_mm = (np.array(doc["position_m"]) + shift) * 1e3
    figure = new_figure(7.0, 4.0)
    ax = figure.add_subplot()
    for face in doc["layer_faces_m"]:
        ax.axvline((face + shift) * 1e3, color="0.88", linewidth=0.8, zorder=0)
    ax.plot(s_mm, doc["ideal_a"], color="#e08a1e", linewidth=1.4, linestyle="--",
            label="ideal staircase (Ampere's law, DC current sharing)")
    ax.plot(s_mm, doc["field_a"], color="#2a5d8f", linewidth=1.8,
            label=f"field solution at {format_frequency(doc['frequency_hz'])}")
    ax.axhline(0.0, color="0.5", linewidth=0.7)
    across = "r, radius" if report.case.model.axisymmetric else ("x, from the inner wall" if doc["across_width"]
                                                                 else "y, from the window bottom")
    ax.set_xlabel(f"{across} (mm); grey lines: layer faces")
    ax.set_ylabel(f"MMF (A, RMS, in phase with {doc['reference_winding']})")
    ax.set_title(f"{report.case.title}\nmagnetomotive force across the window", fontsize=9)
    ax.legend(frameon=False, fontsize=8)
    ax.grid(True, axis="y", color="0.92", linewidth=0.6)
    return [save(figure, directory / "mmf.png")]
