"""estimates.png: per winding, the field solution's Rac/Rdc beside each hand
estimate (Dowell, Ferreira) against frequency, and the difference in %, with
the estimates' notes (where their assumptions do not hold) as a footnote."""

from __future__ import annotations

import textwrap
from pathlib import Path

import numpy as np
from matplotlib import colormaps
from matplotlib.ticker import EngFormatter, NullFormatter

from ..plotting import LINE_MAP, line_colours, new_figure, save
from ..report import Report
from .estimates_csv import difference_percent

METHOD_NAMES = {"dowell": "Dowell", "ferreira": "Ferreira"}
STYLES = ("--", ":", "-.")
FOOTNOTE_WIDTH = 125   #: characters per footnote line
FOOTNOTE_LINES = 14    #: at most this many footnote lines; the rest are in estimates.csv


def method_name(method: str) -> str:
    return METHOD_NAMES.get(method, method.capitalize())


def _values(values, count: int) -> np.ndarray:
    out = np.full(count, np.nan)
    for i, v in enumerate(list(values)[:count]):
        out[i] = np.nan if v is None else v
    return out


def note_lines(report: Report) -> list[str]:
    """One line per distinct note of each winding, naming the methods it belongs to."""
    lines = []
    for w in report.windings:
        seen: dict[str, list[str]] = {}
        for method, by_winding in report.estimates.items():
            for note in by_winding.get(w.name, {}).get("notes", []):
                seen.setdefault(note, []).append(method_name(method))
        for note, methods in seen.items():
            lines.append(f"{w.name} ({', '.join(methods)}): {note}")
    return lines


def write(report: Report, directory: Path) -> list[Path]:
    freqs = np.asarray(report.sweep.frequencies, dtype=float)
    positive = freqs > 0
    methods = [m for m in report.estimates if report.estimates[m]]
    windings = [w for w in report.windings if any(r is not None for r in w.rac_over_rdc)]
    if not positive.any() or not methods or not windings:
        return []
    notes = note_lines(report)
    wrapped = [part for line in notes for part in textwrap.wrap(line, FOOTNOTE_WIDTH, subsequent_indent="    ")]
    if len(wrapped) > FOOTNOTE_LINES:
        wrapped = wrapped[:FOOTNOTE_LINES - 1] + ["... more notes in estimates.csv and results.json"]
    footnote = ["Notes of the estimates (where their 1-D assumptions do not hold):"] + (wrapped or ["none"])
    note_height = 0.16 * len(footnote) + 0.2
    figure = new_figure(10.0, 2.7 * len(windings) + note_height + 0.8)
    grid = figure.add_gridspec(len(windings) + 1, 2, height_ratios=[2.7] * len(windings) + [note_height])
    colours = line_colours(len(methods), colormaps[LINE_MAP])
    f = freqs[positive]
    first = None
    for row, w in enumerate(windings):
        left = figure.add_subplot(grid[row, 0], sharex=first)
        first = first or left
        right = figure.add_subplot(grid[row, 1], sharex=first)
        fem = _values(w.rac_over_rdc, freqs.size)
        left.plot(f, fem[positive], color="black", marker="o", markersize=3.5, linewidth=1.6, label="field solution")
        for i, (method, colour) in enumerate(zip(methods, colours)):
            estimate = _values(report.estimates[method].get(w.name, {}).get("rac_over_rdc", []), freqs.size)
            diff = np.array([np.nan if d is None else d for d in
                             (difference_percent(None if np.isnan(e) else float(e), None if np.isnan(r) else float(r))
                              for e, r in zip(estimate, fem))])
            style = STYLES[i % len(STYLES)]
            left.plot(f, estimate[positive], color=colour, linestyle=style, linewidth=1.5,
                      label=f"{method_name(method)} estimate")
            right.plot(f, diff[positive], color=colour, linestyle=style, marker="s", markersize=3, linewidth=1.3,
                       label=f"{method_name(method)} vs field solution")
        left.axhline(1.0, color="0.6", linewidth=0.7, linestyle="--")
        right.axhline(0.0, color="0.45", linewidth=0.8)
        left.set_ylabel(f"{w.name}\nRac / Rdc (1)")
        right.set_ylabel("(estimate \u2212 field) / field (%)")
        for ax in (left, right):
            ax.set_xscale("log")
            ax.grid(True, which="major", color="0.85", linewidth=0.7)
            ax.grid(True, which="minor", color="0.94", linewidth=0.5)
            ax.xaxis.set_major_formatter(EngFormatter(unit="Hz"))
            ax.xaxis.set_minor_formatter(NullFormatter())
            if row == len(windings) - 1:
                ax.set_xlabel("Frequency (Hz, log scale)")
            else:
                ax.tick_params(labelbottom=False)
        if row == 0:
            left.legend(frameon=False, fontsize=8)
            right.legend(frameon=False, fontsize=8)
            left.set_title("Rac/Rdc: field solution and hand estimates", fontsize=9)
            right.set_title("difference of each estimate from the field solution", fontsize=9)
    figure.suptitle(f"{report.case.title}\n{report.case.model.temperature_c:g} degC; "
                    "hand estimates use the 1-D layer model", fontsize=9)
    text_ax = figure.add_subplot(grid[-1, :])
    text_ax.axis("off")
    text_ax.text(0.0, 1.0, "\n".join(footnote), ha="left", va="top", fontsize=7, color="0.2",
                 transform=text_ax.transAxes, wrap=False)
    return [save(figure, directory / "estimates.png")]
