"""DC resistance of the placed conductors and of whole windings.

One place for the number that ``check`` prints, ``run`` reports and the hand
estimates weight their layers with.  Every conductor's resistance comes from
its true geometry (:func:`.layout.dc_resistance`: rho / A per metre planar,
the exact ring integral axisymmetric), and planar turns are scaled to whole
turns by their lengths (:mod:`.turn_length`: model.length, or each turn's
own length around the core's centre leg).  A winding's conductors are joined as
the field solution joins them (:mod:`racfield.fem.parallel`):

- one conductor per turn: the turns in series, R = sum R_k;
- N parallel conductors per turn, transposed (and the strands of explicit
  litz wire): each strand visits every position, so it carries 1/N of the
  current, R = sum R_k / N^2 (equal conductors: R_turn / N per turn, turns in
  series);
- N parallel conductors per turn, untransposed: strand j is the j-th conductor
  of every turn in series, and the N strands are joined at the winding's
  ends, so their conductances add: R = 1 / sum_j (1 / sum_turns R_tj)
  (equal conductors: again R_turn / N per turn, turns in series).

At DC conductor k carries the share s_k of the winding current, and the DC
loss I^2 R = sum_k R_k (s_k I)^2 gives R = sum_k s_k^2 R_k, the form used here
(a subset of the conductors, such as one layer, contributes its part of R).
"""

from __future__ import annotations

from collections.abc import Sequence

from .case import Case, parallel_of
from .layout import Conductor, dc_resistance
from .materials import material
from .turn_length import turn_lengths


def conductor_resistivities(case: Case, conductors: Sequence[Conductor]) -> list[float]:
    """Resistivity (ohm*m) of every conductor at the case temperature."""
    return [material(case.winding(c.winding).material).resistivity(case.model.temperature_c)
            for c in conductors]


def conductor_resistances(case: Case, conductors: Sequence[Conductor]) -> list[float]:
    """DC resistance of every conductor: ohm per metre of length (planar) or
    ohm per ring (axisymmetric, radius r = x + window.inner_radius)."""
    offset = case.axis_offset
    return [dc_resistance(c, rho, offset) for c, rho in zip(conductors, conductor_resistivities(case, conductors))]


def dc_shares(case: Case, conductors: Sequence[Conductor], resistances: Sequence[float]) -> list[float]:
    """The share (1) of its winding's DC current that every conductor carries
    (see the module doc); ``resistances`` per conductor, in any consistent unit."""
    shares = [0.0] * len(conductors)
    for w in case.windings:
        setting = parallel_of(case, w.name)
        mine = [k for k, c in enumerate(conductors) if c.winding == w.name]
        if setting.conductors == 1 or setting.transposed:
            for k in mine:
                shares[k] = 1.0 / setting.conductors
            continue
        path = {}  # strand -> resistance of its conductors in series
        for k in mine:
            path[conductors[k].strand] = path.get(conductors[k].strand, 0.0) + resistances[k]
        total = sum(1.0 / r for r in path.values())
        for k in mine:
            shares[k] = 1.0 / path[conductors[k].strand] / total
    return shares


def weighted_resistances(case: Case, conductors: Sequence[Conductor],
                         resistances: Sequence[float] | None = None) -> list[float]:
    """Every conductor's resistance times its turn-length weight
    (:func:`.turn_length.turn_lengths`): times the lengths' scale, its
    whole-turn DC resistance in ohm.  ``resistances``: per metre (planar) or
    per ring, as from :func:`conductor_resistances` (computed when not given).
    Uniform turn lengths have weight 1: the per-metre values unchanged."""
    if resistances is None:
        resistances = conductor_resistances(case, conductors)
    weights = turn_lengths(case, conductors).weights
    return [float(r * w) for r, w in zip(resistances, weights)]


def turn_resistances(case: Case, conductors: Sequence[Conductor],
                     resistances: Sequence[float] | None = None) -> list[float]:
    """Whole-turn DC resistance in ohm of every conductor (planar: rho l_c / A
    with the conductor's own turn length l_c; axisymmetric: the ring)."""
    scale = turn_lengths(case, conductors).scale
    return [r * scale for r in weighted_resistances(case, conductors, resistances)]


def winding_dc_resistance(case: Case, conductors: Sequence[Conductor], name: str,
                          resistances: Sequence[float] | None = None) -> float:
    """DC resistance in ohm of winding ``name``, whole turns (planar: every
    conductor's per-metre value times its turn length, see
    :mod:`.turn_length`).  ``resistances``: per conductor as from
    :func:`conductor_resistances` (computed when not given).  The DC shares
    of parallel conductors follow from the whole-turn resistances."""
    weighted = weighted_resistances(case, conductors, resistances)
    shares = dc_shares(case, conductors, weighted)
    per_unit = sum(s * s * r for c, s, r in zip(conductors, shares, weighted) if c.winding == name)
    return float(per_unit * turn_lengths(case, conductors).scale)
