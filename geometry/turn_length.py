"""The length of every turn: one place for the factor from the solver's
per-metre (planar) or per-ring (axisymmetric) values to whole turns.

A planar model solves one cross-section per metre of conductor.  Without
``[core] centre_leg`` every turn has the length ``[model] length``.  With a
centre leg each turn follows the leg at its own distance s = x_c + gap from
the leg surface (x_c the conductor centre in window coordinates, gap the
bobbin's inner gap), so a turn further out is longer:

- round leg of diameter D: the circle of radius D/2 + s, l = 2 pi (D/2 + s);
- rectangular leg w x d with corners rounded to r_c: the leg's outline
  (2(w + d) - (8 - 2 pi) r_c) plus the four quarter circles the offset adds,
  l = 2(w + d) - (8 - 2 pi) r_c + 2 pi s (r_c = 0: the usual mean-turn-length
  formula 2(w + d) + 2 pi s).

An axisymmetric model solves whole rings: every factor is 1.

How the per-turn lengths enter the results (:class:`TurnLengths`):

- a conductor's loss and DC resistance are local to it: per-metre value
  times its own length l_c, exactly;
- the conductor resistance matrix R (ohm/m, the real part of Z): entry
  (c, d) times sqrt(l_c l_d), i.e. D R D with D = diag(sqrt(l_c)).  The
  diagonal is each conductor's own l_c R_cc (at DC the exact whole-turn
  resistances, so parallel strands share by Kirchhoff's laws), and being a
  congruence it keeps i^H (D R D) i = (D i)^H R (D i) >= 0: no current
  pattern has negative loss;
- the stored energy (the reactance X = Im Z and the inductance L) is not
  held by the conductors but by the field, spread over the window and the
  core: it is scaled by one length, the mean turn length of the winding
  build (the turn at the middle of the conductors' span, common practice),
  so that in a core window the core flux still links every turn alike and
  in a closed (ideal-core) window the results do not depend on the
  potential's arbitrary constant.  Scaling X per conductor breaks both: the
  symmetric part of the voltage model V_c = l_c E_c, X_cd (l_c + l_d) / 2,
  turns the rank-one core flux a u u^T into a matrix with coupling
  L_12^2 / (L_11 L_22) = ((l_1 + l_2) / 2)^2 / (l_1 l_2) > 1 (the pot-core
  demo with a round centre leg: short-circuit inductance -19 uH, the rings
  +2.34 uH), and X_cd sqrt(l_c l_d) makes the ideal-core window's leakage
  depend on that constant (+13 % there).  The field's own weighting,
  (1/2) integral nu |B|^2 l(x) dA, would replace this mean.

Lengths are held as a scale times weights, so that a uniform length is the
old arithmetic bit for bit: weights and mean exactly 1 and scale
``model.length`` (with a centre leg: scale 1, weights and mean in m).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .case import Case, CentreLeg
from .layout import Conductor


def round_leg_turn_length(diameter: float, distance: float) -> float:
    """Length in m of a turn at ``distance`` (m) from the surface of a round
    leg of ``diameter`` (m): the circle 2 pi (D/2 + s)."""
    return 2.0 * math.pi * (diameter / 2.0 + distance)


def rectangular_leg_turn_length(width: float, depth: float, corner_radius: float, distance: float) -> float:
    """Length in m of a turn at ``distance`` (m) from a rectangular leg
    ``width`` x ``depth`` (m) with corners rounded to ``corner_radius`` (m):
    2(w + d) - (8 - 2 pi) r_c + 2 pi s (four straight sides and four
    quarter circles of radius r_c + s)."""
    return 2.0 * (width + depth) - (8.0 - 2.0 * math.pi) * corner_radius + 2.0 * math.pi * distance


def leg_turn_length(leg: CentreLeg, x: float) -> float:
    """Length in m of a turn whose centre is at window coordinate ``x`` (m)
    around ``leg``: distance s = x + leg.gap from the leg surface."""
    distance = x + leg.gap
    if leg.shape == "round":
        return round_leg_turn_length(leg.diameter, distance)
    return rectangular_leg_turn_length(leg.width, leg.depth, leg.corner_radius, distance)


@dataclass(frozen=True)
class TurnLengths:
    """Per-conductor lengths as ``scale`` (m, or 1) times ``weights`` (Nc,);
    ``mean`` times ``scale``: the mean turn length of the winding build (m,
    the turn length at the middle of the conductors' span across the width).
    Uniform lengths have weights and mean exactly 1 (see the module doc)."""

    scale: float
    weights: np.ndarray
    mean: float = 1.0

    @property
    def metres(self) -> np.ndarray:
        """(Nc,) the factor to whole turns of every conductor: its length in m
        (planar), 1 (axisymmetric rings)."""
        return self.scale * self.weights

    @property
    def pair_weights(self) -> np.ndarray:
        """(Nc, Nc) sqrt(w_c w_d): times ``scale``, the factor of the
        conductor resistance matrix entry (c, d) (see the module doc)."""
        root = np.sqrt(self.weights)
        return root[:, None] * root[None, :]

    def impedance(self, per_metre: np.ndarray) -> np.ndarray:
        """Conductor impedance matrices (..., Nc, Nc) per metre to whole turns,
        still to be multiplied by ``scale``: resistance R_cd sqrt(w_c w_d),
        reactance X_cd times ``mean`` (see the module doc).  Uniform weights
        leave the matrices as they are."""
        if self.uniform:
            return per_metre
        out = np.empty(per_metre.shape, dtype=complex)
        out.real = per_metre.real * self.pair_weights
        out.imag = per_metre.imag * self.mean
        return out

    def inductance(self, per_metre: np.ndarray) -> np.ndarray:
        """Conductor inductance matrices (..., Nc, Nc) per metre times ``mean``
        (still to be multiplied by ``scale``)."""
        return per_metre if self.uniform else per_metre * self.mean

    @property
    def uniform(self) -> bool:
        """Every weight and the mean exactly 1: one length, ``scale``, for every turn."""
        return self.mean == 1.0 and bool(np.all(self.weights == 1.0))


def turn_lengths(case: Case, conductors: Sequence[Conductor]) -> TurnLengths:
    """The factor to whole turns of every conductor of ``case`` (see the
    module doc): ring (axisymmetric) 1; planar without a centre leg
    model.length for every conductor; with one, each turn's own length."""
    n = len(conductors)
    if case.model.axisymmetric:
        return TurnLengths(1.0, np.ones(n))
    if case.centre_leg is None:
        return TurnLengths(case.model.length, np.ones(n))
    weights = np.array([leg_turn_length(case.centre_leg, c.x) for c in conductors], dtype=float)
    if not n:
        return TurnLengths(1.0, weights)
    middle = (min(c.x - c.width / 2 for c in conductors) + max(c.x + c.width / 2 for c in conductors)) / 2
    return TurnLengths(1.0, weights, leg_turn_length(case.centre_leg, middle))


def describe(case: Case, conductors: Sequence[Conductor], uniform: str = "{} mm per turn") -> str:
    """Words for the turn lengths of a planar ``case``: ``uniform`` with
    model.length in mm filled in ("31.1 mm per turn"), or with a centre leg
    "turn lengths 27.6 mm to 38.9 mm around a round centre leg"."""
    if case.centre_leg is None or not conductors:
        return uniform.format(f"{case.model.length * 1e3:.4g}")
    metres = turn_lengths(case, conductors).metres
    return (f"turn lengths {metres.min() * 1e3:.4g} mm to {metres.max() * 1e3:.4g} mm "
            f"around a {case.centre_leg.shape} centre leg")
