"""The validation checks of README's Validation table, as plain data, so that a
report can show the validation status of the methods a case uses.

Each row's text (check, reference, tolerance, measured) is README's row as it
stands, markup included (``*title*`` italics, backtick code); README and this
module are kept in step (tests/test_report.py compares them).

``applies_to`` lists the case features a check covers; a check applies when
any entry matches, an entry ``"a+b"`` needing all of its parts:

* ``"all"``: every case (resistivity, mesh, energy balance, loss matrices ...)
* ``"round"`` / ``"rect"``: round-wire / rectangular or foil conductors
* ``"open"``: the open boundary; ``"core"``: a core body of finite permeability
* ``"inductance"``: self or magnetizing inductance reported (open or core)
* ``"multi-winding"``: two or more windings (leakage inductance, interleaving)
* ``"axisymmetric"``: axisymmetric models
* ``"mmf"``: the MMF across the window is reported
* ``"dowell"`` / ``"ferreira"``: that hand estimate is reported
* ``"waveform"``: winding currents given as waveforms (harmonics)
* ``"parallel"``: windings with parallel conductors
* ``"thermal"``: a thermal solution (``[thermal]``)
* ``"capacitance"``: an electrostatic solution (``[dielectric]``)
"""

from __future__ import annotations

from dataclasses import dataclass

FEATURES = ("all", "round", "rect", "open", "core", "inductance", "multi-winding", "axisymmetric", "mmf",
            "dowell", "ferreira", "waveform", "parallel", "thermal", "capacitance")


@dataclass(frozen=True)
class ValidationCheck:
    check: str
    reference: str
    tolerance: str
    measured: str
    applies_to: tuple[str, ...] = ("all",)

    def applies(self, features: set[str]) -> bool:
        """True when the check covers the case's ``features`` (see FEATURES)."""
        return any(set(entry.split("+")) <= (features | {"all"}) for entry in self.applies_to)


VALIDATION: tuple[ValidationCheck, ...] = (
    ValidationCheck(
        'Isolated round wire, Rac/Rdc for radius/skin depth 0.1 to 20 (loss and impedance)',
        'exact Bessel-function internal impedance ka J0(ka)/(2 J1(ka)), Ramo, Whinnery & Van Duzer, *Fields and Waves in Communication Electronics*; scipy.special',
        '0.3 %',
        '0.025 %',
        applies_to=('round',)),
    ValidationCheck(
        'Full-height foils in an ideal-core window, m = 1..4 layers per winding, thickness/skin depth 0.3 to 5',
        'Dowell\'s formula, P. L. Dowell, "Effects of eddy currents in transformer windings", Proc. IEE, 1966 (exact for this 1-D field)',
        '0.3 %',
        '0.033 %',
        applies_to=('rect',)),
    ValidationCheck(
        'Round wire without net current in a uniform transverse AC field, radius/skin depth 0.5 to 10',
        'exact Bessel solution A = C J1(kr) sin(theta), C = 2 B0/(k J0(ka)) (Lammeraner & Stafl, *Eddy Currents*, 1966)',
        '1 %',
        "0.32 % (the window walls' reflection of the wire's own field; discretization: 0.04 %, below)",
        applies_to=('round',)),
    ValidationCheck(
        'Rdc = rho l / A at 20 and 100 degC, round, rectangular, foil, aluminium; FEM loss at 0 Hz',
        'IEC 60028 (copper), IEC 60889 (aluminium)',
        '0.05 %',
        '0.0005 %',
        applies_to=('all',)),
    ValidationCheck(
        '`racfield check` prints the Rdc that `racfield run` reports, every case in `cases/`; paralleled foils by hand (two foils in parallel per turn)',
        'IEC 60028 (rho l / A, 0.00393/K)',
        'printed precision',
        'equal; 1.5689 mOhm',
        applies_to=('all',)),
    ValidationCheck(
        'Meshed conductor areas against true areas',
        'geometry',
        '0.05 %',
        '0.0005 %',
        applies_to=('all',)),
    ValidationCheck(
        "Element sizes measured in the built mesh, region by region (round and foil conductor surfaces and interiors, window air, the bore and far arc of an open coil, gap and window corners, a core body's interior) at `[mesh] density` 1, 2, 4; `corner_refinement` 2 halves the gap corners and nothing else",
        'the size rules of Mesh sizes and the error estimate (common practice: the size field divided by the density)',
        'each ratio 2 within 20 %',
        'ratios 1.86 to 2.18; corners 2.14, 2.22 (conductor surfaces unchanged)', applies_to=('all',)),
    ValidationCheck(
        'Richardson extrapolation on synthetic sequences Q + C h^p (p = 2, 3, 4): the error and the order recovered; sign changes and growing differences flagged not asymptotic; an order above 4 capped',
        'L. F. Richardson, Phil. Trans. R. Soc. A, 1911; P. J. Roache, *Verification and Validation in Computational Science and Engineering*, 1998',
        '1e-9',
        'exact', applies_to=('all',)),
    ValidationCheck(
        'Error estimate (`--check-mesh`) against the true error of exact solutions: round wire Rac at radius/skin depth 3 and 10 (and at density 0.3), Dowell 2 + 2 foils Rac at Delta = 3, one-turn loop L at R/a = 160; observed order; extrapolated value within the estimate of the exact one',
        'Ramo, Whinnery & Van Duzer (Bessel); Dowell 1966; Rosa & Grover 1912; expected order 4 for energy-type quantities of quadratic elements (G. Strang, G. J. Fix, *An Analysis of the Finite Element Method*, 1973)',
        'same sign, within a factor 2; order 3 to 5.5',
        'estimate / true: +2.65e-4 / +2.54e-4, +2.23e-4 / +2.20e-4 (+5.20 % / +5.25 %), +3.90e-4 / +3.73e-4, -1.32e-4 / -1.31e-4; orders 4.45, 4.18, 4.65, 3.02', applies_to=('all',)),
    ValidationCheck(
        'Default mesh and error estimate against a reference at density 4 (every size a quarter): gapped-core choke at 500 kHz (Rac, L), open axisymmetric coil at 1 MHz (Rac, L), the proximity loss of a wire without current in a transverse field at radius/skin depth 1, 3, 10',
        'the same model 4 times finer everywhere (error 256 times smaller, O(h^4), Strang & Fix 1973); the transverse field set-up against Lammeraner & Stafl 1966',
        'default 0.05 %; estimate same sign, within a factor 2',
        'default / estimate: choke +8.6e-5 / +9.6e-5, -2.6e-5 / -2.7e-5; coil +2.79e-4 / +2.84e-4, -3.5e-5 / -3.7e-5; transverse +3.0e-5 / +3.0e-5, +4.22e-4 / +4.26e-4, +2.83e-4 / +2.88e-4',
        applies_to=('core', 'open+axisymmetric', 'round')),
    ValidationCheck(
        'Skin depth in copper at 100 kHz, 20 degC = 0.209 mm',
        'common practice',
        '0.5 %',
        '0.01 %',
        applies_to=('all',)),
    ValidationCheck(
        'Energy balance: sum of turn losses = Re(sum u I*)',
        "Poynting's theorem",
        '1e-6',
        '1e-13',
        applies_to=('all',)),
    ValidationCheck(
        'Reciprocity: conductor impedance matrix symmetric',
        'reciprocity theorem',
        '1e-9',
        '1e-15',
        applies_to=('all',)),
    ValidationCheck(
        'Open boundary: loss independent of the far radius',
        'asymptotic boundary condition',
        '0.1 %',
        '4e-5 %',
        applies_to=('open',)),
    ValidationCheck(
        'Round wire 2a from a magnetic wall (`"open-wall"`), Rac/Rdc at radius/skin depth 1, 3, 10; DC inductance',
        'the wire and its image, exact multipole solution (method of images, Binns, Lawrenson & Trowbridge, *The Analytical and Numerical Solution of Electric and Magnetic Fields*, 1992; addition theorem, DLMF 10.23.7, static limit; scipy.special)',
        '0.2 %',
        '0.0025 % (L: 0.0002 %)',
        applies_to=('open',)),
    ValidationCheck(
        'Hairpin (go and return 3a apart) 2a from a magnetic wall, Rac/Rdc at radius/skin depth 1, 3, 10',
        'four-wire multipole solution (two wires, two images)',
        '0.2 %',
        '0.0037 %',
        applies_to=('open',)),
    ValidationCheck(
        "Ampere's law: line integral of H around a path through the centre leg, gap, yokes and outer leg = enclosed ampere-turns; and around turns inside the window",
        "Ampere's law",
        '0.5 %',
        '0.0001 % (core path), 0.075 % (window path)',
        applies_to=('all',)),
    ValidationCheck(
        'Gapped-core inductance against the magnetic-circuit estimate mu0 N^2 A / (g + l_core/mu_r), mu_r = 2000, gap 1 %, 3 %, 10 % of the centre-leg width: never below it by more than 1 %, ratio growing with the gap',
        'magnetic-circuit (reluctance) model, common practice',
        '-1 %',
        'ratios 1.057, 1.080, 1.169',
        applies_to=('core',)),
    ValidationCheck(
        'Inductance from energy 2W/I^2 against flux linkage',
        'energy theorem',
        '0.5 %',
        '1.5e-12',
        applies_to=('inductance',)),
    ValidationCheck(
        'Leakage inductance of full-height foil windings at low frequency against mu0 N^2 l (a/3 + b/3 + c)/h (with insulation inside the builds: the exact 1-D field energy)',
        'handbook formula, common practice',
        '0.5 %',
        '1e-7',
        applies_to=('multi-winding',)),
    ValidationCheck(
        'Leakage inductance against frequency, thickness/skin depth 0.3 to 5: falls strictly, and matches the 1-D Dowell solution of the foil stack',
        'Dowell 1966',
        '1 %',
        '0.004 %',
        applies_to=('multi-winding',)),
    ValidationCheck(
        'Two half gaps against one gap of the summed length (L within a few %); centre and outer gaps add as series reluctances',
        "common practice; Hopkinson's law",
        '5 %; 0.1 %',
        '-2.8 %; 0.01 %',
        applies_to=('core',)),
    ValidationCheck(
        'Loss at any excitation from the loss matrices against a direct solve at those currents',
        'linearity',
        '1e-9',
        '< 1e-9',
        applies_to=('all',)),
    ValidationCheck(
        'Axisymmetric ring Rdc, rectangle r1..r2 x h and round wire, FEM loss at 0 Hz',
        'R = 2 pi rho / (h ln(r2/r1)) (exact at DC); rho / (R0 - sqrt(R0^2 - a^2))',
        '0.05 %',
        '0.002 %',
        applies_to=('axisymmetric',)),
    ValidationCheck(
        'Self-inductance of a single circular turn, R/a = 40, 80, 160',
        'Rosa & Grover, "Formulas and tables for the calculation of mutual and self-inductance", Bull. Bureau of Standards, 1912: mu0 R (ln(8R/a) - 7/4)',
        '0.5 %',
        '0.021 %',
        applies_to=('axisymmetric',)),
    ValidationCheck(
        'One circular turn in an open axisymmetric model whose window starts at the axis (inner_radius = 0), R = 40a, a/skin depth 40: inductance less the internal inductance',
        'Grover, *Inductance Calculations*, 1946: mu0 R (ln(8R/a) - 2) (surface-current limit); internal inductance from the Bessel solution (Ramo, Whinnery & Van Duzer)',
        '0.5 %',
        '-0.098 %',
        applies_to=('axisymmetric',)),
    ValidationCheck(
        'Air-core coil of 2 x 10 turns from the axis, inductance at 0 Hz',
        "Rosa & Grover 1912: self-inductance of each turn plus Maxwell's mutual inductance of coaxial circles",
        '0.5 %',
        '-0.068 %',
        applies_to=('axisymmetric',)),
    ValidationCheck(
        'Flux density on the axis of a loop, at and beside r = 0',
        'Biot-Savart law, mu0 I R^2 / (2 (R^2 + z^2)^(3/2)) (J. D. Jackson, *Classical Electrodynamics*, 3rd ed., 5.5)',
        '0.2 % at the centre, 1 % off it',
        '-0.001 %; 0.15 %',
        applies_to=('axisymmetric',)),
    ValidationCheck(
        'Full-height foils at inner radius / window width > 1000, m = 1..3',
        'Dowell 1966 (planar limit)',
        '0.3 %',
        '0.037 %',
        applies_to=('axisymmetric',)),
    ValidationCheck(
        'Planar (mean turn length) vs axisymmetric winding Rdc, thin winding far from the axis; per-turn difference growing toward the axis',
        'geometry',
        '0.5 %',
        '0.0005 % at r = 100 mm; innermost turn -1.2 %, -5.5 %, -17.7 %, -53 % at r = 100, 20, 5, 0.5 mm',
        applies_to=('axisymmetric',)),
    ValidationCheck(
        "Round centre leg (`[core] centre_leg`): every planar turn's Rdc against its ring, 2 pi r rho / A; the 0 Hz field solution",
        'IEC 60028; geometry',
        '0.05 %',
        '1e-12 (field solution within 0.05 %)',
        applies_to=('all',)),
    ValidationCheck(
        'Rectangular centre leg with rounded corners: winding Rdc against sum of rho (2(w + d) - (8 - 2 pi) r_c + 2 pi s) / A, from `run`, `check` and the 0 Hz field solution',
        'mean-turn-length formula, common practice; IEC 60028',
        '1e-12 (check: 5 digits)',
        '< 1e-12',
        applies_to=('all',)),
    ValidationCheck(
        'Pot-core pair with a centre leg: planar per-turn Rdc against the axisymmetric rings',
        'geometry (the rings)',
        '1 %',
        '+0.04 % (primary), +0.10 % (secondary)',
        applies_to=('all',)),
    ValidationCheck(
        'Whole turns: `[end_turns] fraction = 0` against the window section alone; a window that is its own end section, any fraction',
        "the combination rule's limits",
        '1e-12',
        '9e-15',
        applies_to=('all',)),
    ValidationCheck(
        "Whole turns: stored energy against the length-weighted sum of the two sections' energies",
        'additivity of the field energy over the turn length',
        '1e-9',
        '9e-15',
        applies_to=('all',)),
    ValidationCheck(
        'Axisymmetric pot core with a centre-post gap: inductance against the magnetic-circuit estimate (gap 0.1, 0.3, 1 mm)',
        'magnetic-circuit model, common practice',
        '-1 %',
        'ratios 1.084, 1.146, 1.312',
        applies_to=('axisymmetric+core',)),
    ValidationCheck(
        'MMF from the field at the layer boundaries (full-height foils, P-P-S-S, P-S-P-S, P-S-S-P, 1 kHz and 1 MHz) against the ampere-turn staircase',
        "Ampere's law",
        '1 % of the peak',
        '0.34 %',
        applies_to=('mmf',)),
    ValidationCheck(
        'MMF for round-wire layers (two layers of five 0.3 mm turns, 100 kHz)',
        'reported, not asserted',
        '–',
        '3.7 % of the peak',
        applies_to=('round+mmf',)),
    ValidationCheck(
        "Dowell's general layer solution against the classic F(Delta, m), m = 1..6, Delta 0.1..10",
        'Dowell 1966',
        '1e-10',
        '2e-15',
        applies_to=('dowell',)),
    ValidationCheck(
        'Dowell estimate against the field solution for full-height foils (comparison table)',
        'Dowell 1966',
        '0.3 %',
        '0.022 %',
        applies_to=('dowell',)),
    ValidationCheck(
        "Interleaving P-P-S-S to P-S-P-S: loss ratio from the field solution against Dowell's prediction, Delta = 1 and 2",
        'Dowell 1966',
        '1 %',
        '0.024 %',
        applies_to=('multi-winding+dowell',)),
    ValidationCheck(
        "Ferreira's proximity term against numerical integration of the transverse-field Bessel solution",
        'Ferreira 1994; scipy',
        '1e-6',
        '< 1e-6',
        applies_to=('ferreira',)),
    ValidationCheck(
        'Fourier series of a symmetric triangle: harmonic amplitudes 8/(pi^2 n^2) of the peak for odd n, none for even n',
        'E. Kreyszig, *Advanced Engineering Mathematics* (Fourier series table)',
        '1e-12',
        '6.4e-13',
        applies_to=('waveform',)),
    ValidationCheck(
        'RMS from the harmonics against the RMS from the samples (triangle, trapezoid, sampled waveform with a step)',
        "Parseval's theorem",
        '0.1 %',
        '8.1e-6',
        applies_to=('waveform',)),
    ValidationCheck(
        'A pure sine waveform against the same case given as a current and phase',
        'phasor convention',
        '1e-9',
        '2e-16',
        applies_to=('waveform',)),
    ValidationCheck(
        'DC part of a waveform: loss = I_dc^2 Rdc',
        'IEC 60028 (rho l N / A)',
        '1e-9',
        '2e-16',
        applies_to=('waveform',)),
    ValidationCheck(
        'Untransposed parallel conductors: strand currents sum to the winding current',
        "Kirchhoff's current law",
        '1e-9',
        '< 1e-12',
        applies_to=('parallel',)),
    ValidationCheck(
        'Parallel conductors at DC share in inverse proportion to their resistances',
        "Ohm's law",
        '1e-4',
        '< 1e-6',
        applies_to=('parallel',)),
    ValidationCheck(
        'Untransposed against transposed paralleled foils: loss ratio at 500 kHz (greater at every frequency)',
        'common practice',
        '> 1.5',
        '1.92',
        applies_to=('parallel',)),
    ValidationCheck(
        'Litz wire, 6 turns of 7, 19 and 37 strands, strand diameter/skin depth 0.96: homogenized bundle against the meshed strands, total loss (loss above DC)',
        'Lord Rayleigh, "On the influence of obstacles arranged in rectangular order upon the properties of a medium", Phil. Mag., 1892 (mixing), with the strand\'s Bessel solution (Lammeraner & Stafl 1966)',
        '10 %',
        '+0.37 %, +0.37 %, +0.36 % (+3.4 %, +1.5 %, +0.9 %)',
        applies_to=('round',)),
    ValidationCheck(
        'Litz wire at DC, meshed strands and homogenized bundle: loss against the n-strand Rdc',
        'IEC 60028 (rho l / (n pi d^2/4))',
        '0.1 %',
        '0.0005 %',
        applies_to=('round',)),
    ValidationCheck(
        'Thermal: slab with uniform generation between isothermal walls (a foil across the window), T_max - T_wall = q L^2 / (8 k); a foil between fill layers',
        'H. S. Carslaw & J. C. Jaeger, *Conduction of Heat in Solids*, 1959; F. P. Incropera & D. P. DeWitt, *Fundamentals of Heat and Mass Transfer* (plane wall with generation)',
        '0.1 %',
        '3e-13',
        applies_to=('thermal',)),
    ValidationCheck(
        'Thermal: long cylinder with uniform generation, centre rise q a^2 / (4 k), mean rise q a^2 / (8 k), planar disk and axisymmetric',
        'Carslaw & Jaeger 1959; Incropera & DeWitt',
        '0.1 %',
        '2.4e-7 (planar), 5e-13 (axisymmetric)',
        applies_to=('thermal',)),
    ValidationCheck(
        'Thermal: composite wall of copper, enamel and air, series resistances sum(t_i / k_i); a slab with convection on both faces',
        'Incropera & DeWitt (composite wall; plane wall with convection)',
        '0.1 %',
        '1.5e-14; 1.1e-12',
        applies_to=('thermal',)),
    ValidationCheck(
        "Thermal: heat out through the boundary = loss in (solver, and every thermal case); the field's loss density integrates to the conductor losses",
        "first law of thermodynamics; Poynting's theorem",
        '1e-8; 1e-10',
        '3e-12 (cases: 4e-10); < 1e-10',
        applies_to=('thermal',)),
    ValidationCheck(
        'Thermal: insulated wire (enamel shell, 1.2 mm over 1 mm, in potting) with a convective far circle, mean-temperature rise against the series of shell, fill, surface and wire resistances',
        'cylindrical shell ln(r2/r1) / (2 pi k), Incropera & DeWitt ch. 3',
        '1e-4',
        '-3.4e-5',
        applies_to=('thermal',)),
    ValidationCheck(
        "Coupled rho(T): one wire at DC, T = T_amb + I^2 R(T) R_th with R linear in T, closed form; with the analytic R_th and with the model's own",
        "Ohm's law, IEC 60028 (rho(T)); Incropera & DeWitt (R_th)",
        '1e-4; 1e-6',
        '-3.7e-5; 6e-12 (4 field solutions)',
        applies_to=('thermal',)),
    ValidationCheck(
        'Coupled rho(T) past the runaway limit (I^2 R0 alpha R_th = 1.2): reported as no steady state, the run finishing',
        "the fixed point's existence condition (closed form above)",
        'reported',
        'no steady state below 400 degC',
        applies_to=('thermal',)),
    ValidationCheck(
        '`coupled = false`: losses at the flat temperature against the same case without `[thermal]`; the sweep unchanged',
        'the field problem does not depend on the thermal one',
        '1e-12',
        '< 1e-12; identical',
        applies_to=('thermal',)),
    ValidationCheck(
        'Waveform heat: the summed loss densities of DC and the harmonics against the harmonic losses',
        'orthogonality of sines over a period (Parseval)',
        '1e-9',
        '6e-15',
        applies_to=('thermal',)),
    ValidationCheck(
        'Maximum principle: every conductor, map value and the hot spot at or above the boundary temperature',
        'Carslaw & Jaeger 1959 (with q >= 0 the minimum lies on the boundary)',
        '–',
        'holds',
        applies_to=('thermal',)),
    ValidationCheck(
        'Capacitance: two-wire line in open air, D/2a = 1.5 and 4',
        'pi eps / arccosh(D/2a), S. Ramo, J. R. Whinnery, T. Van Duzer, *Fields and Waves in Communication Electronics*',
        '0.2 %',
        '+1.1e-4, +2.6e-4',
        applies_to=('capacitance',)),
    ValidationCheck(
        'Capacitance: wire beside a grounded plane (`"open-wall"`), h/a = 2 and 4',
        '2 pi eps / arccosh(h/a) (Ramo, Whinnery & Van Duzer)',
        '0.2 %',
        '+5.3e-5, -1.3e-6',
        applies_to=('capacitance',)),
    ValidationCheck(
        'Capacitance: coaxial rings (axisymmetric), per unit height from two heights (the end fields cancel)',
        '2 pi eps l / ln(b/a) (Ramo, Whinnery & Van Duzer)',
        '0.1 %',
        '-2.2e-5, -9.2e-6 (one height: +5.0 %, +2.5 %, +1.7 % fringing at 5, 10, 15 mm)',
        applies_to=('capacitance',)),
    ValidationCheck(
        'Capacitance: enamelled wire (1 mm, 1.3 mm over the enamel, eps_r 3.5) in a concentric far circle',
        'series capacitance of concentric shells, 2 pi eps0 / (ln(b/a)/eps_r + ln(R/b))',
        '0.2 %',
        '-2.3e-5',
        applies_to=('capacitance',)),
    ValidationCheck(
        'Capacitance: two foils face to face, C / (eps A / d) at d = 0.4, 0.1, 0.025 mm, tending to 1',
        'parallel-plate capacitor (Ramo, Whinnery & Van Duzer)',
        '2 % at the smallest gap',
        '1.035, 1.021, 1.009',
        applies_to=('capacitance',)),
    ValidationCheck(
        'Energy method: n = 2, 3, 4 layers in series (zig-zag), linear voltage along each, against (4/3) C_ll (n - 1)/n^2',
        'A. Massarini, M. K. Kazimierczuk, "Self-capacitance of inductors", IEEE Trans. Power Electronics, 1997',
        '1 %',
        '-8.2e-4, -4.8e-4, -2.7e-4',
        applies_to=('capacitance',)),
    ValidationCheck(
        'Maxwell matrix: symmetric, negative off-diagonals, zero row sums (grounded and floating core); the worst-case potential between the electrode potentials',
        'reciprocity; charge conservation; maximum principle (L. C. Evans, *Partial Differential Equations*, 2010)',
        '1e-12',
        'holds',
        applies_to=('capacitance',)),
    ValidationCheck(
        'Every case in `cases/` runs; Rdc against rho l N/A; low-frequency Rac/Rdc against the series of the Bessel and Dowell solutions; round-wire turns never below the isolated-wire skin loss',
        'IEC 60028; Dowell 1966; J. A. Ferreira, "Improved analytical modeling of conductive losses in magnetic components", IEEE Trans. Power Electronics, 1994 (orthogonality of skin and proximity loss)',
        '0.05 %',
        'passes',
        applies_to=('all',)),
    ValidationCheck(
        'Standard wire sizes: AWG 4/0 to 56 bare diameters; IEC 60317-0-1 maximum overall diameters of grades 1 to 3 (86 values of 29 sizes) against transcriptions of its Table 1 other than the ones the table was typed from; nominal sizes against the R20/R40 series',
        'ASTM B258 (d = 0.0050 in x 92^((36 - n)/39)) and published AWG tables (AWG 10 and 24 from memory); IEC 60317-0-1 Table 1 as reproduced by sh-wire.de, lpwindingwires.com and IS 13730-0-1; ISO 3 preferred numbers (from memory)',
        '1e-9; exact',
        '0 (AWG tables: within their printed rounding); 86 of 86 equal',
        applies_to=('round',)),
)


def case_features(document: dict) -> set[str]:
    """The features (of FEATURES) that a results.json document shows."""
    features = {"all"}
    shapes = {c.get("shape") for c in document.get("conductors", [])}
    if "round" in shapes:
        features.add("round")
    if shapes - {"round", None}:
        features.add("rect")
    inductance = document.get("inductance") or {}
    if "magnetizing_l_h" in inductance:
        features.add("core")
    elif "impedance" in document:
        features.add("open")
    if inductance:
        features.add("inductance")
    if len(document.get("windings", {})) >= 2:
        features.add("multi-winding")
    if document.get("symmetry") == "axisymmetric":
        features.add("axisymmetric")
    if document.get("mmf"):
        features.add("mmf")
    for method in ("dowell", "ferreira"):
        if (document.get("estimates") or {}).get(method):
            features.add(method)
    if document.get("harmonics"):
        features.add("waveform")
    if document.get("parallel"):
        features.add("parallel")
    if document.get("thermal"):
        features.add("thermal")
    if document.get("capacitance"):
        features.add("capacitance")
    return features
