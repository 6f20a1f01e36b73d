"""Whole turns: the window section, the end-turn section and the whole turn
side by side (``[end_turns]``, see :mod:`racfield.fem.whole_turns`).

For each section and winding: Rac/Rdc as if the whole turn ran through that
section (its per-metre loss times the turn length, over I^2 Rdc), and the
section's own share of the loss (per-metre loss times the section's length),
in W; the whole turn is the combined result.  The two shares add up to the
whole-turn loss for windings whose currents are imposed (for untransposed
parallel conductors the whole turn's current sharing differs slightly from
either section's alone).
"""

from __future__ import annotations

import numpy as np

from racfield.fem.sweep import SweepResult
from racfield.geometry.case import Case
from racfield.geometry.resistance import winding_dc_resistance


def section_windings(case: Case, sweep: SweepResult, share: np.ndarray, metres: np.ndarray) -> dict:
    """Per winding of one section ``sweep``: ``rac_over_rdc`` [per f] of the whole
    turn in this section and ``loss_w`` [per f] of the section's ``share`` (Nc,) of
    every turn's length ``metres`` (Nc,) m (W)."""
    out = {}
    for w in case.windings:
        idx = [c.index for c in sweep.conductors if c.winding == w.name]
        rdc = winding_dc_resistance(case, sweep.conductors, w.name, sweep.rdc_per_m)
        whole = (sweep.loss_per_m[:, idx] * metres[idx]).sum(axis=1)
        part = (sweep.loss_per_m[:, idx] * (metres * share)[idx]).sum(axis=1)
        ratio = [float(p / w.current ** 2 / rdc) if w.current > 0.0 else None for p in whole]
        out[w.name] = {"rac_over_rdc": ratio, "loss_w": [float(p) for p in part]}
    return out


def sections_document(case: Case, sweep: SweepResult, windings: list, metres: np.ndarray) -> dict | None:
    """``sections`` in results.json (None without ``[end_turns]``): the rule, the
    end-turn share of the turn length, and per section and winding Rac/Rdc and
    loss; ``windings``: the whole-turn winding results of the report, ``metres``
    (Nc,) m every conductor's turn length."""
    if sweep.sections is None:
        return None
    weights = np.asarray(sweep.end_weights, dtype=float)
    ends = case.end_turns
    return {
        "rule": "per turn P = p_window l_window + p_end l_end (per-metre losses times the sections' lengths); "
                "impedance, inductance and loss matrices combined by the same lengths",
        "end_fraction": ends.fraction,
        "end_length_m": ends.length,
        "end_share": float(weights.mean()),
        "window": {"windings": section_windings(case, sweep.sections["window"], 1.0 - weights, metres)},
        "end": {"windings": section_windings(case, sweep.sections["end"], weights, metres)},
        "whole": {"windings": {w.name: {"rac_over_rdc": w.rac_over_rdc, "loss_w": w.loss_w} for w in windings}},
    }
