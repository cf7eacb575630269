"""The start screen: a new visit with remembered defaults, importing a visit or a CSV of
readings, and the demo visit always there to practise on."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from fieldkit.model.visit import VisitStatus
from fieldkit.resources import samples_dir
from fieldkit.session import Workbench
from fieldkit.settings import Settings, data_home
from fieldkit.tui.screens.dialogs import ConfirmDialog, LinePrompt
from fieldkit.tui.screens.new_visit import NewVisitScreen, parse_hours
from fieldkit.tui.screens.start import StartScreen
from fieldkit.tui.screens.visit import VisitScreen

from .conftest import DEMO_OPEN_VISIT, type_text, wait_until
from .screen_text import screen_text, static_text


def _bench_visits(store_path: Path) -> list:
    bench = Workbench.open(store_path)
    try:
        return bench.store.list_visits()
    finally:
        bench.close()


async def test_a_new_visit_starts_with_the_last_gauges_and_remembers_the_technician(
    demo_app, store_path: Path
) -> None:
    app = demo_app()
    async with app.run_test(size=(100, 34)) as pilot:
        await pilot.pause()
        await pilot.press("n")
        await wait_until(pilot, lambda: isinstance(app.screen, NewVisitScreen))
        form = app.screen
        await pilot.press("ctrl+s")  # no job number yet
        await pilot.pause()
        assert "job number is needed" in static_text(form.query_one("#new-error"))
        await type_text(pilot, "RHS-25-0400")
        form.query_one("#machine").value = "oskerfield-loamshifter"
        form.query_one("#customer").value = "Hollin Brook Timber & Haulage"
        form.query_one("#hours").value = "6 412,5"
        form.query_one("#technician").value = "Priya Lannock"
        form.query_one("#oil").value = "VG46"
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        visit = app.screen.visit
        assert visit.job_number == "RHS-25-0400" and visit.machine == "oskerfield-loamshifter"
        assert visit.hour_meter == 6412.5 and visit.technician == "Priya Lannock"
        assert visit.gauges, "the gauges of the last visit came along"
    saved = json.loads((data_home() / "settings.json").read_text(encoding="utf-8"))
    assert saved["technician"] == "Priya Lannock" and saved["customer"] == "Hollin Brook Timber & Haulage"
    assert Settings.load().oil == "VG46"


def test_hour_meter_reads_as_written_on_a_job_sheet() -> None:
    assert parse_hours("8315") == 8315.0
    assert parse_hours("8 315") == 8315.0
    assert parse_hours("8,315") == 8315.0  # a thousands separator
    assert parse_hours("8315,5") == 8315.5  # a decimal comma
    assert parse_hours("") is None


async def test_importing_a_visit_already_in_the_store_asks_then_adds_a_copy(
    demo_app, store_path: Path
) -> None:
    before = len(_bench_visits(store_path))
    app = demo_app()
    async with app.run_test() as pilot:
        await pilot.pause()
        await pilot.press("i")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt))
        await type_text(pilot, str(samples_dir() / "visits" / "fellborer-no-fault.json"))
        await pilot.press("enter")
        await wait_until(pilot, lambda: isinstance(app.screen, ConfirmDialog))
        await pilot.press("y")
        await wait_until(pilot, lambda: isinstance(app.screen, StartScreen))
        await pilot.pause()
        assert "✓ imported visit RHS-25-" in screen_text(app)
    assert len(_bench_visits(store_path)) == before + 1


async def test_a_csv_of_readings_goes_into_the_highlighted_open_visit(
    demo_app, store_path: Path, tmp_path: Path
) -> None:
    csv = tmp_path / "logger.csv"
    csv.write_text(
        "time,test_point,value,function,gauge\n"
        "2025-08-19T08:10:00Z,travel.loop_a,401 bar,stalled,G600\n"
        '2025-08-19T08:12:00Z,travel.loop_b,"398,5 bar",stalled,G600\n',
        encoding="utf-8",
    )
    app = demo_app()
    async with app.run_test() as pilot:
        await pilot.pause()
        await pilot.press("i")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt))
        app.screen.query_one("#line").value = str(csv)
        await pilot.press("enter")
        await wait_until(pilot, lambda: "✓ imported 2 readings" in screen_text(app))
    bench = Workbench.open(store_path)
    try:
        points = [r.test_point for r in bench.store.get_visit(DEMO_OPEN_VISIT).current_readings()]
    finally:
        bench.close()
    assert points[-2:] == ["travel.loop_a", "travel.loop_b"]


async def test_a_bad_csv_imports_nothing_and_names_the_line(
    demo_app, store_path: Path, tmp_path: Path
) -> None:
    csv = tmp_path / "bad.csv"
    csv.write_text("time,test_point,value\n2025-08-19T08:10:00Z,travel.loop_a,401 bra\n", encoding="utf-8")
    app = demo_app()
    async with app.run_test(size=(120, 30)) as pilot:
        await pilot.pause()
        await pilot.press("i")
        await wait_until(pilot, lambda: isinstance(app.screen, LinePrompt))
        app.screen.query_one("#line").value = str(csv)
        await pilot.press("enter")
        await wait_until(pilot, lambda: "nothing imported" in static_text(app.screen.query_one("#start-msg")))
        assert "line 2" in static_text(app.screen.query_one("#start-msg"))


async def test_the_demo_visit_comes_back_as_a_fresh_copy_once_it_was_closed(
    demo_app, store_path: Path
) -> None:
    bench = Workbench.open(store_path)
    bench.store.close_visit(DEMO_OPEN_VISIT, "practised")
    bench.close()
    app = demo_app()
    async with app.run_test() as pilot:
        await pilot.pause()
        await pilot.press("d")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        copy = app.screen.visit
        assert copy.id != DEMO_OPEN_VISIT and copy.status is VisitStatus.OPEN
        assert copy.job_number == "RHS-25-0301" and len(copy.current_readings()) == 4


async def test_a_past_visit_opens_read_only_and_prints_its_job_card_again(demo_app, tmp_path: Path) -> None:
    from fieldkit.tui.screens.finish import JobCardDialog

    app = demo_app()
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        app.screen.query_one("#past-visits").focus()
        await pilot.press("enter")  # the newest past visit
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        screen = app.screen
        assert screen.closed and "CLOSED" in screen_text(app)
        assert screen.query_one("#value").disabled
        await pilot.press("ctrl+o")
        await wait_until(pilot, lambda: isinstance(app.screen, JobCardDialog))
        app.screen.query_one("#jc-format").value = "text"
        app.screen.query_one("#jc-folder").value = str(tmp_path / "cards")
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: app.screen is screen)
        assert "text job card written to" in static_text(screen.query_one("#parse-msg"))
    cards = list((tmp_path / "cards").iterdir())
    assert len(cards) == 1 and screen.visit.job_number in cards[0].read_text(encoding="utf-8")


async def test_an_unreadable_settings_file_is_reported_not_silently_replaced(demo_app) -> None:
    path = data_home() / "settings.json"
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text('{"display": "furlongs"}', encoding="utf-8")
    app = demo_app()
    # The toast wraps a long path anywhere (a long pytest tmp folder under xdist splits the file
    # name), so the file it names is read from the message handed to notify.
    told: list[str] = []
    shown = app.notify

    def notify(message: str, **options: Any) -> None:
        told.append(message)
        shown(message, **options)

    app.notify = notify  # type: ignore[method-assign]
    async with app.run_test(size=(100, 30), notifications=True) as pilot:
        await wait_until(pilot, lambda: "could not be read" in screen_text(app))
        assert any(str(path) in message and "could not be read" in message for message in told), told
