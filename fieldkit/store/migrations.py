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
            BEFORE UPDATE OF seq, visit_id, id, test_point, taken_at, replaces, stored_at, reading_json ON reading
            BEGIN SELECT RAISE(ABORT, 'a stored reading is never rewritten; add a correction instead'); END""",
        """CREATE TRIGGER reading_deleted_once
            BEFORE UPDATE OF deleted_at ON reading WHEN OLD.deleted_at IS NOT NULL
            BEGIN SELECT RAISE(ABORT, 'this reading was already deleted'); END""",
        """CREATE TRIGGER reading_row_is_kept
            BEFORE DELETE ON reading
            BEGIN SELECT RAISE(ABORT, 'reading rows are kept; mark them deleted instead'); END""",
    ),
)

MIGRATIONS: tuple[Migration, ...] = (_V1,)


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
