"""Point values of the magnetic field from a solved vector potential.

``flux_density_at`` gives B = (dA/dy, -dA/dx) (T; axisymmetric: B_r = -dA/dz,
B_z = dA/dr + A/r, in the window's x = r - r0, y = z) and ``field_strength_at``
H = B / mu (A/m) at arbitrary points of the mesh, from the complex vector
potential A_z (Wb/m, RMS phasor) on the P2 DOFs of ``problem.basis``.

Each point is located in the straight-sided triangulation of the element
corners (matplotlib's trapezoid-map tri-finder); its reference coordinates
then follow from the element's quadratic (isoparametric) map by Newton's
method, which is exact after one step for straight-sided elements.  A point
that lies between a curved edge and its chord belongs to the neighbour across
that edge: the neighbours are tried when the reference coordinates fall
outside the element.  Points outside the corner triangulation give NaN.
"""

from __future__ import annotations

import numpy as np
from matplotlib.tri import Triangulation
from skfem import ElementTriP2

from racfield.geometry.materials import MU0
from racfield.geometry.mesher import CORE

_ELEMENT = ElementTriP2()
_INSIDE_TOL = 1e-9     # barycentric tolerance for "inside the element"
_NEWTON_STEPS = 4


def _finder(problem):
    """The tri-finder of the problem's corner triangulation (built per call:
    cheap next to a solve, and no state is kept between calls)."""
    mesh = problem.mesh
    corners = mesh.p[:, :mesh.nvertices]
    return Triangulation(corners[0], corners[1], mesh.t.T.astype(np.int64)).get_trifinder()


def _shape(ref: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """P2 shape values (6, n) and reference gradients (6, 2, n) at ``ref`` (2, n)."""
    values, grads = [], []
    for i in range(6):
        phi, dphi = _ELEMENT.lbasis(ref, i)
        values.append(np.broadcast_to(phi, ref.shape[1:]))
        grads.append(np.broadcast_to(dphi, ref.shape))
    return np.array(values), np.array(grads)


def _reference_coordinates(nodes: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Reference coordinates (2, n) of ``points`` (2, n) in elements whose six
    nodes are ``nodes`` (2, 6, n), by Newton's method on the quadratic map."""
    # start from the affine map of the corners
    p0 = nodes[:, 0]
    jac = np.stack([nodes[:, 1] - p0, nodes[:, 2] - p0], axis=1)   # (2, 2, n): d x_i / d X_j
    ref = _solve2(jac, points - p0)
    for _ in range(_NEWTON_STEPS):
        phi, dphi = _shape(ref)
        mapped = np.einsum("cin,in->cn", nodes, phi)
        jac = np.einsum("cin,ijn->cjn", nodes, dphi)
        step = _solve2(jac, points - mapped)
        ref = ref + step
        if np.all(np.abs(step) < 1e-14):
            break
    return ref


def _solve2(mat: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """Solve the 2 x 2 systems ``mat`` (2, 2, n) x = ``rhs`` (2, n)."""
    a, b, c, d = mat[0, 0], mat[0, 1], mat[1, 0], mat[1, 1]
    det = a * d - b * c
    return np.array([(d * rhs[0] - b * rhs[1]) / det, (a * rhs[1] - c * rhs[0]) / det])


def _inside(ref: np.ndarray) -> np.ndarray:
    return (ref[0] >= -_INSIDE_TOL) & (ref[1] >= -_INSIDE_TOL) & (ref[0] + ref[1] <= 1.0 + _INSIDE_TOL)


def locate(problem, points: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Element index (n,) (-1 outside the mesh) and reference coordinates (2, n)
    of ``points`` (2, n) in m."""
    points = np.asarray(points, dtype=float).reshape(2, -1)
    mesh = problem.mesh
    element = np.asarray(_finder(problem)(points[0], points[1]), dtype=np.int64)
    ref = np.full(points.shape, np.nan)
    found = element >= 0
    if not found.any():
        return element, ref
    dofs = problem.basis.element_dofs
    nodes_of = lambda e: mesh.p[:, dofs[:, e]]   # (2, 6, n)
    ref[:, found] = _reference_coordinates(nodes_of(element[found]), points[:, found])
    # a point between a curved edge and its chord lies in the neighbour across it
    stray = np.flatnonzero(found & ~_inside(np.nan_to_num(ref, nan=-1.0)))
    if stray.size:
        f2t = mesh.f2t
        for side in range(3):
            if not stray.size:
                break
            facet = mesh.t2f[side, element[stray]]
            pair = f2t[:, facet]
            other = np.where(pair[0] == element[stray], pair[1], pair[0])
            has = other >= 0
            cand, idx = other[has], stray[has]
            if not idx.size:
                continue
            trial = _reference_coordinates(nodes_of(cand), points[:, idx])
            ok = _inside(trial)
            element[idx[ok]] = cand[ok]
            ref[:, idx[ok]] = trial[:, ok]
            stray = np.setdiff1d(stray, idx[ok])
    return element, ref


def _value_and_gradient(problem, potential: np.ndarray, element: np.ndarray,
                        ref: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """A (n,) and grad A (2, n) at located points (NaN where ``element`` < 0)."""
    potential = np.asarray(potential)
    n = element.shape[0]
    dtype = np.result_type(potential.dtype, float)
    value = np.full(n, np.nan, dtype=dtype)
    grad = np.full((2, n), np.nan, dtype=dtype)
    found = element >= 0
    if not found.any():
        return value, grad
    dofs = problem.basis.element_dofs[:, element[found]]
    nodes = problem.mesh.p[:, dofs]                            # (2, 6, m)
    phi, dphi = _shape(ref[:, found])                         # (6, m), (6, 2, m)
    jac = np.einsum("cin,ijn->cjn", nodes, dphi)               # d x_c / d X_j
    values = potential[dofs]                                   # (6, m)
    value[found] = np.einsum("in,in->n", values, phi)
    dref = np.einsum("in,ijn->jn", values, dphi)               # dA/dX_j
    # grad_x A = J^-T grad_X A
    grad[:, found] = _solve2(np.transpose(jac, (1, 0, 2)), dref)
    return value, grad


def _gradient(problem, potential: np.ndarray, element: np.ndarray, ref: np.ndarray) -> np.ndarray:
    return _value_and_gradient(problem, potential, element, ref)[1]


def _flux_density(problem, potential, points, element, ref) -> tuple[np.ndarray, np.ndarray]:
    """Planar: B = (dA/dy, -dA/dx).  Axisymmetric (x = r - r0, y = z):
    B_r = -dA/dz, B_z = dA/dr + A/r (on the axis r = 0: 2 dA/dr)."""
    value, grad = _value_and_gradient(problem, potential, element, ref)
    offset = problem.radius_offset
    if offset is None:
        return grad[1], -grad[0]
    r = points[0] + offset
    # on the axis (r = 0, where A = 0) A/r tends to dA/dr: B_z = 2 dA/dr there
    with np.errstate(divide="ignore", invalid="ignore"):
        over_r = np.where(r > 0.0, value / np.where(r > 0.0, r, 1.0), grad[0])
    return -grad[1], grad[0] + over_r


def flux_density_at(problem, potential: np.ndarray, points: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Flux density (bx, by) in T (complex RMS phasors for a complex
    ``potential``) at ``points`` (2, n) in m: B = (dA/dy, -dA/dx).

    ``potential`` is A_z (Wb/m) on the DOFs of ``problem.basis``.  NaN at
    points outside the mesh.
    """
    element, ref = locate(problem, points)
    return _flux_density(problem, potential, points, element, ref)


def field_strength_at(problem, potential: np.ndarray, points: np.ndarray,
                      core_permeability: float) -> tuple[np.ndarray, np.ndarray]:
    """Field strength (hx, hy) in A/m at ``points`` (2, n): B / mu, with
    mu = mu0 * ``core_permeability`` in core elements and mu0 elsewhere
    (the value given to :class:`~fem.problem.WindowProblem`).  NaN outside."""
    element, ref = locate(problem, points)
    bx, by = _flux_density(problem, potential, points, element, ref)
    region = np.where(element >= 0, problem.region[np.maximum(element, 0)], 0)
    mu = np.where(region == CORE, MU0 * core_permeability, MU0)
    return bx / mu, by / mu
