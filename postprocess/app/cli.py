"""The ``racfield`` command: ``run`` solves a case, ``check`` validates it,
``report`` writes report.html from a results folder.

Exit status: 0 done; 1 internal failure (a bug: please report it);
2 bad input (one line on stderr naming the file, the key and the fix);
3 a run of several variants finished but some failed (their errors are in study.csv);
130 interrupted (``racfield run --resume`` finishes an interrupted run).
"""

from __future__ import annotations

import argparse
import cmath
import json
import math
import os
import sys
import time
from pathlib import Path

from threadpoolctl import threadpool_limits

from racfield.fem.sweep import conductor_resistivities, run_sweep
from racfield.geometry.case import Case, variant_cases, winding_turns
from racfield.geometry.load import load_case, study_case
from racfield.geometry.case.errors import CaseError
from racfield.geometry.layout import dc_resistance, place
from racfield.geometry.materials import material, skin_depth

from racfield.geometry.case.units import quantity

from racfield.postprocess.atomic import replace_bytes
from .checkpoint import RunState, fingerprint
from racfield.postprocess.comparison import COMPARISON_FILES, STUDY_FILES, folder_name, summary, write_comparison, write_study_table
from .execution import Job, Outcome, default_workers, run_jobs
from racfield.postprocess.harmonics import harmonics_table, waveform_lines
from racfield.postprocess.html_report import REPORT_NAME, write_report
from racfield.postprocess.impedance import losses_from_document
from .mesh_check import mesh_check, mesh_check_line
from racfield.postprocess.report import CAUTION, build_report, format_frequency, parallel_document, results_document
from racfield.postprocess.writers import WRITERS, results_json, write_all

EXIT_OK, EXIT_FAILURE, EXIT_BAD_INPUT, EXIT_PARTIAL = 0, 1, 2, 3


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


def _load(path: str, allow_outside_files: bool = False) -> Case:
    """The case, with its notes (remarks that are not errors) on stderr."""
    case = load_case(path, allow_outside_files=allow_outside_files)
    for note in case.notes:
        print(f"racfield: note: {note}", file=sys.stderr)
    return case


#: a partial results.json is rewritten at most this often during a sweep (s)
PARTIAL_EVERY_S = 2.0


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
            state.record(results_json.write(build_report(case, partial()), out, len(case.frequencies)))

    # one BLAS thread, as in a worker of the pool: every way of running gives the same numbers
    with threadpool_limits(limits=1):
        sweep = run_sweep(case, progress=None if args.quiet else _progress(sys.stderr),
                          method="exact" if args.exact else "auto", done=done, on_point=keep)
    return _write_one(case, sweep, out, args, state, key)


def _write_one(case: Case, sweep, out: Path, args, state: RunState, key: str,
               files: dict[str, bytes] | None = None, checked: dict | None = None) -> dict:
    """Write one solved arrangement's files (``files``: already rendered by a
    worker, with its mesh check ``checked``) and print its table; returns its
    results document."""
    out.mkdir(parents=True, exist_ok=True)
    for warning in sweep.warnings:
        print(f"racfield: warning: {warning['message']}", file=sys.stderr)
    report = build_report(case, sweep)
    if files is not None:
        report.mesh_check = checked
        written = [replace_bytes(out / name, data) for name, data in files.items()]
    else:
        if args.check_mesh:
            report.mesh_check = mesh_check(report)
        written = write_all(report, out)
    state.record(written)
    state.finish(key)
    print(f"== {case.title}")
    print(_summary_table(report))
    print(_inductance_lines(report))
    harmonics = report.harmonics
    if harmonics is not None:
        print(harmonics_table(harmonics))
    t = sweep.timings
    print(f"mesh: {sweep.unknowns} unknowns, {sweep.elements} elements; "
          f"times: mesh {t['mesh_s']:.1f} s, assembly {t['assembly_s']:.1f} s, solve {t['solve_s']:.1f} s")
    info = sweep.sweep_info
    if info.get("method") == "reduced":
        print(f"sweep: reduced model from {len(info['expansion_hz'])} full solves, "
              f"largest deviation at the check frequencies {100 * info['max_check_deviation']:.2g} %")
    if report.mesh_check is not None:
        print(mesh_check_line(report.mesh_check))
    print("wrote: " + ", ".join(str(p) for p in written))
    print(f"note: {CAUTION}\n")
    return results_document(report)


def _finished_document(folder: Path, key: str, case_file: str) -> dict:
    """The results document of an arrangement a resumed run finished before."""
    try:
        return json.loads((folder / "results.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        raise CaseError("--resume", f"{folder / 'results.json'} of a finished variant cannot be read",
                        "run without --resume to solve everything again", case_file) from None


def _arrangements(case: Case) -> list[tuple[str, str | None, Case | None, str | None]]:
    """(folder key, name, case or None, error line) of every arrangement: the
    case alone, its [[variant]] arrangements, or its [study] points (a bad
    point is kept with its error, to fail alone)."""
    if case.study:
        out = []
        for point in case.study:
            try:
                out.append((folder_name(point.name), point.name, study_case(case, point), None))
            except CaseError as error:
                out.append((folder_name(point.name), point.name, None, error.line()))
        return out
    if case.variants:
        return [(folder_name(a.variant), a.variant, a, None) for a in variant_cases(case)]
    return [("", None, case, None)]


def command_run(args) -> int:
    case = _load(args.case, args.allow_outside_files)
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
    arrangements = _arrangements(case)
    several = len(arrangements) > 1 or bool(case.study)
    folders = {key: out / key if key else out for key, _, _, _ in arrangements}
    names = {key: name for key, name, _, _ in arrangements}
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
    for key, _, arrangement, error in arrangements:
        if args.resume and state.is_finished(key):
            print(f"racfield: {names[key] or case.title}: finished before, kept", file=sys.stderr)
            documents[key] = (names[key], _finished_document(folders[key], key, args.case))
        else:
            jobs.append(Job(key, arrangement, error))
    workers = args.workers if args.workers is not None else default_workers()
    if not several or (workers == 1 and args.cluster is None):
        for job in jobs:   # here, one after the other, every solved point kept as it comes
            if job.case is None:
                failures[job.key] = job.error
                print(f"racfield: variant {names[job.key]} failed: {job.error}", file=sys.stderr)
                continue
            documents[job.key] = (names[job.key], _run_one(job.case, folders[job.key], args, state, job.key))
    else:
        cases = {job.key: job.case for job in jobs}

        def finished(outcome: Outcome) -> None:
            if outcome.error is not None:
                failures[outcome.key] = outcome.error
                print(f"racfield: variant {names[outcome.key]} failed: {outcome.error}", file=sys.stderr)
                return
            documents[outcome.key] = (names[outcome.key], _write_one(cases[outcome.key], outcome.sweep,
                                                                     folders[outcome.key], args, state,
                                                                     outcome.key, outcome.files,
                                                                     outcome.mesh_check))

        run_jobs(jobs, bool(args.exact), workers, args.cluster, finished, quiet=args.quiet,
                 check_mesh=args.check_mesh)
    if several:
        ordered = [documents[key] for key, _, _, _ in arrangements if key in documents]
        failed = {names[key]: failures[key] for key, _, _, _ in arrangements if key in failures}
        written = []
        if ordered:
            written += write_comparison(ordered, out, case.compare_frequency)
            print(summary(ordered, case.compare_frequency))
        written += write_study_table(case, ordered, failed, out)
        state.record(written)
        print("wrote: " + ", ".join(str(p) for p in written))
        if failed:
            print(f"racfield: {len(failed)} of {len(arrangements)} variants failed (see study.csv)", file=sys.stderr)
            return EXIT_PARTIAL
    state.clear_points()
    return EXIT_OK


def _check_text(case: Case) -> str:
    conductors = place(case)
    rho = conductor_resistivities(case, conductors)
    win = case.window
    lines = [f"case: {case.title}",
             f"window: {win.width * 1e3:.4g} mm x {win.height * 1e3:.4g} mm, {win.boundary}, "
             f"layers stacked {win.stacking}; {case.model.symmetry}"
             + (f", inner wall at r = {win.inner_radius * 1e3:.4g} mm, " if case.model.axisymmetric
                else f", length {case.model.length * 1e3:.4g} mm, ") +
             f"{case.model.temperature_c:g} degC"]
    copper = sum(c.copper_area for c in conductors)
    lines.append(f"fill: {copper / (win.width * win.height) * 100:.1f} % of the window area is conductor")
    lines.append(f"{'winding':<14} {'turns':>5} {'layers':>6} {'material':<10} {'current':>10} {'Rdc':>12}")
    for w in case.windings:
        idx = [c.index for c in conductors if c.winding == w.name]
        layers = sum(l.repeat for l in case.layers if l.winding == w.name)
        offset = case.axis_offset
        rdc = sum(dc_resistance(conductors[i], rho[i], offset) for i in idx) * case.model.result_scale
        lines.append(f"{w.name:<14} {winding_turns(case, w.name):>5} {layers:>6} {w.material:<10} "
                     f"{w.current:>8.4g} A {rdc * 1e3:>9.5g} mOhm")
    lines.append("skin depth at the case temperature, and the thickest conductor of each winding over it:")
    # a homogenized litz bundle: its strand diameter
    sizes = {w.name: max(c.strand_diameter if c.strands else min(c.width, c.height)
                         for c in conductors if c.winding == w.name) for w in case.windings}
    head = f"{'frequency':>12} " + " ".join(f"{'delta ' + w.material[:2]:>10} {w.name[:10] + ' d/delta':>18}"
                                          for w in case.windings)
    lines.append(head)
    for f in case.frequencies:
        cells = []
        for w in case.windings:
            delta = skin_depth(material(w.material).resistivity(case.model.temperature_c), f)
            cells.append(f"{delta * 1e3:>7.4g} mm {sizes[w.name] / delta:>18.3g}")
        lines.append(f"{format_frequency(f):>12} " + " ".join(cells))
    return "\n".join(lines)


def command_check(args) -> int:
    case = _load(args.case, args.allow_outside_files)
    failed = []
    for key, name, arrangement, error in _arrangements(case):
        if name:
            print(f"== variant {name}")
        if arrangement is None:
            print(f"refused: {error}")
            failed.append(name)
            continue
        print(_check_text(arrangement))
        if arrangement.waveform is not None:
            print(waveform_lines(arrangement))
    if failed:
        print(f"{len(failed)} study points are refused: {', '.join(failed)}")
        return EXIT_PARTIAL
    print("case is valid")
    return EXIT_OK


def _current_argument(text: str) -> tuple[str, complex]:
    """``NAME=VALUE[@PHASE]``, e.g. ``primary=1.5A`` or ``secondary=6A@180``."""
    name, _, value = text.partition("=")
    if not name or not value:
        raise CaseError("--current", f"cannot read {text!r}", 'write NAME=VALUE[@PHASE], such as secondary="6 A@180"')
    magnitude, _, phase = value.partition("@")
    amps = quantity(magnitude.strip(), "current", f"--current {name}")
    degrees = quantity(phase.strip(), "angle", f"--current {name}") if phase else 0.0
    return name.strip(), amps * cmath.exp(1j * math.radians(degrees))


def command_loss(args) -> int:
    path = Path(args.results)
    if path.is_dir():
        path = path / "results.json"
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
        doc["loss_matrix"], doc["frequencies_hz"], doc["windings"]
    except (OSError, ValueError, KeyError, TypeError):
        raise CaseError("", "not a racfield results.json with loss matrices",
                        "give the results.json (or its folder) written by racfield run", str(path)) from None
    currents = dict(_current_argument(text) for text in args.current)
    try:
        loss = losses_from_document(doc, currents)
    except ValueError as error:
        raise CaseError("--current", str(error), "give balanced winding currents", str(path)) from None
    order = doc["loss_matrix"]["order"]
    print(f"{'frequency':>12} " + " ".join(f"{n[:16] + ' (W)':>20}" for n in order) + f" {'total (W)':>12}")
    for f, row in zip(doc["frequencies_hz"], loss):
        print(f"{format_frequency(f):>12} " + " ".join(f"{p:>20.5g}" for p in row) + f" {row.sum():>12.5g}")
    return EXIT_OK


def command_report(args) -> int:
    folder = Path(args.results)
    target = Path(args.out) if args.out else folder / REPORT_NAME
    state = RunState(target.parent) if target.parent.is_dir() else None
    if state is not None:
        state.claim([target], args.force, str(folder))
    written = write_report(folder, target)
    if state is not None and state.exists:
        state.record([written])
    print(written)
    return EXIT_OK


def parser() -> argparse.ArgumentParser:
    top = argparse.ArgumentParser(prog="racfield", description="AC winding resistance from a 2-D eddy-current field solution.")
    sub = top.add_subparsers(dest="command", required=True)
    run = sub.add_parser("run", help="solve a case and write results")
    run.add_argument("case", help="case file (TOML)")
    run.add_argument("--out", help="results folder (default: beside the case, named after it)")
    run.add_argument("--quiet", action="store_true", help="no progress lines")
    run.add_argument("--exact", action="store_true",
                     help="one full solve per frequency (no reduced-order sweep)")
    run.add_argument("--allow-outside-files", action="store_true",
                     help="read files the case names also outside the case file's folder")
    run.add_argument("--resume", action="store_true",
                     help="finish an interrupted run in the same folder: only the missing frequencies and variants")
    run.add_argument("--force", action="store_true",
                     help="write even over files in the results folder that racfield did not write")
    run.add_argument("--workers", type=int, metavar="N",
                     help="variants run in a local pool of N worker processes (default: the machine's cores; "
                          "1: one after the other in this process)")
    run.add_argument("--cluster", metavar="ADDRESS",
                     help="run the variants on an existing Dask scheduler, e.g. tcp://10.0.0.5:8786")
    run.add_argument("--check-mesh", action="store_true",
                     help="solve the highest frequency again with element sizes halved and report "
                          "the change of each winding's Rac (an estimate of the mesh error)")
    run.set_defaults(handler=command_run)
    check = sub.add_parser("check", help="validate a case and print turns, fill, Rdc and skin depths")
    check.add_argument("case", help="case file (TOML)")
    check.add_argument("--allow-outside-files", action="store_true",
                       help="read files the case names also outside the case file's folder")
    check.set_defaults(handler=command_check)
    loss = sub.add_parser("loss", help="winding losses at other currents, from a results.json without a new solve")
    loss.add_argument("results", help="results.json, or the results folder")
    loss.add_argument("--current", action="append", default=[], metavar="NAME=VALUE[@PHASE]",
                      help='a winding current (A RMS, phase in degrees), e.g. --current "secondary=6 A@180"; repeat per winding')
    loss.set_defaults(handler=command_loss)
    report = sub.add_parser("report", help="one self-contained HTML page (report.html) from a results folder")
    report.add_argument("results", metavar="RESULTS_DIR", help="results folder written by racfield run")
    report.add_argument("--out", help="HTML file to write (default: RESULTS_DIR/report.html)")
    report.add_argument("--force", action="store_true", help="write even over a file racfield did not write")
    report.set_defaults(handler=command_report)
    return top


def main(argv: list[str] | None = None) -> int:
    args = parser().parse_args(argv)
    try:
        return args.handler(args)
    except CaseError as error:
        if not error.file:
            error = error.in_file(getattr(args, "case", None) or getattr(args, "results", ""))
        print(f"racfield: error: {error.line()}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except BrokenPipeError:  # output piped into a program that stopped reading
        return EXIT_OK
    except KeyboardInterrupt:
        hint = (f"; the solved points are kept: racfield run {args.case} --resume finishes the run"
                if getattr(args, "command", "") == "run" else "")
        print(f"racfield: interrupted{hint}", file=sys.stderr)
        return 130
    except Exception as error:  # a bug, not bad input
        if os.environ.get("RACFIELD_DEBUG"):
            raise
        print(f"racfield: internal error: {error.__class__.__name__}: {error} "
              "(set RACFIELD_DEBUG=1 for details and please report it)", file=sys.stderr)
        return EXIT_FAILURE


if __name__ == "__main__":
    sys.exit(main())
