"""The kit screen (k on the start screen), by keys at 80×24: the demo kit with its overdue gauge,
a gauge added, its calibration date edited, a gauge retired, and a retired gauge still read on the
visits that used it. The demo kit (sample_readings/kit.json) is invented."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

from textual.widgets import Input, OptionList

from fieldkit.session import Workbench
from fieldkit.tui.screens.dialogs import ConfirmDialog
from fieldkit.tui.screens.kit import KitItemDialog, KitScreen
from fieldkit.tui.screens.start import StartScreen

from .conftest import type_text, wait_until
from .screen_text import screen_lines, screen_text


def _kit(store_path: Path):
    bench = Workbench.open(store_path)
    try:
        return {i.id: i for i in bench.store.kit(include_retired=True)}
    finally:
        bench.close()


async def _highlight(pilot, screen: KitScreen, item_id: str) -> None:
    box = screen.query_one("#kit-list", OptionList)
    for _ in range(40):
        if box.highlighted is not None and box.get_option_at_index(box.highlighted).id == item_id:
            return
        await pilot.press("down")
    raise AssertionError(f"{item_id} not in the list")


async def test_the_kit_screen_adds_edits_and_retires_by_keys(demo_app, store_path: Path) -> None:
    app = demo_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert isinstance(app.screen, StartScreen)
        await pilot.press("k")
        await wait_until(pilot, lambda: isinstance(app.screen, KitScreen))
        screen = app.screen
        lines = screen_lines(app)
        assert all(len(line) <= 80 for line in lines)
        text = screen_text(app)
        # G25 was due 2025-06-30 (demo data): overdue today, said in words.
        assert "G25" in text and "due 2025-06-30  OVERDUE" in text
        assert "s/n RGS-P-0601" in text

        # a: a new compound gauge, typed field by field.
        await pilot.press("a")
        await wait_until(pilot, lambda: isinstance(app.screen, KitItemDialog))
        await type_text(pilot, "C15")
        await pilot.press("enter", "enter")  # id → kind (pressure gauge) → span
        app.screen.query_one("#k-span", Input).focus()
        await type_text(pilot, "-1..15 bar")
        await pilot.press("enter")
        app.screen.query_one("#k-class", Input).value = ""
        await type_text(pilot, "1.6")
        await pilot.press("enter")
        await type_text(pilot, "RGS-C-0151")
        await pilot.press("enter")
        await type_text(pilot, "2027-09-30")
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: app.screen is screen)
        added = _kit(store_path)["C15"]
        assert added.serial == "RGS-C-0151" and added.calibration_due == dt.date(2027, 9, 30)
        assert added.span_text() == "-1 bar to 15 bar" and added.accuracy_class == 1.6

        # e: G25 back from calibration, a new due date.
        await _highlight(pilot, screen, "G25")
        await pilot.press("e")
        await wait_until(pilot, lambda: isinstance(app.screen, KitItemDialog))
        due = app.screen.query_one("#k-due", Input)
        assert due.value == "2025-06-30"
        due.value = "2027-06-30"
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: app.screen is screen)
        assert _kit(store_path)["G25"].calibration_due == dt.date(2027, 6, 30)
        await wait_until(pilot, lambda: "OVERDUE" not in screen_text(app))

        # A bad date is refused with the field named; nothing changes.
        await pilot.press("e")
        await wait_until(pilot, lambda: isinstance(app.screen, KitItemDialog))
        app.screen.query_one("#k-due", Input).value = "30/06/2027"
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: "calibration due: '30/06/2027' is not a date" in screen_text(app))
        await pilot.press("escape")
        await wait_until(pilot, lambda: app.screen is screen)

        # x: G60 retired after asking; it stays in the list, marked.
        await _highlight(pilot, screen, "G60")
        await pilot.press("x")
        await wait_until(pilot, lambda: isinstance(app.screen, ConfirmDialog))
        await pilot.press("y")
        await wait_until(pilot, lambda: app.screen is screen)
        assert _kit(store_path)["G60"].retired_on is not None
        await wait_until(pilot, lambda: "RETIRED" in screen_text(app))

    # The visits that read with G60 still have it, as it was on the day.
    bench = Workbench.open(store_path)
    try:
        visit = bench.store.get_visit("rhs-25-0187")
        g60 = visit.gauge("G60")
        assert g60 is not None and g60.serial == "RGS-P-0601"
        assert any(r.gauge == "G60" for r in visit.current_readings())
    finally:
        bench.close()
