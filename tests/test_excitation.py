"""Loss at any excitation from the loss matrices, without a new solve: checked
against direct field solutions at those currents (linearity of the
magnetoquasistatic problem, common practice) and through `racfield loss`."""

from __future__ import annotations

import json

import numpy as np
import pytest

from racfield.fem.problem import WindowProblem
from racfield.fem.sweep import conductor_resistivities, mesh_case
from racfield.geometry.case import parse_case
from racfield.geometry.layout import place
from racfield.cli import main

TWO_WINDINGS = {
    "model": {"length": "30 mm"},
    "sweep": {"frequencies": ["200 kHz"]},
    "window": {"width": "2.0 mm", "height": "3.0 mm", "boundary": "open"},
    "winding": [{"name": "p", "current": "1 A"}, {"name": "s", "current": "2 A", "phase": 150}],
    "layer": [{"winding": "p", "conductor": {"shape": "round", "diameter": "0.4 mm"}, "turns": 4,
               "insulation_after": "0.1 mm"},
              {"winding": "s", "conductor": {"shape": "foil", "thickness": "0.1 mm", "height": "2.5 mm"}}],
}


@pytest.fixture(scope="module")
def problem():
    case = parse_case(TWO_WINDINGS)
    conductors = place(case)
    problem = WindowProblem(mesh_case(case, conductors), 1.0 / conductor_resistivities(case, conductors))
    connection = np.zeros((len(conductors), 2))
    for c in conductors:
        connection[c.index, 0 if c.winding == "p" else 1] = 1.0
    return problem, connection


def _direct_loss(problem, frequency: float, currents: np.ndarray) -> np.ndarray:
    """Loss per conductor (W/m) of the one field solution that carries the
    conductor ``currents`` (A RMS): a single excitation column, unit current."""
    return problem.solve_windings(frequency, np.asarray(currents, dtype=complex)[:, None], np.ones(1)).loss_per_m


@pytest.mark.parametrize("currents", [(1.0, 2.0 * np.exp(2.6j)), (0.3j, 0.0), (1.5, -0.7 + 0.2j)])
def test_loss_matrix_matches_a_direct_solve(problem, currents):
    problem, connection = problem
    case_currents = np.array([1.0, 2.0 * np.exp(1j * np.radians(150))])
    solution = problem.solve_windings(2e5, connection, case_currents)
    i = np.array(currents, dtype=complex)
    from_matrix = np.einsum("i,kij,j->k", i.conj(), solution.loss_matrix_per_m, i).real
    direct = _direct_loss(problem, 2e5, connection @ i)
    assert from_matrix == pytest.approx(direct, rel=1e-9, abs=1e-15)


def test_case_currents_are_one_such_set(problem):
    problem, connection = problem
    i = np.array([1.0, 2.0 * np.exp(1j * np.radians(150))])
    solution = problem.solve_windings(2e5, connection, i)
    assert solution.loss_per_m == pytest.approx(_direct_loss(problem, 2e5, connection @ i), rel=1e-9)
    # energy balance: total loss = Re(sum V I*) of the windings (Poynting, common practice)
    volts = connection.T @ solution.voltage_per_m
    assert solution.loss_per_m.sum() == pytest.approx((volts @ i.conj()).real, rel=1e-9)


def test_loss_command_reproduces_the_case_losses(tmp_path, capsys):
    case = tmp_path / "two.toml"
    case.write_text("""
[model]
length = "30 mm"
[sweep]
frequencies = ["50 kHz", "500 kHz"]
[window]
width = "2.0 mm"
height = "3.0 mm"
[[winding]]
name = "p"
current = "1 A"
[[winding]]
name = "s"
current = "4 A"
phase = 180
[[layer]]
winding = "p"
conductor = { shape = "round", diameter = "0.4 mm" }
turns = 4
insulation_after = "0.1 mm"
[[layer]]
winding = "s"
conductor = { shape = "foil", thickness = "0.1 mm", height = "2.5 mm" }
""")
    out = tmp_path / "out"
    assert main(["run", str(case), "--out", str(out), "--quiet"]) == 0
    doc = json.loads((out / "results.json").read_text())
    capsys.readouterr()
    assert main(["loss", str(out), "--current", "p=2 A", "--current", "s=8 A@180"]) == 0
    rows = [line.split() for line in capsys.readouterr().out.splitlines()[1:]]
    # twice the currents: four times the loss (linearity, common practice)
    for row, p_loss, s_loss in zip(rows, doc["windings"]["p"]["loss_w"], doc["windings"]["s"]["loss_w"]):
        assert float(row[2]) == pytest.approx(4 * p_loss, rel=1e-4)
        assert float(row[3]) == pytest.approx(4 * s_loss, rel=1e-4)
    # an ideal-core window allows balanced currents only: one-line error, exit 2
    assert main(["loss", str(out), "--current", "p=2 A"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "ampere-turns" in err[0]
    # the leakage of this closed window is reported, the impedance matrix is not
    assert "leakage" in doc and "impedance" not in doc
