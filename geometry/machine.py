"""What this machine offers a run: the sparse direct solver that loads.

MUMPS (its LDL^T of the complex symmetric bordered matrix, through the
``mumpspy`` bindings and the MUMPS shared libraries) where it loads, else
scipy's SuperLU; the size forecast (:mod:`racfield.geometry.forecast`) and
the solver (:mod:`racfield.fem.harmonic`) both ask here, so that the forecast
is that of the solver that will run.  The environment variable
``RACFIELD_SPARSE_SOLVER`` (``superlu`` or ``mumps``) chooses; unset, the size
of the matrix does (SuperLU is the faster on small meshes); ``mumps`` where it
does not load falls back to SuperLU.
"""

from __future__ import annotations

import os
from functools import lru_cache

#: the environment variable that chooses the sparse solver: "superlu" or "mumps"
SOLVER_VARIABLE = "RACFIELD_SPARSE_SOLVER"


@lru_cache(maxsize=1)
def mumps_module():
    """The MUMPS bindings (``mumpspy``), or None when they or the MUMPS shared
    libraries do not load (then SuperLU serves)."""
    try:
        import mumpspy
        from mumpspy.mumpspy import mumps_libs
    except Exception:  # ImportError, or OSError from a missing MUMPS or MPI library
        return None
    return mumpspy if mumps_libs.get("zmumps") is not None else None


#: below this many unknowns SuperLU's LU is the faster (MUMPS's analysis, repeated
#: with each factorization, outweighs its gain): 0.30 s against 0.63 s on
#: 76 k unknowns, 2.6 s against 1.6 s on 297 k (tests/benchmarks/run_factorization.py,
#: 4 December 2026, README Performance); the crossover of the two fitted growths
#: lies near 190 k, and MUMPS's smaller memory argues for it a little earlier
MUMPS_FROM_UNKNOWNS = 150_000


def sparse_solver(unknowns: int | None = None) -> str:
    """The sparse direct solver a run of ``unknowns`` unknowns uses here:
    ``"mumps"`` or ``"superlu"``.  Unset, :data:`SOLVER_VARIABLE` lets the size
    choose (MUMPS from :data:`MUMPS_FROM_UNKNOWNS`; ``unknowns`` None: a large
    run); ``superlu`` or ``mumps`` chooses that one at every size (MUMPS only
    where it loads)."""
    chosen = os.environ.get(SOLVER_VARIABLE, "").strip().lower()
    if chosen == "superlu" or mumps_module() is None:
        return "superlu"
    if chosen == "mumps" or unknowns is None:
        return "mumps"
    return "mumps" if unknowns >= MUMPS_FROM_UNKNOWNS else "superlu"
