"""The job card's content: what it leads with, what it sums up, and how honest it is about doubt."""

from __future__ import annotations

import dataclasses
import math

import pytest
from report_builders import with_text

from fieldkit.diagnosis.results import Diagnosis, NextTest, Verdict
from fieldkit.model.visit import Visit
from fieldkit.report.build import job_card
from fieldkit.report.model import SETTLED, TOP_FAULTS, ReportError, make_band
from fieldkit.report.story import plain_why
from fieldkit.report.usertext import plain
from fieldkit.units import DisplaySystem


def test_every_current_reading_gets_a_row_in_diagnosis_order(worn) -> None:
    visit, profile, diagnosis = worn
    card = job_card(visit, profile, diagnosis)
    assert [r.reading_id for r in card.readings] == [c.reading_id for c in diagnosis.checks]
    # Printed to the gauge's resolution: the same value, rounded to the decimals shown.
    for r, c in zip(card.readings, diagnosis.checks, strict=True):
        number = r.reading.split()[0]
        decimals = len(number.split(".")[1]) if "." in number else 0
        assert float(number) == round(c.value_num, decimals), (r.reading, c.value)
    assert [r.number for r in card.readings] == list(range(1, len(diagnosis.checks) + 1))


def test_inconclusive_readings_say_so_and_what_to_do(worn) -> None:
    visit, profile, diagnosis = worn
    card = job_card(visit, profile, diagnosis)
    unsure = [r for r in card.readings if r.verdict is Verdict.INCONCLUSIVE]
    assert unsure, "the worn-charge-pump demo visit has readings within the gauge error of a limit"
    for r in unsure:
        assert r.verdict_text == "inconclusive"
        assert "cannot be called in or out of range" in r.remark
        assert "repeat" in r.remark.lower()


def test_out_of_range_and_inconclusive_findings_lead_and_in_range_ones_are_summed_up(worn) -> None:
    visit, profile, diagnosis = worn
    card = job_card(visit, profile, diagnosis)
    order = [f.verdict for f in card.findings.flagged]
    assert order == sorted(order, key=lambda v: v is Verdict.INCONCLUSIVE)  # out of range first
    assert {f.verdict for f in card.findings.flagged} <= {Verdict.LOW, Verdict.HIGH, Verdict.INCONCLUSIVE}
    in_range = [f for f in diagnosis.findings if f.verdict is Verdict.IN_RANGE]
    assert len(card.findings.in_range) == len(in_range)
    assert card.findings.in_range_summary.startswith(f"{len(in_range)} further checks in range")


def test_faults_beyond_the_top_five_are_summed_into_one_line(worn) -> None:
    visit, profile, diagnosis = worn
    card = job_card(visit, profile, diagnosis)
    assert [f.title for f in card.faults.top] == [f.display_title for f in diagnosis.faults[:TOP_FAULTS]]
    rest = diagnosis.faults[TOP_FAULTS:]
    assert card.faults.others_count == len(rest)
    assert card.faults.others_probability == pytest.approx(math.fsum(f.probability for f in rest))
    # The ranking is a normalised posterior (Bayes' rule), so the listed and summed parts make one.
    shown = math.fsum(f.probability for f in card.faults.top) + card.faults.others_probability
    assert shown == pytest.approx(1.0, abs=1e-9)


def test_each_listed_fault_carries_its_evidence(worn) -> None:
    visit, profile, diagnosis = worn
    card = job_card(visit, profile, diagnosis)
    top = card.faults.top[0]
    assert top.supporting, "the leading fault of the demo visit is supported by findings"
    assert top.supporting[0].title == diagnosis.top.supporting[0].title
    assert top.supporting[0].weight.startswith("×")
    assert top.supporting[0].title in top.evidence_text


def test_actions_hold_the_leading_faults_fix_and_the_findings_actions(worn) -> None:
    visit, profile, diagnosis = worn
    card = job_card(visit, profile, diagnosis)
    texts = " ".join(a.text for a in card.actions)
    assert diagnosis.top.fix in texts
    for f in diagnosis.findings:
        if f.verdict in (Verdict.LOW, Verdict.HIGH) and f.action:
            assert f.action in texts
    for part in diagnosis.top.parts:
        assert part in [p.name for p in card.parts]


def _with_top_probability(diagnosis: Diagnosis, p: float) -> Diagnosis:
    faults = [dataclasses.replace(f) for f in diagnosis.faults]
    faults[0].probability = p
    return dataclasses.replace(diagnosis, faults=faults)


def test_next_test_is_shown_only_while_the_diagnosis_is_not_settled(worn) -> None:
    visit, profile, diagnosis = worn
    if not diagnosis.next_tests:
        # The calibrated engine may have nothing left worth measuring on this demo visit: give the
        # card a next test of its own, since what is checked here is when the card shows it.
        extra = NextTest(
            test_point="travel.case",
            label="case pressure",
            circuit="travel",
            condition="neutral",
            minutes=15,
            gain_bits=0.2,
            why="Measure case pressure (neutral): it is expected to remove 0.20 bits of doubt.",
        )
        diagnosis = dataclasses.replace(diagnosis, next_tests=[extra])
    unsettled = job_card(visit, profile, _with_top_probability(diagnosis, SETTLED - 0.2))
    assert not unsettled.settled
    assert unsettled.next_test is not None
    # The customer's words: minutes and outcomes, without the ranking's information measure.
    assert unsettled.next_test.why == plain_why(diagnosis.next_tests[0])
    assert "bits" not in unsettled.next_test.why
    settled = job_card(visit, profile, _with_top_probability(diagnosis, SETTLED + 0.05))
    assert settled.settled
    assert settled.next_test is None
    assert settled.next_test_note.startswith("Settled")


def test_general_caution_comes_first_and_visit_cautions_follow(worn) -> None:
    visit, profile, diagnosis = worn
    card = job_card(visit, profile, diagnosis)
    assert card.cautions[0].general
    assert [c.title for c in card.cautions] == [c.title for c in diagnosis.cautions]


def test_general_caution_is_kept_even_when_the_rules_lack_it(worn) -> None:
    visit, profile, diagnosis = worn
    without = dataclasses.replace(diagnosis, cautions=[c for c in diagnosis.cautions if c.id != "general"])
    card = job_card(visit, profile, without)
    assert card.cautions[0].general
    assert len(card.cautions) == len(diagnosis.cautions)


def test_a_visit_without_readings_is_refused_with_a_clear_message(worn) -> None:
    visit, profile, diagnosis = worn
    empty = visit.model_copy(update={"readings": []})
    with pytest.raises(ReportError, match="has no readings"):
        job_card(empty, profile, diagnosis)


def test_a_profile_for_another_machine_is_refused(worn) -> None:
    visit, profile, diagnosis = worn
    other = visit.model_copy(update={"machine": "some-other-machine"})
    with pytest.raises(ReportError, match="some-other-machine"):
        job_card(other, profile, diagnosis)


def test_header_carries_the_visit_as_typed(worn) -> None:
    visit, profile, diagnosis = worn
    card = job_card(with_text(visit, job_number="J|17 *x*", customer="A & B <Ltd>"), profile, diagnosis)
    assert card.header.job_number == "J|17 *x*"
    assert card.header.customer == "A & B <Ltd>"
    assert card.header.machine == profile.name
    assert card.header.oil_grade == profile.oil_grade
    # The date, and the first and last reading in the site's time zone (Europe/London in the demo):
    # 08:15 and 13:40 UTC on 14 May 2025 are 09:15 and 14:40 BST (UTC+1 from the last Sunday of March).
    assert card.header.date == f"{visit.date.isoformat()} (readings 09:15 to 14:40 BST)"


def test_oil_temperature_follows_the_display_units(worn) -> None:
    visit, profile, diagnosis = worn
    metric = job_card(visit, profile, diagnosis, DisplaySystem.named("metric"))
    us = job_card(visit, profile, diagnosis, DisplaySystem.named("us"))
    # The re-test after the repair was read at 57 °C, the coolest of the day.
    assert metric.header.oil_temperature == "57 °C to 61 °C during readings"
    # t/°F = 1.8 · t/°C + 32 (NIST SP 811, section 4.2.1.1): 57 °C = 134.6 °F, 61 °C = 141.8 °F.
    assert us.header.oil_temperature == "134.6 °F to 141.8 °F during readings"


def test_control_characters_are_shown_but_inert() -> None:
    assert plain("ok\x1b[31mred\x00") == "ok\\x1b[31mred\\x00"
    assert plain("a\tb\r\nc\rd") == "a b\nc\nd"
    assert plain("\ud800x") == "\ufffdx"


# --- band pictures: positions on a linear axis, position = (x - min) / (max - min) by definition ---


def test_a_low_reading_sits_left_of_its_band() -> None:
    band = make_band(18.4, 0.35, 25.0, 29.0, "bar")
    assert band.value_at < band.band_from < band.band_to < 1.0
    assert band.error_from < band.value_at < band.error_to < band.band_from
    assert band.at(band.axis_min) == 0.0 and band.at(band.axis_max) == 1.0


def test_an_in_range_reading_sits_inside_its_band() -> None:
    band = make_band(27.0, 0.35, 25.0, 29.0, "bar")
    assert band.band_from < band.error_from < band.value_at < band.error_to < band.band_to
    assert band.value_at == pytest.approx((27.0 - band.axis_min) / (band.axis_max - band.axis_min))


def test_a_range_with_only_an_upper_limit_runs_open_to_the_left() -> None:
    band = make_band(0.7, 0.09, None, 2.0, "bar")
    assert band.band_from == 0.0
    assert 0.0 < band.value_at < band.band_to < 1.0


def test_a_range_with_only_a_lower_limit_runs_open_to_the_right() -> None:
    band = make_band(-0.09, 0.04, -0.17, None, "bar")
    assert band.band_to == 1.0
    assert 0.0 < band.band_from < band.value_at


def test_a_reading_exactly_on_a_single_limit_still_gets_an_axis() -> None:
    band = make_band(2.0, 0.0, None, 2.0, "bar")
    assert band.axis_max > band.axis_min
    assert band.value_at == band.band_to


def test_a_visit_model_without_current_readings_counts_as_empty(worn) -> None:
    visit, profile, diagnosis = worn
    first = visit.readings[0]
    deleted = first.model_copy(update={"deleted_at": first.taken_at})
    only_deleted: Visit = visit.model_copy(update={"readings": [deleted]})
    with pytest.raises(ReportError, match="no readings"):
        job_card(only_deleted, profile, diagnosis)


def test_an_inconclusive_finding_on_one_inconclusive_reading_is_named_not_repeated(worn) -> None:
    # Worn-charge-pump demo visit: "Loop B pressure with the drive stalled" rests on reading 9
    # alone, itself inconclusive; its message only restates that row. It is named in one line.
    card = job_card(*worn)
    repeated = [f for f in card.findings.flagged if f.repeats_reading]
    assert [f.title for f in repeated] == ["Loop B pressure with the drive stalled"]
    (finding,) = repeated
    (number,) = finding.readings
    assert card.readings[number - 1].verdict is Verdict.INCONCLUSIVE
    assert finding not in card.findings.detailed
    assert f"{finding.title} (reading {number})" in card.findings.repeated_summary
    # A finding that rests on several readings, or on one that reads otherwise, keeps its row.
    for f in card.findings.detailed:
        if f.verdict is Verdict.INCONCLUSIVE and len(f.readings) == 1:
            assert card.readings[f.readings[0] - 1].verdict is not Verdict.INCONCLUSIVE
    assert any(len(f.readings) > 1 for f in card.findings.detailed if f.verdict is Verdict.INCONCLUSIVE)
    assert len(card.findings.detailed) + len(repeated) == len(card.findings.flagged)
