"""One frequency, one factorization for every conductor.

The discrete system, for potentials a (free nodes) and conductor voltages per
metre u, is

    (K + j w M) a - B u = 0          (field)
    -j w B^T a + G u    = I          (total current of each conductor)

with G = diag(sigma_k S_k).  Dividing the second row by -j w (w > 0) makes it
symmetric; scaled by s (order one entries, see :func:`stiffness_scale`) the
bordered matrix is

    [ s S     -s B ]        S = K + j w M,  D = G / (j w)  (D = 0 at 0 Hz)
    [ -s B^T   s D ]

Its sparse LU, with the conductor unknowns ordered last, holds the Schur
complement over the per-conductor current constraints in its trailing block:
Sigma = L22 U22 = s (D - B^T S^-1 B), so that the conductor admittance per
metre is Y = G - j w B^T S^-1 B = j w Sigma / s and the impedance matrix Z =
Y^-1 (at 0 Hz Y = G and B^T S^-1 B = -Sigma / s).  No solve per conductor is
needed: the field of a set of voltages costs one solve.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
import scipy.linalg
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from threadpoolctl import threadpool_limits

from racfield.geometry.machine import mumps_module, sparse_solver


class SuperLUFactors:
    """SuperLU of a matrix already in its fill-reducing order, no pivoting (the
    matrix is complex symmetric with definite real and imaginary parts); the
    Schur complement over its last ``tail`` unknowns is read from the trailing
    block of the factors."""

    name = "superlu"

    def __init__(self, matrix: sp.spmatrix, tail: int = 0) -> None:
        # the sparse LU calls BLAS on small dense blocks: extra BLAS threads only
        # contend (and slow it down many times on a busy machine)
        with threadpool_limits(limits=1, user_api="blas"):
            self.lu = spla.splu(matrix.tocsc(), permc_spec="NATURAL", diag_pivot_thresh=0.0, relax=5,
                                panel_size=12, options={"SymmetricMode": True})
        self.n = matrix.shape[0] - tail

    def solve(self, rhs: np.ndarray) -> np.ndarray:
        with threadpool_limits(limits=1, user_api="blas"):
            return self.lu.solve(np.ascontiguousarray(rhs))

    def schur(self) -> np.ndarray | None:
        """The Schur complement over the tail (None: see :func:`trailing_schur`)."""
        return trailing_schur(self.lu, self.n)


class MumpsFactors:
    """MUMPS's LDL^T (SYM = 2: complex symmetric) of a matrix in racfield's
    fill-reducing order (given to MUMPS, ICNTL(7) = 1), with the Schur
    complement over its last ``tail`` unknowns returned by MUMPS itself
    (ICNTL(19) = 3, centralized): no U factor is formed to read it.  A solve
    condenses the right-hand side onto the tail, solves the small dense Schur
    system and expands (ICNTL(26) = 1, 2).  P. R. Amestoy, I. S. Duff,
    J.-Y. L'Excellent, J. Koster, "A fully asynchronous multifrontal solver
    using distributed dynamic scheduling", SIAM J. Matrix Anal. Appl., 2001."""

    name = "mumps"

    def __init__(self, matrix: sp.spmatrix, tail: int = 0) -> None:
        mumpspy = mumps_module()
        from mumpspy.mumps_lib_c_struc import PMumpsInt

        size = matrix.shape[0]
        self.n, self.tail = size - tail, tail
        self.mumps = mumps = mumpspy.MumpsSolver(is_sym=True, system="complex")
        mumps.set_mtx(sp.coo_matrix(matrix), factorize=False)
        struct = mumps.struct
        self._given = np.arange(1, size + 1, dtype=np.int32)   # kept alive while MUMPS holds them
        struct.perm_in = self._given.ctypes.data_as(PMumpsInt)
        struct.icntl[6] = 1
        self._schur = None
        if tail:
            self._tail = np.arange(self.n + 1, size + 1, dtype=np.int32)
            self._schur = np.zeros((tail, tail), dtype=complex)
            struct.size_schur = tail
            struct.listvar_schur = self._tail.ctypes.data_as(PMumpsInt)
            struct.schur = self._schur.ctypes.data_as(mumps.pointermumpstype)
            struct.schur_lld = tail
            struct.nprow = struct.npcol = 1
            struct.mblock = struct.nblock = 100
            struct.icntl[18] = 3
        mumps._mumps_call(4)   # analysis (in the given order) and numeric factorization
        if tail:
            # a complex symmetric Schur complement: its storage order does not matter
            self._schur_lu = scipy.linalg.lu_factor(self._schur)

    def solve(self, rhs: np.ndarray) -> np.ndarray:
        mumps, struct = self.mumps, self.mumps.struct
        b = np.array(rhs, dtype=complex, order="F", copy=True)
        flat = b.ndim == 1
        b = b.reshape(b.shape[0], -1, order="F")
        mumps.set_rhs(b)
        if not self.tail:
            struct.icntl[25] = 0
            mumps._mumps_call(3)
        else:
            reduced = np.zeros((self.tail, b.shape[1]), dtype=complex, order="F")
            struct.lredrhs = self.tail
            struct.redrhs = reduced.ctypes.data_as(mumps.pointermumpstype)
            struct.icntl[25] = 1
            mumps._mumps_call(3)
            reduced[:] = scipy.linalg.lu_solve(self._schur_lu, reduced)
            struct.icntl[25] = 2
            mumps._mumps_call(3)
        out = np.array(mumps._data["rhs"], copy=True)
        return out[:, 0] if flat else out

    def schur(self) -> np.ndarray | None:
        return None if self._schur is None else self._schur.copy()


def _factorize(matrix: sp.spmatrix, tail: int = 0):
    """The factors of ``matrix`` (already in its fill-reducing order; its last
    ``tail`` unknowns the conductor ones): MUMPS where it loads (see
    :func:`racfield.geometry.machine.sparse_solver`: on large matrices), else
    SuperLU, which also serves when MUMPS fails on the matrix."""
    if sparse_solver(matrix.shape[0]) == "mumps":
        try:
            return MumpsFactors(matrix, tail)
        except RuntimeError:  # MUMPS's error status (e.g. its workspace): SuperLU instead
            pass
    return SuperLUFactors(matrix, tail)


def trailing_schur(lu, n: int) -> np.ndarray | None:
    """The Schur complement over the unknowns after the first ``n`` (in their
    own order), read from the trailing block of the SuperLU factors ``lu`` of
    a matrix whose last unknowns were ordered last (no solves); None when
    SuperLU's column postorder moved them (a field part that is not connected)."""
    # SuperLU postorders the columns; the trailing unknowns stay last
    # when the field part is connected (they are ancestors of all of it)
    tail_r, tail_c = lu.perm_r[n:], lu.perm_c[n:]
    if not ((tail_r >= n).all() and (tail_c >= n).all()):
        return None
    u22 = lu.U[n:, n:].toarray()
    if np.array_equal(lu.perm_r, lu.perm_c):
        # symmetric matrix, no pivoting: L = U^T diag(U)^-1
        block = u22.T @ (u22 / np.diag(u22)[:, None])
    else:
        block = lu.L[n:, n:].toarray() @ u22
    return block[np.ix_(tail_r - n, tail_c - n)]


def backward_error(matrix: sp.spmatrix, z: np.ndarray, rhs: np.ndarray) -> float:
    """The componentwise relative backward error of a solution ``z`` of
    ``matrix`` z = ``rhs`` (columns taken together): max over rows of
    |A z - r|_i / (|A| |z| + |r|)_i (W. Oettli and W. Prager, 1964; N. J.
    Higham, "Accuracy and Stability of Numerical Algorithms", 2002, 7.2).
    The smallest relative change of the entries of A and r that makes z
    exact: a few units of rounding (1e-16) for a sound solve.  Unlike the
    plain ||A z - r|| / ||r||, it does not depend on how the rows are scaled
    (here the current rows' right-hand side shrinks as 1/w while the field
    rows carry terms of order ||A|| ||z||)."""
    misfit = np.abs(matrix @ z - rhs)
    magnitude = abs(matrix) @ np.abs(z) + np.abs(rhs)
    ratio = np.divide(misfit, magnitude, out=np.where(misfit > 0.0, np.inf, 0.0), where=magnitude > 0.0)
    return float(ratio.max()) if ratio.size else 0.0


def stiffness_scale(stiffness: sp.spmatrix) -> float:
    """s = 1 / max |K_ij| (H/m): K has entries of order 1/mu0 ~ 1e6, s K and
    s M are of order one (the solution is unchanged by the scaling)."""
    return 1.0 / max(abs(stiffness).max(), 1e-300)


def _aligned(parts: list[sp.coo_matrix], size: int) -> tuple[np.ndarray, np.ndarray, list[np.ndarray]]:
    """CSC pattern (indptr, indices) of the union of ``parts`` (size x size)
    and every part's values on it (duplicates summed)."""
    rows = np.concatenate([p.row for p in parts])
    cols = np.concatenate([p.col for p in parts])
    offsets = np.cumsum([0] + [p.nnz for p in parts])
    values = []
    for k, p in enumerate(parts):
        data = np.zeros(len(rows))
        data[offsets[k]:offsets[k + 1]] = p.data
        # explicit zeros are kept, so every part lands on the same pattern
        matrix = sp.coo_matrix((data, (rows, cols)), shape=(size, size)).tocsc()
        matrix.sum_duplicates()
        values.append(matrix.data)
    return matrix.indptr, matrix.indices, values


class BorderedSystem:
    """The bordered matrix of one window (see the module docstring) in its
    fill-reducing order, assembled once: at every frequency only its values
    change, s (K + j w M) in the field block and s G / (j w) on the conductor
    diagonal."""

    def __init__(self, stiffness: sp.spmatrix, mass: sp.spmatrix, coupling: sp.spmatrix,
                 conductance: np.ndarray, scale: float, ordering: np.ndarray | None = None) -> None:
        """``scale``: s of :func:`stiffness_scale`."""
        n, nc = coupling.shape
        self.n, self.nc = n, nc
        self.scale = s = scale
        ordering = np.arange(n) if ordering is None else np.asarray(ordering)
        self.order = np.concatenate([ordering, n + np.arange(nc)])
        position = np.empty_like(self.order)
        position[self.order] = np.arange(n + nc)
        size = n + nc

        def placed(matrix: sp.spmatrix, row0: int = 0, col0: int = 0) -> sp.coo_matrix:
            m = sp.coo_matrix(matrix)
            return sp.coo_matrix((m.data, (position[m.row + row0], position[m.col + col0])), shape=(size, size))

        b = sp.coo_matrix(coupling)
        field = [placed(s * stiffness), placed(-s * b, 0, n), placed(-s * b.T, n, 0)]
        constant = sp.coo_matrix((np.concatenate([p.data for p in field]),
                                  (np.concatenate([p.row for p in field]), np.concatenate([p.col for p in field]))),
                                 shape=(size, size))
        parts = [constant, placed(s * mass), placed(sp.diags(s * np.asarray(conductance, dtype=float)), n, n)]
        self.indptr, self.indices, (self.constant, self.per_omega, self.per_inverse_omega) = _aligned(parts, size)

    def factorize(self, omega: float) -> "BorderedFactorization":
        """The LU at ``omega`` (rad/s); at 0 Hz the conductor diagonal is zero."""
        data = self.constant + (1j * omega) * self.per_omega
        if omega > 0.0:
            data = data + self.per_inverse_omega / (1j * omega)
        size = self.n + self.nc
        matrix = sp.csc_matrix((data, self.indices, self.indptr), shape=(size, size))
        return BorderedFactorization(self, omega, _factorize(matrix, self.nc), matrix)


class BorderedFactorization:
    """The LU of the bordered matrix at one angular frequency; ``solve(r1,
    r2)`` returns (a, v) of

        s S a - s B v = r1,   -s B^T a + s D v = r2,

    and ``schur`` is Sigma = s (D - B^T S^-1 B) (Nc, Nc) in conductor order.
    ``matrix``: the bordered matrix that was factorized (in its fill-reducing
    order), kept for the residual of :meth:`solve_checked`."""

    def __init__(self, system: BorderedSystem, omega: float, lu, matrix: sp.spmatrix | None = None) -> None:
        self.n, self.nc, self.scale, self.order = system.n, system.nc, system.scale, system.order
        self.omega = omega
        self.lu = lu
        self.matrix = matrix

    @cached_property
    def schur(self) -> np.ndarray:
        """Sigma from the trailing block of the factors (no solves)."""
        n, nc = self.n, self.nc
        block = self.lu.schur()
        if block is not None:
            return block
        # general case: Sigma^-1 from nc solves
        rhs = np.zeros((n + nc, nc), dtype=complex)
        rhs[n:] = np.eye(nc)
        return np.linalg.inv(self._raw_solve(rhs)[n:])

    def _raw_solve(self, rhs: np.ndarray) -> np.ndarray:
        z = self.lu.solve(rhs[self.order])
        out = np.empty_like(z)
        out[self.order] = z
        return out

    def solve(self, r1: np.ndarray, r2: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(a, v) for right-hand sides ``r1`` (n, ...) and ``r2`` (Nc, ...)."""
        a, v, _ = self.solve_checked(r1, r2, check=False)
        return a, v

    def solve_checked(self, r1: np.ndarray, r2: np.ndarray,
                      check: bool = True) -> tuple[np.ndarray, np.ndarray, float | None]:
        """(a, v, residual): :meth:`solve` and the solve's residual, its
        componentwise backward error on the bordered matrix (see
        :func:`backward_error`; None when not ``check``ed or no matrix was kept)."""
        rhs = np.concatenate([np.asarray(r1, dtype=complex), np.asarray(r2, dtype=complex)])
        z = self._raw_solve(rhs)
        residual = None
        if check and self.matrix is not None:
            residual = backward_error(self.matrix, z[self.order], rhs[self.order])
        return z[:self.n], z[self.n:], residual


class Response:
    """Field response at one angular frequency.

    ``admittance`` (Nc, Nc) S*m; ``flux_coupling`` (Nc, Nc) B^T S^-1 B at 0 Hz
    only (L = G^-1 B^T K^-1 B G^-1 per metre), else None.  ``residual``: the
    largest residual (backward error, see :func:`backward_error`) of the
    solves made for :meth:`field` and :meth:`potential` so far (None before
    the first).
    """

    def __init__(self, factorization: BorderedFactorization, conductance: np.ndarray | None = None) -> None:
        f = factorization
        self.factorization = f
        self.omega = f.omega
        self.residual: float | None = None
        if f.omega > 0.0:
            self.admittance = (1j * f.omega / f.scale) * f.schur
            self.flux_coupling = None
        else:
            self.admittance = np.diag(conductance).astype(complex)
            self.flux_coupling = -f.schur / f.scale

    def voltages(self, currents: np.ndarray) -> np.ndarray:
        """Conductor voltages per metre (V/m) that carry ``currents`` (Nc,) or (Nc, k) A."""
        return np.linalg.solve(self.admittance, np.asarray(currents, dtype=complex))

    def field(self, currents: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(voltages V/m, potential Wb/m at the free nodes) that carry conductor
        ``currents`` (Nc,) or (Nc, k) A, from one solve with the currents
        imposed (no round trip through the impedance matrix, whose large
        common-mode entries near a high-permeability core would leave an
        unbalanced rounding current)."""
        f = self.factorization
        i = np.asarray(currents, dtype=complex)
        if f.omega == 0.0:
            voltages = self.voltages(i)
            return voltages, self.potential(voltages)
        r1 = np.zeros((f.n,) + i.shape[1:], dtype=complex)
        a, v, residual = f.solve_checked(r1, f.scale * i / (1j * f.omega))
        self._record(residual)
        return v, a

    def _record(self, residual: float | None) -> None:
        if residual is not None:
            self.residual = residual if self.residual is None else max(self.residual, residual)

    def potential(self, voltages: np.ndarray) -> np.ndarray:
        """Vector potential (Wb/m) at the free nodes for conductor ``voltages``
        (Nc,) or (Nc, k): a = S^-1 B u, one solve per column."""
        f = self.factorization
        u = np.asarray(voltages, dtype=complex)
        r1 = np.zeros((f.n,) + u.shape[1:], dtype=complex)
        a, _, residual = f.solve_checked(r1, f.schur @ u)
        self._record(residual)
        return a


def respond(system: BorderedSystem, omega: float, conductance: np.ndarray) -> Response:
    """Factorize the bordered system once at ``omega`` (rad/s); the response
    serves every conductor.  ``conductance`` is the diagonal of G (S*m)."""
    return Response(system.factorize(omega), conductance)


@dataclass
class StrandedResponse:
    """Field response at one angular frequency of a window with homogenized
    (stranded) conductors, whose currents are imposed as uniform densities.

    ``impedance`` (Nc, Nc) ohm/m, the full conductor impedance matrix (solid
    and stranded); ``potential_per_current`` (n, Nc) Wb/m per A of each
    conductor; ``inductance`` (Nc, Nc) H/m; ``residual`` the backward error
    (see :func:`backward_error`) of the solves for the conductor columns.
    """

    omega: float
    impedance: np.ndarray
    potential_per_current: np.ndarray
    inductance: np.ndarray
    residual: float | None = None


def respond_stranded(stiffness: sp.spmatrix, mass: sp.spmatrix, coupling: sp.spmatrix,
                     conductance: np.ndarray, resistance: np.ndarray, stranded: np.ndarray,
                     omega: float, scale: float, ordering: np.ndarray | None = None) -> StrandedResponse:
    """One factorization of S = K(omega) + j omega M for solid conductors (voltage
    u_s unknown, B_s = int sigma phi) and stranded ones (current I_t imposed,
    B_t = (1/A_t) int phi, skin resistance ``resistance`` R_t ohm/m):

        S a - B_s u_s - B_t I_t = 0,  -j w B_s^T a + G u_s = I_s,
        u_t = R_t I_t + j w B_t^T a.

    With X = S^-1 [B_s B_t], C = B^T X and Y = G - j w C_ss:
    Z_ss = Y^-1, Z_st = Y^-1 j w C_st, Z_ts = j w C_ts Y^-1,
    Z_tt = R_t + j w C_tt + j w C_ts Y^-1 j w C_st; a = X_s u_s + X_t I_t.
    ``scale``: s of :func:`stiffness_scale` (that of the frequency-independent K0).
    """
    system = (scale * stiffness + (1j * omega * scale) * mass).tocsc()
    order = np.arange(system.shape[0]) if ordering is None else ordering
    lu = _factorize(system[order][:, order])
    rhs = scale * coupling.toarray().astype(complex)
    x = np.empty((system.shape[0], coupling.shape[1]), dtype=complex)
    x[order] = lu.solve(rhs[order])
    residual = backward_error(system, x, rhs)
    c = coupling.T.tocsr() @ x
    s = np.nonzero(~stranded)[0]
    t = np.nonzero(stranded)[0]
    nc = len(stranded)
    jw = 1j * omega
    y = np.diag(conductance[s]).astype(complex) - jw * c[np.ix_(s, s)]
    y_inv = np.linalg.inv(y) if len(s) else np.zeros((0, 0), dtype=complex)
    z = np.zeros((nc, nc), dtype=complex)
    z[np.ix_(s, s)] = y_inv
    z[np.ix_(s, t)] = y_inv @ (jw * c[np.ix_(s, t)])
    z[np.ix_(t, s)] = jw * c[np.ix_(t, s)] @ y_inv
    z[np.ix_(t, t)] = (np.diag(resistance[t]) + jw * c[np.ix_(t, t)]
                       + jw * c[np.ix_(t, s)] @ y_inv @ (jw * c[np.ix_(s, t)]))
    per_current = x[:, s] @ z[s, :]
    per_current[:, t] += x[:, t]
    if omega > 0.0:
        inductance = z.imag / omega
    else:
        # flux per unit current: solid columns carry sigma I / (sigma S), stranded I / A
        d = np.where(stranded, 1.0, 1.0 / np.where(stranded, 1.0, conductance))
        inductance = (d[:, None] * c.real) * d[None, :]
    return StrandedResponse(omega, z, per_current, inductance, residual)
