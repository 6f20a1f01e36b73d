"""Shared plot helpers: a figure without global state, saved atomically."""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from .atomic import replace_bytes

LINE_MAP = "viridis"   # perceptually uniform; line colours are sampled from it
FIELD_MAP = "magma"    # perceptually uniform; |J| maps


def new_figure(width_in: float = 7.0, height_in: float = 4.5) -> Figure:
    figure = Figure(figsize=(width_in, height_in), dpi=120, layout="constrained")
    FigureCanvasAgg(figure)
    return figure


def line_colours(count: int, cmap) -> list:
    return [cmap(x) for x in np.linspace(0.12, 0.78, max(count, 1))]


def render(figure: Figure, file_format: str = "png") -> bytes:
    """The figure as the bytes of a ``file_format`` file (png, svg, pdf ...)."""
    buffer = io.BytesIO()
    figure.savefig(buffer, format=file_format)
    return buffer.getvalue()


def save(figure: Figure, path: Path) -> Path:
    """Write ``figure`` to ``path`` (format from the suffix) whole or not at all."""
    return replace_bytes(path, render(figure, path.suffix.lstrip(".")))


def linear_subtriangles(triangles: np.ndarray) -> np.ndarray:
    """Split 6-node triangles (corners, edge nodes 01, 12, 20) into four
    3-node triangles each, for plotting: (m, 3) * 4."""
    t = triangles
    return np.vstack([np.stack([t[0], t[3], t[5]], axis=1), np.stack([t[3], t[1], t[4]], axis=1),
                      np.stack([t[5], t[4], t[2]], axis=1), np.stack([t[3], t[4], t[5]], axis=1)])
