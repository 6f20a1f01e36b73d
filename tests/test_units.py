"""The quantity parser against plain SI arithmetic.

The expected values are written out here by hand (1 mil = 0.001 inch =
25.4e-6 m by definition of the inch; 0 K = -273.15 degC; 1 rad = 180/pi deg),
not taken from racfield's unit tables.
"""

from __future__ import annotations

import math

import pytest

from racfield.geometry.case.errors import CaseError
from racfield.geometry.case.units import quantity

KEY = "layer[1].conductor.diameter"

GOOD = [
    # length (m)
    ("0.45 mm", "length", 0.45e-3),
    ("0.45mm", "length", 0.45e-3),
    ("  2 mm  ", "length", 2e-3),
    ("3 m", "length", 3.0),
    ("1.5 cm", "length", 1.5e-2),
    ("12 um", "length", 12e-6),
    ("12 \u00b5m", "length", 12e-6),   # MICRO SIGN
    ("12 \u03bcm", "length", 12e-6),   # GREEK SMALL LETTER MU
    ("500 nm", "length", 500e-9),
    ("10 mil", "length", 10 * 0.001 * 0.0254),
    ("1 mil", "length", 25.4e-6),
    ("2 in", "length", 2 * 0.0254),
    ("1e-3 m", "length", 1e-3),
    ("2.5E-1 mm", "length", 0.25e-3),
    (".5 mm", "length", 0.5e-3),
    ("+1 mm", "length", 1e-3),
    ("-1 mm", "length", -1e-3),     # the sign is read; sizes are checked for sign elsewhere
    # frequency (Hz)
    ("50 Hz", "frequency", 50.0),
    ("200 kHz", "frequency", 200e3),
    ("1.5 MHz", "frequency", 1.5e6),
    ("2 GHz", "frequency", 2e9),
    ("0 Hz", "frequency", 0.0),
    # current (A)
    ("1.5 A", "current", 1.5),
    ("250 mA", "current", 0.25),
    ("2 kA", "current", 2000.0),
    ("10 uA", "current", 10e-6),
    # temperature (degC)
    ("100 degC", "temperature", 100.0),
    ("100 \u00b0C", "temperature", 100.0),
    ("-40 degC", "temperature", -40.0),
    ("373.15 K", "temperature", 100.0),
    ("0 K", "temperature", -273.15),
    ("293.15 K", "temperature", 20.0),
    # angle (deg)
    ("30 deg", "angle", 30.0),
    ("90\u00b0", "angle", 90.0),
    ("1 rad", "angle", 180.0 / math.pi),
    ("3.141592653589793 rad", "angle", 180.0),
    ("-1.5707963267948966 rad", "angle", -90.0),
    # resistivity (ohm*m)
    ("1.72e-8 ohm*m", "resistivity", 1.72e-8),
    ("1.72 uohm*cm", "resistivity", 1.72e-8),
    # plain numbers
    ("1.5", "number", 1.5),
]


@pytest.mark.parametrize("text,kind,expected", GOOD, ids=[f"{k}:{t.strip()}" for t, k, _ in GOOD])
def test_string_with_unit(text, kind, expected):
    value = quantity(text, kind, KEY)
    assert isinstance(value, float)
    assert value == pytest.approx(expected, rel=1e-12, abs=1e-15)


@pytest.mark.parametrize("kind", ["length", "frequency", "current", "angle", "temperature",
                                  "resistivity", "number"])
@pytest.mark.parametrize("value", [0, 7, 0.00045, 2.5e5, -3.0])
def test_bare_numbers_are_si(kind, value):
    """A TOML number is taken as SI (degC, deg)."""
    assert quantity(value, kind, KEY) == float(value)
    assert isinstance(quantity(value, kind, KEY), float)


@pytest.mark.parametrize("kind", ["length", "frequency", "current", "resistivity"])
def test_string_without_unit_is_refused(kind):
    """A quoted number without a unit is a forgotten unit, not SI: "3.2" could mean mm."""
    with pytest.raises(CaseError, match="no unit"):
        quantity("3.2", kind, KEY)


@pytest.mark.parametrize("kind", ["angle", "temperature", "number"])
def test_string_without_unit_where_the_unit_is_implied(kind):
    """Angles default to degrees and temperatures to degC; plain numbers have no unit."""
    assert quantity("7", kind, KEY) == 7.0


def error(value: object, kind: str) -> CaseError:
    with pytest.raises(CaseError) as info:
        quantity(value, kind, KEY)
    return info.value


def assert_one_line(err: CaseError) -> str:
    text = str(err)
    assert err.key == KEY
    assert text.startswith(KEY + ": ")
    assert len(text.splitlines()) == 1
    assert err.problem and err.fix
    return text


@pytest.mark.parametrize("kind", ["length", "frequency", "current", "angle", "temperature",
                                  "resistivity", "number"])
@pytest.mark.parametrize("value", [True, False])
def test_booleans_refused(kind, value):
    assert_one_line(error(value, kind))


@pytest.mark.parametrize("kind", ["length", "frequency", "current", "angle", "temperature", "number"])
@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf])
def test_nan_and_inf_numbers_refused(kind, value):
    assert "finite" in assert_one_line(error(value, kind))


@pytest.mark.parametrize("text,kind", [
    ("nan mm", "length"), ("inf mm", "length"), ("-inf Hz", "frequency"), ("NaN", "number"),
    ("1e999 mm", "length"),        # the number itself overflows
    ("1e999", "current"),
    ("1e400 K", "temperature"),
    ("1e308 GHz", "frequency"),    # finite number, infinite once scaled to SI
])
def test_nan_and_inf_strings_refused(text, kind):
    assert_one_line(error(text, kind))


@pytest.mark.parametrize("text,kind", [
    ("3.2 kg", "length"),
    ("5 mm", "frequency"),
    ("200 khz", "frequency"),      # unit symbols are case-sensitive: kHz
    ("200 KHz", "frequency"),
    ("1.5 V", "current"),
    ("1 mdeg", "angle"),           # angles take no prefix
    ("100 F", "temperature"),
    ("1 dm", "length"),            # no deci prefix
    ("1 m m", "length"),
    ("2 mm", "number"),
])
def test_wrong_unit_refused(text, kind):
    message = assert_one_line(error(text, kind))
    assert repr(text.split(" ", 1)[1]) in message or "without a unit" in message or "degC" in message


@pytest.mark.parametrize("text", ["abc mm", "", "   ", "mm", "1.2.3 mm", "one mm", "0x10 mm", "1,5 mm"])
def test_unreadable_refused(text):
    message = assert_one_line(error(text, "length"))
    assert '"0.45 mm"' in message


@pytest.mark.parametrize("value", [None, [1, 2], {"value": 1}, b"1 mm"])
def test_other_types_refused(value):
    assert_one_line(error(value, "length"))


def test_message_names_the_unit_and_an_example():
    message = str(error("3.2 kg", "length"))
    assert message == f"{KEY}: unit 'kg' is not a length unit; write it such as \"0.45 mm\""
    assert "an angle unit" in str(error("3 kg", "angle"))


# --- terahertz, time and the frequency formatter -------------------------------
# SI prefixes T = 1e12, p = 1e-12 (BIPM, The International System of Units, SI
# Brochure 9th ed. 2019, table 7); the README allows frequencies up to 1 THz.

from racfield.geometry.case.sections import read_frequencies  # noqa: E402
from racfield.geometry.case.table import Table  # noqa: E402
from racfield.geometry.case.units import format_frequency, in_range  # noqa: E402


def test_one_terahertz_is_a_frequency_in_range():
    # SI Brochure: 1 THz = 1e12 Hz; the README's upper frequency limit is 1 THz
    assert quantity("1 THz", "frequency", KEY) == pytest.approx(1e12, rel=1e-15)
    assert in_range(1e12, "frequency", KEY, "1 THz") == 1e12
    assert read_frequencies(Table({"frequencies": ["1 THz"]}, "sweep")) == (1e12,)


def test_one_and_a_half_terahertz_is_refused_as_out_of_range():
    # the README's limit: frequencies of 0 or between 1 mHz and 1 THz
    assert quantity("1.5 THz", "frequency", KEY) == pytest.approx(1.5e12)
    with pytest.raises(CaseError) as caught:
        read_frequencies(Table({"frequencies": ["1 kHz", "1.5 THz"]}, "sweep"))
    message = str(caught.value)
    assert caught.value.key == "sweep.frequencies[2]" and len(message.splitlines()) == 1
    assert message.startswith("sweep.frequencies[2]: ") and "out of range" in message and "1 THz" in message


def test_picoseconds_are_a_time():
    # SI Brochure: pico = 1e-12, so 100 ps = 1e-10 s
    assert quantity("100 ps", "time", KEY) == pytest.approx(1e-10, rel=1e-15)
    assert in_range(1e-10, "time", KEY, "100 ps") == pytest.approx(1e-10)


@pytest.mark.parametrize("hz,text", [
    (0.0, "0 Hz (DC)"),
    (999.0, "999 Hz"),
    (1e3, "1 kHz"),
    (2.5e6, "2.5 MHz"),
    (1e12, "1 THz"),
])
def test_format_frequency_uses_si_prefixes(hz, text):
    # common practice: the largest SI prefix (SI Brochure 9th ed., table 7) that
    # leaves a number of at least 1; DC written out
    assert format_frequency(hz) == text
