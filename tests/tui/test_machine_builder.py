"""The machine builder: a machine that is not in the demo, described and visited without an editor."""

from __future__ import annotations

import tomllib
from pathlib import Path

from textual.widgets import Input, Select, SelectionList

from fieldkit.cli import main
from fieldkit.model.condition import FunctionState
from fieldkit.session import Workbench
from fieldkit.settings import user_profiles_dir
from fieldkit.tui.app import make_app
from fieldkit.tui.screens.machine_builder import MachineBuilderScreen
from fieldkit.tui.screens.new_visit import NewVisitScreen
from fieldkit.tui.screens.start import StartScreen
from fieldkit.tui.screens.visit import VisitScreen

from .conftest import type_text, wait_until
from .screen_text import static_text


async def test_a_machine_from_nothing_then_a_visit_readings_diagnosis_and_job_card(tmp_path: Path) -> None:
    store = tmp_path / "visits.sqlite3"
    bench = Workbench.open(store, demo=False)
    app = make_app(bench, demo=False)
    try:
        async with app.run_test() as pilot:  # 80×24
            await pilot.pause()
            assert isinstance(app.screen, StartScreen)
            assert not bench.library.ids(), (
                "a fresh install lists no machines (the demo ones stay in the demo)"
            )
            await pilot.press("m")
            await wait_until(pilot, lambda: isinstance(app.screen, MachineBuilderScreen))
            form = app.screen
            await type_text(pilot, "Yard crane")
            await pilot.press("tab", "tab")
            await type_text(pilot, "1800 rpm")
            await pilot.press("tab")
            await type_text(pilot, "250 bar")
            # Two circuits from the library: a closed-loop slew drive and a winch motor.
            form.query_one("#template", Select).value = "closed_loop_drive"
            await pilot.press("ctrl+n")
            form.query_one("#template", Select).value = "motor"
            await pilot.press("ctrl+n")
            await wait_until(pilot, lambda: len(form.raw["circuits"]) == 2)
            await pilot.press("ctrl+o")  # back to the first circuit
            await wait_until(pilot, lambda: form.query("#fig-charge_relief_setting"))
            # A typo in a figure is explained as it is typed; the plan keeps the typical value.
            form.query_one("#fig-charge_relief_setting", Input).focus()
            await type_text(pilot, "26 bra")
            await pilot.pause()
            assert "is not a unit fieldkit knows" in static_text(form.query_one("#builder-error"))
            await pilot.press("backspace", "backspace", "backspace")
            await type_text(pilot, "bar")
            await pilot.pause()
            plan = static_text(form.query_one("#circuit-plan"))
            # Charge in neutral follows the maker's 26 bar: 26 ± 2 = 24 bar to 28 bar [calc].
            assert "neutral: 24 bar to 28 bar" in plan
            assert "from the maker's figure: charge relief setting 26 bar" in plan
            assert "[from memory]" in plan  # the case pressure limit is still only typical
            # This slew drive has no loop flushing valve: untick it.
            parts = form.query_one("#parts", SelectionList)
            parts.focus()
            parts.highlighted = 0
            await pilot.press("space")
            await wait_until(
                pilot, lambda: "loop_flushing_valve" not in form.raw["circuits"][0]["fitted_parts"]
            )
            form.query_one("#loc-charge", Input).focus()
            await type_text(pilot, "charge port behind the slew ring cover")
            await pilot.press("ctrl+s")
            await wait_until(pilot, lambda: isinstance(app.screen, NewVisitScreen))
            assert app.screen.query_one("#machine", Select).value == "yard-crane"
            await type_text(pilot, "RHS-26-0001")
            await pilot.press("ctrl+s")
            await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
            screen = app.screen
            screen.select_point("closed_loop_drive.charge")
            # Read in stroke, where the unticked flushing valve changes the range (chosen in the
            # entry row's condition, as the technician would when the plan asks for neutral first).
            screen.query_one("#function", Select).value = FunctionState.FULL_STROKE
            await pilot.pause()
            screen.query_one("#value", Input).focus()
            await type_text(pilot, "19 bar")  # well below the charge relief
            await pilot.press("enter")
            await wait_until(pilot, lambda: len(screen.visit.current_readings()) == 1)
            await wait_until(pilot, lambda: screen.diagnosis is not None and bool(screen.diagnosis.faults))
            faults = [f.id for f in screen.diagnosis.faults]
            assert "flushing_valve_fault" not in faults  # no flushing valve fitted, so never ranked
            assert faults[0] in {"charge_relief_low", "charge_pump_worn", "charge_suction_restricted"}
            visit_id = screen.visit_id
    finally:
        bench.close()
    saved = tomllib.loads((user_profiles_dir() / "yard-crane.toml").read_text(encoding="utf-8"))
    slew = saved["circuits"][0]
    assert slew["parameters"] == {"charge_relief_setting": "26 bar"}
    assert "loop_flushing_valve" not in slew["fitted_parts"]
    assert slew["test_points"] == [{"id": "charge", "location": "charge port behind the slew ring cover"}]
    card = tmp_path / "card.txt"
    assert main(["--store", str(store), "report", visit_id, "--text", str(card)]) == 0
    text = card.read_text(encoding="utf-8")
    # 19 bar typed, printed to the gauge's resolution: its limit ±0.96 bar allows one decimal.
    assert "Yard crane" in text and "19.0 bar" in text
    # The point opens in stroke; with no flushing valve the charge relief governs there:
    # 26 − 4 = 22 to 26 + 2 = 28 bar [calc] (closed_loop_drive template), on the job card.
    assert "expected 22–28 bar" in text


async def test_editing_a_machine_keeps_its_file_and_a_copy_gets_a_new_id(tmp_path: Path) -> None:
    user_profiles_dir().mkdir(parents=True, exist_ok=True)
    (user_profiles_dir() / "pump-unit.toml").write_text(
        'id = "pump-unit"\nname = "Press pump unit"\nrated_speed = "1450 rpm"\n'
        'rated_max_pressure = "210 bar"\n\n'
        '[[circuits]]\nid = "main"\nname = "Main"\ntemplate = "open_fixed_pump"\n',
        encoding="utf-8",
    )
    bench = Workbench.open(tmp_path / "visits.sqlite3", demo=False)
    app = make_app(bench, demo=False)
    try:
        async with app.run_test() as pilot:
            await pilot.pause()
            app.screen.query_one("#machines").focus()
            await pilot.press("c")
            await wait_until(pilot, lambda: isinstance(app.screen, MachineBuilderScreen))
            assert app.screen.raw["id"] == "pump-unit-2"
            await pilot.press("ctrl+s")
            await wait_until(pilot, lambda: isinstance(app.screen, NewVisitScreen))
            await pilot.press("escape")
            await wait_until(pilot, lambda: isinstance(app.screen, StartScreen))
            assert set(bench.library.ids()) == {"pump-unit", "pump-unit-2"}
            app.screen.query_one("#machines").focus()
            await pilot.press("e")
            await wait_until(pilot, lambda: isinstance(app.screen, MachineBuilderScreen))
            builder = app.screen
            builder.query_one("#fig-main_relief_setting", Input).focus()
            await type_text(pilot, "200 bar")
            await pilot.press("ctrl+s")
            await wait_until(pilot, lambda: isinstance(app.screen, NewVisitScreen))
    finally:
        bench.close()
    edited = tomllib.loads((user_profiles_dir() / "pump-unit.toml").read_text(encoding="utf-8"))
    assert edited["circuits"][0]["parameters"] == {"main_relief_setting": "200 bar"}
    assert (user_profiles_dir() / "pump-unit-2.toml").exists()


async def test_an_edited_machine_keeps_the_comments_written_in_its_file(tmp_path: Path) -> None:
    user_profiles_dir().mkdir(parents=True, exist_ok=True)
    path = user_profiles_dir() / "press-unit.toml"
    path.write_text(
        "# Bay 3 press unit: our notes, kept by every save\n"
        'id = "press-unit"\nname = "Bay 3 press unit"   # as on the plate\n'
        'rated_speed = "1450 rpm"\nrated_max_pressure = "210 bar"\n\n'
        "# relief re-set after the hose burst\n"
        '[[circuits]]\nid = "main"\nname = "Main"\ntemplate = "open_fixed_pump"\n\n'
        "[circuits.parameters]\n"
        'main_relief_setting = "180 bar"   # the plate on the valve says so\n',
        encoding="utf-8",
    )
    bench = Workbench.open(tmp_path / "visits.sqlite3", demo=False)
    app = make_app(bench, demo=False)
    try:
        async with app.run_test() as pilot:
            await pilot.pause()
            app.screen.query_one("#machines").focus()
            await pilot.press("e")
            await wait_until(pilot, lambda: isinstance(app.screen, MachineBuilderScreen))
            field = app.screen.query_one("#fig-main_relief_setting", Input)
            field.focus()
            field.value = ""
            await type_text(pilot, "195 bar")
            await pilot.press("ctrl+s")
            await wait_until(pilot, lambda: isinstance(app.screen, NewVisitScreen))
    finally:
        bench.close()
    text = path.read_text(encoding="utf-8")
    assert tomllib.loads(text)["circuits"][0]["parameters"]["main_relief_setting"] == "195 bar"
    for comment in (
        "# Bay 3 press unit: our notes, kept by every save",
        "# as on the plate",
        "# relief re-set after the hose burst",
        "# the plate on the valve says so",
    ):
        assert comment in text, comment


async def test_a_two_section_valve_bank_lists_no_section_3_point_and_reloads_the_same(tmp_path: Path) -> None:
    # The valve-bank template writes out three work sections (s1_a … s3_b); this bank has two.
    bench = Workbench.open(tmp_path / "visits.sqlite3", demo=False)
    app = make_app(bench, demo=False)
    try:
        async with app.run_test() as pilot:  # 80×24
            await pilot.pause()
            await pilot.press("m")
            await wait_until(pilot, lambda: isinstance(app.screen, MachineBuilderScreen))
            form = app.screen
            await type_text(pilot, "Yard sweeper")
            await pilot.press("tab", "tab")
            await type_text(pilot, "2000 rpm")
            await pilot.press("tab")
            await type_text(pilot, "200 bar")
            form.query_one("#template", Select).value = "open_centre_sections"
            await pilot.press("ctrl+n")
            await wait_until(pilot, lambda: form.query("#c-sections"))
            sections = form.query_one("#c-sections", Input)
            assert sections.value == "3"  # the template's three until told otherwise
            assert form.profile is not None
            assert any(tp.id.endswith(".s3_a") for tp in form.profile.circuits[0].test_points)
            sections.focus()
            await pilot.press("backspace")
            await type_text(pilot, "4")  # more than one bank holds: said, and nothing changes
            await pilot.pause()
            assert "type a number from 1 to 3, not '4'" in static_text(form.query_one("#builder-error"))
            assert "omit_test_points" not in form.raw["circuits"][0]
            await pilot.press("backspace")
            await type_text(pilot, "2")
            await wait_until(pilot, lambda: "omit_test_points" in form.raw["circuits"][0])
            ids = {tp.id.split(".")[-1] for tp in form.profile.circuits[0].test_points}
            assert {"s1_a", "s1_b", "s2_a", "s2_b"} <= ids and not {"s3_a", "s3_b"} & ids
            plan = static_text(form.query_one("#circuit-plan"))
            assert "section 2 port B" in plan and "section 3" not in plan
            await pilot.press("ctrl+s")
            await wait_until(pilot, lambda: isinstance(app.screen, NewVisitScreen))
            await pilot.press("escape")
            await wait_until(pilot, lambda: isinstance(app.screen, StartScreen))
            # Opened again for editing, the builder reads two sections back from the file.
            app.screen.query_one("#machines").focus()
            await pilot.press("e")
            await wait_until(pilot, lambda: isinstance(app.screen, MachineBuilderScreen))
            await wait_until(pilot, lambda: app.screen.query("#c-sections"))
            assert app.screen.query_one("#c-sections", Input).value == "2"
    finally:
        bench.close()
    saved = user_profiles_dir() / "yard-sweeper.toml"
    raw = tomllib.loads(saved.read_text(encoding="utf-8"))
    assert raw["circuits"][0]["omit_test_points"] == ["s3_a", "s3_b"]
    assert main(["machine", "check", str(saved)]) == 0
    bench = Workbench.open(tmp_path / "visits.sqlite3", demo=False)
    try:
        reloaded = {tp.id for tp in bench.library.get("yard-sweeper").circuits[0].test_points}
    finally:
        bench.close()
    assert form.profile is not None
    assert reloaded == {tp.id for tp in form.profile.circuits[0].test_points}
