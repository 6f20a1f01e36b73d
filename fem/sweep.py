"""A case's frequency sweep: one mesh and one assembly, one factorization per frequency."""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from geometry.case import Case
from geometry.layout import Conductor, dc_resistance, place
from geometry.materials import material, skin_depth
from geometry.mesher import MeshSizing, WindowMesh, build_mesh

from .mmf import MmfProfile, mmf_profile
from .parallel import Excitation, excitation_basis, sharing
from .problem import WindowProblem


@dataclass
class FieldSnapshot:
    """Field at one frequency on the mesh nodes, for plots and VTU files.

    ``points`` (2, n) m and ``triangles`` (6, m) use the solver's node order
    (corners, then edge nodes 01, 12, 20); ``region`` is as in the mesh.

    ``potential`` Wb/m and ``current_density`` A/m^2, both complex RMS phasors.
    """

    frequency: float
    points: np.ndarray
    triangles: np.ndarray
    region: np.ndarray
    potential: np.ndarray
    current_density: np.ndarray
    mmf: MmfProfile | None = None


@dataclass
class SweepResult:
    """Per-conductor results of a sweep (per metre of conductor length).

    ``loss_per_m`` (Nf, Nc) W/m at the case currents; ``impedance_per_m``
    and ``inductance_per_m`` (Nf, Nc, Nc) ohm/m and H/m; ``loss_matrix_per_m``
    (Nf, Nc, Ne, Ne) W/m per A^2 (loss of conductor k at excitation column
    currents x is Re(x^H Q x)); ``connection`` (Nc, Ne) the excitation basis
    (see :mod:`fem.parallel`; one column per winding without untransposed
    parallel conductors);
    ``rdc_per_m`` (Nc,) ohm/m from the true conductor areas (axisymmetric: ohm
    per ring from its true geometry; every ``_per_m`` value is then per turn); ``currents``
    (Nc,) A RMS phasors.
    """

    frequencies: np.ndarray
    conductors: list[Conductor]
    resistivity: np.ndarray
    currents: np.ndarray
    rdc_per_m: np.ndarray
    loss_per_m: np.ndarray
    impedance_per_m: np.ndarray
    mesh_area_error: np.ndarray
    inductance_per_m: np.ndarray
    loss_matrix_per_m: np.ndarray
    winding_names: list[str]
    connection: np.ndarray
    unknowns: int
    elements: int
    surface_size: float
    timings: dict = field(default_factory=dict)
    snapshot: FieldSnapshot | None = None
    excitation: Excitation | None = None
    basis_currents: np.ndarray | None = None   #: (Nf, Ne) A RMS in the excitation columns


def conductor_resistivities(case: Case, conductors: list[Conductor]) -> np.ndarray:
    """Resistivity (ohm*m) of every conductor at the case temperature."""
    return np.array([material(case.winding(c.winding).material).resistivity(case.model.temperature_c)
                     for c in conductors])


def mesh_case(case: Case, conductors: list[Conductor]) -> WindowMesh:
    """The window mesh, sized from the smallest skin depth at the highest frequency."""
    rho = conductor_resistivities(case, conductors)
    delta = skin_depth(float(rho.min()), max(case.frequencies))
    sizing = MeshSizing(skin_depth=delta, density=case.mesh.density)
    return build_mesh(conductors, case.window.width, case.window.height, case.window.boundary,
                      sizing, case.mesh.far_radius_factor, case.core,
                      axis_x=-case.window.inner_radius if case.model.axisymmetric else None)


def problem_for(case: Case, window_mesh: WindowMesh, resistivity: np.ndarray,
                conductors: list[Conductor] | None = None) -> WindowProblem:
    """The assembled problem of ``case`` on ``window_mesh`` (planar or axisymmetric);
    ``conductors`` tell homogenized litz bundles apart."""
    strands = None
    if conductors and any(c.strands for c in conductors):
        strands = [(c.strands, c.strand_diameter, c.width) for c in conductors]
    return WindowProblem(window_mesh, 1.0 / resistivity,
                         case.core.relative_permeability if case.core else 1.0,
                         case.window.inner_radius if case.model.axisymmetric else None, strands)


def run_sweep(case: Case, progress: Callable[[int, int, float], None] | None = None) -> SweepResult:
    """Place, mesh, assemble once and solve every frequency of ``case``."""
    timings = {}
    start = time.perf_counter()
    conductors = place(case)
    rho = conductor_resistivities(case, conductors)
    window_mesh = mesh_case(case, conductors)
    timings["mesh_s"] = time.perf_counter() - start

    start = time.perf_counter()
    problem = problem_for(case, window_mesh, rho, conductors)
    timings["assembly_s"] = time.perf_counter() - start

    names = [w.name for w in case.windings]
    excitation = excitation_basis(case, conductors)
    connection = excitation.basis
    winding_currents = np.array([w.phasor for w in case.windings], dtype=complex)

    def share(z_basis: np.ndarray) -> np.ndarray:
        return sharing(z_basis, excitation.windings) @ winding_currents

    # nominal conductor currents: equal shares among parallel conductors
    currents = excitation.membership @ (winding_currents / np.maximum(
        excitation.membership.sum(axis=0) / np.maximum(excitation.turns, 1), 1))
    true_area = np.array([c.area for c in conductors])
    freqs = np.array(case.frequencies)
    nf, nc, nw = len(freqs), len(conductors), connection.shape[1]
    loss = np.zeros((nf, nc))
    basis_currents = np.zeros((nf, nw), dtype=complex)
    impedance = np.zeros((nf, nc, nc), dtype=complex)
    inductance = np.zeros((nf, nc, nc))
    loss_matrix = np.zeros((nf, nc, nw, nw), dtype=complex)
    snapshot = None
    start = time.perf_counter()
    for i, f in enumerate(freqs):
        last = i == nf - 1
        solution = problem.solve_windings(f, connection, share, keep_field=last)
        basis_currents[i] = solution.currents
        loss[i] = solution.loss_per_m
        impedance[i] = solution.impedance_per_m
        inductance[i] = solution.inductance_per_m
        loss_matrix[i] = solution.loss_matrix_per_m
        if last:
            mmf = None
            if case.window.boundary != "open":
                mmf = mmf_profile(problem, solution.potential, conductors, connection @ solution.currents,
                                  case.window.width,
                                  case.window.height, case.window.stacking == "across-width",
                                  case.core.relative_permeability if case.core else 1.0)
            snapshot = FieldSnapshot(
                f, problem.basis.doflocs, problem.basis.element_dofs, window_mesh.region, solution.potential,
                problem.current_density(f, solution.voltage_per_m, solution.potential,
                                         connection @ solution.currents), mmf)
        if progress:
            progress(i + 1, nf, f)
    timings["solve_s"] = time.perf_counter() - start
    offset = case.window.inner_radius if case.model.axisymmetric else None
    rdc = np.array([dc_resistance(c, r, offset) for c, r in zip(conductors, rho)])
    return SweepResult(freqs, conductors, rho, currents, rdc, loss, impedance,
                       problem.areas / true_area - 1.0, inductance, loss_matrix, names, connection,
                       problem.unknowns, window_mesh.elements,
                       window_mesh.surface_size, timings, snapshot, excitation, basis_currents)
