"""Element sizes of the window mesh.

The size at conductor surfaces follows the skin depth at the mesh frequency
(``[mesh] frequency``, else the highest solved frequency), scaled by
``[mesh] density``.  From these sizes :mod:`racfield.geometry.forecast`
forecasts the mesh, its memory and its time without meshing.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .case import Case
from .layout import Conductor
from .materials import skin_depth
from .resistance import conductor_resistivities


@dataclass(frozen=True)
class MeshSizing:
    """Element-size controls in m (and plain factors).

    Every size rule below gives the size at ``density`` 1; the mesher divides
    the whole size field by ``density`` (sizes, caps and growth rates alike,
    the distances over which sizes grow unchanged), so that density 2 halves
    every element size everywhere.
    """

    skin_depth: float           #: smallest skin depth at the highest frequency, m (inf at DC)
    per_skin_depth: float = 1.5  #: elements per skin depth at conductor surfaces
    per_circle: int = 28         #: elements around a round conductor at least
    per_side: int = 2            #: elements across the shortest side of a rectangle at least
    grading: float = 0.35        #: size growth per unit distance inside conductors
    air_grading: float = 0.35    #: size growth per unit distance in air
    density: float = 1.0         #: overall refinement factor (>1 finer)
    corner_refinement: float = 1.0  #: extra refinement at gap and core corners (>1 finer)
    corner_ratio: float = 300.0  #: corner size: the smallest of gap, skin depth and window side over this
    corner_grading: float = 1.0  #: size growth per unit distance from a core corner


def base_surface_size(conductor: Conductor, sizing: MeshSizing) -> float:
    """Element size in m at the surface of ``conductor`` at density 1."""
    if conductor.shape == "round":
        geometric = math.pi * conductor.width / sizing.per_circle
    else:
        geometric = min(conductor.width, conductor.height) / sizing.per_side
    return min(geometric, sizing.skin_depth / sizing.per_skin_depth)


def surface_size(conductor: Conductor, sizing: MeshSizing) -> float:
    """Element size in m at the surface of ``conductor`` (``density`` applied)."""
    return base_surface_size(conductor, sizing) / sizing.density


def corner_size(gap_lengths: list[float], window_side: float, sizing: MeshSizing) -> float:
    """Element size in m at the corners of a core body at density 1: the
    smallest of the gap lengths, the skin depth and the window's shorter side,
    over ``corner_ratio`` and ``corner_refinement``.  The mesh grades
    geometrically (``corner_grading``) into the corner, where the field of a
    right-angle edge of magnetic material is singular (A ~ r^(2/3)), so a
    tiny corner size costs only a few rings of elements."""
    return min([*gap_lengths, window_side, sizing.skin_depth]) / sizing.corner_ratio / sizing.corner_refinement


def case_sizing(case: Case, conductors: list[Conductor]) -> MeshSizing:
    """The sizing of ``case``'s mesh: the smallest skin depth of its conductors'
    materials at the mesh frequency, and ``[mesh] density``."""
    rho = min(conductor_resistivities(case, conductors))
    return MeshSizing(skin_depth=skin_depth(rho, case.mesh_frequency), density=case.mesh.density,
                      corner_refinement=case.mesh.corner_refinement)


def surface_edges(conductors: list[Conductor], sizing: MeshSizing) -> float:
    """Element edges on all conductor surfaces (perimeter over surface size)."""
    return sum((math.pi * c.width if c.shape == "round" else 2.0 * (c.width + c.height)) / surface_size(c, sizing)
               for c in conductors)
