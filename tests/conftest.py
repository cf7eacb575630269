"""Every test runs with its own data folder, so no test reads or writes the technician's real
visits, settings or profiles (and a developer's own settings cannot change a test's result)."""

from __future__ import annotations

from pathlib import Path

import pytest


@pytest.fixture(autouse=True)
def _private_fieldkit_home(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    """Point FIELDKIT_HOME and FIELDKIT_STORE into the test's tmp folder; subprocesses inherit it."""
    home = tmp_path / "fieldkit-home"
    monkeypatch.setenv("FIELDKIT_HOME", str(home))
    monkeypatch.setenv("FIELDKIT_STORE", str(home / "visits.sqlite3"))
    return home
