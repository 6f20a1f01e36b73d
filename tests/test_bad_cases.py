"""The catalogue of bad case files: tests/bad_cases/*.toml.

Every file there is a case with one thing wrong.  It starts with comment lines
in a fixed form, read by this test:

    # bad case: what is wrong, in words
    # expect-key: the key path the message must name (``(file)``: the file as a whole)
    # expect-text: further text the message must contain (any number of lines)

The rule for bad input (README, "Case file reference"; DEVELOPERS, Conventions)
is the specification: ``racfield check CASE`` and ``racfield run CASE`` print
exactly one line on stderr, ``racfield: error: FILE: KEY: what is wrong; how
to fix it``, exit with status 2, print no traceback, and ``run`` writes no
results.  Each file runs in-process through ``postprocess.cli.main`` (the code
the command runs); three also run as real processes for the real exit status.

Add a file to extend the catalogue: no change here is needed.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import pytest

from racfield.cli import main

BAD_CASES = Path(__file__).resolve().parent / "bad_cases"
EXIT_BAD_INPUT = 2
WHOLE_FILE = "(file)"

#: what the catalogue must keep covering (issue "Trustworthy under bad input", item 1)
REQUIRED = {
    "toml_syntax_error", "unknown_key_did_you_mean", "wrong_unit_current_as_length",
    "missing_unit_quoted_number", "negative_size", "zero_size", "turns_do_not_fit_layer",
    "layers_do_not_fit_window", "overlapping_explicit_conductors", "conductor_outside_window",
    "winding_without_turns", "layer_unknown_winding", "duplicate_winding_names", "negative_frequency",
    "frequencies_not_increasing", "log_sweep_start_zero", "log_sweep_start_negative",
    "unbalanced_ampere_turns", "waveform_file_missing", "waveform_csv_malformed", "gap_longer_than_leg",
    "missing_window_width", "string_instead_of_table", "bad_material_name", "bad_boundary_name",
    "axisymmetric_without_inner_radius", "inner_radius_in_planar_model", "empty_file", "non_utf8_bytes",
    "waveform_file_escapes_case_folder", "expression_as_size",
}

#: run as real processes: a syntax error, a former crash (integer beyond the float range), a refused file
SUBPROCESS = [("check", "toml_syntax_error"), ("check", "huge_integer_size"),
              ("run", "waveform_file_escapes_case_folder")]


@dataclass(frozen=True)
class BadCase:
    path: Path
    what: str
    key: str
    texts: tuple[str, ...]


def read_header(path: Path) -> BadCase:
    """The leading comment lines of a catalogue file (read as bytes: some files are not UTF-8)."""
    fields: dict[str, list[str]] = {}
    for raw in path.read_bytes().splitlines():
        if not raw.startswith(b"#"):
            break
        name, sep, value = raw[1:].decode("ascii").strip().partition(":")
        if sep:
            fields.setdefault(name.strip(), []).append(value.strip())
    assert len(fields.get("bad case", [])) == 1, f"{path.name}: needs one '# bad case: ...' line"
    assert len(fields.get("expect-key", [])) == 1, f"{path.name}: needs one '# expect-key: ...' line"
    return BadCase(path, fields["bad case"][0], fields["expect-key"][0], tuple(fields.get("expect-text", [])))


CATALOGUE = [read_header(p) for p in sorted(BAD_CASES.glob("*.toml"))]


def assert_one_line_error(err: str, out: str, case: BadCase) -> str:
    """The rule: one line ``racfield: error: FILE: KEY: problem; fix``; returns the line."""
    assert "Traceback" not in err and "Traceback" not in out, err
    assert err.endswith("\n") and err.count("\n") == 1, f"{case.path.name}: expected one line, got {err!r}"
    line = err[:-1]
    prefix = f"racfield: error: {case.path}: "
    assert line.startswith(prefix), line
    rest = line[len(prefix):]
    if case.key != WHOLE_FILE:
        assert rest.startswith(case.key + ": "), f"{case.path.name}: expected key {case.key!r} first: {line}"
        rest = rest[len(case.key) + 2:]
    problem, sep, fix = rest.rpartition("; ")
    assert sep and problem.strip() and fix.strip(), f"{case.path.name}: expected 'problem; fix': {line}"
    for text in case.texts:
        assert text in line, f"{case.path.name}: expected {text!r} in: {line}"
    return line


def test_catalogue_size_and_coverage():
    # the issue asks for at least 30 distinct bad cases, covering the REQUIRED list
    assert len(CATALOGUE) >= 30
    names = {c.path.stem for c in CATALOGUE}
    assert REQUIRED <= names, f"missing: {sorted(REQUIRED - names)}"
    assert len({c.path.read_bytes() for c in CATALOGUE}) == len(CATALOGUE), "two catalogue files are the same"


def test_helper_files_are_used():
    # every data file in the folder is named by some case (no stray files)
    texts = b"\n".join(c.path.read_bytes() for c in CATALOGUE)
    for extra in sorted(p for p in BAD_CASES.iterdir() if p.suffix != ".toml"):
        assert f'"{extra.name}"'.encode() in texts, f"{extra.name} is not used by any bad case"


@pytest.fixture(autouse=True)
def _no_debug(monkeypatch):
    monkeypatch.delenv("RACFIELD_DEBUG", raising=False)


@pytest.mark.parametrize("case", CATALOGUE, ids=[c.path.stem for c in CATALOGUE])
def test_check_gives_one_line(case, capsys):
    capsys.readouterr()
    status = main(["check", str(case.path)])
    captured = capsys.readouterr()
    assert status == EXIT_BAD_INPUT, captured.err
    assert_one_line_error(captured.err, captured.out, case)
    assert captured.out == ""


@pytest.mark.parametrize("case", CATALOGUE, ids=[c.path.stem for c in CATALOGUE])
def test_run_gives_one_line_and_writes_nothing(case, tmp_path, capsys):
    out = tmp_path / "results"
    capsys.readouterr()
    status = main(["run", str(case.path), "--out", str(out), "--quiet"])
    captured = capsys.readouterr()
    assert status == EXIT_BAD_INPUT, captured.err
    assert_one_line_error(captured.err, captured.out, case)
    assert captured.out == ""
    assert not out.exists() and list(tmp_path.iterdir()) == []
    assert not case.path.with_suffix("").exists()   # nor the default folder beside the case


def racfield_command() -> list[str]:
    """The console script of this interpreter's environment, else ``python -m``."""
    script = shutil.which("racfield", path=str(Path(sys.executable).parent))
    return [script] if script else [sys.executable, "-m", "racfield"]


@pytest.mark.parametrize("command,name", SUBPROCESS, ids=[f"{c}-{n}" for c, n in SUBPROCESS])
def test_real_process_exit_status(command, name, tmp_path):
    case = next(c for c in CATALOGUE if c.path.stem == name)
    args = [command, str(case.path)] + (["--out", str(tmp_path / "results")] if command == "run" else [])
    env = {k: v for k, v in os.environ.items() if k != "RACFIELD_DEBUG"}
    result = subprocess.run(racfield_command() + args, cwd=tmp_path, env=env, capture_output=True,
                            text=True, encoding="utf-8", timeout=120)
    assert result.returncode == EXIT_BAD_INPUT, result.stderr
    assert_one_line_error(result.stderr, result.stdout, case)
    assert result.stdout == "" and list(tmp_path.iterdir()) == []
