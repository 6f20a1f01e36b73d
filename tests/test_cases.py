"""Every case in cases/ runs through the command line, writes the result files,
and carries numbers that an independent calculation supports."""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import numpy as np
import pytest
from scipy.special import jv

CASES = Path(__file__).resolve().parents[1] / "cases"

# IEC 60028 (International Annealed Copper Standard): 1.7241e-8 ohm*m at 20 degC, 0.00393 /K
RHO20_CU, ALPHA_CU = 1.7241e-8, 0.00393
MU0 = 4e-7 * math.pi

RESULT_FILES = ["results.json", "rac.csv", "conductors.csv", "estimates.csv", "rac_over_rdc.png",
                "current_density.png", "field.vtu", "geometry.png", "conductor_loss.png", "estimates.png"]


def _rho(temperature_c: float) -> float:
    return RHO20_CU * (1 + ALPHA_CU * (temperature_c - 20.0))


@pytest.fixture(scope="module")
def results(case_run):
    """Run each case once (through the command line, ``case_run`` of
    tests/conftest.py: shared with the other tests of the same case files);
    map case name -> (results.json document, output folder)."""
    out = {}
    for case in sorted(CASES.glob("*.toml")):
        if "\n[search]" in case.read_text():
            continue   # a design search: tests/test_search.py runs it with racfield search
        run = case_run(case.stem)
        assert run.status == 0
        folder = run.folder
        if (folder / "comparison.json").exists():
            comparison = json.loads((folder / "comparison.json").read_text())
            for name, variant in comparison["variants"].items():
                sub = folder / variant["folder"]
                out[f"{case.stem}/{name}"] = (json.loads((sub / "results.json").read_text()), sub)
            out[case.stem] = (comparison, folder)
        else:
            out[case.stem] = (json.loads((folder / "results.json").read_text()), folder)
    return out


def test_every_case_is_covered(results):
    assert set(results) == set(NAMES) | {"interleaving_study", "design_study"}


#: the 6 points of cases/design_study.toml: 2 interleavings x 3 secondary foil thicknesses
DESIGN_STUDY = [f"design_study/{order}, thickness={t} mm" for order in ("P-P-S", "P-S-P") for t in ("0.1", "0.2", "0.3")]

NAMES = ["demo_transformer", "pcb_planar_transformer", "air_core_choke", "gapped_inductor",
         "gapped_inductor_split_gap", "pot_core_axisymmetric", "pot_core_planar",
         "interleaving_study/P-P-S", "interleaving_study/P-S-P", "interleaving_study/P-S-P-S",
         "paralleled_foils", "flyback_waveforms", "etd_whole_turns", "thermal_transformer", *DESIGN_STUDY]


@pytest.mark.parametrize("name", NAMES)
def test_contract_and_files(results, name):
    doc, folder = results[name]
    for key in ("title", "symmetry", "temperature_c", "length_m", "frequencies_hz", "windings", "conductors"):
        assert key in doc
    nf = len(doc["frequencies_hz"])
    for w in doc["windings"].values():
        assert {"turns", "current_a_rms", "rdc_ohm", "rac_ohm", "rac_over_rdc", "loss_w"} <= set(w)
        assert len(w["rac_ohm"]) == len(w["rac_over_rdc"]) == len(w["loss_w"]) == nf
    for c in doc["conductors"]:
        assert {"winding", "turn", "loss_w"} <= set(c) and len(c["loss_w"]) == nf
    for file in RESULT_FILES:
        assert (folder / file).stat().st_size > 0
    rows = list(csv.DictReader((folder / "rac.csv").open()))
    assert len(rows) == nf * len(doc["windings"])


def _case_rdc(doc, winding):
    """Rdc = rho(T) * l * N / A from the conductor areas (IEC 60028 copper)."""
    rho = _rho(doc["temperature_c"])
    return sum(rho * doc["length_m"] / c["area_m2"] for c in doc["conductors"] if c["winding"] == winding)


def test_demo_dc_resistance_and_low_frequency_limit(results):
    doc, _ = results["demo_transformer"]
    w = doc["windings"]
    # primary: 28 turns of 0.40 mm wire, 42 mm per turn, at 100 degC; rho*l/A (IEC 60028)
    rdc_primary = _rho(100.0) * 0.042 * 28 / (math.pi * 0.2e-3 ** 2)
    assert w["primary"]["rdc_ohm"] == pytest.approx(rdc_primary, rel=5e-4)
    # secondary: 7 foils of 0.1 mm x 7.0 mm
    rdc_secondary = _rho(100.0) * 0.042 * 7 / (0.1e-3 * 7.0e-3)
    assert w["secondary"]["rdc_ohm"] == pytest.approx(rdc_secondary, rel=5e-4)
    # at 10 kHz the primary wire is 0.26 skin depths in radius: the isolated-wire
    # skin factor is 1 + (a/delta)^4/48 (low-frequency series of the Bessel
    # solution, Ramo, Whinnery & Van Duzer) and proximity adds under 1 %
    assert 1.0 <= w["primary"]["rac_over_rdc"][0] < 1.01
    assert 1.0 <= w["secondary"]["rac_over_rdc"][0] < 1.01
    # ampere-turn balance: N_p I_p = N_s I_s (Ampere's law around the core window)
    assert 28 * w["primary"]["current_a_rms"] == pytest.approx(7 * w["secondary"]["current_a_rms"])


def test_pcb_dc_resistance_and_low_frequency_limit(results):
    doc, _ = results["pcb_planar_transformer"]
    w = doc["windings"]
    # 8 tracks of 0.8 mm x 70 um and 2 of 4.2 mm x 70 um, 28 mm per turn, 80 degC (IEC 60028)
    assert w["primary"]["rdc_ohm"] == pytest.approx(_rho(80.0) * 0.028 * 8 / (0.8e-3 * 70e-6), rel=5e-4)
    assert w["secondary"]["rdc_ohm"] == pytest.approx(_rho(80.0) * 0.028 * 2 / (4.2e-3 * 70e-6), rel=5e-4)
    # 70 um copper at 20 kHz is 0.15 skin depths thick: Dowell's factor for one
    # layer is 1 + (4/45) Delta^4 to leading order (P. L. Dowell, Proc. IEE, 1966):
    # far below 0.1 %; proximity adds a little more
    for name in ("primary", "secondary"):
        assert 1.0 <= w[name]["rac_over_rdc"][0] < 1.001


def test_air_core_choke_not_below_isolated_wire_skin_effect(results):
    doc, _ = results["air_core_choke"]
    choke = doc["windings"]["choke"]
    assert choke["rdc_ohm"] == pytest.approx(_rho(60.0) * 0.025 * 10 / (math.pi * 0.5e-3 ** 2), rel=5e-4)
    # skin and proximity losses of round wires are orthogonal (J. A. Ferreira,
    # IEEE Trans. Power Electronics, 1994), so each turn loses at least what an
    # isolated wire loses by skin effect: Re(ka J0(ka) / (2 J1(ka))) (Bessel solution)
    a = 0.5e-3
    for f, ratio in zip(doc["frequencies_hz"], choke["rac_over_rdc"]):
        delta = math.sqrt(2 * _rho(60.0) / (2 * math.pi * f * MU0))
        ka = (1 - 1j) / delta * a
        skin = (ka * jv(0, ka) / (2 * jv(1, ka))).real
        assert ratio >= skin * (1 - 1e-3)
    # and per-conductor losses add up to the winding loss (energy balance)
    total = np.sum([c["loss_w"] for c in doc["conductors"]], axis=0)
    assert np.allclose(total, choke["loss_w"], rtol=1e-12)


def _reluctance_inductance(turns, length, gap_total, centre_leg, mu_r, core_path_over_area):
    """Magnetic-circuit estimate (common practice) for the half E-core model per
    metre of depth: L = mu0 N^2 l / (g / (w_c / 2) + sum(l_i / A_i) / mu_r)."""
    return MU0 * turns ** 2 * length / (gap_total / (centre_leg / 2) + core_path_over_area / mu_r)


@pytest.mark.parametrize("name", ["gapped_inductor", "gapped_inductor_split_gap"])
def test_gapped_chokes_against_the_magnetic_circuit(results, name):
    doc, _ = results[name]
    choke = doc["windings"]["choke"]
    # 32 turns of 0.50 mm wire, 38 mm per turn, 90 degC (IEC 60028)
    assert choke["rdc_ohm"] == pytest.approx(_rho(90.0) * 0.038 * 32 / (math.pi * 0.25e-3 ** 2), rel=5e-4)
    # core path of the half model: centre half-leg (9 mm - gap, 2.5 mm wide), two
    # yokes (2.5 mm thick, from the leg middles: 1.25 + 3.2 + 1.25 mm long), outer leg (2.5 mm)
    path = (9.0 - 1.0) / 2.5 + 2 * (1.25 + 3.2 + 1.25) / 2.5 + (9.0 + 2.5) / 2.5
    estimate = _reluctance_inductance(32, 0.038, 1.0e-3, 5.0e-3, 2000, path)
    inductance = doc["inductance"]["self_l_h"]["choke"][0]
    # fringing only adds permeance: the field solution is not below the
    # magnetic-circuit estimate (common practice)
    assert inductance >= 0.99 * estimate
    assert doc["inductance"]["magnetizing_l_h"][0] == pytest.approx(inductance)
    # the winding impedance is R + j omega L with R = Rac of the single winding
    assert doc["impedance"]["r_ohm"][0][0][0] == pytest.approx(choke["rac_ohm"][0], rel=1e-9)


def test_split_gap_lowers_the_fringing_loss(results):
    # spreading the gap over several shorter gaps weakens the fringing field at
    # the turns and lowers their loss (common practice in inductor design)
    single = results["gapped_inductor"][0]["windings"]["choke"]["loss_w"]
    split = results["gapped_inductor_split_gap"][0]["windings"]["choke"]["loss_w"]
    assert all(b < a for a, b in zip(single, split))


def test_pot_core_dc_resistance_planar_and_axisymmetric(results):
    axi, _ = results["pot_core_axisymmetric"]
    planar, _ = results["pot_core_planar"]
    assert axi["symmetry"] == "axisymmetric" and axi["length_m"] is None
    rho = _rho(80.0)
    for name, a in (("primary", 0.175e-3), ("secondary", 0.355e-3)):
        # each turn is a ring: R = rho / (R0 - sqrt(R0^2 - a^2)) (integral of
        # 1/(2 pi r) over the wire's disk; exact at DC)
        rings = sum(rho / (c["r_m"] - math.sqrt(c["r_m"] ** 2 - a * a))
                    for c in axi["conductors"] if c["winding"] == name)
        assert axi["windings"][name]["rdc_ohm"] == pytest.approx(rings, rel=5e-4)
        # planar: rho * l * N / A with the one mean turn length of the case (IEC 60028)
        turns = planar["windings"][name]["turns"]
        assert planar["windings"][name]["rdc_ohm"] == pytest.approx(rho * 0.0311 * turns / (math.pi * a * a), rel=5e-4)
    # the leakage inductance falls with frequency as the field leaves the
    # conductors (Dowell 1966, one-dimensional model)
    for doc in (axi, planar):
        leak = doc["leakage"]["l_h"]
        assert all(b < a for a, b in zip(leak, leak[1:]))


def test_interleaving_study(results):
    comparison, folder = results["interleaving_study"]
    for file in ("comparison.csv", "comparison.json", "rac_over_rdc_variants.png", "loss_by_variant.png"):
        assert (folder / file).stat().st_size > 0
    assert comparison["compare_frequency_hz"] == pytest.approx(100e3)
    variants = {name: results[f"interleaving_study/{name}"][0] for name in ("P-P-S", "P-S-P", "P-S-P-S")}
    rho = _rho(100.0)
    for doc in variants.values():
        # same turns in every arrangement: 24 turns of 0.50 mm wire and 6 foils
        # of 0.15 mm x 9.0 mm, 52 mm per turn (rho l N / A, IEC 60028)
        w = doc["windings"]
        assert w["primary"]["rdc_ohm"] == pytest.approx(rho * 0.052 * 24 / (math.pi * 0.25e-3 ** 2), rel=5e-4)
        assert w["secondary"]["rdc_ohm"] == pytest.approx(rho * 0.052 * 6 / (0.15e-3 * 9.0e-3), rel=5e-4)
    at = comparison["frequencies_hz"].index(100e3)
    loss = {name: comparison["variants"][name]["total_loss_w"][at] for name in variants}
    leak = {name: comparison["variants"][name]["leakage_l_h"][0] for name in variants}
    # splitting the primary around the secondary halves the peak MMF of the
    # one-dimensional staircase: lower proximity loss (Dowell 1966) and at most
    # half the leakage energy (1-D field energy of the MMF staircase, common practice)
    assert loss["P-S-P"] < loss["P-P-S"] and loss["P-S-P-S"] < loss["P-P-S"]
    assert leak["P-S-P"] < 0.5 * leak["P-P-S"] and leak["P-S-P-S"] < 0.5 * leak["P-P-S"]
    # ... and puts more primary and secondary layer faces side by side: the
    # inter-winding capacitance rises with the number of facing P-S layer
    # pairs, 1, 2 and 3 (common practice)
    between = {name: doc["capacitance"]["winding"]["between_f"]["primary-secondary"]
               for name, doc in variants.items()}
    assert between["P-P-S"] < between["P-S-P"] < between["P-S-P-S"]
    for name, doc in variants.items():
        c = np.array(doc["capacitance"]["conductor_f_per_m"])
        # a Maxwell matrix: symmetric (reciprocity), negative off-diagonal
        # entries, non-negative row sums (Ramo, Whinnery & Van Duzer)
        assert np.abs(c - c.T).max() <= 1e-12 * np.abs(c).max()
        assert (c - np.diag(np.diag(c))).max() <= 1e-12 * np.abs(c).max()   # rounding of shielded pairs
        assert c.sum(axis=1).min() >= -1e-9 * np.abs(c).max()
        # two neighbouring secondary foils, 9.0 mm high, 0.05 mm of tape
        # (eps_r 3.3) apart: the parallel-plate capacitor eps A / d (Ramo,
        # Whinnery & Van Duzer), fringing adding a few per cent
        foils = [i for i, e in enumerate(doc["capacitance"]["electrodes"]) if e.startswith("secondary.")]
        plate = 8.8541878128e-12 * 3.3 * 9.0e-3 / 0.05e-3
        assert 1.0 < -c[foils[0], foils[1]] / plate < 1.05


def test_paralleled_foils_demo(results):
    doc, _ = results["paralleled_foils"]
    par = doc["parallel"]["secondary"]
    # 2 turns of 2 foils 0.1 mm x 5.2 mm in parallel, 36 mm per turn, 100 degC:
    # Rdc = 2 * (rho l / A) / 2 (IEC 60028)
    assert doc["windings"]["secondary"]["turns"] == 2
    assert doc["windings"]["secondary"]["rdc_ohm"] == pytest.approx(
        2 * _rho(100.0) * 0.036 / (0.1e-3 * 5.2e-3) / 2, rel=5e-4)
    # equal foils share the DC current equally (Ohm's law) ...
    assert par["strand_current_a"][0] == pytest.approx([8.0, 8.0], rel=1e-6)
    # ... and unequally at 300 kHz, with a circulating-current loss (common practice)
    at = doc["frequencies_hz"].index(300e3)
    high, low = sorted(par["strand_current_a"][at], reverse=True)
    assert high / low > 1.3 and par["circulating_loss_w"][at] > 0.0


def _dowell(d: float, m: int) -> float:
    """Rac/Rdc of an m-layer foil portion, d = thickness / skin depth (P. L. Dowell,
    "Effects of eddy currents in transformer windings", Proc. IEE 113(8), 1966)."""
    xi1 = (math.sinh(2 * d) + math.sin(2 * d)) / (math.cosh(2 * d) - math.cos(2 * d))
    xi2 = (math.sinh(d) - math.sin(d)) / (math.cosh(d) + math.cos(d))
    return d * (xi1 + 2.0 / 3.0 * (m * m - 1) * xi2)


def test_design_study(results):
    comparison, folder = results["design_study"]
    study = json.loads((folder / "study.json").read_text())
    assert [v["variant"] for v in study["variants"]] == [n.split("/", 1)[1] for n in DESIGN_STUDY]
    assert all(v["error"] is None for v in study["variants"])
    rows = list(csv.reader((folder / "study.csv").open()))
    assert len(rows) == 1 + 6 * 12                     # one row per variant and frequency
    rho = _rho(100.0)
    for name in DESIGN_STUDY:
        doc, _ = results[name]
        order, thickness = name.split("/")[1].split(", thickness=")
        t = float(thickness.split()[0]) * 1e-3
        w = doc["windings"]
        # 4 primary turns of 0.1 mm x 5 mm foil and 2 secondary turns of t x 5 mm,
        # 40 mm per turn, 100 degC: Rdc = rho l N / A (IEC 60028)
        assert w["primary"]["rdc_ohm"] == pytest.approx(rho * 0.040 * 4 / (0.1e-3 * 5e-3), rel=5e-4)
        assert w["secondary"]["rdc_ohm"] == pytest.approx(rho * 0.040 * 2 / (t * 5e-3), rel=5e-4)
        # the foils span the full height between ideal-core walls, so the field is
        # one-dimensional and Dowell's formula holds for every winding portion:
        # P-P-S: the MMF rises over 4 primary layers and falls over 2 secondary
        # layers; P-S-P: 2 primary layers on each side (m = 2), and each secondary
        # layer sees zero MMF on one face (m = 1) (Dowell, Proc. IEE, 1966)
        layers = {"primary": 4, "secondary": 2} if order == "P-P-S" else {"primary": 2, "secondary": 1}
        for winding, foil in (("primary", 0.1e-3), ("secondary", t)):
            for f, ratio in zip(doc["frequencies_hz"], w[winding]["rac_over_rdc"]):
                delta = math.sqrt(rho / (math.pi * f * MU0))
                assert ratio == pytest.approx(_dowell(foil / delta, layers[winding]), rel=3e-3), (name, winding, f)


def test_etd_whole_turns_demo(results):
    doc, folder = results["etd_whole_turns"]
    rho = _rho(90.0)
    leg = 8e-3   # round centre leg, 8 mm diameter; the window's inner wall is its surface
    for c in doc["conductors"]:
        # each turn's length is the circle at its centre, 2 pi (D/2 + x) (geometry), and its
        # DC resistance rho l / A (IEC 60028)
        length = 2 * math.pi * (leg / 2 + c["x_m"])
        assert c["length_m"] == pytest.approx(length, rel=1e-9)
        area = math.pi * (0.45e-3 / 2) ** 2 if c["winding"] == "primary" else 0.1e-3 * 10.5e-3
        assert c["rdc_ohm"] == pytest.approx(rho * length / area, rel=5e-4)
    for name in ("primary", "secondary"):
        turns = [c for c in doc["conductors"] if c["winding"] == name]
        assert doc["windings"][name]["rdc_ohm"] == pytest.approx(sum(c["rdc_ohm"] for c in turns), rel=1e-9)
    # whole turns: 40 % of every turn in the end section, and the rule
    # P = 0.6 p_window l + 0.4 p_end l per turn (README, Whole turns)
    sections = doc["sections"]
    assert sections["end_share"] == pytest.approx(0.4)
    for name in ("primary", "secondary"):
        whole = np.array(doc["windings"][name]["loss_w"])
        parts = np.add(sections["window"]["windings"][name]["loss_w"], sections["end"]["windings"][name]["loss_w"])
        assert np.allclose(parts, whole, rtol=1e-9)
        # at 20 kHz the 0.45 mm wire is 0.24 skin depths in radius: the isolated-wire skin factor
        # is under 1.001 (Bessel series, Ramo, Whinnery & Van Duzer); proximity in the layers adds little
        assert 1.0 <= doc["windings"]["primary"]["rac_over_rdc"][0] < 1.05
    # N_p I_p = N_s I_s: 20 x 1 A = 5 x 4 A (Ampere's law around the core)
    assert 20 * doc["windings"]["primary"]["current_a_rms"] == pytest.approx(5 * doc["windings"]["secondary"]["current_a_rms"])
    header = (folder / "rac.csv").read_text().splitlines()[0].split(",")
    assert header[-4:] == ["rac_over_rdc_window", "loss_window_w", "rac_over_rdc_end", "loss_end_w"]


def test_thermal_transformer_demo(results):
    doc, _ = results["thermal_transformer"]
    w, thermal = doc["windings"], doc["thermal"]
    # 16 turns of 0.60 mm wire and 4 foils of 0.1 mm x 8.8 mm, 50 mm per turn, 100 degC: rho l N / A (IEC 60028)
    assert w["primary"]["rdc_ohm"] == pytest.approx(_rho(100.0) * 0.050 * 16 / (math.pi * 0.3e-3 ** 2), rel=5e-4)
    assert w["secondary"]["rdc_ohm"] == pytest.approx(_rho(100.0) * 0.050 * 4 / (0.1e-3 * 8.8e-3), rel=5e-4)
    # N_p I_p = N_s I_s: 16 x 3.5 A = 4 x 14 A (Ampere's law around the core window)
    assert 16 * w["primary"]["current_a_rms"] == pytest.approx(4 * w["secondary"]["current_a_rms"])
    assert thermal["steady_state"] and thermal["converged"] and thermal["coupled"]
    assert thermal["boundary"]["core_temperature_c"] == 90.0 and thermal["flat_temperature_c"] == 100.0
    # energy conservation: the heat through the core walls equals the loss generated in the
    # steady state (first law; Carslaw & Jaeger, Conduction of Heat in Solids, 1959)
    assert thermal["heat_balance_error"] < 1e-8
    # maximum principle: with heat sources only and the walls at 90 degC, no point is cooler
    # than the walls, and the hot spot is at least every conductor's mean (Carslaw & Jaeger, 1959)
    temperatures = thermal["conductor_temperature_c"]
    assert len(temperatures) == len(doc["conductors"]) == 20
    assert min(temperatures) >= 90.0
    assert thermal["hot_spot_c"] >= max(temperatures) - 1e-9
    # the first field solution, every turn at the flat 100 degC, is the sweep's own operating
    # point: the same currents at 200 kHz at the same resistivity (the same linear problem)
    at = doc["frequencies_hz"].index(200e3)
    for name in ("primary", "secondary"):
        assert thermal["windings"][name]["flat_loss_w"] == pytest.approx(w[name]["loss_w"][at], rel=1e-10)
        # Rac = P / I^2 at the operating point (Joule's law)
        current = w[name]["current_a_rms"]
        assert thermal["windings"][name]["rac_ohm"] == pytest.approx(thermal["windings"][name]["loss_w"] / current ** 2,
                                                                     rel=1e-12)
    assert thermal["flat_total_loss_w"] == pytest.approx(sum(w[n]["loss_w"][at] for n in w), rel=1e-10)
    # the loss at temperature is the sum of the windings' losses, and the iteration stopped at its
    # tolerance: the last two field solutions differ by at most 1e-5 of the loss (the fixed point T = F(T))
    history = thermal["loss_history_w"]
    assert thermal["total_loss_w"] == pytest.approx(sum(v["loss_w"] for v in thermal["windings"].values()), rel=1e-12)
    assert history[-1] == pytest.approx(thermal["total_loss_w"], rel=1e-12)
    assert len(history) >= 2 and abs(history[-1] - history[-2]) <= 1e-5 * history[-1]
    # what the demo claims: the primary, buried next to the centre leg behind the bobbin, runs hotter
    # than the foil secondary beside the outer leg; the hot spot is in a primary turn at a plausible
    # 110 to 140 degC; and the loss at temperature differs from the flat 100 degC loss by more than 1 %
    # (demo claims, checked on this run)
    assert thermal["windings"]["primary"]["mean_temperature_c"] > thermal["windings"]["secondary"]["mean_temperature_c"] + 5.0
    assert thermal["hot_spot_conductor"]["winding"] == "primary"
    assert 110.0 <= thermal["hot_spot_c"] <= 140.0
    assert abs(thermal["total_loss_w"] / thermal["flat_total_loss_w"] - 1.0) > 0.01
