"""The thermal solution's results: ``thermal`` in results.json and the lines
the run prints (see README, Thermal)."""

from __future__ import annotations

import math

from racfield.geometry.case import Case

THERMAL_CAUTION = ("A 2-D cross-section with a fixed core temperature is an estimate: real cooling is "
                   "three-dimensional, and insulation temperature limits follow the applicable standards "
                   "and licensed practice.")


def _number(value: float | None) -> float | None:
    return None if value is None or not math.isfinite(value) else float(value)


def thermal_document(case: Case, thermal, conductors) -> dict | None:
    """``thermal`` in results.json (None without ``[thermal]``)."""
    if thermal is None:
        return None
    settings = case.thermal
    hot = thermal.hot_spot_conductor
    return {
        "coupled": thermal.coupled,
        "converged": thermal.converged,
        "steady_state": thermal.steady_state,
        "message": thermal.message or None,
        "iterations": thermal.iterations,
        "operating_point": thermal.operating_point,
        "boundary": {"core_temperature_c": settings.core_temperature, "h_w_per_m2_k": settings.h,
                     "ambient_c": settings.ambient},
        "conductivity_w_per_m_k": {"fill": settings.fill_conductivity, "fill_name": settings.fill,
                                   "insulation": settings.insulation_conductivity,
                                   "layer_insulation": settings.layer_insulation_conductivity,
                                   "core": settings.core_conductivity},
        "hot_spot_c": _number(thermal.hot_spot_c),
        "hot_spot_m": [float(v) for v in thermal.hot_spot_at],
        "hot_spot_conductor": (None if hot is None else
                               {"index": int(hot), "winding": conductors[hot].winding, "turn": conductors[hot].turn}),
        "conductor_temperature_c": [_number(t) for t in thermal.conductor_temperature_c],
        "windings": {
            name: {"mean_temperature_c": _number(thermal.winding_temperature_c[name]),
                   "hottest_turn_c": _number(thermal.winding_max_temperature_c[name]),
                   "loss_w": thermal.loss_w[name], "rac_ohm": thermal.rac_ohm[name],
                   "flat_loss_w": thermal.flat_loss_w[name], "flat_rac_ohm": thermal.flat_rac_ohm[name]}
            for name in thermal.loss_w
        },
        "total_loss_w": thermal.total_loss_w,
        "flat_temperature_c": thermal.flat_temperature_c,
        "flat_total_loss_w": thermal.flat_total_loss_w,
        "heat_balance_error": thermal.heat_balance_error,
        "loss_history_w": list(thermal.loss_history_w),
        "caution": THERMAL_CAUTION,
    }


def thermal_lines(document: dict | None) -> list[str]:
    """The run's printed summary of ``thermal`` (empty without it)."""
    if not document:
        return []
    lines = [f"thermal ({'coupled' if document['coupled'] else 'one-way'}), at {document['operating_point']}:"]
    if not document["steady_state"]:
        lines.append(f"  {document['message']}")
        return lines
    hot = document["hot_spot_conductor"]
    where = f"in {hot['winding']} turn {hot['turn']}" if hot else "outside the conductors"
    x, y = document["hot_spot_m"]
    lines.append(f"  hot spot {document['hot_spot_c']:.1f} degC {where} at ({x * 1e3:.3g} mm, {y * 1e3:.3g} mm); "
                 f"{document['iterations']} field solution{'s' if document['iterations'] != 1 else ''}")
    flat = document["flat_temperature_c"]
    head = f"  {'winding':<14} {'mean (degC)':>11} {'hottest turn':>12} {'loss at T (W)':>14} {f'at {flat:g} degC (W)':>16} {'change':>8}"
    lines += [head, "  " + "-" * (len(head) - 2)]
    for name, w in document["windings"].items():
        change = (w["loss_w"] / w["flat_loss_w"] - 1.0) * 100.0 if w["flat_loss_w"] > 0 else 0.0
        lines.append(f"  {name[:14]:<14} {w['mean_temperature_c']:>11.1f} {w['hottest_turn_c']:>12.1f} "
                     f"{w['loss_w']:>14.4g} {w['flat_loss_w']:>16.4g} {change:>+7.1f}%")
    total, flat_total = document["total_loss_w"], document["flat_total_loss_w"]
    lines.append(f"  {'total':<14} {'':>11} {'':>12} {total:>14.4g} {flat_total:>16.4g} "
                 f"{(total / flat_total - 1.0) * 100.0 if flat_total > 0 else 0.0:>+7.1f}%")
    lines.append("  " + THERMAL_CAUTION)
    return lines
