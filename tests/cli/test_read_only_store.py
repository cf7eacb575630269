"""Item 8 of issue 10: a store that cannot be written opens read-only for the commands that
only read, and a command that writes says "read-only", never "damaged".

Tests run as root in CI, where a chmod does not stop writes; so the non-root view of the file
is simulated where the decision is made (``os.access`` answers "not writable" for the store or
its folder), while SQLite is really opened read-only (``mode=ro``; ``immutable`` for a folder
nobody can write) and refuses a write whoever runs it. A last test uses real permissions and
holds as root and as a user alike.
"""

from __future__ import annotations

import hashlib
import os
import sqlite3
import stat
from collections.abc import Iterator
from pathlib import Path

import pytest

from fieldkit.cli import main
from fieldkit.model.visit import Visit
from fieldkit.resources import samples_dir
from fieldkit.store import SqliteVisitStore, open_store
from fieldkit.store import sqlite as store_sqlite

DEMO = samples_dir() / "visits" / "demo-open-visit.json"
VISIT = "rhs-25-0301"
READS = [
    ["visits"],
    ["diagnose", VISIT],
    ["report", VISIT, "--text", "-"],
    ["export", VISIT, "--out", "{out}"],
]
WRITES = [
    ["import", "{csv}", "--visit", VISIT],
    ["reading", "delete", VISIT, "r04", "--reason", "test"],
    ["kit", "add", "g9", "--kind", "pressure_gauge", "--span", "0..60 bar", "--class", "1"],
]


@pytest.fixture
def store(tmp_path: Path) -> Path:
    path = Path(os.environ["FIELDKIT_STORE"])
    with open_store(path) as opened:
        opened.import_visit(Visit.model_validate_json(DEMO.read_text(encoding="utf-8")))
    return path


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture(params=["file", "folder"])
def not_writable(
    request: pytest.FixtureRequest, store: Path, monkeypatch: pytest.MonkeyPatch
) -> Iterator[Path]:
    """What a user without write permission sees: the store file (or its whole folder) is not
    writable according to os.access."""
    real = os.access
    blocked = store if request.param == "file" else store.parent

    def access(path: object, mode: int, *args: object, **kwargs: object) -> bool:
        if mode & os.W_OK and Path(str(path)) == blocked:
            return False
        return real(path, mode, *args, **kwargs)  # type: ignore[arg-type]

    monkeypatch.setattr(store_sqlite.os, "access", access)
    yield store


def _argv(argv: list[str], tmp_path: Path) -> list[str]:
    csv = tmp_path / "r.csv"
    csv.write_text("time,test_point,value\n2025-06-03T11:00:00Z,travel.charge,24 bar\n", encoding="utf-8")
    (tmp_path / "out").mkdir(exist_ok=True)
    return [a.format(csv=csv, out=tmp_path / "out") for a in argv]


def test_reading_commands_work_on_a_store_that_cannot_be_written(
    not_writable: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    before = _digest(not_writable)
    for argv in READS:
        code = main(_argv(argv, tmp_path))
        out, err = capsys.readouterr()
        assert code == 0, (argv, err)
        assert "read-only here; it is opened for reading only" in err and "damaged" not in err
        assert out.strip()
    assert _digest(not_writable) == before


def test_writing_commands_say_read_only_and_change_nothing(
    not_writable: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    before = _digest(not_writable)
    for argv in WRITES:
        code = main(_argv(argv, tmp_path))
        err = capsys.readouterr().err
        assert code == 2, (argv, err)
        assert "is read-only here" in err and "nothing was saved" in err and "damaged" not in err
    assert _digest(not_writable) == before


def test_the_read_only_connection_refuses_a_write_even_for_root(not_writable: Path) -> None:
    with SqliteVisitStore(not_writable) as opened:
        assert opened.read_only
        assert opened.get_visit(VISIT).job_number == "RHS-25-0301"
        with pytest.raises(sqlite3.OperationalError, match="readonly|read-only|query_only"):
            opened._db.execute("DELETE FROM kit_item")


def test_a_read_only_store_made_by_an_older_fieldkit_says_so(not_writable: Path) -> None:
    from fieldkit.errors import StoreError
    from fieldkit.store.migrations import MIGRATIONS, Migration

    newer = (*MIGRATIONS, Migration(len(MIGRATIONS) + 1, "a later layout", ("SELECT 1",)))
    with pytest.raises(StoreError, match="read-only here and was made by an older fieldkit"):
        SqliteVisitStore(not_writable, migrations=newer)


def test_real_permissions_never_make_the_store_look_damaged(
    store: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # Holds for root (who may write anyway) and for a user (who gets the read-only path).
    for extra in ("-wal", "-shm"):
        Path(f"{store}{extra}").unlink(missing_ok=True)
    folder = store.parent
    store.chmod(0o444)
    folder.chmod(0o555)
    try:
        for argv in READS[:3]:
            code = main(_argv(argv, tmp_path))
            err = capsys.readouterr().err
            assert code == 0 and "damaged" not in err, (argv, err)
        code = main(_argv(WRITES[2], tmp_path))
        err = capsys.readouterr().err
        assert "damaged" not in err
        assert code == 0 or "read-only" in err
    finally:
        folder.chmod(stat.S_IRWXU)
        store.chmod(0o644)
