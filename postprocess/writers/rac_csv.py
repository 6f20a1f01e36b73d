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
    buffer = io.StringIO()
    out = csv.writer(buffer, lineterminator="\n")
    out.writerow(["frequency_hz", "winding", "current_a_rms", "rdc_ohm", "rac_ohm", "rac_over_rdc", "loss_w"])
    for i, f in enumerate(report.sweep.frequencies):
        for w in report.windings:
            out.writerow([f"{f:.8g}", w.name, f"{w.current_a_rms:.8g}", _cell(w.rdc_ohm),
                          _cell(w.rac_ohm[i]), _cell(w.rac_over_rdc[i]), _cell(w.loss_w[i])])
    return [replace_text(directory / "rac.csv", buffer.getvalue())]
