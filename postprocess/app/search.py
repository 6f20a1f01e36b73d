"""Design search (``racfield search``): from the free choices of a case's
``[search]`` table to the layout to wind.

Strategy, in two stages:

1. **Screen** every candidate: build its case and lay it out (a candidate
   whose layers do not fit the window fails here), its RMS current density
   (the DC share of each conductor), and its total winding loss by the hand
   estimates (Dowell's method per winding, Ferreira's where Dowell gives
   none; every harmonic with waveforms).
2. **Field-solve** the promising ones: with ``objective = "loss"`` every
   candidate whose estimate lies within ``(1 + margin)`` x the best estimate
   among the feasible ones (and every candidate the hand estimates cannot
   score).  When the field limits (hot spot, leakage, capacitance) remove
   the best of them, the band is drawn again around the best feasible solved
   candidate's estimate, until it holds every candidate within the margin.
   With ``objective = "pareto"`` every candidate that passes the screen is
   solved (the hand estimates give neither leakage nor capacitance).

Each solved candidate is kept in ``OUT/.racfield/search/`` as it arrives,
so an interrupted search resumes where it stopped.  All losses in W at the
operating point, current densities in A/m^2, inductances in H, capacitances
in F, temperatures in degC.
"""

from __future__ import annotations

import hashlib
import json
import sys
import time
from dataclasses import dataclass, field, replace
from pathlib import Path

from racfield.geometry.case import Case
from racfield.geometry.case.errors import CaseError
from racfield.geometry.case.loader import parse_case
from racfield.geometry.case.search_spec import Candidate, SearchSpec
from racfield.geometry.case.search_keys import candidate_document, candidates
from racfield.geometry.load import checked_layout

STATE = Path(".racfield") / "search"


@dataclass
class Design:
    """One candidate of a search and what is known of it."""

    candidate: Candidate
    case: Case | None = None
    document: dict | None = None
    estimate_w: float | None = None              #: hand-estimate total loss, W
    estimate_by_winding_w: dict[str, float] = field(default_factory=dict)
    current_density: float | None = None         #: largest RMS current density, A/m^2
    field: dict | None = None                    #: the field solution's figures (see :func:`field_figures`)
    failed: str | None = None                    #: the limit it fails, or its error line
    stage: str = "screened"                      #: "screened", "solved" or "failed"
    rank: int | None = None                      #: 1 = the lowest field loss among the feasible ones
    pareto: bool = False

    @property
    def name(self) -> str:
        return self.candidate.name

    @property
    def loss_w(self) -> float | None:
        return None if self.field is None else self.field["loss_w"]


@dataclass
class SearchResult:
    """A finished search: every design, the counts and the time of each stage (s)."""

    case: Case
    spec: SearchSpec
    frequency: float
    designs: list[Design]
    timings: dict[str, float]
    resumed: int = 0

    @property
    def solved(self) -> list[Design]:
        return [d for d in self.designs if d.field is not None]

    @property
    def ranked(self) -> list[Design]:
        return sorted((d for d in self.designs if d.rank is not None), key=lambda d: d.rank)


def operating_frequency(case: Case) -> float:
    """Hz: ``[search] frequency``, else the fundamental with waveforms, else the
    compare frequency, else the middle of the sweep."""
    if case.search.frequency is not None:
        return case.search.frequency
    if case.waveform is not None:
        return case.waveform.fundamental
    if case.compare_frequency is not None:
        return case.compare_frequency
    positive = [f for f in case.frequencies if f > 0] or [1.0]
    return positive[len(positive) // 2]


def candidate_case(case: Case, candidate: Candidate, force_size: bool = False) -> tuple[Case, dict]:
    """The laid-out case of ``candidate`` and its document (CaseError if bad)."""
    doc = candidate_document(case.source, candidate)
    built = replace(parse_case(doc, case.path, case.allow_outside_files), variant=candidate.name)
    return checked_layout(built, force_size), doc


def _operating_case(case: Case, frequency: float) -> Case:
    """The case solved for the search: one frequency (waveforms: their harmonics)."""
    if case.waveform is not None:
        return case
    return replace(case, frequencies=(frequency,), compare_frequency=frequency)


# ---------------------------------------------------------------------------
# Stage 1: screening


def screen(case: Case, frequency: float) -> tuple[float | None, dict[str, float], float]:
    """(estimated total loss W or None, per winding W, largest RMS current density A/m^2)."""
    from racfield.geometry.layout import place
    from racfield.geometry.resistance import (conductor_resistances, dc_shares, weighted_resistances,
                                              winding_dc_resistance)
    from racfield.postprocess.estimates import hand_estimates

    conductors = place(case)
    resistances = conductor_resistances(case, conductors)
    weighted = weighted_resistances(case, conductors, resistances)
    shares = dc_shares(case, conductors, weighted)
    rms = {w.name: (w.spectrum.rms if w.spectrum is not None else w.current) for w in case.windings}
    density = max((abs(s) * rms[c.winding] / c.copper_area for c, s in zip(conductors, shares)), default=0.0)
    if case.waveform is not None:
        numbers = case.waveform.harmonics
        freqs = [case.waveform.frequency(n) for n in numbers]
    else:
        numbers, freqs = (1,), [frequency]
    estimates = hand_estimates(case, freqs, conductors=conductors)
    per_winding: dict[str, float] = {}
    for w in case.windings:
        rdc = winding_dc_resistance(case, conductors, w.name, resistances)
        if w.spectrum is not None:
            squares = [abs(w.spectrum.phasor(n)) ** 2 for n in numbers]
            dc_loss = w.spectrum.dc ** 2 * rdc
        else:
            squares, dc_loss = [w.current ** 2], 0.0
        if all(s == 0.0 for s in squares):
            per_winding[w.name] = dc_loss
            continue
        factors = estimates["dowell"][w.name]["rac_over_rdc"]
        if any(f is None for f, s in zip(factors, squares) if s):
            factors = estimates["ferreira"][w.name]["rac_over_rdc"]
        if any(f is None for f, s in zip(factors, squares) if s):
            return None, per_winding, density
        per_winding[w.name] = dc_loss + rdc * sum(f * s for f, s in zip(factors, squares) if s)
    return sum(per_winding.values()), per_winding, density


# ---------------------------------------------------------------------------
# Stage 2: field solution


def field_figures(document: dict, frequency: float) -> dict:
    """The figures of a solved candidate from its results document: ``loss_w``
    (waveforms: every harmonic and DC), ``rac_over_rdc`` per winding,
    ``leakage_h``, ``capacitance_f`` (largest between two windings),
    ``hot_spot_c`` (None where the case gives none)."""
    import numpy as np

    from racfield.postprocess.comparison import compare_index

    freqs = np.asarray(document["frequencies_hz"], dtype=float)
    i = compare_index(freqs, frequency) if (freqs > 0).any() else 0
    harmonics = document.get("harmonics")
    loss = harmonics["total_loss_w"] if harmonics else document["total_loss_w"][i]
    leakage = document.get("leakage")
    between = ((document.get("capacitance") or {}).get("winding") or {}).get("between_f") or {}
    thermal = document.get("thermal") or {}
    return {"loss_w": float(loss),
            "loss_by_winding_w": {n: float(w["loss_w"][i]) for n, w in document["windings"].items()},
            "rac_over_rdc": {n: w["rac_over_rdc"][i] for n, w in document["windings"].items()},
            "leakage_h": None if leakage is None else float(leakage["l_h"][i]),
            "capacitance_f": max(between.values()) if between else None,
            "hot_spot_c": thermal.get("hot_spot_c"),
            "unknowns": document["mesh"]["unknowns"]}


def solve_design(case: Case, frequency: float) -> tuple[dict | None, str | None]:
    """Run in a worker: (field figures, None), or (None, the error line)."""
    from threadpoolctl import threadpool_limits

    from racfield.postprocess.report import results_document

    from .api import solve_report

    with threadpool_limits(limits=1):
        try:
            report = solve_report(_operating_case(case, frequency), exact=True)
            return field_figures(results_document(report), frequency), None
        except CaseError as error:
            return None, error.line()
        except Exception as error:  # a bug in one candidate must not stop the others
            return None, f"internal error: {error.__class__.__name__}: {error}"


def _fingerprint(document: dict, frequency: float) -> str:
    text = json.dumps(document, sort_keys=True, default=str) + f"|{frequency!r}"
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:24]


class _Store:
    """The solved candidates of a results folder, one JSON file each."""

    def __init__(self, folder: Path | None) -> None:
        self.folder = None if folder is None else folder / STATE

    def get(self, key: str) -> dict | None:
        if self.folder is None or not (self.folder / f"{key}.json").exists():
            return None
        try:
            return json.loads((self.folder / f"{key}.json").read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return None   # a damaged file: the candidate is solved again

    def put(self, key: str, figures: dict) -> None:
        if self.folder is None:
            return
        from racfield.postprocess.atomic import replace_text

        self.folder.mkdir(parents=True, exist_ok=True)
        replace_text(self.folder / f"{key}.json", json.dumps(figures))


class SearchProgress:
    """One status line: candidates screened, solved, running/queued, failed."""

    def __init__(self, total: int, stream=sys.stderr, quiet: bool = False) -> None:
        self.total, self.stream, self.quiet = total, stream, quiet
        self.screened = self.solved = self.queued = self.failed = 0
        self.started = self.shown = time.perf_counter()

    def show(self, final: bool = False) -> None:
        """The status line: rewritten in place on a terminal; elsewhere (a log)
        at most one line every 2 s, and the last."""
        if self.quiet:
            return
        now = time.perf_counter()
        if not self.stream.isatty() and not final and now - self.shown < 2.0:
            return
        self.shown = now
        line = (f"  candidates: {self.screened}/{self.total} screened, {self.solved} solved, "
                f"{self.queued} queued, {self.failed} failed  {time.perf_counter() - self.started:6.1f} s")
        tty = self.stream.isatty()
        self.stream.write(("\r" if tty else "") + line + ("\n" if final or not tty else ""))
        self.stream.flush()


def _solve_all(designs: list[Design], frequency: float, workers: int, cluster: str | None,
               store: _Store, progress: SearchProgress) -> int:
    """Field-solve ``designs`` (stored ones are read back): the number read back."""
    todo, resumed = [], 0
    for d in designs:
        stored = store.get(_fingerprint(d.document, frequency))
        if stored is not None:
            d.field, d.stage = stored, "solved"
            resumed += 1
            progress.solved += 1
        else:
            todo.append(d)
    progress.queued = len(todo)
    progress.show()

    def done(d: Design, figures: dict | None, error: str | None) -> None:
        progress.queued -= 1
        if figures is None:
            d.failed, d.stage = f"field solution: {error}", "failed"
            progress.failed += 1
        else:
            d.field, d.stage = figures, "solved"
            store.put(_fingerprint(d.document, frequency), figures)
            progress.solved += 1
        progress.show()

    if not todo:
        return resumed
    if workers <= 1 and cluster is None:
        for d in todo:
            done(d, *solve_design(d.case, frequency))
        return resumed
    from distributed import as_completed

    from .execution import dask_client

    with dask_client(workers, cluster) as client:
        futures = {client.submit(solve_design, d.case, frequency, key=f"racfield-search-{i}", pure=False): d
                   for i, d in enumerate(todo)}
        for future in as_completed(futures):
            try:
                figures, error = future.result()
            except Exception as lost:  # the worker was lost (twice) or the task could not run
                figures, error = None, f"could not be run: {lost.__class__.__name__}: {lost}"
            done(futures[future], figures, error)
    return resumed


# ---------------------------------------------------------------------------
# Limits, ranking and the Pareto set


def field_failure(design: Design, spec: SearchSpec) -> str | None:
    """The first field limit ``design`` fails (its text), None when it meets them all."""
    lim, f = spec.limits, design.field
    if lim.hot_spot_c is not None:
        if f["hot_spot_c"] is None:
            return "hot_spot: the case has no [thermal] table"
        if f["hot_spot_c"] > lim.hot_spot_c:
            return f"hot_spot: {f['hot_spot_c']:.1f} degC above {lim.hot_spot_c:g} degC"
    if lim.leakage_h is not None:
        if f["leakage_h"] is None:
            return "leakage_inductance: no leakage inductance (a core window with two windings gives one)"
        if f["leakage_h"] > lim.leakage_h:
            return f"leakage_inductance: {f['leakage_h'] * 1e6:.4g} uH above {lim.leakage_h * 1e6:.4g} uH"
    if lim.capacitance_f is not None:
        if f["capacitance_f"] is None:
            return "capacitance: no capacitance between windings (the case needs [dielectric])"
        if f["capacitance_f"] > lim.capacitance_f:
            return f"capacitance: {f['capacitance_f'] * 1e12:.4g} pF above {lim.capacitance_f * 1e12:.4g} pF"
    return None


def objectives(design: Design) -> tuple[float, ...]:
    """The Pareto objectives of a solved design: loss, leakage, capacitance
    (those the search has; all lower is better)."""
    f = design.field
    return tuple(v for v in (f["loss_w"], f["leakage_h"], f["capacitance_f"]) if v is not None)


def dominates(a: tuple[float, ...], b: tuple[float, ...]) -> bool:
    """``a`` is no worse than ``b`` in every objective and better in one."""
    return all(x <= y for x, y in zip(a, b)) and any(x < y for x, y in zip(a, b))


def pareto_set(designs: list[Design]) -> list[Design]:
    """The feasible solved designs no other one dominates."""
    pool = [d for d in designs if d.field is not None and d.failed is None]
    return [d for d in pool if not any(dominates(objectives(o), objectives(d)) for o in pool if o is not d)]


def _rank(designs: list[Design]) -> None:
    feasible = sorted((d for d in designs if d.field is not None and d.failed is None), key=lambda d: d.loss_w)
    for n, d in enumerate(feasible, 1):
        d.rank = n
    for d in pareto_set(designs):
        d.pareto = True


def _band(screened: list[Design], reference: float, margin: float) -> list[Design]:
    return [d for d in screened if d.estimate_w is None or d.estimate_w <= reference * (1.0 + margin) * (1 + 1e-12)]


# ---------------------------------------------------------------------------
# The search


def run_search(case: Case, *, workers: int = 1, cluster: str | None = None, out: Path | None = None,
               force_size: bool = False, quiet: bool = True, exhaustive: bool = False,
               stream=sys.stderr) -> SearchResult:
    """Screen every candidate of ``case.search``, field-solve the promising
    ones (``exhaustive``: all that pass the screen) and rank them.  ``out``:
    the results folder whose ``.racfield/search`` keeps solved candidates."""
    spec = case.search
    if spec is None:
        raise CaseError("search", "the case has no [search] table", "add [search] with [[search.choice]] tables")
    frequency = operating_frequency(case)
    started = time.perf_counter()
    designs = [Design(c) for c in candidates(spec)]
    progress = SearchProgress(len(designs), stream, quiet)
    for d in designs:
        try:
            d.case, d.document = candidate_case(case, d.candidate, force_size)
            d.estimate_w, d.estimate_by_winding_w, d.current_density = screen(d.case, frequency)
        except CaseError as error:
            d.failed, d.stage = f"does not fit or is refused: {error.line()}", "failed"
            progress.failed += 1
        else:
            if spec.limits.current_density is not None and d.current_density > spec.limits.current_density:
                d.failed = (f"current_density: {d.current_density / 1e6:.3g} A/mm^2 above "
                            f"{spec.limits.current_density / 1e6:.3g} A/mm^2")
        progress.screened += 1
        progress.show()
    screened_s = time.perf_counter() - started
    store = _Store(out)
    passed = [d for d in designs if d.failed is None]
    scored = [d.estimate_w for d in passed if d.estimate_w is not None]
    resumed = 0
    if exhaustive or spec.objective == "pareto" or not scored:
        resumed += _solve_all(passed, frequency, workers, cluster, store, progress)
    else:
        reference = min(scored)
        while True:
            wanted = [d for d in _band(passed, reference, spec.margin) if d.field is None and d.stage != "failed"]
            if not wanted:
                break
            resumed += _solve_all(wanted, frequency, workers, cluster, store, progress)
            for d in wanted:
                if d.field is not None:
                    d.failed = field_failure(d, spec)
            feasible = [d.estimate_w for d in passed if d.field is not None and d.failed is None
                        and d.estimate_w is not None]
            unsolved = sorted(d.estimate_w for d in passed if d.field is None and d.stage != "failed"
                              and d.estimate_w is not None)
            if feasible:
                reference = min(feasible)
            elif unsolved:
                reference = unsolved[0]
            else:
                break
    for d in passed:
        if d.field is not None:
            d.failed = field_failure(d, spec)
    _rank(designs)
    progress.show(final=True)
    total = time.perf_counter() - started
    return SearchResult(case, spec, frequency, designs,
                        {"screen_s": screened_s, "field_s": total - screened_s, "total_s": total}, resumed)


