"""The Python API (racfield.load_case, solve, Results, variant_cases) against
the command line's independent path: ``racfield run`` writes results.json and
rac.csv, ``racfield check`` prints the error lines and the variants.

The README example (section "From Python", kept in tests/readme_from_python.py)
is run as it stands and checked number for number against the results.json
of ``racfield run`` for the same case.  Timings (``mesh.timings_s``) are
measurements of time, not results, and are left out of the comparison.
"""

from __future__ import annotations

import contextlib
import csv
import dataclasses
import io
import json
import re
import runpy
import shutil
import subprocess
import sys
import tomllib
from importlib.metadata import version
from pathlib import Path

import numpy as np
import pytest

import racfield
from racfield.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases" / "demo_transformer.toml"
EXAMPLE = Path(__file__).with_name("readme_from_python.py")
HEAVY = ("gmsh", "matplotlib", "skfem", "distributed", "meshio", "racfield.fem")


def _without_timings(doc: dict) -> dict:
    doc = json.loads(json.dumps(doc))
    doc["mesh"].pop("timings_s")
    return doc


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """One solve of the demo case each way: the README example run from a
    folder holding cases/demo_transformer.toml, and ``racfield run``."""
    folder = tmp_path_factory.mktemp("readme")
    (folder / "cases").mkdir()
    shutil.copy(DEMO, folder / "cases" / DEMO.name)
    cli_out = folder / "cli"
    assert main(["run", str(DEMO), "--out", str(cli_out), "--quiet"]) == 0
    printed = io.StringIO()
    with pytest.MonkeyPatch.context() as patch, contextlib.redirect_stdout(printed):
        patch.chdir(folder)
        namespace = runpy.run_path(str(EXAMPLE), run_name="__main__")
    namespace["printed"] = printed.getvalue()
    doc = json.loads((cli_out / "results.json").read_text(encoding="utf-8"))
    return namespace, doc, folder, cli_out


def test_readme_example_equals_the_command_line(demo):
    """Every number of the README example's Results equals the command line's
    results.json (the command line's independent path, same case)."""
    ns, doc, _, _ = demo
    results = ns["results"]
    assert isinstance(results, racfield.Results)
    # reference: racfield run's results.json
    assert results.title == doc["title"]
    assert np.array_equal(results.frequencies_hz, doc["frequencies_hz"])
    assert results.windings == tuple(doc["windings"]) == ("primary", "secondary")
    for name, w in doc["windings"].items():
        assert results.turns[name] == w["turns"]
        assert results.rdc_ohm[name] == w["rdc_ohm"]
        assert np.array_equal(results.rac_ohm[name], w["rac_ohm"])
        assert np.array_equal(results.rac_over_rdc[name], w["rac_over_rdc"])
        assert np.array_equal(results.loss_w[name], w["loss_w"])
    assert np.array_equal(results.total_loss_w, doc["total_loss_w"])
    assert np.array_equal(results.conductor_loss_w, np.array([c["loss_w"] for c in doc["conductors"]]).T)
    assert len(results.conductors) == len(doc["conductors"])
    assert results.conductors[0]["winding"] == doc["conductors"][0]["winding"]
    assert np.array_equal(results.leakage_l_h, doc["leakage"]["l_h"])
    assert np.array_equal(results.leakage_r_ohm, doc["leakage"]["r_ohm"])
    q = doc["loss_matrix"]
    assert np.array_equal(results.loss_matrix_w_per_a2.real, q["re_w_per_a2"])
    assert np.array_equal(results.loss_matrix_w_per_a2.imag, q["im_w_per_a2"])
    # an ideal-core window has no impedance matrix (results.json has none either)
    assert "impedance" not in doc and results.impedance_r_ohm is None and results.impedance_l_h is None
    assert _without_timings(results.document) == _without_timings(doc)


def test_readme_example_progress_and_files(demo):
    """The example's progress lines count up to the case's [sweep] points (22
    in cases/demo_transformer.toml), and the folder it writes holds the same
    files, with the same results.json numbers, as racfield run's folder."""
    ns, doc, folder, cli_out = demo
    assert ns["case"].frequencies == tuple(doc["frequencies_hz"])
    progress = re.findall(r"^solved (\d+)/(\d+) at ", ns["printed"], flags=re.M)
    assert progress[-1] == ("22", "22") and all(total == "22" for _, total in progress)
    written = folder / "results" / "demo_transformer"
    # reference: the files racfield run wrote (its own state folder aside)
    assert sorted(p.name for p in written.iterdir()) == sorted(p.name for p in cli_out.iterdir()
                                                               if p.name != ".racfield")
    assert _without_timings(json.loads((written / "results.json").read_text())) == _without_timings(doc)
    assert (written / "rac.csv").read_bytes() == (cli_out / "rac.csv").read_bytes()
    assert (folder / "rac_over_rdc.png").read_bytes().startswith(b"\x89PNG\r\n\x1a\n")   # PNG signature


def test_write_returns_the_files_racfield_run_writes(demo, tmp_path):
    """.write(folder) writes the same file names as racfield run (its folder listing)."""
    ns, _, _, cli_out = demo
    paths = ns["results"].write(tmp_path / "again")
    assert sorted(p.name for p in paths) == sorted(p.name for p in cli_out.iterdir() if p.name != ".racfield")
    assert all(p.parent == tmp_path / "again" and p.is_file() for p in paths)


def test_table_rows_are_rac_csv(demo):
    """.table(): one plain dict per frequency and winding, in the order and
    with the numbers of racfield run's rac.csv (8 significant digits there)."""
    ns, _, _, cli_out = demo
    rows = ns["results"].table()
    with open(cli_out / "rac.csv", newline="", encoding="utf-8") as handle:
        reference = list(csv.DictReader(handle))
    assert len(rows) == len(reference) == 22 * 2
    for row, ref in zip(rows, reference):
        assert set(row) == set(ref)
        assert row["winding"] == ref["winding"]
        for key in ("frequency_hz", "current_a_rms", "rdc_ohm", "rac_ohm", "rac_over_rdc", "loss_w"):
            assert isinstance(row[key], float)
            assert f"{row[key]:.8g}" == ref[key], key


def test_plot_rac_is_a_figure_with_a_log_frequency_axis(demo):
    """.plot_rac(): a matplotlib Figure (no pyplot state), frequency on a log
    axis, both axes labelled with their units (common practice for plots)."""
    from matplotlib.figure import Figure

    figure = demo[0]["results"].plot_rac()
    assert isinstance(figure, Figure)
    ax = figure.axes[0]
    assert ax.get_xscale() == "log"
    assert "Frequency" in ax.get_xlabel() and "Hz" in ax.get_xlabel()
    assert "Rac / Rdc" in ax.get_ylabel() and "(1)" in ax.get_ylabel()
    # one line per winding with the winding's name, as rac_over_rdc.png
    labels = [line.get_label() for line in ax.get_lines()]
    assert any(label.startswith("primary") for label in labels)
    assert any(label.startswith("secondary") for label in labels)


def test_open_window_impedance_matrix_equals_the_command_line(tmp_path):
    """An open-boundary case (cases/air_core_choke.toml): impedance matrix and
    self inductance equal racfield run's results.json (the command line's path)."""
    case_file = ROOT / "cases" / "air_core_choke.toml"
    assert main(["run", str(case_file), "--out", str(tmp_path / "cli"), "--quiet"]) == 0
    doc = json.loads((tmp_path / "cli" / "results.json").read_text())
    results = racfield.solve(racfield.load_case(case_file))
    assert np.array_equal(results.impedance_r_ohm, doc["impedance"]["r_ohm"])
    assert np.array_equal(results.impedance_l_h, doc["impedance"]["l_h"])
    name = results.windings[0]
    assert np.array_equal(results.impedance_l_h[:, 0, 0], doc["inductance"]["self_l_h"][name])
    assert results.leakage_l_h is None and "leakage" not in doc   # one winding: no leakage
    assert _without_timings(results.document) == _without_timings(doc)


# ---------------------------------------------------------------------------
# load_case


def test_load_case_from_path_text_and_dict_are_equal():
    """A path (str or Path), the file's text and its parsed TOML (tomllib, the
    standard library's reader) give the same case; only the file name differs."""
    text = DEMO.read_text(encoding="utf-8")
    from_path = racfield.load_case(DEMO)
    from_str_path = racfield.load_case(str(DEMO))
    from_text = racfield.load_case(text)
    from_dict = racfield.load_case(tomllib.loads(text))
    assert from_path.path == from_str_path.path == str(DEMO)
    assert from_text.path == from_dict.path == ""
    assert dataclasses.replace(from_path, path="") == from_text == from_dict
    assert from_path == from_str_path
    # a one-line text with "=" is TOML text, not a file name (the rule of load_case)
    with pytest.raises(racfield.CaseError, match="sweep"):
        racfield.load_case('title = "no sweep"')


@pytest.mark.parametrize("name", ["bad_material_name.toml", "duplicate_winding_names.toml",
                                  "conductor_outside_window.toml"])
def test_a_bad_dict_gives_the_command_lines_error(name, capsys, monkeypatch):
    """load_case of a bad document (as a dict) raises the CaseError whose line
    racfield check prints for the same document as a file (the command line's
    own path), apart from the file name."""
    monkeypatch.delenv("RACFIELD_DEBUG", raising=False)
    path = ROOT / "tests" / "bad_cases" / name
    with pytest.raises(racfield.CaseError) as raised:
        racfield.load_case(tomllib.loads(path.read_text(encoding="utf-8")))
    assert raised.value.file == ""
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert err == f"racfield: error: {raised.value.in_file(str(path)).line()}\n"
    with pytest.raises(racfield.CaseError) as from_file:
        racfield.load_case(path)
    assert err == f"racfield: error: {from_file.value.line()}\n"


def test_variants_are_solved_one_by_one(capsys):
    """solve() of a case with [[variant]] tables is a ValueError naming
    variant_cases; variant_cases lists the arrangements racfield check prints
    ("== variant NAME", the command line's own listing)."""
    path = ROOT / "cases" / "interleaving_study.toml"
    case = racfield.load_case(path)
    with pytest.raises(ValueError, match=r"variant_cases"):
        racfield.solve(case)
    assert main(["check", str(path)]) == 0
    listed = re.findall(r"^== variant (.+)$", capsys.readouterr().out, flags=re.M)
    arrangements = racfield.variant_cases(case)
    assert [a.variant for a in arrangements] == listed and len(listed) >= 2
    assert all(not a.variants for a in arrangements)


def test_study_points_are_arrangements(capsys):
    """A [study] case: variant_cases gives one case per study point, named as
    racfield check names them."""
    path = ROOT / "cases" / "design_study.toml"
    case = racfield.load_case(path)
    with pytest.raises(ValueError, match=r"variant_cases"):
        racfield.solve(case)
    assert main(["check", str(path)]) == 0
    listed = re.findall(r"^== variant (.+)$", capsys.readouterr().out, flags=re.M)
    assert [a.variant for a in racfield.variant_cases(case)] == listed


# ---------------------------------------------------------------------------
# what the command line imports, and its version


def _modules_after(code: str) -> set[str]:
    """The modules a fresh interpreter holds after running ``code``."""
    probe = code + "\nimport sys\nprint('\\n'.join(sorted(sys.modules)))\n"
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, timeout=120, cwd=ROOT)
    assert done.returncode == 0, done.stderr
    return set(done.stdout.split())


def _heavy(modules: set[str]) -> list[str]:
    return sorted(m for m in modules if any(m == h or m.startswith(h + ".") for h in HEAVY))


def test_help_and_import_load_no_solver():
    """`import racfield` and the parser's --help import none of gmsh,
    matplotlib, scikit-fem, distributed, meshio or racfield.fem (sys.modules
    of a fresh interpreter)."""
    assert _heavy(_modules_after("import racfield")) == []
    help_code = ("import contextlib, io\nfrom racfield.cli import main\n"
                 "with contextlib.redirect_stdout(io.StringIO()):\n"
                 "    try:\n        main(['--help'])\n    except SystemExit:\n        pass\n")
    assert _heavy(_modules_after(help_code)) == []
    check_code = (f"import contextlib, io\nfrom racfield.cli import main\n"
                  f"with contextlib.redirect_stdout(io.StringIO()):\n    assert main(['check', {str(DEMO)!r}]) == 0\n")
    assert _heavy(_modules_after(check_code)) == []
    # the names resolve when first used (PEP 562): racfield.api comes with racfield.solve
    assert "racfield.api" not in _modules_after("import racfield")
    assert "racfield.api" in _modules_after("import racfield\nassert racfield.solve.__module__ == 'racfield.api'")


def test_version_is_the_installed_one():
    """racfield --version prints "racfield X.Y.Z", the version importlib.metadata
    reports for the installed distribution."""
    done = subprocess.run([sys.executable, "-m", "racfield", "--version"], capture_output=True, text=True,
                          timeout=60)
    assert done.returncode == 0
    assert done.stdout == f"racfield {version('racfield')}\n"
    assert racfield.__version__ == version("racfield")


def test_unknown_attribute_is_an_attribute_error():
    """PEP 562: a name racfield does not export raises AttributeError."""
    with pytest.raises(AttributeError):
        racfield.no_such_name
    assert {"load_case", "solve", "Results", "CaseError", "variant_cases"} <= set(dir(racfield))


def test_readme_section_matches_the_example():
    """The README's "From Python" code block is tests/readme_from_python.py."""
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "## From Python" in readme, "README needs its \"## From Python\" section (tests/readme_from_python.py)"
    section = readme.split("## From Python", 1)[1]
    block = re.search(r"```python\n(.*?)```", section, flags=re.S)
    assert block is not None and block.group(1) == EXAMPLE.read_text(encoding="utf-8")
