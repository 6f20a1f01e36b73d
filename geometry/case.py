"""The case file (TOML): read, check and return plain dataclasses.

Every quantity is converted to SI here (temperatures stay in degC).  Any
problem raises :class:`~geometry.errors.CaseError` naming the file, the key
path and the fix.  The geometric checks (turns that do not fit, overlaps,
conductors outside the window) live in :mod:`geometry.layout`.
"""

from __future__ import annotations

import cmath
import difflib
import math
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from .errors import CaseError
from .study import VARIANT_KEY, StudyPoint, point_document, study_points
from .materials import MATERIALS, ALIASES
from .units import EXAMPLES, in_range, quantity, short
from .waveform import (Spectrum, Waveform, WaveformSettings, fundamental_phasor, parse_settings,
                       parse_waveform, plan, sine_of, spectrum)

SYMMETRIES = ("planar", "axisymmetric")
BOUNDARIES = ("ideal-core", "open", "core")
LEGS = ("centre", "outer")
STACKINGS = ("across-width", "along-height")
SHAPES = ("round", "rectangular", "foil", "litz")
REPRESENTATIONS = ("strands", "bundle")
#: densest packing of equal circles in the plane (hexagonal), pi / (2 sqrt 3)
HEXAGONAL_PACKING = math.pi / (2.0 * math.sqrt(3.0))
DEFAULT_PACKING = 0.6
ALIGNS = ("centre", "start", "end", "spread")
MAX_FREQUENCIES = 1000
#: the largest count a case may give (turns, repeat, strands, conductors): far beyond any
#: winding that can be meshed, and small enough that no count overflows a float
MAX_COUNT = 100_000
BASE_VARIANT = "base"  #: name of the case's own arrangement when it also lists variants


@dataclass(frozen=True)
class Model:
    symmetry: str = "planar"
    length: float = 1.0          #: m, conductor length per turn (mean turn length); planar only
    temperature_c: float = 20.0  #: degC
    length_given: bool = False   #: the case file set model.length

    @property
    def axisymmetric(self) -> bool:
        return self.symmetry == "axisymmetric"

    @property
    def result_scale(self) -> float:
        """Factor from the solver's values to whole turns: the turn length in m
        for planar (per-metre solution), 1 for axisymmetric (per-turn solution)."""
        return 1.0 if self.axisymmetric else self.length


@dataclass(frozen=True)
class Window:
    width: float                  #: m, inner wall (x = 0) to outer wall
    height: float                 #: m, bottom (y = 0) to top
    boundary: str = "ideal-core"
    margin_inner: float = 0.0     #: m, keep-out at x = 0
    margin_outer: float = 0.0     #: m, keep-out at x = width
    margin_top: float = 0.0       #: m
    margin_bottom: float = 0.0    #: m
    stacking: str = "across-width"
    inner_radius: float | None = None  #: m, axisymmetric: radius of the inner wall (x = 0)

    def radius(self, x: float) -> float:
        """Radius in m of window coordinate ``x`` (axisymmetric models)."""
        return x + (self.inner_radius or 0.0)


@dataclass(frozen=True)
class Winding:
    name: str
    material: str = "copper"
    current: float = 1.0          #: A RMS (with waveforms: the fundamental's RMS)
    phase_deg: float = 0.0        #: degrees (with waveforms: the fundamental's phase)
    waveform: Waveform | None = None  #: the current's waveform over one period, if given
    #: DC value, RMS and harmonics (cases with waveforms only; current/phase is then a sine at the fundamental)
    spectrum: Spectrum | None = field(default=None, compare=False, repr=False)

    @property
    def phasor(self) -> complex:
        """RMS current phasor in A (see README, conventions)."""
        return self.current * cmath.exp(1j * math.radians(self.phase_deg))


@dataclass(frozen=True)
class ConductorSpec:
    """A conductor cross-section.  Sizes in m.

    round: ``width = height = diameter``; rectangular: ``width`` x ``height``;
    foil: ``width = thickness`` (across the layer) and ``height`` along it.
    ``outer_width``/``outer_height`` include insulation and set the pitch.
    litz: ``width = height`` the bundle diameter, ``strands`` strands of
    diameter ``strand_diameter``, ``representation`` "strands" (every strand
    meshed) or "bundle" (one homogenized region).
    """

    shape: str
    width: float
    height: float
    outer_width: float
    outer_height: float
    strands: int = 1
    strand_diameter: float = 0.0
    representation: str = ""

    @property
    def area(self) -> float:
        """True conducting cross-section in m^2 (litz: the copper of all strands)."""
        if self.shape == "litz":
            return self.strands * math.pi * self.strand_diameter ** 2 / 4.0
        if self.shape == "round":
            return math.pi * self.width ** 2 / 4.0
        return self.width * self.height


@dataclass(frozen=True)
class Layer:
    winding: str
    conductor: ConductorSpec
    turns: int
    insulation_after: float = 0.0  #: m, space to the next layer
    repeat: int = 1
    align: str = "centre"
    key: str = "layer[1]"          #: key path for messages


@dataclass(frozen=True)
class PlacedConductor:
    winding: str
    conductor: ConductorSpec
    at: tuple[float, float]        #: m, centre from the inner-bottom window corner
    key: str = "conductor[1]"


@dataclass(frozen=True)
class Gap:
    """An air gap through a leg: ``leg`` "centre" or "outer"; ``length`` (m)
    along the leg; ``at`` (m) height of its middle above the window bottom."""

    leg: str
    length: float
    at: float
    key: str = "gap[1]"


@dataclass(frozen=True)
class Core:
    """The core body around the window (``window.boundary = "core"``), E-type
    cross-section through the centre leg.  Sizes in m; the centre leg's full
    width (the model keeps half of it, up to the symmetry plane)."""

    relative_permeability: float
    centre_leg_width: float
    outer_leg_width: float
    yoke_thickness: float
    gaps: tuple[Gap, ...] = ()


@dataclass(frozen=True)
class MeshOptions:
    density: float = 1.0           #: >1 finer, <1 coarser than the default sizing
    far_radius_factor: float = 5.0  #: open boundary: far circle / window half-diagonal
    frequency: float | None = None  #: Hz, size the mesh for this frequency (None: the highest solved)


@dataclass(frozen=True)
class Parallel:
    """A winding whose turns each have ``conductors`` conductors in parallel:
    the winding's conductors, in turn order, taken ``conductors`` at a time.
    ``transposed``: ideal twisting, equal current shares; otherwise the strands
    (the same position in every turn) share one voltage and the field decides
    their currents."""

    winding: str
    conductors: int
    transposed: bool = False
    key: str = "parallel[1]"


@dataclass(frozen=True)
class Variant:
    """An arrangement sharing everything else with its case: layers and/or
    explicitly placed conductors that replace the case's own (None: keep them)."""

    name: str
    layers: tuple[Layer, ...] | None = None
    conductors: tuple[PlacedConductor, ...] | None = None


@dataclass(frozen=True)
class Case:
    """A checked case.  ``notes``: remarks for the user that are not errors."""

    title: str
    model: Model
    frequencies: tuple[float, ...]  #: Hz, increasing; 0 gives the DC solution
    window: Window
    windings: tuple[Winding, ...]
    layers: tuple[Layer, ...] = ()
    conductors: tuple[PlacedConductor, ...] = ()
    mesh: MeshOptions = field(default_factory=MeshOptions)
    path: str = ""
    core: Core | None = None
    notes: tuple[str, ...] = ()
    variants: tuple["Variant", ...] = ()
    compare_frequency: float | None = None  #: Hz, where variants' losses are compared
    variant: str | None = None              #: name of this arrangement, for a variant case
    parallel: tuple["Parallel", ...] = ()   #: windings with conductors in parallel
    variant_index: int = 0                  #: 1-based position in [[variant]]; 0 for the base
    waveform: WaveformSettings | None = None  #: [waveform] and the harmonics solved (windings with waveforms)
    study: tuple[StudyPoint, ...] = ()      #: [study] points (see geometry/study.py)
    source: dict | None = None              #: the case document without [study], for the study points
    allow_outside_files: bool = False       #: files it names may lie outside the case folder (study points too)

    def winding(self, name: str) -> Winding:
        return next(w for w in self.windings if w.name == name)

    @property
    def mesh_frequency(self) -> float:
        """Hz the mesh is sized for: ``[mesh] frequency``, else the highest solved frequency."""
        return self.mesh.frequency if self.mesh.frequency is not None else max(self.frequencies)


class _Table:
    """A TOML table read key by key; unknown keys are refused."""

    def __init__(self, data: object, path: str) -> None:
        if not isinstance(data, dict):
            raise CaseError(path, f"expected a table, got {type(data).__name__}",
                            f"write [{path}] as a table of keys")
        self.data = data
        self.path = path
        self.used: set[str] = set()

    def key(self, name: str) -> str:
        return f"{self.path}.{name}" if self.path else name

    def has(self, name: str) -> bool:
        return name in self.data

    def raw(self, name: str, default: object = None, required: bool = False,
            example: str = "...") -> object:
        self.used.add(name)
        if name not in self.data:
            if required:
                # a misspelling of the missing key is the likelier mistake: name it
                unread = [k for k in self.data if k not in self.used]
                typo = difflib.get_close_matches(name, unread, n=1, cutoff=0.8)
                if typo:
                    raise CaseError(self.key(typo[0]), "unknown key", f'did you mean "{name}"?')
                fix = f"add {name} = {example} to [{self.path}]" if self.path else f"add a [{name}] table"
                raise CaseError(self.key(name), "missing", fix)
            return default
        return self.data[name]

    def quantity(self, name: str, kind: str, default: float | None = None,
                 required: bool = False, positive: bool = False,
                 nonnegative: bool = False) -> float:
        value = self.raw(name, default, required, EXAMPLES[kind])
        if value is None:
            raise CaseError(self.key(name), "missing", f"add {name} = {EXAMPLES[kind]} to [{self.path}]")
        number = quantity(value, kind, self.key(name))
        if positive and not number > 0.0:
            raise CaseError(self.key(name), f"must be greater than zero, got {value!r}",
                            f"give a positive {kind}")
        if nonnegative and number < 0.0:
            raise CaseError(self.key(name), f"must not be negative, got {value!r}",
                            "give zero or a positive value")
        return in_range(number, kind, self.key(name), value)

    def text(self, name: str, default: str | None = None, choices: tuple[str, ...] = (),
             required: bool = False) -> str:
        value = self.raw(name, default, required)
        if not isinstance(value, str):
            raise CaseError(self.key(name), f"expected text, got {value!r}",
                            f'write it in quotes, such as {name} = "{choices[0] if choices else "name"}"')
        if choices and value not in choices:
            hint = difflib.get_close_matches(value, choices, n=1)
            fix = f'did you mean "{hint[0]}"?' if hint else "use one of " + ", ".join(f'"{c}"' for c in choices)
            raise CaseError(self.key(name), f'unknown value "{value}"', fix)
        return value

    def integer(self, name: str, default: int | None = None, minimum: int = 1,
                maximum: int = MAX_COUNT) -> int:
        value = self.raw(name, default, default is None)
        if isinstance(value, bool) or not isinstance(value, int):
            if isinstance(value, float) and value.is_integer():
                value = int(value)
            else:
                raise CaseError(self.key(name), f"expected a whole number, got {short(value)}",
                                f"write {name} = {max(minimum, 1)} or another whole number")
        if value < minimum:
            raise CaseError(self.key(name), f"must be at least {minimum}, got {short(value)}",
                            f"give a whole number of {minimum} or more")
        if value > maximum:
            raise CaseError(self.key(name), f"must be at most {maximum}, got {short(value)}",
                            f"give a whole number of {maximum} or less")
        return value

    def close(self) -> None:
        """Refuse keys that were never read (with a did-you-mean)."""
        for name in self.data:
            if name not in self.used:
                hint = difflib.get_close_matches(name, sorted(self.used), n=1)
                fix = f'did you mean "{hint[0]}"?' if hint else "remove it (see the case-file reference in README)"
                raise CaseError(self.key(name), "unknown key", fix)


def _model(table: _Table) -> Model:
    symmetry = table.text("symmetry", "planar", SYMMETRIES)
    length_given = table.has("length")
    length = table.quantity("length", "length", 1.0, positive=True)
    temperature = table.quantity("temperature", "temperature", 20.0)
    if temperature < -200.0 or temperature > 400.0:
        raise CaseError(table.key("temperature"), f"{temperature:g} degC is outside -200..400 degC",
                        'give the winding temperature, such as "100 degC"')
    table.close()
    return Model(symmetry, length, temperature, length_given)


def _frequencies(table: _Table) -> tuple[float, ...]:
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


def _window(table: _Table, model: Model) -> Window:
    width = table.quantity("width", "length", required=True, positive=True)
    inner_radius = None
    if model.axisymmetric:
        inner_radius = table.quantity("inner_radius", "length", required=True, positive=True)
    elif table.has("inner_radius"):
        raise CaseError(table.key("inner_radius"), "is used by axisymmetric models only",
                        'remove it, or set model.symmetry = "axisymmetric"')
    height = table.quantity("height", "length", required=True, positive=True)
    boundary = table.text("boundary", "ideal-core", BOUNDARIES)
    stacking = table.text("stacking", "across-width", STACKINGS)
    margins = _Table(table.raw("margins", {}), table.key("margins"))
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


def _conductor(table: _Table) -> ConductorSpec:
    shape = table.text("shape", None, SHAPES, required=True)
    if shape == "round":
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
        spec = _litz(table)
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


def _litz(table: _Table) -> ConductorSpec:
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


def _winding_ref(table: _Table, names: list[str]) -> str:
    name = table.raw("winding", None, required=True)
    if name not in names:
        hint = difflib.get_close_matches(str(name), names, n=1)
        fix = f'did you mean "{hint[0]}"?' if hint else "name a winding defined in a [[winding]] table"
        raise CaseError(table.key("winding"), f'unknown winding "{name}"', fix)
    return name


def _list_of_tables(doc: _Table, name: str) -> list[_Table]:
    items = doc.raw(name, [])
    key = doc.key(name)
    if not isinstance(items, list):
        raise CaseError(key, "expected a list of tables", f"write each one as [[{key}]]")
    return [_Table(item, f"{key}[{i + 1}]") for i, item in enumerate(items)]


def parse_case(doc: dict, path: str = "", allow_outside_files: bool = False) -> Case:
    """Build a :class:`Case` from a parsed TOML document.  With a ``[study]``
    table the case is the document without it (checked whole) and carries
    the study's points, each to be made a case by :func:`study_case`.

    ``path``: the case file (its folder is where files the case names are
    found; the current folder without it).  ``allow_outside_files``: read such
    files also when they lie outside that folder (refused by default; the
    study's points inherit it)."""
    try:
        if isinstance(doc, dict) and "study" in doc:
            points = study_points(doc["study"])
            base = {k: v for k, v in doc.items() if k != "study"}
            case = _parse(base, path, allow_outside_files)
            if case.variants and not any(k == VARIANT_KEY for p in points for k, _ in p.values):
                raise CaseError("study", "a case with [[variant]] tables needs a study axis on \"variant\"",
                                'add [[study.axis]] key = "variant", or remove the [[variant]] tables')
            return replace(case, study=tuple(points), source=base)
        return _parse(doc, path, allow_outside_files)
    except CaseError as error:
        raise error.in_file(path) if path else error


def study_case(case: Case, point: StudyPoint) -> Case:
    """The case of one study point (CaseError, naming the file, if its document is bad)."""
    from .layout import place  # layout imports this module

    study = parse_case(point_document(case.source, point), case.path, case.allow_outside_files)
    try:
        place(study)
    except CaseError as error:
        raise error.in_file(case.path) if case.path else error
    return replace(study, variant=point.name)


def _parse(doc: dict, path: str, allow_outside_files: bool = False) -> Case:
    top = _Table(doc, "")
    title = top.raw("title", Path(path).stem if path else "case")
    if not isinstance(title, str):
        raise CaseError("title", "expected text", 'write title = "my transformer"')
    model = _model(_Table(top.raw("model", {}), "model"))
    settings = _waveform_settings(top)
    frequencies = () if settings else _frequencies(_Table(top.raw("sweep", None, required=True), "sweep"))
    window = _window(_Table(top.raw("window", None, required=True), "window"), model)

    windings: list[Winding] = []
    for t in _list_of_tables(top, "winding"):
        name = t.raw("name", None, required=True)
        if not isinstance(name, str) or not name.strip():
            raise CaseError(t.key("name"), "expected a non-empty name", 'write name = "primary"')
        if any(w.name == name for w in windings):
            raise CaseError(t.key("name"), f'winding "{name}" is defined twice', "give each winding its own name")
        mat = t.text("material", "copper", tuple(MATERIALS) + tuple(ALIASES))
        mat = ALIASES.get(mat, mat)
        waveform = _winding_waveform(t, settings, path, allow_outside_files)
        current = t.quantity("current", "current", 1.0, nonnegative=True)
        phase = t.quantity("phase", "angle", 0.0)
        t.close()
        windings.append(Winding(name, mat, current, phase, waveform))
    if not windings:
        raise CaseError("winding", "no windings", 'add a [[winding]] table with name = "primary"')
    wave_notes: tuple[str, ...] = ()
    if settings:
        windings, settings, wave_notes = _plan_waveforms(windings, settings)
        frequencies = settings.frequencies
    names = [w.name for w in windings]

    layers = _layers(top, names)
    placed = _placed(top, names)
    variants = _variants(top, names)
    compare_frequency = _compare(top, frequencies)
    parallel = _parallels(top, names)

    core = _core(top, window, model)

    mesh_table = _Table(top.raw("mesh", {}), "mesh")
    density = mesh_table.quantity("density", "number", 1.0, positive=True)
    far = mesh_table.quantity("far_radius_factor", "number", 5.0, positive=True)
    if not 0.01 <= density <= 100.0:
        raise CaseError("mesh.density", f"{density:g} is outside 0.01..100",
                        "use a factor near 1 (2 halves the element sizes)")
    if far < 2.0:
        raise CaseError("mesh.far_radius_factor", f"{far:g} is too close to the window",
                        "use 2 or more (default 5)")
    if far > 100.0:
        raise CaseError("mesh.far_radius_factor", f"{far:g} is more than 100",
                        "use 100 or less (default 5)")
    mesh_frequency = (mesh_table.quantity("frequency", "frequency", positive=True)
                      if mesh_table.has("frequency") else None)
    mesh_table.close()
    top.close()

    case = Case(title, model, frequencies, window, tuple(windings), tuple(layers), tuple(placed),
                MeshOptions(density, far, mesh_frequency), path, core, _notes(model) + wave_notes, tuple(variants), compare_frequency,
                parallel=tuple(parallel), waveform=settings, allow_outside_files=allow_outside_files)
    for arrangement in variant_cases(case):
        _check_arrangement(arrangement)
    return case


def _check_arrangement(case: Case) -> None:
    """Every winding has turns; an ideal-core window balances its ampere-turns."""
    where = f"variant[{case.variant_index}]." if case.variant_index else ""
    names = [w.name for w in case.windings]
    _check_litz(case, where)
    for p in case.parallel:
        count = winding_conductors(case, p.winding)
        if count % p.conductors:
            raise CaseError(f"{where}{p.key}.conductors",
                            f'winding "{p.winding}" has {count} conductors, not a multiple of {p.conductors}',
                            "give every turn the same number of parallel conductors")
    for w in case.windings:
        if winding_turns(case, w.name) == 0:
            raise CaseError(f"{where}winding[{names.index(w.name) + 1}]" if not where else f"{where}layer",
                            f'winding "{w.name}" has no turns' + (f" in variant {case.variant}" if where else ""),
                            "add a [[layer]] or [[conductor]] with this winding, or remove the winding")
    if case.window.boundary == "ideal-core":
        _check_balance(case, where)


def _litz_specs(case: Case, name: str) -> list[tuple[str, ConductorSpec]]:
    """(key, conductor) of every layer and placed conductor of winding ``name``."""
    return ([(l.key, l.conductor) for l in case.layers if l.winding == name]
            + [(c.key, c.conductor) for c in case.conductors if c.winding == name])


def _check_litz(case: Case, where: str) -> None:
    """A litz winding is all litz of one strand count and representation, and
    takes no [[parallel]] (its strands are transposed parallel conductors)."""
    for w in case.windings:
        specs = _litz_specs(case, w.name)
        litz = [(k, s) for k, s in specs if s.shape == "litz"]
        if not litz:
            continue
        other = next(((k, s) for k, s in specs if s.shape != "litz"), None)
        if other:
            raise CaseError(f"{where}{other[0]}.conductor", f'winding "{w.name}" mixes litz and {other[1].shape} conductors',
                            "wind each winding from one kind of conductor")
        first = litz[0][1]
        for k, s in litz[1:]:
            if (s.strands, s.representation) != (first.strands, first.representation):
                raise CaseError(f"{where}{k}.conductor", f'winding "{w.name}" mixes litz of {first.strands} and '
                                f"{s.strands} strands (or strands and bundle representations)",
                                "give every turn of a winding the same litz wire")
        p = next((p for p in case.parallel if p.winding == w.name), None)
        if p:
            raise CaseError(f"{where}{p.key}.winding", f'winding "{w.name}" is litz: its strands are already '
                            "transposed parallel conductors", "remove the [[parallel]] table for it")
        if first.representation == "bundle" and case.model.axisymmetric:
            raise CaseError(f"{where}{litz[0][0]}.conductor.representation",
                            "the homogenized bundle is available in planar models only",
                            'use representation = "strands" in an axisymmetric model')


def _layers(table: _Table, names: list[str]) -> list[Layer]:
    layers: list[Layer] = []
    for t in _list_of_tables(table, "layer"):
        winding = _winding_ref(t, names)
        spec = _conductor(_Table(t.raw("conductor", None, required=True), t.key("conductor")))
        turns = t.integer("turns", 1)
        insulation = t.quantity("insulation_after", "length", 0.0, nonnegative=True)
        repeat = t.integer("repeat", 1)
        align = t.text("align", "centre", ALIGNS)
        t.close()
        layers.append(Layer(winding, spec, turns, insulation, repeat, align, t.path))
    return layers


def _placed(table: _Table, names: list[str]) -> list[PlacedConductor]:
    placed: list[PlacedConductor] = []
    for t in _list_of_tables(table, "conductor"):
        winding = _winding_ref(t, names)
        at = t.raw("at", None, required=True)
        if not isinstance(at, list) or len(at) != 2:
            raise CaseError(t.key("at"), "expected two coordinates", 'write at = ["0.7 mm", "0.5 mm"]')
        xy = (quantity(at[0], "length", t.key("at") + "[1]"), quantity(at[1], "length", t.key("at") + "[2]"))
        # the remaining keys describe the shape, as in a layer's conductor table
        shape_keys = {k: v for k, v in t.data.items() if k not in ("winding", "at")}
        t.used.update(shape_keys)
        spec = _conductor(_Table(shape_keys, t.path))
        placed.append(PlacedConductor(winding, spec, xy, t.path))
    return placed


def _variants(top: _Table, names: list[str]) -> list[Variant]:
    """[[variant]] tables: a name and their own [[variant.layer]] / [[variant.conductor]] lists."""
    variants: list[Variant] = []
    for t in _list_of_tables(top, "variant"):
        name = t.raw("name", None, required=True)
        if not isinstance(name, str) or not name.strip() or "/" in name or "\\" in name:
            raise CaseError(t.key("name"), "expected a non-empty name without slashes", 'write name = "P-S-P"')
        if any(v.name == name for v in variants) or name == BASE_VARIANT:
            raise CaseError(t.key("name"), f'variant "{name}" is defined twice (or is "{BASE_VARIANT}")',
                            "give each variant its own name")
        if not t.has("layer") and not t.has("conductor"):
            raise CaseError(t.path, "has no [[variant.layer]] or [[variant.conductor]]",
                            "list the variant's layers (they replace the case's layers)")
        layers = _layers(t, names) if t.has("layer") else None
        placed = _placed(t, names) if t.has("conductor") else None
        t.close()
        variants.append(Variant(name, None if layers is None else tuple(layers),
                                None if placed is None else tuple(placed)))
    return variants


def _compare(top: _Table, frequencies: tuple[float, ...]) -> float | None:
    """[compare] frequency: where the variants' losses are compared (nearest solved frequency)."""
    if not top.has("compare"):
        top.raw("compare")
        return None
    table = _Table(top.raw("compare"), "compare")
    f = table.quantity("frequency", "frequency", required=True, positive=True)
    table.close()
    return f


def variant_cases(case: Case) -> list[Case]:
    """The arrangements to solve: the case itself when it has no variants;
    otherwise the base arrangement (when the case lists layers or conductors
    of its own) and then every variant, each a complete case."""
    if not case.variants:
        return [case]
    out = []
    if case.layers or case.conductors:
        out.append(replace(case, variants=(), variant=BASE_VARIANT, variant_index=0))
    for i, v in enumerate(case.variants):
        out.append(replace(case, variants=(), variant=v.name, variant_index=i + 1,
                           layers=case.layers if v.layers is None else v.layers,
                           conductors=case.conductors if v.conductors is None else v.conductors,
                           title=f"{case.title} [{v.name}]"))
    return out


def _core(top: _Table, window: Window, model: Model) -> Core | None:
    """The [core] table and [[gap]] list; only with window.boundary = "core"."""
    gaps = _list_of_tables(top, "gap")
    if window.boundary != "core":
        if top.has("core") or gaps:
            key = "core" if top.has("core") else "gap"
            raise CaseError(key, f'a core body is given but window.boundary is "{window.boundary}"',
                            'set window.boundary = "core" or remove the [core] table and [[gap]]s')
        top.raw("core")
        return None
    table = _Table(top.raw("core", None, required=True), "core")
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
    return Core(mu_r, centre, outer, yoke, tuple(parsed))


def _notes(model: Model) -> tuple[str, ...]:
    if model.axisymmetric and model.length_given:
        return ("model.length is not used in an axisymmetric model: every turn has its true length 2*pi*r",)
    return ()


def strands_per_turn(spec: ConductorSpec) -> int:
    """Conductors one turn of ``spec`` places: every strand of explicit litz, else one."""
    return spec.strands if spec.shape == "litz" and spec.representation == "strands" else 1


def winding_conductors(case: Case, name: str) -> int:
    """Number of conductors of winding ``name`` (explicit litz: its strands)."""
    return (sum(l.turns * l.repeat * strands_per_turn(l.conductor) for l in case.layers if l.winding == name)
            + sum(strands_per_turn(c.conductor) for c in case.conductors if c.winding == name))


def parallel_of(case: Case, name: str) -> Parallel:
    """The parallel-conductor setting of winding ``name`` (one conductor per turn by default;
    a winding of explicit litz strands: its strands, ideally transposed)."""
    explicit = next(p for p in case.parallel if p.winding == name) if any(
        p.winding == name for p in case.parallel) else None
    if explicit:
        return explicit
    specs = _litz_specs(case, name)
    if specs and specs[0][1].shape == "litz" and specs[0][1].representation == "strands":
        return Parallel(name, specs[0][1].strands, True)
    return Parallel(name, 1)


def winding_turns(case: Case, name: str) -> int:
    """Number of turns (in series) of winding ``name``."""
    return winding_conductors(case, name) // parallel_of(case, name).conductors


def _parallels(top: _Table, names: list[str]) -> list[Parallel]:
    """[[parallel]] tables: winding, conductors (per turn), transposed."""
    out: list[Parallel] = []
    for t in _list_of_tables(top, "parallel"):
        winding = _winding_ref(t, names)
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


def _check_balance(case: Case, where: str = "") -> None:
    if case.waveform is not None:
        _check_waveform_balance(case, where)
        return
    mmf = [winding_turns(case, w.name) * w.phasor for w in case.windings]
    net = sum(mmf)
    scale = sum(abs(m) for m in mmf)
    if scale > 0 and abs(net) > 1e-6 * scale:
        parts = ", ".join(f"{w.name} {winding_turns(case, w.name)} x {w.current:g} A at {w.phase_deg:g} deg"
                          for w in case.windings)
        raise CaseError(f"{where}winding", f"ampere-turns do not sum to zero in an ideal-core window "
                        f"({parts}; net {abs(net):.4g} A)",
                        "set currents and phases so that the sum of N*I is zero; an inductor or a flyback "
                        'needs window.boundary = "core" with a [core] table and a [[gap]], or "open" for no core')


def load_case(path: str | Path, allow_outside_files: bool = False) -> Case:
    """Read and check the case file at ``path``, its conductor layout included
    (so that a command stops on bad input before it prints or writes anything).
    Files the case names (waveform ``file``) are taken from the case file's
    folder; one outside it is refused unless ``allow_outside_files``."""
    from .layout import place  # layout imports this module

    path = Path(path)
    name = str(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise CaseError("", "file not found", "check the path to the case file", name) from None
    except UnicodeDecodeError as error:
        line = error.object[:error.start].count(b"\n") + 1
        raise CaseError("", f"is not UTF-8 text: byte 0x{error.object[error.start]:02x} on line {line}",
                        "save the case file as UTF-8", name) from None
    except OSError as error:
        raise CaseError("", f"cannot read the file ({error.strerror or error.__class__.__name__})",
                        "give a readable UTF-8 TOML file", name) from None
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        raise CaseError("", f"TOML syntax error: {error}", "fix the syntax at that line", name) from None
    except ValueError as error:  # an integer of more than 4300 digits (Python's int/str limit)
        raise CaseError("", f"TOML value cannot be read: {error.args[0].split(':')[0]}",
                        "give numbers of ordinary size", name) from None
    case = parse_case(doc, name, allow_outside_files)
    try:
        for arrangement in variant_cases(case):
            place(arrangement)
    except CaseError as error:
        raise error.in_file(name) from None
    return case


# ---------------------------------------------------------------------------
# current waveforms: [waveform] and [[winding]] waveform = {...} (geometry/waveform.py)


def _waveform_settings(top: _Table) -> WaveformSettings | None:
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
    return parse_settings(_Table(top.raw("waveform"), "waveform"))


def _winding_waveform(t: _Table, settings: WaveformSettings | None, path: str,
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
    return parse_waveform(_Table(t.raw("waveform"), t.key("waveform")), settings.period, base,
                          allow_outside_files)


def _plan_waveforms(windings: list[Winding], settings: WaveformSettings
                    ) -> tuple[list[Winding], WaveformSettings, tuple[str, ...]]:
    """Every winding's spectrum (current/phase: a sine at the fundamental), the
    harmonics to solve, and notes for windings whose harmonics stop at the cap
    before reaching the fraction.  Each winding's current/phase becomes its
    fundamental phasor (the excitation of the per-frequency tables)."""
    spectra = [spectrum(w.waveform or sine_of(w.current, w.phase_deg), settings.period,
                        settings.max_harmonic, settings.fraction) for w in windings]
    settings = plan(settings, spectra)
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


def _check_waveform_balance(case: Case, where: str = "") -> None:
    """Ideal-core window with waveforms: sum N i(t) = 0 at every instant, so at
    DC and at every harmonic (Ampere's law around the core)."""
    turns = [winding_turns(case, w.name) for w in case.windings]
    spectra = [w.spectrum for w in case.windings]
    scale = sum(n * s.rms for n, s in zip(turns, spectra))
    if scale <= 0.0:
        return

    def fail(what: str, values: list, net: float) -> None:
        parts = ", ".join(f"{w.name} {n} x {v}" for w, n, v in zip(case.windings, turns, values))
        raise CaseError(f"{where}winding", f"ampere-turns do not sum to zero in an ideal-core window {what} "
                        f"({parts}; net {net:.4g} A)",
                        "make sum N*i(t) zero at every instant (DC and every harmonic); an inductor or a "
                        'flyback needs window.boundary = "core" with a [core] table and a [[gap]], or "open"')

    net_dc = sum(n * s.dc for n, s in zip(turns, spectra))
    if abs(net_dc) > 1e-6 * scale:
        fail("at DC", [f"{s.dc:.4g} A" for s in spectra], abs(net_dc))
    h = np.array([s.harmonics for s in spectra], dtype=complex)          # (Nw, max_harmonic)
    n_w = np.array(turns, dtype=float)[:, None]
    net = np.abs((n_w * h).sum(axis=0))
    bad = np.nonzero(net > 1e-6 * (n_w * np.abs(h)).sum(axis=0) + 1e-9 * scale)[0]
    if len(bad):
        k = int(bad[0])
        fail(f"at harmonic {k + 1} ({(k + 1) * case.waveform.fundamental / 1e3:.6g} kHz)",
             [f"{abs(v):.4g} A at {math.degrees(cmath.phase(v)):.4g} deg" for v in h[:, k]], float(net[k]))
