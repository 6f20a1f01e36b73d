"""The MMF across the window from the field solution against the ideal
ampere-turn staircase of Ampere's law."""

from __future__ import annotations

import numpy as np
import pytest

from racfield.fem.sweep import run_sweep
from racfield.geometry.case import parse_case
from racfield.postprocess.report import build_report, mmf_document

MAX_DEVIATION: dict[str, float] = {}


def _foils(order: list[str], frequency: float) -> dict:
    layers = [{"winding": w, "conductor": {"shape": "foil", "thickness": "0.1 mm", "height": "2 mm"},
               "insulation_after": "0.05 mm"} for w in order]
    return {"model": {"length": "40 mm"}, "sweep": {"frequencies": [frequency]},
            "window": {"width": "1.2 mm", "height": "2 mm"},
            "winding": [{"name": "p", "current": "1 A"}, {"name": "s", "current": "1 A", "phase": 180}],
            "layer": layers}


def _profile(doc: dict) -> dict:
    case = parse_case(doc)
    return mmf_document(build_report(case, run_sweep(case)))


@pytest.mark.parametrize("order", [["p", "p", "s", "s"], ["p", "s", "p", "s"], ["p", "s", "s", "p"]])
@pytest.mark.parametrize("frequency", [1e3, 1e6])
def test_full_height_foils_follow_the_staircase_at_every_layer_face(order, frequency):
    mmf = _profile(_foils(order, frequency))
    s = np.array(mmf["position_m"])
    field, ideal = np.array(mmf["field_a"]), np.array(mmf["ideal_a"])
    peak = np.abs(ideal).max()
    # between layers: the middle of each insulation gap (faces 1-2, 3-4, ...),
    # and the free space before the first and after the last layer
    faces = mmf["layer_faces_m"]
    probes = [s[0], s[-1]] + [(a + b) / 2 for a, b in zip(faces[1:-1:2], faces[2::2])]
    at_faces = np.interp(probes, s, field)
    expected = np.interp(probes, s, ideal)
    deviation = np.abs(at_faces - expected).max() / peak
    MAX_DEVIATION[f"{'-'.join(order)} at {frequency:g} Hz"] = deviation
    # Ampere's law around the window part before each face, the ideal core
    # carrying no H: the MMF equals the enclosed ampere-turns (within 1 % of the peak)
    assert deviation < 0.01
    # the staircase itself: peak = the largest enclosed ampere-turns of the order
    steps = np.cumsum([1 if w == "p" else -1 for w in order])
    # (the first sample sits 1e-4 of the span inside the first foil: 0.12 % of a step)
    assert np.abs(ideal - ideal[0]).max() == pytest.approx(np.abs(steps).max(), rel=2e-3)
    # and the ideal core holds no MMF at its inner wall (the anchor)
    assert abs(ideal[0]) < 0.01 * peak


def test_round_wire_layers_deviation_is_reported():
    """Round-wire layers leave part of the height empty: report the deviation
    from the staircase, no tolerance (the field bends around the turns)."""
    doc = _foils(["p", "s"], 1e5)
    doc["layer"] = [{"winding": "p", "conductor": {"shape": "round", "diameter": "0.3 mm"}, "turns": 5,
                     "insulation_after": "0.1 mm"},
                    {"winding": "s", "conductor": {"shape": "round", "diameter": "0.3 mm"}, "turns": 5}]
    mmf = _profile(doc)
    field, ideal = np.array(mmf["field_a"]), np.array(mmf["ideal_a"])
    deviation = np.abs(field - ideal).max() / np.abs(ideal).max()
    MAX_DEVIATION["round wire, 2 layers of 5, 100 kHz (largest anywhere)"] = deviation
    print(f"\nround-wire layers: largest MMF deviation from the staircase {deviation:.1%} of the peak")
    assert np.isfinite(deviation)


def teardown_module():
    print("\nMMF deviation from the staircase (fraction of the peak):")
    for key, value in MAX_DEVIATION.items():
        print(f"  {key}: {value:.2e}")
