"""A case's frequency sweep: one mesh and one assembly, then one factorization
per frequency (point-by-point) or a reduced-order model built from a few
factorizations (reduced; see :func:`reduced_plan`)."""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field, replace
from typing import Callable

import numpy as np

from racfield.geometry.case import Case
from racfield.geometry import resistance
from racfield.geometry.layout import Conductor, place
from racfield.geometry.mesher import WindowMesh, build_mesh
from racfield.geometry.sizing import case_sizing
from racfield.geometry.turn_length import turn_lengths

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
    #: whole turns (:mod:`racfield.fem.whole_turns`): {"window": SweepResult, "end": SweepResult}
    sections: dict | None = None
    end_weights: np.ndarray | None = None   #: (Nc,) each conductor's share of its length in the end section
    thermal: object | None = None   #: the thermal solution (:class:`racfield.fem.coupled_thermal.ThermalResult`)
    capacitance: object | None = None   #: the electrostatic solution (:class:`racfield.fem.capacitance.CapacitanceResult`)


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
        model.extend(vectors)
        lower.extend(vectors[:, :(moments - 1) * columns])

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


def conductor_resistivities(case: Case, conductors: list[Conductor]) -> np.ndarray:
    """Resistivity (ohm*m) of every conductor at the case temperature."""
    return np.array(resistance.conductor_resistivities(case, conductors))


def mesh_case(case: Case, conductors: list[Conductor]) -> WindowMesh:
    """The window mesh, sized from the smallest skin depth at the mesh frequency
    (``[mesh] frequency``, else the highest frequency of the case)."""
    return build_mesh(conductors, case.window.width, case.window.height, case.window.boundary,
                      case_sizing(case, conductors), case.mesh.far_radius_factor, case.core,
                      axis_x=None if case.axis_offset is None else -case.axis_offset)


def problem_for(case: Case, window_mesh: WindowMesh, resistivity: np.ndarray,
                conductors: list[Conductor] | None = None) -> WindowProblem:
    """The assembled problem of ``case`` on ``window_mesh`` (planar or axisymmetric);
    ``conductors`` tell homogenized litz bundles apart."""
    strands = None
    if conductors and any(c.strands for c in conductors):
        strands = [(c.strands, c.strand_diameter, c.width) for c in conductors]
    return WindowProblem(window_mesh, 1.0 / resistivity,
                         case.core.relative_permeability if case.core else 1.0,
                         case.axis_offset, strands)


@dataclass
class _Points:
    """The per-frequency arrays of a sweep, filled point by point (see
    :class:`SweepResult`; ``residual`` the backward error of each point's full
    solve, NaN for none; ``finished`` which points hold a result)."""

    basis_currents: np.ndarray
    loss: np.ndarray
    impedance: np.ndarray
    inductance: np.ndarray
    loss_matrix: np.ndarray
    residual: np.ndarray
    finished: np.ndarray

    @classmethod
    def empty(cls, nf: int, nc: int, nw: int) -> "_Points":
        """Zeros for ``nf`` frequencies, ``nc`` conductors, ``nw`` excitation columns."""
        return cls(np.zeros((nf, nw), dtype=complex), np.zeros((nf, nc)), np.zeros((nf, nc, nc), dtype=complex),
                   np.zeros((nf, nc, nc)), np.zeros((nf, nc, nw, nw), dtype=complex), np.full(nf, math.nan),
                   np.zeros(nf, dtype=bool))

    def store(self, i: int, point: PointResult) -> None:
        """Keep ``point`` as frequency ``i``."""
        self.basis_currents[i], self.loss[i] = point.basis_currents, point.loss_per_m
        self.impedance[i], self.inductance[i] = point.impedance_per_m, point.inductance_per_m
        self.loss_matrix[i] = point.loss_matrix_per_m
        self.residual[i] = float(point.residual)
        self.finished[i] = True


@dataclass
class _Sweep:
    """A sweep in progress: the placed, meshed and assembled case, its
    excitation, and the points solved so far.  ``currents`` (Nc,) A RMS the
    nominal conductor currents, ``rdc`` (Nc,) ohm/m (see :class:`SweepResult`)."""

    case: Case
    conductors: list[Conductor]
    rho: np.ndarray
    window_mesh: WindowMesh
    problem: WindowProblem
    excitation: Excitation
    winding_currents: np.ndarray
    currents: np.ndarray
    rdc: np.ndarray
    freqs: np.ndarray
    points: _Points
    timings: dict
    sweep_info: dict
    snapshot: FieldSnapshot | None = None
    #: D E (D = diag(sqrt(l_c)), turn lengths l_c) when parallel strands share by whole-turn impedances
    weighted: np.ndarray | None = None
    mean_length: float = 1.0   #: the mean turn length's weight (see TurnLengths.mean)

    @property
    def connection(self) -> np.ndarray:
        """The excitation basis (Nc, Ne)."""
        return self.excitation.basis

    def share(self, z_basis: np.ndarray) -> np.ndarray:
        """Column currents (Ne,) A of the case's winding currents for the column impedances ``z_basis``."""
        return sharing(z_basis, self.excitation.windings) @ self.winding_currents

    def result(self, index: np.ndarray | slice = slice(None), warnings: list | None = None) -> SweepResult:
        """The sweep of the frequencies ``index`` (all by default)."""
        p, mesh = self.points, self.window_mesh
        true_area = np.array([c.area for c in self.conductors])
        return SweepResult(self.freqs[index], self.conductors, self.rho, self.currents, self.rdc, p.loss[index],
                           p.impedance[index], self.problem.areas / true_area - 1.0, p.inductance[index],
                           p.loss_matrix[index], [w.name for w in self.case.windings], self.connection,
                           self.problem.unknowns, mesh.elements, mesh.surface_size, self.timings, self.snapshot,
                           self.excitation, p.basis_currents[index], self.sweep_info, warnings or [])


def _assemble(case: Case, timings: dict) -> tuple[list[Conductor], np.ndarray, WindowMesh, WindowProblem]:
    """Place, mesh and assemble ``case`` (conductors, resistivities ohm*m, mesh,
    problem), with the fill-reducing ordering every factorization shares;
    records mesh_s, assembly_s and ordering_s in ``timings``."""
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
    return conductors, rho, window_mesh, problem


def _setup(case: Case) -> _Sweep:
    """The assembled sweep of ``case`` with no point solved yet."""
    timings: dict = {}
    conductors, rho, window_mesh, problem = _assemble(case, timings)
    excitation = excitation_basis(case, conductors)
    winding_currents = np.array([w.phasor for w in case.windings], dtype=complex)
    # nominal conductor currents: equal shares among parallel conductors
    currents = excitation.membership @ (winding_currents / np.maximum(
        excitation.membership.sum(axis=0) / np.maximum(excitation.turns, 1), 1))
    rdc = np.array(resistance.conductor_resistances(case, conductors))
    freqs = np.array(case.frequencies)
    points = _Points.empty(len(freqs), len(conductors), excitation.basis.shape[1])
    info = {"method": "point-by-point", "expansion_hz": [], "max_check_deviation": None}
    lengths = turn_lengths(case, conductors)
    weighted = None
    if not lengths.uniform and excitation.basis.shape[1] > len(case.windings):
        weighted = np.sqrt(lengths.weights)[:, None] * excitation.basis
    return _Sweep(case, conductors, rho, window_mesh, problem, excitation, winding_currents, currents, rdc,
                  freqs, points, timings, info, weighted=weighted, mean_length=lengths.mean)


def _plan(sweep: _Sweep, method: str, start: float):
    """The reduced model of ``sweep`` when ``method`` calls for one (see
    :func:`use_reduced`): (model, expansion indices, estimated change), or
    (None, [], None) for a point-by-point sweep.  ``start``: perf_counter of
    the solve phase, for the timing reduced_build_s."""
    if sweep.weighted is not None or not use_reduced(sweep.case, sweep.conductors, method):
        return None, [], None
    model, chosen, change = reduced_plan(sweep.problem, sweep.freqs, sweep.connection)
    sweep.sweep_info = {"method": "reduced", "expansion_hz": [float(sweep.freqs[i]) for i in sorted(chosen)],
                        "max_check_deviation": None, "reduced_size": model.size}
    sweep.timings["reduced_build_s"] = time.perf_counter() - start
    return model, chosen, change


def _snapshot(sweep: _Sweep, f: float, solution) -> FieldSnapshot:
    """The field of ``solution`` (solved at ``f`` Hz with its field kept), with
    the MMF profile of a closed window."""
    case, problem = sweep.case, sweep.problem
    column_currents = sweep.connection @ solution.currents
    mmf = None
    if not case.window.open_boundary:
        mmf = mmf_profile(problem, solution.potential, sweep.conductors, column_currents, case.window.width,
                          case.window.height, case.window.stacking == "across-width",
                          case.core.relative_permeability if case.core else 1.0)
    return FieldSnapshot(f, problem.basis.doflocs, problem.basis.element_dofs, sweep.window_mesh.region,
                         solution.potential,
                         problem.current_density(f, solution.voltage_per_m, solution.potential, column_currents),
                         mmf)


def _solve(sweep: _Sweep, f: float, keep_field: bool = False, response=None):
    """The windings' solution at ``f`` Hz, untransposed parallel strands
    sharing the current as the field decides.  With per-turn lengths they
    share by the whole-turn impedances of
    :meth:`racfield.geometry.turn_length.TurnLengths.impedance`: resistance
    Re (D E)^T Z (D E), D = diag(sqrt(l_c)), reactance the mean turn length
    times Im E^T Z E.  The problem is solved for the columns [E, D E], the
    shares taken from both blocks and the currents given to the first, so
    that losses and field are those of the conductor currents E x."""
    if sweep.weighted is None:
        return sweep.problem.solve_windings(f, sweep.connection, sweep.share, keep_field=keep_field,
                                            response=response)
    ne = sweep.connection.shape[1]

    def share(z_both: np.ndarray) -> np.ndarray:
        z_basis = z_both[ne:, ne:].real + 1j * sweep.mean_length * z_both[:ne, :ne].imag
        return np.concatenate([sweep.share(z_basis), np.zeros(ne, dtype=complex)])

    both = np.hstack([sweep.connection, sweep.weighted])
    solution = sweep.problem.solve_windings(f, both, share, keep_field=keep_field, response=response)
    return replace(solution, loss_matrix_per_m=solution.loss_matrix_per_m[:, :ne, :ne],
                   currents=solution.currents[:ne])


def operating_solution(sweep: _Sweep, f: float, winding_currents: np.ndarray,
                       problem: WindowProblem | None = None):
    """The windings' solution with its field at ``f`` Hz for ``winding_currents``
    (A RMS phasors, case winding order) instead of the case's, on ``problem``
    (the same mesh assembled with other resistivities) or the sweep's own."""
    state = replace(sweep, winding_currents=np.asarray(winding_currents, dtype=complex),
                    problem=problem if problem is not None else sweep.problem)
    return _solve(state, f, keep_field=True)


def _solve_point(sweep: _Sweep, i: int, model, keep_field: bool) -> PointResult:
    """Solve frequency ``i`` (full solve, or from the reduced ``model``) and
    store it; ``keep_field``: also keep its field as the sweep's snapshot."""
    f = sweep.freqs[i]
    response = model.respond(2.0 * np.pi * f) if model is not None else None
    solution = _solve(sweep, f, keep_field, response)
    point = PointResult(solution.currents, solution.loss_per_m, solution.impedance_per_m,
                        solution.inductance_per_m, solution.loss_matrix_per_m,
                        math.nan if solution.residual is None else float(solution.residual))
    sweep.points.store(i, point)
    if keep_field:
        sweep.snapshot = _snapshot(sweep, f, solution)
    return point


def _solve_points(sweep: _Sweep, model, done: dict[int, PointResult], progress, on_point) -> None:
    """Solve every frequency not in ``done`` in order, and the last one always
    (for its field); ``on_point`` after each newly solved point, ``progress``
    after every frequency (see :func:`run_sweep`)."""
    nf = len(sweep.freqs)
    for i, f in enumerate(sweep.freqs):
        last = i == nf - 1
        if last or not sweep.points.finished[i]:
            point = _solve_point(sweep, i, model, keep_field=last)
            if on_point and i not in done:
                on_point(i, point, lambda: sweep.result(np.nonzero(sweep.points.finished)[0]))
        if progress:
            progress(i + 1, nf, f)


def _check_deviation(sweep: _Sweep, i: int, full, deviation: float) -> float:
    """``deviation`` raised to the relative deviation of the reduced point
    ``i`` from its full solve ``full``: winding losses and column resistances."""
    members, connection = sweep.excitation.membership, sweep.connection
    exact_w = members.T @ full.loss_per_m
    reduced_w = members.T @ sweep.points.loss[i]
    ok = np.abs(exact_w) > 0
    if ok.any():
        deviation = max(deviation, float(np.max(np.abs(reduced_w[ok] / exact_w[ok] - 1.0))))
    # column resistances (the conductor matrix of a reduced model is
    # exact only for currents the excitation columns can carry)
    rz_full = np.diag(connection.T @ full.impedance_per_m @ connection).real
    rz_red = np.diag(connection.T @ sweep.points.impedance[i] @ connection).real
    return max(deviation, float(np.max(np.abs(rz_red / rz_full - 1.0))))


def _self_check(sweep: _Sweep, chosen: list[int], change: np.ndarray) -> list[tuple[float, float | None]]:
    """Full solves at the two non-expansion frequencies of largest estimated
    ``change``; records their deviation in the sweep info and returns their
    (Hz, backward error) for the guards."""
    check_start = time.perf_counter()
    order = [int(i) for i in np.argsort(-change) if int(i) not in chosen][:2]
    residuals = []
    deviation = 0.0
    for i in order:
        full = _solve(sweep, sweep.freqs[i])
        residuals.append((sweep.freqs[i], full.residual))
        deviation = _check_deviation(sweep, i, full, deviation)
    sweep.sweep_info["check_hz"] = [float(sweep.freqs[i]) for i in order]
    sweep.sweep_info["max_check_deviation"] = deviation
    sweep.timings["reduced_check_s"] = time.perf_counter() - check_start
    return residuals


def run_sweep(case: Case, progress: Callable[[int, int, float], None] | None = None,
              method: str = "auto", done: dict[int, PointResult] | None = None,
              on_point: Callable[[int, PointResult, Callable[[], "SweepResult"]], None] | None = None,
              finish: Callable[["_Sweep"], object] | None = None) -> SweepResult:
    """Place, mesh, assemble once and solve every frequency of ``case``.

    ``method``: "auto" (reduced model for long sweeps without litz bundles),
    "reduced" or "exact" (one factorization per frequency).  ``done``: points
    already solved (by index, e.g. from an interrupted run), taken as they
    are; the last frequency is solved again all the same, for its field.
    ``on_point(index, point, partial)`` is called after every newly solved
    point; ``partial()`` gives the sweep of the points solved so far.
    ``finish(state)``: run on the solved sweep's state (its mesh and assembled
    problem, e.g. the thermal solution); its value is the result's ``thermal``."""
    sweep = _setup(case)
    done = dict(done or {})
    for i, point in done.items():
        sweep.points.store(i, point)
    start = time.perf_counter()
    model, chosen, change = _plan(sweep, method, start)
    points_start = time.perf_counter()
    _solve_points(sweep, model, done, progress, on_point)
    residuals = []   # (Hz, backward error or None) of the solves, for the guards
    if model is not None:
        sweep.timings["reduced_points_s"] = time.perf_counter() - points_start
        residuals = _self_check(sweep, chosen, change)
    sweep.timings["solve_s"] = time.perf_counter() - start
    # the points' residuals (restored points keep theirs) before the self-check's
    residuals[:0] = [(float(f), None if math.isnan(r) else float(r))
                     for f, r in zip(sweep.freqs, sweep.points.residual)]
    warnings = sweep_warnings(case, sweep.conductors, sweep.rho, sweep.window_mesh, sweep.freqs, residuals,
                              sweep.sweep_info)
    result = sweep.result(warnings=warnings)
    if finish is not None:
        start = time.perf_counter()
        result.thermal = finish(sweep)
        result.timings["thermal_s"] = time.perf_counter() - start
    return result
