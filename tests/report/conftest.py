"""Fixtures for the job-card tests: a workbench on a private store and the worn-charge-pump visit."""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path

import pytest
from report_builders import load, open_bench

from fieldkit.diagnosis.results import Diagnosis
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit
from fieldkit.session import Workbench


@pytest.fixture
def bench(tmp_path: Path) -> Iterator[Workbench]:
    store = tmp_path / "store"  # apart from tmp_path itself, which tests use as an output folder
    store.mkdir()
    wb = open_bench(store)
    yield wb
    wb.close()


@pytest.fixture
def worn(bench: Workbench) -> tuple[Visit, MachineProfile, Diagnosis]:
    """The demo visit where the Fellborer's charge pump is worn: low, high and inconclusive readings."""
    visit, profile = load(bench)
    return visit, profile, bench.diagnose(visit, profile)
