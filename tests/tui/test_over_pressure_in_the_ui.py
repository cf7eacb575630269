"""An over-pressure reading puts the danger caution in front of the technician at once (issue 17).

440 bar at the Fellborer's loop A with the drive stalled: its cross-port relief is 400 bar, and a
class 1 0-600 bar gauge is good to 6 bar (EN 837-1), so with a 5 % margin (20 bar, common
practice) anything above 426 bar means the relief did not open. The point is rated 450 bar, so
this is the relief rule, not the rating.
"""

from __future__ import annotations

from textual.widgets import Select

from fieldkit.tui.screens.visit import VisitScreen

from .conftest import type_text, wait_until
from .screen_text import static_text


async def test_440_bar_on_a_400_bar_loop_shows_the_over_pressure_danger_on_the_step(demo_app) -> None:
    app = demo_app()
    async with app.run_test(size=(120, 45)) as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        screen = app.screen
        screen.select_point("travel.loop_a")
        await wait_until(pilot, lambda: screen.point_id == "travel.loop_a")
        assert screen.query_one("#function", Select).value == "stalled"
        screen.query_one("#gauge", Select).value = "G600"
        await pilot.pause()
        before = static_text(screen.query_one("#step-cautions"))
        assert "Over-pressure" not in before
        assert "Drive engaged: the machine can move" in before  # stalled drive: moving machine
        await type_text(pilot, "440 bar")
        await pilot.press("enter")
        await wait_until(pilot, lambda: "Over-pressure" in static_text(screen.query_one("#step-cautions")))
        cautions = static_text(screen.query_one("#step-cautions"))
        first = cautions.splitlines()[0]
        assert "Over-pressure: stop the test now" in first  # worst first: ahead of the other dangers
        assert "do not repeat the test" in cautions
        assert "Over-pressure" in static_text(screen.query_one("#cautions"))  # the strip under the form
