"""Deciding whether a path may be opened as a visit store, and making a new store safely.

A technician's store holds months of readings; pointing fieldkit at the wrong file (a backup
of another program, a half-copied file from a USB stick) must never damage it. So the file is
judged from its first 100 bytes before SQLite is allowed near it, a foreign or damaged file is
refused with a message naming the path, and a new store is built completely in a temporary
file beside the target and only then linked into place: the path holds either nothing, an
empty file, or a whole store, never a half-made one.
"""

from __future__ import annotations

import contextlib
import errno
import os
import sqlite3
import stat
from enum import Enum
from pathlib import Path

from fieldkit.durable import make_temp, sync_folder
from fieldkit.errors import StoreError
from fieldkit.store.migrations import APPLICATION_ID, MIGRATIONS, Migration, apply_pending, latest_version

SQLITE_MAGIC = b"SQLite format 3\x00"
_READONLY, _CANTOPEN = 8, 14  # SQLite result codes (sqlite3.h)
HEADER_BYTES = 100


class FileState(Enum):
    ABSENT = "absent"
    EMPTY = "empty"
    STORE = "store"


def _refuse(path: Path, what: str) -> StoreError:
    return StoreError(f"{path}: {what}; fieldkit has not changed it")


def inspect_file(path: Path, migrations: tuple[Migration, ...] = MIGRATIONS) -> FileState:
    """Judge a path without opening it with SQLite. Raises StoreError for anything that is not
    missing, empty, or a fieldkit store this program can read."""
    try:
        info = path.stat()
    except FileNotFoundError:
        return FileState.ABSENT
    except NotADirectoryError:
        raise StoreError(f"{path}: a part of this path is a file, not a folder") from None
    except OSError as exc:
        raise StoreError(f"{path}: cannot look at the store file ({exc.strerror or exc})") from None
    if stat.S_ISDIR(info.st_mode):
        raise StoreError(
            f"{path} is a folder; give the path of a store file inside it, e.g. {path / 'visits.sqlite3'}"
        )
    if not stat.S_ISREG(info.st_mode):
        raise _refuse(path, "this is not a regular file")
    if info.st_size == 0:
        return FileState.EMPTY
    try:
        with path.open("rb") as fh:
            header = fh.read(HEADER_BYTES)
    except OSError as exc:
        raise StoreError(f"{path}: cannot read the store file ({exc.strerror or exc})") from None
    if len(header) < HEADER_BYTES:
        if SQLITE_MAGIC.startswith(header[:16]) or header.startswith(SQLITE_MAGIC):
            raise _refuse(path, f"the file is only {len(header)} bytes long: it was cut short (truncated)")
        raise _refuse(
            path, f"this is not a fieldkit store (a {len(header)}-byte file that is not an SQLite database)"
        )
    if not header.startswith(SQLITE_MAGIC):
        raise _refuse(
            path,
            "this is not a fieldkit store: it is not an SQLite database (damaged, or another kind of file)",
        )
    app_id = int.from_bytes(header[68:72], "big")
    if app_id != APPLICATION_ID:
        if app_id == 0:
            raise _refuse(path, "this is an SQLite database made by another program, not a fieldkit store")
        raise _refuse(
            path,
            f"this is an SQLite database of another program (application id 0x{app_id:08X}), not a fieldkit "
            "store",
        )
    _check_version(path, int.from_bytes(header[60:64], "big", signed=True), migrations)
    _check_length(path, header, info.st_size)
    return FileState.STORE


def _check_version(path: Path, version: int, migrations: tuple[Migration, ...]) -> None:
    ours = latest_version(migrations)
    if version > ours:
        raise _refuse(
            path,
            f"this store was made by a newer fieldkit (layout {version}; this program knows up to {ours}); "
            "update fieldkit to open it",
        )


def _check_length(path: Path, header: bytes, size: int) -> None:
    """A file shorter than its own header says was cut short. Skipped while a write-ahead log
    with content sits beside it: then the main file may legitimately lag behind."""
    wal = Path(str(path) + "-wal")
    with contextlib.suppress(OSError):
        if wal.stat().st_size > 0:
            return
    raw_page = int.from_bytes(header[16:18], "big")
    page_size = 65536 if raw_page == 1 else raw_page
    if page_size < 512 or page_size & (page_size - 1):
        raise _refuse(path, "the store's header is damaged (impossible page size)")
    pages = int.from_bytes(header[28:32], "big")
    header_valid = header[24:28] == header[92:96] and pages > 0
    if size % page_size or (header_valid and size < pages * page_size):
        expected = f"{pages * page_size:,}" if header_valid else f"a multiple of {page_size:,}"
        raise _refuse(
            path, f"the file is {size:,} bytes but should be {expected}: it was cut short (truncated)"
        )


def inspect_with_sqlite(
    path: Path, migrations: tuple[Migration, ...] = MIGRATIONS, *, immutable: bool = False
) -> int:
    """Second look through a read-only connection, which also sees a write-ahead log a raw read
    cannot. A read-only connection never checkpoints, so the main file stays byte-identical.
    ``immutable``: the folder cannot be written, so SQLite may not look for a log it could not
    make. Returns the store's layout version."""
    mode = "ro&immutable=1" if immutable else "ro"
    try:
        conn = sqlite3.connect(path.resolve().as_uri() + f"?mode={mode}", uri=True, isolation_level=None)
    except sqlite3.Error as exc:
        raise StoreError(f"{path}: cannot open the store ({exc})") from None
    try:
        conn.execute("PRAGMA busy_timeout = 5000")
        app_id = int(conn.execute("PRAGMA application_id").fetchone()[0])
        version = int(conn.execute("PRAGMA user_version").fetchone()[0])
        tables = {row[0] for row in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    except sqlite3.DatabaseError as exc:
        code = (getattr(exc, "sqlite_errorcode", None) or 0) & 0xFF
        if code in (_READONLY, _CANTOPEN):  # not damage: the file or its folder cannot be written
            raise StoreError(
                f"{path}: cannot open the store for reading here (read-only file or folder: {exc})"
            ) from None
        raise _refuse(path, f"the store is damaged and cannot be read ({exc})") from None
    finally:
        conn.close()
    if app_id != APPLICATION_ID:
        raise _refuse(path, "this is not a fieldkit store (its mark is missing)")
    _check_version(path, version, migrations)
    if version >= 1 and not {"visit", "reading"} <= tables:
        raise _refuse(
            path, "this file carries fieldkit's mark but lacks a store's tables; it is damaged or foreign"
        )
    return version


def create_store(path: Path, migrations: tuple[Migration, ...] = MIGRATIONS) -> None:
    """Build a complete, empty store beside ``path`` and move it into place. If another
    fieldkit created the store a moment earlier, theirs is kept and ours is discarded."""
    folder = path.parent
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise StoreError(f"{path}: cannot create the folder {folder} ({exc.strerror or exc})") from None
    try:
        fd, tmp = make_temp(folder, ".fieldkit-new-", ".sqlite3")  # the user's umask, not 0o600
    except OSError as exc:
        raise StoreError(f"{path}: cannot write in the folder {folder} ({exc.strerror or exc})") from None
    os.close(fd)
    try:
        _build(tmp, migrations)
        _move_into_place(tmp, path)
    finally:
        for leftover in (tmp, Path(f"{tmp}-wal"), Path(f"{tmp}-shm"), Path(f"{tmp}-journal")):
            with contextlib.suppress(FileNotFoundError):
                leftover.unlink()


def _build(tmp: Path, migrations: tuple[Migration, ...]) -> None:
    try:
        conn = sqlite3.connect(tmp, isolation_level=None)
        try:
            conn.execute("PRAGMA synchronous = FULL")
            conn.execute("BEGIN IMMEDIATE")
            conn.execute(f"PRAGMA application_id = {APPLICATION_ID}")
            apply_pending(conn, migrations)
            conn.execute("COMMIT")
            # WAL is set last and persists in the header; closing checkpoints, so no log is left.
            conn.execute("PRAGMA journal_mode = WAL")
        finally:
            conn.close()
    except sqlite3.Error as exc:
        raise StoreError(f"{tmp.parent}: cannot create a new store there ({exc})") from None
    if Path(f"{tmp}-wal").exists():
        raise StoreError(f"{tmp.parent}: the new store was not written completely; nothing was changed")


def _move_into_place(tmp: Path, path: Path) -> None:
    try:
        os.link(tmp, path)  # fails if the path appeared meanwhile: never overwrite
    except FileExistsError:
        if path.is_file() and path.stat().st_size == 0:
            os.replace(tmp, path)
    except OSError as exc:
        if not hasattr(os, "link") or exc.errno in {
            errno.EPERM,
            errno.ENOSYS,
            errno.EOPNOTSUPP,
        }:  # no hard links (FAT sticks)
            if not path.exists() or (path.is_file() and path.stat().st_size == 0):
                os.replace(tmp, path)
        else:
            raise StoreError(f"{path}: cannot create the store ({exc.strerror or exc})") from None
    sync_folder(path.parent)
