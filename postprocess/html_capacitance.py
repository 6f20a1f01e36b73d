"""The Capacitance section of report.html: the electrostatic solution of
results.json (``capacitance``; see :mod:`.capacitance`) with potential.png.
Capacitances in F (shown with an SI prefix, whole turns), voltages in V."""

from __future__ import annotations

from .capacitance import TERMINALS
from .html_parts import Page, eng, esc, image, table

CORE_ROLES = {"grounded": "grounded: the core (or the window's walls) is the 0 V reference electrode",
              "floating": "floating: the core (or the window's walls) is an electrode with no net charge, "
                          "at whatever potential that gives"}


def _farad(value) -> str:
    """A capacitance in F with an SI prefix (pF, nF ...), four digits."""
    return eng(value if isinstance(value, (int, float)) else None, "F")


def winding_rows(cap: dict) -> list[list[str]]:
    """winding, self capacitance (across its terminals)."""
    return [[str(name), _farad(v)] for name, v in ((cap.get("winding") or {}).get("self_f") or {}).items()]


def between_rows(cap: dict) -> list[list[str]]:
    """pair of windings, capacitance between them (each one's turns tied together)."""
    return [[str(pair).replace("-", " \u2013 ", 1), _farad(v)]
            for pair, v in ((cap.get("winding") or {}).get("between_f") or {}).items()]


def network_rows(cap: dict) -> list[list[str]]:
    """The lumped network's branches: terminal, terminal (or "core"), capacitance."""
    network = cap.get("network") or {}
    rows = [[str(a), str(b), _farad(v)] for a, b, v in (network.get("between") or [])]
    rows += [[str(a), "core", _farad(v)] for a, v in (network.get("to_core") or {}).items()]
    return rows


def _permittivity_text(cap: dict) -> str:
    p = cap.get("permittivity") or {}
    parts = [f"fill {p.get('fill_name', '')} \u03b5r = {p.get('fill', '')}",
             f"conductor insulation \u03b5r = {p.get('insulation', '')}"]
    parts += [f"{name}'s insulation \u03b5r = {v}" for name, v in (p.get("insulation_by_winding") or {}).items()]
    parts.append(f"layer tape \u03b5r = {p.get('layer_insulation', '')}")
    return ", ".join(parts)


def _worst_text(cap: dict) -> str:
    worst = cap.get("worst_case") or {}
    voltages = worst.get("terminal_voltages") or []
    pairs = ", ".join(f"{t} {v:+.3f} V" for t, v in zip(cap.get("terminals") or [], voltages)
                      if isinstance(v, (int, float)))
    energy = worst.get("energy_j_per_v2")
    stored = f"; stored energy {eng(energy, 'J')} per V\u00b2" if isinstance(energy, (int, float)) else ""
    return f"Worst case (the unit-norm terminal voltages of the largest stored energy): {pairs}{stored}."


def capacitance_section(page: Page, doc: dict, folder, prefix: str, level: int) -> None:
    """The Capacitance section (nothing when results.json has no ``capacitance``)."""
    cap = doc.get("capacitance")
    if not isinstance(cap, dict):
        return
    page.heading(level, f"{prefix}capacitance", "Capacitance")
    role = CORE_ROLES.get(str(cap.get("core")), str(cap.get("core")))
    page.add(f"<p>Electrostatic solution of the cross-section with the insulation ({esc(_permittivity_text(cap))}); "
             f"whole-turn capacitances by the energy method, a model estimate. Core {esc(role)}.</p>")
    page.add(table(["winding", "self capacitance"], winding_rows(cap), numeric={1}))
    between = between_rows(cap)
    if between:
        page.add(table(["between windings (turns tied)", "capacitance"], between, numeric={1}))
    page.add("<p>The lumped network between the terminals (its stored energy is the windings' for any "
             "terminal voltages; a branch may be negative: the network reproduces the stored energy, it is not a set "
             "of components):</p>")
    page.add(table(["terminal", "terminal", "branch capacitance"], network_rows(cap), numeric={2}))
    page.add(f"<p>{esc(_worst_text(cap))}</p>")
    page.add(image(folder, "potential.png", "the cross-section coloured by the electric potential, with equipotentials",
                   "Electric potential of the worst case over the cross-section, equipotentials.",
                   "No potential map."))
    page.add(f"<p>Terminals: {esc(cap.get('convention') or TERMINALS)}.</p>")
