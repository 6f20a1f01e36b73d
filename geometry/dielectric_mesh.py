"""Mesh the window for the electrostatic solution: every conductor's
insulation (between its bare and outer outline) and the layers' tape strips
as regions of their own.

The magnetic mesh (:mod:`racfield.geometry.mesher`) has only the bare
conductors: the insulation is air to the magnetic field.  The electric field
lives in the insulation, so here each conductor's insulation is a shell
region (``shell_region(k)``) and each ``insulation_after`` strip a ``TAPE``
region.  Outer outlines touch their neighbours (the layer pitch is the outer
size); two circles that touch cannot be meshed, so each shell is drawn
``SHRINK`` of its thickness inside its outer outline, leaving a gap of a few
thousandths of the insulation at each contact, refined there (and a strip
face that a bare round wire touches is drawn as far inside the strip).  The mesh is
sized from the geometry alone (no skin depth): at a conductor surface at
most twice its insulation's thickness.
"""

from __future__ import annotations

import math

import gmsh
import numpy as np

from .case import Core
from .layout import Conductor
from .mesher import AIR, CORE, WindowMesh, _conductor_tools, _domain, _generate, _read_triangles

TAPE = -3
"""Region number of the layers' insulation strips (``insulation_after``)."""
SHRINK = 0.002   #: each shell and strip drawn this share of its thickness inside its true outline
CIRCLE_SEGMENTS = 28   #: at most this fraction of a circle per element edge at a conductor surface


def shell_region(k: int) -> int:
    """Region number of conductor ``k``'s insulation shell."""
    return -10 - k


def shell_owner(region: np.ndarray) -> np.ndarray:
    """The conductor whose shell each region number is (-1 where none)."""
    region = np.asarray(region)
    return np.where(region <= -10, -10 - region, -1)


def _shells(occ, conductors: list[Conductor]) -> list[tuple[int, tuple[int, int]]]:
    """(conductor index, OCC surface) of every insulated conductor's outer outline, shrunk."""
    out = []
    for c in conductors:
        tx, ty = c.insulation
        if c.shape == "round":
            if tx <= 0.0:
                continue
            r = c.radius + tx * (1.0 - SHRINK)
            out.append((c.index, (2, occ.addDisk(c.x, c.y, 0.0, r, r))))
        elif tx > 0.0 or ty > 0.0:
            w, h = c.width + 2 * tx * (1.0 - SHRINK), c.height + 2 * ty * (1.0 - SHRINK)
            out.append((c.index, (2, occ.addRectangle(c.x - w / 2, c.y - h / 2, 0.0, w, h))))
    return out


def _strips(occ, strips: list[tuple[float, float, float, float]], across_width: bool,
            conductors: list[Conductor]) -> list[tuple[int, int]]:
    """The tape strips (x0, x1, y0, y1) m.  A face that a bare round conductor
    (one without insulation) touches is drawn SHRINK of the thickness inward
    (a circle touching a line cannot be meshed); a face that a flat conductor
    or an insulation shell meets stays where it is."""
    bare_round = [c for c in conductors if c.shape == "round" and c.insulation[0] <= 0.0]
    out = []
    for x0, x1, y0, y1 in strips:
        lo, hi = (x0, x1) if across_width else (y0, y1)
        d = SHRINK * (hi - lo)

        def touched(face: float) -> bool:
            return any(abs(abs((c.x if across_width else c.y) - face) - c.radius) <= d for c in bare_round)

        lo, hi = lo + (d if touched(lo) else 0.0), hi - (d if touched(hi) else 0.0)
        x0, x1, y0, y1 = (lo, hi, y0, y1) if across_width else (x0, x1, lo, hi)
        out.append((2, occ.addRectangle(x0, y0, 0.0, x1 - x0, y1 - y0)))
    return out


def _element_size(c: Conductor, density: float) -> float:
    """Size at a conductor's surfaces (m): its curvature or thinner side, and
    twice its insulation (the potential is nearly linear across a thin shell:
    one second-order element across it, of aspect 2, holds it)."""
    if c.shape == "round":
        h = 2 * math.pi * c.radius / CIRCLE_SEGMENTS
    else:
        h = min(c.width, c.height) / 2
    t = [v for v in c.insulation if v > 0.0]
    if t:
        h = min(h, 2 * min(t))
    return h / density


def _contacts(conductors: list[Conductor]) -> list[tuple[float, float, float]]:
    """(x, y, gap) m where two outer outlines come within a tenth of their
    insulation: the shrunk shells' gap there needs small elements."""
    points = []
    rounds = [c for c in conductors if c.shape == "round" and c.insulation[0] > 0]
    centres = np.array([[c.x, c.y] for c in rounds]).reshape(-1, 2)
    for i, a in enumerate(rounds):
        ra = a.radius + a.insulation[0]
        d = np.hypot(*(centres[i + 1:] - centres[i]).T)
        for j in np.nonzero(d < ra + 2.2 * max(c.radius + c.insulation[0] for c in rounds))[0]:
            b = rounds[i + 1 + j]
            rb = b.radius + b.insulation[0]
            gap = d[j] - ra - rb
            t = min(a.insulation[0], b.insulation[0])
            if gap < 0.1 * t:
                s = ra / (ra + rb)
                points.append((a.x + s * (b.x - a.x), a.y + s * (b.y - a.y), max(gap, 0.0) + 2 * SHRINK * t))
    return points


def _threshold(dist: int, size: float, h_max: float, reach: float, grading: float) -> int:
    """``size`` (m) up to ``reach`` from the distance field ``dist``, growing by ``grading`` to ``h_max``."""
    field = gmsh.model.mesh.field
    thr = field.add("Threshold")
    for name, value in (("InField", dist), ("SizeMin", size), ("SizeMax", h_max), ("DistMin", reach),
                        ("DistMax", reach + (h_max - size) / grading)):
        field.setNumber(thr, name, value)
    return thr


def _size_fields(conductors: list[Conductor], conductor_surfaces: list[list[int]], density: float,
                 h_max: float) -> list[int]:
    """Fine at every conductor and shell surface, and at the contacts; one
    distance field per size (gmsh evaluates every field at every point)."""
    field = gmsh.model.mesh.field
    groups: dict[tuple[float, float], list[int]] = {}
    for c, surfaces in zip(conductors, conductor_surfaces):
        h = _element_size(c, density)
        key = (float(f"{h:.3g}"), float(f"{max(c.insulation) * 2 + h:.3g}"))
        groups.setdefault(key, []).extend(
            abs(t) for s in surfaces for _, t in gmsh.model.getBoundary([(2, s)], oriented=False))
    ids = []
    for (h, reach), curves in groups.items():
        dist = field.add("Distance")
        field.setNumbers(dist, "CurvesList", sorted(set(curves)))
        field.setNumber(dist, "Sampling", 60)
        ids.append(_threshold(dist, h, h_max, reach, 0.3))
    contacts: dict[float, list[int]] = {}
    for x, y, gap in _contacts(conductors):
        size = float(f"{max(gap, 1e-12) / density:.2g}")
        contacts.setdefault(size, []).append(gmsh.model.occ.addPoint(x, y, 0.0))
    if contacts:
        gmsh.model.occ.synchronize()
    for size, points in contacts.items():
        dist = field.add("Distance")
        field.setNumbers(dist, "PointsList", points)
        ids.append(_threshold(dist, size, h_max, 2 * size, 0.3))
    return ids


def build_dielectric_mesh(conductors: list[Conductor], strips: list[tuple[float, float, float, float]],
                          width: float, height: float, boundary: str, across_width: bool,
                          density: float = 1.0, far_radius_factor: float = 5.0, core: Core | None = None,
                          axis_x: float | None = None) -> WindowMesh:
    """The electrostatic mesh: regions conductor k, ``shell_region(k)``,
    ``TAPE``, ``AIR`` and ``CORE`` (see the module docstring); the domain as
    :func:`racfield.geometry.mesher.build_mesh` draws it."""
    gmsh.initialize(["-noenv"], readConfigFiles=False, interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.option.setNumber("General.NumThreads", 1)
        gmsh.model.add("dielectric")
        occ = gmsh.model.occ
        bare = _conductor_tools(occ, conductors)
        shells = _shells(occ, conductors)
        tapes = _strips(occ, strips, across_width, conductors)
        domain = _domain(occ, boundary, width, height, far_radius_factor, core, axis_x)
        tools = bare + [s for _, s in shells] + tapes + domain.core_tools
        _, mapping = occ.fragment([(2, domain.surface)], tools)
        inside = {tag for dim, tag in mapping[0] if dim == 2}
        outside = sorted({(dim, tag) for m in mapping[1:] for dim, tag in m if dim == 2 and tag not in inside})
        if outside:   # a shell reaching past the window wall: only its part inside is meshed
            occ.remove(outside, recursive=True)
        mapping = [[(d, t) for d, t in m if d != 2 or t in inside] for m in mapping]
        occ.synchronize()
        owner: dict[int, int] = {}
        # later assignments win: core, tape, shells, then the bare conductors
        n, ns, nt = len(bare), len(shells), len(tapes)
        for m in mapping[1 + n + ns + nt:]:
            owner.update({tag: CORE for dim, tag in m if dim == 2})
        for m in mapping[1 + n + ns:1 + n + ns + nt]:
            owner.update({tag: TAPE for dim, tag in m if dim == 2})
        for (k, _), m in zip(shells, mapping[1 + n:1 + n + ns]):
            owner.update({tag: shell_region(k) for dim, tag in m if dim == 2})
        conductor_surfaces = []
        for k, m in enumerate(mapping[1:1 + n]):
            tags = [tag for dim, tag in m if dim == 2]
            owner.update({tag: k for tag in tags})
            conductor_surfaces.append(tags)
        window = min(width, height)
        h_max = (domain.far_radius / 6 if domain.far_radius else window / 6) / density
        fields = _size_fields(conductors, conductor_surfaces, density, h_max)
        if not fields:
            fields = [gmsh.model.mesh.field.add("MathEval")]
            gmsh.model.mesh.field.setString(fields[0], "F", repr(h_max))
        _generate(fields, h_max, 1.0)
        points, triangles, region = _read_triangles(owner)
    finally:
        gmsh.finalize()
    used = np.unique(triangles)
    renumber = np.full(points.shape[1], -1, dtype=np.int64)
    renumber[used] = np.arange(len(used))
    region = np.where(region == AIR, AIR, region)
    return WindowMesh(points[:, used], renumber[triangles], region, 0.0, domain.far_radius, domain.far_centre,
                      domain.symmetry_x, domain.wall_x)
