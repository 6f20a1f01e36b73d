"""Resumable runs: the solved points of a run, kept point by point, and the
record of what racfield wrote into a results folder.

Layout inside the results folder::

    .racfield/manifest.json          fingerprint of the case, options, files written,
                                     arrangements finished
    .racfield/points/KEY/NNNNN.npz   one solved frequency of one arrangement

Every file is written whole or not at all (temporary file, then rename), so a
run killed at any moment leaves a consistent folder.
"""

from __future__ import annotations

import hashlib
import io
import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from racfield.geometry.case import Case
from racfield.geometry.case.errors import CaseError

from racfield.postprocess.atomic import replace_bytes, replace_text

if TYPE_CHECKING:   # the solver is imported where points are read, not for `racfield report`
    from racfield.fem.sweep import PointResult

STATE = ".racfield"
MANIFEST = "manifest.json"


def fingerprint(case_path: str | Path, case: Case) -> str:
    """SHA-256 of the case file's bytes and of the loaded case (which holds the
    contents of the files it refers to, e.g. waveform samples)."""
    digest = hashlib.sha256()
    digest.update(Path(case_path).read_bytes())
    digest.update(repr(case).encode("utf-8"))
    return digest.hexdigest()


@dataclass
class Manifest:
    """What racfield knows of a results folder (plain data, stored as JSON)."""

    fingerprint: str = ""
    options: dict = field(default_factory=dict)
    files: list[str] = field(default_factory=list)      #: written by racfield, relative to the folder
    finished: list[str] = field(default_factory=list)   #: arrangement keys whose files are all written


class RunState:
    """The state of one results folder: manifest, solved points, file claims."""

    def __init__(self, folder: Path) -> None:
        self.folder = folder
        self.state = folder / STATE
        self.manifest = self._read()

    def _read(self) -> Manifest:
        path = self.state / MANIFEST
        if not path.exists():
            return Manifest()
        try:
            doc = json.loads(path.read_text(encoding="utf-8"))
            return Manifest(doc["fingerprint"], doc["options"], list(doc["files"]), list(doc["finished"]))
        except (OSError, ValueError, KeyError, TypeError):
            raise CaseError("--out", f"{path} is damaged",
                            "delete the folder's .racfield state (or the folder) and run again") from None

    @property
    def exists(self) -> bool:
        return (self.state / MANIFEST).exists()

    def save(self) -> None:
        self.state.mkdir(parents=True, exist_ok=True)
        m = self.manifest
        replace_text(self.state / MANIFEST, json.dumps(
            {"fingerprint": m.fingerprint, "options": m.options, "files": sorted(set(m.files)),
             "finished": m.finished}, indent=1) + "\n")

    def start(self, print_: str, options: dict, resume: bool, case_file: str) -> None:
        """Check the folder for a resumed run (same case fingerprint ``print_``
        and ``options``), or reset it for a new one."""
        m = self.manifest
        if resume:
            if not self.exists:
                raise CaseError("--resume", f"{self.folder} holds no interrupted racfield run",
                                "run without --resume", case_file)
            if m.fingerprint != print_:
                raise CaseError("--resume", f"the case has changed since the run in {self.folder} started "
                                "(content hash differs)",
                                "run without --resume to start afresh (add --force to replace the old results)",
                                case_file)
            if m.options != options:
                raise CaseError("--resume", f"the run in {self.folder} used other options ({m.options})",
                                "resume with the same options, or run without --resume", case_file)
            return
        self.clear_points()
        self.manifest = Manifest(print_, options, m.files, [])
        self.save()

    def _relative(self, path: Path) -> str:
        return path.relative_to(self.folder).as_posix()

    def claim(self, paths: list[Path], force: bool, case_file: str) -> None:
        """Refuse (CaseError) a path outside the folder, or one that would
        overwrite an existing file racfield did not write.  In a folder with a
        manifest the paths are recorded before anything is written, so that a
        run killed while it writes can be rerun or resumed without --force."""
        root = self.folder.resolve()
        for path in paths:
            if not path.resolve().is_relative_to(root):
                raise CaseError("--out", f"{path} lies outside the results folder {self.folder}",
                                "report this case file: a name in it should have been refused", case_file)
        if not force:
            for path in paths:
                if path.exists() and self._relative(path) not in self.manifest.files and not path.is_dir():
                    raise CaseError("--out", f"{path} exists and was not written by racfield",
                                    "move it away, name another folder, or add --force", case_file)
        if self.exists:
            self.record(paths)

    def record(self, paths: list[Path]) -> None:
        self.manifest.files += [self._relative(p) for p in paths]
        self.save()

    def finish(self, key: str) -> None:
        if key not in self.manifest.finished:
            self.manifest.finished.append(key)
        self.save()

    def is_finished(self, key: str) -> bool:
        return key in self.manifest.finished

    # solved points

    def _points(self, key: str) -> Path:
        return self.state / "points" / (key or "_")

    def clear_points(self) -> None:
        points = self.state / "points"
        if points.exists():
            for path in sorted(points.rglob("*"), reverse=True):
                path.unlink() if path.is_file() else path.rmdir()

    def save_point(self, key: str, index: int, point: "PointResult") -> None:
        folder = self._points(key)
        folder.mkdir(parents=True, exist_ok=True)
        buffer = io.BytesIO()
        np.savez(buffer, **vars(point))
        replace_bytes(folder / f"{index:05d}.npz", buffer.getvalue())

    def load_points(self, key: str) -> dict[int, "PointResult"]:
        from racfield.fem.sweep import PointResult

        out = {}
        folder = self._points(key)
        for path in sorted(folder.glob("[0-9]*.npz")) if folder.exists() else []:
            try:
                with np.load(path) as data:
                    out[int(path.stem)] = PointResult(**{k: data[k] for k in data.files})
            except (OSError, ValueError, KeyError, TypeError):
                continue   # a damaged point is solved again
        return out
