"""report.html: one self-contained page from a results folder.

Built from the files ``racfield run`` wrote (results.json and the PNGs; for a
case with variants, comparison.json and each variant's folder), with no new
solve.  The page is a single file: images embedded as base64 data URIs, inline
CSS, no scripts and nothing fetched from the network (its content security
policy forbids it).  Every text that comes from the case is HTML-escaped.
"""

from __future__ import annotations

import re
from pathlib import Path

from racfield.geometry.case.errors import CaseError
from racfield.geometry.case.units import format_frequency

from . import results_file
from .atomic import replace_text
from .error_estimate import estimate_note, estimate_text
from .html_capacitance import capacitance_section
from .html_parts import Page as _Page, cell as _cell, eng, esc, image as _image, table as _table
from .html_thermal import temperature_section
from .validation_status import VALIDATION, case_features

REPORT_NAME = "report.html"
METHOD_NAMES = {"dowell": "Dowell", "ferreira": "Ferreira"}

CSS = """
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", sans-serif; color: #1d1d1b;
       background: #fff; margin: 0 auto; padding: 1.5rem 1.5rem 3rem; max-width: 68rem; line-height: 1.45; }
h1 { font-size: 1.6rem; margin: 0 0 0.3rem; }
h2 { font-size: 1.25rem; margin: 2.2rem 0 0.6rem; padding-bottom: 0.2rem; border-bottom: 1px solid #c9c9c4; }
h3 { font-size: 1.05rem; margin: 1.6rem 0 0.5rem; }
p.sub { color: #55554f; margin: 0 0 1rem; }
nav ol { columns: 2; margin: 0.4rem 0 0; padding-left: 1.4rem; }
nav { background: #f4f4f2; padding: 0.7rem 1rem; border-radius: 4px; }
a { color: #2a5d8f; }
div.scroll { overflow-x: auto; margin: 0.5rem 0 1rem; }
table { border-collapse: collapse; font-size: 0.9rem; }
th, td { border: 1px solid #d6d6d1; padding: 0.25rem 0.55rem; vertical-align: top; text-align: left; }
th { background: #f4f4f2; font-weight: 600; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
td.num { white-space: nowrap; }
td.notes { font-size: 0.82rem; color: #3d3d38; max-width: 26rem; }
td.notes ul { margin: 0; padding-left: 1rem; }
tr.off td { color: #8a8a84; }
table.validation { width: 100%; }
table.validation td { white-space: normal; }
table.validation td.check, table.validation td.ref { width: 36%; }
dl.summary { display: grid; grid-template-columns: max-content 1fr; gap: 0.2rem 1.2rem; margin: 0.5rem 0 1rem; }
dl.summary dt { font-weight: 600; }
dl.summary dd { margin: 0; }
figure { margin: 0.6rem 0 1.2rem; }
figure img { max-width: 100%; height: auto; border: 1px solid #e2e2dd; }
figcaption { font-size: 0.85rem; color: #55554f; margin-top: 0.3rem; }
.missing { color: #6b6b65; font-style: italic; }
.caution { border-left: 4px solid #b5651d; background: #fbf5ee; padding: 0.7rem 1rem; }
section.variant { border-top: 3px double #c9c9c4; margin-top: 2.5rem; }
footer { margin-top: 3rem; font-size: 0.8rem; color: #6b6b65; }
code { font-size: 0.9em; background: #f4f4f2; padding: 0 0.2em; }
@media print { nav { display: none; } h2 { break-after: avoid; } figure { break-inside: avoid; } }
"""

CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"


def _markup(text: str) -> str:
    """README-style ``*italics*`` and backtick code in an escaped text."""
    escaped = esc(text)
    escaped = re.sub(r"`([^`]+)`", r"<code>\1</code>", escaped)
    return re.sub(r"\*([^*]+)\*", r"<em>\1</em>", escaped)


# ---------------------------------------------------------------------------
# numbers (eng and the building blocks: html_parts)


def _freq(f: float) -> str:
    """``format_frequency`` with a no-break space, so that '20 kHz' stays on one line."""
    return format_frequency(f).replace(" ", "\u00a0")


def _ratio(value: float | None) -> str:
    return "\u2013" if value is None else f"{value:.4g}"


def _percent(estimate: float | None, fem: float | None) -> str:
    if estimate is None or fem is None or fem == 0:
        return "\u2013"
    return f"{100.0 * (estimate - fem) / fem:+.1f} %"


def _at(values, i: int):
    try:
        return values[i]
    except (IndexError, TypeError, KeyError):
        return None


def picks(count: int) -> list[int]:
    """Indices of the lowest, middle and highest frequency (fewer when there are fewer)."""
    return sorted({0, count // 2, count - 1}) if count else []


# ---------------------------------------------------------------------------
# one results folder


def _summary(page: _Page, doc: dict, prefix: str, level: int) -> None:
    freqs = doc["frequencies_hz"]
    at = picks(len(freqs))
    page.heading(level, f"{prefix}summary", "Case summary")
    axisymmetric = doc.get("symmetry") == "axisymmetric"
    length = ("true ring lengths (axisymmetric: every turn is a ring of length 2\u03c0r)" if axisymmetric
              else eng(doc.get("length_m"), "m") + " per turn (planar cross-section scaled by it)"
              if doc.get("length_m") is not None else "each turn its own length around the centre leg "
              "(planar cross-section scaled per turn)")
    listed = ", ".join(_freq(f) for f in freqs) if len(freqs) <= 12 else \
        f"{len(freqs)} from {_freq(freqs[0])} to {_freq(freqs[-1])}"
    items = [("Title", doc["title"]), ("Symmetry", doc.get("symmetry", "planar")),
             ("Temperature", f"{doc.get('temperature_c', float('nan')):g} \u00b0C"),
             ("Turn length", length), ("Frequencies", listed)]
    mesh = doc.get("mesh") or {}
    if mesh:
        items.append(("Mesh", f"{mesh.get('elements', '?')} elements, {mesh.get('unknowns', '?')} unknowns"))
    page.add('<dl class="summary">' + "".join(f"<dt>{esc(k)}</dt><dd>{esc(v)}</dd>" for k, v in items) + "</dl>")

    self_l = (doc.get("inductance") or {}).get("self_l_h") or {}
    head = ["winding", "turns", "current (RMS)", "phase", "Rdc"]
    head += [f"Rac/Rdc at {_freq(freqs[i])}" for i in at]
    head += [f"loss at {_freq(freqs[-1])}"]
    ends = sorted({0, len(freqs) - 1})
    if self_l:
        head += [f"self L at {_freq(freqs[i])}" for i in ends]
    estimate = doc.get("error_estimate")
    if estimate:
        head += ["Rac and loss error (estimate)", "L error (estimate)"]
    rows = []
    for name, w in doc["windings"].items():
        row = [name, str(w.get("turns", "")), eng(w.get("current_a_rms"), "A"), f"{w.get('phase_deg', 0):g}\u00b0",
               eng(w.get("rdc_ohm"), "\u03a9")]
        row += [_ratio(_at(w.get("rac_over_rdc"), i)) for i in at]
        row += [eng(_at(w.get("loss_w"), len(freqs) - 1), "W")]
        if self_l:
            row += [eng(_at(self_l.get(name), i), "H") for i in ends]
        if estimate:
            entries = (estimate.get("windings") or {}).get(name) or {}
            row += [estimate_text(entries.get("rac") or entries.get("loss")), estimate_text(entries.get("l"))]
        rows.append(row)
    total = doc.get("total_loss_w")
    if total:
        rows.append(["all windings", "", "", "", ""] + [""] * len(at) + [eng(_at(total, len(freqs) - 1), "W")]
                    + ([""] * len(ends) if self_l else []) + (["", ""] if estimate else []))
    page.add(_table(head, rows, numeric=set(range(1, len(head)))))
    lines = []
    ends_text = " / ".join(_freq(freqs[i]) for i in ends)
    leakage = doc.get("leakage")
    if leakage:
        lines.append(f"Leakage inductance referred to {leakage.get('referred_to')} (the other windings shorted): "
                     + " / ".join(eng(_at(leakage.get("l_h"), i), "H") for i in ends) + f" at {ends_text}.")
    magnetizing = (doc.get("inductance") or {}).get("magnetizing_l_h")
    if magnetizing:
        lines.append(f"Magnetizing inductance referred to {doc['inductance'].get('magnetizing_referred_to')}: "
                     + " / ".join(eng(_at(magnetizing, i), "H") for i in ends) + f" at {ends_text}.")
    if not self_l and not magnetizing and doc.get("loss_matrix", {}).get("balanced_only"):
        lines.append("Ideal-core window: the magnetizing inductance is infinite, so no self inductance is reported; "
                     "only balanced (ampere-turn-free) currents exist.")
    if estimate:
        lines.append(estimate_note(estimate))
    for line in lines:
        page.add(f"<p>{esc(line)}</p>")
    _whole_turns(page, doc, at)


def _whole_turns(page: _Page, doc: dict, at: list[int]) -> None:
    """With [end_turns]: Rac/Rdc of the window section, the end-turn section and the whole turn."""
    sections = doc.get("sections")
    if not sections:
        return
    freqs = doc["frequencies_hz"]
    share = sections["end_share"] * 100
    text = (f"Whole turns: {share:.3g} % of every turn in the end-turn section (air beside the centre leg); "
            "Rac/Rdc of each section alone and of the whole turn.")
    page.add(f"<p>{esc(text)}</p>")
    rows = [[name, part] + [_ratio(_at(sections[part]["windings"][name]["rac_over_rdc"], i)) for i in at]
            for name in doc["windings"] for part in ("window", "end", "whole")]
    page.add(_table(["winding", "section"] + [f"Rac/Rdc at {_freq(freqs[i])}" for i in at], rows,
                    numeric=set(range(2, 2 + len(at)))))


def _estimates(page: _Page, doc: dict, folder: Path, prefix: str, level: int) -> None:
    page.heading(level, f"{prefix}estimates", "Hand estimates against the field solution")
    estimates = doc.get("estimates") or {}
    methods = [m for m in estimates if estimates[m]]
    if not methods:
        page.add('<p class="missing">This results folder has no hand estimates (results.json has no '
                 '"estimates").</p>')
        return
    page.add("<p>Rac/Rdc from the one-dimensional layer model of each method beside the field solution; "
             "the difference is (estimate \u2212 field) / field. The notes say where a method's assumptions "
             "do not hold for this case.</p>")
    page.add(_image(folder, "estimates.png", "Rac/Rdc of the field solution and the hand estimates against frequency",
                    "Field solution and hand estimates over frequency, and their difference.",
                    "No estimate plot."))
    freqs = doc["frequencies_hz"]
    at = picks(len(freqs))
    names = [METHOD_NAMES.get(m, m.capitalize()) for m in methods]
    head = ["winding", "frequency", "field solution"] + names + [f"{n} difference" for n in names] + ["notes"]
    body = []
    for name, w in doc["windings"].items():
        by_note: dict[str, list[str]] = {}
        for method, label in zip(methods, names):
            for note in estimates[method].get(name, {}).get("notes", []):
                by_note.setdefault(str(note), []).append(label)
        notes = [f"<li><strong>{esc(', '.join(labels))}</strong>: {esc(note)}</li>" for note, labels in by_note.items()]
        notes_cell = f'<td class="notes" rowspan="{len(at)}"><ul>{"".join(notes)}</ul></td>' if notes else \
            f'<td class="notes" rowspan="{len(at)}">none</td>'
        for k, i in enumerate(at):
            fem = _at(w.get("rac_over_rdc"), i)
            values = [_at(estimates[m].get(name, {}).get("rac_over_rdc"), i) for m in methods]
            cells = [_cell("td", name, False), _cell("td", _freq(freqs[i]), True),
                     _cell("td", _ratio(fem), True)]
            cells += [_cell("td", _ratio(v), True) for v in values]
            cells += [_cell("td", _percent(v, fem), True) for v in values]
            body.append("<tr>" + "".join(cells) + (notes_cell if k == 0 else "") + "</tr>")
    numeric = set(range(1, len(head) - 1))
    head_html = "".join(_cell("th", h, i in numeric) for i, h in enumerate(head))
    page.add(f'<div class="scroll"><table><thead><tr>{head_html}</tr></thead><tbody>{"".join(body)}</tbody></table></div>')
    page.add("<p>All frequencies: <code>estimates.csv</code> in the results folder.</p>"
             if (folder / "estimates.csv").exists() else "")


def _conductor_losses(page: _Page, doc: dict, folder: Path, prefix: str, level: int) -> None:
    page.heading(level, f"{prefix}conductor-loss", "Loss of each turn")
    freqs = doc["frequencies_hz"]
    page.add(_image(folder, "conductor_loss.png", "every turn coloured by its loss at the highest frequency",
                    f"Loss of each turn at {_freq(freqs[-1])}.", "No per-turn loss map."))
    conductors = [c for c in doc.get("conductors", []) if isinstance(c, dict) and c.get("loss_w")]
    if not conductors:
        return
    hottest = sorted(conductors, key=lambda c: -(_at(c["loss_w"], len(freqs) - 1) or 0.0))[:5]
    rows = []
    for c in hottest:
        dc = (c.get("rdc_ohm") or 0.0) * (doc["windings"].get(c.get("winding"), {}).get("current_a_rms") or 0.0) ** 2
        loss = _at(c["loss_w"], len(freqs) - 1)
        rows.append([str(c.get("winding")), str(c.get("turn")), eng(loss, "W"),
                     "\u2013" if not dc or loss is None else f"{loss / dc:.3g}"])
    page.add(f"<p>The turns with the highest loss at {esc(_freq(freqs[-1]))}:</p>")
    page.add(_table(["winding", "turn", "loss", "loss / DC loss"], rows, numeric={1, 2, 3}))


def _folder_sections(page: _Page, doc: dict, folder: Path, prefix: str, level: int) -> None:
    """Every section of one results folder, headings at ``level``."""
    _summary(page, doc, prefix, level)
    page.heading(level, f"{prefix}geometry", "Geometry")
    page.add(_image(folder, "geometry.png", "the window with every turn, coloured by winding",
                    "The window as modelled.", "No geometry drawing."))
    page.heading(level, f"{prefix}rac", "Rac/Rdc against frequency")
    page.add(_image(folder, "rac_over_rdc.png", "Rac/Rdc of each winding against frequency",
                    "Rac/Rdc of each winding (lines: hand estimates).", "No Rac/Rdc plot."))
    _estimates(page, doc, folder, prefix, level)
    page.heading(level, f"{prefix}mmf", "MMF across the window")
    if (folder / "mmf.png").exists():
        page.add(_image(folder, "mmf.png", "magnetomotive force across the window",
                        "MMF from the field solution over the ideal ampere-turn staircase.", "No MMF diagram."))
    else:
        page.add('<p class="missing">No MMF diagram: this results folder has no mmf.png '
                 "(it is written for layered windings).</p>")
    page.heading(level, f"{prefix}field", "Field map")
    page.add(_image(folder, "current_density.png", "current density magnitude and flux lines",
                    f"|J| and flux lines at {_freq(doc['frequencies_hz'][-1])}.", "No field map."))
    _conductor_losses(page, doc, folder, prefix, level)
    temperature_section(page, doc, folder, prefix, level)
    capacitance_section(page, doc, folder, prefix, level)


def _validation(page: _Page, features: set[str]) -> None:
    page.heading(2, "validation", "Validation status")
    page.add("<p>The checks racfield's test suite makes against references from outside racfield "
             "(README, Validation). \u201cApplies\u201d marks the checks that cover a method or feature "
             "this case uses.</p>")
    rows = []
    for v in VALIDATION:
        on = v.applies(features)
        mark = "yes" if on else "\u2013"
        rows.append(f'<tr class="{"on" if on else "off"}"><td>{mark}</td>'
                    f'<td class="check">{_markup(v.check)}</td><td class="ref">{_markup(v.reference)}</td>'
                    f"<td>{_markup(v.tolerance)}</td><td>{_markup(v.measured)}</td></tr>")
    page.add('<div class="scroll"><table class="validation"><thead><tr><th>applies</th><th>check</th>'
             "<th>reference</th><th>tolerance</th><th>measured</th></tr></thead><tbody>"
             + "".join(rows) + "</tbody></table></div>")


def _caution(page: _Page, caution: str | None) -> None:
    page.heading(2, "caution", "Caution")
    page.add(f'<p class="caution">{esc(caution or "Results are model estimates from a 2-D field solution.")}</p>')


def _document(title: str, subtitle: str, page: _Page) -> str:
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f'<meta http-equiv="Content-Security-Policy" content="{CSP}">'
            '<meta name="viewport" content="width=device-width, initial-scale=1">'
            f"<title>{esc(title)} \u2013 racfield report</title><style>{CSS}</style></head><body>\n"
            f"<header><h1>{esc(title)}</h1><p class=\"sub\">{esc(subtitle)}</p>{page.nav()}</header>\n<main>\n"
            + "\n".join(p for p in page.parts if p)
            + "\n</main><footer>Written by <code>racfield report</code> from the result files; "
              "see README for the conventions behind every number.</footer></body></html>\n")


def _single(folder: Path) -> str:
    doc = results_file.read(folder / "results.json")
    page = _Page()
    _folder_sections(page, doc, folder, "", 2)
    _validation(page, case_features(doc))
    _caution(page, doc.get("caution"))
    subtitle = (f"AC winding resistance from a 2-D eddy-current field solution; {doc.get('symmetry', 'planar')}, "
                f"{len(doc['windings'])} winding{'s' if len(doc['windings']) != 1 else ''}, "
                f"{len(doc['frequencies_hz'])} frequencies.")
    return _document(doc["title"], subtitle, page)


def _variants(folder: Path) -> str:
    path = folder / "comparison.json"
    comparison = results_file.read_json(path)
    try:
        freqs = comparison["frequencies_hz"]
        compare = float(comparison["compare_frequency_hz"])
        variants = dict(comparison["variants"])
        at = min(range(len(freqs)), key=lambda i: abs(freqs[i] - compare))
        for v in variants.values():
            v["folder"], v["total_loss_w"][at], v["rac_over_rdc"].items()
    except (KeyError, TypeError, ValueError, IndexError, AttributeError):
        raise CaseError("", "not a racfield comparison.json (frequencies and variants missing)",
                        "give the folder written by racfield run", str(path)) from None
    documents = {}
    for name, v in variants.items():
        sub = folder / str(v["folder"])
        if (sub / "results.json").exists() and sub.resolve().parent == folder.resolve():
            documents[name] = results_file.read(sub / "results.json")
    title = _base_title(documents)
    page = _Page()
    page.heading(2, "comparison", f"Variants compared at {_freq(compare)}")
    windings = list(next(iter(variants.values()))["rac_over_rdc"]) if variants else []
    first_total = None
    rows = []
    capacitance = any(v.get("between_capacitance_f") for v in variants.values())
    for name, v in variants.items():
        total = _at(v["total_loss_w"], at)
        first_total = total if first_total is None else first_total
        change = "\u2013" if not first_total or total is None or name == next(iter(variants)) \
            else f"{100.0 * (total - first_total) / first_total:+.1f} %"
        row = [name] + [_ratio(_at(v["rac_over_rdc"].get(w), at)) for w in windings]
        row += [eng(_at(v.get("loss_w", {}).get(w), at), "W") for w in windings]
        row += [eng(total, "W"), change, eng(_at(v.get("leakage_l_h"), at), "H")]
        between = list((v.get("between_capacitance_f") or {}).values())
        row += [eng(between[0] if between else None, "F")] if capacitance else []
        rows.append(row)
    head = (["variant"] + [f"{w} Rac/Rdc" for w in windings] + [f"{w} loss" for w in windings]
            + ["total loss", "total vs first variant", "leakage inductance"]
            + (["capacitance between windings"] if capacitance else []))
    page.add("<p>Every variant at the case currents; losses in W per whole turn length.</p>")
    page.add(_table(head, rows, numeric=set(range(1, len(head)))))
    page.add(_image(folder, "rac_over_rdc_variants.png", "Rac/Rdc of each winding for every variant",
                    "Rac/Rdc of each winding, every variant.", "No variant Rac/Rdc plot."))
    page.add(_image(folder, "loss_by_variant.png", "winding losses of every variant",
                    f"Winding losses at {_freq(compare)}.", "No loss bar chart."))
    if capacitance:
        page.add(_image(folder, "tradeoff.png", "leakage inductance against capacitance, coloured by loss",
                        f"Leakage, capacitance and total loss of every variant at {_freq(compare)}.",
                        "No trade-off plot."))
    features: set[str] = set()
    caution = None
    for i, (name, v) in enumerate(variants.items(), start=1):
        anchor = f"variant-{i}"
        page.add('<section class="variant">')
        page.heading(2, anchor, f"Variant: {name}")
        doc = documents.get(name)
        if doc is None:
            page.add(f'<p class="missing">The folder {esc(v["folder"])} of this variant has no results.json.</p>')
        else:
            _folder_sections(page, doc, folder / str(v["folder"]), f"{anchor}-", 3)
            features |= case_features(doc)
            caution = caution or doc.get("caution")
        page.add("</section>")
    _validation(page, features or {"all"})
    _caution(page, caution)
    subtitle = (f"{len(variants)} variants of one case; AC winding resistance from a 2-D eddy-current field "
                f"solution, {len(freqs)} frequencies.")
    return _document(title, subtitle, page)


def _base_title(documents: dict) -> str:
    """The case title without a variant's " [name]" suffix."""
    for name, doc in documents.items():
        suffix = f" [{name}]"
        title = str(doc["title"])
        return title[: -len(suffix)] if title.endswith(suffix) else title
    return "Variants"


def build_html(directory: Path) -> str:
    """The page for the results folder ``directory`` (see the module docstring)."""
    directory = Path(directory)
    if not directory.is_dir():
        raise CaseError("", "is not a results folder", "give the folder written by racfield run", str(directory))
    if (directory / "comparison.json").is_file():
        return _variants(directory)
    if (directory / "results.json").is_file():
        return _single(directory)
    raise CaseError("", "has no results.json or comparison.json", "give the folder written by racfield run",
                    str(directory))


def write_report(directory: Path, out: Path | None = None) -> Path:
    """Write ``directory/report.html`` (or ``out``) and return its path."""
    directory = Path(directory)
    text = build_html(directory)
    target = Path(out) if out is not None else directory / REPORT_NAME
    try:
        return replace_text(target, text)
    except OSError as error:
        raise CaseError("--out", f"cannot write {target} ({error.strerror or error.__class__.__name__})",
                        "name a file in a writable folder", str(directory)) from None
