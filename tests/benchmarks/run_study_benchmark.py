"""racfield study benchmark: the 6-variant demo study (cases/design_study.toml)
one variant after the other (--workers 1) against the default local pool of
worker processes, each end to end through the command line.

Run from the repository root:

    python tests/benchmarks/run_study_benchmark.py [--case FILE] [--workers N]

Each run is a fresh ``racfield run`` process (Python start-up, reading the
case, the pool's start-up, meshing, solving, and writing every result file
and the study table), timed by the wall clock.  The script also times the
start-up of an empty local pool and adds up the mesh, assembly and solve
times the serial run prints, to show what bounds the speed-up.  The two runs
must give byte-identical study.csv files.  This is a script, not a test
(pytest does not collect it).
"""

from __future__ import annotations

import argparse
import os
import platform
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from racfield.execution import default_workers

ROOT = Path(__file__).resolve().parents[2]
TIMES = re.compile(r"times: mesh ([\d.]+) s, assembly ([\d.]+) s, solve ([\d.]+) s")


def _run(case: str, out: Path, extra: list[str]) -> tuple[float, str]:
    """Wall time of one ``racfield run`` (s) and its standard output."""
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "racfield", "run", case, "--quiet", "--out", str(out),
                           *extra], cwd=ROOT, capture_output=True, text=True)
    elapsed = time.perf_counter() - start
    if done.returncode != 0:
        sys.exit(f"racfield run {' '.join(extra)} failed ({done.returncode}):\n{done.stderr}")
    return elapsed, done.stdout


def _pool_start_up(workers: int) -> float:
    """Seconds to start and close an empty local pool like racfield's."""
    from distributed import Client, LocalCluster

    start = time.perf_counter()
    with LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=None, silence_logs=50) as cluster, Client(cluster):
        pass
    return time.perf_counter() - start


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--case", default=str(ROOT / "cases" / "design_study.toml"))
    parser.add_argument("--workers", type=int, default=None,
                        help="workers of the pool (default: racfield's default, the machine's cores)")
    args = parser.parse_args(argv)
    pool = args.workers or default_workers()

    with tempfile.TemporaryDirectory(prefix="racfield-study-benchmark-") as tmp:
        serial_s, serial_out = _run(args.case, Path(tmp) / "serial", ["--workers", "1"])
        pool_s, _ = _run(args.case, Path(tmp) / "pool", [] if args.workers is None else ["--workers", str(pool)])
        same = (Path(tmp) / "serial" / "study.csv").read_bytes() == (Path(tmp) / "pool" / "study.csv").read_bytes()
        study_csv = (Path(tmp) / "serial" / "study.csv").read_text().splitlines()
    start_up = _pool_start_up(pool)
    solves = [tuple(map(float, m)) for m in TIMES.findall(serial_out)]
    solving = sum(sum(t) for t in solves)

    print(f"case: {args.case} ({len(solves)} variants, {len(study_csv) - 1} study.csv rows)")
    print(f"machine: {platform.machine()}, {platform.system()} {platform.release()}, "
          f"python {platform.python_version()}, {os.cpu_count()} cores "
          f"({default_workers()} usable by this process)")
    try:
        print(f"load average (1, 5, 15 min) after the runs: {', '.join(f'{x:.2f}' for x in os.getloadavg())}")
    except OSError:
        pass
    print(f"--workers 1, end to end: {serial_s:.1f} s")
    print(f"local pool of {pool} workers, end to end: {pool_s:.1f} s")
    print(f"speed-up: {serial_s / pool_s:.2f}x")
    print(f"study.csv identical: {'yes' if same else 'NO'}")
    print(f"in the serial run: mesh + assembly + solve {solving:.1f} s of {serial_s:.1f} s "
          f"(the rest: start-up, reading the case, writing the result files)")
    print(f"start-up and close of an empty local pool of {pool} workers: {start_up:.1f} s")
    return 0 if same else 1


if __name__ == "__main__":
    sys.exit(main())
