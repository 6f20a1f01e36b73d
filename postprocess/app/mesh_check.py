"""The discretization-error estimate (``racfield run --check-mesh``).

The highest frequency of the sweep, where the mesh is sized and Rac's error
is largest, is solved again in full on two finer meshes, at ``[mesh]
density`` times sqrt(2) and times 2 (the mesh still sized for the same
frequency; every element size shrinks by sqrt(2) and by 2, see
:mod:`racfield.geometry.sizing`).  Each winding's Rac and L and the leakage
inductance on the three meshes give their error on the sweep's mesh by
Richardson extrapolation with the observed order
(:mod:`racfield.postprocess.error_estimate`).

Coarser companion meshes would be cheaper, but they are not in the
asymptotic range at the default density (at density 1/sqrt(2) a mesh has
about one element per skin depth, and an open coil's Rac error there is 7.8
times, not 4 times, that at density 1), so their estimate is not to be
trusted: the finer ones cost about six times the unknowns at one frequency.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from racfield.fem.whole_turns import run_case_sweep
from racfield.geometry.case.units import format_frequency
from racfield.postprocess.error_estimate import ORDER_LIMIT, estimate_text, richardson
from racfield.postprocess.report import Report, winding_results

#: element sizes shrink by this factor from one mesh to the next
REFINEMENT = math.sqrt(2.0)


def _values(report: Report, top: int) -> dict[str, float | None]:
    """Rac (ohm), loss (W) and L (H) of every winding and the leakage
    inductance at frequency index ``top``: {"rac:NAME", "loss:NAME",
    "l:NAME", "leakage"}; None where there is none (no current; an
    ideal-core window has no self inductance).  A winding without current
    has no Rac but may have a loss (proximity loss in a passive winding)."""
    magnetic = report.magnetic
    self_l = (magnetic.get("inductance") or {}).get("self_l_h") or {}
    values: dict[str, float | None] = {}
    for w in report.windings:
        values[f"rac:{w.name}"] = w.rac_ohm[top]
        values[f"loss:{w.name}"] = w.loss_w[top]
        values[f"l:{w.name}"] = self_l[w.name][top] if w.name in self_l else None
    values["leakage"] = magnetic["leakage"]["l_h"][top] if "leakage" in magnetic else None
    return values


def _companion(case, frequency: float, density: float) -> Report:
    """The case solved at ``frequency`` alone on a mesh of ``density``."""
    companion = replace(case, frequencies=(frequency,), thermal=None, dielectric=None,
                        mesh=replace(case.mesh, density=density, frequency=case.mesh_frequency))
    sweep = run_case_sweep(companion, method="exact")
    return Report(companion, sweep, winding_results(companion, sweep), {})


def error_estimate(report: Report, refinement: float = REFINEMENT) -> dict:
    """``error_estimate`` of results.json for ``report``: ``method``,
    ``frequency_hz``, ``densities`` and ``unknowns`` of the three meshes,
    ``order_limit``, ``windings`` {name: {"rac": entry, "loss": entry, "l":
    entry or None}} (Rac and L None for a winding without current, whose
    loss is its proximity loss)
    and ``leakage`` (entry or None); an entry is
    :meth:`~racfield.postprocess.error_estimate.Extrapolation.document`:
    the relative error of the reported value with its sign, the observed
    order, whether the three values were in the asymptotic range, and the
    extrapolated value."""
    case, sweep = report.case, report.sweep
    top = int(np.argmax(sweep.frequencies))
    frequency = float(sweep.frequencies[top])
    densities = [case.mesh.density * refinement ** k for k in range(3)]
    levels, unknowns = [_values(report, top)], [sweep.unknowns]
    for density in densities[1:]:
        finer = _companion(case, frequency, density)
        levels.append(_values(finer, 0))
        unknowns.append(finer.sweep.unknowns)

    def entry(key: str, unit: str) -> dict | None:
        values = [level[key] for level in levels]
        if any(v is None for v in values) or values[0] == 0.0:
            return None
        return richardson(tuple(values), refinement).document(unit)

    return {"method": "richardson", "frequency_hz": frequency, "densities": densities, "unknowns": unknowns,
            "order_limit": ORDER_LIMIT,
            "windings": {w.name: {"rac": entry(f"rac:{w.name}", "ohm"), "loss": entry(f"loss:{w.name}", "w"),
                                  "l": entry(f"l:{w.name}", "h")}
                         for w in report.windings},
            "leakage": entry("leakage", "h")}


def error_estimate_lines(estimate: dict) -> list[str]:
    """Lines for the terminal: the estimated error of each winding's Rac and L."""
    densities = ", ".join(f"{d:.3g}" for d in estimate["densities"])
    unknowns = ", ".join(str(n) for n in estimate["unknowns"])
    lines = [f"error estimate at {format_frequency(estimate['frequency_hz'])} (Richardson, densities "
             f"{densities}; {unknowns} unknowns; reported minus converged):"]
    for name, entries in estimate["windings"].items():
        parts = [f"Rac {estimate_text(entries['rac'])}" if entries["rac"] is not None else
                 f"loss {estimate_text(entries['loss'])}" if entries.get("loss") is not None else None,
                 f"L {estimate_text(entries['l'])}" if entries["l"] is not None else None]
        if any(parts):
            lines.append(f"  {name}: " + ", ".join(p for p in parts if p))
    if estimate["leakage"] is not None:
        lines.append(f"  leakage inductance {estimate_text(estimate['leakage'])}")
    return lines
