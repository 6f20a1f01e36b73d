"""Validation: leakage (short-circuit) inductance of two foil windings.

A primary of N1 one-turn foils next to a secondary of N2 one-turn foils, all
spanning the full height h of an ideal-core window (margins 0), carry balanced
currents N1 I1 = N2 I2 (opposite phase).  Between infinitely permeable walls the
field is one-dimensional: H is along the foils and, by Ampere's law around a
path through the core, h H(x) is the current to the left of x (the MMF).

The short-circuit inductance referred to the primary follows from the reactive
power at the terminals (exp(+j omega t), RMS phasors):

    L_sc = Im(sum_w V_w conj(I_w)) / (omega |I1|^2),
    V_w  = model.length * sum of u_k over the winding's conductors, u = Z' I,

and from the field (Poynting): Im(sum V conj(I)) = omega mu0 l h int |H(x)|^2 dx,
so L_sc = mu0 l h int |H|^2 dx / |I1|^2.

References:

* Low frequency (uniform current density): the handbook formula
  L = mu0 N1^2 l (a/3 + b/3 + c) / h (a, b the winding builds, c the space
  between the windings; the standard leakage-inductance formula of two
  concentric windings, common practice).  It assumes the MMF rises linearly
  across each build, which holds for touching foils; with insulation between
  the foils of a winding the MMF is constant in each insulation gap, and the
  1-D energy is derived here piece by piece (see ``dc_energy_integral``).
* Any frequency: the 1-D eddy-current solution of the foil stack (P. L. Dowell,
  "Effects of eddy currents in transformer windings", Proc. IEE, vol. 113,
  no. 8, 1966): inside a foil d2H/dx2 = j omega mu0 sigma H, with H jumping by
  the foil current / h across it; in the gaps H is constant.  The closed form
  in a foil is integrated numerically with scipy (``dowell_integral``).

Frequencies come from the IEC 60028 copper resistivity (not racfield's table).
"""

from __future__ import annotations

import cmath
import functools
import math

import numpy as np
import pytest
from scipy.integrate import quad

from racfield.fem.sweep import run_sweep
from racfield.geometry.case import parse_case

#: measured maximum relative errors, for the README validation table
MAX_REL_ERROR: dict[str, float] = {}

RHO_CU_20 = 1.7241e-8   # ohm*m at 20 degC (IEC 60028)
MU0 = 4e-7 * math.pi    # H/m
THICKNESS = 0.1e-3      # m, foil thickness t
HEIGHT = 2.0e-3         # m, window height h = foil height
BETWEEN = 0.2e-3        # m, space c between the windings
INSULATION = 0.02e-3    # m, between foils of one winding (second layout)
CLEARANCE = 0.1e-3      # m, from the last foil to the outer wall
N1, N2 = 3, 2           # foils (turns) of the primary and the secondary
I1 = 2.0                # A RMS, primary current; I2 = N1 I1 / N2 at 180 deg
LENGTH = 0.05           # m, model.length (mean turn length)
LOW_DELTA = 0.05        # thickness / skin depth at "low frequency" (< 0.1)
DELTAS = (0.3, 0.5, 0.7, 1.0, 1.5, 2.0, 3.0, 5.0)   # thickness / skin depth, the sweep


def frequency_for(delta_ratio: float) -> float:
    """f at which the skin depth sqrt(2 rho / (omega mu0)) is THICKNESS / delta_ratio."""
    delta = THICKNESS / delta_ratio
    return RHO_CU_20 / (math.pi * MU0 * delta ** 2)


def foils(insulation: float) -> list[tuple[float, float, float]]:
    """(x0, x1, current) of every foil from the inner wall outward, with
    ``insulation`` between foils of one winding and BETWEEN between the windings."""
    i2 = -N1 * I1 / N2
    x, out = 0.0, []
    for k in range(N1):
        out.append((x, x + THICKNESS, I1))
        x += THICKNESS + (insulation if k < N1 - 1 else BETWEEN)
    for _ in range(N2):
        out.append((x, x + THICKNESS, i2))
        x += THICKNESS + insulation
    return out


def leakage_doc(insulation: float, frequencies: list[float]) -> dict:
    foil = {"shape": "foil", "thickness": THICKNESS, "height": HEIGHT}
    stack = foils(insulation)[-1][1]
    layers = [{"winding": "primary", "conductor": foil, "turns": 1, "repeat": N1 - 1,
               "insulation_after": insulation},
              {"winding": "primary", "conductor": foil, "turns": 1, "insulation_after": BETWEEN},
              {"winding": "secondary", "conductor": foil, "turns": 1, "repeat": N2,
               "insulation_after": insulation}]
    return {
        "title": f"leakage, {N1} + {N2} foils",
        "model": {"symmetry": "planar", "length": LENGTH, "temperature": "20 degC"},
        "sweep": {"frequencies": frequencies},
        "window": {"width": stack + CLEARANCE, "height": HEIGHT, "boundary": "ideal-core",
                   "margins": {"inner": 0, "outer": 0, "top": 0, "bottom": 0}, "stacking": "across-width"},
        "winding": [{"name": "primary", "material": "copper", "current": I1, "phase": 0},
                    {"name": "secondary", "material": "copper", "current": N1 * I1 / N2, "phase": 180}],
        "layer": layers,
    }


@functools.lru_cache(maxsize=None)
def short_circuit_inductance(insulation: float, deltas: tuple[float, ...]) -> np.ndarray:
    """racfield's L_sc (H) at each thickness / skin depth, from the terminal
    reactive power: Im(sum_w V_w conj(I_w)) / (omega |I1|^2)."""
    case = parse_case(leakage_doc(insulation, [frequency_for(d) for d in deltas]))
    sweep = run_sweep(case)
    names = sweep.winding_names
    winding_currents = np.array([case.winding(n).phasor for n in names])
    assert np.allclose(sweep.connection @ winding_currents, sweep.currents)
    out = []
    for i, f in enumerate(sweep.frequencies):
        u = sweep.impedance_per_m[i] @ sweep.currents                  # V/m per conductor
        v = LENGTH * (sweep.connection.T @ u)                          # V per winding
        reactive = float(np.imag(np.sum(v * np.conj(winding_currents))))
        out.append(reactive / (2.0 * math.pi * f * abs(winding_currents[0]) ** 2))
    return np.array(out)


def dc_energy_integral(insulation: float) -> float:
    """int MMF(x)^2 dx (A^2 m) for uniform current density in every foil, derived
    piece by piece: across a foil of thickness t the MMF rises linearly from m to
    m + I, int = t (m^2 + m I + I^2 / 3); in a gap of width g it is constant,
    int = g m^2 (and zero beyond the balanced stack)."""
    total, mmf, edge = 0.0, 0.0, 0.0
    for x0, x1, current in foils(insulation):
        total += (x0 - edge) * mmf ** 2
        total += (x1 - x0) * (mmf ** 2 + mmf * current + current ** 2 / 3.0)
        mmf += current
        edge = x1
    assert abs(mmf) < 1e-12 * I1   # balanced ampere-turns
    return total


def handbook_inductance(build_primary: float, build_secondary: float) -> float:
    """L = mu0 N1^2 l (a/3 + b/3 + c) / h (H) (handbook formula, common practice)."""
    return MU0 * N1 ** 2 * LENGTH * (build_primary / 3 + build_secondary / 3 + BETWEEN) / HEIGHT


def dowell_integral(insulation: float, delta_ratio: float) -> float:
    """int |H(x)|^2 dx * h^2 (A^2 m) of the 1-D eddy-current solution (Dowell, 1966).

    In a foil from x0 to x1 (thickness t) with face fields H1 = m / h and
    H2 = (m + I) / h, d2H/dx2 = k^2 H with k = sqrt(j omega mu0 sigma) = (1 + j)/delta
    gives H = [H1 sinh(k (x1 - x)) + H2 sinh(k (x - x0))] / sinh(k t); in a gap
    H = m / h is constant."""
    k = (1.0 + 1.0j) * delta_ratio / THICKNESS
    total, mmf, edge = 0.0, 0.0, 0.0
    for x0, x1, current in foils(insulation):
        total += (x0 - edge) * mmf ** 2
        m1, m2 = mmf, mmf + current
        denominator = cmath.sinh(k * (x1 - x0))

        def density(x: float, m1=m1, m2=m2, x0=x0, x1=x1) -> float:
            return abs((m1 * cmath.sinh(k * (x1 - x)) + m2 * cmath.sinh(k * (x - x0))) / denominator) ** 2

        value, _ = quad(density, x0, x1, epsabs=0.0, epsrel=1e-12, limit=200)
        total += value
        mmf, edge = m2, x1
    return total


def field_inductance(integral: float) -> float:
    """L_sc = mu0 l h int |H|^2 dx / I1^2 = mu0 l int MMF^2 dx / (h I1^2) (H)."""
    return MU0 * LENGTH * integral / (HEIGHT * I1 ** 2)


def test_low_frequency_leakage_matches_handbook_formula():
    """Touching foils (no insulation inside a winding): the builds are a = N1 t and
    b = N2 t and the MMF rises linearly across each, so the handbook formula is
    the exact 1-D result at low frequency."""
    measured = short_circuit_inductance(0.0, (LOW_DELTA,))[0]
    expected = handbook_inductance(N1 * THICKNESS, N2 * THICKNESS)
    # the piecewise derivation agrees with the formula for touching foils (check of the references)
    assert field_inductance(dc_energy_integral(0.0)) == pytest.approx(expected, rel=1e-12)
    error = measured / expected - 1.0
    print(f"\nleakage, touching foils, t/delta = {LOW_DELTA}: {measured:.6e} H vs handbook "
          f"{expected:.6e} H ({error:+.2e})")
    MAX_REL_ERROR["leakage L, handbook formula"] = abs(error)
    # L = mu0 N1^2 l (a/3 + b/3 + c) / h (handbook formula, common practice); the
    # eddy-current correction at t/delta = 0.05 is O((t/delta)^4), about 1e-7
    assert abs(error) <= 5e-3


def test_low_frequency_leakage_with_insulation_inside_the_windings():
    """Insulation between the foils of a winding: against the 1-D energy derived
    piece by piece (linear MMF in the foils, constant in the gaps).  The handbook
    formula with the builds measured over the insulation is printed for
    comparison (it counts the gaps as if the MMF rose across them)."""
    measured = short_circuit_inductance(INSULATION, (LOW_DELTA,))[0]
    expected = field_inductance(dc_energy_integral(INSULATION))
    builds = (N1 * THICKNESS + (N1 - 1) * INSULATION, N2 * THICKNESS + (N2 - 1) * INSULATION)
    simple = handbook_inductance(*builds)
    error = measured / expected - 1.0
    print(f"\nleakage, insulated foils, t/delta = {LOW_DELTA}: {measured:.6e} H vs 1-D {expected:.6e} H "
          f"({error:+.2e}); handbook formula over the builds {simple:.6e} H ({simple / expected - 1:+.2%})")
    MAX_REL_ERROR["leakage L, 1-D energy with insulation"] = abs(error)
    # exact 1-D magnetostatic energy, derived above (Ampere's law, common practice)
    assert abs(error) <= 5e-3


def test_dowell_reference_tends_to_the_static_energy():
    """Check of the reference itself: at t/delta = 0.01 the 1-D eddy-current
    solution's energy equals the uniform-current one (Dowell, 1966, low-frequency limit)."""
    static = dc_energy_integral(INSULATION)
    assert dowell_integral(INSULATION, 0.01) == pytest.approx(static, rel=1e-6)


@pytest.mark.parametrize("insulation", [0.0, INSULATION])
def test_leakage_falls_with_frequency_like_dowell(insulation):
    """Eddy currents push the field out of the foils: L_sc falls strictly with
    frequency (t/delta 0.3 to 5) and follows the 1-D solution (Dowell, 1966)."""
    measured = short_circuit_inductance(insulation, DELTAS)
    expected = np.array([field_inductance(dowell_integral(insulation, d)) for d in DELTAS])
    errors = measured / expected - 1.0
    print(f"\nleakage L_sc, insulation {insulation * 1e3:g} mm: t/delta, racfield (H), 1-D (H), relative error")
    for d, m, e, err in zip(DELTAS, measured, expected, errors):
        print(f"  {d:4.1f}  {m:.6e}  {e:.6e}  {err:+.2e}")
    worst = float(np.abs(errors).max())
    print(f"  max |relative error| = {worst:.2e}; L_sc(5) / L_sc(0.3) = {measured[-1] / measured[0]:.4f}")
    MAX_REL_ERROR[f"leakage L_sc vs Dowell 1-D, insulation {insulation * 1e3:g} mm"] = worst
    # the field leaves the conductors as the skin depth shrinks (Dowell, 1966)
    assert np.all(np.diff(measured) < 0.0)
    # 1-D eddy-current solution of the foil stack (P. L. Dowell, "Effects of eddy
    # currents in transformer windings", Proc. IEE, vol. 113, no. 8, 1966)
    assert np.all(np.abs(errors) <= 1e-2), errors
