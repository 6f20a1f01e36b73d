"""Both sparse direct solvers against plain sparse solves.

racfield factorizes the bordered matrix [s(K + j w M), -sB; -sB^T, sG/(j w)]
with MUMPS's LDL^T (its Schur complement over the conductor unknowns returned
by MUMPS) where MUMPS loads, else with SuperLU (the Schur complement read from
the trailing block of the LU).  Each backend, and the whole respond() path with
each, must give the conductor admittance Y = G - j w B^T S^-1 B and the field
of imposed currents of scipy.sparse.linalg.spsolve on the textbook form of the
problem (general-purpose reference library) to rounding.  The MUMPS checks
skip, saying why, where MUMPS does not load; the SuperLU ones always run.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from racfield.fem import harmonic
from racfield.fem.sweep import conductor_resistivities, mesh_case, problem_for
from racfield.geometry.case import parse_case
from racfield.geometry.layout import place
from racfield.geometry.machine import SOLVER_VARIABLE, mumps_module, sparse_solver

FREQUENCY = 500e3
AGREEMENT = 1e-9
BACKENDS = {"superlu": harmonic.SuperLUFactors, "mumps": harmonic.MumpsFactors}
needs_mumps = pytest.mark.skipif(mumps_module() is None,
                                 reason="MUMPS does not load here (mumpspy and libmumps: see README install)")


def _problem():
    wire = {"shape": "round", "diameter": "0.5 mm"}
    doc = {
        "title": "sparse solver check",
        "model": {"symmetry": "planar", "length": "1 m", "temperature": "20 degC"},
        "sweep": {"frequencies": [FREQUENCY]},
        "window": {"width": "3 mm", "height": "2.4 mm", "boundary": "ideal-core"},
        "winding": [{"name": "p", "material": "copper", "current": "1 A", "phase": 0},
                    {"name": "s", "material": "copper", "current": "1 A", "phase": 180}],
        "conductor": [{"winding": "p" if i % 2 == 0 else "s", **wire,
                       "at": [f"{0.6 + 0.6 * i} mm", f"{0.7 + 1.0 * j} mm"]}
                      for i in range(4) for j in range(2)],
    }
    case = parse_case(doc)
    conductors = place(case)
    return problem_for(case, mesh_case(case, conductors), conductor_resistivities(case, conductors), conductors)


@pytest.fixture(scope="module")
def problem():
    return _problem()


def _reference_admittance(problem, omega: float) -> np.ndarray:
    s = (problem.stiffness + 1j * omega * problem.mass).tocsc()
    b = problem.coupling.toarray()
    return np.diag(problem.conductance) - 1j * omega * (b.T @ spla.spsolve(s, b.astype(complex)))


def _bordered_matrix(problem, omega: float) -> tuple[sp.csc_matrix, int]:
    system = problem.bordered
    data = system.constant + (1j * omega) * system.per_omega + system.per_inverse_omega / (1j * omega)
    size = system.n + system.nc
    return sp.csc_matrix((data, system.indices, system.indptr), shape=(size, size)), system.nc


@pytest.mark.parametrize("name", ["superlu", pytest.param("mumps", marks=needs_mumps)])
def test_backend_solves_and_schur_complement_match_spsolve(problem, name):
    """A solve of the bordered matrix and the Schur complement over its last nc
    unknowns (which the backend returns without any solve) against spsolve and
    the dense Schur complement A22 - A21 A11^-1 A12 (reference library)."""
    matrix, nc = _bordered_matrix(problem, 2.0 * np.pi * FREQUENCY)
    factors = BACKENDS[name](matrix, nc)
    n = matrix.shape[0] - nc
    rng = np.random.default_rng(7)
    rhs = np.zeros((matrix.shape[0], 3), dtype=complex)   # conductor currents: the right-hand sides of a run
    currents = rng.standard_normal((nc, 3)) + 1j * rng.standard_normal((nc, 3))
    rhs[n:] = currents - currents.mean(axis=0)   # no net current in the ideal-core window
    x = factors.solve(rhs)
    # the bordered matrix is badly scaled (condition number about 2e15 here, the
    # voltage rows against the field rows): the solver's own measure is the
    # componentwise backward error, a few units of rounding for a sound solve
    # (W. Oettli and W. Prager 1964; N. J. Higham 2002, 7.2); spsolve (its own
    # ordering, partial pivoting) reaches about 3e-10 on it, so the forward
    # agreement with it is only to that times the conditioning
    assert harmonic.backward_error(matrix, x, rhs) < 1e-14
    reference = spla.spsolve(matrix, rhs)
    assert np.abs(x - reference).max() / np.abs(reference).max() < 1e-7   # scipy spsolve
    a11, a12 = matrix[:n, :n].tocsc(), matrix[:n, n:].toarray()
    schur_reference = matrix[n:, n:].toarray() - matrix[n:, :n] @ spla.spsolve(a11, a12)
    schur = factors.schur()
    assert schur is not None, f"{name} returned no Schur complement"
    assert np.abs(schur - schur_reference).max() / np.abs(schur_reference).max() < AGREEMENT   # dense Schur


@pytest.mark.parametrize("name", ["superlu", pytest.param("mumps", marks=needs_mumps)])
def test_admittance_and_field_through_each_backend(problem, name, monkeypatch):
    """respond() with the backend chosen by RACFIELD_SPARSE_SOLVER: Y against
    G - j w B^T S^-1 B and the field of imposed currents against spsolve on
    [S, -B; -j w B^T, G] (reference library)."""
    monkeypatch.setenv(SOLVER_VARIABLE, name)
    assert sparse_solver() == name
    omega = 2.0 * np.pi * FREQUENCY
    response = problem.respond(FREQUENCY)
    assert response.factorization.lu.name == name
    reference = _reference_admittance(problem, omega)
    assert np.abs(response.admittance - reference).max() / np.abs(reference).max() < AGREEMENT
    currents = np.linspace(-1.0, 1.0, problem.coupling.shape[1]) * (1 + 0.3j)
    b = problem.coupling
    block = sp.bmat([[problem.stiffness + 1j * omega * problem.mass, -b],
                     [-1j * omega * b.T, sp.diags(problem.conductance)]], format="csc")
    exact = spla.spsolve(block, np.concatenate([np.zeros(problem.unknowns), currents]).astype(complex))
    voltages, potential = response.field(currents)
    assert np.abs(voltages - exact[problem.unknowns:]).max() / np.abs(voltages).max() < AGREEMENT
    assert np.abs(potential - exact[:problem.unknowns]).max() / np.abs(potential).max() < AGREEMENT


def test_superlu_serves_when_mumps_fails(problem, monkeypatch):
    """A MUMPS error status (RuntimeError) falls back to SuperLU, same answer."""
    def failing(matrix, tail=0):
        raise RuntimeError("MUMPS error -9 (workspace)")
    monkeypatch.setattr(harmonic, "sparse_solver", lambda unknowns=None: "mumps")
    monkeypatch.setattr(harmonic, "MumpsFactors", failing)
    matrix, nc = _bordered_matrix(problem, 2.0 * np.pi * FREQUENCY)
    factors = harmonic._factorize(matrix, nc)
    assert isinstance(factors, harmonic.SuperLUFactors)
    rhs = np.zeros(matrix.shape[0], dtype=complex)
    rhs[-nc:] = np.where(np.arange(nc) % 2 == 0, 1.0, -1.0)
    assert harmonic.backward_error(matrix, factors.solve(rhs), rhs) < 1e-14   # Oettli and Prager (1964)


def test_the_size_chooses_unless_the_variable_does(monkeypatch):
    """Unset, SuperLU below MUMPS_FROM_UNKNOWNS and MUMPS from it (where MUMPS
    loads); the variable chooses at every size (README Install)."""
    from racfield.geometry.machine import MUMPS_FROM_UNKNOWNS
    monkeypatch.delenv(SOLVER_VARIABLE, raising=False)
    large = "mumps" if mumps_module() is not None else "superlu"
    assert sparse_solver(MUMPS_FROM_UNKNOWNS - 1) == "superlu"
    assert sparse_solver(MUMPS_FROM_UNKNOWNS) == large
    monkeypatch.setenv(SOLVER_VARIABLE, "superlu")
    assert sparse_solver(10 * MUMPS_FROM_UNKNOWNS) == "superlu"
    monkeypatch.setenv(SOLVER_VARIABLE, "mumps")
    assert sparse_solver(1000) == large
