"""Bad case files: one line on stderr, exit status 2, no traceback.

Each entry of ``BAD_CASES`` is a small case file (TOML text) and the key path
the message must name.  The rule for bad input: ``racfield check CASE`` and
``racfield run CASE`` print exactly one line on stderr,
``racfield: error: FILE: KEY: what is wrong; how to fix it``, exit with
status 2 and print no traceback.

Every entry is run in-process through ``postprocess.cli.main`` (the same code
the command runs); a handful are also run as a real subprocess, as is
``racfield run`` on bad cases (which must not create a results folder).
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from racfield.cli import main

EXIT_BAD_INPUT = 2

#: a valid case: 0 Hz (DC) is allowed; 10 turns x 1 A against 5 x 2 A at 180 deg
BASE = """\
title = "error-message test case"

[model]
symmetry = "planar"
length = "40 mm"
temperature = "20 degC"

[sweep]
frequencies = [0, "100 kHz", "1 MHz"]

[window]
width = "4 mm"
height = "6 mm"
boundary = "ideal-core"
margins = { inner = "0.2 mm", outer = "0.2 mm", top = "0.2 mm", bottom = "0.2 mm" }

[[winding]]
name = "primary"
material = "copper"
current = "1 A"

[[winding]]
name = "secondary"
current = "2 A"
phase = "180 deg"

[[layer]]
winding = "primary"
conductor = { shape = "round", diameter = "0.4 mm", outer_diameter = "0.45 mm" }
turns = 10
insulation_after = "0.1 mm"

[[layer]]
winding = "secondary"
conductor = { shape = "foil", thickness = "0.1 mm", height = "5 mm" }
turns = 1
repeat = 5
"""

#: the same in an open window (ampere-turns need not balance)
OPEN = BASE.replace('boundary = "ideal-core"', 'boundary = "open"')

#: a valid case with explicit conductors in an open window
EXPLICIT = """\
[sweep]
frequencies = ["100 kHz"]

[window]
width = "4 mm"
height = "4 mm"
boundary = "open"

[[winding]]
name = "a"

[[conductor]]
winding = "a"
shape = "round"
diameter = "1 mm"
at = ["1 mm", "1 mm"]

[[conductor]]
winding = "a"
shape = "rectangular"
width = "1 mm"
height = "0.5 mm"
at = ["2 mm", "1 mm"]
"""


def edit(text: str, *pairs: tuple[str, str]) -> str:
    """``text`` with each ``old`` replaced by ``new``; ``old`` must occur once."""
    for old, new in pairs:
        assert text.count(old) == 1, f"{old!r} occurs {text.count(old)} times"
        text = text.replace(old, new)
    return text


def drop_section(text: str, header: str) -> str:
    """``text`` without the table that starts at the line ``header``."""
    lines = text.splitlines(keepends=True)
    start = lines.index(header + "\n")
    end = next((i for i in range(start + 1, len(lines)) if lines[i].startswith("[")), len(lines))
    return "".join(lines[:start] + lines[end:])


# (id, case text, key path the message must name, further text it must contain)
BAD_CASES = [
    ("toml-syntax", "[window]\nwidth = = 3\n", "", ["TOML syntax error", "line 2"]),
    ("unknown-key-misspelt-required", edit(BASE, ('width = "4 mm"', 'widht = "4 mm"')),
     "window.widht", ['did you mean "width"?']),
    ("unknown-key-misspelt-optional", edit(BASE, ('boundary = "ideal-core"', 'boundray = "ideal-core"')),
     "window.boundray", ['did you mean "boundary"?']),
    ("unknown-key-extra", edit(BASE, ('width = "4 mm"', 'width = "4 mm"\nwidht = "4 mm"')),
     "window.widht", ['did you mean "width"?']),
    ("unknown-key-top-level", "colour = \"red\"\n" + BASE, "colour", ["unknown key"]),
    ("unknown-key-inline-table", edit(BASE, ('diameter = "0.4 mm"', 'diametre = "0.4 mm"')),
     "layer[1].conductor.diametre", ['did you mean "diameter"?']),
    ("wrong-unit", edit(BASE, ('width = "4 mm"', 'width = "3.2 kg"')), "window.width", ["kg", '"0.45 mm"']),
    ("frequency-wrong-unit", edit(BASE, ('"100 kHz"', '"100 mm"')), "sweep.frequencies[2]", ['"200 kHz"']),
    ("unreadable-quantity", edit(BASE, ('height = "6 mm"', 'height = "abc mm"')), "window.height",
     ["abc mm"]),
    ("quantity-not-finite", edit(BASE, ('height = "6 mm"', 'height = "1e999 mm"')), "window.height",
     ["finite"]),
    ("quantity-boolean", edit(BASE, ('height = "6 mm"', "height = true")), "window.height", []),
    ("negative-size", edit(BASE, ('diameter = "0.4 mm"', 'diameter = "-0.4 mm"')),
     "layer[1].conductor.diameter", ["greater than zero"]),
    ("zero-size", edit(BASE, ('thickness = "0.1 mm"', 'thickness = "0 mm"')),
     "layer[2].conductor.thickness", ["greater than zero"]),
    ("negative-window", edit(BASE, ('height = "6 mm"', 'height = "-6 mm"')), "window.height",
     ["greater than zero"]),
    ("negative-insulation", edit(BASE, ('insulation_after = "0.1 mm"', 'insulation_after = "-0.1 mm"')),
     "layer[1].insulation_after", ["negative"]),
    ("outer-diameter-below-diameter", edit(BASE, ('outer_diameter = "0.45 mm"', 'outer_diameter = "0.3 mm"')),
     "layer[1].conductor.outer_diameter", ["smaller than diameter"]),
    ("turns-do-not-fit", edit(OPEN, ("turns = 10", "turns = 20")), "layer[1].turns",
     ["9 mm", "5.6 mm"]),
    ("layers-do-not-fit", edit(OPEN, ("repeat = 5", "repeat = 50")), "layer[2]", ["3.6 mm", "width"]),
    ("layers-do-not-fit-along-height",
     edit(OPEN, ('boundary = "open"', 'boundary = "open"\nstacking = "along-height"'), ("turns = 10", "turns = 6"),
          ('height = "5 mm"', 'height = "3 mm"'), ("repeat = 5", "repeat = 60")),
     "layer[2]", ["height"]),
    ("explicit-overlap", edit(EXPLICIT, ('at = ["2 mm", "1 mm"]', 'at = ["1.9 mm", "1 mm"]')),
     "conductor[2]", ["overlaps", "conductor[1]"]),
    ("explicit-overlaps-layer",
     edit(BASE, ('[[layer]]\nwinding = "secondary"',
                 '[[conductor]]\nwinding = "secondary"\nshape = "round"\ndiameter = "0.4 mm"\n'
                 'at = ["0.45 mm", "3 mm"]\n\n[[layer]]\nwinding = "secondary"'),
          ("repeat = 5", "repeat = 4")),
     "conductor[1]", ["overlaps", "layer[1]"]),
    ("explicit-outside-window", edit(EXPLICIT, ('at = ["2 mm", "1 mm"]', 'at = ["3.8 mm", "1 mm"]')),
     "conductor[2]", ["outside"]),
    ("explicit-negative-coordinate", edit(EXPLICIT, ('at = ["1 mm", "1 mm"]', 'at = ["1 mm", "-1 mm"]')),
     "conductor[1]", ["outside"]),
    ("explicit-misspelt-key", edit(EXPLICIT, ('diameter = "1 mm"', 'diamter = "1 mm"')),
     "conductor[1].diamter", ['did you mean "diameter"?']),
    ("winding-without-turns", edit(BASE, ("[[layer]]\nwinding = \"primary\"",
                                          "[[winding]]\nname = \"tertiary\"\ncurrent = 0\n\n"
                                          "[[layer]]\nwinding = \"primary\"")),
     "winding[3]", ["tertiary", "no turns"]),
    ("no-windings", '[sweep]\nfrequencies = ["100 kHz"]\n\n[window]\nwidth = "4 mm"\nheight = "4 mm"\n',
     "winding", ["[[winding]]"]),
    ("layer-unknown-winding", edit(BASE, ('winding = "primary"', 'winding = "primery"')),
     "layer[1].winding", ['did you mean "primary"?']),
    ("duplicate-winding", edit(BASE, ('name = "secondary"', 'name = "primary"')), "winding[2].name",
     ["twice"]),
    ("winding-as-single-table", edit(EXPLICIT, ("[[winding]]", "[winding]")), "winding",
     ["[[winding]]"]),
    ("negative-frequency", edit(BASE, ('[0, "100 kHz", "1 MHz"]', '["-100 kHz", "1 MHz"]')),
     "sweep.frequencies[1]", ["negative", "0 Hz"]),
    ("negative-start", edit(BASE, ('frequencies = [0, "100 kHz", "1 MHz"]',
                                   'start = "-10 kHz"\nstop = "1 MHz"')), "sweep.start", []),
    ("frequencies-not-increasing", edit(BASE, ('[0, "100 kHz", "1 MHz"]', '["200 kHz", "100 kHz"]')),
     "sweep.frequencies[2]", ["increas"]),
    ("frequencies-repeated", edit(BASE, ('[0, "100 kHz", "1 MHz"]', '["100 kHz", "100 kHz"]')),
     "sweep.frequencies[2]", ["increas"]),
    ("frequencies-empty", edit(BASE, ('[0, "100 kHz", "1 MHz"]', "[]")), "sweep.frequencies", []),
    ("stop-below-start", edit(BASE, ('frequencies = [0, "100 kHz", "1 MHz"]',
                                     'start = "1 MHz"\nstop = "10 kHz"')), "sweep.stop", []),
    ("ampere-turns-unbalanced", edit(BASE, ('current = "2 A"', 'current = "3 A"')), "winding",
     ["ampere-turns", 'boundary = "core"', "[[gap]]"]),
    ("missing-sweep", drop_section(BASE, "[sweep]"), "sweep", ["[sweep]"]),
    ("missing-window", drop_section(BASE, "[window]"), "window", ["[window]"]),
    ("missing-required-quantity", edit(BASE, ('height = "6 mm"\n', "")), "window.height", ["height ="]),
    ("unknown-material", edit(BASE, ('material = "copper"', 'material = "coper"')),
     "winding[1].material", ['did you mean "copper"?']),
    ("unknown-conductor-shape", edit(BASE, ('shape = "round"', 'shape = "square"')),
     "layer[1].conductor.shape", ['"round"', '"rectangular"', '"foil"']),
    ("margins-larger-than-window", edit(BASE, ('inner = "0.2 mm", outer = "0.2 mm"',
                                               'inner = "2 mm", outer = "2 mm"')),
     "window.margins", ["width"]),
    ("margins-unknown-side", edit(BASE, ('top = "0.2 mm"', 'tpo = "0.2 mm"')),
     "window.margins.tpo", ['did you mean "top"?']),
    ("quantity-string-without-unit", edit(BASE, ('width = "4 mm"', 'width = "4"')),
     "window.width", ["no unit", "mm"]),
    ("too-many-points", edit(BASE, ('frequencies = [0, "100 kHz", "1 MHz"]',
                                    'start = "10 kHz"\nstop = "1 MHz"\npoints = 100000')),
     "sweep.points", ["1000"]),
    ("empty-sweep", edit(BASE, ('frequencies = [0, "100 kHz", "1 MHz"]', '')),
     "sweep.frequencies", ["start, stop and points"]),
    ("turns-zero", edit(BASE, ("turns = 10", "turns = 0")), "layer[1].turns", ["at least 1"]),
    ("turns-fraction", edit(BASE, ("turns = 10", "turns = 2.5")), "layer[1].turns", ["whole number"]),
    ("turns-text", edit(BASE, ("turns = 10", 'turns = "10"')), "layer[1].turns", ["whole number"]),
    ("repeat-zero", edit(BASE, ("repeat = 5", "repeat = 0")), "layer[2].repeat", ["at least 1"]),
    ("axisymmetric-without-inner-radius", edit(BASE, ('symmetry = "planar"', 'symmetry = "axisymmetric"')),
     "window.inner_radius", ["missing"]),
    ("inner-radius-in-planar", edit(BASE, ('width = "4 mm"', 'width = "4 mm"\ninner_radius = "3 mm"')),
     "window.inner_radius", ["axisymmetric"]),
    ("symmetry-unknown", edit(BASE, ('symmetry = "planar"', 'symmetry = "planer"')),
     "model.symmetry", ['did you mean "planar"?']),
    ("temperature-out-of-range", edit(BASE, ('temperature = "20 degC"', 'temperature = "900 degC"')),
     "model.temperature", ["degC"]),
    ("key-with-line-break", edit(BASE, ('[model]\n', '[model]\n"sym\\rmetry" = "planar"\n')),
     "model.sym", ["unknown key"]),
    ("mesh-frequency-zero", BASE + '\n[mesh]\nfrequency = "0 kHz"\n', "mesh.frequency", ["greater than zero"]),
    ("mesh-frequency-wrong-unit", BASE + '\n[mesh]\nfrequency = "1 mm"\n', "mesh.frequency", ['"200 kHz"']),
    ("mesh-frequency-without-unit", BASE + '\n[mesh]\nfrequency = "500"\n', "mesh.frequency", ["no unit"]),
    ("value-with-line-break", edit(BASE, ('material = "copper"', 'material = "cop\\u2028per"')),
     "winding[1].material", ["unknown value"]),
]

#: entries also run through a real ``racfield check`` subprocess
SUBPROCESS_IDS = ("toml-syntax", "unknown-key-misspelt-required", "wrong-unit", "turns-do-not-fit",
                  "explicit-overlap", "axisymmetric-without-inner-radius")


def racfield_command() -> list[str]:
    """The console script of this interpreter's environment, else ``python -m``."""
    script = shutil.which("racfield", path=str(Path(sys.executable).parent))
    return [script] if script else [sys.executable, "-m", "racfield"]


def assert_one_line_error(err: str, file: str, key: str, extras: list[str]) -> None:
    assert "Traceback" not in err, err
    lines = err.splitlines()
    assert len(lines) == 1 and lines[0].strip(), f"expected one line on stderr, got {err!r}"
    assert err.endswith("\n") and err.count("\n") == 1, repr(err)
    line = lines[0]
    prefix = f"racfield: error: {file}: "
    assert line.startswith(prefix), line
    if key:
        assert line.startswith(prefix + key), f"expected key path {key!r} right after the file name: {line}"
    problem, sep, fix = line[len(prefix):].rpartition("; ")
    assert sep and problem.strip() and fix.strip(), f"expected 'problem; fix': {line}"
    for text in extras:
        assert text in line, f"expected {text!r} in: {line}"


def write_case(tmp_path: Path, text: str, name: str = "case.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def check_in_process(path: Path, capsys) -> tuple[int, str, str]:
    capsys.readouterr()
    status = main(["check", str(path)])
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def test_base_cases_are_valid(tmp_path, capsys):
    for name, text in (("base.toml", BASE), ("open.toml", OPEN), ("explicit.toml", EXPLICIT)):
        status, out, err = check_in_process(write_case(tmp_path, text, name), capsys)
        assert status == 0, err
        assert err == ""
        assert "case is valid" in out


@pytest.mark.parametrize("text,key,extras", [pytest.param(t, k, e, id=i) for i, t, k, e in BAD_CASES])
def test_bad_case_check_in_process(tmp_path, capsys, monkeypatch, text, key, extras):
    monkeypatch.delenv("RACFIELD_DEBUG", raising=False)
    path = write_case(tmp_path, text)
    status, out, err = check_in_process(path, capsys)
    assert status == EXIT_BAD_INPUT, err
    assert_one_line_error(err, str(path), key, extras)
    assert "case is valid" not in out


def test_missing_file_in_process(tmp_path, capsys):
    path = tmp_path / "no such case.toml"
    status, _, err = check_in_process(path, capsys)
    assert status == EXIT_BAD_INPUT
    assert_one_line_error(err, str(path), "", ["not found"])


def run_racfield(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    env = {k: v for k, v in os.environ.items() if k != "RACFIELD_DEBUG"}
    return subprocess.run(racfield_command() + list(args), cwd=cwd, env=env, capture_output=True,
                          text=True, encoding="utf-8", timeout=120)


@pytest.mark.parametrize("text,key,extras",
                         [pytest.param(t, k, e, id=i) for i, t, k, e in BAD_CASES if i in SUBPROCESS_IDS])
def test_bad_case_check_subprocess(tmp_path, text, key, extras):
    path = write_case(tmp_path, text)
    result = run_racfield("check", str(path), cwd=tmp_path)
    assert result.returncode == EXIT_BAD_INPUT, result.stderr
    assert_one_line_error(result.stderr, str(path), key, extras)
    assert "case is valid" not in result.stdout


def test_missing_file_subprocess(tmp_path):
    path = tmp_path / "missing.toml"
    result = run_racfield("check", str(path), cwd=tmp_path)
    assert result.returncode == EXIT_BAD_INPUT, result.stderr
    assert_one_line_error(result.stderr, str(path), "", ["not found"])


@pytest.mark.parametrize("case_id", ["unknown-key-misspelt-required", "turns-do-not-fit"])
def test_bad_case_run_subprocess(tmp_path, case_id):
    """``racfield run``: the same one-line error as ``check``, exit 2, no results folder."""
    _, text, key, extras = next(entry for entry in BAD_CASES if entry[0] == case_id)
    path = write_case(tmp_path, text)
    before = sorted(p.name for p in tmp_path.iterdir())
    result = run_racfield("run", "--quiet", str(path), cwd=tmp_path)
    assert result.returncode == EXIT_BAD_INPUT, result.stderr
    assert_one_line_error(result.stderr, str(path), key, extras)
    assert result.stdout == ""
    assert sorted(p.name for p in tmp_path.iterdir()) == before, "run created files on bad input"
    assert not path.with_suffix("").exists()

    out = tmp_path / "results"
    result = run_racfield("run", "--quiet", "--out", str(out), str(path), cwd=tmp_path)
    assert result.returncode == EXIT_BAD_INPUT, result.stderr
    assert_one_line_error(result.stderr, str(path), key, extras)
    assert not out.exists()
