"""The Temperature section of report.html: the thermal solution of results.json
(``thermal``; see :mod:`.thermal`) with temperature.png.  Temperatures in
degC, losses in W."""

from __future__ import annotations

import math

from .html_parts import Page, eng, esc, image, table
from .thermal import THERMAL_CAUTION


def _degc(value) -> str:
    """A temperature in degC, one decimal; an en dash when missing."""
    return "\u2013" if not isinstance(value, (int, float)) or not math.isfinite(value) else f"{value:.1f} \u00b0C"


def _change(loss, flat) -> str:
    """(loss - flat) / flat in %."""
    if not isinstance(loss, (int, float)) or not isinstance(flat, (int, float)) or not flat:
        return "\u2013"
    return f"{100.0 * (loss / flat - 1.0):+.1f} %"


def hot_spot_text(thermal: dict) -> str:
    """One sentence on the hot spot: temperature (degC), where (mm) and in which turn."""
    hot = thermal.get("hot_spot_conductor")
    where = f"in {hot.get('winding')} turn {hot.get('turn')}" if isinstance(hot, dict) else "outside the conductors"
    x, y = (list(thermal.get("hot_spot_m") or []) + [math.nan, math.nan])[:2]
    return (f"Hot spot {_degc(thermal.get('hot_spot_c'))} {where}, at ({x * 1e3:.3g} mm, {y * 1e3:.3g} mm), "
            f"at {thermal.get('operating_point', 'the operating point')}.")


def winding_rows(thermal: dict) -> tuple[list[str], list[list[str]]]:
    """The per-winding table: head and rows (mean and hottest turn in degC, losses in W, change in %)."""
    flat = thermal.get("flat_temperature_c")
    flat_words = f"{flat:g} \u00b0C" if isinstance(flat, (int, float)) else "the case temperature"
    head = ["winding", "mean temperature", "hottest turn", "loss at temperature", f"loss at {flat_words}", "change"]
    rows = []
    for name, w in (thermal.get("windings") or {}).items():
        rows.append([str(name), _degc(w.get("mean_temperature_c")), _degc(w.get("hottest_turn_c")),
                     eng(w.get("loss_w"), "W"), eng(w.get("flat_loss_w"), "W"),
                     _change(w.get("loss_w"), w.get("flat_loss_w"))])
    total, flat_total = thermal.get("total_loss_w"), thermal.get("flat_total_loss_w")
    if total is not None:
        rows.append(["all windings", "", "", eng(total, "W"), eng(flat_total, "W"), _change(total, flat_total)])
    return head, rows


def temperature_section(page: Page, doc: dict, folder, prefix: str, level: int) -> None:
    """The Temperature section (nothing when results.json has no ``thermal``)."""
    thermal = doc.get("thermal")
    if not isinstance(thermal, dict):
        return
    page.heading(level, f"{prefix}temperature", "Temperature")
    kind = "coupled: each turn's resistivity at its own temperature" if thermal.get("coupled") else \
        "one-way: the losses at the case temperature"
    iterations = thermal.get("iterations")
    state = ("converged" if thermal.get("converged") else "not converged")
    page.add(f"<p>Steady conduction on the window's cross-section ({esc(kind)}); {esc(iterations)} field "
             f"solution{'s' if iterations != 1 else ''}, {esc(state)}.</p>")
    if not thermal.get("steady_state", True):
        page.add(f'<p class="caution">No steady state: {esc(thermal.get("message") or "")} '
                 "The numbers below are the last iterate.</p>")
    page.add(f"<p><strong>{esc(hot_spot_text(thermal))}</strong></p>")
    head, rows = winding_rows(thermal)
    page.add(table(head, rows, numeric=set(range(1, len(head)))))
    page.add(image(folder, "temperature.png", "the cross-section coloured by temperature, with isotherms",
                   "Temperature over the cross-section, isotherms and the hot spot.", "No temperature map."))
    page.add(f'<p class="caution">{esc(thermal.get("caution") or THERMAL_CAUTION)}</p>')
