"""conductors.csv: loss of every turn at every frequency (W, whole turn length)."""

from __future__ import annotations

import csv
import io
from pathlib import Path

from ..report import Report
from ..atomic import replace_text


def write(report: Report, directory: Path) -> list[Path]:
    loss = report.conductor_loss_w()
    conductor_rdc = report.conductor_rdc_ohm()   # whole turns, each its own length
    buffer = io.StringIO()
    out = csv.writer(buffer, lineterminator="\n")
    out.writerow(["frequency_hz", "winding", "turn", "x_m", "y_m", "rdc_ohm", "loss_w", "loss_over_dc_loss"])
    currents = abs(report.sweep.currents)
    for i, f in enumerate(report.sweep.frequencies):
        for c in report.sweep.conductors:
            rdc = conductor_rdc[c.index]
            dc_loss = rdc * currents[c.index] ** 2
            ratio = f"{loss[i, c.index] / dc_loss:.8g}" if dc_loss > 0 else ""
            out.writerow([f"{f:.8g}", c.winding, c.turn, f"{c.x:.8g}", f"{c.y:.8g}", f"{rdc:.8g}",
                          f"{loss[i, c.index]:.8g}", ratio])
    return [replace_text(directory / "conductors.csv", buffer.getvalue())]
