"""Validation: skin effect in an isolated round wire (open boundary, net current).

One case, one mesh, one sweep over all frequencies, through the whole
pipeline (parse_case -> run_sweep -> build_report).  Reference: the exact
internal impedance of a round wire,

    Z / Rdc = k a J0(k a) / (2 J1(k a)),   k = (1 - j) / delta,

with delta = sqrt(2 rho / (omega mu0)) and the exp(+j omega t) convention
(S. Ramo, J. R. Whinnery, T. Van Duzer, "Fields and Waves in Communication
Electronics", Wiley; the internal impedance of a round wire).

The frequencies are computed here from the IEC 60028 resistivity of annealed
copper, not from racfield's material table, so a wrong resistivity in racfield
would show up as a wrong Rac/Rdc.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.special import jv

from racfield.fem.sweep import run_sweep
from racfield.geometry.case import parse_case
from racfield.postprocess.report import build_report

#: measured maximum relative errors, for the README validation table
MAX_REL_ERROR: dict[str, float] = {}

RHO_CU_20 = 1.7241e-8   # ohm*m, annealed copper at 20 degC (IEC 60028)
MU0 = 4e-7 * math.pi    # H/m (classical value)
RADIUS = 0.5e-3         # m
CURRENT = 2.0           # A RMS
LENGTH = 0.042          # m
RATIOS = (0.1, 0.5, 1.0, 2.0, 3.0, 5.0, 10.0, 20.0)  # radius / skin depth
TOLERANCE = 3e-3        # 0.3 %


def frequency_for(radius_over_delta: float) -> float:
    """Frequency (Hz) at which copper at 20 degC has skin depth RADIUS / ratio.

    delta = sqrt(2 rho / (omega mu0))  =>  f = rho / (pi mu0 delta^2).
    """
    delta = RADIUS / radius_over_delta
    return RHO_CU_20 / (math.pi * MU0 * delta ** 2)


def bessel_z_over_rdc(radius_over_delta: float) -> complex:
    """Exact internal impedance over DC resistance of a round wire
    (Ramo, Whinnery, Van Duzer, Fields and Waves in Communication Electronics)."""
    ka = (1.0 - 1.0j) * radius_over_delta
    return ka * jv(0, ka) / (2.0 * jv(1, ka))


@pytest.fixture(scope="module")
def solved():
    doc = {
        "title": "isolated round wire",
        "model": {"symmetry": "planar", "length": "42 mm", "temperature": "20 degC"},
        "sweep": {"frequencies": [frequency_for(r) for r in RATIOS]},
        "window": {"width": "2 mm", "height": "2 mm", "boundary": "open"},
        "winding": [{"name": "wire", "material": "copper", "current": f"{CURRENT} A", "phase": 0}],
        "conductor": [{"winding": "wire", "shape": "round", "diameter": "1 mm", "at": ["1 mm", "1 mm"]}],
    }
    case = parse_case(doc)
    sweep = run_sweep(case)
    return case, sweep, build_report(case, sweep)


def _table(name: str, measured: list[float], errors: list[float]) -> None:
    print(f"\n{name}: a/delta, racfield, exact Re(Z)/Rdc, relative error")
    for r, m, e in zip(RATIOS, measured, errors):
        print(f"  {r:6.2f}  {m:12.7f}  {bessel_z_over_rdc(r).real:12.7f}  {e:+.2e}")
    print(f"  max |relative error| = {max(abs(e) for e in errors):.2e}")


def test_rdc_is_rho_l_over_area(solved):
    _, _, report = solved
    winding = report.windings[0]
    expected = RHO_CU_20 * LENGTH / (math.pi * RADIUS ** 2)  # R = rho l / A (IEC 60028 rho)
    assert winding.rdc_ohm == pytest.approx(expected, rel=5e-4)


def test_loss_based_rac_matches_bessel(solved):
    """Winding Rac/Rdc (loss / I^2 / Rdc) against Re(Z)/Rdc of the Bessel solution."""
    _, _, report = solved
    measured = report.windings[0].rac_over_rdc
    errors = [m / bessel_z_over_rdc(r).real - 1.0 for r, m in zip(RATIOS, measured)]
    _table("round wire, loss-based Rac/Rdc", measured, errors)
    MAX_REL_ERROR["round wire Rac/Rdc (loss)"] = max(abs(e) for e in errors)
    for r, e in zip(RATIOS, errors):
        # exact Bessel internal impedance (Ramo, Whinnery, Van Duzer, Fields and Waves
        # in Communication Electronics, Wiley)
        assert abs(e) <= TOLERANCE, f"a/delta = {r}: relative error {e:+.3e}"


def test_impedance_real_part_matches_bessel(solved):
    """Re(Z_11)/Rdc from the conductor impedance matrix against the Bessel solution.

    (The imaginary part also holds the external inductance up to the far
    boundary, which depends on the model size, so only the real part is
    compared.)
    """
    _, sweep, _ = solved
    measured = [float(z.real / sweep.rdc_per_m[0]) for z in sweep.impedance_per_m[:, 0, 0]]
    errors = [m / bessel_z_over_rdc(r).real - 1.0 for r, m in zip(RATIOS, measured)]
    _table("round wire, Re(Z)/Rdc", measured, errors)
    MAX_REL_ERROR["round wire Re(Z)/Rdc"] = max(abs(e) for e in errors)
    for r, e in zip(RATIOS, errors):
        # exact Bessel internal impedance (Ramo, Whinnery, Van Duzer, Fields and Waves
        # in Communication Electronics, Wiley)
        assert abs(e) <= TOLERANCE, f"a/delta = {r}: relative error {e:+.3e}"


def test_impedance_imaginary_part_with_far_condition(solved):
    """Im(Z_11) against the exact solution of the same open-boundary problem.

    Outside the wire A = -mu0 I / (2 pi) ln r + c.  racfield closes the model on
    a circle of radius R = far_radius_factor * half-diagonal of the window
    (centred on the window centre, here the wire axis) with dA/dr + A/R = 0,
    which gives c = mu0 I (1 + ln R) / (2 pi), so A(a) = mu0 I (1 + ln(R/a)) / (2 pi)
    and u = Z_int I + j omega A(a):

        Z = Z_int + j omega mu0 (1 + ln(R/a)) / (2 pi)

    with Z_int the Bessel internal impedance (Ramo, Whinnery, Van Duzer).
    """
    case, sweep, _ = solved
    far_radius = case.mesh.far_radius_factor * 0.5 * math.hypot(case.window.width, case.window.height)
    rdc = RHO_CU_20 / (math.pi * RADIUS ** 2)
    errors = []
    for r, f, z in zip(RATIOS, sweep.frequencies, sweep.impedance_per_m[:, 0, 0]):
        omega = 2.0 * math.pi * f
        expected = (rdc * bessel_z_over_rdc(r)
                    + 1j * omega * MU0 * (1.0 + math.log(far_radius / RADIUS)) / (2.0 * math.pi))
        errors.append(z.imag / expected.imag - 1.0)
    worst = max(abs(e) for e in errors)
    print(f"\nround wire, Im(Z) with the far condition: max |relative error| = {worst:.2e}")
    MAX_REL_ERROR["round wire Im(Z) (open boundary)"] = worst
    for r, e in zip(RATIOS, errors):
        # internal impedance (Ramo, Whinnery, Van Duzer) + external reactance of the
        # coaxial region a < r < R closed by dA/dr + A/R = 0 (derived above)
        assert abs(e) <= TOLERANCE, f"a/delta = {r}: relative error {e:+.3e}"


def test_loss_and_impedance_agree(solved):
    """Loss / I^2 equals Re(Z) for a single conductor (energy balance, common practice)."""
    _, sweep, _ = solved
    loss_based = sweep.loss_per_m[:, 0] / CURRENT ** 2
    impedance_based = sweep.impedance_per_m[:, 0, 0].real
    np.testing.assert_allclose(loss_based, impedance_based, rtol=1e-6)  # common practice
