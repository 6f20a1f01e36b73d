"""Case files from someone else: they cannot write outside the results folder,
hang the tool or crash it.

The rule for bad input (README, "Bad input" and "Your files are safe") is the
specification: one line on stderr naming the file and the key, exit status 2,
no traceback, nothing written outside the results folder, and an answer within
5 s.  The inputs that cannot be stored in git as files of their own (FIFOs,
devices, symbolic links, huge or deeply nested documents, interrupted runs)
are made here; the others are in tests/bad_cases/.  Path rules: the reserved
device names are those of the Windows file systems (Microsoft, "Naming Files,
Paths, and Namespaces"); the rest is common practice for tools that turn names
into folders.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from racfield.cli import main
from racfield.geometry.case import CaseError, parse_case
from racfield.geometry.case.loader import MAX_DEPTH, parse_toml
from racfield.geometry.case.names import MAX_NAME, check_name, folder_slug, name_key
from racfield.geometry.case.study import study_points
from racfield.postprocess import writers

EXIT_BAD_INPUT = 2
LIMIT_S = 5.0

CASE = '''title = {title}

[model]
length = "30 mm"

[sweep]
frequencies = ["100 kHz"]

[window]
width = "2 mm"
height = "3 mm"
boundary = "open"

[[winding]]
name = {name}
{current}

[[layer]]
winding = {name}
conductor = {{ shape = "round", diameter = "0.4 mm" }}
turns = 4
'''


def case_text(title='"hostile"', name='"p"', current='current = "1 A"', extra="") -> str:
    return CASE.format(title=title, name=name, current=current) + extra


def listing(folder: Path) -> set[str]:
    return {p.relative_to(folder).as_posix() for p in folder.rglob("*")}


def one_line_error(capsys, code: int, key: str) -> str:
    out, err = capsys.readouterr()
    assert code == EXIT_BAD_INPUT, (out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("racfield: error: "), err
    assert "Traceback" not in err and key in lines[0], err
    assert "\x1b" not in err and "\x00" not in err and "\x07" not in err
    return lines[0]


def run_in(tmp_path: Path, text: str, command: str = "check", capsys=None, key: str = "") -> str:
    case = tmp_path / "case.toml"
    case.write_text(text, encoding="utf-8")
    before = listing(tmp_path)
    started = time.perf_counter()
    code = main([command, str(case)] + (["--out", str(tmp_path / "out")] if command == "run" else []))
    assert time.perf_counter() - started < LIMIT_S
    line = one_line_error(capsys, code, key)
    assert listing(tmp_path) - before <= ({"out"} if command == "run" else set())  # nothing else written
    return line


# -- 1. names that become paths --------------------------------------------------------

@pytest.mark.parametrize("name", ["..", ".", "../../x", "a/b", "a\\b", "CON", "nul.txt", "x" * (MAX_NAME + 1),
                                  "tab\there", "bell\u0007", "rtl\u202eoverride", ""])
def test_a_variant_name_that_is_not_one_path_component_is_refused(tmp_path, capsys, name):
    variant = f'\n[[variant]]\nname = {json.dumps(name)}\n[[variant.layer]]\n' \
              'winding = "p"\nconductor = { shape = "round", diameter = "0.4 mm" }\nturns = 3\n'
    for command in ("check", "run"):
        run_in(tmp_path, case_text(extra=variant), command, capsys, "variant[1].name")
    assert not (tmp_path / "out" / "results.json").exists()


def test_study_values_become_folders_inside_the_results_folder(tmp_path, capsys):
    # a value that looks like a path: the point's folder is a slug inside the results folder
    study = '\n[[study.axis]]\nkey = "title"\nvalues = ["../../escaped", "a/b"]\n'
    case = tmp_path / "case.toml"
    case.write_text(case_text(extra=study), encoding="utf-8")
    outside = listing(tmp_path)
    assert main(["run", str(case), "--out", str(tmp_path / "out"), "--quiet", "--workers", "1"]) == 0
    capsys.readouterr()
    assert {p.split("/")[0] for p in listing(tmp_path) - outside} == {"out"}
    folders = sorted(p.name for p in (tmp_path / "out").iterdir() if p.is_dir() and not p.name.startswith("."))
    assert len(folders) == 2 and all(".." not in f for f in folders), folders
    assert all((tmp_path / "out" / f).resolve().parent == (tmp_path / "out").resolve() for f in folders)


def test_the_second_line_of_defence_refuses_a_path_outside_the_folder(tmp_path):
    # whatever a name check misses, nothing is claimed for writing outside the results folder
    from racfield.checkpoint import RunState
    state = RunState(tmp_path / "out")
    with pytest.raises(CaseError, match="outside the results folder"):
        state.claim([tmp_path / "out" / ".." / "results.json"], force=True, case_file="case.toml")
    with pytest.raises(CaseError, match="outside the results folder"):
        state.claim([tmp_path / "elsewhere.csv"], force=False, case_file="case.toml")


def test_names_are_unique_after_normalisation_and_case_folding():
    # "PSP" and "psp" are one folder on a case-insensitive file system; NFKC folds the
    # full-width and ligature forms (Unicode Standard Annex #15)
    assert name_key("PSP") == name_key("psp") == name_key("\uff30\uff33\uff30")
    points = study_points({"axis": [{"key": "title", "values": ["A b", "a b", "a_b"]}]})
    slugs = [folder_slug(p.name).lower() for p in points]
    assert len(set(slugs)) == len(slugs) == 3, [p.name for p in points]


@settings(max_examples=300, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(st.text(max_size=120))
def test_fuzzed_names_are_refused_or_safe(name):
    # any text: refused with a CaseError, or printable, short, and a safe single folder
    try:
        checked = check_name(name, "winding[1].name")
    except CaseError as error:
        assert "\n" not in str(error) and "\x1b" not in str(error)
        return
    slug = folder_slug(checked)
    assert len(checked) <= MAX_NAME and checked.isprintable()
    assert slug not in (".", "..") and "/" not in slug and "\\" not in slug and 0 < len(slug) <= 81


@settings(max_examples=200, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(st.dictionaries(st.sampled_from(["mode", "axis", "point", "other"]),
                       st.recursive(st.none() | st.booleans() | st.integers() | st.text(max_size=30),
                                    lambda inner: st.lists(inner, max_size=3)
                                    | st.dictionaries(st.sampled_from(["key", "values", "labels", "title"]),
                                                      inner, max_size=3), max_leaves=12), max_size=3))
def test_fuzzed_study_tables_give_points_or_one_line(table):
    try:
        points = study_points(table)
    except CaseError as error:
        assert "\n" not in str(error) and "\x1b" not in str(error)
        return
    slugs = [folder_slug(p.name).lower() for p in points]
    assert len(set(slugs)) == len(slugs)
    assert all(len(p.name) <= MAX_NAME and ".." != folder_slug(p.name) for p in points)


# -- 2. text that would reach the terminal ---------------------------------------------

def test_control_characters_in_a_key_are_escaped_in_the_message(tmp_path, capsys):
    line = run_in(tmp_path, case_text() + '\n"\\u001b]0;owned\\u0007\\u001b[2J" = 1\n', "check", capsys, "unknown key")
    assert "\\x1b" in line


@pytest.mark.parametrize("field, size, key", [("name", 200_000, "winding[1].name"),
                                              ("title", 3_000_000, "title"),
                                              ("title", 10_000_000, "MiB limit")])
def test_a_huge_name_or_title_is_refused_at_once(tmp_path, capsys, field, size, key):
    text = case_text(**{field: '"' + "x" * size + '"'})
    line = run_in(tmp_path, text, "check", capsys, key)
    assert len(line) < 2000


# -- 3. parser failures -----------------------------------------------------------------

@pytest.mark.parametrize("text", ["x = " + "[" * 100_000 + "]" * 100_000,
                                  "x = " + "{a = " * 5_000 + "1" + "}" * 5_000])
def test_deeply_nested_toml_is_bad_input(tmp_path, capsys, text):
    run_in(tmp_path, text + "\n", "check", capsys, "nested")


def test_a_nested_document_from_python_is_refused():
    doc: dict = {"title": "deep"}
    node = doc
    for _ in range(MAX_DEPTH + 2):
        node["x"] = {}
        node = node["x"]
    with pytest.raises(CaseError, match="nested"):
        parse_case(doc)
    assert parse_toml("a = [[1, 2], [3]]\n") == {"a": [[1, 2], [3]]}


# -- 4. files that are not regular files --------------------------------------------------

def racfield(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "racfield", *args], cwd=cwd, capture_output=True, text=True,
                          timeout=60, stdin=subprocess.DEVNULL)


def test_a_fifo_waveform_file_or_case_file_does_not_hang(tmp_path):
    os.mkfifo(tmp_path / "primary.csv")
    os.mkfifo(tmp_path / "fifo.toml")
    (tmp_path / "case.toml").write_text(case_text(current='waveform = { file = "primary.csv" }')
                                        .replace('[sweep]\nfrequencies = ["100 kHz"]', '[waveform]\nperiod = "10 us"'))
    for case, key in (("case.toml", "winding[1].waveform"), ("fifo.toml", "FIFO")):
        started = time.perf_counter()
        done = racfield("check", case, cwd=tmp_path)
        assert time.perf_counter() - started < LIMIT_S + 3  # includes starting Python
        assert done.returncode == EXIT_BAD_INPUT and len(done.stderr.strip().splitlines()) == 1, done.stderr
        assert key in done.stderr and "FIFO" in done.stderr and "Traceback" not in done.stderr


def test_a_device_or_a_folder_as_the_case_file_is_bad_input(tmp_path, capsys):
    for path, word in (("/dev/zero", "device"), (str(tmp_path), "folder")):
        assert main(["check", path]) == EXIT_BAD_INPUT
        err = capsys.readouterr().err
        assert len(err.strip().splitlines()) == 1 and word in err


def test_a_symbolic_link_out_of_the_case_folder_is_refused(tmp_path, capsys):
    outside = tmp_path / "outside"
    inside = tmp_path / "case"
    outside.mkdir()
    inside.mkdir()
    (outside / "primary.csv").write_text("time_s,current_a\n0,0\n5e-6,1\n")
    (inside / "primary.csv").symlink_to(outside / "primary.csv")
    run_in(inside, case_text(current='waveform = { file = "primary.csv" }')
           .replace('[sweep]\nfrequencies = ["100 kHz"]', '[waveform]\nperiod = "10 us"'),
           "check", capsys, "winding[1].waveform.file")


# -- 5. numbers that would underflow ----------------------------------------------------------

def test_a_current_of_1e_200_amperes_is_refused(tmp_path, capsys):
    for command in ("check", "run"):
        run_in(tmp_path, case_text(current="current = 1e-200"), command, capsys, "winding[1].current")


# -- 6. an interrupted write ------------------------------------------------------------------

def test_a_run_killed_while_writing_can_be_run_again_without_force(tmp_path, capsys, monkeypatch):
    case = tmp_path / "case.toml"
    case.write_text(case_text(), encoding="utf-8")
    original = writers.WRITERS["conductors.csv"]

    def killed(report, directory):
        original(report, directory)
        raise KeyboardInterrupt  # the run is stopped after some of its files are in place

    monkeypatch.setitem(writers.WRITERS, "conductors.csv", killed)
    assert main(["run", str(case), "--out", str(tmp_path / "out"), "--quiet"]) == 130
    monkeypatch.setitem(writers.WRITERS, "conductors.csv", original)
    assert (tmp_path / "out" / "rac.csv").exists()
    capsys.readouterr()
    assert main(["run", str(case), "--out", str(tmp_path / "out"), "--quiet"]) == 0, capsys.readouterr().err
