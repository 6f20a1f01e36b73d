"""The size of a run, forecast from the case alone, before anything is meshed.

The mesher (:mod:`racfield.geometry.mesher`) sizes its triangles from a size
field that :mod:`racfield.geometry.sizing` fixes at density 1: at each
conductor surface its surface size, growing inside the metal (after about a
skin depth) and faster in the air, capped inside each conductor, over the
window (and core body) and everywhere; at the core's corners a size graded
into the corner.  The forecast evaluates that same field, in numpy, at the
points of a grid over the window (and a coarser one over the open air out to
the far boundary), and integrates 1/h^2 over the domain: a mesh of element
size h holds about ``NODES_PER_AREA`` second-order nodes per h^2.  The whole
field is divided by ``[mesh] density``, so the count at density d is d^2
times the count at density 1: the forecast costs the same at any density.

Peak memory and wall time follow from the unknowns by laws fitted to runs of
the benchmark grids (``tests/benchmarks/run_scaling.py``) and of the cases in
``cases/``; see :class:`SizeForecast` for the constants and their date.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, replace

import numpy as np

from .case import Case, CaseError
from .layout import Conductor
from .machine import sparse_solver
from .sizing import (
    MeshSizing,
    base_surface_size,
    case_sizing,
    corner_size,
    surface_edges,
)

#: second-order (6-node) triangle nodes per unit of the integral of 1/h^2 over
#: the conductors, the air and the core body (h the target element size, m;
#: 4.62 would be equilateral triangles of side h, two nodes per 0.433 h^2),
#: and per element edge on the conductor surfaces (what thin foils, gaps and
#: graded rings add); fitted, see SizeForecast
NODES_PER_AREA = np.array([2.06, 5.46, 12.7])
NODES_PER_SURFACE_EDGE = 6.2
#: peak memory law, bytes: MEMORY_BASE + MEMORY_PER_UNKNOWN[solver] * n * log2(n); fitted, see SizeForecast
MEMORY_BASE = 300e6
MEMORY_PER_UNKNOWN = {"superlu": 300.0, "mumps": 195.0}
#: wall time law, s: TIME_BASE + TIME_PER_UNKNOWN * n + factorizations * TIME_PER_FACTOR[solver] * n^1.5
TIME_BASE = 2.0
TIME_PER_UNKNOWN = 2e-5
TIME_PER_FACTOR = {"superlu": 2e-8, "mumps": 6e-9}
#: factorizations of a reduced sweep: expansion points (typically 3 to 6) and 2 check points
REDUCED_FACTORIZATIONS = 7
#: grid points of the quadrature over the window (and core), and over the open air around it
WINDOW_POINTS = 200_000
OUTER_POINTS = 40_000


#: how ``racfield check`` names each sparse solver
SOLVER_NAMES = {"mumps": "MUMPS LDL^T", "superlu": "SuperLU"}


@dataclass(frozen=True)
class SizeForecast:
    """What a run of one arrangement will take, forecast without meshing.

    ``unknowns``: the degrees of freedom of the window mesh (and, with
    ``[end_turns]``, of the end-turn section), estimated as
    ``density^2 * sum(NODES_PER_AREA * integral(1/h^2 dA)) + density *
    NODES_PER_SURFACE_EDGE * E`` with the integrals over the conductors, the
    air and the core body, h (m) the element size the mesher asks for at
    density 1, and E the element edges on the conductor surfaces at density 1
    (perimeter over surface size).  Fitted to the meshes of the cases in
    ``cases/`` and of the 48- and 192-conductor grids: within a factor 1.19 of
    every one (NODES_PER_AREA 2.31, 6.12, 14.2; NODES_PER_SURFACE_EDGE 6.95).

    ``peak_memory_bytes``: the largest resident memory of the run (bytes),
    ``MEMORY_BASE + MEMORY_PER_UNKNOWN * n * log2(n)`` for n unknowns: the
    sparse LU of nested-dissection order holds O(n log n) entries.  Both this
    and the time depend on the sparse solver that runs here
    (:func:`racfield.geometry.machine.sparse_solver`): MUMPS's LDL^T keeps
    one triangle and no copy of U, about 0.65 times SuperLU's memory per
    unknown and a third of its time per factorization (fitted on the 48-,
    192- and 768-conductor grids, 4 December 2026).

    ``time_s``: the wall time of the run (s), ``TIME_BASE + TIME_PER_UNKNOWN * n
    + factorizations * TIME_PER_FACTOR * n^1.5``: meshing, assembly and writing
    grow about as n, each sparse LU of a 2-D mesh about as n^1.5.

    ``solver``: the sparse solver of the forecast, ``"mumps"`` or ``"superlu"``.

    ``factorizations``: sparse LUs the sweep is expected to take (one per
    frequency point by point; expansion and check points of a reduced sweep).

    The constants were fitted on 3 December 2026 to runs on this project's
    2-core, 24 GiB test machine (x86_64, Linux): the benchmark grids of 48, 192
    and 768 conductors and the cases in ``cases/`` (``racfield run`` end to
    end, peak RSS of the process).
    """

    unknowns: int
    peak_memory_bytes: float
    time_s: float
    factorizations: int
    solver: str = "superlu"

    def line(self) -> str:
        """One line for ``racfield check``."""
        return (f"forecast: about {self.unknowns:,} unknowns, peak memory about "
                f"{self.peak_memory_bytes / 1e9:.2g} GB, about {self.time_s:.2g} s "
                f"({self.factorizations} sparse factorizations, {SOLVER_NAMES[self.solver]})")


@dataclass(frozen=True)
class _Domain:
    """The meshed domain: the window (and core) box (x0, y0, x1, y1, m) where
    the size is capped at ``h_window``; the far circle (None: the box is the
    domain) with its centre, and the x below which the half disk is cut."""

    box: tuple[float, float, float, float]
    h_window: float
    h_max: float
    far_centre: tuple[float, float] | None = None
    far_radius: float | None = None
    cut_x: float | None = None
    walls: tuple[float, float, float, float] | None = None


def _domain(case: Case, h_min: float) -> _Domain:
    """The domain the mesher builds for ``case`` (see ``mesher._domain``)."""
    win, f = case.window, case.mesh.far_radius_factor
    width, height = win.width, win.height
    h_window = min(width, height) / 6
    box = (0.0, 0.0, width, height)
    centre, radius, cut = None, None, None
    axis_x = None if case.axis_offset is None else -case.axis_offset
    if win.boundary == "core":
        core = case.core
        cut = -core.centre_leg_width / 2
        box = (cut, -core.yoke_thickness, width + core.outer_leg_width, height + core.yoke_thickness)
        centre = (cut, height / 2)
        radius = f * math.hypot(box[2] - box[0], (box[3] - box[1]) / 2)
    elif win.boundary == "open" and axis_x is not None:
        centre, cut = (axis_x, height / 2), axis_x
        radius = f * math.hypot(width - axis_x, height / 2)
    elif win.boundary == "open-wall":
        centre, cut = (0.0, height / 2), 0.0
        radius = f * math.hypot(width, height / 2)
    elif win.boundary == "open":
        centre = (width / 2, height / 2)
        radius = f * 0.5 * math.hypot(width, height)
    h_max = max(radius / 6 if radius else min(width, height) / 6, h_min)
    walls = (0.0, 0.0, width, height) if win.boundary in ("core", "ideal-core") else None
    return _Domain(box, h_window, h_max, centre, radius, cut, walls)


def _signed_distance(x: np.ndarray, y: np.ndarray, conductors: list[Conductor], index: np.ndarray) -> np.ndarray:
    """Signed distance (m, negative inside) from points (x, y) (p,) to the
    surfaces of the conductors ``index`` (p, k)."""
    cx = np.array([c.x for c in conductors])[index]
    cy = np.array([c.y for c in conductors])[index]
    half_w = np.array([c.width / 2 for c in conductors])[index]
    half_h = np.array([c.height / 2 for c in conductors])[index]
    round_ = np.array([c.shape == "round" for c in conductors])[index]
    dx, dy = x[:, None] - cx, y[:, None] - cy
    circle = np.hypot(dx, dy) - half_w
    qx, qy = np.abs(dx) - half_w, np.abs(dy) - half_h
    box = np.hypot(np.maximum(qx, 0.0), np.maximum(qy, 0.0)) + np.minimum(np.maximum(qx, qy), 0.0)
    return np.where(round_, circle, box)


def _sizes(x: np.ndarray, y: np.ndarray, conductors: list[Conductor], tree, sizing: MeshSizing,
           domain: _Domain, caps: np.ndarray, surface: np.ndarray) -> np.ndarray:
    """The mesher's element size (m, density 1) at points (x, y)."""
    k = min(8, len(conductors))
    _, index = tree.query(np.column_stack([x, y]), k=k)
    index = index.reshape(len(x), k)
    d = _signed_distance(x, y, conductors, index)
    h = surface[index]
    inside = (d < 0.0).any(axis=1)
    skin = min(sizing.skin_depth, 1.0)
    metal = h + sizing.grading * np.maximum(-d - np.minimum(skin, 4 * h), 0.0)
    air = h + sizing.air_grading * np.abs(d)
    size = np.where(inside, metal.min(axis=1), air.min(axis=1))
    owner = index[np.arange(len(x)), np.argmin(d, axis=1)]
    size = np.where(inside, np.minimum(size, caps[owner]), size)
    x0, y0, x1, y1 = domain.box
    in_box = (x >= x0) & (x <= x1) & (y >= y0) & (y <= y1)
    size = np.minimum(np.where(in_box, np.minimum(size, domain.h_window), size), domain.h_max)
    # a gap of width g narrower than h: slivers of height g along both sides, as many as h^2/(g h) elements
    gaps = np.sort(np.abs(d), axis=1)
    gap = gaps[:, 0] + (gaps[:, 1] if k > 1 else np.inf)
    if domain.walls is not None:
        wx0, wy0, wx1, wy1 = domain.walls
        wall = np.minimum(np.minimum(x - wx0, wx1 - x), np.minimum(y - wy0, wy1 - y))
        gap = np.where(wall >= 0.0, np.minimum(gap, gaps[:, 0] + wall), gap)
    size = np.where(inside, size, np.minimum(size, np.sqrt(gap * size)))
    region = np.where(inside, 0, np.where(_in_core(x, y, domain), 2, 1))
    return size, region


def _in_core(x: np.ndarray, y: np.ndarray, domain: _Domain) -> np.ndarray:
    """Which points lie in the core body (in its box, outside the window)."""
    if domain.walls is None or domain.box == domain.walls:
        return np.zeros(len(x), dtype=bool)
    x0, y0, x1, y1 = domain.box
    wx0, wy0, wx1, wy1 = domain.walls
    in_box = (x >= x0) & (x <= x1) & (y >= y0) & (y <= y1)
    return in_box & ~((x > wx0) & (x < wx1) & (y > wy0) & (y < wy1))


def _corners(case: Case) -> list[tuple[float, float]]:
    """The core body's corners the mesher refines at (not on the symmetry plane)."""
    core, width, height = case.core, case.window.width, case.window.height
    right = width + core.outer_leg_width
    points = [(0.0, 0.0), (width, 0.0), (0.0, height), (width, height),
              (right, -core.yoke_thickness), (right, height + core.yoke_thickness)]
    for gap in core.gaps:
        edges = (0.0,) if gap.leg == "centre" else (width, right)
        points += [(ex, gap.at + s * gap.length / 2) for ex in edges for s in (-1, 1)]
    return points


def _grid(x0: float, y0: float, x1: float, y1: float, count: int, finest: float):
    """Cell centres (x, y) of a uniform grid over a box and its cell area (m^2):
    about ``count`` cells, no finer than ``finest`` (m)."""
    step = max(math.sqrt((x1 - x0) * (y1 - y0) / count), finest)
    xs = np.arange(x0 + step / 2, x1, step)
    ys = np.arange(y0 + step / 2, y1, step)
    gx, gy = np.meshgrid(xs, ys)
    return gx.ravel(), gy.ravel(), step * step


def _disk_integral(h0: float, grading: float, radius: float) -> float:
    """Integral of 1/(h0 + grading r)^2 over a disk of ``radius`` (m) about a point."""
    a = h0 / grading
    return 2 * math.pi / grading ** 2 * (math.log((a + radius) / a) + a / (a + radius) - 1.0)


def _in_domain(x: np.ndarray, y: np.ndarray, domain: _Domain) -> np.ndarray:
    """Which points (x, y) lie in the meshed domain."""
    if domain.far_radius is None:
        x0, y0, x1, y1 = domain.box
        return (x >= x0) & (x <= x1) & (y >= y0) & (y <= y1)
    keep = np.hypot(x - domain.far_centre[0], y - domain.far_centre[1]) <= domain.far_radius
    return keep & (x >= domain.cut_x) if domain.cut_x is not None else keep


def _corner_sizes(x: np.ndarray, y: np.ndarray, corners: list[tuple[float, float]], h_corner: float,
                  grading: float, nearest: float) -> np.ndarray:
    """The corner size field (m) at points (x, y), no closer than ``nearest`` (m) to a corner."""
    c = np.array(corners)
    dist = np.hypot(x[:, None] - c[:, 0], y[:, None] - c[:, 1]).min(axis=1)
    return h_corner + grading * np.maximum(dist, nearest)


def size_integral(case: Case, conductors: list[Conductor], sizing: MeshSizing | None = None) -> np.ndarray:
    """Integral of 1/h^2 (dimensionless) over the conductors, the air and the
    core body of ``case``'s meshed domain (3,), h (m) the element size the
    mesher asks for at density 1."""
    from scipy.spatial import cKDTree

    sizing = sizing or case_sizing(case, conductors)
    surface = np.array([base_surface_size(c, sizing) for c in conductors])
    caps = np.array([max(min(c.width, c.height) / 4, s) for c, s in zip(conductors, surface)])
    h_min = float(surface.min())
    domain = _domain(case, h_min)
    tree = cKDTree(np.array([[c.x, c.y] for c in conductors]))
    x0, y0, x1, y1 = domain.box
    corners = _corners(case) if case.window.boundary == "core" else []
    if corners:
        h_corner = min(corner_size([g.length for g in case.core.gaps], min(case.window.width, case.window.height),
                                   sizing), domain.h_max)
    parts = [(*_grid(x0, y0, x1, y1, WINDOW_POINTS, h_min / 2), True)]
    if domain.far_radius is not None:
        cx, cy, r = *domain.far_centre, domain.far_radius
        gx, gy, area = _grid(cx - r, cy - r, cx + r, cy + r, OUTER_POINTS, 0.0)
        outside = ~((gx >= x0) & (gx <= x1) & (gy >= y0) & (gy <= y1))
        parts.append((gx[outside], gy[outside], area, False))
    total = np.zeros(3)
    for gx, gy, area, inner in parts:
        keep = _in_domain(gx, gy, domain)
        gx, gy = gx[keep], gy[keep]
        for start in range(0, len(gx), 100_000):
            x, y = gx[start:start + 100_000], gy[start:start + 100_000]
            h, region = _sizes(x, y, conductors, tree, sizing, domain, caps, surface)
            if corners:
                h = np.minimum(h, _corner_sizes(x, y, corners, h_corner, sizing.corner_grading, math.sqrt(area)))
            total += np.bincount(region, weights=area / h ** 2, minlength=3)
    if corners:
        near = math.sqrt(_grid(x0, y0, x1, y1, WINDOW_POINTS, h_min / 2)[2])
        total[1] += len(corners) * _disk_integral(h_corner, sizing.corner_grading, near)
    return total


def _end_section(case: Case) -> Case:
    """The end-turn section's case (as ``fem.whole_turns.end_section``): the
    same conductors in open air beside a magnetic wall."""
    return replace(case, window=replace(case.window, boundary="open-wall"), core=None, end_turns=None)


def forecast_unknowns(case: Case, conductors: list[Conductor]) -> int:
    """The unknowns of ``case``'s mesh (and of its end-turn section's)."""
    sections = [case] if case.end_turns is None else [case, _end_section(case)]
    total = 0.0
    for section in sections:
        sizing = case_sizing(section, conductors)
        base = replace(sizing, density=1.0)
        integral = float(NODES_PER_AREA @ size_integral(section, conductors, base))
        edges = NODES_PER_SURFACE_EDGE * surface_edges(conductors, base)
        total += sizing.density ** 2 * integral + sizing.density * edges + len(conductors)
    return round(total)


def peak_memory(unknowns: int, solver: str | None = None) -> float:
    """The peak resident memory (bytes) of a run of ``unknowns`` unknowns with
    ``solver`` (default: the one that runs here, see :mod:`racfield.geometry.machine`)."""
    n = max(unknowns, 2)
    return MEMORY_BASE + MEMORY_PER_UNKNOWN[solver or sparse_solver(unknowns)] * n * math.log2(n)


def wall_time(unknowns: int, factorizations: int, solver: str | None = None) -> float:
    """The wall time (s) of a run of ``unknowns`` unknowns and ``factorizations``
    sparse factorizations with ``solver`` (default: the one that runs here)."""
    return (TIME_BASE + TIME_PER_UNKNOWN * unknowns
            + factorizations * TIME_PER_FACTOR[solver or sparse_solver(unknowns)] * unknowns ** 1.5)


def _factorizations(case: Case, conductors: list[Conductor]) -> int:
    """Sparse LUs of the sweep: one per frequency, or a reduced sweep's (see ``fem.sweep.use_reduced``)."""
    count = len(case.frequencies)
    reduced = count > 8 and min(case.frequencies) > 0.0 and not any(c.strands for c in conductors)
    sections = 1 if case.end_turns is None else 2
    return sections * (min(count, REDUCED_FACTORIZATIONS) if reduced else count)


def forecast(case: Case, conductors: list[Conductor]) -> SizeForecast:
    """The :class:`SizeForecast` of one arrangement ``case`` with its placed ``conductors``."""
    unknowns = forecast_unknowns(case, conductors)
    factorizations = _factorizations(case, conductors)
    solver = sparse_solver(unknowns)
    return SizeForecast(unknowns, peak_memory(unknowns, solver), wall_time(unknowns, factorizations, solver),
                        factorizations, solver)


def available_memory() -> float:
    """Memory (bytes) a new run may take: MemAvailable of /proc/meminfo, else
    the free physical pages (``os.sysconf``); inf when neither is known."""
    try:
        with open("/proc/meminfo", encoding="ascii") as meminfo:
            for line in meminfo:
                if line.startswith("MemAvailable:"):
                    return float(line.split()[1]) * 1024.0
    except (OSError, ValueError, IndexError):
        pass
    try:
        return float(os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE"))
    except (ValueError, OSError, AttributeError):
        return math.inf


def _quick_bounds(case: Case, conductors: list[Conductor]) -> tuple[float, float]:
    """Cheap lower and upper bounds on the unknowns of ``case`` (no quadrature):
    the surface term alone, and every area meshed at the smallest size."""
    sections = [case] if case.end_turns is None else [case, _end_section(case)]
    low = high = 0.0
    for section in sections:
        sizing = case_sizing(section, conductors)
        base = replace(sizing, density=1.0)
        surface = min(base_surface_size(c, base) for c in conductors)
        domain = _domain(section, surface)
        floor = surface
        if section.window.boundary == "core":
            floor = min(floor, corner_size([g.length for g in section.core.gaps],
                                           min(section.window.width, section.window.height), base))
        x0, y0, x1, y1 = domain.box
        area = (x1 - x0) * (y1 - y0) if domain.far_radius is None else math.pi * domain.far_radius ** 2
        edges = sizing.density * NODES_PER_SURFACE_EDGE * surface_edges(conductors, base)
        low += edges
        high += edges + sizing.density ** 2 * float(NODES_PER_AREA.max()) * area / floor ** 2 + len(conductors)
    return low, high


def check_size(case: Case, conductors: list[Conductor], available: float | None = None) -> None:
    """CaseError when the forecast peak memory of ``case`` exceeds ``available``
    (bytes; default :func:`available_memory`).  Cheap bounds decide first; the
    quadrature runs only when they do not."""
    limit = available_memory() if available is None else available
    low, high = _quick_bounds(case, conductors)
    if peak_memory(int(high)) <= limit:
        return
    unknowns = int(low) if peak_memory(int(low)) > limit else forecast_unknowns(case, conductors)
    memory = peak_memory(unknowns)
    if memory > limit:
        key = ("mesh.frequency" if case.mesh.frequency is not None else
               "mesh.density" if case.mesh.density > 1.0 else
               "waveform.max_harmonic" if case.waveform is not None else
               "thermal.frequency" if case.mesh_frequency > max(case.frequencies) else "sweep")
        raise CaseError(key, f"the mesh at {case.mesh_frequency:.4g} Hz and density {case.mesh.density:g} would "
                        f"have {'at least' if unknowns == int(low) else 'about'} {unknowns:.3g} unknowns and need "
                        f"about {memory / 1e9:.3g} GB, more than the {limit / 1e9:.3g} GB of memory available",
                        "lower [mesh] density or set [mesh] frequency lower (or run with --force-size to try anyway)")
