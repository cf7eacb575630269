"""Issue 10 item 3, in the visit screen: a reading stored at a test point the machine's profile
no longer has (the profile was edited after the visit) is listed after the plan under "Other
readings", with its value, and is deleted or moved to a point of the plan from there, by keys,
with a reason. The diagnosis and the job card keep working before and after."""

from __future__ import annotations

from collections.abc import Callable
from datetime import UTC, datetime

from fieldkit.model.visit import Condition, Reading
from fieldkit.report.build import job_card
from fieldkit.report.text import render_text
from fieldkit.session import Workbench
from fieldkit.tui.app import FieldkitApp, make_app
from fieldkit.tui.screens.dialogs import ChoiceDialog, ConfirmDialog, LinePrompt
from fieldkit.tui.screens.readings import ReadingsScreen
from fieldkit.tui.screens.visit import VisitScreen
from fieldkit.tui.widgets.plan_list import PlanList
from fieldkit.units import Kind, parse_value, to_canonical

from .conftest import DEMO_OPEN_VISIT, type_text, wait_until
from .screen_text import screen_text

GONE = "travel.boost_tap"  # invented: a point no demo profile has


def _add_stray(bench: Workbench, entered: str = "23.5 bar") -> Reading:
    parsed = parse_value(entered, Kind.PRESSURE)
    reading = Reading(
        test_point=GONE,
        value=parsed.quantity,
        reference=parsed.reference,
        entered=parsed.text,
        condition=Condition(function="neutral"),
        taken_at=datetime(2025, 6, 3, 10, 30, tzinfo=UTC),
    )
    return bench.store.add_reading(DEMO_OPEN_VISIT, reading)


def _card_text(bench: Workbench) -> str:
    visit = bench.store.get_visit(DEMO_OPEN_VISIT)
    profile = bench.profile_for(visit)
    return render_text(job_card(visit, profile, bench.diagnose(visit, profile), bench.system))


async def _open_the_other_row(app: FieldkitApp, pilot) -> VisitScreen:
    await pilot.press("r")  # resume the open demo visit
    await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
    screen = app.screen
    await pilot.pause()
    plan = screen.query_one("#plan", PlanList)
    plan.focus()
    await pilot.press("end")  # the last row of the plan: the point outside it
    await wait_until(pilot, lambda: plan.other_id == GONE)
    return screen


async def test_a_reading_at_a_point_the_profile_lost_is_shown_and_deleted_by_keys(
    open_bench: Callable[[], Workbench],
) -> None:
    bench = open_bench()
    stray = _add_stray(bench)
    before = _card_text(bench)  # the card prints with the stray reading in the store
    assert "SERVICE JOB CARD" in before.upper()
    app = make_app(bench, demo=True)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        screen = await _open_the_other_row(app, pilot)
        shown = screen_text(app)
        assert "Other readings" in shown and GONE in shown and "23.5 bar" in shown
        assert f"reading {stray.id}" in " ".join(screen.diagnosis.notes)  # skipped, said so
        await pilot.press("enter")
        await wait_until(pilot, lambda: isinstance(app.screen, ReadingsScreen))
        trail = app.screen
        await pilot.pause()
        assert "not in the plan: skipped" in screen_text(app)
        await pilot.press("x")
        await wait_until(pilot, lambda: isinstance(app.screen, ConfirmDialog))
        await pilot.press("y")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt))
        await type_text(pilot, "point removed from the profile")
        await pilot.press("enter")
        await wait_until(pilot, lambda: app.screen is trail)
        await pilot.press("escape")
        await wait_until(pilot, lambda: app.screen is screen)
        await pilot.pause()
        assert "Other readings" not in screen_text(app)
        assert stray.id not in " ".join(screen.diagnosis.notes)
        assert screen.diagnosis.faults  # the diagnosis still ranks
    visit = bench.store.get_visit(DEMO_OPEN_VISIT)
    gone = next(r for r in visit.readings if r.id == stray.id)
    assert gone.deleted_at is not None and stray.id not in {r.id for r in visit.current_readings()}
    assert "point removed from the profile" in visit.notes
    after = _card_text(bench)
    assert "point removed from the profile" in after  # the deletion's reason is on the card


async def test_a_reading_at_a_point_the_profile_lost_is_moved_to_the_right_point(
    open_bench: Callable[[], Workbench],
) -> None:
    bench = open_bench()
    stray = _add_stray(bench, "24.1 bar")
    app = make_app(bench, demo=True)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        screen = await _open_the_other_row(app, pilot)
        await pilot.press("ctrl+r")  # the trail key works on the row too
        await wait_until(pilot, lambda: isinstance(app.screen, ReadingsScreen))
        trail = app.screen
        await pilot.pause()
        await pilot.press("e")
        await wait_until(pilot, lambda: isinstance(app.screen, ChoiceDialog))
        choice = app.screen
        # only pressure points are offered for a pressure reading; pick charge pressure
        labels = [str(o.prompt) for o in choice.query_one("#choices").options]
        assert "travel.charge" in " ".join(labels) and "travel.pump_drain" not in " ".join(labels)
        row = next(i for i, lab in enumerate(labels) if lab.endswith("(travel.charge)"))
        await pilot.press(*(["down"] * row), "enter")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt))
        value_prompt = app.screen
        await pilot.press("enter")  # the value as it was entered
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt) and app.screen is not value_prompt)
        await type_text(pilot, "point renamed")
        await pilot.press("enter")
        await wait_until(pilot, lambda: app.screen is trail)
        await pilot.press("escape")
        await wait_until(pilot, lambda: app.screen is screen)
    visit = bench.store.get_visit(DEMO_OPEN_VISIT)
    moved = [r for r in visit.current_readings() if r.reason.startswith(f"moved from {GONE}")]
    assert len(moved) == 1 and moved[0].test_point == "travel.charge"
    assert abs(to_canonical(moved[0].value, Kind.PRESSURE) - 24.1) < 1e-9
    assert "point renamed" in moved[0].reason
    assert next(r for r in visit.readings if r.id == stray.id).deleted_at is not None
    assert f"moved to travel.charge as reading {moved[0].id}: point renamed" in visit.notes
    assert "24.1 bar" in _card_text(bench)
