"""racfield report: one self-contained HTML page from a results folder, and the
drawings it shows (geometry.png, conductor_loss.png, estimates.png).

A tiny two-winding case and a tiny case with two variants run through the
command line; the page must hold every section, embed every PNG as a data URI,
fetch nothing, escape the case's text, and load in a headless Chromium without
console errors.
"""

from __future__ import annotations

import base64
import re
import shutil
import subprocess
from html import unescape
from html.parser import HTMLParser
from pathlib import Path

import pytest

from racfield.cli import main
from racfield.postprocess.validation_status import VALIDATION

README = Path(__file__).resolve().parents[1] / "README.md"

TITLE = 'Tiny <window> & "report" check'
TITLE_ESCAPED = "Tiny &lt;window&gt; &amp; &quot;report&quot; check"

BASE = """
title = 'TITLE'

[model]
length = "40 mm"
temperature = "60 degC"

[sweep]
frequencies = ["10 kHz", "100 kHz", "500 kHz"]

[window]
width = "3 mm"
height = "4 mm"

[[winding]]
name = "primary"
current = "1 A"

[[winding]]
name = "secondary"
current = "2 A"
phase = 180
"""

LAYERS = """
[[PREFIXlayer]]
winding = "primary"
conductor = { shape = "round", diameter = "0.5 mm", outer_diameter = "0.6 mm" }
turns = 4
insulation_after = "0.2 mm"

[[PREFIXlayer]]
winding = "secondary"
conductor = { shape = "foil", thickness = "0.2 mm", height = "3.2 mm" }
repeat = 2
insulation_after = "0.1 mm"
"""

SECONDARY_FIRST = """
[[variant.layer]]
winding = "secondary"
conductor = { shape = "foil", thickness = "0.2 mm", height = "3.2 mm" }
repeat = 2
insulation_after = "0.2 mm"

[[variant.layer]]
winding = "primary"
conductor = { shape = "round", diameter = "0.5 mm", outer_diameter = "0.6 mm" }
turns = 4
"""

SINGLE_CASE = BASE.replace("TITLE", TITLE) + LAYERS.replace("PREFIX", "")
VARIANT_NAMES = ("P & S", "S <first>")
VARIANT_CASE = (BASE.replace("TITLE", "Tiny variants") + f'\n[[variant]]\nname = "{VARIANT_NAMES[0]}"\n'
                + LAYERS.replace("PREFIX", "variant.") + f'\n[[variant]]\nname = "{VARIANT_NAMES[1]}"\n'
                + SECONDARY_FIRST)

NEW_WRITERS = ("geometry.png", "conductor_loss.png", "estimates.png")
SECTION_IDS = ("summary", "geometry", "rac", "estimates", "mmf", "field", "conductor-loss")


def _run_and_report(tmp_path: Path, text: str) -> tuple[Path, str]:
    case = tmp_path / "case.toml"
    case.write_text(text, encoding="utf-8")
    folder = tmp_path / "results"
    assert main(["run", str(case), "--out", str(folder), "--quiet"]) == 0
    assert main(["report", str(folder)]) == 0
    page = folder / "report.html"
    assert page.is_file()
    return folder, page.read_text(encoding="utf-8").replace("\u00a0", " ")  # no-break spaces in "10 kHz"


@pytest.fixture(scope="module")
def single(tmp_path_factory):
    return _run_and_report(tmp_path_factory.mktemp("single"), SINGLE_CASE)


@pytest.fixture(scope="module")
def variants(tmp_path_factory):
    return _run_and_report(tmp_path_factory.mktemp("variants"), VARIANT_CASE)


# ---------------------------------------------------------------------------
# the page


def _embedded(folder: Path, html: str) -> list[str]:
    """The PNGs in ``folder`` whose bytes are embedded in the page as data URIs; asserts every one is."""
    names = []
    for png in sorted(folder.glob("*.png")):
        uri = "data:image/png;base64," + base64.b64encode(png.read_bytes()).decode("ascii")
        assert uri in html, f"{png.name} is not embedded"
        names.append(png.name)
    return names


class _Balance(HTMLParser):
    """Checks that every element is closed in order (void elements aside)."""

    VOID = {"meta", "img", "br", "hr", "link", "input", "col", "wbr"}

    def __init__(self) -> None:
        super().__init__()
        self.stack: list[str] = []

    def handle_starttag(self, tag, attrs):
        if tag not in self.VOID:
            self.stack.append(tag)

    def handle_endtag(self, tag):
        assert self.stack and self.stack[-1] == tag, f"</{tag}> closes <{self.stack[-1] if self.stack else ''}>"
        self.stack.pop()


def _assert_well_formed(html: str) -> None:
    assert html.startswith("<!DOCTYPE html>")
    parser = _Balance()
    parser.feed(html)
    parser.close()
    assert parser.stack == []


def _assert_self_contained(html: str) -> None:
    assert "http://" not in html and "https://" not in html
    for attribute in re.findall(r"""\b(?:src|href)\s*=\s*["']([^"']*)["']""", html):
        assert attribute.startswith(("data:image/png;base64,", "#")), attribute[:80]
    for target in re.findall(r"url\(([^)]*)\)", html):
        assert target.strip("'\" ").startswith("data:"), target
    assert "<script" not in html.lower()
    assert "<link" not in html.lower() and "@import" not in html
    assert html.count("<img ") == html.count('src="data:image/png;base64,')


def test_single_report_sections(single):
    folder, html = single
    for anchor in SECTION_IDS + ("validation", "caution"):
        assert f'id="{anchor}"' in html, anchor
        assert f'href="#{anchor}"' in html, anchor
    for heading in ("Case summary", "Geometry", "Rac/Rdc against frequency", "Hand estimates against the field solution",
                    "MMF across the window", "Field map", "Loss of each turn", "Validation status", "Caution"):
        assert f">{heading}</h2>" in html, heading
    # case summary: temperature, turn length, frequencies, windings table, leakage
    assert "60 \u00b0C" in html and "40 mm per turn" in html
    assert "10 kHz, 100 kHz, 500 kHz" in html
    for column in ("Rac/Rdc at 10 kHz", "Rac/Rdc at 100 kHz", "Rac/Rdc at 500 kHz", "Rdc"):
        assert f">{column}</th>" in html
    assert "Leakage inductance referred to primary" in html
    # estimates table with the notes next to the numbers
    assert ">Dowell difference</th>" in html and ">Ferreira difference</th>" in html
    assert 'class="notes"' in html and "partial layer" in html
    # the caution from results.json
    assert "safety standards" in html


def test_single_report_embeds_every_image(single):
    folder, html = single
    embedded = _embedded(folder, html)
    assert {"rac_over_rdc.png", "current_density.png"} <= set(embedded)
    assert html.count('src="data:image/png;base64,') == len(embedded)
    if not (folder / "mmf.png").exists():
        assert "No MMF diagram" in html


def test_single_report_is_self_contained(single):
    _assert_self_contained(single[1])
    _assert_well_formed(single[1])


def test_case_text_is_escaped(single):
    html = single[1]
    assert f"<h1>{TITLE_ESCAPED}</h1>" in html
    assert "<window>" not in html and '"report"' not in html


def test_variant_report(variants):
    folder, html = variants
    assert (folder / "comparison.json").is_file()
    assert 'id="comparison"' in html and "Variants compared at 100 kHz" in html
    for i, name in enumerate(VARIANT_NAMES, start=1):
        escaped = name.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
        assert f">Variant: {escaped}</h2>" in html
        for anchor in SECTION_IDS:
            assert f'id="variant-{i}-{anchor}"' in html
    assert "<first>" not in html
    # the comparison comes first, then the variants in order
    assert html.index('id="comparison"') < html.index('id="variant-1"') < html.index('id="variant-2"')
    assert html.count(">Validation status</h2>") == 1 and html.count(">Caution</h2>") == 1
    embedded = _embedded(folder, html)
    assert {"rac_over_rdc_variants.png", "loss_by_variant.png"} <= set(embedded)
    for sub in {p.parent for p in folder.glob("*/rac_over_rdc.png")}:
        _embedded(sub, html)
    _assert_self_contained(html)
    _assert_well_formed(html)


# ---------------------------------------------------------------------------
# the command


def test_report_out_option_and_printed_path(single, tmp_path, capsys):
    folder, _ = single
    target = tmp_path / "elsewhere.html"
    assert main(["report", str(folder), "--out", str(target)]) == 0
    assert capsys.readouterr().out.strip() == str(target)
    assert target.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")


@pytest.mark.parametrize("make", ["missing", "file", "empty", "garbage"])
def test_report_bad_folder(tmp_path, capsys, make):
    path = tmp_path / "results"
    if make == "file":
        path.write_text("not a folder")
    elif make == "empty":
        path.mkdir()
    elif make == "garbage":
        path.mkdir()
        (path / "results.json").write_text("{not json")
    assert main(["report", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("racfield: error: ") and err.count("\n") == 1, err
    assert str(path) in err


def test_report_unwritable_out(single, tmp_path, capsys):
    folder, _ = single
    assert main(["report", str(folder), "--out", str(tmp_path / "no" / "such" / "folder" / "r.html")]) == 2
    err = capsys.readouterr().err
    assert "--out" in err and err.count("\n") == 1


# ---------------------------------------------------------------------------
# the drawings and the validation table


def test_new_writers_are_registered():
    from racfield.postprocess.writers import WRITERS
    missing = [name for name in NEW_WRITERS if name not in WRITERS]
    assert not missing, f"add {missing} to WRITERS in postprocess/writers/__init__.py"


def test_drawings_planar_and_axisymmetric_core(tmp_path):
    from racfield.fem.sweep import run_sweep
    from racfield.geometry.load import load_case
    from racfield.postprocess.report import build_report
    from racfield.postprocess.writers import conductor_loss_plot, estimates_plot, geometry_plot

    axisymmetric = (BASE.replace("TITLE", "Tiny pot core").replace('length = "40 mm"', 'symmetry = "axisymmetric"')
                    .replace('height = "4 mm"', 'height = "4 mm"\ninner_radius = "2 mm"\nboundary = "core"')
                    + '\n[core]\nrelative_permeability = 2000\nouter_leg_width = "1 mm"\nyoke_thickness = "1 mm"\n'
                    + '\n[[gap]]\nlength = "0.2 mm"\n' + LAYERS.replace("PREFIX", ""))
    for name, text in (("planar", SINGLE_CASE), ("axisymmetric", axisymmetric)):
        path = tmp_path / f"{name}.toml"
        path.write_text(text, encoding="utf-8")
        case = load_case(str(path))
        report = build_report(case, run_sweep(case))
        out = tmp_path / name
        out.mkdir()
        for writer, file in ((geometry_plot, "geometry.png"), (conductor_loss_plot, "conductor_loss.png"),
                             (estimates_plot, "estimates.png")):
            assert writer.write(report, out) == [out / file]
            assert (out / file).read_bytes().startswith(b"\x89PNG\r\n\x1a\n")


def _readme_validation_rows() -> list[tuple[str, str, str, str]]:
    section = README.read_text(encoding="utf-8").split("\n## Validation", 1)[1].split("\n## ", 1)[0]
    rows = [line for line in section.splitlines() if line.startswith("|")][2:]
    return [tuple(cell.strip() for cell in row.strip().strip("|").split(" | ")) for row in rows]


def test_validation_status_matches_readme():
    assert [(v.check, v.reference, v.tolerance, v.measured) for v in VALIDATION] == _readme_validation_rows()


# ---------------------------------------------------------------------------
# headless Chromium

CHROMIUM_FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync")

# Chromium's log line for a page's console message, e.g.
#   [123:123:1202/021547.375070:INFO:CONSOLE:1] "Uncaught ReferenceError: f is not defined", source: file:///p.html (1)
# (older releases write CONSOLE(1)).  Chromium's own lines (dbus, gpu, sandbox ...) have no CONSOLE tag.
CONSOLE_LINE = re.compile(r'^\[[^\]]*?:(?P<level>[A-Z]+):CONSOLE(?::\d+|\(\d+\))\] "(?P<message>.*)", '
                          r"source: (?P<source>.*) \(\d+\)\s*$")


def chromium() -> str | None:
    found = shutil.which("chromium")
    if found:
        return found
    return "/usr/bin/chromium" if Path("/usr/bin/chromium").is_file() else None


def load_in_chromium(page: Path, profile: Path) -> tuple[str, str]:
    """(dumped DOM, stderr) of ``page`` loaded in a headless Chromium."""
    binary = chromium()
    if binary is None:
        pytest.skip("chromium is not installed (Debian: apt-get install chromium); .ci/run installs it")
    done = subprocess.run([binary, *CHROMIUM_FLAGS, f"--user-data-dir={profile}", "--enable-logging=stderr",
                           "--v=0", "--dump-dom", page.resolve().as_uri()],
                          capture_output=True, text=True, timeout=120, stdin=subprocess.DEVNULL)
    assert done.returncode == 0, done.stderr[-2000:]
    return done.stdout, done.stderr


def page_console_messages(stderr: str, url: str) -> list[tuple[str, str]]:
    """(level, message) of every console message the page at ``url`` produced."""
    out = []
    for line in stderr.splitlines():
        match = CONSOLE_LINE.match(line.strip())
        if match and match["source"].split("#")[0] == url:
            out.append((match["level"], match["message"]))
    return out


def page_console_errors(stderr: str, url: str) -> list[str]:
    """The page's console errors: an uncaught exception, a blocked load (content
    security policy), or a message logged at level ERROR or FATAL.  Recent
    Chromium logs every console message at INFO, so the text decides."""
    return [message for level, message in page_console_messages(stderr, url)
            if level in ("ERROR", "FATAL") or message.startswith("Uncaught")
            or "Content Security Policy" in message]


def test_console_error_detector(tmp_path):
    broken = tmp_path / "broken.html"
    broken.write_text("<!DOCTYPE html><html><head><meta charset='utf-8'><title>broken</title></head>"
                      "<body><p>x</p><script>undefinedFunction()</script></body></html>", encoding="utf-8")
    quiet = tmp_path / "log.html"
    quiet.write_text("<!DOCTYPE html><html><head><meta charset='utf-8'><title>log</title></head>"
                     "<body><script>console.log('fine')</script></body></html>", encoding="utf-8")
    dom, err = load_in_chromium(broken, tmp_path / "profile-broken")
    assert "<title>broken</title>" in dom
    errors = page_console_errors(err, broken.resolve().as_uri())
    assert len(errors) == 1 and "undefinedFunction" in errors[0], err[-3000:]
    _, err = load_in_chromium(quiet, tmp_path / "profile-log")
    url = quiet.resolve().as_uri()
    assert [message for _, message in page_console_messages(err, url)] == ["fine"], err[-3000:]
    assert page_console_errors(err, url) == []
    # Chromium's own noise is never a page error
    noise = ("[1:2:1202/021546.339814:ERROR:dbus/bus.cc:405] Failed to connect to the bus: No such file\n"
             "[3:3:1202/021546.565044:WARNING:media/gpu/vaapi/vaapi_wrapper.cc:1655] drmGetDevices2() has not found\n"
             f'[4:4:1202/021547.375070:INFO:CONSOLE:1] "Uncaught Error: elsewhere", source: file:///other.html (1)\n')
    assert page_console_errors(noise, url) == []


@pytest.mark.parametrize("which", ["single", "variants"])
def test_report_loads_in_chromium(which, request, tmp_path):
    folder, html = request.getfixturevalue(which)
    page = folder / "report.html"
    dom, err = load_in_chromium(page, tmp_path / "profile")
    url = page.resolve().as_uri()
    heading = re.search(r"<h1>(.*?)</h1>", dom)
    assert heading and unescape(heading[1]) == unescape(re.search(r"<h1>(.*?)</h1>", html)[1]), dom[:2000]
    if which == "single":
        assert unescape(heading[1]) == TITLE
        assert "&lt;window&gt;" in heading[1]  # the title is text, not markup
    assert page_console_errors(err, url) == [], err[-3000:]
    # the page has no scripts, so it must log nothing at all
    assert page_console_messages(err, url) == [], err[-3000:]
