"""The size forecast (racfield.geometry.forecast) against what the mesher and
the operating system measure, and the refusal of a case too large for the
memory (issue 18, deliverable 1).

The references here are measurements outside the forecast: the mesh gmsh
builds (its unknowns), and the peak resident memory the kernel reports for a
child process (``getrusage(RUSAGE_SELF).ru_maxrss`` read inside that process;
tracemalloc would miss the sparse LU's C allocations).  The tolerance, a
factor 1.5 either way, is the requirement of issue 18.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import pytest
from racfield.cli import main
from racfield.geometry import forecast as fc
from racfield.geometry.case import CaseError, parse_case, parse_toml, variant_cases
from racfield.geometry.layout import place
from racfield.geometry.load import load_case, study_case
from scaling_grids import GRIDS, grid_document

ROOT = Path(__file__).resolve().parents[1]
CASES = sorted((ROOT / "cases").glob("*.toml"))
FACTOR = 1.5  # issue 18: forecast within a factor 1.5 of the measured unknowns and peak memory

#: run in a child process: one grid solved at 3 MHz (one sparse LU, the
#: largest of the run) and its files written; prints unknowns and peak RSS (bytes)
CHILD = """
import json, resource, sys, tempfile
from pathlib import Path
sys.path.insert(0, {tests!r})
import racfield
from racfield.api import solve_report
from racfield.postprocess.writers import write_all
from scaling_grids import grid_document
case = racfield.load_case(grid_document({columns}, {rows}, frequencies=[3e6]), force_size=True)
report = solve_report(case, exact=True)
with tempfile.TemporaryDirectory() as folder:
    write_all(report, Path(folder))
print(json.dumps({{"unknowns": report.sweep.unknowns,
                  "peak": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0}}))
"""


def _grid_case(conductors: int, frequencies: list[float] | None = None):
    columns, rows = GRIDS[conductors]
    return parse_case(parse_toml(grid_document(columns, rows, frequencies=frequencies)), "")


def _within(forecast: float, measured: float) -> bool:
    return measured / FACTOR <= forecast <= measured * FACTOR


@pytest.mark.parametrize("conductors", [48, 192])
def test_grid_forecast_against_the_built_mesh_and_the_measured_peak_memory(conductors):
    case = _grid_case(conductors, [3e6])
    predicted = fc.forecast(case, place(case))
    columns, rows = GRIDS[conductors]
    script = CHILD.format(tests=str(ROOT / "tests"), columns=columns, rows=rows)
    done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=300, check=False)
    assert done.returncode == 0, done.stderr
    measured = json.loads(done.stdout.strip().splitlines()[-1])
    # measured: the unknowns of the mesh gmsh built; tolerance: issue 18
    assert _within(predicted.unknowns, measured["unknowns"]), (predicted.unknowns, measured["unknowns"])
    # measured: the child's peak RSS as the kernel reports it (getrusage); tolerance: issue 18
    assert _within(predicted.peak_memory_bytes, measured["peak"]), (predicted.peak_memory_bytes, measured["peak"])


def _arrangement(path: Path):
    case = load_case(path)
    return study_case(case, case.study[0]) if case.study else variant_cases(case)[0]


def _measured_unknowns(case) -> int:
    """The unknowns of the meshes of ``case`` (window, and end-turn section), assembled."""
    from racfield.fem.sweep import conductor_resistivities, mesh_case, problem_for
    from racfield.fem.whole_turns import end_section, window_section

    conductors = place(case)
    sections = [window_section(case)] + ([end_section(case)] if case.end_turns is not None else [])
    rho = conductor_resistivities(case, conductors)
    return sum(problem_for(s, mesh_case(s, conductors), rho, conductors).unknowns for s in sections)


@pytest.mark.parametrize("path", CASES, ids=[p.stem for p in CASES])
def test_case_forecast_against_the_built_mesh(path):
    case = _arrangement(path)
    predicted = fc.forecast_unknowns(case, place(case))
    measured = _measured_unknowns(case)
    # measured: the unknowns of the meshes gmsh built (meshing and assembly, no solve); tolerance: issue 18
    assert _within(predicted, measured), (predicted, measured)


def _demo_at_density(tmp_path: Path, density: float) -> Path:
    text = (ROOT / "cases" / "demo_transformer.toml").read_text(encoding="utf-8")
    path = tmp_path / "demo_dense.toml"
    path.write_text(text.replace("[window]", f"[mesh]\ndensity = {density}\n\n[window]", 1), encoding="utf-8")
    return path


@pytest.mark.parametrize("command", ["check", "run"])
def test_density_100_is_refused_in_one_line(command, tmp_path, capsys):
    path = _demo_at_density(tmp_path, 100)
    out = tmp_path / "results"
    capsys.readouterr()
    status = main([command, str(path)] + (["--out", str(out), "--quiet"] if command == "run" else []))
    captured = capsys.readouterr()
    assert status == 2   # the project's exit status for bad input (README)
    line = captured.err
    assert line.count("\n") == 1 and "Traceback" not in line and captured.out == ""
    assert line.startswith(f"racfield: error: {path}: mesh.density: ")
    assert "[mesh] density" in line and "[mesh] frequency" in line and "--force-size" in line
    assert not out.exists()


def test_the_unforced_check_refuses_what_force_size_lets_past(tmp_path, capsys, monkeypatch):
    # a low available memory (1 MB) stands in for a huge case: the demo's forecast exceeds it
    monkeypatch.setattr(fc, "available_memory", lambda: 1e6)
    demo = ROOT / "cases" / "demo_transformer.toml"
    with pytest.raises(CaseError, match="mesh") as refused:
        load_case(demo)
    assert "--force-size" in str(refused.value.fix)
    assert load_case(demo, force_size=True).title
    import racfield

    with pytest.raises(CaseError):
        racfield.load_case(demo)
    assert racfield.load_case(demo, force_size=True).title
    capsys.readouterr()
    assert main(["check", str(demo)]) == 2
    assert main(["check", str(demo), "--force-size"]) == 0
    assert "forecast: about" in capsys.readouterr().out


def test_run_force_size_solves_past_the_check(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(fc, "available_memory", lambda: 1e6)
    path = tmp_path / "one_wire.toml"
    path.write_text('[model]\nlength = "1 m"\n[sweep]\nfrequencies = ["10 kHz"]\n'
                    '[window]\nwidth = "2 mm"\nheight = "2 mm"\nboundary = "open"\n'
                    '[[winding]]\nname = "p"\ncurrent = "1 A"\n'
                    '[[conductor]]\nwinding = "p"\nshape = "round"\ndiameter = "0.5 mm"\nat = ["1 mm", "1 mm"]\n',
                    encoding="utf-8")
    out = tmp_path / "results"
    assert main(["run", str(path), "--out", str(out), "--quiet"]) == 2 and not out.exists()
    assert main(["run", str(path), "--out", str(out), "--quiet", "--force-size"]) == 0
    assert (out / "results.json").is_file()


def test_available_memory_is_read_from_the_system():
    # /proc/meminfo's MemAvailable, or os.sysconf: a positive, finite number of bytes (common practice)
    available = fc.available_memory()
    assert 0 < available < math.inf
