"""The inputs of the fuzzed case loader (tests/test_fuzz_loader.py): a small
grammar of the real keys of a case document (``valid_docs``), mutations of
such documents (``mutated_docs``), their TOML text (``to_toml``) and mutations
of that text (``mutated_text``), with hypothesis strategies.

The documents name waveform files in a private temporary folder
(``FOLDER``): a CSV beside the case file, one outside it.  Quantities are SI
numbers or strings with units (the unit factors here are written out, not
taken from racfield's tables).
"""

from __future__ import annotations

import atexit
import copy
import json
import math
import re
import shutil
import tempfile
from pathlib import Path

from hypothesis import event, strategies as st


# ---------------------------------------------------------------------------
# the folder the fuzzed cases live in: a waveform CSV beside them, one outside

_ROOT = Path(tempfile.mkdtemp(prefix="racfield-fuzz-"))
atexit.register(shutil.rmtree, _ROOT, ignore_errors=True)
FOLDER = _ROOT / "case"
FOLDER.mkdir()
(FOLDER / "current.csv").write_text("time_s,current_a\n0,0\n4e-6,2.0\n4.2e-6,0\n", encoding="utf-8")
(_ROOT / "outside.csv").write_text("time_s,current_a\n0,0\n5e-6,1\n", encoding="utf-8")
CASE_PATH = str(FOLDER / "case.toml")
FILE_NAMES = ["current.csv", "./current.csv", "missing.csv", "../outside.csv", str(_ROOT / "outside.csv"), ""]


# ---------------------------------------------------------------------------
# quantities: a number in SI or a string with a unit

UNITS = {
    "length": [("m", 1.0), ("mm", 1e-3), ("um", 1e-6), ("cm", 1e-2), ("mil", 25.4e-6), ("in", 25.4e-3)],
    "frequency": [("Hz", 1.0), ("kHz", 1e3), ("MHz", 1e6)],
    "current": [("A", 1.0), ("mA", 1e-3)],
    "angle": [("deg", 1.0), ("rad", 180 / math.pi), ("", 1.0)],
    "temperature": [("degC", 1.0), ("", 1.0)],
    "time": [("s", 1.0), ("ms", 1e-3), ("us", 1e-6), ("ns", 1e-9)],
}


@st.composite
def q(draw, kind: str, low: float, high: float):
    """A value of ``kind`` between ``low`` and ``high`` (SI; degC, degrees): a number or a string."""
    value = draw(st.floats(low, high, allow_nan=False, allow_infinity=False))
    if kind == "current" and abs(value) < 1e-9:
        value = 0.0   # below the 1 nA floor a current is refused (README, Bad input)
    unit, factor = draw(st.sampled_from(UNITS[kind]))
    if kind in ("length", "frequency", "current", "time") and draw(st.booleans()):
        return value   # a plain number in SI
    if kind == "temperature" and unit == "":
        return value
    space = draw(st.sampled_from([" ", "", "  "]))
    return f"{value / factor:.6g}{space}{unit}".strip()


MM = 1e-3
names = st.sampled_from(["primary", "secondary", "tertiary", "aux"])


def _outer(draw, bare: float, kind: str = "length"):
    """An outer size at least the bare one (over insulation)."""
    return draw(q(kind, bare, bare * 1.3)) if bare > 0 else bare


def _size(value) -> float:
    """SI value of a grammar quantity (number or "x unit")."""
    if isinstance(value, (int, float)):
        return float(value)
    number, unit = re.match(r"^([-+0-9.eE]+)\s*(.*)$", value).groups()
    return float(number) * dict(UNITS["length"])[unit]


#: wire = ... values of 0.05 to 1 mm bare (geometry/case/wires.py)
WIRES = ["AWG 40", "AWG 30 grade 1", "AWG 26 grade 2", "AWG 20 grade 3", "AWG 18", "0.45 mm grade 2", "0.2 mm",
         "0.100 mm grade 3", "1 mm grade 1", "0.071 mm"]


@st.composite
def conductor(draw, litz: tuple[int, str] | None = None):
    """A conductor table; ``litz`` (strands, representation): a litz wire of that kind."""
    shape = "litz" if litz else draw(st.sampled_from(["round", "round", "rectangular", "foil"]))
    c: dict = {"shape": shape}
    if shape == "round" and draw(st.integers(0, 3)) == 0:
        # a standard size (geometry/case/wires.py), shape "round" given or implied
        c = {"wire": draw(st.sampled_from(WIRES))} | ({"shape": shape} if draw(st.booleans()) else {})
    elif shape != "litz":
        # (bare size, smallest and largest in mm, its size over insulation)
        sizes = {"round": [("diameter", 0.05, 1.0, "outer_diameter")],
                 "rectangular": [("width", 0.05, 1.0, "outer_width"), ("height", 0.05, 2.0, "outer_height")],
                 "foil": [("thickness", 0.02, 0.3, "outer_thickness"), ("height", 0.5, 8.0, None)]}[shape]
        outer = draw(st.booleans())
        for name, low, high, outer_name in sizes:
            c[name] = draw(q("length", low * MM, high * MM))
            if outer and outer_name:
                c[outer_name] = _outer(draw, _size(c[name]))
    else:
        strands, representation = litz
        c["strands"] = strands
        d = draw(st.floats(0.03 * MM, 0.15 * MM))
        c["strand_diameter"] = d
        packing = draw(st.floats(0.3, 0.75))
        choice = draw(st.sampled_from(["packing", "bundle_diameter", "none"]))
        if choice == "packing":
            c["packing"] = packing
        elif choice == "bundle_diameter":
            c["bundle_diameter"] = d * math.sqrt(strands / packing)
        if representation != "strands" or draw(st.booleans()):
            c["representation"] = representation
    return c


@st.composite
def layer(draw, winding: str, litz: tuple[int, str] | None, even_turns: bool = False):
    item = {"winding": winding, "conductor": draw(conductor(litz))}
    turns = draw(st.integers(1, 6)) * (2 if even_turns else 1)
    if turns != 1 or draw(st.booleans()):
        item["turns"] = turns
    if draw(st.booleans()):
        item["insulation_after"] = draw(q("length", 0.0, 0.2 * MM))
    if draw(st.booleans()):
        item["repeat"] = draw(st.integers(1, 3))
    if draw(st.booleans()):
        item["align"] = draw(st.sampled_from(["centre", "start", "end", "spread"]))
    return item


@st.composite
def placed(draw, winding: str, litz: tuple[int, str] | None, width: float, height: float):
    item = {"winding": winding}
    item.update(draw(conductor(litz)))
    item["at"] = [draw(q("length", 1.0 * MM, width - 1.0 * MM)), draw(q("length", 1.0 * MM, height - 1.0 * MM))]
    return item


@st.composite
def winding_waveform(draw):
    kind = draw(st.sampled_from(["triangle", "trapezoid", "sine", "samples", "file"]))
    if kind == "triangle":
        w = {"shape": "triangle", "peak_to_peak": draw(q("current", 0.0, 5.0))}
        if draw(st.booleans()):
            w["dc"] = draw(q("current", -2.0, 2.0))
        if draw(st.booleans()):
            w["duty"] = draw(st.floats(0.0, 1.0))
        if draw(st.booleans()):
            w["delay"] = draw(q("time", 0.0, 10e-6))
    elif kind == "trapezoid":
        w = {"shape": "trapezoid", "duty": draw(st.floats(0.1, 0.9))}
        if draw(st.booleans()):
            w["high"] = draw(q("current", 0.0, 5.0))
        else:
            w["start"], w["end"] = draw(q("current", 0.0, 5.0)), draw(q("current", 0.0, 5.0))
        for key in ("low", "rise", "fall", "delay"):
            if draw(st.booleans()):
                w[key] = draw(q("current", 0.0, 1.0)) if key == "low" else draw(q("time", 0.0, 0.1e-6))
    elif kind == "sine":
        w = {"shape": "sine", "rms": draw(q("current", 0.0, 3.0))}
        if draw(st.booleans()):
            w["phase"] = draw(q("angle", -180.0, 180.0))
    elif kind == "samples":
        times = sorted(draw(st.lists(st.floats(0.0, 1e-6), min_size=2, max_size=6)))
        w = {"samples": [[t, draw(q("current", -3.0, 3.0))] for t in times]}
    else:
        w = {"file": draw(st.sampled_from(FILE_NAMES))}
    return w


@st.composite
def thermal_table(draw, boundary: str, waveforms: bool):
    """[thermal]: the boundary the window allows (core walls, far convection or both), a fill,
    and an operating frequency unless the waveforms set the operating point."""
    t: dict = {}
    core = boundary == "ideal-core" or (boundary in ("core", "open-wall") and draw(st.booleans()))
    far = boundary != "ideal-core" and (not core or draw(st.booleans()))
    if core:
        t["core_temperature"] = draw(q("temperature", -40.0, 150.0))
    if far:
        t["h"], t["ambient"] = draw(st.floats(1.0, 1000.0)), draw(q("temperature", -40.0, 150.0))
    if draw(st.booleans()):
        t["fill"] = draw(st.sampled_from(["air", "varnish", "potting"]))
    elif draw(st.booleans()):
        t["conductivity"] = draw(st.sampled_from([0.1, "0.3 W/(m K)", "2 W/m/K"]))
    for key in ("insulation_conductivity", "core_conductivity"):
        if draw(st.booleans()):
            t[key] = draw(st.floats(0.01, 50.0))
    if not waveforms:
        t["frequency"] = draw(q("frequency", 1e3, 1e6))
    if draw(st.booleans()):
        t["coupled"] = draw(st.booleans())
    if draw(st.booleans()):
        t["max_temperature"] = "400 degC"
    return t


@st.composite
def valid_docs(draw):
    """A case document from the grammar of the real keys (many of them valid cases)."""
    doc: dict = {}
    if draw(st.booleans()):
        # printable text: control characters in a title are refused (README, Bad input)
        doc["title"] = draw(st.text(st.characters(categories=["L", "N", "P", "S", "Zs"]), max_size=20)
                            .filter(str.isprintable))
    symmetry = draw(st.sampled_from(["planar", "planar", "axisymmetric"]))
    model: dict = {}
    if symmetry == "axisymmetric" or draw(st.booleans()):
        model["symmetry"] = symmetry
    if draw(st.booleans()):
        model["length"] = draw(q("length", 5 * MM, 0.2))
    if draw(st.booleans()):
        model["temperature"] = draw(q("temperature", -40.0, 150.0))
    if model or draw(st.booleans()):
        doc["model"] = model

    width = draw(st.floats(4 * MM, 20 * MM))
    height = draw(st.floats(4 * MM, 20 * MM))
    # "open-wall" (air beside a magnetic wall) is for planar models only
    boundary = draw(st.sampled_from(["open", "open", "core", "ideal-core"]
                                    + (["open-wall"] if symmetry == "planar" else [])))
    window: dict = {"width": draw(st.sampled_from([width, f"{width / MM:.6g} mm"])),
                    "height": draw(st.sampled_from([height, f"{height / MM:.6g} mm"])),
                    "boundary": boundary}
    if symmetry == "axisymmetric":
        window["inner_radius"] = draw(q("length", 1 * MM, 10 * MM))
    if draw(st.booleans()):
        window["stacking"] = draw(st.sampled_from(["across-width", "along-height"]))
    if draw(st.booleans()):
        window["margins"] = {side: draw(q("length", 0.0, 0.5 * MM))
                             for side in draw(st.sets(st.sampled_from(["inner", "outer", "top", "bottom"])))}
    doc["window"] = window

    winding_names = sorted(draw(st.sets(names, min_size=1, max_size=3)))
    # per winding: one kind of conductor (litz of one strand count, or solid)
    litz = {n: (draw(st.integers(1, 7)), draw(st.sampled_from(["strands", "bundle"]))
                if symmetry == "planar" else "strands") if draw(st.integers(0, 4)) == 0 else None
            for n in winding_names}
    parallel = draw(st.sampled_from([None] + [n for n in winding_names if not litz[n]]))
    waveforms = draw(st.integers(0, 4)) == 0
    idle = boundary == "ideal-core" and draw(st.booleans())   # no current: balanced trivially
    windings = []
    for k, name in enumerate(winding_names):
        w: dict = {"name": name}
        if draw(st.booleans()):
            w["material"] = draw(st.sampled_from(["copper", "aluminium", "aluminum", "cu"]))
        if waveforms and (k == 0 or draw(st.booleans())) and not idle:
            w["waveform"] = draw(winding_waveform())
        else:
            if waveforms or idle or draw(st.booleans()):
                w["current"] = "0 A" if idle else draw(q("current", 0.0, 5.0))
            if draw(st.booleans()):
                w["phase"] = draw(q("angle", -180.0, 180.0))
        windings.append(w)
    doc["winding"] = windings
    if waveforms and not idle:
        wf: dict = {}
        if draw(st.booleans()):
            wf["period"] = draw(q("time", 1e-6, 100e-6))
        else:
            wf["frequency"] = draw(q("frequency", 10e3, 1e6))
        if draw(st.booleans()):
            wf["fraction"] = draw(st.floats(0.5, 1.0))
        if draw(st.booleans()):
            wf["max_harmonic"] = draw(st.integers(1, 60))
        doc["waveform"] = wf
    elif draw(st.booleans()):
        freqs = sorted(set(draw(st.lists(st.floats(0.0, 5e6), min_size=1, max_size=5))))
        doc["sweep"] = {"frequencies": [draw(st.sampled_from([f, f"{f / 1e3:.12g} kHz"])) for f in freqs]}
    else:
        sweep = {"start": draw(q("frequency", 1e3, 1e5)), "stop": draw(q("frequency", 1e5, 5e6))}
        if draw(st.booleans()):
            sweep["points"] = draw(st.integers(1, 12))
        doc["sweep"] = sweep

    # every winding gets turns: a layer, or an explicit conductor (never both for a parallel winding)
    layers, conductors = [], []
    for name in winding_names:
        if name != parallel and draw(st.integers(0, 3)) == 0:
            conductors.append(draw(placed(name, litz[name], width, height)))
        else:
            layers.append(draw(layer(name, litz[name], even_turns=name == parallel)))
    for _ in range(draw(st.integers(0, 2))):
        name = draw(st.sampled_from(winding_names))
        layers.append(draw(layer(name, litz[name], even_turns=name == parallel)))
    draw(st.randoms()).shuffle(layers)
    if layers:
        doc["layer"] = layers
    if conductors:
        doc["conductor"] = conductors
    if parallel:
        doc["parallel"] = [{"winding": parallel, "conductors": 2, "transposed": draw(st.booleans())}]
    if draw(st.integers(0, 5)) == 0:
        doc["variant"] = [{"name": f"v{k}", "layer": [draw(layer(n, litz[n], even_turns=n == parallel))
                                                      for n in winding_names if n not in
                                                      {c["winding"] for c in conductors}] or
                           [draw(layer(winding_names[0], litz[winding_names[0]]))]}
                          for k in range(draw(st.integers(1, 2)))]
        if draw(st.booleans()):
            doc["compare"] = {"frequency": draw(q("frequency", 1e3, 1e6))}
    if boundary == "core":
        core = {"relative_permeability": draw(st.sampled_from([1, 100, 2000, 1e5])),
                "outer_leg_width": draw(q("length", 1 * MM, 5 * MM)),
                "yoke_thickness": draw(q("length", 1 * MM, 5 * MM))}
        if symmetry == "planar":
            core["centre_leg_width"] = draw(q("length", 1 * MM, 10 * MM))
        doc["core"] = core
        gaps = draw(st.integers(0, 2))
        if gaps:
            doc["gap"] = [{"leg": leg, "length": draw(q("length", 0.05 * MM, 1 * MM)),
                           "at": draw(q("length", 1.0 * MM, height - 1.0 * MM))}
                          for leg in draw(st.permutations(["centre", "outer"]))[:gaps]]
    if draw(st.integers(0, 3)) == 0:
        doc["thermal"] = draw(thermal_table(boundary, waveforms and not idle))
    if draw(st.integers(0, 4)) == 0:
        doc["mesh"] = {"density": draw(st.floats(0.5, 2.0)), "far_radius_factor": draw(st.floats(2.0, 8.0))}
    return doc


# ---------------------------------------------------------------------------
# mutations

SPECIAL_NUMBERS = [0, 0.0, -0.0, -1, -1e-3, 1e-300, 5e-324, 1e308, -1e308, math.nan, math.inf, -math.inf,
                   10 ** 30, -10 ** 30, 10 ** 400, 2 ** 63, 2 ** 64 + 1, 1e22, 0.5, True, False]
ODD_STRINGS = ["", " ", "mm", "1 mmm", "1e5 GHz", "1,5 mm", "1.5 \u00b5m", "1.5 \u03bcm", "\u00bd mm", "1 mm mm",
               "0x10 mm", "1_000 mm", "nan mm", "inf mm", "-inf A", "-0 mm", "1e-400 mm", "1e400 mm", "3 A",
               "3 kg", "3", "-3 mm", "0 mm", "1e-30 m", "1e30 m", "-300 degC", "10 K", "-1 K", "1 rad",
               "10 us", "0 s", "-10 us", "1e300 s", "\n", "\r\n", "\u2028", "\x00", "\x7f", "ideal-core",
               "round", "primary", "../outside.csv", "/nonexistent/racfield.csv", "current.csv",
               "__import__('os').getcwd()", "AWG 26", "AWG 4/0", "0.45 mm grade 2", "AWG 99", "0.45 mm grade 9", "1 mm\n2 mm", "100 kHz", "1 MHz", "4 mm", "1" + "0" * 500]

json_like = st.recursive(
    st.none() | st.booleans() | st.integers() | st.floats() | st.text(max_size=12),
    lambda children: st.lists(children, max_size=4) | st.dictionaries(st.text(max_size=8), children, max_size=4),
    max_leaves=8)
odd_values = st.one_of(st.sampled_from(SPECIAL_NUMBERS), st.sampled_from(ODD_STRINGS), json_like,
                       st.text(max_size=30))
odd_keys = st.one_of(st.text(max_size=12), st.sampled_from(
    ["widht", "hieght", "diametre", "turn", "frequency", "frequencies", "shape", "file", "layer", "winding",
     "at", "name", "conductor", "wire", "variant", "period", "core", "gap", "thermal", "fill", "h", "", " ",
     "\u2028", "a.b"]))


def locations(doc, prefix: tuple = ()) -> list[tuple]:
    """Every key path in ``doc`` (dict keys and list indices), parents before children."""
    out = []
    items = doc.items() if isinstance(doc, dict) else enumerate(doc) if isinstance(doc, list) else ()
    for key, value in items:
        out.append(prefix + (key,))
        out += locations(value, prefix + (key,))
    return out


def _typo(key: str, draw) -> str:
    if not key:
        return "x"
    i = draw(st.integers(0, len(key) - 1))
    how = draw(st.sampled_from(["drop", "double", "swap", "upper"]))
    if how == "drop":
        return key[:i] + key[i + 1:] or "x"
    if how == "double":
        return key[:i] + key[i] + key[i:]
    if how == "swap" and i + 1 < len(key):
        return key[:i] + key[i + 1] + key[i] + key[i + 2:]
    return key.upper()


@st.composite
def mutated_docs(draw):
    """A grammar document with one to three mutations."""
    doc = copy.deepcopy(draw(valid_docs()))
    for _ in range(draw(st.integers(1, 3))):
        paths = locations(doc)
        op = draw(st.sampled_from(["drop", "rename", "replace", "replace", "special", "add", "whole"]))
        if op == "whole" or not paths:
            doc = draw(st.one_of(json_like, st.dictionaries(odd_keys, odd_values, max_size=4), st.just({})))
            if not isinstance(doc, dict):
                doc = {"window": doc}
            continue
        path = draw(st.sampled_from(paths))
        parent = doc
        for key in path[:-1]:
            parent = parent[key]
        key = path[-1]
        event(f"mutation {op}")
        if op == "drop":
            del parent[key]
        elif op == "rename" and isinstance(parent, dict):
            parent[draw(st.one_of(odd_keys, st.just(_typo(key, draw))))] = parent.pop(key)
        elif op == "add" and isinstance(parent[key], dict):
            parent[key][draw(odd_keys)] = draw(odd_values)
        elif op == "special":
            parent[key] = draw(st.one_of(st.sampled_from(SPECIAL_NUMBERS), st.sampled_from(ODD_STRINGS)))
        else:
            parent[key] = draw(odd_values)
    return doc


# ---------------------------------------------------------------------------
# TOML text

_BARE = re.compile(r"^[A-Za-z0-9_-]+$")


def toml_key(key) -> str:
    key = str(key)
    return key if _BARE.match(key) else toml_string(key)


def toml_string(text: str) -> str:
    # JSON escapes are TOML basic-string escapes; DEL must be escaped in TOML too
    return json.dumps(text, ensure_ascii=False).replace("\x7f", "\\u007f")


def toml_value(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value) if abs(value) < 10 ** 4000 else "1" + "0" * 4000
    if isinstance(value, float):
        return "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf") if math.isinf(value) else repr(value)
    if isinstance(value, str):
        return toml_string(value)
    if isinstance(value, list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{toml_key(k)} = {toml_value(v)}" for k, v in value.items()) + " }"
    return "nil"   # None has no TOML form: a syntax error, which is fine here


def _is_table_list(value) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, dict) for v in value)


def to_toml(doc: dict) -> str:
    """Top-level keys, then [tables], then [[arrays of tables]] (nested ones as [[a.b]])."""
    # a key whose value is None is absent (as the loader reads a dict): TOML has no None
    lines = [f"{toml_key(k)} = {toml_value(v)}" for k, v in doc.items()
             if v is not None and not isinstance(v, dict) and not _is_table_list(v)]

    def table_body(name: str, table: dict) -> None:
        nested = []
        for k, v in table.items():
            if v is None:
                continue
            if _is_table_list(v) and name:
                nested.append((k, v))
            else:
                lines.append(f"{toml_key(k)} = {toml_value(v)}")
        for k, items in nested:
            for item in items:
                lines.append(f"[[{name}.{toml_key(k)}]]")
                table_body("", item)

    for k, v in doc.items():
        if isinstance(v, dict):
            lines.append(f"[{toml_key(k)}]")
            table_body("", v)
    for k, v in doc.items():
        if _is_table_list(v):
            for item in v:
                lines.append(f"[[{toml_key(k)}]]")
                table_body(toml_key(k), item)
    return "\n".join(lines) + "\n"


SNIPPETS = ["=", "[", "]", "[[", "]]", '"', "'", "\\", "\n", "{", "}", ",", "#", "\x00", "\x7f", '"""', "'''",
            "inf", "nan", "1e999", "-", "\t", "\r", "\u2028", "\ufeff", "\u00fc", "1" + "0" * 400,
            "1" + "0" * 5000, "[window]\n", "[[winding]]\n", "[[layer]]\n", 'width = "1 mm"\n', "0x", "1979-05-27",
            "true", "[[variant.layer]]\n", "a.b.c = 1\n", "turns = 3\n"]


@st.composite
def mutated_text(draw):
    text = to_toml(draw(st.one_of(valid_docs(), mutated_docs())))
    for _ in range(draw(st.integers(1, 4))):
        i = draw(st.integers(0, len(text)))
        op = draw(st.sampled_from(["cut", "insert", "insert", "line", "char"]))
        if op == "cut":
            text = text[:i] + text[i + draw(st.integers(1, 40)):]
        elif op == "insert":
            text = text[:i] + draw(st.one_of(st.sampled_from(SNIPPETS), st.text(max_size=6))) + text[i:]
        elif op == "line":
            lines = text.splitlines(keepends=True)
            if lines:
                k = draw(st.integers(0, len(lines) - 1))
                how = draw(st.sampled_from(["duplicate", "delete", "move"]))
                line = lines.pop(k)
                if how == "duplicate":
                    lines[k:k] = [line, line]
                elif how == "move":
                    lines.insert(draw(st.integers(0, len(lines))), line)
                text = "".join(lines)
        elif i < len(text):
            text = text[:i] + draw(st.characters()) + text[i + 1:]
    return text
