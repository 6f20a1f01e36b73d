"""racfield benchmark: the reference case (reference_case.toml), point-by-point
against the reduced-order sweep, both through the sweep the command line runs.

Run from the repository root:

    python tests/benchmarks/run_benchmark.py [--case FILE] [--skip-exact]

Each sweep runs end to end from the loaded case (placing, meshing, assembly,
ordering, solves, losses; the reduced one also its basis and self-check).
``--skip-exact`` runs the reduced sweep only (no deviation then).  This is a
script, not a test (pytest does not collect it).
"""

from __future__ import annotations

import argparse
import platform
import resource
import sys
import time
from pathlib import Path

import numpy as np

from racfield.fem.sweep import run_sweep
from racfield.geometry.load import load_case

HERE = Path(__file__).resolve().parent


def _timed_sweep(case_path: str, method: str):
    case = load_case(case_path)
    start = time.perf_counter()
    sweep = run_sweep(case, method=method)
    return sweep, time.perf_counter() - start


def _winding_rac_over_rdc(sweep) -> np.ndarray:
    """(Nf, Nw) winding loss over its DC loss at the same current."""
    members = sweep.excitation.membership
    loss = sweep.loss_per_m @ members
    dc = (np.abs(sweep.currents) ** 2 * sweep.rdc_per_m) @ members
    return loss / dc


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--case", default=str(HERE / "reference_case.toml"))
    parser.add_argument("--skip-exact", action="store_true", help="run the reduced sweep only")
    args = parser.parse_args(argv)

    reduced, reduced_s = _timed_sweep(args.case, "reduced")
    exact, exact_s = (None, None) if args.skip_exact else _timed_sweep(args.case, "exact")
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0

    t = reduced.timings
    nf = len(reduced.frequencies)
    info = reduced.sweep_info
    print(f"case: {load_case(args.case).title}")
    print(f"machine: {platform.machine()}, {platform.system()}, python {platform.python_version()}")
    print(f"frequencies: {nf} ({reduced.frequencies[0]:g} Hz to {reduced.frequencies[-1]:g} Hz)")
    print(f"unknowns: {reduced.unknowns}  elements: {reduced.elements}")
    print(f"mesh time: {t['mesh_s']:.2f} s")
    print(f"assembly time: {t['assembly_s']:.2f} s")
    print(f"fill-reducing ordering (once per mesh): {t['ordering_s']:.2f} s")
    if exact is not None:
        per_point = exact.timings["solve_s"] / nf
        print(f"time per full frequency point (factorization, all {len(reduced.conductors)} conductors, "
              f"field, loss matrices): {per_point:.3f} s")
        print(f"point-by-point sweep, {nf} points, end to end: {exact_s:.1f} s")
    print(f"reduced sweep, {nf} points, end to end: {reduced_s:.1f} s")
    print(f"  basis: {t['reduced_build_s']:.2f} s ({len(info['expansion_hz'])} expansion points, "
          f"reduced size {info['reduced_size']})")
    print(f"  reduced points: {t['reduced_points_s']:.2f} s ({1e3 * t['reduced_points_s'] / nf:.1f} ms each)")
    print(f"  self-check, 2 full points: {t['reduced_check_s']:.2f} s "
          f"(largest deviation {info['max_check_deviation']:.2e})")
    print(f"expansion frequencies (Hz): {', '.join(f'{f:.4g}' for f in info['expansion_hz'])}")
    print(f"peak memory (max RSS, both sweeps): {peak_mb:.0f} MB")
    if exact is not None:
        deviation = float(np.max(np.abs(_winding_rac_over_rdc(reduced) / _winding_rac_over_rdc(exact) - 1.0)))
        print(f"largest winding Rac/Rdc deviation, reduced vs point-by-point ({nf} frequencies): "
              f"{deviation:.2e}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
