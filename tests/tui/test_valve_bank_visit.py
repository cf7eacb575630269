"""A visit on a valve bank, as a technician works it: each work port stalled and read in turn;
one port reads low, the rest and the main relief read right, so the diagnosis names that port's
relief and the job card says which port. The figures are invented for the test: main relief
180 bar, every port relief at the template's typical 200 bar (above the main, so every port
should read the main relief plus back pressure: 175-192 bar [calc: 180 − 5 to 180 + 7 + 5])."""

from __future__ import annotations

from pathlib import Path

from textual.widgets import Input, Select

from fieldkit.cli import main
from fieldkit.session import Workbench
from fieldkit.settings import user_profiles_dir
from fieldkit.tui.app import make_app
from fieldkit.tui.screens.new_visit import NewVisitScreen
from fieldkit.tui.screens.visit import VisitScreen

from .conftest import type_text, wait_until
from .screen_text import screen_text

PROFILE = """\
id = "yard-loader"
name = "Yard loader"
rated_speed = "2000 rpm"
rated_max_pressure = "250 bar"

[[circuits]]
id = "valves"
name = "Loader valve bank"
template = "open_centre_sections"

[circuits.parameters]
main_relief_setting = "180 bar"
"""

#: Section 2 port A reads 40 bar low; every other port and the inlet read the main relief.
READINGS = {
    "valves.stall": "184",
    "valves.s1_a": "185",
    "valves.s1_b": "184",
    "valves.s2_a": "144",
    "valves.s2_b": "185",
    "valves.s3_a": "183",
    "valves.s3_b": "184",
}


async def test_a_low_port_on_a_valve_bank_is_named_on_screen_and_on_the_job_card(tmp_path: Path) -> None:
    user_profiles_dir().mkdir(parents=True, exist_ok=True)
    (user_profiles_dir() / "yard-loader.toml").write_text(PROFILE, encoding="utf-8")
    store = tmp_path / "visits.sqlite3"
    bench = Workbench.open(store, demo=False)
    app = make_app(bench, demo=False)
    try:
        async with app.run_test() as pilot:  # 80×24
            await pilot.pause()
            await pilot.press("n")
            await wait_until(pilot, lambda: isinstance(app.screen, NewVisitScreen))
            app.screen.query_one("#machine", Select).value = "yard-loader"
            app.screen.query_one("#job", Input).focus()
            await type_text(pilot, "RHS-26-0042")
            await pilot.press("ctrl+s")
            await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
            screen = app.screen
            for n, (point, value) in enumerate(READINGS.items(), start=1):
                screen.select_point(point)
                await pilot.pause()
                if point == "valves.s2_a":
                    # The port's own caution: a port relief above the main is never reached by
                    # screwing the main relief in.
                    assert "Port reliefs: read them at their" in screen_text(app)
                screen.query_one("#value", Input).focus()
                await type_text(pilot, f"{value} bar")
                await pilot.press("enter")
                await wait_until(pilot, lambda n=n: len(screen.visit.current_readings()) == n)
            await wait_until(pilot, lambda: screen.diagnosis is not None and bool(screen.diagnosis.faults))
            assert screen.diagnosis.faults[0].id == "port_relief_low"
            low = [
                f
                for f in screen.diagnosis.findings
                if f.rule_id == "work-port-stall" and f.verdict.value == "low"
            ]
            assert [f.title.split(" — ")[-1] for f in low] == ["section 2 port A, stalled"]
            visit_id = screen.visit_id
    finally:
        bench.close()
    card = tmp_path / "card.txt"
    assert main(["--store", str(store), "report", visit_id, "--text", str(card)]) == 0
    text = card.read_text(encoding="utf-8")
    assert "Yard loader" in text
    assert "A work port relief set low or leaking" in text
    assert "section 2 port A" in text
