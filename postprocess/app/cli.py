"""The ``racfield`` command: ``run`` solves a case, ``check`` validates it,
``loss`` gives the winding losses at other currents from a results.json,
``report`` writes report.html from a results folder, ``wires`` lists the
standard wire sizes.  A thin layer over the
Python API (:mod:`racfield.api`): ``run`` is in :mod:`racfield.run_command`.

Exit status: 0 done; 1 internal failure (a bug: please report it);
2 bad input (one line on stderr naming the file, the key and the fix);
3 a run of several variants finished but some failed (their errors are in study.csv);
130 interrupted (``racfield run --resume`` finishes an interrupted run).
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path
from typing import TYPE_CHECKING

# Only the standard library here: `racfield --help` and `--version` import
# nothing else; each command imports what it needs (`run` the solver).
if TYPE_CHECKING:
    from racfield.geometry.case import Case

EXIT_OK, EXIT_FAILURE, EXIT_BAD_INPUT, EXIT_PARTIAL = 0, 1, 2, 3


def _load(path: str, allow_outside_files: bool = False, force_size: bool = False) -> "Case":
    """The case, with its notes (remarks that are not errors) on stderr; one
    too large for the memory is refused unless ``force_size``."""
    from .api import load_case_file

    case = load_case_file(path, allow_outside_files=allow_outside_files, force_size=force_size)
    for note in case.notes:
        print(f"racfield: note: {note}", file=sys.stderr)
    return case


def command_run(args) -> int:
    from racfield.geometry.case.errors import CaseError

    from .run_command import command_run as run

    case = _load(args.case, args.allow_outside_files, args.force_size)
    if case.search is not None:
        raise CaseError("search", "the case is a design search",
                        f"run racfield search {args.case} (or remove [search] to solve the base case)")
    return run(args, case)


def _check_text(case: "Case") -> str:
    from racfield.geometry.case import winding_turns
    from racfield.geometry.case.units import format_frequency
    from racfield.geometry.forecast import forecast
    from racfield.geometry.layout import place
    from racfield.geometry.materials import material, skin_depth
    from racfield.geometry.resistance import conductor_resistances, winding_dc_resistance
    from racfield.geometry.turn_length import describe

    conductors = place(case)
    win = case.window
    boundary = win.boundary + (" (air on x > 0 beside a magnetic wall at x = 0)" if win.boundary == "open-wall" else "")
    lines = [f"case: {case.title}",
             f"window: {win.width * 1e3:.4g} mm x {win.height * 1e3:.4g} mm, {boundary}, "
             f"layers stacked {win.stacking}; {case.model.symmetry}"
             + (f", inner wall at r = {win.inner_radius * 1e3:.4g} mm, " if case.model.axisymmetric
                else f", {describe(case, conductors, 'length {} mm')}, ") +
             f"{case.model.temperature_c:g} degC"]
    ends = case.end_turns
    if ends is not None:
        share = f"{ends.fraction * 100:.3g} % of each turn" if ends.fraction is not None else \
            f"{ends.length * 1e3:.4g} mm of each turn"
        lines.append(f"end turns: {share} outside the core, solved as a second section beside the centre leg")
    if case.thermal is not None:
        lines.append(_thermal_line(case))
    if case.dielectric is not None:
        d = case.dielectric
        extra = "".join(f", {name} {value:g}" for name, value in d.winding_insulation)
        lines.append(f"dielectric: relative permittivity between the conductors {d.fill_permittivity:g}, insulation "
                     f"{d.insulation_permittivity:g}{extra}, layer insulation {d.layer_insulation_permittivity:g}; "
                     f"core {d.core}; start terminals: "
                     + ", ".join(f"{w.name} {w.start}" for w in case.windings))
    lines.append(forecast(case, conductors).line())
    copper = sum(c.copper_area for c in conductors)
    lines.append(f"fill: {copper / (win.width * win.height) * 100:.1f} % of the window area is conductor")
    lines.append(f"{'winding':<14} {'turns':>5} {'layers':>6} {'material':<10} {'current':>10} {'Rdc':>12}")
    resistances = conductor_resistances(case, conductors)
    for w in case.windings:
        layers = sum(l.repeat for l in case.layers if l.winding == w.name)
        # turns in series, [[parallel]] conductors and litz strands in parallel, as run reports it
        rdc = winding_dc_resistance(case, conductors, w.name, resistances)
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


def _thermal_line(case: "Case") -> str:
    """``racfield check``: what the thermal solution will take."""
    from racfield.geometry.case.units import format_frequency

    t = case.thermal
    sinks = []
    if t.core_temperature is not None:
        sinks.append(f"core at {t.core_temperature:g} degC")
    if t.h is not None:
        sinks.append(f"h = {t.h:g} W/(m2 K) to {t.ambient:g} degC at the far boundary")
    point = "the waveforms' harmonics" if t.frequency is None else format_frequency(t.frequency)
    return (f"thermal: {' and '.join(sinks)}; between the conductors {t.fill_conductivity:g} W/(m K), insulation "
            f"{t.insulation_conductivity:g}, layer insulation {t.layer_insulation_conductivity:g}; "
            f"operating point {point}; {'coupled through rho(T)' if t.coupled else 'one-way (coupled = false)'}")


def command_check(args) -> int:
    from .execution import arrangements

    case = _load(args.case, args.allow_outside_files, args.force_size)
    if case.search is not None:
        choices = "; ".join(f"{c.name}: {len(c.values)}" for c in case.search.choices)
        print(f"design search: {case.search.count} candidates ({choices}); the base case follows")
    failed = []
    for key, name, arrangement, error in arrangements(case, args.force_size):
        if name:
            print(f"== variant {name}")
        if arrangement is None:
            print(f"refused: {error}")
            failed.append(name)
            continue
        print(_check_text(arrangement))
        if arrangement.waveform is not None:
            from racfield.postprocess.harmonics import waveform_lines

            print(waveform_lines(arrangement))
    if failed:
        print(f"{len(failed)} study points are refused: {', '.join(failed)}")
        return EXIT_PARTIAL
    print("case is valid")
    return EXIT_OK


def _current_argument(text: str) -> tuple[str, complex]:
    """``NAME=VALUE[@PHASE]``, e.g. ``primary=1.5A`` or ``secondary=6A@180``."""
    import cmath
    import math

    from racfield.geometry.case.errors import CaseError
    from racfield.geometry.case.units import quantity

    name, _, value = text.partition("=")
    if not name or not value:
        raise CaseError("--current", f"cannot read {text!r}", 'write NAME=VALUE[@PHASE], such as secondary="6 A@180"')
    magnitude, _, phase = value.partition("@")
    amps = quantity(magnitude.strip(), "current", f"--current {name}")
    degrees = quantity(phase.strip(), "angle", f"--current {name}") if phase else 0.0
    return name.strip(), amps * cmath.exp(1j * math.radians(degrees))


def command_loss(args) -> int:
    from racfield.geometry.case.errors import CaseError
    from racfield.geometry.case.units import format_frequency
    from racfield.postprocess import results_file
    from racfield.postprocess.impedance import losses_from_document

    path = results_file.locate(args.results)
    try:
        doc = results_file.read(path)
        doc["loss_matrix"], doc["frequencies_hz"], doc["windings"]
    except (CaseError, KeyError, TypeError):
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
    from racfield.postprocess.html_report import REPORT_NAME, write_report

    from .checkpoint import RunState

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


def command_wires(args) -> int:
    """``racfield wires``: the standard sizes a conductor's ``wire`` may name, with
    bare diameter, area, maximum overall diameter per grade and Rdc per metre at 20 degC."""
    from racfield.geometry.case.units import quantity
    from racfield.geometry.case.wires import DEFAULT_GRADE, awg_sizes, iec_sizes
    from racfield.geometry.materials import material

    low = quantity(args.min, "length", "--min") if args.min else 0.0
    high = quantity(args.max, "length", "--max") if args.max else float("inf")
    metal = material("copper")
    awg_title = ("AWG, ASTM B258 (bare diameter exact); overall diameters: the grade build of the "
                 "IEC 60317-0-1 size named in the last column")
    tables = {"awg": (awg_title, awg_sizes()),
              "iec": ("IEC 60317-0-1, Table 1: maximum overall diameter of each grade", iec_sizes())}
    for name in ("iec", "awg") if args.standard == "all" else (args.standard,):
        title, sizes = tables[name]
        print(title)
        print(f"{'size':<10} {'bare mm':>8} {'area mm2':>10} {'grade 1':>8} {'grade 2':>8} {'grade 3':>8} "
              f"{'Rdc ohm/m':>11}" + ("  build of" if name == "awg" else ""))
        for size in sizes:
            if not low * (1 - 1e-9) <= size.diameter <= high * (1 + 1e-9):
                continue
            grades = " ".join(f"{'-' if size.outer_diameter(g) is None else f'{size.outer_diameter(g) * 1e3:.4f}':>8}"
                              for g in (1, 2, 3))
            rdc = metal.resistivity(20.0) / size.area
            print(f"{size.name:<10} {size.diameter * 1e3:>8.4f} {size.area * 1e6:>10.5g} {grades} "
                  f"{rdc:>11.5g}" + (f"  {size.build_from or '-'}" if name == "awg" else ""))
        print()
    print(f'a conductor takes wire = "AWG 26", "0.45 mm grade 2" ...; without a grade, grade {DEFAULT_GRADE}; '
          "Rdc: copper at 20 degC (IEC 60028)")
    return EXIT_OK


def command_search(args) -> int:
    """``racfield search``: screen every candidate of the case's [search], field-solve
    the promising ones, write search.csv/json, the Pareto plot, the report and the best cases."""
    from racfield.geometry.case.errors import CaseError

    from .execution import default_workers
    from .search import run_search
    from .search_files import write_search

    case = _load(args.case, args.allow_outside_files, args.force_size)
    if case.search is None:
        raise CaseError("search", "the case has no [search] table",
                        "add [search] with [[search.choice]] tables (README: Design search), or use racfield run")
    if args.workers is not None and args.workers < 1:
        raise CaseError("--workers", f"must be 1 or more, got {args.workers}", "give --workers 1 or more")
    out = Path(args.out) if args.out else Path(args.case).with_name(Path(args.case).stem + "_search")
    workers = args.workers if args.workers is not None else default_workers()
    result = run_search(case, workers=workers, cluster=args.cluster, out=out, force_size=args.force_size,
                        quiet=args.quiet)
    written = write_search(result, out)
    counts = len(result.designs), len(result.solved), len(result.ranked)
    t = result.timings
    print(f"{counts[0]} candidates screened in {t['screen_s']:.1f} s, {counts[1]} field-solved in {t['field_s']:.1f} s "
          f"({result.resumed} read back), {counts[2]} meet every limit")
    for d in result.ranked[:3]:
        print(f"  {d.rank}. {d.name}: {d.loss_w:.5g} W (estimate {d.estimate_w:.5g} W)"
              if d.estimate_w is not None else f"  {d.rank}. {d.name}: {d.loss_w:.5g} W")
    print(f"written to {out}: " + ", ".join(p.name for p in written))
    return EXIT_OK


class _Version(argparse.Action):
    """``--version``: ``racfield X.Y.Z`` (the installed version, looked up only when asked)."""

    def __init__(self, option_strings, dest, **kwargs) -> None:
        super().__init__(option_strings, dest, nargs=0, help="print the version and exit")

    def __call__(self, parser, namespace, values, option_string=None) -> None:
        import racfield

        print(f"racfield {racfield.__version__}")
        parser.exit()


def parser() -> argparse.ArgumentParser:
    top = argparse.ArgumentParser(prog="racfield", description="AC winding resistance from a 2-D eddy-current field solution.")
    top.add_argument("--version", action=_Version)
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
                     help="solve the highest frequency again on meshes with element sizes over sqrt(2) and 2, "
                          "and report the estimated discretization error of each winding's Rac and L")
    run.add_argument("--force-size", action="store_true",
                     help="run even a case whose forecast peak memory exceeds the memory available")
    run.set_defaults(handler=command_run)
    check = sub.add_parser("check", help="validate a case and print turns, fill, Rdc and skin depths")
    check.add_argument("case", help="case file (TOML)")
    check.add_argument("--allow-outside-files", action="store_true",
                       help="read files the case names also outside the case file's folder")
    check.add_argument("--force-size", action="store_true",
                       help="print the forecast even of a case too large for the memory available")
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
    search = sub.add_parser("search", help="design search: the best layout among the choices of the case's [search]")
    search.add_argument("case", help="case file (TOML) with a [search] table")
    search.add_argument("--out", help="results folder (default: beside the case, CASE_search)")
    search.add_argument("--quiet", action="store_true", help="no progress line")
    search.add_argument("--workers", type=int, metavar="N",
                        help="candidates solved in a local pool of N worker processes (default: the machine's "
                             "cores; 1: one after the other in this process)")
    search.add_argument("--cluster", metavar="ADDRESS",
                        help="solve the candidates on an existing Dask scheduler, e.g. tcp://10.0.0.5:8786")
    search.add_argument("--allow-outside-files", action="store_true",
                        help="read files the case names also outside the case file's folder")
    search.add_argument("--force-size", action="store_true",
                        help="solve even candidates whose forecast peak memory exceeds the memory available")
    search.set_defaults(handler=command_search)
    wires = sub.add_parser("wires", help="list the standard wire sizes a conductor's wire = \"...\" may name")
    wires.add_argument("--standard", choices=("all", "iec", "awg"), default="all",
                       help="IEC 60317-0-1 metric sizes, AWG sizes or both (default)")
    wires.add_argument("--min", metavar="LENGTH", help='smallest bare diameter to list, such as "0.2 mm"')
    wires.add_argument("--max", metavar="LENGTH", help='largest bare diameter to list, such as "1 mm"')
    wires.set_defaults(handler=command_wires)
    return top


def main(argv: list[str] | None = None) -> int:
    args = parser().parse_args(argv)
    from racfield.geometry.case.errors import CaseError   # after parsing: --help needs none of racfield

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
