"""Steady heat conduction on the window's mesh: div(k grad T) + q = 0.

k (W/(m K)) is piecewise constant per element (conductors, insulation or
air, core), q (W/m^3) the heat generated per element or at the quadrature
points (e.g. the ohmic loss density of the eddy-current solution).
Temperatures are in degC (only differences enter the equation).

Planar (x-y): a cross-section of unit depth; the heats are per metre (W/m).
Axisymmetric (r = x + r0, z = y): the forms carry the volume weight 2 pi r;
the heats are in W.  Boundaries: a fixed temperature (Dirichlet) on chosen
boundary facets, a convective condition -k dT/dn = h (T - T_amb) on others,
and no heat flow (adiabatic, the natural condition) on the rest.

Discretization: P2 on the mesh's second-order (curved) triangles, the same
basis as :class:`racfield.fem.problem.WindowProblem`, one sparse LU per solve.
The heat out through a fixed-temperature boundary is taken from the
residual of its rows (the consistent boundary flux), so the discrete energy
balance holds to rounding.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Sequence, Union

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu
from skfem import Basis, ElementTriP2, FacetBasis, MeshTri2

from .forms import heat_load, thermal_robin, thermal_stiffness, volume_weight

Where = Callable[[np.ndarray], np.ndarray]
"""A facet selector: facet midpoints (2, nf) in m -> boolean mask (nf,)."""
Heat = Union[np.ndarray, Callable[[np.ndarray], np.ndarray]]
"""Heat density q (W/m^3): (nelements,), (nelements, nqp), or a function of
the quadrature points' coordinates x (2, nelements, nqp) in m."""


@dataclass(frozen=True)
class FixedTemperature:
    """T = ``temperature`` (degC) on the boundary facets ``where`` selects
    (None: every outer boundary facet, e.g. the walls of an ideal-core window)."""

    temperature: float
    where: Where | None = None


@dataclass(frozen=True)
class Convection:
    """-k dT/dn = h (T - ambient) on the boundary facets ``where`` selects
    (None: every outer boundary facet); ``h`` in W/(m^2 K), ``ambient`` degC."""

    h: float
    ambient: float
    where: Where | None = None


@dataclass
class TemperatureField:
    """One steady temperature solution.

    ``temperature`` (N,) degC at the P2 nodes ``nodes`` (2, N) m;
    ``conductor_mean`` (Nc,) degC, the area- (axisymmetric: volume-)
    weighted mean over each conductor region (NaN for a region without
    elements); ``hot_spot`` degC and ``hot_spot_at`` (x, y) m, the largest
    nodal temperature (P2 nodes: corners and edge midpoints); ``heat_generated`` int q dV; ``heat_out_fixed`` (one
    per fixed condition) and ``heat_out_convective`` (one per convective
    condition), the heat leaving through each boundary; all heats in W/m
    (planar) or W (axisymmetric).
    """

    temperature: np.ndarray
    nodes: np.ndarray
    conductor_mean: np.ndarray
    hot_spot: float
    hot_spot_at: tuple[float, float]
    heat_generated: float
    heat_out_fixed: np.ndarray
    heat_out_convective: np.ndarray

    @property
    def heat_out(self) -> float:
        """All heat leaving the domain (W/m or W): equals ``heat_generated``."""
        return float(self.heat_out_fixed.sum() + self.heat_out_convective.sum())


def element_conductivity(region: np.ndarray, conductor: Sequence[float] | float, air: float,
                         core: float | None = None) -> np.ndarray:
    """k (W/(m K)) per element from its region: ``conductor`` (one value, or
    one per conductor index), ``air`` (region AIR = -1: air or fill) and
    ``core`` (region CORE = -2; defaults to ``air``)."""
    region = np.asarray(region)
    per_conductor = np.broadcast_to(np.asarray(conductor, dtype=float), (max(int(region.max()) + 1, 1),))
    k = np.where(region == -1, air, air if core is None else core).astype(float)
    inside = region >= 0
    k[inside] = per_conductor[region[inside]]
    return k


def _basis(window_mesh) -> Basis:
    """The P2 basis on the mesh's 6-node triangles (``points`` (2, n) m,
    ``triangles`` (6, m)), as in :class:`racfield.fem.problem.WindowProblem`."""
    return Basis(MeshTri2(window_mesh.points, window_mesh.triangles), ElementTriP2())


def _facets(basis: Basis, where: Where | None) -> np.ndarray:
    """The outer boundary facets ``where`` selects (all of them for None)."""
    mesh = basis.mesh
    facets = mesh.boundary_facets()
    if where is None:
        return facets
    midpoints = mesh.p[:, mesh.facets[:, facets]].mean(axis=1)
    chosen = facets[np.asarray(where(midpoints), dtype=bool)]
    if len(chosen) == 0:
        raise ValueError("a thermal boundary condition selects no boundary facet; check its 'where'")
    return chosen


def _heat_at_quadrature(basis: Basis, heat: Heat) -> np.ndarray:
    """q (W/m^3) at the quadrature points, (nelements, nqp)."""
    shape = basis.X.shape[1]
    if callable(heat):
        x = np.asarray(basis.global_coordinates())
        return np.broadcast_to(np.asarray(heat(x), dtype=float), (basis.nelems, shape))
    heat = np.asarray(heat, dtype=float)
    if heat.shape == (basis.nelems,):
        return np.repeat(heat[:, None], shape, axis=1)
    if heat.shape != (basis.nelems, shape):
        raise ValueError(f"heat needs W/m^3 per element ({basis.nelems},) or per quadrature point "
                         f"({basis.nelems}, {shape}), not {heat.shape}")
    return heat


def _weight(r0: float | None) -> dict:
    """The keyword of the forms' volume weight: 1 (planar) or 2 pi (x + r0)."""
    return {"r0": 0.0, "axisymmetric": 0.0} if r0 is None else {"r0": float(r0), "axisymmetric": 1.0}


def _assemble(basis: Basis, k: np.ndarray, q: np.ndarray, convective: Sequence[Convection],
              weight: dict) -> tuple[sp.csr_matrix, np.ndarray, list[tuple[FacetBasis, Convection]]]:
    """The matrix int k grad T . grad v dV + sum int h T v dA and the load
    int q v dV + sum int h T_amb v dA (W/m or W per degC and W/m or W)."""
    nqp = basis.X.shape[1]
    matrix = thermal_stiffness.assemble(basis, k=np.repeat(np.asarray(k, float)[:, None], nqp, axis=1),
                                        **weight)
    load = heat_load.assemble(basis, q=q, **weight)
    robins = []
    for condition in convective:
        facet_basis = FacetBasis(basis.mesh, basis.elem, facets=_facets(basis, condition.where))
        robin = condition.h * thermal_robin.assemble(facet_basis, **weight)
        matrix = matrix + robin
        load = load + condition.ambient * (robin @ np.ones(basis.N))
        robins.append((facet_basis, condition))
    return matrix.tocsr(), load, robins


def _fixed_dofs(basis: Basis, fixed: Sequence[FixedTemperature]) -> tuple[list[np.ndarray], np.ndarray]:
    """The DOFs of each fixed condition (a later condition takes a shared
    DOF) and the prescribed value (degC) on all DOFs (NaN where free)."""
    values = np.full(basis.N, np.nan)
    owner = np.full(basis.N, -1)
    for i, condition in enumerate(fixed):
        dofs = basis.get_dofs(facets=_facets(basis, condition.where)).all()
        values[dofs] = condition.temperature
        owner[dofs] = i
    return [np.nonzero(owner == i)[0] for i in range(len(fixed))], values


def _solve(matrix: sp.csr_matrix, load: np.ndarray, values: np.ndarray) -> np.ndarray:
    """Solve with T = ``values`` where they are not NaN: one sparse LU."""
    fixed = ~np.isnan(values)
    free = np.nonzero(~fixed)[0]
    t = np.where(fixed, values, 0.0)
    rhs = load[free] - matrix[free][:, fixed] @ t[fixed]
    t[free] = splu(matrix[free][:, free].tocsc()).solve(rhs)
    return t


def _conductor_mean(basis: Basis, region: np.ndarray, t: np.ndarray, weight: dict) -> np.ndarray:
    """Mean temperature (degC) of each conductor region, weighted by area
    (planar) or volume (axisymmetric)."""
    count = int(region.max()) + 1 if region.size and region.max() >= 0 else 0
    elements = np.nonzero(region >= 0)[0]
    if count == 0:
        return np.zeros(0)
    sub = basis.with_elements(elements)
    measure = volume_weight.elemental(sub, **weight)
    integral = volume_weight.elemental(sub, f=sub.interpolate(t), **weight)
    size = np.bincount(region[elements], measure, count)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.bincount(region[elements], integral, count) / size


def solve_temperature(window_mesh, conductivity: np.ndarray, heat: Heat, *,
                      fixed: FixedTemperature | Sequence[FixedTemperature] | None = None,
                      convective: Convection | Sequence[Convection] | None = None,
                      radius_offset: float | None = None) -> TemperatureField:
    """Steady temperature of the mesh ``window_mesh`` (a
    :class:`racfield.geometry.mesher.WindowMesh`, or any object with its
    ``points``, ``triangles`` and ``region``).

    ``conductivity`` (nelements,) W/(m K) (see :func:`element_conductivity`);
    ``heat`` q in W/m^3 (see :data:`Heat`); ``fixed``/``convective``: one
    condition or a list; ``radius_offset`` None for planar, or r0 (m) with
    r = x + r0 for an axisymmetric model.  At least one fixed or convective
    condition must hold the temperature level.
    """
    fixed = [fixed] if isinstance(fixed, FixedTemperature) else list(fixed or [])
    convective = [convective] if isinstance(convective, Convection) else list(convective or [])
    if not fixed and not convective:
        raise ValueError("an adiabatic domain has no steady temperature: fix T or add convection")
    basis = _basis(window_mesh)
    conductivity = np.asarray(conductivity, dtype=float)
    if conductivity.shape != (basis.nelems,) or not np.all(conductivity > 0) or not np.isfinite(conductivity).all():
        raise ValueError(f"conductivity needs one positive W/(m K) value per element ({basis.nelems})")
    weight = _weight(radius_offset)
    q = _heat_at_quadrature(basis, heat)
    matrix, load, robins = _assemble(basis, conductivity, q, convective, weight)
    dofs, values = _fixed_dofs(basis, fixed)
    t = _solve(matrix, load, values)
    # heat out of a fixed boundary: the residual of its rows (consistent flux)
    residual = load - matrix @ t
    out_fixed = np.array([residual[d].sum() for d in dofs])
    out_convective = np.array([
        _convected_heat(facet_basis, t, condition, weight) for facet_basis, condition in robins])
    hot = int(np.argmax(t))
    region = np.asarray(window_mesh.region)
    return TemperatureField(
        temperature=t, nodes=basis.doflocs, conductor_mean=_conductor_mean(basis, region, t, weight),
        hot_spot=float(t[hot]), hot_spot_at=(float(basis.doflocs[0, hot]), float(basis.doflocs[1, hot])),
        heat_generated=float(volume_weight.assemble(basis, f=q, **weight)),
        heat_out_fixed=out_fixed, heat_out_convective=out_convective)


def _convected_heat(facet_basis: FacetBasis, t: np.ndarray, condition: Convection, weight: dict) -> float:
    """int h (T - T_amb) dA (W/m or W): the heat a convective boundary carries off."""
    rise = facet_basis.interpolate(t - condition.ambient)
    return float(condition.h * volume_weight.assemble(facet_basis, f=rise, **weight))
