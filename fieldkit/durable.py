"""Writing files so that a pulled plug leaves the old file or the new one, never half of one.

Used by the store (new store files), visit exports and job cards: a temporary file in the target
folder, flushed to disk, then renamed or linked into place, and the folder entry synced.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path


def sync_folder(folder: Path) -> None:
    """Make a new or renamed directory entry durable (POSIX only; Windows has no folder fsync)."""
    if os.name != "posix":
        return
    with contextlib.suppress(OSError):
        fd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def write_temp(folder: Path, data: bytes, prefix: str) -> Path:
    """``data`` in a new hidden file in ``folder``, on disk before this returns. The caller moves
    it into place and removes it if that fails; OSError is left for the caller to word."""
    fd, name = tempfile.mkstemp(prefix=prefix, suffix=".tmp", dir=folder)
    tmp = Path(name)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            tmp.unlink()
        raise
    return tmp
