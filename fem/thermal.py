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

Thin resistive layers (a conductor's insulation, thinner than the elements
around it): a conductor's surface may carry a thermal resistance R''
(m^2 K/W), -k dT/dn = (T_inside - T_outside) / R'' across its boundary.  The
temperature is then discontinuous there: the DOFs on that boundary are
doubled, the conductor's elements taking their own copies, and the interface
term int (1/R'') [T][v] dA joins the two sides (the standard thin-layer or
contact-resistance model of conduction, e.g. Incropera & DeWitt,
"Fundamentals of Heat and Mass Transfer", ch. 3, thermal contact resistance).
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

from .ordering import nested_dissection
from .forms import heat_load, test_integral, thermal_contact, thermal_robin, thermal_stiffness, volume_weight

OUTSIDE = -10   #: the region beyond an outer boundary facet

Where = Callable[[np.ndarray], np.ndarray]
"""A facet selector: facet midpoints (2, nf) in m -> boolean mask (nf,)."""
Heat = Union[np.ndarray, Callable[[np.ndarray], np.ndarray]]
"""Heat density q (W/m^3): (nelements,), (nelements, nqp), or a function of
the quadrature points' coordinates x (2, nelements, nqp) in m."""


@dataclass(frozen=True)
class FixedTemperature:
    """T = ``temperature`` (degC) on the boundary facets ``where`` selects
    (None: every outer boundary facet, e.g. the walls of an ideal-core window),
    or with ``region`` on every node of that mesh region (an isothermal core body)."""

    temperature: float
    where: Where | None = None
    region: int | None = None


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
    element_dofs: np.ndarray | None = None   #: (6, ne) each element's entries of ``temperature``

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


@dataclass
class _Split:
    """The DOFs doubled on resistive conductor surfaces.  ``ext`` (Nbfun,
    nelements): every element's DOFs in the extended numbering (a conductor's
    elements take its copies); ``size``: the extended count; ``origin``
    (size,): the original DOF of each extended one; ``jump``: the interface
    matrix int (1/R'') [T][v] dA (W/m or W per K) in the extended numbering."""

    ext: np.ndarray
    size: int
    origin: np.ndarray
    jump: sp.csr_matrix

    @classmethod
    def none(cls, basis: Basis) -> "_Split":
        return cls(basis.element_dofs, basis.N, np.arange(basis.N), sp.csr_matrix((basis.N, basis.N)))


def _facet_dofs(basis: Basis, facets: np.ndarray) -> np.ndarray:
    """(3, nf) the P2 DOFs of each facet: its two vertices and its midpoint."""
    mesh = basis.mesh
    return np.vstack([basis.nodal_dofs[0, mesh.facets[0, facets]], basis.nodal_dofs[0, mesh.facets[1, facets]],
                      basis.facet_dofs[0, facets]])


def _surface_sides(basis: Basis, region: np.ndarray, resistance: np.ndarray):
    """Per facet: the regions on its two sides (OUTSIDE beyond the boundary)
    and each side's R'' (m^2 K/W; a conductor's value for the facet's normal
    direction, zero for air, core or outside)."""
    mesh = basis.mesh
    sides = np.vstack([region[mesh.f2t[0]], np.where(mesh.f2t[1] >= 0, region[np.maximum(mesh.f2t[1], 0)], OUTSIDE)])
    tangent = mesh.p[:, mesh.facets[1]] - mesh.p[:, mesh.facets[0]]
    axis = (np.abs(tangent[0]) > np.abs(tangent[1])).astype(int)   # tangent along x: normal along y
    own = np.zeros(sides.shape)
    for s in range(2):
        conductor = sides[s] >= 0
        own[s, conductor] = resistance[sides[s, conductor], axis[conductor]]
    return sides, own


def _split(basis: Basis, region: np.ndarray, resistance: np.ndarray | None, weight: dict) -> _Split:
    """Double the DOFs of every conductor surface with R'' > 0 (see the
    module docstring).  ``resistance`` (Nc, 2): R'' on the faces whose normal
    is along x and along y (round: both the radial value)."""
    if resistance is None or not np.any(np.asarray(resistance) > 0):
        return _Split.none(basis)
    resistance = np.asarray(resistance, dtype=float)
    n = basis.N
    sides, own = _surface_sides(basis, region, resistance)
    bounding = sides[0] != sides[1]
    keys, keep = [], []
    for s in range(2):
        on = bounding & (sides[s] >= 0)
        dofs = _facet_dofs(basis, np.nonzero(on)[0])
        key = sides[s, on] * n + dofs
        resistive = own[s, on] > 0
        keys.append(key[:, resistive].ravel())
        keep.append(key[:, ~resistive].ravel())   # continuous there: not doubled
    doubled = np.setdiff1d(np.concatenate(keys), np.concatenate(keep))
    origin = np.concatenate([np.arange(n), doubled % n])

    def extended(side_region: np.ndarray, dofs: np.ndarray) -> np.ndarray:
        """The extended DOF of ``dofs`` seen from ``side_region`` (broadcast)."""
        key = np.where(side_region >= 0, side_region * n + dofs, -1)
        at = np.minimum(np.searchsorted(doubled, key), max(len(doubled) - 1, 0))
        found = (key >= 0) & (doubled[at] == key)
        return np.where(found, n + at, dofs)

    ext = extended(region[None, :], basis.element_dofs)
    facets = np.nonzero(bounding & (own.sum(axis=0) > 0))[0]
    facet_basis = FacetBasis(basis.mesh, basis.elem, facets=facets)
    nqp = facet_basis.X.shape[1]
    contact = 1.0 / own[:, facets].sum(axis=0)
    local = thermal_contact.elemental(facet_basis, c=np.repeat(contact[:, None], nqp, axis=1),
                                      **weight).tolocal()                        # (nf, nb, nb)
    side_of = sides[:, facets]
    # the facet basis takes each facet's element on side 0 (f2t[0]): its DOFs
    # seen from either side
    dofs = facet_basis.element_dofs
    a, b = extended(side_of[0][None, :], dofs), extended(side_of[1][None, :], dofs)
    both = np.vstack([a, b]).T                                                   # (nf, 2 nb)
    block = np.block([[local, -local], [-local, local]])
    rows = np.broadcast_to(both[:, :, None], block.shape)
    cols = np.broadcast_to(both[:, None, :], block.shape)
    size = n + len(doubled)
    jump = sp.csr_matrix((block.ravel(), (rows.ravel(), cols.ravel())), shape=(size, size))
    return _Split(ext, size, origin, jump)


def _local_matrix(form, basis: Basis, split: _Split, **kwargs) -> sp.csr_matrix:
    """A bilinear form assembled element by element into the extended numbering."""
    local = form.elemental(basis, **kwargs).tolocal()                           # (ne, nb, nb)
    ext = split.ext.T
    rows = np.broadcast_to(ext[:, :, None], local.shape)
    cols = np.broadcast_to(ext[:, None, :], local.shape)
    return sp.csr_matrix((local.ravel(), (rows.ravel(), cols.ravel())), shape=(split.size, split.size))


def _local_vector(form, basis: Basis, split: _Split, **kwargs) -> np.ndarray:
    """A linear form assembled element by element into the extended numbering."""
    local = form.elemental(basis, **kwargs).tolocal()                           # (ne, nb)
    return np.bincount(split.ext.T.ravel(), local.ravel(), split.size)


def _pad(matrix: sp.spmatrix, size: int) -> sp.csr_matrix:
    """An original-numbering matrix in the extended numbering (the outside copies)."""
    coo = matrix.tocoo()
    return sp.csr_matrix((coo.data, (coo.row, coo.col)), shape=(size, size))


def thermal_basis(window_mesh) -> Basis:
    """The P2 basis of the thermal solution on ``window_mesh`` (``points`` (2, n) m,
    ``triangles`` (6, m)), as in :class:`racfield.fem.problem.WindowProblem`; for
    conductivities at its quadrature points (see :class:`ThermalSystem`)."""
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


def _assemble(basis: Basis, k: np.ndarray, convective: Sequence[Convection], weight: dict,
              split: _Split) -> tuple[sp.csr_matrix, np.ndarray, list[tuple[FacetBasis, Convection]]]:
    """The matrix int k grad T . grad v dV + interface terms + sum int h T v dA
    and the ambient load sum int h T_amb v dA (W/m or W per degC and W/m or
    W), in the extended numbering of ``split``."""
    matrix = _local_matrix(thermal_stiffness, basis, split, k=k, **weight) + split.jump
    load = np.zeros(split.size)
    robins = []
    for condition in convective:
        facet_basis = FacetBasis(basis.mesh, basis.elem, facets=_facets(basis, condition.where))
        robin = _pad(condition.h * thermal_robin.assemble(facet_basis, **weight), split.size)
        matrix = matrix + robin
        load = load + condition.ambient * (robin @ np.ones(split.size))
        robins.append((facet_basis, condition))
    return matrix.tocsr(), load, robins


def _fixed_dofs(basis: Basis, fixed: Sequence[FixedTemperature], split: _Split,
                region: np.ndarray) -> tuple[list[np.ndarray], np.ndarray]:
    """The DOFs of each fixed condition (a later condition takes a shared
    DOF) and the prescribed value (degC) on all DOFs (NaN where free), in the
    extended numbering (a boundary facet's outside copies)."""
    values = np.full(split.size, np.nan)
    owner = np.full(split.size, -1)
    for i, condition in enumerate(fixed):
        if condition.region is not None:
            dofs = np.unique(split.ext[:, region == condition.region])
        else:
            dofs = basis.get_dofs(facets=_facets(basis, condition.where)).all()
        values[dofs] = condition.temperature
        owner[dofs] = i
    return [np.nonzero(owner == i)[0] for i in range(len(fixed))], values


def _conductor_mean(basis: Basis, region: np.ndarray, t: np.ndarray, weight: dict, split: _Split) -> np.ndarray:
    """Mean temperature (degC) of each conductor region, weighted by area
    (planar) or volume (axisymmetric), from the conductors' own DOFs."""
    count = int(region.max()) + 1 if region.size and region.max() >= 0 else 0
    elements = np.nonzero(region >= 0)[0]
    if count == 0:
        return np.zeros(0)
    sub = basis.with_elements(elements)
    measure = volume_weight.elemental(sub, **weight)
    local = test_integral.elemental(sub, **weight).tolocal()                     # (ne, nb): int phi_i dV
    integral = (local * t[split.ext[:, elements].T]).sum(axis=1)
    size = np.bincount(region[elements], measure, count)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.bincount(region[elements], integral, count) / size


def solve_temperature(window_mesh, conductivity: np.ndarray, heat: Heat, *,
                      fixed: FixedTemperature | Sequence[FixedTemperature] | None = None,
                      convective: Convection | Sequence[Convection] | None = None,
                      radius_offset: float | None = None,
                      surface_resistance: np.ndarray | None = None) -> TemperatureField:
    """Steady temperature of the mesh ``window_mesh`` for the heat ``heat`` (q
    in W/m^3, see :data:`Heat`); the other arguments as :class:`ThermalSystem`."""
    return ThermalSystem(window_mesh, conductivity, fixed=fixed, convective=convective,
                         radius_offset=radius_offset, surface_resistance=surface_resistance).solve(heat)


class ThermalSystem:
    """The conduction problem of one mesh, conductivity and boundary,
    assembled and factorized once (one sparse LU); :meth:`solve` for each heat.

    ``window_mesh``: a :class:`racfield.geometry.mesher.WindowMesh`, or any
    object with its ``points``, ``triangles`` and ``region``.
    ``conductivity`` (nelements,) W/(m K) (see :func:`element_conductivity`),
    or (nelements, nqp) at the quadrature points of :func:`thermal_basis`;
    ``fixed``/``convective``: one condition or a list; ``radius_offset`` None
    for planar, or r0 (m) with r = x + r0 for an axisymmetric model;
    ``surface_resistance`` (Nc, 2) m^2 K/W: a thin resistive layer on each
    conductor's surface, on its faces whose normal lies along x and along y
    (see the module docstring; None or zeros: none); ``basis``: the
    :func:`thermal_basis` of the mesh when the caller has it already.  At
    least one fixed or convective condition must hold the temperature level.  A solution's
    ``temperature`` and ``nodes`` hold both sides' values of a doubled DOF
    (the nodes repeated).
    """

    def __init__(self, window_mesh, conductivity: np.ndarray, *,
                 fixed: FixedTemperature | Sequence[FixedTemperature] | None = None,
                 convective: Convection | Sequence[Convection] | None = None,
                 radius_offset: float | None = None, surface_resistance: np.ndarray | None = None,
                 basis: Basis | None = None) -> None:
        fixed = [fixed] if isinstance(fixed, FixedTemperature) else list(fixed or [])
        convective = [convective] if isinstance(convective, Convection) else list(convective or [])
        if not fixed and not convective:
            raise ValueError("an adiabatic domain has no steady temperature: fix T or add convection")
        self.basis = basis = thermal_basis(window_mesh) if basis is None else basis
        conductivity = np.asarray(conductivity, dtype=float)
        nqp = basis.X.shape[1]
        if conductivity.shape == (basis.nelems,):
            conductivity = np.repeat(conductivity[:, None], nqp, axis=1)
        if (conductivity.shape != (basis.nelems, nqp) or not np.all(conductivity > 0)
                or not np.isfinite(conductivity).all()):
            raise ValueError(f"conductivity needs one positive W/(m K) value per element ({basis.nelems}) "
                             f"or per quadrature point ({basis.nelems}, {nqp})")
        self.weight = _weight(radius_offset)
        self.region = np.asarray(window_mesh.region)
        self.split = _split(basis, self.region, surface_resistance, self.weight)
        self.matrix, self.ambient_load, self.robins = _assemble(basis, conductivity, convective, self.weight,
                                                                self.split)
        self.dofs, values = _fixed_dofs(basis, fixed, self.split, self.region)
        held = ~np.isnan(values)
        self.free = np.nonzero(~held)[0]
        self.base = np.where(held, values, 0.0)
        self.lift = self.matrix[self.free][:, held] @ self.base[held]
        # nested dissection (as the field problem), the pivots kept on the diagonal:
        # the matrix is symmetric positive definite
        reduced = self.matrix[self.free][:, self.free]
        self.order = nested_dissection(reduced)
        self.factor = splu(reduced[self.order][:, self.order].tocsc(), permc_spec="NATURAL",
                           diag_pivot_thresh=0.0, options={"SymmetricMode": True})

    def solve(self, heat: Heat) -> TemperatureField:
        """The steady temperature for the heat ``heat`` (q in W/m^3, see :data:`Heat`)."""
        basis, split, weight = self.basis, self.split, self.weight
        q = _heat_at_quadrature(basis, heat)
        load = _local_vector(heat_load, basis, split, q=q, **weight) + self.ambient_load
        t = self.base.copy()
        free = np.empty(len(self.free))
        free[self.order] = self.factor.solve((load[self.free] - self.lift)[self.order])
        t[self.free] = free
        # heat out of a fixed boundary: the residual of its rows (consistent flux)
        residual = load - self.matrix @ t
        out_fixed = np.array([residual[d].sum() for d in self.dofs])
        out_convective = np.array([
            _convected_heat(facet_basis, t[:basis.N], condition, weight) for facet_basis, condition in self.robins])
        hot = int(np.argmax(t))
        nodes = basis.doflocs[:, split.origin]
        return TemperatureField(
            temperature=t, nodes=nodes, conductor_mean=_conductor_mean(basis, self.region, t, weight, split),
            hot_spot=float(t[hot]), hot_spot_at=(float(nodes[0, hot]), float(nodes[1, hot])),
            heat_generated=float(volume_weight.assemble(basis, f=q, **weight)),
            heat_out_fixed=out_fixed, heat_out_convective=out_convective, element_dofs=split.ext)


def _convected_heat(facet_basis: FacetBasis, t: np.ndarray, condition: Convection, weight: dict) -> float:
    """int h (T - T_amb) dA (W/m or W): the heat a convective boundary carries off."""
    rise = facet_basis.interpolate(t - condition.ambient)
    return float(condition.h * volume_weight.assemble(facet_basis, f=rise, **weight))
