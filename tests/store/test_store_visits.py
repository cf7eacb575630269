"""Visits and readings through the store: what goes in comes back, and history is never lost."""

from __future__ import annotations

import datetime as dt
import json
import sqlite3
import threading
from pathlib import Path

import pytest
from store_builders import (
    CASE_DRAIN,
    CHARGE,
    LOOP_A,
    MACHINE,
    gauge,
    raw_rows,
    reading,
    visit,
    visit_with_readings,
)

from fieldkit.errors import StoreError
from fieldkit.model.visit import Reading, VisitStatus
from fieldkit.store import SqliteVisitStore, VisitStore, open_store
from fieldkit.store.migrations import APPLICATION_ID, latest_version
from fieldkit.units import Q_


def test_the_sqlite_store_offers_every_operation_the_screens_use(store: SqliteVisitStore) -> None:
    assert isinstance(store, VisitStore)


def test_every_connection_is_set_up_to_survive_a_power_cut(store: SqliteVisitStore) -> None:
    # WAL with synchronous=FULL (2) keeps each commit through power loss; see the sqlite3 notes in
    # /work/shared/style.md (SQLite documentation, "PRAGMA synchronous").
    assert store.connection_settings() == {
        "journal_mode": "wal",
        "synchronous": 2,
        "foreign_keys": 1,
        "busy_timeout": 5000,
        "user_version": latest_version(),
        "application_id": APPLICATION_ID,
    }


def test_two_screens_sharing_one_store_object_lose_nothing(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    saved: list[str] = []

    def log(point: str) -> None:
        for i in range(15):
            saved.append(store.add_reading(v.id, reading(point, f"2{i % 10}.0 bar", minute=i)).id)

    workers = [threading.Thread(target=log, args=(point,)) for point in (CHARGE, LOOP_A)]
    for w in workers:
        w.start()
    for w in workers:
        w.join()
    assert sorted(r.id for r in store.get_visit(v.id).readings) == sorted(saved) and len(saved) == 30


def test_a_visit_comes_back_exactly_as_it_was_saved(store: SqliteVisitStore, store_path: Path) -> None:
    original = visit_with_readings(
        5, notes="Customer reports slow travel when warm.", hour_meter=6120.5, barometric_pressure="1008 mbar"
    )
    saved = store.create_visit(original)
    assert saved == original
    store.close()
    with SqliteVisitStore(store_path) as reopened:
        assert reopened.get_visit(original.id) == original


def test_every_reading_reported_saved_is_there_after_reopening(
    store: SqliteVisitStore, store_path: Path
) -> None:
    v = store.create_visit(visit())
    ids = [store.add_reading(v.id, reading(CHARGE, f"2{i}.0 bar", minute=i)).id for i in range(10)]
    store.close()
    with SqliteVisitStore(store_path) as reopened:
        assert [r.id for r in reopened.get_visit(v.id).readings] == ids


def test_an_unknown_visit_is_named_in_the_message(store: SqliteVisitStore) -> None:
    with pytest.raises(StoreError, match="no visit with id 'nosuchvisit'"):
        store.get_visit("nosuchvisit")
    with pytest.raises(StoreError, match="no visit with id 'nosuchvisit'"):
        store.add_reading("nosuchvisit", reading())


def test_visit_list_shows_newest_first_and_filters_by_status_and_machine(store: SqliteVisitStore) -> None:
    older = store.create_visit(visit(job_number="BPH-0301", date=dt.date(2024, 3, 1)))
    newer = store.create_visit(visit(job_number="BPH-0417", date=dt.date(2024, 4, 17)))
    other = store.create_visit(
        visit(job_number="BPH-0420", machine="demo-loader-2", date=dt.date(2024, 4, 20))
    )
    store.add_reading(newer.id, reading())
    store.add_reading(newer.id, reading(CASE_DRAIN, "3.1 L/min"))
    store.close_visit(older.id, "Charge relief reset; all readings in range.")

    everything = store.list_visits()
    assert [s.job_number for s in everything] == ["BPH-0420", "BPH-0417", "BPH-0301"]
    summary = next(s for s in everything if s.id == newer.id)
    assert (summary.customer, summary.machine, summary.reading_count, summary.status) == (
        "Brackenfield Plant Hire",
        MACHINE,
        2,
        VisitStatus.OPEN,
    )
    assert summary.updated_at.tzinfo is not None
    assert [s.id for s in store.list_visits(status="closed")] == [older.id]
    assert [s.id for s in store.list_visits(status=VisitStatus.OPEN, machine=MACHINE)] == [newer.id]
    assert [s.id for s in store.list_visits(machine="demo-loader-2")] == [other.id]
    with pytest.raises(StoreError, match="unknown visit status 'finished'"):
        store.list_visits(status="finished")


def test_a_correction_keeps_the_value_first_written(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    first = store.add_reading(v.id, reading(CHARGE, "42 bar"))  # a slip: 42 for 24
    fixed = store.correct_reading(v.id, first.id, reading(CHARGE, "24 bar"))
    assert fixed.replaces == first.id
    history = store.reading_history(v.id, CHARGE)
    assert [(r.id, r.value) for r in history] == [(first.id, Q_(42.0, "bar")), (fixed.id, Q_(24.0, "bar"))]
    assert [r.id for r in store.get_visit(v.id).current_readings()] == [fixed.id]
    assert store.list_visits()[0].reading_count == 1


def test_an_edited_copy_of_a_reading_becomes_a_new_version(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    first = store.add_reading(v.id, reading(CHARGE, "42 bar"))
    fixed = store.correct_reading(v.id, first.id, first.model_copy(update={"value": Q_(24.0, "bar")}))
    assert fixed.id != first.id and fixed.replaces == first.id
    assert len(store.reading_history(v.id, CHARGE)) == 2


def test_a_corrected_or_deleted_reading_cannot_be_corrected_again(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    first = store.add_reading(v.id, reading())
    second = store.correct_reading(v.id, first.id, reading(CHARGE, "25 bar"))
    with pytest.raises(StoreError, match=f"already corrected by '{second.id}'"):
        store.correct_reading(v.id, first.id, reading(CHARGE, "26 bar"))
    store.delete_reading(v.id, second.id)
    with pytest.raises(StoreError, match="was deleted"):
        store.correct_reading(v.id, second.id, reading(CHARGE, "26 bar"))
    with pytest.raises(StoreError, match="no reading with id 'zzz'"):
        store.delete_reading(v.id, "zzz")


def test_a_correction_must_stay_on_its_test_point(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    first = store.add_reading(v.id, reading())
    with pytest.raises(StoreError, match="same test point"):
        store.correct_reading(v.id, first.id, reading(LOOP_A, "240 bar"))


def test_a_deleted_reading_stays_in_the_record(store: SqliteVisitStore, store_path: Path) -> None:
    v = store.create_visit(visit())
    kept = store.add_reading(v.id, reading(CHARGE, "24 bar"))
    gone = store.add_reading(v.id, reading(CHARGE, "2.4 bar", minute=1))
    marked = store.delete_reading(v.id, gone.id)
    assert marked.deleted_at is not None and marked.value == Q_(2.4, "bar")
    full = store.get_visit(v.id)
    assert [r.id for r in full.readings] == [kept.id, gone.id]
    assert [r.id for r in full.current_readings()] == [kept.id]
    assert raw_rows(store_path) == (1, 2)


def test_the_database_itself_refuses_to_rewrite_or_drop_a_reading(
    store: SqliteVisitStore, store_path: Path
) -> None:
    v = store.create_visit(visit())
    r = store.add_reading(v.id, reading())
    conn = sqlite3.connect(store_path)
    try:
        with pytest.raises(sqlite3.IntegrityError, match="never rewritten"):
            conn.execute("UPDATE reading SET reading_json = '{}' WHERE id = ?", (r.id,))
        with pytest.raises(sqlite3.IntegrityError, match="kept"):
            conn.execute("DELETE FROM reading WHERE id = ?", (r.id,))
    finally:
        conn.close()
    assert store.get_visit(v.id).readings == [r]


def test_a_reading_on_a_gauge_the_visit_lacks_is_refused(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    with pytest.raises(StoreError, match="gauge 'g600', which this visit does not have"):
        store.add_reading(v.id, reading(gauge="g600"))
    store.add_gauge(v.id, gauge("g600", "600 bar", 1.0))
    assert store.add_reading(v.id, reading(LOOP_A, "245 bar", gauge="g600")).gauge == "g600"
    with pytest.raises(StoreError, match="already has a gauge 'g600'"):
        store.add_gauge(v.id, gauge("g600", "400 bar", 1.6))


def test_the_same_reading_id_twice_is_refused(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    r = store.add_reading(v.id, reading())
    with pytest.raises(StoreError, match=f"already has a reading with id '{r.id}'"):
        store.add_reading(v.id, r)


def test_an_invalid_reading_built_behind_the_models_back_never_reaches_the_disk(
    store: SqliteVisitStore, store_path: Path
) -> None:
    v = store.create_visit(visit())
    broken = Reading.model_construct(id="bad1", test_point=CHARGE, value="twenty bar")
    with pytest.raises(StoreError, match="reading 'bad1' is not valid"):
        store.add_reading(v.id, broken)
    assert raw_rows(store_path) == (1, 0)


def test_header_edits_are_validated_and_saved(store: SqliteVisitStore, store_path: Path) -> None:
    v = store.create_visit(visit())
    store.update_visit(
        v.id, hour_meter=6120.5, barometric_pressure="0.98 bar", notes="Hoses chafed at the boom pivot."
    )
    store.close()
    with SqliteVisitStore(store_path) as again:
        got = again.get_visit(v.id)
        assert (got.hour_meter, got.barometric_pressure, got.notes) == (
            6120.5,
            Q_(0.98, "bar"),
            "Hoses chafed at the boom pivot.",
        )
        with pytest.raises(StoreError, match="hour_meter"):
            again.update_visit(v.id, hour_meter=-5)
        with pytest.raises(StoreError, match="cannot change machine"):
            again.update_visit(v.id, machine="demo-loader-2")
        assert again.get_visit(v.id).hour_meter == 6120.5


def test_a_gauge_still_used_by_a_reading_cannot_be_removed(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    store.add_reading(v.id, reading(gauge="g60"))
    with pytest.raises(StoreError, match="names gauge 'g60'"):
        store.update_visit(v.id, gauges=[])
    assert [g.id for g in store.get_visit(v.id).gauges] == ["g60"]


def test_a_closed_visit_is_read_only_until_reopened(store: SqliteVisitStore) -> None:
    v = store.create_visit(visit())
    r = store.add_reading(v.id, reading())
    closed = store.close_visit(v.id, "Charge pressure low; charge relief cleaned and reset.")
    assert closed.status is VisitStatus.CLOSED and closed.summary.startswith("Charge pressure low")
    for attempt in (
        lambda: store.add_reading(v.id, reading()),
        lambda: store.correct_reading(v.id, r.id, reading(CHARGE, "25 bar")),
        lambda: store.delete_reading(v.id, r.id),
        lambda: store.update_visit(v.id, notes="late edit"),
        lambda: store.add_gauge(v.id, gauge("g400", "400 bar")),
    ):
        with pytest.raises(StoreError, match="is closed; reopen it"):
            attempt()
    with pytest.raises(StoreError, match="already closed"):
        store.close_visit(v.id, "again")
    reopened = store.reopen_visit(v.id)
    assert reopened.status is VisitStatus.OPEN and reopened.summary.startswith("Charge pressure low")
    store.add_reading(v.id, reading(CHARGE, "25 bar"))


def test_machine_history_gives_earlier_visits_current_readings_oldest_first(store: SqliteVisitStore) -> None:
    spring = store.create_visit(visit(job_number="BPH-0301", date=dt.date(2024, 3, 1)))
    autumn = store.create_visit(visit(job_number="BPH-0917", date=dt.date(2024, 9, 17)))
    elsewhere = store.create_visit(
        visit(job_number="BPH-0500", machine="demo-loader-2", date=dt.date(2024, 5, 1))
    )
    slip = store.add_reading(spring.id, reading(CASE_DRAIN, "31 L/min"))
    fixed = store.correct_reading(spring.id, slip.id, reading(CASE_DRAIN, "3.1 L/min"))
    store.add_reading(spring.id, reading(CHARGE, "24 bar"))
    autumn_drain = store.add_reading(autumn.id, reading(CASE_DRAIN, "5.2 L/min"))
    store.add_reading(elsewhere.id, reading(CASE_DRAIN, "9 L/min"))

    history = store.machine_history(MACHINE, [CASE_DRAIN])
    assert [(s.job_number, [r.id for r in rs]) for s, rs in history] == [
        ("BPH-0301", [fixed.id]),
        ("BPH-0917", [autumn_drain.id]),
    ]
    assert len(store.machine_history(MACHINE)[0][1]) == 2
    assert store.machine_history("no-such-machine") == []


def test_a_damaged_row_is_named_instead_of_a_traceback(store: SqliteVisitStore, store_path: Path) -> None:
    v = store.create_visit(visit())
    conn = sqlite3.connect(store_path)
    try:
        conn.execute(
            "INSERT INTO reading (visit_id, id, test_point, taken_at, stored_at, reading_json) VALUES (?, "
            "?, ?, ?, ?, ?)",
            (
                v.id,
                "hand-edit",
                CHARGE,
                "2024-05-14T08:30:00Z",
                "2024-05-14T08:30:00Z",
                json.dumps({"id": "hand-edit", "test_point": CHARGE, "value": "24.5 bra"}),
            ),
        )
        conn.commit()
        # A value alone that cannot be read (issue 10, item 3) no longer locks the visit: the
        # reading is kept, marked unreadable with the reason, and stands for nothing.
        loaded = store.get_visit(v.id)
        (kept,) = loaded.unreadable_readings()
        assert kept.id == "hand-edit" and "'bra'" in kept.unreadable
        assert "hand-edit" not in {r.id for r in loaded.current_readings()}
        # A row damaged beyond its value is still named, never a traceback.
        conn.execute(
            "INSERT INTO reading (visit_id, id, test_point, taken_at, stored_at, reading_json) VALUES (?, "
            "?, ?, ?, ?, ?)",
            (v.id, "cut-short", CHARGE, "2024-05-14T08:31:00Z", "2024-05-14T08:31:00Z", '{"id": "cut-sh'),
        )
        conn.commit()
        with pytest.raises(StoreError, match=r"reading 'cut-short' of visit '\w+' .* cannot be read"):
            store.get_visit(v.id)
        conn.execute('UPDATE visit SET header_json = \'{"job_number": ""}\' WHERE id = ?', (v.id,))
        conn.commit()
        with pytest.raises(StoreError, match=f"visit '{v.id}' in .* cannot be read: .*job_number"):
            store.list_visits()
    finally:
        conn.close()


def test_open_store_follows_the_store_setting_and_creates_its_folder(tmp_path: Path) -> None:
    # conftest points FIELDKIT_STORE into tmp_path; the user's real data folder is never used.
    with open_store() as from_env:
        assert from_env.path == tmp_path / "home" / "visits.sqlite3"
        assert from_env.path.is_file()
    chosen = tmp_path / "usb" / "job-store.sqlite3"
    with open_store(chosen) as from_option:
        assert from_option.path == chosen and chosen.is_file()


def test_a_closed_store_says_so(store: SqliteVisitStore) -> None:
    store.close()
    with pytest.raises(StoreError, match="is closed"):
        store.list_visits()
