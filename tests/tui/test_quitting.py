"""Quitting never loses a reading: saved ones are on disk already, and a half-typed value is
either saved or thrown away knowingly."""

from __future__ import annotations

from pathlib import Path

from fieldkit.session import Workbench
from fieldkit.tui.screens.dialogs import QuitDialog
from fieldkit.tui.screens.visit import VisitScreen

from .conftest import DEMO_OPEN_VISIT, type_text, wait_until


def _readings(store_path: Path) -> list:
    bench = Workbench.open(store_path)
    try:
        return bench.store.get_visit(DEMO_OPEN_VISIT).readings
    finally:
        bench.close()


async def _typed(app, pilot, text: str) -> VisitScreen:
    await pilot.pause()
    await pilot.press("r")
    await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
    await type_text(pilot, text)
    return app.screen


async def test_a_half_typed_value_is_asked_about_and_thrown_away_only_when_told(
    demo_app, store_path: Path
) -> None:
    count = len(_readings(store_path))
    app = demo_app()
    async with app.run_test() as pilot:
        screen = await _typed(app, pilot, "27.1 bar")
        await pilot.press("ctrl+q")
        await wait_until(pilot, lambda: isinstance(app.screen, QuitDialog))
        await pilot.press("escape")  # back: nothing lost
        await wait_until(pilot, lambda: app.screen is screen)
        assert app.is_running and screen.query_one("#value").value == "27.1 bar"
        await pilot.press("ctrl+q")
        await wait_until(pilot, lambda: isinstance(app.screen, QuitDialog))
        await pilot.press("q")  # quit without it, knowingly
        await pilot.pause()
    assert not app.is_running
    assert len(_readings(store_path)) == count


async def test_save_and_quit_stores_the_typed_value_first(demo_app, store_path: Path) -> None:
    count = len(_readings(store_path))
    app = demo_app()
    async with app.run_test() as pilot:
        await _typed(app, pilot, "27.1 bar")
        await pilot.press("ctrl+q")
        await wait_until(pilot, lambda: isinstance(app.screen, QuitDialog))
        await pilot.press("s")
        await pilot.pause()
    assert not app.is_running
    readings = _readings(store_path)
    assert len(readings) == count + 1 and readings[-1].entered == "27.1 bar"


async def test_save_and_quit_with_a_typo_stays_open_and_says_why(demo_app, store_path: Path) -> None:
    count = len(_readings(store_path))
    app = demo_app()
    async with app.run_test() as pilot:
        screen = await _typed(app, pilot, "27.1 bra")
        await pilot.press("ctrl+q")
        await wait_until(pilot, lambda: isinstance(app.screen, QuitDialog))
        await pilot.press("s")
        await wait_until(pilot, lambda: app.screen is screen)
        assert app.is_running
        assert "nothing saved" in str(screen.query_one("#parse-msg").content)
    assert len(_readings(store_path)) == count


async def test_the_command_search_quit_goes_through_the_same_question(demo_app) -> None:
    app = demo_app()
    async with app.run_test() as pilot:
        screen = await _typed(app, pilot, "27.1 bar")
        titles = [c.title for c in app.get_system_commands(screen)]
        assert "Quit" not in titles  # Textual's own would skip the question
        await app.action_quit()
        await wait_until(pilot, lambda: isinstance(app.screen, QuitDialog))
        assert app.is_running
