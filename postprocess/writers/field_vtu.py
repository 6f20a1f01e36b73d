"""field.vtu: the field at the highest frequency for field viewers (meshio).

Point data: vector potential real/imaginary parts (Wb/m), |J| (A/m^2 RMS) and
the real/imaginary parts of J; cell data: region (conductor index, -1 air).
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import meshio
import numpy as np

from ..report import Report
from ..atomic import replace_bytes


def write(report: Report, directory: Path) -> list[Path]:
    snap = report.sweep.snapshot
    if snap is None:
        return []
    points = np.vstack([snap.points, np.zeros(snap.points.shape[1])]).T
    mesh = meshio.Mesh(
        points, [("triangle6", snap.triangles.T.astype(np.int64))],
        point_data={"A_re_Wb_per_m": snap.potential.real, "A_im_Wb_per_m": snap.potential.imag,
                    "J_abs_A_per_m2": np.abs(snap.current_density),
                    "J_re_A_per_m2": snap.current_density.real, "J_im_A_per_m2": snap.current_density.imag},
        cell_data={"region": [snap.region.astype(np.int32)]},
    )
    return [replace_bytes(directory / "field.vtu", vtu_bytes(mesh, directory))]


def vtu_bytes(mesh: meshio.Mesh, folder: Path) -> bytes:
    """``mesh`` as the bytes of a VTU file.  meshio writes VTU only to a named
    file: a private temporary file in ``folder`` (unique name), removed again."""
    fd, name = tempfile.mkstemp(dir=folder, prefix=".field.vtu.", suffix=".tmp")
    os.close(fd)
    try:
        meshio.write(name, mesh, file_format="vtu")
        return Path(name).read_bytes()
    finally:
        Path(name).unlink(missing_ok=True)
