"""results.json, the machine-readable results (contract in README): the one
module that writes it and reads it back.

Written by ``racfield run`` (whole, or partial while a sweep runs) and by
:meth:`racfield.Results.write`; read by ``racfield loss``, by ``racfield run
--resume`` (the finished arrangements) and by ``racfield report``.  Reading
needs no solver: this module imports :mod:`.report` (and so ``fem``) only to
write.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import TYPE_CHECKING

from racfield.geometry.case.errors import CaseError

from .atomic import replace_text

if TYPE_CHECKING:
    from .report import Report

NAME = "results.json"
#: the fix of every read error: where a valid file comes from
FIX = "give the folder written by racfield run"


def write(report: "Report", directory: Path, solved_of: int | None = None) -> list[Path]:
    """Write ``directory/results.json`` atomically; returns [its path].
    ``solved_of``: the number of frequencies of the whole run when ``report``
    holds only the points solved so far (a partial document, see
    :func:`racfield.postprocess.report.results_document`)."""
    from .report import results_document

    text = json.dumps(results_document(report, solved_of), indent=1, allow_nan=False)
    return [replace_text(Path(directory) / NAME, text + "\n")]


def locate(path: str | Path) -> Path:
    """``path`` itself, or ``path/results.json`` when ``path`` is a folder."""
    path = Path(path)
    return path / NAME if path.is_dir() else path


def read_json(path: str | Path) -> object:
    """The JSON document of a file racfield wrote (results.json, comparison.json);
    CaseError naming the file when it cannot be read or is not JSON."""
    path = Path(path)
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError) as error:
        raise CaseError("", f"cannot read {path.name} ({error.__class__.__name__})", FIX, str(path)) from None


def read(path: str | Path) -> dict:
    """The results document of ``path`` (a results.json, or the folder holding
    one): CaseError, one line naming the file, when it cannot be read, is not
    JSON or lacks the title, the frequencies (Hz) or the windings."""
    path = locate(path)
    doc = read_json(path)
    try:
        if not isinstance(doc, dict):
            raise TypeError
        doc["title"], doc["frequencies_hz"][0], doc["windings"].items()
    except (KeyError, IndexError, TypeError, AttributeError):
        raise CaseError("", "not a racfield results.json (title, frequencies and windings missing)", FIX,
                        str(path)) from None
    return doc
