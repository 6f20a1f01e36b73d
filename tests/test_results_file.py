"""results.json has one owner (racfield.postprocess.results_file): its three
readers (``racfield loss``, ``racfield run --resume``, ``racfield report``)
refuse an unreadable or invalid file with one line naming it (the project's
rule for bad input: exit status 2, no traceback), each with its own fix.
No solve here: the documents are written by hand.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from racfield.checkpoint import Manifest, RunState, fingerprint
from racfield.cli import main
from racfield.geometry.case.errors import CaseError
from racfield.geometry.load import load_case
from racfield.postprocess import results_file

ROOT = Path(__file__).resolve().parents[1]
GARBAGE = {"not json": "{not json", "a list": "[1, 2]", "no windings": '{"title": "t", "frequencies_hz": [1.0]}'}


@pytest.fixture(autouse=True)
def _no_debug(monkeypatch):
    monkeypatch.delenv("RACFIELD_DEBUG", raising=False)


@pytest.mark.parametrize("text", GARBAGE.values(), ids=GARBAGE.keys())
def test_read_refuses_with_one_line_naming_the_file(tmp_path, text):
    path = tmp_path / "results.json"
    path.write_text(text, encoding="utf-8")
    for given in (path, tmp_path):   # the file, or the folder holding it
        with pytest.raises(CaseError) as raised:
            results_file.read(given)
        assert raised.value.file == str(path) and "\n" not in raised.value.line()
        assert "racfield run" in raised.value.fix


def test_read_gives_the_document(tmp_path):
    doc = {"title": "t", "frequencies_hz": [1e3], "windings": {"p": {"loss_w": [0.5]}}}
    (tmp_path / "results.json").write_text(json.dumps(doc), encoding="utf-8")
    assert results_file.read(tmp_path) == doc


def test_missing_file_is_one_line(tmp_path):
    with pytest.raises(CaseError, match="cannot read results.json"):
        results_file.read(tmp_path / "results.json")


@pytest.mark.parametrize("text", GARBAGE.values(), ids=GARBAGE.keys())
def test_loss_and_report_refuse_a_bad_results_json(tmp_path, capsys, text):
    (tmp_path / "results.json").write_text(text, encoding="utf-8")
    assert main(["loss", str(tmp_path), "--current", "p=1 A"]) == 2
    err = capsys.readouterr().err
    assert err == (f"racfield: error: {tmp_path / 'results.json'}: not a racfield results.json with loss "
                   "matrices; give the results.json (or its folder) written by racfield run\n")
    assert main(["report", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"racfield: error: {tmp_path / 'results.json'}: ") and err.count("\n") == 1


def test_resume_refuses_a_damaged_finished_variant(tmp_path, capsys):
    """A resumed run whose finished variant's results.json is damaged stops
    before any solve, with one line naming that file."""
    case_file = tmp_path / "interleaving_study.toml"
    shutil.copy(ROOT / "cases" / case_file.name, case_file)
    out = tmp_path / "out"
    from racfield.execution import arrangements
    key = arrangements(load_case(case_file))[0][0]
    (out / key).mkdir(parents=True)
    (out / key / "results.json").write_text("{not json", encoding="utf-8")
    state = RunState(out)
    state.manifest = Manifest(fingerprint(case_file, load_case(case_file)), {"exact": False},
                              [f"{key}/results.json"], [key])
    state.save()
    assert main(["run", str(case_file), "--out", str(out), "--quiet", "--resume"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert err[-1] == (f"racfield: error: {case_file}: --resume: {out / key / 'results.json'} of a finished "
                       "variant cannot be read; run without --resume to solve everything again")
    assert not list(out.glob("*/rac.csv"))   # nothing solved
