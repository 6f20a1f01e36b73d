"""Validation: axisymmetric models (model.symmetry = "axisymmetric"): single
rings, one circular turn, foils far from the axis, the ideal-core window near it.

The window coordinate x is r - window.inner_radius and y is z; every result
is for whole turns (rings): Rdc in ohm per ring, loss in W, impedance in ohm,
inductance in H.  Checks, each against something outside racfield:

1. DC resistance of a ring.  At DC the ring's current density goes as 1/r
   (E = V / (2 pi r)), so 1/R = (1/rho) int dA / (2 pi r), which is exact:
   a rectangular section r1..r2 of height h gives R = 2 pi rho / (h ln(r2/r1)),
   a round wire of radius a at radius R0 gives R = rho / (R0 - sqrt(R0^2 - a^2))
   (the integral of 1/r over a disk).  Both the reported Rdc (geometry) and
   the FEM loss at 0 Hz / I^2 (the solver) within 0.05 %, near the axis and far
   from it.
2. Self-inductance of one circular turn of round wire (loop radius R, wire
   radius a, uniform current) L = mu0 R (ln(8R/a) - 7/4) (E. B. Rosa and
   F. W. Grover, "Formulas and tables for the calculation of mutual and
   self-inductance", Bulletin of the Bureau of Standards 8, 1912; F. W. Grover,
   "Inductance Calculations", 1946), open boundary, within 0.5 % for
   R/a = 40, 80, 160, at 0 Hz and at a low frequency; and its independence of
   the far radius.
3. Full-height foils at a large inner radius (inner_radius / window width
   > 1000) in an ideal-core window: the planar Dowell result (P. L. Dowell,
   "Effects of eddy currents in transformer windings", Proc. IEE 113(8), 1966)
   within 0.3 %.  3b. Near the axis, the ideal-core window equals a gapless
   core of mu_r = 1e6 within 0.01 % (common practice: the mu_r -> infinity limit).

Checks 4 (planar and axisymmetric models of one winding) and 5 (a pot-type
core) are in tests/test_validation_axisymmetric_windings.py.

Ampere's law is not checked here: fem.probe returns the planar
B = (dA/dy, -dA/dx), and the axisymmetric B_z = dA/dr + A/r needs A itself
at the probe points.

Resistivities and mu0 are written out here (IEC 60028 copper), not taken from
racfield's tables.
"""
from __future__ import annotations

import functools
import math

import numpy as np
import pytest

from racfield.fem.sweep import run_sweep
from racfield.geometry.case import parse_case
from racfield.postprocess.report import build_report, results_document

#: measured maximum relative errors, for the README validation table
MAX_REL_ERROR: dict[str, float] = {}
RHO_CU_20 = 1.7241e-8   # ohm*m, annealed copper at 20 degC (IEC 60028)
ALPHA_CU = 0.00393      # 1/K (IEC 60028)
MU0 = 4e-7 * math.pi    # H/m


def rho_copper(temperature_c: float) -> float:
    # IEC 60028: 1.7241e-8 ohm*m at 20 degC, 0.00393 /K
    return RHO_CU_20 * (1.0 + ALPHA_CU * (temperature_c - 20.0))


RHO = rho_copper(20.0)


def _solve(doc: dict):
    case = parse_case(doc)
    return build_report(case, run_sweep(case))


# ------------------------------------------------------------ 1. DC resistance of a ring

RING_CURRENT = 2.0   # A RMS
DC_TOLERANCE = 5e-4  # 0.05 %


def ring_doc(inner_radius: float, width: float, height: float, conductor: dict,
             frequencies: list[float]) -> dict:
    """One ring in open space; the conductor touches the window's inner wall."""
    return {
        "title": "ring",
        "model": {"symmetry": "axisymmetric", "temperature": "20 degC"},
        "sweep": {"frequencies": frequencies},
        "window": {"width": width, "height": height, "boundary": "open", "inner_radius": inner_radius},
        "winding": [{"name": "ring", "material": "copper", "current": RING_CURRENT}],
        "conductor": [{"winding": "ring", **conductor}],
    }


def rectangular_ring_resistance(r1: float, r2: float, h: float) -> float:
    """2 pi rho / (h ln(r2/r1)): 1/R = (1/rho) int_r1^r2 h dr / (2 pi r), exact at DC."""
    return 2 * math.pi * RHO / (h * math.log(r2 / r1))


def round_ring_resistance(r0: float, a: float) -> float:
    """rho / (R0 - sqrt(R0^2 - a^2)): 1/R = (1/(2 pi rho)) int_disk dA / r, and
    int_disk dA / r = 2 pi (R0 - sqrt(R0^2 - a^2)), exact at DC."""
    return RHO / (r0 - math.sqrt(r0 * r0 - a * a))


def _check_dc(report, expected: float, label: str) -> None:
    winding = report.windings[0]
    doc = results_document(report)
    reported = winding.rdc_ohm / expected - 1.0
    listed = doc["conductors"][0]["rdc_ohm"] / expected - 1.0
    solved = winding.loss_w[0] / RING_CURRENT ** 2 / expected - 1.0
    print(f"\n{label}: Rdc {winding.rdc_ohm:.6e} ohm, P(0 Hz)/I^2 {winding.loss_w[0] / RING_CURRENT ** 2:.6e} ohm, "
          f"exact {expected:.6e} ohm ({reported:+.2e}, {solved:+.2e})")
    MAX_REL_ERROR[f"ring Rdc (geometry), {label}"] = max(abs(reported), abs(listed))
    MAX_REL_ERROR[f"ring P(0 Hz)/I^2 (FEM), {label}"] = abs(solved)
    assert report.sweep.frequencies[0] == 0.0   # the sweep starts at DC, as given
    # exact DC ring resistance (integral of 1/r over the section, see above)
    assert abs(reported) <= DC_TOLERANCE
    assert abs(listed) <= DC_TOLERANCE
    assert abs(solved) <= DC_TOLERANCE


@pytest.mark.parametrize("r1, r2, h", [(0.5e-3, 3e-3, 1e-3), (0.25e-3, 1.25e-3, 2e-3), (50e-3, 52.5e-3, 1e-3)],
                         ids=["near-axis", "nearer-axis", "far"])
def test_rectangular_ring_rdc(r1, r2, h):
    """Ring of rectangular section r1..r2, height h: R = 2 pi rho / (h ln(r2/r1))."""
    conductor = {"shape": "rectangular", "width": r2 - r1, "height": h, "at": [(r2 - r1) / 2, h / 2 + 0.5e-3]}
    report = _solve(ring_doc(r1, r2 - r1 + 1e-3, h + 1e-3, conductor, [0.0]))
    # the ring spans r1..r2: its inner edge is on the inner wall (x = 0, r = inner_radius)
    c = report.sweep.conductors[0]
    assert r1 + c.x - c.width / 2 == pytest.approx(r1, abs=1e-15)
    assert r1 + c.x + c.width / 2 == pytest.approx(r2, rel=1e-12)
    _check_dc(report, rectangular_ring_resistance(r1, r2, h), f"rectangle r1={r1 * 1e3:g} mm r2={r2 * 1e3:g} mm")


@pytest.mark.parametrize("r0", [0.6e-3, 2e-3, 50e-3], ids=["near-axis", "close", "far"])
def test_round_wire_ring_rdc(r0):
    """Ring of round wire (radius a = 0.5 mm) at radius R0: R = rho / (R0 - sqrt(R0^2 - a^2))."""
    a = 0.5e-3
    conductor = {"shape": "round", "diameter": 2 * a, "at": [a, a + 0.5e-3]}
    report = _solve(ring_doc(r0 - a, 2 * a + 1e-3, 2 * a + 1e-3, conductor, [0.0]))
    doc = results_document(report)
    assert doc["conductors"][0]["r_m"] == pytest.approx(r0, rel=1e-12)   # r = inner_radius + x, as defined
    _check_dc(report, round_ring_resistance(r0, a), f"round wire R0={r0 * 1e3:g} mm a=0.5 mm")


# ------------------------------------------------------------ 2. one circular turn

WIRE_RADIUS = 0.5e-3     # m
LOOP_RATIOS = (40, 80, 160)   # R / a
LOW_FREQUENCY = 100.0    # Hz: skin depth in copper about 6.6 mm, 13 wire radii
LOOP_TOLERANCE = 5e-3    # 0.5 %
FAR_TOLERANCE = 1e-3     # 0.1 %


def loop_doc(ratio: int, far_radius_factor: float = 5.0, density: float = 1.0) -> dict:
    """One turn of 1 mm copper wire, loop radius ratio * a, in open space."""
    a = WIRE_RADIUS
    return {
        "title": f"loop R/a={ratio}",
        "model": {"symmetry": "axisymmetric", "temperature": "20 degC"},
        "sweep": {"frequencies": [0.0, LOW_FREQUENCY]},
        "window": {"width": 4 * a, "height": 4 * a, "boundary": "open", "inner_radius": ratio * a - 2 * a},
        "winding": [{"name": "loop", "material": "copper", "current": "1 A"}],
        "conductor": [{"winding": "loop", "shape": "round", "diameter": 2 * a, "at": [2 * a, 2 * a]}],
        "mesh": {"far_radius_factor": far_radius_factor, "density": density},
    }


@functools.lru_cache(maxsize=None)
def _loop_inductance(ratio: int, far_radius_factor: float = 5.0, density: float = 1.0) -> tuple[float, ...]:
    """Self inductance (H) of the loop at 0 Hz and LOW_FREQUENCY, from results.json."""
    report = _solve(loop_doc(ratio, far_radius_factor, density))
    doc = results_document(report)
    assert doc["conductors"][0]["r_m"] == pytest.approx(ratio * WIRE_RADIUS, rel=1e-12)  # as defined
    return tuple(doc["inductance"]["self_l_h"]["loop"])


def rosa_grover(loop_radius: float, wire_radius: float) -> float:
    """mu0 R (ln(8R/a) - 7/4): a circular turn of round wire, uniform current
    (Rosa and Grover, Bull. Bureau of Standards 8, 1912; Grover, Inductance
    Calculations, 1946).  The next term, of relative order (a/R)^2 ln(8R/a), is
    below 1e-4 here (from memory: + (a^2 / 8R^2)(ln(8R/a) + 1/3) inside the bracket)."""
    return MU0 * loop_radius * (math.log(8 * loop_radius / wire_radius) - 1.75)


@pytest.mark.parametrize("ratio", LOOP_RATIOS)
def test_single_turn_inductance(ratio):
    at_dc, at_low = _loop_inductance(ratio)
    expected = rosa_grover(ratio * WIRE_RADIUS, WIRE_RADIUS)
    errors = (at_dc / expected - 1.0, at_low / expected - 1.0)
    print(f"\nloop R/a = {ratio}: L = {at_dc:.6e} H (0 Hz), {at_low:.6e} H ({LOW_FREQUENCY:g} Hz), "
          f"Rosa-Grover {expected:.6e} H ({errors[0]:+.2e}, {errors[1]:+.2e})")
    MAX_REL_ERROR[f"loop inductance R/a={ratio}"] = max(abs(e) for e in errors)
    # Rosa and Grover 1912; Grover, Inductance Calculations, 1946
    assert abs(errors[0]) <= LOOP_TOLERANCE
    assert abs(errors[1]) <= LOOP_TOLERANCE
    # at 100 Hz the skin depth is 13 wire radii: the internal inductance is the DC one
    # (common practice)
    assert at_low == pytest.approx(at_dc, rel=1e-5)


@pytest.mark.parametrize("ratio", LOOP_RATIOS)
def test_single_turn_inductance_does_not_depend_on_far_radius(ratio):
    """mesh.far_radius_factor 4 and 8 give the same inductance within 0.1 %: the far
    arc's condition is exact for a dipole field, and the loop's field decays as a
    dipole's (common practice).  Mesh density 2: the largest air elements scale with
    the far radius (a sixth of it), which moves the result by up to 0.1 % at density 1."""
    near = _loop_inductance(ratio, 4.0, 2.0)[0]
    far = _loop_inductance(ratio, 8.0, 2.0)[0]
    change = far / near - 1.0
    print(f"\nloop R/a = {ratio}: far radius factor 4 -> 8 changes L by {change:+.2e}")
    MAX_REL_ERROR[f"loop inductance, far radius 4 vs 8, R/a={ratio}"] = abs(change)
    assert abs(change) <= FAR_TOLERANCE   # common practice (truncation of the open domain)


# ------------------------------------------------------------ 3. Dowell far from the axis

TEMPERATURE = 100.0     # degC
THICKNESS = 0.1e-3      # m, foil thickness
FOIL_HEIGHT = 1.0e-3    # m, window height = foil height
INSULATION = 0.02e-3    # m, between layers
FAR_INNER_RADIUS = 1.0  # m
DELTAS = (0.3, 0.7, 1.0, 1.5, 2.0, 3.0, 5.0)  # thickness / skin depth
DOWELL_TOLERANCE = 3e-3  # 0.3 %


def frequency_for(delta_ratio: float) -> float:
    """f at which the skin depth sqrt(2 rho/(omega mu0)) is THICKNESS / delta_ratio."""
    delta = THICKNESS / delta_ratio
    return rho_copper(TEMPERATURE) / (math.pi * MU0 * delta ** 2)


def dowell(d: float, m: int) -> float:
    """Dowell's Rac/Rdc of an m-layer portion (Dowell, Proc. IEE 113(8), 1966)."""
    xi1 = (math.sinh(2 * d) + math.sin(2 * d)) / (math.cosh(2 * d) - math.cos(2 * d))
    xi2 = (math.sinh(d) - math.sin(d)) / (math.cosh(d) + math.cos(d))
    return d * (xi1 + 2.0 / 3.0 * (m * m - 1) * xi2)


def foil_doc(m: int) -> dict:
    """m one-turn foil layers of a primary, then m of a secondary with opposite
    ampere-turns, filling the window height, at 1 m from the axis."""
    foil = {"shape": "foil", "thickness": THICKNESS, "height": FOIL_HEIGHT}
    stack = 2 * m * (THICKNESS + INSULATION)
    return {
        "title": f"Dowell at a large radius, {m} + {m} foil layers",
        "model": {"symmetry": "axisymmetric", "temperature": f"{TEMPERATURE} degC"},
        "sweep": {"frequencies": [frequency_for(d) for d in DELTAS]},
        "window": {"width": stack + 0.1e-3, "height": FOIL_HEIGHT, "boundary": "ideal-core",
                   "inner_radius": FAR_INNER_RADIUS, "stacking": "across-width"},
        "winding": [{"name": "primary", "material": "copper", "current": "3 A", "phase": 0},
                    {"name": "secondary", "material": "copper", "current": "3 A", "phase": 180}],
        "layer": [{"winding": "primary", "conductor": foil, "turns": 1, "repeat": m,
                   "insulation_after": INSULATION},
                  {"winding": "secondary", "conductor": foil, "turns": 1, "repeat": m,
                   "insulation_after": INSULATION}],
    }


@pytest.mark.parametrize("m", [1, 2, 3])
def test_foils_far_from_axis_match_dowell(m):
    doc = foil_doc(m)
    assert FAR_INNER_RADIUS / doc["window"]["width"] >= 1000   # far from the axis, as required
    report = _solve(doc)
    worst = 0.0
    failures = []
    print(f"\nDowell m = {m} at r = {FAR_INNER_RADIUS:g} m: Delta, primary, secondary, Dowell F")
    rows = {w.name: w.rac_over_rdc for w in report.windings}
    for i, d in enumerate(DELTAS):
        expected = dowell(d, m)
        print(f"  {d:4.1f}  {rows['primary'][i]:11.6f}  {rows['secondary'][i]:11.6f}  {expected:11.6f}")
        for name in ("primary", "secondary"):
            error = rows[name][i] / expected - 1.0
            worst = max(worst, abs(error))
            if abs(error) > DOWELL_TOLERANCE:
                failures.append(f"{name} Delta={d}: {rows[name][i]:.6f} vs {expected:.6f} ({error:+.3e})")
    print(f"  max |relative error| (both windings) = {worst:.2e}")
    MAX_REL_ERROR[f"Dowell m={m}, axisymmetric at r/W > 1000"] = worst
    # Dowell, "Effects of eddy currents in transformer windings", Proc. IEE 113(8), 1966
    assert not failures, "; ".join(failures)


# ------------------------------------------------------------ 3b. the ideal-core walls near the axis

NEAR_INNER_RADIUS = 0.5e-3   # m, less than the window width
CORE_TOLERANCE = 1e-4        # 0.01 %


def test_ideal_core_window_near_axis_is_a_gapless_high_permeability_core():
    """Near the axis (no Dowell limit there), the ideal-core window (walls with
    tangential H = 0) is the limit of a gapless core body of very high permeability
    around the same window: with balanced ampere-turns no flux crosses the core, and
    mu_r = 1e6 gives every turn's loss within 0.01 % (common practice: the ideal-core
    boundary is the mu_r -> infinity limit)."""
    ideal = foil_doc(2)
    ideal["window"]["inner_radius"] = NEAR_INNER_RADIUS
    assert NEAR_INNER_RADIUS < ideal["window"]["width"]          # near the axis, as intended
    body = {**ideal, "window": {**ideal["window"], "boundary": "core"},
            "core": {"relative_permeability": 1e6, "outer_leg_width": "2 mm", "yoke_thickness": "2 mm"}}
    a, b = _solve(ideal).sweep, _solve(body).sweep
    error = float(np.abs(a.loss_per_m / b.loss_per_m - 1.0).max())
    print(f"\nideal-core window vs gapless mu_r = 1e6 core at r_in = {NEAR_INNER_RADIUS * 1e3:g} mm: "
          f"max |turn loss ratio - 1| = {error:.2e}")
    MAX_REL_ERROR["ideal-core vs mu_r 1e6 core near the axis"] = error
    assert abs(error) <= CORE_TOLERANCE   # common practice (mu_r -> infinity limit)
