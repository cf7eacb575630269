"""What the screen redraws after Enter on a reading: the 'saved' line and the new ranking first,
then the findings, plan and step panel; widgets whose text did not change are left alone.
(Behaviour only; the times are in tests/bench/bench_tui.py, never in a test.)"""

from __future__ import annotations

from itertools import pairwise

from rich.text import Text
from textual.app import App, ComposeResult
from textual.widgets import Static

from fieldkit.model.condition import Condition
from fieldkit.session import Workbench
from fieldkit.tui.screens.visit import WIDE_FROM, VisitScreen
from fieldkit.tui.widgets.band import cell_runs, draw_band
from fieldkit.tui.widgets.bars import top_fault_line
from fieldkit.tui.widgets.drawn import DrawnLine
from fieldkit.tui.widgets.faults import FaultList, fault_text
from fieldkit.tui.widgets.plan_list import PlanList

from .conftest import DEMO_OPEN_VISIT, type_text, wait_until


class _One(App[None]):
    """A bare app holding one widget, to watch it outside the visit screen."""

    def __init__(self, widget: Static | FaultList) -> None:
        super().__init__()
        self.widget = widget

    def compose(self) -> ComposeResult:
        yield self.widget


async def test_a_line_given_the_same_data_again_is_not_redrawn() -> None:
    drawn: list[tuple[str, bool]] = []

    def draw(label: str, closed: bool) -> Text:
        drawn.append((label, closed))
        return Text(f"NEXT → {label}", end="")

    line = DrawnLine(draw)
    async with _One(line).run_test() as pilot:
        line.data = ("charge pressure", False)
        await pilot.pause()
        shown = line.content
        line.data = ("charge pressure", False)  # equal data: Textual calls no watcher
        await pilot.pause()
        assert line.content is shown and drawn == [("charge pressure", False)]
        line.data = ("case pressure", False)
        await pilot.pause()
        assert line.content.plain == "NEXT → case pressure" and len(drawn) == 2


def test_a_band_drawn_in_runs_reads_the_same_as_cell_by_cell() -> None:
    cells = draw_band(19.0, 0.4, 20.5, 24.5, 40)  # a low reading left of its band
    runs = cell_runs(cells, "bad")
    assert "".join(chars for _role, chars in runs) == "".join(c.char for c in cells)
    assert all(a[0] != b[0] for a, b in pairwise(runs))  # neighbours differ in role
    assert ("bad", "●") in runs  # the reading mark takes the verdict's mood


async def test_the_fault_list_reads_as_the_newest_ranking_and_keeps_the_highlighted_row(open_bench) -> None:
    bench: Workbench = open_bench()
    visit = bench.store.get_visit(DEMO_OPEN_VISIT)
    before = bench.diagnose(visit)
    bench.record(visit.id, "travel.charge", "17 bar", Condition())  # low charge pressure
    after = bench.diagnose(bench.store.get_visit(visit.id))
    faults = FaultList()
    async with _One(faults).run_test() as pilot:
        faults.show(before)
        faults.highlighted = 2
        await pilot.pause()
        faults.show(after)
        await pilot.pause()
        shown = [faults.get_option_at_index(i) for i in range(faults.option_count)]
        assert [o.id for o in shown] == [f.key for f in after.faults[:12]]
        assert [o.prompt.plain for o in shown] == [fault_text(f).plain for f in after.faults[:12]]
        assert faults.highlighted == 2
        kept = shown[0]
        faults.show(after)  # the same ranking again: the rows stay as they are
        assert faults.get_option_at_index(0) is kept


async def test_a_visit_screen_built_in_a_wide_window_starts_in_the_wide_layout(demo_app) -> None:
    app = demo_app()
    async with app.run_test(size=(WIDE_FROM + 2, 30)) as pilot:
        await pilot.pause()
        screen = VisitScreen(app.bench, DEMO_OPEN_VISIT, demo=True)
        # Before any resize reaches it: the side lists are part of its first frame.
        assert screen.has_class("-wide") and not screen.has_class("-narrow")
    async with demo_app().run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert VisitScreen(pilot.app.bench, DEMO_OPEN_VISIT, demo=True).has_class("-narrow")


async def test_after_enter_the_ranking_shows_at_once_and_plan_and_step_follow(demo_app, open_bench) -> None:
    app = demo_app()
    async with app.run_test(size=(150, 40)) as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        screen = app.screen
        await pilot.pause()
        assert screen.point_id == "travel.charge"
        bands = screen.query_one("#step-bands")
        readings_here = len(bands.checks)
        await type_text(pilot, "17 bar")

        assert screen.save_reading()
        await pilot.pause()  # the screen handles the entry's Saved message
        # Stored, diagnosed again, and the ranking is what the store says.
        reader = open_bench()  # a second connection: what is on disk
        expected = reader.diagnose(reader.store.get_visit(DEMO_OPEN_VISIT))
        assert screen.diagnosis.faults[0].key == expected.faults[0].key
        top = screen.query_one("#top-fault", Static).content
        assert top.plain.startswith(top_fault_line(expected, None).plain)
        assert screen.query_one("#side-faults", FaultList).get_option_at_index(0).id == expected.faults[0].key
        assert "✓ saved 17 bar" in screen.query_one("#parse-msg", Static).content.plain

        # A frame later the step panel has the new band and the plan row its new glyph.
        await wait_until(pilot, lambda: len(bands.checks) == readings_here + 1)
        plan = screen.query_one("#plan", PlanList)
        row = plan.get_option_at_index(plan.get_option_index("travel.charge")).prompt.plain
        assert "✗ charge pressure" in row
