"""Physical-law checks on small cases (no closed-form solution needed).

* Energy balance (Poynting): the ohmic loss integrated over the conductors
  equals the power delivered at the terminals, Re(sum_k u_k conj(I_k)),
  with u = Z I from the conductor impedance matrix (common practice).
* Reciprocity: the conductor impedance matrix is symmetric, Z = Z^T (common
  practice; linear, reciprocal media).
* Rac >= Rdc, and Rac/Rdc grows with frequency (common practice); per
  conductor, a uniform current density is the least-loss distribution of a
  given current, so every conductor's loss is at least I^2 rho / A.
* Open boundary: the loss of an isolated wire does not depend on where the
  far boundary is (far_radius_factor 4 vs 8) (common practice; the far
  condition is exact for the net-current part of the outer field).
"""

from __future__ import annotations

import numpy as np
import pytest

from racfield.fem.sweep import run_sweep
from racfield.geometry.case import parse_case
from racfield.postprocess.report import build_report

#: measured maximum relative errors, for the README validation table
MAX_REL_ERROR: dict[str, float] = {}

FREQUENCIES = [1e3, 5e3, 20e3, 100e3, 300e3, 1e6]


def two_winding_doc() -> dict:
    """A small ideal-core window: 4 primary turns (0.5 mm wire, 1.5 A) in a layer
    next to 2 secondary turns (0.8 mm wire, 3 A, opposite phase)."""
    return {
        "title": "two windings",
        "model": {"symmetry": "planar", "length": "30 mm", "temperature": "60 degC"},
        "sweep": {"frequencies": FREQUENCIES},
        "window": {"width": "2.5 mm", "height": "3 mm", "boundary": "ideal-core",
                   "margins": {"inner": "0.2 mm", "outer": "0.2 mm", "top": "0.2 mm", "bottom": "0.2 mm"}},
        "winding": [{"name": "primary", "material": "copper", "current": "1.5 A", "phase": 20},
                    {"name": "secondary", "material": "copper", "current": "3 A", "phase": 200}],
        "layer": [{"winding": "primary", "turns": 4, "insulation_after": "0.3 mm",
                   "conductor": {"shape": "round", "diameter": "0.5 mm", "outer_diameter": "0.55 mm"}},
                  {"winding": "secondary", "turns": 2, "align": "spread",
                   "conductor": {"shape": "round", "diameter": "0.8 mm", "outer_diameter": "0.85 mm"}}],
    }


@pytest.fixture(scope="module")
def two_windings():
    case = parse_case(two_winding_doc())
    sweep = run_sweep(case)
    return case, sweep, build_report(case, sweep)


def test_energy_balance(two_windings):
    """sum of conductor losses = Re(u^H I), u = Z I (Poynting theorem, common practice)."""
    _, sweep, _ = two_windings
    worst = 0.0
    for i, f in enumerate(sweep.frequencies):
        currents = sweep.currents
        voltages = sweep.impedance_per_m[i] @ currents
        terminal_power = float(np.real(np.sum(voltages * np.conj(currents))))
        field_loss = float(sweep.loss_per_m[i].sum())
        error = field_loss / terminal_power - 1.0
        worst = max(worst, abs(error))
        # energy balance, Poynting's theorem (common practice)
        assert abs(error) <= 1e-6, f"{f:g} Hz: {error:+.3e}"
    print(f"\nenergy balance: max |relative error| = {worst:.2e}")
    MAX_REL_ERROR["energy balance"] = worst


def test_reciprocity(two_windings):
    """Z = Z^T (reciprocity, common practice)."""
    _, sweep, _ = two_windings
    worst = 0.0
    for i, f in enumerate(sweep.frequencies):
        z = sweep.impedance_per_m[i]
        asymmetry = float(np.abs(z - z.T).max() / np.abs(z).max())
        worst = max(worst, asymmetry)
        # reciprocity theorem (common practice)
        assert asymmetry <= 1e-9, f"{f:g} Hz: |Z - Z^T| / |Z| = {asymmetry:.2e}"
    print(f"\nreciprocity: max |Z - Z^T| / max |Z| = {worst:.2e}")
    MAX_REL_ERROR["reciprocity"] = worst


def test_rac_at_least_rdc_and_growing(two_windings):
    _, sweep, report = two_windings
    for w in report.windings:
        ratios = np.array(w.rac_over_rdc)
        print(f"\n{w.name}: Rac/Rdc = " + ", ".join(f"{r:.5f}" for r in ratios))
        # Rac >= Rdc (common practice)
        assert (ratios >= 1.0).all(), f"{w.name}: Rac/Rdc below 1: {ratios}"
        # Rac/Rdc increases with frequency (common practice)
        assert (np.diff(ratios) > 0.0).all(), f"{w.name}: Rac/Rdc not increasing: {ratios}"
    total = np.array(report.total_loss_w)
    assert (np.diff(total) > 0.0).all()  # total loss grows with frequency (common practice)


def test_every_conductor_loses_at_least_its_dc_loss(two_windings):
    """A uniform current density is the least-loss way to carry a given current
    (common practice), so loss_k >= |I_k|^2 rho / A_k at every frequency."""
    _, sweep, _ = two_windings
    dc_loss = np.abs(sweep.currents) ** 2 * sweep.rdc_per_m
    # the meshed areas differ from the true areas by mesh_area_error (< 0.05 %)
    slack = 1.0 + np.abs(sweep.mesh_area_error)
    # uniform current density is the least-loss distribution (common practice)
    assert (sweep.loss_per_m * slack >= dc_loss).all()


def single_wire(far_radius_factor: float):
    doc = {
        "title": "single wire",
        "model": {"symmetry": "planar", "length": "1 m", "temperature": "20 degC"},
        "sweep": {"frequencies": [10e3, 100e3, 1e6]},
        "window": {"width": "1.5 mm", "height": "1.5 mm", "boundary": "open"},
        "winding": [{"name": "wire", "material": "copper", "current": "1 A"}],
        "conductor": [{"winding": "wire", "shape": "round", "diameter": "1 mm", "at": ["0.75 mm", "0.75 mm"]}],
        "mesh": {"far_radius_factor": far_radius_factor},
    }
    case = parse_case(doc)
    return run_sweep(case)


def test_open_boundary_loss_independent_of_far_radius():
    near = single_wire(4.0)
    far = single_wire(8.0)
    errors = far.loss_per_m[:, 0] / near.loss_per_m[:, 0] - 1.0
    worst = float(np.abs(errors).max())
    print(f"\nfar radius 4 vs 8: relative loss differences {errors}, max {worst:.2e}")
    MAX_REL_ERROR["far radius 4 vs 8"] = worst
    # the loss of an isolated wire does not depend on the model's outer radius (common practice)
    assert worst <= 1e-3
