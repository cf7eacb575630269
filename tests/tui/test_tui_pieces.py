"""The UI's own small pieces, without a running app: the band picture, the probability bar,
the plan states, the skip sentences, the gauge check, the trend, the job card fallback."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest
from pydantic import ValidationError

from fieldkit.diagnosis.results import ReadingCheck, Verdict
from fieldkit.model.condition import FunctionState
from fieldkit.physics.common import Level
from fieldkit.tui.export import export_job_card
from fieldkit.tui.plan import PointState, notes_with_skip, notes_without_skip, skipped_points, state_of
from fieldkit.tui.screens.gauge import OTHER_STANDARD, build_gauge
from fieldkit.tui.step import gauge_fit, step_cautions, suggest_gauge
from fieldkit.tui.trend import history_table, sparkline
from fieldkit.tui.widgets.band import MARK, draw_band
from fieldkit.tui.widgets.faults import prob_bar
from fieldkit.units import percent

from .conftest import DEMO_OPEN_VISIT


def _chars(cells) -> str:
    return "".join(c.char for c in cells)


# --- band picture (our own drawing convention: a linear scale, band, reading, ±u) -------------


def test_a_reading_inside_its_band_is_drawn_between_the_band_edges() -> None:
    line = _chars(draw_band(26.2, 0.35, 25.0, 29.0, 40))
    assert len(line) == 40
    assert line.index("[") < line.index(MARK) < line.index("]")
    assert line.index("‹") < line.index(MARK) < line.index("›")


def test_a_low_reading_is_drawn_left_of_the_band_and_a_high_one_right() -> None:
    low = _chars(draw_band(11.2, 0.35, 20.5, 24.5, 40))
    high = _chars(draw_band(31.0, 0.35, 20.5, 24.5, 40))
    assert low.index(MARK) < low.index("[") and high.index(MARK) > high.index("]")


def test_a_band_with_only_a_ceiling_runs_open_to_the_left_edge() -> None:
    line = _chars(draw_band(0.7, 0.09, None, 2.0, 30))
    assert line[0] == "◂" and "]" in line and "[" not in line
    assert line.index(MARK) < line.index("]")


def test_a_narrow_band_still_fits_the_width_asked_for() -> None:
    for width in (8, 13, 50):
        assert len(draw_band(400.0, 3.5, 390.0, 415.0, width)) == width


# --- probability bar ------------------------------------------------------------------------


def test_the_probability_bar_is_always_its_width_and_grows_with_probability() -> None:
    filled = []
    for p in (0.0, 0.004, 0.125, 0.5, 0.83, 1.0):
        bar = prob_bar(p, 10)
        assert len(bar) == 10
        filled.append(10 - bar.count("·"))
    assert filled == sorted(filled) and filled[0] == 0 and filled[-1] == 10
    assert prob_bar(0.5, 10) == "█████·····"


def test_per_cent_never_rounds_a_live_fault_to_zero_or_a_doubt_to_certainty() -> None:
    assert percent(0.001) == "<1%" and percent(0.999) == ">99%" and percent(0.83) == "83%"


# --- plan states and skip sentences ---------------------------------------------------------


def _check(verdict: Verdict, discounted: str = "") -> ReadingCheck:
    return ReadingCheck(
        "r1",
        "travel.charge",
        "charge pressure",
        "travel",
        "function in neutral",
        "18.4 bar",
        "25–29 bar",
        "±0.35 bar",
        verdict,
        "G60",
        discounted=discounted,
    )


def test_one_reading_out_of_range_marks_the_point_out_of_range() -> None:
    state, why = state_of([_check(Verdict.IN_RANGE), _check(Verdict.LOW)], None)
    assert state is PointState.OUT_OF_RANGE and "low" in why


def test_a_reading_taken_outside_the_test_window_cannot_call_the_point() -> None:
    state, why = state_of([_check(Verdict.LOW, discounted="oil at 30 °C, below the test window")], None)
    assert state is PointState.INCONCLUSIVE and "oil at 30 °C" in why


def test_a_point_without_readings_is_skipped_only_when_the_notes_say_so() -> None:
    assert state_of([], None)[0] is PointState.NOT_MEASURED
    assert state_of([], "no access")[0] is PointState.SKIPPED


def test_skip_sentences_round_trip_through_the_notes_and_leave_the_rest_alone(open_bench) -> None:
    bench = open_bench()
    profile = bench.library.get("tarnhollow-fellborer")
    _c, loop_b = profile.test_point("travel.loop_b")
    notes = "Started on the left track loop."
    skipped = notes_with_skip(notes, loop_b, "  port seized \n no coupling ")
    assert skipped_points(skipped) == {"travel.loop_b": "port seized no coupling"}
    again = notes_with_skip(skipped, loop_b, "still seized")  # replaces, never duplicates
    assert again.count("travel.loop_b") == 1
    assert notes_without_skip(again, "travel.loop_b") == notes


# --- gauge check before connecting ------------------------------------------------------------


def test_gauge_fit_refuses_an_overranged_gauge_and_a_meter_of_the_wrong_kind(open_bench) -> None:
    bench = open_bench()
    visit = bench.store.get_visit(DEMO_OPEN_VISIT)
    profile = bench.profile_for(visit)
    _c, case = profile.test_point("travel.case")
    _c, loop_a = profile.test_point("travel.loop_a")
    # The case port can see 10 bar: a 0–10 bar gauge reaches its full scale (common practice:
    # rate the gauge above the highest pressure; physics.gauges.gauge_suitability).
    assert gauge_fit(case, visit.gauge("G10"), FunctionState.NEUTRAL, bench.system).level is Level.ERROR
    assert gauge_fit(loop_a, visit.gauge("G600"), FunctionState.STALLED, bench.system).ok
    assert gauge_fit(loop_a, visit.gauge("FM20"), FunctionState.STALLED, bench.system).level is Level.ERROR
    assert suggest_gauge(loop_a, visit.gauges, FunctionState.STALLED, bench.system).id == "G600"


def test_a_stall_over_relief_adds_the_stall_caution_to_the_step(open_bench) -> None:
    bench = open_bench()
    circuit, loop_a = bench.library.get("tarnhollow-fellborer").test_point("travel.loop_a")
    stalled = {c.id for c in step_cautions(bench.knowledge, circuit, loop_a, FunctionState.STALLED)}
    assert "stall-duration" in stalled and "fluid-injection" in stalled
    circuit, charge = bench.library.get("tarnhollow-fellborer").test_point("travel.charge")
    neutral = {c.id for c in step_cautions(bench.knowledge, circuit, charge, FunctionState.NEUTRAL)}
    assert "stall-duration" not in neutral


# --- adding a gauge -----------------------------------------------------------------------------


def test_a_gauge_from_the_form_checks_its_en837_class() -> None:
    gauge = build_gauge("G16", "16 bar", "", "1", "EN 837-1", "")
    assert gauge.accuracy_class == 1.0 and gauge.standard == "EN 837-1"
    with pytest.raises(ValidationError, match="EN 837-1 class"):
        build_gauge("G16", "16 bar", "", "1.5", "EN 837-1", "")  # EN 837-1 lists 1 and 1.6, not 1.5
    meter = build_gauge("FM100", "100 L/min", "", "2", "EN 837-1", "")  # a flow meter is no Bourdon gauge
    assert meter.standard == OTHER_STANDARD
    compound = build_gauge("C9", "9 bar", "-1 bar", "1.6", "EN 837-1", "")
    assert compound.scale_start is not None


# --- machine history --------------------------------------------------------------------------


def test_history_case_drain_at_reference_temperature_agrees_with_the_engine(open_bench) -> None:
    """Two code paths, one number: the history trend and the rule engine's finding both bring
    the pump case drain to the reference oil temperature (laminar leakage ∝ 1/ν, ASTM D341)."""
    bench = open_bench()
    earlier = bench.store.get_visit("rhs-25-0187")  # FELL-0417, before the charge pump change
    current = bench.store.get_visit(DEMO_OPEN_VISIT)
    profile = bench.profile_for(current)
    table = history_table(bench.store, profile, bench.system, serial=current.machine_serial)
    assert [v.id for v in table.visits] == ["rhs-25-0187", DEMO_OPEN_VISIT]
    row = next(r for r in table.rows if r.point.id == "travel.pump_drain")
    finding = next(f for f in bench.diagnose(earlier, profile).findings if f.key == "pump-case-drain@travel")
    # The finding prints the value to its flow meter's resolution; the trend keeps more figures.
    # They are one number when the trend's value, rounded as the finding rounds, is the finding's.
    found_value, found_unit = finding.value.split()
    trend_value, trend_unit = row.cells[0].split()
    decimals = len(found_value.partition(".")[2])
    assert trend_unit == found_unit and round(float(trend_value), decimals) == float(found_value)
    everyone = history_table(bench.store, profile, bench.system)
    assert len(everyone.visits) > len(table.visits)


def test_sparkline_marks_each_visit_from_low_to_high() -> None:
    assert sparkline([1.0, None, 3.0, 2.0]) == "▁ █▅"
    assert sparkline([2.0, 2.0]) == "▄▄"


# --- job card ---------------------------------------------------------------------------------


def test_without_the_report_writers_a_plain_summary_is_written_and_said_so(
    open_bench, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setitem(sys.modules, "fieldkit.report.jobcard", None)  # as if not installed
    bench = open_bench()
    visit = bench.store.get_visit("rhs-25-0187")
    profile = bench.profile_for(visit)
    diagnosis = bench.diagnose(visit, profile)
    path, said = export_job_card(visit, profile, diagnosis, tmp_path / "cards", "pdf")
    assert path.suffix == ".txt" and "not installed" in said and str(path) in said
    body = path.read_text(encoding="utf-8")
    assert "RHS-25-0187" in body and diagnosis.faults[0].display_title in body
    assert "LIKELY FAULTS" in body and "CAUTIONS" in body
