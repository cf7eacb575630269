"""The kit table: the technician's instruments, one row each (layout 3 in migrations.py).

Kept apart from visits on purpose: an instrument outlives every visit it is used on. Rows are
never deleted; an edit rewrites the item, a retirement stamps ``retired_on``.
"""

from __future__ import annotations

import datetime as dt
import sqlite3

from pydantic import ValidationError

from fieldkit.errors import StoreError
from fieldkit.model.kit import KitItem


def _now() -> str:
    return dt.datetime.now(dt.UTC).isoformat(timespec="microseconds")


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
    now = _now()
    conn.execute(
        "INSERT INTO kit_item (id, kind, retired_on, created_at, updated_at, origin, item_json) "
        "VALUES (?, ?, ?, ?, ?, ?, ?)",
        (item.id, item.kind.value, _date(item.retired_on), now, now, origin, item.model_dump_json()),
    )


def replace_item(conn: sqlite3.Connection, item: KitItem) -> None:
    get_item(conn, item.id)
    conn.execute(
        "UPDATE kit_item SET kind = ?, retired_on = ?, updated_at = ?, item_json = ? WHERE id = ?",
        (item.kind.value, _date(item.retired_on), _now(), item.model_dump_json(), item.id),
    )


def _date(day: dt.date | None) -> str | None:
    return day.isoformat() if day is not None else None
