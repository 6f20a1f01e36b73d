"""Validation: axisymmetric air-core coils whose window starts at the axis
(window.boundary = "open", window.inner_radius = 0 or left out).

The mesh is then the half disk r >= 0 around the coil, with A_phi = 0 on the
axis.  Checks, each against something outside racfield:

1. One circular turn of round copper wire (loop radius R = 40 a, a = 0.5 mm):
   - at a high frequency (a / skin depth = 40) its inductance less the
     internal inductance of the wire against the surface-current limit
     L = mu0 R (ln(8R/a) - 2) (E. B. Rosa and F. W. Grover, Bull. Bureau of
     Standards 8, 1912; F. W. Grover, "Inductance Calculations", 1946), within
     0.5 %; the internal inductance from the exact internal impedance of a
     round wire, Z = (k rho / (2 pi a)) J0(ka) / J1(ka), k = (1 - j) / delta
     (S. Ramo, J. R. Whinnery, T. Van Duzer, "Fields and Waves in Communication
     Electronics", section 5.6; Bessel functions from scipy.special), times the
     turn length 2 pi R;
   - its Rdc against rho 2 pi R / (pi a^2) (IEC 60028 copper), within the
     (a / 2R)^2 = 1.6e-4 by which the exact ring integral lies below it;
   - the same turn with inner_radius = 0, with inner_radius left out, and with
     a small inner_radius and the turn shifted to the same absolute radius:
     the same Rdc, inductance and Rac within the mesh error (0.1 %).
2. A two-layer air-core coil of 2 x 10 turns from the axis runs end to end
   through ``racfield run`` and ``racfield check``: Rdc against the sum of the
   exact ring resistances rho (R0 + sqrt(R0^2 - a^2)) / a^2 (the integral of
   1/r over each wire's disk, IEC 60028 copper), the field solution at 0 Hz
   (P / I^2) against the same within 0.1 %, and the DC inductance against the
   sum of the turns' self inductances mu0 R (ln(8R/a) - 7/4) (Rosa and Grover)
   and the mutual inductances of coaxial circles, M = mu0 sqrt(r1 r2)
   ((2/k - k) K(k) - (2/k) E(k)), k^2 = 4 r1 r2 / ((r1 + r2)^2 + d^2)
   (J. C. Maxwell, "A Treatise on Electricity and Magnetism", 1873, art. 701;
   Grover 1946; complete elliptic integrals from scipy.special), within 0.5 %.
3. The case reader: inner_radius = 0 is accepted for an open boundary and
   refused for "ideal-core" and "core" (a core needs a centre post); a turn
   that reaches the axis is refused (the bad-case catalogue holds the files).
"""

from __future__ import annotations

import functools
import json
import math

import pytest
from scipy.special import ellipe, ellipk, jve

from racfield.cli import main
from racfield.fem.sweep import run_sweep
from racfield.geometry.case import CaseError, parse_case
from racfield.postprocess.report import build_report, results_document

RHO = 1.7241e-8          # ohm*m, annealed copper at 20 degC (IEC 60028)
MU0 = 4e-7 * math.pi     # H/m
A = 0.5e-3               # m, wire radius
LOOP_RADIUS = 40 * A     # m
A_OVER_DELTA = 40.0
DELTA = A / A_OVER_DELTA
#: the frequency at which the skin depth sqrt(2 rho / (omega mu0)) is DELTA
HIGH_FREQUENCY = RHO / (math.pi * MU0 * DELTA ** 2)
INDUCTANCE_TOLERANCE = 5e-3   # 0.5 %, as for the loop checks of test_validation_axisymmetric
SAME_TOLERANCE = 1e-3         # 0.1 %: two meshes of the same turn (common practice)


def loop_doc(inner_radius: float | None) -> dict:
    """One turn at r = LOOP_RADIUS, z = 2a; the window starts at r = inner_radius
    (None: the key left out)."""
    r0 = inner_radius or 0.0
    window = {"width": LOOP_RADIUS + 2 * A - r0, "height": 4 * A, "boundary": "open"}
    if inner_radius is not None:
        window["inner_radius"] = inner_radius
    return {
        "title": "loop from the axis",
        "model": {"symmetry": "axisymmetric", "temperature": "20 degC"},
        "sweep": {"frequencies": [0.0, HIGH_FREQUENCY]},
        "window": window,
        "winding": [{"name": "loop", "material": "copper", "current": "1 A"}],
        "conductor": [{"winding": "loop", "shape": "round", "diameter": 2 * A, "at": [LOOP_RADIUS - r0, 2 * A]}],
    }


@functools.lru_cache(maxsize=None)
def _loop(inner_radius: float | None) -> dict:
    case = parse_case(loop_doc(inner_radius))
    return results_document(build_report(case, run_sweep(case)))


def internal_inductance(frequency: float) -> float:
    """Internal inductance (H) of a round wire of radius A and length 2 pi R:
    Im(Z) / omega, Z = (k rho / (2 pi a)) J0(ka) / J1(ka) per metre (Ramo,
    Whinnery and Van Duzer), k = (1 - j) / delta for exp(+j omega t)."""
    delta = math.sqrt(2 * RHO / (2 * math.pi * frequency * MU0))
    k = (1 - 1j) / delta
    z = k * RHO / (2 * math.pi * A) * jve(0, k * A) / jve(1, k * A)   # scaled Bessel: the scale cancels
    return z.imag / (2 * math.pi * frequency) * 2 * math.pi * LOOP_RADIUS


def test_loop_from_the_axis_high_frequency_inductance():
    doc = _loop(0.0)
    assert doc["conductors"][0]["r_m"] == pytest.approx(LOOP_RADIUS, rel=1e-12)
    solved = doc["inductance"]["self_l_h"]["loop"][1]
    external = solved - internal_inductance(HIGH_FREQUENCY)
    # Rosa and Grover 1912; Grover 1946: the surface-current limit of a circular turn
    expected = MU0 * LOOP_RADIUS * (math.log(8 * LOOP_RADIUS / A) - 2.0)
    print(f"\nloop from the axis, a/delta = {A_OVER_DELTA:g} ({HIGH_FREQUENCY:.4g} Hz): L = {solved:.6e} H, "
          f"less internal {external:.6e} H, mu0 R (ln(8R/a) - 2) = {expected:.6e} H "
          f"({external / expected - 1:+.2e})")
    assert external == pytest.approx(expected, rel=INDUCTANCE_TOLERANCE)
    # and the DC inductance above it, toward the uniform-current value - 7/4 (Rosa and Grover)
    assert doc["inductance"]["self_l_h"]["loop"][0] > solved


def test_loop_from_the_axis_rdc():
    doc = _loop(0.0)
    rdc = doc["windings"]["loop"]["rdc_ohm"]
    thin_ring = RHO * 2 * math.pi * LOOP_RADIUS / (math.pi * A ** 2)    # rho l / A, IEC 60028 copper
    # the exact ring integral rho (R + sqrt(R^2 - a^2)) / a^2 lies (a/2R)^2 = 1.6e-4 below rho l / A
    assert rdc == pytest.approx(thin_ring, rel=2 * (A / (2 * LOOP_RADIUS)) ** 2)
    assert rdc < thin_ring
    # the field solution at 0 Hz: P / I^2 (I = 1 A) within the mesh error of the conductor area
    assert doc["windings"]["loop"]["loss_w"][0] == pytest.approx(thin_ring, rel=SAME_TOLERANCE)


@pytest.mark.parametrize("other", [None, 5e-3], ids=["inner-radius-left-out", "shifted-5-mm"])
def test_loop_from_the_axis_equals_the_shifted_window(other):
    axis, shifted = _loop(0.0), _loop(other)
    assert shifted["conductors"][0]["r_m"] == pytest.approx(LOOP_RADIUS, rel=1e-12)
    # the same ring: the same exact geometry, and one field problem meshed twice (common practice)
    assert shifted["windings"]["loop"]["rdc_ohm"] == pytest.approx(axis["windings"]["loop"]["rdc_ohm"], rel=1e-12)
    for f in range(2):
        assert shifted["inductance"]["self_l_h"]["loop"][f] == pytest.approx(
            axis["inductance"]["self_l_h"]["loop"][f], rel=SAME_TOLERANCE)
        assert shifted["windings"]["loop"]["rac_ohm"][f] == pytest.approx(
            axis["windings"]["loop"]["rac_ohm"][f], rel=SAME_TOLERANCE)


@pytest.mark.parametrize("inner_radius", [0.0, 5e-3], ids=["from-the-axis", "inner-radius-5-mm"])
def test_open_mesh_is_the_half_disk_r_at_least_zero(inner_radius):
    """The open far region of an axisymmetric model is the half disk r >= 0 about
    a point on the axis, and A_phi = 0 on the axis (the azimuthal potential of a
    field regular on the axis vanishes there: common practice)."""
    import numpy as np

    from racfield.fem.problem import WindowProblem
    from racfield.fem.sweep import conductor_resistivities, mesh_case
    from racfield.geometry.layout import place

    case = parse_case(loop_doc(inner_radius))
    conductors = place(case)
    mesh = mesh_case(case, conductors)
    r = mesh.points[0] + inner_radius
    assert r.min() == pytest.approx(0.0, abs=1e-12 * mesh.far_radius)
    assert mesh.symmetry_x == pytest.approx(-inner_radius, abs=1e-15)
    assert mesh.far_centre == pytest.approx((-inner_radius, case.window.height / 2))
    assert np.hypot(r, mesh.points[1] - case.window.height / 2).max() == pytest.approx(mesh.far_radius, rel=1e-9)
    problem = WindowProblem(mesh, 1.0 / conductor_resistivities(case, conductors), radius_offset=inner_radius)
    on_axis = np.nonzero(np.abs(problem.basis.doflocs[0] + inner_radius) < 1e-12 * mesh.far_radius)[0]
    assert len(on_axis) > 10 and not np.isin(on_axis, problem.free).any()   # A = 0 held on the axis
    assert np.isfinite(problem.stiffness.data).all()                        # 1/r terms regular there


def test_flux_density_on_the_axis():
    """B_z on the axis of the loop at DC against the Biot-Savart field of a circular
    filament, B_z = mu0 I R^2 / (2 (R^2 + z^2)^(3/2)) (any electromagnetism text,
    e.g. J. D. Jackson, "Classical Electrodynamics", 3rd ed., section 5.5), within
    0.2 % at the centre, 1 % off it; at r = 0 itself (where A/r is 0/0 and tends to dA/dr) as just beside it."""
    import numpy as np

    from racfield.fem.probe import flux_density_at
    from racfield.fem.problem import WindowProblem
    from racfield.fem.sweep import conductor_resistivities, mesh_case
    from racfield.geometry.layout import place

    doc = loop_doc(0.0)
    doc["mesh"] = {"density": 2.0}    # the air elements near the axis: a tenth of R, not a third
    case = parse_case(doc)
    conductors = place(case)
    problem = WindowProblem(mesh_case(case, conductors), 1.0 / conductor_resistivities(case, conductors),
                            radius_offset=0.0)
    potential = problem.solve_windings(0.0, np.ones((1, 1)), [1.0], keep_field=True).potential
    z_loop = 2 * A
    dz = np.array([0.0, 0.25, 0.5]) * LOOP_RADIUS
    for r in (0.0, 1e-4 * LOOP_RADIUS):
        points = np.vstack([np.full(dz.shape, r), z_loop + dz])
        b_r, b_z = flux_density_at(problem, potential, points)
        expected = MU0 * 1.0 * LOOP_RADIUS ** 2 / (2 * (LOOP_RADIUS ** 2 + dz ** 2) ** 1.5)
        print(f"\nB_z on the axis at r = {r:g} m, z - z_loop = {dz} m: FEM / Biot-Savart - 1 = {b_z.real / expected - 1}")
        error = np.abs(b_z.real / expected - 1)
        # at the loop's centre within 0.2 %; off it, a pointwise derivative of the P2 field in
        # air elements of R/10, within 1 % (common practice)
        assert error[0] <= 2e-3 and error.max() <= 1e-2, (r, b_z, expected)
        assert np.abs(b_r).max() <= 1e-2 * expected.max()    # B_r = 0 on the axis by symmetry


# ------------------------------------------------------------ 2. a coil from the axis, end to end

COIL_CASE = """\
title = "air-core coil from the axis"

[model]
symmetry = "axisymmetric"
temperature = "20 degC"

[sweep]
frequencies = [0, "100 kHz"]

[window]
width = "6 mm"
height = "8 mm"
boundary = "open"
inner_radius = "0 mm"
margins = { inner = "4 mm", bottom = "1 mm" }

[[winding]]
name = "coil"
current = "1 A"

[[layer]]
winding = "coil"
conductor = { shape = "round", diameter = "0.5 mm", outer_diameter = "0.55 mm" }
turns = 10
repeat = 2
insulation_after = "0.05 mm"
align = "start"
"""
COIL_WIRE_RADIUS = 0.25e-3
COIL_PITCH = 0.55e-3
COIL_RADII = (4e-3 + COIL_PITCH / 2, 4e-3 + 1.5 * COIL_PITCH + 0.05e-3)   # layer centres: margin, pitch, insulation
COIL_Z = tuple(1e-3 + (i + 0.5) * COIL_PITCH for i in range(10))


def coaxial_mutual(r1: float, r2: float, d: float) -> float:
    """Maxwell: M = mu0 sqrt(r1 r2) ((2/k - k) K(k) - (2/k) E(k)), k^2 = 4 r1 r2 / ((r1 + r2)^2 + d^2)."""
    m = 4 * r1 * r2 / ((r1 + r2) ** 2 + d * d)     # k^2 (scipy's parameter m)
    k = math.sqrt(m)
    return MU0 * math.sqrt(r1 * r2) * ((2 / k - k) * ellipk(m) - 2 / k * ellipe(m))


def test_coil_from_the_axis_runs_end_to_end(tmp_path, capsys):
    path = tmp_path / "coil.toml"
    path.write_text(COIL_CASE)
    assert main(["check", str(path)]) == 0
    printed = capsys.readouterr().out
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    turns = [(r, z) for r in COIL_RADII for z in COIL_Z]
    radii = sorted({round(c["r_m"], 12) for c in doc["conductors"]})
    assert radii == pytest.approx(sorted(COIL_RADII), rel=1e-9)
    a = COIL_WIRE_RADIUS
    # the integral of 1/r over each wire's disk, IEC 60028 copper; turns in series
    exact = sum(RHO * (r + math.sqrt(r * r - a * a)) / (a * a) for r, _ in turns)
    winding = doc["windings"]["coil"]
    assert winding["rdc_ohm"] == pytest.approx(exact, rel=1e-9)
    assert f"{exact * 1e3:.5g} mOhm" in printed                       # check prints the same Rdc
    assert winding["loss_w"][0] == pytest.approx(exact, rel=SAME_TOLERANCE)   # P(0 Hz) / (1 A)^2
    # Rosa and Grover (self, uniform current) and Maxwell (mutual of coaxial circles)
    expected = sum(MU0 * r * (math.log(8 * r / a) - 1.75) for r, _ in turns)
    expected += sum(coaxial_mutual(r1, r2, z1 - z2) for i, (r1, z1) in enumerate(turns)
                    for j, (r2, z2) in enumerate(turns) if i != j)
    solved = doc["inductance"]["self_l_h"]["coil"][0]
    print(f"\ncoil from the axis: L(0 Hz) = {solved:.6e} H, filaments {expected:.6e} H "
          f"({solved / expected - 1:+.2e}); Rdc {winding['rdc_ohm']:.6e} ohm")
    assert solved == pytest.approx(expected, rel=INDUCTANCE_TOLERANCE)


# ------------------------------------------------------------ 3. the reader

def _window_error(boundary: str, inner_radius: object) -> CaseError:
    doc = loop_doc(0.0)
    doc["window"].update(boundary=boundary, inner_radius=inner_radius)
    if boundary == "core":
        doc["core"] = {"relative_permeability": 2000, "outer_leg_width": "2 mm", "yoke_thickness": "2 mm"}
    with pytest.raises(CaseError) as caught:
        parse_case(doc)
    return caught.value


@pytest.mark.parametrize("boundary", ["ideal-core", "core"])
def test_zero_inner_radius_needs_an_open_boundary(boundary):
    error = _window_error(boundary, "0 mm")
    assert error.key == "window.inner_radius"
    assert "greater than zero" in str(error) and "open" in str(error)


def test_negative_inner_radius_is_refused():
    error = _window_error("open", "-1 mm")
    assert error.key == "window.inner_radius" and "negative" in str(error)


def test_zero_and_left_out_inner_radius_read_as_the_axis():
    for value in (0.0, "0 mm", None):
        doc = loop_doc(0.0)
        if value is None:
            del doc["window"]["inner_radius"]
        else:
            doc["window"]["inner_radius"] = value
        assert parse_case(doc).window.inner_radius == 0.0


def test_turn_touching_the_axis_is_refused():
    from racfield.geometry.load import checked_layout
    doc = loop_doc(0.0)
    doc["conductor"][0]["at"] = [A, 2 * A]          # the wire's inner edge on r = 0
    with pytest.raises(CaseError) as caught:
        checked_layout(parse_case(doc))
    assert caught.value.key == "conductor[1]" and "axis" in str(caught.value)
