"""The benchmark grids of issue 18 as case documents (used by
tests/test_forecast.py and tests/benchmarks/run_scaling.py).

Bare 0.5 mm round copper conductors on a 0.6 mm square pitch in an
ideal-core window 0.4 + 0.6 columns + 0.2 mm wide and 0.2 + 0.6 rows + 0.2 mm
tall, the first centre at (0.7 mm, 0.5 mm); alternate columns belong to two
windings with equal and opposite currents; log-spaced frequencies from 1 kHz
to 3 MHz.
"""

from __future__ import annotations

#: (columns, rows) of each benchmark grid, by conductor count
GRIDS = {48: (4, 12), 192: (8, 24), 768: (16, 48), 3072: (32, 96)}


def grid_document(columns: int, rows: int, points: int = 100, frequencies: list[float] | None = None) -> str:
    """The case file text of a columns x rows grid; ``frequencies`` (Hz), if
    given, replace the ``points`` log-spaced ones (the mesh stays sized for 3 MHz)."""
    width = 0.4 + 0.6 * columns + 0.2
    height = 0.2 + 0.6 * rows + 0.2
    if frequencies is None:
        sweep = f'[sweep]\nstart = "1 kHz"\nstop = "3 MHz"\npoints = {points}\n'
    else:
        sweep = "[sweep]\nfrequencies = [" + ", ".join(f'"{f!r} Hz"' for f in frequencies) + "]\n"
    lines = [f'title = "Benchmark grid: {columns * rows} round conductors, {columns} x {rows}"',
             '[model]\nsymmetry = "planar"\nlength = "1 m"\ntemperature = "20 degC"', sweep,
             '[mesh]\nfrequency = "3 MHz"',
             f'[window]\nwidth = "{width:.6g} mm"\nheight = "{height:.6g} mm"\nboundary = "ideal-core"',
             '[[winding]]\nname = "primary"\nmaterial = "copper"\ncurrent = "1 A"\nphase = 0',
             '[[winding]]\nname = "secondary"\nmaterial = "copper"\ncurrent = "1 A"\nphase = 180']
    for column in range(columns):
        winding = "primary" if column % 2 == 0 else "secondary"
        x = 0.7 + 0.6 * column
        for row in range(rows):
            lines.append(f'[[conductor]]\nwinding = "{winding}"\nshape = "round"\ndiameter = "0.5 mm"\n'
                         f'at = ["{x:.6g} mm", "{0.5 + 0.6 * row:.6g} mm"]')
    return "\n\n".join(lines) + "\n"
