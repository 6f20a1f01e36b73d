"""Result files, one module per format behind a small registry.

Each writer is a plain function ``write(report, directory) -> list[Path]``;
results.json is written (and read back) by :mod:`racfield.postprocess.results_file`.
"""

from __future__ import annotations

from pathlib import Path
from typing import Callable

from .. import results_file
from ..report import Report
from . import (conductor_loss_plot, conductors_csv, estimates_csv, estimates_plot, field_plot, field_vtu,
               geometry_plot, harmonics_csv, mmf_plot, potential_plot, rac_csv, rac_plot, temperature_plot)

Writer = Callable[[Report, Path], list[Path]]

WRITERS: dict[str, Writer] = {
    "results.json": results_file.write,   # the module that also reads it back
    "rac.csv": rac_csv.write,
    "harmonics.csv": harmonics_csv.write,
    "conductors.csv": conductors_csv.write,
    "estimates.csv": estimates_csv.write,
    "rac_over_rdc.png": rac_plot.write,
    "estimates.png": estimates_plot.write,
    "geometry.png": geometry_plot.write,
    "current_density.png": field_plot.write,
    "conductor_loss.png": conductor_loss_plot.write,
    "temperature.png": temperature_plot.write,   # only with [thermal]
    "potential.png": potential_plot.write,       # only with [dielectric]
    "mmf.png": mmf_plot.write,
    "field.vtu": field_vtu.write,
}


def write_all(report: Report, directory: Path, names: list[str] | None = None) -> list[Path]:
    """Write the named result files (all by default) into ``directory``."""
    directory.mkdir(parents=True, exist_ok=True)
    written: list[Path] = []
    for name in names or list(WRITERS):
        written += WRITERS[name](report, directory)
    return written
