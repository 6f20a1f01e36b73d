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
