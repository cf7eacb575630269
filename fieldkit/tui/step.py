"""What a technician needs to know before teeing in at one test point.

Where it is, how to reach it, the condition to set, what the machine should read there, whether
the chosen gauge suits it (checked before connecting, with physics.gauges) and which cautions
apply. Kept free of Textual so it can be tested and reused by a report.
"""

from __future__ import annotations

from dataclasses import dataclass

from fieldkit.diagnosis.catalogue import Caution
from fieldkit.diagnosis.cautions import Raised, cautions_for_step, sort_raised
from fieldkit.diagnosis.engine import Knowledge
from fieldkit.diagnosis.results import Diagnosis, NextTest
from fieldkit.errors import FieldkitError
from fieldkit.model.condition import ConditionSpec, FunctionState
from fieldkit.model.example import example_value
from fieldkit.model.gauge import Gauge
from fieldkit.model.profile import Circuit, ExpectedRange, MachineProfile, TestPoint
from fieldkit.model.roles import Role
from fieldkit.model.visit import Visit
from fieldkit.physics.common import Level
from fieldkit.physics.gauges import gauge_suitability, smallest_gauge
from fieldkit.units import DisplaySystem, Kind, Quantity, format_value, to_canonical

SHORT_STATE = {
    FunctionState.NEUTRAL: "neutral",
    FunctionState.FULL_STROKE: "full stroke",
    FunctionState.STALLED: "stalled over relief",
    FunctionState.UNDER_LOAD: "under load",
}


def state_from_label(label: str) -> FunctionState | None:
    """The function state a next-test sentence names ("function at full stroke")."""
    return next((s for s in FunctionState if s.label == label), None)


def default_function(point: TestPoint, next_test: NextTest | None = None) -> FunctionState:
    """The condition to offer first: the engine's, when it asked for this point; else the
    first one the point's expected ranges are written for; else neutral."""
    if next_test is not None and next_test.test_point == point.id:
        state = state_from_label(next_test.condition)
        if state is not None:
            return state
    for rng in point.expected:
        if rng.when.function:
            return rng.when.function[0]
    return FunctionState.NEUTRAL


def describe_when(spec: ConditionSpec) -> str:
    parts = [" or ".join(s.label for s in spec.function)] if spec.function else ["any function state"]
    if spec.speed_min is not None or spec.speed_max is not None:
        lo = format_value(spec.speed_min) if spec.speed_min is not None else "…"
        hi = format_value(spec.speed_max) if spec.speed_max is not None else "…"
        parts.append(f"speed {lo}–{hi}")
    return ", ".join(parts)


def range_text(rng: ExpectedRange, system: DisplaySystem) -> str:
    low = format_value(rng.low, system) if rng.low is not None else None
    high = format_value(rng.high, system) if rng.high is not None else None
    if low and high:
        return f"{low} to {high}"
    return f"at least {low}" if low else f"at most {high}"


def range_for(point: TestPoint, function: FunctionState) -> ExpectedRange | None:
    for rng in point.expected:
        if not rng.when.function or function in rng.when.function:
            return rng
    return None


def working_value(point: TestPoint, function: FunctionState) -> Quantity | None:
    """What the point should read in this condition, for judging a gauge before connecting:
    the top of the expected range (the bottom when only a floor is given)."""
    rng = range_for(point, function)
    if rng is None:
        return None
    return rng.high if rng.high is not None else rng.low


@dataclass(frozen=True, slots=True)
class GaugeFit:
    level: Level
    message: str

    @property
    def ok(self) -> bool:
        return self.level in (Level.OK, Level.NOTE)


def gauge_fit(
    point: TestPoint, gauge: Gauge | None, function: FunctionState, system: DisplaySystem
) -> GaugeFit:
    """Whether a gauge suits the point in this condition. For pressure points this is
    physics.gauges.gauge_suitability against the point's highest pressure (overrange is an
    error: do not connect)."""
    if gauge is None:
        return GaugeFit(
            Level.WARNING,
            "no gauge chosen: the reading will be judged as if taken with an assumed "
            f"class 2.5 gauge{_gauge_to_add(point, function)}",
        )
    if gauge.kind is not point.kind:
        return GaugeFit(
            Level.ERROR,
            f"{gauge.id} measures {gauge.kind.value}; this point needs a {point.kind.value} reading",
        )
    work = working_value(point, function)
    if point.kind is Kind.PRESSURE:
        working = work if work is not None else point.max_pressure
        if working is None:
            return GaugeFit(
                Level.NOTE,
                "no expected range or highest pressure for this point: check the gauge range yourself",
            )
        try:
            check = gauge_suitability(
                gauge.full_scale,
                working,
                point.highest_on_scale,
                gauge.scale_start,
                gauge.accuracy_class if gauge.standard == "EN 837-1" else None,
                fluctuating=point.fluctuates(function),
            )
        except FieldkitError as exc:
            return GaugeFit(Level.WARNING, f"cannot judge {gauge.id}: {exc}")
        return GaugeFit(check.level, f"{gauge.id}: {check.message}")
    if work is not None and to_canonical(work, point.kind) >= to_canonical(gauge.full_scale, point.kind):
        return GaugeFit(
            Level.ERROR,
            f"{gauge.id} ends at {format_value(gauge.full_scale, system)}, "
            f"below the expected {format_value(work, system)}",
        )
    return GaugeFit(Level.OK, f"{gauge.id} ({gauge.span_text(system)}) covers the expected reading")


def _gauge_to_add(point: TestPoint, function: FunctionState) -> str:
    """'; add a 0–16 bar gauge (^g)' for a pressure point: the smallest standard range that reads
    the expected value within 3/4 of its scale (2/3 where the pressure fluctuates, EN 837-2) and
    stays above the point's highest pressure."""
    if point.kind is not Kind.PRESSURE:
        return f"; add a {point.kind.value} meter with ^g"

    work = working_value(point, function) or point.max_pressure
    if work is None:
        return "; add one with ^g"
    if to_canonical(work, Kind.PRESSURE) < 0:  # a vacuum is expected here: a 0–X gauge cannot show it
        top = f" to +{format_value(point.max_pressure)}" if point.max_pressure is not None else ""
        return f"; add a compound gauge (from -1 bar{top}) with ^g"
    try:
        size = smallest_gauge(work, point.highest_on_scale, fluctuating=point.fluctuates(function))
    except FieldkitError:
        return "; add one with ^g"
    return f"; add a 0–{format_value(size)} gauge with ^g"


def suggest_gauge(
    point: TestPoint, gauges: list[Gauge], function: FunctionState, system: DisplaySystem
) -> Gauge | None:
    """The visit's gauge that suits best: no overrange, fewest warnings, smallest span. When none
    suits, one that at least shows the value the point should read (the point's rating may still
    overrange it: the step says so), never one that cannot show it (a 0–16 bar gauge where a
    vacuum is expected, a 0–20 L/min meter where 84 L/min is); None when no gauge can."""
    ranked: list[tuple[int, float, Gauge]] = []
    order = {Level.OK: 0, Level.NOTE: 0, Level.WARNING: 1, Level.ERROR: 9}
    work = working_value(point, function)
    if work is None and not point.expected:
        work = example_value(point, function)  # nothing expected here: it must show the example offered
    for g in gauges:
        if g.kind is not point.kind:
            continue
        fit = gauge_fit(point, g, function, system)
        rank = order[fit.level]
        if work is not None and not _shows(g, work):
            rank = 9
        elif rank == 9 and work is not None:
            rank = 5
        ranked.append((rank, to_canonical(g.span, g.kind) if g.kind is not Kind.TEMPERATURE else 0.0, g))
    ranked.sort(key=lambda t: (t[0], t[1]))
    if not ranked or ranked[0][0] >= 9:
        return None
    return ranked[0][2]


def _shows(gauge: Gauge, value: Quantity) -> bool:
    """Whether the value lies on the gauge's scale."""
    kind = gauge.kind
    start = to_canonical(gauge.scale_start, kind) if gauge.scale_start is not None else 0.0
    return start <= to_canonical(value, kind) <= to_canonical(gauge.full_scale, kind)


def step_cautions(
    knowledge: Knowledge,
    circuit: Circuit,
    point: TestPoint,
    function: FunctionState,
    *,
    include_general: bool = False,
    diagnosis: Diagnosis | None = None,
) -> list[Caution]:
    """The cautions for taking this reading (diagnosis.cautions decides, from what the step
    does), and those raised by findings on readings already taken here (an over-pressure
    reading stays in front of the technician). Worst first."""
    raised = cautions_for_step(knowledge.cautions, circuit, point, function, include_general=include_general)
    if diagnosis is not None:
        urgent: set[str] = set()
        here = {c.reading_id for c in diagnosis.checks if c.test_point == point.id}
        have = {r.caution.id for r in raised}
        for f in diagnosis.findings:
            if not here.intersection(f.readings):
                continue
            for c in knowledge.cautions.values():
                if c.id not in have and (
                    c.id in f.cautions or c.raised_by_finding(f.rule_id, f.verdict.value)
                ):
                    raised.append(Raised(c, f.title))
                    have.add(c.id)
                if c.raised_by_finding(f.rule_id, f.verdict.value):
                    urgent.add(c.id)
        # What a reading here showed (over-pressure) goes first, after the general caution.
        raised = sorted(sort_raised(raised), key=lambda r: (not r.caution.always, r.caution.id not in urgent))
    return [r.caution for r in raised]


def general_caution(knowledge: Knowledge) -> Caution:
    return next(c for c in knowledge.cautions.values() if c.always)


def last_condition_values(visit: Visit, profile: MachineProfile) -> tuple[Quantity | None, Quantity | None]:
    """Speed and oil temperature to offer for the next reading: the latest speed reading and the
    latest oil temperature reading of the visit (measurements), else nothing ("not measured").
    Never the rated speed, never a value typed into another reading's condition: a condition is
    a fact about its reading (issue 10, item 6)."""
    speed: Quantity | None = None
    oil: Quantity | None = None
    points = {tp.id: tp for _c, tp in profile.all_test_points()}
    for r in sorted(visit.current_readings(), key=lambda r: r.taken_at):
        tp = points.get(r.test_point)
        if tp is not None and tp.role is Role.OIL_TEMPERATURE:
            oil = r.value
        if tp is not None and tp.role is Role.PUMP_SPEED:
            speed = r.value
    return speed, oil
