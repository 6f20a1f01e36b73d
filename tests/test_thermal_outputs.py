"""The thermal solution's outputs: temperature.png (postprocess/writers/
temperature_plot.py) and the Temperature section of report.html
(postprocess/html_thermal.py), from one coupled solve of a small two-winding
ideal-core window.

Independent checks: the weak maximum principle for steady conduction with a
non-negative heat source (L. C. Evans, "Partial Differential Equations",
2nd ed., 2010, section 6.4.1): the lowest temperature lies on the boundary,
here the core walls held at core_temperature, so the map's colour range runs
from core_temperature up to the hot spot; the PNG file format (ISO/IEC
15948:2004: the 8-byte signature, then the IHDR chunk with width and height).
"""

from __future__ import annotations

import base64
import dataclasses
import re
import struct

import numpy as np
import pytest

from racfield.postprocess.app.api import load_case, solve_report
from racfield.postprocess.html_report import build_html
from racfield.postprocess.html_report import esc
from racfield.postprocess.thermal import THERMAL_CAUTION
from racfield.postprocess.writers import WRITERS, write_all
from racfield.postprocess.writers.temperature_plot import temperature_figure

CORE_C = 80.0
CASE = f"""
title = "thermal outputs"
[model]
length = "40 mm"
temperature = "100 degC"
[sweep]
frequencies = ["200 kHz"]
[window]
width = "6 mm"
height = "10 mm"
boundary = "ideal-core"
stacking = "across-width"
[[winding]]
name = "primary"
current = "2 A"
[[winding]]
name = "secondary"
current = "4 A"
phase = 180
[[layer]]
winding = "primary"
conductor = {{ shape = "round", diameter = "0.5 mm", outer_diameter = "0.56 mm" }}
turns = 8
repeat = 2
[[layer]]
winding = "secondary"
conductor = {{ shape = "round", diameter = "0.8 mm", outer_diameter = "0.86 mm" }}
turns = 8
[thermal]
core_temperature = "{CORE_C:g} degC"
fill = "varnish"
"""


WRITTEN = ["results.json", "conductor_loss.png", "temperature.png"]


@pytest.fixture(scope="module")
def solved(tmp_path_factory):
    """The report of the one solve, its results folder (results.json,
    temperature.png and the loss map the section follows) and report.html's text."""
    path = tmp_path_factory.mktemp("thermal_outputs") / "case.toml"
    path.write_text(CASE, encoding="utf-8")
    report = solve_report(load_case(path))
    folder = path.parent / "results"
    write_all(report, folder, WRITTEN)
    return report, folder, build_html(folder)


def _png_size(data: bytes) -> tuple[int, int]:
    """Width and height (pixels) of a PNG from its IHDR chunk (ISO/IEC 15948:2004, 11.2.2)."""
    assert data[:8] == b"\x89PNG\r\n\x1a\n"   # the PNG signature (ISO/IEC 15948:2004, 5.2)
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def test_temperature_png_is_written(solved):
    report, folder, _ = solved
    assert report.sweep.thermal is not None
    assert "temperature.png" in WRITERS
    width, height = _png_size((folder / "temperature.png").read_bytes())
    # a readable figure at 120 dpi, 6.5 in wide, a window taller than wide (common practice)
    assert 500 <= width <= 1200 and 500 <= height <= 1400, (width, height)


def test_no_temperature_png_without_thermal(solved, tmp_path):
    report, _, _ = solved
    flat = dataclasses.replace(report, sweep=dataclasses.replace(report.sweep, thermal=None))
    assert WRITERS["temperature.png"](flat, tmp_path) == []
    assert temperature_figure(flat) is None
    write_all(flat, tmp_path, WRITTEN)
    assert not (tmp_path / "temperature.png").exists()
    page = build_html(tmp_path)
    assert 'id="temperature"' not in page and "Temperature</a>" not in page


def test_colour_range_spans_core_temperature_to_hot_spot(solved):
    report, folder, _ = solved
    thermal = report.sweep.thermal
    figure = temperature_figure(report)
    ax = figure.axes[0]
    low, high = ax.collections[0].get_clim()
    rise = thermal.hot_spot_c - CORE_C
    assert rise > 0.1   # a positive loss heats the window above its walls (common practice)
    # maximum principle (Evans 2010, 6.4.1): the minimum is the walls' temperature, nothing colder inside
    assert low == pytest.approx(CORE_C, abs=1e-3 * rise)
    assert np.min(thermal.map_values) >= CORE_C - 1e-3 * rise
    # the top of the scale is the hot spot: every corner value and every turn's mean below it
    assert high == pytest.approx(thermal.hot_spot_c, rel=1e-12)
    assert np.max(thermal.map_values) <= thermal.hot_spot_c + 1e-9
    assert np.max(thermal.conductor_temperature_c) <= thermal.hot_spot_c + 1e-9
    bar = figure.axes[1]
    assert bar.get_ylabel() == "temperature (degC)"
    assert ax.get_xlabel().endswith("(mm)") and ax.get_ylabel().endswith("(mm)")
    title = ax.get_title()
    assert "thermal outputs" in title and "model estimate" in title and thermal.operating_point in title
    annotations = [t.get_text() for t in ax.texts]
    assert f"hot spot {thermal.hot_spot_c:.1f} degC" in annotations
    isotherms = [c for c in ax.collections if type(c).__name__ == "TriContourSet"]
    assert isotherms and all(low < level < high for level in isotherms[0].levels)


def test_runaway_title_names_the_message(solved):
    report, _, _ = solved
    message = "no steady state below 400 degC: the loss grows faster with temperature"
    runaway = dataclasses.replace(report.sweep.thermal, steady_state=False, converged=False, message=message)
    figure = temperature_figure(dataclasses.replace(report, sweep=dataclasses.replace(report.sweep, thermal=runaway)))
    title = " ".join(figure.axes[0].get_title().split())
    assert "last iterate" in title and message in title


def test_html_temperature_section(solved):
    report, folder, page = solved
    document = report.thermal
    assert '<li><a href="#temperature">Temperature</a></li>' in page
    start = page.index('<h2 id="temperature">')
    # after the loss map, before the validation status
    assert page.index('id="conductor-loss"') < start < page.index('id="validation"')
    section = page[start:page.index('id="validation"')]
    hot = re.search(r"Hot spot ([0-9.]+) \u00b0C in (\w+) turn (\d+)", section)
    assert hot, section[:400]
    assert float(hot.group(1)) == pytest.approx(document["hot_spot_c"], abs=0.05)
    assert (hot.group(2), int(hot.group(3))) == (document["hot_spot_conductor"]["winding"],
                                                 document["hot_spot_conductor"]["turn"])
    for name, w in document["windings"].items():
        row = re.search(rf"<tr><td>{name}</td>(.*?)</tr>", section)
        assert row, name
        cells = re.findall(r'<td class="num">([^<]*)</td>', row.group(1))
        assert cells[0] == f"{w['mean_temperature_c']:.1f} \u00b0C"
        assert cells[1] == f"{w['hottest_turn_c']:.1f} \u00b0C"
        assert cells[4] == f"{100 * (w['loss_w'] / w['flat_loss_w'] - 1):+.1f} %"
    assert f"{document['iterations']} field solutions, converged" in section
    png = (folder / "temperature.png").read_bytes()
    assert "data:image/png;base64," + base64.b64encode(png).decode("ascii") in section
    assert esc(THERMAL_CAUTION) in section
