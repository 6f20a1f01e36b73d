"""Validation: ``window.boundary = "open-wall"``, air beside a magnetic wall.

The end turns of a winding on an E-type core run in air beside the centre
leg's face: a wall of mu -> infinity at x = 0 (tangential H = 0, dA/dn = 0),
open air on x > 0.  By the method of images (K. J. Binns, P. J. Lawrenson,
C. W. Trowbridge, "The Analytical and Numerical Solution of Electric and
Magnetic Fields", Wiley, 1992) the field on x > 0 is that of the conductors
and their mirror images in x = 0, each image carrying the same current in the
same direction.  So the reference for a wire at distance h from the wall is
two parallel round wires 2h apart with equal currents, and for a hairpin
(go and return beside the wall) four wires.

The reference is the multipole solution of parallel round conductors in
free space, written out below: inside conductor p the field is
sum_n c_n J_n(k r) e^{i n theta} (k = (1 - j) / delta, the diffusion
equation), outside the sum of every conductor's source terms (its net current
-mu0 I ln r / (2 pi) and its multipoles r^-n e^{+-i n theta}).  The other
conductors' terms are re-expanded about conductor p by the addition theorem
(the static, air-side limit of Graf's addition theorem, Abramowitz & Stegun
9.1.79 / DLMF 10.23.7: the binomial series of (w + d)^-n and of ln|w + d|),
and A and dA/dr are matched at every surface, harmonic by harmonic.  The loss
is the integral of |J|^2 / sigma over each conductor (scipy.special.jv).
"""

from __future__ import annotations

import json
import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.special import comb, jv

from racfield.cli import main
from racfield.fem.sweep import mesh_case, problem_for, run_sweep
from racfield.geometry.case import CaseError, parse_case
from racfield.geometry.layout import place
from racfield.postprocess.report import build_report, results_document

RHO_CU_20 = 1.7241e-8   # ohm*m, annealed copper at 20 degC (IEC 60028)
MU0 = 4e-7 * math.pi    # H/m (classical value)
RADIUS = 0.5e-3         # m, wire radius a
WALL_GAP = 2.0          # h / a: the wire axis is 2a from the wall
RATIOS = (1.0, 3.0, 10.0)  # a / skin depth
TOLERANCE = 2e-3        # 0.2 %
TERMS = 24              # multipole terms per conductor and sign of n


def frequency_for(radius_over_delta: float) -> float:
    """Hz at which copper at 20 degC has skin depth RADIUS / ratio:
    delta = sqrt(2 rho / (omega mu0)), so f = rho / (pi mu0 delta^2)."""
    delta = RADIUS / radius_over_delta
    return RHO_CU_20 / (math.pi * MU0 * delta ** 2)


def isolated_rac_over_rdc(radius_over_delta: float) -> float:
    """Re(k a J0(k a) / (2 J1(k a))), the isolated round wire (Ramo, Whinnery &
    Van Duzer, "Fields and Waves in Communication Electronics", Wiley)."""
    ka = (1.0 - 1.0j) * radius_over_delta
    return float((ka * jv(0, ka) / (2.0 * jv(1, ka))).real)


def _translation(size_terms: int, d: complex) -> tuple[np.ndarray, np.ndarray]:
    """Re-expansion about a conductor of another conductor's terms, centre
    offset d = c_p - c_q (radius units): the column of its net current's
    -ln|w + d| (per unit -I/(2 pi), mu0 = 1) and the matrix of its multipoles,
    both onto the regular harmonics r^|m| e^{i m theta}, m = 1..N, -1..-N.
    ln|w + d| = ln|d| + (1/2) sum (-1)^(m+1) ((w/d)^m + (conj w / conj d)^m) / m;
    (w + d)^-n = sum_m (-1)^m C(n+m-1, m) d^(-n-m) w^m (and its conjugate)."""
    ns = np.arange(1, size_terms + 1)
    harmonics = np.concatenate([ns, -ns])
    log_column = np.empty(2 * size_terms, dtype=complex)
    matrix = np.zeros((2 * size_terms, 2 * size_terms), dtype=complex)
    for i, m in enumerate(harmonics):
        order = abs(m)
        dm = d if m > 0 else np.conj(d)
        log_column[i] = 0.5 * (-1.0) ** (order + 1) / (order * dm ** order)
        # singular harmonic k < 0 is w^-n (feeds m > 0), k > 0 is conj(w)^-n (feeds m < 0)
        for j, k in enumerate(harmonics):
            if (k < 0) == (m > 0):
                n = abs(k)
                matrix[i, j] = (-1.0) ** order * comb(n + order - 1, order) * dm ** (-n - order)
    return log_column, matrix


def multipole_rac_over_rdc(centres: list[complex], currents: list[complex], radius_over_delta: float,
                           terms: int = TERMS, nodes: int = 240) -> np.ndarray:
    """Loss / (|I_p|^2 Rdc) of each of several parallel round wires of equal
    radius in free space; ``centres`` in wire radii (x + i y), ``currents`` any
    complex scale.  Lengths in radii, sigma = mu0 = 1 (the ratio is scale free)."""
    c = np.asarray(centres, dtype=complex)
    current = np.asarray(currents, dtype=complex)
    count, size = len(c), 2 * terms
    k = (1.0 - 1.0j) * radius_over_delta          # k a with a = 1
    ns = np.arange(1, terms + 1)
    orders = np.concatenate([ns, ns])
    # matching A and dA/dr at r = 1: own singular coefficient = J_{n+1}(k) / J_{n-1}(k) x regular one
    reaction = np.tile(jv(orders + 1, k) / jv(orders - 1, k), count)
    coupling = np.zeros((count * size, count * size), dtype=complex)
    regular = np.zeros(count * size, dtype=complex)
    for p in range(count):
        for q in range(count):
            if p != q:
                log_column, matrix = _translation(terms, c[p] - c[q])
                regular[p * size:(p + 1) * size] += -current[q] / (2.0 * np.pi) * log_column
                coupling[p * size:(p + 1) * size, q * size:(q + 1) * size] = matrix
    singular = np.linalg.solve(np.eye(count * size) - reaction[:, None] * coupling, reaction * regular)
    regular = regular + coupling @ singular
    x, w = np.polynomial.legendre.leggauss(nodes)
    r, w = 0.5 * (x + 1.0), 0.5 * w
    out = []
    for p in range(count):
        # interior: c_0 from the net current (Ampere), c_n = 2 n R_n / (k J_{n-1}(k))
        c0 = current[p] / (2.0 * np.pi * k * jv(1, k))
        cn = regular[p * size:(p + 1) * size] * 2.0 * orders / (k * jv(orders - 1, k))
        integral = abs(c0) ** 2 * np.sum(w * r * np.abs(jv(0, k * r)) ** 2)
        integral += sum(abs(cc) ** 2 * np.sum(w * r * np.abs(jv(n, k * r)) ** 2) for cc, n in zip(cn, orders))
        loss = 2.0 * np.pi * abs(k) ** 4 * integral          # int |J|^2 / sigma, J = k^2 A_h / mu0
        out.append(loss / (abs(current[p]) ** 2 / np.pi))    # Rdc = 1 / (sigma pi a^2)
    return np.array(out)


def test_reference_tends_to_the_isolated_wire():
    """The wire and its image 2 x 10^4 a apart: the isolated wire to 1e-6
    (Ramo, Whinnery & Van Duzer, exact Bessel solution)."""
    for ratio in RATIOS:
        pair = multipole_rac_over_rdc([-1e4, 1e4], [1.0, 1.0], ratio)
        assert pair[0] == pytest.approx(isolated_rac_over_rdc(ratio), rel=1e-6)
        assert pair[1] == pytest.approx(pair[0], rel=1e-12)  # mirror symmetry (method of images)


def test_reference_converges_in_the_number_of_terms():
    """The series truncated at 20 and at 30 terms agree to 1e-9 at h = 2a:
    the multipole series converges geometrically (common practice)."""
    for ratio in RATIOS:
        for currents in ([1.0, 1.0], [1.0, -1.0]):
            coarse = multipole_rac_over_rdc([-WALL_GAP, WALL_GAP], currents, ratio, terms=20)
            fine = multipole_rac_over_rdc([-WALL_GAP, WALL_GAP], currents, ratio, terms=30)
            np.testing.assert_allclose(coarse, fine, rtol=1e-9)


def _case(boundary: str, height_mm: float, wires: list[tuple[str, float]], symmetry: str = "planar"):
    """A planar case of 1 mm round copper wires at x = h = 2a from the inner
    wall, ``wires`` (winding name, y in mm); the second winding runs opposite."""
    names = list(dict.fromkeys(name for name, _ in wires))
    return parse_case({
        "title": "wires beside a magnetic wall",
        "model": {"symmetry": symmetry, "length": "1 m", "temperature": "20 degC"},
        "sweep": {"frequencies": [0.0] + [frequency_for(r) for r in RATIOS]},
        "window": {"width": "2 mm", "height": f"{height_mm} mm", "boundary": boundary},
        "mesh": {"density": 1.5},
        "winding": [{"name": n, "material": "copper", "current": "1 A", "phase": 180.0 * i}
                    for i, n in enumerate(names)],
        "conductor": [{"winding": n, "shape": "round", "diameter": "1 mm",
                       "at": [f"{WALL_GAP * RADIUS * 1e3} mm", f"{y} mm"]} for n, y in wires]})


@pytest.fixture(scope="module")
def wire():
    case = _case("open-wall", 2.0, [("wire", 1.0)])
    sweep = run_sweep(case)
    return case, sweep, build_report(case, sweep)


def test_wire_beside_the_wall_against_its_image_pair(wire):
    """Rac/Rdc of one wire 2a from the wall against the exact multipole
    solution of the wire and its image, equal currents in the same direction
    (method of images: Binns, Lawrenson & Trowbridge 1992; Graf's addition
    theorem, DLMF 10.23.7, static limit)."""
    _, _, report = wire
    measured = report.windings[0].rac_over_rdc[1:]
    for ratio, value in zip(RATIOS, measured):
        expected = multipole_rac_over_rdc([WALL_GAP, -WALL_GAP], [1.0, 1.0], ratio)[0]
        print(f"wire beside wall a/delta {ratio:g}: {value:.7f} exact {expected:.7f} "
              f"error {value / expected - 1:+.2e}")
        assert value == pytest.approx(expected, rel=TOLERANCE)


def test_wire_beside_the_wall_dc_inductance(wire):
    """L at 0 Hz, uniform current: mu0 / (8 pi) inside the wire, plus the mean
    of A over the wire, A = -mu0 I (ln|z - c| + ln|z - c'|) / (2 pi) + C with the
    image c' (Binns, Lawrenson & Trowbridge); the far half arc (radius R, centre
    on the wall) holds dA/dr + A/R = 0 for the doubled net current 2I, so C =
    mu0 2I (1 + ln R) / (2 pi).  Mean of ln|z - c'| over the wire: ln 2h (mean
    value theorem); of ln|z - c| with uniform J: ln a - 1/4."""
    case, sweep, _ = wire
    far = case.mesh.far_radius_factor * math.hypot(case.window.width, case.window.height / 2)
    h = WALL_GAP * RADIUS
    expected = MU0 / (2 * math.pi) * (0.25 - math.log(RADIUS) - math.log(2 * h) + 2 * (1 + math.log(far)))
    measured = sweep.inductance_per_m[0, 0, 0]
    print(f"wire beside wall L(0 Hz): {measured:.6e} H/m, images {expected:.6e}, error {measured / expected - 1:+.2e}")
    assert measured == pytest.approx(expected, rel=TOLERANCE)


def test_the_wall_adds_loss(wire):
    """The same wire without the wall (boundary "open"): less loss, and the
    isolated-wire value (Ramo, Whinnery & Van Duzer); with the wall, more:
    proximity to its image (common practice)."""
    _, _, report = wire
    case = _case("open", 2.0, [("wire", 1.0)])
    alone = build_report(case, run_sweep(case)).windings[0].rac_over_rdc[1:]
    for ratio, with_wall, without in zip(RATIOS, report.windings[0].rac_over_rdc[1:], alone):
        assert without == pytest.approx(isolated_rac_over_rdc(ratio), rel=TOLERANCE)
        # by more than twice the tolerance, so no mesh error can explain it
        assert with_wall > without * (1 + 2 * TOLERANCE)


def test_loss_hardly_depends_on_the_far_radius():
    """Far circle at 5 and at 10 times the wall-to-corner distance: the far
    condition is exact for the net current and the dipole of the wire and
    its image; their quadrupole (moment ~ I h^2) is reflected by about
    (h/R)^4 / 3 < 3e-5 (R >= 11 h here), so the loss changes by under 1e-4
    (the asymptotic boundary condition, common practice)."""
    losses = []
    for factor in (5.0, 10.0):
        case = _case("open-wall", 2.0, [("wire", 1.0)])
        case = replace(case, frequencies=(frequency_for(3.0),), mesh=replace(case.mesh, far_radius_factor=factor))
        losses.append(run_sweep(case).loss_per_m[0, 0])
    print(f"wire beside wall, far radius x5 vs x10: loss change {losses[1] / losses[0] - 1:+.2e}")
    assert losses[1] == pytest.approx(losses[0], rel=1e-4)


def test_hairpin_beside_the_wall_against_four_wires():
    """Go and return 3a apart, both 2a from the wall: each wire's Rac/Rdc
    against the multipole solution of the two wires and their two images
    (Binns, Lawrenson & Trowbridge 1992; DLMF 10.23.7, static limit)."""
    case = _case("open-wall", 3.0, [("go", 0.75), ("back", 2.25)])
    report = build_report(case, run_sweep(case))
    y0, y1 = 0.75e-3 / RADIUS, 2.25e-3 / RADIUS
    centres = [complex(WALL_GAP, y0), complex(WALL_GAP, y1), complex(-WALL_GAP, y0), complex(-WALL_GAP, y1)]
    for i, ratio in enumerate(RATIOS):
        expected = multipole_rac_over_rdc(centres, [1.0, -1.0, 1.0, -1.0], ratio)
        for w, winding in enumerate(report.windings):
            value = winding.rac_over_rdc[1 + i]
            print(f"hairpin {winding.name} a/delta {ratio:g}: {value:.7f} exact {expected[w]:.7f} "
                  f"error {value / expected[w] - 1:+.2e}")
            assert value == pytest.approx(expected[w], rel=TOLERANCE)


def test_the_mesh_is_a_half_disk_on_the_wall_with_free_wall_nodes(wire):
    """The straight edge lies on x = 0 and keeps its unknowns (dA/dn = 0 is
    the natural condition); only the half arc carries the far condition."""
    case, _, _ = wire
    conductors = place(case)
    mesh = mesh_case(case, conductors)
    assert mesh.wall_x == 0.0 and mesh.symmetry_x is None
    assert mesh.far_centre == pytest.approx((0.0, case.window.height / 2))
    assert mesh.points[0].min() == pytest.approx(0.0, abs=1e-12)
    problem = problem_for(case, mesh, np.full(len(conductors), RHO_CU_20))
    assert problem.unknowns == problem.basis.N
    arc = problem.far_basis.find
    ends = problem.mesh.facets[:, arc]
    radius = np.hypot(problem.mesh.p[0, ends], problem.mesh.p[1, ends] - case.window.height / 2)
    np.testing.assert_allclose(radius, mesh.far_radius, rtol=1e-9)
    edge = np.setdiff1d(problem.mesh.boundary_facets(), arc)
    assert len(edge) > 0 and np.abs(problem.mesh.p[0, problem.mesh.facets[:, edge]]).max() < 1e-12


def test_an_open_model_beside_the_wall_reports_inductance_not_mmf(wire):
    """An open model: impedance and self inductance reported, no 1-D MMF
    and no hand estimate (no core window: common practice)."""
    _, _, report = wire
    document = results_document(report)
    assert "impedance" in document and document["inductance"]["self_l_h"]["wire"]
    assert not document.get("mmf")
    assert all(value is None for value in document["estimates"]["dowell"]["wire"]["rac_over_rdc"])


def test_the_wall_is_refused_in_an_axisymmetric_model():
    with pytest.raises(CaseError) as caught:
        _case("open-wall", 2.0, [("wire", 1.0)], symmetry="axisymmetric")
    assert caught.value.key == "window.boundary"
    assert "\n" not in str(caught.value) and "planar" in str(caught.value)


WALL_CASE = """title = "one wire beside the centre leg"
[model]
length = "1 m"
[sweep]
frequencies = ["{frequency} Hz"]
[window]
width = "2 mm"
height = "2 mm"
boundary = "open-wall"
[mesh]
density = 1.5
[[winding]]
name = "wire"
current = "1 A"
[[conductor]]
winding = "wire"
shape = "round"
diameter = "1 mm"
at = ["1 mm", "1 mm"]
"""


def test_the_command_line_checks_and_runs_a_case_beside_the_wall(tmp_path, capsys):
    """``check`` names the wall; ``run`` draws the plots and reports the
    Rac/Rdc of the image-pair solution (Binns, Lawrenson & Trowbridge 1992;
    DLMF 10.23.7, static limit)."""
    path = tmp_path / "wall.toml"
    path.write_text(WALL_CASE.format(frequency=frequency_for(3.0)))
    assert main(["check", str(path)]) == 0
    assert "open-wall (air on x > 0 beside a magnetic wall at x = 0)" in capsys.readouterr().out
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--quiet"]) == 0
    for plot in ("geometry.png", "current_density.png", "conductor_loss.png"):
        assert (out / plot).stat().st_size > 0
    document = json.loads((out / "results.json").read_text())
    expected = multipole_rac_over_rdc([WALL_GAP, -WALL_GAP], [1.0, 1.0], 3.0)[0]
    assert document["windings"]["wire"]["rac_over_rdc"][0] == pytest.approx(expected, rel=TOLERANCE)
