"""The laptop's side of a sync: what is waiting to go up, and taking in what came down.

Everything here runs inside the SQLite store's own transactions. A batch taken in from the
server and the cursor that says "taken up to here" are committed together, so a sync killed at
any moment either has a batch or has not, and the next sync carries on from the cursor. Going up,
the server commits first and the cursor after; a batch sent twice is skipped on the server by its
global ids, so the worst a kill can do is send a batch again.
"""

from __future__ import annotations

import datetime as dt
import json
import sqlite3
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from datetime import UTC
from typing import Any

from pydantic import ValidationError

from fieldkit.errors import StoreError
from fieldkit.model.kit import KitItem
from fieldkit.model.visit import Reading, Visit
from fieldkit.store.header_log import FieldChange, fold
from fieldkit.store.kit_log import KitVersion, history, standing
from fieldkit.store.sqlite import SqliteVisitStore, iso

#: Local SQL for each record kind: (ordering column, columns sent, table).
_OUTGOING: dict[str, tuple[str, str, str]] = {
    "visit": ("rowid", "id, machine, origin, created_at", "visit"),
    "header_change": ("seq", "id, visit_id, field, value_json, changed_at, origin", "header_change"),
    "reading": ("seq", "visit_id, id, test_point, taken_at, replaces, reading_json, origin", "reading"),
    "reading_deletion": ("seq", "visit_id, reading_id, deleted_at, origin", "reading_deletion"),
    "profile_version": ("seq", "id, profile_id, parents_json, toml_text, made_at, origin", "profile_version"),
    "kit_item_version": ("seq", "id, item_id, item_json, retired_on, changed_at, origin", "kit_change"),
}
_KIT_COLUMNS = "id, item_id, item_json, retired_on, changed_at, origin, owner, author"
KINDS = tuple(_OUTGOING)


@dataclass(frozen=True, slots=True)
class ProfileVersion:
    """One saved state of a machine profile file; ``parents`` are the versions it was edited from."""

    id: str
    profile_id: str
    parents: tuple[str, ...]
    toml_text: str
    made_at: str
    origin: str = ""
    author: str = ""


@dataclass(frozen=True, slots=True)
class SyncStatus:
    """What the start screen shows: when the last sync finished and what is waiting to go up."""

    last_sync: dt.datetime | None
    waiting: dict[str, int]
    login: str

    @property
    def waiting_total(self) -> int:
        return sum(self.waiting.values())


class Replica:
    """Sync bookkeeping on one :class:`SqliteVisitStore` (the store stays the store of record)."""

    def __init__(self, store: SqliteVisitStore) -> None:
        self.store = store

    # --- cursors and marks ------------------------------------------------------------------------

    @staticmethod
    def _get(conn: sqlite3.Connection, key: str, default: str = "") -> str:
        row = conn.execute("SELECT value FROM replica WHERE key = ?", (key,)).fetchone()
        return default if row is None else str(row[0])

    @staticmethod
    def _set(conn: sqlite3.Connection, key: str, value: str) -> None:
        conn.execute(
            "INSERT INTO replica (key, value) VALUES (?, ?) ON CONFLICT (key) DO UPDATE SET value = "
            "excluded.value",
            (key, value),
        )

    def cursor(self, key: str) -> int:
        with self.store.snapshot() as conn:
            return int(self._get(conn, key, "0"))

    def set_cursor(self, key: str, value: int) -> None:
        with self.store.transaction("sync bookkeeping") as conn:
            self._set(conn, key, str(int(value)))

    def sent(self, kind: str, last: int, login: str) -> None:
        """The server has everything of this kind up to ``last``: move the cursor, and sign this
        laptop's header changes with the login that sent them (as the server did)."""
        with self.store.transaction("sync bookkeeping") as conn:
            if kind in ("visit", "header_change"):
                conn.execute(
                    "UPDATE header_change SET author = ? WHERE from_server = 0 AND author = '' AND "
                    + (
                        "visit_id IN (SELECT id FROM visit WHERE rowid <= ? AND from_server = 0)"
                        if kind == "visit"
                        else "seq <= ?"
                    ),
                    (login, last),
                )
            if kind == "profile_version":
                conn.execute(
                    "UPDATE profile_version SET author = ? "
                    "WHERE from_server = 0 AND author = '' AND seq <= ?",
                    (login, last),
                )
            if kind == "kit_item_version":  # the server made this login their owner
                conn.execute(
                    "UPDATE kit_change SET owner = ?, author = ? "
                    "WHERE from_server = 0 AND owner = '' AND seq <= ?",
                    (login, login, last),
                )
            self._set(conn, f"push:{kind}", str(int(last)))

    def meet_server(self, server_id: str, login: str) -> bool:
        """Remember the server; a different server than last time starts every cursor at zero
        (sending everything again is safe, the server skips what it has). True if reset."""
        with self.store.transaction("sync bookkeeping") as conn:
            known = self._get(conn, "server_id")
            reset = known not in ("", server_id)
            if reset:
                conn.execute("DELETE FROM replica WHERE key LIKE 'push:%' OR key LIKE 'pull:%'")
            self._set(conn, "server_id", server_id)
            self._set(conn, "login", login)
            return reset

    def marks(self) -> dict[str, int]:
        """The newest local record of each kind right now, read in one transaction: a push sends
        up to these marks only, so what it sends is complete (a reading's gauge is in the header
        changes sent before it) even while the technician keeps typing."""
        with self.store.snapshot() as conn:
            out: dict[str, int] = {}
            for kind, (order, _, table) in _OUTGOING.items():
                row = conn.execute(f"SELECT coalesce(max({order}), 0) FROM {table}").fetchone()
                out[kind] = int(row[0])
            return out

    # --- going up ---------------------------------------------------------------------------------

    def outgoing(self, kind: str, after: int, upto: int, limit: int) -> tuple[list[tuple[Any, ...]], int]:
        """Records made on this laptop, numbered in (after, upto], oldest first, and the number of
        the last one returned (``after`` when none)."""
        order, cols, table = _OUTGOING[kind]
        with self.store.snapshot() as conn:
            rows = conn.execute(
                f"SELECT {order}, {cols} FROM {table} WHERE from_server = 0 AND {order} > ? AND {order} <= ? "
                f"ORDER BY {order} LIMIT ?",
                (after, upto, limit),
            ).fetchall()
        last = int(rows[-1][0]) if rows else after
        return [tuple(r[1:]) for r in rows], last

    def own_count(self, kind: str) -> int:
        """How many records of one kind this laptop made (and kept)."""
        _, _, table = _OUTGOING[kind]
        with self.store.snapshot() as conn:
            row = conn.execute(
                f"SELECT count(*) FROM {table} WHERE from_server = 0 AND origin = ?", (self.store.origin,)
            ).fetchone()
        return int(row[0])

    def header_changes_of(self, visit_ids: Sequence[str]) -> list[tuple[Any, ...]]:
        """Every local header change of these visits: a visit goes up with its header, in one
        server transaction, so nobody ever pulls a visit without one."""
        if not visit_ids:
            return []
        marks = ",".join("?" * len(visit_ids))
        with self.store.snapshot() as conn:
            return [
                tuple(r)
                for r in conn.execute(
                    f"SELECT {_OUTGOING['header_change'][1]} FROM header_change "
                    f"WHERE from_server = 0 AND visit_id IN ({marks}) ORDER BY seq",
                    tuple(visit_ids),
                ).fetchall()
            ]

    def status(self) -> SyncStatus:
        with self.store.snapshot() as conn:
            waiting: dict[str, int] = {}
            for kind, (order, _, table) in _OUTGOING.items():
                after = int(self._get(conn, f"push:{kind}", "0"))
                row = conn.execute(
                    f"SELECT count(*) FROM {table} WHERE from_server = 0 AND {order} > ?", (after,)
                ).fetchone()
                waiting[kind] = int(row[0])
            last = self._get(conn, "last_sync")
            login = self._get(conn, "login")
        return SyncStatus(dt.datetime.fromisoformat(last) if last else None, waiting, login)

    def finished(self) -> None:
        with self.store.transaction("sync bookkeeping") as conn:
            self._set(conn, "last_sync", iso(dt.datetime.now(UTC)))

    # --- coming down ------------------------------------------------------------------------------

    def take_visits(
        self,
        rows: Sequence[tuple[Any, ...]],
        changes: Sequence[tuple[Any, ...]],
        cursor_key: str,
        cursor: int,
    ) -> int:
        """Visits from the server with their whole header log; one local transaction with the cursor.
        ``rows``: id, machine, origin, created_at, owner, server_seq; ``changes``: header change
        columns, author, server_seq. Returns how many visits were new here."""
        new = 0
        with self.store.transaction("sync") as conn:
            conn.execute(
                "PRAGMA defer_foreign_keys = ON"
            )  # the log goes in before its visit row; checked at commit
            self._insert_changes(conn, changes)
            for vid, machine, origin, created_at, owner, _seq in rows:
                if conn.execute("SELECT 1 FROM visit WHERE id = ?", (vid,)).fetchone():
                    conn.execute("UPDATE visit SET taken_by = ? WHERE id = ?", (owner, vid))
                    continue
                header = self._folded(conn, vid, machine)
                conn.execute(
                    "INSERT INTO visit (id, machine, status, visit_date, created_at, updated_at, "
                    "header_json, "
                    "origin, taken_by, from_server) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, 1)",
                    (
                        vid,
                        machine,
                        header.status.value,
                        header.date.isoformat(),
                        created_at,
                        iso(dt.datetime.now(UTC)),
                        header.model_dump_json(exclude={"readings"}),
                        origin,
                        owner,
                    ),
                )
                new += 1
            self._set(conn, cursor_key, str(cursor))
        return new

    def take_header_changes(self, rows: Sequence[tuple[Any, ...]], cursor_key: str, cursor: int) -> None:
        with self.store.transaction("sync") as conn:
            touched = self._insert_changes(conn, rows)
            for vid in sorted(touched):
                machine = conn.execute("SELECT machine FROM visit WHERE id = ?", (vid,)).fetchone()
                if machine is None:
                    raise StoreError(f"the server sent header changes for visit '{vid}', which it never sent")
                header = self._folded(conn, vid, str(machine[0]))
                conn.execute(
                    "UPDATE visit SET status = ?, visit_date = ?, updated_at = ?, header_json = ? WHERE id "
                    "= ?",
                    (
                        header.status.value,
                        header.date.isoformat(),
                        iso(dt.datetime.now(UTC)),
                        header.model_dump_json(exclude={"readings"}),
                        vid,
                    ),
                )
            self._set(conn, cursor_key, str(cursor))

    def take_readings(self, rows: Sequence[tuple[Any, ...]], cursor_key: str, cursor: int) -> int:
        """Readings from the server (append-only, so they never conflict); returns how many were new."""
        new = 0
        now = iso(dt.datetime.now(UTC))
        with self.store.transaction("sync") as conn:
            for vid, rid, test_point, taken_at, replaces, text, origin, _author, _seq in rows:
                try:
                    Reading.model_validate_json(text)
                except ValidationError as exc:
                    raise StoreError(
                        f"the server sent reading '{rid}' of visit '{vid}' that this fieldkit cannot read; "
                        f"nothing from this batch was saved ({exc.errors()[0]['msg']})"
                    ) from None
                cur = conn.execute(
                    "INSERT OR IGNORE INTO reading (visit_id, id, test_point, taken_at, replaces, "
                    "deleted_at, "
                    "stored_at, reading_json, origin, from_server) VALUES (?, ?, ?, ?, ?, NULL, ?, ?, ?, 1)",
                    (vid, rid, test_point, taken_at, replaces, now, text, origin),
                )
                new += cur.rowcount
            self._set(conn, cursor_key, str(cursor))
        return new

    def take_deletions(self, rows: Sequence[tuple[Any, ...]], cursor_key: str, cursor: int) -> None:
        """A deletion marks the reading; the same reading deleted on two laptops keeps the earlier time."""
        with self.store.transaction("sync") as conn:
            for vid, rid, deleted_at, origin, _author, _seq in rows:
                conn.execute(
                    "INSERT OR IGNORE INTO reading_deletion (visit_id, reading_id, deleted_at, origin, "
                    "from_server) "
                    "VALUES (?, ?, ?, ?, 1)",
                    (vid, rid, deleted_at, origin),
                )
                conn.execute(
                    "UPDATE reading SET deleted_at = ? WHERE visit_id = ? AND id = ? "
                    "AND (deleted_at IS NULL OR deleted_at > ?)",
                    (deleted_at, vid, rid, deleted_at),
                )
            self._set(conn, cursor_key, str(cursor))

    def take_profile_versions(self, rows: Sequence[tuple[Any, ...]], cursor_key: str, cursor: int) -> int:
        new = 0
        with self.store.transaction("sync") as conn:
            for vid, profile_id, parents, text, made_at, origin, author, _seq in rows:
                cur = conn.execute(
                    "INSERT OR IGNORE INTO profile_version (id, profile_id, parents_json, toml_text, "
                    "made_at, origin, "
                    "author, from_server) VALUES (?, ?, ?, ?, ?, ?, ?, 1)",
                    (vid, profile_id, parents, text, made_at, origin, author),
                )
                new += cur.rowcount
            self._set(conn, cursor_key, str(cursor))
        return new

    def take_kit_versions(
        self, rows: Sequence[tuple[Any, ...]], login: str, cursor_key: str, cursor: int
    ) -> int:
        """Kit versions from the server, kept as history; the instruments of this login's own kit
        that they touch are rewritten to the version that stands (fieldkit.store.kit_log), marked
        ``from_server`` so the write is not logged as a new version. Returns how many were new."""
        new = 0
        touched: set[str] = set()
        with self.store.transaction("sync") as conn:
            for vid, item_id, text, retired_on, changed_at, origin, owner, author, _seq in rows:
                try:
                    KitItem.model_validate_json(text)
                except ValidationError as exc:
                    raise StoreError(
                        f"the server sent a version of kit item '{item_id}' (owner {owner}) that this "
                        f"fieldkit cannot read; nothing from this batch was saved ({exc.errors()[0]['msg']})"
                    ) from None
                cur = conn.execute(
                    f"INSERT OR IGNORE INTO kit_change ({_KIT_COLUMNS}, from_server) "
                    "VALUES (?, ?, ?, ?, ?, ?, ?, ?, 1)",
                    (vid, item_id, text, retired_on, changed_at, origin, owner, author),
                )
                new += cur.rowcount
                if owner == login:
                    touched.add(str(item_id))
            for item_id in sorted(touched):
                self._apply_kit_item(conn, item_id, login)
            self._set(conn, cursor_key, str(cursor))
        return new

    @staticmethod
    def _own_versions(conn: sqlite3.Connection, item_id: str, login: str) -> list[KitVersion]:
        return [
            KitVersion(*row)
            for row in conn.execute(
                f"SELECT {_KIT_COLUMNS} FROM kit_change WHERE item_id = ? AND owner IN ('', ?)",
                (item_id, login),
            )
        ]

    def _apply_kit_item(self, conn: sqlite3.Connection, item_id: str, login: str) -> None:
        versions = self._own_versions(conn, item_id, login)
        text = standing(versions)
        if text is None:
            return
        item = KitItem.model_validate_json(text)
        retired = item.retired_on.isoformat() if item.retired_on else None
        first = history(versions)[0]
        row = conn.execute("SELECT item_json FROM kit_item WHERE id = ?", (item_id,)).fetchone()
        if row is None:
            conn.execute(
                "INSERT INTO kit_item (id, kind, retired_on, created_at, updated_at, origin, item_json, "
                "from_server) VALUES (?, ?, ?, ?, ?, ?, ?, 1)",
                (item_id, item.kind.value, retired, first.changed_at, _now_text(), first.origin, text),
            )
        elif row[0] != text:
            conn.execute(
                "UPDATE kit_item SET kind = ?, retired_on = ?, updated_at = ?, item_json = ?, "
                "from_server = 1 WHERE id = ?",
                (item.kind.value, retired, _now_text(), text, item_id),
            )

    def kit_history(self, item_id: str, owner: str | None = None) -> list[KitVersion]:
        """Every version of one instrument (of this laptop's kit, or of ``owner``'s), oldest first."""
        with self.store.snapshot() as conn:
            login = self._get(conn, "login")
            mine = owner is None or owner == login
            rows = conn.execute(
                f"SELECT {_KIT_COLUMNS} FROM kit_change WHERE item_id = ? AND "
                + ("owner IN ('', ?)" if mine else "owner = ?"),
                (item_id, login if mine else owner),
            ).fetchall()
        return history(KitVersion(*row) for row in rows)

    def company_kit(self, *, include_retired: bool = False) -> dict[str, list[KitItem]]:
        """Every technician's kit as this laptop last heard of it, by login (read-only here: a
        technician changes only its own kit). This laptop's own unsent items count as its login's."""
        with self.store.snapshot() as conn:
            login = self._get(conn, "login")
            rows = conn.execute(f"SELECT {_KIT_COLUMNS} FROM kit_change").fetchall()
        grouped: dict[tuple[str, str], list[KitVersion]] = {}
        for row in rows:
            version = KitVersion(*row)
            grouped.setdefault((version.owner or login, version.item_id), []).append(version)
        out: dict[str, list[KitItem]] = {}
        for (owner, item_id), versions in sorted(grouped.items()):
            text = standing(versions)
            if text is None:
                continue
            try:
                item = KitItem.model_validate_json(text)
            except ValidationError as exc:
                raise StoreError(
                    f"kit item '{item_id}' of {owner or 'this laptop'} cannot be read: "
                    f"{exc.errors()[0]['msg']}"
                ) from None
            if include_retired or item.retired_on is None:
                out.setdefault(owner, []).append(item)
        return out

    def profile_versions(self, profile_id: str | None = None) -> list[ProfileVersion]:
        """Every known version (of one profile), oldest first."""
        where, args = ("WHERE profile_id = ?", (profile_id,)) if profile_id else ("", ())
        with self.store.snapshot() as conn:
            rows = conn.execute(
                "SELECT id, profile_id, parents_json, toml_text, made_at, origin, author FROM "
                "profile_version "
                f"{where} ORDER BY seq",
                args,
            ).fetchall()
        return [ProfileVersion(r[0], r[1], tuple(json.loads(r[2])), r[3], r[4], r[5], r[6]) for r in rows]

    def add_profile_version(self, version: ProfileVersion) -> bool:
        """Record a version made here; False when the same version (same id) is known already."""
        with self.store.transaction("profile version") as conn:
            cur = conn.execute(
                "INSERT OR IGNORE INTO profile_version (id, profile_id, parents_json, toml_text, made_at, "
                "origin) "
                "VALUES (?, ?, ?, ?, ?, ?)",
                (
                    version.id,
                    version.profile_id,
                    json.dumps(list(version.parents)),
                    version.toml_text,
                    version.made_at,
                    self.store.origin,
                ),
            )
            return bool(cur.rowcount)

    def value(self, key: str) -> str:
        with self.store.snapshot() as conn:
            return self._get(conn, key)

    def set_value(self, key: str, value: str) -> None:
        with self.store.transaction("sync bookkeeping") as conn:
            self._set(conn, key, value)

    # --- helpers ------------------------------------------------------------------------------------

    @staticmethod
    def _insert_changes(conn: sqlite3.Connection, rows: Iterable[tuple[Any, ...]]) -> set[str]:
        touched: set[str] = set()
        for cid, vid, field, value, changed_at, origin, author, _seq in rows:
            cur = conn.execute(
                "INSERT OR IGNORE INTO header_change (id, visit_id, field, value_json, changed_at, origin, "
                "author, "
                "from_server) VALUES (?, ?, ?, ?, ?, ?, ?, 1)",
                (cid, vid, field, value, changed_at, origin, author),
            )
            if cur.rowcount:
                touched.add(str(vid))
        return touched

    def _folded(self, conn: sqlite3.Connection, visit_id: str, machine: str) -> Visit:
        changes = [
            FieldChange(*row)
            for row in conn.execute(
                "SELECT id, visit_id, field, value_json, changed_at, origin, author FROM header_change "
                "WHERE visit_id = ?",
                (visit_id,),
            )
        ]
        used = [
            str(g)
            for (g,) in conn.execute(
                "SELECT DISTINCT json_extract(reading_json, '$.gauge') FROM reading "
                "WHERE visit_id = ? AND json_extract(reading_json, '$.gauge') IS NOT NULL",
                (visit_id,),
            )
        ]
        try:
            return Visit.model_validate(fold(visit_id, machine, changes, used))
        except (ValidationError, ValueError) as exc:
            raise StoreError(
                f"visit '{visit_id}' from the shop server has a header this fieldkit cannot read: {exc}"
            ) from None

    def header_history(self, visit_id: str, field: str) -> list[FieldChange]:
        """Every value one header field has had (the losing ones too), oldest first."""
        with self.store.snapshot() as conn:
            rows = conn.execute(
                "SELECT id, visit_id, field, value_json, changed_at, origin, author FROM header_change "
                "WHERE visit_id = ? AND field = ? ORDER BY changed_at, id",
                (visit_id, field),
            ).fetchall()
        return [FieldChange(*row) for row in rows]


def _now_text() -> str:
    return iso(dt.datetime.now(UTC))


def field_value(change: FieldChange) -> Any:
    return json.loads(change.value)
