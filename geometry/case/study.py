"""Parameter studies: ``[study]`` axes that turn one case into many variants.

A case may declare study axes, each a key path into the case document and a
list of values::

    [study]
    mode = "product"            # every combination (default), or "zip": the i-th values together

    [[study.axis]]
    key = "layer[1].conductor.diameter"       # 1-based list positions, as in error messages
    values = ["0.4 mm", "0.5 mm", "0.63 mm"]

    [[study.axis]]
    key = "variant"                           # an arrangement: a [[variant]] name, or "base"
    values = ["P-S-P", "P-P-S"]

or an explicit list of points, ``[[study.point]]`` tables of key path = value.
Every point becomes a complete case document (the study table removed); a
point whose document is bad fails alone, with its own error, when it is run.
"""

from __future__ import annotations

import copy
import itertools
import re
from dataclasses import dataclass

from .errors import CaseError, printable
from .names import MAX_NAME, check_name, folder_slug, name_key

_STEP = re.compile(r"([A-Za-z_][A-Za-z0-9_]*)(?:\[(\d+)\])?$")
VARIANT_KEY = "variant"
MAX_POINTS = 10000


@dataclass(frozen=True)
class StudyPoint:
    """One variant of a study: its name and the values set (key path -> value)."""

    name: str
    values: tuple[tuple[str, object], ...]


def _label(value: object) -> str:
    """A value as it appears in a point's name: printable, at most 40 characters."""
    if isinstance(value, (str, int, float, bool)):
        text = printable(str(value) if not isinstance(value, int) or abs(value) < 10 ** 30 else "a huge integer")
        return text if len(text) <= 40 else text[:37] + "..."
    return "table"


def _bounded(name: str) -> str:
    """A generated point name cut to :data:`MAX_NAME` characters."""
    return name if len(name) <= MAX_NAME else name[: MAX_NAME - 3] + "..."


def _check_path(key: object, where: str) -> str:
    if not isinstance(key, str) or not key.strip():
        raise CaseError(where, "expected a key path such as \"layer[1].conductor.diameter\"",
                        "write the key path as text")
    if key != VARIANT_KEY:
        for step in key.split("."):
            if not _STEP.match(step):
                raise CaseError(where, f"cannot read the key path {key!r} at {step!r}",
                                'write names joined by dots, with 1-based list positions: "gap[1].length"')
    return key


def study_points(table: object) -> list[StudyPoint]:
    """The points of a ``[study]`` table (CaseError for a malformed table)."""
    if not isinstance(table, dict):
        raise CaseError("study", "expected a table", "write [study] with [[study.axis]] or [[study.point]] tables")
    unknown = set(table) - {"mode", "axis", "point"}
    if unknown:
        raise CaseError(f"study.{sorted(unknown)[0]}", "unknown key", 'use "mode", "axis" or "point"')
    axes, points = table.get("axis", []), table.get("point", [])
    if not isinstance(axes, list) or not isinstance(points, list):
        raise CaseError("study", "axis and point must be lists of tables", "write [[study.axis]] / [[study.point]]")
    if bool(axes) == bool(points):
        raise CaseError("study", "needs either [[study.axis]] tables or [[study.point]] tables",
                        "give axes (their combinations are run) or an explicit list of points")
    out: list[StudyPoint] = []
    if points:
        for i, p in enumerate(points):
            where = f"study.point[{i + 1}]"
            if not isinstance(p, dict) or not p:
                raise CaseError(where, "expected a table of key path = value", 'write { "gap[1].length" = "1 mm" }')
            values = tuple((_check_path(k, where), v) for k, v in p.items())
            out.append(StudyPoint(_bounded(", ".join(f"{printable(k)}={_label(v)}" for k, v in values)), values))
        return _unique(out)
    mode = table.get("mode", "product")
    if mode not in ("product", "zip"):
        raise CaseError("study.mode", f"unknown mode {mode!r}", 'use "product" or "zip"')
    keys, lists, labels = [], [], []
    for i, axis in enumerate(axes):
        where = f"study.axis[{i + 1}]"
        if not isinstance(axis, dict) or set(axis) - {"key", "values", "labels"}:
            raise CaseError(where, "expected key, values and optional labels", 'write key = "...", values = [...]')
        key = _check_path(axis.get("key"), f"{where}.key")
        values = axis.get("values")
        if not isinstance(values, list) or not values:
            raise CaseError(f"{where}.values", "expected a non-empty list", 'write values = ["0.4 mm", "0.5 mm"]')
        names = axis.get("labels", [_label(v) for v in values])
        if not isinstance(names, list) or len(names) != len(values) or not all(isinstance(n, str) for n in names):
            raise CaseError(f"{where}.labels", "expected one text label per value", 'write labels = ["thin", "thick"]')
        if "labels" in axis:
            names = [check_name(n, f"{where}.labels[{j + 1}]", '"thin"') for j, n in enumerate(names)]
        keys.append(key)
        lists.append(list(values))
        labels.append([n if n != "table" else f"{key}#{j + 1}" for j, n in enumerate(names)])
    if mode == "zip" and len({len(v) for v in lists}) > 1:
        raise CaseError("study.axis", "zip mode needs axes of equal length", 'give every axis as many values, or mode = "product"')
    count = 1
    for v in lists:
        count *= len(v)
    if mode == "product" and count > MAX_POINTS:
        raise CaseError("study.axis", f"{count} combinations", f"keep a study to {MAX_POINTS} points or fewer")
    combos = (zip(*[range(len(v)) for v in lists]) if mode == "zip"
              else itertools.product(*[range(len(v)) for v in lists]))
    last = [k.split(".")[-1] for k in keys]
    short = [s if last.count(s) == 1 else k for s, k in zip(last, keys)]
    for combo in combos:
        values = tuple((keys[a], lists[a][j]) for a, j in enumerate(combo))
        name = ", ".join(f"{printable(short[a])}={labels[a][j]}" if keys[a] != VARIANT_KEY else labels[a][j]
                         for a, j in enumerate(combo))
        out.append(StudyPoint(_bounded(name), values))
    return _unique(out)


def _unique(points: list[StudyPoint]) -> list[StudyPoint]:
    """Points with names that do not collide on a file system (a repeat gets " (2)", ...)."""
    seen: set[str] = set()
    out = []
    for p in points:
        name, n = p.name, 1
        while name_key(name) in seen or "/" + folder_slug(name).lower() in seen:
            n += 1
            name = f"{p.name} ({n})"
        seen.update((name_key(name), "/" + folder_slug(name).lower()))
        out.append(p if name == p.name else StudyPoint(name, p.values))
    return out


def point_document(base: dict, point: StudyPoint) -> dict:
    """The case document of ``point``: ``base`` (without [study]) with its values
    set (CaseError naming the key path when a path does not fit the document).
    The [[variant]] arrangement is selected first, whatever the order of the
    axes, so that key paths such as ``layer[2]`` refer to its layers."""
    doc = copy.deepcopy(base)
    doc.pop("study", None)
    for key, value in sorted(point.values, key=lambda item: item[0] != VARIANT_KEY):
        if key == VARIANT_KEY:
            _select_variant(doc, value)
        else:
            _set(doc, key, copy.deepcopy(value))
    title = doc.get("title")
    doc["title"] = f"{title if isinstance(title, str) else 'case'} [{point.name}]"
    return doc


def _select_variant(doc: dict, name: object) -> None:
    variants = doc.pop("variant", [])
    if name == "base":
        return
    for v in variants if isinstance(variants, list) else []:
        if isinstance(v, dict) and v.get("name") == name:
            for part in ("layer", "conductor"):
                if part in v:
                    doc[part] = v[part]
                elif part in doc and any(p in v for p in ("layer", "conductor")):
                    del doc[part]
            return
    raise CaseError("study.variant", f"no [[variant]] named {name!r}", "name a variant of the case, or \"base\"")


def _set(doc: dict, key: str, value: object) -> None:
    node: object = doc
    steps = key.split(".")
    for n, step in enumerate(steps):
        name, index = _STEP.match(step).groups()
        last = n == len(steps) - 1
        if not isinstance(node, dict):
            raise CaseError(key, f"{'.'.join(steps[:n])} is not a table", "check the study key path")
        if index is None:
            if last:
                node[name] = value
                return
            node = node.setdefault(name, {})
            continue
        items = node.get(name)
        i = int(index) - 1
        if not isinstance(items, list) or not 0 <= i < len(items):
            raise CaseError(key, f"the case has no {name}[{index}]", "check the study key path (positions are 1-based)")
        if last:
            items[i] = value
            return
        node = items[i]
