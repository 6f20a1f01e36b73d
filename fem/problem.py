"""The window's eddy-current problem: assembly once, then one solve per frequency.

Planar (x-y): per-metre quantities, voltages in V/m, impedances in ohm/m,
losses in W/m.  Axisymmetric (r = x + r0, z = y): per-turn quantities, voltages
in V, impedances in ohm, losses in W.  Both share one discrete structure

    (K + j w M) a - B u = 0,    -j w B^T a + G u = I

with B[:, k] = int_k sigma phi dx dy in both cases, and G = diag(sigma S_k)
(planar) or diag(sigma int_k dr dz / (2 pi r)) (axisymmetric, the ring's DC
conductance).  Currents are RMS phasors (A), so |J|^2 / sigma integrates to
average loss.  The ``_per_m`` names below read "per turn" in an axisymmetric model.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
import scipy.sparse as sp
from skfem import Basis, ElementTriP0, ElementTriP2, FacetBasis, MeshTri2

from racfield.geometry.materials import MU0
from racfield.geometry.mesher import CORE, WindowMesh

from .forms import (area, axisymmetric_conductivity_mass, axisymmetric_ohmic_loss, axisymmetric_robin_mass,
                    axisymmetric_stiffness, conductivity_mass, conductor_coupling, ohmic_loss,
                    reluctivity_stiffness, ring_conductance, robin_mass)
from .harmonic import (BorderedFactorization, BorderedSystem, Response, StrandedResponse, respond,
                       respond_stranded, stiffness_scale)
from .litz import bundle_reluctivity, bundle_resistance
from .ordering import nested_dissection
from .reduced import ReducedModel


@dataclass
class WindingSolution:
    """One frequency, with the conductors connected into windings.

    ``connection`` (Nc, Nw) maps winding currents to conductor currents.
    ``impedance_per_m``/``inductance_per_m`` (Nc, Nc) ohm/m and H/m for the
    conductors; ``loss_matrix_per_m`` (Nc, Nw, Nw) W/m per A^2: the loss of
    conductor k for winding currents i is Re(i^H Q_k i) (see README for the
    ideal-core window, where only ampere-turn-balanced i are physical);
    ``loss_per_m`` (Nc,) W/m at ``winding_currents``; ``potential`` (nodes,)
    Wb/m and ``voltage_per_m`` (Nc,) V/m at those currents.  ``residual``:
    the largest backward error of the full solves behind it
    (:func:`fem.harmonic.backward_error`; None for a reduced-model response).
    """

    frequency: float
    impedance_per_m: np.ndarray
    inductance_per_m: np.ndarray
    loss_matrix_per_m: np.ndarray
    loss_per_m: np.ndarray
    voltage_per_m: np.ndarray
    potential: np.ndarray | None = None
    currents: np.ndarray | None = None     #: the column currents used (A RMS)
    residual: float | None = None


def quadrature_interpolation(basis: Basis) -> sp.csr_matrix:
    """The sparse (nelems * nqp, N) matrix P of ``basis.interpolate``: (P a)[e
    nqp + q] = sum_i a[dof_i(e)] phi_i(x_eq), the values of the nodal field a at
    the quadrature points of every element of ``basis``, for many fields in
    one product (``interpolate`` takes one field a call and forms its gradient
    too: four to eight times slower for the loss matrices)."""
    phi = np.array([np.asarray(b[0]) for b in basis.basis])                  # (Nbfun, nelems, nqp)
    rows = np.broadcast_to(np.arange(phi[0].size).reshape(phi.shape[1:]), phi.shape)
    cols = np.broadcast_to(basis.element_dofs[:, :, None], phi.shape)
    return sp.csr_matrix((phi.ravel(), (rows.ravel(), cols.ravel())), shape=(phi[0].size, basis.N))


class WindowProblem:
    """Assembled matrices of one meshed window.

    ``conductivity`` gives sigma (S/m) for every conductor, in mesh region
    order.  With an open boundary (or a core body) the far circle or arc
    carries a first-order asymptotic condition through the Robin term nu0/R
    int A v: planar, dA/dn + A/R = 0, exact for the net-current and dipole
    parts of the outside field; axisymmetric, (1/R) d(R A)/dR = -A/R, exact
    for the dipole far field of a coil (A ~ R^-2).  A symmetry plane or the
    axis carries A = 0.  A magnetic wall (``WindowMesh.wall_x``, mu ->
    infinity) carries the natural condition dA/dn = 0: by the method of
    images the half disk is then the mirror-symmetric full-disk problem with
    every current doubled by its image, so the same far condition (exact for
    that problem's net-current and dipole parts) holds on the half arc.
    """

    def __init__(self, window_mesh: WindowMesh, conductivity: np.ndarray,
                 core_permeability: float = 1.0, radius_offset: float | None = None,
                 strands: list[tuple[int, float, float]] | None = None) -> None:
        """``radius_offset``: None for planar; for axisymmetric the radius
        r0 (m) of x = 0, so that r = x + r0.  ``strands``: per conductor
        (strand count, strand diameter m, bundle diameter m) of a homogenized
        litz bundle, or (0, 0, 0) for a solid conductor (planar only)."""
        self.window_mesh = window_mesh
        self.radius_offset = radius_offset
        self.mesh = MeshTri2(window_mesh.points, window_mesh.triangles)
        self.basis = Basis(self.mesh, ElementTriP2())
        self.region = window_mesh.region
        self.sigma_k = np.asarray(conductivity, dtype=float)
        self.conductor_count = len(self.sigma_k)
        self.strands = list(strands) if strands else [(0, 0.0, 0.0)] * self.conductor_count
        self.stranded = np.array([n > 0 for n, _, _ in self.strands], dtype=bool)
        if self.stranded.any() and radius_offset is not None:
            raise ValueError("homogenized litz bundles need a planar model")
        # sigma (S/m) per element; a stranded region carries its imposed
        # current density: no eddy current term
        conductor = np.maximum(self.region, 0)
        self.sigma_e = np.where((self.region >= 0) & ~self.stranded[conductor], self.sigma_k[conductor], 0.0)
        self.far_basis = self._far_basis()
        self.free = self._free_dofs()
        stiffness, mass = self._field_matrices(core_permeability)
        coupling = self._conductor_integrals()
        # unit-reluctivity stiffness of every stranded region (its nu_eff varies with frequency)
        self.region_stiffness = {
            int(k): reluctivity_stiffness.assemble(self.basis.with_elements(np.nonzero(self.region == k)[0]),
                                                   nu=1.0).tocsr()
            for k in np.nonzero(self.stranded)[0]}
        self._loss_quadrature()
        free = self.free
        self.stiffness = stiffness[free][:, free].tocsc()
        self.mass = mass[free][:, free].tocsc()
        self.coupling = coupling[free]
        self.region_stiffness_free = {k: m[free][:, free].tocsc() for k, m in self.region_stiffness.items()}
        self.scale = stiffness_scale(self.stiffness)   #: s (H/m), see fem.harmonic

    def _at_quadrature(self, per_element: np.ndarray) -> np.ndarray:
        """Per-element values (ne,) repeated at the quadrature points, (ne, nqp)."""
        return np.repeat(per_element[:, None], self.basis.X.shape[1], axis=1)

    def _far_basis(self) -> FacetBasis | None:
        """The facets of the far circle or arc (None in a closed window); the
        straight edge of a half disk (a symmetry plane x = symmetry_x, A = 0,
        or a magnetic wall x = wall_x, dA/dn = 0) is not part of it."""
        window_mesh = self.window_mesh
        if window_mesh.far_radius is None:
            return None
        arc = self.mesh.boundary_facets()
        edge = window_mesh.symmetry_x if window_mesh.symmetry_x is not None else window_mesh.wall_x
        if edge is not None:
            gap = np.abs(self.mesh.p[0, self.mesh.facets[:, arc]] - edge).max(axis=0)
            arc = arc[gap >= 1e-9 * window_mesh.far_radius]
        return FacetBasis(self.mesh, ElementTriP2(), facets=arc)

    def _free_dofs(self) -> np.ndarray:
        """The unknowns: all DOFs but those of the symmetry plane (A = 0) or,
        in a closed window, one wall node (pinning A fixes its constant; exact
        for ampere-turn-balanced currents, see README).  A magnetic wall
        (``wall_x``) keeps its DOFs: dA/dn = 0 is the natural condition."""
        window_mesh = self.window_mesh
        xs = window_mesh.symmetry_x
        if window_mesh.far_radius is None:
            fixed = self.mesh.boundary_nodes()[:1]
        elif xs is not None:
            fixed = self.basis.get_dofs(lambda x: np.abs(x[0] - xs) < 1e-9 * window_mesh.far_radius).all()
        else:
            fixed = np.array([], dtype=int)
        return np.setdiff1d(np.arange(self.basis.N), fixed)

    def _field_matrices(self, core_permeability: float) -> tuple[sp.spmatrix, sp.spmatrix]:
        """Stiffness K (with the far boundary's Robin term) and conductivity
        mass M on all DOFs."""
        nu = self._at_quadrature(np.where(self.region == CORE, 1.0 / (MU0 * core_permeability), 1.0 / MU0))
        sigma = self._at_quadrature(self.sigma_e)
        r0 = self.radius_offset
        if r0 is None:
            stiffness = reluctivity_stiffness.assemble(self.basis, nu=nu)
            mass = conductivity_mass.assemble(self.basis, sigma=sigma)
        else:
            stiffness = axisymmetric_stiffness.assemble(self.basis, nu=nu, r0=r0)
            mass = axisymmetric_conductivity_mass.assemble(self.basis, sigma=sigma, r0=r0)
        if self.far_basis is not None:
            robin = (robin_mass.assemble(self.far_basis) if r0 is None
                     else axisymmetric_robin_mass.assemble(self.far_basis, r0=r0))
            stiffness = stiffness + robin / (MU0 * self.window_mesh.far_radius)
        return stiffness, mass

    def _conductor_integrals(self) -> sp.spmatrix:
        """Set ``areas`` (Nc,) m^2 and the DC conductance ``conductance`` (Nc,)
        S*m (axisymmetric: S), sigma int_k dx dy or sigma int_k dr dz / (2 pi r);
        return the coupling B (nodes, Nc), int_k sigma phi dx (stranded:
        int_k phi dx / A_k)."""
        elements = np.nonzero(self.region >= 0)[0]
        conductor = self.region[elements]
        basis = self.basis.with_elements(elements)
        count = self.conductor_count
        self.areas = np.bincount(conductor, area.elemental(basis), count)
        per_sigma = (self.areas if self.radius_offset is None
                     else np.bincount(conductor, ring_conductance.elemental(basis, r0=self.radius_offset), count))
        self.conductance = self.sigma_k * per_sigma
        weight = np.where(self.stranded[conductor], 1.0 / np.maximum(self.areas[conductor], 1e-300),
                          self.sigma_e[elements])
        # one column per element (P0 indicator), summed into its conductor's column
        per_element = conductor_coupling.assemble(basis.with_element(ElementTriP0()), basis,
                                                  weight=self._at_quadrature(weight))
        indicator = sp.csr_matrix((np.ones(len(elements)), (elements, conductor)),
                                  shape=(self.mesh.nelements, count))
        return (per_element @ indicator).tocsr()

    def _loss_quadrature(self) -> None:
        """The solid conductors' elements, where the ohmic loss is integrated
        (``loss_basis``), with their conductor, conductivity (S/m) and voltage
        weight w (E = sigma (u w - j omega A): 1, or 1/(2 pi r) in 1/m) at the
        quadrature points."""
        conductor = np.maximum(self.region, 0)
        solid = np.nonzero((self.region >= 0) & ~self.stranded[conductor])[0]
        self.loss_basis = self.basis.with_elements(solid)
        self.loss_conductor = self.region[solid]
        self.loss_sigma = self._at_quadrature(self.sigma_e[solid])
        self.loss_interpolation = quadrature_interpolation(self.loss_basis)
        self.loss_voltage_weight = np.ones_like(self.loss_sigma)
        if self.radius_offset is not None:
            r = np.asarray(self.loss_basis.global_coordinates())[0] + self.radius_offset
            self.loss_voltage_weight = 1.0 / (2.0 * np.pi * r)

    def bundle_laws(self, frequency: float) -> tuple[np.ndarray, np.ndarray]:
        """(nu_eff m/H, skin resistance ohm/m) of every conductor at ``frequency``
        (solid conductors: nu0 and 0)."""
        omega = 2.0 * np.pi * frequency
        nu = np.full(self.conductor_count, 1.0 / MU0, dtype=complex)
        resistance = np.zeros(self.conductor_count)
        for k in np.nonzero(self.stranded)[0]:
            n, d, bundle = self.strands[k]
            rho = 1.0 / self.sigma_k[k]
            nu[k] = bundle_reluctivity(n, d, bundle, rho, omega)
            resistance[k] = bundle_resistance(n, d, rho, omega)
        return nu, resistance

    @cached_property
    def ordering(self) -> np.ndarray:
        """Nested dissection ordering of K + j w M on the free nodes (one per mesh)."""
        return nested_dissection(self.stiffness, self.mass)

    @cached_property
    def bordered(self) -> BorderedSystem:
        """The bordered matrix in its fill-reducing order (one per mesh)."""
        return BorderedSystem(self.stiffness, self.mass, self.coupling, self.conductance, self.scale,
                              self.ordering)

    def respond_stranded(self, frequency: float) -> StrandedResponse:
        """Factorize K(omega) + j omega M, K(omega) = K0 + sum (nu_eff - nu0) K_region,
        and return the full conductor impedance matrix (solid and stranded)."""
        nu, resistance = self.bundle_laws(frequency)
        stiffness = self.stiffness
        for k, m in self.region_stiffness_free.items():
            stiffness = stiffness + (nu[k] - 1.0 / MU0) * m
        return respond_stranded(stiffness, self.mass, self.coupling, self.conductance, resistance,
                                self.stranded, 2.0 * np.pi * frequency, self.scale, self.ordering)

    @property
    def unknowns(self) -> int:
        return len(self.free)

    def respond(self, frequency: float) -> Response:
        """Factorize at ``frequency`` (Hz) and return the all-conductor response."""
        return respond(self.bordered, 2.0 * np.pi * frequency, self.conductance)

    def factorize(self, frequency: float) -> BorderedFactorization:
        """The bordered system's LU at ``frequency`` (Hz), e.g. for moments."""
        return self.bordered.factorize(2.0 * np.pi * frequency)

    def reduced_model(self) -> ReducedModel:
        """An empty reduced model of this window (solid conductors only)."""
        if self.stranded.any():
            raise ValueError("litz bundles make K frequency dependent: no reduced model")
        return ReducedModel(self.stiffness, self.mass, self.coupling, self.conductance, self.scale,
                            self.reduced_loss_factors)

    def loss_matrices(self, frequency: float, voltages: np.ndarray, potentials: np.ndarray) -> np.ndarray:
        """Loss cross terms of ``Ne`` excitations: ``voltages`` (Nc, Ne) V/m and
        ``potentials`` (nodes, Ne) Wb/m give Q (Nc, Ne, Ne), Q_k[i, j] =
        int_k sigma conj(e_i) e_j dx (W/m per unit^2), Hermitian, for solid
        conductors (zero for homogenized bundles).  e = E / sigma = u w - j
        omega A is formed at the quadrature points (w the voltage weight,
        1/(2 pi r) in axisymmetric models), never expanded: u w and j omega A
        nearly cancel in a strongly inductive conductor."""
        omega = 2.0 * np.pi * frequency
        basis = self.loss_basis
        u = np.asarray(voltages, dtype=complex)[self.loss_conductor]                    # (ne, Ne)
        potentials = np.asarray(potentials, dtype=complex)
        count = u.shape[1]
        both = self.loss_interpolation @ np.hstack([potentials.real, potentials.imag])
        a_qp = (both[:, :count] + 1j * both[:, count:]).T.reshape((count,) + self.loss_sigma.shape)
        e = u.T[:, :, None] * self.loss_voltage_weight - 1j * omega * a_qp                # (Ne, ne, nqp)
        loss, r0 = ((ohmic_loss, {}) if self.radius_offset is None
                    else (axisymmetric_ohmic_loss, {"r0": self.radius_offset}))
        per_element = np.empty((basis.nelems, count, count), dtype=complex)
        for i in range(count):
            # the upper triangle, the lower one by symmetry (Q is Hermitian)
            per_element[:, i, i:] = loss.elemental(basis, sigma=self.loss_sigma, e_i=e[i], e_j=e[i:], **r0).T
            per_element[:, i + 1:, i] = per_element[:, i, i + 1:].conj()
        flat = per_element.reshape(basis.nelems, count * count)
        out = np.empty((self.conductor_count, count * count), dtype=complex)
        for column in range(count * count):
            out[:, column] = (np.bincount(self.loss_conductor, flat[:, column].real, self.conductor_count)
                              + 1j * np.bincount(self.loss_conductor, flat[:, column].imag, self.conductor_count))
        return out.reshape(self.conductor_count, count, count)

    def reduced_loss_factors(self, basis: np.ndarray) -> np.ndarray:
        """Loss factors of a reduced basis V (free nodes, r), once per basis:
        R (Nc, r + 1, r + 1) real, such that a field e = u w - j omega V y in
        conductor k (u its voltage V/m, y (r,) the reduced coordinates) loses
        |R_k [u, -j omega y]|^2 W/m (W axisymmetric), the integral of
        sigma |e|^2 (the upper triangle of the QR of the quadrature-weighted
        columns [w, V] at the conductor's quadrature points).  A reduced
        frequency point then costs O(Nc r^2) per excitation and no
        integration; e is formed as a combination at the points, as in
        :meth:`loss_matrices`, not expanded into u^2 and A^2 terms."""
        weight = self.loss_sigma * self.loss_basis.dx
        if self.radius_offset is not None:
            weight = weight * (2.0 * np.pi * (np.asarray(self.loss_basis.global_coordinates())[0]
                                              + self.radius_offset))
        root = np.sqrt(weight).ravel()
        voltage = (np.sqrt(weight) * self.loss_voltage_weight).ravel()
        nqp = self.loss_sigma.shape[1]
        point_conductor = np.repeat(self.loss_conductor, nqp)
        order = np.argsort(point_conductor, kind="stable")
        bounds = np.searchsorted(point_conductor[order], np.arange(self.conductor_count + 1))
        interpolation = self.loss_interpolation[:, self.free].tocsr()
        r = basis.shape[1]
        out = np.zeros((self.conductor_count, r + 1, r + 1))
        for k in range(self.conductor_count):
            rows = order[bounds[k]:bounds[k + 1]]
            if rows.size == 0:
                continue
            columns = np.empty((rows.size, r + 1))
            columns[:, 0] = voltage[rows]
            columns[:, 1:] = root[rows, None] * (interpolation[rows] @ basis)
            factor = np.linalg.qr(columns, mode="r")
            out[k, :factor.shape[0]] = factor
        return out

    def loss_density(self, frequency: float, voltages: np.ndarray, potential: np.ndarray) -> np.ndarray:
        """Time-averaged ohmic loss density sigma |e|^2 in W/m^3 at the quadrature
        points of every element (elements, points): the heat source of a thermal
        solution (:mod:`racfield.fem.thermal`) for conductor ``voltages`` (Nc,)
        V/m and ``potential`` (nodes,) Wb/m of one solved field (RMS phasors);
        zero in air, the core and homogenized bundles."""
        omega = 2.0 * np.pi * frequency
        a_qp = self.loss_interpolation @ np.asarray(potential, dtype=complex)
        u = np.asarray(voltages, dtype=complex)[self.loss_conductor][:, None]
        e = u * self.loss_voltage_weight - 1j * omega * a_qp.reshape(self.loss_sigma.shape)
        out = np.zeros((self.basis.nelems, self.loss_sigma.shape[1]))
        out[self.loss_basis.tind] = self.loss_sigma * np.abs(e) ** 2
        return out

    def solve_windings(self, frequency: float, connection: np.ndarray, winding_currents,
                       keep_field: bool = False, response: Response | None = None) -> WindingSolution:
        """One factorization at ``frequency`` (Hz) gives the conductor impedance
        matrix, the loss matrices of unit currents in the columns of
        ``connection``, and the field at ``winding_currents`` (A RMS phasors,
        one per column; or a function of the columns' impedance matrix
        E^T Z E that returns them, for currents the field shares out).
        ``response``: a ready response at ``frequency`` (e.g. from
        :meth:`reduced_model`) instead of a factorization."""
        if self.stranded.any():
            return self._solve_windings_stranded(frequency, connection, winding_currents, keep_field)
        if response is None:
            response = self.respond(frequency)
        omega = response.omega
        impedance = np.linalg.inv(response.admittance)
        if omega > 0.0:
            inductance = impedance.imag / omega
        else:
            g_inv = 1.0 / self.conductance
            inductance = (g_inv[:, None] * response.flux_coupling.real) * g_inv[None, :]
        unit_potentials = np.zeros((self.basis.N, connection.shape[1]), dtype=complex)
        reduced_loss = getattr(response, "loss_matrices", None)
        if reduced_loss is not None:
            # a reduced point: the loss from the reduced factors, the field only when kept
            unit_voltages = response.voltages(connection)
            q = reduced_loss(unit_voltages)
            if keep_field:
                unit_potentials[self.free] = response.potential(unit_voltages)
        else:
            unit_voltages, unit_potentials[self.free] = response.field(connection)
            q = self.loss_matrices(frequency, unit_voltages, unit_potentials)
        if callable(winding_currents):
            winding_currents = winding_currents(connection.T @ impedance @ connection)
        i = np.asarray(winding_currents, dtype=complex)
        loss = np.einsum("i,kij,j->k", i.conj(), q, i).real
        potential = unit_potentials @ i if keep_field else None
        return WindingSolution(frequency, impedance, inductance, q, loss, unit_voltages @ i, potential, i,
                               response.residual)

    def _solve_windings_stranded(self, frequency: float, connection: np.ndarray, winding_currents,
                                 keep_field: bool) -> WindingSolution:
        """:meth:`solve_windings` with homogenized (stranded) conductors.  Their
        loss matrices are R_t conj(x_i) x_j + omega Im(nu_eff) int_t grad(a_i)* . grad(a_j)."""
        response = self.respond_stranded(frequency)
        omega = response.omega
        impedance = response.impedance
        unit_voltages = impedance @ connection
        unit_potentials = np.zeros((self.basis.N, connection.shape[1]), dtype=complex)
        unit_potentials[self.free] = response.potential_per_current @ connection
        q = self.loss_matrices(frequency, unit_voltages, unit_potentials)
        nu, resistance = self.bundle_laws(frequency)
        for k, m in self.region_stiffness.items():
            x = connection[k]
            q[k] = resistance[k] * np.outer(x.conj(), x) + omega * nu[k].imag * (
                unit_potentials.conj().T @ (m @ unit_potentials))
        if callable(winding_currents):
            winding_currents = winding_currents(connection.T @ impedance @ connection)
        i = np.asarray(winding_currents, dtype=complex)
        loss = np.einsum("i,kij,j->k", i.conj(), q, i).real
        potential = unit_potentials @ i if keep_field else None
        return WindingSolution(frequency, impedance, response.inductance, q, loss, unit_voltages @ i,
                               potential, i, response.residual)

    def current_density(self, frequency: float, voltages: np.ndarray, potential: np.ndarray,
                        currents: np.ndarray | None = None) -> np.ndarray:
        """Current density J = sigma (u - j w A) (A/m^2 RMS phasor) at the mesh nodes
        (zero in air; a node shared by two conductors takes the last one's value);
        a homogenized litz bundle carries its uniform density ``currents`` / area."""
        omega = 2.0 * np.pi * frequency
        j = np.zeros(self.basis.N, dtype=complex)
        mask = self.region >= 0
        dofs = self.basis.element_dofs[:, mask]
        k = self.region[mask]
        weight = 1.0
        if self.radius_offset is not None:
            weight = 1.0 / (2.0 * np.pi * (self.basis.doflocs[0, dofs] + self.radius_offset))
        j[dofs] = self.sigma_k[k] * (voltages[k] * weight - 1j * omega * potential[dofs])
        if currents is not None and self.stranded.any():
            bundle = self.stranded[k]
            j[dofs[:, bundle]] = (np.asarray(currents)[k[bundle]] / self.areas[k[bundle]])[None, :]
        return j

