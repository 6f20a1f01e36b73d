"""racfield factorization benchmark: the bordered matrix of the issue-18 grids
(48, 192 and 768 round conductors, at 1 MHz) factorized by SuperLU (the LU
racfield uses) and by every other sparse direct solver that is installed, each
in a process of its own.

Run from the repository root:

    python tests/benchmarks/run_factorization.py [--sizes 48,192,768] [--frequency 1e6]

Solvers:

- ``superlu``: scipy's SuperLU, no pivoting, as ``racfield.fem.harmonic``
  (one thread); the Schur complement over the conductor unknowns is read from
  the trailing block of the factors.
- ``mumps-ldlt-T`` (T = 1 or 2 BLAS threads): MUMPS's LDL^T of a complex
  symmetric matrix (SYM = 2) in MUMPS's own fill-reducing order, and
  ``mumps-ldlt-T-given`` in racfield's (METIS nested dissection, ICNTL(7) = 1), with the Schur complement over the conductor unknowns returned by
  MUMPS itself (ICNTL(19)); through the ``mumpspy`` bindings, which need the
  MUMPS shared libraries (Debian: ``apt-get install libmumps-dev``, then
  ``pip install mumpspy``).  Skipped, saying why, when not installed.

MUMPS wants an optimized BLAS (Debian: ``libopenblas0-pthread``; the
reference BLAS is several times slower).  For each it prints the analysis time
(MUMPS's ordering and symbolic factorization: once per mesh in a sweep;
racfield orders its matrix once per mesh before SuperLU, outside this
figure), the numeric factorization time (repeated at every frequency), the peak resident memory of the
factorization (the child's largest resident set less its resident set before
factorizing), the componentwise backward error of one field solve (Oettli and
Prager 1964; see ``racfield.fem.harmonic.backward_error``) and the largest
relative difference of its Schur complement from SuperLU's.  This is a
script, not a test (pytest does not collect it).
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/: the grid documents

from scaling_grids import GRIDS, grid_document

#: superlu; mumps-ldlt-THREADS with MUMPS's own ordering, or -given with racfield's (METIS, the matrix's order)
SOLVERS = ("superlu", "mumps-ldlt-1", "mumps-ldlt-2", "mumps-ldlt-1-given", "mumps-ldlt-2-given")


def export(conductors: int, frequency: float, folder: Path) -> dict:
    """Mesh and assemble one grid; save its bordered matrix at ``frequency`` (Hz)."""
    import numpy as np
    import scipy.sparse as sp
    import racfield
    from racfield.fem.sweep import conductor_resistivities, mesh_case, problem_for
    from racfield.geometry.layout import place

    columns, rows = GRIDS[conductors]
    case = racfield.load_case(grid_document(columns, rows, 2), force_size=True)
    placed = place(case)
    problem = problem_for(case, mesh_case(case, placed), conductor_resistivities(case, placed), placed)
    system = problem.bordered
    omega = 2.0 * np.pi * frequency
    data = system.constant + (1j * omega) * system.per_omega + system.per_inverse_omega / (1j * omega)
    size = system.n + system.nc
    matrix = sp.csc_matrix((data, system.indices, system.indptr), shape=(size, size))
    sp.save_npz(folder / "matrix.npz", matrix)
    # the right-hand side of the field of unit currents in alternate windings
    rhs = np.zeros(size, dtype=complex)
    currents = np.array([1.0 if c.winding == case.windings[0].name else -1.0 for c in placed])
    rhs[system.n:] = system.scale * currents / (1j * omega)
    np.save(folder / "rhs.npy", rhs)
    return {"n": int(system.n), "nc": int(system.nc), "nnz": int(matrix.nnz)}


def _rss() -> float:
    """The resident set (bytes) now."""
    with open("/proc/self/statm", encoding="ascii") as statm:
        return int(statm.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")


def factorize(solver: str, nc: int, folder: Path) -> dict:
    """Factorize the saved matrix with ``solver``: time, memory, backward error, Schur complement."""
    import numpy as np
    import scipy.sparse as sp
    from racfield.fem.harmonic import SuperLUFactors, backward_error

    matrix = sp.load_npz(folder / "matrix.npz").tocsc()
    rhs = np.load(folder / "rhs.npy")
    n = matrix.shape[0] - nc
    before = _rss()
    start = time.perf_counter()
    if solver == "superlu":
        lu = SuperLUFactors(matrix, nc)
        schur = lu.schur()
        factor_s = time.perf_counter() - start
        z = lu.solve(rhs)
        analysis_s = 0.0  # racfield orders once per mesh (METIS), outside the factorization
    else:
        threads = int(solver.split("-")[2])
        from threadpoolctl import threadpool_limits
        import scipy.linalg as sla
        try:
            import mumpspy
        except (ImportError, OSError) as exc:
            return {"skipped": f"mumpspy not installed ({type(exc).__name__}: {exc})"}
        with threadpool_limits(limits=threads):
            mumps = mumpspy.MumpsSolver(is_sym=True, system="complex")
            mumps.set_mtx(matrix.tocoo(), factorize=False)
            if solver.endswith("-given"):
                from mumpspy.mumps_lib_c_struc import PMumpsInt
                given = np.arange(1, n + nc + 1, dtype=np.int32)
                mumps.struct.perm_in = given.ctypes.data_as(PMumpsInt)
                mumps.struct.icntl[6] = 1  # ICNTL(7) = 1: the order given in PERM_IN
            schur = _mumps_schur(mumps, n, nc)
            analysis_s = time.perf_counter() - start
            start = time.perf_counter()
            mumps._mumps_call(2)  # the numeric factorization (a sweep repeats only this)
            factor_s = time.perf_counter() - start
            schur = schur.T.copy()
            reduced = mumps.schur_reduction(rhs.reshape(-1, 1))
            z = np.array(mumps.schur_expansion(sla.solve(schur, reduced))).ravel()
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0
    np.save(folder / f"schur_{solver}.npy", schur)
    return {"analysis_s": analysis_s, "factor_s": factor_s, "memory_bytes": max(peak - before, 0.0),
            "backward_error": backward_error(matrix, z, rhs)}


def _mumps_schur(mumps, n: int, nc: int):
    """Analyse the matrix set in ``mumps`` with a centralized Schur complement
    over the unknowns n+1..n+nc (1-based, ICNTL(19) = 3); the returned array
    is filled by the numeric factorization (job 2)."""
    import numpy as np
    from mumpspy.mumps_lib_c_struc import PMumpsInt

    listvar = np.arange(n + 1, n + nc + 1, dtype=np.int32)
    schur = np.zeros((nc, nc), dtype=complex, order="C")
    mumps._listvar = listvar  # kept alive while MUMPS holds the pointer
    s = mumps.struct
    s.size_schur = nc
    s.listvar_schur = listvar.ctypes.data_as(PMumpsInt)
    s.schur = schur.ctypes.data_as(mumps.pointermumpstype)
    s.schur_lld = nc
    s.nprow = s.npcol = 1
    s.mblock = s.nblock = 100
    s.icntl[18] = 3
    mumps._mumps_call(1)
    return schur


def _child(args: list[str]) -> dict:
    done = subprocess.run([sys.executable, __file__, *args], capture_output=True, text=True, check=False,
                          env={**os.environ, "OMP_NUM_THREADS": "2"})
    if done.returncode != 0:
        tail = done.stderr.strip().splitlines()[-1] if done.stderr.strip() else str(done.returncode)
        return {"skipped": f"failed: {tail}"}
    return json.loads(done.stdout.strip().splitlines()[-1])


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="48,192,768", help="conductor counts, from " + ", ".join(map(str, GRIDS)))
    parser.add_argument("--frequency", type=float, default=1e6, help="Hz")
    parser.add_argument("--export", type=int, help=argparse.SUPPRESS)
    parser.add_argument("--solver", help=argparse.SUPPRESS)
    parser.add_argument("--nc", type=int, help=argparse.SUPPRESS)
    parser.add_argument("--folder", help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.export:
        print(json.dumps(export(args.export, args.frequency, Path(args.folder))))
        return 0
    if args.solver:
        print(json.dumps(factorize(args.solver, args.nc, Path(args.folder))))
        return 0
    import numpy as np

    print(f"machine: {platform.machine()}, {platform.system()}, python {platform.python_version()}, "
          f"{os.cpu_count()} cores; bordered matrix at {args.frequency:.4g} Hz; time in s, memory in GB")
    print(f"{'cond.':>6} {'unknowns':>10} {'solver':>14} {'analyse':>8} {'factor':>8} {'memory':>8} {'bwd err':>9} "
          f"{'Schur diff':>10}")
    for size in [int(s) for s in args.sizes.split(",")]:
        with tempfile.TemporaryDirectory() as folder:
            shape = _child(["--export", str(size), "--frequency", str(args.frequency), "--folder", folder])
            if "skipped" in shape:
                print(f"{size:>6} export {shape['skipped']}")
                continue
            for solver in SOLVERS:
                r = _child(["--solver", solver, "--nc", str(shape["nc"]), "--folder", folder])
                if "skipped" in r:
                    print(f"{size:>6} {shape['n'] + shape['nc']:>10,} {solver:>14} skipped: {r['skipped']}")
                    continue
                reference = np.load(Path(folder) / "schur_superlu.npy")
                mine = np.load(Path(folder) / f"schur_{solver}.npy")
                difference = float(np.abs(mine - reference).max() / np.abs(reference).max())
                print(f"{size:>6} {shape['n'] + shape['nc']:>10,} {solver:>14} {r['analysis_s']:>8.2f} {r['factor_s']:>8.2f} "
                      f"{r['memory_bytes'] / 1e9:>8.2f} {r['backward_error']:>9.1e} {difference:>10.1e}", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
