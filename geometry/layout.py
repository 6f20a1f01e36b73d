"""Place every turn of every winding in the window.

Coordinates in m from the inner-bottom corner of the window: x runs from the
inner wall (x = 0) to the outer wall, y from the bottom up.  Layers follow one
another from the inner wall outward (``stacking = "across-width"``) or from the
bottom up (``"along-height"``); within a layer, turns are placed along the
other direction.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from .case import Case, CaseError, ConductorSpec, Layer, Window, parallel_of, strands_per_turn
from .case.model import SECTIONS, section_area

_TOL = 1e-12  # m; touching is allowed, overlapping is not
#: the most conductors (turns, parallel conductors, litz strands) one arrangement may place:
#: the solver carries one unknown current per conductor, and dense matrices of that order
MAX_CONDUCTORS = 10_000


@dataclass(frozen=True)
class Conductor:
    """One turn's cross-section, placed.  Sizes and positions in m."""

    index: int          #: 0-based position in the case's conductor list
    winding: str
    turn: int           #: 1-based turn number within the winding
    shape: str          #: its section, "round" or "rect" (the case shape's, see SECTIONS)
    x: float            #: centre
    y: float            #: centre
    width: float        #: bare size along x (the diameter for round)
    height: float       #: bare size along y
    key: str            #: case key that created it, for messages
    strand: int = 1     #: 1-based position among the turn's parallel conductors
    strands: int = 0    #: homogenized litz bundle (round, ``width`` its diameter): its strand count; 0: solid
    strand_diameter: float = 0.0  #: m, homogenized litz bundle: diameter of one strand
    outer_width: float = 0.0      #: m, size along x over the insulation (0: bare)
    outer_height: float = 0.0     #: m, size along y over the insulation (0: bare)

    @property
    def insulation(self) -> tuple[float, float]:
        """Insulation thickness (m) on the faces normal to x and to y: half of
        outer minus bare size (round: both the radial thickness)."""
        return (max(0.5 * (self.outer_width - self.width), 0.0), max(0.5 * (self.outer_height - self.height), 0.0))

    @property
    def area(self) -> float:
        """True cross-section of the region in m^2 (a litz bundle: the whole bundle circle)."""
        return section_area(self.shape, self.width, self.height)

    @property
    def copper_area(self) -> float:
        """True conducting cross-section in m^2 (a litz bundle: its strands' copper)."""
        return section_area(self.shape, self.width, self.height, self.strands, self.strand_diameter)

    @property
    def radius(self) -> float:
        return 0.5 * self.width


def _oriented(spec: ConductorSpec, stacking: str) -> tuple[float, float, float, float]:
    """Bare and outer (width, height) in window axes; a foil lies along its layer."""
    if spec.shape == "foil" and stacking == "along-height":
        return spec.height, spec.width, spec.outer_height, spec.outer_width
    return spec.width, spec.height, spec.outer_width, spec.outer_height


def _mm(value: float) -> str:
    return f"{value * 1e3:.4g} mm"


@dataclass(frozen=True)
class _Span:
    """Where layers go, in m: ``stack_lo``..``stack_hi`` along the direction
    the layers follow one another (``direction``, "width" or "height"),
    ``along_lo``..``along_hi`` along each layer, both between the margins."""

    across_width: bool
    stack_lo: float
    stack_hi: float
    along_lo: float
    along_hi: float
    direction: str


def _span(win: Window) -> _Span:
    """The window's free span between the margins, in layer axes."""
    across_width = win.stacking == "across-width"
    along_width = (win.margin_inner, win.width - win.margin_outer)
    along_height = (win.margin_bottom, win.height - win.margin_top)
    stack, along = (along_width, along_height) if across_width else (along_height, along_width)
    return _Span(across_width, *stack, *along, "width" if across_width else "height")


@dataclass
class _Placement:
    """The conductors of ``case`` placed so far, in case order."""

    case: Case
    placed: list[Conductor] = field(default_factory=list)
    counts: dict[str, int] = field(default_factory=dict)   #: conductors of each winding so far

    def add_one(self, winding: str, shape: str, x: float, y: float, w: float, h: float, key: str,
                strands: int = 0, strand_diameter: float = 0.0, outer: tuple[float, float] = (0.0, 0.0)) -> None:
        """One conductor region of case ``shape`` centred at (x, y), bare size w x h
        and ``outer`` size over its insulation (m)."""
        # the winding's conductors in order, taken `parallel` at a time, make its turns
        seen = self.counts.get(winding, 0)
        self.counts[winding] = seen + 1
        per_turn = parallel_of(self.case, winding).conductors
        self.placed.append(Conductor(len(self.placed), winding, seen // per_turn + 1, SECTIONS[shape],
                                     x, y, w, h, key, seen % per_turn + 1, strands, strand_diameter, *outer))

    def add(self, winding: str, spec: ConductorSpec, x: float, y: float, w: float, h: float, key: str,
            outer: tuple[float, float] = (0.0, 0.0)) -> None:
        """One turn of ``spec`` centred at (x, y), bare size w x h and ``outer``
        size (m): a litz turn meshed strand by strand adds every strand (with no
        insulation of its own), a homogenized one a single bundle."""
        if spec.shape != "litz":
            self.add_one(winding, spec.shape, x, y, w, h, key, outer=outer)
        elif spec.representation == "bundle":
            self.add_one(winding, "litz", x, y, w, h, key, spec.strands, spec.strand_diameter, outer)
        else:
            d = spec.strand_diameter
            for sx, sy in strand_positions(spec.strands, d, w, key):
                self.add_one(winding, "round", x + sx, y + sy, d, d, key)


def place(case: Case) -> list[Conductor]:
    """All conductors of ``case`` with positions; raises CaseError on a bad layout."""
    span = _span(case.window)
    _check_count(case)
    placement = _Placement(case)
    position = span.stack_lo
    for layer in case.layers:
        position = _place_layer(placement, layer, span, position)
    for item in case.conductors:
        bw, bh, ow, oh = _oriented(item.conductor, "across-width")
        placement.add(item.winding, item.conductor, item.at[0], item.at[1], bw, bh, item.key, (ow, oh))
    _check_inside(placement.placed, case.window, case.model.axisymmetric)
    _check_overlaps(placement.placed)
    return placement.placed


def insulation_strips(case: Case) -> list[tuple[float, float, float, float]]:
    """The layers' ``insulation_after`` as rectangles (x0, x1, y0, y1) in m:
    from a layer's outer face to the next one's, over the free span between
    the margins along the layers (the tape between layers)."""
    span = _span(case.window)
    strips = []
    position = span.stack_lo
    for layer in case.layers:
        _, _, ow, oh = _oriented(layer.conductor, case.window.stacking)
        thickness = ow if span.across_width else oh
        for _ in range(layer.repeat):
            position += thickness
            if layer.insulation_after > 0.0:
                lo, hi = position, position + layer.insulation_after
                strips.append((lo, hi, span.along_lo, span.along_hi) if span.across_width
                              else (span.along_lo, span.along_hi, lo, hi))
            position += layer.insulation_after
    return strips


def _turn_steps(layer: Layer, span: _Span, pitch: float) -> tuple[float, float]:
    """(step, start) in m along the layer: turn i is centred at start + (i + 1/2) step.
    Raises CaseError when the turns do not fit between the margins."""
    avail = span.along_hi - span.along_lo
    need = layer.turns * pitch
    if need > avail * (1 + 1e-9) + _TOL:
        raise CaseError(f"{layer.key}.turns",
                        f"{layer.turns} turns at a pitch of {_mm(pitch)} need {_mm(need)} "
                        f"but the window gives {_mm(avail)} between the margins",
                        "use fewer turns per layer, a smaller conductor or smaller margins")
    if layer.align == "spread":
        return avail / layer.turns, span.along_lo
    if layer.align == "start":
        return pitch, span.along_lo
    if layer.align == "end":
        return pitch, span.along_hi - need
    return pitch, span.along_lo + 0.5 * (avail - need)


def _place_layer(placement: _Placement, layer: Layer, span: _Span, position: float) -> float:
    """Place the ``repeat`` layers of ``layer`` from ``position`` (m, along the
    stacking direction) on; returns the position after them."""
    bw, bh, ow, oh = _oriented(layer.conductor, placement.case.window.stacking)
    thickness, pitch = (ow, oh) if span.across_width else (oh, ow)
    step, start = _turn_steps(layer, span, pitch)
    for _ in range(layer.repeat):
        if position + thickness > span.stack_hi * (1 + 1e-9) + _TOL:
            raise CaseError(f"{layer.key}",
                            f"the layers need {_mm(position + thickness - span.stack_lo)} across the window "
                            f"{span.direction} but {_mm(span.stack_hi - span.stack_lo)} is free between the margins",
                            "use fewer or thinner layers, less insulation_after, or a larger window")
        centre_stack = position + 0.5 * thickness
        for i in range(layer.turns):
            along = start + (i + 0.5) * step
            x, y = (centre_stack, along) if span.across_width else (along, centre_stack)
            placement.add(layer.winding, layer.conductor, x, y, bw, bh, layer.key, (ow, oh))
        position += thickness + layer.insulation_after
    return position


def _check_inside(placed: list[Conductor], win: Window, axisymmetric: bool) -> None:
    """Refuse the first conductor that reaches outside the window (or, in an
    axisymmetric model, reaches the axis)."""
    for c in placed:
        if (c.x - c.width / 2 < -_TOL or c.x + c.width / 2 > win.width + _TOL
                or c.y - c.height / 2 < -_TOL or c.y + c.height / 2 > win.height + _TOL):
            raise CaseError(c.key, f"{c.winding} turn {c.turn} at ({_mm(c.x)}, {_mm(c.y)}) "
                            f"reaches outside the {_mm(win.width)} x {_mm(win.height)} window",
                            "move it inside the window (coordinates from the inner-bottom corner)")
        if axisymmetric and win.radius(c.x - c.width / 2) <= _TOL:
            # a ring through the axis has no true DC resistance (2 pi r / A with r -> 0)
            raise CaseError(c.key, f"{c.winding} turn {c.turn} at r = {_mm(win.radius(c.x))} reaches the "
                            "axis r = 0 (the window's inner wall)",
                            "keep every turn off the axis: give window.margins.inner (the coil's inner "
                            "radius) or move the turn outward")


def _check_count(case: Case) -> None:
    """At most MAX_CONDUCTORS conductors, counted before any is placed."""
    total = 0
    items = [(l.key, l.turns * l.repeat * strands_per_turn(l.conductor)) for l in case.layers]
    items += [(c.key, strands_per_turn(c.conductor)) for c in case.conductors]
    for key, count in items:
        total += count
        if total > MAX_CONDUCTORS:
            raise CaseError(key, f"the case places more than {MAX_CONDUCTORS} conductors by here "
                            f"(turns x repeat x litz strands)",
                            "use fewer turns or strands; a litz winding can be one homogenized bundle per turn "
                            '(representation = "bundle")')


def strand_positions(n: int, d: float, bundle: float, key: str = "conductor") -> list[tuple[float, float]]:
    """Centres (m, from the bundle centre) of ``n`` strands of diameter ``d`` in a
    bundle of diameter ``bundle``: one at the centre, then rings of 6k strands at
    radius k p (k = 1..K), the last ring holding the rest, evenly spread;
    p = (bundle/2 - d/2) / K.  Raises CaseError when p < d (strands would touch)."""
    if n == 1:
        return [(0.0, 0.0)]
    rings = 1
    while 1 + 3 * rings * (rings + 1) < n:
        rings += 1
    p = (bundle / 2 - d / 2) / rings
    if p < d * (1 - 1e-9):
        raise CaseError(f"{key}.conductor", f"{n} strands of {_mm(d)} need {rings} rings at a spacing of at least "
                        f"{_mm(d)}, but the {_mm(bundle)} bundle leaves {_mm(p)}",
                        "give a larger bundle_diameter or a lower packing")
    out = [(0.0, 0.0)]
    left = n - 1
    for k in range(1, rings + 1):
        count = min(6 * k, left)
        out += [(k * p * math.cos(2 * math.pi * i / count), k * p * math.sin(2 * math.pi * i / count))
                for i in range(count)]
        left -= count
    return out


def _overlap(a: Conductor, b: Conductor) -> bool:
    if a.shape == "round" and b.shape == "round":
        return math.hypot(a.x - b.x, a.y - b.y) < a.radius + b.radius - 1e-9 * (a.radius + b.radius)
    if a.shape == "rect" and b.shape == "rect":
        return (abs(a.x - b.x) < (a.width + b.width) / 2 * (1 - 1e-9)
                and abs(a.y - b.y) < (a.height + b.height) / 2 * (1 - 1e-9))
    circle, rect = (a, b) if a.shape == "round" else (b, a)
    dx = max(abs(circle.x - rect.x) - rect.width / 2, 0.0)
    dy = max(abs(circle.y - rect.y) - rect.height / 2, 0.0)
    return math.hypot(dx, dy) < circle.radius * (1 - 1e-9)


def _check_overlaps(conductors: list[Conductor]) -> None:
    """Refuse the first conductor (in case order) that overlaps an earlier one.
    Conductors sit in square cells as large as the largest conductor, so two
    that overlap lie in the same or neighbouring cells: the check is linear in
    the number of conductors, not quadratic."""
    if not conductors:
        return
    cell = max(max(c.width, c.height) for c in conductors)
    grid: dict[tuple[int, int], list[Conductor]] = {}
    for b in conductors:
        i, j = math.floor(b.x / cell), math.floor(b.y / cell)
        earlier = [a for di in (-1, 0, 1) for dj in (-1, 0, 1) for a in grid.get((i + di, j + dj), ())
                   if _overlap(a, b)]
        if earlier:
            first = min(earlier, key=lambda c: c.index)
            raise CaseError(b.key, f"{b.winding} turn {b.turn} overlaps "
                            f"{first.winding} turn {first.turn} ({first.key})",
                            "move one of them or make the conductors smaller")
        grid.setdefault((i, j), []).append(b)


def dc_resistance(conductor: Conductor, resistivity: float, radius_offset: float | None = None) -> float:
    """DC resistance of one turn from its true geometry.

    Planar (``radius_offset`` None): rho / A in ohm per metre of length.
    Axisymmetric (radius r = x + radius_offset): the whole ring in ohm, from
    1/R = (1/rho) int dA / (2 pi r) (current density ~ 1/r at DC): a
    rectangle r1..r2 of height h gives R = 2 pi rho / (h ln(r2/r1)); a round
    wire of radius a at radius R0 gives R = rho / (R0 - sqrt(R0^2 - a^2)).
    """
    if radius_offset is None:
        return resistivity / conductor.copper_area
    r = conductor.x + radius_offset
    if conductor.shape == "round":
        a = conductor.radius
        # R0 - sqrt(R0^2 - a^2) = a^2 / (R0 + sqrt(R0^2 - a^2)): no cancellation far from the axis
        return resistivity * (r + math.sqrt(r * r - a * a)) / (a * a)
    r1 = r - conductor.width / 2
    # ln(r2/r1) = log1p(width/r1): no cancellation for a thin ring far from the axis
    return 2 * math.pi * resistivity / (conductor.height * math.log1p(conductor.width / r1))
