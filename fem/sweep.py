"""A case's frequency sweep: one mesh and one assembly, then one factorization
per frequency (point-by-point) or a reduced-order model built from a few
factorizations (reduced; see :func:`reduced_plan`)."""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from racfield.geometry.case import Case
from racfield.geometry.layout import Conductor, dc_resistance, place
from racfield.geometry.materials import conductor_resistivities, skin_depth  # noqa: F401 (re-exported)
from racfield.geometry.mesher import MeshSizing, WindowMesh, build_mesh

from .guards import sweep_warnings
from .mmf import MmfProfile, mmf_profile
from .parallel import Excitation, excitation_basis, sharing
from .problem import WindowProblem
from .reduced import moment_vectors


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
    #: {"method": "reduced"|"point-by-point", "expansion_hz": [...], "max_check_deviation": float|None}
    sweep_info: dict = field(default_factory=dict)
    #: numerical warnings, {"kind", "frequency_hz", "message"} each (see :mod:`fem.guards`)
    warnings: list[dict] = field(default_factory=list)


@dataclass
class PointResult:
    """One solved frequency of a sweep (see :class:`SweepResult` for the arrays'
    meaning): ``basis_currents`` (Ne,), ``loss_per_m`` (Nc,),
    ``impedance_per_m`` and ``inductance_per_m`` (Nc, Nc),
    ``loss_matrix_per_m`` (Nc, Ne, Ne)."""

    basis_currents: np.ndarray
    loss_per_m: np.ndarray
    impedance_per_m: np.ndarray
    inductance_per_m: np.ndarray
    loss_matrix_per_m: np.ndarray
    residual: float = math.nan   #: backward error of the point's full solve (NaN: reduced, none)


#: sweeps with more frequencies than this use the reduced model by default
REDUCED_MIN_FREQUENCIES = 8
#: stop adding expansion points when the reduced column impedances with one moment
#: fewer per point differ less than this
REDUCED_TOLERANCE = 1e-6
REDUCED_START_POINTS = 3
REDUCED_MAX_POINTS = 10
#: moments per expansion point (one factorization serves them all)
REDUCED_MOMENTS = 4


def column_impedances(response, connection: np.ndarray) -> np.ndarray:
    """E^T Z E (Ne, Ne) ohm/m: the impedance matrix of the excitation columns."""
    return connection.T @ np.linalg.solve(response.admittance, connection)


def _relative_change(new: np.ndarray, old: np.ndarray) -> np.ndarray:
    """Largest |change| of each column impedance matrix over sqrt(R_aa R_bb)."""
    r = np.abs(np.diagonal(new.real, axis1=1, axis2=2))
    scale = np.sqrt(r[:, :, None] * r[:, None, :])
    return np.max(np.abs(new - old) / np.maximum(scale, 1e-300), axis=(1, 2))


def reduced_plan(problem: WindowProblem, freqs: np.ndarray, connection: np.ndarray,
                 tolerance: float = REDUCED_TOLERANCE, start: int = REDUCED_START_POINTS,
                 most: int = REDUCED_MAX_POINTS, moments: int = REDUCED_MOMENTS):
    """Build the reduced model of ``problem`` for the requested ``freqs`` (Hz,
    > 0) and the excitation columns ``connection`` (Nc, Ne).

    Expansion points start at ``start`` requested frequencies spread
    log-uniformly over the band, each contributing ``moments`` moments of the
    column excitations from one factorization.  A second model keeps one
    moment fewer at every point; where the two disagree most, relative to the
    column resistances, the next expansion point goes, until they agree
    within ``tolerance`` everywhere or ``most`` points are used.  Returns
    (model, expansion indices, estimated change per frequency)."""
    model, lower = problem.reduced_model(), problem.reduced_model()
    logf = np.log(freqs)
    targets = np.linspace(logf.min(), logf.max(), min(start, len(freqs)))
    chosen: list[int] = []
    for t in targets:
        order = np.argsort(np.abs(logf - t))
        chosen.append(int(next(i for i in order if i not in chosen)))
    omegas = 2.0 * np.pi * freqs
    columns = connection.shape[1]

    def expand(index: int) -> None:
        factorization = problem.factorize(freqs[index])
        vectors = moment_vectors(factorization, problem.mass, problem.coupling, connection, moments)
        model.extend(vectors, omegas[index])
        lower.extend(vectors[:, :(moments - 1) * columns], omegas[index])

    def impedances(reduced) -> np.ndarray:
        return np.array([column_impedances(reduced.respond(w), connection) for w in omegas])

    for i in chosen:
        expand(i)
    while True:
        change = _relative_change(impedances(model), impedances(lower))
        if change.max() < tolerance or len(chosen) >= min(most, len(freqs)):
            break
        candidates = [i for i in np.argsort(-change) if int(i) not in chosen]
        if not candidates:
            break
        chosen.append(int(candidates[0]))
        expand(chosen[-1])
    return model, chosen, change


def use_reduced(case: Case, conductors: list[Conductor], method: str = "auto") -> bool:
    """Whether the sweep of ``case`` uses the reduced model: ``method`` "exact"
    never, "reduced" whenever possible, "auto" for more than
    REDUCED_MIN_FREQUENCIES frequencies.  Litz bundles (frequency-dependent K)
    and a 0 Hz point always take the point-by-point sweep."""
    if method == "exact" or any(c.strands for c in conductors) or min(case.frequencies) <= 0.0:
        return False
    if len(case.frequencies) < 4:
        return False
    return method == "reduced" or len(case.frequencies) > REDUCED_MIN_FREQUENCIES


def mesh_case(case: Case, conductors: list[Conductor]) -> WindowMesh:
    """The window mesh, sized from the smallest skin depth at the mesh frequency
    (``[mesh] frequency``, else the highest frequency of the case)."""
    rho = conductor_resistivities(case, conductors)
    delta = skin_depth(float(rho.min()), case.mesh_frequency)
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


def run_sweep(case: Case, progress: Callable[[int, int, float], None] | None = None,
              method: str = "auto", done: dict[int, PointResult] | None = None,
              on_point: Callable[[int, PointResult, Callable[[], "SweepResult"]], None] | None = None
              ) -> SweepResult:
    """Place, mesh, assemble once and solve every frequency of ``case``.

    ``method``: "auto" (reduced model for long sweeps without litz bundles),
    "reduced" or "exact" (one factorization per frequency).  ``done``: points
    already solved (by index, e.g. from an interrupted run), taken as they
    are; the last frequency is solved again all the same, for its field.
    ``on_point(index, point, partial)`` is called after every newly solved
    point; ``partial()`` gives the sweep of the points solved so far."""
    timings = {}
    start = time.perf_counter()
    conductors = place(case)
    rho = conductor_resistivities(case, conductors)
    window_mesh = mesh_case(case, conductors)
    timings["mesh_s"] = time.perf_counter() - start

    start = time.perf_counter()
    problem = problem_for(case, window_mesh, rho, conductors)
    timings["assembly_s"] = time.perf_counter() - start
    start = time.perf_counter()
    problem.ordering    # one nested dissection serves every factorization of the sweep
    if not problem.stranded.any():
        problem.bordered
    timings["ordering_s"] = time.perf_counter() - start

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
    done = dict(done or {})
    finished = np.zeros(nf, dtype=bool)
    residual = np.full(nf, math.nan)

    def store(i: int, point: PointResult) -> None:
        basis_currents[i], loss[i] = point.basis_currents, point.loss_per_m
        impedance[i], inductance[i] = point.impedance_per_m, point.inductance_per_m
        loss_matrix[i] = point.loss_matrix_per_m
        residual[i] = float(point.residual)
        finished[i] = True

    for i, point in done.items():
        store(i, point)
    start = time.perf_counter()
    model = None
    sweep_info = {"method": "point-by-point", "expansion_hz": [], "max_check_deviation": None}
    residuals = []   # (Hz, backward error or None) of the solves, for the guards
    if use_reduced(case, conductors, method):
        model, chosen, change = reduced_plan(problem, freqs, connection)
        sweep_info = {"method": "reduced", "expansion_hz": [float(freqs[i]) for i in sorted(chosen)],
                      "max_check_deviation": None, "reduced_size": model.size}
        timings["reduced_build_s"] = time.perf_counter() - start
    offset = case.window.inner_radius if case.model.axisymmetric else None
    rdc = np.array([dc_resistance(c, r, offset) for c, r in zip(conductors, rho)])

    def result(index: np.ndarray | slice = slice(None), warnings: list | None = None) -> SweepResult:
        return SweepResult(freqs[index], conductors, rho, currents, rdc, loss[index], impedance[index],
                           problem.areas / true_area - 1.0, inductance[index], loss_matrix[index], names,
                           connection, problem.unknowns, window_mesh.elements, window_mesh.surface_size,
                           timings, snapshot, excitation, basis_currents[index], sweep_info, warnings or [])

    points_start = time.perf_counter()
    for i, f in enumerate(freqs):
        last = i == nf - 1
        if finished[i] and not last:
            if progress:
                progress(i + 1, nf, f)
            continue
        response = model.respond(2.0 * np.pi * f) if model is not None else None
        solution = problem.solve_windings(f, connection, share, keep_field=last, response=response)
        point = PointResult(solution.currents, solution.loss_per_m, solution.impedance_per_m,
                            solution.inductance_per_m, solution.loss_matrix_per_m,
                            math.nan if solution.residual is None else float(solution.residual))
        store(i, point)
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
        if on_point and i not in done:
            on_point(i, point, lambda: result(np.nonzero(finished)[0]))
        if progress:
            progress(i + 1, nf, f)
    if model is not None:
        timings["reduced_points_s"] = time.perf_counter() - points_start
        # self-check: full solves at the two non-expansion frequencies of largest estimated change
        check_start = time.perf_counter()
        order = [int(i) for i in np.argsort(-change) if int(i) not in chosen][:2]
        members = excitation.membership
        deviation = 0.0
        for i in order:
            full = problem.solve_windings(freqs[i], connection, share)
            residuals.append((freqs[i], full.residual))
            exact_w = members.T @ full.loss_per_m
            reduced_w = members.T @ loss[i]
            ok = np.abs(exact_w) > 0
            if ok.any():
                deviation = max(deviation, float(np.max(np.abs(reduced_w[ok] / exact_w[ok] - 1.0))))
            # column resistances (the conductor matrix of a reduced model is
            # exact only for currents the excitation columns can carry)
            rz_full = np.diag(connection.T @ full.impedance_per_m @ connection).real
            rz_red = np.diag(connection.T @ impedance[i] @ connection).real
            deviation = max(deviation, float(np.max(np.abs(rz_red / rz_full - 1.0))))
        sweep_info["check_hz"] = [float(freqs[i]) for i in order]
        sweep_info["max_check_deviation"] = deviation
        timings["reduced_check_s"] = time.perf_counter() - check_start
    timings["solve_s"] = time.perf_counter() - start
    # the points' residuals (restored points keep theirs) before the self-check's
    residuals[:0] = [(float(f), None if math.isnan(r) else float(r)) for f, r in zip(freqs, residual)]
    warnings = sweep_warnings(case, conductors, rho, window_mesh, freqs, residuals, sweep_info)
    return result(warnings=warnings)
