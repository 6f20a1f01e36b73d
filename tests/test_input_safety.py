"""A case file is data: nothing in it is evaluated, and it reads only files beside it.

(a) No ``eval``, ``exec``, ``compile`` or ``__import__`` in the code that reads
    a case (``geometry/``); an expression written where a quantity belongs is
    refused as an unreadable quantity, and has no side effect.
(b) A file the case names (a winding's waveform ``file``) is taken from the
    case file's folder; one that resolves outside it (``..``, an absolute path,
    a symbolic link) is refused with a one-line error naming the key, unless
    ``allow_outside_files`` (``--allow-outside-files`` on the command line).

The rules themselves are the specification here (README, "Case file reference").
"""

from __future__ import annotations

import ast
import json
import os
from pathlib import Path

import pytest

from racfield.geometry.case import parse_case

from racfield.geometry.load import load_case
from racfield.geometry.case.errors import CaseError
from racfield.geometry.case.units import quantity
from racfield.geometry.case.waveform_input import time_value
from racfield.cli import main

GEOMETRY = Path(__file__).resolve().parents[1] / "geometry"
CASES = Path(__file__).resolve().parents[1] / "cases"
FORBIDDEN_CALLS = {"eval", "exec", "compile", "__import__"}
FORBIDDEN_MODULES = {"pickle", "marshal", "shelve", "importlib", "subprocess", "yaml"}

#: strings that would leave a trace (a file named SENTINEL in the current folder) if evaluated
SENTINEL = "racfield_evaluated_me"
EXPRESSIONS = [
    f"__import__('pathlib').Path('{SENTINEL}').touch()",
    f"open('{SENTINEL}', 'w')",
    "__import__('os').getcwd()",
    "1e-3 * 4",
    "2 * 0.1 mm",
    "(0.4) mm",
    "{0.4} mm",
    "0.4 mm; import os",
    "0.4 mm\n__import__('os')",
]

CSV = "time_s,current_a\n0,0\n4e-6,2.0\n5e-6,0\n"


def test_no_code_evaluation_in_the_case_reader():
    # rule (a): the modules that read a case call none of eval/exec/compile/__import__
    # and import nothing that runs code from data (pickle and the like)
    for source in sorted(GEOMETRY.rglob("*.py")):
        tree = ast.parse(source.read_text(encoding="utf-8"), str(source))
        for node in ast.walk(tree):
            if isinstance(node, ast.Call) and isinstance(node.func, ast.Name):
                assert node.func.id not in FORBIDDEN_CALLS, f"{source.name}:{node.lineno}: {node.func.id}()"
            if isinstance(node, ast.Import):
                for alias in node.names:
                    assert alias.name.split(".")[0] not in FORBIDDEN_MODULES, f"{source.name}:{node.lineno}"
            if isinstance(node, ast.ImportFrom) and node.module:
                assert node.module.split(".")[0] not in FORBIDDEN_MODULES, f"{source.name}:{node.lineno}"


@pytest.mark.parametrize("text", EXPRESSIONS)
@pytest.mark.parametrize("kind", ["length", "frequency", "current", "angle", "temperature", "number"])
def test_expression_as_quantity_is_refused_without_side_effect(tmp_path, monkeypatch, kind, text):
    # rule (a): a quantity is a number and a unit, read by a regular expression, never evaluated
    monkeypatch.chdir(tmp_path)
    with pytest.raises(CaseError) as error:
        quantity(text, kind, "window.width")
    assert str(error.value).startswith("window.width: ") and "\n" not in str(error.value)
    assert not (tmp_path / SENTINEL).exists()
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("text", EXPRESSIONS)
def test_expression_as_time_is_refused_without_side_effect(tmp_path, monkeypatch, text):
    monkeypatch.chdir(tmp_path)
    with pytest.raises(CaseError, match=r"^winding\[1\]\.waveform\.delay: "):
        time_value(text, "winding[1].waveform.delay")
    assert list(tmp_path.iterdir()) == []


def test_expression_in_a_case_file_is_a_plain_unit_error(tmp_path, monkeypatch, capsys):
    # rule (a), end to end: the command gives the one-line unit error and leaves no trace
    monkeypatch.chdir(tmp_path)
    path = tmp_path / "case.toml"
    path.write_text(f'''[sweep]
frequencies = ["100 kHz"]
[window]
width = "{EXPRESSIONS[0]}"
height = "4 mm"
boundary = "open"
[[winding]]
name = "a"
[[layer]]
winding = "a"
conductor = {{ shape = "round", diameter = "1 mm" }}
''', encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"racfield: error: {path}: window.width: cannot read ") and err.count("\n") == 1
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case.toml"]


# ---------------------------------------------------------------------------
# (b) files named by a case


def _waveform_case(file_name: str) -> str:
    """A small open-window case whose one winding takes its current from ``file_name``."""
    return f'''[model]
length = "30 mm"
[waveform]
period = "10 us"
[window]
width = "2 mm"
height = "3 mm"
boundary = "open"
[[winding]]
name = "p"
waveform = {{ file = {json.dumps(file_name)} }}
[[layer]]
winding = "p"
conductor = {{ shape = "round", diameter = "0.4 mm" }}
turns = 4
'''


def _folders(tmp_path: Path) -> tuple[Path, Path]:
    """tmp/case (the case folder, with a subfolder) and tmp/outside.csv beside it."""
    folder = tmp_path / "case"
    (folder / "currents").mkdir(parents=True)
    (folder / "currents" / "primary.csv").write_text(CSV, encoding="utf-8")
    (folder / "primary.csv").write_text(CSV, encoding="utf-8")
    (tmp_path / "outside.csv").write_text(CSV, encoding="utf-8")
    return folder, tmp_path / "outside.csv"


@pytest.mark.parametrize("name", ["primary.csv", "./primary.csv", "currents/primary.csv",
                                  "currents/../primary.csv"])
def test_files_inside_the_case_folder_are_read(tmp_path, name):
    # rule (b): a relative name inside the case folder (subfolders too) is read as before
    folder, _ = _folders(tmp_path)
    path = folder / "case.toml"
    path.write_text(_waveform_case(name), encoding="utf-8")
    case = load_case(path)
    assert case.windings[0].waveform.kind == "file"
    assert case.windings[0].waveform.points[1] == (4e-6, 2.0)


def test_an_absolute_path_inside_the_case_folder_is_read(tmp_path):
    folder, _ = _folders(tmp_path)
    path = folder / "case.toml"
    path.write_text(_waveform_case(str((folder / "primary.csv").resolve())), encoding="utf-8")
    assert load_case(path).windings[0].waveform.kind == "file"


def _outside_names(folder: Path, outside: Path) -> dict[str, str]:
    names = {"dotdot": "../outside.csv", "deep-dotdot": "currents/../../outside.csv",
             "absolute": str(outside.resolve())}
    try:
        (folder / "link.csv").symlink_to(outside)
        names["symlink"] = "link.csv"
    except OSError:  # no symbolic links on this system
        pass
    return names


def test_files_outside_the_case_folder_are_refused(tmp_path, capsys):
    # rule (b): "..", an absolute path and a symbolic link that lead outside are refused,
    # by the loader and by both commands, with one line naming the key and the way out
    folder, outside = _folders(tmp_path)
    names = _outside_names(folder, outside)
    for label, name in names.items():
        path = folder / f"{label}.toml"
        path.write_text(_waveform_case(name), encoding="utf-8")
        with pytest.raises(CaseError) as error:
            load_case(path)
        line = str(error.value)
        assert line == (f'{path}: winding[1].waveform.file: "{name}" escapes the case folder; '
                        "move the file beside the case or pass --allow-outside-files"), label
        for command in (["check", str(path)], ["run", str(path), "--out", str(tmp_path / "results")]):
            capsys.readouterr()
            assert main(command) == 2, (label, command)
            captured = capsys.readouterr()
            assert captured.err == f"racfield: error: {line}\n" and captured.out == ""
        assert not (tmp_path / "results").exists()


def test_allow_outside_files_reads_them(tmp_path, capsys):
    # rule (b): allow_outside_files / --allow-outside-files lifts the refusal
    folder, outside = _folders(tmp_path)
    for label, name in _outside_names(folder, outside).items():
        path = folder / f"{label}.toml"
        path.write_text(_waveform_case(name), encoding="utf-8")
        case = load_case(path, allow_outside_files=True)
        assert case.windings[0].waveform.points[1] == (4e-6, 2.0), label
        capsys.readouterr()
        assert main(["check", "--allow-outside-files", str(path)]) == 0, label
        assert "case is valid" in capsys.readouterr().out


def test_refused_file_is_not_opened(tmp_path):
    # rule (b): the refusal comes before any read: a missing file outside gives the same error
    folder = tmp_path / "case"
    folder.mkdir()
    path = folder / "case.toml"
    path.write_text(_waveform_case("../no such file.csv"), encoding="utf-8")
    with pytest.raises(CaseError, match="escapes the case folder"):
        load_case(path)
    with pytest.raises(CaseError, match='cannot read "../no such file.csv"'):
        load_case(path, allow_outside_files=True)


def test_parse_case_without_a_path_takes_the_current_folder(tmp_path, monkeypatch):
    # rule (b): parse_case(doc) with no case file: the current folder is the case folder
    import tomllib
    folder, _ = _folders(tmp_path)
    monkeypatch.chdir(folder)
    assert parse_case(tomllib.loads(_waveform_case("primary.csv"))).windings[0].waveform.kind == "file"
    with pytest.raises(CaseError, match="escapes the case folder"):
        parse_case(tomllib.loads(_waveform_case("../outside.csv")))
    assert parse_case(tomllib.loads(_waveform_case("../outside.csv")),
                      allow_outside_files=True).windings[0].waveform.kind == "file"


def test_nul_in_a_file_name_is_a_case_error(tmp_path):
    folder, _ = _folders(tmp_path)
    path = folder / "case.toml"
    path.write_text(_waveform_case("primary\0.csv"), encoding="utf-8")
    with pytest.raises(CaseError, match=r"winding\[1\]\.waveform\.file: .*NUL"):
        load_case(path)


def test_cases_folder_still_loads():
    # the shipped cases read no file outside their folder
    for path in sorted(CASES.glob("*.toml")):
        load_case(path)
    assert os.path.exists(CASES / "flyback_waveforms.toml")


def test_both_commands_take_the_flag():
    # rule (b): run and check accept --allow-outside-files; it is off unless given
    from racfield.cli import parser
    for command in ("run", "check"):
        assert parser().parse_args([command, "case.toml", "--allow-outside-files"]).allow_outside_files is True
        assert parser().parse_args([command, "case.toml"]).allow_outside_files is False


def test_study_points_inherit_allow_outside_files(tmp_path):
    # rule (b): a [study] point is made a case from the same file: the flag given for the
    # case holds for its points (and the refusal without it)
    from racfield.geometry.load import study_case
    folder, _ = _folders(tmp_path)
    path = folder / "study.toml"
    path.write_text(_waveform_case("../outside.csv") + '\n[[study.axis]]\nkey = "layer[1].turns"\n'
                    "values = [2, 4]\n", encoding="utf-8")
    with pytest.raises(CaseError, match="escapes the case folder"):
        load_case(path)
    case = load_case(path, allow_outside_files=True)
    points = [study_case(case, point) for point in case.study]
    assert [p.layers[0].turns for p in points] == [2, 4]
    assert all(p.windings[0].waveform.kind == "file" for p in points)
