"""The plain data of a design search (``[search]``, read by
:mod:`.search_keys`): its choices, limits, objective and candidates."""

from __future__ import annotations

import math
from dataclasses import dataclass

ORDER_KEY = "layer_order"
OBJECTIVES = ("loss", "pareto")


@dataclass(frozen=True)
class Choice:
    """One free choice: the key paths it sets (one value on each) and its values."""

    keys: tuple[str, ...]
    values: tuple[object, ...]
    labels: tuple[str, ...]       #: one short label per value, as in candidate names and search.csv
    name: str                     #: the column name: the last step of the first key path


@dataclass(frozen=True)
class SearchLimits:
    """The limits a design must meet (None: not limited).  SI units: A/m^2,
    degC, H, F."""

    current_density: float | None = None
    hot_spot_c: float | None = None
    leakage_h: float | None = None
    capacitance_f: float | None = None


@dataclass(frozen=True)
class SearchSpec:
    """A design search: its choices, limits, objective and strategy.
    ``frequency`` Hz (None: the case's compare frequency); ``margin``: every
    candidate whose estimated loss lies within (1 + margin) x the best
    estimate is field-solved."""

    choices: tuple[Choice, ...]
    limits: SearchLimits
    objective: str = "loss"
    frequency: float | None = None
    margin: float = 0.25
    best: int = 3
    orders: tuple[tuple[int, ...], ...] = ()   #: the interleavings (layer_order choice): base layer positions

    @property
    def count(self) -> int:
        return math.prod(len(c.values) for c in self.choices)


@dataclass(frozen=True)
class Candidate:
    """One design: its name, the values it sets (key path -> value) and its
    layer order (positions in the base [[layer]] list, one per layer, or None)."""

    name: str
    values: tuple[tuple[str, object], ...]
    order: tuple[int, ...] | None
    labels: tuple[tuple[str, str], ...]   #: choice name -> value label
