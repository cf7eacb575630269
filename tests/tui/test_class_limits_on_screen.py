"""Gauge error as a technician reads it, on the visit screen: the class limit off the dial, the
value to the gauge's resolution, and the same limit the job card prints (one source of truth).

EN 837-1: the limit of error is the accuracy class as a percentage of the span. The demo open
visit (invented data) took charge pressure on G60 (0–60 bar, class 1) and oil temperature on TH
(−20 to 150 °C, 1 % of span)."""

from __future__ import annotations

from fieldkit.report.build import job_card
from fieldkit.report.text import render_text
from fieldkit.tui.screens.diagnosis import DiagnosisScreen
from fieldkit.tui.screens.visit import VisitScreen

from .conftest import wait_until
from .screen_text import screen_text


async def _go_to(pilot, screen: VisitScreen, point_id: str) -> None:
    for key in ("up", "down"):
        for _ in range(40):
            if screen.point_id == point_id:
                return
            await pilot.press(key)
            await pilot.pause()
    assert screen.point_id == point_id


async def test_the_visit_screen_shows_the_class_limit_not_the_standard_uncertainty(demo_app) -> None:
    app = demo_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        screen = app.screen
        await _go_to(pilot, screen, "travel.charge")
        # class 1 × (60 − 0) bar / 100 = ±0.6 bar; u = 0.6/√3 = 0.35 bar is for the statistics only.
        await wait_until(pilot, lambda: "26.2 bar ±0.6 bar" in screen_text(app))
        assert "±0.35" not in screen_text(app)

        await _go_to(pilot, screen, "travel.oil_temp")
        # 1 % × (150 − (−20)) °C = ±1.7 °C: the span, not the full scale (that would be ±1.5 °C).
        await wait_until(pilot, lambda: "49 °C ±1.7 °C" in screen_text(app))
        assert "±1.5 °C" not in screen_text(app) and "±0.98" not in screen_text(app)

        # The diagnosis screen's readings table: the class limit, and u beside it for the "why".
        await pilot.press("ctrl+f")
        await wait_until(pilot, lambda: isinstance(app.screen, DiagnosisScreen))
        from textual.widgets import DataTable

        table = app.screen.query_one("#checks", DataTable)
        rows = [[str(cell) for cell in table.get_row_at(i)] for i in range(table.row_count)]
        charge = next(r for r in rows if r[0] == "charge pressure")
        assert charge[2:6] == ["26.2 bar", "25–29 bar", "±0.6 bar", "±0.35 bar"]
        await pilot.press("escape")

        # The card prints the very same limits.
        visit, profile, diagnosis = screen.visit, screen.profile, screen.diagnosis
        card = render_text(job_card(visit, profile, diagnosis, screen.bench.system, screen.bench.knowledge))
        assert "26.2 bar (gauge error ±0.6 bar)" in card
        assert "49 °C (gauge error ±1.7 °C)" in card
