"""Comparison of the variants of one case: table (CSV, JSON) and plots.

Each variant is given by its results document (results.json, see
:func:`postprocess.report.results_document`), so that variants finished by an
earlier, interrupted run take part without being solved again; this module
only lines them up.  Losses in W at the case currents, leakage in H,
capacitances in F (whole turns; with ``[dielectric]``, None otherwise).
"""

from __future__ import annotations

import csv
import io
import json
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from racfield.geometry.case.names import folder_slug
from racfield.geometry.case.units import format_frequency

from .atomic import replace_text


@dataclass
class VariantRow:
    """One variant's comparison numbers (per frequency lists)."""

    name: str
    rac_over_rdc: dict[str, list[float | None]]
    loss_w: dict[str, list[float]]
    total_loss_w: list[float]
    leakage_l_h: list[float] | None
    self_capacitance_f: dict[str, float] | None = None      #: each winding's, across its terminals
    between_capacitance_f: dict[str, float] | None = None   #: per pair of windings ("a-b"), turns tied

    def first_between(self) -> float | None:
        """The capacitance between the first pair of windings (F), None without one."""
        return next(iter(self.between_capacitance_f.values()), None) if self.between_capacitance_f else None


def folder_name(variant: str) -> str:
    """A file-system-safe folder name for a variant (the name itself is kept in the results)."""
    return folder_slug(variant)


#: the files :func:`write_comparison` writes
COMPARISON_FILES = ("comparison.csv", "comparison.json", "rac_over_rdc_variants.png", "loss_by_variant.png",
                    "tradeoff.png")


def row(variant: str, doc: dict) -> VariantRow:
    """A variant's row from its results document."""
    leakage = doc.get("leakage")
    windings = doc["windings"]
    capacitance = (doc.get("capacitance") or {}).get("winding") or {}
    return VariantRow(variant or "base", {n: w["rac_over_rdc"] for n, w in windings.items()},
                      {n: w["loss_w"] for n, w in windings.items()}, doc["total_loss_w"],
                      None if leakage is None else leakage["l_h"], capacitance.get("self_f"),
                      capacitance.get("between_f"))


def rows(documents: list[tuple[str, dict]]) -> list[VariantRow]:
    return [row(variant, doc) for variant, doc in documents]


def _f(value: float | None) -> str:
    """A number for a CSV cell: 8 digits, or empty when missing."""
    return "" if value is None else f"{value:.8g}"


def compare_index(frequencies: np.ndarray, wanted: float | None) -> int:
    """Index of the solved frequency nearest (in log) to ``wanted``; the middle one by default."""
    if wanted is None:
        return len(frequencies) // 2
    positive = np.where(frequencies > 0, frequencies, np.nan)
    return int(np.nanargmin(np.abs(np.log(positive / wanted))))


def write_comparison(documents: list[tuple[str, dict]], directory: Path, wanted: float | None) -> list[Path]:
    """comparison.csv, comparison.json, rac_over_rdc_variants.png, loss_by_variant.png
    and, when the variants have capacitances and leakage, tradeoff.png from
    (variant, results document) pairs."""
    table = rows(documents)
    first = documents[0]
    freqs = np.asarray(first[1]["frequencies_hz"])
    at = compare_index(freqs, wanted)
    windings = list(first[1]["windings"])

    buffer = io.StringIO()
    out = csv.writer(buffer, lineterminator="\n")
    out.writerow(["variant", "frequency_hz", "winding", "rac_over_rdc", "loss_w", "total_loss_w", "leakage_l_h",
                  "self_capacitance_f", "between_capacitance_f"])
    for row in table:
        for i, f in enumerate(freqs):
            for name in windings:
                ratio = row.rac_over_rdc[name][i]
                out.writerow([row.name, f"{f:.8g}", name, "" if ratio is None else f"{ratio:.8g}",
                              f"{row.loss_w[name][i]:.8g}", f"{row.total_loss_w[i]:.8g}",
                              "" if row.leakage_l_h is None else f"{row.leakage_l_h[i]:.8g}",
                              _f((row.self_capacitance_f or {}).get(name)), _f(row.first_between())])
    written = [replace_text(directory / "comparison.csv", buffer.getvalue())]
    doc = {"frequencies_hz": freqs.tolist(), "compare_frequency_hz": float(freqs[at]),
           "variants": {r.name: {"rac_over_rdc": r.rac_over_rdc, "loss_w": r.loss_w,
                                 "total_loss_w": r.total_loss_w, "leakage_l_h": r.leakage_l_h,
                                 "self_capacitance_f": r.self_capacitance_f,
                                 "between_capacitance_f": r.between_capacitance_f,
                                 "folder": folder_name(r.name)} for r in table}}
    written.append(replace_text(directory / "comparison.json", json.dumps(doc, indent=1) + "\n"))
    written.append(_ratio_plot(first, table, windings, freqs, directory))
    written.append(_loss_bars(first, table, windings, freqs, at, directory))
    written += _tradeoff_plot(first, table, freqs, at, directory)
    return written


def _ratio_plot(first: tuple[str, dict], table: list[VariantRow], windings: list[str], freqs: np.ndarray,
                directory: Path) -> Path:
    from matplotlib import colormaps   # here: the variants' folder names need no plotting
    from matplotlib.ticker import EngFormatter, NullFormatter

    from .plotting import LINE_MAP, line_colours, new_figure, save

    figure = new_figure(7.0, 2.6 + 2.4 * len(windings))
    colours = line_colours(len(table), colormaps[LINE_MAP])
    positive = freqs > 0
    axes = figure.subplots(len(windings), 1, sharex=True, squeeze=False)[:, 0]
    for ax, name in zip(axes, windings):
        for row, colour in zip(table, colours):
            ratio = np.array([np.nan if r is None else r for r in row.rac_over_rdc[name]])
            ax.plot(freqs[positive], ratio[positive], color=colour, marker="o", markersize=3, label=row.name)
        ax.set_xscale("log")
        ax.set_ylabel(f"{name}: Rac / Rdc (1)")
        ax.grid(True, which="both", color="0.9", linewidth=0.6)
        ax.axhline(1.0, color="0.6", linewidth=0.8, linestyle="--")
    axes[0].legend(frameon=False, fontsize=8)
    axes[0].set_title(f"{_base_title(first)}: variants\nmodel estimate, see the README caution", fontsize=9)
    axes[-1].xaxis.set_major_formatter(EngFormatter(unit="Hz"))
    axes[-1].xaxis.set_minor_formatter(NullFormatter())
    axes[-1].set_xlabel("Frequency (Hz, log scale)")
    return save(figure, directory / "rac_over_rdc_variants.png")


def _loss_bars(first: tuple[str, dict], table: list[VariantRow], windings: list[str], freqs: np.ndarray, at: int,
               directory: Path) -> Path:
    from matplotlib import colormaps

    from .plotting import LINE_MAP, line_colours, new_figure, save

    figure = new_figure(7.0, 4.0)
    ax = figure.add_subplot()
    colours = line_colours(len(windings), colormaps[LINE_MAP])
    bottom = np.zeros(len(table))
    x = np.arange(len(table))
    for name, colour in zip(windings, colours):
        values = np.array([row.loss_w[name][at] for row in table])
        ax.bar(x, values, bottom=bottom, color=colour, label=name, width=0.6)
        bottom += values
    for xi, total in zip(x, bottom):
        ax.annotate(f"{total:.3g} W", (xi, total), ha="center", va="bottom", fontsize=8)
    ax.set_xticks(x, [row.name for row in table])
    ax.set_ylabel("Winding loss at the case currents (W)")
    ax.set_title(f"{_base_title(first)}: loss at {format_frequency(freqs[at])}", fontsize=9)
    ax.legend(frameon=False, fontsize=8)
    ax.grid(True, axis="y", color="0.9", linewidth=0.6)
    return save(figure, directory / "loss_by_variant.png")


def _tradeoff_plot(first: tuple[str, dict], table: list[VariantRow], freqs: np.ndarray, at: int,
                   directory: Path) -> list[Path]:
    """tradeoff.png: each variant at its leakage inductance (x, H) and its
    capacitance between the first pair of windings (y, F), coloured by its
    total loss at the comparison frequency (W); nothing (an empty list) when
    no variant has both."""
    shown = [r for r in table if r.leakage_l_h is not None and r.first_between() is not None]
    if not shown:
        return []
    from matplotlib import colormaps
    from matplotlib.ticker import EngFormatter

    from .plotting import LINE_MAP, new_figure, save

    x = np.array([r.leakage_l_h[at] for r in shown])
    y = np.array([r.first_between() for r in shown])
    loss = np.array([r.total_loss_w[at] for r in shown])
    figure = new_figure(7.0, 4.8)
    ax = figure.add_subplot()
    points = ax.scatter(x, y, c=loss, cmap=colormaps[LINE_MAP], s=70, edgecolors="0.2", linewidths=0.6, zorder=3)
    for xi, yi, r in zip(x, y, shown):
        ax.annotate(r.name, (xi, yi), xytext=(6, 5), textcoords="offset points", fontsize=8)
    pair = next(iter(shown[0].between_capacitance_f))
    ax.xaxis.set_major_formatter(EngFormatter(unit="H"))
    ax.yaxis.set_major_formatter(EngFormatter(unit="F"))
    ax.set_xlabel(f"Leakage inductance at {format_frequency(freqs[at])} (H)")
    ax.set_ylabel(f"Capacitance between {pair.replace('-', ' and ', 1)} (F)")
    ax.margins(0.15)
    ax.grid(True, color="0.9", linewidth=0.6)
    bar = figure.colorbar(points, ax=ax)
    bar.set_label(f"Total winding loss at {format_frequency(freqs[at])} (W)")
    ax.set_title(f"{_base_title(first)}: loss vs leakage vs capacitance\nmodel estimate, see the README caution",
                 fontsize=9)
    return [save(figure, directory / "tradeoff.png")]


def _base_title(first: tuple[str, dict]) -> str:
    variant, doc = first
    title = doc["title"]
    suffix = f" [{variant}]"
    return title[: -len(suffix)] if variant and title.endswith(suffix) else title


def summary(documents: list[tuple[str, dict]], wanted: float | None) -> str:
    """A text table at the comparison frequency."""
    table = rows(documents)
    freqs = np.asarray(documents[0][1]["frequencies_hz"])
    at = compare_index(freqs, wanted)
    windings = list(documents[0][1]["windings"])
    head = (f"{'variant':<28} " + " ".join(f"{n[:12] + ' Rac/Rdc':>20}" for n in windings)
            + f" {'total loss':>12} {'leakage':>12}")
    capacitance = any(r.first_between() is not None for r in table)
    head += f" {'C between':>12}" if capacitance else ""
    lines = [f"comparison at {format_frequency(freqs[at])}:", head, "-" * len(head)]
    for row in table:
        ratios = " ".join(f"{'-' if row.rac_over_rdc[n][at] is None else f'{row.rac_over_rdc[n][at]:.4f}':>20}"
                          for n in windings)
        leak = "-" if row.leakage_l_h is None else f"{row.leakage_l_h[at] * 1e6:.4g} uH"
        between = "-" if row.first_between() is None else f"{row.first_between() * 1e12:.4g} pF"
        lines.append(f"{row.name[:28]:<28} {ratios} {row.total_loss_w[at]:>10.4g} W {leak:>12}"
                     + (f" {between:>12}" if capacitance else ""))
    return "\n".join(lines)


#: the files :func:`write_study_table` writes
STUDY_FILES = ("study.csv", "study.json")


def write_study_table(case, documents: list[tuple[str, dict]], failed: dict[str, str],
                      directory: Path) -> list[Path]:
    """study.csv and study.json: one row per variant and frequency (the study's
    values, each winding's Rac/Rdc and loss in W, the total, the leakage in H,
    with [dielectric] each winding's self capacitance and the capacitance
    between the first pair of windings in F, empty without),
    and one row with the error for every failed variant."""
    points = {p.name: dict(p.values) for p in getattr(case, "study", ())}
    keys = list(dict.fromkeys(k for values in points.values() for k in values)) or ["variant"]
    windings = [w.name for w in case.windings]
    table = {r.name: r for r in rows(documents)}
    order = [name for name, _ in documents] + [n for n in failed if n not in dict(documents)]

    def value(name: str, key: str) -> str:
        if key == "variant" and not points:
            return name
        v = points.get(name, {}).get(key, "")
        return v if isinstance(v, str) else json.dumps(v)

    buffer = io.StringIO()
    out = csv.writer(buffer, lineterminator="\n")
    # the first column, "variant", is the point's name; the "variant" study key (the
    # [[variant]] arrangement) is headed "arrangement", so that no two columns share a name
    axes = ["arrangement" if k == "variant" else k for k in keys]
    out.writerow(["variant", *axes, "frequency_hz", *[f"{w}_rac_over_rdc" for w in windings],
                  *[f"{w}_loss_w" for w in windings], "total_loss_w", "leakage_l_h",
                  *[f"{w}_self_capacitance_f" for w in windings], "between_capacitance_f", "error"])
    entries = []
    docs = dict(documents)
    for name in order:
        values = [value(name, k) for k in keys]
        if name in failed:
            out.writerow([name, *values, "", *[""] * (3 * len(windings)), "", "", "", failed[name]])
            entries.append({"variant": name, "values": dict(zip(keys, values)), "error": failed[name]})
            continue
        r, freqs = table[name], docs[name]["frequencies_hz"]
        for i, f in enumerate(freqs):
            out.writerow([name, *values, f"{f:.8g}",
                          *["" if r.rac_over_rdc[w][i] is None else f"{r.rac_over_rdc[w][i]:.8g}" for w in windings],
                          *[f"{r.loss_w[w][i]:.8g}" for w in windings], f"{r.total_loss_w[i]:.8g}",
                          "" if r.leakage_l_h is None else f"{r.leakage_l_h[i]:.8g}",
                          *[_f((r.self_capacitance_f or {}).get(w)) for w in windings], _f(r.first_between()), ""])
        entries.append({"variant": name, "values": dict(zip(keys, values)), "error": None,
                        "folder": folder_name(name), "frequencies_hz": freqs,
                        "rac_over_rdc": r.rac_over_rdc, "loss_w": r.loss_w, "total_loss_w": r.total_loss_w,
                        "leakage_l_h": r.leakage_l_h, "self_capacitance_f": r.self_capacitance_f,
                        "between_capacitance_f": r.between_capacitance_f})
    doc = {"keys": keys, "windings": windings, "variants": entries}
    return [replace_text(directory / "study.csv", buffer.getvalue()),
            replace_text(directory / "study.json", json.dumps(doc, indent=1) + "\n")]
