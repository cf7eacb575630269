"""Layout 2 (sync with a shop server): an older store is upgraded so that its header change log
folds back to exactly the header it had, and its deletions become records of their own."""

from __future__ import annotations

import datetime as dt
import sqlite3
from pathlib import Path

from store_builders import CHARGE, gauge, reading, visit

from fieldkit.model.visit import Reading, Visit
from fieldkit.store.header_log import FieldChange, changed_fields, fold, winners
from fieldkit.store.migrations import APPLICATION_ID, MIGRATIONS, apply_pending
from fieldkit.store.sqlite import SqliteVisitStore


def test_an_older_store_gets_a_header_log_that_folds_to_the_same_header(tmp_path: Path) -> None:
    path = tmp_path / "old.sqlite3"
    r = reading(CHARGE, "24.5 bar", gauge="g60")
    v = visit(gauges=[gauge("g60"), gauge("g250", "250 bar")], notes='say "hi" [x]', hour_meter=4120.5)
    _layout_1_store(path, v, r, deleted_at="2024-05-14T09:00:00.000000Z")
    with SqliteVisitStore(path) as store:
        before = store.get_visit(v.id)
        assert before.readings[0].deleted_at is not None
        assert store.origin
        with store.snapshot() as conn:
            rows = conn.execute(
                "SELECT id, visit_id, field, value_json, changed_at, origin, author FROM header_change"
            ).fetchall()
            deletions = conn.execute("SELECT visit_id, reading_id FROM reading_deletion").fetchall()
            origins = {row[0] for row in conn.execute("SELECT origin FROM reading")}
        header = Visit.model_validate(fold(v.id, v.machine, [FieldChange(*row) for row in rows]))
        assert header == before.model_copy(update={"readings": []})
        assert deletions == [(v.id, r.id)]
        assert origins == {store.origin}
        assert before.model_copy(update={"readings": []}) == v.model_copy(update={"readings": []})


def _layout_1_store(path: Path, v: Visit, r: Reading, deleted_at: str) -> None:
    """A store as fieldkit wrote it before layout 2, made with layout 1's own statements."""
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute(f"PRAGMA application_id = {APPLICATION_ID}")
    conn.execute("BEGIN")
    apply_pending(conn, MIGRATIONS[:1])
    at = "2024-05-14T08:00:00.000000Z"
    conn.execute(
        "INSERT INTO visit (id, machine, status, visit_date, created_at, updated_at, header_json) "
        "VALUES (?, ?, 'open', ?, ?, ?, ?)",
        (v.id, v.machine, v.date.isoformat(), at, at, v.model_dump_json(exclude={"readings"})),
    )
    conn.execute(
        "INSERT INTO reading (visit_id, id, test_point, taken_at, replaces, deleted_at, stored_at, "
        "reading_json) "
        "VALUES (?, ?, ?, ?, NULL, ?, ?, ?)",
        (v.id, r.id, r.test_point, at, deleted_at, at, r.model_dump_json(exclude={"deleted_at"})),
    )
    conn.execute("COMMIT")
    conn.close()


def test_an_edit_logs_only_the_fields_it_changed(tmp_path: Path) -> None:
    with SqliteVisitStore(tmp_path / "s.sqlite3") as store:
        v = store.create_visit(visit())
        store.update_visit(v.id, customer="Ravensgill quarry", hour_meter=4120.5)
        with store.snapshot() as conn:
            later = conn.execute(
                "SELECT field FROM header_change WHERE visit_id = ? ORDER BY seq", (v.id,)
            ).fetchall()
    first = len(changed_fields(None, v.model_dump(mode="json", exclude={"readings"})))
    assert sorted(f for (f,) in later[first:]) == ["customer", "hour_meter"]


def test_the_newest_change_wins_and_equal_times_are_settled_by_the_id() -> None:
    t = dt.datetime(2026, 3, 14, 9, 0).isoformat() + ".000000Z"
    later = dt.datetime(2026, 3, 14, 9, 5).isoformat() + ".000000Z"
    changes = [
        FieldChange("b", "v", "customer", '"second"', t, "lap2"),
        FieldChange("a", "v", "customer", '"first"', t, "lap1"),
        FieldChange("c", "v", "notes", '"only"', t, "lap1"),
        FieldChange("d", "v", "notes", '"newer"', later, "lap2"),
    ]
    won = winners(changes)
    assert won["customer"].id == "b"  # same time: the larger id, on every laptop alike
    assert won["notes"].value == '"newer"'
    assert winners(reversed(changes)) == won  # arrival order does not matter


def test_items_of_a_list_added_on_two_laptops_both_stand() -> None:
    """Lists whose items carry ids merge item by item (here a list the model may add later,
    observations, beside the gauges); an item removed on one laptop goes, one added stays."""
    t1, t2, t3 = (f"2026-03-14T09:0{m}:00.000000Z" for m in (1, 2, 3))
    changes = [
        FieldChange("a1", "v", "job_number", '"RHF-1"', t1, "lap1"),
        FieldChange("a2", "v", "observation:o1", '{"id":"o1","answer":"yes"}', t1, "lap1"),
        FieldChange("b1", "v", "observation:o2", '{"id":"o2","answer":"no"}', t2, "lap2"),
        FieldChange("a3", "v", "gauge:g1", '{"id":"g1"}', t1, "lap1"),
        FieldChange("b2", "v", "gauge:g2", '{"id":"g2"}', t2, "lap2"),
        FieldChange("a4", "v", "gauge:g1", "null", t3, "lap1"),
        FieldChange("b3", "v", "gauge:g2", "null", t3, "lap2"),
    ]
    header = fold("v", "rig", changes, gauges_in_use=["g2"])
    assert header["observations"] == [{"id": "o1", "answer": "yes"}, {"id": "o2", "answer": "no"}]
    assert header["gauges"] == [{"id": "g2"}]  # g1 removed; g2 removed too but a reading needs it
    assert "work" not in header  # a list nobody wrote to stays the model's default
