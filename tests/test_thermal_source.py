"""The heat source of a thermal solution: the ohmic loss density sigma |E/sigma|^2
of a solved field, integrated over each conductor, is that conductor's loss
(Joule's law integrated over the conductor; Poynting's theorem makes the same
number the power flowing into it), planar and axisymmetric, and it is the q of
:func:`racfield.fem.thermal.solve_temperature`, whose heat balance closes."""

from __future__ import annotations

import numpy as np
import pytest

from racfield.fem.parallel import excitation_basis
from racfield.fem.sweep import conductor_resistivities, mesh_case, problem_for
from racfield.fem.thermal import Convection, element_conductivity, solve_temperature
from racfield.geometry.case import parse_case
from racfield.geometry.layout import place


def case_doc(symmetry: str) -> dict:
    window = {"width": "2 mm", "height": "3 mm", "boundary": "open"}
    model = {"symmetry": symmetry}
    if symmetry == "axisymmetric":
        window["inner_radius"] = "4 mm"
    else:
        model["length"] = "30 mm"
    return {"model": model, "sweep": {"frequencies": ["300 kHz"]}, "window": window,
            "winding": [{"name": "p", "current": "2 A"}],
            "layer": [{"winding": "p", "conductor": {"shape": "round", "diameter": "0.5 mm"}, "turns": 3}]}


@pytest.mark.parametrize("symmetry", ["planar", "axisymmetric"])
def test_loss_density_integrates_to_the_conductor_losses(symmetry):
    case = parse_case(case_doc(symmetry))
    conductors = place(case)
    window_mesh = mesh_case(case, conductors)
    problem = problem_for(case, window_mesh, conductor_resistivities(case, conductors), conductors)
    connection = excitation_basis(case, conductors).basis
    f = case.frequencies[0]
    solution = problem.solve_windings(f, connection, [2.0], keep_field=True)
    q = problem.loss_density(f, solution.voltage_per_m, solution.potential)            # (elements, points) W/m^3
    basis = problem.basis
    weight = basis.dx if symmetry == "planar" else \
        basis.dx * 2 * np.pi * (np.asarray(basis.global_coordinates())[0] + case.window.inner_radius)
    per_element = (q * weight).sum(axis=1)
    region = problem.region
    losses = np.array([per_element[region == k].sum() for k in range(len(conductors))])
    assert np.allclose(losses, solution.loss_per_m, rtol=1e-10, atol=0)
    assert np.all(q[region < 0] == 0.0) and np.all(q[region >= 0] > 0.0)

    # the same q heats a thermal solution whose boundary takes it all away (heat balance)
    k = element_conductivity(region, conductor=390.0, air=0.03)   # W/(m K), common practice values
    field = solve_temperature(window_mesh, k, q, convective=Convection(10.0, 40.0),
                              radius_offset=case.window.inner_radius if symmetry == "axisymmetric" else None)
    assert field.heat_out == pytest.approx(losses.sum(), rel=1e-8)
    assert field.hot_spot > 40.0
