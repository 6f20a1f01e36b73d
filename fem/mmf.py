"""Magnetomotive force across the window from the field solution.

At each position s across the layers (x for layers stacked across the width,
y for layers stacked along the height) the MMF is the line integral of H
across the window along the other direction, taken as Ampere's law takes it
(counter-clockwise around the part of the window before s):

    planar, across-width:  F(x) =  int_0^h H_y(x, y) dy
    planar, along-height:  F(y) = -int_0^w H_x(x, y) dx

and with the opposite sign in axisymmetric models (the r-z plane's
counter-clockwise normal is -phi).  With an ideal core (H = 0 in the core)
F(s) equals the current enclosed before s: the ampere-turn staircase.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from racfield.geometry.layout import Conductor

from .probe import field_strength_at


@dataclass
class MmfProfile:
    """``positions`` (m) across the layers; ``field`` the MMF from the solution
    and ``ideal`` the Ampere's-law staircase (A RMS phasors), both anchored at
    the field MMF next to the first wall; ``boundaries`` layer faces (m)."""

    positions: np.ndarray
    field: np.ndarray
    ideal: np.ndarray
    boundaries: np.ndarray
    across_width: bool


def _fraction_before(c: Conductor, s: np.ndarray, across_width: bool) -> np.ndarray:
    """Share of conductor ``c``'s DC current lying before position ``s``."""
    centre, size = (c.x, c.width) if across_width else (c.y, c.height)
    t = np.clip((s - (centre - size / 2)) / size, 0.0, 1.0)
    if c.shape != "round":
        return t
    theta = 2.0 * np.arccos(1.0 - 2.0 * t)          # area of a circle segment
    return (theta - np.sin(theta)) / (2.0 * math.pi)


def mmf_profile(problem, potential: np.ndarray, conductors: list[Conductor], currents: np.ndarray,
                width: float, height: float, across_width: bool, core_permeability: float = 1.0,
                samples: int = 161, line_points: int = 401) -> MmfProfile:
    """The MMF profile of a solved field (``potential`` on ``problem``'s DOFs,
    conductor ``currents`` in A RMS)."""
    span, depth = (width, height) if across_width else (height, width)
    edge = 1e-4 * span
    s = np.linspace(edge, span - edge, samples)
    t = np.linspace(0.0, depth, line_points)
    ss, tt = np.meshgrid(s, t, indexing="ij")
    points = np.vstack([ss.ravel(), tt.ravel()]) if across_width else np.vstack([tt.ravel(), ss.ravel()])
    hx, hy = field_strength_at(problem, potential, points, core_permeability)
    component = (hy if across_width else -hx).reshape(samples, line_points)
    component = np.where(np.isnan(component), 0.0, component)
    field = np.trapezoid(component, t, axis=1)
    if problem.radius_offset is not None:
        field = -field
    enclosed = sum(currents[c.index] * _fraction_before(c, s, across_width) for c in conductors)
    ideal = field[0] + enclosed - (enclosed[0] if np.ndim(enclosed) else 0.0)
    faces = sorted({round(v, 12) for c in conductors for v in
                    (((c.x - c.width / 2), (c.x + c.width / 2)) if across_width
                     else ((c.y - c.height / 2), (c.y + c.height / 2)))})
    return MmfProfile(s, field, np.asarray(ideal, dtype=complex) * np.ones_like(s), np.array(faces), across_width)
