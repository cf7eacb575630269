"""A whole demo visit driven by keys, as a technician would: resume, read, see the ranking move,
ask why, quit, come back, finish. The store is checked directly after each step, so 'saved'
on the screen means saved on disk."""

from __future__ import annotations

from pathlib import Path

from textual.widgets import Select

from fieldkit.model.condition import FunctionState
from fieldkit.model.visit import VisitStatus
from fieldkit.session import Workbench
from fieldkit.settings import data_home
from fieldkit.tui.screens.diagnosis import DiagnosisScreen, FaultScreen
from fieldkit.tui.screens.finish import FinishScreen
from fieldkit.tui.screens.start import StartScreen
from fieldkit.tui.screens.visit import VisitScreen
from fieldkit.units import Kind, to_canonical

from .conftest import DEMO_OPEN_VISIT, type_text, wait_until
from .screen_text import screen_text, static_text


def _stored(store_path: Path):
    bench = Workbench.open(store_path)
    try:
        return bench.store.get_visit(DEMO_OPEN_VISIT)
    finally:
        bench.close()


async def test_a_demo_visit_from_resume_to_closed_job_card(demo_app, store_path: Path) -> None:
    before = _stored(store_path)
    assert len(before.current_readings()) == 4

    app = demo_app()
    async with app.run_test() as pilot:
        await pilot.pause()
        assert isinstance(app.screen, StartScreen)
        await pilot.press("r")  # resume the latest open visit in one key
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        screen = app.screen
        assert isinstance(screen, VisitScreen) and screen.visit_id == DEMO_OPEN_VISIT
        top_before = screen.diagnosis.faults[0]

        await pilot.press("ctrl+n")  # the engine's next test: charge pressure
        await pilot.pause()
        assert screen.point_id == "travel.charge"

        # A typo: explained inline as it is typed, refused on Enter, nothing stored.
        await type_text(pilot, "2O bar")
        await pilot.pause()
        assert "is not a unit fieldkit knows" in screen_text(app)
        await pilot.press("enter")
        await pilot.pause()
        assert "nothing saved" in screen_text(app)
        assert len(_stored(store_path).readings) == len(before.readings)

        # Condition: full stroke, chosen from the function list by keys.
        await pilot.press("ctrl+u", "tab", "tab")
        assert app.focused is screen.query_one("#function")
        states = list(FunctionState)
        steps = states.index(FunctionState.FULL_STROKE) - states.index(
            screen.query_one("#function", Select).value
        )
        await pilot.press("enter", *(["down"] * steps if steps >= 0 else ["up"] * -steps), "enter")
        await wait_until(
            pilot, lambda: screen.query_one("#function", Select).value is FunctionState.FULL_STROKE
        )
        await pilot.press("shift+tab", "shift+tab")
        assert app.focused is screen.query_one("#value")

        # A value in psi, as the gauge face shows it.
        await type_text(pilot, "160 psi")
        await pilot.pause()
        assert "= 11.03 bar" in screen_text(app)
        await pilot.press("enter")
        await wait_until(pilot, lambda: len(screen.visit.current_readings()) == 5)
        saved = _stored(store_path).current_readings()[-1]
        assert saved.test_point == "travel.charge" and saved.entered == "160 psi"
        assert saved.condition.function is FunctionState.FULL_STROKE
        assert (
            abs(to_canonical(saved.value, Kind.PRESSURE) - 11.03) < 0.01
        )  # 160 psi = 11.03 bar (NIST SP 811 B.8)
        assert "✓ saved 160 psi" in screen_text(app)

        # The ranking moved: a charge pressure that sags in stroke is no healthy machine.
        top_after = screen.diagnosis.faults[0]
        assert top_after.key != top_before.key
        message = static_text(screen.query_one("#parse-msg"))
        assert f"Now most likely: {top_after.display_title}" in message
        assert f"(was {top_before.display_title}" in message

        # Why? The explanation lists the finding that moved it, how to confirm, the fix.
        await pilot.press("ctrl+f")
        await wait_until(pilot, lambda: isinstance(app.screen, DiagnosisScreen))
        await pilot.press("enter")
        await wait_until(pilot, lambda: isinstance(app.screen, FaultScreen))
        explained = screen_text(app)
        assert top_after.title in explained
        assert "Findings for it" in explained and "Charge pressure" in explained
        await pilot.press("end")
        await pilot.pause()
        assert "Usual fix" in screen_text(app) or "Parts" in screen_text(app)
        await pilot.press("escape", "escape")
        await wait_until(pilot, lambda: app.screen is screen)

        await pilot.press("ctrl+q")  # nothing typed: quits at once
        await pilot.pause()
    assert app.return_code == 0

    # A new app on the same store: the visit resumes with every reading there.
    after_restart = demo_app()
    async with after_restart.run_test() as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(after_restart.screen, VisitScreen))
        screen = after_restart.screen
        ids = [r.id for r in screen.visit.current_readings()]
        assert ids == [r.id for r in before.current_readings()] + [saved.id]
        assert "5 readings" in screen_text(after_restart)

        # Finish: summary and notes, close, write the job card (plain summary if no writer).
        await pilot.press("ctrl+o")
        await wait_until(pilot, lambda: isinstance(after_restart.screen, FinishScreen))
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: after_restart.screen is screen)
        text = screen_text(after_restart)
        assert "Visit closed" in text and "CLOSED" in text

    closed = _stored(store_path)
    assert closed.status is VisitStatus.CLOSED
    assert "readings taken" in closed.summary
    assert len(closed.current_readings()) == 5
    written = list((data_home() / "job-cards").iterdir())
    assert len(written) == 1, "one job card (or the plain summary when no writer is installed)"
    card = written[0]
    if card.suffix == ".pdf":
        assert card.read_bytes().startswith(b"%PDF-") and card.stat().st_size > 1000
    else:
        assert closed.job_number in card.read_text(encoding="utf-8")
