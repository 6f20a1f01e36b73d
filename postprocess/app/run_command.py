"""``racfield run``: solve a case (one arrangement, its variants or its study
points) and write the result files, resumable point by point.

One arrangement solves here through :func:`racfield.api.solve_report`, the
path of :func:`racfield.solve`; several run in a pool of workers or on a
cluster (:mod:`.execution`), each worker through the same function.
"""

from __future__ import annotations

import math
import sys
import time
from pathlib import Path

from racfield.geometry.case import Case
from racfield.geometry.case.errors import CaseError

from racfield.postprocess import results_file
from racfield.postprocess.atomic import replace_bytes
from racfield.postprocess.comparison import COMPARISON_FILES, STUDY_FILES, summary, write_comparison, write_study_table
from racfield.postprocess.harmonics import harmonics_table
from racfield.postprocess.capacitance import capacitance_lines
from racfield.postprocess.thermal import thermal_lines
from racfield.geometry.case.units import format_frequency
from racfield.postprocess.report import CAUTION, Report, build_report, parallel_document, results_document
from racfield.postprocess.writers import WRITERS, write_all

from .api import solve_report
from .checkpoint import RunState, fingerprint
from .execution import Job, Outcome, arrangements, default_workers, run_jobs
from .mesh_check import error_estimate_lines

EXIT_OK, EXIT_PARTIAL = 0, 3

#: a partial results.json is rewritten at most this often during a sweep (s)
PARTIAL_EVERY_S = 2.0


def _progress(stream):
    interactive = stream.isatty()
    started = time.perf_counter()

    def show(done: int, total: int, frequency: float) -> None:
        elapsed = time.perf_counter() - started
        line = f"  solved {done}/{total}  {format_frequency(frequency):>12}  {elapsed:6.1f} s"
        if interactive:
            stream.write("\r" + line + ("\n" if done == total else ""))
        else:
            stream.write(line + "\n")
        stream.flush()

    return show


def _summary_table(report) -> str:
    names = [w.name for w in report.windings]
    head = f"{'frequency':>12} " + " ".join(f"{n[:14] + ' Rac/Rdc':>22} {'loss (W)':>10}" for n in names)
    lines = [head, "-" * len(head)]
    for i, f in enumerate(report.sweep.frequencies):
        cells = []
        for w in report.windings:
            ratio = w.rac_over_rdc[i]
            cells.append(f"{'-' if ratio is None else f'{ratio:.4f}':>22} {w.loss_w[i]:>10.4g}")
        lines.append(f"{format_frequency(f):>12} " + " ".join(cells))
    sections = report.sections
    if sections:
        lines.append(f"whole turns: {sections['end_share'] * 100:.3g} % of each turn's length in the end-turn section; "
                     "Rac/Rdc window / end / whole:")
        for i, f in enumerate(report.sweep.frequencies):
            parts = []
            for w in report.windings:
                ratios = [sections[s]["windings"][w.name]["rac_over_rdc"][i] for s in ("window", "end", "whole")]
                parts.append(f"{w.name[:14]} " + " / ".join("-" if r is None else f"{r:.4f}" for r in ratios))
            lines.append(f"{format_frequency(f):>12}  " + "; ".join(parts))
    return "\n".join(lines)


def _inductance_lines(report) -> str:
    """Self, magnetizing and leakage inductance at the first and last frequency."""
    doc = report.magnetic
    freqs = report.sweep.frequencies
    ends = f"at {format_frequency(freqs[0])} / {format_frequency(freqs[-1])}"
    lines = []
    for name, values in doc.get("inductance", {}).get("self_l_h", {}).items():
        lines.append(f"self inductance {name}: {values[0] * 1e6:.5g} / {values[-1] * 1e6:.5g} uH {ends}")
    if "magnetizing_l_h" in doc.get("inductance", {}):
        m = doc["inductance"]["magnetizing_l_h"]
        lines.append(f"magnetizing inductance (referred to {doc['inductance']['magnetizing_referred_to']}): "
                     f"{m[0] * 1e6:.5g} / {m[-1] * 1e6:.5g} uH {ends}")
    for name, par in parallel_document(report).items():
        if par["transposed"]:
            lines.append(f"{name}: {par['conductors_per_turn']} conductors per turn, transposed (equal shares)")
            continue
        shares = ", ".join(f"{a:.4g} A at {p:.1f} deg" for a, p in zip(par["strand_current_a"][-1],
                                                                     par["strand_phase_deg"][-1]))
        lines.append(f"{name}: {par['conductors_per_turn']} untransposed conductors per turn; strand currents "
                     f"{shares}; circulating-current loss {par['circulating_loss_w'][-1]:.4g} W, "
                     f"at {format_frequency(freqs[-1])}")
    if "leakage" in doc:
        leak = doc["leakage"]
        lines.append(f"leakage inductance (referred to {leak['referred_to']}, others shorted): "
                     f"{leak['l_h'][0] * 1e6:.5g} / {leak['l_h'][-1] * 1e6:.5g} uH {ends}")
    return "\n".join(lines)


def _run_one(case: Case, out: Path, args, state: RunState, key: str) -> dict:
    """Solve one arrangement (resuming its solved points when asked), write its
    result files into ``out``, print its table; returns its results document."""
    out.mkdir(parents=True, exist_ok=True)
    print(f"racfield: {case.title}", file=sys.stderr)
    done = state.load_points(key) if args.resume else {}
    if done:
        print(f"racfield: resuming: {len(done)} of {len(case.frequencies)} frequencies already solved",
              file=sys.stderr)
    last_partial = [-math.inf]

    def keep(index: int, point, partial) -> None:
        # every solved point is kept at once; results.json follows at most every PARTIAL_EVERY_S
        state.save_point(key, index, point)
        now = time.perf_counter()
        if now - last_partial[0] >= PARTIAL_EVERY_S:
            last_partial[0] = now
            state.record(results_file.write(build_report(case, partial()), out, len(case.frequencies)))

    report = solve_report(case, exact=args.exact, progress=None if args.quiet else _progress(sys.stderr),
                          check_mesh=args.check_mesh, done=done, on_point=keep)
    return _write_one(report, out, state, key)


def _write_one(report: Report, out: Path, state: RunState, key: str, files: dict[str, bytes] | None = None) -> dict:
    """Write one solved arrangement's files (``files``: already rendered by a
    worker) and print its table; returns its results document."""
    case, sweep = report.case, report.sweep
    out.mkdir(parents=True, exist_ok=True)
    for warning in sweep.warnings:
        print(f"racfield: warning: {warning['message']}", file=sys.stderr)
    if files is not None:
        written = [replace_bytes(out / name, data) for name, data in files.items()]
    else:
        written = write_all(report, out)
    state.record(written)
    state.finish(key)
    print(f"== {case.title}")
    print(_summary_table(report))
    if report.error_estimate is not None:
        print("\n".join(error_estimate_lines(report.error_estimate)))
    print(_inductance_lines(report))
    harmonics = report.harmonics
    if harmonics is not None:
        print(harmonics_table(harmonics))
    for line in thermal_lines(report.thermal) + capacitance_lines(report.capacitance):
        print(line)
    t = sweep.timings
    print(f"mesh: {sweep.unknowns} unknowns, {sweep.elements} elements; "
          f"times: mesh {t['mesh_s']:.1f} s, assembly {t['assembly_s']:.1f} s, solve {t['solve_s']:.1f} s")
    info = sweep.sweep_info
    if info.get("method") == "reduced":
        print(f"sweep: reduced model from {len(info['expansion_hz'])} full solves, "
              f"largest deviation at the check frequencies {100 * info['max_check_deviation']:.2g} %")
    print("wrote: " + ", ".join(str(p) for p in written))
    print(f"note: {CAUTION}\n")
    return results_document(report)


def _finished_document(folder: Path, case_file: str) -> dict:
    """The results document of an arrangement a resumed run finished before."""
    try:
        return results_file.read(folder)
    except CaseError:
        raise CaseError("--resume", f"{folder / results_file.NAME} of a finished variant cannot be read",
                        "run without --resume to solve everything again", case_file) from None


def _results_folder(args) -> Path:
    """The results folder of ``racfield run``, made if missing (CaseError if it cannot be)."""
    out = Path(args.out) if args.out else Path(args.case).with_suffix("")
    if out.exists() and not out.is_dir():
        raise CaseError("--out", f"{out} exists and is not a folder", "name a folder for the results", args.case)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise CaseError("--out", f"cannot create {out} ({error.strerror})", "name a writable folder",
                        args.case) from None
    if args.workers is not None and args.workers < 1:
        raise CaseError("--workers", f"{args.workers} workers", "give 1 or more (1 runs the variants one by one here)",
                        args.case)
    return out


def command_run(args, case: Case) -> int:
    """``racfield run`` of the loaded ``case``: exit status."""
    out = _results_folder(args)
    listed = arrangements(case, getattr(args, "force_size", False))
    several = len(listed) > 1 or bool(case.study)
    folders = {key: out / key if key else out for key, _, _, _ in listed}
    names = {key: name for key, name, _, _ in listed}
    planned = [folder / name for folder in folders.values() for name in WRITERS]
    if several:
        planned += [out / name for name in COMPARISON_FILES + STUDY_FILES]
    state = RunState(out)
    # every check comes before the first solve: nothing computed is lost to a refusal
    state.start(fingerprint(args.case, case), {"exact": bool(args.exact)}, args.resume, args.case)
    state.claim(planned, args.force, args.case)
    documents: dict[str, tuple[str, dict]] = {}
    failures: dict[str, str] = {}
    jobs = []
    for key, _, arrangement, error in listed:
        if args.resume and state.is_finished(key):
            print(f"racfield: {names[key] or case.title}: finished before, kept", file=sys.stderr)
            documents[key] = (names[key], _finished_document(folders[key], args.case))
        else:
            jobs.append(Job(key, arrangement, error))
    workers = args.workers if args.workers is not None else default_workers()

    def failed(key: str, error: str) -> None:
        failures[key] = error
        print(f"racfield: variant {names[key]} failed: {error}", file=sys.stderr)

    if not several or (workers == 1 and args.cluster is None):
        for job in jobs:   # here, one after the other, every solved point kept as it comes
            if job.case is None:
                failed(job.key, job.error)
            else:
                documents[job.key] = (names[job.key], _run_one(job.case, folders[job.key], args, state, job.key))
    else:
        cases = {job.key: job.case for job in jobs}

        def finished(outcome: Outcome) -> None:
            if outcome.error is not None:
                return failed(outcome.key, outcome.error)
            report = build_report(cases[outcome.key], outcome.sweep)
            report.error_estimate = outcome.error_estimate
            documents[outcome.key] = (names[outcome.key], _write_one(report, folders[outcome.key], state,
                                                                     outcome.key, outcome.files))

        run_jobs(jobs, bool(args.exact), workers, args.cluster, finished, quiet=args.quiet,
                 check_mesh=args.check_mesh)
    if several:
        return _compare(case, listed, documents, failures, names, out, state)
    state.clear_points()
    return EXIT_OK


def _compare(case: Case, listed: list, documents: dict, failures: dict, names: dict, out: Path,
             state: RunState) -> int:
    """Write and print the comparison of several arrangements; exit status."""
    ordered = [documents[key] for key, _, _, _ in listed if key in documents]
    failed = {names[key]: failures[key] for key, _, _, _ in listed if key in failures}
    written = []
    if ordered:
        written += write_comparison(ordered, out, case.compare_frequency)
        print(summary(ordered, case.compare_frequency))
    written += write_study_table(case, ordered, failed, out)
    state.record(written)
    print("wrote: " + ", ".join(str(p) for p in written))
    if failed:
        print(f"racfield: {len(failed)} of {len(listed)} variants failed (see study.csv)", file=sys.stderr)
        return EXIT_PARTIAL
    state.clear_points()
    return EXIT_OK
