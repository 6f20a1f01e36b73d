"""Stranded (litz) wire: explicit strands against the homogenized bundle."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.special import jv, jvp

from racfield.fem.litz import (bundle_reluctivity, rayleigh_permeability, skin_factor,
                      strand_permeability)
from racfield.fem.sweep import problem_for, run_sweep, mesh_case
from racfield.fem.parallel import excitation_basis
from racfield.geometry.case import HEXAGONAL_PACKING, parse_case, parallel_of, winding_conductors, winding_turns
from racfield.geometry.case.errors import CaseError
from racfield.geometry.layout import place
from racfield.geometry.materials import MU0

RHO = 1.7241e-8          # ohm*m, copper at 20 degC (IEC 60028)
D_STRAND = 0.1e-3        # m
FREQUENCY = 400e3        # Hz: strand diameter / skin depth = 0.96
TURNS = 6
#: loss difference bundle vs strands at FREQUENCY, in %, per strand count (filled by the fixture, printed)
DIFFERENCES: dict[int, dict[str, float]] = {}


def _doc(count: int, rep: str, **extra) -> dict:
    conductor = {"shape": "litz", "strands": count, "strand_diameter": "0.1 mm", "representation": rep}
    conductor.update(extra)
    return {"sweep": {"frequencies": [0, FREQUENCY]},
            "window": {"width": "6 mm", "height": "8 mm", "boundary": "open"},
            "winding": [{"name": "litz", "current": "1 A"}],
            "layer": [{"winding": "litz", "turns": 3, "repeat": 2, "conductor": conductor}]}


def _delta(frequency: float) -> float:
    return math.sqrt(RHO / (math.pi * frequency * MU0))


@pytest.fixture(scope="module")
def losses():
    out = {}
    for n in (7, 19, 37):
        pair = {rep: run_sweep(parse_case(_doc(n, rep), "litz")).loss_per_m.sum(axis=1)
                for rep in ("strands", "bundle")}
        out[n] = pair
        DIFFERENCES[n] = {
            "total_percent": 100 * (pair["bundle"][1] / pair["strands"][1] - 1),
            "ac_part_percent": 100 * ((pair["bundle"][1] - pair["bundle"][0])
                                      / (pair["strands"][1] - pair["strands"][0]) - 1)}
    print(f"\nlitz, {TURNS} turns, d/delta = {D_STRAND / _delta(FREQUENCY):.2f}: bundle vs strands {DIFFERENCES}")
    return out


def test_strand_diameter_is_at_most_a_skin_depth():
    assert D_STRAND / _delta(FREQUENCY) <= 1.0


def test_bundle_agrees_with_explicit_strands_at_37(losses):
    # the homogenization (Rayleigh 1892 mixing with the Bessel strand permeability,
    # Lammeraner & Stafl, Eddy Currents, 1966) against the meshed strands: within 10 %
    # of the total loss and of the loss above DC
    assert abs(DIFFERENCES[37]["total_percent"]) < 10.0
    assert abs(DIFFERENCES[37]["ac_part_percent"]) < 10.0
    # the AC loss exceeds DC in both (proximity and skin effect, common practice)
    for rep in ("strands", "bundle"):
        assert losses[37][rep][1] > losses[37][rep][0]


@pytest.mark.parametrize("n", [7, 19, 37])
def test_dc_loss_is_the_n_strand_rdc(losses, n):
    # Rdc = rho l / (n pi d^2 / 4), IEC 60028 copper; 1 A in every turn
    rdc = RHO / (n * math.pi * D_STRAND ** 2 / 4)
    for rep in ("strands", "bundle"):
        assert losses[n][rep][0] == pytest.approx(TURNS * rdc, rel=1e-3)


def test_strand_permeability_low_frequency_limit():
    # J1(x) = x/2 - x^3/16, x J0 - J1 = x/2 - 3x^3/16 (Abramowitz & Stegun 9.1.10):
    # mu_c/mu0 -> 1 + (ka)^2/4 = 1 - j a^2 / (2 delta^2)
    a, f = D_STRAND / 2, 2e3
    ratio = (a / _delta(f)) ** 2
    mu = strand_permeability(D_STRAND, RHO, 2 * math.pi * f)
    # the next term is of order (ka)^4 = -4 (a/delta)^4
    assert abs(mu - (1 - 0.5j * ratio)) < 0.5 * ratio ** 2


@pytest.mark.parametrize("a_over_delta", [0.3, 1.0, 3.0, 10.0])
def test_strand_permeability_from_the_bessel_derivative(a_over_delta):
    # mu0/mu_c = ka J1'(ka) / J1(ka), the field matching at r = a (Lammeraner & Stafl 1966),
    # with scipy's Bessel derivative jvp
    delta = D_STRAND / 2 / a_over_delta
    omega = 2 * RHO / (MU0 * delta ** 2)
    x = (1 - 1j) * a_over_delta
    expected = jv(1, x) / (x * jvp(1, x))
    assert strand_permeability(D_STRAND, RHO, omega) == pytest.approx(expected, rel=1e-12)
    assert strand_permeability(D_STRAND, RHO, omega).imag < 0  # lossy with exp(+j omega t)


def test_rayleigh_limits():
    # Rayleigh 1892 / Maxwell Garnett: no change for mu_c = mu0; the dilute limit
    # mu_eff = 1 + 2 eta beta; perfectly diamagnetic cylinders give (1 - eta)/(1 + eta)
    assert rayleigh_permeability(1.0, 0.6) == pytest.approx(1.0)
    mu_c, eta = 0.9 - 0.1j, 1e-5
    beta = (mu_c - 1) / (mu_c + 1)
    assert rayleigh_permeability(mu_c, eta) == pytest.approx(1 + 2 * eta * beta, rel=1e-9)
    assert rayleigh_permeability(0.0, 0.5) == pytest.approx(0.5 / 1.5)


def test_low_frequency_proximity_loss_of_one_strand():
    # a dilute bundle in a uniform field B (RMS) loses, per strand, the classic
    # low-frequency eddy loss of a round wire in a transverse field,
    # pi sigma omega^2 B^2 a^4 / 4 (Lammeraner & Stafl 1966)
    a, f, n, bundle = D_STRAND / 2, 1e3, 1, 100 * D_STRAND
    omega = 2 * math.pi * f
    density = omega * bundle_reluctivity(n, D_STRAND, bundle, RHO, omega).imag  # W/m^3 per T^2
    per_strand = density * math.pi * bundle ** 2 / 4 / n
    assert per_strand == pytest.approx(math.pi / RHO * omega ** 2 * a ** 4 / 4, rel=1e-3)


@pytest.mark.parametrize("a_over_delta", [0.2, 0.5])
def test_skin_factor_low_frequency(a_over_delta):
    # Rac/Rdc = 1 + (a/delta)^4 / 48 for a round wire at low frequency (Lammeraner & Stafl 1966)
    delta = D_STRAND / 2 / a_over_delta
    omega = 2 * RHO / (MU0 * delta ** 2)
    assert skin_factor(D_STRAND, RHO, omega) - 1 == pytest.approx(a_over_delta ** 4 / 48, rel=0.01)


def test_skin_factor_high_frequency():
    # Rac/Rdc -> a/(2 delta) + 1/4 (Lammeraner & Stafl 1966)
    delta = D_STRAND / 2 / 100
    omega = 2 * RHO / (MU0 * delta ** 2)
    assert skin_factor(D_STRAND, RHO, omega) == pytest.approx(100 / 2 + 0.25, rel=1e-3)


def test_bundle_energy_balance_and_reciprocity():
    # Poynting's theorem: Re(sum u I*) = sum of losses; reciprocity: Z symmetric
    doc = _doc(19, "bundle")
    doc["winding"].append({"name": "solid", "current": "1 A", "phase": 90})
    doc["layer"].append({"winding": "solid", "conductor": {"shape": "round", "diameter": "0.4 mm"}, "turns": 3})
    case = parse_case(doc, "litz")
    conductors = place(case)
    problem = problem_for(case, mesh_case(case, conductors), np.full(len(conductors), RHO), conductors)
    connection = excitation_basis(case, conductors).basis
    solution = problem.solve_windings(FREQUENCY, connection, np.array([1.0, 1j]))
    currents = connection @ solution.currents
    assert (solution.voltage_per_m @ currents.conj()).real == pytest.approx(solution.loss_per_m.sum(), rel=1e-6)
    z = solution.impedance_per_m
    assert np.abs(z - z.T).max() < 1e-9 * np.abs(z).max()
    assert (solution.loss_per_m > 0).all()


def test_strands_are_transposed_parallel_conductors():
    case = parse_case(_doc(7, "strands"), "litz")
    assert parallel_of(case, "litz").conductors == 7 and parallel_of(case, "litz").transposed
    assert winding_conductors(case, "litz") == 7 * TURNS and winding_turns(case, "litz") == TURNS
    conductors = place(case)
    assert [c.strand for c in conductors[:7]] == list(range(1, 8)) and conductors[7].turn == 2
    # bundle D = d sqrt(n / 0.6): every strand inside it (geometry)
    bundle = D_STRAND * math.sqrt(7 / 0.6)
    centre = conductors[0]
    for c in conductors[1:7]:
        assert math.hypot(c.x - centre.x, c.y - centre.y) + D_STRAND / 2 <= bundle / 2 * (1 + 1e-9)


@pytest.mark.parametrize("extra, words", [
    ({"packing": 0.95}, "hexagonal limit"),
    ({"strands": 1, "bundle_diameter": "0.05 mm"}, "thinner than one strand"),
    ({"packing": 0.5, "bundle_diameter": "1 mm"}, "together"),
    ({"outer_diameter": "0.1 mm"}, "smaller than the bundle"),
    ({"representation": "bundel"}, "did you mean"),
    ({"packing": 0.85}, "rings"),
])
def test_bad_litz_is_one_line_error(extra, words):
    with pytest.raises(CaseError) as error:
        case = parse_case(_doc(19, "strands", **dict(extra)), "litz")
        place(case)
    assert words in str(error.value)
    assert HEXAGONAL_PACKING == pytest.approx(math.pi / math.sqrt(12))  # densest circle packing (Thue)


def test_litz_winding_refuses_parallel_and_mixing():
    doc = _doc(7, "strands")
    doc["parallel"] = [{"winding": "litz", "conductors": 7, "transposed": True}]
    with pytest.raises(CaseError, match="already"):
        parse_case(doc, "litz")
    doc = _doc(7, "strands")
    doc["layer"].append({"winding": "litz", "conductor": {"shape": "round", "diameter": "0.4 mm"}})
    with pytest.raises(CaseError, match="mixes litz and round"):
        parse_case(doc, "litz")
    doc = _doc(7, "strands")
    doc["layer"].append({"winding": "litz", "conductor": {"shape": "litz", "strands": 19,
                                                          "strand_diameter": "0.1 mm"}})
    with pytest.raises(CaseError, match="mixes litz of 7 and 19"):
        parse_case(doc, "litz")
