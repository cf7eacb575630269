"""Store layout versions, oldest first, and the mark that says a file is a fieldkit store.

A store file outlives the program that made it: a technician may update fieldkit on the laptop
halfway through a season. Each layout change is one entry in :data:`MIGRATIONS`; opening an
older store applies the missing entries in one transaction (all or none), and a store whose
``PRAGMA user_version`` is above the newest entry here was made by a newer fieldkit and is left
untouched.

The file mark is ``PRAGMA application_id`` = :data:`APPLICATION_ID`, the four ASCII bytes
``FKVS`` ("fieldkit visit store") read as a big-endian 32-bit integer. It sits at byte offset 68
of the SQLite header, so the store can be recognised (and a foreign database refused) by reading
the first 100 bytes, without letting SQLite touch the file.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Sequence
from dataclasses import dataclass

#: ``b"FKVS"`` as a big-endian integer (0x464B5653); chosen for fieldkit, documented above.
APPLICATION_ID = int.from_bytes(b"FKVS", "big")


@dataclass(frozen=True, slots=True)
class Migration:
    """One step of the layout; ``statements`` run in order inside the caller's transaction."""

    version: int
    why: str
    statements: tuple[str, ...]


# Readings are never updated in place: a trigger refuses any change to what was entered and any
# row deletion, and lets deleted_at be set once. A bug elsewhere cannot silently rewrite history.
_V1 = Migration(
    1,
    "first layout: visit headers and readings as validated JSON with a few indexed columns",
    (
        """CREATE TABLE visit (
            id TEXT PRIMARY KEY NOT NULL,
            machine TEXT NOT NULL,
            status TEXT NOT NULL CHECK (status IN ('open', 'closed')),
            visit_date TEXT NOT NULL,
            created_at TEXT NOT NULL,
            updated_at TEXT NOT NULL,
            header_json TEXT NOT NULL
        )""",
        "CREATE INDEX visit_by_machine ON visit (machine, visit_date, created_at)",
        "CREATE INDEX visit_by_status ON visit (status, visit_date)",
        """CREATE TABLE reading (
            seq INTEGER PRIMARY KEY AUTOINCREMENT,
            visit_id TEXT NOT NULL REFERENCES visit (id),
            id TEXT NOT NULL,
            test_point TEXT NOT NULL,
            taken_at TEXT NOT NULL,
            replaces TEXT,
            deleted_at TEXT,
            stored_at TEXT NOT NULL,
            reading_json TEXT NOT NULL,
            UNIQUE (visit_id, id)
        )""",
        "CREATE INDEX reading_by_point ON reading (visit_id, test_point, seq)",
        "CREATE INDEX reading_by_time ON reading (visit_id, taken_at)",
        "CREATE INDEX reading_by_replaces ON reading (visit_id, replaces)",
        """CREATE TRIGGER reading_is_never_rewritten
            BEFORE UPDATE OF seq, visit_id, id, test_point, taken_at, replaces, stored_at, reading_json
            ON reading
            BEGIN SELECT RAISE(ABORT, 'a stored reading is never rewritten; add a correction instead');
            END""",
        """CREATE TRIGGER reading_deleted_once
            BEFORE UPDATE OF deleted_at ON reading WHEN OLD.deleted_at IS NOT NULL
            BEGIN SELECT RAISE(ABORT, 'this reading was already deleted'); END""",
        """CREATE TRIGGER reading_row_is_kept
            BEFORE DELETE ON reading
            BEGIN SELECT RAISE(ABORT, 'reading rows are kept; mark them deleted instead'); END""",
    ),
)

# Layout 2 makes every record travel to the shop server and back (fieldkit.store.sync):
# * ``replica`` holds this store's own origin id (made once, never changed) and the sync cursors;
# * every visit and reading carries its origin (which laptop made it) and whether it came from
#   the server (``from_server``, so it is not sent back up);
# * header edits are kept as a log of field changes (fieldkit.store.header_log) so two laptops
#   can edit one header offline; the existing headers become their first log entries;
#   (their ids are made from the visit id and the field, in list order for gauges, so the fold
#   keeps the gauges' order);
# * deletions are records of their own, so a deletion made offline travels like a reading.
#   The same reading deleted on two laptops keeps the earlier time (the trigger allows that move).
_ORIGIN = "(SELECT value FROM replica WHERE key = 'origin')"
_V2 = Migration(
    2,
    "sync with a shop server: origins, header change log, deletion records",
    (
        "CREATE TABLE replica (key TEXT PRIMARY KEY NOT NULL, value TEXT NOT NULL)",
        "INSERT INTO replica (key, value) VALUES ('origin', lower(hex(randomblob(8))))",
        "ALTER TABLE visit ADD COLUMN origin TEXT NOT NULL DEFAULT ''",
        "ALTER TABLE visit ADD COLUMN taken_by TEXT NOT NULL DEFAULT ''",
        "ALTER TABLE visit ADD COLUMN from_server INTEGER NOT NULL DEFAULT 0",
        f"UPDATE visit SET origin = {_ORIGIN}",
        "ALTER TABLE reading ADD COLUMN origin TEXT NOT NULL DEFAULT ''",
        "ALTER TABLE reading ADD COLUMN from_server INTEGER NOT NULL DEFAULT 0",
        f"UPDATE reading SET origin = {_ORIGIN}",
        """CREATE TABLE header_change (
            seq INTEGER PRIMARY KEY AUTOINCREMENT,
            id TEXT NOT NULL UNIQUE,
            visit_id TEXT NOT NULL REFERENCES visit (id),
            field TEXT NOT NULL,
            value_json TEXT NOT NULL,
            changed_at TEXT NOT NULL,
            origin TEXT NOT NULL,
            author TEXT NOT NULL DEFAULT '',
            from_server INTEGER NOT NULL DEFAULT 0
        )""",
        "CREATE INDEX header_change_by_visit ON header_change (visit_id, field, changed_at)",
        """CREATE TRIGGER header_change_is_kept
            BEFORE UPDATE OF id, visit_id, field, value_json, changed_at, origin ON header_change
            BEGIN SELECT RAISE(ABORT, 'a header change is history; add a new change instead'); END""",
        """CREATE TRIGGER header_change_row_is_kept
            BEFORE DELETE ON header_change
            BEGIN SELECT RAISE(ABORT, 'header changes are kept as history'); END""",
        f"""INSERT INTO header_change (id, visit_id, field, value_json, changed_at, origin)
            SELECT 'm2-' || v.id || '-' || j.key, v.id, j.key,
                   CASE j.type WHEN 'text' THEN json_quote(j.value) WHEN 'true' THEN 'true'
                        WHEN 'false' THEN 'false' WHEN 'null' THEN 'null' ELSE j.value END,
                   v.created_at, {_ORIGIN}
            FROM visit v, json_each(v.header_json) j
            WHERE j.key NOT IN ('id', 'machine', 'readings', 'schema_version', 'gauges')""",
        f"""INSERT INTO header_change (id, visit_id, field, value_json, changed_at, origin)
            SELECT 'm2-' || v.id || '-g' || printf('%04d', g.key), v.id,
                   'gauge:' || json_extract(g.value, '$.id'),
                   json(g.value),
                   v.created_at, {_ORIGIN}
            FROM visit v, json_each(v.header_json, '$.gauges') g""",
        """CREATE TABLE reading_deletion (
            seq INTEGER PRIMARY KEY AUTOINCREMENT,
            visit_id TEXT NOT NULL,
            reading_id TEXT NOT NULL,
            deleted_at TEXT NOT NULL,
            origin TEXT NOT NULL,
            from_server INTEGER NOT NULL DEFAULT 0,
            UNIQUE (visit_id, reading_id, origin),
            FOREIGN KEY (visit_id, reading_id) REFERENCES reading (visit_id, id)
        )""",
        f"""INSERT INTO reading_deletion (visit_id, reading_id, deleted_at, origin)
            SELECT visit_id, id, deleted_at, {_ORIGIN} FROM reading WHERE deleted_at IS NOT NULL""",
        "DROP TRIGGER reading_deleted_once",
        """CREATE TRIGGER reading_deleted_once
            BEFORE UPDATE OF deleted_at ON reading
            WHEN OLD.deleted_at IS NOT NULL AND (NEW.deleted_at IS NULL OR NEW.deleted_at >= OLD.deleted_at)
            BEGIN SELECT RAISE(ABORT, 'this reading was already deleted'); END""",
        "CREATE INDEX reading_by_seq_origin ON reading (from_server, seq)",
    ),
)

# Layout 3: machine profiles travel too, as versions. A version names the version(s) it was made
# from; two versions made from the same one are a conflict that a person resolves (never merged).
_V3 = Migration(
    3,
    "machine profile versions for the shop server",
    (
        """CREATE TABLE profile_version (
            seq INTEGER PRIMARY KEY AUTOINCREMENT,
            id TEXT NOT NULL UNIQUE,
            profile_id TEXT NOT NULL,
            parents_json TEXT NOT NULL,
            toml_text TEXT NOT NULL,
            made_at TEXT NOT NULL,
            origin TEXT NOT NULL,
            author TEXT NOT NULL DEFAULT '',
            from_server INTEGER NOT NULL DEFAULT 0
        )""",
        "CREATE INDEX profile_version_by_profile ON profile_version (profile_id)",
        """CREATE TRIGGER profile_version_is_kept
            BEFORE UPDATE OF id, profile_id, parents_json, toml_text, made_at, origin ON profile_version
            BEGIN SELECT RAISE(ABORT, 'a profile version is history; add a new version instead'); END""",
    ),
)

# Layout 4: the technician's instrument kit, kept once per store (not per visit). One row per
# instrument with a stable id; an edit rewrites the row, a retirement sets retired_on (the row
# stays, so a visit that copied the gauge can still be traced to it). The origin says which
# laptop made the item, for the shop server.
_V4 = Migration(
    4,
    "the instrument kit: gauges, thermometers, flow meters and tachometers kept once",
    (
        """CREATE TABLE kit_item (
            id TEXT PRIMARY KEY NOT NULL,
            kind TEXT NOT NULL,
            retired_on TEXT,
            created_at TEXT NOT NULL,
            updated_at TEXT NOT NULL,
            origin TEXT NOT NULL DEFAULT '',
            item_json TEXT NOT NULL
        )""",
        "CREATE INDEX kit_item_by_kind ON kit_item (retired_on, kind, id)",
        """CREATE TRIGGER kit_item_row_is_kept
            BEFORE DELETE ON kit_item
            BEGIN SELECT RAISE(ABORT, 'kit items are retired, never deleted'); END""",
    ),
)

# Layout 5: the kit travels to the shop server. Kit rows are rewritten in place, so a trigger
# copies every local write into ``kit_change`` (one version per write, a global id, this laptop's
# origin); the sync sends those versions and takes other laptops' versions in, rewriting the row
# with ``from_server = 1`` so the trigger does not log it again (fieldkit.store.kit_log says which
# version stands). ``owner`` is the login whose kit a version belongs to ('' until first sent).
# The items already kept become their first versions (ids made from the origin and the item id,
# so two laptops migrating the same item id still make two distinct versions).
_KIT_CHANGE_COLUMNS = "id, item_id, item_json, retired_on, changed_at, origin"
_LOG_KIT_WRITE = f"""INSERT INTO kit_change ({_KIT_CHANGE_COLUMNS})
            VALUES (lower(hex(randomblob(12))), NEW.id, NEW.item_json, NEW.retired_on, NEW.updated_at,
                    {_ORIGIN});"""
_V5 = Migration(
    5,
    "the instrument kit travels to the shop server: every kit write logged as a version",
    (
        """CREATE TABLE kit_change (
            seq INTEGER PRIMARY KEY AUTOINCREMENT,
            id TEXT NOT NULL UNIQUE,
            item_id TEXT NOT NULL,
            item_json TEXT NOT NULL,
            retired_on TEXT,
            changed_at TEXT NOT NULL,
            origin TEXT NOT NULL,
            owner TEXT NOT NULL DEFAULT '',
            author TEXT NOT NULL DEFAULT '',
            from_server INTEGER NOT NULL DEFAULT 0
        )""",
        "CREATE INDEX kit_change_by_item ON kit_change (item_id, owner, changed_at)",
        """CREATE TRIGGER kit_change_is_kept
            BEFORE UPDATE OF id, item_id, item_json, retired_on, changed_at, origin ON kit_change
            BEGIN SELECT RAISE(ABORT, 'a kit version is history; edit the instrument instead'); END""",
        """CREATE TRIGGER kit_change_row_is_kept
            BEFORE DELETE ON kit_change
            BEGIN SELECT RAISE(ABORT, 'kit versions are kept as history'); END""",
        "ALTER TABLE kit_item ADD COLUMN from_server INTEGER NOT NULL DEFAULT 0",
        f"""CREATE TRIGGER kit_item_logged_on_insert AFTER INSERT ON kit_item WHEN NEW.from_server = 0
            BEGIN {_LOG_KIT_WRITE} END""",
        f"""CREATE TRIGGER kit_item_logged_on_update AFTER UPDATE ON kit_item
            WHEN NEW.from_server = 0 AND NEW.item_json IS NOT OLD.item_json
            BEGIN {_LOG_KIT_WRITE} END""",
        f"""INSERT INTO kit_change ({_KIT_CHANGE_COLUMNS})
            SELECT 'm5-' || {_ORIGIN} || '-' || id, id, item_json, retired_on, updated_at, {_ORIGIN}
            FROM kit_item ORDER BY created_at, id""",
    ),
)

MIGRATIONS: tuple[Migration, ...] = (_V1, _V2, _V3, _V4, _V5)


def latest_version(migrations: Sequence[Migration] = MIGRATIONS) -> int:
    """The layout version this program writes."""
    return migrations[-1].version if migrations else 0


def check_sequence(migrations: Sequence[Migration]) -> None:
    """Versions must run 1, 2, 3…: a gap would leave a store half upgraded."""
    for expected, migration in enumerate(migrations, start=1):
        if migration.version != expected:
            raise ValueError(f"migration {migration.version} is out of order; expected {expected}")


def apply_pending(conn: sqlite3.Connection, migrations: Sequence[Migration] = MIGRATIONS) -> int:
    """Bring the store up to the newest layout. The caller holds a write transaction, so the
    version is re-read here: another fieldkit may have upgraded the file a moment ago."""
    check_sequence(migrations)
    current = int(conn.execute("PRAGMA user_version").fetchone()[0])
    for migration in migrations[current:]:
        for statement in migration.statements:
            conn.execute(statement)
        # PRAGMA takes no parameters; the version is an int from our own table.
        conn.execute(f"PRAGMA user_version = {int(migration.version)}")
    return latest_version(migrations)
