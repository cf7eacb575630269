"""Reading entry as a technician types it: a value that reads two ways is asked about, the
gauge is checked before connecting, a skipped point is written into the notes, and corrections
and deletions keep the whole trail."""

from __future__ import annotations

import re
from pathlib import Path

from textual.widgets import Select

from fieldkit.session import Workbench
from fieldkit.tui.plan import skipped_points
from fieldkit.tui.screens.dialogs import ChoiceDialog, ConfirmDialog, LinePrompt
from fieldkit.tui.screens.gauge import AddGaugeDialog
from fieldkit.tui.screens.readings import ReadingsScreen
from fieldkit.tui.screens.visit import VisitScreen
from fieldkit.units import Kind, to_canonical

from .conftest import DEMO_OPEN_VISIT, type_text, wait_until
from .screen_text import screen_text, static_text


def _visit(store_path: Path):
    bench = Workbench.open(store_path)
    try:
        return bench.store.get_visit(DEMO_OPEN_VISIT)
    finally:
        bench.close()


async def _visit_screen(app, pilot) -> VisitScreen:
    await pilot.pause()
    await pilot.press("r")
    await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
    return app.screen


async def _search_to(app, pilot, screen: VisitScreen, label: str, point_id: str) -> None:
    """Through the command search, as a person would: F3, the point's name, Enter."""
    await pilot.press("f3")
    await pilot.pause()
    await type_text(pilot, f"Go to {label}")
    await pilot.pause(0.2)
    await pilot.press("enter")
    await wait_until(pilot, lambda: app.screen is screen and screen.point_id == point_id)


async def _go_to(app, pilot, screen: VisitScreen, label: str, point_id: str) -> None:
    """Straight to a point (the command search itself is exercised once, above)."""
    screen.select_point(point_id)
    await wait_until(pilot, lambda: screen.point_id == point_id)


async def test_a_value_that_reads_two_ways_is_asked_about_and_the_choice_is_saved(
    demo_app, store_path: Path
) -> None:
    app = demo_app()
    async with app.run_test() as pilot:
        screen = await _visit_screen(app, pilot)
        await _search_to(app, pilot, screen, "loop A pressure", "travel.loop_a")
        count = len(_visit(store_path).readings)
        # At loop A (up to 450 bar) both 2500 psi (172 bar) and 2.5 psi are plausible.
        await type_text(pilot, "2,500 psi")
        await pilot.pause()
        assert "Enter asks which" in static_text(screen.query_one("#parse-msg"))
        await pilot.press("enter")
        await wait_until(pilot, lambda: isinstance(app.screen, ChoiceDialog))
        assert len(_visit(store_path).readings) == count  # nothing saved while asking
        await pilot.press("enter")  # the first choice: thousands, as typed
        await wait_until(pilot, lambda: app.screen is screen)
        await wait_until(pilot, lambda: len(_visit(store_path).readings) == count + 1)
        saved = _visit(store_path).readings[-1]
        assert saved.entered == "2,500 psi" and saved.test_point == "travel.loop_a"
        # 2500 psi = 172.4 bar (1 psi = 6894.757 Pa, NIST SP 811 App. B.8)
        assert abs(to_canonical(saved.value, Kind.PRESSURE) - 172.37) < 0.01


async def test_an_overranging_gauge_is_flagged_before_connecting(demo_app) -> None:
    app = demo_app()
    async with app.run_test(size=(100, 40)) as pilot:
        screen = await _visit_screen(app, pilot)
        await _go_to(app, pilot, screen, "case pressure", "travel.case")
        # The profile says up to 10 bar can reach the case port: a 0–10 bar gauge would be at or
        # past its full scale (common practice: rate the gauge above the highest pressure,
        # physics.gauges.gauge_suitability).
        screen.query_one("#gauge", Select).value = "G10"
        await pilot.pause()
        text = static_text(screen.query_one("#step-gauge"))
        assert text.startswith("Gauge   ✗ DO NOT CONNECT") and "overranged" in text and "0–16 bar" in text
        assert "DO NOT CONNECT" in screen_text(app)


async def test_skipping_a_point_writes_the_reason_into_the_notes_and_a_reading_clears_it(
    demo_app, store_path: Path
) -> None:
    app = demo_app()
    async with app.run_test() as pilot:
        screen = await _visit_screen(app, pilot)
        await _go_to(app, pilot, screen, "loop B pressure", "travel.loop_b")
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt))
        await pilot.press("ctrl+u")
        await type_text(pilot, "port seized, no coupling")
        await pilot.press("enter")
        await wait_until(pilot, lambda: app.screen is screen)
        notes = _visit(store_path).notes
        assert "Skipped test point travel.loop_b (loop B pressure): port seized, no coupling" in notes
        assert notes.startswith("500 h hydraulic check")  # the technician's own notes are kept
        assert "– loop B pressure" in screen_text(app)

        await pilot.press("ctrl+s")  # again: put it back
        await wait_until(pilot, lambda: isinstance(app.screen, ConfirmDialog))
        await pilot.press("y")
        await wait_until(pilot, lambda: "travel.loop_b" not in skipped_points(_visit(store_path).notes))

        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt))
        await pilot.press("enter")  # the offered reason
        await wait_until(pilot, lambda: "travel.loop_b" in skipped_points(_visit(store_path).notes))
        screen.query_one("#function", Select).value = screen.query_one("#function", Select).value  # unchanged
        await type_text(pilot, "398 bar")
        await pilot.press("enter")
        await wait_until(pilot, lambda: "travel.loop_b" not in skipped_points(_visit(store_path).notes))
        assert "no longer marked skipped" in static_text(screen.query_one("#parse-msg"))


async def test_a_correction_and_a_deletion_keep_every_value_in_the_trail(demo_app, store_path: Path) -> None:
    app = demo_app()
    async with app.run_test(size=(100, 30)) as pilot:
        screen = await _visit_screen(app, pilot)
        await _go_to(app, pilot, screen, "charge pressure", "travel.charge")
        await pilot.press("ctrl+r")
        await wait_until(pilot, lambda: isinstance(app.screen, ReadingsScreen))
        assert "26.2 bar" in screen_text(app) and "stands" in screen_text(app)
        await pilot.press("e")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt))
        await pilot.press("ctrl+u")
        await type_text(pilot, "26,8 bar")  # decimal comma, as written on a job sheet
        value_prompt = app.screen
        await pilot.press("enter")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt) and app.screen is not value_prompt)
        await pilot.press("enter")  # a correction without a reason is refused
        await pilot.pause()
        assert isinstance(app.screen, LinePrompt)
        await type_text(pilot, "read the psi scale by mistake")
        await pilot.press("enter")
        await wait_until(pilot, lambda: isinstance(app.screen, ReadingsScreen))
        await pilot.pause()
        text = screen_text(app)
        assert "corrected by" in text and "(corrects r03)" in text
        charge = [r for r in _visit(store_path).current_readings() if r.test_point == "travel.charge"]
        assert len(charge) == 1 and abs(to_canonical(charge[0].value, Kind.PRESSURE) - 26.8) < 1e-9
        assert charge[0].reason == "read the psi scale by mistake"

        await pilot.press("down", "x")  # the correction is the second row
        await wait_until(pilot, lambda: isinstance(app.screen, ConfirmDialog))
        await pilot.press("y")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt))
        await type_text(pilot, "gauge was not yet bled")  # the reason, kept in the visit notes
        await pilot.press("enter")
        await wait_until(pilot, lambda: "deleted" in screen_text(app))
        assert "gauge was not yet bled" in _visit(store_path).notes
        visit = _visit(store_path)
        assert [r for r in visit.current_readings() if r.test_point == "travel.charge"] == []
        trail = [r for r in visit.readings if r.test_point == "travel.charge"]
        assert [r.entered for r in trail] == ["26.2 bar", "26,8 bar"]  # both kept
        await pilot.press("escape")
        await wait_until(pilot, lambda: app.screen is screen)
        # not measured again: the row's state glyph is "·" (a "→" may follow when it is the next test)
        assert re.search(r"· (→ )?charge pressure", screen_text(app))


async def test_a_gauge_added_in_the_visit_is_offered_where_it_suits_best(demo_app, store_path: Path) -> None:
    app = demo_app()
    async with app.run_test(size=(100, 30)) as pilot:
        screen = await _visit_screen(app, pilot)
        await pilot.press("ctrl+g")
        await wait_until(pilot, lambda: isinstance(app.screen, AddGaugeDialog))
        dialog = app.screen
        dialog.query_one("#g-id").value = "G16"
        dialog.query_one("#g-top").value = "16 bar"
        dialog.query_one("#g-class").value = "1.5"  # not an EN 837-1 class
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert "not an EN 837-1 class" in static_text(app.screen.query_one("#g-error"))
        assert isinstance(app.screen, AddGaugeDialog)
        app.screen.query_one("#g-class").value = "1"
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: app.screen is screen)
        assert [g.id for g in _visit(store_path).gauges][-1] == "G16"
        await _go_to(app, pilot, screen, "case pressure", "travel.case")
        # 0–16 bar is above the 10 bar the case port can see and the smallest such range.
        assert screen.query_one("#gauge", Select).value == "G16"
