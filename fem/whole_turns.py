"""Whole turns: the window section and the end-turn section, combined by their
share of every turn's length.

On E-type cores only part of each turn lies inside the core window; the rest
(the end turns) runs in air beside the centre leg's face, with no outer leg or
yoke.  The trade's 2-D remedy, done here: solve the window cross-section and
the end-turn cross-section (the same conductors, ``window.boundary =
"open-wall"``: air beside a magnetic wall at x = 0) and combine them by length.
A conductor c of turn length l_c has l_end,c in the end section and
l_win,c = l_c - l_end,c in the window, so its loss is

    P_c = p_win,c l_win,c + p_end,c l_end,c          (per-metre losses times lengths)

and the same weights combine its loss matrices.  The conductor impedance
matrix combines pair by pair with the weights of the pair's mean length,
W_cd = (l_end,c + l_end,d) / (l_c + l_d): the symmetric part of the voltage
model V_c = l_win,c E_win,c + l_end,c E_end,c, which keeps the stored energy
(1/2) sum_c (l_win,c i_c psi_win,c + l_end,c i_c psi_end,c) exact.  With equal
turn lengths every weight is the same number (the end-turn fraction) and the
combination is exact and symmetric.  Currents shared by untransposed parallel
conductors follow from the combined impedance.

The combined sweep is again "per metre of turn": divided by the turn length,
so that everything downstream multiplies by the same turn length as before.
"""

from __future__ import annotations

import time
from dataclasses import replace
from typing import Callable

import numpy as np

from racfield.geometry.case import Case
from racfield.geometry.turn_length import TurnLengths, turn_lengths

from .parallel import basis_impedance, sharing
from . import sweep as single
from .capacitance import solve_case_capacitance
from .coupled_thermal import solve_case_thermal
from .sweep import PointResult, SweepResult


def end_section(case: Case) -> Case:
    """The end-turn cross-section of ``case``: the same conductors in air beside
    a magnetic wall at x = 0 (the centre leg's face), no core body."""
    return replace(case, window=replace(case.window, boundary="open-wall"), core=None, end_turns=None)


def window_section(case: Case) -> Case:
    """The window cross-section of ``case`` alone."""
    return replace(case, end_turns=None)


def end_weights(case: Case, turn_lengths: np.ndarray) -> np.ndarray:
    """Each conductor's share of its length in the end section (Nc,): the
    fraction, or ``[end_turns] length`` over the conductor's turn length (m)."""
    ends = case.end_turns
    if ends.fraction is not None:
        return np.full(len(turn_lengths), ends.fraction)
    return np.minimum(ends.length / turn_lengths, 1.0)


def combine(window: SweepResult, end: SweepResult, weights: np.ndarray, turns: TurnLengths,
            winding_currents: np.ndarray) -> SweepResult:
    """The whole-turn sweep of ``window`` and ``end`` (same conductors and
    frequencies), ``weights`` (Nc,) the end-turn share of every conductor's
    length, ``turns`` the turn lengths, ``winding_currents`` (Nw,) A RMS.
    Parallel strands share current by the whole-turn impedance."""
    lengths = turns.metres
    w = np.asarray(weights, dtype=float)
    pair = (w[:, None] * lengths[:, None] + w[None, :] * lengths[None, :]) / (lengths[:, None] + lengths[None, :])
    impedance = (1.0 - pair) * window.impedance_per_m + pair * end.impedance_per_m
    inductance = (1.0 - pair) * window.inductance_per_m + pair * end.inductance_per_m
    loss_matrix = ((1.0 - w)[None, :, None, None] * window.loss_matrix_per_m
                   + w[None, :, None, None] * end.loss_matrix_per_m)
    excitation = window.excitation
    shares = sharing(basis_impedance(turns.impedance(impedance), window.connection), excitation.windings)
    basis_currents = shares @ np.asarray(winding_currents, dtype=complex)
    loss = np.einsum("fa,fcab,fb->fc", basis_currents.conj(), loss_matrix, basis_currents).real
    timings = {k: window.timings.get(k, 0.0) + end.timings.get(k, 0.0) for k in window.timings}
    warnings = window.warnings + [dict(x, message="end-turn section: " + x["message"]) for x in end.warnings]
    info = dict(window.sweep_info, end_section=dict(end.sweep_info))
    return replace(window, loss_per_m=loss, impedance_per_m=impedance, inductance_per_m=inductance,
                   loss_matrix_per_m=loss_matrix, basis_currents=basis_currents, timings=timings,
                   warnings=warnings, sweep_info=info, unknowns=window.unknowns + end.unknowns,
                   elements=window.elements + end.elements)


def run_case_sweep(case: Case, progress: Callable[[int, int, float], None] | None = None,
                   method: str = "auto", done: dict[int, PointResult] | None = None,
                   on_point: Callable | None = None) -> SweepResult:
    """The sweep of ``case``: :func:`~racfield.fem.sweep.run_sweep` of its window,
    and with ``[end_turns]`` also of its end-turn section, combined (the window
    sweep keeps ``done``/``on_point`` for resuming; the end section is solved
    whole).  The result carries both sections in ``sections``."""
    if case.end_turns is None:
        finish = solve_case_thermal if case.thermal is not None else None
        result = single.run_sweep(case, progress=progress, method=method, done=done, on_point=on_point,
                                  finish=finish)
    else:
        window = single.run_sweep(window_section(case), progress=progress, method=method, done=done,
                                  on_point=on_point)
        end = single.run_sweep(end_section(case), method=method)
        turns = turn_lengths(case, window.conductors)
        weights = end_weights(case, turns.metres)
        whole = combine(window, end, weights, turns, np.array([w.phasor for w in case.windings]))
        result = replace(whole, sections={"window": window, "end": end}, end_weights=weights)
    if case.dielectric is not None:
        start = time.perf_counter()
        result.capacitance = solve_case_capacitance(case, result.conductors)
        result.timings["capacitance_s"] = time.perf_counter() - start
    return result
