"""Mesh the window cross-section with gmsh: curved second-order triangles.

The element size at conductor surfaces follows the skin depth at the highest
frequency; it grows into the conductor interiors and into the air.  Circles
are meshed with curved (6-node) triangles whose edge nodes lie on the true
circle, so conductor areas match the true areas to well below 0.05 %.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import gmsh
import numpy as np

from .case import Core
from .layout import Conductor
from .sizing import MeshSizing, base_surface_size, corner_size, surface_size  # noqa: F401 (public names)

AIR = -1
"""Region number of air (non-conducting, non-magnetic) elements."""
CORE = -2
"""Region number of core (magnetic, non-conducting) elements."""


@dataclass(frozen=True)
class WindowMesh:
    """A second-order triangle mesh of the window.

    ``points`` (2, n) in m; ``triangles`` (6, m): three corners then the edge
    nodes 01, 12, 20; ``region`` (m,): conductor index, ``AIR`` or ``CORE``.
    ``far_radius``/``far_centre``: the open-boundary circle (``None`` for
    a closed window).  ``symmetry_x``: with a core body, the x of the
    centre-leg symmetry plane, where A = 0 (``None`` otherwise).
    ``wall_x``: with ``boundary = "open-wall"``, the x of the magnetic wall
    (mu -> infinity, the window's inner wall x = 0), the far disk's straight
    edge, where the natural condition dA/dn = 0 holds (``None`` otherwise).
    """

    points: np.ndarray
    triangles: np.ndarray
    region: np.ndarray
    surface_size: float
    far_radius: float | None = None
    far_centre: tuple[float, float] | None = None
    symmetry_x: float | None = None
    wall_x: float | None = None

    @property
    def nodes(self) -> int:
        return self.points.shape[1]

    @property
    def elements(self) -> int:
        return self.triangles.shape[1]


def _core_body(occ, core: Core, width: float, height: float) -> list[tuple[int, int]]:
    """The E-type core's half cross-section (centre leg cut at its symmetry
    plane x = -centre_leg_width/2), gaps removed; returns OCC surfaces."""
    xs = -core.centre_leg_width / 2
    right = width + core.outer_leg_width
    yoke = core.yoke_thickness
    parts = [occ.addRectangle(xs, 0.0, 0.0, -xs, height),
             occ.addRectangle(width, 0.0, 0.0, core.outer_leg_width, height),
             occ.addRectangle(xs, -yoke, 0.0, right - xs, yoke),
             occ.addRectangle(xs, height, 0.0, right - xs, yoke)]
    body, _ = occ.fuse([(2, parts[0])], [(2, t) for t in parts[1:]])
    gaps = []
    for gap in core.gaps:
        x0, w = (xs, -xs) if gap.leg == "centre" else (width, core.outer_leg_width)
        gaps.append((2, occ.addRectangle(x0, gap.at - gap.length / 2, 0.0, w, gap.length)))
    if gaps:
        body, _ = occ.cut(body, gaps)
    return body


def _half_disk(occ, centre: tuple[float, float], radius: float) -> int:
    """The half of a disk on the side x >= centre x."""
    disk = occ.addDisk(centre[0], centre[1], 0.0, radius, radius)
    left = occ.addRectangle(centre[0] - 2 * radius, centre[1] - 2 * radius, 0.0, 2 * radius, 4 * radius)
    (dimtag,), _ = occ.cut([(2, disk)], [(2, left)])
    return dimtag[1]


@dataclass(frozen=True)
class _Domain:
    """The meshed domain's outer surface (OCC tag), the core body's surfaces
    and the open boundary's far circle, symmetry plane and magnetic wall (see
    WindowMesh)."""

    surface: int
    core_tools: list[tuple[int, int]]
    far_radius: float | None = None
    far_centre: tuple[float, float] | None = None
    symmetry_x: float | None = None
    wall_x: float | None = None


def _conductor_tools(occ, conductors: list[Conductor]) -> list[tuple[int, int]]:
    """One OCC surface per conductor: a disk or a rectangle."""
    tools = []
    for c in conductors:
        if c.shape == "round":
            tools.append((2, occ.addDisk(c.x, c.y, 0.0, c.radius, c.radius)))
        else:
            tools.append((2, occ.addRectangle(c.x - c.width / 2, c.y - c.height / 2, 0.0, c.width, c.height)))
    return tools


def _domain(occ, boundary: str, width: float, height: float, far_radius_factor: float,
            core: Core | None, axis_x: float | None) -> _Domain:
    """The domain's outer surface (see :func:`build_mesh`), with the core body."""
    if boundary == "core":
        symmetry_x = -core.centre_leg_width / 2
        core_tools = _core_body(occ, core, width, height)
        box_w = width + core.outer_leg_width - symmetry_x
        box_h = height + 2 * core.yoke_thickness
        far_centre = (symmetry_x, height / 2)
        far_radius = far_radius_factor * math.hypot(box_w, box_h / 2)
        return _Domain(_half_disk(occ, far_centre, far_radius), core_tools, far_radius, far_centre, symmetry_x)
    if boundary == "open" and axis_x is not None:
        far_centre = (axis_x, height / 2)
        far_radius = far_radius_factor * math.hypot(width - axis_x, height / 2)
        return _Domain(_half_disk(occ, far_centre, far_radius), [], far_radius, far_centre, axis_x)
    if boundary == "open-wall":
        if axis_x is not None:
            raise ValueError('boundary "open-wall" is for planar models (no axis)')
        # the far disk centred on the inner wall x = 0, cut there: the half on x >= 0
        far_centre = (0.0, height / 2)
        far_radius = far_radius_factor * math.hypot(width, height / 2)
        return _Domain(_half_disk(occ, far_centre, far_radius), [], far_radius, far_centre, wall_x=0.0)
    if boundary == "open":
        far_centre = (width / 2, height / 2)
        far_radius = far_radius_factor * 0.5 * math.hypot(width, height)
        disk = occ.addDisk(far_centre[0], far_centre[1], 0.0, far_radius, far_radius)
        return _Domain(disk, [], far_radius, far_centre)
    return _Domain(occ.addRectangle(0.0, 0.0, 0.0, width, height), [])


def _owners(mapping, count: int) -> tuple[list[list[int]], dict[int, int], list[int]]:
    """From the fragment map of the domain and ``count`` conductors (then the
    core tools): each conductor's surfaces, the region of every conductor or
    core surface (air surfaces are not listed), and the core surfaces."""
    conductor_surfaces = [[tag for dim, tag in mapping[1 + i] if dim == 2] for i in range(count)]
    owner = {tag: i for i, tags in enumerate(conductor_surfaces) for tag in tags}
    core_surfaces = sorted({tag for m in mapping[1 + count:] for dim, tag in m if dim == 2})
    owner.update({tag: CORE for tag in core_surfaces})
    return conductor_surfaces, owner, core_surfaces


def _restricted_threshold(dist: int, surfaces: list[int], h: float, h_max: float, dist_min: float,
                          grading: float) -> int:
    """A size field on ``surfaces``: ``h`` (m) up to ``dist_min`` from the
    distance field ``dist``, growing by ``grading`` per unit distance to ``h_max``."""
    field = gmsh.model.mesh.field
    thr = field.add("Threshold")
    field.setNumber(thr, "InField", dist)
    field.setNumber(thr, "SizeMin", h)
    field.setNumber(thr, "SizeMax", h_max)
    field.setNumber(thr, "DistMin", dist_min)
    field.setNumber(thr, "DistMax", dist_min + (h_max - h) / grading)
    only = field.add("Restrict")
    field.setNumber(only, "InField", thr)
    field.setNumbers(only, "SurfacesList", surfaces)
    return only


def _surface_fields(sizes: list[float], conductor_surfaces: list[list[int]], metal_surfaces: list[int],
                    outside_surfaces: list[int], sizing: MeshSizing, h_max: float) -> list[int]:
    """Size fields from the conductor surfaces, one distance per surface size
    (m, at density 1): fine at the surface, growing slowly inside the metal
    and fast outside."""
    skin = min(sizing.skin_depth, 1.0)
    field_ids = []
    for h in sorted(set(round(s, 15) for s in sizes)):
        curves = sorted({abs(t) for i, s in enumerate(sizes) if round(s, 15) == h
                         for tag in conductor_surfaces[i]
                         for _, t in gmsh.model.getBoundary([(2, tag)], oriented=False)})
        longest = max(gmsh.model.occ.getMass(1, t) for t in curves)
        dist = gmsh.model.mesh.field.add("Distance")
        gmsh.model.mesh.field.setNumbers(dist, "CurvesList", curves)
        gmsh.model.mesh.field.setNumber(dist, "Sampling",
                                        int(min(max(20, 2 * longest * sizing.density / h), 20000)))
        # inside the metal: fine over about one skin depth, then growing
        # slowly; in the air the field is smooth, so the size grows fast
        for surfaces, dist_min, grading in ((metal_surfaces, min(skin, 4 * h), sizing.grading),
                                            (outside_surfaces, 0.0, sizing.air_grading)):
            if surfaces:
                field_ids.append(_restricted_threshold(dist, surfaces, h, h_max, dist_min, grading))
    return field_ids


def _interior_fields(conductors: list[Conductor], sizes: list[float], conductor_surfaces: list[list[int]],
                     sizing: MeshSizing) -> list[int]:
    """Caps on the size inside each conductor: no coarser than a quarter of
    its size (m, at density 1)."""
    interior = []
    for i, c in enumerate(conductors):
        cap = gmsh.model.mesh.field.add("Constant")
        gmsh.model.mesh.field.setNumber(cap, "VIn", max(min(c.width, c.height) / 4, sizes[i]))
        gmsh.model.mesh.field.setNumber(cap, "VOut", 1e22)
        gmsh.model.mesh.field.setNumbers(cap, "SurfacesList", conductor_surfaces[i])
        interior.append(cap)
    return interior


def _window_box(core: Core | None, width: float, height: float, symmetry_x: float | None,
                h_window: float) -> int:
    """A size cap ``h_window`` (m) over the window, and the core body with a
    ``core`` (``symmetry_x`` its centre-leg symmetry plane)."""
    x0, x1 = (symmetry_x, width + core.outer_leg_width) if core is not None else (0.0, width)
    y0, y1 = ((-core.yoke_thickness, height + core.yoke_thickness) if core is not None else (0.0, height))
    box = gmsh.model.mesh.field.add("Box")
    for name, value in (("VIn", h_window), ("VOut", 1e22), ("XMin", x0), ("XMax", x1),
                        ("YMin", y0), ("YMax", y1), ("ZMin", -1.0), ("ZMax", 1.0)):
        gmsh.model.mesh.field.setNumber(box, name, value)
    return box


def _generate(fields: list[int], h_max: float, density: float) -> None:
    """Mesh with the smallest of ``fields`` (sizes at density 1, m) divided by
    ``density`` as the size, then raise to order 2."""
    least = gmsh.model.mesh.field.add("Min")
    gmsh.model.mesh.field.setNumbers(least, "FieldsList", fields)
    scaled = gmsh.model.mesh.field.add("MathEval")
    gmsh.model.mesh.field.setString(scaled, "F", f"F{least} / {density!r}")
    gmsh.model.mesh.field.setAsBackgroundMesh(scaled)
    gmsh.option.setNumber("Mesh.MeshSizeExtendFromBoundary", 0)
    gmsh.option.setNumber("Mesh.MeshSizeFromPoints", 0)
    gmsh.option.setNumber("Mesh.MeshSizeFromCurvature", 0)
    gmsh.option.setNumber("Mesh.MeshSizeMax", h_max / density)
    gmsh.option.setNumber("Mesh.Algorithm", 6)
    gmsh.model.mesh.generate(2)
    gmsh.model.mesh.setOrder(2)


def _read_triangles(owner: dict[int, int]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The generated mesh: points (2, n) m, 6-node triangles (6, m) and each
    triangle's region (``owner`` of its surface, else AIR)."""
    node_tags, coords, _ = gmsh.model.mesh.getNodes()
    index = np.full(int(node_tags.max()) + 1, -1, dtype=np.int64)
    index[node_tags.astype(np.int64)] = np.arange(len(node_tags))
    points = coords.reshape(-1, 3)[:, :2].T.copy()
    tri_blocks, region_blocks = [], []
    for _, tag in gmsh.model.getEntities(2):
        types, _, nodes = gmsh.model.mesh.getElements(2, tag)
        for etype, enodes in zip(types, nodes):
            if etype != 9:  # 6-node triangle
                raise RuntimeError(f"unexpected gmsh element type {etype}")
            tri = index[enodes.astype(np.int64)].reshape(-1, 6).T
            tri_blocks.append(tri)
            region_blocks.append(np.full(tri.shape[1], owner.get(tag, AIR), dtype=np.int64))
    return points, np.hstack(tri_blocks), np.concatenate(region_blocks)


def _mesh_in_session(conductors: list[Conductor], width: float, height: float, boundary: str,
                     sizing: MeshSizing, far_radius_factor: float, core: Core | None,
                     axis_x: float | None) -> tuple[np.ndarray, np.ndarray, np.ndarray, float, _Domain]:
    """Build and mesh the geometry in an initialized gmsh session: (points,
    triangles, region, surface size in m, domain); see :func:`build_mesh`."""
    gmsh.option.setNumber("General.Terminal", 0)
    gmsh.option.setNumber("General.NumThreads", 1)
    gmsh.model.add("window")
    occ = gmsh.model.occ
    tools = _conductor_tools(occ, conductors)
    domain = _domain(occ, boundary, width, height, far_radius_factor, core, axis_x)
    _, mapping = occ.fragment([(2, domain.surface)], tools + domain.core_tools)
    occ.synchronize()
    conductor_surfaces, owner, core_surfaces = _owners(mapping, len(conductors))

    # every size at density 1; _generate divides the whole field by the density
    sizes = [base_surface_size(c, sizing) for c in conductors]
    h_min = min(sizes)
    h_window = min(width, height) / 6
    h_max = max(domain.far_radius / 6 if domain.far_radius else min(width, height) / 6, h_min)
    air_surfaces = [tag for _, tag in gmsh.model.getEntities(2) if tag not in owner]
    metal_surfaces = sorted(t for t, k in owner.items() if k >= 0)
    fields = _surface_fields(sizes, conductor_surfaces, metal_surfaces, air_surfaces + core_surfaces, sizing, h_max)
    fields += _interior_fields(conductors, sizes, conductor_surfaces, sizing)
    # the window (and core) region: no coarser than a sixth of the window
    fields.append(_window_box(core if core_surfaces else None, width, height, domain.symmetry_x, h_window))
    if core_surfaces:
        fields.append(_corner_field(core_surfaces, domain.symmetry_x, core, min(width, height), h_max, sizing))
    _generate(fields, h_max, sizing.density)
    points, triangles, region = _read_triangles(owner)
    return points, triangles, region, h_min / sizing.density, domain


def build_mesh(conductors: list[Conductor], width: float, height: float, boundary: str,
               sizing: MeshSizing, far_radius_factor: float = 5.0, core: Core | None = None,
               axis_x: float | None = None) -> WindowMesh:
    """Mesh the window (``boundary = "ideal-core"``: the window rectangle is the
    domain), the air around the conductors out to a far circle (``"open"``),
    the air on x >= 0 out to a far half circle centred on the inner wall x = 0,
    a magnetic wall (``"open-wall"``), or the half E-core body with air out to
    a far arc (``"core"``).  ``axis_x``: an open domain is cut at this x (the
    axis of an axisymmetric model, where A = 0) and becomes a half disk."""
    gmsh.initialize(["-noenv"], readConfigFiles=False, interruptible=False)
    try:
        points, triangles, region, h_min, domain = _mesh_in_session(
            conductors, width, height, boundary, sizing, far_radius_factor, core, axis_x)
    finally:
        gmsh.finalize()
    # drop unused nodes (e.g. geometry points) and renumber
    used = np.unique(triangles)
    renumber = np.full(points.shape[1], -1, dtype=np.int64)
    renumber[used] = np.arange(len(used))
    return WindowMesh(points[:, used], renumber[triangles], region, h_min, domain.far_radius, domain.far_centre,
                      domain.symmetry_x, domain.wall_x)


def _corner_field(core_surfaces: list[int], symmetry_x: float | None, core: Core, window_side: float,
                  h_max: float, sizing: MeshSizing) -> int:
    """Refine around the core body's corners (m, at density 1): the gap
    corners, where the fringing field is strongest, the window's corners and
    the outer corners, where the field is singular at a 90 or 270 degree edge
    of magnetic material.  Points on the symmetry plane or axis are not
    corners of the whole core."""
    curves = {abs(t) for tag in core_surfaces for _, t in gmsh.model.getBoundary([(2, tag)], oriented=False)}
    points = {abs(t) for c in curves for _, t in gmsh.model.getBoundary([(1, c)], oriented=False)}
    if symmetry_x is not None:
        points = {p for p in points if abs(gmsh.model.getValue(0, p, [])[0] - symmetry_x) > 1e-12}
    h_corner = min(corner_size([g.length for g in core.gaps], window_side, sizing), h_max)
    dist = gmsh.model.mesh.field.add("Distance")
    gmsh.model.mesh.field.setNumbers(dist, "PointsList", sorted(points))
    thr = gmsh.model.mesh.field.add("Threshold")
    for name, value in (("InField", dist), ("SizeMin", h_corner), ("SizeMax", h_max), ("DistMin", 0.0),
                        ("DistMax", (h_max - h_corner) / sizing.corner_grading)):
        gmsh.model.mesh.field.setNumber(thr, name, value)
    return thr
