"""racfield benchmark: the reference case (reference_case.toml), point-by-point
against the reduced-order sweep.

Run from the repository root:

    python tests/benchmarks/run_benchmark.py [--exact-points N]

``--exact-points N`` solves only N of the 100 frequencies point-by-point (spread
over the band) and extrapolates the point-by-point sweep time to all of them;
the reduced sweep is compared with point-by-point at those N frequencies.
This is a script, not a test (pytest does not collect it).
"""

from __future__ import annotations

import argparse
import resource
import sys
import time
from pathlib import Path

import numpy as np

from fem.parallel import excitation_basis, sharing
from fem.sweep import conductor_resistivities, mesh_case, problem_for, reduced_plan
from geometry.case import load_case
from geometry.layout import place

HERE = Path(__file__).resolve().parent


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--case", default=str(HERE / "reference_case.toml"))
    parser.add_argument("--exact-points", type=int, default=0,
                        help="point-by-point at this many frequencies only (0: all)")
    args = parser.parse_args(argv)
    case = load_case(args.case)
    freqs = np.array(case.frequencies)

    start = time.perf_counter()
    conductors = place(case)
    rho = conductor_resistivities(case, conductors)
    window_mesh = mesh_case(case, conductors)
    mesh_s = time.perf_counter() - start
    start = time.perf_counter()
    problem = problem_for(case, window_mesh, rho, conductors)
    assembly_s = time.perf_counter() - start

    excitation = excitation_basis(case, conductors)
    connection = excitation.basis
    winding_currents = np.array([w.phasor for w in case.windings], dtype=complex)

    def share(z_basis):
        return sharing(z_basis, excitation.windings) @ winding_currents

    def winding_loss(solution):
        return excitation.membership.T @ solution.loss_per_m

    if args.exact_points and args.exact_points < len(freqs):
        exact_index = np.unique(np.round(np.linspace(0, len(freqs) - 1, args.exact_points)).astype(int))
    else:
        exact_index = np.arange(len(freqs))
    start = time.perf_counter()
    exact = {int(i): winding_loss(problem.solve_windings(freqs[i], connection, share)) for i in exact_index}
    exact_s = time.perf_counter() - start
    per_point_s = exact_s / len(exact_index)
    exact_sweep_s = per_point_s * len(freqs)

    start = time.perf_counter()
    model, chosen, _ = reduced_plan(problem, freqs)
    build_s = time.perf_counter() - start
    reduced = {}
    for i, f in enumerate(freqs):
        reduced[i] = winding_loss(problem.solve_windings(f, connection, share,
                                                         response=model.respond(2.0 * np.pi * f)))
    reduced_s = time.perf_counter() - start
    # Rac/Rdc of a winding is its loss over |I|^2 Rdc: the ratio deviation is the loss deviation
    deviation = max(float(np.max(np.abs(reduced[i] / exact[i] - 1.0))) for i in exact)

    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    print(f"case: {case.title}")
    print(f"frequencies: {len(freqs)} ({freqs[0]:g} Hz to {freqs[-1]:g} Hz)")
    print(f"unknowns: {problem.unknowns}  elements: {window_mesh.elements}")
    print(f"mesh time: {mesh_s:.2f} s")
    print(f"assembly time: {assembly_s:.2f} s")
    print(f"time per full frequency point: {per_point_s:.3f} s")
    note = "" if len(exact_index) == len(freqs) else f" (extrapolated from {len(exact_index)} points)"
    print(f"point-by-point sweep, {len(freqs)} points: {exact_sweep_s:.1f} s{note}")
    print(f"reduced sweep, {len(freqs)} points: {reduced_s:.1f} s "
          f"(basis {build_s:.1f} s: {len(chosen)} expansion points, reduced size {model.size})")
    print(f"expansion frequencies (Hz): {', '.join(f'{freqs[i]:.4g}' for i in sorted(chosen))}")
    print(f"peak memory (max RSS): {peak_mb:.0f} MB")
    print(f"largest winding Rac/Rdc deviation, reduced vs point-by-point "
          f"({len(exact)} frequencies): {deviation:.2e}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
