"""Bringing a whole visit (or a logger's batch of readings) in: all of it, or none of it."""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest
from store_builders import CHARGE, digest, raw_rows, reading, visit, visit_with_readings

from fieldkit.errors import StoreError
from fieldkit.model.visit import Reading, Visit
from fieldkit.store.sqlite import SqliteVisitStore


def _snapshot(store: SqliteVisitStore) -> tuple[object, ...]:
    return (store.list_visits(), raw_rows(store.path))


def test_an_imported_visit_comes_back_equal(store: SqliteVisitStore) -> None:
    original = visit_with_readings(15)
    assert store.import_visit(original) == original
    assert store.get_visit(original.id) == original


def test_a_visit_whose_tenth_reading_is_invalid_leaves_the_store_unchanged(store: SqliteVisitStore) -> None:
    store.create_visit(visit(job_number="BPH-0001"))
    before = _snapshot(store)
    bad = visit_with_readings(12)
    # Built behind the model's back, as a buggy importer might: "24.5 bra" is no unit.
    bad.readings[9] = Reading.model_construct(**{**bad.readings[9].__dict__, "value": "24.5 bra"})
    with pytest.raises(StoreError, match=r"visit '\w+' is not valid.*readings\.9"):
        store.import_visit(bad)
    assert _snapshot(store) == before


def test_a_failure_while_writing_the_tenth_reading_rolls_the_whole_visit_back(
    store: SqliteVisitStore, monkeypatch: pytest.MonkeyPatch
) -> None:
    store.create_visit(visit(job_number="BPH-0001"))
    before = _snapshot(store)
    real_insert = SqliteVisitStore._insert_reading
    calls = {"n": 0}

    def failing_insert(self: SqliteVisitStore, conn: sqlite3.Connection, visit_id: str, r: Reading) -> None:
        calls["n"] += 1
        if calls["n"] == 10:
            raise sqlite3.OperationalError("disk I/O error (simulated)")
        real_insert(self, conn, visit_id, r)

    monkeypatch.setattr(SqliteVisitStore, "_insert_reading", failing_insert)
    with pytest.raises(StoreError, match="simulated"):
        store.import_visit(visit_with_readings(12))
    assert calls["n"] == 10  # nine readings really were written before the failure
    assert _snapshot(store) == before


def test_importing_a_visit_twice_is_refused_unless_as_new(store: SqliteVisitStore) -> None:
    original = visit_with_readings(3)
    store.import_visit(original)
    before = digest(store.path)
    with pytest.raises(StoreError, match=f"a visit with id '{original.id}' is already in"):
        store.import_visit(original)
    assert raw_rows(store.path) == (1, 3)
    copy = store.import_visit(original, as_new=True)
    assert copy.id != original.id
    assert {r.id for r in copy.readings}.isdisjoint({r.id for r in original.readings})
    assert [r.value for r in copy.readings] == [r.value for r in original.readings]
    assert raw_rows(store.path) == (2, 6)
    assert before  # the file was a real store before the copy came in


def test_a_copy_keeps_its_corrections_pointing_at_its_own_readings(store: SqliteVisitStore) -> None:
    slip = reading(CHARGE, "42 bar")
    fix = reading(CHARGE, "24 bar", minute=1, replaces=slip.id)
    gone = reading(CHARGE, "2.4 bar", minute=2, deleted_at=slip.taken_at)
    original = visit(readings=[slip, fix, gone])
    store.import_visit(original)
    copy = store.import_visit(original, as_new=True)
    new_slip, new_fix, new_gone = copy.readings
    assert new_fix.replaces == new_slip.id
    assert new_gone.deleted_at == gone.deleted_at
    assert [r.value for r in copy.current_readings()] == [fix.value]


def test_readings_in_a_batch_are_saved_together_or_not_at_all(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    store.add_reading(v.id, reading())
    before = _snapshot(store)
    batch = [reading(CHARGE, f"2{i}.0 bar", minute=i) for i in range(8)]
    batch.append(reading(CHARGE, "25 bar", gauge="nope"))
    with pytest.raises(StoreError, match="gauge 'nope'"):
        store.add_readings(v.id, batch)
    assert _snapshot(store) == before
    saved = store.add_readings(v.id, batch[:8])
    assert [r.id for r in store.get_visit(v.id).readings][1:] == [r.id for r in saved]


def test_a_batch_with_the_same_id_twice_is_refused_whole(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    one = reading()
    with pytest.raises(StoreError, match=f"already has a reading with id '{one.id}'"):
        store.add_readings(v.id, [one, reading(), one])
    assert store.get_visit(v.id).readings == []


def test_a_new_visit_with_an_id_already_used_is_refused(store: SqliteVisitStore, store_path: Path) -> None:
    first = store.create_visit(visit())
    with pytest.raises(StoreError, match="already in"):
        store.create_visit(Visit(**{**visit().model_dump(), "id": first.id}))
    assert raw_rows(store_path) == (1, 0)
