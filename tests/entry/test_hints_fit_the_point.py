"""Item 9 of issue 10: the example a point offers ("e.g. 1 bar") and the gauge it suggests come
from the point's own expected range and unit, over every point of every bundled profile and
circuit template and every function state its ranges name. The ranges are the profiles' data
(their sources are in the profile files); nothing here re-derives the example's arithmetic."""

from __future__ import annotations

import pytest

from fieldkit.errors import FieldkitError
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.example import example_text, range_for
from fieldkit.model.quantity import spelling_of
from fieldkit.tui.step import suggest_gauge
from fieldkit.units import Kind, parse_value, to_canonical

from .every_point import every_point

FELLBORER = "tarnhollow-fellborer"


def _states(point) -> list[FunctionState | None]:
    named = [s for rng in point.expected for s in rng.when.function]
    return list(dict.fromkeys(named)) or [None]


def test_every_points_example_lies_in_its_range_in_its_unit_and_is_saved_without_a_question(
    walk_bench,
) -> None:
    bench, visits = walk_bench
    checked = 0
    for profile, point in every_point(bench):
        visit = bench.store.get_visit(visits[profile.id])
        for state in _states(point):
            where = f"{point.id} ({profile.id}, {state})"
            text = example_text(point, state)
            parsed = parse_value(text, point.kind)  # it parses back, as the kind the point needs
            rng = range_for(point, state)
            value = to_canonical(parsed.quantity, point.kind)
            if rng is not None:
                bound = rng.low if rng.low is not None else rng.high
                assert spelling_of(parsed.quantity) == spelling_of(bound), f"{where}: {text} vs {bound}"
                if rng.low is not None:
                    assert value >= to_canonical(rng.low, point.kind), f"{where}: {text} below {rng.low}"
                if rng.high is not None:
                    assert value <= to_canonical(rng.high, point.kind), f"{where}: {text} above {rng.high}"
            if point.kind is Kind.PRESSURE and point.max_pressure is not None:
                assert value < to_canonical(point.max_pressure, Kind.PRESSURE), (
                    f"{where}: {text} at the rating"
                )
            # The gauge the screen offers shows it, and typing the example asks nothing.
            gauge = suggest_gauge(point, visit.gauges, state or FunctionState.NEUTRAL, bench.system)
            if gauge is not None:
                start = to_canonical(gauge.scale_start, point.kind) if gauge.scale_start is not None else 0.0
                assert start <= value <= to_canonical(gauge.full_scale, point.kind), f"{where}: {gauge.id}"
            question = bench.check_entry(visit, point, bench.parse_for_point(point, text), gauge and gauge.id)
            assert question is None, f"{where}: {text} on {gauge and gauge.id}: {question}"
            checked += 1
    assert checked >= 120  # 115 points, some with ranges for several states
    print(f"\nexamples checked: {checked}")


@pytest.mark.parametrize(
    ("role", "example"),
    [
        ("case_pressure", "1 bar"),  # at most 2 bar (Fellborer profile): half of it
        ("suction_pressure", "\u22120.085 bar"),  # at least -0.17 bar: half-way to atmosphere
        ("pump_case_drain_flow", "2.8 L/min"),  # at most 5.5 L/min: 2.75, to two digits
    ],
)
def test_a_refusal_suggests_the_points_own_example(walk_bench, role: str, example: str) -> None:
    bench, visits = walk_bench
    profile = bench.library.get(FELLBORER)
    point = next(tp for _c, tp in profile.all_test_points() if tp.role.value == role)
    for typed, words in (("zz", "does not start with a number"), ("12", "a unit is missing")):
        with pytest.raises(FieldkitError) as caught:
            bench.record(visits[FELLBORER], point.id, typed, Condition())
        assert words in str(caught.value) and f"e.g. '{example}'" in str(caught.value)
    wrong = "12 rpm"
    with pytest.raises(FieldkitError, match=f"such as '{example}'"):
        bench.record(visits[FELLBORER], point.id, wrong, Condition())
