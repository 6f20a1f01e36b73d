"""Weak forms of the magnetoquasistatic problem.

Planar, for A_z: -div(nu grad A) + j omega sigma A = sigma u_k in conductor k,
u_k (V/m) the applied voltage per metre of conductor k.

Axisymmetric, for the azimuthal A_phi(r, z) with r = x + r0: curl(nu curl A)
+ j omega sigma A = sigma V_k / (2 pi r) in ring k, V_k (V) the voltage per
turn; the forms carry the volume weight 2 pi r and the 1/r terms of the curl.

The conductor forms integrate over the elements of the conductors: with
piecewise-constant (P0) trial functions the coupling form gives one column
per element, summed into one column per conductor; the functionals are
evaluated element by element (``Functional.elemental``) and summed likewise.
"""

import numpy as np
from skfem import BilinearForm, Functional, LinearForm
from skfem.helpers import dot, grad


@BilinearForm
def reluctivity_stiffness(u, v, w):
    """int nu grad(u) . grad(v) dx, nu = 1/mu in m/H."""
    return w.nu * dot(grad(u), grad(v))


@BilinearForm
def conductivity_mass(u, v, w):
    """int sigma u v dx, sigma in S/m (zero in air)."""
    return w.sigma * u * v


@BilinearForm
def robin_mass(u, v, w):
    """int u v ds on the far circle, to be scaled by nu0 / R."""
    return u * v


@BilinearForm
def axisymmetric_stiffness(u, v, w):
    """int nu curl(u phi) . curl(v phi) 2 pi r dr dz, with curl(A phi) =
    (-dA/dz, dA/dr + A/r)."""
    r = w.x[0] + w.r0
    du, dv = grad(u), grad(v)
    return w.nu * (du[1] * dv[1] + (du[0] + u / r) * (dv[0] + v / r)) * 2.0 * np.pi * r


@BilinearForm
def axisymmetric_conductivity_mass(u, v, w):
    """int sigma u v 2 pi r dr dz."""
    return w.sigma * u * v * 2.0 * np.pi * (w.x[0] + w.r0)


@BilinearForm
def axisymmetric_robin_mass(u, v, w):
    """int u v 2 pi r ds on the far arc, to be scaled by nu0 / R (dipole far field)."""
    return u * v * 2.0 * np.pi * (w.x[0] + w.r0)


@BilinearForm
def conductor_coupling(u, v, w):
    """int weight u v dx with u the P0 indicator of one element: the coupling
    B = int_k weight phi dx of its conductor, weight = sigma (S/m) for a solid
    conductor, in planar and axisymmetric models alike, or 1/A_k (1/m^2) for a
    homogenized litz bundle (its imposed uniform current density per ampere)."""
    return w.weight * u * v


@Functional
def area(w):
    """int dx dy (m^2)."""
    return np.ones_like(w.x[0])


@Functional
def ring_conductance(w):
    """int dr dz / (2 pi r) (1/m): the DC conductance of a ring per unit
    conductivity, E = V / (2 pi r) in a ring of voltage V per turn."""
    return 1.0 / (2.0 * np.pi * (w.x[0] + w.r0))


@Functional
def ohmic_loss(w):
    """int sigma conj(e_i) e_j dx (W/m per unit^2) for the fields e = E / sigma
    of two excitations, ``e_i`` (nelems, nqp) and a stack ``e_j`` (Ne, nelems, nqp)."""
    return (w.sigma * np.conj(w.e_i)) * w.e_j


@Functional
def axisymmetric_ohmic_loss(w):
    """int sigma conj(e_i) e_j 2 pi r dr dz (W per unit^2), as :func:`ohmic_loss`."""
    # the per-point factors first: one product of the full (Ne, nelems, nqp) size
    return (w.sigma * 2.0 * np.pi * (w.x[0] + w.r0) * np.conj(w.e_i)) * w.e_j


# Steady heat conduction (fem/thermal.py).  ``axisymmetric`` is 0 (planar:
# volume weight 1) or 1 (volume weight 2 pi r, r = x + r0).

def _volume(w):
    """The volume weight: 1 (planar) or 2 pi (x + r0) (axisymmetric), in m."""
    return 1.0 + w.axisymmetric * (2.0 * np.pi * (w.x[0] + w.r0) - 1.0)


@BilinearForm
def thermal_stiffness(u, v, w):
    """int k grad(u) . grad(v) dV, k in W/(m K)."""
    return w.k * dot(grad(u), grad(v)) * _volume(w)


@BilinearForm
def thermal_robin(u, v, w):
    """int u v dA on a convective boundary, to be scaled by h (W/(m^2 K))."""
    return u * v * _volume(w)


@BilinearForm
def thermal_contact(u, v, w):
    """int c u v dA over a resistive interface, c = 1/R'' in W/(m^2 K)."""
    return w.c * u * v * _volume(w)


@LinearForm
def test_integral(v, w):
    """int v dV: each basis function's integral (weights of mean values)."""
    return v * _volume(w)


@LinearForm
def heat_load(v, w):
    """int q v dV, q in W/m^3."""
    return w.q * v * _volume(w)


@Functional
def volume_weight(w):
    """int f dV (int dV without ``f``): a weighted integral, volume or area."""
    f = w["f"] if "f" in w else 1.0
    return f * _volume(w) * np.ones_like(w.x[0])
