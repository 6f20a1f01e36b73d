"""racfield scaling benchmark: the grids of issue 18 (48, 192, 768 and 3072
round conductors), each run end to end in a process of its own.

Run from the repository root:

    python tests/benchmarks/run_scaling.py [--sizes 48,192] [--points 100]

For each grid it prints the forecast (:mod:`racfield.geometry.forecast`)
against the measured unknowns, peak memory (the child process's largest
resident set, ``ru_maxrss``) and wall time; the times per phase (mesh,
assembly, sweep, writing the result files); and the largest winding Rac/Rdc
deviation of the reduced sweep from a point-by-point solve at 5 of its
frequencies.  The 3072-conductor grid needs about 20 GB or more: it is not in
the default sizes.  This is a script, not a test (pytest does not collect it).
"""

from __future__ import annotations

import time

START = time.perf_counter()

import argparse
import json
import platform
import resource
import subprocess
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/: the grid documents

from scaling_grids import GRIDS, grid_document

#: indices of the point-by-point check frequencies among the sweep's
CHECK_AT = (0, 0.25, 0.5, 0.75, 1.0)


def _rac_over_rdc(sweep):
    """(Nf, Nw) winding loss over its DC loss at the same current."""
    members = sweep.excitation.membership
    return (sweep.loss_per_m @ members) / ((abs(sweep.currents) ** 2 * sweep.rdc_per_m) @ members)


def pointwise_child(conductors: int, points: int, folder: str) -> dict:
    """The same grid solved point by point at every frequency, end to end."""
    import racfield
    from racfield.api import solve_report
    from racfield.postprocess.writers import write_all

    columns, rows = GRIDS[conductors]
    case = racfield.load_case(grid_document(columns, rows, points), force_size=True)
    report = solve_report(case, exact=True)
    write_all(report, Path(folder))
    return {"pointwise_total_s": time.perf_counter() - START}


def child(conductors: int, points: int, folder: str) -> dict:
    """One grid, end to end in this process: the measured figures."""
    import numpy as np
    import racfield
    from racfield.api import solve_report
    from racfield.fem.sweep import run_sweep
    from racfield.geometry.forecast import forecast
    from racfield.geometry.layout import place
    from racfield.postprocess.writers import write_all
    from threadpoolctl import threadpool_limits

    columns, rows = GRIDS[conductors]
    case = racfield.load_case(grid_document(columns, rows, points), force_size=True)
    predicted = forecast(case, place(case))
    loaded = time.perf_counter()
    report = solve_report(case)
    solved = time.perf_counter()
    write_all(report, Path(folder))
    written = time.perf_counter()
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0
    sweep = report.sweep
    t = sweep.timings
    picks = sorted({round(q * (len(case.frequencies) - 1)) for q in CHECK_AT})
    check_case = racfield.load_case(grid_document(columns, rows, frequencies=[case.frequencies[i] for i in picks]),
                                    force_size=True)
    with threadpool_limits(limits=1):
        exact = run_sweep(check_case, method="exact")
    deviation = float(np.max(np.abs(_rac_over_rdc(sweep)[picks] / _rac_over_rdc(exact) - 1.0)))
    return {"conductors": conductors, "forecast_unknowns": predicted.unknowns,
            "forecast_memory_bytes": predicted.peak_memory_bytes, "forecast_time_s": predicted.time_s,
            "forecast_factorizations": predicted.factorizations,
            "unknowns": sweep.unknowns, "peak_memory_bytes": peak,
            "start_s": loaded - START, "mesh_s": t["mesh_s"], "assembly_s": t["assembly_s"] + t.get("ordering_s", 0.0),
            "sweep_s": (solved - loaded) - t["mesh_s"] - t["assembly_s"] - t.get("ordering_s", 0.0),
            "write_s": written - solved, "total_s": written - START,
            "expansion_points": len(sweep.sweep_info.get("expansion_hz", [])), "deviation": deviation}


def _row(r: dict) -> str:
    return (f"{r['conductors']:>6} {r['forecast_unknowns']:>10,} {r['unknowns']:>10,} "
            f"{r['mesh_s']:>7.1f} {r['assembly_s']:>7.1f} {r['sweep_s']:>7.1f} {r['write_s']:>7.1f} "
            f"{r['total_s']:>7.1f} {r['forecast_time_s']:>7.1f} {r['peak_memory_bytes'] / 1e9:>7.2f} "
            f"{r['forecast_memory_bytes'] / 1e9:>7.2f} {r['deviation']:>9.1e}")


def _run_child(flag: str, size: int, points: int) -> dict | str:
    """One child process; its JSON line, or the reason it failed."""
    with tempfile.TemporaryDirectory() as folder:
        done = subprocess.run([sys.executable, __file__, flag, str(size), "--points", str(points),
                               "--folder", folder], capture_output=True, text=True, check=False)
    if done.returncode != 0:
        return done.stderr.strip().splitlines()[-1] if done.stderr.strip() else f"exit {done.returncode}"
    return json.loads(done.stdout.strip().splitlines()[-1])


def growth_exponent(unknowns, values) -> float:
    """Least-squares slope of log(value) against log(unknowns)."""
    import numpy as np

    return float(np.polyfit(np.log(unknowns), np.log(values), 1)[0])


def _cpu() -> str:
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or platform.machine()


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="48,192,768",
                        help="conductor counts of the grids to run, from " + ", ".join(map(str, GRIDS)))
    parser.add_argument("--points", type=int, default=100, help="log-spaced frequencies, 1 kHz to 3 MHz")
    parser.add_argument("--pointwise-up-to", type=int, default=48,
                        help="grids up to this many conductors are also solved point by point end to end")
    parser.add_argument("--child", type=int, help=argparse.SUPPRESS)
    parser.add_argument("--pointwise-child", type=int, help=argparse.SUPPRESS)
    parser.add_argument("--folder", help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.pointwise_child:
        print(json.dumps(pointwise_child(args.pointwise_child, args.points, args.folder)))
        return 0
    if args.child:
        print(json.dumps(child(args.child, args.points, args.folder)))
        return 0
    sizes = [int(s) for s in args.sizes.split(",")]
    unknown = [s for s in sizes if s not in GRIDS]
    if unknown:
        parser.error(f"no grid of {unknown[0]} conductors; the grids have {', '.join(map(str, GRIDS))}")
    import os

    from racfield.geometry.machine import sparse_solver

    print(f"machine: {_cpu()}, {os.cpu_count()} cores, {platform.system()}, python {platform.python_version()}; "
          f"large matrices: {sparse_solver()}; {args.points} frequencies, 1 kHz to 3 MHz; times in s, memory in GB")
    print(f"{'cond.':>6} {'unk. fc':>10} {'unknowns':>10} {'mesh':>7} {'assem.':>7} {'sweep':>7} {'write':>7} "
          f"{'total':>7} {'t fc':>7} {'peak':>7} {'mem fc':>7} {'Rac dev':>9}")
    rows = []
    for size in sizes:
        result = _run_child("--child", size, args.points)
        if isinstance(result, str):
            print(f"{size:>6} failed: {result}", flush=True)
            continue
        rows.append(result)
        print(_row(result), flush=True)
    for r in rows:
        if r["conductors"] <= args.pointwise_up_to:
            pointwise = _run_child("--pointwise-child", r["conductors"], args.points)
            if isinstance(pointwise, str):
                print(f"{r['conductors']:>6} point by point failed: {pointwise}")
                continue
            print(f"{r['conductors']:>6} conductors point by point end to end: {pointwise['pointwise_total_s']:.1f} s; "
                  f"reduced / point by point = {r['total_s'] / pointwise['pointwise_total_s']:.3f}")
    if len(rows) >= 3:
        n = [r["unknowns"] for r in rows]
        print(f"growth in the unknowns: total time ~ N^{growth_exponent(n, [r['total_s'] for r in rows]):.2f}, "
              f"sweep ~ N^{growth_exponent(n, [r['sweep_s'] for r in rows]):.2f}, "
              f"peak memory ~ N^{growth_exponent(n, [r['peak_memory_bytes'] for r in rows]):.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
