"""Homogenized litz bundle: the material laws of a round bundle of n strands.

A bundle of ideally transposed strands carries a uniform current density
I / A_bundle (no net eddy current), so its losses split into (Ferreira's
orthogonality of skin and proximity loss):

* skin effect: n strands of DC resistance rho / (pi d^2 / 4) each, times the
  isolated round wire's skin factor Re(ka J0(ka) / (2 J1(ka))), a = d/2;
* proximity effect: the strands' eddy currents in the local field, carried by
  a complex reluctivity nu_eff = 1 / mu_eff of the bundle region, loss
  density omega Im(nu_eff) |B|^2 (RMS phasors).

mu_eff is Lord Rayleigh's mixing formula ("On the influence of obstacles
arranged in rectangular order upon the properties of a medium", Phil. Mag.,
1892; the Maxwell Garnett form) for a 2-D array of cylinders filling the
fraction eta of the bundle:

    mu_eff / mu0 = (1 + eta beta) / (1 - eta beta),  beta = (mu_c - mu0) / (mu_c + mu0),

with mu_c the equivalent permeability of one conducting strand in a transverse
field.  Inside the strand (exp(+j omega t), k = (1 - j)/delta, k^2 = -j omega
mu0 sigma) the potential of a transverse field is A = C J1(kr) sin(theta);
outside, A = (B0 r + D / r) sin(theta).  Matching A and dA/dr at r = a fixes D
through the ratio (dA/dr) / (A / r) just inside, ka J1'(ka) / J1(ka).  A
homogeneous cylinder of permeability mu_c (inside A = E r sin(theta)) gives
the same outside field when that ratio, seen through the continuity of
H_theta = (1/mu) dA/dr, equals mu0 / mu_c.  With x J1'(x) = x J0(x) - J1(x):

    mu_c / mu0 = J1(ka) / (ka J0(ka) - J1(ka)),

which tends to 1 + (ka)^2 / 4 = 1 - j a^2 / (2 delta^2) at low frequency
(J1(x) = x/2 - x^3/16, x J0(x) - J1(x) = x/2 - 3 x^3/16): a small lossy part
mu'' = mu0 a^2 / (2 delta^2), which gives the classic low-frequency proximity
loss of a round wire.
"""

from __future__ import annotations

import numpy as np
from scipy.special import jv

from racfield.geometry.materials import MU0


def _ka(strand_diameter: float, resistivity: float, omega: float) -> complex:
    delta = np.sqrt(2.0 * resistivity / (omega * MU0))
    return (1.0 - 1.0j) / delta * strand_diameter / 2.0


def skin_factor(strand_diameter: float, resistivity: float, omega: float) -> float:
    """Rac/Rdc of an isolated round strand, Re(ka J0(ka) / (2 J1(ka)))."""
    if omega <= 0.0:
        return 1.0
    x = _ka(strand_diameter, resistivity, omega)
    if abs(x) < 1e-3:
        return 1.0
    return float((x * jv(0, x) / (2.0 * jv(1, x))).real)


def strand_permeability(strand_diameter: float, resistivity: float, omega: float) -> complex:
    """mu_c / mu0 of one conducting strand in a transverse field (see the module)."""
    if omega <= 0.0:
        return 1.0 + 0.0j
    x = _ka(strand_diameter, resistivity, omega)
    if abs(x) < 1e-3:
        return complex(1.0 + x * x / 4.0)
    return complex(jv(1, x) / (x * jv(0, x) - jv(1, x)))


def rayleigh_permeability(mu_c: complex, packing: float) -> complex:
    """mu_eff / mu0 of cylinders of relative permeability ``mu_c`` filling
    ``packing`` of the plane (Rayleigh 1892, Maxwell Garnett form)."""
    beta = (mu_c - 1.0) / (mu_c + 1.0)
    return (1.0 + packing * beta) / (1.0 - packing * beta)


def bundle_reluctivity(strands: int, strand_diameter: float, bundle_diameter: float,
                       resistivity: float, omega: float) -> complex:
    """nu_eff (m/H) of a homogenized litz bundle at ``omega`` (rad/s)."""
    packing = strands * strand_diameter ** 2 / bundle_diameter ** 2
    mu = rayleigh_permeability(strand_permeability(strand_diameter, resistivity, omega), packing)
    return 1.0 / (MU0 * mu)


def bundle_resistance(strands: int, strand_diameter: float, resistivity: float, omega: float) -> float:
    """Skin-effect resistance per metre (ohm/m) of the bundle: n strands in
    parallel times the isolated strand's skin factor."""
    rdc = resistivity / (strands * np.pi * strand_diameter ** 2 / 4.0)
    return rdc * skin_factor(strand_diameter, resistivity, omega)
