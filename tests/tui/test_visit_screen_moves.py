"""The visit screen as it behaves between points, on the demo's open visit at the size of the
terminal the bugs were seen in (100×32, issue 10): the list's ▸ and the step panel always show
the same point, saving keeps the point just read, ↓ goes round the whole list, the entry box's
example is the point's own, and a value typed but not saved never follows the technician to
another point."""

from __future__ import annotations

import re
from pathlib import Path

from textual.screen import ModalScreen
from textual.widgets import Input

from fieldkit.session import Workbench
from fieldkit.tui.screens.visit import VisitScreen
from fieldkit.tui.widgets.plan_list import PlanList

from .conftest import DEMO_OPEN_VISIT, type_text, wait_until
from .screen_text import screen_lines

SIZE = (100, 32)
#: The step panel's heading ends with the point's id (what tools/tui-walk reads).
_HEADING = re.compile(r"▕ [^▕]*  (?P<id>[a-z_0-9]+\.[a-z_0-9]+) *▏?$")


def _readings(store_path: Path) -> int:
    bench = Workbench.open(store_path)
    try:
        return len(bench.store.get_visit(DEMO_OPEN_VISIT).current_readings())
    finally:
        bench.close()


def _panel_point(app) -> str:
    """The point id the step panel shows, read off the screen as a person (or tui-walk) would."""
    for line in screen_lines(app):
        m = _HEADING.search(line)
        if m:
            return m.group("id")
    raise AssertionError("no step heading on the screen:\n" + "\n".join(screen_lines(app)))


def _marked(screen: VisitScreen, mark: str) -> list[str]:
    """The ids of the list rows that carry ``mark`` (▸ selected, → recommended)."""
    plan = screen.query_one("#plan", PlanList)
    out = []
    for i in range(plan.option_count):
        option = plan.get_option_at_index(i)
        if option.id and not option.id.startswith("circuit:"):
            text = str(option.prompt)
            if (mark == "▸" and text.startswith("▸")) or (mark == "→" and "→ " in text[:6]):
                out.append(option.id)
    return out


def _said(screen: VisitScreen) -> str:
    """The sentence under the entry fields, whole."""
    return str(screen.query_one("#parse-msg").data[0])


async def _resume(pilot, app) -> VisitScreen:
    await pilot.pause()
    await pilot.press("r")
    await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen) and app.screen.diagnosis is not None)
    await pilot.pause()
    return app.screen


async def test_saving_keeps_the_point_just_read_and_the_list_agrees_with_the_panel(
    demo_app, store_path: Path
) -> None:
    app = demo_app()
    async with app.run_test(size=SIZE) as pilot:
        screen = await _resume(pilot, app)
        start = screen.point_id
        assert _marked(screen, "▸") == [start] and _panel_point(app) == start
        await pilot.press("ctrl+n")
        await pilot.pause()
        here = screen.point_id
        assert _marked(screen, "→") == [here]  # ^n goes to the recommended point
        example = screen.query_one("#value", Input).placeholder.removeprefix("e.g. ")
        before = _readings(store_path)
        await type_text(pilot, example)
        await pilot.press("enter")
        await wait_until(pilot, lambda: "✓ saved" in _said(screen))
        await pilot.pause()
        assert _readings(store_path) == before + 1
        # Still on the point just read, in the list, the panel and the screen's own state, even
        # though the engine now recommends another point (marked →, named on the NEXT line).
        assert screen.point_id == here
        assert _marked(screen, "▸") == [here] and _panel_point(app) == here
        recommended = screen.next_test.test_point if screen.next_test else None
        assert recommended != here and _marked(screen, "→") == [recommended]
        await pilot.press("down")
        await pilot.pause()
        assert screen.point_id != here
        assert _marked(screen, "▸") == [screen.point_id] and _panel_point(app) == screen.point_id


async def test_a_value_typed_but_not_saved_is_cleared_on_moving_and_never_saved_elsewhere(
    demo_app, store_path: Path
) -> None:
    app = demo_app()
    async with app.run_test(size=SIZE) as pilot:
        screen = await _resume(pilot, app)
        screen.select_point("travel.charge")
        await pilot.pause()
        before = _readings(store_path)
        await type_text(pilot, "22 bar")
        await pilot.press("down")
        await pilot.pause()
        assert screen.point_id != "travel.charge"
        assert screen.query_one("#value", Input).value == ""
        assert "'22 bar' typed at charge pressure was not saved" in _said(screen)
        await pilot.press("enter")
        await pilot.pause()
        assert "Type a value first" in _said(screen)
        assert _readings(store_path) == before


async def test_the_example_and_the_gauge_come_from_the_points_own_range(demo_app) -> None:
    app = demo_app()
    async with app.run_test(size=SIZE) as pilot:
        screen = await _resume(pilot, app)
        value = screen.query_one("#value", Input)
        # Fellborer demo profile: case pressure at most 2 bar → half of it; charge inlet at
        # least −0.17 bar (a vacuum) → half-way to zero; pump case drain at most 5.5 L/min.
        for point, example, gauge in [
            ("travel.charge", None, "G60"),
            ("travel.case", "1 bar", "G60"),
            ("travel.charge_inlet", "\u22120.085 bar", "C3"),
            ("travel.pump_drain", "2.8 L/min", "FM20"),
        ]:
            screen.select_point(point)
            await pilot.pause()
            await pilot.pause()
            if example is not None:
                assert value.placeholder == f"e.g. {example}", point
                assert f"e.g. {example}" in _said(screen), point
            assert screen.entry.gauge is not None and screen.entry.gauge.id == gauge, point


async def test_down_walks_every_point_of_the_demo_visit_typing_each_points_own_example(
    demo_app, store_path: Path
) -> None:
    """What tools/tui-walk does in a real terminal: type the entry box's own example and Enter,
    then ↓, until a point comes round again. Every example must save at once (no question)."""
    app = demo_app()
    async with app.run_test(size=SIZE) as pilot:
        screen = await _resume(pilot, app)
        every = [tp.id for _c, tp in screen.profile.all_test_points()]
        before = _readings(store_path)
        seen: list[str] = []
        while True:
            here = _panel_point(app)
            assert here == screen.point_id and _marked(screen, "▸") == [here]
            if here in seen:
                break
            seen.append(here)
            value = screen.query_one("#value", Input)
            example = value.placeholder.removeprefix("e.g. ")
            value.insert_text_at_cursor(example)  # as tmux types it: '°C' is one key there
            await pilot.press("enter")
            await pilot.pause()
            assert not isinstance(app.screen, ModalScreen), f"{example!r} at {here} was questioned"
            await wait_until(pilot, lambda: "✓ saved" in _said(screen))
            await pilot.press("down")
            await pilot.pause()
        assert sorted(seen) == sorted(every), set(every) - set(seen)
        assert _readings(store_path) == before + len(every)
