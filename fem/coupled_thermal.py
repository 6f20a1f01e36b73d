"""The loss at the temperature it causes: the field solution at the operating
point and a steady conduction solution on the same mesh, coupled through
each turn's resistivity rho(T) = rho20 (1 + alpha (T - 20 degC)).

The heat is the time-averaged loss density of the field solution at the
operating point: the case currents at ``[thermal] frequency``, or the sum
over the waveforms' DC and harmonics (sines of different frequencies deliver
no average power together, so their densities add).  Each conductor's
resistivity follows its mean temperature.  The fixed point T = F(T) of
"temperatures -> losses -> temperatures" is found by Anderson acceleration
(D. G. Anderson, "Iterative procedures for nonlinear integral equations",
J. ACM, 1965) with the plain step as safeguard, until the total loss changes
by less than the tolerance.  Past the runaway limit (the loss grows faster
with temperature than the boundary removes it) the plain steps climb without
bound: the solution reports no steady state below ``max_temperature``.

The thermal model (see README, Thermal): conductors at their metal's
conductivity, the fill between them, the insulation of each conductor as a
thin resistive layer on its bare surface, the layers' ``insulation_after``
as a strip of the layer insulation's conductivity, a core body at its own.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from racfield.geometry.case import Case
from racfield.geometry.case.units import format_frequency
from racfield.geometry.layout import insulation_strips
from racfield.geometry.materials import material
from racfield.geometry.mesher import AIR, CORE
from racfield.geometry.turn_length import turn_lengths

from .litz import rayleigh_permeability
from .sweep import _Sweep, operating_solution, problem_for
from .thermal import Convection, FixedTemperature, TemperatureField, ThermalSystem, thermal_basis

#: thermal conductivity of the conductor metals, W/(m K) (common practice; pure annealed metals near 20 degC)
METAL_CONDUCTIVITY = {"copper": 390.0, "aluminium": 237.0}
ANDERSON_MEMORY = 5


@dataclass
class ThermalResult:
    """The coupled (or, with ``coupled = false``, one-way) thermal solution.

    Temperatures in degC, losses in W and resistances in ohm (whole turns,
    as the sweep's windings); per-conductor arrays in the sweep's conductor
    order.  ``steady_state`` False: no steady state was found (``message``
    says why; temperatures are then those of the last iterate).  ``flat_*``:
    the same operating point with every turn at the case temperature.
    ``loss_history_w``: the total loss of every field solution in turn.
    ``map_points`` (2, 3 ne) m, ``map_values`` (3 ne,) degC: the temperature
    at every element's corners (both sides of an insulation layer), for maps."""

    coupled: bool
    converged: bool
    steady_state: bool
    message: str
    iterations: int
    operating_point: str
    conductor_temperature_c: np.ndarray
    resistivity: np.ndarray
    hot_spot_c: float
    hot_spot_at: tuple[float, float]
    hot_spot_conductor: int | None
    winding_temperature_c: dict[str, float]
    winding_max_temperature_c: dict[str, float]
    loss_w: dict[str, float]
    rac_ohm: dict[str, float | None]
    flat_loss_w: dict[str, float]
    flat_rac_ohm: dict[str, float | None]
    flat_temperature_c: float
    heat_balance_error: float
    loss_history_w: list[float]
    map_points: np.ndarray = field(repr=False)
    map_values: np.ndarray = field(repr=False)

    @property
    def total_loss_w(self) -> float:
        return float(sum(self.loss_w.values()))

    @property
    def flat_total_loss_w(self) -> float:
        return float(sum(self.flat_loss_w.values()))


@dataclass
class _Excitation:
    """One frequency (Hz) of the operating point and the winding currents there (A RMS phasors)."""

    frequency: float
    currents: np.ndarray


def operating_point(case: Case) -> tuple[list[_Excitation], str, np.ndarray]:
    """The excitations of the operating point, words for it, and each
    winding's RMS current (A, all harmonics and DC)."""
    settings = case.waveform
    if settings is None:
        currents = np.array([w.phasor for w in case.windings], dtype=complex)
        f = case.thermal.frequency
        return [_Excitation(f, currents)], f"the case currents at {format_frequency(f)}", np.abs(currents)
    spectra = [w.spectrum for w in case.windings]
    out = []
    if settings.dc:
        out.append(_Excitation(0.0, np.array([s.dc for s in spectra], dtype=complex)))
    for n in settings.harmonics:
        out.append(_Excitation(settings.frequency(n), np.array([s.phasor(n) for s in spectra], dtype=complex)))
    words = (f"the current waveforms: {'DC and ' if settings.dc else ''}{len(settings.harmonics)} harmonics "
             f"of {format_frequency(settings.fundamental)}")
    return out, words, np.array([s.rms for s in spectra])


def _conductivity(sweep: _Sweep, basis) -> np.ndarray:
    """k (W/(m K)) at the quadrature points (ne, nqp): metal, litz bundle
    (Rayleigh mixing of the strands in their insulation), fill, core and the
    layers' insulation strips."""
    case, thermal = sweep.case, sweep.case.thermal
    region = np.asarray(sweep.window_mesh.region)
    per_conductor = []
    for c in sweep.conductors:
        metal = METAL_CONDUCTIVITY[material(case.winding(c.winding).material).name]
        if c.strands:
            packing = c.copper_area / c.area
            # the same 2-D mixing law as the bundle's permeability (Rayleigh 1892, Maxwell Garnett form)
            metal = thermal.insulation_conductivity * rayleigh_permeability(
                metal / thermal.insulation_conductivity, packing).real
        per_conductor.append(metal)
    per_conductor = np.array(per_conductor) if per_conductor else np.zeros(1)
    k = np.where(region == CORE, thermal.core_conductivity, thermal.fill_conductivity)
    inside = region >= 0
    k[inside] = per_conductor[region[inside]]
    k = np.repeat(k[:, None], basis.X.shape[1], axis=1)
    x = np.asarray(basis.global_coordinates())
    for x0, x1, y0, y1 in insulation_strips(case):
        strip = (x[0] >= x0) & (x[0] <= x1) & (x[1] >= y0) & (x[1] <= y1) & (region == AIR)[:, None]
        k[strip] = thermal.layer_insulation_conductivity
    return k


def surface_resistance(sweep: _Sweep) -> np.ndarray:
    """(Nc, 2) m^2 K/W: each conductor's insulation as a thin layer on its bare
    surface, on the faces normal to x and to y.  The mesh's fill reaches the
    bare surface, so the layer holds the difference (1/k_ins - 1/k_fill): round
    a ln(1 + t/a), flat t; exact for a concentric layer in a fill that conducts
    better, zero (the insulation taken as fill) where the fill conducts worse."""
    thermal = sweep.case.thermal
    excess = max(1.0 / thermal.insulation_conductivity - 1.0 / thermal.fill_conductivity, 0.0)
    out = np.zeros((len(sweep.conductors), 2))
    for c in sweep.conductors:
        tx, ty = c.insulation
        if c.shape == "round":
            a = c.radius
            out[c.index] = a * math.log1p(tx / a) * excess
        else:
            out[c.index] = (tx * excess, ty * excess)
    return out


def _boundaries(sweep: _Sweep) -> tuple[list[FixedTemperature], list[Convection]]:
    """The case's thermal boundary: core walls, core body or magnetic wall at
    core_temperature; h to ambient on the far circle or arc."""
    thermal, mesh = sweep.case.thermal, sweep.window_mesh
    fixed, convective = [], []
    edge = mesh.symmetry_x if mesh.symmetry_x is not None else mesh.wall_x
    scale = mesh.far_radius or 1.0

    def far(midpoints: np.ndarray) -> np.ndarray:
        return np.ones(midpoints.shape[1], bool) if edge is None else np.abs(midpoints[0] - edge) > 1e-9 * scale

    if thermal.core_temperature is not None:
        if mesh.far_radius is None:
            fixed.append(FixedTemperature(thermal.core_temperature))
        elif np.any(mesh.region == CORE):
            fixed.append(FixedTemperature(thermal.core_temperature, region=CORE))
        else:   # open-wall: the magnetic wall is the centre leg's face
            fixed.append(FixedTemperature(thermal.core_temperature,
                                          lambda m: np.abs(m[0] - mesh.wall_x) <= 1e-9 * scale))
    if thermal.h is not None:
        convective.append(Convection(thermal.h, thermal.ambient, far))
    return fixed, convective


def _resistivity(sweep: _Sweep, temperature: np.ndarray) -> np.ndarray:
    """rho (ohm*m) of every conductor at its temperature (degC)."""
    metals = [material(sweep.case.winding(c.winding).material) for c in sweep.conductors]
    return np.array([m.resistivity(t) for m, t in zip(metals, temperature)])


def _heat(sweep: _Sweep, problem, excitations: list[_Excitation]) -> tuple[np.ndarray, np.ndarray]:
    """Loss density (ne, nqp) W/m^3 summed over the excitations, and each
    conductor's loss per metre (W/m; per ring in W)."""
    density = np.zeros((problem.basis.nelems, problem.basis.X.shape[1]))
    loss = np.zeros(len(sweep.conductors))
    region = problem.region
    for e in excitations:
        solution = operating_solution(sweep, e.frequency, e.currents, problem)
        part = problem.loss_density(e.frequency, solution.voltage_per_m, solution.potential)
        part_loss = solution.loss_per_m
        if e.frequency == 0.0:
            # at DC the loss is I^2 Rdc from the true conductor geometry, as the
            # sweep's Rdc and the waveforms' DC part: scale out the mesh's area error
            scale = sweep.rdc * (_resistivity_now(problem) / sweep.rho) * problem.conductance
            scale[problem.stranded] = 1.0
            part = part * np.where(region >= 0, scale[np.maximum(region, 0)], 1.0)[:, None]
            part_loss = part_loss * scale
        density += part
        loss += part_loss
        for k in np.nonzero(problem.stranded)[0]:   # a homogenized bundle: its loss spread evenly
            density[region == k] += solution.loss_per_m[k] / problem.areas[k]
    return density, loss


def _resistivity_now(problem) -> np.ndarray:
    """rho (ohm*m) of every conductor of an assembled ``problem``."""
    return 1.0 / problem.sigma_k


def _anderson(iterates: list[np.ndarray], images: list[np.ndarray]) -> np.ndarray:
    """The next iterate of x = F(x) from the last iterates x and their images F(x)."""
    m = min(len(iterates), ANDERSON_MEMORY + 1)
    if m < 2:
        return images[-1]
    residual = np.array([g - x for x, g in zip(iterates[-m:], images[-m:])]).T     # (Nc, m)
    g = np.array(images[-m:]).T
    d_res, d_g = np.diff(residual, axis=1), np.diff(g, axis=1)
    gamma, *_ = np.linalg.lstsq(d_res, residual[:, -1], rcond=None)
    return images[-1] - d_g @ gamma


def _next(iterates, images, floor: float, ceiling: float, valid: Callable[[np.ndarray], bool]) -> np.ndarray:
    """Anderson's step when it stays between the boundary temperature and the
    ceiling with positive resistivities, else the plain step."""
    candidate = _anderson(iterates, images)
    if (np.all(np.isfinite(candidate)) and candidate.min() >= floor - 1e-9 and candidate.max() <= ceiling
            and valid(candidate)):
        return candidate
    return images[-1]


def solve_case_thermal(sweep: _Sweep, progress: Callable[[int, float], None] | None = None) -> ThermalResult:
    """The thermal solution of the swept case ``sweep`` (its ``[thermal]``),
    reusing its mesh, fill-reducing ordering and, at the case temperature,
    its assembled problem.  ``progress(iteration, total_loss_w)`` after each
    field solution."""
    case, thermal = sweep.case, sweep.case.thermal
    excitations, words, rms = operating_point(case)
    basis = thermal_basis(sweep.window_mesh)
    k = _conductivity(sweep, basis)
    fixed, convective = _boundaries(sweep)
    resistance = surface_resistance(sweep)
    lengths = turn_lengths(case, sweep.conductors).metres
    floor = min(t for t in (thermal.core_temperature, thermal.ambient) if t is not None)
    ceiling = thermal.max_temperature

    system = ThermalSystem(sweep.window_mesh, k, fixed=fixed, convective=convective,
                           radius_offset=case.axis_offset, surface_resistance=resistance, basis=basis)
    temperatures = system.solve   # the conduction matrix does not change: one LU serves every iteration

    flat = np.full(len(sweep.conductors), case.model.temperature_c)
    iterates, images, history, losses = [], [], [], []
    tau, message, converged = flat, "", False
    for iteration in range(1, (thermal.max_iterations if thermal.coupled else 1) + 1):
        rho = _resistivity(sweep, tau)
        problem = sweep.problem if iteration == 1 else problem_for(case, sweep.window_mesh, rho, sweep.conductors)
        if problem is not sweep.problem:
            problem.ordering = sweep.problem.ordering   # the same mesh: the same fill-reducing order
        density, loss = _heat(sweep, problem, excitations)
        field_t = temperatures(density)
        history.append(float(loss @ lengths))
        losses.append(loss)
        if progress:
            progress(iteration, history[-1])
        if not thermal.coupled:
            converged = True
            break
        if field_t.hot_spot > ceiling and len(history) > 1 and history[-1] >= history[-2]:
            message = (f"no steady state below {ceiling:g} degC: the loss grows faster with temperature than "
                       f"the boundary removes it (the hot spot passed {ceiling:g} degC at iteration {iteration})")
            break
        if len(history) > 1 and abs(history[-1] - history[-2]) <= thermal.tolerance * abs(history[-1]):
            converged = True
            break
        iterates.append(tau)
        images.append(field_t.conductor_mean)
        tau = _next(iterates, images, floor, ceiling, lambda t: bool(np.all(_resistivity(sweep, t) > 0)))
    else:
        message = (f"no steady state within {thermal.max_iterations} iterations: the total loss still changed "
                   f"by {abs(history[-1] - history[-2]) / abs(history[-1]):.2g} (hot spot "
                   f"{field_t.hot_spot:.4g} degC); raise thermal.max_iterations, or the winding is near runaway")
    return _result(sweep, field_t, rho, losses, history, lengths, rms, words, converged, message, len(history))


def _per_winding(sweep: _Sweep, per_conductor: np.ndarray, rms: np.ndarray):
    """Winding loss (W) and Rac (ohm, None without current) from per-metre conductor losses times lengths."""
    loss, rac = {}, {}
    for n, w in enumerate(sweep.case.windings):
        members = [c.index for c in sweep.conductors if c.winding == w.name]
        loss[w.name] = float(per_conductor[members].sum())
        rac[w.name] = loss[w.name] / rms[n] ** 2 if rms[n] > 0 else None
    return loss, rac


def _result(sweep: _Sweep, field_t: TemperatureField, rho: np.ndarray, losses: list[np.ndarray],
            history: list[float], lengths: np.ndarray, rms: np.ndarray, words: str, converged: bool,
            message: str, iterations: int) -> ThermalResult:
    case = sweep.case
    mean = field_t.conductor_mean
    volume = np.array([c.area for c in sweep.conductors]) * lengths
    winding_mean, winding_max = {}, {}
    for w in case.windings:
        members = [c.index for c in sweep.conductors if c.winding == w.name]
        winding_mean[w.name] = float(mean[members] @ volume[members] / volume[members].sum())
        winding_max[w.name] = float(mean[members].max())
    loss, rac = _per_winding(sweep, losses[-1] * lengths, rms)
    flat_loss, flat_rac = _per_winding(sweep, losses[0] * lengths, rms)
    x, y = field_t.hot_spot_at
    hot = next((c.index for c in sweep.conductors if _inside(c, x, y)), None)
    ext = field_t.element_dofs[:3]
    return ThermalResult(
        coupled=case.thermal.coupled, converged=converged, steady_state=not message, message=message,
        iterations=iterations, operating_point=words, conductor_temperature_c=mean, resistivity=rho,
        hot_spot_c=field_t.hot_spot, hot_spot_at=field_t.hot_spot_at, hot_spot_conductor=hot,
        winding_temperature_c=winding_mean, winding_max_temperature_c=winding_max, loss_w=loss, rac_ohm=rac,
        flat_loss_w=flat_loss, flat_rac_ohm=flat_rac, flat_temperature_c=case.model.temperature_c,
        heat_balance_error=abs(field_t.heat_out / field_t.heat_generated - 1.0) if field_t.heat_generated else 0.0,
        loss_history_w=history, map_points=field_t.nodes[:, ext.T.ravel()],
        map_values=field_t.temperature[ext.T.ravel()])


def _inside(c, x: float, y: float) -> bool:
    """Whether (x, y) m lies in conductor ``c``'s bare section (on its surface counts)."""
    if c.shape == "round":
        return math.hypot(x - c.x, y - c.y) <= c.radius * (1 + 1e-9)
    return abs(x - c.x) <= c.width / 2 * (1 + 1e-9) and abs(y - c.y) <= c.height / 2 * (1 + 1e-9)
