"""The visit's time zone: asked for on the new-visit form (and kept for the next visit), settable
from the command line, refused with the nearest real name when mistyped, and used for every time
the job card prints. Zone rules: the IANA time zone database, as Python's zoneinfo reads it."""

from __future__ import annotations

from pathlib import Path

import pytest

from fieldkit.cli import main
from fieldkit.report.build import job_card
from fieldkit.report.text import render_text
from fieldkit.resources import samples_dir
from fieldkit.session import Workbench
from fieldkit.settings import Settings
from fieldkit.tui.screens.new_visit import NewVisitScreen
from fieldkit.tui.screens.visit import VisitScreen

from .conftest import type_text, wait_until
from .screen_text import static_text

SAMPLE = samples_dir() / "visits" / "demo-open-visit.json"  # open: its header can still change


async def test_the_new_visit_form_takes_a_time_zone_and_refuses_a_wrong_one(demo_app) -> None:
    app = demo_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        await pilot.press("n")
        await wait_until(pilot, lambda: isinstance(app.screen, NewVisitScreen))
        form = app.screen
        await type_text(pilot, "RHS-25-0401")
        form.query_one("#zone").value = "Europe/Londn"
        await pilot.press("ctrl+s")
        await pilot.pause()
        said = static_text(form.query_one("#new-error"))
        assert "'Europe/Londn' is not a time zone name" in said and "did you mean 'Europe/London'" in said
        assert app.screen is form  # nothing started
        form.query_one("#zone").value = "America/Chicago"
        await pilot.press("ctrl+s")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        assert app.screen.visit.time_zone == "America/Chicago"
    assert Settings.load().time_zone == "America/Chicago"  # offered on the next new visit


def test_the_command_line_sets_a_visits_time_zone_and_the_card_prints_local_times(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    store = tmp_path / "visits.sqlite3"
    assert main(["--store", str(store), "import", str(SAMPLE)]) == 0
    capsys.readouterr()
    visit_id = "rhs-25-0301"

    assert main(["--store", str(store), "time-zone", visit_id, "Amerika/Chicago"]) == 2
    err = capsys.readouterr().err
    assert "time zone not changed" in err and "did you mean 'America/Chicago'" in err

    assert main(["--store", str(store), "time-zone", visit_id, "America/Chicago"]) == 0
    assert main(["--store", str(store), "time-zone", visit_id]) == 0
    assert capsys.readouterr().out.strip().endswith("America/Chicago")

    bench = Workbench.open(store)
    try:
        visit, profile = bench.resolve(visit_id)
        card = render_text(job_card(visit, profile, bench.diagnose(visit, profile)))
    finally:
        bench.close()
    # The first reading was taken 07:35 UTC and the last 07:55 UTC on 19 August 2025; Chicago
    # keeps daylight time then (UTC−5, CDT): 02:35 to 02:55.
    assert "2025-08-19 (readings 02:35 to 02:55 CDT)" in card
