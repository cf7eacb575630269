"""The shop server: a PostgreSQL database that every laptop syncs with (psycopg 3).

Where the connection comes from: ``FIELDKIT_SERVER`` (a ``postgresql://`` URL or a libpq
connection string such as ``service=fieldkit``), else libpq's own environment (``PGSERVICE``,
``PGHOST``, ``PGUSER``…) and service file. Passwords belong in ``~/.pgpass`` or the service
file, never in the repository.

This module sends and fetches records; :mod:`fieldkit.store.sync` decides what to send.
"""

from __future__ import annotations

import json
import os
import re
import secrets
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Any

import psycopg
from psycopg import sql

from fieldkit.errors import StoreError
from fieldkit.store.header_log import FieldChange, fold
from fieldkit.store.pg_schema import (
    GROUP_ROLES,
    SCHEMA,
    SERVER_MIGRATIONS,
    SUPERVISOR_ROLE,
    TECHNICIAN_ROLE,
    ServerMigration,
    latest_server_version,
)

SERVER_ENV = "FIELDKIT_SERVER"
LOGIN_NAME = re.compile(r"^[a-z][a-z0-9_]{0,40}$")


def server_conninfo(explicit: str | None = None) -> str:
    """The connection string to use; "" lets libpq read PGSERVICE/PGHOST… itself."""
    if explicit:
        return explicit
    configured = os.environ.get(SERVER_ENV, "")
    if configured:
        return configured
    if any(os.environ.get(name) for name in ("PGSERVICE", "PGHOST", "PGDATABASE")):
        return ""
    raise StoreError(
        f"no shop server is set up on this laptop: set {SERVER_ENV} to a postgresql:// address or "
        "'service=NAME' (a libpq service file entry); see 'A shop server for several technicians' in the "
        "README"
    )


def _where(conninfo: str) -> str:
    """The address without any password, for messages."""
    return (
        re.sub(r"(://[^:/@]+):[^@]*@", r"\1@", re.sub(r"password=\S+", "password=…", conninfo))
        or "libpq defaults"
    )


def connect(conninfo: str, *, autocommit: bool = False) -> psycopg.Connection[Any]:
    try:
        return psycopg.connect(conninfo, autocommit=autocommit, connect_timeout=10)
    except psycopg.Error as exc:
        detail = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise StoreError(f"cannot reach the shop server ({_where(conninfo)}): {detail}") from None
    except (UnicodeError, ValueError) as exc:  # a host name no resolver accepts (IDNA), a bad option
        raise StoreError(f"the shop server address is not usable ({_where(conninfo)}): {exc}") from None


def schema_version(conn: psycopg.Connection[Any]) -> int:
    """0 when the database has no fieldkit schema yet."""
    row = conn.execute("SELECT to_regclass(%s)", (f"{SCHEMA}.schema_version",)).fetchone()
    if row is None or row[0] is None:
        return 0
    got = conn.execute(f"SELECT coalesce(max(version), 0) FROM {SCHEMA}.schema_version").fetchone()
    return int(got[0]) if got else 0


def check_schema(
    conn: psycopg.Connection[Any], migrations: Sequence[ServerMigration] = SERVER_MIGRATIONS
) -> int:
    """Refuse a server this fieldkit does not understand, before anything is sent or fetched."""
    version = schema_version(conn)
    ours = latest_server_version(tuple(migrations))
    if version == 0:
        raise StoreError(
            "the shop server has no fieldkit tables yet; whoever runs the server sets it up with 'fieldkit "
            "server init URL'"
        )
    if version > ours:
        raise StoreError(
            f"the shop server's layout is version {version}, newer than this fieldkit understands (up to "
            f"{ours}); "
            "update fieldkit on this laptop before syncing. Nothing was sent or changed."
        )
    if version < ours:
        raise StoreError(
            f"the shop server's layout is version {version}, older than this fieldkit's ({ours}); "
            "ask whoever runs the server to run 'fieldkit server init' with this version"
        )
    return version


# --- administration -------------------------------------------------------------------------------


def init_server(conninfo: str, migrations: Sequence[ServerMigration] = SERVER_MIGRATIONS) -> tuple[int, int]:
    """Create the group roles if missing and apply the missing layout steps in one transaction.
    Returns (version before, version after). Run by the database's owner."""
    with connect(conninfo) as conn:
        try:
            before = schema_version(conn)
            ours = latest_server_version(tuple(migrations))
            if before > ours:
                raise StoreError(
                    f"the shop server's layout is version {before}, newer than this fieldkit (up to {ours}); "
                    "nothing was changed"
                )
            for role in GROUP_ROLES:
                exists = conn.execute("SELECT 1 FROM pg_roles WHERE rolname = %s", (role,)).fetchone()
                if not exists:
                    conn.execute(sql.SQL("CREATE ROLE {} NOLOGIN").format(sql.Identifier(role)))
            conn.execute(
                sql.SQL("GRANT CONNECT ON DATABASE {} TO {}, {}").format(
                    sql.Identifier(str(conn.info.dbname)),
                    sql.Identifier(TECHNICIAN_ROLE),
                    sql.Identifier(SUPERVISOR_ROLE),
                )
            )
            conn.execute("SELECT pg_advisory_xact_lock(1)")  # two inits at once: one waits
            before = schema_version(conn)
            for migration in migrations[before:]:
                for statement in migration.statements:
                    conn.execute(statement.encode())
                conn.execute(
                    f"INSERT INTO {SCHEMA}.schema_version (version, why) VALUES (%s, %s)",
                    (migration.version, migration.why),
                )
            conn.commit()
            return before, max(before, ours)
        except psycopg.Error as exc:
            conn.rollback()
            raise StoreError(f"setting up the shop server failed, nothing was changed: {exc}") from None


def add_technician(conninfo: str, name: str, *, supervisor: bool = False) -> str:
    """Create a login in the technician (or supervisor) group; returns its new password."""
    if not LOGIN_NAME.match(name):
        raise StoreError(
            f"'{name}' cannot be a login name: use lower-case letters, digits and _, starting with a letter"
        )
    password = secrets.token_urlsafe(18)
    group = SUPERVISOR_ROLE if supervisor else TECHNICIAN_ROLE
    with connect(conninfo) as conn:
        check_schema(conn)
        if conn.execute("SELECT 1 FROM pg_roles WHERE rolname = %s", (name,)).fetchone():
            raise StoreError(f"the server already has a login '{name}'; choose another name")
        try:
            conn.execute(
                sql.SQL("CREATE ROLE {} LOGIN PASSWORD {} IN ROLE {}").format(
                    sql.Identifier(name), sql.Literal(password), sql.Identifier(group)
                )
            )
            conn.commit()
        except psycopg.Error as exc:
            conn.rollback()
            raise StoreError(f"could not create the login '{name}': {exc}") from None
    return password


# --- what a laptop exchanges ---------------------------------------------------------------------------

#: Columns sent for each record kind (the same names on both sides), in the order a sync sends
#: and fetches them: the kit first (small, and a sync cut off during a long download still brings
#: the gauges a technician picks), then a visit before its header changes and its readings.
PUSH_COLUMNS: dict[str, tuple[str, ...]] = {
    "kit_item_version": ("id", "item_id", "item_json", "retired_on", "changed_at", "origin"),
    "visit": ("id", "machine", "origin", "created_at"),
    "header_change": ("id", "visit_id", "field", "value_json", "changed_at", "origin"),
    "reading": ("visit_id", "id", "test_point", "taken_at", "replaces", "reading_json", "origin"),
    "reading_deletion": ("visit_id", "reading_id", "deleted_at", "origin"),
    "profile_version": ("id", "profile_id", "parents_json", "toml_text", "made_at", "origin"),
}
#: Extra server-stamped columns a laptop fetches.
PULL_EXTRA: dict[str, tuple[str, ...]] = {
    "visit": ("owner",),
    "header_change": ("author",),
    "reading": ("author",),
    "reading_deletion": ("author",),
    "profile_version": ("author",),
    "kit_item_version": ("owner", "author"),
}
#: Kinds that belong to a visit (row-level security lets a technician add them to its own visits only).
VISIT_KINDS = ("visit", "header_change", "reading", "reading_deletion")
KINDS = tuple(PUSH_COLUMNS)


@dataclass(frozen=True, slots=True)
class Login:
    name: str
    supervisor: bool


class ShopServer:
    """One connection to the shop server, as the logged-in technician.

    Each :meth:`push` is one server transaction; :meth:`pulling` holds one repeatable-read
    snapshot so a visit and its readings are fetched from the same moment."""

    def __init__(self, conninfo: str) -> None:
        self.conninfo = conninfo
        self.conn = connect(conninfo)
        try:
            check_schema(self.conn)
            row = self.conn.execute(
                f"SELECT current_user::text, pg_has_role(current_user, %s, 'member'), "
                f"(SELECT id FROM {SCHEMA}.server_info LIMIT 1)",
                (SUPERVISOR_ROLE,),
            ).fetchone()
            self.conn.commit()
        except BaseException:
            self.conn.close()
            raise
        assert row is not None
        self.login = Login(str(row[0]), bool(row[1]))
        #: Made once by ``server init``: a laptop that meets another server starts its cursors anew.
        self.server_id = str(row[2])

    def close(self) -> None:
        self.conn.close()

    def __enter__(self) -> ShopServer:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def _fail(self, exc: psycopg.Error, doing: str) -> StoreError:
        self.conn.rollback()
        return StoreError(f"the shop server refused the {doing}: {str(exc).strip().splitlines()[0]}")

    def owners(self, visit_ids: Sequence[str]) -> dict[str, str]:
        """Which login owns each of these visits on the server (absent: not there yet)."""
        if not visit_ids:
            return {}
        rows = self.conn.execute(
            f"SELECT id, owner::text FROM {SCHEMA}.visit WHERE id = ANY(%s)", (list(visit_ids),)
        ).fetchall()
        self.conn.commit()
        return {str(vid): str(owner) for vid, owner in rows}

    def push(self, batch: dict[str, list[tuple[Any, ...]]]) -> int:
        """Insert records that are not on the server yet, all in one transaction; records already
        there (a sync that was killed after sending) are skipped by their global id."""
        sent = 0
        try:
            with self.conn.cursor() as cur:
                for kind in KINDS:
                    rows = batch.get(kind) or []
                    if not rows:
                        continue
                    cols = PUSH_COLUMNS[kind]
                    # One statement per batch (a column of text per field, unnested on the server):
                    # far fewer round trips and plans than a row at a time.
                    statement = sql.SQL(
                        "INSERT INTO {}.{} ({}) SELECT {} FROM unnest({}) WITH ORDINALITY AS t({}, n) ORDER "
                        "BY n "
                        "ON CONFLICT DO NOTHING"
                    ).format(
                        sql.Identifier(SCHEMA),
                        sql.Identifier(kind),
                        sql.SQL(", ").join(map(sql.Identifier, cols)),
                        sql.SQL(", ").join(map(sql.Identifier, cols)),
                        sql.SQL(", ").join(sql.SQL("%b::text[]") for _ in cols),
                        sql.SQL(", ").join(map(sql.Identifier, cols)),
                    )
                    columns = [
                        [None if v is None else str(v) for v in column] for column in zip(*rows, strict=True)
                    ]
                    cur.execute(statement, columns)  # %b: binary arrays, no text escaping
                    sent += len(rows)
            self.conn.commit()
        except psycopg.Error as exc:
            raise self._fail(exc, "upload") from None
        return sent

    @contextmanager
    def pulling(self) -> Iterator[ServerSnapshot]:
        self.conn.rollback()
        self.conn.execute("SET TRANSACTION ISOLATION LEVEL REPEATABLE READ, READ ONLY")
        try:
            yield ServerSnapshot(self.conn)
        finally:
            self.conn.rollback()

    def machine_history(self, machine: str) -> list[dict[str, Any]]:
        """Every visit to one machine on the server, oldest first: header folded from its change
        log, who took it, and its readings as stored (JSON text) with their deletions."""
        with self.pulling() as snap:
            return snap.machine_history(machine)


class ServerSnapshot:
    """Reads from one repeatable-read transaction."""

    def __init__(self, conn: psycopg.Connection[Any]) -> None:
        self.conn = conn

    def fetch(
        self, kind: str, after: int, limit: int, *, skip_origin: str | None = None
    ) -> list[tuple[Any, ...]]:
        """Records numbered after ``after``, oldest first: the push columns, the stamps, the number.
        ``skip_origin`` leaves out what one laptop made (it has those already)."""
        cols = (*PUSH_COLUMNS[kind], *PULL_EXTRA[kind], "server_seq")
        statement = sql.SQL(
            "SELECT {} FROM {}.{} WHERE server_seq > %s AND origin <> %s ORDER BY server_seq LIMIT %s"
        ).format(
            sql.SQL(", ").join(_column(c) for c in cols),
            sql.Identifier(SCHEMA),
            sql.Identifier(kind),
        )
        return list(self.conn.execute(statement, (after, skip_origin or "", limit)).fetchall())

    def count_from(self, kind: str, origin: str) -> int:
        """How many records of one kind came from one laptop."""
        row = self.conn.execute(
            sql.SQL("SELECT count(*) FROM {}.{} WHERE origin = %s").format(
                sql.Identifier(SCHEMA), sql.Identifier(kind)
            ),
            (origin,),
        ).fetchone()
        return int(row[0]) if row else 0

    def count_after(self, cursors: dict[str, int], skip_origin: str) -> int:
        """How many records a pull will look at (for the progress bar)."""
        total = 0
        for kind, after in cursors.items():
            row = self.conn.execute(
                sql.SQL("SELECT count(*) FROM {}.{} WHERE server_seq > %s AND origin <> %s").format(
                    sql.Identifier(SCHEMA), sql.Identifier(kind)
                ),
                (after, "" if kind == "visit" else skip_origin),
            ).fetchone()
            total += int(row[0]) if row else 0
        return total

    def header_changes_of(self, visit_ids: Sequence[str]) -> list[tuple[Any, ...]]:
        cols = (*PUSH_COLUMNS["header_change"], "author", "server_seq")
        statement = sql.SQL("SELECT {} FROM {}.header_change WHERE visit_id = ANY(%s)").format(
            sql.SQL(", ").join(_column(c) for c in cols),
            sql.Identifier(SCHEMA),
        )
        return list(self.conn.execute(statement, (list(visit_ids),)).fetchall())

    def newest(self) -> int:
        row = self.conn.execute(f"SELECT last_value, is_called FROM {SCHEMA}.change_seq").fetchone()
        return int(row[0]) if row and row[1] else 0

    def machine_history(self, machine: str) -> list[dict[str, Any]]:
        visits = self.conn.execute(
            f"SELECT id, machine, owner::text FROM {SCHEMA}.visit WHERE machine = %s ORDER BY created_at, id",
            (machine,),
        ).fetchall()
        ids = [str(v[0]) for v in visits]
        changes: dict[str, list[FieldChange]] = {vid: [] for vid in ids}
        for cid, vid, field, value, at, origin, author in self.conn.execute(
            f"SELECT id, visit_id, field, value_json, changed_at, origin, author::text "
            f"FROM {SCHEMA}.header_change WHERE visit_id = ANY(%s)",
            (ids,),
        ):
            changes[vid].append(FieldChange(cid, vid, field, value, at, origin, author))
        readings: dict[str, list[tuple[str, str, str]]] = {vid: [] for vid in ids}
        for vid, rid, text, author in self.conn.execute(
            f"SELECT visit_id, id, reading_json, author::text FROM {SCHEMA}.reading "
            "WHERE visit_id = ANY(%s) ORDER BY server_seq",
            (ids,),
        ):
            readings[vid].append((rid, text, author))
        deleted: dict[tuple[str, str], str] = {}
        for vid, rid, at in self.conn.execute(
            f"SELECT visit_id, reading_id, min(deleted_at) FROM {SCHEMA}.reading_deletion "
            "WHERE visit_id = ANY(%s) GROUP BY visit_id, reading_id",
            (ids,),
        ):
            deleted[(vid, rid)] = at
        out = []
        for vid, mach, owner in visits:
            used = {g for g in (_gauge_of(text) for _, text, _ in readings[vid]) if g is not None}
            out.append(
                {
                    "header": fold(vid, mach, changes[vid], used),
                    "taken_by": owner,
                    "readings": [(rid, text, deleted.get((vid, rid))) for rid, text, _ in readings[vid]],
                }
            )
        return out


def _column(name: str) -> sql.Composable:
    """Login names are of type ``name``; they come back as text."""
    if name in ("owner", "author"):
        return sql.SQL("{}::text").format(sql.Identifier(name))
    return sql.Identifier(name)


def _gauge_of(reading_json: str) -> str | None:
    value = json.loads(reading_json).get("gauge")
    return str(value) if value is not None else None
