"""The Python API: read a case, solve it, and get its results as numbers.

    >>> import racfield
    >>> case = racfield.load_case("cases/demo_transformer.toml")
    >>> results = racfield.solve(case)
    >>> results.rac_over_rdc["primary"]          # one value per frequency

The command line (:mod:`racfield.cli`) is a thin layer over these functions:
``racfield run`` of one arrangement solves through :func:`solve_report`, the
same path as :func:`solve`, and so gives the same numbers.

Importing this module imports neither the solver nor gmsh nor matplotlib;
:func:`solve` does, when first called.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Callable

from racfield.geometry.case import Case, parse_case, parse_toml
from racfield.geometry.case import variant_cases as _arrangements
from racfield.geometry.load import checked_layout, load_case as _load_file, study_case

from .results import Results

if TYPE_CHECKING:
    from racfield.fem.sweep import PointResult, SweepResult
    from racfield.postprocess.report import Report

#: progress(done, total, frequency_hz): called after every solved frequency
Progress = Callable[[int, int, float], None]


def load_case(source: str | Path | dict, *, allow_outside_files: bool = False, force_size: bool = False) -> Case:
    """The checked case, its conductor layout included.

    ``source`` is one of:

    - a :class:`~pathlib.Path`, or a ``str`` holding neither a line break nor
      an ``=`` sign: the path of a case file (TOML);
    - any other ``str`` (it holds a line break or ``=``, as every case-file
      text does): the text of a case file;
    - a ``dict``: the parsed TOML document (as :func:`tomllib.loads` gives it).

    Files the case names (a waveform ``file``) are found in the case file's
    folder; for text or a dict, in the current folder.  A file outside that
    folder is refused unless ``allow_outside_files``.

    Bad input raises :class:`~racfield.geometry.case.errors.CaseError`, whose
    one-line message is the one ``racfield check`` prints (after
    ``racfield: error: ``); for text or a dict it names no file.  The case's
    notes (remarks that are not errors) are in ``case.notes``.

    A case whose forecast peak memory (:mod:`racfield.geometry.forecast`)
    exceeds the memory available now is refused with a CaseError naming
    ``[mesh] density`` and ``[mesh] frequency``; ``force_size`` skips that
    check (``racfield run --force-size``).
    """
    if isinstance(source, dict):
        return checked_layout(parse_case(source, "", allow_outside_files), force_size)
    if isinstance(source, str) and ("\n" in source or "\r" in source or "=" in source):
        return checked_layout(parse_case(parse_toml(source), "", allow_outside_files), force_size)
    if isinstance(source, (str, Path)):
        return load_case_file(source, allow_outside_files=allow_outside_files, force_size=force_size)
    raise TypeError(f"load_case takes a path, case-file text or a dict, not {source.__class__.__name__}")


def load_case_file(path: str | Path, *, allow_outside_files: bool = False, force_size: bool = False) -> Case:
    """:func:`load_case` of the case file at ``path``, whatever its name holds
    (errors name the file as given: ``racfield run`` and ``check`` read this way)."""
    return _load_file(path, allow_outside_files=allow_outside_files, force_size=force_size)


def variant_cases(case: Case, *, force_size: bool = False) -> list[Case]:
    """Every arrangement of ``case``, each a case of its own to :func:`solve`:
    the case itself when it has neither ``[[variant]]`` tables nor a
    ``[study]``; otherwise the base arrangement (if the case has layers or
    conductors of its own) and each variant, or each study point (in the
    order of the study; a point whose case is bad raises its CaseError, as a
    point too large for the memory does unless ``force_size``).  Each
    arrangement's name is its ``variant`` attribute."""
    if case.study:
        return [study_case(case, point, force_size) for point in case.study]
    return _arrangements(case)


def _single(case: Case) -> None:
    """ValueError unless ``case`` is one arrangement."""
    count = len(case.study) if case.study else len(_arrangements(case))
    if case.study or case.variants:
        kind = "[study] points" if case.study else "[[variant]] arrangements"
        raise ValueError(f"the case {case.title!r} has {count} {kind}; solve each one: "
                         "[racfield.solve(c) for c in racfield.variant_cases(case)]")


def solve(case: Case, *, exact: bool = False, progress: Progress | None = None,
          check_mesh: bool = False) -> Results:
    """Solve every frequency of ``case`` (one arrangement) and return its
    :class:`Results` (what ``racfield run`` writes into results.json).

    ``exact``: one full solve per frequency (no reduced-order sweep), as
    ``racfield run --exact``.  ``progress(done, total, frequency_hz)``: called
    after every solved frequency.  ``check_mesh``: also solve the highest
    frequency on two finer meshes and estimate the discretization error of
    every winding's Rac and L by Richardson extrapolation (``racfield run
    --check-mesh``; its result in ``results.document["error_estimate"]``).

    A case with ``[[variant]]`` tables or a ``[study]`` is several
    arrangements: ValueError, naming :func:`variant_cases`, whose cases are
    solved one by one."""
    _single(case)
    return Results.from_report(solve_report(case, exact=exact, progress=progress, check_mesh=check_mesh))


def solve_report(case: Case, *, exact: bool = False, progress: Progress | None = None,
                 check_mesh: bool = False, done: "dict[int, PointResult] | None" = None,
                 on_point: "Callable[[int, PointResult, Callable[[], SweepResult]], None] | None" = None
                 ) -> "Report":
    """The solve path of :func:`solve` and of ``racfield run``: the sweep of
    one arrangement and its report.  ``done`` and ``on_point``: the points
    already solved and the hook after each newly solved one (resumable runs,
    see :func:`racfield.fem.whole_turns.run_case_sweep`)."""
    from threadpoolctl import threadpool_limits

    from racfield.fem.whole_turns import run_case_sweep
    from racfield.postprocess.report import build_report

    from .mesh_check import error_estimate

    # one BLAS thread, as in a worker of the pool: every way of running gives the same numbers
    with threadpool_limits(limits=1):
        sweep = run_case_sweep(case, progress=progress, method="exact" if exact else "auto",
                                    done=done, on_point=on_point)
        report = build_report(case, sweep)
        if check_mesh:
            report.error_estimate = error_estimate(report)
    return report
