"""rac.csv: one row per frequency and winding (Rdc, Rac in ohm, loss in W)."""

from __future__ import annotations

import csv
import io
from pathlib import Path

from ..report import Report
from ..atomic import replace_text


def _cell(value: float | None) -> str:
    return "" if value is None else f"{value:.8g}"


def write(report: Report, directory: Path) -> list[Path]:
    """With ``[end_turns]`` the whole-turn columns are followed by Rac/Rdc and
    the loss share of the window section and of the end-turn section."""
    buffer = io.StringIO()
    out = csv.writer(buffer, lineterminator="\n")
    sections = report.sections
    extra = (["rac_over_rdc_window", "loss_window_w", "rac_over_rdc_end", "loss_end_w"] if sections else [])
    out.writerow(["frequency_hz", "winding", "current_a_rms", "rdc_ohm", "rac_ohm", "rac_over_rdc", "loss_w"] + extra)
    for i, f in enumerate(report.sweep.frequencies):
        for w in report.windings:
            cells = []
            for part in ("window", "end") if sections else ():
                s = sections[part]["windings"][w.name]
                cells += [_cell(s["rac_over_rdc"][i]), _cell(s["loss_w"][i])]
            out.writerow([f"{f:.8g}", w.name, f"{w.current_a_rms:.8g}", _cell(w.rdc_ohm),
                          _cell(w.rac_ohm[i]), _cell(w.rac_over_rdc[i]), _cell(w.loss_w[i])] + cells)
    return [replace_text(directory / "rac.csv", buffer.getvalue())]
