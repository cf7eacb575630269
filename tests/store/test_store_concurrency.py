"""Two fieldkits on one store file (the van laptop and the office PC on a shared folder, or two
windows on one laptop): they queue for the write lock, nothing is lost, nothing is corrupted."""

from __future__ import annotations

import os
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest
from store_builders import integrity, reading, visit

from fieldkit.errors import StoreError
from fieldkit.store.sqlite import SqliteVisitStore

CHILD = Path(__file__).with_name("store_child.py")


def _start(*args: str) -> subprocess.Popen[str]:
    return subprocess.Popen(
        [sys.executable, str(CHILD), *args],
        stdin=subprocess.PIPE,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env=os.environ.copy(),
    )


def _expect(proc: subprocess.Popen[str], word: str) -> None:
    assert proc.stdout is not None
    line = proc.stdout.readline().strip()
    if line != word:
        proc.kill()
        raise AssertionError(f"child said {line!r}, expected {word!r}; stderr: {proc.communicate()[1]}")


def test_two_fieldkits_logging_at_once_lose_no_reading(store_path: Path) -> None:
    with SqliteVisitStore(store_path) as store:
        visit_id = store.create_visit(visit()).id
    per_child = 40
    kids = [_start("batch", str(store_path), visit_id, str(per_child)) for _ in range(2)]
    try:
        for kid in kids:
            _expect(kid, "ready")
        for kid in kids:  # both start writing at the same moment
            assert kid.stdin is not None
            kid.stdin.write("go\n")
            kid.stdin.flush()
        results = [kid.communicate(timeout=120) for kid in kids]
    finally:
        for kid in kids:
            if kid.poll() is None:
                kid.kill()
    for kid, (_out, err) in zip(kids, results, strict=True):
        assert kid.returncode == 0, err
    reported = [line for out, _err in results for line in out.split()]
    assert len(reported) == 2 * per_child
    with SqliteVisitStore(store_path) as store:
        stored = [r.id for r in store.get_visit(visit_id).readings]
    assert sorted(stored) == sorted(reported)
    assert integrity(store_path) == ["ok"]


def test_a_store_held_by_another_writer_says_it_is_busy(store_path: Path) -> None:
    with SqliteVisitStore(store_path, busy_timeout_ms=300) as store:
        v = store.create_visit(visit())
        holder = _start("hold-lock", str(store_path))
        try:
            _expect(holder, "locked")
            started = time.monotonic()
            with pytest.raises(
                StoreError, match="the store is busy: another fieldkit is writing to .*visits.sqlite3"
            ):
                store.add_reading(v.id, reading())
            assert time.monotonic() - started >= 0.25, "gave up without waiting for the other writer"
            assert store.get_visit(v.id).readings == []  # reading still works while the other one writes
        finally:
            assert holder.stdin is not None
            holder.stdin.close()
            holder.wait(timeout=30)
        assert store.add_reading(v.id, reading()).id in {r.id for r in store.get_visit(v.id).readings}


def test_a_short_wait_for_another_writer_is_not_an_error(store_path: Path) -> None:
    with SqliteVisitStore(store_path) as store:  # default busy timeout: 5 s
        v = store.create_visit(visit())
        holder = _start("hold-lock", str(store_path))
        try:
            _expect(holder, "locked")
            assert holder.stdin is not None
            release = threading.Timer(0.3, holder.stdin.close)
            release.start()
            started = time.monotonic()
            saved = store.add_reading(v.id, reading())
            waited = time.monotonic() - started
        finally:
            holder.wait(timeout=30)
        assert waited >= 0.2
        assert [r.id for r in store.get_visit(v.id).readings] == [saved.id]
