"""A store as an earlier fieldkit might have left it: readings the engine cannot use, written
straight into the SQLite file (past today's checks), beside good readings of the demo visit."""

from __future__ import annotations

import json
import os
import sqlite3
from pathlib import Path

from fieldkit.model.visit import Visit
from fieldkit.resources import samples_dir
from fieldkit.store import open_store

SAMPLE = samples_dir() / "visits" / "demo-open-visit.json"
VISIT = "rhs-25-0301"

#: id → (test point, stored value, why the engine cannot use it)
BAD = {
    "old-nan": ("travel.charge", "nan bar", "not a number"),
    "old-kind": ("travel.charge", "30 L/min", "a flow at a pressure point"),
    "old-gone": ("travel.retired_point", "24 bar", "a test point the profile no longer has"),
    "old-unit": ("travel.case", "24 furlongs", "a unit no one can read"),
}


def store_with_bad_readings(path: Path | None = None, *, with_visit: bool = True) -> Path:
    """The demo open visit (unless the store has it already), then the four bad readings
    inserted as raw rows."""
    path = path or Path(os.environ["FIELDKIT_STORE"])
    if with_visit:
        with open_store(path) as store:
            store.import_visit(Visit.model_validate_json(SAMPLE.read_text(encoding="utf-8")))
    conn = sqlite3.connect(path, isolation_level=None)
    try:
        for minute, (rid, (point, value, _why)) in enumerate(BAD.items()):
            at = f"2025-06-03T10:{10 + minute:02d}:00.000000Z"
            row = {
                "id": rid,
                "test_point": point,
                "value": value,
                "entered": value,
                "condition": {"function": "neutral"},
                "taken_at": at,
            }
            conn.execute(
                "INSERT INTO reading (visit_id, id, test_point, taken_at, replaces, deleted_at, stored_at, "
                "reading_json, origin) VALUES (?, ?, ?, ?, NULL, NULL, ?, ?, '')",
                (VISIT, rid, point, at, at, json.dumps(row)),
            )
    finally:
        conn.close()
    return path
