"""Winding capacitance of a case: the electrostatic solution of its window
(:mod:`racfield.fem.electrostatic`) on the mesh with the insulation
(:mod:`racfield.geometry.dielectric_mesh`), and the energy method.

Electrodes: every conductor, and the core (last): the walls of an ideal-core
window, the core body, the magnetic wall of an open-wall model, or the far
circle of an open model (the surroundings).  A core or far arc that is not
an electrode carries no charge across it (the natural condition), as does an
axis or symmetry plane.

Energy method (e.g. A. Massarini, M. K. Kazimierczuk, "Self-capacitance of
inductors", IEEE Trans. Power Electronics, 1997): the turns of a winding are
in series, and the voltage along it is linear from its start terminal to its
end terminal, so turn j of N (in series order, j = 1 at the start) sits at
u_start + (j - 1/2)/N (u_end - u_start).  With T the map from terminal to
turn potentials, the terminal capacitance matrix is T^T C T: its stored
energy 1/2 u^T (T^T C T) u is the winding's for terminal voltages u.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from racfield.geometry.case import Case
from racfield.geometry.dielectric_mesh import TAPE, build_dielectric_mesh, shell_owner
from racfield.geometry.layout import Conductor, insulation_strips
from racfield.geometry.mesher import AIR, CORE
from racfield.geometry.turn_length import turn_lengths

from .electrostatic import Electrodes, ElectrostaticProblem, facet_dofs, region_dofs


@dataclass
class CapacitanceResult:
    """The electrostatic solution of a case.  Capacitances in F (whole
    turns); ``conductor_f_per_m`` per metre (per ring in F in axisymmetric
    models), conductors in case order and the core last.

    ``terminals``: names ("primary.start", ...); ``terminal_f`` the terminal
    capacitance matrix T^T C T with the core grounded (or, floating,
    eliminated); ``self_f``: each winding's capacitance across its
    terminals, the other terminals and the core at 0 V; ``between_f``: the
    capacitance between each pair of windings with each winding's turns
    tied together; ``network``: the branch capacitances of the lumped
    network, ``between`` [(terminal, terminal, F)] and ``to_core`` (F per
    terminal).  ``worst_voltages`` (terminals,): the unit-norm terminal
    voltages of the largest stored energy, and ``potential`` (V) at the
    mesh's P2 nodes ``nodes`` (2, N) m for them, on ``triangles`` (6 corner/
    edge DOFs per element) with regions ``region``."""

    core: str
    conductor_f_per_m: np.ndarray
    terminals: list[str]
    terminal_f: np.ndarray
    self_f: dict[str, float]
    between_f: dict[str, float]
    network: dict
    worst_voltages: np.ndarray
    worst_energy_j: float
    potential: np.ndarray
    nodes: np.ndarray
    triangles: np.ndarray
    region: np.ndarray
    unknowns: int


def permittivities(case: Case, conductors: list[Conductor], region: np.ndarray) -> np.ndarray:
    """Relative permittivity of every element of the dielectric mesh."""
    d = case.dielectric
    eps = np.ones(len(region))
    eps[region == AIR] = d.fill_permittivity
    eps[region == TAPE] = d.layer_insulation_permittivity
    shells = shell_owner(region)
    for c in conductors:
        eps[shells == c.index] = d.insulation_of(c.winding)
    return eps


def _electrodes(case: Case, mesh, count: int):
    """The electrodes: every conductor, then the core (see the module docstring)."""
    region = mesh.region

    def pick(basis) -> Electrodes:
        dofs = [region_dofs(basis, region, k) for k in range(count)]
        if np.any(region == CORE):
            dofs.append(region_dofs(basis, region, CORE))
        elif mesh.far_radius is None:
            dofs.append(facet_dofs(basis, None))
        elif mesh.wall_x is not None:
            dofs.append(facet_dofs(basis, lambda m: np.abs(m[0] - mesh.wall_x) <= 1e-9 * mesh.far_radius))
        else:
            edge = mesh.symmetry_x
            dofs.append(facet_dofs(basis, None if edge is None else
                                   (lambda m: np.abs(m[0] - edge) > 1e-9 * mesh.far_radius)))
        return Electrodes(dofs)
    return pick


def series_positions(case: Case, conductors: list[Conductor]) -> np.ndarray:
    """Each conductor's place along its winding, 0 at the start terminal and
    1 at the end: (j - 1/2)/N for turn j of N in case order, reversed for a
    winding with ``start = "outer"``."""
    s = np.zeros(len(conductors))
    for w in case.windings:
        members = [c for c in conductors if c.winding == w.name]
        turns = max((c.turn for c in members), default=1)
        for c in members:
            j = c.turn if w.start == "inner" else turns + 1 - c.turn
            s[c.index] = (j - 0.5) / turns
    return s


def terminal_map(case: Case, conductors: list[Conductor]) -> tuple[list[str], np.ndarray]:
    """Terminal names and T (Nc, 2 Nw): conductor potentials for terminal potentials."""
    names = [w.name for w in case.windings]
    s = series_positions(case, conductors)
    t = np.zeros((len(conductors), 2 * len(names)))
    for c in conductors:
        w = names.index(c.winding)
        t[c.index, 2 * w], t[c.index, 2 * w + 1] = 1.0 - s[c.index], s[c.index]
    return [f"{n}.{end}" for n in names for end in ("start", "end")], t


def whole_turns(per_m: np.ndarray, lengths: np.ndarray) -> np.ndarray:
    """The Maxwell matrix (Nc + 1 with the core last) per metre to whole
    turns: each branch capacitance times its length (between two turns their
    mean length, to the core the turn's own; planar with one turn length or
    axisymmetric: plain scaling), so that the matrix stays a network's."""
    own = np.append(lengths, 0.0)
    pair = 0.5 * (own[:, None] + own[None, :])
    pair[:-1, -1] = pair[-1, :-1] = lengths
    branch = -per_m * pair
    np.fill_diagonal(branch, 0.0)
    # every branch ends on an electrode (the Maxwell matrix's rows sum to zero): the
    # diagonal is the sum of a row's branches
    out = -branch
    out[np.diag_indices(len(per_m))] = branch.sum(axis=1)
    return out


def _reduce(matrix: np.ndarray, core: str) -> np.ndarray:
    """The conductors' matrix with the core grounded (its row and column
    dropped) or floating (no net charge: eliminated, Kron reduction)."""
    c = matrix[:-1, :-1]
    if core == "floating":
        c = c - np.outer(matrix[:-1, -1], matrix[-1, :-1]) / matrix[-1, -1]
    return c


def solve_case_capacitance(case: Case, conductors: list[Conductor]) -> CapacitanceResult:
    """The capacitances of ``case`` (its ``[dielectric]``) with the conductors placed."""
    win = case.window
    mesh = build_dielectric_mesh(conductors, insulation_strips(case), win.width, win.height, win.boundary,
                                 win.stacking == "across-width", case.mesh.density, case.mesh.far_radius_factor,
                                 case.core, None if case.axis_offset is None else -case.axis_offset)
    problem = ElectrostaticProblem(mesh, permittivities(case, conductors, mesh.region),
                                   _electrodes(case, mesh, len(conductors)), case.axis_offset)
    per_m = problem.capacitance
    lengths = turn_lengths(case, conductors).metres
    whole = whole_turns(per_m, lengths)
    conductor_c = _reduce(whole, case.dielectric.core)
    names, t = terminal_map(case, conductors)
    terminal = t.T @ conductor_c @ t
    windings = [w.name for w in case.windings]
    self_f = {w: float(terminal[2 * i, 2 * i]) for i, w in enumerate(windings)}
    body = np.zeros((len(conductors), len(windings)))
    for c in conductors:
        body[c.index, windings.index(c.winding)] = 1.0
    bodies = body.T @ conductor_c @ body
    between = {f"{a}-{b}": float(-bodies[i, j]) for i, a in enumerate(windings)
               for j, b in enumerate(windings) if j > i}
    network = {"between": [[names[i], names[j], float(-terminal[i, j])] for i in range(len(names))
                           for j in range(i + 1, len(names))],
               "to_core": {names[i]: float(terminal[i].sum()) for i in range(len(names))}}
    # the worst case: the unit terminal voltages of the largest energy (the top eigenvector)
    values, vectors = np.linalg.eigh(terminal)
    worst = vectors[:, -1] * np.sign(vectors[np.argmax(np.abs(vectors[:, -1])), -1])
    voltages = np.append(t @ worst, 0.0)
    if case.dielectric.core == "floating":
        voltages[-1] = -(per_m[-1, :-1] @ voltages[:-1]) / per_m[-1, -1]
    return CapacitanceResult(case.dielectric.core, per_m, names, terminal, self_f, between, network, worst,
                             0.5 * float(values[-1]), problem.potential(voltages), problem.basis.doflocs,
                             problem.basis.element_dofs, mesh.region, problem.n + problem.count)
