"""Quantities given as SI numbers or as strings with units, and frequencies
written back for people.

``quantity("0.45 mm", "length", "layer[1].conductor.diameter")`` returns
``0.00045``.  Temperatures are returned in degrees Celsius (the case speaks of
copper temperature in degC); every other kind is returned in SI base units.
"""

from __future__ import annotations

import math
import re

from .errors import CaseError

_PREFIX = {"T": 1e12, "G": 1e9, "M": 1e6, "k": 1e3, "": 1.0, "m": 1e-3, "u": 1e-6,
           "\u00b5": 1e-6, "\u03bc": 1e-6, "n": 1e-9, "p": 1e-12}

# kind -> (SI unit symbol, {extra unit spelling: factor to SI})
_KINDS = {
    "length": ("m", {"cm": 1e-2, "mil": 25.4e-6, "in": 25.4e-3}),
    "frequency": ("Hz", {}),
    "current": ("A", {}),
    "time": ("s", {}),
    "angle": ("deg", {"rad": 180.0 / math.pi, "\u00b0": 1.0}),
    "resistivity": ("ohm*m", {"ohm m": 1.0, "ohm*cm": 1e-2, "uohm*cm": 1e-8}),
    "thermal conductivity": ("W/(m K)", {"W/(m*K)": 1.0, "W/m/K": 1.0, "W/mK": 1.0, "W/(m.K)": 1.0}),
    "heat transfer coefficient": ("W/(m2 K)", {"W/(m^2 K)": 1.0, "W/(m2*K)": 1.0, "W/(m^2*K)": 1.0,
                                               "W/m2/K": 1.0, "W/m^2/K": 1.0, "W/m2K": 1.0}),
    "inductance": ("H", {}),
    "capacitance": ("F", {}),
    "current density": ("A/m^2", {"A/m2": 1.0, "A/mm^2": 1e6, "A/mm2": 1e6, "A/cm^2": 1e4, "A/cm2": 1e4}),
}
_PREFIXABLE = {"length": True, "frequency": True, "current": True, "time": True,
               "angle": False, "resistivity": False, "thermal conductivity": False,
               "heat transfer coefficient": False, "inductance": True, "capacitance": True,
               "current density": False}

_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_PATTERN = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")

EXAMPLES = {"number": "1.5", "length": '"0.45 mm"', "frequency": '"200 kHz"', "current": '"1.5 A"',
            "angle": '"30 deg"', "temperature": '"100 degC"', "time": '"10 us"',
            "resistivity": '"1.72e-8 ohm*m"', "thermal conductivity": '"0.2 W/(m K)"',
            "heat transfer coefficient": '"10 W/(m2 K)"', "inductance": '"2 uH"',
            "capacitance": '"50 pF"', "current density": '"6 A/mm^2"'}


#: the magnitudes a case may give, zero aside: (smallest, largest, in words).  Beyond
#: them a model is no longer a winding window, and floating-point arithmetic would
#: lose the result (the skin depth at 5e-324 Hz, the area of a 1e-300 m wire)
LIMITS = {"length": (1e-9, 1e3, "0 or between 1 nm and 1 km"),
          "frequency": (1e-3, 1e12, "0 or between 1 mHz and 1 THz"),
          "current": (1e-9, 1e6, "0 or between 1 nA and 1 MA"),
          "time": (0.0, 1e3, "at most 1000 s")}


def in_range(number: float, kind: str, key: str, value: object = None) -> float:
    """``number`` when it is zero or its magnitude lies within ``LIMITS[kind]``
    (kinds without limits pass); raises :class:`CaseError` naming ``key`` otherwise."""
    if kind not in LIMITS or number == 0.0:
        return number
    low, high, words = LIMITS[kind]
    if not low <= abs(number) <= high:
        raise CaseError(key, f"{short(number if value is None else value)} is out of range: "
                        f"{_a(kind)} must be {words}", f"give {_a(kind)} in that range, such as {EXAMPLES[kind]}")
    return number


def short(value: object) -> str:
    """``repr(value)`` for a one-line message; an integer beyond the float range
    by its number of digits (Python refuses to print one of more than 4300)."""
    if isinstance(value, int) and not isinstance(value, bool) and abs(value) > 10 ** 30:
        return f"an integer of about {len(format(abs(value), 'x')) * math.log10(16):.0f} digits"
    return repr(value)


def _a(kind: str) -> str:
    return ("an " if kind[0] in "aeiou" else "a ") + kind


def _factor(kind: str, unit: str) -> float | None:
    base, extra = _KINDS[kind]
    if unit in extra:
        return extra[unit]
    if unit == base:
        return 1.0
    if _PREFIXABLE[kind] and unit.endswith(base):
        prefix = unit[: -len(base)]
        return _PREFIX.get(prefix)
    return None


def quantity(value: object, kind: str, key: str) -> float:
    """Convert ``value`` (a number in SI, or a string with a unit) to a float.

    ``kind`` is one of ``length`` (m), ``frequency`` (Hz), ``current`` (A),
    ``time`` (s), ``angle`` (degrees), ``temperature`` (degC),
    ``resistivity`` (ohm*m), ``thermal conductivity`` (W/(m K)),
    ``heat transfer coefficient`` (W/(m^2 K)), ``inductance`` (H),
    ``capacitance`` (F) or ``current density`` (A/m^2; also A/mm^2).
    Raises :class:`CaseError` naming ``key`` on anything else.
    """
    if isinstance(value, bool):
        raise CaseError(key, f"expected {_a(kind)}, got {value!r}",
                        f"write a number in SI units or a string such as {EXAMPLES[kind]}")
    if isinstance(value, (int, float)):
        try:
            number = float(value)
        except OverflowError:  # an integer beyond the floating-point range
            raise CaseError(key, f"{short(value)} is too large",
                            f"give {_a(kind)} in SI units, such as {EXAMPLES[kind]}") from None
        if not math.isfinite(number):
            raise CaseError(key, f"{value!r} is not a finite number",
                            f"give a finite {kind}")
        return number
    if not isinstance(value, str):
        raise CaseError(key, f"expected {_a(kind)}, got {type(value).__name__}",
                        f"write a number in SI units or a string such as {EXAMPLES[kind]}")
    match = _PATTERN.match(value)
    if not match:
        raise CaseError(key, f"cannot read {value!r} as {_a(kind)}",
                        f"write a number and a unit, such as {EXAMPLES[kind]}")
    number, unit = float(match.group(1)), match.group(2)
    if not math.isfinite(number):
        raise CaseError(key, f"{value!r} is not a finite number", f"give a finite {kind}")
    if kind == "number":
        if unit:
            raise CaseError(key, f"expected a plain number, got {value!r}", "write it without a unit")
        return number
    if kind == "temperature":
        if unit in ("", "degC", "\u00b0C", "C"):
            return number
        if unit == "K":
            return number - 273.15
        raise CaseError(key, f"unknown temperature unit {unit!r}",
                        'use degC or K, such as "100 degC"')
    if unit == "":
        if kind == "angle":
            return number
        raise CaseError(key, f"{value!r} has no unit",
                        f"write the unit, such as {EXAMPLES[kind]}, or give a plain number in SI units")
    factor = _factor(kind, unit)
    if factor is None:
        raise CaseError(key, f"unit {unit!r} is not {_a(kind)} unit",
                        f"write it such as {EXAMPLES[kind]}")
    if not math.isfinite(number * factor):
        raise CaseError(key, f"{value!r} is not a finite number", f"give a finite {kind}")
    return number * factor


def format_frequency(f: float) -> str:
    """A frequency in Hz for people: '250 kHz', '1.5 MHz', '0 Hz (DC)'."""
    if f == 0.0:
        return "0 Hz (DC)"
    exponent = min(max(int(math.floor(math.log10(abs(f)) / 3)), 0), 4)
    unit = ["Hz", "kHz", "MHz", "GHz", "THz"][exponent]
    return f"{f / 10 ** (3 * exponent):.4g} {unit}"
