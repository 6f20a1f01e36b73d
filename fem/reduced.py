"""Reduced-order model of a frequency sweep.

The bordered system of :mod:`fem.harmonic`, written affine in w,

    A(w) z = b,   A(w) = A0 + j w A1,
    A0 = [K  -B]    A1 = [ M    0]    z = [a]    b = [0]
         [0   G]         [-B^T  0]        [u]        [I]

is projected (Galerkin) onto a real orthonormal basis V of the potentials,
with the conductor voltages u kept whole.  V holds the moments of z(w) about
a few expansion frequencies w0 (rational Krylov, multi-point moment matching
as in Z. Bai, "Krylov subspace techniques for reduced-order modeling of
large-scale dynamical systems", Applied Numerical Mathematics, 2002):

    z_0 = A(w0)^-1 b,   z_(k+1) = A(w0)^-1 A1 z_k,

for the currents b of the excitation columns (the only conductor currents a
case can carry), so one factorization at w0 serves all its moments.  Real and
imaginary parts enter V apart, so V^T K V and V^T M V stay real symmetric;
every frequency then costs O(r Nc) after one generalized eigen-decomposition.
The reduced admittance is exact in the directions of the excitation columns up
to the projection error, not for arbitrary conductor currents.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
import scipy.linalg
import scipy.sparse as sp

from .harmonic import BorderedFactorization


class ReducedResponse:
    """A reduced response with the interface of :class:`fem.harmonic.Response`:
    ``admittance`` (Nc, Nc) S*m and the potentials V x u (Wb/m)."""

    def __init__(self, omega: float, admittance: np.ndarray, basis: np.ndarray, reduced: np.ndarray,
                 loss_factors: Callable[[], np.ndarray | None] | None = None) -> None:
        self.omega = omega
        self.admittance = admittance
        self.flux_coupling = None
        self.residual = None    #: no full solve behind a reduced response
        self._basis = basis
        self._reduced = reduced
        self._loss_factors = loss_factors
        if loss_factors is None:
            self.loss_matrices = None

    def loss_matrices(self, voltages: np.ndarray) -> np.ndarray:
        """Loss cross terms Q (Nc, Ne, Ne) W/m of ``voltages`` (Nc, Ne) V/m and
        their reduced potentials, as :meth:`fem.problem.WindowProblem.loss_matrices`,
        from the model's loss factors R: Q_k = g_k^H g_k, g_k = R_k [u_k; -j w y]."""
        factors = self._loss_factors()
        u = np.asarray(voltages, dtype=complex)
        y = self._reduced @ u                                                    # (r, Ne)
        g = factors[:, :, :1] * u[:, None, :] + (-1j * self.omega) * np.einsum("kmr,rn->kmn", factors[:, :, 1:], y)
        return np.einsum("kmi,kmj->kij", g.conj(), g)

    def voltages(self, currents: np.ndarray) -> np.ndarray:
        """Conductor voltages per metre (V/m) that carry ``currents`` (A)."""
        return np.linalg.solve(self.admittance, np.asarray(currents, dtype=complex))

    def field(self, currents: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(voltages V/m, potential Wb/m at the free nodes) for ``currents`` (Nc, ...) A."""
        voltages = self.voltages(currents)
        return voltages, self.potential(voltages)

    def potential(self, voltages: np.ndarray) -> np.ndarray:
        """Vector potential (Wb/m) at the free nodes for ``voltages`` (Nc,) or (Nc, k)."""
        y = self._reduced @ voltages
        if y.ndim == 1:
            return self._basis @ y.real + 1j * (self._basis @ y.imag)
        # real basis times complex coefficients: one pass, no complex copy of the basis
        both = self._basis @ np.hstack([y.real, y.imag])
        return both[:, :y.shape[1]] + 1j * both[:, y.shape[1]:]


def moment_vectors(factorization: BorderedFactorization, mass: sp.spmatrix, coupling: sp.spmatrix,
                   currents: np.ndarray, count: int) -> np.ndarray:
    """The potential parts of the first ``count`` moments z_k at the
    factorization's frequency w0 > 0 for conductor ``currents`` (Nc, k) A:
    an (n, count * k) complex array, each column scaled to unit norm."""
    f = factorization
    w0 = f.omega

    def a_inverse(y1: np.ndarray, y2: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        # A(w0) = diag(I, j w0) (bordered matrix) / s
        return f.solve(f.scale * y1, f.scale * y2 / (1j * w0))

    currents = np.asarray(currents, dtype=complex)
    a, _ = a_inverse(np.zeros((f.n, currents.shape[1]), dtype=complex), currents)
    out = []
    for k in range(count):
        a = a / np.maximum(np.linalg.norm(a, axis=0), 1e-300)
        out.append(a)
        if k + 1 < count:
            a, _ = a_inverse(mass @ a, -(coupling.T @ a))
    return np.hstack(out)


class ReducedModel:
    """Galerkin projection of the window's system onto a growing real
    orthonormal basis V of the potentials (see the module docstring)."""

    def __init__(self, stiffness: sp.spmatrix, mass: sp.spmatrix, coupling: sp.spmatrix,
                 conductance: np.ndarray, scale: float,
                 loss_factors: Callable[[np.ndarray], np.ndarray] | None = None) -> None:
        """``scale``: s of :func:`fem.harmonic.stiffness_scale`; ``loss_factors``:
        the loss factors of a basis (see
        :meth:`fem.problem.WindowProblem.reduced_loss_factors`), computed once
        per basis when a reduced point first asks for its loss."""
        self.loss_factors = loss_factors
        self.scale = scale
        self.stiffness = (self.scale * stiffness).tocsc()
        self.mass = (self.scale * mass).tocsc()
        self.coupling = coupling.tocsc()
        self.conductance = np.asarray(conductance, dtype=float)
        self.basis = np.zeros((coupling.shape[0], 0))
        self.k_r = self.m_r = np.zeros((0, 0))
        self.b_r = np.zeros((0, coupling.shape[1]))
        self._evaluator: ReducedEvaluator | None = None

    @property
    def size(self) -> int:
        return self.basis.shape[1]

    def extend(self, vectors: np.ndarray) -> None:
        """Add the real and imaginary parts of ``vectors`` (n, m) to V
        (orthonormalized, near-dependent directions dropped)."""
        block = np.hstack([vectors.real, vectors.imag])
        block = block / np.maximum(np.linalg.norm(block, axis=0), 1e-300)
        v = self.basis
        for _ in range(2):  # block Gram-Schmidt, twice for orthogonality
            if v.shape[1]:
                block -= v @ (v.T @ block)
        u, s, _ = np.linalg.svd(block, full_matrices=False)
        new = u[:, s > 1e-8]
        r = v.shape[1]
        self.basis = np.hstack([v, new])
        k_new, m_new = self.stiffness @ new, self.mass @ new
        k_r = np.zeros((r + new.shape[1],) * 2)
        m_r = np.zeros_like(k_r)
        k_r[:r, :r], m_r[:r, :r] = self.k_r, self.m_r
        k_r[:, r:], m_r[:, r:] = self.basis.T @ k_new, self.basis.T @ m_new
        k_r[r:, :r], m_r[r:, :r] = k_r[:r, r:].T, m_r[:r, r:].T
        self.k_r, self.m_r = 0.5 * (k_r + k_r.T), 0.5 * (m_r + m_r.T)
        self.b_r = np.vstack([self.b_r, (self.coupling.T @ new).T])
        self._evaluator = None

    def respond(self, omega: float) -> ReducedResponse:
        """The reduced response at ``omega`` (rad/s)."""
        if self._evaluator is None:
            self._evaluator = ReducedEvaluator(self)
        return self._evaluator.respond(omega)


class ReducedEvaluator:
    """Frequency evaluation of a reduced model (its basis as it stands).

    M_r q = lambda K_r q with Q^T K_r Q = I diagonalizes the pencil:
    (K_r + j w M_r)^-1 = Q (I + j w Lambda)^-1 Q^T.
    """

    def __init__(self, model: ReducedModel) -> None:
        self.model = model
        self.basis = model.basis
        self.b_r = model.b_r
        self.eig, self.q = scipy.linalg.eigh(model.m_r, model.k_r)
        self.qtb = self.q.T @ (model.scale * self.b_r)
        self._loss: np.ndarray | None = None

    def loss_factors(self) -> np.ndarray:
        """The model's loss factors of this basis (computed on first use)."""
        if self._loss is None:
            self._loss = self.model.loss_factors(self.basis)
        return self._loss

    def respond(self, omega: float) -> ReducedResponse:
        """Y = G - j w B^T V x with (V^T K V + j w V^T M V) x = V^T B."""
        x = self.q @ (self.qtb / (1.0 + 1j * omega * self.eig)[:, None])
        admittance = np.diag(self.model.conductance).astype(complex) - 1j * omega * (self.b_r.T @ x)
        return ReducedResponse(omega, admittance, self.basis, x,
                               self.loss_factors if self.model.loss_factors is not None else None)
