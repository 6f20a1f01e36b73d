"""Validation of the steady heat-conduction solve (racfield.fem.thermal).

Exact one-dimensional and radial solutions of div(k grad T) + q = 0:

- slab of thickness L, uniform generation q, both faces at T_w:
  T(x) = T_w + q x (L - x) / (2 k), T_max - T_w = q L^2 / (8 k), mean rise
  q L^2 / (12 k) (H. S. Carslaw & J. C. Jaeger, "Conduction of Heat in
  Solids", 2nd ed., Oxford 1959, the slab with heat production; F. P.
  Incropera & D. P. DeWitt, "Fundamentals of Heat and Mass Transfer", plane
  wall with thermal energy generation);
- slab with convection at both faces: T_max = T_amb + q L / (2 h) + q L^2 / (8 k)
  (Incropera & DeWitt, plane wall with generation and convection);
- solid cylinder of radius a, uniform q, surface at T_s: T(0) - T_s = q a^2 / (4 k)
  (Carslaw & Jaeger, the cylinder with heat production; Incropera & DeWitt,
  radial systems with generation); its mean over the section q a^2 / (8 k);
- series wall of layers t_i, k_i carrying heat flux q'': the temperature drop
  is q'' sum(t_i / k_i) (Incropera & DeWitt, the composite wall, thermal
  resistances in series);
- energy balance: the heat leaving the boundary equals int q dV (first law).
"""

from __future__ import annotations

import numpy as np
import pytest
from skfem import Basis, ElementTriP2, MeshTri

from racfield.fem.thermal import (Convection, FixedTemperature, element_conductivity,
                                  solve_temperature)
from racfield.geometry.layout import Conductor
from racfield.geometry.mesher import MeshSizing, WindowMesh, build_mesh

#: measured relative errors, printed for the report
ERRORS: dict[str, float] = {}

# thermal conductivities, W/(m K) (common practice values: copper ~390-400,
# polyamide-imide / polyurethane wire enamel ~0.2, still air ~0.026-0.03)
K_COPPER = 390.0
K_ENAMEL = 0.2
K_AIR = 0.03
TOL = 1e-3   # 0.1 %


def _p2_mesh(mesh: MeshTri, region: np.ndarray | None = None) -> WindowMesh:
    """A WindowMesh of 6-node triangles from a linear skfem mesh."""
    basis = Basis(mesh, ElementTriP2())
    if region is None:
        region = np.zeros(mesh.nelements, dtype=int)
    return WindowMesh(basis.doflocs.copy(), basis.element_dofs.copy(), np.asarray(region), 0.0)


def _disk(radius: float, refinements: int) -> WindowMesh:
    """A disk of 6-node triangles with the boundary's edge nodes on the true circle."""
    wm = _p2_mesh(MeshTri.init_circle(refinements).scaled(radius))
    points = wm.points
    boundary = np.unique(_boundary_nodes(wm))
    points[:, boundary] *= radius / np.hypot(*points[:, boundary])
    return wm


def _boundary_nodes(wm: WindowMesh) -> np.ndarray:
    """Nodes on the outer boundary of a 6-node triangle mesh (edges used once)."""
    t = wm.triangles
    edges = np.concatenate([np.stack([t[0], t[1], t[3]]), np.stack([t[1], t[2], t[4]]),
                            np.stack([t[2], t[0], t[5]])], axis=1)
    key = np.sort(edges[:2], axis=0)
    _, inverse, counts = np.unique(key, axis=1, return_inverse=True, return_counts=True)
    return edges[:, counts[inverse.ravel()] == 1].ravel()


def _record(name: str, measured: float, exact: float) -> float:
    error = measured / exact - 1.0
    ERRORS[name] = error
    print(f"\n{name}: racfield {measured:.9g}, exact {exact:.9g}, relative error {error:+.2e}")
    return error


@pytest.fixture(scope="module")
def foil_window():
    """A racfield (gmsh) mesh of an ideal-core window, 3 mm x 2 mm, with one
    1 mm foil spanning its full height in the middle."""
    width, height, thickness = 3e-3, 2e-3, 1e-3
    foil = Conductor(0, "foil", 1, "rect", width / 2, height / 2, thickness, height, "conductor")
    mesh = build_mesh([foil], width, height, "ideal-core", MeshSizing(skin_depth=float("inf")))
    return mesh, width, height, thickness


def _side_walls(width: float):
    return lambda x: (np.abs(x[0]) < 1e-9 * width) | (np.abs(x[0] - width) < 1e-9 * width)


def test_slab_with_generation_on_the_window_mesh(foil_window):
    """The whole window as one slab between its two fixed side walls,
    top and bottom adiabatic: T_max - T_w = q L^2 / (8 k), mean rise q L^2 / (12 k)
    (Carslaw & Jaeger 1959; Incropera & DeWitt, plane wall with generation)."""
    mesh, width, _, _ = foil_window
    q, t_wall = 2e8, 40.0
    field = solve_temperature(mesh, np.full(mesh.elements, K_COPPER), np.full(mesh.elements, q),
                              fixed=FixedTemperature(t_wall, _side_walls(width)))
    assert abs(_record("slab hot spot", field.hot_spot - t_wall, q * width**2 / (8 * K_COPPER))) < TOL
    assert abs(field.hot_spot_at[0] - width / 2) < 1e-9
    # the foil region (1/3 of the width, centred): mean of q x (L - x) / (2k) over it
    a, b = width / 3, 2 * width / 3
    mean = t_wall + q / (2 * K_COPPER) * ((width * (b**2 - a**2) / 2 - (b**3 - a**3) / 3) / (b - a))
    assert abs(_record("slab foil mean", field.conductor_mean[0] - t_wall, mean - t_wall)) < TOL


def test_foil_between_fill_layers(foil_window):
    """Heat generated in the foil only, conducted out through the fill on both
    sides: T_max - T_w = q t^2 / (8 k_cu) + (q t / 2) g / k_fill (a slab with
    generation in series with a plane wall; Incropera & DeWitt)."""
    mesh, width, _, thickness = foil_window
    q, t_wall = 1e8, 40.0
    k = element_conductivity(mesh.region, K_COPPER, K_ENAMEL)
    field = solve_temperature(mesh, k, np.where(mesh.region == 0, q, 0.0),
                              fixed=FixedTemperature(t_wall, _side_walls(width)))
    gap = (width - thickness) / 2
    exact = q * thickness**2 / (8 * K_COPPER) + q * thickness / 2 * gap / K_ENAMEL
    assert abs(_record("foil in fill hot spot", field.hot_spot - t_wall, exact)) < TOL


@pytest.mark.parametrize("radius_offset", [None, 0.0])
def test_cylinder_centre_rise(radius_offset):
    """Round conductor of radius a with uniform q and its surface at T_s:
    T(0) - T_s = q a^2 / (4 k) (Carslaw & Jaeger 1959; Incropera & DeWitt).
    Planar: a disk.  Axisymmetric (r0 = 0): the rectangle 0 <= r <= a, its
    face r = a fixed, the axis and the end faces adiabatic."""
    a, q, t_s = 1e-3, 5e8, 25.0
    if radius_offset is None:
        mesh = _disk(a, 4)
        name = "cylinder centre rise (planar disk)"
    else:
        mesh = _p2_mesh(MeshTri.init_tensor(np.linspace(0, a, 9), np.linspace(0, a / 2, 3)))
        name = "cylinder centre rise (axisymmetric)"
    surface = (None if radius_offset is None else (lambda x: np.abs(x[0] - a) < 1e-9 * a))
    field = solve_temperature(mesh, np.full(mesh.elements, K_COPPER), np.full(mesh.elements, q),
                              fixed=FixedTemperature(t_s, surface), radius_offset=radius_offset)
    assert abs(_record(name, field.hot_spot - t_s, q * a**2 / (4 * K_COPPER))) < TOL
    # mean over the section (area- or volume-weighted) of q (a^2 - r^2) / (4 k): q a^2 / (8 k)
    assert abs(_record(name.replace("centre", "mean"), field.conductor_mean[0] - t_s,
                       q * a**2 / (8 * K_COPPER))) < TOL
    assert np.hypot(*field.hot_spot_at) < 1e-3 * a or abs(field.hot_spot_at[0]) < 1e-12


def test_composite_wall_series_resistance():
    """Copper, enamel and air in series between two fixed faces: the drop
    T_1 - T_2 equals q'' sum(t_i / k_i), q'' the heat flux through the wall,
    and each interface temperature follows the resistance ratio
    (Incropera & DeWitt, the composite wall; k values common practice)."""
    layers = [(1.0e-3, K_COPPER), (50e-6, K_ENAMEL), (100e-6, K_AIR)]
    edges = np.cumsum([0.0] + [t for t, _ in layers])
    xs = np.unique(np.concatenate([np.linspace(edges[i], edges[i + 1], 5) for i in range(len(layers))]))
    height = 0.2e-3
    base = MeshTri.init_tensor(xs, np.linspace(0, height, 3))
    centre_x = base.p[0, base.t].mean(axis=0)
    layer = np.searchsorted(edges, centre_x) - 1
    mesh = _p2_mesh(base, layer)
    k = np.array([k for _, k in layers])[layer]
    hot, cold = 100.0, 20.0
    left = FixedTemperature(hot, lambda x: np.abs(x[0]) < 1e-12)
    right = FixedTemperature(cold, lambda x: np.abs(x[0] - edges[-1]) < 1e-12)
    field = solve_temperature(mesh, k, np.zeros(mesh.elements), fixed=[left, right])
    flux = field.heat_out_fixed[1] / height                      # W/m^2 through the wall
    resistance = sum(t / kk for t, kk in layers)                 # m^2 K / W per unit area
    assert abs(_record("composite wall drop", hot - cold, flux * resistance)) < TOL
    # interface between enamel and air: T = T_2 + q'' t_air / k_air
    node = np.argmin(np.hypot(field.nodes[0] - edges[2], field.nodes[1]))
    rise = field.temperature[node] - cold
    assert abs(_record("composite wall interface", rise, flux * layers[2][0] / K_AIR)) < TOL
    assert field.heat_out_fixed[0] == pytest.approx(-field.heat_out_fixed[1], rel=1e-8)   # first law


def test_slab_with_convection():
    """Both faces cooled by convection: T_max = T_amb + q L / (2 h) + q L^2 / (8 k)
    (Incropera & DeWitt, plane wall with generation and convection); no heat
    leaves the adiabatic top and bottom."""
    length, q, h, ambient = 2e-3, 1e8, 500.0, 30.0
    mesh = _p2_mesh(MeshTri.init_tensor(np.linspace(0, length, 9), np.linspace(0, 1e-3, 3)))
    faces = Convection(h, ambient, lambda x: (np.abs(x[0]) < 1e-12) | (np.abs(x[0] - length) < 1e-12))
    field = solve_temperature(mesh, np.full(mesh.elements, K_COPPER), np.full(mesh.elements, q),
                              convective=faces)
    exact = q * length / (2 * h) + q * length**2 / (8 * K_COPPER)
    assert abs(_record("convective slab hot spot", field.hot_spot - ambient, exact)) < TOL


def test_energy_balance(foil_window):
    """Heat out through the boundary equals the heat generated, to 1e-8
    relative (first law), with a fixed wall, convection and a graded source."""
    mesh, width, height, _ = foil_window
    k = element_conductivity(mesh.region, K_COPPER, K_ENAMEL)
    left = FixedTemperature(40.0, lambda x: np.abs(x[0]) < 1e-9 * width)
    rest = Convection(20.0, 25.0, lambda x: np.abs(x[0]) >= 1e-9 * width)
    heat = lambda x: 1e8 * (1.0 + x[0] / width + (x[1] / height) ** 2)   # noqa: E731
    field = solve_temperature(mesh, k, heat, fixed=left, convective=rest)
    # int q dA over the window, q above (exact integral of a polynomial)
    generated = 1e8 * width * height * (1.0 + 0.5 + 1.0 / 3.0)
    assert field.heat_generated == pytest.approx(generated, rel=1e-9)
    balance = field.heat_out / field.heat_generated - 1.0
    ERRORS["energy balance"] = balance
    print(f"\nenergy balance: out {field.heat_out:.12g}, generated {field.heat_generated:.12g}, {balance:+.1e}")
    assert abs(balance) < 1e-8
    assert field.heat_out_convective[0] > 0 and field.heat_out_fixed[0] > 0


def test_needs_a_thermal_boundary():
    """An adiabatic domain with a source has no steady state (first law)."""
    mesh = _p2_mesh(MeshTri.init_tensor(np.linspace(0, 1, 3), np.linspace(0, 1, 3)))
    with pytest.raises(ValueError):
        solve_temperature(mesh, np.ones(mesh.elements), np.ones(mesh.elements))


def test_bad_input_is_refused():
    """A wrong-sized conductivity or heat, a non-positive k, or a condition that
    selects no facet is refused, not solved (k > 0 for a conductor: common practice)."""
    mesh = _p2_mesh(MeshTri.init_tensor(np.linspace(0, 1, 3), np.linspace(0, 1, 3)))
    ones = np.ones(mesh.elements)
    walls = FixedTemperature(0.0)
    with pytest.raises(ValueError):
        solve_temperature(mesh, ones[:-1], ones, fixed=walls)
    with pytest.raises(ValueError):
        solve_temperature(mesh, -ones, ones, fixed=walls)
    with pytest.raises(ValueError):
        solve_temperature(mesh, ones, ones[:-1], fixed=walls)
    with pytest.raises(ValueError):
        solve_temperature(mesh, ones, ones, fixed=FixedTemperature(0.0, lambda x: x[0] > 2.0))
