"""Text a person typed or a file carried is shown exactly as written: markup is not obeyed,
an unbalanced tag does not crash a screen, control characters are shown, not sent."""

from __future__ import annotations

from pathlib import Path

from rich.text import Text

from fieldkit.model.visit import Visit
from fieldkit.session import Workbench
from fieldkit.tui.plain_summary import write_plain_summary
from fieldkit.tui.safe_text import literal, visible
from fieldkit.tui.screens.dialogs import NotesDialog
from fieldkit.tui.screens.finish import FinishScreen
from fieldkit.tui.screens.history import HistoryScreen
from fieldkit.tui.screens.visit import VisitScreen

from .conftest import type_text, wait_until
from .screen_text import screen_lines, screen_text, static_text

HOSTILE = "[bold]x[/bold] [@click=app.quit]q[/] [/"
CONTROL = "\x1b[2J\x1b]0;pwned\x07"


def _hostile_visit(store_path: Path) -> Visit:
    bench = Workbench.open(store_path)
    try:
        visit = Visit(
            job_number=HOSTILE,
            customer=f"{HOSTILE} [link=https://example.invalid]l[/link]{CONTROL}",
            machine="tarnhollow-fellborer",
            machine_serial="[/]",
            technician="[red]Tam[/red]",
            notes=f"Customer said: {HOSTILE}\nsecond line [0] {CONTROL}",
        )
        return bench.store.create_visit(visit)
    finally:
        bench.close()


def test_literal_shows_markup_and_control_characters_as_written() -> None:
    shown = literal(HOSTILE + CONTROL)
    assert isinstance(shown, Text) and shown.spans == []
    assert shown.plain.startswith(HOSTILE)
    assert "\x1b" not in shown.plain and "\x07" not in shown.plain
    assert "␛[2J" in shown.plain and "␇" in shown.plain  # U+241B, U+2407: visible symbols
    assert visible("a\nb", multiline=True) == "a\nb"
    assert "\u202e" not in visible("abc\u202edef")  # right-to-left override cannot reorder the line


async def test_hostile_job_number_customer_and_notes_render_literally_and_the_app_keeps_running(
    demo_app, store_path: Path
) -> None:
    visit = _hostile_visit(store_path)
    app = demo_app()
    async with app.run_test(size=(160, 40)) as pilot:
        await pilot.pause()
        text = screen_text(app)
        assert HOSTILE in text  # the start screen's visit list
        assert "\x1b" not in app.export_screenshot()

        # The command search lists the visit by its job number, drawn as plain text.
        await pilot.press("f3")
        await pilot.pause()
        await type_text(pilot, "click")
        await pilot.pause()
        assert "[@click=app.quit]q[/]" in screen_text(app)
        await pilot.press("escape")
        await pilot.pause()

        await pilot.press("r")  # the hostile visit is the most recently changed open visit
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        screen = app.screen
        assert screen.visit_id == visit.id
        top = screen_lines(app)[0]
        assert HOSTILE in top and " [link=https://exam" in top  # the rest is cut with an ellipsis
        assert "[link=https://example.invalid]l[/link]␛[2J␛]0;pwned␇" in static_text(
            screen.query_one("#topbar")
        )

        # Clicking where '[@click=app.quit]' would be a live link does nothing.
        column = top.index("q[/]")
        await pilot.click("#topbar", offset=(column, 0))
        await pilot.pause()
        assert app.is_running and app.screen is screen

        await pilot.press("ctrl+t")
        await wait_until(pilot, lambda: isinstance(app.screen, NotesDialog))
        assert "Customer said: [bold]x[/bold]" in screen_text(app)
        await pilot.press("escape")
        await pilot.press("ctrl+l")
        await wait_until(pilot, lambda: isinstance(app.screen, HistoryScreen))
        assert HOSTILE in screen_text(app)
        await pilot.press("escape")
        await pilot.press("ctrl+o")
        await wait_until(pilot, lambda: isinstance(app.screen, FinishScreen))
        assert HOSTILE in screen_text(app)
        await pilot.press("escape")
        await wait_until(pilot, lambda: app.screen is screen)
        assert app.is_running


def test_the_plain_summary_keeps_a_hostile_job_number_out_of_the_file_name(
    open_bench, store_path: Path, tmp_path: Path
) -> None:
    visit = _hostile_visit(store_path)
    bench = open_bench()
    visit = bench.store.get_visit(visit.id)
    profile = bench.profile_for(visit)
    path = write_plain_summary(visit, profile, bench.diagnose(visit, profile), tmp_path / "cards")
    assert path.parent == tmp_path / "cards" and "/" not in path.name and "[" not in path.name
    body = path.read_text(encoding="utf-8")
    assert HOSTILE in body and "\x1b" not in body and "\x07" not in body
