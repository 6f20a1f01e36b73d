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
- the conductor impedance and inductance matrices Z, L (per metre): entry
  (c, d) times sqrt(l_c l_d), i.e. D Z D with D = diag(sqrt(l_c)).  The
  diagonal is each conductor's own l_c Z_cc, and it is exact whenever the
  conductors coupled have equal lengths.  Being a congruence it keeps the
  whole-turn matrices passive: i^H (D R D) i = (D i)^H R (D i) >= 0, so no
  coupling coefficient exceeds 1 and the short-circuit (leakage) inductance
  stays positive.  The symmetric part of the voltage model V_c = l_c E_c
  (E_c = sum_d Z_cd i_d the field per metre), Z_cd (l_c + l_d) / 2, does not:
  for the core flux that links every turn of a core window (a rank-one part
  a u u^T of L) it gives L_12^2 / (L_11 L_22) = ((l_1 + l_2) / 2)^2 / (l_1 l_2)
  > 1, and in the pot-core demo (cases/pot_core_planar.toml with a round
  centre leg) a short-circuit inductance of -19 uH where the rings give
  +2.35 uH.  The two rules differ by (l_c - l_d)^2 / (8 l) to second order.
  Neither is the field's own weighting (the window's field energy lies
  between the turns, (1/2) integral nu |B|^2 l(x) dA); leakage inductance
  from per-turn lengths is an estimate of that order.

Lengths are held as a scale times weights, so that a uniform length is the
old arithmetic bit for bit: weights exactly 1 and scale ``model.length``
(with a centre leg: scale 1 and weights the lengths in m).
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
    """Per-conductor lengths as ``scale`` (m, or 1) times ``weights`` (Nc,).
    Uniform lengths have weights exactly 1 (see the module doc)."""

    scale: float
    weights: np.ndarray

    @property
    def metres(self) -> np.ndarray:
        """(Nc,) the factor to whole turns of every conductor: its length in m
        (planar), 1 (axisymmetric rings)."""
        return self.scale * self.weights

    @property
    def pair_weights(self) -> np.ndarray:
        """(Nc, Nc) sqrt(w_c w_d): times ``scale``, the factor of the
        conductor impedance matrix entry (c, d) (see the module doc)."""
        root = np.sqrt(self.weights)
        return root[:, None] * root[None, :]

    @property
    def uniform(self) -> bool:
        return bool(np.all(self.weights == self.weights[0])) if len(self.weights) else True


def turn_lengths(case: Case, conductors: Sequence[Conductor]) -> TurnLengths:
    """The factor to whole turns of every conductor of ``case`` (see the
    module doc): ring (axisymmetric) 1; planar without a centre leg
    model.length for every conductor; with one, each turn's own length."""
    n = len(conductors)
    if case.model.axisymmetric:
        return TurnLengths(1.0, np.ones(n))
    if case.centre_leg is None:
        return TurnLengths(case.model.length, np.ones(n))
    return TurnLengths(1.0, np.array([leg_turn_length(case.centre_leg, c.x) for c in conductors], dtype=float))


def describe(case: Case, conductors: Sequence[Conductor], uniform: str = "{} mm per turn") -> str:
    """Words for the turn lengths of a planar ``case``: ``uniform`` with
    model.length in mm filled in ("31.1 mm per turn"), or with a centre leg
    "turn lengths 27.6 mm to 38.9 mm around a round centre leg"."""
    if case.centre_leg is None or not conductors:
        return uniform.format(f"{case.model.length * 1e3:.4g}")
    metres = turn_lengths(case, conductors).metres
    return (f"turn lengths {metres.min() * 1e3:.4g} mm to {metres.max() * 1e3:.4g} mm "
            f"around a {case.centre_leg.shape} centre leg")
