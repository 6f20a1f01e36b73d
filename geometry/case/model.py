"""The case model: plain dataclasses of a checked case, and the counts that
follow from it (turns, parallel conductors, arrangements).  Sizes in m,
frequencies in Hz, currents in A RMS, temperatures in degC."""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass, field, replace

from typing import TYPE_CHECKING

from .study import StudyPoint
from .waveform import Spectrum, Waveform, WaveformSettings

if TYPE_CHECKING:
    from .search_spec import SearchSpec

SYMMETRIES = ("planar", "axisymmetric")
BOUNDARIES = ("ideal-core", "open", "open-wall", "core")
#: the boundaries with air out to a far circle: no core around the window, so
#: ampere-turns need not balance and self inductances are finite ("open-wall":
#: the half plane x >= 0 beside a magnetic wall at x = 0, planar only)
OPEN_BOUNDARIES = ("open", "open-wall")
LEGS = ("centre", "outer")
STACKINGS = ("across-width", "along-height")
SHAPES = ("round", "rectangular", "foil", "litz")
LEG_SHAPES = ("round", "rectangular")  #: core.centre_leg shapes
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
    """[model]; the factor to whole turns of every conductor (model.length,
    or each turn's own length around a centre leg, or 1 for rings) is
    :func:`racfield.geometry.turn_length.turn_lengths`."""

    symmetry: str = "planar"
    length: float = 1.0          #: m, conductor length per turn (mean turn length); planar without a centre leg
    temperature_c: float = 20.0  #: degC
    length_given: bool = False   #: the case file set model.length

    @property
    def axisymmetric(self) -> bool:
        return self.symmetry == "axisymmetric"


@dataclass(frozen=True)
class Window:
    width: float                  #: m, inner wall (x = 0) to outer wall
    height: float                 #: m, bottom (y = 0) to top
    boundary: str = "ideal-core"  #: one of BOUNDARIES
    margin_inner: float = 0.0     #: m, keep-out at x = 0
    margin_outer: float = 0.0     #: m, keep-out at x = width
    margin_top: float = 0.0       #: m
    margin_bottom: float = 0.0    #: m
    stacking: str = "across-width"
    inner_radius: float | None = None  #: m, axisymmetric: radius of the inner wall (x = 0)

    @property
    def open_boundary(self) -> bool:
        """Air out to a far circle, no core (see OPEN_BOUNDARIES)."""
        return self.boundary in OPEN_BOUNDARIES

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
    start: str = "inner"          #: which end is the start terminal: "inner" (its first turn in case order) or "outer"
    #: DC value, RMS and harmonics (cases with waveforms only; current/phase is then a sine at the fundamental)
    spectrum: Spectrum | None = field(default=None, compare=False, repr=False)

    @property
    def phasor(self) -> complex:
        """RMS current phasor in A (see README, conventions)."""
        return self.current * cmath.exp(1j * math.radians(self.phase_deg))


#: the cross-section every conductor shape is placed and meshed as: a circle
#: ("round"; litz: the bundle) or a rectangle ("rect"; a foil is a rectangle)
SECTIONS = {"round": "round", "rectangular": "rect", "foil": "rect", "litz": "round"}


def section_area(section: str, width: float, height: float, strands: int = 0,
                 strand_diameter: float = 0.0) -> float:
    """True cross-section in m^2 of a ``section`` (see SECTIONS): "round" of
    diameter ``width``, pi d^2 / 4, or "rect" ``width`` x ``height``; with
    ``strands`` > 0 the copper of that many strands of diameter
    ``strand_diameter`` instead (a litz bundle's conducting area)."""
    if strands:
        return strands * math.pi * strand_diameter ** 2 / 4.0
    if section == "round":
        return math.pi * width ** 2 / 4.0
    return width * height


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
        return section_area(SECTIONS[self.shape], self.width, self.height,
                            self.strands if self.shape == "litz" else 0, self.strand_diameter)


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
class CentreLeg:
    """The core's centre leg the turns are wound around (``[core] centre_leg``,
    planar models): it gives every turn its own length (see
    :mod:`racfield.geometry.turn_length`).  ``shape`` "round" (``diameter``)
    or "rectangular" (``width`` x ``depth``, corners rounded to
    ``corner_radius``); ``gap`` from the leg surface to the window's inner
    wall x = 0 (the bobbin).  Sizes in m."""

    shape: str
    diameter: float = 0.0
    width: float = 0.0
    depth: float = 0.0
    corner_radius: float = 0.0
    gap: float = 0.0


@dataclass(frozen=True)
class MeshOptions:
    density: float = 1.0           #: >1 finer, <1 coarser than the default sizing
    far_radius_factor: float = 5.0  #: open boundary: far circle / window half-diagonal
    frequency: float | None = None  #: Hz, size the mesh for this frequency (None: the highest solved)
    corner_refinement: float = 1.0  #: extra refinement at gap and core corners (>1 finer)


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
class EndTurns:
    """The part of every turn outside the core window (``[end_turns]``): in air
    beside the centre leg's face (a magnetic wall), with no outer leg or yoke.
    ``fraction``: its share of each turn's length; or ``length`` (m) per turn."""

    fraction: float | None = None
    length: float | None = None


#: fills between the conductors and their thermal conductivity in W/(m K)
#: (common practice: still air, conduction only; impregnating varnish; a potting compound)
FILLS = {"air": 0.03, "varnish": 0.2, "potting": 0.5}


@dataclass(frozen=True)
class Thermal:
    """``[thermal]``: the steady temperature the loss causes (see
    :mod:`racfield.fem.coupled_thermal`).  Temperatures in degC,
    conductivities in W/(m K), ``h`` in W/(m^2 K), frequency in Hz.

    ``core_temperature``: the core walls (an ideal-core window), the core
    body, or the magnetic wall of an open-wall model held at it; ``h`` and
    ``ambient``: a convective far boundary (open and core-body models).
    ``fill_conductivity``: the space between the conductors;
    ``insulation_conductivity``: each conductor's insulation (outer minus bare
    size); ``layer_insulation_conductivity``: the layers' ``insulation_after``;
    ``frequency``: the operating frequency of a case without waveforms (None:
    the waveforms' harmonics).  ``coupled``: each turn's resistivity follows
    its mean temperature, iterated until the total loss changes by less than
    ``tolerance``; no steady state at or below ``max_temperature`` (or none
    within ``max_iterations``) is reported as runaway."""

    core_temperature: float | None = None
    h: float | None = None
    ambient: float | None = None
    fill: str = "air"
    fill_conductivity: float = FILLS["air"]
    insulation_conductivity: float = 0.2
    layer_insulation_conductivity: float = 0.2
    core_conductivity: float = 4.0
    frequency: float | None = None
    coupled: bool = True
    tolerance: float = 1e-5
    max_iterations: int = 50
    max_temperature: float = 400.0


#: relative permittivity of the fills between the conductors (common practice)
DIELECTRIC_FILLS = {"air": 1.0, "varnish": 3.5, "potting": 4.0}
CORE_ELECTRODES = ("grounded", "floating")


@dataclass(frozen=True)
class Dielectric:
    """``[dielectric]``: relative permittivities for the electrostatic
    solution (winding capacitance).  ``fill_permittivity``: the space between
    the conductors; ``insulation_permittivity``: each conductor's insulation
    (outer minus bare size), per winding in ``winding_insulation`` (name ->
    permittivity) where given; ``layer_insulation_permittivity``: the layers'
    ``insulation_after`` tape; ``core``: the core or walls as an electrode,
    "grounded" (0 V, the reference) or "floating" (no net charge)."""

    fill: str = "air"
    fill_permittivity: float = 1.0
    insulation_permittivity: float = 3.5
    layer_insulation_permittivity: float = 3.3
    winding_insulation: tuple[tuple[str, float], ...] = ()
    core: str = "grounded"

    def insulation_of(self, winding: str) -> float:
        """The insulation permittivity of ``winding``'s conductors."""
        return dict(self.winding_insulation).get(winding, self.insulation_permittivity)


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
    source: dict | None = None              #: the case document without [study] / [search], for their points
    search: "SearchSpec | None" = None      #: [search] (see geometry/case/search_keys.py)
    allow_outside_files: bool = False       #: files it names may lie outside the case folder (study points too)
    centre_leg: CentreLeg | None = None     #: [core] centre_leg: per-turn lengths (planar models)
    end_turns: "EndTurns | None" = None     #: the part of each turn outside the core (planar models)
    thermal: Thermal | None = None          #: [thermal]: the temperature the loss causes
    dielectric: Dielectric | None = None    #: [dielectric]: the winding capacitance

    def winding(self, name: str) -> Winding:
        return next(w for w in self.windings if w.name == name)

    @property
    def axis_offset(self) -> float | None:
        """m: the radius r0 of window x = 0 in an axisymmetric model (r = x + r0,
        the inner wall's radius); None for a planar model."""
        return self.window.inner_radius if self.model.axisymmetric else None

    @property
    def mesh_frequency(self) -> float:
        """Hz the mesh is sized for: ``[mesh] frequency``, else the highest solved frequency (the
        sweep's, or ``[thermal] frequency``, the operating point's, when higher)."""
        if self.mesh.frequency is not None:
            return self.mesh.frequency
        operating = self.thermal.frequency if self.thermal is not None and self.thermal.frequency is not None else 0.0
        return max(max(self.frequencies), operating)


def conductor_specs(case: Case, name: str) -> list[tuple[str, ConductorSpec]]:
    """(key, conductor) of every layer and placed conductor of winding ``name``."""
    return ([(l.key, l.conductor) for l in case.layers if l.winding == name]
            + [(c.key, c.conductor) for c in case.conductors if c.winding == name])


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
    specs = conductor_specs(case, name)
    if specs and specs[0][1].shape == "litz" and specs[0][1].representation == "strands":
        return Parallel(name, specs[0][1].strands, True)
    return Parallel(name, 1)


def winding_turns(case: Case, name: str) -> int:
    """Number of turns (in series) of winding ``name``."""
    return winding_conductors(case, name) // parallel_of(case, name).conductors
