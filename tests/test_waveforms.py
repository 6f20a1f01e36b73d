"""Non-sinusoidal winding currents: the waveforms' harmonics and their losses.

(a) Fourier series of named shapes against the standard tables, the time-shift
    theorem and Parseval's theorem (RMS from the harmonics = RMS from samples).
(b) A sine waveform gives exactly the loss of the same case with current/phase.
(c) The DC part loses exactly I_dc^2 Rdc, Rdc = rho l N / A (IEC 60028).
(d) Two phase-shifted waveforms in a proximity case: the loss depends on the
    relative phase, and the cross term obeys half-wave symmetry and superposition.
(e) Bad input gives one-line errors naming the file, the key and the fix.
(f) The demo case cases/flyback_waveforms.toml runs through the command line.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import numpy as np
import pytest

from racfield.fem.sweep import run_sweep
from racfield.geometry.case import parse_case
from racfield.geometry.load import load_case
from racfield.geometry.turn_length import turn_lengths
from racfield.geometry.case.errors import CaseError
from racfield.geometry.case.waveform import Waveform, sample, spectrum
from racfield.cli import main
from racfield.postprocess.impedance import winding_loss_matrices
from racfield.postprocess.report import build_report

CASES = Path(__file__).resolve().parents[1] / "cases"
RHO20_CU, ALPHA_CU = 1.7241e-8, 0.00393   # IEC 60028 annealed copper, ohm*m at 20 degC and 1/K
T = 10e-6                                 # s, the period of the waveforms below (100 kHz)

#: measured errors, for the README validation table (printed by the tests)
MEASURED: dict[str, float] = {}


def rho_copper(temperature_c: float) -> float:
    # IEC 60028: 1.7241e-8 ohm*m at 20 degC, 0.00393 /K
    return RHO20_CU * (1.0 + ALPHA_CU * (temperature_c - 20.0))


def _waveform_case(windings: list[dict], boundary: str = "open", **extra) -> dict:
    """A small two-layer planar case, 30 mm per turn, 20 degC: winding "p", four
    0.4 mm round turns; winding "s", two 0.1 mm x 2.5 mm foils beside them."""
    names = [w["name"] for w in windings]
    layers = [{"winding": names[0], "conductor": {"shape": "round", "diameter": "0.4 mm"}, "turns": 4,
               "insulation_after": "0.1 mm"}]
    if len(names) > 1:
        layers.append({"winding": names[1], "conductor": {"shape": "foil", "thickness": "0.1 mm",
                                                           "height": "2.5 mm"}, "repeat": 2})
    doc = {"model": {"length": "30 mm"}, "window": {"width": "2.0 mm", "height": "3.0 mm", "boundary": boundary},
           "winding": windings, "layer": layers}
    doc.update(extra)
    return doc


# ---------------------------------------------------------------------------
# (a) Fourier series


def test_symmetric_triangle_against_the_fourier_series_table():
    # a triangle of peak A (peak-to-peak 2A) with its minimum at t = 0 is
    # -(8A/pi^2) sum over odd n of cos(n w0 t)/n^2: E. Kreyszig, Advanced
    # Engineering Mathematics, ch. 11, the Fourier series of |x| on (-pi, pi),
    # pi/2 - (4/pi)(cos x + cos 3x/3^2 + cos 5x/5^2 + ...), scaled
    peak = 1.5
    s = spectrum(Waveform("triangle", ((0.0, -peak), (T / 2, peak))), T, 50)
    n = np.arange(1, 51)
    amplitude = math.sqrt(2.0) * np.abs(np.array(s.harmonics))       # peak of each harmonic
    odd = n % 2 == 1
    reference = 8.0 * peak / (math.pi ** 2 * n[odd] ** 2)
    error = np.max(np.abs(amplitude[odd] / reference - 1.0))
    MEASURED["triangle_series"] = float(error)
    assert error < 1e-12
    assert np.max(amplitude[~odd]) < 1e-14 * peak                      # no even harmonics
    # the minus sign: every odd harmonic at 180 degrees (exp(+j w t) phasors)
    assert np.allclose(np.abs(np.angle(np.array(s.harmonics)[odd])), math.pi, atol=1e-12)
    assert s.dc == pytest.approx(0.0, abs=1e-15)
    # RMS of a triangle wave = peak / sqrt(3) (common practice)
    assert s.rms == pytest.approx(peak / math.sqrt(3.0), rel=1e-14)


def test_delay_is_the_fourier_time_shift():
    # i(t - tau) has harmonics I_n exp(-j n w0 tau) (time-shift theorem of the
    # Fourier series, any table of Fourier transform pairs)
    points = ((0.0, 0.0), (3e-6, 2.0), (3.4e-6, 2.0), (3.5e-6, 0.0))
    tau = 2.7e-6
    base = np.array(spectrum(Waveform("samples", points), T, 40).harmonics)
    shifted = np.array(spectrum(Waveform("samples", tuple((t + tau, i) for t, i in points)), T, 40).harmonics)
    n = np.arange(1, 41)
    assert shifted == pytest.approx(base * np.exp(-2j * math.pi * n * tau / T), abs=1e-14)


def test_sampled_sine_gives_its_rms_phasor():
    # i(t) = sqrt(2) I cos(w0 t + phi) has I_1 = I exp(j phi): the README's
    # phasor convention; 4096 samples, linear between them
    rms, phase = 2.0, math.radians(30.0)
    t = np.arange(4096) * T / 4096
    i = math.sqrt(2.0) * rms * np.cos(2 * math.pi * t / T + phase)
    s = spectrum(Waveform("samples", tuple(zip(t, i))), T, 5)
    # linear interpolation scales harmonic 1 by sinc^2(pi/4096) ~ 1 - 2e-7
    assert s.harmonics[0] == pytest.approx(rms * np.exp(1j * phase), rel=1e-6)
    assert max(abs(h) for h in s.harmonics[1:]) < 1e-12


PARSEVAL = {
    "triangle": Waveform("triangle", ((1e-6, 2.0), (1e-6 + 0.3 * T, 5.0))),
    "trapezoid": Waveform("trapezoid", ((-0.1e-6, 0.0), (0.1e-6, 1.25), (3.9e-6, 1.875), (4.1e-6, 0.0))),
    "sampled": Waveform("samples", ((0.0, -1.0), (1e-6, 3.0), (1e-6, 2.0), (4.5e-6, 2.5), (7e-6, -0.5),
                                    (9.2e-6, -1.0))),
}


@pytest.mark.parametrize("name", sorted(PARSEVAL))
def test_parseval_rms_from_harmonics_equals_rms_from_samples(name):
    # Parseval's theorem: mean of i^2 = I_dc^2 + sum |I_n|^2 (RMS phasors)
    waveform = PARSEVAL[name]
    s = spectrum(waveform, T, 999)
    from_harmonics = math.sqrt(s.dc ** 2 + float(np.sum(s.power())))
    t = (np.arange(2 ** 18) + 0.5) * T / 2 ** 18
    from_samples = math.sqrt(float(np.mean(sample(waveform, T, t) ** 2)))
    error = abs(from_harmonics / from_samples - 1.0)
    MEASURED[f"parseval_{name}"] = error
    assert error < 1e-3
    # and the exact RMS of the piecewise-linear form against the samples (the
    # midpoint rule is first-order accurate across a step: 1e-5)
    assert s.rms == pytest.approx(from_samples, rel=1e-5)
    assert s.dc == pytest.approx(float(np.mean(sample(waveform, T, t))), rel=1e-5, abs=1e-9)


def test_sampled_file_equals_inline_samples(tmp_path):
    rows = [(0.0, 0.0), (3e-6, 2.0), (3.2e-6, 2.0), (3.4e-6, 0.0)]
    (tmp_path / "primary.csv").write_text("time_s,current_a\n" + "".join(f"{t!r},{i!r}\n" for t, i in rows))
    waveforms = ({"file": "primary.csv"}, {"samples": [list(r) for r in rows]})
    cases = []
    for k, w in enumerate(waveforms):
        doc = _waveform_case([{"name": "p", "waveform": w}], waveform={"period": "10 us"})
        text = _toml(doc)
        path = tmp_path / f"case{k}.toml"
        path.write_text(text)
        cases.append(load_case(path))                 # the file is found beside the case
    a, b = (c.windings[0].spectrum for c in cases)
    assert a.harmonics == b.harmonics and a.dc == b.dc and a.rms == b.rms
    assert cases[0].windings[0].waveform.kind == "file"


# ---------------------------------------------------------------------------
# (b), (c), (d): losses


def _losses(doc: dict, sweep=None):
    case = parse_case(doc)
    sweep = sweep or run_sweep(case)
    report = build_report(case, sweep)
    return case, sweep, report, report.harmonics


def test_sine_waveform_equals_the_current_phase_case():
    # the same two windings, once with current/phase at 100 kHz and once with
    # sine waveforms of period 10 us: identical currents, identical losses
    plain = _waveform_case([{"name": "p", "current": "1 A"}, {"name": "s", "current": "2 A", "phase": 150}],
                           sweep={"frequencies": ["100 kHz"]})
    waves = _waveform_case([{"name": "p", "waveform": {"shape": "sine", "rms": "1 A"}},
                            {"name": "s", "waveform": {"shape": "sine", "rms": "2 A", "phase": 150}}],
                           waveform={"period": "10 us"})
    _, _, plain_report, _ = _losses(plain)
    case, _, _, result = _losses(waves)
    assert case.frequencies == (100e3,) and result.harmonics == [1]
    worst = 0.0
    for w, ref in zip(result.windings, plain_report.windings):
        assert w.dc_loss_w == 0.0
        worst = max(worst, abs(w.total_loss_w / ref.loss_w[0] - 1.0))
        # one frequency: the shortcut is exact
        assert w.naive_error_percent == pytest.approx(0.0, abs=1e-7)
    MEASURED["sine_vs_current_phase"] = worst
    assert worst < 1e-9


def test_dc_part_loses_idc_squared_rdc():
    # a 3 A DC current with a 1 A peak-to-peak triangle ripple on the 4-turn
    # winding: DC loss = I_dc^2 rho l N / A (IEC 60028, 20 degC, 30 mm, 0.4 mm wire)
    doc = _waveform_case([{"name": "p", "waveform": {"shape": "triangle", "dc": "3 A", "peak_to_peak": "1 A",
                                                      "duty": 0.3}}], waveform={"period": "10 us"})
    case, sweep, _, result = _losses(doc)
    rdc = rho_copper(20.0) * 0.030 * 4 / (math.pi * 0.2e-3 ** 2)
    w = result.windings[0]
    assert w.dc_a == pytest.approx(3.0, rel=1e-14)
    error = abs(w.dc_loss_w / (3.0 ** 2 * rdc) - 1.0)
    MEASURED["dc_loss"] = error
    assert error < 1e-9
    # the 0 Hz field solution agrees within its meshed conductor areas (README: 0.05 %)
    assert case.frequencies[0] == 0.0
    q0 = winding_loss_matrices(sweep, turn_lengths(case, sweep.conductors))[0, 0, 0, 0].real
    MEASURED["dc_loss_field_solution"] = abs(9.0 * q0 / w.dc_loss_w - 1.0)
    assert 9.0 * q0 == pytest.approx(w.dc_loss_w, rel=5e-4)
    # every harmonic loses at least |I_n|^2 Rdc: a given current through a
    # conductor has its least loss when spread evenly (Cauchy-Schwarz, common practice)
    for amps, loss in zip(w.harmonic_rms_a, w.harmonic_loss_w):
        assert loss >= amps ** 2 * rdc * (1 - 5e-4)


def _pair(delay_us: float, secondary: str = "waveform") -> dict:
    """Two symmetric triangles (odd harmonics only) in the proximity case; the
    secondary delayed by ``delay_us``, or idle (``secondary="idle"``), and the
    primary idle with ``secondary="alone"``."""
    p = {"name": "p", "waveform": {"shape": "triangle", "peak_to_peak": "2 A"}}
    s = {"name": "s", "waveform": {"shape": "triangle", "peak_to_peak": "4 A", "delay": f"{delay_us} us"}}
    if secondary == "idle":
        s = {"name": "s", "current": "0 A"}
    if secondary == "alone":
        p = {"name": "p", "current": "0 A"}
    return _waveform_case([p, s], waveform={"period": "10 us", "fraction": 0.9999})


def test_loss_depends_on_the_relative_phase_of_two_waveforms():
    case, sweep, _, at_zero = _losses(_pair(0.0))
    # a symmetric triangle has odd harmonics only (Fourier series table, above)
    assert all(n % 2 == 1 for n in case.waveform.harmonics) and len(case.waveform.harmonics) > 2

    def total(doc) -> float:
        return build_report(parse_case(doc), sweep).harmonics.total_loss_w

    losses = {d: total(_pair(d)) for d in (0.0, 2.5, 5.0, 7.5)}
    alone = total(_pair(0.0, "idle")) + total(_pair(0.0, "alone"))
    # the relative phase matters: in phase and in antiphase differ clearly
    assert abs(losses[0.0] / losses[5.0] - 1.0) > 0.05
    # half-wave symmetry: a shift by T/2 negates every odd harmonic, so the
    # cross term changes sign and the two losses average to the windings'
    # losses alone (superposition in a linear field problem, Fourier series)
    for d in (0.0, 2.5):
        pair_sum = losses[d] + losses[d + 5.0]
        MEASURED["half_wave_symmetry"] = max(MEASURED.get("half_wave_symmetry", 0.0), abs(pair_sum / (2 * alone) - 1))
        assert pair_sum == pytest.approx(2 * alone, rel=1e-9)
    assert at_zero.total_loss_w == pytest.approx(losses[0.0], rel=1e-12)


def test_ideal_core_balanced_waveforms_load_and_solve():
    # forward-converter-like: the secondary carries -N_p/N_s times the primary
    # pulse (4 turns and 2 foils): balanced at DC and every harmonic
    pulse = {"shape": "trapezoid", "low": "0 A", "high": "1 A", "duty": 0.4, "rise": "0.2 us", "fall": "0.2 us"}
    doc = _waveform_case([{"name": "p", "waveform": pulse},
                          {"name": "s", "waveform": dict(pulse, high="-2 A")}],
                         boundary="ideal-core", waveform={"period": "10 us", "fraction": 0.99})
    case, _, _, result = _losses(doc)
    p, s = result.windings
    assert p.dc_a == pytest.approx(0.4, rel=1e-12) and s.dc_a == pytest.approx(-0.8, rel=1e-12)
    # 4 turns x I_p + 2 turns x I_s = 0 at every solved harmonic
    assert np.allclose(4 * np.array(p.harmonic_rms_a), 2 * np.array(s.harmonic_rms_a), rtol=1e-12)
    assert all(w.total_loss_w > w.dc_loss_w > 0 for w in result.windings)


# ---------------------------------------------------------------------------
# (e) bad input


def _toml(doc: dict) -> str:
    """A minimal TOML writer for the test documents (tables, lists, strings, numbers)."""
    def value(v) -> str:
        if isinstance(v, str):
            return json.dumps(v)
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, (int, float)):
            return repr(v)
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        if isinstance(v, dict):
            return "{ " + ", ".join(f"{k} = {value(x)}" for k, x in v.items()) + " }"
        raise TypeError(v)

    lines = []
    for key, v in doc.items():
        if isinstance(v, dict):
            lines.append(f"[{key}]")
            lines += [f"{k} = {value(x)}" for k, x in v.items()]
        elif isinstance(v, list) and v and isinstance(v[0], dict):
            for item in v:
                lines.append(f"[[{key}]]")
                lines += [f"{k} = {value(x)}" for k, x in item.items()]
        else:
            lines.insert(0, f"{key} = {value(v)}")
    return "\n".join(lines) + "\n"


TRIANGLE = {"shape": "triangle", "peak_to_peak": "2 A"}
BAD = [
    ("current-and-waveform", [{"name": "p", "current": "1 A", "waveform": TRIANGLE}], {"period": "10 us"},
     "winding[1].current", ["given together with waveform"]),
    ("unknown-shape", [{"name": "p", "waveform": {"shape": "triangel", "peak_to_peak": "2 A"}}], {"period": "10 us"},
     "winding[1].waveform.shape", ['did you mean "triangle"?']),
    ("duty-above-one", [{"name": "p", "waveform": dict(TRIANGLE, duty=1.2)}], {"period": "10 us"},
     "winding[1].waveform.duty", ["outside 0..1"]),
    ("duty-negative", [{"name": "p", "waveform": {"shape": "trapezoid", "high": "1 A", "duty": -0.1}}],
     {"period": "10 us"}, "winding[1].waveform.duty", ["outside 0..1"]),
    ("missing-period", [{"name": "p", "waveform": TRIANGLE}], None, "waveform.period", ["missing"]),
    ("period-in-wrong-table", [{"name": "p", "waveform": TRIANGLE}], {"periode": "10 us"},
     "waveform.periode", ['did you mean "period"?']),
    ("unreadable-file", [{"name": "p", "waveform": {"file": "no such file.csv"}}], {"period": "10 us"},
     "winding[1].waveform.file", ['cannot read "no such file.csv"']),
    ("edges-do-not-fit", [{"name": "p", "waveform": {"shape": "trapezoid", "high": "1 A", "duty": 0.1,
                                                     "rise": "1.5 us", "fall": "1 us"}}], {"period": "10 us"},
     "winding[1].waveform.rise", ["do not fit"]),
    ("samples-out-of-order", [{"name": "p", "waveform": {"samples": [[0, 0], ["5 us", 1], ["2 us", 0]]}}],
     {"period": "10 us"}, "winding[1].waveform.samples", ["point 3"]),
    ("samples-longer-than-period", [{"name": "p", "waveform": {"samples": [[0, 0], ["12 us", 1]]}}],
     {"period": "10 us"}, "winding[1].waveform.samples", ["more than one period"]),
    ("time-without-unit", [{"name": "p", "waveform": dict(TRIANGLE, delay="2")}], {"period": "10 us"},
     "winding[1].waveform.delay", ["has no unit"]),
    ("winding-without-current", [{"name": "p", "waveform": TRIANGLE}, {"name": "s"}], {"period": "10 us"},
     "winding[2].current", ["missing"]),
    ("unbalanced-ideal-core-dc", [{"name": "p", "waveform": dict(TRIANGLE, dc="1 A")},
                                 {"name": "s", "waveform": dict(TRIANGLE, delay="5 us")}],
     {"period": "10 us"}, "winding", ["ideal-core", "at DC"]),
    ("unbalanced-ideal-core-harmonic", [{"name": "p", "waveform": TRIANGLE},
                                        {"name": "s", "waveform": dict(TRIANGLE, peak_to_peak="4 A", delay="1 us")}],
     {"period": "10 us"}, "winding", ["ideal-core", "at harmonic 1"]),
]


@pytest.mark.parametrize("windings,settings,key,extras", [pytest.param(w, s, k, e, id=i) for i, w, s, k, e in BAD])
def test_bad_waveform_input_gives_one_line(tmp_path, capsys, windings, settings, key, extras):
    doc = _waveform_case(windings, boundary="ideal-core" if len(windings) > 1 else "open")
    if settings is not None:
        doc["waveform"] = settings
    path = tmp_path / "case.toml"
    path.write_text(_toml(doc), encoding="utf-8")
    with pytest.raises(CaseError) as error:
        load_case(path)
    line = str(error.value)
    assert "\n" not in line and line.startswith(f"{path}: {key}: "), line
    for text in extras:
        assert text in line, line
    # the command: exit status 2, that one line on stderr
    capsys.readouterr()
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert err == f"racfield: error: {line}\n"


def test_period_or_frequency_and_the_harmonic_cap():
    square = {"shape": "trapezoid", "high": "1 A", "duty": 0.5}        # ideal steps: harmonics fall as 1/n
    by_period = parse_case(_waveform_case([{"name": "p", "waveform": square}], waveform={"period": "5 us"}))
    by_frequency = parse_case(_waveform_case([{"name": "p", "waveform": square}],
                                             waveform={"frequency": "200 kHz"}))
    assert by_period.frequencies == by_frequency.frequencies
    assert by_period.frequencies[:3] == (0.0, 200e3, 600e3)             # DC, then odd harmonics only
    # a square wave holds 8/pi^2 = 81 % of its AC power in the fundamental and
    # needs harmonics far beyond 10 for 99.5 % (Fourier series of the square
    # wave, 4/pi sum sin(n x)/n over odd n): the cap stops it, with a note
    capped = parse_case(_waveform_case([{"name": "p", "waveform": square}],
                                       waveform={"period": "5 us", "max_harmonic": 10}))
    assert capped.waveform.harmonics == (1, 3, 5, 7, 9)
    assert len(capped.notes) == 1 and "short of waveform.fraction" in capped.notes[0]
    held = sum(8 / (math.pi * n) ** 2 for n in (1, 3, 5, 7, 9))        # share of |I_n|^2 in the AC RMS^2
    assert capped.windings[0].spectrum.captured(capped.waveform.harmonics) == pytest.approx(held, rel=1e-12)


def test_sweep_with_waveforms_is_refused():
    doc = _waveform_case([{"name": "p", "waveform": TRIANGLE}], waveform={"period": "10 us"},
                         sweep={"frequencies": ["100 kHz"]})
    with pytest.raises(CaseError, match=r"^sweep: is not used when windings have waveforms"):
        parse_case(doc)


def test_bad_csv_line_is_named(tmp_path):
    (tmp_path / "i.csv").write_text("time_s,current_a\n0,0\n2e-6,one\n")
    doc = _waveform_case([{"name": "p", "waveform": {"file": "i.csv"}}], waveform={"period": "10 us"})
    path = tmp_path / "case.toml"
    path.write_text(_toml(doc))
    with pytest.raises(CaseError, match=r'winding\[1\]\.waveform\.file: "i.csv" line 3: cannot read'):
        load_case(path)


# ---------------------------------------------------------------------------
# (f) the demo case


def test_flyback_demo_case(case_run):
    # the run of tests/conftest.py, shared with tests/test_cases.py
    run = case_run("flyback_waveforms")
    assert run.status == 0
    out, printed = run.folder, run.stdout
    assert "naive error" in printed and "loss by harmonic" in printed
    doc = json.loads((out / "results.json").read_text())
    h = doc["harmonics"]
    assert h["fundamental_hz"] == 100e3
    assert doc["frequencies_hz"] == [0.0] + [n * 100e3 for n in h["harmonic_numbers"]]
    # the waveforms written in the case, by hand: the primary ramps 0 -> 2.1 A
    # over 3.9 us and falls back in 0.2 us; the secondary rises to 8.4 A in
    # 0.2 us and ramps down to 0 in 4.4 us (period 10 us).  Mean = area / T;
    # mean square of a ramp from 0 to a over t is a^2 t / 3
    expected = {"primary": (0.5 * 2.1 * 4.1 / 10, math.sqrt(2.1 ** 2 * 4.1 / 3 / 10), 16, math.pi * 0.2e-3 ** 2),
                "secondary": (0.5 * 8.4 * 4.6 / 10, math.sqrt(8.4 ** 2 * 4.6 / 3 / 10), 4, math.pi * 0.5e-3 ** 2)}
    rho = rho_copper(90.0)
    rows = list(csv.DictReader((out / "harmonics.csv").open()))
    for name, (dc, rms, turns, area) in expected.items():
        w = h["windings"][name]
        assert w["dc_a"] == pytest.approx(dc, rel=1e-12)
        assert w["rms_a"] == pytest.approx(rms, rel=1e-12)
        # DC loss = I_dc^2 rho l N / A (IEC 60028 copper at 90 degC, 40 mm per turn)
        rdc = rho * 0.040 * turns / area
        assert w["dc_loss_w"] == pytest.approx(dc ** 2 * rdc, rel=1e-9)
        # no harmonic loses less than |I_n|^2 Rdc (Cauchy-Schwarz: even current
        # spreading has the least loss, common practice); margin: meshed areas
        for amps, loss in zip(w["harmonic_rms_a"], w["harmonic_loss_w"]):
            assert loss >= amps ** 2 * rdc * (1 - 5e-4)
        # the solved harmonics hold the fraction of the AC RMS^2 (Parseval)
        ac2 = rms ** 2 - dc ** 2
        assert sum(a * a for a in w["harmonic_rms_a"]) >= h["fraction"] * ac2 * (1 - 1e-12)
        assert w["total_loss_w"] == pytest.approx(w["dc_loss_w"] + sum(w["harmonic_loss_w"]), rel=1e-12)
        assert w["effective_rac_ohm"] == pytest.approx(w["total_loss_w"] / rms ** 2, rel=1e-12)
        # harmonics.csv: one row per harmonic and the DC row; they add up to the total
        mine = [r for r in rows if r["winding"] == name]
        assert [int(r["harmonic"]) for r in mine] == [0] + h["harmonic_numbers"]
        assert sum(float(r["loss_w"]) for r in mine) == pytest.approx(w["total_loss_w"], rel=1e-7)
    # regression values (racfield's own output when this test was written, not
    # a reference): the shortcut I_rms^2 Rac(f0) overstates both windings here
    assert h["windings"]["primary"]["naive_error_percent"] == pytest.approx(65.0, abs=3.0)
    assert h["windings"]["secondary"]["naive_error_percent"] == pytest.approx(45.7, abs=3.0)


def test_print_measured(capsys):
    """Not a check: prints the measured errors for README (run with -s)."""
    with capsys.disabled():
        for key, value in sorted(MEASURED.items()):
            print(f"  measured {key}: {value:.3g}")
