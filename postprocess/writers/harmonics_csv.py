"""harmonics.csv: the losses of the current waveforms, one row per winding and
harmonic (harmonic 0 is the DC part); a winding's rows add up to its total loss.
Written only for cases whose windings have waveforms."""

from __future__ import annotations

import csv
import io
from pathlib import Path

from ..atomic import replace_text
from ..report import Report

COLUMNS = ["winding", "harmonic", "frequency_hz", "current_a_rms", "phase_deg", "loss_w", "rac_ohm",
           "rac_over_rdc", "share_of_winding_loss"]


def _cell(value: float | None) -> str:
    return "" if value is None else f"{value:.8g}"


def write(report: Report, directory: Path) -> list[Path]:
    result = report.harmonics
    if result is None:
        return []
    buffer = io.StringIO()
    out = csv.writer(buffer, lineterminator="\n")
    out.writerow(COLUMNS)
    for w in result.windings:
        total = w.total_loss_w

        def share(loss: float) -> float | None:
            return loss / total if total > 0.0 else None

        # DC: the current is the signed mean value, its resistance Rdc
        out.writerow([w.name, 0, "0", _cell(w.dc_a), "", _cell(w.dc_loss_w), _cell(w.rdc_ohm), _cell(1.0),
                      _cell(share(w.dc_loss_w))])
        for n, f, amps, phase, loss in zip(result.harmonics, result.frequencies_hz, w.harmonic_rms_a,
                                           w.harmonic_phase_deg, w.harmonic_loss_w):
            rac = loss / amps ** 2 if amps > 1e-12 * max(w.rms_a, 1e-300) else None
            out.writerow([w.name, n, _cell(f), _cell(amps), _cell(phase), _cell(loss), _cell(rac),
                          _cell(None if rac is None or w.rdc_ohm <= 0 else rac / w.rdc_ohm), _cell(share(loss))])
    return [replace_text(directory / "harmonics.csv", buffer.getvalue())]
