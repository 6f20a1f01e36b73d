"""The case file (TOML): read, check and return the case model.

Every quantity is converted to SI here (temperatures stay in degC).  Any
problem raises :class:`~racfield.geometry.case.errors.CaseError` naming the
file, the key path and the fix.  The geometric checks (turns that do not fit,
overlaps, conductors outside the window) live in
:mod:`racfield.geometry.layout`; :mod:`racfield.geometry.load` runs both.
"""

from __future__ import annotations

import tomllib
from dataclasses import replace
from pathlib import Path

from .checks import check_arrangement
from .errors import CaseError, printable
from .files import NotReadable, read_bytes
from .model import Case, Winding, variant_cases
from .names import check_name, check_text, check_unique
from .sections import (model_notes, plan_waveforms, read_compare, read_core, read_frequencies, read_layers,
                       read_end_turns, read_mesh, read_model, read_parallels, read_placed, read_variants, read_waveform_settings,
                       read_window, read_winding_waveform)
from ..materials import ALIASES, MATERIALS
from .search_keys import read_search
from .study import VARIANT_KEY, StudyPoint, point_document, study_points
from .table import Table, list_of_tables
from .thermal_keys import read_thermal
from .dielectric_keys import read_dielectric

MAX_DEPTH = 16  #: nesting of tables and arrays a case may have (waveform samples and variant conductors reach 6)


def parse_case(doc: dict, path: str = "", allow_outside_files: bool = False) -> Case:
    """Build a :class:`Case` from a parsed TOML document.  With a ``[study]``
    table the case is the document without it (checked whole) and carries
    the study's points, each to be made a case by :func:`study_case`.

    ``path``: the case file (its folder is where files the case names are
    found; the current folder without it).  ``allow_outside_files``: read such
    files also when they lie outside that folder (refused by default; the
    study's points inherit it)."""
    try:
        check_depth(doc)
        if isinstance(doc, dict) and "search" in doc:
            if "study" in doc or "variant" in doc:
                raise CaseError("search", "a design search cannot stand with [study] or [[variant]] tables",
                                "give the choices as [[search.choice]] tables only")
            base = {k: v for k, v in doc.items() if k != "search"}
            case = _parse(base, path, allow_outside_files)
            return replace(case, search=read_search(doc["search"], base), source=base)
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


def _parse(doc: dict, path: str, allow_outside_files: bool = False) -> Case:
    top = Table(doc, "")
    title = top.raw("title", None)
    title = check_text(title, "title") if title is not None else printable(Path(path).stem if path else "case")
    model = read_model(Table(top.raw("model", {}), "model"))
    settings = read_waveform_settings(top)
    frequencies = () if settings else read_frequencies(Table(top.raw("sweep", None, required=True), "sweep"))
    window = read_window(Table(top.raw("window", None, required=True), "window"), model)

    windings: list[Winding] = []
    for t in list_of_tables(top, "winding"):
        name = check_name(t.raw("name", None, required=True), t.key("name"), path=False)
        check_unique(name, [w.name for w in windings], t.key("name"), "winding")
        mat = t.text("material", "copper", tuple(MATERIALS) + tuple(ALIASES))
        mat = ALIASES.get(mat, mat)
        waveform = read_winding_waveform(t, settings, path, allow_outside_files)
        current = t.quantity("current", "current", 1.0, nonnegative=True)
        phase = t.quantity("phase", "angle", 0.0)
        start = t.text("start", "inner", ("inner", "outer"))
        t.close()
        windings.append(Winding(name, mat, current, phase, waveform, start))
    if not windings:
        raise CaseError("winding", "no windings", 'add a [[winding]] table with name = "primary"')
    wave_notes: tuple[str, ...] = ()
    if settings:
        windings, settings, wave_notes = plan_waveforms(windings, settings)
        frequencies = settings.frequencies
    names = [w.name for w in windings]

    layers = read_layers(top, names)
    placed = read_placed(top, names)
    variants = read_variants(top, names)
    compare_frequency = read_compare(top, frequencies)
    parallel = read_parallels(top, names)

    core, centre_leg = read_core(top, window, model)
    end_turns = read_end_turns(top, model)
    thermal = read_thermal(top, window, frequencies, settings is not None)
    dielectric = read_dielectric(top, names)
    if thermal is not None and end_turns is not None:
        raise CaseError("thermal", "is not solved together with [end_turns] yet (the end turns' heat has no 2-D path)",
                        "remove [end_turns] for the thermal solution, or [thermal] for the end-turn losses")

    mesh = read_mesh(Table(top.raw("mesh", {}), "mesh"))
    top.close()

    case = Case(title, model, frequencies, window, tuple(windings), tuple(layers), tuple(placed),
                mesh, path, core, model_notes(model) + wave_notes, tuple(variants), compare_frequency,
                parallel=tuple(parallel), waveform=settings, allow_outside_files=allow_outside_files,
                centre_leg=centre_leg, end_turns=end_turns, thermal=thermal,
                dielectric=dielectric)
    for arrangement in variant_cases(case):
        check_arrangement(arrangement)
    return case


def read_document(path: str | Path) -> dict:
    """The TOML document of the case file at ``path`` (CaseError naming the
    file if it cannot be read or is not TOML)."""
    path = Path(path)
    name = str(path)
    try:
        text = read_bytes(path).decode("utf-8")
    except FileNotFoundError:
        raise CaseError("", "file not found", "check the path to the case file", name) from None
    except NotReadable as error:
        raise CaseError("", str(error), "give a case file (TOML text) of ordinary size", name) from None
    except UnicodeDecodeError as error:
        line = error.object[:error.start].count(b"\n") + 1
        raise CaseError("", f"is not UTF-8 text: byte 0x{error.object[error.start]:02x} on line {line}",
                        "save the case file as UTF-8", name) from None
    except OSError as error:
        raise CaseError("", f"cannot read the file ({error.strerror or error.__class__.__name__})",
                        "give a readable UTF-8 TOML file", name) from None
    return parse_toml(text, name)


def parse_toml(text: str, name: str = "") -> dict:
    """The TOML document of case-file text (CaseError naming ``name`` on bad syntax)."""
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        raise CaseError("", f"TOML syntax error: {error}", "fix the syntax at that line", name) from None
    except ValueError as error:  # an integer of more than 4300 digits (Python's int/str limit)
        raise CaseError("", f"TOML value cannot be read: {error.args[0].split(':')[0]}",
                        "give numbers of ordinary size", name) from None
    except RecursionError:
        raise CaseError("", f"arrays or tables are nested more than {MAX_DEPTH} deep",
                        "write the case with ordinary tables and lists", name) from None


def check_depth(doc: object, name: str = "") -> None:
    """Refuse a document nested deeper than :data:`MAX_DEPTH` (walked without recursion)."""
    stack = [(doc, 0)]
    while stack:
        node, depth = stack.pop()
        if depth > MAX_DEPTH:
            raise CaseError("", f"arrays or tables are nested more than {MAX_DEPTH} deep",
                            "write the case with ordinary tables and lists", name)
        children = node.values() if isinstance(node, dict) else node if isinstance(node, list) else ()
        stack.extend((child, depth + 1) for child in children if isinstance(child, (dict, list)))


def point_case(case: Case, point: StudyPoint) -> Case:
    """The case of one study point, before its layout is checked (CaseError,
    naming the file, if its document is bad)."""
    return replace(parse_case(point_document(case.source, point), case.path, case.allow_outside_files),
                   variant=point.name)
