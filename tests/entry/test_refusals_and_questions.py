"""Items 2, 4 and 5 of issue 10: every refusal and every question entry can give, with its
message. Expected values are worked by hand beside each check, from the sources named."""

from __future__ import annotations

import pytest

from fieldkit.errors import AmbiguousInputError, ConfirmValueError, FieldkitError, ImpossibleValueError
from fieldkit.model.condition import Condition
from fieldkit.session import entry_question
from fieldkit.units import Kind, parse_value, to_canonical

FELLBORER = "tarnhollow-fellborer"
PEBBLERUN = "brindlecombe-pebblerun"


@pytest.fixture
def bench_and_visits(walk_bench):
    return walk_bench


def _point(bench, machine: str, role: str) -> str:
    profile = bench.library.get(machine)
    return next(tp.id for _c, tp in profile.all_test_points() if tp.role.value == role)


def _refused(bench, visits, machine, role, text, gauge=None) -> str:
    visit = visits[machine]
    before = len(bench.store.get_visit(visit).readings)
    with pytest.raises(FieldkitError) as caught:
        bench.record(visit, _point(bench, machine, role), text, Condition(), gauge=gauge)
    assert not isinstance(caught.value, (AmbiguousInputError, ConfirmValueError)), str(caught.value)
    assert len(bench.store.get_visit(visit).readings) == before  # nothing saved
    return str(caught.value)


def _asked(bench, visits, machine, role, text, gauge=None) -> ConfirmValueError:
    visit = visits[machine]
    before = len(bench.store.get_visit(visit).readings)
    with pytest.raises(ConfirmValueError) as caught:
        bench.record(visit, _point(bench, machine, role), text, Condition(), gauge=gauge)
    assert len(bench.store.get_visit(visit).readings) == before  # nothing saved while asking
    return caught.value


# --- item 2: physical bounds -------------------------------------------------------------------
def test_an_absolute_pressure_below_zero_is_refused_with_the_reason(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    message = _refused(bench, visits, FELLBORER, "charge_pressure", "-5 bar abs")
    assert "absolute pressure cannot be below zero" in message and "perfect vacuum" in message


def test_a_gauge_pressure_below_a_perfect_vacuum_is_refused(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    # standard atmosphere 1.01325 bar (SI Brochure, table 8): -1.5 bar gauge would be -0.49 bar abs
    message = _refused(bench, visits, FELLBORER, "charge_pressure", "-1.5 bar")
    assert "cannot be below −1.013 bar" in message


def test_a_temperature_below_absolute_zero_is_refused(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    message = _refused(bench, visits, PEBBLERUN, "oil_temperature", "-300 °C")
    assert "below absolute zero (−273.15 °C)" in message  # SI Brochure 9th ed. 2.3.1


def test_a_negative_flow_is_refused_with_what_to_do(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    message = _refused(bench, visits, FELLBORER, "pump_case_drain_flow", "-3 L/min")
    assert "a flow cannot be negative" in message and "wrong way round" in message


def test_a_negative_speed_is_refused(walk_bench) -> None:
    bench, visits = walk_bench
    message = _refused(bench, visits, "template-closed-loop-drive", "pump_speed", "-1800 rpm")
    assert "without the minus" in message


def test_a_number_too_large_to_compute_with_is_refused(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    message = _refused(bench, visits, FELLBORER, "pump_case_drain_flow", "9.9e307 L/min")
    assert "far beyond anything a gauge or meter shows" in message


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("1e-999 bar", "too small to tell from zero"),
        ("١٢ bar", "digits from another script"),
        ("nan bar", "does not start with a number"),
        ("inf bar", "does not start with a number"),
    ],
)
def test_text_no_gauge_shows_is_refused_by_the_parser_everywhere(text: str, words: str) -> None:
    with pytest.raises(FieldkitError, match=words):
        parse_value(text, Kind.PRESSURE)


def test_above_2000_bar_anywhere_is_asked_about(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    # A point with no rating and no expected range of its own (a hand-written profile may have
    # one): only the 2000 bar ceiling can ask (common practice: hydraulics works below it).
    point = bench.library.get(FELLBORER).test_point(_point(bench, FELLBORER, "loop_a_pressure"))[1]
    bare = point.model_copy(update={"max_pressure": None, "expected": []})
    visit = bench.store.get_visit(visits[FELLBORER])
    question = entry_question(visit, bare, parse_value("2500 bar", Kind.PRESSURE), None)
    assert question is not None and question.danger == ""
    assert (
        question.text
        == "2500 bar is above 2000 bar, more than any hydraulic test point sees. Save it as read?"
    )
    assert entry_question(visit, bare, parse_value("1900 bar", Kind.PRESSURE), None) is None


def test_above_the_rating_the_danger_is_asked_before_anything_else(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    asked = _asked(bench, visits, FELLBORER, "loop_a_pressure", "2500 bar", gauge="G600")
    assert str(asked).startswith("DANGER: 2500 bar is above the 450 bar this point is rated for")
    assert str(asked).endswith("Save it as read?") and asked.danger == "over-pressure"


def test_more_than_twice_the_points_range_is_asked_about(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    point = bench.library.get(FELLBORER).test_point(_point(bench, FELLBORER, "pump_case_drain_flow"))[1]
    top = max(to_canonical(r.high, Kind.FLOW) for r in point.expected if r.high is not None)
    asked = _asked(bench, visits, FELLBORER, "pump_case_drain_flow", f"{top * 2.5:.1f} L/min", gauge="FM200")
    assert "more than 2 × the most this point should see" in str(asked)


def test_a_confirmed_unlikely_value_is_saved_as_read(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    asked = _asked(bench, visits, FELLBORER, "loop_a_pressure", "2500 bar", gauge="G600")
    saved = bench.record(
        visits[FELLBORER],
        _point(bench, FELLBORER, "loop_a_pressure"),
        "",
        Condition(),
        gauge="G600",
        chosen=asked.choice,
        confirmed=True,
    )
    assert saved.entered == "2500 bar" and to_canonical(saved.value, Kind.PRESSURE) == 2500.0


def test_an_impossible_value_is_refused_even_when_confirmed(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    point = _point(bench, FELLBORER, "charge_pressure")
    chosen = parse_value("-5 bar abs", Kind.PRESSURE)
    with pytest.raises(ImpossibleValueError):
        bench.record(visits[FELLBORER], point, "", Condition(), chosen=chosen, confirmed=True)


# --- item 5: beyond the gauge, above the rating ----------------------------------------------------
def test_a_value_past_the_gauges_scale_is_asked_about_as_at_least(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    asked = _asked(bench, visits, FELLBORER, "charge_pressure", "20 bar", gauge="G16")
    text = str(asked)
    assert "past the top of G16's scale (0–16 bar)" in text
    assert "may be overranged and damaged" in text and "at least 16 bar" in text
    assert asked.danger == ""  # 20 bar is within the charge point's rating


def test_a_value_above_the_points_rating_raises_the_over_pressure_danger(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    point_id = _point(bench, FELLBORER, "case_pressure")
    point = bench.library.get(FELLBORER).test_point(point_id)[1]
    rated = to_canonical(point.max_pressure, Kind.PRESSURE)
    asked = _asked(bench, visits, FELLBORER, "case_pressure", f"{rated + 2:g} bar", gauge="G60")
    assert asked.danger == "over-pressure" and str(asked).startswith("DANGER:")
    assert f"above the {rated:g} bar this point is rated for" in str(asked)
    assert "over-pressure" in bench.knowledge.cautions  # the caution it raises exists
    assert bench.knowledge.cautions["over-pressure"].severity.value == "danger"


def test_below_a_gauges_scale_start_is_asked_about(bench_and_visits) -> None:
    bench, visits = bench_and_visits
    asked = _asked(bench, visits, PEBBLERUN, "suction_pressure", "-0.2 bar", gauge="G16")
    assert "below the bottom of G16's scale" in str(asked) and "at most 0 bar" in str(asked)
