"""Weak forms of the magnetoquasistatic problem.

Planar, for A_z: -div(nu grad A) + j omega sigma A = sigma u_k in conductor k,
u_k (V/m) the applied voltage per metre of conductor k.

Axisymmetric, for the azimuthal A_phi(r, z) with r = x + r0: curl(nu curl A)
+ j omega sigma A = sigma V_k / (2 pi r) in ring k, V_k (V) the voltage per
turn; the forms carry the volume weight 2 pi r and the 1/r terms of the curl.
"""

import numpy as np
from skfem import BilinearForm, LinearForm
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


@LinearForm
def applied_field_load(v, w):
    """int g v ds on the far circle (to be scaled by nu0) for a uniform applied
    field: g = dA_ext/dn + A_ext/R = 2 A_ext/R with A_ext = Bx (y - yc) - By (x - xc)."""
    a_ext = w.bx * (w.x[1] - w.yc) - w.by * (w.x[0] - w.xc)
    return 2.0 * a_ext / w.radius * v


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
