"""Validation of the coupled thermal solution (racfield.fem.coupled_thermal,
``[thermal]`` in a case, ``thermal`` in results.json).

References:

- copper's resistivity rho(T) = rho20 (1 + alpha (T - 20 degC)), rho20 =
  1.7241e-8 ohm m, alpha = 0.00393 /K (IEC 60028, the International Annealed
  Copper Standard); a DC loss I^2 rho / A per metre (Ohm's law);
- the thermal resistances of a long round wire of radius a cooled through a
  concentric shell to a far circle of radius R with a film coefficient h:
  the cylindrical conduction resistance ln(r2/r1) / (2 pi k) per metre of each
  shell, the film 1 / (2 pi R h), in series (F. P. Incropera & D. P. DeWitt,
  "Fundamentals of Heat and Mass Transfer", ch. 3, radial systems, the
  composite cylinder), and the mean rise of a cylinder with uniform heat
  production over its surface, q a^2 / (8 k) = P / (8 pi k) (H. S. Carslaw &
  J. C. Jaeger, "Conduction of Heat in Solids", 2nd ed., 1959, the cylinder
  with heat production);
- with the loss linear in temperature, T = T_amb + I^2 R(T) R_th is a scalar
  linear equation: T = (T_amb + c (1 - 20 alpha)) / (1 - c alpha), c = I^2
  rho20 R_th / A, and there is no steady state for c alpha >= 1 (thermal
  runaway; the fixed point is then below ambient or at infinity);
- energy balance (first law): the heat leaving the boundary is the loss;
  maximum principle (Carslaw & Jaeger, ch. 1: with q >= 0 the minimum of a
  steady temperature lies on the boundary): no conductor is colder than the
  core walls;
- the losses of sines of different frequencies add (their product averages
  to zero over a period: orthogonality of the Fourier basis).

Measured (density 2): the coupled mean temperature of the 1 mm wire in potting
differs from the closed form with the analytic R_th by -3.7e-5 relative (its
rise by -5e-5), from the closed form with the model's own R_th by < 1e-9; the
insulated wire's rise differs from the series resistances by -3.4e-5.  The
waveform heat equals the harmonic losses to 6e-15 without DC and with DC (the
heat at 0 Hz is I^2 Rdc of the true wire area, as the harmonics' DC part).
"""

from __future__ import annotations

import json
import math

import pytest

import racfield
from racfield.cli import main
from racfield.fem.sweep import mesh_case
from racfield.fem.whole_turns import run_case_sweep
from racfield.geometry.layout import place

RHO20, ALPHA = 1.7241e-8, 0.00393          # ohm m, 1/K: copper (IEC 60028)
K_COPPER, K_POTTING, K_INSULATION = 390.0, 0.5, 0.2   # W/(m K): common practice (model.FILLS defaults)
H, AMBIENT = 10.0, 40.0                    # W/(m^2 K), degC
A_WIRE = 0.5e-3                            # m, bare radius of the 1 mm wire
AREA = math.pi * A_WIRE ** 2               # m^2


def single_wire(current: float = 40.0, coupled: bool = True, outer: str | None = None, **thermal) -> dict:
    """An open model: one 1 mm round wire at DC in potting, convection on the far circle."""
    conductor = {"winding": "a", "shape": "round", "diameter": "1 mm", "at": ["2 mm", "2 mm"]}
    if outer:
        conductor["outer_diameter"] = outer
    return {"model": {"temperature": "20 degC"}, "sweep": {"frequencies": [0.0]},
            "window": {"width": "4 mm", "height": "4 mm", "boundary": "open"},
            "winding": [{"name": "a", "current": f"{current} A"}], "conductor": [conductor],
            "thermal": {"h": H, "ambient": f"{AMBIENT} degC", "fill": "potting", "tolerance": 1e-10,
                        "coupled": coupled, **thermal},
            "mesh": {"density": 2}}


def two_windings(symmetry: str = "planar", thermal: dict | None = None,
                 frequencies: tuple[str, ...] = ("100 kHz",)) -> dict:
    """An ideal-core window with two opposed layers of five 0.5 mm round turns."""
    wire = {"shape": "round", "diameter": "0.5 mm", "outer_diameter": "0.56 mm"}
    doc = {"model": {"temperature": "20 degC", "length": "30 mm"}, "sweep": {"frequencies": list(frequencies)},
           "window": {"width": "3 mm", "height": "4 mm", "boundary": "ideal-core"},
           "winding": [{"name": "p", "current": "2 A"}, {"name": "s", "current": "2 A", "phase": "180 deg"}],
           "layer": [{"winding": "p", "conductor": wire, "turns": 5},
                     {"winding": "s", "conductor": dict(wire), "turns": 5}]}
    if symmetry == "axisymmetric":
        doc["model"] = {"symmetry": "axisymmetric", "temperature": "20 degC"}
        doc["window"]["inner_radius"] = "4 mm"
    if thermal is not None:
        doc["thermal"] = thermal
    return doc


def far_radius(case) -> float:
    """The far circle's radius (m) of the case's mesh."""
    return mesh_case(case, place(case)).far_radius


def analytic_rth(radius: float, outer_radius: float = A_WIRE, k_insulation: float = K_INSULATION) -> float:
    """K/(W/m): film, fill shell (outer_radius..R), insulation shell (a..outer_radius), copper mean
    (Incropera & DeWitt ch. 3, series resistances of the composite cylinder; Carslaw & Jaeger, the
    cylinder with heat production)."""
    return (1.0 / (2 * math.pi * radius * H) + math.log(radius / outer_radius) / (2 * math.pi * K_POTTING)
            + math.log(outer_radius / A_WIRE) / (2 * math.pi * k_insulation) + 1.0 / (8 * math.pi * K_COPPER))


def fixed_point(current: float, rth: float) -> float:
    """degC: the steady mean temperature of T = T_amb + I^2 rho(T) / A R_th (linear in T)."""
    c = current ** 2 * RHO20 * rth / AREA
    return (AMBIENT + c * (1.0 - 20.0 * ALPHA)) / (1.0 - c * ALPHA)


def loss_at(current: float, temperature: float) -> float:
    """W/m: I^2 rho(T) / A (Ohm's law; rho(T) from IEC 60028)."""
    return current ** 2 * RHO20 * (1.0 + ALPHA * (temperature - 20.0)) / AREA


@pytest.fixture(scope="module")
def wire_solutions():
    """The single wire at 40 A: the one-way (flat) solution and the coupled one."""
    flat_case = racfield.load_case(single_wire(coupled=False))
    flat = run_case_sweep(flat_case).thermal
    coupled = run_case_sweep(racfield.load_case(single_wire())).thermal
    return far_radius(flat_case), flat, coupled


def test_coupled_fixed_point_against_the_closed_form(wire_solutions):
    radius, flat, coupled = wire_solutions
    current = 40.0
    assert flat.converged and flat.steady_state and flat.iterations == 1
    # the flat loss is I^2 R20 per metre (Ohm's law, IEC 60028), the true area's at DC
    assert flat.loss_w["a"] == pytest.approx(loss_at(current, 20.0), rel=1e-10)

    # (a) the analytic R_th (Incropera & DeWitt ch. 3; Carslaw & Jaeger): discretization error only
    expected = fixed_point(current, analytic_rth(radius))
    assert coupled.conductor_temperature_c[0] == pytest.approx(expected, rel=1e-4)
    assert coupled.loss_w["a"] == pytest.approx(loss_at(current, expected), rel=1e-4)

    # (b) the model's own R_th: at DC the heat shape does not depend on rho, so the discrete coupled
    # problem is exactly the scalar linear fixed point (closed form above)
    rth = (flat.conductor_temperature_c[0] - AMBIENT) / flat.loss_w["a"]
    c = flat.loss_w["a"] * rth                          # I^2 R20 R_th with the discrete loss (K)
    exact = (AMBIENT + c * (1.0 - 20.0 * ALPHA)) / (1.0 - c * ALPHA)
    print(f"\ncoupled wire: racfield {coupled.conductor_temperature_c[0]:.12g} degC, closed form (model R_th) "
          f"{exact:.12g}, (analytic R_th) {expected:.9g}; {coupled.iterations} field solutions")
    assert coupled.conductor_temperature_c[0] == pytest.approx(exact, rel=1e-6)
    assert coupled.loss_w["a"] == pytest.approx(flat.loss_w["a"] * (1 + ALPHA * (exact - 20.0)), rel=1e-6)
    assert coupled.resistivity[0] == pytest.approx(RHO20 * (1 + ALPHA * (exact - 20.0)), rel=1e-6)   # IEC 60028
    # Anderson acceleration solves a linear fixed point in a few steps (Anderson 1965); the plain
    # iteration would contract only by c alpha = 0.3 per step (about 20 steps to 1e-10)
    assert coupled.converged and coupled.steady_state and coupled.message == ""
    assert coupled.iterations <= 8
    assert coupled.flat_loss_w["a"] == pytest.approx(flat.loss_w["a"], rel=1e-12)   # same first solve
    assert coupled.heat_balance_error < 1e-8                                          # first law


def runaway_current(radius: float, c_alpha: float = 1.2) -> float:
    """A (RMS): the current at which c alpha = ``c_alpha`` with the analytic R_th."""
    return math.sqrt(c_alpha * AREA / (ALPHA * RHO20 * analytic_rth(radius)))


def test_runaway_reports_no_steady_state(wire_solutions):
    radius = wire_solutions[0]
    current = runaway_current(radius)
    result = run_case_sweep(racfield.load_case(single_wire(current))).thermal
    # c alpha >= 1: the loss grows faster with temperature than the boundary removes it (closed form)
    assert not result.steady_state and not result.converged
    assert result.message.startswith("no steady state"), result.message
    assert result.loss_history_w == sorted(result.loss_history_w)   # the plain steps climb


def _toml(doc: dict) -> str:
    """A small TOML writer for the flat documents here (tables, arrays of tables, values)."""
    def value(v):
        return json.dumps(v) if not isinstance(v, bool) else ("true" if v else "false")
    lines = []
    for name, table in doc.items():
        for item in (table if isinstance(table, list) else [table]):
            lines.append(f"[[{name}]]" if isinstance(table, list) else f"[{name}]")
            lines += [f"{k} = {value(v)}" for k, v in item.items()]
    return "\n".join(lines) + "\n"


def test_runaway_run_exits_normally_and_says_so(wire_solutions, tmp_path, capsys):
    doc = single_wire(runaway_current(wire_solutions[0]))
    path = tmp_path / "runaway.toml"
    path.write_text(_toml(doc), encoding="utf-8")
    out = tmp_path / "results"
    capsys.readouterr()
    status = main(["run", str(path), "--out", str(out)])
    captured = capsys.readouterr()
    # a result, not an error (README, Bad input: errors exit 2; a solved case exits 0)
    assert status == 0, captured.err
    assert "Traceback" not in captured.err and "Traceback" not in captured.out
    assert any(line.strip().startswith("no steady state") for line in captured.out.splitlines()), captured.out
    thermal = json.loads((out / "results.json").read_text(encoding="utf-8"))["thermal"]
    assert thermal["steady_state"] is False and thermal["message"].startswith("no steady state")


def test_one_way_losses_are_the_sweep_losses():
    thermal = {"core_temperature": "80 degC", "coupled": False, "frequency": "100 kHz"}
    frequencies = ("10 kHz", "100 kHz", "300 kHz")
    with_thermal = racfield.solve(racfield.load_case(two_windings(thermal=thermal, frequencies=frequencies)))
    without = racfield.solve(racfield.load_case(two_windings(frequencies=frequencies)))
    doc, plain = with_thermal.document, without.document
    assert "thermal" not in plain
    t = doc["thermal"]
    assert t["coupled"] is False and t["iterations"] == 1 and t["flat_temperature_c"] == 20.0
    at = doc["frequencies_hz"].index(100e3)
    # the same field solution at the case temperature: the same losses (the one-way model, by definition)
    for name in ("p", "s"):
        assert t["windings"][name]["flat_loss_w"] == pytest.approx(plain["windings"][name]["loss_w"][at], rel=1e-12)
        assert t["windings"][name]["loss_w"] == t["windings"][name]["flat_loss_w"]
        # the whole sweep untouched by [thermal] (the thermal solution comes after it)
        assert doc["windings"][name]["loss_w"] == plain["windings"][name]["loss_w"]
        assert doc["windings"][name]["rac_ohm"] == plain["windings"][name]["rac_ohm"]
    assert t["heat_balance_error"] < 1e-8   # first law


def test_insulation_as_a_thin_resistive_layer():
    case = racfield.load_case(single_wire(coupled=False, outer="1.2 mm", insulation_conductivity="0.2 W/(m K)"))
    result = run_case_sweep(case).thermal
    radius = far_radius(case)
    rise = result.conductor_temperature_c[0] - AMBIENT
    # composite cylinder: insulation a..a+t at k_ins, potting a+t..R, film, copper mean
    # (cylindrical conduction resistance ln(r2/r1) / (2 pi k): Incropera & DeWitt ch. 3)
    expected = result.loss_w["a"] * analytic_rth(radius, outer_radius=0.6e-3, k_insulation=0.2)
    print(f"\ninsulated wire: rise racfield {rise:.9g} K, series resistances {expected:.9g} K")
    assert rise == pytest.approx(expected, rel=1e-4)
    # and the insulation is really there: it adds ln(1.2) (1/k_ins - 1/k_fill) / (2 pi) K/(W/m)
    bare = result.loss_w["a"] * analytic_rth(radius)
    assert rise - bare == pytest.approx(result.loss_w["a"] * math.log(1.2) * (1 / 0.2 - 1 / 0.5) / (2 * math.pi),
                                        rel=1e-2)


@pytest.mark.parametrize("symmetry", ["planar", "axisymmetric"])
def test_energy_balance_and_maximum_principle(symmetry):
    doc = two_windings(symmetry, thermal={"core_temperature": "80 degC", "tolerance": 1e-8})
    result = run_case_sweep(racfield.load_case(doc)).thermal
    assert result.steady_state and result.converged and result.coupled
    assert result.heat_balance_error < 1e-8    # first law: the heat through the core walls is the loss
    # maximum principle (Carslaw & Jaeger, ch. 1): q >= 0, so nothing is colder than the walls
    assert min(result.conductor_temperature_c) >= 80.0
    assert result.hot_spot_c >= max(result.conductor_temperature_c) > 80.0
    assert min(result.map_values) >= 80.0 - 1e-9


#: a ramp on DC and a zero-mean triangle (A against s, one 10 us period)
RAMPS = {"with_dc": [[0, 0.5], [5e-6, 2.5], [10e-6, 0.5]], "zero_mean": [[0, -1.0], [5e-6, 1.0], [10e-6, -1.0]]}


@pytest.mark.parametrize("name", list(RAMPS))
def test_waveform_heat_is_the_harmonic_loss_sum(name):
    ramp = RAMPS[name]
    doc = {"model": {"temperature": "20 degC", "length": "30 mm"},
           "waveform": {"frequency": "100 kHz", "max_harmonic": 7},
           "window": {"width": "3 mm", "height": "4 mm", "boundary": "ideal-core"},
           "winding": [{"name": "p", "waveform": {"samples": ramp}},
                       {"name": "s", "waveform": {"samples": [[t, -i] for t, i in ramp]}}],
           "layer": [{"winding": "p", "conductor": {"shape": "round", "diameter": "0.5 mm"}, "turns": 4},
                     {"winding": "s", "conductor": {"shape": "round", "diameter": "0.5 mm"}, "turns": 4}],
           "thermal": {"core_temperature": "80 degC", "coupled": False}}
    document = racfield.solve(racfield.load_case(doc)).document
    thermal, harmonics = document["thermal"], document["harmonics"]
    assert thermal["operating_point"].startswith("the current waveforms: " + ("DC and" if name == "with_dc" else ""))
    # the harmonics' DC part is I_dc^2 Rdc with the true area (IEC 60028), and so is the heat at 0 Hz
    rel = 1e-9
    harmonic_total = sum(w["total_loss_w"] for w in harmonics["windings"].values())
    print(f"\nwaveform {name}: thermal heat {thermal['flat_total_loss_w']:.12g} W, harmonic losses "
          f"{harmonic_total:.12g} W, relative {thermal['flat_total_loss_w'] / harmonic_total - 1:+.2e}")
    # densities of different harmonics add: sines of different frequencies are orthogonal over a period
    assert thermal["flat_total_loss_w"] == pytest.approx(harmonic_total, rel=rel)
    for winding, w in harmonics["windings"].items():
        assert thermal["windings"][winding]["flat_loss_w"] == pytest.approx(w["total_loss_w"], rel=rel)
        # Rac of the waveform: loss / RMS^2 of DC and all harmonics (Parseval)
        assert thermal["windings"][winding]["flat_rac_ohm"] == pytest.approx(w["total_loss_w"] / w["rms_a"] ** 2,
                                                                             rel=rel)
    assert thermal["heat_balance_error"] < 1e-8   # first law


def test_operating_frequency_above_the_sweep_sizes_the_mesh():
    # the heat at [thermal] frequency is a solved field: its mesh must be sized for its skin depth
    # (README, Numerics: the mesh follows the skin depth at the highest solved frequency), so the
    # operating point above a low sweep gives the loss a sweep at that frequency gives (common practice)
    thermal = {"core_temperature": "80 degC", "coupled": False, "frequency": "2 MHz"}
    low = racfield.solve(racfield.load_case(two_windings(thermal=thermal, frequencies=("10 kHz",)))).document
    at = racfield.solve(racfield.load_case(two_windings(frequencies=("2 MHz",)))).document
    assert low["thermal"]["flat_total_loss_w"] == pytest.approx(at["total_loss_w"][0], rel=1e-9)
    assert low["mesh"]["unknowns"] == at["mesh"]["unknowns"]
