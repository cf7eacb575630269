"""The kit table: the technician's instruments, one row each (layout 3 in migrations.py).

Kept apart from visits on purpose: an instrument outlives every visit it is used on. Rows are
never deleted; an edit rewrites the item, a retirement stamps ``retired_on``. Every write here is
copied into the ``kit_change`` log by a trigger (layout 5), which is what travels to the shop
server; rows written by the sync carry ``from_server = 1`` and are not logged again.
"""

from __future__ import annotations

import datetime as dt
import sqlite3

from pydantic import ValidationError

from fieldkit.errors import StoreError
from fieldkit.model.kit import KitItem


def _now() -> str:
    """Fixed-width UTC text ending in Z, like every other time the sync compares as text."""
    return dt.datetime.now(dt.UTC).isoformat(timespec="microseconds").replace("+00:00", "Z")


#: This laptop's own versions of an item ('' = not sent yet); other logins' kits share the table.
_OWN = "(owner = '' OR owner = (SELECT value FROM replica WHERE key = 'login'))"


def _write_time(conn: sqlite3.Connection, item_id: str) -> str:
    """Now, or just after the newest version of this item already known here: an edit made after
    seeing a version must stand over it even when this laptop's clock is behind (kit_log's rule
    is newest wins). The trigger of layout 5 copies this time into the kit_change log."""
    now = _now()
    row = conn.execute(
        f"SELECT max(changed_at) FROM kit_change WHERE item_id = ? AND {_OWN}", (item_id,)
    ).fetchone()
    if row and row[0] is not None and row[0] >= now:
        later = dt.datetime.fromisoformat(row[0].replace("Z", "+00:00")) + dt.timedelta(microseconds=1)
        return later.astimezone(dt.UTC).isoformat(timespec="microseconds").replace("+00:00", "Z")
    return now


def _parse(item_id: str, text: str) -> KitItem:
    try:
        return KitItem.model_validate_json(text)
    except ValidationError as exc:
        first = exc.errors()[0]
        where = ".".join(str(p) for p in first.get("loc", ()))
        raise StoreError(
            f"kit item '{item_id}' in the store is damaged ({where}: {first.get('msg')})"
        ) from None


def list_items(conn: sqlite3.Connection, *, include_retired: bool = False) -> list[KitItem]:
    sql = "SELECT id, item_json FROM kit_item"
    if not include_retired:
        sql += " WHERE retired_on IS NULL"
    rows = conn.execute(sql + " ORDER BY kind, id").fetchall()
    return [_parse(row[0], row[1]) for row in rows]


def get_item(conn: sqlite3.Connection, item_id: str) -> KitItem:
    row = conn.execute("SELECT item_json FROM kit_item WHERE id = ?", (item_id,)).fetchone()
    if row is None:
        known = [r[0] for r in conn.execute("SELECT id FROM kit_item ORDER BY id").fetchall()]
        raise StoreError(
            f"no instrument '{item_id}' in the kit"
            + (f"; the kit has {', '.join(known)}" if known else "; the kit is empty")
        )
    return _parse(item_id, row[0])


def insert_item(conn: sqlite3.Connection, item: KitItem, origin: str) -> None:
    if conn.execute("SELECT 1 FROM kit_item WHERE id = ?", (item.id,)).fetchone():
        raise StoreError(f"the kit already has an instrument '{item.id}'; edit it or choose another id")
    now = _write_time(conn, item.id)
    conn.execute(
        "INSERT INTO kit_item (id, kind, retired_on, created_at, updated_at, origin, item_json) "
        "VALUES (?, ?, ?, ?, ?, ?, ?)",
        (item.id, item.kind.value, _date(item.retired_on), now, now, origin, item.model_dump_json()),
    )


def replace_item(conn: sqlite3.Connection, item: KitItem) -> None:
    get_item(conn, item.id)
    conn.execute(
        "UPDATE kit_item SET kind = ?, retired_on = ?, updated_at = ?, item_json = ?, from_server = 0 "
        "WHERE id = ?",
        (
            item.kind.value,
            _date(item.retired_on),
            _write_time(conn, item.id),
            item.model_dump_json(),
            item.id,
        ),
    )


def _date(day: dt.date | None) -> str | None:
    return day.isoformat() if day is not None else None
