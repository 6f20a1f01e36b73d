"""The refined-mesh check (``racfield run --check-mesh``).

The highest frequency of the sweep is solved again, in full (one
factorization), on a mesh with every element size halved (``[mesh] density``
doubled, the mesh still sized for the same frequency).  The relative change
of each winding's Rac between the sweep's mesh and the refined one estimates
the discretization error of the reported Rac: the finite-element error falls
with the element size, so most of the error of the coarser mesh shows up as
this change (Richardson's argument; for an error ~ h^p the change is
(1 - 2^-p) of the coarser mesh's error).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from racfield.fem.whole_turns import run_case_sweep

from racfield.geometry.case.units import format_frequency
from racfield.postprocess.report import Report, winding_results

#: element sizes of the refined mesh are the sweep's divided by this
REFINEMENT = 2.0


def mesh_check(report: Report, refinement: float = REFINEMENT) -> dict:
    """Solve the highest frequency of ``report`` on a mesh ``refinement``
    times finer; the results.json entry ``mesh_check``: ``frequency_hz``,
    ``density`` and ``refined_density`` (the ``[mesh] density`` factors),
    ``rac_change`` {winding: Rac_refined / Rac - 1, None for a winding
    without current}, ``unknowns`` and ``refined_unknowns``."""
    case, sweep = report.case, report.sweep
    top = int(np.argmax(sweep.frequencies))
    frequency = float(sweep.frequencies[top])
    density = case.mesh.density
    refined_case = replace(case, frequencies=(frequency,),
                           mesh=replace(case.mesh, density=density * refinement, frequency=case.mesh_frequency))
    refined = run_case_sweep(refined_case, method="exact")
    change = {}
    for normal, fine in zip(report.windings, winding_results(refined_case, refined)):
        rac, rac_fine = normal.rac_ohm[top], fine.rac_ohm[0]
        change[normal.name] = None if rac is None or rac_fine is None or rac == 0.0 else rac_fine / rac - 1.0
    return {"frequency_hz": frequency, "density": density, "refined_density": density * refinement,
            "rac_change": change, "unknowns": sweep.unknowns, "refined_unknowns": refined.unknowns}


def mesh_check_line(check: dict) -> str:
    """One line for the terminal."""
    changes = ", ".join(f"{name} {'-' if value is None else f'{100 * value:+.3g} %'}"
                        for name, value in check["rac_change"].items())
    return (f"mesh check at {format_frequency(check['frequency_hz'])}: density {check['density']:g} -> "
            f"{check['refined_density']:g} ({check['unknowns']} -> {check['refined_unknowns']} unknowns); "
            f"Rac change {changes}")
