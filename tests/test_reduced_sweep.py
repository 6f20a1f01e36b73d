"""The reduced-order sweep against the point-by-point sweep on validation cases.

Each case runs over 32 log-spaced frequencies twice, ``method="reduced"``
(Galerkin projection onto full solves at a few expansion frequencies,
multi-point moment matching as in Z. Bai, "Krylov subspace techniques for
reduced-order modeling of large-scale dynamical systems", Applied Numerical
Mathematics, 2002) and ``method="exact"`` (one factorization per frequency);
winding Rac/Rdc must agree within 0.05 %.  The cases are those of
test_validation_dowell.py (P. L. Dowell, "Effects of eddy currents in
transformer windings", Proc. IEE, vol. 113, no. 8, 1966) and
test_validation_round_wire.py (the Bessel-function internal impedance of a
round wire: Ramo, Whinnery, Van Duzer, Fields and Waves in Communication
Electronics), which are also checked against those references here.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from racfield.fem.sweep import run_sweep
from racfield.geometry.case import parse_case
from racfield.postprocess.report import build_report

import test_validation_dowell as dowell_case
import test_validation_round_wire as wire_case

POINTS = 32
AGREEMENT = 5e-4   # 0.05 %


def _both(doc):
    out = {}
    for method in ("reduced", "exact"):
        case = parse_case(doc)
        sweep = run_sweep(case, method=method)
        out[method] = (sweep, build_report(case, sweep))
    return out


def _dowell_doc(m: int) -> dict:
    foil = {"shape": "foil", "thickness": f"{dowell_case.THICKNESS * 1e3} mm",
            "height": f"{dowell_case.HEIGHT * 1e3} mm"}
    stack = 2 * m * (dowell_case.THICKNESS + dowell_case.INSULATION)
    freqs = list(np.geomspace(dowell_case.frequency_for(0.3), dowell_case.frequency_for(5.0), POINTS))
    return {
        "title": f"Dowell, {m} + {m} foil layers, reduced sweep",
        "model": {"symmetry": "planar", "length": "50 mm", "temperature": f"{dowell_case.TEMPERATURE} degC"},
        "sweep": {"frequencies": freqs},
        "window": {"width": stack + 0.1e-3, "height": f"{dowell_case.HEIGHT * 1e3} mm", "boundary": "ideal-core",
                   "margins": {"inner": 0, "outer": 0, "top": 0, "bottom": 0},
                   "stacking": "across-width"},
        "winding": [{"name": "primary", "material": "copper", "current": "3 A", "phase": 0},
                    {"name": "secondary", "material": "copper", "current": "3 A", "phase": 180}],
        "layer": [{"winding": "primary", "conductor": foil, "turns": 1, "repeat": m,
                   "insulation_after": dowell_case.INSULATION},
                  {"winding": "secondary", "conductor": foil, "turns": 1, "repeat": m,
                   "insulation_after": dowell_case.INSULATION}],
    }


def _wire_doc() -> dict:
    freqs = list(np.geomspace(wire_case.frequency_for(0.5), wire_case.frequency_for(8.0), POINTS))
    return {
        "title": "isolated round wire, reduced sweep",
        "model": {"symmetry": "planar", "length": "42 mm", "temperature": "20 degC"},
        "sweep": {"frequencies": freqs},
        "window": {"width": "2 mm", "height": "2 mm", "boundary": "open"},
        "winding": [{"name": "wire", "material": "copper", "current": f"{wire_case.CURRENT} A", "phase": 0}],
        "conductor": [{"winding": "wire", "shape": "round", "diameter": "1 mm", "at": ["1 mm", "1 mm"]}],
    }


def _agreement(results) -> float:
    (reduced, rep_r), (exact, rep_e) = results["reduced"], results["exact"]
    assert reduced.sweep_info["method"] == "reduced"
    assert exact.sweep_info["method"] == "point-by-point"
    assert len(reduced.sweep_info["expansion_hz"]) < POINTS // 2
    worst = 0.0
    for wr, we in zip(rep_r.windings, rep_e.windings):
        worst = max(worst, float(np.max(np.abs(np.array(wr.rac_over_rdc) / np.array(we.rac_over_rdc) - 1.0))))
    return worst


def test_reduced_sweep_matches_point_by_point_dowell():
    results = _both(_dowell_doc(3))
    worst = _agreement(results)
    print(f"\nDowell m = 3, {POINTS} frequencies: reduced vs point-by-point max deviation {worst:.2e}, "
          f"self-check {results['reduced'][0].sweep_info['max_check_deviation']:.2e}")
    assert worst < AGREEMENT
    assert results["reduced"][0].sweep_info["max_check_deviation"] < AGREEMENT
    # and against Dowell, "Effects of eddy currents in transformer windings", Proc. IEE 113(8), 1966
    rep = results["reduced"][1]
    doc_freqs = _dowell_doc(3)["sweep"]["frequencies"]
    for w in rep.windings:
        for f, ratio in zip(doc_freqs, w.rac_over_rdc):
            d = math.sqrt(f / dowell_case.frequency_for(1.0))   # Delta grows as sqrt(f)
            assert ratio == pytest.approx(dowell_case.dowell(d, 3), rel=dowell_case.TOLERANCE)


def test_reduced_sweep_matches_point_by_point_round_wire():
    results = _both(_wire_doc())
    worst = _agreement(results)
    print(f"\nround wire, {POINTS} frequencies: reduced vs point-by-point max deviation {worst:.2e}")
    assert worst < AGREEMENT
    # Bessel solution (Ramo, Whinnery, Van Duzer, Fields and Waves in Communication Electronics)
    rep = results["reduced"][1]
    for f, ratio in zip(_wire_doc()["sweep"]["frequencies"], rep.windings[0].rac_over_rdc):
        a_over_delta = 0.5 * math.sqrt(f / wire_case.frequency_for(0.5))
        assert ratio == pytest.approx(wire_case.bessel_z_over_rdc(a_over_delta).real, rel=wire_case.TOLERANCE)


def test_default_is_point_by_point_for_short_sweeps_and_exact_turns_reduction_off():
    doc = _wire_doc()
    doc["sweep"]["frequencies"] = doc["sweep"]["frequencies"][:6]
    assert run_sweep(parse_case(doc)).sweep_info["method"] == "point-by-point"
    doc = _wire_doc()
    assert run_sweep(parse_case(doc)).sweep_info["method"] == "reduced"
    assert run_sweep(parse_case(doc), method="exact").sweep_info["method"] == "point-by-point"
