"""The one-factorization solver and the reduced model against plain sparse solves.

The reference is scipy.sparse.linalg.spsolve (SuperLU with its own column
ordering and partial pivoting) applied to the textbook form of the problem:
the conductor admittance Y = G - j w B^T S^-1 B, S = K + j w M, and the block
system [S, -B; -j w B^T, G] [a; u] = [0; I] for imposed conductor currents.
racfield instead reads the Schur complement from the trailing block of the LU
of the bordered matrix (fem/harmonic.py); the two must agree to rounding.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from racfield.fem.parallel import excitation_basis
from racfield.fem.reduced import moment_vectors
from racfield.fem.sweep import column_impedances, conductor_resistivities, mesh_case, problem_for
from racfield.geometry.case import parse_case
from racfield.geometry.layout import place

FREQUENCY = 300e3
AGREEMENT = 1e-9


def _doc(boundary: str) -> dict:
    wire = {"shape": "round", "diameter": "0.6 mm"}
    return {
        "title": "bordered solver check",
        "model": {"symmetry": "planar", "length": "1 m", "temperature": "20 degC"},
        "sweep": {"frequencies": [FREQUENCY]},
        "window": {"width": "3 mm", "height": "3 mm", "boundary": boundary},
        "winding": [{"name": "p", "material": "copper", "current": "1 A", "phase": 0},
                    {"name": "s", "material": "copper", "current": "1 A", "phase": 180}],
        "conductor": [
            {"winding": "p", **wire, "at": ["0.8 mm", "0.8 mm"]},
            {"winding": "p", **wire, "at": ["0.8 mm", "2.2 mm"]},
            {"winding": "s", **wire, "at": ["2.2 mm", "0.8 mm"]},
            {"winding": "s", **wire, "at": ["2.2 mm", "2.2 mm"]},
        ],
    }


def _problem(boundary: str, density: float = 1.0):
    doc = _doc(boundary)
    doc["mesh"] = {"density": density}
    case = parse_case(doc)
    conductors = place(case)
    rho = conductor_resistivities(case, conductors)
    problem = problem_for(case, mesh_case(case, conductors), rho, conductors)
    return case, conductors, problem


def _reference_admittance(problem, omega: float) -> np.ndarray:
    s = (problem.stiffness + 1j * omega * problem.mass).tocsc()
    b = problem.coupling.toarray()
    x = spla.spsolve(s, b.astype(complex))
    return np.diag(problem.conductance) - 1j * omega * (b.T @ x)


@pytest.mark.parametrize("boundary", ["open", "ideal-core"])
def test_admittance_from_the_factors_matches_plain_solves(boundary):
    """Y from the trailing block of the bordered LU against G - j w B^T S^-1 B
    from scipy's spsolve (general-purpose reference library)."""
    _, _, problem = _problem(boundary)
    omega = 2.0 * np.pi * FREQUENCY
    measured = problem.respond(FREQUENCY).admittance
    reference = _reference_admittance(problem, omega)
    error = np.abs(measured - reference).max() / np.abs(reference).max()
    print(f"\n{boundary}: admittance from the factors vs spsolve: {error:.1e}")
    assert error < AGREEMENT     # scipy.sparse.linalg.spsolve (reference library)


def test_field_with_imposed_currents_matches_the_block_system():
    """Voltages and potentials for imposed conductor currents against spsolve on
    the unsymmetric block system [S, -B; -j w B^T, G] (reference library)."""
    _, _, problem = _problem("open")
    omega = 2.0 * np.pi * FREQUENCY
    currents = np.array([1.0, 0.5j, -1.0, 0.3])
    b = problem.coupling
    block = sp.bmat([[problem.stiffness + 1j * omega * problem.mass, -b],
                     [-1j * omega * b.T, sp.diags(problem.conductance)]], format="csc")
    rhs = np.concatenate([np.zeros(problem.unknowns), currents]).astype(complex)
    reference = spla.spsolve(block, rhs)
    voltages, potential = problem.respond(FREQUENCY).field(currents)
    error_u = np.abs(voltages - reference[problem.unknowns:]).max() / np.abs(voltages).max()
    error_a = np.abs(potential - reference[:problem.unknowns]).max() / np.abs(potential).max()
    assert error_u < AGREEMENT   # scipy.sparse.linalg.spsolve (reference library)
    assert error_a < AGREEMENT   # scipy.sparse.linalg.spsolve (reference library)


def test_zero_hertz_flux_coupling_is_b_k_inverse_b():
    """At 0 Hz the factors give B^T K^-1 B (the DC inductance per metre times
    G^2) and Y = G exactly (reference: spsolve with K)."""
    _, _, problem = _problem("open")
    response = problem.respond(0.0)
    b = problem.coupling.toarray()
    reference = b.T @ spla.spsolve(problem.stiffness.tocsc(), b)
    error = np.abs(response.flux_coupling - reference).max() / np.abs(reference).max()
    assert error < AGREEMENT     # scipy.sparse.linalg.spsolve (reference library)
    assert np.array_equal(response.admittance, np.diag(problem.conductance).astype(complex))


def test_ordering_is_a_permutation_with_less_fill_than_the_natural_order():
    """The nested dissection ordering is a permutation of the free nodes and
    its LU has less fill than the mesh's own node order (A. George, "Nested
    dissection of a regular finite element mesh", SIAM J. Numer. Anal., 1973)."""
    _, _, problem = _problem("open", density=0.5)
    order = problem.ordering
    assert np.array_equal(np.sort(order), np.arange(problem.unknowns))
    s = (problem.stiffness + 1j * problem.mass).tocsc()

    def fill(p):
        lu = spla.splu(s[p][:, p].tocsc(), permc_spec="NATURAL", diag_pivot_thresh=0.0,
                       options={"SymmetricMode": True})
        return lu.L.nnz + lu.U.nnz

    assert fill(order) < fill(np.arange(problem.unknowns))


def test_reduced_model_is_exact_at_its_expansion_frequency():
    """A Galerkin projection whose basis contains the exact solution reproduces
    it: at an expansion frequency the reduced column impedances equal the full
    ones (moment matching, Z. Bai, Applied Numerical Mathematics, 2002), and a
    nearby frequency agrees closely (reference: the full solve)."""
    case, conductors, problem = _problem("ideal-core")
    connection = excitation_basis(case, conductors).basis
    model = problem.reduced_model()
    model.extend(moment_vectors(problem.factorize(FREQUENCY), problem.mass, problem.coupling, connection, 4))
    for f, tolerance in ((FREQUENCY, 1e-9), (1.3 * FREQUENCY, 1e-6)):
        full = column_impedances(problem.respond(f), connection)
        reduced = column_impedances(model.respond(2.0 * np.pi * f), connection)
        error = np.abs(reduced - full).max() / np.abs(full.real).max()
        print(f"\nreduced vs full at {f:g} Hz: {error:.1e}")
        assert error < tolerance  # Galerkin projection property (Bai 2002); full solve as reference


@pytest.mark.parametrize("boundary", ["open", "ideal-core"])
def test_reduced_loss_factors_give_the_integrated_loss(boundary):
    """A reduced point's loss matrices come from the precomputed factors R_k
    (no integration per frequency).  They must equal the quadrature integral
    of sigma |u w - j w A|^2 over the same reduced field (identity of the QR,
    to rounding).  At the expansion frequency they must also equal the full
    solve's loss matrices: the Galerkin projection whose basis holds the exact
    solution reproduces it (Z. Bai, Applied Numerical Mathematics, 2002; the
    full solve is the reference)."""
    case, conductors, problem = _problem(boundary)
    connection = excitation_basis(case, conductors).basis
    model = problem.reduced_model()
    model.extend(moment_vectors(problem.factorize(FREQUENCY), problem.mass, problem.coupling, connection, 4))
    for f in (FREQUENCY, 0.4 * FREQUENCY):
        response = model.respond(2.0 * np.pi * f)
        assert response.loss_matrices is not None
        voltages = response.voltages(connection)
        potentials = np.zeros((problem.basis.N, connection.shape[1]), dtype=complex)
        potentials[problem.free] = response.potential(voltages)
        integrated = problem.loss_matrices(f, voltages, potentials)
        factored = response.loss_matrices(voltages)
        scale = np.abs(integrated).max()
        error = np.abs(factored - integrated).max() / scale
        print(f"\nreduced loss factors vs integration at {f:g} Hz: {error:.1e}")
        assert error < 1e-10  # the same integral, rearranged (QR identity)
    full = problem.solve_windings(FREQUENCY, connection, np.ones(connection.shape[1]))
    reduced = problem.solve_windings(FREQUENCY, connection, np.ones(connection.shape[1]),
                                     response=model.respond(2.0 * np.pi * FREQUENCY))
    error = np.abs(reduced.loss_matrix_per_m - full.loss_matrix_per_m).max() / np.abs(full.loss_matrix_per_m).max()
    print(f"reduced vs full loss matrices at the expansion frequency: {error:.1e}")
    assert error < 1e-8  # Galerkin exactness at the expansion point (Bai 2002)
