"""Shared plot helpers: a figure without global state, saved atomically."""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from .atomic import temporary_sibling

LINE_MAP = "viridis"   # perceptually uniform; line colours are sampled from it
FIELD_MAP = "magma"    # perceptually uniform; |J| maps


def new_figure(width_in: float = 7.0, height_in: float = 4.5) -> Figure:
    figure = Figure(figsize=(width_in, height_in), dpi=120, layout="constrained")
    FigureCanvasAgg(figure)
    return figure


def line_colours(count: int, cmap) -> list:
    return [cmap(x) for x in np.linspace(0.12, 0.78, max(count, 1))]


def save(figure: Figure, path: Path) -> Path:
    tmp = temporary_sibling(path)
    figure.savefig(tmp, format=path.suffix.lstrip("."))
    os.replace(tmp, path)
    return path


def linear_subtriangles(triangles: np.ndarray) -> np.ndarray:
    """Split 6-node triangles (corners, edge nodes 01, 12, 20) into four
    3-node triangles each, for plotting: (m, 3) * 4."""
    t = triangles
    return np.vstack([np.stack([t[0], t[3], t[5]], axis=1), np.stack([t[3], t[1], t[4]], axis=1),
                      np.stack([t[5], t[4], t[2]], axis=1), np.stack([t[3], t[4], t[5]], axis=1)])
