"""Parallel conductors per turn: current sharing and circulating-current loss."""

from __future__ import annotations

import math

import numpy as np
import pytest

from racfield.fem.sweep import run_sweep
from racfield.geometry.case import parse_case
from racfield.geometry.case.errors import CaseError
from racfield.postprocess.report import build_report, parallel_document


def _transformer(transposed: bool, frequencies) -> dict:
    return {"model": {"length": "40 mm"}, "sweep": {"frequencies": frequencies},
            "window": {"width": "2 mm", "height": "4 mm"},
            "winding": [{"name": "p", "current": "1 A"}, {"name": "s", "current": "4 A", "phase": 180}],
            "layer": [{"winding": "p", "conductor": {"shape": "round", "diameter": "0.4 mm",
                                                      "outer_diameter": "0.45 mm"},
                       "turns": 8, "insulation_after": "0.1 mm"},
                      {"winding": "s", "conductor": {"shape": "foil", "thickness": "0.1 mm", "height": "3.6 mm"},
                       "repeat": 4, "insulation_after": "0.05 mm"}],
            "parallel": [{"winding": "s", "conductors": 2, "transposed": transposed}]}


def _solve(doc):
    case = parse_case(doc)
    report = build_report(case, run_sweep(case))
    return report, parallel_document(report)


@pytest.fixture(scope="module")
def foils():
    frequencies = [0, 1e4, 1e5, 5e5, 1e6]
    return _solve(_transformer(False, frequencies)), _solve(_transformer(True, frequencies))


def test_strand_currents_sum_to_the_winding_current(foils):
    (report, par), _ = foils
    amplitude = np.array(par["s"]["strand_current_a"])
    phase = np.radians(par["s"]["strand_phase_deg"])
    total = (amplitude * np.exp(1j * phase)).sum(axis=1)
    # Kirchhoff's current law at the winding terminals (common practice)
    assert np.allclose(total, 4.0 * np.exp(1j * math.pi), rtol=1e-9, atol=1e-12)


def test_untransposed_foils_lose_more_at_high_frequency(foils):
    (untransposed, par), (transposed, _) = foils
    loss_u = untransposed.windings[1].loss_w
    loss_t = transposed.windings[1].loss_w
    # at DC both share equally (equal foils): same loss (Ohm's law)
    assert loss_u[0] == pytest.approx(loss_t[0], rel=1e-9)
    # the leakage field drives a circulating current between untransposed
    # strands: more loss than with ideal transposition at every frequency
    # (common practice); here more than 1.5 times at 500 kHz
    assert all(u > t for u, t in zip(loss_u[1:], loss_t[1:]))
    assert loss_u[3] / loss_t[3] > 1.5
    # and the circulating-current loss reported is the difference
    assert par["s"]["circulating_loss_w"][3] == pytest.approx(loss_u[3] - loss_t[3], rel=1e-6)


def test_dc_sharing_is_inverse_to_the_strand_resistance():
    """One turn of two different round wires in parallel (explicit conductors)."""
    doc = {"model": {"length": "30 mm"}, "sweep": {"frequencies": [0, 1e3]},
           "window": {"width": "3 mm", "height": "3 mm", "boundary": "open"},
           "winding": [{"name": "w", "current": "3 A"}],
           "conductor": [{"winding": "w", "shape": "round", "diameter": "0.4 mm", "at": ["1 mm", "1.5 mm"]},
                         {"winding": "w", "shape": "round", "diameter": "0.8 mm", "at": ["2 mm", "1.5 mm"]}],
           "parallel": [{"winding": "w", "conductors": 2}]}
    report, par = _solve(doc)
    shares = np.array(par["w"]["strand_current_a"][0])
    # current divider: I1 / I2 = R2 / R1 = (d1 / d2)^2 (Ohm's law)
    assert shares[0] / shares[1] == pytest.approx((0.4 / 0.8) ** 2, rel=1e-4)
    assert shares.sum() == pytest.approx(3.0, rel=1e-9)
    # Rdc of the pair: R1 R2 / (R1 + R2) with R = rho l / A (IEC 60028 copper at 20 degC)
    r1, r2 = (1.7241e-8 * 0.03 / (math.pi * (d / 2) ** 2) for d in (0.4e-3, 0.8e-3))
    assert report.windings[0].rdc_ohm == pytest.approx(r1 * r2 / (r1 + r2), rel=5e-4)


def test_conductor_count_must_divide():
    doc = _transformer(False, [1e5])
    doc["parallel"][0]["conductors"] = 3
    with pytest.raises(CaseError, match="parallel\\[1\\].conductors"):
        parse_case(doc)
