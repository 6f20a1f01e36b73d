"""A case as the solver takes it: the case file read and checked
(:mod:`racfield.geometry.case`) and every arrangement's conductors placed
(:mod:`racfield.geometry.layout`), so that a command stops on bad input
before it prints, writes or solves anything."""

from __future__ import annotations

from pathlib import Path

from .case import (
    Case,
    CaseError,
    StudyPoint,
    parse_case,
    point_case,
    read_document,
    variant_cases,
)
from .forecast import check_size
from .layout import place
from .turn_length import turn_lengths


def load_case(path: str | Path, allow_outside_files: bool = False, force_size: bool = False) -> Case:
    """Read and check the case file at ``path``, its conductor layout included.
    Files the case names (waveform ``file``) are taken from the case file's
    folder; one outside it is refused unless ``allow_outside_files``.  A case
    whose forecast peak memory exceeds the available memory is refused unless
    ``force_size`` (:mod:`racfield.geometry.forecast`)."""
    name = str(path)
    return checked_layout(parse_case(read_document(path), name, allow_outside_files), force_size)


def checked_layout(case: Case, force_size: bool = False, available: float | None = None) -> Case:
    """``case`` itself, once every arrangement's conductors are placed and,
    unless ``force_size``, its forecast peak memory is within ``available``
    bytes (default: the memory available now); CaseError naming the case file
    otherwise."""
    try:
        for arrangement in variant_cases(case):
            conductors = place(arrangement)
            check_end_turns(arrangement, conductors)
            if not force_size:
                check_size(arrangement, conductors, available)
    except CaseError as error:
        raise error.in_file(case.path) if case.path else error
    return case


def study_case(case: Case, point: StudyPoint, force_size: bool = False) -> Case:
    """The case of one study point, its layout and (unless ``force_size``) its
    size checked (CaseError, naming the file, if its document is bad)."""
    return checked_layout(point_case(case, point), force_size)


def check_end_turns(case: Case, conductors: list) -> None:
    """``[end_turns] length`` is at most the shortest turn's length."""
    if case.end_turns is None or case.end_turns.length is None:
        return
    shortest = float(turn_lengths(case, conductors).metres.min())
    if case.end_turns.length > shortest:
        raise CaseError("end_turns.length", f"{case.end_turns.length * 1e3:.4g} mm is longer than the shortest "
                        f"turn ({shortest * 1e3:.4g} mm)", "give the end-turn length of one turn, or a fraction")
