"""Running the variants of a case in a local pool of worker processes or on an
existing Dask distributed cluster (the command line runs them one after the
other in its own process itself, see :func:`racfield.cli.command_run`).

Every variant is an independent job: its :class:`~geometry.case.Case` goes to
a worker, the worker runs the sweep (BLAS limited to one thread, so that
workers do not oversubscribe the cores and every way of running gives the
same numbers), and its :class:`~fem.sweep.SweepResult` comes back to this
process, which writes the files.  Nothing passes through a shared disk.  A
variant that fails (bad geometry for one axis value, an internal error)
comes back with its error line; a worker lost while running a variant makes
the scheduler run it once more (``distributed.scheduler.allowed-failures``,
set to 1 for the local pool), and a second loss fails that variant alone.
"""

from __future__ import annotations

import os
import sys
import time
from contextlib import contextmanager
from dataclasses import dataclass
from typing import TYPE_CHECKING, Callable, Iterable

from racfield.geometry.case import Case, variant_cases
from racfield.geometry.case.errors import CaseError
from racfield.geometry.load import study_case
from racfield.postprocess.comparison import folder_name

if TYPE_CHECKING:   # the solver is imported by the functions that solve
    from racfield.fem.sweep import SweepResult
    from racfield.postprocess.report import Report


def arrangements(case: Case, force_size: bool = False) -> list[tuple[str, str | None, Case | None, str | None]]:
    """(folder key, name, case or None, error line) of every arrangement: the
    case alone, its [[variant]] arrangements, or its [study] points (a bad
    point, or one too large for the memory unless ``force_size``, is kept with
    its error, to fail alone)."""
    if case.study:
        out = []
        for point in case.study:
            try:
                out.append((folder_name(point.name), point.name, study_case(case, point, force_size), None))
            except CaseError as error:
                out.append((folder_name(point.name), point.name, None, error.line()))
        return out
    if case.variants:
        return [(folder_name(a.variant), a.variant, a, None) for a in variant_cases(case)]
    return [("", None, case, None)]


@dataclass
class Job:
    """One variant to run: ``case`` None when its document was refused (``error``)."""

    key: str
    case: Case | None
    error: str | None = None


@dataclass
class Outcome:
    """A finished job: the sweep and its result files (name -> bytes, rendered
    by the worker), or (None) the error line of a refused or failed variant."""

    key: str
    sweep: "SweepResult | None"
    error: str | None
    files: dict[str, bytes] | None = None
    error_estimate: dict | None = None


def _render(report: "Report") -> dict[str, bytes]:
    """The variant's result files as bytes (written to a private temporary
    folder of the worker and read back)."""
    import tempfile
    from pathlib import Path

    from racfield.postprocess.writers import write_all

    with tempfile.TemporaryDirectory(prefix="racfield-") as folder:
        return {p.name: p.read_bytes() for p in write_all(report, Path(folder))}


def solve_job(case: Case, exact: bool, render: bool = False, check_mesh: bool = False):
    """Run in a worker: (sweep, files, error estimate, None) of one variant, or
    (None, None, None, its one-line error).  ``render``: also make the result
    files there (and the error estimate, if asked for), so that the client only
    writes bytes."""
    from threadpoolctl import threadpool_limits

    from .api import solve_report

    with threadpool_limits(limits=1):
        try:
            report = solve_report(case, exact=exact, check_mesh=check_mesh and render)
            if not render:
                return report.sweep, None, None, None
            return report.sweep, _render(report), report.error_estimate, None
        except CaseError as error:
            return None, None, None, error.line()
        except Exception as error:  # a bug in one variant must not stop the others
            return None, None, None, f"internal error: {error.__class__.__name__}: {error}"


def default_workers() -> int:
    """Worker processes for the local pool: the machine's cores."""
    return max(1, len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count() or 1)


class Progress:
    """One status line: variants done, running, queued (and failed)."""

    def __init__(self, total: int, slots: int, stream=sys.stderr, quiet: bool = False) -> None:
        self.total, self.slots, self.stream, self.quiet = total, slots, stream, quiet
        self.done = self.failed = 0
        self.started = time.perf_counter()

    def show(self) -> None:
        if self.quiet:
            return
        waiting = self.total - self.done - self.failed
        running = min(waiting, self.slots)
        line = (f"  variants: {self.done} done, {running} running, {waiting - running} queued"
                + (f", {self.failed} failed" if self.failed else "")
                + f"  {time.perf_counter() - self.started:6.1f} s")
        end = "\n" if not self.stream.isatty() or waiting == 0 else ""
        self.stream.write(("\r" if self.stream.isatty() else "") + line + end)
        self.stream.flush()

    def count(self, outcome: Outcome) -> None:
        if outcome.error is None:
            self.done += 1
        else:
            self.failed += 1
        self.show()


def run_jobs(jobs: list[Job], exact: bool, workers: int, cluster: str | None,
             finished: Callable[[Outcome], None], quiet: bool = False, check_mesh: bool = False) -> list[Outcome]:
    """Run ``jobs`` and call ``finished`` with each outcome as it arrives (in
    this process): on a local pool of ``workers`` processes, or on the Dask
    scheduler at ``cluster`` (an address such as tcp://10.0.0.5:8786)."""
    ready = [Outcome(j.key, None, j.error) for j in jobs if j.case is None]
    runnable = [j for j in jobs if j.case is not None]
    progress = Progress(len(jobs), max(workers, 1), quiet=quiet)
    outcomes: list[Outcome] = []

    def deliver(outcome: Outcome) -> None:
        outcomes.append(outcome)
        finished(outcome)
        progress.count(outcome)

    progress.show()
    for outcome in ready:
        deliver(outcome)
    if not runnable:
        return outcomes
    for outcome in _distributed(runnable, exact, workers, cluster, progress, check_mesh):
        deliver(outcome)
    return outcomes


@contextmanager
def dask_client(workers: int, cluster: str | None, progress: Progress | None = None):
    """A Dask client: a local pool of ``workers`` processes (one thread each),
    or the scheduler at ``cluster``; closed (and the pool stopped) on exit."""
    import dask
    from distributed import Client, LocalCluster

    local = None
    if cluster is None:
        # MALLOC_TRIM_THRESHOLD_, which a nanny sets for its worker by default, turns
        # off glibc's adaptive mmap threshold: a sweep then runs some 50 % slower
        with dask.config.set({"distributed.scheduler.allowed-failures": 1,
                              "distributed.nanny.pre-spawn-environ.MALLOC_TRIM_THRESHOLD_": None}):
            local = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True,
                                 host="127.0.0.1", dashboard_address="127.0.0.1:0", silence_logs=50)
        client = Client(local)
    else:
        try:
            client = Client(cluster, timeout=30)
        except (OSError, TimeoutError, ValueError) as error:   # ValueError: not an address
            raise CaseError("--cluster", f"cannot reach the Dask scheduler at {cluster} ({error})",
                            "start a scheduler and workers (see README, Parameter studies) or check the address"
                            ) from None
        if progress is not None:
            progress.slots = max(1, sum(client.nthreads().values()))
    try:
        yield client
    finally:
        client.close()
        if local is not None:
            local.close()


def _distributed(jobs: list[Job], exact: bool, workers: int, cluster: str | None,
                 progress: Progress, check_mesh: bool = False) -> Iterable[Outcome]:
    from distributed import as_completed

    with dask_client(workers, cluster, progress) as client:
        # the workers also render the result files: the client only writes their bytes
        futures = {client.submit(solve_job, job.case, exact, True, check_mesh, key=f"racfield-{i}-{job.key}",
                                 pure=False): job
                   for i, job in enumerate(jobs)}
        for future in as_completed(futures):
            job = futures[future]
            try:
                sweep, files, checked, error = future.result()
            except Exception as lost:  # the worker was lost (twice) or the task could not run
                # (not "as error": Python unbinds that name when the except block ends)
                sweep, files, checked = None, None, None
                error = f"the variant could not be run: {lost.__class__.__name__}: {lost}"
            yield Outcome(job.key, sweep, error, files, checked)
