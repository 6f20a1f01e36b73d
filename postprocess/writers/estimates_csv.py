"""estimates.csv: the field solution beside each hand estimate, per winding and
frequency, with the difference in % and the estimate's notes (where its
assumptions do not hold) next to the number."""

from __future__ import annotations

import csv
import io
from pathlib import Path

from ..atomic import replace_text
from ..report import Report


def difference_percent(estimate: float | None, fem: float | None) -> float | None:
    """(estimate - FEM) / FEM in %."""
    if estimate is None or fem is None or fem == 0.0:
        return None
    return 100.0 * (estimate - fem) / fem


def write(report: Report, directory: Path) -> list[Path]:
    buffer = io.StringIO()
    out = csv.writer(buffer, lineterminator="\n")
    out.writerow(["frequency_hz", "winding", "method", "fem_rac_over_rdc", "estimate_rac_over_rdc",
                  "difference_percent", "notes"])
    for method, by_winding in report.estimates.items():
        for w in report.windings:
            entry = by_winding.get(w.name, {})
            values = entry.get("rac_over_rdc", [])
            notes = "; ".join(entry.get("notes", []))
            for i, f in enumerate(report.sweep.frequencies):
                fem = w.rac_over_rdc[i]
                estimate = values[i] if i < len(values) else None
                diff = difference_percent(estimate, fem)
                out.writerow([f"{f:.8g}", w.name, method, "" if fem is None else f"{fem:.6g}",
                              "" if estimate is None else f"{estimate:.6g}",
                              "" if diff is None else f"{diff:+.2f}", notes])
    return [replace_text(directory / "estimates.csv", buffer.getvalue())]
