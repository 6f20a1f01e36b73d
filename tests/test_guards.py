"""Numerical guards: warnings in results.json and on stderr, and ``--check-mesh``.

The subject is one isolated copper round wire of 1 mm diameter in an open
window, solved at radius / skin depth a/delta = 1, 3, 6 and 10, whose exact
internal impedance is known (Z / Rdc = k a J0(k a) / (2 J1(k a)), k = (1 - j)
/ delta: S. Ramo, J. R. Whinnery, T. Van Duzer, "Fields and Waves in
Communication Electronics", Wiley).  The frequencies come from the IEC 60028
resistivity of copper (test_validation_round_wire.py), not from racfield.

Rules checked (README, Result files): a conductor surface with fewer than one
second-order element per skin depth is under-resolved (about one element per
skin depth is the usual lower limit: common practice); the mesher aims at 1.5
per skin depth at the highest frequency, times ``[mesh] density``.
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import tomllib

import numpy as np
import pytest
import scipy.sparse as sp

from racfield.fem import guards
from racfield.fem.harmonic import BorderedFactorization, backward_error
from racfield.fem.parallel import excitation_basis
from racfield.fem.sweep import conductor_resistivities, mesh_case, problem_for, run_sweep
from racfield.geometry.case import parse_case
from racfield.geometry.layout import place
from racfield.cli import main

import test_validation_round_wire as wire_case

RATIOS = (1.0, 3.0, 6.0, 10.0)          # a / delta at the case frequencies
FREQUENCIES = [wire_case.frequency_for(r) for r in RATIOS]
COARSE = 0.3                             # [mesh] density of the deliberately coarse mesh


def skin_depth_iec(frequency: float) -> float:
    """Skin depth of copper at 20 degC, sqrt(2 rho / (omega mu0)), IEC 60028 resistivity."""
    return math.sqrt(2.0 * wire_case.RHO_CU_20 / (2.0 * math.pi * frequency * wire_case.MU0))


def wire_toml(density: float, mesh_frequency: float | None = None) -> str:
    mesh = f"density = {density}\n" + (f"frequency = {mesh_frequency!r}\n" if mesh_frequency else "")
    return (f'title = "round wire, mesh density {density}"\n'
            '[model]\nlength = "1 m"\ntemperature = "20 degC"\n'
            f"[sweep]\nfrequencies = {FREQUENCIES!r}\n"
            '[window]\nwidth = "2 mm"\nheight = "2 mm"\nboundary = "open"\n'
            '[[winding]]\nname = "wire"\ncurrent = "1 A"\n'
            '[[conductor]]\nwinding = "wire"\nshape = "round"\ndiameter = "1 mm"\nat = ["1 mm", "1 mm"]\n'
            f"[mesh]\n{mesh}")


def run_cli(tmp_path, text: str, *options: str) -> tuple[int, dict, str]:
    """``racfield run`` in-process: (exit status, results.json, stderr)."""
    path = tmp_path / "case.toml"
    path.write_text(text, encoding="utf-8")
    err = io.StringIO()
    with contextlib.redirect_stderr(err), contextlib.redirect_stdout(io.StringIO()):
        status = main(["run", str(path), "--quiet", "--out", str(tmp_path / "out"), *options])
    doc = json.loads((tmp_path / "out" / "results.json").read_text(encoding="utf-8"))
    return status, doc, err.getvalue()


@pytest.fixture(scope="module")
def coarse(tmp_path_factory):
    return run_cli(tmp_path_factory.mktemp("coarse"), wire_toml(COARSE), "--check-mesh")


@pytest.fixture(scope="module")
def default(tmp_path_factory):
    return run_cli(tmp_path_factory.mktemp("default"), wire_toml(1.0), "--check-mesh")


def bessel_rac_over_rdc(ratio: float) -> float:
    return wire_case.bessel_z_over_rdc(ratio).real


# --- under-resolved mesh --------------------------------------------------------

def test_coarse_mesh_warns_at_the_top_frequencies(coarse):
    status, doc, err = coarse
    assert status == 0, err
    # the mesher's surface size: delta at the highest frequency / 1.5 / density (README,
    # Conventions; pi d / 28 is coarser here), against delta at each frequency
    surface = skin_depth_iec(FREQUENCIES[-1]) / 1.5 / COARSE
    expected = [f for f in FREQUENCIES if surface > skin_depth_iec(f)]
    assert len(expected) == 2 and len(expected) < len(FREQUENCIES)   # a/delta = 6 and 10
    found = [w for w in doc["warnings"] if w["kind"] == "under-resolved-mesh"]
    assert [w["frequency_hz"] for w in found] == pytest.approx(expected, rel=1e-12)
    lines = [line for line in err.splitlines() if line.startswith("racfield: warning: ")]
    assert lines == [f"racfield: warning: {w['message']}" for w in doc["warnings"]]
    assert all("under-resolved" in line and "[mesh] density" in line for line in lines)
    for w in found:
        assert set(w) == {"kind", "frequency_hz", "message"} and "\n" not in w["message"]


def test_default_density_has_no_warnings(default):
    """The mesher's 1.5 elements per skin depth is stricter than the warning's one
    element per skin depth (common practice), so a default mesh raises nothing."""
    status, doc, err = default
    assert status == 0, err
    assert doc["warnings"] == []
    assert "warning" not in err


def test_default_density_foils_in_an_ideal_core_have_no_warnings():
    """Rectangular conductors (foils) in a closed window, 20 kHz to 2 MHz: no warnings."""
    foil = {"shape": "foil", "thickness": "0.1 mm", "height": "4 mm"}
    doc = {"sweep": {"frequencies": ["20 kHz", "200 kHz", "2 MHz"]},
           "window": {"width": "1 mm", "height": "4.4 mm", "boundary": "ideal-core"},
           "winding": [{"name": "p", "current": "1 A"}, {"name": "s", "current": "1 A", "phase": 180}],
           "layer": [{"winding": "p", "conductor": foil, "repeat": 2, "insulation_after": "0.1 mm"},
                     {"winding": "s", "conductor": foil, "repeat": 2, "insulation_after": "0.1 mm"}]}
    sweep = run_sweep(parse_case(doc))
    # skin depth of copper at 2 MHz: 0.047 mm (IEC 60028 resistivity), half the foil thickness
    assert skin_depth_iec(2e6) < 0.1e-3 / 2
    assert sweep.warnings == []


def test_surface_edges_of_a_circle():
    """At 0 Hz a round wire's surface carries 28 elements (README, Conventions): the
    longest measured surface edge is the arc pi d / 28 of a 28-gon (geometry)."""
    case = parse_case({"sweep": {"frequencies": [0]},
                       "window": {"width": "2 mm", "height": "2 mm", "boundary": "open"},
                       "winding": [{"name": "wire"}],
                       "conductor": [{"winding": "wire", "shape": "round", "diameter": "1 mm",
                                      "at": ["1 mm", "1 mm"]}]})
    conductors = place(case)
    owner, length = guards.surface_edges(mesh_case(case, conductors))
    assert (owner == 0).all() and len(length) == 28
    # the circumference, short by the chords through the middle nodes: a regular
    # 56-gon's perimeter is pi d (1 - (pi/56)^2 / 6 + ...), 5.2e-4 short
    assert length.sum() == pytest.approx(56 * 1e-3 * math.sin(math.pi / 56), rel=1e-5)
    assert length.max() == pytest.approx(math.pi * 1e-3 / 28, rel=0.01)


# --- [mesh] frequency -------------------------------------------------------------

def test_mesh_frequency_reads_with_units():
    doc = {"sweep": {"frequencies": ["100 kHz"]}, "window": {"width": "2 mm", "height": "2 mm", "boundary": "open"},
           "winding": [{"name": "wire"}],
           "conductor": [{"winding": "wire", "shape": "round", "diameter": "1 mm", "at": ["1 mm", "1 mm"]}]}
    assert parse_case(doc).mesh.frequency is None
    assert parse_case(doc).mesh_frequency == 100e3
    doc["mesh"] = {"frequency": "0.5 MHz"}
    assert parse_case(doc).mesh.frequency == 500e3         # 0.5 MHz = 5e5 Hz (SI prefix)
    assert parse_case(doc).mesh_frequency == 500e3


def test_mesh_frequency_below_the_sweep_warns_above_it():
    mesh_f = FREQUENCIES[1]                                 # a/delta = 3
    case = parse_case(tomllib.loads(wire_toml(1.0, mesh_f)))
    sweep = run_sweep(case)
    above = [w["frequency_hz"] for w in sweep.warnings if w["kind"] == "above-mesh-frequency"]
    assert above == pytest.approx(FREQUENCIES[2:], rel=1e-12)
    # the mesh is sized for [mesh] frequency: delta there / 1.5 (README, Conventions)
    assert sweep.surface_size == pytest.approx(skin_depth_iec(mesh_f) / 1.5, rel=1e-3)
    # so the top frequencies are under-resolved too (delta/1.5 at a/delta = 3 is over
    # one skin depth at a/delta = 6 and 10)
    under = [w["frequency_hz"] for w in sweep.warnings if w["kind"] == "under-resolved-mesh"]
    assert under == pytest.approx(FREQUENCIES[2:], rel=1e-12)


# --- solve residual ---------------------------------------------------------------

def test_backward_error_of_a_small_system():
    """Oettli-Prager componentwise backward error, worked by hand: A = diag(2, 4),
    r = (2, 4), z = (1, 1.001): row 2 misfit 0.004 over |A||z| + |r| = 4.004 + 4."""
    a = sp.csr_matrix(np.diag([2.0, 4.0]))
    assert backward_error(a, np.array([1.0, 1.0]), np.array([2.0, 4.0])) == 0.0
    assert backward_error(a, np.array([1.0, 1.001]), np.array([2.0, 4.0])) == pytest.approx(0.004 / 8.004, rel=1e-12)


def _wire_problem():
    case = parse_case(tomllib.loads(wire_toml(1.0)))
    conductors = place(case)
    problem = problem_for(case, mesh_case(case, conductors), conductor_resistivities(case, conductors), conductors)
    return case, conductors, problem


def test_residual_of_a_normal_solve_is_tiny():
    case, conductors, problem = _wire_problem()
    connection = excitation_basis(case, conductors).basis
    for f in (0.0, FREQUENCIES[-1]):
        solution = problem.solve_windings(f, connection, np.ones(connection.shape[1]))
        # a backward-stable LU leaves a backward error of a few units of rounding,
        # 2^-52 = 2.2e-16 (N. J. Higham, Accuracy and Stability of Numerical Algorithms, 2002)
        print(f"\nbackward error at {f:.4g} Hz: {solution.residual:.2e}")
        assert solution.residual is not None and solution.residual < 1e-13
        assert solution.residual < guards.RESIDUAL_LIMIT


def test_corrupted_solve_is_flagged(monkeypatch):
    """A solve whose solution is off by 1e-6 (relative) is reported at every frequency."""
    original = BorderedFactorization._raw_solve
    noise = np.random.default_rng(1)

    def corrupted(self, rhs):
        z = original(self, rhs)
        return z * (1.0 + 1e-6 * noise.standard_normal(z.shape))

    monkeypatch.setattr(BorderedFactorization, "_raw_solve", corrupted)
    sweep = run_sweep(parse_case(tomllib.loads(wire_toml(1.0))), method="exact")
    flagged = [w for w in sweep.warnings if w["kind"] == "solve-residual"]
    assert [w["frequency_hz"] for w in flagged] == pytest.approx(FREQUENCIES, rel=1e-12)


def test_reduced_sweep_deviation_is_flagged(monkeypatch):
    """A reduced model from one moment at one expansion point misses the other
    frequencies by far more than 1e-4: the warning advises --exact.  The normal
    reduced sweep of the same case raises nothing."""
    case = parse_case(tomllib.loads(wire_toml(1.0)))
    normal = run_sweep(case, method="reduced")
    assert normal.sweep_info["method"] == "reduced" and normal.warnings == []

    from racfield.fem import sweep as fem_sweep

    original = fem_sweep.reduced_plan
    monkeypatch.setattr(fem_sweep, "reduced_plan",
                        lambda problem, freqs, connection: original(problem, freqs, connection,
                                                                    start=1, most=1, moments=1))
    crude = run_sweep(case, method="reduced")
    assert crude.sweep_info["max_check_deviation"] > guards.REDUCED_DEVIATION_LIMIT
    found = [w for w in crude.warnings if w["kind"] == "reduced-deviation"]
    assert len(found) == 1 and found[0]["frequency_hz"] is None and "--exact" in found[0]["message"]


# --- check-mesh ---------------------------------------------------------------------

def test_check_mesh_entry(coarse, default):
    for (_, doc, _), density in ((coarse, COARSE), (default, 1.0)):
        estimate = doc["error_estimate"]
        assert estimate["method"] == "richardson"
        assert estimate["frequency_hz"] == pytest.approx(FREQUENCIES[-1], rel=1e-12)
        assert estimate["densities"] == pytest.approx([density, math.sqrt(2) * density, 2 * density], rel=1e-12)
        assert estimate["unknowns"][0] == doc["mesh"]["unknowns"]
        # every element size shrinks by sqrt(2), then by 2: about 2 and 4 times the
        # triangles (area over size squared)
        assert 1.6 < estimate["unknowns"][1] / estimate["unknowns"][0] < 2.5
        assert 3.2 < estimate["unknowns"][2] / estimate["unknowns"][0] < 5.0
        assert set(estimate["windings"]) == {"wire"}
        # an open model has a self inductance, one winding no leakage
        assert estimate["windings"]["wire"]["l"] is not None and estimate["leakage"] is None


def test_check_mesh_estimates_the_true_error(coarse, default):
    """The estimated Rac error has the sign of the true error against the exact
    Bessel solution (Ramo, Whinnery, Van Duzer) and is within a factor of 2 of
    it, on the default mesh and on a deliberately coarse one."""
    exact = bessel_rac_over_rdc(RATIOS[-1])
    for name, (_, doc, _) in (("coarse", coarse), ("default", default)):
        measured = doc["windings"]["wire"]["rac_over_rdc"][-1]
        true = measured / exact - 1.0
        entry = doc["error_estimate"]["windings"]["wire"]["rac"]
        print(f"\n{name}: estimated Rac error {entry['error']:+.3e} (order {entry['observed_order']}), "
              f"true error {true:+.3e}")
        assert entry["asymptotic"]
        assert 0.5 < entry["error"] / true < 2.0
    # the default mesh is within 0.05 % (README, Mesh sizes)
    assert abs(default[1]["error_estimate"]["windings"]["wire"]["rac"]["error"]) < 5e-4
