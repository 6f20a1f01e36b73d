"""The discretization error of a winding's Rac and L, from solutions on three
nested densities (Richardson extrapolation with the observed order).

With element sizes h, h/r and h/r^2 (``[mesh] density`` D, r D, r^2 D) and
an error Q(h) - Q = C h^p, the changes d1 = Q(h) - Q(h/r) and
d2 = Q(h/r) - Q(h/r^2) give the observed order p = ln(d1 / d2) / ln r and
the error of the coarsest solution, the one reported,

    e = d1 / (1 - r^-p).

The order used is capped at 4, the rate of energy-type quantities (loss,
stored energy, hence Rac and L) for second-order elements on a smooth
solution (the error of an energy functional is the square of the energy-norm
error, O(h^2) for quadratic elements; G. Strang and G. J. Fix, "An Analysis of
the Finite Element Method", 1973): an observed order above it means the
coarsest level is not yet asymptotic, and the cap keeps the estimate on the
safe (larger) side.  When the changes differ in sign or do not shrink, no
order can be observed: the estimate is then the whole change from the
coarsest to the finest level, flagged ``asymptotic: false``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from racfield.geometry.case.units import format_frequency

#: the highest order used: energy-type quantities of quadratic elements converge as h^4
ORDER_LIMIT = 4.0


@dataclass(frozen=True)
class Extrapolation:
    """``error``: the relative error (Q(h) - Q) / Q of the coarsest value,
    with its sign; ``order``: the observed order (None when not asymptotic);
    ``extrapolated``: the value with the error removed (same unit as the values)."""

    error: float
    order: float | None
    asymptotic: bool
    extrapolated: float

    def document(self, unit: str) -> dict:
        """The results.json entry: ``error``, ``observed_order``,
        ``asymptotic`` and ``extrapolated_<unit>``."""
        return {"error": self.error, "observed_order": self.order, "asymptotic": self.asymptotic,
                f"extrapolated_{unit}": self.extrapolated}


def richardson(values: tuple[float, float, float], ratio: float) -> Extrapolation:
    """The error of ``values[0]`` from three solutions whose element sizes
    shrink by ``ratio`` from one to the next (see the module docstring)."""
    q0, q1, q2 = (float(v) for v in values)
    d1, d2 = q0 - q1, q1 - q2
    if d1 == 0.0 and d2 == 0.0:
        return Extrapolation(0.0, None, True, q0)
    if d1 * d2 > 0.0 and abs(d1) > abs(d2):
        order = math.log(d1 / d2) / math.log(ratio)
        error = d1 / (1.0 - ratio ** -min(order, ORDER_LIMIT))
        return Extrapolation(error / q0, order, True, q0 - error)
    return Extrapolation((q0 - q2) / q0, None, False, q2)


def estimate_text(entry: dict | None) -> str:
    """An entry of ``error_estimate`` as short text: "+0.033 % (order 3.7)"."""
    if not entry:
        return "-"
    order = (f"order {entry['observed_order']:.2g}" if entry.get("asymptotic") and entry.get("observed_order")
             else "exact on every mesh" if entry.get("asymptotic") else "not asymptotic")
    return f"{100 * entry['error']:+.2g} % ({order})"


def estimate_note(estimate: dict) -> str:
    """One sentence on how the ``error_estimate`` of results.json was found."""
    densities = ", ".join(f"{d:.3g}" for d in estimate["densities"])
    unknowns = ", ".join(str(n) for n in estimate["unknowns"])
    leakage = estimate.get("leakage")
    return (f"Discretization error estimated at {format_frequency(estimate['frequency_hz'])} by Richardson "
            f"extrapolation with the observed order (capped at {estimate.get('order_limit', ORDER_LIMIT):g}) from "
            f"meshes of density {densities} ({unknowns} unknowns); the sign is that of the reported value minus "
            f"the converged one" + (f"; leakage inductance {estimate_text(leakage)}" if leakage else "") + ".")
