"""Periodic winding-current waveforms and their harmonics.

A waveform is one period of a winding current on the time axis that every
winding shares (so relative phases come from the waveforms themselves).  All
shapes except the sine are periodic piecewise-linear functions, given by their
corner points (t_k, i_k) over one period; a step is two corners at the same
time.  Their Fourier coefficients have a closed form (below), so the harmonics
are exact, not sampled.

Conventions (README, Conventions and Current waveforms): SI units, RMS
phasors with exp(+j omega t).  The current is

    i(t) = I_dc + sum_{n>=1} sqrt(2) Re(I_n exp(j n w0 t)),   w0 = 2 pi / T,

so ``I_n`` is the RMS phasor of harmonic n, I_n = sqrt(2) c_n with the complex
Fourier coefficient c_n = (1/T) int_0^T i(t) exp(-j n w0 t) dt, and the RMS of
the whole current is sqrt(I_dc^2 + sum |I_n|^2) (Parseval's theorem).

Closed form on one linear segment a..b (values i_a, i_b, slope s), with
w = n w0 and E(t) = exp(-j w t):

    int_a^b i(t) E(t) dt = (j/w) (i_b E(b) - i_a E(a)) + s (E(b) - E(a)) / w^2

(integration by parts).  Nothing here imports ``fem`` or ``postprocess``.
"""

from __future__ import annotations

import csv
import difflib
import math
import re
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Iterable, Protocol

import numpy as np

from .errors import CaseError
from .units import LIMITS, in_range, quantity, short

SHAPES = ("triangle", "trapezoid", "sine")
DEFAULT_FRACTION = 0.995     #: share of the AC RMS^2 the solved harmonics must hold
DEFAULT_MAX_HARMONIC = 200   #: highest harmonic solved
MAX_HARMONIC_LIMIT = 999     #: with 0 Hz, one solve per harmonic stays within the 1000-frequency limit
NEGLIGIBLE_POWER = 1e-12     #: a harmonic below this share of every winding's AC RMS^2 is not solved
SPAN_TOLERANCE = 1e-9        #: relative slack on "the samples span at most one period"
STEP_TOLERANCE = 1e-12       #: corners closer than this share of the period make a step
MAX_TIME = 1e3               #: s, the longest time a case may give (a period of 1000 s: f0 = 1 mHz)

_TIME_UNITS = {"s": 1.0, "ms": 1e-3, "us": 1e-6, "\u00b5s": 1e-6, "\u03bcs": 1e-6, "ns": 1e-9, "ps": 1e-12}
_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_TIME = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")
TIME_EXAMPLE = '"10 us"'


class TableLike(Protocol):
    """The key-by-key table reader of :mod:`geometry.case` (unknown keys refused)."""

    path: str

    def key(self, name: str) -> str: ...
    def has(self, name: str) -> bool: ...
    def raw(self, name: str, default: object = None, required: bool = False, example: str = "...") -> object: ...
    def quantity(self, name: str, kind: str, default: float | None = None, required: bool = False,
                 positive: bool = False, nonnegative: bool = False) -> float: ...
    def text(self, name: str, default: str | None = None, choices: tuple[str, ...] = (),
             required: bool = False) -> str: ...
    def integer(self, name: str, default: int | None = None, minimum: int = 1,
                maximum: int = ...) -> int: ...
    def close(self) -> None: ...


# ---------------------------------------------------------------------------
# data


@dataclass(frozen=True)
class Waveform:
    """One period of a winding current.

    ``kind``: "triangle", "trapezoid", "samples", "file" (piecewise linear,
    corners in ``points`` as (t in s, i in A), times non-decreasing, spanning
    at most one period; the last corner joins the first one period later) or
    "sine" (``rms`` A, ``phase_deg``, plus ``dc`` A).  ``source``: the file
    read for "file".
    """

    kind: str
    points: tuple[tuple[float, float], ...] = ()
    rms: float = 0.0
    phase_deg: float = 0.0
    dc: float = 0.0
    source: str = ""

    @property
    def piecewise_linear(self) -> bool:
        return self.kind != "sine"


@dataclass(frozen=True)
class Spectrum:
    """A waveform's DC value, RMS and harmonics.

    ``dc`` A; ``rms`` A, the whole current's RMS (exact, from the waveform
    itself); ``ac_rms`` A, the RMS without the DC part; ``harmonics``: I_n,
    RMS phasors in A for n = 1 .. len(harmonics); ``needed``: the fewest
    harmonics 1..needed whose summed |I_n|^2 reach the requested fraction of
    ac_rms^2 (``len(harmonics)`` when the cap stops it first, 0 without AC).
    """

    dc: float
    rms: float
    ac_rms: float
    harmonics: tuple[complex, ...] = field(repr=False)
    needed: int

    def power(self) -> np.ndarray:
        """|I_n|^2 in A^2 for n = 1 .. len(harmonics)."""
        return np.abs(np.asarray(self.harmonics, dtype=complex)) ** 2

    def phasor(self, n: int) -> complex:
        """I_n (A RMS phasor); 0 beyond the computed harmonics."""
        return self.harmonics[n - 1] if 1 <= n <= len(self.harmonics) else 0j

    def captured(self, solved: Iterable[int]) -> float:
        """Share of ac_rms^2 held by the harmonics ``solved`` (1 without AC)."""
        if self.ac_rms <= 0.0:
            return 1.0
        p = self.power()
        return float(sum(p[n - 1] for n in solved if 1 <= n <= len(p)) / self.ac_rms ** 2)


@dataclass(frozen=True)
class WaveformSettings:
    """The [waveform] table and the plan it leads to.

    ``period`` s (the fundamental is 1/period); ``fraction``; ``max_harmonic``;
    ``harmonics``: the harmonic numbers solved (increasing, 1 always among
    them); ``dc``: 0 Hz is solved too (some winding carries DC).
    """

    period: float
    fraction: float = DEFAULT_FRACTION
    max_harmonic: int = DEFAULT_MAX_HARMONIC
    harmonics: tuple[int, ...] = ()
    dc: bool = False

    @property
    def fundamental(self) -> float:
        """f0 = 1/period in Hz, to 12 significant digits (a period of "10 us"
        gives 100 kHz exactly, not 100000.00000000001 Hz)."""
        return float(f"{1.0 / self.period:.12g}")

    def frequency(self, n: int) -> float:
        """Frequency of harmonic ``n`` in Hz (0 for n = 0)."""
        return n * self.fundamental

    @property
    def frequencies(self) -> tuple[float, ...]:
        """The frequencies to solve, Hz, increasing."""
        return ((0.0,) if self.dc else ()) + tuple(self.frequency(n) for n in self.harmonics)


# ---------------------------------------------------------------------------
# the Fourier series of a piecewise-linear periodic function


def _segments(points: tuple[tuple[float, float], ...], period: float):
    """Arrays (t_a, t_b, i_a, i_b) of the segments of positive length, the last
    corner joined to the first one period later; times shifted so that the
    first corner lies in [0, T)."""
    t = np.array([p[0] for p in points], dtype=float)
    i = np.array([p[1] for p in points], dtype=float)
    t = t - (t[0] - t[0] % period)  # whole periods only: the function is unchanged
    t_b = np.append(t[1:], t[0] + period)
    i_b = np.append(i[1:], i[0])
    keep = t_b - t > STEP_TOLERANCE * period   # shorter: a step (its slope would overflow)
    return t[keep], t_b[keep], i[keep], i_b[keep]


def _mean_and_ac_square(points, period: float) -> tuple[float, float]:
    """Mean (A) and mean of (i - mean)^2 (A^2) of a piecewise-linear function: exact."""
    t_a, t_b, i_a, i_b = _segments(points, period)
    dt = t_b - t_a
    mean = float(np.sum(0.5 * (i_a + i_b) * dt) / period)
    a, b = i_a - mean, i_b - mean
    ac2 = float(np.sum(dt * (a * a + a * b + b * b) / 3.0) / period)
    return mean, max(ac2, 0.0)


def _coefficients(points, period: float, count: int) -> np.ndarray:
    """c_n = (1/T) int_T i(t) exp(-j n w0 t) dt for n = 1..count (closed form per segment)."""
    t_a, t_b, i_a, i_b = _segments(points, period)
    dt = t_b - t_a
    slope = (i_b - i_a) / dt
    out = np.empty(count, dtype=complex)
    block = max(1, int(2_000_000 // max(len(t_a), 1)))
    for start in range(0, count, block):
        n = np.arange(start + 1, min(start + block, count) + 1, dtype=float)[:, None]
        w = 2.0 * math.pi * n / period
        e_a = np.exp(-1j * w * t_a)
        e_b = np.exp(-1j * w * t_b)
        # E(b) - E(a) without cancellation for short segments
        diff = e_a * (-2j * np.sin(0.5 * w * dt) * np.exp(-0.5j * w * dt))
        total = (1j / w) * (i_b * e_b - i_a * e_a) + slope * diff / (w * w)
        out[start:start + len(n)] = total.sum(axis=1) / period
    return out


def spectrum(waveform: Waveform, period: float, count: int, fraction: float = DEFAULT_FRACTION) -> Spectrum:
    """DC value, RMS and harmonics 1..``count`` of ``waveform`` with period ``period`` (s)."""
    if waveform.piecewise_linear:
        dc, ac2 = _mean_and_ac_square(waveform.points, period)
        harmonics = math.sqrt(2.0) * _coefficients(waveform.points, period, count)
    else:
        dc, ac2 = waveform.dc, waveform.rms ** 2
        harmonics = np.zeros(count, dtype=complex)
        harmonics[0] = waveform.rms * np.exp(1j * math.radians(waveform.phase_deg))
    return Spectrum(dc, math.sqrt(dc * dc + ac2), math.sqrt(ac2), tuple(complex(h) for h in harmonics),
                    needed_harmonics(np.abs(harmonics) ** 2, ac2, fraction))


def needed_harmonics(power: np.ndarray, ac_square: float, fraction: float) -> int:
    """The fewest harmonics 1..N whose summed ``power`` (|I_n|^2) reaches
    ``fraction`` of ``ac_square``; len(power) if they never do; 0 without AC."""
    if ac_square <= 0.0 or len(power) == 0:
        return 0
    reached = np.nonzero(np.cumsum(power) >= (fraction - 1e-12) * ac_square)[0]
    return int(reached[0]) + 1 if len(reached) else len(power)


def sample(waveform: Waveform, period: float, times: np.ndarray) -> np.ndarray:
    """i(t) in A at ``times`` (s): linear between corners, periodic."""
    times = np.asarray(times, dtype=float)
    if not waveform.piecewise_linear:
        w0 = 2.0 * math.pi / period
        return waveform.dc + math.sqrt(2.0) * waveform.rms * np.cos(w0 * times + math.radians(waveform.phase_deg))
    t = np.array([p[0] for p in waveform.points])
    i = np.array([p[1] for p in waveform.points])
    xp, fp = np.append(t, t[0] + period), np.append(i, i[0])
    return np.interp(t[0] + np.mod(times - t[0], period), xp, fp)


def plan(settings: WaveformSettings, spectra: list[Spectrum]) -> WaveformSettings:
    """The harmonics to solve: every harmonic up to each winding's ``needed``
    that is not negligible in some winding, and the fundamental always (the
    naive estimate uses it); 0 Hz when some winding carries DC."""
    count = settings.max_harmonic
    keep = np.zeros(count, dtype=bool)
    keep[0] = True
    for s in spectra:
        if s.needed:
            p = s.power()[: s.needed]
            keep[: s.needed] |= p > NEGLIGIBLE_POWER * s.ac_rms ** 2
    dc = any(abs(s.dc) > 1e-9 * s.rms for s in spectra)
    return replace(settings, harmonics=tuple(int(n) + 1 for n in np.nonzero(keep)[0]), dc=dc)


# ---------------------------------------------------------------------------
# the case file: [waveform] and [[winding]] waveform = {...}


def time_value(value: object, key: str) -> float:
    """A time in s from a number (s) or a string with a unit ("10 us", "2.5 ms", "100 ns")."""
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise CaseError(key, f"expected a time, got {value!r}", f"write a number in s or a string such as {TIME_EXAMPLE}")
    if isinstance(value, (int, float)):
        try:
            number = float(value)
        except OverflowError:  # an integer beyond the floating-point range
            raise CaseError(key, f"{short(value)} is too large",
                            f"give a time in s or a string such as {TIME_EXAMPLE}") from None
    else:
        match = _TIME.match(value)
        if not match:
            raise CaseError(key, f"cannot read {value!r} as a time", f"write a number and a unit, such as {TIME_EXAMPLE}")
        unit = match.group(2)
        if unit == "":
            raise CaseError(key, f"{value!r} has no unit", f"write the unit, such as {TIME_EXAMPLE}, or a plain number in s")
        if unit not in _TIME_UNITS:
            raise CaseError(key, f"unit {unit!r} is not a time unit", f"use s, ms, us or ns, such as {TIME_EXAMPLE}")
        number = float(match.group(1)) * _TIME_UNITS[unit]
    if not math.isfinite(number):
        raise CaseError(key, f"{value!r} is not a finite number", "give a finite time")
    if abs(number) > MAX_TIME:
        raise CaseError(key, f"{value!r} is out of range: a time must be at most {MAX_TIME:g} s",
                        f"give a time in that range, such as {TIME_EXAMPLE}")
    return number


def _time(table: TableLike, name: str, default: float | None = None, nonnegative: bool = False) -> float:
    value = table.raw(name, default, default is None, TIME_EXAMPLE)
    number = time_value(value, table.key(name))
    if nonnegative and number < 0.0:
        raise CaseError(table.key(name), f"must not be negative, got {value!r}", "give zero or a positive time")
    return number


def parse_settings(table: TableLike) -> WaveformSettings:
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


def _duty(table: TableLike, default: float | None) -> float:
    duty = table.quantity("duty", "number", default, required=default is None)
    if not 0.0 <= duty <= 1.0:
        raise CaseError(table.key("duty"), f"{duty:g} is outside 0..1",
                        "give the fraction of the period, such as duty = 0.4")
    return duty


def _triangle(table: TableLike, period: float) -> Waveform:
    """Rises from dc - p/2 to dc + p/2 over duty*T from t = delay, then falls back."""
    dc = table.quantity("dc", "current", 0.0)
    pp = table.quantity("peak_to_peak", "current", required=True, nonnegative=True)
    duty = _duty(table, 0.5)
    delay = _time(table, "delay", 0.0)
    table.close()
    low, high = dc - pp / 2, dc + pp / 2
    return Waveform("triangle", ((delay, low), (delay + duty * period, high)))


def _trapezoid(table: TableLike, period: float) -> Waveform:
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


def _sine(table: TableLike) -> Waveform:
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


def _samples(table: TableLike, period: float) -> Waveform:
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
        text = path.read_text(encoding="utf-8-sig")
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
        if abs(t) > MAX_TIME or abs(i) > LIMITS["current"][1]:
            raise CaseError(key, f'"{name}" line {line}: out of range (times at most {MAX_TIME:g} s, '
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


def _file(table: TableLike, period: float, base_dir: Path, allow_outside_files: bool = False) -> Waveform:
    name = table.raw("file")
    key = table.key("file")
    table.close()
    if not isinstance(name, str) or not name.strip():
        raise CaseError(key, f"expected a file name, got {name!r}", 'write file = "primary.csv"')
    path = case_file_path(name, base_dir, key, allow_outside_files)
    points = read_samples(path, name, key)
    _check_points(points, period, key, lambda k: f'"{name}" point {k + 1}')
    return Waveform("file", tuple(points), source=name)


def parse_waveform(table: TableLike, period: float, base_dir: Path, allow_outside_files: bool = False) -> Waveform:
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


def sine_of(current: float, phase_deg: float) -> Waveform:
    """A winding given by current/phase in a waveform case: a sine at the fundamental."""
    return Waveform("sine", rms=current, phase_deg=phase_deg)


def fundamental_phasor(s: Spectrum) -> tuple[float, float]:
    """(|I_1| A, phase of I_1 in degrees); (0, 0) when the fundamental is negligible."""
    i1 = s.phasor(1)
    if abs(i1) <= 1e-12 * max(s.rms, 1e-300):
        return 0.0, 0.0
    return abs(i1), math.degrees(np.angle(i1))
