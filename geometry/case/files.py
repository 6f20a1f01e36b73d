"""Reading a file a case names (the case file itself, a waveform CSV): only a
regular file, only up to a size limit, never blocking on a FIFO or a device."""

from __future__ import annotations

import os
import stat
from pathlib import Path

MAX_FILE_BYTES = 4 * 2 ** 20  #: 4 MiB: far above any real case or waveform file (10 000 placed conductors take about 1.2 MB), and read and parsed within seconds


class NotReadable(ValueError):
    """The file exists but is not one racfield reads: a FIFO, a device, a folder, or too large."""


def read_bytes(path: Path, limit: int = MAX_FILE_BYTES) -> bytes:
    """The bytes of the regular file ``path`` (at most ``limit``).  Opened
    without blocking, so that a FIFO or a device is refused at once
    (:class:`NotReadable`); OSError for a missing or unreadable file."""
    fd = os.open(path, os.O_RDONLY | os.O_NONBLOCK | getattr(os, "O_CLOEXEC", 0))
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode):
            kind = ("a folder" if stat.S_ISDIR(info.st_mode) else "a FIFO (named pipe)" if stat.S_ISFIFO(info.st_mode)
                    else "a device" if stat.S_ISCHR(info.st_mode) or stat.S_ISBLK(info.st_mode) else "not a regular file")
            raise NotReadable(f"is {kind}, not a regular file")
        if info.st_size > limit:
            raise NotReadable(f"is {info.st_size / 2 ** 20:.1f} MiB, more than the {limit / 2 ** 20:.0f} MiB limit")
        with os.fdopen(fd, "rb", closefd=True) as stream:
            fd = -1
            data = stream.read(limit + 1)
        if len(data) > limit:
            raise NotReadable(f"is more than the {limit / 2 ** 20:.0f} MiB limit")
        return data
    finally:
        if fd >= 0:
            os.close(fd)
