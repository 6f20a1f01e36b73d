"""Design search (``racfield search``, postprocess/app/search.py).

* Exhaustive equality: on a small discrete space (24 candidates: 6 wire sizes
  x 4 interleavings, with a current-density and a leakage limit) the search's
  best and its Pareto set equal those of solving every candidate one by one
  through the public API (``racfield.solve``), found here by brute force.
* Pareto property: no reported Pareto point is dominated by another solved
  candidate, and every other feasible solved candidate is dominated by one.
* Optimum foil thickness: full-height foils in an ideal-core window, where the
  field is exactly one-dimensional: the search's optimum thickness of an
  m-layer winding lies within the search step of the minimum of loss ~ F_R/Delta
  from Dowell's formula (P. L. Dowell, "Effects of eddy currents in transformer
  windings", Proc. IEE 113(8), 1966), found here numerically with scipy; and the
  closed-form optimum Delta_opt = (15 / (5 m^2 - 1))^(1/4), from the low-frequency
  expansion of Dowell's formula (W. G. Hurley, E. Gath, J. G. Breslin,
  "Optimizing the AC resistance of multilayer transformer windings with arbitrary
  current waveforms", IEEE Trans. Power Electronics 15(2), 2000; the formula is
  quoted from memory), lies within 2.5 % of that minimum for m >= 2.
* The layer orders: the distinct orders of a multiset up to reversal (counting:
  common practice), the screening band, resume, the written case files and the
  command line's one-line errors.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

import racfield
from racfield.geometry.case.search_keys import candidate_document, candidates, layer_orders
from racfield.postprocess.app.search import dominates, run_search
from racfield.postprocess.app.search_files import write_search

RHO20_CU = 1.7241e-8          # IEC 60028, ohm*m at 20 degC
MU0 = 4e-7 * math.pi


def _two_winding(layers: list[dict], window: dict, frequency: str, search: dict) -> dict:
    return {"title": "search test", "model": {"length": "20 mm", "temperature": "20 degC"},
            "sweep": {"frequencies": [frequency]}, "window": window,
            "winding": [{"name": "primary", "current": "1 A"},
                        {"name": "secondary", "current": "1 A", "phase": 180}],
            "layer": layers, "search": search}


# ---------------------------------------------------------------------------
# Layer orders


def test_layer_orders_are_the_distinct_orders_up_to_reversal():
    """P P S S: 4!/(2! 2!) = 6 orders; PPSS~SSPP and PSPS~SPSP are mirror pairs,
    PSSP and SPPS their own mirrors: 4 remain (counting, common practice)."""
    p = {"winding": "primary", "conductor": {"shape": "foil", "thickness": "0.1 mm", "height": "4 mm"}, "repeat": 2}
    s = {"winding": "secondary", "conductor": {"shape": "foil", "thickness": "0.1 mm", "height": "4 mm"}, "repeat": 2}
    orders = layer_orders([p, s])
    assert sorted("".join("PS"[i] for i in o) for o in orders) == ["PPSS", "PSPS", "PSSP", "SPPS"]
    # P P P S S S: C(6,3) = 20 orders, no palindrome (an odd count of each), 10 remain
    assert len(layer_orders([{**p, "repeat": 3}, {**s, "repeat": 3}])) == 10


# ---------------------------------------------------------------------------
# Exhaustive equality and the Pareto property

WIRES = ["AWG 23", "AWG 24", "AWG 25", "AWG 26", "AWG 27", "AWG 28"]


def _wire_document(objective: str = "loss", leakage: str | None = "0.1 uH") -> dict:
    wire = {"shape": "round", "wire": "AWG 24"}
    layers = [{"winding": "primary", "conductor": dict(wire), "turns": 3, "repeat": 2, "insulation_after": "0.05 mm"},
              {"winding": "secondary", "conductor": dict(wire), "turns": 3, "repeat": 2, "insulation_after": "0.05 mm"}]
    limits = {"current_density": "10 A/mm^2"}
    if leakage:
        limits["leakage_inductance"] = leakage
    search = {"objective": objective, "margin": 0.1,
              "choice": [{"key": "layer[1].conductor.wire", "values": WIRES},
                         {"key": "layer_order", "values": "all"}],
              "limits": limits}
    window = {"width": "3.2 mm", "height": "2.4 mm", "boundary": "ideal-core"}
    return _two_winding(layers, window, "500 kHz", search)


@pytest.fixture(scope="module")
def exhaustive():
    """Every candidate of the wire space solved one by one through racfield.solve:
    name -> (total loss W, leakage H, largest current density A/m^2)."""
    doc = _wire_document()
    case = racfield.load_case(doc)
    out = {}
    for c in candidates(case.search):
        one = candidate_document(case.source, c)
        try:
            res = racfield.solve(racfield.load_case(one))
        except racfield.CaseError:
            continue
        # DC current density of the 1 A winding in its thinnest conductor
        density = max(1.0 / cond["area_m2"] for cond in res.conductors)
        out[c.name] = (float(res.total_loss_w[0]), float(res.leakage_l_h[0]), density)
    return out


def _brute_force(table: dict, leakage_limit: float | None, density_limit: float):
    feasible = {n: v for n, v in table.items() if v[2] <= density_limit and (leakage_limit is None or v[1] <= leakage_limit)}
    best = min(feasible, key=lambda n: feasible[n][0])
    points = {n: (v[0], v[1]) for n, v in feasible.items()}
    front = {n for n, a in points.items() if not any(dominates(b, a) for m, b in points.items() if m != n)}
    return best, front


def test_search_best_equals_exhaustive_field_solution(exhaustive):
    case = racfield.load_case(_wire_document())
    result = run_search(case)
    best, _ = _brute_force(exhaustive, 0.1e-6, 10e6)
    assert result.ranked[0].name == best
    assert math.isclose(result.ranked[0].loss_w, exhaustive[best][0], rel_tol=1e-9)
    # the screen did its job: fewer field solutions than candidates
    assert len(result.solved) < len(result.designs) == 24
    # the thinnest wire fails the current-density limit at the screen; the best meets the leakage limit
    assert any((d.failed or "").startswith("current_density") for d in result.designs)
    assert result.ranked[0].field["leakage_h"] <= 0.1e-6


def test_search_pareto_set_equals_exhaustive(exhaustive):
    case = racfield.load_case(_wire_document("pareto", leakage=None))
    result = run_search(case)
    _, front = _brute_force(exhaustive, None, 10e6)
    assert {d.name for d in result.designs if d.pareto} == front
    # Pareto property: no reported point is dominated by another solved candidate,
    # and every other feasible solved candidate is dominated by a reported one
    solved = [d for d in result.designs if d.field is not None and d.failed is None]
    key = lambda d: (d.field["loss_w"], d.field["leakage_h"])  # noqa: E731
    for d in solved:
        dominated = any(dominates(key(o), key(d)) for o in solved if o is not d)
        assert dominated != d.pareto


# ---------------------------------------------------------------------------
# Optimum foil thickness against Dowell


def _dowell_fr(delta: float, m: int) -> float:
    """Dowell (1966): F_R of an m-layer foil portion, Delta = thickness / skin depth."""
    d = delta
    return d * ((math.sinh(2 * d) + math.sin(2 * d)) / (math.cosh(2 * d) - math.cos(2 * d))
                + 2.0 * (m * m - 1) / 3.0 * (math.sinh(d) - math.sin(d)) / (math.cosh(d) + math.cos(d)))


def _dowell_optimum(m: int) -> float:
    """Delta minimizing the loss ~ F_R / Delta at a fixed current (Rdc ~ 1/thickness)."""
    return minimize_scalar(lambda d: _dowell_fr(d, m) / d, bounds=(0.05, 5.0), method="bounded",
                           options={"xatol": 1e-10}).x


@pytest.mark.parametrize("m", [2, 3, 4])
def test_closed_form_optimum_near_dowell_minimum(m):
    closed = (15.0 / (5 * m * m - 1)) ** 0.25
    assert abs(closed / _dowell_optimum(m) - 1.0) < 0.025


def _foil_document(m: int, limits: dict | None = None, margin: float = 0.25) -> dict:
    foil = lambda t: {"shape": "foil", "thickness": t, "height": "5 mm"}  # noqa: E731
    layers = [{"winding": "primary", "conductor": foil("0.1 mm"), "repeat": m, "insulation_after": "0.02 mm"},
              {"winding": "secondary", "conductor": foil("0.1 mm"), "repeat": m, "insulation_after": "0.02 mm"}]
    window = {"width": f"{m * 0.45 + 0.3:.2f} mm", "height": "5 mm", "boundary": "ideal-core",
              "margins": {"inner": "0.1 mm", "outer": "0.1 mm", "top": "0 mm", "bottom": "0 mm"}}
    search = {"frequency": "100 kHz", "choice": [{"key": "layer[1].conductor.thickness",
                                                  "range": {"from": "0.05 mm", "to": "0.32 mm", "step": "0.01 mm"}}],
              "margin": margin, **({"limits": limits} if limits else {})}
    return _two_winding(layers, window, "100 kHz", search)


def _thickness(design) -> float:
    return float(design.name.split("=")[1].split()[0]) * 1e-3


@pytest.mark.parametrize("m", [2, 4])
def test_search_optimum_foil_thickness_matches_dowell(m):
    frequency = 100e3
    delta = math.sqrt(RHO20_CU / (math.pi * frequency * MU0))
    step = 0.01e-3
    result = run_search(racfield.load_case(_foil_document(m)))
    best = result.ranked[0]
    thickness = _thickness(best)
    optimum = _dowell_optimum(m) * delta
    assert abs(thickness - optimum) <= step
    # the hand estimate (Dowell's method) and the field agree in this 1-D window
    assert math.isclose(best.estimate_w, best.loss_w, rel_tol=2e-3)


# ---------------------------------------------------------------------------
# Strategy, resume, files, command line


def test_field_limit_on_the_best_draws_the_band_again():
    """A leakage limit that removes the candidates near the loss optimum (thicker
    foils store more field energy): with margin 0 the search keeps solving the next
    best estimates until it holds a feasible one, and its best equals the brute-force
    best of every candidate solved (exhaustive=True) under the same limit."""
    everything = run_search(racfield.load_case(_foil_document(2)), exhaustive=True)
    table = {d.name: (d.loss_w, d.field["leakage_h"], _thickness(d)) for d in everything.designs}
    optimum = _thickness(everything.ranked[0])
    below = sorted(v[1] for v in table.values() if v[2] < optimum - 2.5e-5)
    limit = below[-1] * (1 + 1e-9)
    feasible = {n: v for n, v in table.items() if v[1] <= limit}
    expected = min(feasible, key=lambda n: feasible[n][0])
    assert table[expected][2] < optimum       # the limit binds
    result = run_search(racfield.load_case(_foil_document(2, {"leakage_inductance": limit}, margin=0.0)))
    assert result.ranked[0].name == expected
    assert len(result.solved) < len(result.designs)


def test_band_holds_every_candidate_within_the_margin():
    """Every candidate whose estimate lies within (1 + margin) x the best feasible
    estimate is field-solved; none beyond the band without a reason."""
    case = racfield.load_case(_wire_document(leakage=None))
    result = run_search(case)
    estimates = [d.estimate_w for d in result.designs if d.estimate_w is not None and d.failed is None]
    best = min(estimates)
    for d in result.designs:
        if d.estimate_w is not None and d.case is not None and not (d.failed or "").startswith("current"):
            assert (d.field is not None) == (d.estimate_w <= best * 1.1 * (1 + 1e-12))


def test_resume_reads_back_solved_candidates(tmp_path):
    case = racfield.load_case(_wire_document(leakage=None))
    first = run_search(case, out=tmp_path)
    again = run_search(case, out=tmp_path)
    assert again.resumed == len(first.solved) > 0
    assert [d.name for d in again.ranked] == [d.name for d in first.ranked]


def test_best_case_files_are_ready_to_run(tmp_path):
    """best_1.toml loads as a case and solves to the loss the search reported."""
    case = racfield.load_case(_wire_document(leakage=None))
    result = run_search(case)
    written = write_search(result, tmp_path)
    assert {p.name for p in written} >= {"search.csv", "search.json", "search_pareto.png", "search_report.md",
                                         "best_1.toml", "best_2.toml", "best_3.toml"}
    doc = json.loads((tmp_path / "search.json").read_text())
    assert doc["counts"]["candidates"] == 24 and doc["best"] == result.ranked[0].name
    assert len(doc["candidates"]) == 24
    best = racfield.solve(racfield.load_case(tmp_path / "best_1.toml"))
    assert math.isclose(float(best.total_loss_w[0]), result.ranked[0].loss_w, rel_tol=1e-9)
    assert "model estimates" in (tmp_path / "search_report.md").read_text()


def _cli(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "racfield", *args], capture_output=True, text=True, cwd=cwd)


@pytest.mark.parametrize("change, key", [
    (lambda s: s["choice"][1].update(values=["PPSS"]), "values"),
    (lambda s: s.update(objective="cheapest"), "search.objective"),
    (lambda s: s["choice"].append({"key": "layer[1].conductor.wire", "wires": {"from": "AWG 20", "to": "0.3 mm"}}),
     "wires.to"),
    (lambda s: s["limits"].update(current_density="6 A"), "search.limits.current_density"),
    (lambda s: s.update(margins=0.2), "search.margins"),
])
def test_bad_search_tables_give_one_line(tmp_path, change, key):
    from racfield.postprocess.app.search_files import toml_text

    doc = _wire_document()
    change(doc["search"])
    path = tmp_path / "bad.toml"
    path.write_text(toml_text(doc))
    done = _cli("search", str(path), "--workers", "1")
    assert done.returncode == 2
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and "bad.toml" in lines[0] and key in lines[0] and "Traceback" not in done.stderr


def test_run_refuses_a_search_case(tmp_path):
    from racfield.postprocess.app.search_files import toml_text

    path = tmp_path / "s.toml"
    path.write_text(toml_text(_wire_document()))
    done = _cli("run", str(path))
    assert done.returncode == 2 and "racfield search" in done.stderr


def test_demo_search_case(tmp_path):
    """cases/search_forward_24v_12v.toml runs end to end through the command line."""
    case = Path(__file__).resolve().parents[1] / "cases" / "search_forward_24v_12v.toml"
    done = _cli("search", str(case), "--out", str(tmp_path), "--workers", "2", "--quiet")
    assert done.returncode == 0, done.stderr
    doc = json.loads((tmp_path / "search.json").read_text())
    assert doc["counts"]["field_solved"] < doc["counts"]["candidates"]
    assert (tmp_path / "best_1.toml").exists()
    ranked = sorted((c for c in doc["candidates"] if c["rank"]), key=lambda c: c["rank"])
    assert np.all(np.diff([c["field_loss_w"] for c in ranked]) >= 0)
