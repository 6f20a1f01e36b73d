"""Readers of the case file's tables ([model], [sweep], [window], conductors,
[[layer]], [[conductor]], [[variant]], [compare], [core] and [[gap]],
[[parallel]], [mesh], [waveform]): each checks its keys and returns the
model's dataclasses in SI units."""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np

from .errors import CaseError
from .names import check_name, check_unique, name_key
from .model import (EndTurns, ALIGNS, BASE_VARIANT, BOUNDARIES, DEFAULT_PACKING, HEXAGONAL_PACKING, LEG_SHAPES, LEGS,
                    MAX_FREQUENCIES, REPRESENTATIONS, SHAPES, STACKINGS, SYMMETRIES, CentreLeg, ConductorSpec, Core,
                    Gap, Layer, MeshOptions, Model, Parallel, PlacedConductor, Variant, Window, Winding)
from .table import Table, list_of_tables, winding_ref
from .units import LIMITS, in_range, quantity
from .waveform import WaveformSettings, Waveform, fundamental_phasor, plan, sine_of, spectrum
from .waveform_input import parse_settings, parse_waveform
from .wires import DEFAULT_GRADE, grade_fix, parse_wire


def read_model(table: Table) -> Model:
    symmetry = table.text("symmetry", "planar", SYMMETRIES)
    length_given = table.has("length")
    length = table.quantity("length", "length", 1.0, positive=True)
    temperature = table.quantity("temperature", "temperature", 20.0)
    if temperature < -200.0 or temperature > 400.0:
        raise CaseError(table.key("temperature"), f"{temperature:g} degC is outside -200..400 degC",
                        'give the winding temperature, such as "100 degC"')
    table.close()
    return Model(symmetry, length, temperature, length_given)


def read_frequencies(table: Table) -> tuple[float, ...]:
    if table.has("frequencies"):
        values = table.raw("frequencies")
        if not isinstance(values, list) or not values:
            raise CaseError(table.key("frequencies"), "expected a non-empty list",
                            'write frequencies = ["100 kHz", "400 kHz"]')
        freqs = [quantity(v, "frequency", f"{table.key('frequencies')}[{i + 1}]")
                 for i, v in enumerate(values)]
        for i, (f, v) in enumerate(zip(freqs, values)):
            if f > 0.0:
                in_range(f, "frequency", f"{table.key('frequencies')}[{i + 1}]", v)
        for name in ("start", "stop", "points"):
            if table.has(name):
                raise CaseError(table.key(name), "given together with frequencies",
                                "use either a frequencies list or start/stop/points")
    else:
        if not any(table.has(name) for name in ("start", "stop", "points")):
            raise CaseError(table.key("frequencies"), "no frequencies given",
                            'add frequencies = ["100 kHz", "400 kHz"] or start, stop and points')
        start = table.quantity("start", "frequency", required=True, positive=True)
        stop = table.quantity("stop", "frequency", required=True, positive=True)
        points = table.integer("points", 20, minimum=1)
        if points > MAX_FREQUENCIES:
            raise CaseError(table.key("points"), f"{points} points is more than {MAX_FREQUENCIES}",
                            f"use {MAX_FREQUENCIES} points or fewer (split the band into several cases)")
        if stop < start:
            raise CaseError(table.key("stop"), "is below start", "make stop greater than start")
        if points > 1 and stop == start:
            raise CaseError(table.key("stop"), "equals start with points > 1",
                            "make stop greater than start or set points = 1")
        freqs = list(np.geomspace(start, stop, points))
    table.close()
    for i, f in enumerate(freqs):
        if f < 0.0:
            raise CaseError(f"{table.key('frequencies')}[{i + 1}]", f"negative frequency {f:g} Hz",
                            "give frequencies of 0 Hz (DC) or more")
        if i and f <= freqs[i - 1]:
            raise CaseError(f"{table.key('frequencies')}[{i + 1}]",
                            "frequencies must increase", "list each frequency once, in increasing order")
    return tuple(float(f) for f in freqs)


def read_window(table: Table, model: Model) -> Window:
    width = table.quantity("width", "length", required=True, positive=True)
    boundary = table.text("boundary", "ideal-core", BOUNDARIES)
    if boundary == "open-wall" and model.axisymmetric:
        raise CaseError(table.key("boundary"), '"open-wall" (air beside a magnetic wall at x = 0) is for planar '
                        "models only", 'set model.symmetry = "planar", or use window.boundary = "open"')
    inner_radius = _inner_radius(table, model, boundary)
    height = table.quantity("height", "length", required=True, positive=True)
    stacking = table.text("stacking", "across-width", STACKINGS)
    margins = Table(table.raw("margins", {}), table.key("margins"))
    sides = {side: margins.quantity(side, "length", 0.0, nonnegative=True)
             for side in ("inner", "outer", "top", "bottom")}
    margins.close()
    table.close()
    if sides["inner"] + sides["outer"] >= width:
        raise CaseError(table.key("margins"), "inner + outer margins leave no width",
                        "make the margins smaller than the window width")
    if sides["top"] + sides["bottom"] >= height:
        raise CaseError(table.key("margins"), "top + bottom margins leave no height",
                        "make the margins smaller than the window height")
    return Window(width, height, boundary, sides["inner"], sides["outer"], sides["top"],
                  sides["bottom"], stacking, inner_radius)


def _inner_radius(table: Table, model: Model, boundary: str) -> float | None:
    """window.inner_radius in m (axisymmetric only): the radius of the inner
    wall.  An open air-core coil may start at the axis (0, the default); with
    an ideal or real core the inner wall is the centre post, of radius > 0."""
    key = table.key("inner_radius")
    if not model.axisymmetric:
        if table.has("inner_radius"):
            raise CaseError(key, "is used by axisymmetric models only",
                            'remove it, or set model.symmetry = "axisymmetric"')
        return None
    if boundary == "open":
        return table.quantity("inner_radius", "length", 0.0, nonnegative=True)
    radius = table.quantity("inner_radius", "length", required=True, nonnegative=True)
    if radius == 0.0:
        raise CaseError(key, f'must be greater than zero with boundary = "{boundary}" (the inner wall '
                        "is the centre post)", 'give the centre post radius, or set window.boundary = "open" '
                        "for an air-core coil whose window starts at the axis")
    return radius


def read_conductor(table: Table) -> ConductorSpec:
    wire = table.has("wire")
    shape = table.text("shape", "round" if wire else None, SHAPES, required=not wire)
    if wire:
        spec = read_wire(table, shape)
    elif shape == "round":
        d = table.quantity("diameter", "length", required=True, positive=True)
        od = table.quantity("outer_diameter", "length", d, positive=True)
        if od < d:
            raise CaseError(table.key("outer_diameter"), "is smaller than diameter",
                            "give the diameter over insulation, at least the bare diameter")
        spec = ConductorSpec(shape, d, d, od, od)
    elif shape == "rectangular":
        w = table.quantity("width", "length", required=True, positive=True)
        h = table.quantity("height", "length", required=True, positive=True)
        ow = table.quantity("outer_width", "length", w, positive=True)
        oh = table.quantity("outer_height", "length", h, positive=True)
        if ow < w or oh < h:
            raise CaseError(table.key("outer_width" if ow < w else "outer_height"),
                            "is smaller than the bare size", "give the size over insulation")
        spec = ConductorSpec(shape, w, h, ow, oh)
    elif shape == "litz":
        spec = read_litz(table)
    else:
        t = table.quantity("thickness", "length", required=True, positive=True)
        h = table.quantity("height", "length", required=True, positive=True)
        ot = table.quantity("outer_thickness", "length", t, positive=True)
        if ot < t:
            raise CaseError(table.key("outer_thickness"), "is smaller than thickness",
                            "give the thickness over insulation")
        spec = ConductorSpec(shape, t, h, ot, h)
    table.close()
    return spec


def read_wire(table: Table, shape: str) -> ConductorSpec:
    """A round conductor named by a standard size, ``wire = "AWG 26"`` or
    ``"0.45 mm grade 2"`` (geometry/case/wires.py): diameter from the size,
    outer_diameter from its grade (DEFAULT_GRADE when none is named) or, for
    a wire named without a grade, from an explicit outer_diameter."""
    key = table.key("wire")
    if shape != "round":
        raise CaseError(table.key("shape"), f'"{shape}" given together with wire (a round wire size)',
                        'remove shape, or set shape = "round"')
    if table.has("diameter"):
        raise CaseError(table.key("diameter"), "given together with wire, which sets it",
                        "give either wire (a standard size) or diameter and outer_diameter")
    size, grade = parse_wire(table.raw("wire"), key)
    if table.has("outer_diameter"):
        if grade is not None:
            raise CaseError(table.key("outer_diameter"), f"given together with a grade in wire ({size.name} "
                            f"grade {grade})", "give either the grade or outer_diameter, not both")
        od = table.quantity("outer_diameter", "length", required=True, positive=True)
        if od < size.diameter * (1 - 1e-9):
            raise CaseError(table.key("outer_diameter"), f"is smaller than the bare diameter of {size.name} "
                            f"({size.diameter * 1e3:.4g} mm)", "give the diameter over the enamel")
    else:
        od = size.outer_diameter(grade or DEFAULT_GRADE)
        if od is None:
            raise CaseError(key, f"{size.name} has no grade {grade or DEFAULT_GRADE} in racfield's table"
                            + (" (the grade named when none is given)" if grade is None else ""), grade_fix(size))
    return ConductorSpec("round", size.diameter, size.diameter, od, od)


def read_litz(table: Table) -> ConductorSpec:
    """A round bundle of ``strands`` strands: bundle diameter given, or from the
    packing factor (copper area over bundle area) as D = d sqrt(n / packing)."""
    n = table.integer("strands", None, minimum=1)
    d = table.quantity("strand_diameter", "length", required=True, positive=True)
    if table.has("bundle_diameter") and table.has("packing"):
        raise CaseError(table.key("packing"), "given together with bundle_diameter",
                        "give either bundle_diameter or packing (copper area / bundle area)")
    if table.has("bundle_diameter"):
        bundle = table.quantity("bundle_diameter", "length", required=True, positive=True)
        packing = n * d * d / (bundle * bundle)
        key = table.key("bundle_diameter")
    else:
        packing = table.quantity("packing", "number", DEFAULT_PACKING, positive=True)
        bundle = d * math.sqrt(n / packing)
        key = table.key("packing")
    if n > 1 and packing > HEXAGONAL_PACKING:
        raise CaseError(key, f"{n} strands of {d * 1e3:.4g} mm fill {packing:.4g} of the bundle, above the "
                        f"hexagonal limit {HEXAGONAL_PACKING:.4f}", "give a larger bundle or fewer strands")
    if bundle < d * (1 - 1e-9):
        raise CaseError(key, f"the bundle ({bundle * 1e3:.4g} mm) is thinner than one strand",
                        "give a bundle diameter of at least the strand diameter")
    od = table.quantity("outer_diameter", "length", bundle, positive=True)
    if od < bundle * (1 - 1e-9):
        raise CaseError(table.key("outer_diameter"), f"is smaller than the bundle diameter ({bundle * 1e3:.4g} mm)",
                        "give the diameter over the serving, at least the bundle diameter")
    representation = table.text("representation", "strands", REPRESENTATIONS)
    return ConductorSpec("litz", bundle, bundle, od, od, n, d, representation)


def read_layers(table: Table, names: list[str]) -> list[Layer]:
    layers: list[Layer] = []
    for t in list_of_tables(table, "layer"):
        winding = winding_ref(t, names)
        spec = read_conductor(Table(t.raw("conductor", None, required=True), t.key("conductor")))
        turns = t.integer("turns", 1)
        insulation = t.quantity("insulation_after", "length", 0.0, nonnegative=True)
        repeat = t.integer("repeat", 1)
        align = t.text("align", "centre", ALIGNS)
        t.close()
        layers.append(Layer(winding, spec, turns, insulation, repeat, align, t.path))
    return layers


def read_placed(table: Table, names: list[str]) -> list[PlacedConductor]:
    placed: list[PlacedConductor] = []
    for t in list_of_tables(table, "conductor"):
        winding = winding_ref(t, names)
        at = t.raw("at", None, required=True)
        if not isinstance(at, list) or len(at) != 2:
            raise CaseError(t.key("at"), "expected two coordinates", 'write at = ["0.7 mm", "0.5 mm"]')
        xy = (quantity(at[0], "length", t.key("at") + "[1]"), quantity(at[1], "length", t.key("at") + "[2]"))
        # the remaining keys describe the shape, as in a layer's conductor table
        shape_keys = {k: v for k, v in t.data.items() if k not in ("winding", "at")}
        t.used.update(shape_keys)
        spec = read_conductor(Table(shape_keys, t.path))
        placed.append(PlacedConductor(winding, spec, xy, t.path))
    return placed


def read_variants(top: Table, names: list[str]) -> list[Variant]:
    """[[variant]] tables: a name and their own [[variant.layer]] / [[variant.conductor]] lists."""
    variants: list[Variant] = []
    for t in list_of_tables(top, "variant"):
        name = check_name(t.raw("name", None, required=True), t.key("name"), '"P-S-P"')
        if name_key(name) == BASE_VARIANT:
            raise CaseError(t.key("name"), f'"{BASE_VARIANT}" is the name of the case\'s own arrangement',
                            "give the variant another name")
        check_unique(name, [v.name for v in variants], t.key("name"), "variant")
        if not t.has("layer") and not t.has("conductor"):
            raise CaseError(t.path, "has no [[variant.layer]] or [[variant.conductor]]",
                            "list the variant's layers (they replace the case's layers)")
        layers = read_layers(t, names) if t.has("layer") else None
        placed = read_placed(t, names) if t.has("conductor") else None
        t.close()
        variants.append(Variant(name, None if layers is None else tuple(layers),
                                None if placed is None else tuple(placed)))
    return variants


def read_compare(top: Table, frequencies: tuple[float, ...]) -> float | None:
    """[compare] frequency: where the variants' losses are compared (nearest solved frequency)."""
    if not top.has("compare"):
        top.raw("compare")
        return None
    table = Table(top.raw("compare"), "compare")
    f = table.quantity("frequency", "frequency", required=True, positive=True)
    table.close()
    return f


def read_core(top: Table, window: Window, model: Model) -> tuple[Core | None, CentreLeg | None]:
    """The [core] table and [[gap]] list (the core body: only with
    window.boundary = "core"), and the centre leg the turns wind around
    (``[core] centre_leg``, any boundary, planar models)."""
    gaps = list_of_tables(top, "gap")
    if window.boundary != "core":
        data = top.raw("core")
        leg_only = isinstance(data, dict) and set(data) <= {"centre_leg"}
        if (top.has("core") and not leg_only) or gaps:
            key = "core" if top.has("core") and not leg_only else "gap"
            raise CaseError(key, f'a core body is given but window.boundary is "{window.boundary}"',
                            'set window.boundary = "core", or remove the [[gap]]s and keep only centre_leg in [core]')
        if not top.has("core"):
            return None, None
        table = Table(data, "core")
        leg = read_centre_leg(table, model)
        table.close()
        return None, leg
    table = Table(top.raw("core", None, required=True), "core")
    centre_leg = read_centre_leg(table, model)
    mu_r = table.quantity("relative_permeability", "number", required=True)
    if not 1.0 <= mu_r <= 1e6:
        raise CaseError(table.key("relative_permeability"), f"{mu_r:g} is outside 1..1e6",
                        "give the core's relative permeability, such as 2000 for a power ferrite")
    if model.axisymmetric:
        # the centre post is the solid cylinder inside the window's inner wall
        if table.has("centre_leg_width"):
            raise CaseError(table.key("centre_leg_width"), "is not used in an axisymmetric model",
                            "remove it: the centre post is the cylinder of radius window.inner_radius")
        centre = 2.0 * window.inner_radius
    else:
        centre = table.quantity("centre_leg_width", "length", required=True, positive=True)
    outer = table.quantity("outer_leg_width", "length", required=True, positive=True)
    yoke = table.quantity("yoke_thickness", "length", required=True, positive=True)
    table.close()
    parsed: list[Gap] = []
    for t in gaps:
        leg = t.text("leg", "centre", LEGS)
        length = t.quantity("length", "length", required=True, positive=True)
        at = t.quantity("at", "length", window.height / 2)
        t.close()
        low, high = at - length / 2, at + length / 2
        if length >= window.height:
            raise CaseError(t.key("length"), f"the gap ({length * 1e3:.4g} mm) is longer than the "
                            f"{window.height * 1e3:.4g} mm leg", "give a shorter gap")
        if low < -1e-12 or high > window.height + 1e-12:
            raise CaseError(t.key("at"), f"the gap reaches past the leg ({low * 1e3:.4g} mm to "
                            f"{high * 1e3:.4g} mm; the leg runs 0 to {window.height * 1e3:.4g} mm)",
                            "move the gap middle (at, height above the window bottom) so that the gap lies on the leg")
        for other in parsed:
            if other.leg == leg and abs(other.at - at) < (other.length + length) / 2:
                raise CaseError(t.key("at"), f"overlaps {other.key} on the {leg} leg",
                                "space the gaps apart or merge them into one")
        parsed.append(Gap(leg, length, at, t.path))
    return Core(mu_r, centre, outer, yoke, tuple(parsed)), centre_leg


def read_centre_leg(core: Table, model: Model) -> CentreLeg | None:
    """``[core] centre_leg = { shape, diameter | width, depth, corner_radius, gap }``
    (sizes in m): planar models only, and instead of model.length."""
    if not core.has("centre_leg"):
        return None
    table = Table(core.raw("centre_leg"), core.key("centre_leg"))
    if model.axisymmetric:
        raise CaseError(table.path, "is not used in an axisymmetric model",
                        "remove it: every ring already has its true length 2*pi*r")
    if model.length_given:
        raise CaseError("model.length", "is given together with core.centre_leg, which sets every turn's length",
                        "remove model.length (the turn lengths follow from the centre leg and the turn positions)")
    shape = table.text("shape", None, LEG_SHAPES, required=True)
    if shape == "round":
        leg = CentreLeg(shape, diameter=table.quantity("diameter", "length", required=True, positive=True))
    else:
        width = table.quantity("width", "length", required=True, positive=True)
        depth = table.quantity("depth", "length", required=True, positive=True)
        corner = table.quantity("corner_radius", "length", 0.0, nonnegative=True)
        if corner > min(width, depth) / 2.0 * (1.0 + 1e-12):
            raise CaseError(table.key("corner_radius"), f"{corner * 1e3:.4g} mm is more than half the leg's "
                            f"smaller side ({min(width, depth) * 1e3:.4g} mm)",
                            "give a corner radius of at most min(width, depth) / 2")
        leg = CentreLeg(shape, width=width, depth=depth, corner_radius=corner)
    leg = replace(leg, gap=table.quantity("gap", "length", 0.0, nonnegative=True))
    table.close()
    return leg


def model_notes(model: Model) -> tuple[str, ...]:
    if model.axisymmetric and model.length_given:
        return ("model.length is not used in an axisymmetric model: every turn has its true length 2*pi*r",)
    return ()


def read_parallels(top: Table, names: list[str]) -> list[Parallel]:
    """[[parallel]] tables: winding, conductors (per turn), transposed."""
    out: list[Parallel] = []
    for t in list_of_tables(top, "parallel"):
        winding = winding_ref(t, names)
        if any(p.winding == winding for p in out):
            raise CaseError(t.key("winding"), f'winding "{winding}" has two [[parallel]] tables', "keep one")
        count = t.integer("conductors", None, minimum=2)
        transposed = t.raw("transposed", False)
        if not isinstance(transposed, bool):
            raise CaseError(t.key("transposed"), f"expected true or false, got {transposed!r}",
                            "write transposed = true (ideal twisting) or false")
        t.close()
        out.append(Parallel(winding, count, transposed, t.path))
    return out


def read_waveform_settings(top: Table) -> WaveformSettings | None:
    """The [waveform] table when some winding has a waveform (None otherwise).
    The solved frequencies are then the waveforms' harmonics: [sweep] is refused."""
    raw = top.data.get("winding")
    with_waveform = [k for k, w in enumerate(raw if isinstance(raw, list) else [])
                     if isinstance(w, dict) and "waveform" in w]
    if not with_waveform:
        if top.has("waveform"):
            raise CaseError("waveform", "no [[winding]] has a waveform",
                            "give a winding waveform = {...}, or remove the [waveform] table")
        return None
    if top.has("sweep"):
        raise CaseError("sweep", "is not used when windings have waveforms (their harmonics are solved)",
                        "remove the [sweep] table (waveform.fraction and waveform.max_harmonic set the harmonics)")
    if not top.has("waveform"):
        raise CaseError("waveform.period", f"missing: winding[{with_waveform[0] + 1}] has a waveform",
                        'add a [waveform] table with period = "10 us" (one period of the waveforms)')
    return parse_settings(Table(top.raw("waveform"), "waveform"))


def read_winding_waveform(t: Table, settings: WaveformSettings | None, path: str,
                      allow_outside_files: bool = False) -> Waveform | None:
    """A winding's waveform = {...}; refused together with current or phase."""
    if not t.has("waveform"):
        if settings is not None and not t.has("current"):
            raise CaseError(t.key("current"), "missing: other windings have waveforms",
                            'give waveform = {...}, or current for a sine at the fundamental ("0 A" for an idle winding)')
        return None
    for name in ("current", "phase"):
        if t.has(name):
            raise CaseError(t.key(name), "given together with waveform",
                            "give either current and phase (a sine) or waveform = {...}, not both")
    base = Path(path).parent if path else Path(".")
    return parse_waveform(Table(t.raw("waveform"), t.key("waveform")), settings.period, base,
                          allow_outside_files)


def plan_waveforms(windings: list[Winding], settings: WaveformSettings
                    ) -> tuple[list[Winding], WaveformSettings, tuple[str, ...]]:
    """Every winding's spectrum (current/phase: a sine at the fundamental), the
    harmonics to solve, and notes for windings whose harmonics stop at the cap
    before reaching the fraction.  Each winding's current/phase becomes its
    fundamental phasor (the excitation of the per-frequency tables)."""
    spectra = [spectrum(w.waveform or sine_of(w.current, w.phase_deg), settings.period,
                        settings.max_harmonic, settings.fraction) for w in windings]
    for k, s in enumerate(spectra):
        if 0.0 < s.rms < LIMITS["current"][0]:
            raise CaseError(f"winding[{k + 1}].waveform", f"the RMS current is {s.rms:.3g} A, below 1 nA",
                            "give the current in A (a waveform of all zeros for an idle winding)")
    settings = plan(settings, spectra)
    top = max(settings.frequencies)
    if top > LIMITS["frequency"][1]:
        raise CaseError("waveform.period", f"the harmonics to solve reach {top:.4g} Hz, above 1 THz",
                        "give a longer period, or a lower waveform.max_harmonic")
    out, notes = [], []
    for k, (w, s) in enumerate(zip(windings, spectra)):
        current, phase = fundamental_phasor(s)
        out.append(replace(w, current=current, phase_deg=phase, spectrum=s))
        captured = s.captured(settings.harmonics)
        if captured < settings.fraction - 1e-9:
            notes.append(f"winding[{k + 1}] {w.name}: harmonics 1..{settings.max_harmonic} hold "
                         f"{captured * 100:.2f} % of the AC RMS squared, short of waveform.fraction "
                         f"{settings.fraction * 100:g} %; raise waveform.max_harmonic, or give steps a rise "
                         "and fall time")
    return out, settings, tuple(notes)


def read_mesh(table: Table) -> MeshOptions:
    """[mesh]: density, far_radius_factor, frequency, corner_refinement."""
    density = table.quantity("density", "number", 1.0, positive=True)
    far = table.quantity("far_radius_factor", "number", 5.0, positive=True)
    if not 0.01 <= density <= 100.0:
        raise CaseError("mesh.density", f"{density:g} is outside 0.01..100",
                        "use a factor near 1 (2 halves the element sizes)")
    if far < 2.0:
        raise CaseError("mesh.far_radius_factor", f"{far:g} is too close to the window",
                        "use 2 or more (default 5)")
    if far > 100.0:
        raise CaseError("mesh.far_radius_factor", f"{far:g} is more than 100",
                        "use 100 or less (default 5)")
    mesh_frequency = (table.quantity("frequency", "frequency", positive=True)
                      if table.has("frequency") else None)
    corners = table.within("corner_refinement", "number", 1.0, 0.1, 100.0,
                           "use a factor near 1 (2 halves the element sizes at gap and core corners)")
    table.close()
    return MeshOptions(density, far, mesh_frequency, corners)


def read_end_turns(top: Table, model: Model) -> EndTurns | None:
    """[end_turns]: ``fraction`` (0 to 1) of each turn's length outside the core, or ``length`` per turn."""
    if not top.has("end_turns"):
        top.raw("end_turns")
        return None
    table = Table(top.raw("end_turns"), "end_turns")
    if model.axisymmetric:
        raise CaseError("end_turns", "is for planar models only: an axisymmetric turn is a whole ring already",
                        'remove [end_turns], or set model.symmetry = "planar"')
    if table.has("fraction") == table.has("length"):
        raise CaseError("end_turns.fraction", "give either fraction or length",
                        "write fraction = 0.4 (the share of each turn outside the core) or length = \"20 mm\"")
    if table.has("fraction"):
        fraction = table.quantity("fraction", "number", required=True, nonnegative=True)
        if fraction > 1.0:
            raise CaseError("end_turns.fraction", f"{fraction:g} is more than 1",
                            "give the share of each turn's length outside the core, 0 to 1")
        table.close()
        return EndTurns(fraction=fraction)
    length = table.quantity("length", "length", required=True, nonnegative=True)
    table.close()   # at most each turn's length: checked with the layout (geometry/load.py)
    return EndTurns(length=length)
