"""Planar (x-y) eddy-current problem: assembly once, then one solve per frequency.

Per-metre quantities: voltages in V/m, impedances in ohm/m, losses in W/m.
Currents are RMS phasors (A), so ``|J|^2 / sigma`` integrates to average loss.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from skfem import Basis, ElementTriP2, FacetBasis, Functional, MeshTri2

from geometry.materials import MU0
from geometry.mesher import AIR, WindowMesh

from .forms import applied_field_load, conductivity_mass, reluctivity_stiffness, robin_mass
from .harmonic import Response, respond


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


@Functional
def _ohmic_density(w):
    """sigma |u - j w A|^2 integrated over each element (W/m)."""
    re = w.u_re + w.omega * w.a_im
    im = w.u_im - w.omega * w.a_re
    return w.sigma * (re * re + im * im)


class PlanarProblem:
    """Assembled matrices of one meshed window.

    ``conductivity`` gives sigma (S/m) for every conductor, in mesh region
    order.  With an open boundary the far circle carries the first-order
    asymptotic condition dA/dn + A/R = g (exact for the net-current and dipole
    parts of the outside field), and an applied uniform field enters through g.
    """

    def __init__(self, window_mesh: WindowMesh, conductivity: np.ndarray) -> None:
        self.window_mesh = window_mesh
        self.mesh = MeshTri2(window_mesh.points, window_mesh.triangles)
        self.basis = Basis(self.mesh, ElementTriP2())
        self.sigma_k = np.asarray(conductivity, dtype=float)
        region = window_mesh.region
        self.conductor_count = len(self.sigma_k)
        sigma_e = np.where(region >= 0, self.sigma_k[np.maximum(region, 0)], 0.0)
        nqp = self.basis.X.shape[1]
        self.sigma_qp = np.repeat(sigma_e[:, None], nqp, axis=1)
        self.region = region

        stiffness = reluctivity_stiffness.assemble(self.basis, nu=1.0 / MU0)
        mass = conductivity_mass.assemble(self.basis, sigma=self.sigma_qp)
        self.far_basis = None
        if window_mesh.far_radius is not None:
            self.far_basis = FacetBasis(self.mesh, ElementTriP2())
            stiffness = stiffness + robin_mass.assemble(self.far_basis) / (MU0 * window_mesh.far_radius)
            free = np.arange(self.basis.N)
        else:
            # closed window: pin A at one wall node (fixes the constant in A;
            # exact for ampere-turn-balanced currents, see README)
            pin = self.mesh.boundary_nodes()[0]
            free = np.setdiff1d(np.arange(self.basis.N), [pin])
        self.free = free

        # B[:, k] = int_{conductor k} sigma phi dx, built element by element
        local = np.array([(np.asarray(phi[0]) * self.basis.dx).sum(axis=1) for phi in self.basis.basis])
        in_conductor = region >= 0
        dofs = self.basis.element_dofs[:, in_conductor]
        cols = np.broadcast_to(region[in_conductor], dofs.shape)
        data = local[:, in_conductor] * sigma_e[in_conductor]
        coupling = sp.coo_matrix((data.ravel(), (dofs.ravel(), cols.ravel())),
                                 shape=(self.basis.N, self.conductor_count)).tocsr()
        self.areas = np.bincount(region[in_conductor], weights=self.basis.dx.sum(axis=1)[in_conductor],
                                 minlength=self.conductor_count)
        self.conductance = self.sigma_k * self.areas
        self.stiffness = stiffness[free][:, free].tocsc()
        self.mass = mass[free][:, free].tocsc()
        self.coupling = coupling[free]

    @property
    def unknowns(self) -> int:
        return len(self.free)

    def applied_field_rhs(self, b_applied: tuple[complex, complex]) -> np.ndarray:
        """Load vector for a uniform applied flux density (Bx, By) in T (RMS phasors)."""
        if self.far_basis is None:
            raise ValueError("an applied field needs an open boundary")
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
        return respond(self.stiffness, self.mass, self.coupling, self.conductance,
                       2.0 * np.pi * frequency, applied_rhs)

    def solve(self, frequency: float, currents: np.ndarray, keep_field: bool = False,
              b_applied: tuple[complex, complex] | None = None) -> FrequencySolution:
        """Field and losses at ``frequency`` (Hz) with conductor ``currents`` (A RMS)."""
        rhs = None if b_applied is None else self.applied_field_rhs(b_applied)
        response = self.respond(frequency, rhs)
        currents = np.asarray(currents, dtype=complex)
        voltages = response.voltages(currents)
        potential = np.zeros(self.basis.N, dtype=complex)
        potential[self.free] = response.potential(voltages)
        loss = self.conductor_losses(frequency, voltages, potential)
        impedance = np.linalg.inv(response.admittance)
        return FrequencySolution(frequency, impedance, currents, voltages, loss,
                                 potential if keep_field else None)

    def conductor_losses(self, frequency: float, voltages: np.ndarray, potential: np.ndarray) -> np.ndarray:
        """Ohmic loss per metre (W/m) of every conductor."""
        omega = 2.0 * np.pi * frequency
        u_e = np.where(self.region >= 0, voltages[np.maximum(self.region, 0)], 0.0)
        nqp = self.basis.X.shape[1]
        u_qp = np.repeat(u_e[:, None], nqp, axis=1)
        per_element = _ohmic_density.elemental(
            self.basis, sigma=self.sigma_qp, omega=omega, u_re=u_qp.real, u_im=u_qp.imag,
            a_re=self.basis.interpolate(potential.real), a_im=self.basis.interpolate(potential.imag))
        mask = self.region >= 0
        return np.bincount(self.region[mask], weights=per_element[mask], minlength=self.conductor_count)

    def current_density(self, frequency: float, voltages: np.ndarray, potential: np.ndarray) -> np.ndarray:
        """Current density J = sigma (u - j w A) (A/m^2 RMS phasor) at the mesh nodes
        (zero in air; a node shared by two conductors takes the last one's value)."""
        omega = 2.0 * np.pi * frequency
        j = np.zeros(self.basis.N, dtype=complex)
        mask = self.region >= 0
        dofs = self.basis.element_dofs[:, mask]
        k = self.region[mask]
        j[dofs] = self.sigma_k[k] * (voltages[k] - 1j * omega * potential[dofs])
        return j
