"""Winding losses of non-sinusoidal current waveforms, harmonic by harmonic.

The field problem is linear and currents of different frequencies deliver no
average power together (sines of different harmonics are orthogonal over one
period), so the loss of winding w is the sum of its losses at DC and at each
harmonic:

    P_w = I_dc,w^2 Rdc,w + sum_n Re(I_n^H Q_w(n f0) I_n)

with I_n the RMS phasors of every winding's n-th harmonic (geometry/waveform.py)
and Q_w the winding loss matrices of the sweep
(:func:`postprocess.impedance.winding_loss_matrices`).  A DC current spreads by
resistance alone, with no proximity term, so the DC part is I_dc^2 times the
winding's DC resistance from the true conductor geometry (the 0 Hz field
solution gives the same within the mesh's conductor-area error).

The naive estimate is the common shortcut: the whole RMS current (DC
included) at the AC resistance of the fundamental, I_rms^2 Rac(f0), where
Rac(f0) is the winding's loss at the fundamental phasors of every winding over
|I_1|^2 (what a sinusoidal analysis at f0 reports).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from racfield.geometry.case import Case
from racfield.geometry.case.units import format_frequency

if TYPE_CHECKING:   # a type only: reading results needs no solver
    from racfield.fem.sweep import SweepResult


@dataclass
class WindingHarmonics:
    """One winding's waveform losses.  Currents in A (RMS), losses in W, resistances in ohm;
    the lists run over the solved harmonics (:attr:`HarmonicLosses.harmonics`)."""

    name: str
    dc_a: float
    rms_a: float
    harmonic_rms_a: list[float]
    harmonic_phase_deg: list[float]
    dc_loss_w: float
    harmonic_loss_w: list[float]
    rdc_ohm: float
    rac_fundamental_ohm: float | None  #: loss at the fundamental over |I_1|^2; None without a fundamental
    captured_fraction: float           #: share of the AC RMS^2 in the solved harmonics

    @property
    def ac_loss_w(self) -> float:
        return float(sum(self.harmonic_loss_w))

    @property
    def total_loss_w(self) -> float:
        return self.dc_loss_w + self.ac_loss_w

    @property
    def effective_rac_ohm(self) -> float | None:
        """Total loss over the squared RMS current (DC included)."""
        return self.total_loss_w / self.rms_a ** 2 if self.rms_a > 0.0 else None

    @property
    def naive_loss_w(self) -> float | None:
        """I_rms^2 Rac(f0): the whole RMS current at the fundamental's AC resistance."""
        if self.rac_fundamental_ohm is None:
            return None
        return self.rms_a ** 2 * self.rac_fundamental_ohm

    @property
    def naive_error_percent(self) -> float | None:
        """(naive - harmonic) / harmonic loss in %; negative: the shortcut underestimates."""
        naive = self.naive_loss_w
        if naive is None or self.total_loss_w <= 0.0:
            return None
        return (naive - self.total_loss_w) / self.total_loss_w * 100.0

    @property
    def dc_plus_ac_estimate_w(self) -> float | None:
        """I_dc^2 Rdc + I_ac^2 Rac(f0): the DC part at Rdc, all the AC current at the fundamental's Rac."""
        if self.rac_fundamental_ohm is None:
            return None
        ac2 = max(self.rms_a ** 2 - self.dc_a ** 2, 0.0)
        return self.dc_loss_w + ac2 * self.rac_fundamental_ohm

    @property
    def dc_plus_ac_error_percent(self) -> float | None:
        estimate = self.dc_plus_ac_estimate_w
        if estimate is None or self.total_loss_w <= 0.0:
            return None
        return (estimate - self.total_loss_w) / self.total_loss_w * 100.0


@dataclass
class HarmonicLosses:
    fundamental_hz: float
    harmonics: list[int]          #: harmonic numbers n solved
    frequencies_hz: list[float]   #: n f0 for each of them
    fraction: float
    max_harmonic: int
    windings: list[WindingHarmonics]

    @property
    def total_loss_w(self) -> float:
        return float(sum(w.total_loss_w for w in self.windings))


def _index(frequencies: np.ndarray, f: float) -> int:
    hits = np.nonzero(np.isclose(frequencies, f, rtol=1e-12, atol=0.0))[0]
    if not len(hits):
        raise ValueError(f"the sweep has no solution at {f:g} Hz")
    return int(hits[0])


def harmonic_losses(case: Case, sweep: SweepResult, q: np.ndarray, rdc: dict[str, float]) -> HarmonicLosses | None:
    """The losses of the case's current waveforms (None for a case without waveforms):
    from the winding loss matrices ``q`` (Nf, Nw, Nw, Nw) in W/A^2 of the solved
    ``sweep`` and each winding's DC resistance ``rdc`` in ohm."""
    settings = case.waveform
    if settings is None:
        return None
    names = list(sweep.winding_names)
    order = [names.index(w.name) for w in case.windings]
    spectra = [w.spectrum for w in case.windings]
    harmonics = list(settings.harmonics)
    loss = np.zeros((len(harmonics), len(names)))
    for h, n in enumerate(harmonics):
        i = np.zeros(len(names), dtype=complex)
        for k, s in zip(order, spectra):
            i[k] = s.phasor(n)
        f = _index(sweep.frequencies, settings.frequency(n))
        loss[h] = np.einsum("i,wij,j->w", i.conj(), q[f], i).real
    out = []
    for w, k, s in zip(case.windings, order, spectra):
        phasors = [s.phasor(n) for n in harmonics]
        i1 = s.phasor(1)
        rac1 = float(loss[harmonics.index(1), k] / abs(i1) ** 2) if abs(i1) > 1e-12 * s.rms else None
        out.append(WindingHarmonics(
            w.name, float(s.dc), float(s.rms), [float(abs(p)) for p in phasors],
            [float(math.degrees(np.angle(p))) for p in phasors],
            float(s.dc ** 2 * rdc[w.name]), [float(x) for x in loss[:, k]], float(rdc[w.name]), rac1,
            float(s.captured(harmonics))))
    return HarmonicLosses(settings.fundamental, harmonics, [settings.frequency(n) for n in harmonics],
                          settings.fraction, settings.max_harmonic, out)


def harmonics_document(result: HarmonicLosses | None) -> dict | None:
    """``harmonics`` in results.json (None for a case without waveforms)."""
    if result is None:
        return None
    return {
        "fundamental_hz": result.fundamental_hz,
        "harmonic_numbers": result.harmonics,
        "frequencies_hz": result.frequencies_hz,
        "fraction": result.fraction,
        "max_harmonic": result.max_harmonic,
        "windings": {
            w.name: {"dc_a": w.dc_a, "rms_a": w.rms_a, "harmonic_rms_a": w.harmonic_rms_a,
                     "harmonic_phase_deg": w.harmonic_phase_deg, "dc_loss_w": w.dc_loss_w,
                     "harmonic_loss_w": w.harmonic_loss_w, "ac_loss_w": w.ac_loss_w,
                     "total_loss_w": w.total_loss_w, "rdc_ohm": w.rdc_ohm,
                     "rac_fundamental_ohm": w.rac_fundamental_ohm, "effective_rac_ohm": w.effective_rac_ohm,
                     "naive_loss_w": w.naive_loss_w, "naive_error_percent": w.naive_error_percent,
                     "dc_plus_ac_estimate_w": w.dc_plus_ac_estimate_w,
                     "dc_plus_ac_error_percent": w.dc_plus_ac_error_percent,
                     "captured_fraction": w.captured_fraction}
            for w in result.windings
        },
        "total_loss_w": result.total_loss_w,
    }


def _cell(value: float | None, spec: str, width: int) -> str:
    return f"{'-' if value is None else format(value, spec):>{width}}"


def _bands(w: WindingHarmonics, harmonics: list[int]) -> str:
    """Where the loss sits: DC, the fundamental, harmonics 2-5, 6-10, 11 and up (% of the total)."""
    total = w.total_loss_w
    if total <= 0.0:
        return "no loss"
    parts = [("DC", w.dc_loss_w)]
    for label, low, high in (("n=1", 1, 1), ("n=2-5", 2, 5), ("n=6-10", 6, 10), ("n>10", 11, 10 ** 9)):
        value = sum(p for n, p in zip(harmonics, w.harmonic_loss_w) if low <= n <= high)
        if any(low <= n <= high for n in harmonics):
            parts.append((label, value))
    return ", ".join(f"{label} {value / total * 100:.1f} %" for label, value in parts)


def harmonics_table(result: HarmonicLosses) -> str:
    """The run's printed table: per winding DC, AC and total loss, effective
    Rac and the naive estimate's error; then the loss split by harmonic band."""
    top = max(result.harmonics)
    lines = [f"current waveforms: f0 = {format_frequency(result.fundamental_hz)}; {len(result.harmonics)} "
             f"harmonic{'s' if len(result.harmonics) != 1 else ''} solved, up to n = {top} "
             f"({format_frequency(top * result.fundamental_hz)}), holding at least "
             f"{min(w.captured_fraction for w in result.windings) * 100:.2f} % of each winding's AC RMS^2"]
    head = (f"{'winding':<14} {'DC (A)':>9} {'RMS (A)':>9} {'DC loss (W)':>12} {'AC loss (W)':>12} "
            f"{'total (W)':>10} {'Rac eff (ohm)':>14} {'Irms^2 Rac(f0)':>15} {'naive error':>12} "
            f"{'DC+AC error':>12}")
    lines += [head, "-" * len(head)]
    for w in result.windings:
        error, split = w.naive_error_percent, w.dc_plus_ac_error_percent
        lines.append(f"{w.name[:14]:<14} {w.dc_a:>9.4g} {w.rms_a:>9.4g} {w.dc_loss_w:>12.4g} {w.ac_loss_w:>12.4g} "
                     f"{w.total_loss_w:>10.4g} {_cell(w.effective_rac_ohm, '.4g', 14)} "
                     f"{_cell(w.naive_loss_w, '.4g', 15)} "
                     f"{'-' if error is None else f'{error:+.1f} %':>12} "
                     f"{'-' if split is None else f'{split:+.1f} %':>12}")
    lines.append(f"{'total':<14} {'':>9} {'':>9} {sum(w.dc_loss_w for w in result.windings):>12.4g} "
                 f"{sum(w.ac_loss_w for w in result.windings):>12.4g} {result.total_loss_w:>10.4g}")
    lines.append("naive: the whole RMS current at the fundamental's Rac, Irms^2 Rac(f0); DC+AC: Idc^2 Rdc + "
                 "Iac^2 Rac(f0); errors against the harmonic sum")
    lines.append("loss by harmonic: " + "; ".join(f"{w.name} {_bands(w, result.harmonics)}" for w in result.windings))
    return "\n".join(lines)


def waveform_lines(case: Case) -> str:
    """``racfield check``: each winding's DC, RMS and fundamental, and the harmonics to solve."""
    settings = case.waveform
    if settings is None:
        return ""
    lines = [f"waveforms: period {settings.period * 1e6:.6g} us (f0 = {format_frequency(settings.fundamental)}); "
             f"harmonics solved: {_ranges(settings.harmonics)}"
             + ("; and 0 Hz (DC)" if settings.dc else "")
             + f" (fraction {settings.fraction:g}, max_harmonic {settings.max_harmonic})",
             f"{'winding':<14} {'shape':<10} {'DC (A)':>9} {'RMS (A)':>9} {'I1 (A)':>9} {'I1 (deg)':>9} "
             f"{'needed':>7} {'AC RMS^2 held':>14}"]
    for w in case.windings:
        s = w.spectrum
        kind = w.waveform.kind if w.waveform else "current"
        lines.append(f"{w.name[:14]:<14} {kind:<10} {s.dc:>9.4g} {s.rms:>9.4g} {abs(s.phasor(1)):>9.4g} "
                     f"{math.degrees(np.angle(s.phasor(1))):>9.1f} {s.needed:>7d} "
                     f"{s.captured(settings.harmonics) * 100:>12.3f} %")
    return "\n".join(lines)


def _ranges(numbers) -> str:
    """1, 2, 3, 5, 7 -> '1-3, 5, 7'."""
    numbers = list(numbers)
    out, start = [], 0
    for k in range(1, len(numbers) + 1):
        if k == len(numbers) or numbers[k] != numbers[k - 1] + 1:
            a, b = numbers[start], numbers[k - 1]
            out.append(f"{a}" if a == b else f"{a}-{b}")
            start = k
    return ", ".join(out)
