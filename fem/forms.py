"""Weak forms of the magnetoquasistatic problem for the vector potential A_z.

Planar: -div(nu grad A) + j omega sigma A = sigma u_k in conductor k, where
u_k (V/m) is the applied voltage per metre of conductor k.
"""

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
