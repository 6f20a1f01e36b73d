"""Interrupted runs, resume, determinism and output safety.

The reference for every "identical" below is an uninterrupted run of the same
case: resuming must reproduce it number for number (common practice for
checkpointed computations: a restart must not change the result).  Timings
(``mesh.timings_s`` in results.json) are measurements of time, not results,
and are left out of the comparison.
"""

from __future__ import annotations

import json
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from racfield.fem.sweep import run_sweep
from racfield.geometry.load import load_case
from racfield.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases" / "demo_transformer.toml"
EXIT_BAD_INPUT = 2

#: a small study (foil layers, two interleavings, 12 frequencies: a reduced sweep)
SMALL_STUDY = """\
title = "resume test: foil interleavings"

[model]
length = "30 mm"

[sweep]
start = "10 kHz"
stop = "1 MHz"
points = 12

[window]
width = "2.4 mm"
height = "6 mm"
boundary = "ideal-core"
margins = { inner = "0.2 mm", outer = "0.2 mm", top = "0.3 mm", bottom = "0.3 mm" }

[[winding]]
name = "primary"
current = "1 A"

[[winding]]
name = "secondary"
current = "2 A"
phase = 180

[[variant]]
name = "P-P-S"
[[variant.layer]]
winding = "primary"
conductor = { shape = "foil", thickness = "0.2 mm", height = "5 mm" }
repeat = 2
insulation_after = "0.1 mm"
[[variant.layer]]
winding = "secondary"
conductor = { shape = "foil", thickness = "0.4 mm", height = "5 mm" }

[[variant]]
name = "P-S-P"
[[variant.layer]]
winding = "primary"
conductor = { shape = "foil", thickness = "0.2 mm", height = "5 mm" }
insulation_after = "0.1 mm"
[[variant.layer]]
winding = "secondary"
conductor = { shape = "foil", thickness = "0.4 mm", height = "5 mm" }
insulation_after = "0.1 mm"
[[variant.layer]]
winding = "primary"
conductor = { shape = "foil", thickness = "0.2 mm", height = "5 mm" }
"""


def _small_study(tmp_path: Path) -> Path:
    path = tmp_path / "small_study.toml"
    path.write_text(SMALL_STUDY)
    return path


def _numbers(doc: dict) -> dict:
    """results.json without the timings."""
    doc = json.loads(json.dumps(doc))
    doc.get("mesh", {}).pop("timings_s", None)
    return doc


def _results(folder: Path) -> dict:
    return _numbers(json.loads((folder / "results.json").read_text()))


def _copy_case(source: Path, tmp_path: Path) -> Path:
    target = tmp_path / source.name
    shutil.copy(source, target)
    return target


def _points(folder: Path) -> list[Path]:
    return sorted((folder / ".racfield" / "points").rglob("[0-9]*.npz"))


def _stop(process: subprocess.Popen) -> None:
    """End ``process`` (started by a test) if it still runs."""
    if process.poll() is None:
        process.kill()
        process.wait()


def _count_solves(monkeypatch) -> list[tuple[float, bool]]:
    """Record every frequency point the field problem solves: (Hz, whether it
    came from a ready reduced-model response) per call of
    ``WindowProblem.solve_windings``, the one function that solves a point."""
    from racfield.fem.problem import WindowProblem

    solved: list[tuple[float, bool]] = []
    original = WindowProblem.solve_windings

    def counting(self, frequency, *args, **kwargs):
        solved.append((float(frequency), kwargs.get("response") is not None))
        return original(self, frequency, *args, **kwargs)

    monkeypatch.setattr(WindowProblem, "solve_windings", counting)
    return solved


def _sweeps(monkeypatch) -> list[str]:
    """Record the title of every case whose sweep the command line runs."""
    from racfield.fem import sweep as sweep_module

    titles: list[str] = []
    original = sweep_module.run_sweep

    def counting(case, *args, **kwargs):
        titles.append(case.title)
        return original(case, *args, **kwargs)

    monkeypatch.setattr(sweep_module, "run_sweep", counting)   # the sweep of racfield run's solve path
    return titles


def test_sigkill_mid_sweep_then_resume_matches_an_uninterrupted_run(tmp_path, capsys, monkeypatch, request):
    """Kill `racfield run --exact` with SIGKILL after a few frequencies: the folder
    holds a valid partial results.json; `--resume` (run here, through the same
    command-line entry point, so that its solves can be counted) solves only
    the missing frequencies and the final files equal those of an
    uninterrupted run."""
    case = _copy_case(DEMO, tmp_path)
    killed, clean = tmp_path / "killed", tmp_path / "clean"
    frequencies = [float(f) for f in load_case(case).frequencies]
    total = len(frequencies)
    command = [sys.executable, "-m", "racfield", "run", str(case), "--exact", "--quiet"]
    # the uninterrupted reference run goes on beside the others (its own folder)
    reference = subprocess.Popen(command + ["--out", str(clean)], cwd=ROOT,
                                 stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    request.addfinalizer(lambda: _stop(reference))
    process = subprocess.Popen(command + ["--out", str(killed)], cwd=ROOT,
                               stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 120.0
    while len(_points(killed)) < 4 and process.poll() is None and time.monotonic() < deadline:
        time.sleep(0.02)
    assert process.poll() is None, "the run ended before it could be killed"
    os.kill(process.pid, signal.SIGKILL)
    process.wait()
    assert process.returncode == -signal.SIGKILL
    solved = len(_points(killed))
    assert 4 <= solved < total

    partial = json.loads((killed / "results.json").read_text())     # valid JSON, written whole
    assert partial["status"]["complete"] is False
    assert 1 <= partial["status"]["solved"] <= solved and partial["status"]["of"] == total
    assert len(partial["frequencies_hz"]) == partial["status"]["solved"]

    kept = {int(path.stem) for path in _points(killed)}
    assert len(kept) == solved
    solves = _count_solves(monkeypatch)
    capsys.readouterr()
    assert main(["run", str(case), "--exact", "--quiet", "--out", str(killed), "--resume"]) == 0
    assert f"resuming: {solved} of {total} frequencies already solved" in capsys.readouterr().err
    # only the frequencies without a kept point were solved, each once, in order
    # (the --resume contract, `racfield run --help`: "only the missing frequencies";
    # the last one is never kept before the run ends: run_sweep solves it anyway)
    assert total - 1 not in kept
    assert solves == [(f, False) for i, f in enumerate(frequencies) if i not in kept]
    _, reference_err = reference.communicate(timeout=600)
    assert reference.returncode == 0, reference_err
    assert _results(killed) == _results(clean)
    assert _results(killed)["status"]["complete"] is True
    for name in ("rac.csv", "conductors.csv", "estimates.csv"):
        assert (killed / name).read_bytes() == (clean / name).read_bytes(), name


def test_reduced_sweep_resumed_from_part_of_its_points_is_identical(tmp_path, monkeypatch):
    """The reduced sweep rebuilds the same model on resume: points solved
    before the interruption plus the rest equal the uninterrupted sweep."""
    from racfield.geometry.case import variant_cases
    case = variant_cases(load_case(_small_study(tmp_path)))[0]
    clean = run_sweep(case)
    assert clean.sweep_info["method"] == "reduced"
    kept = {}

    class Stop(Exception):
        pass

    def stop_after_five(index, point, partial):
        kept[index] = point
        if len(kept) == 5:
            raise Stop

    with pytest.raises(Stop):
        run_sweep(case, on_point=stop_after_five)
    assert len(kept) == 5 and len(case.frequencies) - 1 not in kept
    solves = _count_solves(monkeypatch)
    resumed = run_sweep(case, done=kept)
    # the reduced model answers only at the frequencies not kept (the last one
    # included, for its field), then two full solves check the model (the `done`
    # contract of run_sweep: points already solved are taken as they are)
    frequencies = [float(f) for f in case.frequencies]
    assert [f for f, reduced in solves if reduced] == [f for i, f in enumerate(frequencies) if i not in kept]
    assert [f for f, reduced in solves if not reduced] == resumed.sweep_info["check_hz"]
    for name in ("loss_per_m", "impedance_per_m", "loss_matrix_per_m", "basis_currents"):
        assert np.array_equal(getattr(resumed, name), getattr(clean, name)), name
    assert resumed.sweep_info == clean.sweep_info


def test_interrupt_leaves_a_partial_results_json_and_a_hint(tmp_path, capsys, monkeypatch):
    """Ctrl-C during a sweep: exit status 130, a valid partial results.json and
    a line telling how to resume."""
    import racfield.fem.sweep as sweep_module

    original = sweep_module.run_sweep

    def interrupted(*args, on_point=None, **kwargs):
        count = [0]

        def hook(index, point, partial):
            on_point(index, point, partial)
            count[0] += 1
            if count[0] == 3:
                raise KeyboardInterrupt

        return original(*args, on_point=hook, **kwargs)

    monkeypatch.setattr(sweep_module, "run_sweep", interrupted)   # the sweep of racfield run's solve path
    case = _copy_case(DEMO, tmp_path)
    out = tmp_path / "out"
    assert main(["run", str(case), "--out", str(out), "--quiet", "--exact"]) == 130
    err = capsys.readouterr().err
    assert "--resume" in err.splitlines()[-1]
    doc = json.loads((out / "results.json").read_text())
    assert doc["status"] == {"complete": False, "solved": 1, "of": len(load_case(case).frequencies)}
    assert len(_points(out)) == 3


def test_changed_case_is_refused_for_resume(tmp_path, capsys):
    """A case edited after the run started is detected by its content hash."""
    case = _copy_case(DEMO, tmp_path)
    out = tmp_path / "out"
    (out / ".racfield").mkdir(parents=True)
    assert main(["run", str(case), "--out", str(out), "--quiet", "--resume"]) == EXIT_BAD_INPUT
    assert "holds no interrupted racfield run" in capsys.readouterr().err
    from racfield.checkpoint import Manifest, RunState, fingerprint
    state = RunState(out)
    state.manifest = Manifest(fingerprint(case, load_case(case)), {"exact": False}, [], [])
    state.save()
    case.write_text(case.read_text().replace('title = "', 'title = "edited '))
    assert main(["run", str(case), "--out", str(out), "--quiet", "--resume"]) == EXIT_BAD_INPUT
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--resume" in err[0] and "content hash" in err[0]
    assert main(["run", str(case), "--out", str(out), "--quiet", "--resume", "--exact"]) == EXIT_BAD_INPUT


def test_a_file_racfield_did_not_write_is_not_overwritten(tmp_path, capsys):
    """Before any solve, a results folder holding a file of the same name that
    racfield did not write is refused (exit 2, one line); --force overrides."""
    case = _copy_case(ROOT / "cases" / "air_core_choke.toml", tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    mine = out / "rac.csv"
    mine.write_text("my own notes\n")
    started = time.perf_counter()
    assert main(["run", str(case), "--out", str(out), "--quiet"]) == EXIT_BAD_INPUT
    assert time.perf_counter() - started < 5.0          # refused before meshing or solving
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "rac.csv" in err[0] and "--force" in err[0]
    assert mine.read_text() == "my own notes\n"
    assert not (out / "results.json").exists()
    assert main(["run", str(case), "--out", str(out), "--quiet", "--force"]) == 0
    assert mine.read_text().startswith("frequency_hz")
    # racfield's own files are rewritten by a later run without --force
    assert main(["run", str(case), "--out", str(out), "--quiet"]) == 0


@pytest.fixture(scope="module")
def two_runs(tmp_path_factory) -> tuple[Path, Path, Path]:
    """Two finished runs of one case into two folders: (case file, folder a, folder b)."""
    root = tmp_path_factory.mktemp("two_runs")
    case = _copy_case(ROOT / "cases" / "air_core_choke.toml", root)
    for name in ("a", "b"):
        assert main(["run", str(case), "--out", str(root / name), "--quiet"]) == 0
    return case, root / "a", root / "b"


def test_same_case_gives_bit_identical_results(two_runs):
    """Two runs of one case: every number of results.json and every CSV byte equal."""
    _, a, b = two_runs
    assert _results(a) == _results(b)
    for name in ("rac.csv", "conductors.csv", "estimates.csv"):
        assert (a / name).read_bytes() == (b / name).read_bytes(), name


def test_resume_solves_only_the_unfinished_variants(tmp_path, capsys, monkeypatch):
    """A study interrupted after some variants: --resume keeps the finished ones
    and the comparison equals the uninterrupted one."""
    case = _small_study(tmp_path)
    out = tmp_path / "out"
    # one variant after the other here (the local pool is tested in tests/test_study.py)
    assert main(["run", str(case), "--out", str(out), "--quiet", "--workers", "1"]) == 0
    comparison = (out / "comparison.json").read_text()
    manifest_path = out / ".racfield" / "manifest.json"
    manifest = json.loads(manifest_path.read_text())
    unfinished = manifest["finished"].pop()
    manifest_path.write_text(json.dumps(manifest))
    capsys.readouterr()
    sweeps = _sweeps(monkeypatch)
    assert main(["run", str(case), "--out", str(out), "--quiet", "--resume", "--workers", "1"]) == 0
    err = capsys.readouterr().err
    assert err.count("finished before, kept") == len(manifest["finished"])
    # one sweep, of the unfinished variant alone (the --resume contract, `racfield run
    # --help`: "only the missing ... variants"; variant folders are named after the variants)
    assert len(sweeps) == 1 and sweeps[0].endswith(f"[{unfinished}]")
    assert (out / "comparison.json").read_text() == comparison
    assert unfinished in json.loads(manifest_path.read_text())["finished"]


def test_report_does_not_overwrite_a_foreign_file(two_runs, tmp_path, capsys):
    """`racfield report` refuses to replace a report.html racfield did not write
    (exit 2, one line) and rewrites its own one; --force overrides.  (The
    results folder is one of the two runs above; the report adds report.html
    only, which the comparison of the two runs does not read.)"""
    _, out, _ = two_runs
    assert main(["report", str(out)]) == 0
    assert main(["report", str(out)]) == 0                     # its own file
    foreign = tmp_path / "mine.html"
    foreign.write_text("<p>my page</p>")
    capsys.readouterr()
    assert main(["report", str(out), "--out", str(foreign)]) == EXIT_BAD_INPUT
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--force" in err[0]
    assert foreign.read_text() == "<p>my page</p>"
    assert main(["report", str(out), "--out", str(foreign), "--force"]) == 0
    assert foreign.read_text() != "<p>my page</p>"
