"""Element sizes measured in the built mesh, region by region, at
``[mesh] density`` 1, 2 and 4.

The mesher's contract (geometry/sizing.py, geometry/mesher.py): every size
rule gives the size at density 1 and the mesher divides the whole size field
by ``[mesh] density``, so that doubling the density halves every element size
everywhere.  The rules at density 1 (all of them common practice, design
rules of this mesher, not published facts):

* conductor surface: round, min(pi d / 28, skin depth / 1.5); rectangular
  (foil), min(shorter side / 2, skin depth / 1.5);
* conductor interior: fine to min(skin depth, 4 h) below the surface (h the
  surface size), then growing by 0.35 per unit distance, capped at
  max(shorter side / 4, h);
* air: growing by 0.35 per unit distance from the conductor surfaces; the
  window (and core body) capped at min(W, H) / 6; everywhere capped at the far
  radius / 6 (open and core models) or min(W, H) / 6 (closed window);
* core body: every corner (gap corners, window corners, outer corners) at
  min(gap lengths, skin depth, min(W, H)) / 300 / ``[mesh] corner_refinement``,
  the size growing by 1 per unit distance from the corner.

Each test measures one region in meshes of small invented cases (built from
``parse_case`` documents, ``place`` and ``mesh_case``) and asserts that the
size at density D over the size at 2 D lies in 1.6 .. 2.4 (halving within
20 %, common practice for a refinement study: the element size is the
discretization parameter of the observed order, so it must follow the
density).  A region whose sizes ignored the density would give a ratio near 1
(before the mesher divided the whole field, the growth rates were not
divided: the bore measured 1.22 and 1.44, a round conductor's interior 1.26
and 1.35).  Besides the ratio, a region with a single rule checks its size at
density 1 against that rule, so that each helper is seen to measure its region.

What is measured: edges on a conductor's surface (median length), the
area-weighted mean size of the triangles in a graded region (interiors, air,
bore, core body; a triangle's size the RMS of its three straight edges), the
far arc's edges, and at a core corner the median over the triangles touching
it of their shortest edge.  At a corner the size grows by 1 per unit
distance, so at density 1 a corner triangle's far vertex lies where the size
is already a few times the corner size (the RMS size of the triangles at
the window corners is 2 to 3.7 times the corner size at density 1, 1.2 to
1.4 times at density 2), and only the shortest edge shows the corner rule.

The interior cap max(shorter side / 4, h) governs neither conductor here:
growing by 0.35 per unit distance from min(skin depth, 4 h) below the
surface, the size would reach the cap 2.67 mm deep in the 4 mm wire (radius
2 mm) and 0.53 mm deep in the 1 mm foil (half thickness 0.5 mm), so the
interior measured is the graded one, more than a few skin depths deep.
"""

from __future__ import annotations

import functools
import math

import numpy as np
import pytest

from racfield.fem.sweep import mesh_case
from racfield.geometry.case import parse_case
from racfield.geometry.layout import place
from racfield.geometry.mesher import AIR, CORE

DENSITIES = (1.0, 2.0, 4.0)
HALVING = (1.6, 2.4)   # size(D) / size(2 D): 2 within 20 % (common practice, see the module docstring)


# ------------------------------------------------------------------ cases


def window_doc(density: float) -> dict:
    """Planar ideal-core window 30 mm x 30 mm: a 4 mm round wire and a
    1 mm x 10 mm rectangular foil carrying opposite currents, meshed for
    100 kHz (copper skin depth about 0.21 mm, below both conductors)."""
    return {
        "title": "sizes: window",
        "model": {"symmetry": "planar", "length": "10 mm", "temperature": "20 degC"},
        "sweep": {"frequencies": ["100 kHz"]},
        "window": {"width": "30 mm", "height": "30 mm", "boundary": "ideal-core"},
        "winding": [{"name": "a", "current": "1 A"}, {"name": "b", "current": "1 A", "phase": 180}],
        "conductor": [{"winding": "a", "at": ["10 mm", "15 mm"], "shape": "round", "diameter": "4 mm"},
                      {"winding": "b", "at": ["20 mm", "15 mm"], "shape": "rectangular",
                       "width": "1 mm", "height": "10 mm"}],
        "mesh": {"density": density},
    }


INNER_RADIUS = 10e-3   # m, the open coil's inner radius (the bore from the axis to the coil)


def open_coil_doc(density: float) -> dict:
    """Axisymmetric open air-core coil: two rings of 1 mm round wire at
    10.5 mm radius, window 4 mm x 8 mm from r = 10 mm, meshed for 10 kHz."""
    return {
        "title": "sizes: open coil",
        "model": {"symmetry": "axisymmetric", "temperature": "20 degC"},
        "sweep": {"frequencies": ["10 kHz"]},
        "window": {"width": "4 mm", "height": "8 mm", "boundary": "open", "inner_radius": INNER_RADIUS},
        "winding": [{"name": "coil", "current": "1 A"}],
        "conductor": [{"winding": "coil", "at": ["0.5 mm", y], "shape": "round", "diameter": "1 mm"}
                      for y in ("3 mm", "5 mm")],
        "mesh": {"density": density},
    }


GAP_LENGTH = 0.3e-3   # m
GAP_AT = 10e-3        # m, the gap's middle above the window bottom
CORE_WIDTH = 8e-3     # m, window width
CORE_HEIGHT = 20e-3   # m, window height
OUTER_LEG = 5e-3      # m


def core_doc(density: float, corner_refinement: float | None = None) -> dict:
    """Planar half E-core (mu_r 2000) with a 0.3 mm centre-leg gap at
    mid-height around two 1 mm x 1.5 mm rectangular turns away from the
    corners, meshed for 1 kHz (skin depth about 2.1 mm)."""
    mesh = {"density": density}
    if corner_refinement is not None:
        mesh["corner_refinement"] = corner_refinement
    return {
        "title": "sizes: core",
        "model": {"symmetry": "planar", "length": "10 mm", "temperature": "20 degC"},
        "sweep": {"frequencies": ["1 kHz"]},
        "window": {"width": CORE_WIDTH, "height": CORE_HEIGHT, "boundary": "core"},
        "core": {"relative_permeability": 2000, "centre_leg_width": "10 mm", "outer_leg_width": OUTER_LEG,
                 "yoke_thickness": "5 mm"},
        "gap": [{"leg": "centre", "length": GAP_LENGTH, "at": GAP_AT}],
        "winding": [{"name": "coil", "current": "1 A"}],
        "conductor": [{"winding": "coil", "at": ["4 mm", y], "shape": "rectangular", "width": "1 mm",
                       "height": "1.5 mm"} for y in ("6 mm", "14 mm")],
        "mesh": mesh,
    }


DOCS = {"window": window_doc, "open": open_coil_doc, "core": core_doc}


@functools.lru_cache(maxsize=None)
def meshed(name: str, density: float, corner_refinement: float | None = None):
    """(mesh, conductors) of case ``name`` at ``density``."""
    args = (density,) if corner_refinement is None else (density, corner_refinement)
    case = parse_case(DOCS[name](*args))
    conductors = place(case)
    return mesh_case(case, conductors), conductors


# ------------------------------------------------------------------ measurements


def _edges(triangles: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The distinct corner-to-corner edges (k, 2) of 6-node ``triangles`` and
    how many of the triangles hold each (1 on the boundary of the set)."""
    corners = triangles[:3]
    pairs = np.hstack([corners[[0, 1]], corners[[1, 2]], corners[[2, 0]]]).T
    edges, counts = np.unique(np.sort(pairs, axis=1), axis=0, return_counts=True)
    return edges, counts


def _lengths(points: np.ndarray, edges: np.ndarray) -> np.ndarray:
    """Straight lengths (m) of ``edges`` (k, 2)."""
    return np.hypot(*(points[:, edges[:, 0]] - points[:, edges[:, 1]]))


def triangle_sizes(mesh, mask: np.ndarray) -> np.ndarray:
    """RMS corner-to-corner edge length (m) of the triangles in ``mask``."""
    tri = mesh.triangles[:3, mask]
    p = mesh.points
    squares = sum(np.sum((p[:, tri[i]] - p[:, tri[(i + 1) % 3]]) ** 2, axis=0) for i in range(3))
    return np.sqrt(squares / 3.0)


def triangle_areas(mesh, mask: np.ndarray) -> np.ndarray:
    """Straight-sided areas (m^2) of the triangles in ``mask``."""
    p0, p1, p2 = (mesh.points[:, mesh.triangles[i, mask]] for i in range(3))
    a, b = p1 - p0, p2 - p0
    return 0.5 * np.abs(a[0] * b[1] - a[1] * b[0])


def area_mean_size(mesh, mask: np.ndarray) -> float:
    """The area-weighted mean of the triangle sizes (m) in ``mask`` (the
    integral of the size over the region, over its area).  A plain mean or
    median counts triangles, so the many small ones near a fine surface
    would outvote the coarse ones that fill most of a graded region; a
    weighted median jumps with single coarse triangles at density 1."""
    sizes, areas = triangle_sizes(mesh, mask), triangle_areas(mesh, mask)
    return float(np.sum(sizes * areas) / np.sum(areas))


def centroids(mesh) -> np.ndarray:
    """Centroids (2, m) of the triangles, m (from the corner nodes)."""
    return mesh.points[:, mesh.triangles[:3]].mean(axis=1)


def depth_inside(conductor, xy: np.ndarray) -> np.ndarray:
    """Distance (m) of points ``xy`` (2, k) inside ``conductor`` from its
    surface (negative outside)."""
    dx, dy = xy[0] - conductor.x, xy[1] - conductor.y
    if conductor.shape == "round":
        return conductor.radius - np.hypot(dx, dy)
    qx, qy = np.abs(dx) - conductor.width / 2, np.abs(dy) - conductor.height / 2
    outside = np.hypot(np.maximum(qx, 0.0), np.maximum(qy, 0.0))
    return -outside - np.minimum(np.maximum(qx, qy), 0.0)


def surface_edge_size(mesh, index: int) -> float:
    """Median length (m) of the element edges on conductor ``index``'s surface
    (edges of its triangles that only one of them holds)."""
    edges, counts = _edges(mesh.triangles[:, mesh.region == index])
    return float(np.median(_lengths(mesh.points, edges[counts == 1])))


def interior_size(mesh, index: int, conductor, depth: float) -> float:
    """Area-weighted mean triangle size (m) in conductor ``index`` deeper than ``depth`` (m)."""
    mask = (mesh.region == index) & (depth_inside(conductor, centroids(mesh)) > depth)
    return area_mean_size(mesh, mask)


def air_size_away(mesh, conductors, distance: float, box: tuple[float, float, float, float]) -> float:
    """Area-weighted mean size (m) of the air triangles whose centroid lies in ``box``
    (x0, x1, y0, y1, m) and farther than ``distance`` (m) from every conductor."""
    c = centroids(mesh)
    mask = (mesh.region == AIR) & (c[0] > box[0]) & (c[0] < box[1]) & (c[1] > box[2]) & (c[1] < box[3])
    for conductor in conductors:
        mask &= -depth_inside(conductor, c) > distance
    return area_mean_size(mesh, mask)


def far_arc_size(mesh) -> float:
    """Median length (m) of the boundary edges on the far arc."""
    edges, counts = _edges(mesh.triangles)
    edges = edges[counts == 1]
    radius = np.hypot(mesh.points[0] - mesh.far_centre[0], mesh.points[1] - mesh.far_centre[1])
    on_arc = np.abs(radius - mesh.far_radius) < 1e-9 * mesh.far_radius
    return float(np.median(_lengths(mesh.points, edges[on_arc[edges].all(axis=1)])))


def corner_element_size(mesh, point: tuple[float, float]) -> float:
    """Median over the triangles touching the mesh node at ``point`` (m) of
    their shortest corner-to-corner edge (m).  The corner rule sets the size
    at the corner itself; the size grows by 1 per unit distance from it, so a
    corner triangle's far vertex lies where the size is already a few times
    the corner size, and only its shortest edge shows the corner rule."""
    distance = np.hypot(mesh.points[0] - point[0], mesh.points[1] - point[1])
    node = int(np.argmin(distance))
    assert distance[node] < 1e-12, f"no mesh node at the corner {point}"
    tri = mesh.triangles[:3, (mesh.triangles[:3] == node).any(axis=0)]
    p = mesh.points
    lengths = np.array([np.hypot(*(p[:, tri[i]] - p[:, tri[(i + 1) % 3]])) for i in range(3)])
    return float(np.median(lengths.min(axis=0)))


def core_interior_size(mesh, box: tuple[float, float, float, float]) -> float:
    """Area-weighted mean size (m) of the core triangles whose centroid lies
    in ``box`` (x0, x1, y0, y1, m)."""
    c = centroids(mesh)
    mask = (mesh.region == CORE) & (c[0] > box[0]) & (c[0] < box[1]) & (c[1] > box[2]) & (c[1] < box[3])
    return area_mean_size(mesh, mask)


def assert_halves(label: str, sizes: list[float]) -> None:
    """Each size over the next (density doubled) in HALVING."""
    ratios = [a / b for a, b in zip(sizes, sizes[1:])]
    print(f"\n{label}: sizes {[f'{s * 1e3:.4g} mm' for s in sizes]}, ratios {[f'{r:.3f}' for r in ratios]}")
    for r in ratios:
        # the whole size field divided by the density (geometry/sizing.py; common practice)
        assert HALVING[0] <= r <= HALVING[1], f"{label}: size ratio {r:.3f} outside {HALVING}"


def sizes_over_densities(measure, name: str, **kw) -> list[float]:
    """``measure(mesh, conductors)`` (m) at every density of DENSITIES."""
    return [measure(*meshed(name, d, **kw)) for d in DENSITIES]


RHO_CU_20 = 1.7241e-8   # ohm*m, annealed copper at 20 degC (IEC 60028)
MU0 = 4e-7 * math.pi    # H/m


def copper_skin_depth(frequency: float) -> float:
    """sqrt(rho / (pi f mu0)) in m (textbook), copper at 20 degC."""
    return math.sqrt(RHO_CU_20 / (math.pi * frequency * MU0))


# ------------------------------------------------------------------ 1. conductor surfaces


@pytest.mark.parametrize("index, shape", [(0, "round"), (1, "foil")])
def test_conductor_surface_sizes_halve(index, shape):
    sizes = sizes_over_densities(lambda m, c: surface_edge_size(m, index), "window")
    assert_halves(f"{shape} conductor surface", sizes)
    # the rule at density 1 (geometry/sizing.py, common practice): the skin
    # depth over 1.5 rules both (pi 4 mm / 28 = 0.45 mm, 1 mm / 2 = 0.5 mm);
    # a chord of the circle is shorter than its arc by < 0.1 %
    rule = copper_skin_depth(100e3) / 1.5
    assert sizes[0] == pytest.approx(rule, rel=0.05)


# ------------------------------------------------------------------ 2. conductor interiors


@pytest.mark.parametrize("index, shape, depth", [(0, "round", 3.0), (1, "foil", 1.5)])
def test_conductor_interior_sizes_halve(index, shape, depth):
    """Triangles deeper than ``depth`` skin depths (0.21 mm at 100 kHz) below
    the surface: the size there grows from the surface size by 0.35 per unit
    distance towards the cap max(shorter side / 4, surface size) (common practice)."""
    skin = copper_skin_depth(100e3)
    sizes = sizes_over_densities(lambda m, c: interior_size(m, index, c[index], depth * skin), "window")
    assert_halves(f"{shape} conductor interior (deeper than {depth:g} skin depths)", sizes)
    # the interior is coarser than the surface (the grading), and no coarser than the cap
    side = 4e-3 if shape == "round" else 1e-3
    assert skin / 1.5 < sizes[0] <= 1.05 * side / 4


# ------------------------------------------------------------------ 3. window air


def test_window_air_sizes_halve():
    """Air of the ideal-core window farther than 12 mm from both conductors,
    where the cap min(W, H) / 6 = 5 mm rules (the grading 0.35 per unit
    distance from a 0.14 mm surface size reaches it at about 14 mm, so the mean there is a little below the cap; common practice)."""
    sizes = sizes_over_densities(lambda m, c: air_size_away(m, c, 12e-3, (0.0, 30e-3, 0.0, 30e-3)), "window")
    assert_halves("window air away from the conductors", sizes)
    # a Delaunay mesh's triangles average a little below the size field's value
    assert 0.75 * 5e-3 < sizes[0] <= 1.05 * 5e-3


# ------------------------------------------------------------------ 4. open boundary: bore and far air


def test_bore_sizes_halve():
    """The bore of an axisymmetric open coil: the air between the axis
    (x = -inner_radius) and the coil's inner radius (x = 0), from half the
    inner radius below the window to as far above it; its size grows by 0.35
    per unit distance from the turns (common practice)."""
    box = (-INNER_RADIUS, 0.0, -INNER_RADIUS / 2, 8e-3 + INNER_RADIUS / 2)
    sizes = sizes_over_densities(lambda m, c: air_size_away(m, c, 0.0, box), "open")
    assert_halves("bore of the open coil", sizes)


def test_far_air_sizes_halve():
    """The far arc of the open coil: its edges at the cap far radius / 6,
    far radius = 5 hypot(W + inner_radius, H / 2) = 72.8 mm (common practice)."""
    sizes = sizes_over_densities(lambda m, c: far_arc_size(m), "open")
    assert_halves("far arc of the open coil", sizes)
    rule = 5.0 * math.hypot(4e-3 + INNER_RADIUS, 4e-3) / 6
    # the arc's length over the cap rounds up to whole edges
    assert 0.85 * rule < sizes[0] <= 1.02 * rule


# ------------------------------------------------------------------ 5. core body: corners and interior


GAP_CORNERS = {"lower": (0.0, GAP_AT - GAP_LENGTH / 2), "upper": (0.0, GAP_AT + GAP_LENGTH / 2)}
#: the corner rule at density 1: min(gap 0.3 mm, skin depth 2.1 mm, window 8 mm) / 300 (common practice)
CORNER_RULE = GAP_LENGTH / 300


@pytest.mark.parametrize("corner", sorted(GAP_CORNERS))
def test_gap_corner_sizes_halve(corner):
    """The elements touching a gap corner at the centre leg's window-side face x = 0."""
    sizes = sizes_over_densities(lambda m, c: corner_element_size(m, GAP_CORNERS[corner]), "core")
    assert_halves(f"{corner} gap corner", sizes)
    assert 0.8 * CORNER_RULE < sizes[0] < 1.3 * CORNER_RULE


def test_window_corner_sizes_halve():
    """The elements touching the window's inner-bottom corner (0, 0), where
    the centre leg meets the yoke (planar core models: window coordinates)."""
    sizes = sizes_over_densities(lambda m, c: corner_element_size(m, (0.0, 0.0)), "core")
    assert_halves("window corner (0, 0)", sizes)
    assert 0.8 * CORNER_RULE < sizes[0] < 1.3 * CORNER_RULE


def test_core_interior_sizes_halve():
    """The middle of the outer leg, farther than 5 mm from every core corner
    and 4 mm from the turns: the window-and-core cap min(W, H) / 6 = 1.33 mm
    rules (common practice)."""
    box = (CORE_WIDTH + OUTER_LEG / 4, CORE_WIDTH + 3 * OUTER_LEG / 4, CORE_HEIGHT / 4, 3 * CORE_HEIGHT / 4)
    sizes = sizes_over_densities(lambda m, c: core_interior_size(m, box), "core")
    assert_halves("core body interior (outer leg)", sizes)
    rule = min(CORE_WIDTH, CORE_HEIGHT) / 6
    assert 0.75 * rule < sizes[0] <= 1.05 * rule


def test_corner_refinement_halves_gap_corners():
    """``[mesh] corner_refinement = 2`` at density 1 halves the elements at
    both gap corners and leaves the conductor surfaces as they were."""
    plain, _ = meshed("core", 1.0)
    refined, _ = meshed("core", 1.0, 2.0)
    for corner, point in sorted(GAP_CORNERS.items()):
        ratio = corner_element_size(plain, point) / corner_element_size(refined, point)
        print(f"\n{corner} gap corner, corner_refinement 1 / 2: {ratio:.3f}")
        # the corner size divided by corner_refinement (geometry/sizing.py; common practice)
        assert HALVING[0] <= ratio <= HALVING[1]
    for index in (0, 1):
        change = surface_edge_size(refined, index) / surface_edge_size(plain, index) - 1.0
        print(f"conductor {index} surface, corner_refinement 2 vs 1: {change:+.2e}")
        # corner_refinement acts on the corners only (common practice)
        assert abs(change) < 0.05
