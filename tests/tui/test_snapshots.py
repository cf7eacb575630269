"""What the screens look like: SVG snapshots taken with pytest-textual-snapshot.

Each snapshot is the demo store at a fixed terminal size, with the text cursor's blink switched
off so the picture does not depend on when it was taken. The store lives at a fixed path (its
path is printed on the start screen). A snapshot that differs fails the test and the plugin
writes a report showing both pictures. After a deliberate change of the UI, regenerate them
(DEVELOPERS.md, "Snapshots and golden files") and read the new pictures before committing.

These pictures only guard against unnoticed change; what the screens *say* is checked by the
text assertions in the other tests of this folder.
"""

from __future__ import annotations

import shutil
from collections.abc import Iterator
from pathlib import Path

import pytest
from textual.pilot import Pilot
from textual.widgets import Input, TextArea

from fieldkit.session import Workbench, seed_demo
from fieldkit.tui.app import FieldkitApp, make_app
from fieldkit.tui.screens.visit import VisitScreen

#: Printed on the start screen (the store) and the finish screen (the job card folder), so it
#: must not change from run to run.
SNAPSHOT_STORES = Path("/tmp/fieldkit-snapshots")


@pytest.fixture
def snapshot_app(
    request: pytest.FixtureRequest, seeded_template: Path, monkeypatch: pytest.MonkeyPatch
) -> Iterator[FieldkitApp]:
    folder = SNAPSHOT_STORES / request.node.name.replace("[", "-").replace("]", "")
    shutil.rmtree(folder, ignore_errors=True)
    folder.mkdir(parents=True)
    # The finish screen prints the job card folder, which lives under FIELDKIT_HOME.
    monkeypatch.setenv("FIELDKIT_HOME", str(folder / "home"))
    path = folder / "demo.sqlite3"
    shutil.copy(seeded_template, path)
    bench = Workbench.open(path)
    seed_demo(bench.store)
    yield make_app(bench, demo=True)
    bench.close()
    shutil.rmtree(folder, ignore_errors=True)


async def _steady(pilot: Pilot) -> None:
    """Let the screen settle and stop every text cursor blinking."""
    await pilot.pause()
    for field in pilot.app.screen.query(Input):
        field.cursor_blink = False
    for area in pilot.app.screen.query(TextArea):
        area.cursor_blink = False
        # TextArea caches its lines without the focus in the key when the cursor does not blink,
        # so a line drawn before the focus landed would keep showing no cursor: drop the cache.
        area.notify_style_update()
        area.refresh()
    await pilot.pause()


async def _open_visit(pilot: Pilot) -> None:
    await pilot.pause()
    await pilot.press("r")  # resume the latest open visit
    for _ in range(50):
        if isinstance(pilot.app.screen, VisitScreen):
            break
        await pilot.pause()
    await _steady(pilot)


def test_the_start_screen(snap_compare, snapshot_app: FieldkitApp) -> None:
    assert snap_compare(snapshot_app, terminal_size=(80, 24), run_before=_steady)


@pytest.mark.parametrize("size", [(80, 24), (150, 40)], ids=["80x24", "150x40"])
def test_the_visit_screen(snap_compare, snapshot_app: FieldkitApp, size: tuple[int, int]) -> None:
    assert snap_compare(snapshot_app, terminal_size=size, run_before=_open_visit)


def test_the_faults_view(snap_compare, snapshot_app: FieldkitApp) -> None:
    async def faults(pilot: Pilot) -> None:
        await _open_visit(pilot)
        await pilot.press("ctrl+f")
        await _steady(pilot)

    assert snap_compare(snapshot_app, terminal_size=(100, 30), run_before=faults)


async def _finish(pilot: Pilot) -> None:
    """The finish screen with its summary draft; every worker done before the picture."""
    await _open_visit(pilot)
    await pilot.press("ctrl+o")
    for _ in range(50):
        if type(pilot.app.screen).__name__ == "FinishScreen":
            break
        await pilot.pause()
    await pilot.app.workers.wait_for_complete()
    pilot.app.screen.query_one("#summary", TextArea).focus()
    await _steady(pilot)


def test_the_finish_screen(snap_compare, snapshot_app: FieldkitApp) -> None:
    assert snap_compare(snapshot_app, terminal_size=(100, 30), run_before=_finish)
