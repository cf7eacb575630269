"""A gauge is picked from the technician's kit in the visit screen, with a warning when its
calibration has run out. Serials and dates are invented test data."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

from textual.widgets import Select

from fieldkit.model.kit import KitItem
from fieldkit.session import Workbench
from fieldkit.tui.screens.gauge import AddGaugeDialog
from fieldkit.tui.screens.visit import VisitScreen

from .conftest import DEMO_OPEN_VISIT, wait_until
from .screen_text import screen_text


async def test_a_gauge_is_picked_from_the_kit_and_an_overdue_one_is_warned_about(
    open_bench, demo_app, store_path: Path
) -> None:
    bench = open_bench()
    bench.store.add_kit_item(
        KitItem(
            id="K16",
            kind="pressure_gauge",
            full_scale="16 bar",
            accuracy_class=1.0,
            serial="OV-113",
            calibration_due=dt.date(2020, 1, 31),
        )
    )
    app = demo_app()
    async with app.run_test(size=(110, 32), notifications=True) as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        screen = app.screen
        await pilot.press("ctrl+g")
        await wait_until(pilot, lambda: isinstance(app.screen, AddGaugeDialog))
        app.screen.query_one("#g-kit", Select).value = "K16"
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: app.screen is screen)
        await wait_until(pilot, lambda: "calibration was due on 2020-01-31" in screen_text(app))
    check = Workbench.open(store_path)
    try:
        picked = check.store.get_visit(DEMO_OPEN_VISIT).gauge("K16")
    finally:
        check.close()
    assert picked is not None and picked.serial == "OV-113" and picked.kit_item == "K16"
