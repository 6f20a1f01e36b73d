"""Standard wire sizes (geometry/case/wires.py): the AWG diameters against the
defining formula of ASTM B258 and published table values, the IEC 60317-0-1
rows against the preferred-number series the standard takes its sizes from
and against transcriptions of its Table 1 other than the ones the table was
typed from, a case naming a wire against the same case with the diameters
written out, and ``racfield wires``.
"""

from __future__ import annotations

import math
from decimal import ROUND_HALF_UP, Decimal

import pytest
import racfield
from racfield.cli import main
from racfield.geometry.case.errors import CaseError
from racfield.geometry.case.wires import (
    DEFAULT_GRADE,
    IEC_60317_0_1_MM,
    awg_diameter,
    awg_size,
    awg_sizes,
    iec_sizes,
    parse_wire,
)
from racfield.geometry.layout import place
from racfield.geometry.resistance import conductor_resistances, winding_dc_resistance

INCH = 25.4e-3          # m, exact (international inch, 1959)
RHO_CU20 = 1.7241e-8    # ohm m, IEC 60028 (International Annealed Copper Standard)


def test_awg_diameters_follow_the_astm_b258_formula():
    # ASTM B258: gauge 36 is 0.0050 in, gauge 0000 (n = -3) is 0.4600 in, and the 38 gauges
    # between them divide the ratio 92 into 39 equal steps: d = 0.0050 in x 92^((36 - n)/39)
    for n in range(-3, 57):
        expected = 0.0050 * INCH * 92.0 ** ((36 - n) / 39.0)
        assert awg_diameter(n) == pytest.approx(expected, rel=1e-9)
        assert awg_size(n).diameter == pytest.approx(expected, rel=1e-9)
    assert awg_diameter(36) == pytest.approx(0.127e-3, rel=1e-12)       # 0.0050 in exactly, ASTM B258
    assert awg_diameter(-3) == pytest.approx(0.4600 * INCH, rel=1e-12)  # 0.4600 in = 11.684 mm, ASTM B258
    ratios = [awg_diameter(n) / awg_diameter(n + 1) for n in range(-3, 56)]
    assert max(ratios) == pytest.approx(min(ratios), rel=1e-12)
    assert ratios[0] == pytest.approx(92.0 ** (1 / 39), rel=1e-12)
    # common practice: six gauges halve the diameter to within 0.3 %
    assert awg_diameter(20) / awg_diameter(26) == pytest.approx(2.0, rel=3e-3)


#: the AWG table reproduced at blog.csdn.net/wilson_jiang/article/details/4825976: its "Dia-mm"
#: column is its "Dia-mils" column (rounded to 0.01 mil) in mm, hence a tolerance of 0.005 mil
CSDN_TABLE = 0.005 * 25.4e-3 + 0.5e-4


@pytest.mark.parametrize("name,mm,tolerance", [
    ("AWG 0000", 11.684, CSDN_TABLE), ("AWG 000", 10.405, CSDN_TABLE), ("AWG 00", 9.2657, CSDN_TABLE),
    ("AWG 0", 8.2513, CSDN_TABLE), ("AWG 1", 7.3480, CSDN_TABLE), ("AWG 2", 6.5436, CSDN_TABLE),
    ("AWG 4", 5.1893, CSDN_TABLE), ("AWG 6", 4.1153, CSDN_TABLE),
    # ASTM B258 table values to 0.001 mm (from memory)
    ("AWG 10", 2.588, 0.5e-3), ("AWG 24", 0.511, 0.5e-3), ("AWG 36", 0.127, 1e-12),
    # "the diameter of line 40 is 0.0799 mm" (inntouch.net, "Enameled wire specifications")
    ("AWG 40", 0.0799, 0.5e-4),
])
def test_awg_against_published_table_values(name, mm, tolerance):
    size, grade = parse_wire(name, "wire")
    assert grade is None
    assert size.diameter * 1e3 == pytest.approx(mm, abs=tolerance)


def test_awg_names():
    # the zero gauges are written 1/0 .. 4/0 or 0 .. 0000 (common practice)
    for a, b, n in (("AWG 4/0", "AWG 0000", -3), ("AWG 3/0", "AWG 000", -2), ("AWG 2/0", "AWG 00", -1),
                    ("AWG 1/0", "AWG 0", 0)):
        assert parse_wire(a, "k")[0] == parse_wire(b, "k")[0] == awg_size(n)
    assert parse_wire("awg  30 GRADE 1", "k") == (awg_size(30), 1)
    assert [s.name for s in awg_sizes()][:5] == ["AWG 4/0", "AWG 3/0", "AWG 2/0", "AWG 1/0", "AWG 1"]
    assert len(awg_sizes()) == 60


def _half_up(value: float, places: int = 3) -> float:
    return float(Decimal(repr(value)).quantize(Decimal(10) ** -places, rounding=ROUND_HALF_UP))


#: ISO 3 preferred numbers, series R40 (R20 is every second one), from memory
R40 = (1.00, 1.06, 1.12, 1.18, 1.25, 1.32, 1.40, 1.50, 1.60, 1.70, 1.80, 1.90, 2.00, 2.12, 2.24, 2.36, 2.50, 2.65,
       2.80, 3.00, 3.15, 3.35, 3.55, 3.75, 4.00, 4.25, 4.50, 4.75, 5.00, 5.30, 5.60, 6.00, 6.30, 6.70, 7.10, 7.50,
       8.00, 8.50, 9.00, 9.50)


def test_iec_nominal_diameters_are_r20_and_r40_numbers():
    # IEC 60317-0-1 clause 4: nominal diameters from the R20 series, intermediate ones from R40,
    # given in mm to three decimals
    r40 = {_half_up(r * 10.0 ** k) for r in R40 for k in (-2, -1, 0)}
    r20 = {_half_up(r * 10.0 ** k) for r in R40[::2] for k in (-2, -1, 0)}
    nominal = [row[0] for row in IEC_60317_0_1_MM]
    assert nominal == sorted(set(nominal))
    assert set(nominal) <= r40
    # every R20 size from 0.018 mm to 2.000 mm is in the table
    assert {d for d in r20 if 0.018 <= d <= 2.0} <= set(nominal)


def test_iec_grades_are_ordered():
    # IEC 60317-0-1: grade 1 < grade 2 < grade 3 in enamel build, every overall diameter above the bare one
    for size in iec_sizes():
        ods = [od for od in size.outer if od is not None]
        assert ods and size.outer[0] is not None
        assert size.diameter < ods[0] and ods == sorted(ods) and len(set(ods)) == len(ods)


def _row(mm: float) -> tuple:
    return next(row for row in IEC_60317_0_1_MM if row[0] == mm)


# Maximum overall diameters of IEC 60317-0-1 Table 1 (grade 1, grade 2) in transcriptions other
# than the GB/T 6109.1 one the table's grades 1 and 2 were typed from:
SH_WIRE = {  # sh-wire.de, "Berechnungstabellen" (DIN EN 60317-0-1), upper limits (OGW)
    0.040: (0.049, 0.054), 0.045: (0.055, 0.061), 0.050: (0.060, 0.066), 0.053: (0.064, 0.070),
    0.056: (0.067, 0.074), 0.060: (0.072, 0.079), 0.063: (0.076, 0.083), 0.067: (0.080, 0.088),
    0.071: (0.084, 0.091), 0.075: (0.089, 0.095), 0.080: (0.094, 0.101), 0.085: (0.100, 0.107),
    0.090: (0.105, 0.113), 0.095: (0.111, 0.119), 0.100: (0.117, 0.125), 0.106: (0.123, 0.132),
    0.112: (0.130, 0.139), 0.118: (0.136, 0.145)}
IEC_REPRODUCTION = {  # lpwindingwires.com, "Technical values of magnet round wires" (IEC 60317)
    0.018: (0.022, 0.024), 0.020: (0.024, 0.027), 0.022: (0.027, 0.030), 0.025: (0.031, 0.034),
    0.028: (0.034, 0.038), 0.032: (0.039, 0.043), 0.036: (0.044, 0.049), 0.040: (0.049, 0.054),
    0.045: (0.055, 0.061), 0.050: (0.060, 0.066), 0.056: (0.067, 0.074), 0.063: (0.076, 0.083),
    0.071: (0.084, 0.091), 0.080: (0.094, 0.101), 0.090: (0.105, 0.113), 0.100: (0.117, 0.125)}
IS_13730 = {  # IS 13730-0-1 (identical to IEC 60317-0-1): the R20 rows of a quality chart
    # (Rajeshwari Electronics) and the SWG 30 row (0.315 mm) of avanticables.com, grades 1, 2, 3
    0.100: (0.117, 0.125, 0.132), 0.112: (0.130, 0.139, 0.147), 0.125: (0.144, 0.154, 0.163),
    0.140: (0.160, 0.171, 0.181), 0.160: (0.182, 0.194, 0.205), 0.315: (0.349, 0.367, 0.384)}


@pytest.mark.parametrize("source", [SH_WIRE, IEC_REPRODUCTION, IS_13730], ids=["sh-wire", "iec-repro", "is-13730"])
def test_iec_rows_against_other_transcriptions(source):
    for mm, ods in source.items():
        assert _row(mm)[1:1 + len(ods)] == ods, mm


def test_iec_designation_and_a_stated_value():
    # IEC 60317-0-1, clause 1: a wire is named by its nominal diameter and grade ("0,500 Grade 2")
    size, grade = parse_wire("0.500 mm grade 2", "wire")
    assert (size.name, grade) == ("0.500 mm", 2)
    # 0.100 mm grade 1: at most 0.117 mm overall (enameled-wires.com, quoting Elektrisola's table)
    assert parse_wire("0.1 mm", "wire")[0].outer_diameter(1) == pytest.approx(0.117e-3, rel=1e-12)


def test_awg_build_from_the_nearest_iec_size():
    # the documented rule (no NEMA MW 1000 builds in racfield): AWG 24 (0.511 mm) takes the
    # grade builds of the 0.500 mm row, within half an R20 step (10^(1/40))
    size = awg_size(24)
    assert size.build_from == "0.500 mm"
    for grade, od in zip((1, 2, 3), _row(0.500)[1:]):
        assert size.outer_diameter(grade) == pytest.approx(size.diameter + (od - 0.500) * 1e-3, rel=1e-12)
    for n in range(-3, 57):
        s = awg_size(n)
        if s.build_from:
            assert abs(math.log(parse_wire(s.build_from, "k")[0].diameter / s.diameter)) <= math.log(10) / 40
        else:
            assert s.outer == (None, None, None)
    assert not awg_size(11).build_from and awg_size(12).build_from == "2.000 mm"


CASE = """
title = "wire sizes"
[model]
length = "40 mm"
[sweep]
frequencies = [0]
[window]
width = "4 mm"
height = "6 mm"
boundary = "open"
[[winding]]
name = "primary"
current = "1 A"
[[layer]]
winding = "primary"
conductor = {CONDUCTOR}
turns = 10
"""


def _rdc(conductor: str) -> tuple[float, tuple]:
    case = racfield.load_case(CASE.replace("{CONDUCTOR}", conductor))
    conductors = place(case)
    rdc = winding_dc_resistance(case, conductors, "primary", conductor_resistances(case, conductors))
    return rdc, case.layers[0].conductor


@pytest.mark.parametrize("wire,d_mm,od_mm", [
    ('"0.45 mm grade 2"', 0.45, 0.513), ('"0.45 mm"', 0.45, 0.491),   # grade 1 by default
    ('"AWG 26"', 0.127 * 92 ** (10 / 39), None), ('"AWG 30 grade 3"', 0.127 * 92 ** (6 / 39), None)])
def test_a_case_with_wire_equals_the_written_out_diameters(wire, d_mm, od_mm):
    size, grade = parse_wire(wire.strip('"'), "wire")
    od_mm = od_mm or size.outer_diameter(grade or DEFAULT_GRADE) * 1e3
    rdc, spec = _rdc(f"{{ wire = {wire} }}")
    explicit, spec2 = _rdc(f'{{ shape = "round", diameter = {d_mm * 1e-3!r}, outer_diameter = {od_mm * 1e-3!r} }}')
    assert spec == spec2
    assert rdc == pytest.approx(explicit, rel=1e-12)
    # IEC 60028: R = rho l N / (pi d^2 / 4), ten turns of 40 mm at 20 degC
    assert rdc == pytest.approx(RHO_CU20 * 0.040 * 10 / (math.pi * (d_mm * 1e-3) ** 2 / 4), rel=1e-9)


def test_wire_without_grade_takes_an_explicit_outer_diameter():
    _, spec = _rdc('{ wire = "AWG 26", outer_diameter = "0.5 mm" }')
    assert spec.width == pytest.approx(0.127e-3 * 92 ** (10 / 39), rel=1e-12)   # ASTM B258
    assert spec.outer_width == pytest.approx(0.5e-3)


@pytest.mark.parametrize("conductor,key,text", [
    ('{ wire = "AWG 26", diameter = "0.4 mm" }', "layer[1].conductor.diameter", "given together with wire"),
    ('{ wire = "AWG 26 grade 1", outer_diameter = "0.5 mm" }', "layer[1].conductor.outer_diameter", "grade"),
    ('{ wire = "AWG 26", outer_diameter = "0.3 mm" }', "layer[1].conductor.outer_diameter", "smaller than"),
    ('{ wire = "AWG 0000" }', "layer[1].conductor.wire", "has no grade 1"),
    ('{ wire = "2 mm grade 3" }', "layer[1].conductor.wire", "use grade 1, or"),
    ('{ wire = "0.46 mm" }', "layer[1].conductor.wire", "the nearest are 0.450 mm and 0.500 mm"),
    ('{ wire = "3 mm" }', "layer[1].conductor.wire", "the nearest are 2.000 mm"),
    ('{ wire = "AGW 26" }', "layer[1].conductor.wire", 'did you mean "AWG 26"?'),
    ('{ wire = "AWG 26 grade 0" }', "layer[1].conductor.wire", 'unknown grade "0"'),
    ('{ wire = 26 }', "layer[1].conductor.wire", "expected text"),
    ('{ shape = "litz", wire = "AWG 26" }', "layer[1].conductor.shape", "given together with wire"),
])
def test_bad_wire_values(conductor, key, text):
    with pytest.raises(CaseError) as error:
        racfield.load_case(CASE.replace("{CONDUCTOR}", conductor))
    assert error.value.key == key and text in str(error.value), str(error.value)


def test_racfield_wires_lists_the_tables(capsys):
    assert main(["wires", "--standard", "iec", "--min", "0.45 mm", "--max", "0.5 mm"]) == 0
    lines = capsys.readouterr().out.splitlines()
    rows = [line.split() for line in lines if line.endswith(tuple("0123456789")) and " mm " in line]
    assert [r[0] for r in rows] == ["0.450", "0.500"]
    for r in rows:
        d = float(r[0]) * 1e-3
        assert [float(x) for x in r[4:7]] == list(_row(float(r[0]))[1:])
        assert float(r[3]) == pytest.approx(math.pi * d * d / 4 * 1e6, rel=1e-4)    # area in mm^2
        assert float(r[7]) == pytest.approx(RHO_CU20 / (math.pi * d * d / 4), rel=1e-4)   # IEC 60028, ohm/m
    assert main(["wires", "--standard", "awg", "--min", "0.12 mm", "--max", "0.13 mm"]) == 0
    out = capsys.readouterr().out
    row = next(line.split() for line in out.splitlines() if line.startswith("AWG 36"))
    assert row[2] == "0.1270"                                             # ASTM B258: 0.0050 in
    assert float(row[7]) == pytest.approx(RHO_CU20 / (math.pi * 0.127e-3 ** 2 / 4), rel=1e-4)
    assert row[-2:] == ["0.125", "mm"]
    assert main(["wires"]) == 0
    out = capsys.readouterr().out
    assert "IEC 60317-0-1" in out and "ASTM B258" in out and "AWG 4/0" in out and "2.000 mm" in out


def test_a_study_over_wire_sizes():
    # [study] axes reach the wire key like any other: each point's Rdc is rho l N / A (IEC 60028)
    text = CASE.replace("{CONDUCTOR}", '{ wire = "AWG 26" }') + (
        '[study]\n[[study.axis]]\nkey = "layer[1].conductor.wire"\n'
        'values = ["AWG 28", "AWG 26 grade 2", "0.45 mm grade 2", "0.5 mm grade 3"]\n')
    points = racfield.variant_cases(racfield.load_case(text))
    bare = [0.127e-3 * 92 ** (8 / 39), 0.127e-3 * 92 ** (10 / 39), 0.45e-3, 0.5e-3]   # ASTM B258; IEC nominal
    assert len(points) == 4
    for case, d in zip(points, bare):
        conductors = place(case)
        rdc = winding_dc_resistance(case, conductors, "primary", conductor_resistances(case, conductors))
        assert rdc == pytest.approx(RHO_CU20 * 0.040 * 10 / (math.pi * d * d / 4), rel=1e-9)
    assert points[3].layers[0].conductor.outer_width == pytest.approx(0.587e-3)   # IEC 60317-0-1, 0.500 grade 3
