"""Every store test works in its own temporary folder and never sees the user's real data."""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path

import pytest

from fieldkit.store.sqlite import SqliteVisitStore


@pytest.fixture(autouse=True)
def _keep_out_of_user_data(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("FIELDKIT_HOME", str(tmp_path / "home"))
    monkeypatch.setenv("FIELDKIT_STORE", str(tmp_path / "home" / "visits.sqlite3"))


@pytest.fixture
def store_path(tmp_path: Path) -> Path:
    return tmp_path / "van-laptop" / "visits.sqlite3"


@pytest.fixture
def store(store_path: Path) -> Iterator[SqliteVisitStore]:
    with SqliteVisitStore(store_path) as opened:
        yield opened
