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

import math
from dataclasses import dataclass, field, replace
from typing import Iterable

import numpy as np

SHAPES = ("triangle", "trapezoid", "sine")
DEFAULT_FRACTION = 0.995     #: share of the AC RMS^2 the solved harmonics must hold
DEFAULT_MAX_HARMONIC = 200   #: highest harmonic solved
MAX_HARMONIC_LIMIT = 999     #: with 0 Hz, one solve per harmonic stays within the 1000-frequency limit
NEGLIGIBLE_POWER = 1e-12     #: a harmonic below this share of every winding's AC RMS^2 is not solved
SPAN_TOLERANCE = 1e-9        #: relative slack on "the samples span at most one period"
STEP_TOLERANCE = 1e-12       #: corners closer than this share of the period make a step


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


def sine_of(current: float, phase_deg: float) -> Waveform:
    """A winding given by current/phase in a waveform case: a sine at the fundamental."""
    return Waveform("sine", rms=current, phase_deg=phase_deg)


def fundamental_phasor(s: Spectrum) -> tuple[float, float]:
    """(|I_1| A, phase of I_1 in degrees); (0, 0) when the fundamental is negligible."""
    i1 = s.phasor(1)
    if abs(i1) <= 1e-12 * max(s.rms, 1e-300):
        return 0.0, 0.0
    return abs(i1), math.degrees(np.angle(i1))
