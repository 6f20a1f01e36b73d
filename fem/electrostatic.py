"""The electrostatic field of the window: div(eps grad phi) = 0 between
electrodes held at given potentials, and the Maxwell capacitance matrix.

Every electrode (a conductor region, or the core: its body, or the outer
boundary facets of a closed window or an open model) is an equipotential:
all its DOFs are one unknown, its potential.  The matrix of the remaining
(free) DOFs and the electrode potentials, the electrodes ordered last, is
factorized once (nested dissection, no pivoting: it is symmetric positive
definite); its trailing block is the Schur complement over the electrode
potentials, which is the Maxwell capacitance matrix C: Q = C V, charges in
C/m (planar) or C (axisymmetric, volume weight 2 pi r), potentials in V.
The last electrode (the core) is the reference: it is held at 0 V in the
factorization (so the matrix is definite) and its row and column follow from
charge neutrality.  ``C`` is symmetric with negative off-diagonal entries and
zero row sums (every other boundary is a natural one: all the flux ends on
electrodes).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu
from skfem import Basis, ElementTriP2, MeshTri2

from .forms import thermal_stiffness
from .harmonic import trailing_schur
from .ordering import nested_dissection

EPS0 = 8.8541878128e-12
"""Permittivity of free space in F/m (CODATA 2018)."""


@dataclass
class Electrodes:
    """The DOFs of each electrode (a list of index arrays, electrode order)."""

    dofs: list[np.ndarray]


class ElectrostaticProblem:
    """The assembled and factorized electrostatic problem of one mesh.

    ``window_mesh``: points (2, n) m, 6-node ``triangles``; ``permittivity``
    (nelements,) relative permittivity; ``electrodes``: a function of the
    P2 basis that returns the DOFs of every electrode; ``radius_offset``
    None (planar) or r0 (m), r = x + r0 (axisymmetric)."""

    def __init__(self, window_mesh, permittivity: np.ndarray, electrodes, radius_offset: float | None = None):
        self.basis = basis = Basis(MeshTri2(window_mesh.points, window_mesh.triangles), ElementTriP2())
        weight = ({"r0": 0.0, "axisymmetric": 0.0} if radius_offset is None
                  else {"r0": float(radius_offset), "axisymmetric": 1.0})
        eps = EPS0 * np.repeat(np.asarray(permittivity, dtype=float)[:, None], basis.X.shape[1], axis=1)
        stiffness = thermal_stiffness.assemble(basis, k=eps, **weight).tocsr()
        groups = electrodes(basis).dofs
        owner = np.full(basis.N, -1)
        for e, dofs in enumerate(groups):
            if np.any(owner[dofs] >= 0):
                raise ValueError("two electrodes share a node: they touch")
            owner[dofs] = e
        free = np.nonzero(owner < 0)[0]
        self.free, self.count, self.owner = free, len(groups), owner
        n, m = len(free), len(groups) - 1   # the last electrode is the reference, held at 0 V
        column = np.where(owner < 0, 0, n + owner)
        column[free] = np.arange(n)
        held = owner == m
        collapse = sp.csr_matrix((np.ones(int((~held).sum())), (np.nonzero(~held)[0], column[~held])),
                                 shape=(basis.N, n + m))
        matrix = (collapse.T @ stiffness @ collapse).tocsr()
        order = np.concatenate([nested_dissection(matrix[:n][:, :n]), np.arange(n, n + m)])
        self.order, self.collapse, self.n, self.held = order, collapse, n, held
        self.lu = splu(matrix[order][:, order].tocsc(), permc_spec="NATURAL", diag_pivot_thresh=0.0,
                       options={"SymmetricMode": True})
        block = trailing_schur(self.lu, n)
        if block is None:   # the free DOFs are not connected: from one solve per electrode
            rhs = np.zeros((n + m, m))
            rhs[n:] = np.eye(m)
            block = np.linalg.inv(self._solve(rhs)[n:])
        # the reference's row and column from charge neutrality: nothing but the
        # electrodes receives flux (every other boundary is a natural one), so
        # each column of the Maxwell matrix sums to zero
        full = np.zeros((m + 1, m + 1))
        full[:m, :m] = block
        full[:m, m] = full[m, :m] = -block.sum(axis=1)
        full[m, m] = block.sum()
        self.capacitance = full   #: the Maxwell matrix (F/m or F), electrode order

    def _solve(self, rhs: np.ndarray) -> np.ndarray:
        z = self.lu.solve(np.ascontiguousarray(rhs[self.order]))
        out = np.empty_like(z)
        out[self.order] = z
        return out

    def potential(self, voltages: np.ndarray) -> np.ndarray:
        """The potential (V) at every P2 node for electrode ``voltages`` (V):
        solved with the reference electrode held, the others at their
        voltages relative to it."""
        voltages = np.asarray(voltages, dtype=float)
        relative = voltages[:-1] - voltages[-1]
        rhs = np.zeros(self.n + self.count - 1)
        rhs[self.n:] = self.capacitance[:-1, :-1] @ relative
        return self.collapse @ self._solve(rhs) + voltages[-1]

    def energy(self, voltages: np.ndarray) -> float:
        """Stored energy 1/2 V^T C V (J/m or J)."""
        voltages = np.asarray(voltages, dtype=float)
        return 0.5 * float(voltages @ self.capacitance @ voltages)


def region_dofs(basis: Basis, region: np.ndarray, code: int) -> np.ndarray:
    """Every DOF of the elements of ``region == code``."""
    return np.unique(basis.element_dofs[:, np.asarray(region) == code])


def facet_dofs(basis: Basis, where) -> np.ndarray:
    """Every DOF on the outer boundary facets ``where(midpoints)`` selects (None: all)."""
    mesh = basis.mesh
    facets = mesh.boundary_facets()
    if where is not None:
        midpoints = mesh.p[:, mesh.facets[:, facets]].mean(axis=1)
        facets = facets[np.asarray(where(midpoints), dtype=bool)]
    return basis.get_dofs(facets=facets).all()
