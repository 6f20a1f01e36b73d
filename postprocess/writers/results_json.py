"""results.json: the machine-readable results (contract in README)."""

from __future__ import annotations

import json
from pathlib import Path

from ..report import Report, results_document
from ..atomic import replace_text


def write(report: Report, directory: Path, solved_of: int | None = None) -> list[Path]:
    """``solved_of``: see :func:`results_document` (a partial document)."""
    text = json.dumps(results_document(report, solved_of), indent=1, allow_nan=False)
    return [replace_text(directory / "results.json", text + "\n")]
