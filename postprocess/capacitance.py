"""The electrostatic solution's results: ``capacitance`` in results.json and
the lines the run prints (see README, Capacitance)."""

from __future__ import annotations

from racfield.geometry.case import Case

TERMINALS = ("each winding has a start and an end terminal (its first and last turn in series order, "
             "start = \"inner\" the first turn in case order); turn voltages are linear between them; "
             "self_f: across a winding's terminals with every other terminal and the core at 0 V; "
             "between_f: between two windings, each with its turns tied together; network: the branch "
             "capacitances between terminals and from each terminal to the core, whose stored energy is "
             "the winding's for any terminal voltages")


def capacitance_document(case: Case, result, conductors) -> dict | None:
    """``capacitance`` in results.json (None without ``[dielectric]``)."""
    if result is None:
        return None
    d = case.dielectric
    return {
        "core": result.core,
        "electrodes": [f"{c.winding}.{c.turn}" + (f".{c.strand}" if c.strand > 1 else "") for c in conductors]
        + ["core"],
        "conductor_f_per_m": [[float(v) for v in row] for row in result.conductor_f_per_m],
        "terminals": result.terminals,
        "terminal_f": [[float(v) for v in row] for row in result.terminal_f],
        "winding": {"self_f": result.self_f, "between_f": result.between_f},
        "network": result.network,
        "worst_case": {"terminal_voltages": [float(v) for v in result.worst_voltages],
                       "energy_j_per_v2": result.worst_energy_j},
        "permittivity": {"fill": d.fill_permittivity, "fill_name": d.fill,
                         "insulation": d.insulation_permittivity,
                         "insulation_by_winding": dict(d.winding_insulation),
                         "layer_insulation": d.layer_insulation_permittivity},
        "unknowns": result.unknowns,
        "convention": TERMINALS,
    }


def _pf(value: float) -> str:
    return f"{value * 1e12:.4g} pF"


def capacitance_lines(document: dict | None) -> list[str]:
    """The run's printed summary of ``capacitance`` (empty without it)."""
    if not document:
        return []
    w = document["winding"]
    lines = [f"capacitance (core {document['core']}): "
             + "; ".join(f"{name} self {_pf(v)}" for name, v in w["self_f"].items())]
    if w["between_f"]:
        lines.append("  between windings (turns tied): "
                     + "; ".join(f"{pair} {_pf(v)}" for pair, v in w["between_f"].items()))
    return lines
