"""The key-by-key reader of one TOML table: typed values with units, unknown
keys refused with a did-you-mean, key paths for every message."""

from __future__ import annotations

import difflib

from .errors import CaseError
from .model import MAX_COUNT
from .units import EXAMPLES, in_range, quantity, short


class Table:
    """A TOML table read key by key; unknown keys are refused."""

    def __init__(self, data: object, path: str) -> None:
        if not isinstance(data, dict):
            raise CaseError(path, f"expected a table, got {type(data).__name__}",
                            f"write [{path}] as a table of keys")
        self.data = data
        self.path = path
        self.used: set[str] = set()

    def key(self, name: str) -> str:
        return f"{self.path}.{name}" if self.path else name

    def has(self, name: str) -> bool:
        return name in self.data

    def raw(self, name: str, default: object = None, required: bool = False,
            example: str = "...") -> object:
        self.used.add(name)
        if name not in self.data:
            if required:
                # a misspelling of the missing key is the likelier mistake: name it
                unread = [k for k in self.data if k not in self.used]
                typo = difflib.get_close_matches(name, unread, n=1, cutoff=0.8)
                if typo:
                    raise CaseError(self.key(typo[0]), "unknown key", f'did you mean "{name}"?')
                fix = f"add {name} = {example} to [{self.path}]" if self.path else f"add a [{name}] table"
                raise CaseError(self.key(name), "missing", fix)
            return default
        return self.data[name]

    def quantity(self, name: str, kind: str, default: float | None = None,
                 required: bool = False, positive: bool = False,
                 nonnegative: bool = False) -> float:
        value = self.raw(name, default, required, EXAMPLES[kind])
        if value is None:
            raise CaseError(self.key(name), "missing", f"add {name} = {EXAMPLES[kind]} to [{self.path}]")
        number = quantity(value, kind, self.key(name))
        if positive and not number > 0.0:
            raise CaseError(self.key(name), f"must be greater than zero, got {value!r}",
                            f"give a positive {kind}")
        if nonnegative and number < 0.0:
            raise CaseError(self.key(name), f"must not be negative, got {value!r}",
                            "give zero or a positive value")
        return in_range(number, kind, self.key(name), value)

    def within(self, name: str, kind: str, default: float, low: float, high: float, fix: str,
               unit: str = "") -> float:
        """A positive quantity that must lie in ``low``..``high`` (in ``unit``
        for the message); ``fix`` says what to give instead."""
        value = self.quantity(name, kind, default, positive=True)
        if not low <= value <= high:
            raise CaseError(self.key(name), f"{value:g}{unit} is outside {low:g}..{high:g}", fix)
        return value

    def text(self, name: str, default: str | None = None, choices: tuple[str, ...] = (),
             required: bool = False) -> str:
        value = self.raw(name, default, required)
        if not isinstance(value, str):
            raise CaseError(self.key(name), f"expected text, got {value!r}",
                            f'write it in quotes, such as {name} = "{choices[0] if choices else "name"}"')
        if choices and value not in choices:
            hint = difflib.get_close_matches(value, choices, n=1)
            fix = f'did you mean "{hint[0]}"?' if hint else "use one of " + ", ".join(f'"{c}"' for c in choices)
            raise CaseError(self.key(name), f'unknown value "{value}"', fix)
        return value

    def integer(self, name: str, default: int | None = None, minimum: int = 1,
                maximum: int = MAX_COUNT) -> int:
        value = self.raw(name, default, default is None)
        if isinstance(value, bool) or not isinstance(value, int):
            if isinstance(value, float) and value.is_integer():
                value = int(value)
            else:
                raise CaseError(self.key(name), f"expected a whole number, got {short(value)}",
                                f"write {name} = {max(minimum, 1)} or another whole number")
        if value < minimum:
            raise CaseError(self.key(name), f"must be at least {minimum}, got {short(value)}",
                            f"give a whole number of {minimum} or more")
        if value > maximum:
            raise CaseError(self.key(name), f"must be at most {maximum}, got {short(value)}",
                            f"give a whole number of {maximum} or less")
        return value

    def close(self) -> None:
        """Refuse keys that were never read (with a did-you-mean)."""
        for name in self.data:
            if name not in self.used:
                hint = difflib.get_close_matches(name, sorted(self.used), n=1)
                fix = f'did you mean "{hint[0]}"?' if hint else "remove it (see the case-file reference in README)"
                raise CaseError(self.key(name), "unknown key", fix)


def winding_ref(table: Table, names: list[str]) -> str:
    name = table.raw("winding", None, required=True)
    if name not in names:
        hint = difflib.get_close_matches(str(name), names, n=1)
        fix = f'did you mean "{hint[0]}"?' if hint else "name a winding defined in a [[winding]] table"
        raise CaseError(table.key("winding"), f'unknown winding "{name}"', fix)
    return name


def list_of_tables(doc: Table, name: str) -> list[Table]:
    items = doc.raw(name, [])
    key = doc.key(name)
    if not isinstance(items, list):
        raise CaseError(key, "expected a list of tables", f"write each one as [[{key}]]")
    return [Table(item, f"{key}[{i + 1}]") for i, item in enumerate(items)]
