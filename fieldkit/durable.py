"""Writing files so that a pulled plug leaves the old file or the new one, never half of one.

Used by the store (new store files), visit exports and job cards: a temporary file in the target
folder, flushed to disk, then renamed or linked into place, and the folder entry synced. A new
file gets the permissions the user's umask gives any new file (``mkstemp`` alone would make
every one private, 0o600, whatever the user chose); several files can be put in place all
together or not at all (:func:`replace_all`).
"""

from __future__ import annotations

import contextlib
import os
import shutil
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


def current_umask() -> int:
    """The process's umask. Read from /proc where it can be (reading it through ``os.umask``
    means setting it for a moment, which another thread could see)."""
    with contextlib.suppress(OSError, ValueError):
        for line in Path("/proc/self/status").read_text(encoding="ascii").splitlines():
            if line.startswith("Umask:"):
                return int(line.split()[1], 8)
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def new_file_mode() -> int:
    """The mode ``open()`` would give a new file now: read-write for whom the umask allows."""
    return 0o666 & ~current_umask()


def make_temp(folder: Path, prefix: str, suffix: str = ".tmp") -> tuple[int, Path]:
    """A new empty hidden file in ``folder`` (open descriptor and path) with the umask's mode."""
    fd, name = tempfile.mkstemp(prefix=prefix, suffix=suffix, dir=folder)
    if hasattr(os, "fchmod"):
        try:
            os.fchmod(fd, new_file_mode())
        except OSError:
            os.close(fd)
            Path(name).unlink(missing_ok=True)
            raise
    return fd, Path(name)


def write_temp(folder: Path, data: bytes, prefix: str) -> Path:
    """``data`` in a new hidden file in ``folder``, on disk before this returns. The caller moves
    it into place and removes it if that fails; OSError is left for the caller to word."""
    fd, tmp = make_temp(folder, prefix)
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


def replace_all(pairs: list[tuple[Path, Path]]) -> None:
    """Move each written temporary file over its target, all of them or none: when one move
    fails, the targets already replaced get their old content back (or are removed when they
    did not exist) and every temporary file is removed; the OSError is left for the caller."""
    done: list[tuple[Path, Path | None]] = []  # target, its old content kept aside (None: was new)
    try:
        for tmp, target in pairs:
            backup: Path | None = None
            if target.exists():
                backup = target.with_name(f".{target.name}.{os.getpid()}.old")
                backup.unlink(missing_ok=True)
                try:
                    os.link(target, backup)  # the old file stays whole at its name until the rename
                except OSError:  # no hard links here (a FAT stick): a copy does the same job
                    shutil.copy2(target, backup)
            done.append((target, backup))
            os.replace(tmp, target)
    except BaseException:
        for target, backup in reversed(done):
            with contextlib.suppress(OSError):
                if backup is not None:
                    os.replace(backup, target)
                else:
                    target.unlink(missing_ok=True)
        raise
    finally:
        for tmp, _target in pairs:
            with contextlib.suppress(OSError):
                tmp.unlink(missing_ok=True)
        for _target, backup in done:
            if backup is not None:
                with contextlib.suppress(OSError):
                    backup.unlink(missing_ok=True)
    for folder in {target.parent for _tmp, target in pairs}:
        sync_folder(folder)
