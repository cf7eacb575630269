"""The step panel: everything about the selected test point before and after teeing in."""

from __future__ import annotations

from dataclasses import dataclass, field

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import VerticalScroll

from fieldkit.diagnosis.catalogue import Caution
from fieldkit.diagnosis.results import NextTest, ReadingCheck
from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import Circuit, MachineProfile, TestPoint
from fieldkit.physics.common import Level
from fieldkit.tui.plan import PlanPoint
from fieldkit.tui.safe_text import literal
from fieldkit.tui.step import SHORT_STATE, GaugeFit, describe_when, range_text
from fieldkit.tui.widgets.band import ReadingBands
from fieldkit.tui.widgets.drawn import DrawnBlock
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


def head_text(point: TestPoint, plan_point: PlanPoint | None) -> Text:
    head = Text(end="")
    head.append_text(literal(point.label, "bold"))
    head.append_text(literal(f"  {point.id}", "dim"))
    if plan_point is not None:
        head.append(f"\n{plan_point.state.glyph} {plan_point.state.value}", "bold")
        if plan_point.why:
            head.append_text(literal(f": {plan_point.why}"))
    return head


def next_text(why: str) -> Text:
    return Text.assemble(("→ Recommended next: ", "bold"), literal(why), end="")


def info_text(
    point: TestPoint, profile: MachineProfile, function: FunctionState, system: DisplaySystem
) -> Text:
    info = Text(end="")
    _row(info, "Where", point.location or "not described in the profile")
    _row(info, "Reach", point.access)
    _row(info, "Fitting", point.fitting)
    if point.max_pressure is not None:
        _row(info, "Max", f"{format_value(point.max_pressure, system)} can reach this point")
    window = profile.test_window
    _row(
        info,
        "Set",
        f"{SHORT_STATE[function]} · {format_value(profile.rated_speed)} · oil "
        f"{format_value(window.oil_min, system)} to {format_value(window.oil_max, system)}",
    )
    for rng in point.expected:
        _row(info, "Expect", f"{range_text(rng, system)} ({describe_when(rng.when)})")
        _row(info, "Source", rng.source)
    if not point.expected:
        _row(info, "Expect", "no expected range in the profile: the reading is recorded, not judged")
    _row(info, "Takes", f"about {point.minutes:g} min")
    return info


def gauge_text(fit: GaugeFit) -> Text:
    gauge = Text(end="")
    gauge.append(f"Gauge   {FIT_MARK[fit.level]}: ", "bold")
    gauge.append_text(literal(fit.message))
    return gauge


def cautions_text(cautions: tuple[Caution, ...]) -> Text:
    out = Text(end="")
    for c in cautions:
        if out.plain:
            out.append("\n")
        out.append(f"{SEVERITY_MARK.get(c.severity.value, c.severity.value)} ", "bold")
        out.append_text(literal(c.title, "bold"))
        out.append("\n")
        out.append_text(literal(c.text))
    if not cautions:
        out.append("No step cautions listed; F2 shows the general caution.")
    return out


class StepPanel(VerticalScroll):
    """Where the point is, how to reach it, what to set, the gauge check, readings, cautions.

    ``show`` runs after every saved reading; each part is given the data it is drawn from and
    redraws only when that data changed (:mod:`fieldkit.tui.widgets.drawn`)."""

    def compose(self) -> ComposeResult:
        yield DrawnBlock(head_text, id="step-head")
        yield ReadingBands(id="step-bands")
        yield DrawnBlock(gauge_text, id="step-gauge")
        yield DrawnBlock(info_text, id="step-info")
        yield DrawnBlock(next_text, id="step-next", classes="-hidden")
        yield DrawnBlock(cautions_text, id="step-cautions")

    def show(self, view: StepView) -> None:
        tp = view.point
        self.query_one("#step-head", DrawnBlock).data = (tp, view.plan_point)

        nxt = self.query_one("#step-next", DrawnBlock)
        recommended = view.next_test is not None and view.next_test.test_point == tp.id
        if view.next_test is not None and recommended:
            nxt.data = (view.next_test.why,)
        nxt.set_class(not recommended, "-hidden")

        self.query_one("#step-info", DrawnBlock).data = (tp, view.profile, view.function, view.system)

        widget = self.query_one("#step-gauge", DrawnBlock)
        widget.data = (view.fit,)
        widget.set_class(view.fit.level is Level.ERROR, "-error")
        widget.set_class(view.fit.level is Level.WARNING, "-warning")

        bands = self.query_one("#step-bands", ReadingBands)
        bands.show(view.checks)
        bands.display = bool(view.checks)

        self.query_one("#step-cautions", DrawnBlock).data = (tuple(view.cautions),)
