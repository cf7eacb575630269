"""Fixtures for driving the terminal UI with Textual's pilot.

Each test gets its own demo store: the bundled sample visits are seeded once per session into a
template file, which is copied for every test (seeding takes longer than copying). The root
conftest already points FIELDKIT_HOME at the test's tmp folder, so settings and job cards land
there too.
"""

from __future__ import annotations

import shutil
from collections.abc import Callable, Iterator
from pathlib import Path

import pytest
from textual.pilot import Pilot

from fieldkit.session import Workbench, seed_demo
from fieldkit.tui.app import FieldkitApp, make_app

DEMO_OPEN_VISIT = "rhs-25-0301"  # sample_readings/visits/demo-open-visit.json


@pytest.fixture(scope="session")
def seeded_template(tmp_path_factory: pytest.TempPathFactory) -> Path:
    path = tmp_path_factory.mktemp("template") / "demo.sqlite3"
    bench = Workbench.open(path)
    seed_demo(bench.store)
    bench.close()  # checkpoints the WAL, so the single file is the whole store
    return path


@pytest.fixture
def store_path(tmp_path: Path, seeded_template: Path) -> Path:
    path = tmp_path / "laptop" / "demo.sqlite3"
    path.parent.mkdir(parents=True)
    shutil.copy(seeded_template, path)
    return path


@pytest.fixture
def open_bench(store_path: Path) -> Iterator[Callable[[], Workbench]]:
    """Open a Workbench on the test's store; every one opened is closed after the test."""
    opened: list[Workbench] = []

    def make() -> Workbench:
        bench = Workbench.open(store_path)
        seed_demo(bench.store)  # as `fieldkit demo` does; a no-op on the seeded copy
        opened.append(bench)
        return bench

    yield make
    for bench in opened:
        bench.close()


@pytest.fixture
def demo_app(open_bench: Callable[[], Workbench]) -> Callable[[], FieldkitApp]:
    return lambda: make_app(open_bench(), demo=True)


async def wait_until(pilot: Pilot, condition: Callable[[], bool], *, tries: int = 50) -> None:
    """Let the app process messages until ``condition`` holds (fails the test if it never does)."""
    for _ in range(tries):
        if condition():
            return
        await pilot.pause()
    assert condition(), "the screen never reached the expected state"


async def type_text(pilot: Pilot, text: str) -> None:
    """Type as a person would, one key at a time."""
    await pilot.press(*list(text))
