"""The files of a design search: ``search.csv`` and ``search.json`` (every
candidate), ``search_pareto.png``, ``search_report.md`` and the best designs
as ready-to-run case files ``best_1.toml`` ...  Units as in the rest of
racfield: W, A/m^2 (A/mm^2 in the CSV), H, F, degC."""

from __future__ import annotations

import csv
import io
import json
import math
from pathlib import Path

from racfield.postprocess.atomic import replace_text
from racfield.postprocess.report import CAUTION

from .search import Design, SearchResult

SEARCH_FILES = ("search.csv", "search.json", "search_pareto.png", "search_report.md")


def _f(value: float | None, scale: float = 1.0) -> str:
    return "" if value is None else f"{value * scale:.8g}"


def design_row(d: Design) -> dict:
    """A candidate as plain data (search.json)."""
    f = d.field or {}
    return {"name": d.name, "choices": dict(d.candidate.labels), "stage": d.stage, "rank": d.rank,
            "pareto": d.pareto, "failed": d.failed, "estimate_loss_w": d.estimate_w,
            "estimate_loss_by_winding_w": d.estimate_by_winding_w or None,
            "current_density_a_per_m2": d.current_density, "field_loss_w": f.get("loss_w"),
            "field_loss_by_winding_w": f.get("loss_by_winding_w"), "rac_over_rdc": f.get("rac_over_rdc"),
            "leakage_h": f.get("leakage_h"), "capacitance_f": f.get("capacitance_f"),
            "hot_spot_c": f.get("hot_spot_c"), "unknowns": f.get("unknowns")}


def search_document(result: SearchResult) -> dict:
    """search.json: the search's settings, counts, times and every candidate."""
    spec, designs = result.spec, result.designs
    hand_best = _hand_best(result)
    best = result.ranked[0] if result.ranked else None
    return {
        "title": result.case.title, "frequency_hz": result.frequency, "objective": spec.objective,
        "margin": spec.margin,
        "limits": {"current_density_a_per_m2": spec.limits.current_density, "hot_spot_c": spec.limits.hot_spot_c,
                   "leakage_h": spec.limits.leakage_h, "capacitance_f": spec.limits.capacitance_f},
        "counts": {"candidates": len(designs), "screened": len(designs),
                   "failed_screen": sum(1 for d in designs if d.field is None and d.failed is not None),
                   "field_solved": len(result.solved), "read_back": result.resumed,
                   "feasible": len(result.ranked)},
        "timings_s": {k: round(v, 3) for k, v in result.timings.items()},
        "best": None if best is None else best.name,
        "hand_estimate_best": None if hand_best is None else hand_best.name,
        "hand_estimate_best_field_loss_w": None if hand_best is None else hand_best.loss_w,
        "pareto": [d.name for d in designs if d.pareto],
        "candidates": [design_row(d) for d in designs],
        "caution": CAUTION,
    }


def _hand_best(result: SearchResult) -> Design | None:
    """The candidate the hand estimates rank first among those that pass the screen."""
    scored = [d for d in result.designs if d.estimate_w is not None and d.case is not None
              and (d.field is not None or d.failed is None)]
    return min(scored, key=lambda d: d.estimate_w, default=None)


def search_csv(result: SearchResult) -> str:
    choice_names = [name for name, _ in result.designs[0].candidate.labels] if result.designs else []
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(["name", *choice_names, "stage", "rank", "pareto", "estimate_loss_w", "field_loss_w",
                     "current_density_a_per_mm2", "leakage_h", "capacitance_f", "hot_spot_c", "failed"])
    for d in result.designs:
        f = d.field or {}
        writer.writerow([d.name, *[lab for _, lab in d.candidate.labels], d.stage,
                         "" if d.rank is None else d.rank, "yes" if d.pareto else "", _f(d.estimate_w),
                         _f(f.get("loss_w")), _f(d.current_density, 1e-6), _f(f.get("leakage_h")),
                         _f(f.get("capacitance_f")), _f(f.get("hot_spot_c")), d.failed or ""])
    return out.getvalue()


def pareto_plot(result: SearchResult, path: Path) -> Path:
    """Left: field loss against leakage inductance (colour: capacitance where
    the case gives it), the Pareto set ringed; right: field loss against the
    hand estimate, with the screening band."""
    import matplotlib
    import matplotlib.cm as cm
    import matplotlib.colors as colors
    import numpy as np

    from racfield.postprocess.plotting import LINE_MAP, new_figure, save

    solved = [d for d in result.designs if d.field is not None]
    fig = new_figure(10.0, 4.2)
    left, right = fig.subplots(1, 2)
    feasible = [d for d in solved if d.failed is None]
    failing = [d for d in solved if d.failed is not None]
    leak = [d.field["leakage_h"] for d in solved]
    if solved and all(v is not None for v in leak):
        caps = [d.field["capacitance_f"] for d in feasible]
        has_caps = feasible and all(c is not None for c in caps)
        norm = colors.Normalize(min(caps) * 1e12, max(caps) * 1e12 + 1e-30) if has_caps else None
        left.scatter([d.field["leakage_h"] * 1e6 for d in failing], [d.loss_w for d in failing], marker="x",
                     color="0.6", label="fails a limit")
        left.scatter([d.field["leakage_h"] * 1e6 for d in feasible], [d.loss_w for d in feasible],
                     **({"c": [c * 1e12 for c in caps], "cmap": LINE_MAP, "norm": norm} if has_caps
                        else {"color": matplotlib.colormaps[LINE_MAP](0.3)}), label="feasible")
        front = sorted((d for d in feasible if d.pareto), key=lambda d: d.field["leakage_h"])
        left.scatter([d.field["leakage_h"] * 1e6 for d in front], [d.loss_w for d in front], s=110,
                     facecolors="none", edgecolors="k", label="Pareto set")
        if has_caps:
            fig.colorbar(cm.ScalarMappable(norm=norm, cmap=LINE_MAP), ax=left, label="capacitance between windings (pF)")
        left.set_xlabel("leakage inductance (uH)")
        left.legend(fontsize=8)
    else:
        left.text(0.5, 0.5, "no leakage inductance\n(a core window with two windings gives one)",
                  ha="center", va="center", transform=left.transAxes)
    left.set_ylabel("winding loss, field solution (W)")
    left.set_title(f"Solved candidates at {result.frequency / 1e3:.4g} kHz")
    scored = [d for d in solved if d.estimate_w is not None]
    if scored:
        x = np.array([d.estimate_w for d in scored])
        right.scatter(x, [d.loss_w for d in scored], color=matplotlib.colormaps[LINE_MAP](0.55), s=16)
        lo, hi = float(min(x.min(), min(d.loss_w for d in scored))), float(max(x.max(), max(d.loss_w for d in scored)))
        right.plot([lo, hi], [lo, hi], color="0.4", lw=0.8, label="field = estimate")
        best = min(d.estimate_w for d in result.designs if d.estimate_w is not None and d.case is not None)
        right.axvline(best * (1 + result.spec.margin), color="0.3", ls="--", lw=0.8,
                      label=f"screening band: best estimate x {1 + result.spec.margin:g}")
        right.legend(fontsize=8)
    right.set_xlabel("winding loss, hand estimate (W)")
    right.set_ylabel("winding loss, field solution (W)")
    right.set_title("Screening: field against estimate")
    return save(fig, path)


def report_text(result: SearchResult) -> str:
    """search_report.md: counts, times, the best designs, the Pareto set and
    how far the hand-estimate optimum lies from the field optimum."""
    doc = search_document(result)
    counts, t = doc["counts"], doc["timings_s"]
    lines = [f"# Design search: {result.case.title}", "",
             f"Operating point {result.frequency / 1e3:.6g} kHz; objective: {result.spec.objective}; "
             f"screening margin {result.spec.margin:g} (every candidate whose hand estimate lies within "
             f"{(1 + result.spec.margin):g} x the best is field-solved).", "",
             f"- candidates: {counts['candidates']} screened in {t['screen_s']:.2f} s; "
             f"{counts['failed_screen']} failed the screen (fit or current density)",
             f"- field-solved: {counts['field_solved']} ({counts['read_back']} read back from an earlier run) "
             f"in {t['field_s']:.2f} s; {counts['feasible']} meet every limit", ""]
    ranked = result.ranked
    if ranked:
        lines += ["| rank | design | field loss (W) | estimate (W) | leakage (uH) | capacitance (pF) | hot spot (degC) |",
                  "|---|---|---|---|---|---|---|"]
        for d in ranked[: max(result.spec.best, 3)]:
            f = d.field
            lines.append(f"| {d.rank} | {d.name} | {f['loss_w']:.5g} | {_f(d.estimate_w)} | "
                         f"{_f(f['leakage_h'], 1e6)} | {_f(f['capacitance_f'], 1e12)} | {_f(f['hot_spot_c'])} |")
        hand = _hand_best(result)
        if hand is not None and hand.loss_w is not None:
            excess = hand.loss_w / ranked[0].loss_w - 1.0
            lines += ["", f"The hand estimates' best, {hand.name}, loses {hand.loss_w:.5g} W in the field solution: "
                      f"{excess * 100:+.2f} % against the field optimum {ranked[0].name}"
                      + (" (it fails a limit: " + hand.failed + ")" if hand.failed else "") + "."]
    else:
        lines.append("No candidate meets every limit: relax a limit or widen the choices (search.csv gives each failure).")
    if doc["pareto"]:
        lines += ["", "Pareto set (loss, leakage, capacitance; none dominated by another solved candidate): "
                  + "; ".join(doc["pareto"]) + "."]
    lines += ["", f"Caution: {CAUTION}", ""]
    return "\n".join(lines)


# ---------------------------------------------------------------------------
# Case files of the best designs


def _toml_value(value: object) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise ValueError("a case value is not finite")
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, list):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{_toml_key(k)} = {_toml_value(v)}" for k, v in value.items()) + " }"
    raise ValueError(f"cannot write {type(value).__name__} in TOML")


def _toml_key(key: str) -> str:
    return key if key.replace("_", "").replace("-", "").isalnum() and key.isascii() else json.dumps(key)


def toml_text(doc: dict, header: str = "") -> str:
    """A case document as TOML: top-level tables as [name], lists of tables as
    [[name]], anything deeper inline."""
    lines = [f"# {line}" if line else "#" for line in header.splitlines()]
    tables, arrays = [], []
    for key, value in doc.items():
        if isinstance(value, dict):
            tables.append((key, value))
        elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            arrays.append((key, value))
        else:
            lines.append(f"{_toml_key(key)} = {_toml_value(value)}")
    for key, value in tables:
        lines += ["", f"[{_toml_key(key)}]"] + [f"{_toml_key(k)} = {_toml_value(v)}" for k, v in value.items()]
    for key, items in arrays:
        for item in items:
            lines += ["", f"[[{_toml_key(key)}]]"] + [f"{_toml_key(k)} = {_toml_value(v)}" for k, v in item.items()]
    return "\n".join(lines) + "\n"


def write_search(result: SearchResult, out: Path) -> list[Path]:
    """Every file of the search into ``out``; the paths written."""
    out.mkdir(parents=True, exist_ok=True)
    written = [replace_text(out / "search.csv", search_csv(result)),
               replace_text(out / "search.json", json.dumps(search_document(result), indent=1)),
               pareto_plot(result, out / "search_pareto.png"),
               replace_text(out / "search_report.md", report_text(result))]
    for d in result.ranked[: result.spec.best]:
        f = d.field
        header = (f"Design search rank {d.rank} of {len(result.ranked)}: {d.name}\n"
                  f"written by racfield search from {result.case.path or 'a case'}; field loss {f['loss_w']:.5g} W "
                  f"at {result.frequency / 1e3:.6g} kHz\n{CAUTION}")
        written.append(replace_text(out / f"best_{d.rank}.toml", toml_text(d.document, header)))
    return written
