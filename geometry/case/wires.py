"""Standard round enamelled copper wire sizes, for ``wire = "..."`` in a
conductor table and for ``racfield wires``.

AWG (American Wire Gauge, ASTM B258): the bare diameter of gauge n is
defined by d = 0.127 mm x 92^((36 - n)/39), n = -3 (4/0, "0000") to 56; the
formula is the standard's definition and exact.

IEC 60317-0-1 (enamelled round copper wire, general requirements), Table 1:
the nominal conductor diameters and the maximum overall diameter of grades
1, 2 and 3 (grade 1 the thinnest enamel).  The standard's own text was not at
hand; the rows are the standard's values as reproduced in

* GB/T 6109.1-2008, Table 1 (identical to IEC 60317-0-1:2005), as printed by a
  Chinese wire maker (fd-enameledwire.com, product pages for QZY-2/180 round
  copper wire): the R20 sizes 0.018 mm to 2.000 mm, grades 1 and 2, and
  grade 3 from 0.071 mm up;
* IEC 60317-0-1:2008 onward added grade 3 up to 0.071 mm (IEC catalogue
  abstract of the 2008 edition); those grade-3 values, 0.018 mm to 0.063 mm,
  are from a wire maker's reproduction of the IEC table (lpwindingwires.com,
  "Technical values of magnet round wires");
* IS 13730-0-1 (the Indian standard identical to IEC 60317-0-1), as
  reproduced in a test-equipment maker's quality chart (Rajeshwari
  Electronics): the R40 intermediate sizes 0.043 mm to 0.170 mm.

Where the sources differ, the row says so.  Sizes above 2.000 mm, grade 2
and 3 at 2.000 mm, and the R40 sizes above 0.170 mm were not found in text
and are left out rather than written from memory: ``wire`` refuses them with
the nearest sizes that are in the table.  No value here is from memory.

AWG overall diameters: the NEMA MW 1000 single/heavy/triple builds were not
found in text either.  An AWG size takes the grade build (maximum overall
diameter minus nominal diameter) of the IEC row nearest to its bare
diameter, when one lies within half an R20 step (a factor 10^(1/40)); else
the grade is refused and ``outer_diameter`` must be given.

Sizes are in m unless a name says mm.
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass

from .errors import CaseError
from .units import quantity

GRADES = (1, 2, 3)
#: the grade of a wire named without one: grade 1, the one every row of the table has
DEFAULT_GRADE = 1
AWG_LARGEST, AWG_SMALLEST = -3, 56   # 4/0 .. 56
#: an AWG size borrows the build of an IEC row within this ratio of its bare diameter (half an R20 step)
BUILD_RATIO = 10.0 ** (1.0 / 40.0)
_NOUGHTS = {-3: "4/0", -2: "3/0", -1: "2/0", 0: "1/0"}

#: IEC 60317-0-1 Table 1, nominal conductor diameter and maximum overall diameter of
#: grades 1, 2, 3, in mm (None: not in the sources, see the module docstring).
#: R20 rows from GB/T 6109.1-2008 (= IEC 60317-0-1:2005); grade 3 up to 0.063 mm from
#: the IEC 60317-0-1 (2008 on) reproduction; R40 rows (marked r40) from IS 13730-0-1.
IEC_60317_0_1_MM: tuple[tuple[float, float, float | None, float | None], ...] = (
    (0.018, 0.022, 0.024, 0.026),
    (0.020, 0.024, 0.027, 0.030),
    (0.022, 0.027, 0.030, 0.033),
    (0.025, 0.031, 0.034, 0.037),
    (0.028, 0.034, 0.038, 0.042),
    (0.032, 0.039, 0.043, 0.047),
    (0.036, 0.044, 0.049, 0.053),
    (0.040, 0.049, 0.054, 0.058),
    (0.043, 0.052, 0.058, None),     # r40
    (0.045, 0.055, 0.061, 0.066),
    (0.048, 0.059, 0.065, None),     # r40
    (0.050, 0.060, 0.066, 0.072),
    (0.053, 0.064, 0.070, None),     # r40
    (0.056, 0.067, 0.074, 0.081),
    (0.060, 0.072, 0.079, None),     # r40
    (0.063, 0.076, 0.083, 0.090),
    (0.067, 0.080, 0.088, None),     # r40
    (0.071, 0.084, 0.091, 0.097),    # grade 3: 0.097 in GB/T 6109.1 and IS 13730-0-1, 0.098 in the IEC reproduction
    (0.075, 0.089, 0.095, 0.102),    # r40
    (0.080, 0.094, 0.101, 0.108),
    (0.085, 0.100, 0.107, 0.114),    # r40
    (0.090, 0.105, 0.113, 0.120),
    (0.095, 0.111, 0.119, 0.126),    # r40
    (0.100, 0.117, 0.125, 0.132),
    (0.106, 0.123, 0.132, 0.140),    # r40
    (0.112, 0.130, 0.139, 0.147),
    (0.118, 0.136, 0.145, 0.154),    # r40
    (0.125, 0.144, 0.154, 0.163),
    (0.132, 0.152, 0.162, 0.171),    # r40
    (0.140, 0.160, 0.171, 0.181),
    (0.150, 0.171, 0.182, 0.193),    # r40
    (0.160, 0.182, 0.194, 0.205),
    (0.170, 0.194, 0.208, 0.217),    # r40
    (0.180, 0.204, 0.217, 0.229),
    (0.200, 0.226, 0.239, 0.252),
    (0.224, 0.252, 0.266, 0.280),
    (0.250, 0.281, 0.297, 0.312),
    (0.280, 0.312, 0.329, 0.345),
    (0.315, 0.349, 0.367, 0.384),
    (0.355, 0.392, 0.411, 0.428),
    (0.400, 0.439, 0.459, 0.478),    # grade 1 printed 0.139 on one page of the source, 0.439 on another
    (0.450, 0.491, 0.513, 0.533),
    (0.500, 0.544, 0.566, 0.587),
    (0.560, 0.606, 0.630, 0.653),
    (0.630, 0.679, 0.704, 0.728),
    (0.710, 0.762, 0.789, 0.814),
    (0.800, 0.855, 0.884, 0.911),
    (0.900, 0.959, 0.989, 1.018),
    (1.000, 1.062, 1.094, 1.124),
    (1.120, 1.184, 1.217, 1.248),
    (1.250, 1.316, 1.349, 1.381),
    (1.400, 1.468, 1.502, 1.535),
    (1.600, 1.670, 1.706, 1.740),
    (1.800, 1.872, 1.909, 1.944),
    (2.000, 2.074, None, None),      # grades 2 and 3 cut off in the source
)

SYNTAX = '"AWG 26", "AWG 4/0", "0.45 mm", "0.45 mm grade 2" or "AWG 30 grade 1"'


@dataclass(frozen=True)
class WireSize:
    """One standard size: its name, standard, bare diameter (m) and maximum
    overall diameter of each grade (m; None where the table has none).
    ``build_from`` names the IEC row whose build an AWG size borrows."""

    name: str
    standard: str
    diameter: float
    outer: tuple[float | None, float | None, float | None]
    build_from: str = ""

    @property
    def area(self) -> float:
        """Bare cross-section in m^2."""
        return math.pi * self.diameter ** 2 / 4.0

    def outer_diameter(self, grade: int) -> float | None:
        """Maximum overall diameter of ``grade`` in m (None: not in the table)."""
        return self.outer[grade - 1]


def awg_diameter(n: int) -> float:
    """Bare diameter of AWG gauge ``n`` in m (n = -3 for 4/0 ... 56), ASTM B258."""
    return 0.127e-3 * 92.0 ** ((36 - n) / 39.0)


def awg_name(n: int) -> str:
    """``"AWG 26"``, ``"AWG 4/0"``."""
    return f"AWG {_NOUGHTS.get(n, str(n))}"


def iec_sizes() -> list[WireSize]:
    """Every IEC 60317-0-1 row of the table, smallest first."""
    return [WireSize(f"{d:.3f} mm", "IEC 60317-0-1", d * 1e-3,
                     tuple(None if od is None else od * 1e-3 for od in ods))
            for d, *ods in IEC_60317_0_1_MM]


def awg_size(n: int) -> WireSize:
    """AWG gauge ``n``: the exact bare diameter, and the grade builds of the
    nearest IEC row within BUILD_RATIO (none beyond it)."""
    d = awg_diameter(n)
    nearest = min(iec_sizes(), key=lambda s: abs(math.log(s.diameter / d)))
    if abs(math.log(nearest.diameter / d)) > math.log(BUILD_RATIO) * (1 + 1e-12):
        return WireSize(awg_name(n), "AWG", d, (None, None, None))
    outer = tuple(None if od is None else d + (od - nearest.diameter) for od in nearest.outer)
    return WireSize(awg_name(n), "AWG", d, outer, nearest.name)


def awg_sizes() -> list[WireSize]:
    """AWG 4/0 to 56, largest first."""
    return [awg_size(n) for n in range(AWG_LARGEST, AWG_SMALLEST + 1)]


def parse_wire(text: object, key: str) -> tuple[WireSize, int | None]:
    """The size and grade (None when not named) of a ``wire`` value such as
    ``"AWG 26"``, ``"AWG 4/0"``, ``"0.45 mm grade 2"``; CaseError otherwise."""
    if not isinstance(text, str):
        raise CaseError(key, f"expected text, got {text!r}", f"write wire = {SYNTAX.split(', ')[0]}")
    words = " ".join(text.lower().split())
    size_text, sep, grade_text = words.partition(" grade")
    grade = _grade(grade_text.strip(), key) if sep else None
    if size_text.startswith("awg"):
        size = awg_size(_gauge(size_text[3:].strip(), key))
    else:
        size = _metric(size_text, key)
    if grade is not None and size.outer_diameter(grade) is None:
        raise CaseError(key, f"{size.name} has no grade {grade} in racfield's table", grade_fix(size))
    return size, grade


def _grade(text: str, key: str) -> int:
    if text not in {str(g) for g in GRADES}:
        raise CaseError(key, f'unknown grade "{text}"', "use grade 1, 2 or 3 (IEC 60317-0-1, grade 1 the thinnest enamel)")
    return int(text)


def grade_fix(size: WireSize) -> str:
    grades = [str(g) for g in GRADES if size.outer_diameter(g) is not None]
    given = f"use grade {' or '.join(grades)}, or " if grades else ""
    return given + "leave the grade out and give outer_diameter (the diameter over the enamel)"


def _gauge(text: str, key: str) -> int:
    """AWG gauge number from ``"26"``, ``"4/0"`` or ``"0000"``."""
    if re.fullmatch(r"[1-4]/0", text):
        return 1 - int(text[0])
    if re.fullmatch(r"0{1,4}", text):
        return 1 - len(text)
    if re.fullmatch(r"\d{1,3}", text) and AWG_LARGEST <= int(text) <= AWG_SMALLEST:
        return int(text)
    raise CaseError(key, f'unknown gauge "AWG {text}"',
                    'give AWG 4/0 (or 0000), 3/0, 2/0, 1/0, or 1 to 56, such as "AWG 26"')


def _metric(text: str, key: str) -> WireSize:
    """The IEC row whose nominal diameter ``text`` (a length with its unit) gives."""
    sizes = iec_sizes()
    try:
        d = quantity(text, "length", key)
    except CaseError:
        hint = difflib.get_close_matches(text.split(" ")[0], ["awg"], n=1, cutoff=0.6)
        fix = f'did you mean "AWG {text.split(" ", 1)[-1]}"?' if hint else f"write wire = {SYNTAX}"
        raise CaseError(key, f'cannot read "{text}" as a wire size', fix) from None
    for size in sizes:
        if abs(size.diameter - d) <= 1e-6 * size.diameter:
            return size
    below = [s.name for s in sizes if s.diameter < d][-1:]
    above = [s.name for s in sizes if s.diameter > d][:1]
    near = " and ".join(below + above)
    raise CaseError(key, f"{d * 1e3:.4g} mm is not a nominal diameter in racfield's IEC 60317-0-1 table "
                    f"({sizes[0].name} to {sizes[-1].name})",
                    f"the nearest are {near}, or give shape = \"round\" with diameter and outer_diameter")
