"""rac_over_rdc.png: Rac/Rdc of every winding against frequency (log axis)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib import colormaps
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.ticker import EngFormatter, NullFormatter

from ..plotting import LINE_MAP, line_colours, new_figure, save
from ..report import Report


def write(report: Report, directory: Path) -> list[Path]:
    figure = rac_figure(report)
    return [] if figure is None else [save(figure, directory / "rac_over_rdc.png")]


def rac_figure(report: Report) -> Figure | None:
    """The figure of rac_over_rdc.png: Rac/Rdc (1) of every winding, with the
    1-D hand estimates dashed, against frequency in Hz on a log axis (None
    when the sweep has no frequency above 0 Hz)."""
    freqs = np.asarray(report.sweep.frequencies)
    positive = freqs > 0
    if positive.sum() < 1:
        return None
    figure = new_figure()
    ax = figure.add_subplot()
    colours = line_colours(len(report.windings), colormaps[LINE_MAP])
    markers = ["o", "s", "^", "D", "v", "P", "X"]
    top = 1.0
    styles = {"dowell": ("--", "Dowell"), "ferreira": (":", "Ferreira")}
    for i, (w, colour) in enumerate(zip(report.windings, colours)):
        ratio = np.array([np.nan if r is None else r for r in w.rac_over_rdc])
        if np.all(np.isnan(ratio)):
            continue
        top = max(top, np.nanmax(ratio[positive]))
        ax.plot(freqs[positive], ratio[positive], color=colour, marker=markers[i % len(markers)],
                markersize=4, linewidth=1.8, label=f"{w.name} ({w.turns} turns, Rdc {w.rdc_ohm * 1e3:.4g} m\u03a9)")
        for part, style in (("window", (0, (5, 2, 1, 2))), ("end", (0, (3, 1, 1, 1, 1, 1)))) if report.sections else ():
            values = report.sections[part]["windings"][w.name]["rac_over_rdc"]
            section = np.array([np.nan if v is None else v for v in values], dtype=float)
            ax.plot(freqs[positive], section[positive], color=colour, linestyle=style, linewidth=1.0)
        for method, (style, _) in styles.items():
            values = report.estimates.get(method, {}).get(w.name, {}).get("rac_over_rdc", [])
            estimate = np.array([np.nan if v is None else v for v in values], dtype=float)
            if estimate.size != freqs.size or np.all(np.isnan(estimate[positive])):
                continue
            top = max(top, np.nanmax(estimate[positive]))
            ax.plot(freqs[positive], estimate[positive], color=colour, linestyle=style, linewidth=1.0)
    ax.axhline(1.0, color="0.55", linewidth=0.8, linestyle="--")
    ax.set_xscale("log")
    if top > 20:
        ax.set_yscale("log")
    ax.xaxis.set_major_formatter(EngFormatter(unit="Hz"))
    ax.xaxis.set_minor_formatter(NullFormatter())
    ax.set_xlabel("Frequency (Hz, log scale)")
    ax.set_ylabel("Rac / Rdc (1)")
    ax.set_title(f"{report.case.title}\n{report.case.model.temperature_c:g} degC; model estimate, see the README caution",
                 fontsize=9)
    ax.grid(True, which="major", color="0.85", linewidth=0.7)
    ax.grid(True, which="minor", color="0.93", linewidth=0.5)
    handles, labels = ax.get_legend_handles_labels()
    handles += [Line2D([], [], color="0.35", linestyle=style, linewidth=1.0) for style, _ in styles.values()]
    labels += [f"{name} estimate (1-D; see the notes in results.json)" for _, name in styles.values()]
    if report.sections:
        handles += [Line2D([], [], color="0.35", linestyle=s, linewidth=1.0) for s in ((0, (5, 2, 1, 2)), (0, (3, 1, 1, 1, 1, 1)))]
        labels += ["window section alone", "end-turn section alone (markers: whole turn)"]
    ax.legend(handles, labels, frameon=False, fontsize=8)
    return figure
