"""Numerical guards: warnings about a sweep's mesh and solves, as plain data.

A warning is a dict ``{"kind": str, "frequency_hz": float | None, "message":
str}`` (one line, no newline).  The kinds and their rules:

- ``"under-resolved-mesh"``: at a solved frequency, the largest element edge
  on the surface of a solid conductor, measured on the mesh, is longer than
  that conductor's skin depth at the case temperature, i.e. fewer than
  ``MIN_ELEMENTS_PER_SKIN_DEPTH`` (1) second-order elements per skin depth
  (about one element per skin depth is the usual lower limit for eddy-current
  meshes: common practice).  The mesher aims at 1.5 per skin depth at the
  mesh frequency (:class:`geometry.mesher.MeshSizing`), so a default mesh
  passes with room to spare; ``[mesh] density`` below 1 or a ``[mesh]
  frequency`` below the top of the sweep can trip it.  Homogenized litz
  bundles carry an imposed current density and are not checked.
- ``"above-mesh-frequency"``: a solved frequency above the one the mesh was
  sized for (``[mesh] frequency``).
- ``"solve-residual"``: a full solve with the currents imposed (every
  point-by-point frequency, the reduced sweep's check frequencies) has a
  residual above ``RESIDUAL_LIMIT`` (1e-10).  The residual is the
  componentwise backward error of the bordered system, max_i |A z - r|_i /
  (|A| |z| + |r|)_i (:func:`fem.harmonic.backward_error`): a sound LU leaves
  a few units of rounding (1e-16 to 5e-15 on the cases in ``cases/``), a
  failed one (tiny pivots, no pivoting here) orders of magnitude more.  The
  plain ||A z - r|| / ||r|| is no measure here: the current rows' right-hand
  side shrinks as 1/w while the field rows hold terms of order ||A|| ||z||,
  so sound solves show 1e-8 to 1e-5, growing with frequency.
- ``"reduced-deviation"``: the reduced sweep's self-check (full solves at two
  frequencies) deviates by more than ``REDUCED_DEVIATION_LIMIT`` (1e-4, a
  hundred times the reduced model's own tolerance).
"""

from __future__ import annotations

import numpy as np

from racfield.geometry.case import Case
from racfield.geometry.layout import Conductor
from racfield.geometry.case.units import format_frequency
from racfield.geometry.materials import skin_depth
from racfield.geometry.mesher import WindowMesh

#: warn when a conductor's surface has fewer elements per skin depth than this
MIN_ELEMENTS_PER_SKIN_DEPTH = 1.0
#: warn when a full solve's backward error exceeds this
RESIDUAL_LIMIT = 1e-10
#: warn when the reduced sweep's self-check deviation exceeds this
REDUCED_DEVIATION_LIMIT = 1e-4


def warning(kind: str, frequency: float | None, message: str) -> dict:
    """One warning as plain data."""
    return {"kind": kind, "frequency_hz": None if frequency is None else float(frequency),
            "message": " ".join(message.split())}


def surface_edges(window_mesh: WindowMesh) -> tuple[np.ndarray, np.ndarray]:
    """(conductor index, length in m) of every element edge on a conductor's
    boundary: the edges of a conductor's triangles that no other triangle of
    the same conductor shares.  The length follows the curved edge through
    its middle node (two chords)."""
    tri, region = window_mesh.triangles, window_mesh.region
    inside = np.nonzero(region >= 0)[0]
    # corner pairs and middle node of edges 01, 12, 20 (nodes 3, 4, 5)
    pairs = [(0, 1, 3), (1, 2, 4), (2, 0, 5)]
    a = np.concatenate([tri[i, inside] for i, _, _ in pairs])
    b = np.concatenate([tri[j, inside] for _, j, _ in pairs])
    m = np.concatenate([tri[k, inside] for _, _, k in pairs])
    owner = np.tile(region[inside], 3)
    keys = np.stack([owner, np.minimum(a, b), np.maximum(a, b)], axis=1)
    _, first, counts = np.unique(keys, axis=0, return_index=True, return_counts=True)
    edge = first[counts == 1]
    p = window_mesh.points
    length = (np.linalg.norm(p[:, a[edge]] - p[:, m[edge]], axis=0)
              + np.linalg.norm(p[:, m[edge]] - p[:, b[edge]], axis=0))
    return owner[edge], length


def largest_surface_edges(window_mesh: WindowMesh, count: int) -> np.ndarray:
    """(count,) the longest boundary edge of each conductor in m (0 without edges)."""
    owner, length = surface_edges(window_mesh)
    out = np.zeros(count)
    np.maximum.at(out, owner, length)
    return out


def mesh_warnings(case: Case, conductors: list[Conductor], resistivity: np.ndarray,
                  window_mesh: WindowMesh, frequencies) -> list[dict]:
    """Under-resolved conductor surfaces and frequencies above the mesh frequency."""
    out = []
    mesh_f = case.mesh_frequency
    solid = [c.index for c in conductors if not c.strands]
    largest = largest_surface_edges(window_mesh, len(conductors))
    for f in frequencies:
        if f <= 0.0:
            continue
        if solid:
            per_delta = np.array([skin_depth(float(resistivity[k]), float(f)) / largest[k] for k in solid])
            worst = int(np.argmin(per_delta))
            if per_delta[worst] < MIN_ELEMENTS_PER_SKIN_DEPTH:
                c = conductors[solid[worst]]
                delta = skin_depth(float(resistivity[c.index]), float(f))
                out.append(warning(
                    "under-resolved-mesh", f,
                    f"at {format_frequency(f)} the mesh is under-resolved: {per_delta[worst]:.2f} elements per skin depth "
                    f"at the surface of {c.winding} turn {c.turn} (largest surface element "
                    f"{largest[c.index] * 1e3:.4g} mm, skin depth {delta * 1e3:.4g} mm; "
                    f"at least {MIN_ELEMENTS_PER_SKIN_DEPTH:g} needed); raise [mesh] density"
                    + (" or [mesh] frequency" if case.mesh.frequency is not None else "")))
        if f > mesh_f * (1.0 + 1e-9):
            out.append(warning(
                "above-mesh-frequency", f,
                f"{format_frequency(f)} is above the frequency the mesh was sized for ({format_frequency(mesh_f)}, [mesh] frequency); "
                f"raise [mesh] frequency to at least {format_frequency(f)} or remove it"))
    return out


def residual_warnings(residuals) -> list[dict]:
    """``residuals``: (frequency Hz, backward error or None) of the full solves."""
    return [warning("solve-residual", f,
                    f"the solve at {format_frequency(f)} left a residual (backward error) of {r:.2g}, above "
                    f"{RESIDUAL_LIMIT:g}: its results may be inaccurate; check the case for extreme "
                    "permeability or size ratios")
            for f, r in residuals if r is not None and not r <= RESIDUAL_LIMIT]


def reduced_warnings(sweep_info: dict) -> list[dict]:
    """The reduced sweep's self-check deviation against its limit."""
    deviation = sweep_info.get("max_check_deviation")
    if sweep_info.get("method") != "reduced" or deviation is None or deviation <= REDUCED_DEVIATION_LIMIT:
        return []
    return [warning("reduced-deviation", None,
                    f"the reduced sweep deviates from full solves by {deviation:.2g} at its check frequencies "
                    f"(limit {REDUCED_DEVIATION_LIMIT:g}); run with --exact for one full solve per frequency")]


def sweep_warnings(case: Case, conductors: list[Conductor], resistivity: np.ndarray, window_mesh: WindowMesh,
                   frequencies, residuals, sweep_info: dict) -> list[dict]:
    """Every warning of a sweep, in frequency order, the sweep-wide ones last."""
    found = mesh_warnings(case, conductors, resistivity, window_mesh, frequencies) + residual_warnings(residuals)
    found.sort(key=lambda w: w["frequency_hz"])
    return found + reduced_warnings(sweep_info)
