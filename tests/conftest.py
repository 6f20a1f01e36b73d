"""Fixtures shared by several test files.

``case_run``: the cases of cases/ run through the command line at most once
per test session, so that the tests of different files that check the same
run (tests/test_cases.py, tests/test_waveforms.py) share it.
"""

from __future__ import annotations

import contextlib
import io
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

import pytest

from racfield.cli import main

CASES = Path(__file__).resolve().parents[1] / "cases"


@dataclass(frozen=True)
class CaseRun:
    """One finished ``racfield run`` of a case: its results folder, exit
    status and what it printed on stdout."""

    folder: Path
    status: int
    stdout: str


@pytest.fixture(scope="session")
def case_run(tmp_path_factory) -> Callable[[str], CaseRun]:
    """``case_run(stem)``: ``racfield run cases/STEM.toml --quiet --workers 1``
    into a fresh folder, once per session (later calls return the same run).

    ``--workers 1`` runs the variants of a case one after the other in this
    process; the local pool and the cluster are tested in tests/test_study.py,
    which shows that they give the same numbers."""
    runs: dict[str, CaseRun] = {}

    def run(stem: str) -> CaseRun:
        if stem not in runs:
            folder = tmp_path_factory.mktemp(stem)
            printed = io.StringIO()
            with contextlib.redirect_stdout(printed):
                status = main(["run", str(CASES / f"{stem}.toml"), "--out", str(folder), "--quiet",
                               "--workers", "1"])
            runs[stem] = CaseRun(folder, status, printed.getvalue())
        return runs[stem]

    return run
