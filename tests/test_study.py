"""Parameter studies: the [study] table, running the variants in this process,
in a local pool and on a Dask cluster, a lost worker, a failing variant, resume.

The reference for every "identical" below is the same study run one variant
after the other in this process (``--workers 1``): how the variants are
distributed must not change a single number (common practice for
distributed computations: the placement of a job must not change its
result).  Timings (``mesh.timings_s`` in results.json) are measurements of
time, not results, and are left out of the comparison.

The study is small on purpose (foils of the full window height in a 1 mm
high ideal-core window, 3 frequencies, a coarse mesh): most of a run's time
is the result files the client writes.
"""

from __future__ import annotations

import csv
import json
import os
import shutil
import signal
import subprocess
import sys
import time
import tomllib
from pathlib import Path

import pytest

from racfield.geometry.load import load_case, study_case
from racfield.geometry.case.study import study_points
from racfield.cli import main

ROOT = Path(__file__).resolve().parents[1]
EXIT_OK, EXIT_BAD_INPUT, EXIT_PARTIAL = 0, 2, 3

ORDERS = ("P-P-S", "P-S-P")
THICKNESSES = ("0.1 mm", "0.2 mm", "0.3 mm")
FREQUENCIES = (10e3, 100e3, 300e3)

_BASE = """\
[model]
length = "40 mm"
temperature = "100 degC"

[sweep]
frequencies = ["10 kHz", "100 kHz", "300 kHz"]

[window]
width = "1.6 mm"
height = "1 mm"
boundary = "ideal-core"
margins = { inner = "0.1 mm", outer = "0.1 mm", top = "0 mm", bottom = "0 mm" }

[[winding]]
name = "primary"
current = "1.5 A"

[[winding]]
name = "secondary"
current = "3 A"
phase = 180
"""

#: 2 interleavings x 3 secondary foil thicknesses (the secondary is layer 2 in both)
STUDY = 'title = "study test"\n' + _BASE + """
[[variant]]
name = "P-P-S"
[[variant.layer]]
winding = "primary"
conductor = { shape = "foil", thickness = "0.1 mm", height = "1 mm" }
repeat = 2
insulation_after = "0.05 mm"
[[variant.layer]]
winding = "secondary"
conductor = { shape = "foil", thickness = "0.2 mm", height = "1 mm" }
insulation_after = "0.05 mm"

[[variant]]
name = "P-S-P"
[[variant.layer]]
winding = "primary"
conductor = { shape = "foil", thickness = "0.1 mm", height = "1 mm" }
insulation_after = "0.05 mm"
[[variant.layer]]
winding = "secondary"
conductor = { shape = "foil", thickness = "0.2 mm", height = "1 mm" }
insulation_after = "0.05 mm"
[[variant.layer]]
winding = "primary"
conductor = { shape = "foil", thickness = "0.1 mm", height = "1 mm" }

[study]
[[study.axis]]
key = "variant"
values = ["P-P-S", "P-S-P"]
[[study.axis]]
key = "layer[2].conductor.thickness"
values = ["0.1 mm", "0.2 mm", "0.3 mm"]
"""

#: one axis whose last value (a 2 mm foil) does not fit the 1.4 mm wide window
FAILING = 'title = "failing study"\n' + _BASE + """
[[layer]]
winding = "primary"
conductor = { shape = "foil", thickness = "0.1 mm", height = "1 mm" }
repeat = 2
insulation_after = "0.05 mm"
[[layer]]
winding = "secondary"
conductor = { shape = "foil", thickness = "0.2 mm", height = "1 mm" }

[study]
[[study.axis]]
key = "layer[2].conductor.thickness"
values = ["0.1 mm", "0.2 mm", "2 mm"]
"""

NAMES = [f"{order}, thickness={t}" for order in ORDERS for t in THICKNESSES]
FOLDERS = [name.replace(", ", "_").replace("=", "_").replace(" ", "_") for name in NAMES]


def _write(folder: Path, name: str, text: str) -> Path:
    path = folder / name
    path.write_text(text)
    return path


def _numbers(path: Path) -> dict:
    """A results.json without the timings."""
    doc = json.loads(path.read_text())
    doc["mesh"].pop("timings_s")
    return doc


@pytest.fixture(scope="module")
def serial(tmp_path_factory):
    """The study run one variant after the other here: (case file, results folder)."""
    root = tmp_path_factory.mktemp("study")
    case = _write(root, "study.toml", STUDY)
    out = root / "serial"
    assert main(["run", str(case), "--workers", "1", "--quiet", "--out", str(out)]) == EXIT_OK
    return case, out


def _local_cluster(allowed_failures: int = 3):
    """A Dask cluster of 2 worker processes (with nannies) on the loopback interface;
    a variant whose worker dies more than ``allowed_failures`` times fails."""
    import dask
    from distributed import LocalCluster

    # no MALLOC_TRIM_THRESHOLD_: a nanny would also set it in this process's environment
    with dask.config.set({"distributed.scheduler.allowed-failures": allowed_failures,
                          "distributed.nanny.pre-spawn-environ.MALLOC_TRIM_THRESHOLD_": None}):
        return LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                            dashboard_address="127.0.0.1:0")


@pytest.fixture
def cluster():
    local = _local_cluster()
    try:
        yield local
    finally:
        local.close()


def _run_and_kill_a_busy_worker(cluster, case: Path, out: Path) -> tuple[int, str, dict]:
    """Run ``case`` on ``cluster`` in another process, SIGKILL a worker process as
    soon as it holds a variant, and wait for the run: (exit status, stderr, the
    scheduler's record of the worker's removal)."""
    from distributed import Client

    with Client(cluster) as client:
        pids = client.run(os.getpid)
        assert len(pids) == 2
        run = subprocess.Popen([sys.executable, "-m", "racfield", "run", str(case), "--quiet",
                                "--cluster", cluster.scheduler_address, "--out", str(out)],
                               cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
        try:
            busy, deadline = [], time.monotonic() + 120.0
            while not busy and run.poll() is None and time.monotonic() < deadline:
                busy = [address for address, keys in client.processing().items()
                        if address in pids and any(str(k).startswith("racfield-") for k in keys)]
                time.sleep(0.01)
            assert busy, "no variant was seen running"
            os.kill(pids[busy[0]], signal.SIGKILL)
            _, err = run.communicate(timeout=300)
        finally:
            if run.poll() is None:
                run.kill()
                run.wait()
        removed = [message for _, message in client.get_events("all")
                   if message.get("action") == "remove-worker" and message.get("worker") == busy[0]]
    assert len(removed) == 1
    return run.returncode, err, removed[0]


def _variants(keys) -> set[str]:
    """The variant folders of racfield's task keys (racfield-INDEX-FOLDER)."""
    return {str(k).split("-", 2)[2] for k in keys if str(k).startswith("racfield-")}


# a. the study table


def test_axes_expand_to_their_product(tmp_path):
    """Two axes of 2 and 3 values: 6 points, the first axis outermost, each with
    its values; every point is a complete case with the value set."""
    points = study_points(tomllib.loads(STUDY)["study"])
    assert [p.name for p in points] == NAMES
    assert [dict(p.values) for p in points] == [
        {"variant": order, "layer[2].conductor.thickness": t} for order in ORDERS for t in THICKNESSES]
    case = load_case(_write(tmp_path, "expand.toml", STUDY))
    for point, (order, t) in zip(case.study, [(o, t) for o in ORDERS for t in THICKNESSES]):
        variant = study_case(case, point)
        assert len(variant.layers) == (2 if order == "P-P-S" else 3)
        assert [layer.winding for layer in variant.layers][:2] == ["primary", "secondary"]
        # the foil thickness is its width across the layer (README, conductor tables)
        assert variant.layers[1].conductor.width == pytest.approx(float(t.split()[0]) * 1e-3, rel=1e-12)
        assert variant.title == f"study test [{point.name}]"


def test_axis_order_does_not_matter(tmp_path):
    """The arrangement axis after a layer axis: the layer value applies to the
    arrangement's layers (it was dropped when the case had layers of its own,
    or every point failed when it had none)."""
    axes = STUDY.index("[study]")
    swapped = STUDY[:axes] + """[study]
[[study.axis]]
key = "layer[2].conductor.thickness"
values = ["0.1 mm", "0.2 mm", "0.3 mm"]
[[study.axis]]
key = "variant"
values = ["P-P-S", "P-S-P"]
"""
    with_layers = swapped.replace("[[variant]]", """[[layer]]
winding = "primary"
conductor = { shape = "foil", thickness = "0.1 mm", height = "1 mm" }
[[layer]]
winding = "secondary"
conductor = { shape = "foil", thickness = "0.4 mm", height = "1 mm" }
[[layer]]
winding = "primary"
conductor = { shape = "foil", thickness = "0.1 mm", height = "1 mm" }

[[variant]]""", 1)
    for name, text in (("swapped.toml", swapped), ("with_layers.toml", with_layers)):
        case = load_case(_write(tmp_path, name, text))
        assert len(case.study) == 6
        for point in case.study:
            values = dict(point.values)
            variant = study_case(case, point)
            assert len(variant.layers) == (2 if values["variant"] == "P-P-S" else 3), name
            thickness = float(values["layer[2].conductor.thickness"].split()[0]) * 1e-3
            assert variant.layers[1].conductor.width == pytest.approx(thickness, rel=1e-12), (name, point.name)


def test_study_table_has_a_row_per_variant_and_frequency(serial):
    """study.csv: a row per variant and frequency with the point's values;
    study.json: the variants in order, their values and numbers."""
    _, out = serial
    with (out / "study.csv").open(newline="") as handle:
        rows = list(csv.reader(handle))
    head, body = rows[0], rows[1:]
    assert head[:4] == ["variant", "arrangement", "layer[2].conductor.thickness", "frequency_hz"]
    assert head[-1] == "error"
    assert len(body) == len(NAMES) * len(FREQUENCIES)
    expected = [(name, order, t, f) for name, (order, t) in zip(NAMES, [(o, t) for o in ORDERS for t in THICKNESSES])
                for f in FREQUENCIES]
    assert [(r[0], r[1], r[2], float(r[3])) for r in body] == expected
    assert all(r[-1] == "" for r in body)
    study = json.loads((out / "study.json").read_text())
    assert study["keys"] == ["variant", "layer[2].conductor.thickness"]
    assert [v["variant"] for v in study["variants"]] == NAMES
    for entry, folder in zip(study["variants"], FOLDERS):
        assert entry["error"] is None and entry["folder"] == folder
        assert entry["values"] == {"variant": entry["variant"].split(",")[0],
                                   "layer[2].conductor.thickness": entry["variant"].split("=")[1]}
        assert entry["frequencies_hz"] == list(FREQUENCIES)
        result = json.loads((out / folder / "results.json").read_text())
        assert result["title"] == f"study test [{entry['variant']}]"
        assert entry["total_loss_w"] == result["total_loss_w"]


# b. a Dask cluster gives the numbers of the serial run


def test_dask_cluster_gives_identical_numbers(serial, cluster, tmp_path):
    """The study on a Dask scheduler (--cluster) with 2 worker processes: every
    number of every results.json, study.csv and study.json equal to the
    serial run's."""
    from distributed import Client

    case, reference = serial
    out = tmp_path / "cluster"
    assert main(["run", str(case), "--cluster", cluster.scheduler_address, "--quiet", "--out", str(out)]) == EXIT_OK
    with Client(cluster) as client:
        # the variants ran on the cluster's workers, not here
        executed = client.run(lambda dask_worker: dask_worker.state.executed_count)
    assert sum(executed.values()) == len(NAMES)
    for folder in FOLDERS:
        assert _numbers(out / folder / "results.json") == _numbers(reference / folder / "results.json"), folder
    assert (out / "study.csv").read_bytes() == (reference / "study.csv").read_bytes()
    assert (out / "study.json").read_bytes() == (reference / "study.json").read_bytes()


# c. a worker lost while it runs a variant


def test_a_killed_worker_does_not_lose_a_variant(cluster, tmp_path):
    """SIGKILL one of the two worker processes while it holds a variant: the
    scheduler runs that variant again on a worker still alive (or on the one
    its nanny restarts) and the study finishes whole."""
    case = _write(tmp_path, "study.toml", STUDY)
    out = tmp_path / "out"
    status, err, removed = _run_and_kill_a_busy_worker(cluster, case, out)
    assert status == EXIT_OK, err
    # the worker went with a variant in its hands (running, or done but not yet fetched)
    assert _variants(removed["processing-tasks"]) | _variants(removed["lost-computed-tasks"])
    study = json.loads((out / "study.json").read_text())
    assert [v["variant"] for v in study["variants"]] == NAMES
    assert all(v["error"] is None for v in study["variants"])
    assert len(list(out.glob("*/results.json"))) == len(NAMES)


# d. failures


def test_a_variant_with_bad_geometry_fails_alone(tmp_path, capsys):
    """A foil too thick for the window: that variant fails with its one-line
    error in study.csv and study.json, the others are solved; exit status 3."""
    case = _write(tmp_path, "failing.toml", FAILING)
    out = tmp_path / "out"
    assert main(["run", str(case), "--quiet", "--out", str(out)]) == EXIT_PARTIAL
    err = capsys.readouterr().err
    assert "variant thickness=2 mm failed" in err and "1 of 3 variants failed" in err
    with (out / "study.csv").open(newline="") as handle:
        rows = list(csv.DictReader(handle))
    failed = [r for r in rows if r["error"]]
    assert len(failed) == 1 and failed[0]["variant"] == "thickness=2 mm"
    assert failed[0]["layer[2].conductor.thickness"] == "2 mm" and failed[0]["frequency_hz"] == ""
    error = failed[0]["error"]
    assert "\n" not in error and "layer[2]" in error and "window width" in error
    good = [r for r in rows if not r["error"]]
    assert sorted({r["variant"] for r in good}) == ["thickness=0.1 mm", "thickness=0.2 mm"]
    assert len(good) == 2 * len(FREQUENCIES)
    assert all(float(r["total_loss_w"]) > 0 for r in good)
    study = json.loads((out / "study.json").read_text())
    assert [v["error"] is None for v in study["variants"]] == [True, True, False]
    assert study["variants"][2]["error"] == error
    for folder in ("thickness_0.1_mm", "thickness_0.2_mm"):
        assert json.loads((out / folder / "results.json").read_text())["status"]["complete"] is True
    assert not (out / "thickness_2_mm" / "results.json").exists()


def test_a_variant_whose_worker_dies_too_often_fails_alone(tmp_path):
    """A scheduler that allows no worker death per task: the variant the killed
    worker held fails alone with a one-line error (exit status 3), the
    others are solved."""
    case = _write(tmp_path, "three.toml", FAILING.replace('"2 mm"', '"0.3 mm"'))
    out = tmp_path / "out"
    local = _local_cluster(allowed_failures=0)
    try:
        status, err, removed = _run_and_kill_a_busy_worker(local, case, out)
    finally:
        local.close()
    assert status == EXIT_PARTIAL, err
    lost = _variants(removed["processing-tasks"])
    assert lost
    study = json.loads((out / "study.json").read_text())
    failed = {v["variant"].replace("=", "_").replace(" ", "_"): v["error"] for v in study["variants"] if v["error"]}
    assert set(failed) == lost
    for error in failed.values():
        assert error.startswith("the variant could not be run: KilledWorker") and "\n" not in error
    solved = {p.parent.name for p in out.glob("*/results.json")}
    assert solved == {"thickness_0.1_mm", "thickness_0.2_mm", "thickness_0.3_mm"} - lost


def test_an_unreachable_cluster_is_one_line(tmp_path, capsys, monkeypatch):
    """A --cluster address where no scheduler listens, or one that is not an
    address: exit status 2 and one line naming --cluster, nothing solved."""
    import distributed

    real = distributed.Client

    def impatient(address, *args, timeout=None, **kwargs):
        # racfield waits 30 s for the scheduler; the test does not
        return real(address, *args, timeout=2, **kwargs)

    monkeypatch.setattr(distributed, "Client", impatient)
    case = _write(tmp_path, "study.toml", STUDY)
    for address in ("tcp://127.0.0.1:9", "not-an-address"):
        out = tmp_path / address.replace(":", "_").replace("/", "_")
        assert main(["run", str(case), "--cluster", address, "--quiet", "--out", str(out)]) == EXIT_BAD_INPUT
        err = capsys.readouterr().err.strip().splitlines()
        assert len(err) == 1 and "--cluster" in err[0] and address in err[0], err
        assert not list(out.glob("*/results.json"))


# e. resume by variant


def _record_pool_workers(monkeypatch) -> list[dict[str, tuple[int, int]]]:
    """Before racfield closes its Dask client, record what every worker of the
    pool reports: worker address -> (process id, tasks it executed), from the
    Dask worker state (``executed_count``) of each worker process."""
    import distributed

    real = distributed.Client
    reports: list[dict[str, tuple[int, int]]] = []

    class Recording(real):
        def close(self, *args, **kwargs):
            if self.status == "running":
                reports.append(self.run(lambda dask_worker: (os.getpid(), dask_worker.state.executed_count)))
            return super().close(*args, **kwargs)

    monkeypatch.setattr(distributed, "Client", Recording)
    return reports


def test_resume_solves_only_the_unfinished_variant(serial, tmp_path, capsys, monkeypatch):
    """A finished study with one variant marked unfinished: --resume solves that
    one alone, in a local pool of 2 worker processes (``--workers 2``, so that
    a machine with one core starts a pool too), and its numbers and study.csv
    come out as in the serial run, byte for byte."""
    case, reference = serial
    out = tmp_path / "resumed"
    shutil.copytree(reference, out)
    manifest_path = out / ".racfield" / "manifest.json"
    manifest = json.loads(manifest_path.read_text())
    assert manifest["finished"] == FOLDERS
    unfinished = manifest["finished"].pop(3)
    manifest_path.write_text(json.dumps(manifest))
    before = {folder: (out / folder / "results.json").stat().st_mtime_ns for folder in FOLDERS}
    capsys.readouterr()
    pools = _record_pool_workers(monkeypatch)
    assert main(["run", str(case), "--resume", "--workers", "2", "--quiet", "--out", str(out)]) == EXIT_OK
    printed = capsys.readouterr()
    # one pool of 2 worker processes, none of them this one, ran the one variant
    # (`racfield run --help`: "--workers N: variants run in a local pool of N worker processes")
    assert len(pools) == 1
    workers = pools[0].values()
    assert len(workers) == 2 and len({pid for pid, _ in workers}) == 2
    assert os.getpid() not in {pid for pid, _ in workers}
    assert sum(executed for _, executed in workers) == 1
    assert printed.err.count("finished before, kept") == len(NAMES) - 1
    assert printed.out.count("== study test [") == 1                 # the one solved again
    assert f"== study test [{NAMES[3]}]\n" in printed.out
    after = {folder: (out / folder / "results.json").stat().st_mtime_ns for folder in FOLDERS}
    assert [folder for folder in FOLDERS if after[folder] != before[folder]] == [unfinished]
    assert (out / "study.csv").read_bytes() == (reference / "study.csv").read_bytes()
    assert _numbers(out / unfinished / "results.json") == _numbers(reference / unfinished / "results.json")
    assert json.loads(manifest_path.read_text())["finished"] == [f for f in FOLDERS if f != unfinished] + [unfinished]
