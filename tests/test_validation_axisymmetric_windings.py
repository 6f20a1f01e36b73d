"""Validation: axisymmetric models (model.symmetry = "axisymmetric") of whole
windings: the planar and the axisymmetric model of one winding, and a
pot-type core.

The window coordinate x is r - window.inner_radius and y is z; every result
is for whole turns (rings): Rdc in ohm per ring, loss in W, impedance in ohm,
inductance in H.  Checks 1-3 (single rings and turns, foils far from the
axis) are in tests/test_validation_axisymmetric.py.  Checks here, each
against something outside racfield:

4. Planar (one model.length, the winding's mean turn length 2 pi r_mean) and
   axisymmetric models of the same winding: the same winding Rdc far from the
   axis; nearer the axis each ring's resistance falls below rho 2 pi r / A
   (its own length) as the DC current crowds to the inner side (1/r), more so
   the nearer the axis, and the planar model's one length misstates each turn
   (inner turns are shorter, outer ones longer).  Every ring's FEM resistance
   at 0 Hz is the exact ring value 2 pi rho / (h ln(r2/r1)) (the integral of
   1/r over its section) within 0.05 %.  The numbers go to TREND.
5. A pot-type core (solid centre post r < inner_radius, outer ring, plates)
   with a centre-post gap: inductance not below the magnetic-circuit estimate
   by more than 1 % (common practice), and the sum of the turn losses equals
   Re(sum V I*) at the terminals (energy balance, common practice).

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

RHO = 1.7241e-8          # ohm*m, annealed copper at 20 degC (IEC 60028)
MU0 = 4e-7 * math.pi    # H/m
DC_TOLERANCE = 5e-4     # 0.05 %


def _solve(doc: dict):
    case = parse_case(doc)
    return build_report(case, run_sweep(case))


def rectangular_ring_resistance(r1: float, r2: float, h: float) -> float:
    """2 pi rho / (h ln(r2/r1)): 1/R = (1/rho) int_r1^r2 h dr / (2 pi r), exact at DC."""
    return 2 * math.pi * RHO / (h * math.log(r2 / r1))


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
