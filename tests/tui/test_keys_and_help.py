"""Keys: every binding has an id (so a keymap can move it), F1 lists the keys of the screen,
F2 shows the general caution and the step's cautions, F3 searches commands."""

from __future__ import annotations

import inspect

from textual.binding import Binding
from textual.screen import Screen

import fieldkit.tui.screens.diagnosis
import fieldkit.tui.screens.dialogs
import fieldkit.tui.screens.finish
import fieldkit.tui.screens.gauge
import fieldkit.tui.screens.history
import fieldkit.tui.screens.new_visit
import fieldkit.tui.screens.readings
import fieldkit.tui.screens.start
import fieldkit.tui.screens.visit
from fieldkit.tui.app import FieldkitApp
from fieldkit.tui.screens.diagnosis import DiagnosisScreen
from fieldkit.tui.screens.dialogs import CautionScreen, KeysScreen
from fieldkit.tui.screens.visit import VisitScreen

from .conftest import type_text, wait_until
from .screen_text import screen_text

MODULES = [
    fieldkit.tui.screens.diagnosis,
    fieldkit.tui.screens.dialogs,
    fieldkit.tui.screens.finish,
    fieldkit.tui.screens.gauge,
    fieldkit.tui.screens.history,
    fieldkit.tui.screens.new_visit,
    fieldkit.tui.screens.readings,
    fieldkit.tui.screens.start,
    fieldkit.tui.screens.visit,
]


def test_every_binding_of_every_screen_and_the_app_has_its_own_id() -> None:
    owners = [FieldkitApp] + [
        cls
        for m in MODULES
        for _, cls in inspect.getmembers(m, inspect.isclass)
        if issubclass(cls, Screen) and cls.__module__ == m.__name__
    ]
    seen: dict[str, Binding] = {}
    for owner in owners:
        for binding in owner.__dict__.get("BINDINGS", []):
            assert isinstance(binding, Binding) and binding.id, f"{owner.__name__}: {binding}"
            assert seen.setdefault(binding.id, binding) is binding, f"id {binding.id} used twice"
    assert len(seen) > 30


async def test_f1_lists_the_visit_screen_keys_and_f2_shows_the_general_caution(demo_app) -> None:
    app = demo_app()
    async with app.run_test(size=(100, 40)) as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        visit_screen = app.screen
        await pilot.press("f1")
        await wait_until(pilot, lambda: isinstance(app.screen, KeysScreen))
        text = screen_text(app)
        for row in ("^n", "Next test", "^o", "Finish", "Enter", "save the reading", "f2", "Safety"):
            assert row in text, row
        await pilot.press("f1")
        await wait_until(pilot, lambda: app.screen is visit_screen)

        await pilot.press("f2")
        await wait_until(pilot, lambda: isinstance(app.screen, CautionScreen))
        general = next(c for c in app.bench.knowledge.cautions.values() if c.always)
        text = screen_text(app)
        assert general.title in text and "licensed" in text
        assert "For this step: charge pressure" in text and "Bleed pressure before breaking" in text
        await pilot.press("f2")
        await wait_until(pilot, lambda: app.screen is visit_screen)


async def test_the_command_search_finds_our_commands_by_name(demo_app) -> None:
    app = demo_app()
    async with app.run_test() as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        await pilot.press("f3")
        await pilot.pause()
        await type_text(pilot, "ranked faults")
        await pilot.pause(0.2)
        await pilot.press("enter")
        await wait_until(pilot, lambda: isinstance(app.screen, DiagnosisScreen))


async def test_a_mouse_click_on_the_plan_selects_that_test_point(demo_app) -> None:
    app = demo_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        screen = app.screen
        plan = screen.query_one("#plan")
        row = plan.get_option_index("travel.loop_a")
        await pilot.click("#plan", offset=(4, row - plan.scroll_offset.y))
        await wait_until(pilot, lambda: screen.point_id == "travel.loop_a")
        assert app.focused is screen.query_one("#value")  # straight on to typing the value


async def test_switching_to_psi_redraws_the_visit_and_is_remembered(demo_app) -> None:
    from fieldkit.settings import Settings

    app = demo_app()
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        app.set_units(display="us")
        await pilot.pause()
        assert "380 psi" in screen_text(
            app
        )  # 26.2 bar charge reading = 380 psi (NIST SP 811 B.8: 1 psi = 6894.757 Pa)
    assert Settings.load().display == "us"
