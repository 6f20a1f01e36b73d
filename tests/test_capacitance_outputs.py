"""The capacitance outputs: potential.png (postprocess/writers/potential_plot.py),
the Capacitance section of report.html (postprocess/html_capacitance.py) and
the variants' comparison (postprocess/comparison.py: comparison.csv/json,
study.csv/json, tradeoff.png), from small two-winding ideal-core windows of
four enamelled round turns each, one frequency.

Independent checks: the maximum principle for Laplace's equation (L. C.
Evans, "Partial Differential Equations", 2nd ed., 2010, section 2.2.3 and
6.4.1: a solution of div(eps grad u) = 0 takes its extremes on the boundary,
here the electrodes, and a Neumann boundary holds none of them); the energy
method's linear voltage along a winding (A. Massarini, M. K. Kazimierczuk,
"Self-capacitance of inductors", IEEE Trans. Power Electronics, 1997: turn j
of N at u_start + (j - 1/2)/N (u_end - u_start)); the parallel-plate law
(C = eps A / d: a thicker tape between two windings lowers the capacitance
between them) and the leakage inductance of two windings, which grows with
the space between them (e.g. E. C. Snelling, "Soft Ferrites", 1988,
ch. 11: L = mu0 N^2 l (d + (a + b)/3) / h); the PNG format (ISO/IEC
15948:2004: the 8-byte signature, then the IHDR chunk).
"""

from __future__ import annotations

import csv
import dataclasses
import html
import json
import re
import struct

import numpy as np
import pytest

from racfield.postprocess import results_file
from racfield.postprocess.app.api import load_case, solve_report, variant_cases
from racfield.postprocess.capacitance import TERMINALS
from racfield.postprocess.comparison import write_comparison, write_study_table
from racfield.postprocess.html_report import build_html
from racfield.postprocess.writers import WRITERS, write_all
from racfield.postprocess.writers.potential_plot import potential_figure

TURNS = 4
ROUND = '{ shape = "round", diameter = "0.5 mm", outer_diameter = "0.56 mm" }'
HEAD = """
title = "{title}"
[model]
length = "30 mm"
[sweep]
frequencies = ["100 kHz"]
[window]
width = "3 mm"
height = "4 mm"
boundary = "ideal-core"
stacking = "across-width"
[[winding]]
name = "primary"
current = "1 A"
[[winding]]
name = "secondary"
current = "1 A"
phase = 180
"""


def _layers(prefix: str, tape: str) -> str:
    return (f'[[{prefix}layer]]\nwinding = "primary"\nconductor = {ROUND}\nturns = {TURNS}\n'
            + (f'insulation_after = "{tape}"\n' if tape else "")
            + f'[[{prefix}layer]]\nwinding = "secondary"\nconductor = {ROUND}\nturns = {TURNS}\n')


DIELECTRIC = '[dielectric]\nfill = "varnish"\n'
CASE = HEAD.format(title="capacitance outputs") + _layers("", "0.1 mm") + DIELECTRIC
VARIANTS = (HEAD.format(title="capacitance variants") + '[[variant]]\nname = "close"\n' + _layers("variant.", "")
            + '[[variant]]\nname = "spaced"\n' + _layers("variant.", "0.3 mm") + DIELECTRIC)
WRITTEN = ["results.json", "geometry.png", "potential.png"]


@pytest.fixture(scope="module")
def solved(tmp_path_factory):
    """The one solve of CASE: its report, results folder and report.html's text."""
    path = tmp_path_factory.mktemp("capacitance_outputs") / "case.toml"
    path.write_text(CASE, encoding="utf-8")
    report = solve_report(load_case(path))
    folder = path.parent / "results"
    write_all(report, folder, WRITTEN)
    return report, folder, build_html(folder)


@pytest.fixture(scope="module")
def variants(tmp_path_factory):
    """VARIANTS solved variant by variant, each results.json written and read
    back, then compared: (results folder, [(variant, results document)], case)."""
    root = tmp_path_factory.mktemp("capacitance_variants")
    path = root / "variants.toml"
    path.write_text(VARIANTS, encoding="utf-8")
    case = load_case(path)
    out = root / "results"
    documents = []
    for arrangement in variant_cases(case):
        folder = out / arrangement.variant
        folder.mkdir(parents=True)
        results_file.write(solve_report(arrangement), folder)
        documents.append((arrangement.variant, results_file.read(folder / "results.json")))
    write_comparison(documents, out, None)
    write_study_table(case, documents, {}, out)
    return out, documents, case


def _png_size(data: bytes) -> tuple[int, int]:
    """Width and height (pixels) of a PNG from its IHDR chunk (ISO/IEC 15948:2004, 11.2.2)."""
    assert data[:8] == b"\x89PNG\r\n\x1a\n"   # the PNG signature (ISO/IEC 15948:2004, 5.2)
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def _turn_voltages(report) -> np.ndarray:
    """Every conductor's potential (V) for the worst case's terminal voltages:
    linear along each winding in series order (Massarini & Kazimierczuk 1997)."""
    result = report.sweep.capacitance
    u = dict(zip(result.terminals, result.worst_voltages))
    v = np.zeros(len(report.sweep.conductors))
    for c in report.sweep.conductors:   # start = "inner": series order is case order
        s = (c.turn - 0.5) / TURNS
        v[c.index] = u[f"{c.winding}.start"] + s * (u[f"{c.winding}.end"] - u[f"{c.winding}.start"])
    return v


def test_potential_png_is_written(solved):
    report, folder, _ = solved
    assert report.sweep.capacitance is not None and "potential.png" in WRITERS
    width, height = _png_size((folder / "potential.png").read_bytes())
    # a readable figure at 120 dpi, 6.5 in wide (common practice)
    assert 500 <= width <= 1200 and 400 <= height <= 1400, (width, height)


def test_no_potential_png_without_dielectric(solved, tmp_path):
    report, _, _ = solved
    bare = dataclasses.replace(report, case=dataclasses.replace(report.case, dielectric=None),
                               sweep=dataclasses.replace(report.sweep, capacitance=None))
    assert potential_figure(bare) is None
    assert WRITERS["potential.png"](bare, tmp_path) == []
    write_all(bare, tmp_path, WRITTEN)
    assert (tmp_path / "geometry.png").exists() and not (tmp_path / "potential.png").exists()
    assert "capacitance" not in results_file.read(tmp_path / "results.json")
    page = build_html(tmp_path)
    assert 'id="capacitance"' not in page and "Capacitance</a>" not in page


def test_potential_map_obeys_the_maximum_principle(solved):
    report, _, _ = solved
    result = report.sweep.capacitance
    electrodes = np.append(_turn_voltages(report), 0.0)   # the core grounded: 0 V
    low, high = electrodes.min(), electrodes.max()
    span = high - low
    assert span > 0.1   # the worst case drives the windings apart (unit-norm voltages)
    figure = potential_figure(report)
    mapped = np.asarray(figure.axes[0].collections[0].get_array(), dtype=float)
    assert mapped.size == result.potential.size
    # maximum principle (Evans 2010, 2.2.3): nothing between the electrodes beyond their extremes;
    # second-order elements keep it to rounding here (a discrete principle is not guaranteed: 1e-3 of the span)
    assert mapped.min() >= low - 1e-3 * span and mapped.max() <= high + 1e-3 * span
    assert figure.axes[0].collections[0].get_clim() == pytest.approx((low, high), abs=1e-12)
    # the electrodes themselves carry their voltages (the Dirichlet data of the problem)
    for c in report.sweep.conductors:
        nodes = np.unique(result.triangles[:, result.region == c.index])
        assert np.allclose(result.potential[nodes], electrodes[c.index], atol=1e-9 * span), c.index
    walls = (np.abs(result.nodes[0]) < 1e-12) | (np.abs(result.nodes[1]) < 1e-12)
    assert walls.any() and np.allclose(result.potential[walls], 0.0, atol=1e-9 * span)


def _section(page: str) -> str:
    start = page.index('id="capacitance"')
    end = page.find("<h2", start)
    return page[start:end if end > 0 else None]


_PREFIX = {"": 1.0, "m": 1e-3, "\u00b5": 1e-6, "n": 1e-9, "p": 1e-12}


def _farad(text: str) -> float:
    number, unit = text.split()
    assert unit.endswith("F"), text
    return float(number) * _PREFIX[unit[:-1]]


def _rows(section: str) -> list[list[str]]:
    return [[html.unescape(c) for c in re.findall(r"<td[^>]*>(.*?)</td>", r)]
            for r in re.findall(r"<tr>(.*?)</tr>", section)]


def test_html_section_numbers_equal_results_json(solved):
    _, folder, page = solved
    cap = results_file.read(folder / "results.json")["capacitance"]
    section = _section(page)
    rows = _rows(section)
    shown = {r[0]: _farad(r[1]) for r in rows if len(r) == 2}
    # the page shows results.json's numbers to its four digits (common practice)
    for name, value in cap["winding"]["self_f"].items():
        assert shown[name] == pytest.approx(value, rel=5e-4), name
    for pair, value in cap["winding"]["between_f"].items():
        assert shown[pair.replace("-", " \u2013 ", 1)] == pytest.approx(value, rel=5e-4), pair
    branches = {(r[0], r[1]): _farad(r[2]) for r in rows if len(r) == 3}
    for a, b, value in cap["network"]["between"]:
        assert branches[(a, b)] == pytest.approx(value, rel=5e-4, abs=1e-16), (a, b)
    for a, value in cap["network"]["to_core"].items():
        assert branches[(a, "core")] == pytest.approx(value, rel=5e-4), a
    # a network's nodal matrix: each terminal's diagonal entry is the sum of its branches
    # (Kirchhoff's current law; common practice)
    terminals = cap["terminals"]
    for i, t in enumerate(terminals):
        total = branches[(t, "core")] + sum(v for (a, b), v in branches.items() if t in (a, b) and b != "core")
        assert total == pytest.approx(cap["terminal_f"][i][i], rel=2e-3), t
    assert "grounded" in section and "data:image/png;base64," in section
    assert html.escape(TERMINALS, quote=True) in section


def _read_csv(path):
    with path.open(newline="") as handle:
        return list(csv.DictReader(handle))


def test_comparison_holds_each_variants_capacitance(variants):
    out, documents, _ = variants
    docs = dict(documents)
    rows = _read_csv(out / "comparison.csv")
    assert {r["variant"] for r in rows} == set(docs) == {"close", "spaced"}
    for r in rows:
        cap = docs[r["variant"]]["capacitance"]["winding"]
        # the table repeats each variant's own results.json (to the CSV's 8 digits)
        assert float(r["between_capacitance_f"]) == pytest.approx(cap["between_f"]["primary-secondary"], rel=1e-7)
        assert float(r["self_capacitance_f"]) == pytest.approx(cap["self_f"][r["winding"]], rel=1e-7)
    comparison = json.loads((out / "comparison.json").read_text())
    for name, doc in docs.items():
        entry = comparison["variants"][name]
        assert entry["between_capacitance_f"] == doc["capacitance"]["winding"]["between_f"]
        assert entry["self_capacitance_f"] == doc["capacitance"]["winding"]["self_f"]
    study = {r["variant"]: r for r in _read_csv(out / "study.csv")}
    for name, doc in docs.items():
        assert float(study[name]["primary_self_capacitance_f"]) == pytest.approx(
            doc["capacitance"]["winding"]["self_f"]["primary"], rel=1e-7)
    close, spaced = docs["close"], docs["spaced"]
    # a thicker tape between the windings: less capacitance between them (parallel plates, C = eps A / d)
    # and more leakage inductance (Snelling 1988, ch. 11: L grows with the space d between the windings)
    assert spaced["capacitance"]["winding"]["between_f"]["primary-secondary"] < \
        0.8 * close["capacitance"]["winding"]["between_f"]["primary-secondary"]
    assert spaced["leakage"]["l_h"][0] > 1.2 * close["leakage"]["l_h"][0]


def test_tradeoff_png_for_variants_with_capacitance(variants, tmp_path):
    out, documents, case = variants
    width, height = _png_size((out / "tradeoff.png").read_bytes())
    assert width > 400 and height > 300, (width, height)
    # without [dielectric]: no tradeoff.png, the capacitance columns empty and null
    bare = [(name, {k: v for k, v in doc.items() if k != "capacitance"}) for name, doc in documents]
    written = write_comparison(bare, tmp_path, None) + write_study_table(case, bare, {}, tmp_path)
    assert not (tmp_path / "tradeoff.png").exists() and tmp_path / "tradeoff.png" not in written
    rows = _read_csv(tmp_path / "comparison.csv")
    assert all(r["between_capacitance_f"] == "" and r["self_capacitance_f"] == "" for r in rows)
    assert all(r["between_capacitance_f"] == "" for r in _read_csv(tmp_path / "study.csv"))
    entry = json.loads((tmp_path / "comparison.json").read_text())["variants"]["close"]
    assert entry["between_capacitance_f"] is None and entry["self_capacitance_f"] is None
