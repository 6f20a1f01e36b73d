"""Write a file whole or not at all: a temporary file, then a rename."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def replace_text(path: Path, text: str) -> Path:
    """Write ``text`` to ``path`` atomically (UTF-8, line ends as given)."""
    return replace_bytes(path, text.encode("utf-8"))


def replace_bytes(path: Path, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically."""
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        os.chmod(tmp, 0o666 & ~_umask())
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask
