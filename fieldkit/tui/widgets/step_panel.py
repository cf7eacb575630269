"""The step panel: everything about the selected test point before and after teeing in."""

from __future__ import annotations

from dataclasses import dataclass, field

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import VerticalScroll
from textual.widgets import Static

from fieldkit.diagnosis.catalogue import Caution
from fieldkit.diagnosis.results import NextTest, ReadingCheck
from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import Circuit, MachineProfile, TestPoint
from fieldkit.physics.common import Level
from fieldkit.tui.plan import PlanPoint
from fieldkit.tui.safe_text import literal
from fieldkit.tui.step import SHORT_STATE, GaugeFit, describe_when, range_text
from fieldkit.tui.widgets.band import ReadingBands
from fieldkit.tui.widgets.changes import show_text
from fieldkit.units import DisplaySystem, format_value

SEVERITY_MARK = {"danger": "‼ DANGER", "warning": "! WARNING", "notice": "i NOTICE"}
FIT_MARK = {
    Level.OK: "✓ suits",
    Level.NOTE: "i note",
    Level.WARNING: "! check",
    Level.ERROR: "✗ DO NOT CONNECT",
}


@dataclass(slots=True)
class StepView:
    profile: MachineProfile
    circuit: Circuit
    point: TestPoint
    plan_point: PlanPoint | None
    function: FunctionState
    fit: GaugeFit
    cautions: list[Caution]
    next_test: NextTest | None
    system: DisplaySystem
    checks: list[ReadingCheck] = field(default_factory=list)


def _row(out: Text, label: str, value: str) -> None:
    if not value:
        return
    if out.plain:
        out.append("\n")
    out.append(f"{label:<8}", "bold")
    out.append_text(literal(value))


class StepPanel(VerticalScroll):
    """Where the point is, how to reach it, what to set, the gauge check, readings, cautions.

    ``show`` runs after every saved reading; only the parts whose text changed are redrawn."""

    def compose(self) -> ComposeResult:
        yield Static(id="step-head")
        yield ReadingBands(id="step-bands")
        yield Static(id="step-gauge")
        yield Static(id="step-info")
        yield Static(id="step-next", classes="-hidden")
        yield Static(id="step-cautions")

    def show(self, view: StepView) -> None:
        tp = view.point
        head = Text(end="")
        head.append_text(literal(tp.label, "bold"))
        head.append_text(literal(f"  {tp.id}", "dim"))
        if view.plan_point is not None:
            head.append(f"\n{view.plan_point.state.glyph} {view.plan_point.state.value}", "bold")
            if view.plan_point.why:
                head.append_text(literal(f": {view.plan_point.why}"))
        show_text(self.query_one("#step-head", Static), head)

        nxt = self.query_one("#step-next", Static)
        if view.next_test is not None and view.next_test.test_point == tp.id:
            show_text(
                nxt, Text.assemble(("▸ Recommended next: ", "bold"), literal(view.next_test.why), end="")
            )
            nxt.remove_class("-hidden")
        else:
            show_text(nxt, "")
            nxt.add_class("-hidden")

        info = Text(end="")
        _row(info, "Where", tp.location or "not described in the profile")
        _row(info, "Reach", tp.access)
        _row(info, "Fitting", tp.fitting)
        if tp.max_pressure is not None:
            _row(info, "Max", f"{format_value(tp.max_pressure, view.system)} can reach this point")
        window = view.profile.test_window
        _row(
            info,
            "Set",
            f"{SHORT_STATE[view.function]} · {format_value(view.profile.rated_speed)} · oil "
            f"{format_value(window.oil_min, view.system)} to {format_value(window.oil_max, view.system)}",
        )
        for rng in tp.expected:
            _row(info, "Expect", f"{range_text(rng, view.system)} ({describe_when(rng.when)})")
            _row(info, "Source", rng.source)
        if not tp.expected:
            _row(info, "Expect", "no expected range in the profile: the reading is recorded, not judged")
        _row(info, "Takes", f"about {tp.minutes:g} min")
        show_text(self.query_one("#step-info", Static), info)

        gauge = Text(end="")
        gauge.append(f"Gauge   {FIT_MARK[view.fit.level]}: ", "bold")
        gauge.append_text(literal(view.fit.message))
        widget = self.query_one("#step-gauge", Static)
        show_text(widget, gauge)
        widget.set_class(view.fit.level is Level.ERROR, "-error")
        widget.set_class(view.fit.level is Level.WARNING, "-warning")

        bands = self.query_one("#step-bands", ReadingBands)
        bands.show(view.checks)
        bands.display = bool(view.checks)

        cautions = Text(end="")
        for c in view.cautions:
            if cautions.plain:
                cautions.append("\n")
            cautions.append(f"{SEVERITY_MARK.get(c.severity.value, c.severity.value)} ", "bold")
            cautions.append_text(literal(c.title, "bold"))
            cautions.append("\n")
            cautions.append_text(literal(c.text))
        if not view.cautions:
            cautions.append("No step cautions listed; F2 shows the general caution.")
        show_text(self.query_one("#step-cautions", Static), cautions)
