"""Conductor materials: resistivity against temperature, and skin depth.

Copper: 1.7241e-8 ohm*m at 20 degC and 0.00393 /K (IEC 60028, the
International Annealed Copper Standard).  Aluminium: 2.8264e-8 ohm*m at
20 degC and 0.00403 /K (IEC 60889, hard-drawn aluminium wire).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

MU0 = 4e-7 * math.pi
"""Permeability of free space in H/m (the classical value; the SI 2019
value differs by 1e-10 relative, far below any tolerance here)."""


@dataclass(frozen=True)
class Material:
    """A conductor metal: resistivity at 20 degC (ohm*m) and its linear
    temperature coefficient (1/K)."""

    name: str
    rho20: float
    alpha: float

    def resistivity(self, temperature_c: float) -> float:
        """Resistivity in ohm*m at ``temperature_c`` (degC)."""
        return self.rho20 * (1.0 + self.alpha * (temperature_c - 20.0))


MATERIALS = {
    "copper": Material("copper", 1.7241e-8, 0.00393),
    "aluminium": Material("aluminium", 2.8264e-8, 0.00403),
}
ALIASES = {"aluminum": "aluminium", "cu": "copper", "al": "aluminium"}


def material(name: str) -> Material:
    """The material called ``name`` (KeyError if unknown)."""
    key = name.strip().lower()
    return MATERIALS[ALIASES.get(key, key)]


def skin_depth(resistivity: float, frequency: float, mu_r: float = 1.0) -> float:
    """Skin depth in m, sqrt(2 rho / (omega mu)); infinite at 0 Hz."""
    if frequency <= 0.0:
        return math.inf
    return math.sqrt(2.0 * resistivity / (2.0 * math.pi * frequency * MU0 * mu_r))


def conductor_resistivities(case, conductors) -> "np.ndarray":
    """Resistivity (ohm*m) of every placed conductor (``conductors``, of
    :func:`racfield.geometry.layout.place`) at the case temperature."""
    import numpy as np

    return np.array([material(case.winding(c.winding).material).resistivity(case.model.temperature_c)
                     for c in conductors])
