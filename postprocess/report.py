"""Winding-level results of a sweep, and the results document (results.json).

A winding's turns are in series and carry the winding current I.  Its AC
resistance at a frequency is the loss in its own conductors, with every
winding carrying its case current, divided by |I|^2 (RMS): so it includes the
proximity loss caused by the other windings' fields at the case excitation.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from racfield.geometry.machine import sparse_solver
from racfield.fem.sweep import SweepResult
from racfield.geometry.case import Case

from racfield.geometry.resistance import winding_dc_resistance
from racfield.geometry.turn_length import TurnLengths, turn_lengths

from .estimates import hand_estimates
from .harmonics import harmonic_losses, harmonics_document
from .sections import sections_document
from .capacitance import capacitance_document
from .thermal import thermal_document
from .impedance import leakage, magnetizing, winding_loss_matrices, winding_matrices

CAUTION = ("Results are model estimates from a 2-D field solution. Temperature rise, insulation, "
           "creepage/clearance and safety isolation follow the applicable safety standards, "
           "local codes and licensed practice.")

PHASOR_CONVENTION = ("time-harmonic phasors with exp(+j*omega*t); currents are RMS: "
                     "i(t) = sqrt(2) * Re(I * exp(j*omega*t)), I = I_rms * exp(j*phase)")


@dataclass
class WindingResult:
    """One winding over the sweep: resistances in ohm, losses in W, current in A RMS."""

    name: str
    turns: int
    current_a_rms: float
    phase_deg: float
    rdc_ohm: float
    rac_ohm: list[float | None]
    rac_over_rdc: list[float | None]
    loss_w: list[float]


@dataclass
class Report:
    """Everything the writers need.  ``estimates``: the hand estimates of
    :func:`postprocess.estimates.hand_estimates` for the same frequencies;
    ``error_estimate``: the discretization-error estimate of
    :mod:`racfield.mesh_check` (None when not asked for)."""

    case: Case
    sweep: SweepResult
    windings: list[WindingResult]
    estimates: dict
    error_estimate: dict | None = None

    @cached_property
    def magnetic(self) -> dict:
        """Impedance, inductance, leakage and loss matrices (computed once)."""
        return magnetic_document(self)

    @cached_property
    def lengths(self) -> TurnLengths:
        """Every conductor's factor to whole turns (its turn length, see
        :mod:`racfield.geometry.turn_length`)."""
        return turn_lengths(self.case, self.sweep.conductors)

    @cached_property
    def loss_matrices(self) -> np.ndarray:
        """Winding loss matrices Q (Nf, Nw, Nw, Nw) in W/A^2 (computed once)."""
        return winding_loss_matrices(self.sweep, self.lengths)

    @cached_property
    def harmonics(self):
        """The current waveforms' losses (None without waveforms; computed once)."""
        return harmonic_losses(self.case, self.sweep, self.loss_matrices,
                               {w.name: w.rdc_ohm for w in self.windings})

    @cached_property
    def sections(self) -> dict | None:
        """Window, end-turn and whole-turn results side by side (None without [end_turns]; computed once)."""
        return sections_document(self.case, self.sweep, self.windings, self.lengths.metres)

    @cached_property
    def thermal(self) -> dict | None:
        """``thermal`` of results.json (None without [thermal]; computed once)."""
        return thermal_document(self.case, self.sweep.thermal, self.sweep.conductors)

    @cached_property
    def capacitance(self) -> dict | None:
        """``capacitance`` of results.json (None without [dielectric]; computed once)."""
        return capacitance_document(self.case, self.sweep.capacitance, self.sweep.conductors)

    @property
    def total_loss_w(self) -> list[float]:
        return [float(sum(w.loss_w[i] for w in self.windings)) for i in range(len(self.sweep.frequencies))]

    def conductor_loss_w(self) -> np.ndarray:
        """(Nf, Nc) loss of every conductor in W (whole turn length)."""
        return self.sweep.loss_per_m * self.lengths.metres

    def conductor_rdc_ohm(self) -> np.ndarray:
        """(Nc,) DC resistance of every conductor in ohm (whole turn length)."""
        return self.sweep.rdc_per_m * self.lengths.metres


def winding_results(case: Case, sweep: SweepResult) -> list[WindingResult]:
    """Aggregate conductors into windings (turns in series), each conductor
    scaled by its turn length (:mod:`racfield.geometry.turn_length`)."""
    lengths = turn_lengths(case, sweep.conductors)
    results = []
    for n, w in enumerate(case.windings):
        idx = [c.index for c in sweep.conductors if c.winding == w.name]
        # turns in series, parallel conductors joined as in the field solution
        rdc = winding_dc_resistance(case, sweep.conductors, w.name, sweep.rdc_per_m)
        loss = (sweep.loss_per_m[:, idx] * lengths.weights[idx]).sum(axis=1) * lengths.scale
        if w.current > 0.0:
            rac = [float(p / w.current ** 2) for p in loss]
            ratio = [r / rdc for r in rac]
        else:
            rac = [None] * len(loss)
            ratio = [None] * len(loss)
        results.append(WindingResult(w.name, int(sweep.excitation.turns[n]), w.current, w.phase_deg, rdc, rac, ratio,
                                     [float(p) for p in loss]))
    return results


def build_report(case: Case, sweep: SweepResult) -> Report:
    return Report(case, sweep, winding_results(case, sweep),
                  hand_estimates(case, sweep.frequencies, conductors=sweep.conductors))


def results_document(report: Report, solved_of: int | None = None) -> dict:
    """The results.json document (see README, result files).  ``solved_of``:
    the number of frequencies of the whole run when ``report`` holds only the
    points solved so far (a partial document: no field, MMF or harmonics)."""
    case, sweep = report.case, report.sweep
    conductor_loss = report.conductor_loss_w()
    conductor_rdc = report.conductor_rdc_ohm()
    per_turn = case.centre_leg is not None and not case.model.axisymmetric
    partial = solved_of is not None
    status = ({"complete": False, "solved": len(sweep.frequencies), "of": solved_of} if partial
              else {"complete": True, "solved": len(sweep.frequencies), "of": len(sweep.frequencies)})
    return {
        "status": status,
        "title": case.title,
        "symmetry": case.model.symmetry,
        "temperature_c": case.model.temperature_c,
        "length_m": None if case.model.axisymmetric or per_turn else case.model.length,
        "frequencies_hz": [float(f) for f in sweep.frequencies],
        "windings": {
            w.name: {"turns": w.turns, "current_a_rms": w.current_a_rms, "phase_deg": w.phase_deg,
                     "rdc_ohm": w.rdc_ohm, "rac_ohm": w.rac_ohm, "rac_over_rdc": w.rac_over_rdc,
                     "loss_w": w.loss_w}
            for w in report.windings
        },
        "total_loss_w": report.total_loss_w,
        "estimates": report.estimates,
        "conductors": [
            {"winding": c.winding, "turn": c.turn, "shape": c.shape, "x_m": c.x, "y_m": c.y,
             "width_m": c.width, "height_m": c.height,
             **({"r_m": case.window.radius(c.x)} if case.model.axisymmetric else {}),
             **({"length_m": float(report.lengths.metres[c.index])} if per_turn else {}),
             "area_m2": c.copper_area, "rdc_ohm": float(conductor_rdc[c.index]),
             "loss_w": [float(p) for p in conductor_loss[:, c.index]]}
            for c in sweep.conductors
        ],
        **report.magnetic,
        **({"mmf": m} if not partial and (m := mmf_document(report)) else {}),
        **({"parallel": par} if (par := parallel_document(report)) else {}),
        **({"harmonics": h} if not partial and (h := harmonics_document(report.harmonics)) else {}),
        **({"sections": report.sections} if report.sections else {}),
        **({"thermal": report.thermal} if not partial and report.thermal else {}),
        **({"capacitance": report.capacitance} if not partial and report.capacitance else {}),
        "sweep": dict(sweep.sweep_info) or {"method": "point-by-point", "expansion_hz": [],
                                            "max_check_deviation": None},
        "warnings": [dict(w) for w in sweep.warnings],
        **({"error_estimate": report.error_estimate} if report.error_estimate is not None else {}),
        "mesh": {"unknowns": sweep.unknowns, "elements": sweep.elements,
                 "surface_element_size_m": sweep.surface_size,
                 "largest_conductor_area_error": float(np.abs(sweep.mesh_area_error).max()),
                 "sparse_solver": sparse_solver(sweep.unknowns),
                 "timings_s": {k: round(v, 3) for k, v in sweep.timings.items()}},
        "conventions": {"units": "SI", "currents": "RMS", "phasors": PHASOR_CONVENTION},
        "caution": CAUTION,
    }


def _nested(array: np.ndarray) -> list:
    return np.asarray(array, dtype=float).tolist()


def magnetic_document(report: Report) -> dict:
    """Impedance matrix, inductances, leakage and loss matrices for results.json.

    In a closed ideal-core window the magnetizing inductance is infinite and
    only ampere-turn-balanced currents exist: no impedance matrix or self
    inductance is reported there, only the short-circuit (leakage) impedance.
    """
    case, sweep = report.case, report.sweep
    names = sweep.winding_names
    turns = sweep.excitation.turns
    z, l = winding_matrices(sweep, report.lengths)
    closed = case.window.boundary == "ideal-core"
    doc: dict = {}
    if not closed:
        doc["impedance"] = {"order": names, "r_ohm": _nested(z.real), "l_h": _nested(l)}
        doc["inductance"] = {"self_l_h": {n: _nested(l[:, i, i]) for i, n in enumerate(names)}}
        if case.window.boundary == "core":
            doc["inductance"]["magnetizing_l_h"] = magnetizing(l, turns)
            doc["inductance"]["magnetizing_referred_to"] = names[0]
    if len(names) >= 2:
        l_sc, r_sc = leakage(sweep.frequencies, z, l, turns, balanced=closed)
        doc["leakage"] = {"referred_to": names[0], "l_h": l_sc, "r_ohm": r_sc}
    q = report.loss_matrices
    doc["loss_matrix"] = {"order": names, "re_w_per_a2": _nested(q.real), "im_w_per_a2": _nested(q.imag),
                          "balanced_only": closed}
    return doc


def parallel_document(report: Report) -> dict:
    """Windings with parallel conductors: each strand's current (magnitude in A
    RMS and phase in degrees, per frequency) and the circulating-current loss:
    the winding's loss minus its loss with equal shares (W, per frequency)."""
    case, sweep = report.case, report.sweep
    exc = sweep.excitation
    out = {}
    for setting in case.parallel:
        w = [n.name for n in case.windings].index(setting.winding)
        columns = [i for i, (name, _) in enumerate(exc.labels) if name == setting.winding]
        x = sweep.basis_currents
        if setting.transposed:
            shares = np.repeat(x[:, columns] / setting.conductors, setting.conductors, axis=1)
            circulating = [0.0] * len(sweep.frequencies)
        else:
            shares = x[:, columns]
            weights = exc.membership[:, w] * report.lengths.weights   # each conductor its turn length
            q = np.einsum("k,fkab->fab", weights, sweep.loss_matrix_per_m)
            equal = x.copy()
            equal[:, columns] = x[:, columns].sum(axis=1, keepdims=True) / len(columns)
            actual_loss = np.einsum("fa,fab,fb->f", x.conj(), q, x).real
            equal_loss = np.einsum("fa,fab,fb->f", equal.conj(), q, equal).real
            circulating = ((actual_loss - equal_loss) * report.lengths.scale).tolist()
        out[setting.winding] = {"conductors_per_turn": setting.conductors, "transposed": setting.transposed,
                                "strand_current_a": np.abs(shares).tolist(),
                                "strand_phase_deg": np.degrees(np.angle(shares)).tolist(),
                                "circulating_loss_w": circulating}
    return out


def mmf_document(report: Report) -> dict | None:
    """The MMF profile for results.json (None for an open boundary): values are
    the real parts of the MMF phasors in phase with the first winding's current."""
    snap = report.sweep.snapshot
    if snap is None or snap.mmf is None:
        return None
    first = report.case.windings[0]
    unit = first.phasor / abs(first.phasor) if abs(first.phasor) > 0 else 1.0
    profile = snap.mmf
    return {"frequency_hz": float(snap.frequency), "reference_winding": first.name,
            "across_width": profile.across_width,
            "position_m": profile.positions.tolist(),
            "field_a": (profile.field * np.conj(unit)).real.tolist(),
            "ideal_a": (profile.ideal * np.conj(unit)).real.tolist(),
            "layer_faces_m": profile.boundaries.tolist()}
