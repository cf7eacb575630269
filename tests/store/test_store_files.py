"""Pointing fieldkit at the wrong file must never cost anyone their data.

Each refusal is checked two ways: the message names the path and the problem, and the file's
bytes hash the same before and after (no side files left beside a foreign file either).
"""

from __future__ import annotations

import os
import random
import sqlite3
from pathlib import Path

import pytest
from store_builders import CHARGE, digest, raw_rows, reading, visit

from fieldkit.errors import StoreError
from fieldkit.store.migrations import APPLICATION_ID, MIGRATIONS, Migration, latest_version
from fieldkit.store.opening import create_store
from fieldkit.store.sqlite import SqliteVisitStore


def _store_with_readings(path: Path, count: int = 60) -> str:
    with SqliteVisitStore(path) as store:
        v = store.create_visit(visit())
        store.add_readings(
            v.id, [reading(CHARGE, f"2{i % 10}.5 bar", minute=i, note="x" * 200) for i in range(count)]
        )
        return v.id


def _refused(path: Path, pattern: str) -> None:
    before = digest(path)
    neighbours = sorted(p.name for p in path.parent.iterdir())
    with pytest.raises(StoreError, match=pattern) as caught:
        SqliteVisitStore(path)
    assert str(path) in str(caught.value)
    assert digest(path) == before, "a refused file was modified"
    assert sorted(p.name for p in path.parent.iterdir()) == neighbours, (
        "files were left beside a refused file"
    )


def test_a_new_store_is_marked_as_fieldkits(store_path: Path) -> None:
    SqliteVisitStore(store_path).close()
    header = store_path.read_bytes()[:100]
    assert header.startswith(b"SQLite format 3\x00")
    assert header[68:72] == b"FKVS" and int.from_bytes(header[68:72], "big") == APPLICATION_ID
    assert int.from_bytes(header[60:64], "big") == latest_version()
    assert header[18:20] == b"\x02\x02"  # write-ahead log recorded in the file header


def test_missing_folders_are_created_for_a_new_store(tmp_path: Path) -> None:
    deep = tmp_path / "jobs" / "2024" / "spring" / "visits.sqlite3"
    with SqliteVisitStore(deep) as store:
        assert store.list_visits() == []
    assert deep.is_file()
    assert not any(p.name.startswith(".fieldkit-new-") for p in deep.parent.iterdir())


def test_an_empty_file_becomes_a_new_store(store_path: Path) -> None:
    store_path.parent.mkdir(parents=True)
    store_path.touch()
    with SqliteVisitStore(store_path) as store:
        store.create_visit(visit())
    assert raw_rows(store_path) == (1, 0)


def test_random_bytes_are_refused_untouched(store_path: Path) -> None:
    store_path.parent.mkdir(parents=True)
    store_path.write_bytes(random.Random(4406).randbytes(16384))
    _refused(store_path, "not an SQLite database")


def test_a_text_file_is_refused_untouched(store_path: Path) -> None:
    store_path.parent.mkdir(parents=True)
    store_path.write_text("job,reading\nBPH-0417,24.5 bar\n", encoding="utf-8")
    _refused(store_path, "not a fieldkit store")


@pytest.mark.parametrize("keep", ["half", "header_only", "one_page_short"])
def test_a_truncated_store_is_refused_untouched(store_path: Path, keep: str) -> None:
    _store_with_readings(store_path)
    size = store_path.stat().st_size
    cut = {"half": size // 2 + 100, "header_only": 60, "one_page_short": size - 4096}[keep]
    with store_path.open("r+b") as fh:
        fh.truncate(cut)
    _refused(store_path, "cut short")


def test_another_programs_database_is_refused_untouched(store_path: Path) -> None:
    store_path.parent.mkdir(parents=True)
    conn = sqlite3.connect(store_path)
    conn.execute("CREATE TABLE invoices (number TEXT, amount REAL)")
    conn.execute("INSERT INTO invoices VALUES ('INV-1', 120.0)")
    conn.commit()
    conn.close()
    _refused(store_path, "made by another program")


def test_a_database_with_another_application_mark_is_refused_untouched(store_path: Path) -> None:
    store_path.parent.mkdir(parents=True)
    conn = sqlite3.connect(store_path)
    conn.execute("PRAGMA application_id = 1234567")
    conn.execute("CREATE TABLE visit (id TEXT)")  # even a table with our name does not make it ours
    conn.commit()
    conn.close()
    _refused(store_path, r"another program \(application id 0x0012D687\)")


def test_a_file_with_our_mark_but_no_store_tables_is_refused_untouched(store_path: Path) -> None:
    store_path.parent.mkdir(parents=True)
    conn = sqlite3.connect(store_path)
    conn.execute(f"PRAGMA application_id = {APPLICATION_ID}")
    conn.execute("PRAGMA user_version = 1")
    conn.execute("CREATE TABLE notes (text TEXT)")
    conn.commit()
    conn.close()
    _refused(store_path, "lacks a store's tables")


def test_a_store_from_a_newer_fieldkit_is_left_alone(store_path: Path) -> None:
    _store_with_readings(store_path, 5)
    conn = sqlite3.connect(store_path)
    conn.execute("PRAGMA user_version = 99")
    conn.commit()
    conn.close()
    _refused(
        store_path, rf"made by a newer fieldkit \(layout 99; this program knows up to {latest_version()}\)"
    )


def test_a_folder_is_not_a_store(tmp_path: Path) -> None:
    folder = tmp_path / "visits"
    folder.mkdir()
    with pytest.raises(StoreError, match=f"{folder} is a folder"):
        SqliteVisitStore(folder)
    assert list(folder.iterdir()) == []


def test_a_path_through_a_file_is_refused(tmp_path: Path) -> None:
    blocker = tmp_path / "notes.txt"
    blocker.write_text("not a folder", encoding="utf-8")
    with pytest.raises(StoreError, match="notes.txt/visits.sqlite3: a part of this path is a file"):
        SqliteVisitStore(blocker / "visits.sqlite3")
    assert blocker.read_text(encoding="utf-8") == "not a folder"


@pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() == 0, reason="root may write anywhere")
def test_a_read_only_folder_gives_a_clear_message(tmp_path: Path) -> None:
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o500)
    try:
        with pytest.raises(StoreError, match="cannot write in the folder"):
            SqliteVisitStore(locked / "visits.sqlite3")
    finally:
        locked.chmod(0o700)


def test_a_store_made_at_the_same_moment_by_another_fieldkit_is_kept(store_path: Path) -> None:
    visit_id = _store_with_readings(store_path, 3)
    before = digest(store_path)
    create_store(store_path)  # what a second program would do if it lost the race
    assert digest(store_path) == before
    with SqliteVisitStore(store_path) as store:
        assert len(store.get_visit(visit_id).readings) == 3


def test_an_older_store_is_upgraded_in_one_step_and_keeps_its_readings(store_path: Path) -> None:
    visit_id = _store_with_readings(store_path, 4)
    later = (
        *MIGRATIONS,
        Migration(
            latest_version() + 1,
            "test: an extra index",
            ("CREATE INDEX reading_by_stored ON reading (stored_at)",),
        ),
    )
    with SqliteVisitStore(store_path, migrations=later) as store:
        assert len(store.get_visit(visit_id).readings) == 4
    conn = sqlite3.connect(store_path)
    try:
        assert conn.execute("PRAGMA user_version").fetchone()[0] == latest_version() + 1
        assert conn.execute("SELECT 1 FROM sqlite_master WHERE name = 'reading_by_stored'").fetchone()
    finally:
        conn.close()
    # and the program that only knows layout 1 now refuses it rather than guessing
    with pytest.raises(StoreError, match="newer fieldkit"):
        SqliteVisitStore(store_path)


def test_a_failing_upgrade_leaves_the_store_as_it_was(store_path: Path) -> None:
    _store_with_readings(store_path, 4)
    before = digest(store_path)
    broken = (
        *MIGRATIONS,
        Migration(
            latest_version() + 1,
            "test: good then bad",
            (
                "CREATE TABLE photo (id TEXT)",
                "CREATE INDEX nonsense ON no_such_table (x)",
            ),
        ),
    )
    with pytest.raises(StoreError, match="no_such_table"):
        SqliteVisitStore(store_path, migrations=broken)
    assert digest(store_path) == before
    conn = sqlite3.connect(store_path)
    try:
        assert conn.execute("PRAGMA user_version").fetchone()[0] == latest_version()
        assert conn.execute("SELECT 1 FROM sqlite_master WHERE name = 'photo'").fetchone() is None
    finally:
        conn.close()
