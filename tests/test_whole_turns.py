"""Whole turns: the window section and the end-turn section combined by their
share of each turn's length ([end_turns], fem/whole_turns.py).

The combination rule is the trade's 2-D remedy for end turns (per turn
P = p_window l_window + p_end l_end, the same for the impedance, inductance
and loss matrices); the checks below are its exact limits and the energy it
conserves.  The end-turn section's own field (air beside a magnetic wall) is
validated against the method of images in tests/test_validation_magnetic_wall.py.
"""

from __future__ import annotations

import copy

import numpy as np
import pytest

import racfield
from racfield.fem.parallel import basis_impedance
from racfield.geometry.case import CaseError

CASE = {
    "title": "whole turns",
    "model": {"length": "60 mm"},
    "sweep": {"frequencies": ["50 kHz", "500 kHz"]},
    "window": {"width": "4 mm", "height": "6 mm", "boundary": "ideal-core",
               "margins": {"inner": "0.3 mm", "outer": "0.3 mm", "top": "0.3 mm", "bottom": "0.3 mm"}},
    "winding": [{"name": "primary", "current": "1 A"}, {"name": "secondary", "current": "2 A", "phase": 180}],
    "layer": [
        {"winding": "primary", "conductor": {"shape": "round", "diameter": "0.5 mm", "outer_diameter": "0.56 mm"},
         "turns": 8, "insulation_after": "0.2 mm"},
        {"winding": "secondary", "conductor": {"shape": "foil", "thickness": "0.1 mm", "height": "5 mm"},
         "turns": 1, "repeat": 4, "insulation_after": "0.05 mm"},
    ],
}


def solved(doc: dict):
    case = racfield.load_case(doc)
    return case, racfield.solve(case)


@pytest.fixture(scope="module")
def window_only():
    return solved(copy.deepcopy(CASE))


@pytest.fixture(scope="module")
def with_end_turns():
    doc = copy.deepcopy(CASE)
    doc["end_turns"] = {"fraction": 0.4}
    return solved(doc)


def test_fraction_zero_reproduces_the_window_section(window_only):
    # the rule's limit: no end turns, the window-only results (to rounding, 1e-12)
    doc = copy.deepcopy(CASE)
    doc["end_turns"] = {"fraction": 0.0}
    _, whole = solved(doc)
    _, window = window_only
    for name in window.windings:
        assert np.allclose(whole.loss_w[name], window.loss_w[name], rtol=1e-12, atol=0)
        assert np.allclose(whole.rac_over_rdc[name], window.rac_over_rdc[name], rtol=1e-12, atol=0)
    assert np.allclose(whole.leakage_l_h, window.leakage_l_h, rtol=1e-12, atol=0)


def test_identical_sections_give_the_window_result_whatever_the_fraction():
    # a window that is itself air beside a magnetic wall has an end section equal to it:
    # the combination of two equal sections is that section, at any fraction
    doc = copy.deepcopy(CASE)
    doc["window"]["boundary"] = "open-wall"
    doc["winding"][1]["current"] = "1 A"   # an open model needs no ampere-turn balance; any currents do
    _, alone = solved(copy.deepcopy(doc))
    for fraction in (0.3, 1.0):
        doc["end_turns"] = {"fraction": fraction}
        _, whole = solved(copy.deepcopy(doc))
        for name in alone.windings:
            assert np.allclose(whole.loss_w[name], alone.loss_w[name], rtol=1e-12, atol=0)
        assert np.allclose(whole.impedance_l_h, alone.impedance_l_h, rtol=1e-12, atol=0)


def test_whole_turn_loss_is_the_length_weighted_sum_of_the_sections(with_end_turns):
    # per turn P = p_window l_window + p_end l_end (the rule); the two section shares in
    # results.json add up to the whole turn's loss for imposed currents
    _, whole = with_end_turns
    sections = whole.document["sections"]
    assert sections["end_share"] == pytest.approx(0.4)
    for name in whole.windings:
        parts = np.add(sections["window"]["windings"][name]["loss_w"], sections["end"]["windings"][name]["loss_w"])
        assert np.allclose(parts, whole.loss_w[name], rtol=1e-12, atol=0)
        ratio = (0.6 * np.array(sections["window"]["windings"][name]["rac_over_rdc"])
                 + 0.4 * np.array(sections["end"]["windings"][name]["rac_over_rdc"]))
        assert np.allclose(ratio, whole.rac_over_rdc[name], rtol=1e-12, atol=0)


def test_whole_turn_energy_is_the_length_weighted_sum_of_the_section_energies(with_end_turns):
    # magnetic energy is additive over the length of the turns (W = sum over sections of the
    # per-metre energy times the length): W_whole = 0.6 W_window + 0.4 W_end to 1e-9
    case, whole = with_end_turns
    from racfield.fem.whole_turns import run_case_sweep

    sweep = run_case_sweep(case)
    currents = np.array([w.phasor for w in case.windings])

    def energy(s):
        inductance = basis_impedance(s.inductance_per_m, s.connection)      # (Nf, Nw, Nw) H/m
        return 0.5 * np.einsum("a,fab,b->f", currents.conj(), inductance, currents).real * case.model.length

    expected = 0.6 * energy(sweep.sections["window"]) + 0.4 * energy(sweep.sections["end"])
    assert np.allclose(energy(sweep), expected, rtol=1e-9, atol=0)
    assert np.all(energy(sweep.sections["end"]) != energy(sweep.sections["window"]))   # the sections differ


def test_the_table_is_checked():
    for table, key in (({"fraction": 1.5}, "end_turns.fraction"), ({}, "end_turns.fraction"),
                       ({"fraction": 0.3, "length": "10 mm"}, "end_turns.fraction"),
                       ({"length": "80 mm"}, "end_turns.length"), ({"share": 0.3}, "end_turns")):
        doc = copy.deepcopy(CASE)
        doc["end_turns"] = table
        with pytest.raises(CaseError) as error:
            racfield.load_case(doc)
        assert error.value.key.startswith(key), (table, str(error.value))
    doc = copy.deepcopy(CASE)
    doc["model"] = {"symmetry": "axisymmetric"}
    doc["window"]["inner_radius"] = "5 mm"
    doc["end_turns"] = {"fraction": 0.3}
    with pytest.raises(CaseError, match="planar models only"):
        racfield.load_case(doc)


def test_results_files_and_report_show_the_sections(with_end_turns, tmp_path):
    # rac.csv and the HTML report carry the window, end-turn and whole-turn figures (README, Whole turns)
    from racfield.postprocess.html_report import build_html

    _, whole = with_end_turns
    whole.write(tmp_path)
    header = (tmp_path / "rac.csv").read_text().splitlines()[0].split(",")
    assert header[-4:] == ["rac_over_rdc_window", "loss_window_w", "rac_over_rdc_end", "loss_end_w"]
    page = build_html(tmp_path)
    assert "Whole turns: 40 % of every turn" in page and ">end<" in page and ">whole<" in page


def _case_file(name: str) -> dict:
    import tomllib
    from pathlib import Path

    return tomllib.loads((Path(__file__).resolve().parents[1] / "cases" / f"{name}.toml").read_text())


def test_waveforms_with_end_turns_add_by_length():
    # the harmonic losses come from the combined loss matrices: with imposed currents the
    # waveform loss of the whole turn is 0.7 x the window's + 0.3 x the end section's
    # (the rule, harmonic by harmonic; README, Whole turns and Current waveforms)
    doc = _case_file("flyback_waveforms")
    doc["waveform"]["max_harmonic"] = 5
    totals = {}
    for label, table in (("window", None), ("whole", {"fraction": 0.3}), ("end", {"fraction": 1.0})):
        d = copy.deepcopy(doc)
        if table:
            d["end_turns"] = table
        totals[label] = racfield.solve(racfield.load_case(d)).document["harmonics"]["total_loss_w"]
    assert totals["whole"] == pytest.approx(0.7 * totals["window"] + 0.3 * totals["end"], rel=1e-9)
    assert totals["end"] != pytest.approx(totals["window"], rel=1e-3)


def test_variants_with_end_turns_each_get_their_sections():
    doc = _case_file("interleaving_study")
    doc["sweep"] = {"frequencies": ["100 kHz"]}
    doc["end_turns"] = {"fraction": 0.4}
    case = racfield.load_case(doc)
    for arrangement in racfield.variant_cases(case):
        sections = racfield.solve(arrangement).document["sections"]
        assert sections["end_share"] == pytest.approx(0.4)
        assert set(sections["whole"]["windings"]) == {"primary", "secondary"}


def test_check_names_the_end_turns(tmp_path, capsys):
    from pathlib import Path

    from racfield.cli import main

    # the demo transformer (42 mm per turn) with 24 mm of every turn in the end turns
    demo = (Path(__file__).resolve().parents[1] / "cases" / "demo_transformer.toml").read_text()
    case = tmp_path / "case.toml"
    case.write_text(demo + '\n[end_turns]\nlength = "24 mm"\n')
    assert main(["check", str(case)]) == 0
    assert "end turns: 24 mm of each turn outside the core" in capsys.readouterr().out
