"""The window's eddy-current problem: assembly once, then one solve per frequency.

Planar (x-y): per-metre quantities, voltages in V/m, impedances in ohm/m,
losses in W/m.  Axisymmetric (r = x + r0, z = y): per-turn quantities, voltages
in V, impedances in ohm, losses in W.  Both share one discrete structure

    (K + j w M) a - B u = F,    -j w B^T a + G u = I

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
from skfem import Basis, ElementTriP2, FacetBasis, MeshTri2

from racfield.geometry.materials import MU0
from racfield.geometry.mesher import CORE, WindowMesh

from .forms import (applied_field_load, axisymmetric_conductivity_mass, axisymmetric_robin_mass,
                    axisymmetric_stiffness, conductivity_mass, reluctivity_stiffness, robin_mass)
from .harmonic import (BorderedFactorization, BorderedSystem, Response, StrandedResponse, respond,
                       respond_stranded)
from .litz import bundle_reluctivity, bundle_resistance
from .ordering import nested_dissection
from .reduced import ReducedModel


@dataclass
class FrequencySolution:
    """The field at one frequency for one set of conductor currents.

    ``impedance_per_m`` (Nc, Nc) ohm/m: the conductor impedance matrix (in a
    closed ideal-core window only ampere-turn-balanced combinations of it are
    meaningful, see README); ``voltage_per_m`` (Nc,) V/m; ``loss_per_m`` (Nc,)
    W/m; ``potential`` (nodes,) Wb/m at every mesh node, or None.
    """

    frequency: float
    impedance_per_m: np.ndarray
    currents: np.ndarray
    voltage_per_m: np.ndarray
    loss_per_m: np.ndarray
    potential: np.ndarray | None = None


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


class WindowProblem:
    """Assembled matrices of one meshed window.

    ``conductivity`` gives sigma (S/m) for every conductor, in mesh region
    order.  With an open boundary (or a core body) the far circle or arc
    carries a first-order asymptotic condition through the same Robin term
    nu0/R int A v: planar, dA/dn + A/R = g, exact for the net-current and
    dipole parts of the outside field, with an applied uniform field entering
    through g; axisymmetric, (1/R) d(R A)/dR = -A/R, exact for the dipole far
    field of a coil (A ~ R^-2).  A symmetry plane or the axis carries A = 0.
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
        axisymmetric = radius_offset is not None
        self.mesh = MeshTri2(window_mesh.points, window_mesh.triangles)
        self.basis = Basis(self.mesh, ElementTriP2())
        self.sigma_k = np.asarray(conductivity, dtype=float)
        region = window_mesh.region
        self.conductor_count = len(self.sigma_k)
        self.strands = list(strands) if strands else [(0, 0.0, 0.0)] * self.conductor_count
        self.stranded = np.array([n > 0 for n, _, _ in self.strands], dtype=bool)
        if self.stranded.any() and axisymmetric:
            raise ValueError("homogenized litz bundles need a planar model")
        # a stranded region carries its imposed current density: no eddy current term
        sigma_e = np.where((region >= 0) & ~self.stranded[np.maximum(region, 0)],
                           self.sigma_k[np.maximum(region, 0)], 0.0)
        nqp = self.basis.X.shape[1]
        self.sigma_qp = np.repeat(sigma_e[:, None], nqp, axis=1)
        self.region = region

        nu_e = np.where(region == CORE, 1.0 / (MU0 * core_permeability), 1.0 / MU0)
        nu_qp = np.repeat(nu_e[:, None], nqp, axis=1)
        if axisymmetric:
            r_qp = np.asarray(self.basis.global_coordinates())[0] + radius_offset
            stiffness = axisymmetric_stiffness.assemble(self.basis, nu=nu_qp, r0=radius_offset)
            mass = axisymmetric_conductivity_mass.assemble(self.basis, sigma=self.sigma_qp, r0=radius_offset)
            # E = V / (2 pi r) - j w A and dV = 2 pi r dr dz
            self.voltage_weight = 1.0 / (2.0 * np.pi * r_qp)
            self.volume_weight = 2.0 * np.pi * r_qp
        else:
            stiffness = reluctivity_stiffness.assemble(self.basis, nu=nu_qp)
            mass = conductivity_mass.assemble(self.basis, sigma=self.sigma_qp)
            self.voltage_weight = np.ones_like(self.sigma_qp)
            self.volume_weight = np.ones_like(self.sigma_qp)
        self.far_basis = None
        if window_mesh.far_radius is not None:
            xs = window_mesh.symmetry_x
            arc = self.mesh.boundary_facets()
            if xs is not None:
                # the symmetry plane carries A = 0, the rest of the boundary is the far arc
                on_plane = np.abs(self.mesh.p[0, self.mesh.facets[:, arc]] - xs).max(axis=0) < 1e-9 * window_mesh.far_radius
                arc = arc[~on_plane]
            self.far_basis = FacetBasis(self.mesh, ElementTriP2(), facets=arc)
            robin = (axisymmetric_robin_mass.assemble(self.far_basis, r0=radius_offset) if axisymmetric
                     else robin_mass.assemble(self.far_basis))
            stiffness = stiffness + robin / (MU0 * window_mesh.far_radius)
            fixed = (self.basis.get_dofs(lambda x: np.abs(x[0] - xs) < 1e-9 * window_mesh.far_radius).all()
                     if xs is not None else np.array([], dtype=int))
            free = np.setdiff1d(np.arange(self.basis.N), fixed)
        else:
            # closed window: pin A at one wall node (fixes the constant in A;
            # exact for ampere-turn-balanced currents, see README)
            pin = self.mesh.boundary_nodes()[0]
            free = np.setdiff1d(np.arange(self.basis.N), [pin])
        self.free = free

        # B[:, k] = int_k sigma phi dx (stranded: int_k phi dx / A_k), built element by element
        local = np.array([(np.asarray(phi[0]) * self.basis.dx).sum(axis=1) for phi in self.basis.basis])
        in_conductor = region >= 0
        self.areas = np.bincount(region[in_conductor], weights=self.basis.dx.sum(axis=1)[in_conductor],
                                 minlength=self.conductor_count)
        dofs = self.basis.element_dofs[:, in_conductor]
        cols = np.broadcast_to(region[in_conductor], dofs.shape)
        weight_e = np.where(self.stranded[np.maximum(region, 0)],
                            1.0 / np.maximum(self.areas[np.maximum(region, 0)], 1e-300), sigma_e)
        data = local[:, in_conductor] * weight_e[in_conductor]
        coupling = sp.coo_matrix((data.ravel(), (dofs.ravel(), cols.ravel())),
                                 shape=(self.basis.N, self.conductor_count)).tocsr()
        # unit-reluctivity stiffness of every stranded region (its nu_eff varies with frequency)
        self.region_stiffness = {
            int(k): reluctivity_stiffness.assemble(
                Basis(self.mesh, ElementTriP2(), elements=np.nonzero(region == k)[0]), nu=1.0).tocsr()
            for k in np.nonzero(self.stranded)[0]}
        # DC conductance: sigma * int_k (voltage weight) dx dy
        weighted = (self.voltage_weight * self.basis.dx).sum(axis=1)
        self.conductance = self.sigma_k * np.bincount(region[in_conductor], weights=weighted[in_conductor],
                                                      minlength=self.conductor_count)
        # the ohmic loss is integrated at the quadrature points of the solid conductors
        solid = np.nonzero(in_conductor & ~self.stranded[np.maximum(region, 0)])[0]
        self.loss_elements = solid
        # A at their quadrature points from the nodal values: a sparse (ne * nqp, nodes) map
        phi = np.array([np.asarray(b[0])[solid] for b in self.basis.basis])          # (6, ne, nqp)
        rows = np.broadcast_to(np.arange(phi.shape[1] * phi.shape[2]).reshape(phi.shape[1:]), phi.shape)
        cols = np.broadcast_to(self.basis.element_dofs[:, solid][:, :, None], phi.shape)
        self.loss_interpolation = sp.csr_matrix((phi.ravel(), (rows.ravel(), cols.ravel())),
                                                shape=(phi.shape[1] * phi.shape[2], self.basis.N))
        self.loss_voltage_weight = np.ascontiguousarray(self.voltage_weight[solid])
        self.loss_weight = (self.sigma_qp * self.volume_weight * self.basis.dx)[solid]
        self.stiffness = stiffness[free][:, free].tocsc()
        self.mass = mass[free][:, free].tocsc()
        self.coupling = coupling[free]
        self.region_stiffness_free = {k: m[free][:, free].tocsc() for k, m in self.region_stiffness.items()}

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
        return BorderedSystem(self.stiffness, self.mass, self.coupling, self.conductance, self.ordering)

    def respond_stranded(self, frequency: float) -> StrandedResponse:
        """Factorize K(omega) + j omega M, K(omega) = K0 + sum (nu_eff - nu0) K_region,
        and return the full conductor impedance matrix (solid and stranded)."""
        nu, resistance = self.bundle_laws(frequency)
        stiffness = self.stiffness
        for k, m in self.region_stiffness_free.items():
            stiffness = stiffness + (nu[k] - 1.0 / MU0) * m
        return respond_stranded(stiffness, self.mass, self.coupling, self.conductance, resistance,
                                self.stranded, 2.0 * np.pi * frequency, self.ordering)

    @property
    def unknowns(self) -> int:
        return len(self.free)

    def applied_field_rhs(self, b_applied: tuple[complex, complex]) -> np.ndarray:
        """Load vector for a uniform applied flux density (Bx, By) in T (RMS phasors)."""
        if self.far_basis is None or self.radius_offset is not None:
            raise ValueError("an applied field needs a planar open boundary")
        xc, yc = self.window_mesh.far_centre
        radius = self.window_mesh.far_radius
        bx, by = b_applied

        # real and imaginary parts assembled apart (the forms are real)
        parts = [applied_field_load.assemble(self.far_basis, bx=complex(bx).real, by=complex(by).real,
                                             xc=xc, yc=yc, radius=radius),
                 applied_field_load.assemble(self.far_basis, bx=complex(bx).imag, by=complex(by).imag,
                                             xc=xc, yc=yc, radius=radius)]
        return (parts[0] + 1j * parts[1])[self.free] / MU0

    def respond(self, frequency: float, applied_rhs: np.ndarray | None = None) -> Response:
        """Factorize at ``frequency`` (Hz) and return the all-conductor response."""
        return respond(self.bordered, 2.0 * np.pi * frequency, self.conductance, applied_rhs)

    def factorize(self, frequency: float) -> BorderedFactorization:
        """The bordered system's LU at ``frequency`` (Hz), e.g. for moments."""
        return self.bordered.factorize(2.0 * np.pi * frequency)

    def reduced_model(self) -> ReducedModel:
        """An empty reduced model of this window (solid conductors only)."""
        if self.stranded.any():
            raise ValueError("litz bundles make K frequency dependent: no reduced model")
        return ReducedModel(self.stiffness, self.mass, self.coupling, self.conductance)

    def solve(self, frequency: float, currents: np.ndarray, keep_field: bool = False,
              b_applied: tuple[complex, complex] | None = None) -> FrequencySolution:
        """Field and losses at ``frequency`` (Hz) with conductor ``currents`` (A RMS)
        (solid conductors only; see :meth:`solve_windings` for litz bundles)."""
        if self.stranded.any():
            raise ValueError("solve() takes solid conductors only; use solve_windings()")
        rhs = None if b_applied is None else self.applied_field_rhs(b_applied)
        response = self.respond(frequency, rhs)
        currents = np.asarray(currents, dtype=complex)
        potential = np.zeros(self.basis.N, dtype=complex)
        voltages, potential[self.free] = response.field(currents)
        loss = self.conductor_losses(frequency, voltages, potential)
        impedance = np.linalg.inv(response.admittance)
        return FrequencySolution(frequency, impedance, currents, voltages, loss,
                                 potential if keep_field else None)

    def conductor_losses(self, frequency: float, voltages: np.ndarray, potential: np.ndarray) -> np.ndarray:
        """Ohmic loss per metre (W/m) of every conductor for one excitation."""
        return self.loss_matrices(frequency, voltages[:, None], potential[:, None])[:, 0, 0].real

    def loss_matrices(self, frequency: float, voltages: np.ndarray, potentials: np.ndarray) -> np.ndarray:
        """Loss cross terms of ``Ne`` excitations: ``voltages`` (Nc, Ne) V/m and
        ``potentials`` (nodes, Ne) Wb/m give Q (Nc, Ne, Ne), Q_k[i, j] =
        int_k sigma conj(e_i) e_j dx (W/m per unit^2), Hermitian, for solid
        conductors (zero for homogenized bundles).  e = E / sigma = u w - j
        omega A is formed at the quadrature points (w the voltage weight,
        1/(2 pi r) in axisymmetric models), never expanded: u w and j omega A
        nearly cancel in a strongly inductive conductor."""
        omega = 2.0 * np.pi * frequency
        elements = self.loss_elements
        k = self.region[elements]
        potentials = np.asarray(potentials, dtype=complex)
        shape = self.loss_weight.shape
        u = np.asarray(voltages, dtype=complex)[k]                                     # (ne, Ne)
        count = u.shape[1]
        both = self.loss_interpolation @ np.hstack([potentials.real, potentials.imag])
        a_qp = both[:, :count] + 1j * both[:, count:]
        e = [u[:, n, None] * self.loss_voltage_weight - 1j * omega * a_qp[:, n].reshape(shape)
             for n in range(count)]
        per_element = np.empty((len(elements), count, count), dtype=complex)
        for i in range(count):
            weighted = e[i].conj() * self.loss_weight
            for j in range(i, count):
                per_element[:, i, j] = (weighted * e[j]).sum(axis=1)
                per_element[:, j, i] = per_element[:, i, j].conj()
        flat = per_element.reshape(len(elements), count * count)
        out = np.empty((self.conductor_count, count * count), dtype=complex)
        for column in range(count * count):
            out[:, column] = (np.bincount(k, flat[:, column].real, self.conductor_count)
                              + 1j * np.bincount(k, flat[:, column].imag, self.conductor_count))
        return out.reshape(self.conductor_count, count, count)

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

