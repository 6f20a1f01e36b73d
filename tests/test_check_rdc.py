"""The Rdc that ``racfield check`` prints is the Rdc that ``racfield run`` reports.

For every case in cases/ (every variant and study point), ``check`` runs
in-process through racfield.cli.main and its printed winding Rdc is compared,
within the printed precision (5 significant digits), with ``rdc_ohm`` in the
results.json that ``run`` writes (the command line's own independent path:
``run`` takes its Rdc from the solved sweep).  The DC resistance does not
depend on the sweep, so each case is run from a copy whose sweep is cut to
0 Hz and its lowest frequency (a waveform case: its first harmonics): then the
field solution at 0 Hz, whose conductor currents share by the solved field,
gives Rac(0 Hz) = Rdc as a further independent check (within the mesh error).

paralleled_foils also against the hand value rho l / A with the two foils of
each turn in parallel (IEC 60028 copper resistivity and temperature
coefficient).  The check used to sum every conductor in series and printed
6.2755 mOhm for its secondary (four foils in series), four times too much.

Parallel rings of unequal resistance (untransposed and transposed) and litz
strands: check, run and the field solution at 0 Hz against Kirchhoff's laws
applied by hand to the exact ring resistances.
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pytest

from racfield.cli import main
from racfield.geometry.load import load_case

# a design search's case is solved by racfield search (tests/test_search.py), not run
CASES = sorted(p for p in (Path(__file__).resolve().parent.parent / "cases").glob("*.toml")
               if "\n[search]" not in p.read_text())
ROW = re.compile(r"^(\S+)\s+\d+\s+\d+\s+\S+\s+\S+ A\s+(\S+) mOhm$")


def _cut_sweep(path: Path) -> str:
    """The case text with [sweep] cut to 0 Hz and its lowest frequency, the
    [compare] frequency moved there, a waveform case held to 3 harmonics, and
    no [thermal] or [dielectric] table (neither touches the DC resistance)."""
    freqs = [f for f in load_case(path).frequencies if f > 0.0]
    low = f"{min(freqs):.17g}" if freqs else "0"
    out, skipping = [], False
    for line in path.read_text().splitlines(keepends=True):
        if line.startswith("["):
            skipping = line.strip() in ("[sweep]", "[thermal]", "[dielectric]")
            if line.strip() == "[sweep]":
                out.append(f"[sweep]\nfrequencies = [0, {low}]\n\n")
                continue
        if not skipping:
            out.append(line)
    text = re.sub(r'(\[compare\]\s*\nfrequency = )"[^"]*"', lambda m: m.group(1) + low, "".join(out))
    return re.sub(r"(?m)^max_harmonic = \d+", "max_harmonic = 3", text)


def _check_rdc(capsys, path: Path) -> dict[tuple[str, str], float]:
    """{(title, winding): Rdc in ohm} as printed by racfield check."""
    capsys.readouterr()
    assert main(["check", str(path)]) == 0
    printed: dict[tuple[str, str], float] = {}
    title = None
    for line in capsys.readouterr().out.splitlines():
        if line.startswith("case: "):
            title = line[len("case: "):]
        elif (match := ROW.match(line)) and title is not None:
            printed[(title, match.group(1))] = float(match.group(2)) * 1e-3
    assert printed, "check printed no Rdc"
    return printed


def _within_printed_precision(printed: float, exact: float) -> bool:
    """``exact`` rounds to ``printed`` at 5 significant digits."""
    half_unit = 0.5 * 10.0 ** (math.floor(math.log10(abs(printed))) - 4)
    return abs(printed - exact) <= half_unit * (1 + 1e-9)


@pytest.mark.parametrize("case", CASES, ids=[p.stem for p in CASES])
def test_check_prints_the_rdc_that_run_reports(case, tmp_path, capsys):
    copy = tmp_path / case.name
    copy.write_text(_cut_sweep(case))
    printed = _check_rdc(capsys, copy)
    out = tmp_path / "out"
    assert main(["run", str(copy), "--out", str(out), "--quiet", "--workers", "1"]) == 0
    documents = [json.loads(p.read_text()) for p in sorted(out.rglob("results.json"))]
    reported = {(d["title"], name): (w["rdc_ohm"], w["rac_ohm"], d["frequencies_hz"])
                for d in documents for name, w in d["windings"].items()}
    assert set(reported) == set(printed)  # every arrangement and winding of the case
    for key, value in printed.items():
        rdc, rac, freqs = reported[key]
        # the command line's own path: run's Rdc, rounded as check prints it
        assert _within_printed_precision(value, rdc), (key, value, rdc)
        if freqs[0] == 0.0 and rac[0] is not None:
            # the field solution at 0 Hz (conductors sharing by the solved field): Rac = Rdc
            assert rac[0] == pytest.approx(rdc, rel=2e-3), key


def test_paralleled_foils_secondary_against_rho_l_over_a(capsys):
    printed = _check_rdc(capsys, next(p for p in CASES if p.stem == "paralleled_foils"))
    # IEC 60028: annealed copper 1.7241e-8 ohm*m at 20 degC, temperature coefficient 0.00393 /K
    rho = 1.7241e-8 * (1.0 + 0.00393 * (100.0 - 20.0))
    length = 36e-3                                  # model.length, the mean turn length
    foil = rho * length / (0.1e-3 * 5.2e-3)         # one 0.1 mm x 5.2 mm foil, rho l / A
    secondary = 2 * (foil / 2)                      # 2 turns in series, each of 2 foils in parallel
    primary = 20 * rho * length / (math.pi * 0.225e-3 ** 2)   # 2 layers of 10 round turns, 0.45 mm
    (title,) = {t for t, _ in printed}
    assert _within_printed_precision(printed[(title, "secondary")], secondary)
    assert _within_printed_precision(printed[(title, "primary")], primary)


# ---------------------------------------------------------------- parallel conductors of unequal resistance

UNEQUAL = """\
title = "two turns of two parallel rings of unequal radius"

[model]
symmetry = "axisymmetric"
temperature = "20 degC"

[sweep]
frequencies = [0]

[window]
width = "12 mm"
height = "2 mm"
boundary = "open"
inner_radius = "0 mm"

[[winding]]
name = "coil"
current = "1 A"

[[parallel]]
winding = "coil"
conductors = 2
transposed = {transposed}

# in order: turn 1 (strands 1, 2), turn 2 (strands 1, 2); 0.2 mm x 1 mm rectangular rings
[[conductor]]
winding = "coil"
shape = "rectangular"
width = "0.2 mm"
height = "1 mm"
at = ["1 mm", "1 mm"]

[[conductor]]
winding = "coil"
shape = "rectangular"
width = "0.2 mm"
height = "1 mm"
at = ["2 mm", "1 mm"]

[[conductor]]
winding = "coil"
shape = "rectangular"
width = "0.2 mm"
height = "1 mm"
at = ["3 mm", "1 mm"]

[[conductor]]
winding = "coil"
shape = "rectangular"
width = "0.2 mm"
height = "1 mm"
at = ["10 mm", "1 mm"]
"""
RHO_20 = 1.7241e-8   # ohm*m, IEC 60028 annealed copper at 20 degC


def _ring(r: float) -> float:
    """2 pi rho / (h ln(r2/r1)): a rectangular ring r1..r2 of height h at DC (the
    integral of 1/r over its section, see test_validation_axisymmetric)."""
    return 2 * math.pi * RHO_20 / (1e-3 * math.log((r + 0.1e-3) / (r - 0.1e-3)))


@pytest.mark.parametrize("transposed", [False, True])
def test_parallel_rings_of_unequal_resistance(transposed, tmp_path, capsys):
    """Untransposed: strand j (the j-th ring of every turn) in series, the strands
    joined at the winding's ends, R = 1 / sum_j 1 / R_j; transposed (equal
    shares): R = sum R_k / N^2 (Kirchhoff's laws, common practice).  check,
    run's Rdc and the field solution at 0 Hz (where the rings share the current
    by the solved field) agree."""
    r = [_ring(x) for x in (1e-3, 2e-3, 3e-3, 10e-3)]
    expected = (sum(r) / 4 if transposed else 1.0 / (1.0 / (r[0] + r[2]) + 1.0 / (r[1] + r[3])))
    path = tmp_path / "unequal.toml"
    path.write_text(UNEQUAL.replace("{transposed}", "true" if transposed else "false"))
    (printed,) = _check_rdc(capsys, path).values()
    assert _within_printed_precision(printed, expected)
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    winding = json.loads((tmp_path / "out" / "results.json").read_text())["windings"]["coil"]
    assert winding["rdc_ohm"] == pytest.approx(expected, rel=1e-12)
    assert winding["loss_w"][0] == pytest.approx(expected, rel=1e-3)   # P(0 Hz) / (1 A)^2
    if not transposed:
        # rings in parallel within each turn, turns in series, would differ by over 0.5 %
        # here: the rings of a turn are not joined to each other
        series_of_parallel = r[0] * r[1] / (r[0] + r[1]) + r[2] * r[3] / (r[2] + r[3])
        assert abs(series_of_parallel / expected - 1) > 5e-3


LITZ = """\
title = "litz wire, explicit strands"

[model]
length = "50 mm"

[sweep]
frequencies = ["100 kHz"]

[window]
width = "4 mm"
height = "4 mm"
boundary = "open"

[[winding]]
name = "coil"
current = "1 A"

[[layer]]
winding = "coil"
conductor = { shape = "litz", strands = 7, strand_diameter = "0.1 mm", bundle_diameter = "0.4 mm" }
turns = 3
"""


def test_check_rdc_of_litz_strands_in_parallel(tmp_path, capsys):
    """3 turns of 7 strands of 0.1 mm: R = 3 rho l / (7 pi d^2 / 4) (IEC 60028 copper
    at 20 degC), the strands of a turn in parallel."""
    path = tmp_path / "litz.toml"
    path.write_text(LITZ)
    (printed,) = _check_rdc(capsys, path).values()
    assert _within_printed_precision(printed, 3 * RHO_20 * 50e-3 / (7 * math.pi * 0.1e-3 ** 2 / 4))
