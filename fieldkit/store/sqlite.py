"""The visit store in one SQLite file: a reading is on disk the moment it is reported saved.

Why it is built this way:

* Each visit header and each reading is kept as the model's own JSON, beside a few indexed
  columns for lookups. The pydantic models stay the one place that says what is valid; every row
  is validated again when read, and a row that fails names its visit or reading.
* Write-ahead logging with ``synchronous=FULL``: a committed reading survives a killed process
  and a power cut (``NORMAL`` could lose the last commits). Each reading is its own
  transaction; imports are one transaction, all or nothing.
* ``BEGIN IMMEDIATE`` takes the write lock up front, so two fieldkits on one file queue for up
  to ``busy_timeout`` instead of failing halfway; past that the user is told the store is busy.
* Readings are never rewritten: a correction is a new row pointing at the old one, a deletion
  sets ``deleted_at`` once. Triggers in the schema enforce this.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import json
import math
import os
import sqlite3
import threading
from collections.abc import Iterable, Iterator, Sequence
from datetime import UTC
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ValidationError

from fieldkit.errors import StoreError
from fieldkit.model.kit import KitItem
from fieldkit.model.visit import Gauge, Reading, Visit, VisitStatus, new_id
from fieldkit.store import kit_table
from fieldkit.store.base import EDITABLE_FIELDS, VisitSummary
from fieldkit.store.header_log import changed_fields
from fieldkit.store.migrations import MIGRATIONS, Migration, apply_pending, latest_version
from fieldkit.store.opening import FileState, create_store, inspect_file, inspect_with_sqlite
from fieldkit.tomlfile import validation_error
from fieldkit.units import Q_

DEFAULT_BUSY_TIMEOUT_MS = 5000

# SQLite primary result codes (sqlite3.h) used to explain a failure in plain words.
_BUSY, _LOCKED, _READONLY, _IOERR, _CORRUPT, _FULL, _CANTOPEN, _NOTADB = 5, 6, 8, 10, 11, 13, 14, 26


def iso(moment: dt.datetime) -> str:
    """Fixed-width UTC text, so text order is time order in indexes and ORDER BY."""
    return moment.astimezone(UTC).isoformat(timespec="microseconds").replace("+00:00", "Z")


def _now() -> str:
    return iso(dt.datetime.now(UTC))


def _why(exc: Exception) -> str:
    if isinstance(exc, ValidationError):
        err = validation_error(exc, "", None)
        return f"{err.key}: {err.detail}" if err.key else err.detail
    return str(exc)


class SqliteVisitStore:
    """A :class:`~fieldkit.store.base.VisitStore` in one SQLite file.

    Opening refuses (StoreError, file untouched) a folder, a damaged or truncated file, a foreign
    database, and a store made by a newer fieldkit; a missing or empty file becomes a new store.
    One connection, guarded by a lock, so a UI worker thread may share the object.
    """

    def __init__(
        self,
        path: str | Path,
        *,
        busy_timeout_ms: int = DEFAULT_BUSY_TIMEOUT_MS,
        migrations: tuple[Migration, ...] = MIGRATIONS,
        read_only: bool | None = None,
    ) -> None:
        self.path = Path(path)
        self._busy_timeout_ms = int(busy_timeout_ms)
        self._lock = threading.RLock()
        self._conn: sqlite3.Connection | None = None
        state = inspect_file(self.path, migrations)
        #: Opened for reading only: asked for, or the file or its folder cannot be written here
        #: (a store on a write-protected stick, a colleague's file). Reads work; every write is
        #: refused with a message that says read-only, never 'damaged'.
        self.read_only = (not writable_here(self.path)) if read_only is None else read_only
        if state is not FileState.STORE:
            if self.read_only and state is FileState.EMPTY:
                raise StoreError(f"{self.path} is an empty file that cannot be written here (read-only)")
            create_store(self.path, migrations)
            inspect_file(self.path, migrations)  # whoever won a creation race, judge what is there now
        version = inspect_with_sqlite(self.path, migrations, immutable=self._immutable)
        if self.read_only and version < latest_version(migrations):
            raise StoreError(
                f"the store {self.path} is read-only here and was made by an older fieldkit (layout "
                f"{version}); it is upgraded once, where it can be written: copy it to a writable folder"
            )
        self._conn = self._connect()
        if version < latest_version(migrations):
            try:
                with self._write("upgrade"):
                    apply_pending(self._conn, migrations)
            except BaseException:
                self.close()
                raise
        self.origin = self._replica_value("origin") or ""

    def _replica_value(self, key: str) -> str | None:
        with self._lock:
            try:
                row = self._db.execute("SELECT value FROM replica WHERE key = ?", (key,)).fetchone()
            except sqlite3.OperationalError:  # a store opened with an older layout list (tests)
                return None
            return None if row is None else str(row[0])

    def transaction(self, doing: str = "change") -> contextlib.AbstractContextManager[sqlite3.Connection]:
        """A write transaction for the sync module (:mod:`fieldkit.store.replica`)."""
        return self._write(doing)

    def snapshot(self) -> contextlib.AbstractContextManager[sqlite3.Connection]:
        """A read transaction for the sync module."""
        return self._read()

    # --- connection and transactions ----------------------------------------------------------

    @property
    def _immutable(self) -> bool:
        """A read-only store in a folder that cannot be written either: SQLite cannot make the
        shared-memory file a WAL reader needs, so the file is opened as unchanging (nobody can
        write it there), unless a write-ahead log with content lies beside it."""
        if not self.read_only or os.access(self.path.parent, os.W_OK):
            return False
        wal = Path(f"{self.path}-wal")
        return not (wal.exists() and wal.stat().st_size > 0)

    def _connect(self) -> sqlite3.Connection:
        mode = ("ro&immutable=1" if self._immutable else "ro") if self.read_only else "rw"
        try:
            conn = sqlite3.connect(
                self.path.resolve().as_uri() + f"?mode={mode}",
                uri=True,
                isolation_level=None,
                check_same_thread=False,
                timeout=self._busy_timeout_ms / 1000,
            )
        except sqlite3.Error as exc:
            raise self._error(exc, "open") from None
        try:
            # synchronous is per connection: it must be set on every connect, not once per file.
            conn.execute(f"PRAGMA busy_timeout = {self._busy_timeout_ms}")
            if self.read_only:  # a reader changes nothing, not even the journal mode
                conn.execute("PRAGMA query_only = ON")
                return conn
            conn.execute("PRAGMA journal_mode = WAL")
            conn.execute("PRAGMA synchronous = FULL")
            conn.execute("PRAGMA foreign_keys = ON")
        except sqlite3.Error as exc:
            conn.close()
            raise self._error(exc, "open") from None
        return conn

    def _error(self, exc: sqlite3.Error, doing: str) -> StoreError:
        """Plain words for a failed SQLite call; ``doing`` names the operation (a noun)."""
        code = (getattr(exc, "sqlite_errorcode", None) or 0) & 0xFF
        lost = "" if doing in ("open", "read") else f"; nothing was saved by this {doing}"
        if code in (_BUSY, _LOCKED):
            seconds = self._busy_timeout_ms / 1000
            return StoreError(
                f"the store is busy: another fieldkit is writing to {self.path} and did not finish within "
                f"{seconds:g} s{lost}; try again in a moment"
            )
        if code == _FULL:
            return StoreError(f"the disk holding {self.path} is full{lost}")
        if code == _READONLY:
            return StoreError(f"the store {self.path} cannot be written here (read-only){lost}")
        if code in (_CORRUPT, _NOTADB):
            return StoreError(
                f"the store {self.path} is damaged ({exc}); copy it aside before trying to repair it"
            )
        if code == _CANTOPEN:
            return StoreError(f"cannot open the store {self.path} ({exc})")
        if code == _IOERR:
            return StoreError(f"the disk reported an error with {self.path} ({exc}){lost}")
        return StoreError(f"the store {self.path} failed during this {doing} ({exc}){lost}")

    @property
    def _db(self) -> sqlite3.Connection:
        if self._conn is None:
            raise StoreError(f"the store {self.path} is closed")
        return self._conn

    @contextlib.contextmanager
    def _write(self, doing: str = "change") -> Iterator[sqlite3.Connection]:
        """One write transaction: committed (durably) when the block ends, rolled back on any error."""
        with self._lock:
            conn = self._db
            if self.read_only:
                raise StoreError(
                    f"the store {self.path} is read-only here (the file or its folder cannot be written); "
                    f"nothing was saved by this {doing}. Copy it to a folder you can write, or have its "
                    "owner make it writable"
                )
            try:
                conn.execute("BEGIN IMMEDIATE")
            except sqlite3.Error as exc:
                raise self._error(exc, doing) from None
            try:
                yield conn
                conn.execute("COMMIT")
            except BaseException as exc:
                with contextlib.suppress(sqlite3.Error):
                    conn.execute("ROLLBACK")
                if isinstance(exc, sqlite3.Error):
                    raise self._error(exc, doing) from None
                raise

    @contextlib.contextmanager
    def _read(self) -> Iterator[sqlite3.Connection]:
        """A read transaction, so a header and its readings come from the same moment."""
        with self._lock:
            conn = self._db
            try:
                conn.execute("BEGIN")
                yield conn
            except sqlite3.Error as exc:
                raise self._error(exc, "read") from None
            finally:
                with contextlib.suppress(sqlite3.Error):
                    conn.execute("ROLLBACK")

    def close(self) -> None:
        with self._lock:
            if self._conn is not None:
                self._conn.close()
                self._conn = None

    def __enter__(self) -> SqliteVisitStore:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def __repr__(self) -> str:
        return f"SqliteVisitStore({str(self.path)!r})"

    def connection_settings(self) -> dict[str, object]:
        """How this connection keeps the file (for a 'store info' command and the tests)."""
        with self._lock:
            conn = self._db
            return {
                name: conn.execute(f"PRAGMA {name}").fetchone()[0]
                for name in (
                    "journal_mode",
                    "synchronous",
                    "foreign_keys",
                    "busy_timeout",
                    "user_version",
                    "application_id",
                )
            }

    def integrity_check(self) -> list[str]:
        """SQLite's own full check; ``["ok"]`` for a healthy file (for a 'check my store' command)."""
        with self._read() as conn:
            return [str(row[0]) for row in conn.execute("PRAGMA integrity_check")]

    # --- rows <-> models ---------------------------------------------------------------------

    def _header(self, conn: sqlite3.Connection, visit_id: str) -> tuple[dict[str, Any], Visit]:
        row = conn.execute("SELECT header_json FROM visit WHERE id = ?", (visit_id,)).fetchone()
        if row is None:
            raise StoreError(f"no visit with id '{visit_id}' in {self.path}")
        return self._parse_header(visit_id, row[0])

    def _parse_header(self, visit_id: str, text: str) -> tuple[dict[str, Any], Visit]:
        try:
            data = json.loads(text)
            if not isinstance(data, dict):
                raise ValueError("the stored header is not a JSON object")
            return data, Visit.model_validate({**data, "readings": []})
        except (ValueError, ValidationError) as exc:
            raise StoreError(f"visit '{visit_id}' in {self.path} cannot be read: {_why(exc)}") from None

    def _readings(
        self, conn: sqlite3.Connection, visit_id: str, where: str = "", args: tuple[Any, ...] = ()
    ) -> list[Reading]:
        rows = conn.execute(
            f"SELECT id, reading_json, deleted_at FROM reading WHERE visit_id = ? {where} ORDER BY seq",
            (visit_id, *args),
        ).fetchall()
        return [self._parse_reading(visit_id, rid, text, deleted) for rid, text, deleted in rows]

    def _parse_reading(self, visit_id: str, reading_id: str, text: str, deleted_at: str | None) -> Reading:
        data: Any = None
        try:
            data = json.loads(text)
            if not isinstance(data, dict):
                raise ValueError("the stored reading is not a JSON object")
            # What was entered is immutable; the deletion mark lives in its own column.
            return Reading.model_validate({**data, "deleted_at": deleted_at})
        except (ValueError, ValidationError) as exc:
            kept = _unreadable_value(data, deleted_at, _why(exc))
            if kept is not None:
                return kept
            raise StoreError(
                f"reading '{reading_id}' of visit '{visit_id}' in {self.path} cannot be read: {_why(exc)}"
            ) from None

    def _load(self, conn: sqlite3.Connection, visit_id: str) -> Visit:
        data, _ = self._header(conn, visit_id)
        readings = self._readings(conn, visit_id)
        try:
            return Visit.model_validate({**data, "readings": readings})
        except ValidationError as exc:
            raise StoreError(f"visit '{visit_id}' in {self.path} cannot be read: {_why(exc)}") from None

    def _current_count(self, conn: sqlite3.Connection, visit_id: str) -> int:
        return int(
            conn.execute(
                """SELECT count(*) FROM reading r WHERE r.visit_id = ? AND r.deleted_at IS NULL
               AND NOT EXISTS (SELECT 1 FROM reading c
                               WHERE c.visit_id = r.visit_id AND c.replaces = r.id)""",
                (visit_id,),
            ).fetchone()[0]
        )

    def _summary(
        self, conn: sqlite3.Connection, header: Visit, updated_at: str, taken_by: str = ""
    ) -> VisitSummary:
        return VisitSummary(
            id=header.id,
            job_number=header.job_number,
            customer=header.customer,
            machine=header.machine,
            date=header.date,
            status=header.status,
            reading_count=self._current_count(conn, header.id),
            updated_at=dt.datetime.fromisoformat(updated_at),
            taken_by=taken_by,
        )

    @staticmethod
    def _checked(model: type[BaseModel], obj: Any, what: str) -> Any:
        """Validate again from the field values: a model built with ``model_construct`` or
        changed after construction is checked before it reaches the disk."""
        try:
            return model.model_validate(_field_values(obj))
        except ValidationError as exc:
            raise StoreError(f"{what} is not valid and was not saved: {_why(exc)}") from None

    def _write_header(self, conn: sqlite3.Connection, visit: Visit, *, insert: bool) -> None:
        """Write the header and log each changed field (fieldkit.store.header_log), so the edit
        can travel to the shop server and merge there field by field."""
        now = _now()
        header = visit.model_dump_json(exclude={"readings"})
        before: dict[str, Any] | None = None
        if insert:
            conn.execute(
                "INSERT INTO visit (id, machine, status, visit_date, created_at, updated_at, header_json, "
                "origin) "
                "VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
                (
                    visit.id,
                    visit.machine,
                    visit.status.value,
                    visit.date.isoformat(),
                    now,
                    now,
                    header,
                    self.origin,
                ),
            )
        else:
            row = conn.execute("SELECT header_json FROM visit WHERE id = ?", (visit.id,)).fetchone()
            before = json.loads(row[0]) if row else None
            conn.execute(
                "UPDATE visit SET machine = ?, status = ?, visit_date = ?, updated_at = ?, header_json = ? "
                "WHERE id = ?",
                (visit.machine, visit.status.value, visit.date.isoformat(), now, header, visit.id),
            )
        self._log_header(conn, visit.id, changed_fields(before, json.loads(header)), now)

    def _log_header(self, conn: sqlite3.Connection, visit_id: str, changes: dict[str, str], now: str) -> None:
        """An edit made here after seeing a value must win over it even if this laptop's clock is
        behind the one that wrote the value: its time is pushed past the field's newest change."""
        start = dt.datetime.fromisoformat(now)
        for i, (field, value) in enumerate(changes.items()):
            row = conn.execute(
                "SELECT max(changed_at) FROM header_change WHERE visit_id = ? AND field = ?",
                (visit_id, field),
            ).fetchone()
            at = iso(start + dt.timedelta(microseconds=i))  # gauges added in one edit keep their order
            if row and row[0] is not None and row[0] >= at:
                at = iso(dt.datetime.fromisoformat(row[0]) + dt.timedelta(microseconds=1))
            conn.execute(
                "INSERT INTO header_change (id, visit_id, field, value_json, changed_at, origin) "
                "VALUES (?, ?, ?, ?, ?, ?)",
                (new_id() + new_id()[:4], visit_id, field, value, at, self.origin),
            )

    def _touch(self, conn: sqlite3.Connection, visit_id: str) -> None:
        conn.execute("UPDATE visit SET updated_at = ? WHERE id = ?", (_now(), visit_id))

    def _insert_reading(self, conn: sqlite3.Connection, visit_id: str, reading: Reading) -> None:
        conn.execute(
            "INSERT INTO reading (visit_id, id, test_point, taken_at, replaces, deleted_at, stored_at, "
            "reading_json, "
            "origin) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (
                visit_id,
                reading.id,
                reading.test_point,
                iso(reading.taken_at),
                reading.replaces,
                iso(reading.deleted_at) if reading.deleted_at else None,
                _now(),
                reading.model_dump_json(exclude={"deleted_at"}),
                self.origin,
            ),
        )

    def _open_header(self, conn: sqlite3.Connection, visit_id: str) -> Visit:
        _, header = self._header(conn, visit_id)
        if header.status is VisitStatus.CLOSED:
            raise StoreError(
                f"visit {header.job_number} ('{visit_id}') is closed; reopen it before changing it"
            )
        return header

    def _check_new_reading(
        self, conn: sqlite3.Connection, header: Visit, reading: Reading, taken: set[str]
    ) -> Reading:
        checked: Reading = self._checked(Reading, reading, f"reading '{getattr(reading, 'id', '?')}'")
        if checked.deleted_at is not None:
            raise StoreError(f"reading '{checked.id}' is marked deleted; add it first, then delete it")
        if checked.gauge is not None and header.gauge(checked.gauge) is None:
            known = ", ".join(g.id for g in header.gauges) or "none yet"
            raise StoreError(
                f"reading '{checked.id}' names gauge '{checked.gauge}', which this visit does not have "
                f"(gauges: {known})"
            )
        exists = conn.execute(
            "SELECT 1 FROM reading WHERE visit_id = ? AND id = ?", (header.id, checked.id)
        ).fetchone()
        if exists or checked.id in taken:
            raise StoreError(f"visit '{header.id}' already has a reading with id '{checked.id}'")
        taken.add(checked.id)
        return checked

    # --- visits ------------------------------------------------------------------------------

    def create_visit(self, visit: Visit) -> Visit:
        """Save a new visit (with any readings it already has) in one transaction."""
        return self._insert_visit(self._checked(Visit, visit, f"visit '{getattr(visit, 'id', '?')}'"))

    def import_visit(self, visit: Visit, *, as_new: bool = False) -> Visit:
        """Bring in a visit from another laptop or an export, all or nothing. With ``as_new`` the
        visit and its readings get fresh ids (corrections keep pointing at the right reading),
        so the same export can be imported twice, e.g. to practise on a copy."""
        checked: Visit = self._checked(Visit, visit, f"visit '{getattr(visit, 'id', '?')}'")
        if as_new:
            checked = _with_fresh_ids(checked)
        return self._insert_visit(checked)

    def _insert_visit(self, visit: Visit) -> Visit:
        with self._write("import") as conn:
            if conn.execute("SELECT 1 FROM visit WHERE id = ?", (visit.id,)).fetchone():
                raise StoreError(
                    f"a visit with id '{visit.id}' is already in {self.path}; import it as a new visit to "
                    "keep both"
                )
            self._write_header(conn, visit, insert=True)
            for reading in visit.readings:
                self._insert_reading(conn, visit.id, reading)
            return self._load(conn, visit.id)

    def get_visit(self, visit_id: str) -> Visit:
        with self._read() as conn:
            return self._load(conn, visit_id)

    def list_visits(
        self, status: VisitStatus | str | None = None, machine: str | None = None
    ) -> list[VisitSummary]:
        """Newest first."""
        clauses, args = [], []
        if status is not None:
            try:
                clauses.append("status = ?")
                args.append(VisitStatus(status).value)
            except ValueError:
                raise StoreError(f"unknown visit status '{status}'; use open or closed") from None
        if machine is not None:
            clauses.append("machine = ?")
            args.append(machine)
        where = ("WHERE " + " AND ".join(clauses)) if clauses else ""
        with self._read() as conn:
            rows = conn.execute(
                f"SELECT id, header_json, updated_at, taken_by FROM visit {where} "
                "ORDER BY visit_date DESC, created_at DESC, id",
                args,
            ).fetchall()
            return [
                self._summary(conn, self._parse_header(vid, text)[1], updated, by)
                for vid, text, updated, by in rows
            ]

    def update_visit(self, visit_id: str, **fields: Any) -> Visit:
        """Change header fields (job number, customer, gauges…); see ``EDITABLE_FIELDS``."""
        unknown = sorted(set(fields) - EDITABLE_FIELDS)
        if unknown:
            raise StoreError(
                f"cannot change {', '.join(unknown)} of a visit here; changeable: "
                f"{', '.join(sorted(EDITABLE_FIELDS))}"
            )
        with self._write("update") as conn:
            self._open_header(conn, visit_id)
            current = self._load(conn, visit_id)
            try:
                changed = Visit.model_validate(
                    {
                        **current.model_dump(exclude={"readings"}),
                        **_field_values(fields),
                        "readings": current.readings,
                    }
                )
            except ValidationError as exc:
                raise StoreError(f"visit {current.job_number} was not changed: {_why(exc)}") from None
            self._write_header(conn, changed, insert=False)
            return self._load(conn, visit_id)

    def add_gauge(self, visit_id: str, gauge: Gauge) -> Visit:
        checked: Gauge = self._checked(Gauge, gauge, f"gauge '{getattr(gauge, 'id', '?')}'")
        with self._write("gauge") as conn:
            header = self._open_header(conn, visit_id)
            if header.gauge(checked.id) is not None:
                raise StoreError(
                    f"visit {header.job_number} already has a gauge '{checked.id}'; give this one another id"
                )
            self._write_header(
                conn, header.model_copy(update={"gauges": [*header.gauges, checked]}), insert=False
            )
            return self._load(conn, visit_id)

    def close_visit(self, visit_id: str, summary: str) -> Visit:
        return self._set_status(visit_id, VisitStatus.CLOSED, summary)

    def reopen_visit(self, visit_id: str) -> Visit:
        return self._set_status(visit_id, VisitStatus.OPEN, None)

    def _set_status(self, visit_id: str, status: VisitStatus, summary: str | None) -> Visit:
        with self._write("status change") as conn:
            data, header = self._header(conn, visit_id)
            if header.status is status:
                raise StoreError(f"visit {header.job_number} ('{visit_id}') is already {status.value}")
            update: dict[str, Any] = {"status": status.value}
            if summary is not None:
                update["summary"] = summary
            try:
                changed = Visit.model_validate({**data, **update, "readings": []})
            except ValidationError as exc:
                raise StoreError(f"visit {header.job_number} was not {status.value}: {_why(exc)}") from None
            self._write_header(conn, changed, insert=False)
            return self._load(conn, visit_id)

    # --- the instrument kit (fieldkit.store.kit_table) ---------------------------------------

    def kit(self, *, include_retired: bool = False) -> list[KitItem]:
        """The technician's instruments, in service ones only unless asked."""
        with self._read() as conn:
            return kit_table.list_items(conn, include_retired=include_retired)

    def kit_item(self, item_id: str) -> KitItem:
        with self._read() as conn:
            return kit_table.get_item(conn, item_id)

    def add_kit_item(self, item: KitItem) -> KitItem:
        checked: KitItem = self._checked(KitItem, item, f"kit item '{getattr(item, 'id', '?')}'")
        with self._write("kit") as conn:
            kit_table.insert_item(conn, checked, self.origin)
            return kit_table.get_item(conn, checked.id)

    def edit_kit_item(self, item_id: str, **fields: Any) -> KitItem:
        """Change an instrument (a new calibration date, a corrected serial). Visits that already
        picked it keep their copy."""
        if "id" in fields:
            raise StoreError("an instrument keeps its id; retire it and add a new one instead")
        with self._write("kit") as conn:
            current = kit_table.get_item(conn, item_id)
            try:
                changed = KitItem.model_validate({**current.model_dump(), **_field_values(fields)})
            except ValidationError as exc:
                raise StoreError(f"instrument '{item_id}' was not changed: {_why(exc)}") from None
            kit_table.replace_item(conn, changed)
            return changed

    def retire_kit_item(self, item_id: str, on: dt.date | None = None) -> KitItem:
        """Take an instrument out of service; it stays on the visits that used it."""
        with self._write("kit") as conn:
            current = kit_table.get_item(conn, item_id)
            if current.retired_on is not None:
                raise StoreError(
                    f"instrument '{item_id}' was already retired on {current.retired_on.isoformat()}"
                )
            changed = current.model_copy(update={"retired_on": on or dt.datetime.now(dt.UTC).date()})
            kit_table.replace_item(conn, changed)
            return changed

    def merge_kit(self, items: Iterable[KitItem]) -> list[str]:
        """Bring in instruments from an import: new ids are added, ids already here are kept as
        they are (this laptop's record wins). Returns the ids added."""
        added: list[str] = []
        with self._write("kit") as conn:
            for item in items:
                checked: KitItem = self._checked(KitItem, item, f"kit item '{getattr(item, 'id', '?')}'")
                if conn.execute("SELECT 1 FROM kit_item WHERE id = ?", (checked.id,)).fetchone():
                    continue
                kit_table.insert_item(conn, checked, self.origin)
                added.append(checked.id)
        return added

    # --- readings ------------------------------------------------------------------------------

    def add_reading(self, visit_id: str, reading: Reading) -> Reading:
        """Save one reading; when this returns it is on disk (its own committed transaction)."""
        return self.add_readings(visit_id, [reading])[0]

    def add_readings(self, visit_id: str, readings: Iterable[Reading]) -> list[Reading]:
        """Save many readings in one transaction: all of them, or none (a CSV import)."""
        with self._write("reading") as conn:
            header = self._open_header(conn, visit_id)
            taken: set[str] = set()
            saved: list[Reading] = []
            for reading in readings:
                checked = self._check_new_reading(conn, header, reading, taken)
                if checked.replaces is not None:
                    raise StoreError(
                        f"reading '{checked.id}' says it replaces '{checked.replaces}'; use a correction "
                        "for that"
                    )
                self._insert_reading(conn, visit_id, checked)
                saved.append(checked)
            self._touch(conn, visit_id)
            return saved

    def correct_reading(self, visit_id: str, old_id: str, new_reading: Reading) -> Reading:
        """Record a corrected value; the old one stays in the history, marked as replaced. An
        edited copy of the old reading (same id) is given a fresh id."""
        with self._write("correction") as conn:
            header = self._open_header(conn, visit_id)
            old = self._standing(conn, visit_id, old_id)
            if getattr(new_reading, "id", None) == old_id:  # an edited copy of the old reading
                new_reading = new_reading.model_copy(update={"id": new_id()})
            checked = self._check_new_reading(conn, header, new_reading, set())
            if checked.replaces not in (None, old_id):
                raise StoreError(
                    f"reading '{checked.id}' says it replaces '{checked.replaces}', not '{old_id}'"
                )
            if checked.test_point != old.test_point:
                raise StoreError(
                    f"a correction of reading '{old_id}' must be for the same test point ({old.test_point}); "
                    "to move a reading to another test point, delete it and add a new one"
                )
            checked = Reading.model_validate({**checked.model_dump(), "replaces": old_id})
            self._insert_reading(conn, visit_id, checked)
            self._touch(conn, visit_id)
            return checked

    def delete_reading(self, visit_id: str, reading_id: str, reason: str = "") -> Reading:
        """Mark a reading deleted; the row and its value stay for the record. A ``reason`` is
        kept in the visit's notes in the same transaction (the deletion record has no text of
        its own), so it travels with the visit and is printed on the job card."""
        with self._write("deletion") as conn:
            header = self._open_header(conn, visit_id)
            old = self._standing(conn, visit_id, reading_id)
            now = _now()
            if reason.strip():
                line = (
                    f"Reading {reading_id} at {old.test_point} (entered '{old.entered}') deleted "
                    f"{now[:16].replace('T', ' ')} UTC: {' '.join(reason.split())}"
                )
                notes = f"{header.notes}\n{line}" if header.notes else line
                try:
                    changed = Visit.model_validate({**header.model_dump(), "notes": notes, "readings": []})
                except ValidationError as exc:
                    raise StoreError(f"reading {reading_id} was not deleted: {_why(exc)}") from None
                self._write_header(conn, changed, insert=False)
            conn.execute(
                "UPDATE reading SET deleted_at = ? WHERE visit_id = ? AND id = ?",
                (now, visit_id, reading_id),
            )
            conn.execute(
                "INSERT INTO reading_deletion (visit_id, reading_id, deleted_at, origin) VALUES (?, ?, ?, ?)",
                (visit_id, reading_id, now, self.origin),
            )
            self._touch(conn, visit_id)
            return self._readings(conn, visit_id, "AND id = ?", (reading_id,))[0]

    def _standing(self, conn: sqlite3.Connection, visit_id: str, reading_id: str) -> Reading:
        found = self._readings(conn, visit_id, "AND id = ?", (reading_id,))
        if not found:
            raise StoreError(f"visit '{visit_id}' has no reading with id '{reading_id}'")
        if found[0].deleted_at is not None:
            raise StoreError(f"reading '{reading_id}' was deleted; it cannot be changed any more")
        newer = conn.execute(
            "SELECT id FROM reading WHERE visit_id = ? AND replaces = ?", (visit_id, reading_id)
        ).fetchone()
        if newer:
            raise StoreError(
                f"reading '{reading_id}' was already corrected by '{newer[0]}'; change that one instead"
            )
        return found[0]

    def reading_history(self, visit_id: str, test_point: str) -> list[Reading]:
        """Every version entered for a test point, in the order entered (deleted and replaced ones too)."""
        with self._read() as conn:
            self._header(conn, visit_id)
            return self._readings(conn, visit_id, "AND test_point = ?", (test_point,))

    def machine_history(
        self, machine_id: str, test_point_ids: Sequence[str] | None = None
    ) -> list[tuple[VisitSummary, list[Reading]]]:
        """Every visit to a machine, oldest first, with the readings that stand (for trends).
        A visit with none at the asked test points is still listed, with an empty list."""
        wanted = set(test_point_ids) if test_point_ids is not None else None
        out: list[tuple[VisitSummary, list[Reading]]] = []
        with self._read() as conn:
            rows = conn.execute(
                "SELECT id, updated_at, taken_by FROM visit WHERE machine = ? ORDER BY visit_date, "
                "created_at, id",
                (machine_id,),
            ).fetchall()
            for vid, updated, by in rows:
                visit = self._load(conn, vid)
                readings = [r for r in visit.current_readings() if wanted is None or r.test_point in wanted]
                out.append((self._summary(conn, visit, updated, by), readings))
        return out


def writable_here(path: Path) -> bool:
    """Whether this process may write the store and the files beside it (WAL and shared
    memory). A missing file counts as writable: it is created, or the creation says why not."""
    if not path.exists():
        return True
    return os.access(path, os.W_OK) and os.access(path.parent, os.W_OK)


def _unreadable_value(data: Any, deleted_at: str | None, why: str) -> Reading | None:
    """A stored reading whose value alone cannot be read (an earlier version stored 'nan bar' or
    '24 furlongs'): kept as a reading marked unreadable, so the visit still opens and the reading
    can be corrected or deleted. None when more than the value is wrong."""
    if not isinstance(data, dict) or "value" not in data:
        return None
    stored = data.get("value")
    try:
        reading = Reading.model_validate(
            {
                **data,
                "value": Q_(math.nan, "dimensionless"),
                "reference": None,
                "entered": str(data.get("entered") or stored)[:64],
                "deleted_at": deleted_at,
                "unreadable": f"the stored value {str(stored)[:64]!r} cannot be read ({why})",
            }
        )
    except (ValueError, ValidationError):
        return None
    return reading


def _field_values(obj: Any) -> Any:
    """A model's field values as plain dicts and lists, so validation sees every nested value
    (pydantic would accept a nested model instance as it is, unchecked)."""
    if isinstance(obj, BaseModel):
        return {name: _field_values(value) for name, value in obj.__dict__.items()}
    if isinstance(obj, dict):
        return {key: _field_values(value) for key, value in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_field_values(item) for item in obj]
    return obj


def _with_fresh_ids(visit: Visit) -> Visit:
    """A copy with a new visit id and new reading ids, corrections re-pointed to the new ids."""
    mapping = {r.id: new_id() for r in visit.readings}
    readings = [
        {**r.model_dump(), "id": mapping[r.id], "replaces": mapping.get(r.replaces) if r.replaces else None}
        for r in visit.readings
    ]
    return Visit.model_validate({**visit.model_dump(), "id": new_id(), "readings": readings})
