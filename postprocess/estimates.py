"""Hand estimates of Rac/Rdc from the case description alone (no field solution).

Two published methods, both on the same one-dimensional layer model of the
window:

* Dowell's method (P. L. Dowell, "Effects of eddy currents in transformer
  windings", Proc. IEE, vol. 113, no. 8, 1966): every layer is a conducting
  slab between the fields at its two faces; round wire becomes the equivalent
  square conductor of the same area and the layer's porosity factor scales
  the skin depth.
* Ferreira's method (J. A. Ferreira, "Improved analytical modeling of
  conductive losses in magnetic components", IEEE Trans. Power Electronics,
  vol. 9, no. 1, 1994): every round-wire turn has the exact skin loss of an
  isolated wire plus the exact proximity loss of a wire in a uniform
  transverse field, the two taken as orthogonal.  Foil and rectangular layers
  get the slab (foil) solution, which is the same as Dowell's there.

The one-dimensional model
-------------------------
The layers are walked in the order of the case (the interleaving), each
``repeat`` expanded, from the reference wall: the inner wall (x = 0) for
``stacking = "across-width"``, the bottom (y = 0) for ``"along-height"``
(axes swapped: the layers lie along x and the field runs across the window
width).  Layer p of winding w adds the ampere-turns N_p I_w (RMS phasor, A;
with [[parallel]] conductors N_p counts each conductor by its DC share of
I_w, see :mod:`racfield.geometry.resistance`), so the magnetomotive force
(MMF) is a staircase; the field along the layers at its two faces is

    H_left = (MMF before the layer - M0) / h_w,   H_right = (MMF after - M0) / h_w   (A/m)

with h_w the window height (across-width) or width (along-height), the length
of the field path in the window between the core walls.  M0 = 0 (the MMF
starts at 0 at the reference wall) except in a core window whose legs carry
gaps, where the wall MMF is split between the two legs by their gap
reluctances (a gap in the centre leg only puts the zero of H at the outer
wall).

A layer's loss follows from its two face fields alone (the general form, not
only the "m layers, MMF 0..m" special case), so interleaved arrangements and
windings with any currents and phases are handled.  A winding's estimate is

    Rac/Rdc = sum over its layers of F_p Rdc_p / sum of Rdc_p,

with F_p = loss of layer p / (|I_w|^2 Rdc_p).  The turn length cancels in a
planar model (per-metre values are used); an axisymmetric model weights each
layer by the true Rdc of its rings (curvature of the field is ignored).

Units: SI (m, Hz, A, A/m, ohm, W); fields and currents are RMS phasors with
exp(+j omega t).  The result of :func:`hand_estimates` is plain JSON-ready data.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy.special import jve

from racfield.geometry.case import Case
from racfield.geometry.layout import Conductor, place
from racfield.geometry.resistance import dc_shares, weighted_resistances
from racfield.geometry.materials import MU0, material, skin_depth

METHODS = ("dowell", "ferreira")

PARTIAL_LAYER_LIMIT = 0.95
"""A foil or rectangular layer whose porosity is below this, or a layer whose
turns span less than this fraction of h_w, is a partial layer (end fringing
that the 1-D model does not see)."""

FERREIRA_FIELDS = ("mean-square", "mean-field")
"""How Ferreira's method takes the transverse field over a layer:
``"mean-square"``: |H|^2 averaged linearly across the layer,
(|H1|^2 + |H2|^2 + Re(H1 conj H2)) / 3; ``"mean-field"``: the square of the
mean field, |H1 + H2|^2 / 4, as in Ferreira (1994), whose m-layer factor
4(m^2 - 1)/3 + 1 is the mean of (2p - 1)^2."""


# ---------------------------------------------------------------------------
# Slab (foil) solution


def dowell_factor(delta_ratio: float, layers: int) -> float:
    """Dowell's classic Rac/Rdc of an m-layer portion whose MMF rises 0..m:

        F = D [ (sinh 2D + sin 2D)/(cosh 2D - cos 2D)
                + (2/3)(m^2 - 1)(sinh D - sin D)/(cosh D + cos D) ],

    ``delta_ratio`` D = layer thickness / (effective) skin depth, ``layers`` m
    (Dowell, Proc. IEE 113(8), 1966).  Below D = 1e-3 the closed form loses
    its digits to cancellation and the expansion 1 + (5 m^2 - 1) D^4 / 45 is used.
    """
    d = float(delta_ratio)
    if d < 1e-3:
        return 1.0 + (5 * layers * layers - 1) / 45.0 * d ** 4
    xi1 = (math.sinh(2 * d) + math.sin(2 * d)) / (math.cosh(2 * d) - math.cos(2 * d))
    xi2 = (math.sinh(d) - math.sin(d)) / (math.cosh(d) + math.cos(d))
    return d * (xi1 + 2.0 / 3.0 * (layers * layers - 1) * xi2)


def _slab_terms(delta_ratio: float) -> tuple[float, float]:
    """(phi1, phi2) of :func:`slab_factor`: (D/2) Re[(1+j) coth((1+j)D/2)] and
    (D/2) Re[(1+j) tanh((1+j)D/2)]; (1, 0) at D = 0."""
    d = float(delta_ratio)
    if d == 0.0:
        return 1.0, 0.0
    w = (1.0 + 1.0j) * d / 2.0
    t = complex(np.tanh(w))
    return (0.5 * d * ((1.0 + 1.0j) / t).real, 0.5 * d * ((1.0 + 1.0j) * t).real)


def slab_loss_density(h1: complex, h2: complex, thickness: float, resistivity: float,
                      frequency: float) -> float:
    """Loss in W per m^2 of face of a conducting slab (1-D field along its faces).

    ``h1``, ``h2``: RMS field phasors (A/m) at the two faces, ``thickness`` d
    (m), ``resistivity`` rho (ohm*m; for a porous layer rho / eta), ``frequency``
    (Hz).  The field inside is H(x) = [H1 sinh(g(d - x)) + H2 sinh(g x)] / sinh(g d),
    g = (1 + j)/delta, and the loss rho int |dH/dx|^2 dx is

        P = (rho/delta) Re{ (1+j) [ (|H1|^2 + |H2|^2) coth((1+j)D)
                                     - 2 Re(H1 conj H2) csch((1+j)D) ] },   D = d/delta

    (Dowell 1966; written here with coth and csch of (1+j)D), evaluated in the
    equivalent half-angle form (rho/(2 delta)) Re{(1+j)[|H1 - H2|^2 coth((1+j)D/2)
    + |H1 + H2|^2 tanh((1+j)D/2)]}, which stays accurate as D -> 0 (at DC:
    rho |H1 - H2|^2 / d).
    """
    diff = abs(h1 - h2) ** 2
    total = abs(h1 + h2) ** 2
    if frequency <= 0.0:
        return resistivity * diff / thickness
    delta = skin_depth(resistivity, frequency)
    phi1, phi2 = _slab_terms(thickness / delta)
    return resistivity / thickness * (phi1 * diff + phi2 * total)


def slab_factor(h1: complex, h2: complex, delta_ratio: float) -> float:
    """Rac/Rdc of a slab carrying the net current (H2 - H1) per unit height,
    between face fields ``h1`` and ``h2`` (any unit, RMS phasors), at
    ``delta_ratio`` D = thickness / skin depth (Dowell 1966):

        F = phi1(D) + phi2(D) |H1 + H2|^2 / |H1 - H2|^2,
        phi1 = (D/2) Re[(1+j) coth((1+j)D/2)],  phi2 = (D/2) Re[(1+j) tanh((1+j)D/2)].

    phi1 + phi2 = D Re[(1+j) coth((1+j)D)], the single-layer (m = 1) factor.
    Raises ZeroDivisionError for a slab with no net current (H1 = H2).
    """
    diff = abs(h1 - h2) ** 2
    if diff == 0.0:
        raise ZeroDivisionError("the slab carries no net current: Rac/Rdc is undefined")
    phi1, phi2 = _slab_terms(delta_ratio)
    return phi1 + phi2 * abs(h1 + h2) ** 2 / diff


# ---------------------------------------------------------------------------
# Round wire (Bessel functions)


def _j1_over_j0(z: complex) -> complex:
    """J1(z)/J0(z) with exponentially scaled Bessel functions (no overflow)."""
    return complex(jve(1, z) / jve(0, z))


def wire_skin_factor(radius: float, delta: float) -> float:
    """Rac/Rdc of an isolated round wire from its exact internal impedance,
    Re[k a J0(k a) / (2 J1(k a))], k = (1 - j)/delta (exp(+j omega t)).
    ``radius`` a and skin depth ``delta`` in m; 1 at DC (delta = inf)."""
    if not math.isfinite(delta):
        return 1.0
    ka = (1.0 - 1.0j) * radius / delta
    if abs(ka) < 1e-4:  # series: 1 + (a/delta)^4 / 48
        return 1.0 + (radius / delta) ** 4 / 48.0
    return (ka / (2.0 * _j1_over_j0(ka))).real


def wire_proximity_loss(radius: float, resistivity: float, frequency: float, h_squared: float) -> float:
    """Eddy loss in W per metre of a round wire (no net current) in a uniform
    transverse RMS field with |H|^2 = ``h_squared`` (A^2/m^2).

    Inside, A = C J1(k r) sin(theta) with C = 2 mu0 H / (k J0(k a)) and
    k = (1 - j)/delta; the loss sigma omega^2 |C|^2 pi int_0^a |J1(k r)|^2 r dr
    closes with the Lommel integral to

        P = 4 pi rho |H|^2 Im[ k a conj(J1(k a) / J0(k a)) ]

    (Ferreira 1994 gives the same in Kelvin functions; low-frequency limit
    pi sigma omega^2 mu0^2 |H|^2 a^4 / 4).  ``radius`` m, ``resistivity``
    ohm*m, ``frequency`` Hz.
    """
    if frequency <= 0.0 or h_squared == 0.0:
        return 0.0
    delta = skin_depth(resistivity, frequency)
    ka = (1.0 - 1.0j) * radius / delta
    if abs(ka) < 1e-3:  # series, relative error below 1e-7
        omega = 2.0 * math.pi * frequency
        return math.pi * omega ** 2 * MU0 ** 2 * h_squared * radius ** 4 / (4.0 * resistivity)
    return 4.0 * math.pi * resistivity * h_squared * (ka * _j1_over_j0(ka).conjugate()).imag


# ---------------------------------------------------------------------------
# The layer model


@dataclass(frozen=True)
class LayerModel:
    """One layer of the 1-D model (``repeat`` expanded).  Sizes in m.

    ``thickness`` is Dowell's d across the layer (round: the side of the square
    of the same area, sqrt(pi)/2 x diameter); ``porosity`` eta = turns x size
    along the layer / h_w (round: turns x d / h_w); ``fill`` = span of the turns
    along the layer / h_w; ``h_left``/``h_right`` RMS field phasors (A/m) at the
    faces toward and away from the reference wall; ``rdc`` (ohm/m planar, ohm
    axisymmetric and planar with a centre leg: each turn its own length,
    :func:`geometry.resistance.weighted_resistances`) the layer's part of its winding's Rdc, sum s_k^2 R_k over its
    conductors (s_k the DC share of the winding current, 1 without
    [[parallel]]); ``resistivity`` ohm*m.
    """

    winding: str
    key: str
    shape: str
    turns: int
    thickness: float
    diameter: float | None
    porosity: float
    fill: float
    h_left: complex
    h_right: complex
    rdc: float
    resistivity: float

    @property
    def h_squared_mean(self) -> float:
        """|H|^2 averaged linearly across the layer, (|H1|^2 + |H2|^2 + Re(H1 conj H2))/3, A^2/m^2."""
        h1, h2 = self.h_left, self.h_right
        return (abs(h1) ** 2 + abs(h2) ** 2 + (h1 * h2.conjugate()).real) / 3.0

    @property
    def h_mean_squared(self) -> float:
        """|(H1 + H2)/2|^2, the square of the mean field, A^2/m^2."""
        return abs(self.h_left + self.h_right) ** 2 / 4.0


@dataclass
class LayerModelResult:
    """The 1-D model of a case: its layers, the field-path length ``h_w`` (m),
    the reference MMF ``m0`` (A), and notes for all windings and per winding."""

    layers: list[LayerModel]
    h_w: float
    m0: complex
    notes: list[str] = field(default_factory=list)
    winding_notes: dict[str, list[str]] = field(default_factory=dict)


def _reference_mmf(case: Case, total: complex) -> tuple[complex, str | None]:
    """MMF (A) at the reference wall's zero of H: 0, or in a gapped core window
    (across-width stacking) the centre leg's share of the total by gap reluctance."""
    core = case.core
    if core is None or not core.gaps or case.window.stacking != "across-width":
        return 0.0j, None
    win = case.window
    g_centre = sum(g.length for g in core.gaps if g.leg == "centre")
    g_outer = sum(g.length for g in core.gaps if g.leg == "outer")
    if case.model.axisymmetric:
        r_out = win.radius(win.width)
        area_centre = math.pi * win.inner_radius ** 2
        area_outer = math.pi * ((r_out + core.outer_leg_width) ** 2 - r_out ** 2)
    else:  # per unit depth: the model's half centre leg returns its flux through one outer leg
        area_centre, area_outer = core.centre_leg_width / 2.0, core.outer_leg_width
    r_centre, r_outer = g_centre / area_centre, g_outer / area_outer
    share = r_centre / (r_centre + r_outer)
    return total * share, f"wall MMF split by gap reluctance ({100 * share:.0f} % centre leg)"


def _field_path(case: Case) -> float:
    win = case.window
    return win.height if win.stacking == "across-width" else win.width


def layer_model(case: Case, conductors: list[Conductor] | None = None) -> LayerModelResult:
    """Walk the layers of ``case`` and build the MMF staircase (see module doc).

    ``conductors``: the placed turns (``geometry.layout.place(case)``), placed
    here when not given; the layers' turns come first, in layer order.
    """
    if conductors is None:
        conductors = place(case)
    win = case.window
    across = win.stacking == "across-width"
    h_w = _field_path(case)
    temperature = case.model.temperature_c
    # each conductor's DC resistance and share of its winding's current ([[parallel]] conductors)
    resistances = weighted_resistances(case, conductors)   # longer turns weigh more (centre leg)
    shares = dc_shares(case, conductors, resistances)
    notes: list[str] = []
    per_winding: dict[str, list[str]] = {w.name: [] for w in case.windings}

    # (layer spec, its conductors) for every expanded layer, in walk order
    instances = []
    position = 0
    for layer in case.layers:
        for _ in range(layer.repeat):
            instances.append((layer, conductors[position:position + layer.turns]))
            position += layer.turns

    total = sum(sum(shares[c.index] for c in turns) * case.winding(layer.winding).phasor
                for layer, turns in instances)
    m0, split = _reference_mmf(case, complex(total))
    if case.core is not None and case.core.gaps:
        detail = "fringing field not in the 1-D model"
        notes.append(f"gap nearby: {detail}" + (f"; {split}" if split else ""))

    layers: list[LayerModel] = []
    mmf = 0.0j
    for layer, turns in instances:
        winding = case.winding(layer.winding)
        rho = material(winding.material).resistivity(temperature)
        spec = layer.conductor
        if spec.shape == "round":
            diameter = spec.width
            thickness = math.sqrt(math.pi) / 2.0 * diameter
            along = thickness
        elif spec.shape == "foil":
            diameter, thickness, along = None, spec.width, spec.height
        elif across:  # rectangular: width along x, height along y
            diameter, thickness, along = None, spec.width, spec.height
        else:
            diameter, thickness, along = None, spec.height, spec.width
        porosity = layer.turns * along / h_w
        if across:
            lo = min(c.y - c.height / 2 for c in turns)
            hi = max(c.y + c.height / 2 for c in turns)
        else:
            lo = min(c.x - c.width / 2 for c in turns)
            hi = max(c.x + c.width / 2 for c in turns)
        fill = (hi - lo) / h_w
        before = mmf
        mmf = mmf + sum(shares[c.index] for c in turns) * winding.phasor
        # the layer's part of the winding Rdc, sum s^2 R (see geometry.resistance)
        rdc = sum(shares[c.index] ** 2 * resistances[c.index] for c in turns)
        layers.append(LayerModel(layer.winding, layer.key, spec.shape, layer.turns, thickness, diameter,
                                 porosity, fill, (before - m0) / h_w, (mmf - m0) / h_w, rdc, rho))
        partial = fill < PARTIAL_LAYER_LIMIT or (spec.shape != "round" and porosity < PARTIAL_LAYER_LIMIT)
        if partial:
            text = (f"partial layer: {layer.key} (porosity {porosity:.2f}, turns span "
                    f"{100 * fill:.0f} % of the {'height' if across else 'width'})")
            if text not in per_winding[layer.winding]:
                per_winding[layer.winding].append(text)

    if case.conductors:
        notes.append(f"explicit conductors not modelled: {len(case.conductors)} [[conductor]] turn(s) "
                     "left out of the 1-D model (and of its MMF)")
    if not across:
        notes.append("along-height stacking: axes swapped (layers stacked along y, field along x, "
                     "h_w = window width)")
    if case.model.axisymmetric:
        notes.append("axisymmetric: curvature ignored (layers weighted by their true ring Rdc)")
    return LayerModelResult(layers, h_w, m0, notes, per_winding)


# ---------------------------------------------------------------------------
# Per-layer factors


def dowell_layer_factor(layer: LayerModel, frequency: float) -> float:
    """Rac/Rdc of one layer by Dowell's method at ``frequency`` (Hz): slab of
    thickness d between the layer's face fields, skin depth delta / sqrt(eta)."""
    if frequency <= 0.0:
        return 1.0
    delta = skin_depth(layer.resistivity, frequency) / math.sqrt(layer.porosity)
    return slab_factor(layer.h_left, layer.h_right, layer.thickness / delta)


def ferreira_layer_factor(layer: LayerModel, frequency: float, current: float,
                          field_average: str = "mean-field") -> float:
    """Rac/Rdc of one round-wire layer by Ferreira's method at ``frequency`` (Hz),
    for the winding's RMS ``current`` (A): skin factor of an isolated wire plus
    the proximity loss of each turn in the layer's transverse field (see
    :data:`FERREIRA_FIELDS` for ``field_average``), over |I|^2 Rdc.  Foil and
    rectangular layers get the slab solution (:func:`dowell_layer_factor`)."""
    if layer.shape != "round":
        return dowell_layer_factor(layer, frequency)
    if frequency <= 0.0:
        return 1.0
    if field_average not in FERREIRA_FIELDS:
        raise ValueError(f"field_average must be one of {FERREIRA_FIELDS}, not {field_average!r}")
    radius = layer.diameter / 2.0
    delta = skin_depth(layer.resistivity, frequency)
    h2 = layer.h_squared_mean if field_average == "mean-square" else layer.h_mean_squared
    proximity = wire_proximity_loss(radius, layer.resistivity, frequency, h2)  # W/m per turn
    rdc_per_m = layer.resistivity / (math.pi * radius ** 2)                     # ohm/m per turn
    return wire_skin_factor(radius, delta) + proximity / (current ** 2 * rdc_per_m)


# ---------------------------------------------------------------------------
# The estimates


@dataclass
class WindingEstimate:
    """One winding by one method: Rac/Rdc per frequency (None where undefined) and notes."""

    rac_over_rdc: list[float | None]
    notes: list[str]

    def as_dict(self) -> dict:
        return {"rac_over_rdc": list(self.rac_over_rdc), "notes": list(self.notes)}


def _empty(case: Case, frequencies: list[float], note: str) -> dict:
    return {method: {w.name: WindingEstimate([None] * len(frequencies), [note]).as_dict()
                     for w in case.windings} for method in METHODS}


def hand_estimates(case: Case, frequencies=None, ferreira_field: str = "mean-field",
                   conductors: list[Conductor] | None = None) -> dict:
    """Rac/Rdc of every winding by Dowell's and Ferreira's methods.

    ``frequencies`` in Hz (default: the case's sweep).  Returns
    ``{method: {winding: {"rac_over_rdc": [per frequency], "notes": [str]}}}``
    with method "dowell" and "ferreira"; a value is None where the method
    gives none (open boundary, zero current, no layered turns).  Notes stand
    beside the numbers: partial layers, gaps, explicit conductors,
    along-height stacking, axisymmetric models, foil/rectangular layers in
    Ferreira's method, and the porosity factor for round wire in Dowell's.
    ``ferreira_field``: see :data:`FERREIRA_FIELDS`.
    """
    freqs = [float(f) for f in (case.frequencies if frequencies is None else frequencies)]
    if case.window.open_boundary:
        return _empty(case, freqs, "open boundary: no 1-D field")
    model = layer_model(case, conductors)
    out: dict = {method: {} for method in METHODS}
    for w in case.windings:
        own = [layer for layer in model.layers if layer.winding == w.name]
        base = list(model.notes) + list(model.winding_notes[w.name])
        litz = any(layer.winding == w.name and layer.conductor.shape == "litz" for layer in case.layers)
        for method in METHODS:
            notes = list(base)
            if litz:
                notes.append("litz wire: not covered by this 1-D estimate")
                out[method][w.name] = WindingEstimate([None] * len(freqs), notes).as_dict()
                continue
            if not own:
                notes.append("no layered turns" + (": only explicit conductors"
                                                   if any(c.winding == w.name for c in case.conductors) else ""))
                out[method][w.name] = WindingEstimate([None] * len(freqs), notes).as_dict()
                continue
            if method == "dowell" and any(layer.shape == "round" for layer in own):
                notes.append("porosity factor: round wire as equivalent square conductors "
                             "(delta_eff = delta/sqrt(eta))")
            if method == "ferreira":
                others = sorted({f"{layer.key} ({layer.shape})" for layer in own if layer.shape != "round"})
                if others:
                    notes.append("Ferreira's method is for round wire: Dowell's foil solution for "
                                 + ", ".join(others))
                if any(layer.shape == "round" for layer in own):
                    field_text = ("|H|^2 averaged across the layer" if ferreira_field == "mean-square"
                                  else "square of the mean layer field")
                    notes.append(f"skin and proximity losses orthogonal; proximity field: {field_text}")
            if w.current == 0.0:
                notes.append("zero current")
                out[method][w.name] = WindingEstimate([None] * len(freqs), notes).as_dict()
                continue
            rdc = sum(layer.rdc for layer in own)
            values: list[float | None] = []
            for f in freqs:
                if method == "dowell":
                    loss = sum(dowell_layer_factor(layer, f) * layer.rdc for layer in own)
                else:
                    loss = sum(ferreira_layer_factor(layer, f, w.current, ferreira_field) * layer.rdc
                               for layer in own)
                values.append(float(loss / rdc))
            out[method][w.name] = WindingEstimate(values, notes).as_dict()
    return out
