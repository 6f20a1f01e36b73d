"""The ``[search]`` table of a design search: the free choices, the limits a
design must meet and the objective; and the candidates they span.

::

    [search]
    frequency = "300 kHz"    # the operating point (default: [compare] frequency, else mid-sweep)
    objective = "loss"       # the lowest total winding loss, or "pareto": loss vs leakage vs capacitance
    margin = 0.25            # field-solve every candidate whose estimate is within 25 % of the best
    best = 3                 # the best designs written out as case files

    [[search.choice]]
    key = "layer[1].conductor.wire"            # a key path, as in [study] (1-based positions)
    wires = { from = "AWG 20", to = "AWG 28" } # the table sizes between two sizes ("0.2 mm" to "0.5 mm": IEC)

    [[search.choice]]
    key = ["layer[2].conductor.thickness", "layer[3].conductor.thickness"]  # one value set on each
    range = { from = "0.05 mm", to = "0.4 mm", step = "0.05 mm" }

    [[search.choice]]
    key = "layer_order"      # every interleaving of the layers, without mirror duplicates
    values = "all"

    [search.limits]
    current_density = "6 A/mm^2"    # RMS, in any conductor (DC share of its winding's current)
    hot_spot = "120 degC"           # with [thermal]
    leakage_inductance = "2 uH"     # referred to the first winding (core windows)
    capacitance = "50 pF"           # the largest between two windings, with [dielectric]

Every candidate is a complete case document (:func:`candidate_document`);
a candidate whose document is bad, or whose layers do not fit the window,
fails alone with its own error line when it is screened.
"""

from __future__ import annotations

import copy
import itertools
import json
import math

from .errors import CaseError
from .search_spec import OBJECTIVES, ORDER_KEY, Candidate, Choice, SearchLimits, SearchSpec
from .study import _STEP, MAX_POINTS, StudyPoint, _label, _set, point_document
from .table import Table, list_of_tables
from .wires import awg_sizes, iec_sizes, parse_wire

def _keys(table: Table) -> tuple[str, ...]:
    raw = table.raw("key", None, required=True, example='"layer[1].conductor.wire"')
    keys = raw if isinstance(raw, list) else [raw]
    if not keys or not all(isinstance(k, str) and k.strip() for k in keys):
        raise CaseError(table.key("key"), "expected a key path or a list of key paths",
                        'write key = "layer[1].conductor.wire"')
    for k in keys:
        if k == ORDER_KEY and len(keys) > 1:
            raise CaseError(table.key("key"), f'"{ORDER_KEY}" stands alone', f'give key = "{ORDER_KEY}" by itself')
        if k != ORDER_KEY and not all(_STEP.match(step) for step in k.split(".")):
            raise CaseError(table.key("key"), f"cannot read the key path {k!r}",
                            'write names joined by dots, with 1-based list positions: "layer[2].conductor.thickness"')
    return tuple(keys)


def _range(table: Table) -> list[tuple[float, str]]:
    r = Table(table.raw("range"), table.key("range")) if isinstance(table.raw("range"), dict) else None
    if r is None:
        raise CaseError(table.key("range"), "expected a table", 'write range = { from = "0.1 mm", to = "0.4 mm", step = "0.05 mm" }')
    low = r.quantity("from", "length", required=True, positive=True)
    high = r.quantity("to", "length", required=True, positive=True)
    step = r.quantity("step", "length", required=True, positive=True)
    r.close()
    if high < low:
        raise CaseError(r.key("to"), "is below from", "give to >= from")
    n = int(math.floor((high - low) / step * (1 + 1e-9) + 1e-9)) + 1
    if n > MAX_POINTS:
        raise CaseError(r.key("step"), f"gives {n} values", f"keep a choice to {MAX_POINTS} values or fewer")
    labels = [f"{round(low + i * step, 15) * 1e3:.6g} mm" for i in range(n)]
    return [(label, label) for label in labels]


def _wires(table: Table) -> list[tuple[str, str]]:
    raw = table.raw("wires")
    if not isinstance(raw, dict):
        raise CaseError(table.key("wires"), "expected a table", 'write wires = { from = "AWG 20", to = "AWG 28" }')
    w = Table(raw, table.key("wires"))
    first, _ = parse_wire(w.raw("from", None, required=True, example='"AWG 20"'), w.key("from"))
    last, _ = parse_wire(w.raw("to", None, required=True, example='"AWG 28"'), w.key("to"))
    grade = w.integer("grade", 0, minimum=0, maximum=3) if w.has("grade") else 0
    w.close()
    if first.standard != last.standard:
        raise CaseError(w.key("to"), f"{first.name} and {last.name} come from different tables",
                        'give both ends as AWG sizes or both as metric sizes ("0.2 mm" to "0.5 mm")')
    low, high = sorted((first.diameter, last.diameter))
    table_sizes = awg_sizes() if first.standard == "AWG" else iec_sizes()
    sizes = sorted((s for s in table_sizes if low * (1 - 1e-9) <= s.diameter <= high * (1 + 1e-9)),
                   key=lambda s: s.diameter)
    suffix = f" grade {grade}" if grade else ""
    out = [(s.name + suffix, s.name + suffix) for s in sizes if not grade or s.outer_diameter(grade) is not None]
    if not out:
        raise CaseError(w.key("grade"), f"no size between {first.name} and {last.name} has grade {grade}",
                        "choose another grade or other sizes (racfield wires lists them)")
    return out


def layer_orders(layers: list, key: str = f"search.choice ({ORDER_KEY})") -> tuple[tuple[int, ...], ...]:
    """Every order of the base layers (each ``repeat`` counted as that many
    layers; layers with equal tables alike), without mirror duplicates: an
    order and its reverse give the same field in a window whose walls are
    alike, and the first in sort order is kept.  Values: 0-based positions in
    ``layers``."""
    if not isinstance(layers, list) or len(layers) < 2 or not all(isinstance(t, dict) for t in layers):
        raise CaseError(key, "needs two or more [[layer]] tables to interleave", "add [[layer]] tables, or drop this choice")
    symbols: list[int] = []
    first_of: dict[str, int] = {}
    for i, table in enumerate(layers):
        text = json.dumps({k: v for k, v in table.items() if k != "repeat"}, sort_keys=True, default=str)
        first_of.setdefault(text, i)
        repeat = table.get("repeat", 1)
        if isinstance(repeat, bool) or not isinstance(repeat, int) or not 1 <= repeat <= 64:
            raise CaseError(f"layer[{i + 1}].repeat", "must be a whole number of 1 to 64 to interleave",
                            "give repeat as a small whole number")
        symbols.extend([first_of[text]] * repeat)
    orders = []
    count = 0
    for order in _distinct_permutations(sorted(symbols)):
        count += 1
        if count > 20 * MAX_POINTS:
            raise CaseError(key, "too many interleavings", f"keep the layers to fewer than {MAX_POINTS} orders")
        if order <= order[::-1]:
            orders.append(order)
    if len(orders) > MAX_POINTS:
        raise CaseError(key, f"{len(orders)} interleavings", f"keep a search to {MAX_POINTS} candidates or fewer")
    return tuple(orders)


def _distinct_permutations(items: list[int]):
    """Each distinct ordering of a sorted multiset once, in lexicographic order."""
    items = list(items)
    n = len(items)
    while True:
        yield tuple(items)
        i = n - 2
        while i >= 0 and items[i] >= items[i + 1]:
            i -= 1
        if i < 0:
            return
        j = n - 1
        while items[j] <= items[i]:
            j -= 1
        items[i], items[j] = items[j], items[i]
        items[i + 1:] = reversed(items[i + 1:])


def order_label(order: tuple[int, ...], layers: list) -> str:
    """An order as winding initials in stacking order (``"PSSP"``); a layer
    position is added where a winding has several kinds of layer."""
    windings = [str(layers[i].get("winding", "?")) for i in range(len(layers))]
    initials = {w: w[:1].upper() or "?" for w in windings}
    if len(set(initials.values())) < len(set(windings)):
        initials = {w: f"W{n + 1}" for n, w in enumerate(dict.fromkeys(windings))}
    kinds = {w: len({i for i in set(order) if windings[i] == w}) for w in windings}
    return "".join(initials[windings[i]] + (str(i + 1) if kinds[windings[i]] > 1 else "") for i in order)


def read_search(raw: object, base: dict) -> SearchSpec:
    """The :class:`SearchSpec` of a ``[search]`` table (CaseError when it is malformed)."""
    if not isinstance(raw, dict):
        raise CaseError("search", "expected a table", "write [search] with [[search.choice]] tables")
    top = Table(raw, "search")
    objective = top.text("objective", "loss", OBJECTIVES)
    frequency = top.quantity("frequency", "frequency", positive=True) if top.has("frequency") else None
    margin = top.quantity("margin", "number", 0.25, nonnegative=True)
    best = top.integer("best", 3, minimum=1, maximum=100)
    limits_raw = top.raw("limits", {})
    if not isinstance(limits_raw, dict):
        raise CaseError("search.limits", "expected a table", 'write [search.limits] with current_density = "6 A/mm^2" ...')
    lim = Table(limits_raw, "search.limits")

    def limit(name: str, kind: str) -> float | None:
        return lim.quantity(name, kind, positive=kind != "temperature") if lim.has(name) else None

    limits = SearchLimits(limit("current_density", "current density"), limit("hot_spot", "temperature"),
                          limit("leakage_inductance", "inductance"), limit("capacitance", "capacitance"))
    lim.close()
    choices: list[Choice] = []
    orders: tuple[tuple[int, ...], ...] = ()
    tables = list_of_tables(top, "choice")
    top.close()
    if not tables:
        raise CaseError("search.choice", "missing", 'add [[search.choice]] tables with key = "..." and values = [...]')
    for table in tables:
        keys = _keys(table)
        given = [k for k in ("values", "range", "wires") if table.has(k)]
        if len(given) != 1:
            raise CaseError(table.path, "needs one of values, range or wires",
                            'give values = [...], range = { from, to, step } or wires = { from, to }')
        if keys == (ORDER_KEY,):
            if table.raw("values") != "all":
                raise CaseError(table.key("values"), f'{ORDER_KEY} takes values = "all"', 'write values = "all"')
            orders = layer_orders(base.get("layer"), table.key("key"))
            pairs = [(n, order_label(o, base["layer"])) for n, o in enumerate(orders)]
        elif given[0] == "range":
            pairs = _range(table)
        elif given[0] == "wires":
            pairs = _wires(table)
        else:
            values = table.raw("values")
            if not isinstance(values, list) or not values:
                raise CaseError(table.key("values"), "expected a non-empty list", 'write values = ["0.4 mm", "0.5 mm"]')
            pairs = [(v, _label(v)) for v in values]
        table.close()
        if any(ORDER_KEY in c.keys for c in choices) and keys == (ORDER_KEY,):
            raise CaseError(table.key("key"), f"{ORDER_KEY} is chosen twice", "give it once")
        choices.append(Choice(keys, tuple(v for v, _ in pairs), tuple(lab for _, lab in pairs),
                              keys[0].split(".")[-1]))
    if orders and any(k.split(".")[-1] in ("repeat", "turns") or k == "layer"
                      for c in choices for k in c.keys if k != ORDER_KEY):
        raise CaseError("search.choice", f"{ORDER_KEY} with a choice of a layer's repeat or turns",
                        "fix the layers' repeat and turns when the layer order is searched")
    spec = SearchSpec(tuple(choices), limits, objective, frequency, margin, best, orders)
    if spec.count > MAX_POINTS:
        raise CaseError("search.choice", f"{spec.count} candidates", f"keep a search to {MAX_POINTS} candidates or fewer")
    return spec


def candidates(spec: SearchSpec) -> list[Candidate]:
    """Every combination of the choices' values, in a fixed order."""
    names = [c.name for c in spec.choices]
    short = [n if names.count(n) == 1 else c.keys[0] for n, c in zip(names, spec.choices)]
    out = []
    for combo in itertools.product(*[range(len(c.values)) for c in spec.choices]):
        values: list[tuple[str, object]] = []
        order = None
        labels = []
        for choice, j, name in zip(spec.choices, combo, short):
            labels.append((name, choice.labels[j]))
            if choice.keys == (ORDER_KEY,):
                order = spec.orders[choice.values[j]]
            else:
                values.extend((k, choice.values[j]) for k in choice.keys)
        out.append(Candidate(", ".join(f"{n}={lab}" for n, lab in labels), tuple(values), order, tuple(labels)))
    return out


def candidate_document(base: dict, candidate: Candidate) -> dict:
    """The case document of ``candidate``: ``base`` with its values set (key
    paths refer to the base [[layer]] list) and its layers in its order."""
    doc = point_document(base, StudyPoint(candidate.name, ()))
    for key, value in candidate.values:
        _set(doc, key, copy.deepcopy(value))
    if candidate.order is not None:
        layers = doc["layer"]
        runs = [(i, len(list(group))) for i, group in itertools.groupby(candidate.order)]
        doc["layer"] = [{**copy.deepcopy(layers[i]), "repeat": n} for i, n in runs]
    return doc
