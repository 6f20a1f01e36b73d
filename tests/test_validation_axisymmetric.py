"""Validation: axisymmetric models (model.symmetry = "axisymmetric").

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
   within 0.3 %.
4. Planar (one model.length, the winding's mean turn length 2 pi r_mean) and
   axisymmetric models of the same winding: the same winding Rdc far from the
   axis; nearer the axis each ring's resistance falls below rho 2 pi r / A
   (its own length) as the DC current crowds to the inner side (1/r), more so
   the nearer the axis, and the planar model's one length misstates each turn
   (inner turns are shorter, outer ones longer).  The numbers go to TREND.
5. A pot-type core (solid centre post r < inner_radius, outer ring, plates)
   with a centre-post gap: inductance not below the magnetic-circuit estimate
   by more than 1 % (common practice), and the sum of the turn losses equals
   Re(sum V I*) at the terminals (energy balance, common practice).

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
#: check 4, for README: per inner radius (mm), "total": axisymmetric / planar winding
#: Rdc - 1; "crowding": the largest |ring Rdc / (rho 2 pi r / A) - 1| over the
#: turns; "planar_turn_low"/"planar_turn_high": the range over the turns of
#: ring Rdc / planar Rdc of that turn (rho 2 pi r_mean / A) - 1.  Check 5:
#: "L / estimate" per gap.
TREND: dict[str, dict[str, float] | float] = {}

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


# ------------------------------------------------------------ 4. planar and axisymmetric Rdc

WIRE_W, WIRE_H = 0.8e-3, 1.5e-3          # m, bare rectangular wire
TREND_INNER_RADII = (100e-3, 20e-3, 5e-3, 2e-3, 1e-3, 0.5e-3)   # m, decreasing
AGREE_INNER_RADII = (100e-3, 20e-3)      # m, window width 3.6 mm: thin next to r
AGREE_TOLERANCE = 5e-3                   # 0.5 %
# layer centres x (m): inner margin 0.2 mm, then layers 0.9 mm thick over insulation
# with 0.3 mm between them (the layout rule of the case file, see README)
LAYER_X = tuple(0.2e-3 + 0.45e-3 + k * (0.9e-3 + 0.3e-3) for k in range(3))


def winding_doc(symmetry: str, inner_radius: float | None = None, length: float | None = None) -> dict:
    """Three layers of five 0.8 mm x 1.5 mm copper turns in a 3.6 mm x 10 mm window."""
    model = {"symmetry": symmetry, "temperature": "20 degC"}
    window = {"width": "3.6 mm", "height": "10 mm", "boundary": "open",
              "margins": {"inner": "0.2 mm", "outer": "0.1 mm", "top": "0.5 mm", "bottom": "0.5 mm"}}
    if symmetry == "axisymmetric":
        window["inner_radius"] = inner_radius
    else:
        model["length"] = length
    return {
        "title": "winding", "model": model, "sweep": {"frequencies": [0.0]}, "window": window,
        "winding": [{"name": "coil", "material": "copper", "current": "1 A"}],
        "layer": [{"winding": "coil", "turns": 5, "repeat": 3, "insulation_after": "0.3 mm",
                   "conductor": {"shape": "rectangular", "width": WIRE_W, "height": WIRE_H,
                                 "outer_width": "0.9 mm", "outer_height": "1.7 mm"}}],
    }


@functools.lru_cache(maxsize=None)
def _planar_and_axisymmetric(inner_radius: float):
    """(axisymmetric report, planar report with model.length = 2 pi r_mean, turn radii)."""
    axisymmetric = _solve(winding_doc("axisymmetric", inner_radius))
    radii = np.array([inner_radius + c.x for c in axisymmetric.sweep.conductors])
    # every turn at one of the layer centres computed above (the case's layout)
    assert all(min(abs(c.x - x) for x in LAYER_X) < 1e-12 for c in axisymmetric.sweep.conductors)
    mean_turn_length = 2 * math.pi * radii.mean()
    planar = _solve(winding_doc("planar", length=mean_turn_length))
    return axisymmetric, planar, radii


@pytest.mark.parametrize("inner_radius", AGREE_INNER_RADII)
def test_planar_and_axisymmetric_winding_rdc_agree_far_from_axis(inner_radius):
    """Far from the axis (r >= 5.5 window widths) a ring is a straight conductor of
    length 2 pi r, and the sum of 2 pi r_k over the turns is N 2 pi r_mean: the planar
    model with the mean turn length gives the winding Rdc (common practice)."""
    axisymmetric, planar, _ = _planar_and_axisymmetric(inner_radius)
    a, p = axisymmetric.windings[0], planar.windings[0]
    from_geometry = a.rdc_ohm / p.rdc_ohm - 1.0
    from_fem = a.loss_w[0] / p.loss_w[0] - 1.0
    print(f"\ninner radius {inner_radius * 1e3:g} mm: winding Rdc axisymmetric {a.rdc_ohm:.6e} ohm, "
          f"planar {p.rdc_ohm:.6e} ohm ({from_geometry:+.2e}); FEM at 0 Hz ({from_fem:+.2e})")
    MAX_REL_ERROR[f"winding Rdc planar vs axisymmetric, r_in={inner_radius * 1e3:g} mm"] = max(
        abs(from_geometry), abs(from_fem))
    assert a.turns == p.turns == 15                 # as defined
    assert abs(from_geometry) <= AGREE_TOLERANCE    # common practice (mean turn length)
    assert abs(from_fem) <= AGREE_TOLERANCE         # common practice (mean turn length)


def test_per_turn_difference_grows_toward_the_axis():
    """For the same window and winding, moved toward the axis: every ring's FEM
    resistance at 0 Hz is the exact ring value 2 pi rho / (h ln(r2/r1)) (within
    0.05 %), below rho 2 pi r / A of its own length (the DC current crowds to the
    inner side as 1/r: R / (rho 2 pi r / A) = 2x / ln((1+x)/(1-x)) < 1, x = w / 2r),
    and the deficit, the winding total's difference from the planar model and the
    spread of the turns about the planar model's one length all grow monotonically
    as the inner radius decreases (exact DC ring resistance; common practice)."""
    area = WIRE_W * WIRE_H
    totals, crowding, spread = [], [], []
    print("\ninner radius mm, winding axi/planar - 1, max |ring/(rho 2 pi r/A) - 1|, "
          "ring / planar turn - 1 (innermost, outermost)")
    for inner_radius in TREND_INNER_RADII:
        axisymmetric, planar, radii = _planar_and_axisymmetric(inner_radius)
        ring = axisymmetric.sweep.loss_per_m[0] / 1.0 ** 2           # ohm per ring at 1 A
        exact = np.array([rectangular_ring_resistance(r - WIRE_W / 2, r + WIRE_W / 2, WIRE_H) for r in radii])
        worst_exact = float(np.abs(ring / exact - 1.0).max())
        MAX_REL_ERROR[f"ring P(0 Hz)/I^2 per turn, r_in={inner_radius * 1e3:g} mm"] = worst_exact
        # exact DC ring resistance (integral of 1/r over the section)
        assert worst_exact <= DC_TOLERANCE
        own = RHO * 2 * math.pi * radii / area                          # rho l / A with l = 2 pi r
        deficit = ring / own - 1.0
        # the 1/r crowding lowers every ring below rho 2 pi r / A (exact; see docstring)
        assert (deficit < 0).all()
        planar_turn = planar.sweep.loss_per_m[0] * planar.case.model.length   # rho 2 pi r_mean / A
        versus_planar = ring / planar_turn - 1.0
        total = axisymmetric.windings[0].loss_w[0] / planar.windings[0].loss_w[0] - 1.0
        totals.append(abs(total))
        crowding.append(float(np.abs(deficit).max()))
        spread.append(float(versus_planar.max() - versus_planar.min()))
        inner, outer = versus_planar[np.argmin(radii)], versus_planar[np.argmax(radii)]
        TREND[f"r_in={inner_radius * 1e3:g} mm"] = {
            "total": float(total), "crowding": crowding[-1],
            "planar_turn_low": float(versus_planar.min()), "planar_turn_high": float(versus_planar.max())}
        print(f"  {inner_radius * 1e3:6.1f}  {total:+.3e}  {crowding[-1]:.3e}  {inner:+.3e}  {outer:+.3e}")
    # monotonic growth toward the axis (common practice: the ring's 1/r crowding
    # and the inner turns' shorter length both grow with w / r)
    assert all(b > a for a, b in zip(totals[:-1], totals[1:])), totals
    assert all(b > a for a, b in zip(crowding[:-1], crowding[1:])), crowding
    assert all(b > a for a, b in zip(spread[:-1], spread[1:])), spread


# ------------------------------------------------------------ 5. pot-type core

POST_RADIUS = 5e-3      # m, centre post radius = window.inner_radius
CORE_W = 6e-3           # m, window width
CORE_H = 10e-3          # m, window height
RING_WIDTH = 2e-3       # m, outer wall thickness (core.outer_leg_width)
PLATE = 3e-3            # m, plate thickness (core.yoke_thickness)
MU_R = 2000.0           # a power ferrite
TURNS = 10
COIL_CURRENT = 2.0      # A RMS
GAPS = (0.1e-3, 0.3e-3, 1.0e-3)   # m, centre-post gaps (1 %, 3 %, 10 % of the post diameter)
CORE_FREQUENCIES = [0.0, 1e3, 100e3]  # Hz; 1 mm turns: skin depth 2 mm at 1 kHz, 0.2 mm at 100 kHz


def pot_core_doc(gap: float) -> dict:
    """A pot core of power ferrite with a gap in the middle of its centre post, around
    a 10-turn, two-layer winding of 1 mm x 1.5 mm rectangular copper."""
    return {
        "title": "pot core",
        "model": {"symmetry": "axisymmetric", "temperature": "20 degC"},
        "sweep": {"frequencies": CORE_FREQUENCIES},
        "window": {"width": CORE_W, "height": CORE_H, "boundary": "core", "inner_radius": POST_RADIUS,
                   "margins": {"inner": "0.5 mm", "outer": "0.5 mm", "top": "0.5 mm", "bottom": "0.5 mm"}},
        "core": {"relative_permeability": MU_R, "outer_leg_width": RING_WIDTH, "yoke_thickness": PLATE},
        "gap": [{"leg": "centre", "length": gap}],
        "winding": [{"name": "coil", "material": "copper", "current": COIL_CURRENT}],
        "layer": [{"winding": "coil", "turns": 5, "repeat": 2, "insulation_after": "0.5 mm",
                   "conductor": {"shape": "rectangular", "width": "1 mm", "height": "1.5 mm",
                                 "outer_height": "1.7 mm"}}],
    }


@functools.lru_cache(maxsize=None)
def _pot_core(gap: float):
    report = _solve(pot_core_doc(gap))
    return report, results_document(report)


def pot_core_estimate(gap: float) -> float:
    """mu0 N^2 / (R_gap + R_core) in H (common practice), reluctances l / (mu A):
    the gap g over the post area pi r_in^2; the post (length H + t - g, half a
    plate at each end) over pi r_in^2; the outer ring (length H + t) over
    pi ((r_o + w)^2 - r_o^2), r_o = r_in + W; and two plates with radial flux
    from the post's mid-radius r_in / 2 to the ring's mid-radius r_o + w / 2,
    int dr / (mu 2 pi r t) = ln(r_b / r_a) / (2 pi mu t)."""
    post = math.pi * POST_RADIUS ** 2
    r_o = POST_RADIUS + CORE_W
    ring = math.pi * ((r_o + RING_WIDTH) ** 2 - r_o ** 2)
    mu = MU0 * MU_R
    r_gap = gap / (MU0 * post)
    r_core = ((CORE_H + PLATE - gap) / (mu * post) + (CORE_H + PLATE) / (mu * ring)
              + 2 * math.log((r_o + RING_WIDTH / 2) / (POST_RADIUS / 2)) / (2 * math.pi * mu * PLATE))
    return TURNS ** 2 / (r_gap + r_core)


@pytest.mark.parametrize("gap", GAPS)
def test_pot_core_inductance_not_below_circuit_estimate(gap):
    """Fringing round the gap and leakage across the window only add permeance: the
    field solution is not below mu0 N^2 / (R_gap + R_core) by more than 1 % (common
    practice), at 0 Hz and 1 kHz; the estimate is gap-dominated (mu_r = 2000)."""
    report, doc = _pot_core(gap)
    assert report.windings[0].turns == TURNS          # as defined
    at_dc, at_low = doc["inductance"]["self_l_h"]["coil"][:2]
    estimate = pot_core_estimate(gap)
    ratio = at_dc / estimate
    TREND[f"pot core L / estimate, gap {gap * 1e3:g} mm"] = ratio
    print(f"\npot core, gap {gap * 1e3:g} mm: L = {at_dc:.5e} H (0 Hz), {at_low:.5e} H (1 kHz), "
          f"estimate {estimate:.5e} H, ratio {ratio:.4f}")
    # one winding: the magnetizing inductance is its self inductance (definition)
    assert doc["inductance"]["magnetizing_l_h"][0] == at_dc
    assert ratio >= 0.99                      # fringing adds permeance (common practice)
    assert at_low / estimate >= 0.99          # the same at 1 kHz (common practice)
    # 1 kHz: skin depth 2 mm in 1 mm turns, no eddy-current effect on L (common practice)
    assert at_low == pytest.approx(at_dc, rel=1e-3)


def test_pot_core_fringing_grows_with_the_gap():
    """L / estimate grows with the gap length (the fringing permeance grows relative
    to the gap's own; common practice)."""
    ratios = [_pot_core(g)[1]["inductance"]["self_l_h"]["coil"][0] / pot_core_estimate(g) for g in GAPS]
    print("\npot core L / estimate: " + ", ".join(f"gap {g * 1e3:g} mm: {r:.4f}" for g, r in zip(GAPS, ratios)))
    assert all(b > a for a, b in zip(ratios[:-1], ratios[1:]))   # common practice


def test_pot_core_energy_balance():
    """The sum of the turn losses equals the power into the terminals, Re(sum V I*),
    per turn (V = Z I from the conductor impedance matrix) and for the winding
    (I^2 Re Z_w from results.json); the core is lossless (energy balance, common practice)."""
    report, doc = _pot_core(GAPS[1])
    sweep = report.sweep
    worst = 0.0
    for i, f in enumerate(sweep.frequencies):
        voltages = sweep.impedance_per_m[i] @ sweep.currents          # V per turn
        terminal = float((voltages * sweep.currents.conj()).real.sum())
        turn_losses = float(sum(c["loss_w"][i] for c in doc["conductors"]))
        winding = COIL_CURRENT ** 2 * doc["impedance"]["r_ohm"][i][0][0]
        errors = (turn_losses / terminal - 1.0, doc["windings"]["coil"]["loss_w"][i] / winding - 1.0)
        worst = max(worst, *map(abs, errors))
        print(f"\n{f:g} Hz: turn losses {turn_losses:.6e} W, Re(sum V I*) {terminal:.6e} W, "
              f"I^2 Re Z {winding:.6e} W ({errors[0]:+.1e}, {errors[1]:+.1e})")
        assert abs(errors[0]) <= 1e-6      # energy balance (common practice)
        assert abs(errors[1]) <= 1e-6      # energy balance (common practice)
    MAX_REL_ERROR["pot core energy balance"] = worst
    # the 100 kHz loss is well above the DC one (eddy currents near the gap; common practice)
    assert doc["windings"]["coil"]["rac_over_rdc"][-1] > 1.5


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
