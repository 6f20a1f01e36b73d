"""The case file's waveforms: the [waveform] table and a winding's
``waveform = {...}`` (named shapes, samples, CSV files), read into the
:class:`~racfield.geometry.case.waveform.Waveform` model in SI units."""

from __future__ import annotations

import csv
import difflib
import math
from pathlib import Path

from .errors import CaseError
from .files import NotReadable, read_bytes
from .table import Table
from .units import EXAMPLES, LIMITS, in_range, quantity
from .waveform import (DEFAULT_FRACTION, DEFAULT_MAX_HARMONIC, MAX_HARMONIC_LIMIT, SHAPES, SPAN_TOLERANCE,
                       Waveform, WaveformSettings)


TIME_EXAMPLE = EXAMPLES["time"]


def time_value(value: object, key: str) -> float:
    """A time in s from a number (s) or a string with a unit ("10 us", "2.5 ms", "100 ns"), at most 1000 s."""
    return in_range(quantity(value, "time", key), "time", key, value)


def _time(table: Table, name: str, default: float | None = None, nonnegative: bool = False) -> float:
    value = table.raw(name, default, default is None, TIME_EXAMPLE)
    number = time_value(value, table.key(name))
    if nonnegative and number < 0.0:
        raise CaseError(table.key(name), f"must not be negative, got {value!r}", "give zero or a positive time")
    return number


def parse_settings(table: Table) -> WaveformSettings:
    """The [waveform] table: ``period`` (or ``frequency``, the fundamental),
    ``fraction``, ``max_harmonic``."""
    if table.has("period") and table.has("frequency"):
        raise CaseError(table.key("frequency"), "given together with period",
                        "give either period (one switching period) or frequency (the fundamental)")
    if table.has("frequency"):
        period = 1.0 / table.quantity("frequency", "frequency", required=True, positive=True)
    else:
        period = _time(table, "period")  # missing: names a misspelt key, or asks for period
        if not period > 0.0:
            raise CaseError(table.key("period"), f"must be greater than zero, got {table.raw('period')!r}",
                            f"give one period of the waveforms, such as {TIME_EXAMPLE}")
        if 1.0 / period > LIMITS["frequency"][1]:
            raise CaseError(table.key("period"), f"{table.raw('period')!r} is out of range: the fundamental "
                            "1/period must be at most 1 THz",
                            f"give a period of 1 ps or more, such as {TIME_EXAMPLE}")
    fraction = table.quantity("fraction", "number", DEFAULT_FRACTION)
    if not 0.0 < fraction <= 1.0:
        raise CaseError(table.key("fraction"), f"{fraction:g} is outside 0..1",
                        f"give the share of the AC RMS squared the harmonics must hold, such as {DEFAULT_FRACTION}")
    top = table.integer("max_harmonic", DEFAULT_MAX_HARMONIC, minimum=1)
    if top > MAX_HARMONIC_LIMIT:
        raise CaseError(table.key("max_harmonic"), f"{top} is more than {MAX_HARMONIC_LIMIT}",
                        f"use {MAX_HARMONIC_LIMIT} or fewer (every harmonic is one solve)")
    table.close()
    return WaveformSettings(period, fraction, top)


def _duty(table: Table, default: float | None) -> float:
    duty = table.quantity("duty", "number", default, required=default is None)
    if not 0.0 <= duty <= 1.0:
        raise CaseError(table.key("duty"), f"{duty:g} is outside 0..1",
                        "give the fraction of the period, such as duty = 0.4")
    return duty


def _triangle(table: Table, period: float) -> Waveform:
    """Rises from dc - p/2 to dc + p/2 over duty*T from t = delay, then falls back."""
    dc = table.quantity("dc", "current", 0.0)
    pp = table.quantity("peak_to_peak", "current", required=True, nonnegative=True)
    duty = _duty(table, 0.5)
    delay = _time(table, "delay", 0.0)
    table.close()
    low, high = dc - pp / 2, dc + pp / 2
    return Waveform("triangle", ((delay, low), (delay + duty * period, high)))


def _trapezoid(table: Table, period: float) -> Waveform:
    """A pulse from ``low``: its rise is centred on t = delay, its fall on
    t = delay + duty*T (duty: the pulse width at the 50 % level over the
    period); the top runs flat at ``high`` or as a ramp from ``start`` to ``end``."""
    low = table.quantity("low", "current", 0.0)
    if table.has("high"):
        for name in ("start", "end"):
            if table.has(name):
                raise CaseError(table.key(name), "given together with high",
                                "give high (a flat top) or start and end (a ramped top), not both")
        start = end = table.quantity("high", "current", required=True)
    elif table.has("start") or table.has("end"):
        start = table.quantity("start", "current", required=True)
        end = table.quantity("end", "current", required=True)
    else:
        table.quantity("high", "current", required=True)  # raises: missing, with a did-you-mean
        raise AssertionError("unreachable")
    duty = _duty(table, None)
    rise = _time(table, "rise", 0.0, nonnegative=True)
    fall = _time(table, "fall", 0.0, nonnegative=True)
    delay = _time(table, "delay", 0.0)
    table.close()
    edges = (rise + fall) / 2
    if edges > duty * period * (1 + 1e-12) or edges > (1 - duty) * period * (1 + 1e-12):
        raise CaseError(table.key("rise"), f"rise and fall ({rise * 1e6:.4g} us + {fall * 1e6:.4g} us) do not fit: "
                        f"half of each must fit in the pulse ({duty * period * 1e6:.4g} us) and in the rest "
                        f"of the period ({(1 - duty) * period * 1e6:.4g} us)",
                        "shorten rise and fall, or change duty")
    t1, t2 = delay - rise / 2, delay + rise / 2
    t3, t4 = delay + duty * period - fall / 2, delay + duty * period + fall / 2
    return Waveform("trapezoid", ((t1, low), (t2, start), (max(t3, t2), end), (max(t4, t2), low)))


def _sine(table: Table) -> Waveform:
    rms = table.quantity("rms", "current", required=True, nonnegative=True)
    phase = table.quantity("phase", "angle", 0.0)
    dc = table.quantity("dc", "current", 0.0)
    table.close()
    return Waveform("sine", rms=rms, phase_deg=phase, dc=dc)


def _check_points(points: list[tuple[float, float]], period: float, key: str, where) -> None:
    """At least two corners, times non-decreasing, spanning at most one period.
    ``where(k)`` names corner k (0-based) in messages."""
    if len(points) < 2:
        raise CaseError(key, f"{len(points)} point{'s' if len(points) != 1 else ''}: too few",
                        "give at least two [time, current] points over one period")
    for k in range(1, len(points)):
        if points[k][0] < points[k - 1][0]:
            raise CaseError(key, f"{where(k)}: time {points[k][0]:.6g} s is before the previous point's",
                            "list the points in time order (two points at one time make a step)")
    span = points[-1][0] - points[0][0]
    if span > period * (1 + SPAN_TOLERANCE):
        raise CaseError(key, f"the points span {span * 1e6:.6g} us, more than one period ({period * 1e6:.6g} us)",
                        "give one period of the waveform (it repeats every waveform.period)")


def _samples(table: Table, period: float) -> Waveform:
    values = table.raw("samples")
    key = table.key("samples")
    table.close()
    if not isinstance(values, list):
        raise CaseError(key, "expected a list of [time, current] pairs",
                        'write samples = [[0, "0 A"], ["4 us", "2 A"], ["10 us", "0 A"]]')
    points = []
    for k, pair in enumerate(values):
        item = f"{key}[{k + 1}]"
        if not isinstance(pair, list) or len(pair) != 2:
            raise CaseError(item, f"expected a [time, current] pair, got {pair!r}", 'write ["4 us", "2 A"]')
        current = quantity(pair[1], "current", item + "[2]")
        points.append((time_value(pair[0], item + "[1]"), in_range(current, "current", item + "[2]", pair[1])))
    _check_points(points, period, key, lambda k: f"point {k + 1}")
    return Waveform("samples", tuple(points))


def read_samples(path: Path, name: str, key: str) -> list[tuple[float, float]]:
    """Rows (time s, current A) of a two-column CSV file with a header line;
    blank lines and lines starting with # are skipped."""
    try:
        text = read_bytes(path).decode("utf-8-sig")
    except NotReadable as error:
        raise CaseError(key, f'"{name}" {error}', "give a CSV text file with columns time_s,current_a") from None
    except OSError as error:
        raise CaseError(key, f'cannot read "{name}" ({error.strerror or error.__class__.__name__})',
                        "give a CSV file with a header line and two columns time_s,current_a "
                        "(a relative path is taken from the case file's folder)") from None
    except UnicodeDecodeError:
        raise CaseError(key, f'"{name}" is not UTF-8 text', "give a CSV text file with columns time_s,current_a") from None
    rows = [(n + 1, row) for n, row in enumerate(csv.reader(text.splitlines()))
            if row and "".join(row).strip() and not row[0].lstrip().startswith("#")]
    if not rows:
        raise CaseError(key, f'"{name}" has no lines', "give a header line time_s,current_a and one row per point")
    header_line, header = rows[0]
    try:
        [float(cell) for cell in header]
        numeric = True
    except ValueError:
        numeric = False
    if numeric:
        raise CaseError(key, f'"{name}" line {header_line} has no header', "start the file with the line time_s,current_a")
    points = []
    for line, row in rows[1:]:
        if len(row) != 2:
            raise CaseError(key, f'"{name}" line {line}: {len(row)} column{"" if len(row) == 1 else "s"}',
                           "give two columns: time in s, current in A")
        try:
            t, i = float(row[0]), float(row[1])
        except ValueError:
            raise CaseError(key, f'"{name}" line {line}: cannot read {",".join(row)!r} as two numbers',
                            "give the time in s and the current in A as plain numbers") from None
        if not (math.isfinite(t) and math.isfinite(i)):
            raise CaseError(key, f'"{name}" line {line}: not a finite number', "give finite numbers")
        if abs(t) > LIMITS["time"][1] or abs(i) > LIMITS["current"][1]:
            raise CaseError(key, f'"{name}" line {line}: out of range (times at most {LIMITS["time"][1]:g} s, '
                            f"currents {LIMITS['current'][2]})", "give the time in s and the current in A")
        points.append((t, i))
    return points


def case_file_path(name: str, base_dir: Path, key: str, allow_outside_files: bool = False) -> Path:
    """The file ``name`` that a case refers to: a relative name is taken from
    ``base_dir`` (the case file's folder).  Unless ``allow_outside_files``, a
    name that resolves outside that folder (through ``..``, an absolute path or
    a symbolic link) is refused: a case file is data, and reads only what lies
    beside it."""
    if "\0" in name:
        raise CaseError(key, f"{name!r} contains a NUL character", "give the file's name")
    path = Path(name)
    if not path.is_absolute():
        path = base_dir / path
    if allow_outside_files:
        return path
    try:
        inside = path.resolve().is_relative_to(base_dir.resolve())
    except (OSError, RuntimeError):  # a symbolic-link loop, a name the system refuses
        inside = False
    if not inside:
        raise CaseError(key, f'"{name}" escapes the case folder',
                        "move the file beside the case or pass --allow-outside-files")
    return path


def _file(table: Table, period: float, base_dir: Path, allow_outside_files: bool = False) -> Waveform:
    name = table.raw("file")
    key = table.key("file")
    table.close()
    if not isinstance(name, str) or not name.strip():
        raise CaseError(key, f"expected a file name, got {name!r}", 'write file = "primary.csv"')
    path = case_file_path(name, base_dir, key, allow_outside_files)
    points = read_samples(path, name, key)
    _check_points(points, period, key, lambda k: f'"{name}" point {k + 1}')
    return Waveform("file", tuple(points), source=name)


def parse_waveform(table: Table, period: float, base_dir: Path, allow_outside_files: bool = False) -> Waveform:
    """A winding's ``waveform = {...}``: a named ``shape``, ``samples`` or a ``file``
    (taken from ``base_dir``, the case file's folder; outside it only with
    ``allow_outside_files``)."""
    given = [name for name in ("shape", "samples", "file") if table.has(name)]
    if len(given) > 1:
        raise CaseError(table.key(given[1]), f"given together with {given[0]}",
                        "give one of shape, samples or file")
    if not given:
        unread = list(getattr(table, "data", {}))
        for name in ("shape", "samples", "file"):
            typo = difflib.get_close_matches(name, unread, n=1, cutoff=0.75)
            if typo:
                raise CaseError(table.key(typo[0]), "unknown key", f'did you mean "{name}"?')
        raise CaseError(table.key("shape"), "missing",
                        'give shape = "triangle", "trapezoid" or "sine", samples = [[t, i], ...] or file = "current.csv"')
    if given[0] == "samples":
        return _samples(table, period)
    if given[0] == "file":
        return _file(table, period, base_dir, allow_outside_files)
    shape = table.text("shape", None, SHAPES, required=True)
    if shape == "triangle":
        return _triangle(table, period)
    if shape == "trapezoid":
        return _trapezoid(table, period)
    return _sine(table)
