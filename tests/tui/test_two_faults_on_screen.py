"""Two faults at once on the diagnosis screen (issue 13): the pair heads the fault list only when
it is more likely than any single fault; a one-fault visit shows no such row."""

from __future__ import annotations

from textual.app import App

from fieldkit.diagnosis.engine import default_knowledge, diagnose
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.loading import ProfileLibrary
from fieldkit.model.visit import Reading, Visit
from fieldkit.resources import rules_dir, samples_dir
from fieldkit.tui.screens.diagnosis import DiagnosisScreen
from fieldkit.tui.widgets.faults import FaultList
from fieldkit.units import Q_


def _pebblerun_visit(readings: list[tuple[str, float, str, FunctionState]]) -> tuple[Visit, object]:
    profile = ProfileLibrary([samples_dir() / "profiles"], rules_dir() / "templates").get(
        "brindlecombe-pebblerun"
    )
    visit = Visit(
        id="two-faults",
        job_number="RHS-TEST-2",
        customer="Ravensgill test yard (invented)",
        site="test bay",
        machine=profile.id,
        readings=[
            Reading(
                id=f"r{i}",
                test_point=point,
                value=Q_(value, unit),
                entered=f"{value:g} {unit}",
                # Oil in the test window and the engine at rated speed (invented).
                condition=Condition(
                    function=state, oil_temperature=Q_(50.0, "degC"), speed=Q_(1800.0, "rpm")
                ),
            )
            for i, (point, value, unit, state) in enumerate(readings)
        ],
    )
    return visit, profile


class _Host(App[None]):
    def __init__(self, screen: DiagnosisScreen) -> None:
        super().__init__()
        self._first = screen

    def on_mount(self) -> None:
        self.push_screen(self._first)


async def _first_rows(readings: list[tuple[str, float, str, FunctionState]]) -> tuple[list[str], bool]:
    """The first three rows of the fault list, and whether Enter on the first one left the
    diagnosis screen on top (a pair row opens nothing; a fault row opens its explanation)."""
    visit, profile = _pebblerun_visit(readings)
    d = diagnose(visit, profile, default_knowledge())  # type: ignore[arg-type]
    app = _Host(DiagnosisScreen(d, visit.job_number))
    async with app.run_test(size=(120, 30)) as pilot:
        await pilot.pause()
        faults = app.screen.query_one("#faults", FaultList)
        rows = [str(faults.get_option_at_index(i).prompt) for i in range(min(3, faults.option_count))]
        faults.focus()
        faults.highlighted = 0
        await pilot.press("enter")
        await pilot.pause()
        return rows, isinstance(app.screen, DiagnosisScreen)


async def test_a_low_main_relief_and_a_worn_belt_motor_head_the_list_as_two_at_once() -> None:
    # Pebblerun (invented): main stall 150 bar against 182-191 bar, and the belt motor's drain
    # 4 L/min against at most 1.5 L/min: two faults in two circuits (common practice: neither
    # explains the other's reading).
    rows, stayed = await _first_rows(
        [
            ("main.stall", 150.0, "bar", FunctionState.STALLED),
            ("main.pump_flow", 60.0, "L/min", FunctionState.UNDER_LOAD),
            ("main.speed", 1800.0, "rpm", FunctionState.UNDER_LOAD),
            ("belt.motor_drain", 4.0, "L/min", FunctionState.UNDER_LOAD),
        ]
    )
    assert "two at once" in rows[0]
    assert "Main relief" in rows[0] or "main relief" in rows[0]
    assert "(belt)" in rows[0] and "(main)" in rows[0]
    assert "two at once" not in rows[1]
    assert stayed  # the pair row opens nothing


async def test_a_one_fault_visit_shows_no_pair_row() -> None:
    rows, stayed = await _first_rows(
        [
            ("main.stall", 150.0, "bar", FunctionState.STALLED),
            ("belt.motor_drain", 0.6, "L/min", FunctionState.UNDER_LOAD),
        ]
    )
    assert rows and not any("two at once" in r for r in rows)
    assert not stayed  # Enter on the leading fault opens its explanation
