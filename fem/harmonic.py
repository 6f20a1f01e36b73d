"""One frequency: factorize once, answer for every conductor (Schur complement).

The discrete system, for potentials a (free nodes) and conductor voltages per
metre u, is

    (K + j w M) a - B u = F          (field, F from an applied field)
    -j w B^T a + G u    = I          (total current of each conductor)

with G = diag(sigma_k S_k).  One sparse LU of S = K + j w M gives
X = S^-1 [B F]; the conductor admittance per metre is Y = G - j w B^T X_B and
the conductor impedance matrix per metre is Z = Y^-1.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from threadpoolctl import threadpool_limits


@dataclass
class Response:
    """Field response at one angular frequency.

    ``admittance`` (Nc, Nc) S*m; ``potential_per_volt`` (n, Nc) potentials per
    unit conductor voltage per metre; ``applied`` (n,) potential for the
    applied field with u = 0 (zeros when there is none); ``applied_current``
    (Nc,) the currents that field drives with u = 0; ``flux_coupling``
    (Nc, Nc) B^T X, so that admittance = G - j omega B^T X (kept for the
    inductance at 0 Hz: L = G^-1 B^T X G^-1 per metre).
    """

    omega: float
    admittance: np.ndarray
    potential_per_volt: np.ndarray
    applied: np.ndarray
    applied_current: np.ndarray
    flux_coupling: np.ndarray

    def voltages(self, currents: np.ndarray) -> np.ndarray:
        """Conductor voltages per metre (V/m) that carry ``currents`` (A)."""
        return np.linalg.solve(self.admittance, np.asarray(currents, dtype=complex) - self.applied_current)

    def potential(self, voltages: np.ndarray) -> np.ndarray:
        """Vector potential (Wb/m) at the free nodes for conductor voltages ``voltages``."""
        return self.potential_per_volt @ voltages + self.applied


def respond(stiffness: sp.spmatrix, mass: sp.spmatrix, coupling: sp.spmatrix,
            conductance: np.ndarray, omega: float,
            applied_rhs: np.ndarray | None = None) -> Response:
    """Factorize K + j omega M once and solve for all conductors at once.

    All matrices are restricted to the free nodes already.  ``coupling`` is B
    (n, Nc), ``conductance`` the diagonal of G (S*m).
    """
    # K has entries of order 1/mu0 ~ 1e6: scale matrix and right-hand side
    # alike to order one (the solution is unchanged)
    scale = 1.0 / max(abs(stiffness).max(), 1e-300)
    system = (scale * stiffness + (1j * omega * scale) * mass).tocsc()
    n, nc = coupling.shape
    rhs = np.empty((n, nc + 1), dtype=complex)
    rhs[:, :nc] = coupling.toarray()
    rhs[:, nc] = 0.0 if applied_rhs is None else applied_rhs
    # the sparse LU calls BLAS on small dense blocks: extra BLAS threads only
    # contend (and slow it down many times on a busy machine)
    with threadpool_limits(limits=1, user_api="blas"):
        lu = spla.splu(system, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                       options={"SymmetricMode": True})
        solution = lu.solve(scale * rhs)
    per_volt, applied = solution[:, :nc], solution[:, nc]
    bt = coupling.T.tocsr()
    flux_coupling = bt @ per_volt
    admittance = np.diag(conductance).astype(complex) - 1j * omega * flux_coupling
    applied_current = -1j * omega * (bt @ applied)
    return Response(omega, admittance, per_volt, applied, applied_current, flux_coupling)


@dataclass
class StrandedResponse:
    """Field response at one angular frequency of a window with homogenized
    (stranded) conductors, whose currents are imposed as uniform densities.

    ``impedance`` (Nc, Nc) ohm/m, the full conductor impedance matrix (solid
    and stranded); ``potential_per_current`` (n, Nc) Wb/m per A of each
    conductor; ``inductance`` (Nc, Nc) H/m.
    """

    omega: float
    impedance: np.ndarray
    potential_per_current: np.ndarray
    inductance: np.ndarray


def respond_stranded(stiffness: sp.spmatrix, mass: sp.spmatrix, coupling: sp.spmatrix,
                     conductance: np.ndarray, resistance: np.ndarray, stranded: np.ndarray,
                     omega: float) -> StrandedResponse:
    """One factorization of S = K(omega) + j omega M for solid conductors (voltage
    u_s unknown, B_s = int sigma phi) and stranded ones (current I_t imposed,
    B_t = (1/A_t) int phi, skin resistance ``resistance`` R_t ohm/m):

        S a - B_s u_s - B_t I_t = 0,  -j w B_s^T a + G u_s = I_s,
        u_t = R_t I_t + j w B_t^T a.

    With X = S^-1 [B_s B_t], C = B^T X and Y = G - j w C_ss:
    Z_ss = Y^-1, Z_st = Y^-1 j w C_st, Z_ts = j w C_ts Y^-1,
    Z_tt = R_t + j w C_tt + j w C_ts Y^-1 j w C_st; a = X_s u_s + X_t I_t.
    """
    scale = 1.0 / max(abs(stiffness).max(), 1e-300)
    system = (scale * stiffness + (1j * omega * scale) * mass).tocsc()
    with threadpool_limits(limits=1, user_api="blas"):
        lu = spla.splu(system, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                       options={"SymmetricMode": True})
        x = lu.solve(scale * coupling.toarray().astype(complex))
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
    return StrandedResponse(omega, z, per_current, inductance)


class ReducedResponse(Response):
    """A :class:`Response` from the reduced model: the potentials per volt are
    V x (V the projection basis), formed only when asked for."""

    def __init__(self, omega, admittance, basis, reduced, applied, applied_current, flux_coupling):
        self.omega = omega
        self.admittance = admittance
        self._basis = basis
        self._reduced = reduced
        self.applied = applied
        self.applied_current = applied_current
        self.flux_coupling = flux_coupling

    @property
    def potential_per_volt(self) -> np.ndarray:
        return self._basis @ self._reduced

    def per_volt_times(self, voltages: np.ndarray) -> np.ndarray:
        """(V x) @ voltages without forming V x."""
        return self._basis @ (self._reduced @ voltages)


def _per_volt_times(response: Response, voltages: np.ndarray) -> np.ndarray:
    if isinstance(response, ReducedResponse):
        return response.per_volt_times(voltages)
    return response.potential_per_volt @ voltages


class ReducedModel:
    """Galerkin projection of K + j w M onto a real orthonormal basis V built
    from full solves X(w_i) = S(w_i)^-1 B at expansion frequencies (multi-point
    moment matching of order zero, one-sided Krylov projection as in Z. Bai,
    "Krylov subspace techniques for reduced-order modeling of large-scale
    dynamical systems", Applied Numerical Mathematics, 2002).  The system is
    affine in w, so V^T K V and V^T M V are formed once; every frequency then
    costs one small dense solve.  Real and imaginary parts of X enter V
    apart, so the reduced matrices stay real symmetric.
    """

    def __init__(self, stiffness: sp.spmatrix, mass: sp.spmatrix, coupling: sp.spmatrix,
                 conductance: np.ndarray) -> None:
        self.scale = 1.0 / max(abs(stiffness).max(), 1e-300)
        self.stiffness = (self.scale * stiffness).tocsc()
        self.mass = (self.scale * mass).tocsc()
        self.coupling = coupling.tocsc()
        self.b_dense = coupling.toarray()
        self.conductance = np.asarray(conductance, dtype=float)
        self.basis = np.zeros((coupling.shape[0], 0))
        self.expansion_omegas: list[float] = []

    def add(self, response: Response) -> None:
        """Extend V with the real and imaginary parts of a full response's X."""
        x = response.potential_per_volt
        block = np.hstack([x.real, x.imag])
        block /= np.maximum(np.linalg.norm(block, axis=0), 1e-300)
        v = self.basis
        for _ in range(2):  # block Gram-Schmidt, twice for orthogonality
            if v.shape[1]:
                block -= v @ (v.T @ block)
        u, s, _ = np.linalg.svd(block, full_matrices=False)
        keep = s > 1e-10 * max(s.max(initial=0.0), 1e-300) if s.size else s > 0
        keep &= s > 1e-8
        self.basis = np.hstack([v, u[:, keep]])
        self.expansion_omegas.append(response.omega)
        v = self.basis
        self.k_r = v.T @ (self.stiffness @ v)
        self.m_r = v.T @ (self.mass @ v)
        self.b_r = v.T @ self.b_dense
        self.bt_v = (self.coupling.T @ v)
        # M_r q = lambda K_r q with Q^T K_r Q = I diagonalizes the pencil:
        # (K_r + j w M_r)^-1 = Q (I + j w Lambda)^-1 Q^T, so a frequency costs O(r Nc)
        try:
            self.eig, q = scipy.linalg.eigh(self.m_r, self.k_r)
            self.q = q
            self.qtb = q.T @ (self.scale * self.b_r)
        except np.linalg.LinAlgError:
            self.eig = None

    @property
    def size(self) -> int:
        return self.basis.shape[1]

    def respond(self, omega: float) -> ReducedResponse:
        """Reduced solve (V^T K V + j w V^T M V) x = V^T B; X ~ V x, Y = G - j w B^T X."""
        if self.eig is not None:
            x = self.q @ (self.qtb / (1.0 + 1j * omega * self.eig)[:, None])
        else:
            system = self.k_r + 1j * omega * self.m_r
            x = np.linalg.solve(system, self.scale * self.b_r.astype(complex))
        flux_coupling = self.bt_v @ x
        nc = self.b_dense.shape[1]
        admittance = np.diag(self.conductance).astype(complex) - 1j * omega * flux_coupling
        return ReducedResponse(omega, admittance, self.basis, x, np.zeros(self.basis.shape[0], dtype=complex),
                               np.zeros(nc, dtype=complex), flux_coupling)
