"""The app's edge (item 1): an unexpected error shows one plain sentence, keeps the visit and
every saved reading, is written to a log file whose path is shown, and makes the process exit
non-zero when the app had to stop."""

from __future__ import annotations

import pytest
from textual.widgets import Input

from fieldkit import cli
from fieldkit.crash_log import logs_dir
from fieldkit.tui.app import FieldkitApp, make_app
from fieldkit.tui.screens.visit import VisitScreen

MACHINE = "tarnhollow-fellborer"


def _said(screen: VisitScreen) -> str:
    """The sentence under the entry fields, whole."""
    data = screen.query_one("#parse-msg").data
    return str(data[0]) if data else ""


async def _settle(pilot, condition, tries: int = 60) -> None:
    for _ in range(tries):
        if condition():
            return
        await pilot.pause()
    assert condition()


async def test_an_error_after_saving_keeps_the_reading_and_says_where_the_log_is(
    walk_bench, monkeypatch
) -> None:
    bench, visits = walk_bench
    visit_id = visits[MACHINE]
    app = make_app(bench)
    async with app.run_test(size=(120, 40)) as pilot:
        screen = VisitScreen(bench, visit_id)
        await app.push_screen(screen)
        await _settle(pilot, lambda: screen.diagnosis is not None)
        screen.select_point("travel.charge")
        await _settle(pilot, lambda: screen.point_id == "travel.charge")

        def broken(*_args, **_kwargs):
            raise RuntimeError("engine fell over")

        monkeypatch.setattr(bench, "diagnose", broken)  # fails after the reading is committed
        value = screen.query_one("#value", Input)
        value.focus()
        value.insert_text_at_cursor("24,5 bar")
        await pilot.press("enter")
        await pilot.pause()
        message = _said(screen)
        assert app.is_running and app.screen is screen
    assert "unexpected problem while saving the reading (RuntimeError)" in message
    assert "Every reading already saved is safe" in message and "Traceback" not in message
    logs = list(logs_dir().iterdir())
    assert len(logs) == 1 and str(logs[0]) in message
    assert "RuntimeError: engine fell over" in logs[0].read_text(encoding="utf-8")
    saved = bench.store.get_visit(visit_id).current_readings()
    assert [r.entered for r in saved] == ["24,5 bar"]


async def test_an_error_no_screen_handles_stops_the_app_with_a_log_and_code_1(
    walk_bench, monkeypatch
) -> None:
    bench, _visits = walk_bench

    def broken(self) -> None:
        raise ValueError("a bug in an action")

    monkeypatch.setattr(FieldkitApp, "action_toggle_daylight", broken)
    app = make_app(bench)
    with pytest.raises(ValueError, match="a bug in an action"):  # the pilot hands the error on
        async with app.run_test() as pilot:
            await pilot.pause()
            app.call_later(app.action_toggle_daylight)  # run by the app, as a key binding would
            await pilot.pause()
            await pilot.pause()
    assert app.return_code == 1
    assert app.crash is not None and app.crash[1].exists()
    assert "ValueError: a bug in an action" in app.crash[1].read_text(encoding="utf-8")


def test_the_command_exits_non_zero_and_names_the_log_when_the_app_had_to_stop(
    monkeypatch, capsys, tmp_path
) -> None:
    log = tmp_path / "fieldkit-error.log"

    class StoppedApp:
        return_code = 1
        crash = (KeyError("x"), log)

        def run(self) -> None:
            return None

    monkeypatch.setattr("fieldkit.tui.app.make_app", lambda bench, demo=False: StoppedApp())
    code = cli.main(["--store", str(tmp_path / "s.sqlite3")])
    err = capsys.readouterr().err
    assert code == 1
    assert str(log) in err and "Every reading already saved is safe" in err and "Traceback" not in err
