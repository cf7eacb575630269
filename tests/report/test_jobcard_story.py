"""The job card as a customer and a workshop read it: complaint, cause, work done, re-test before
and after, the machine's status and a tag-out notice; gauge errors as class limits.

The visit is the demo's worn charge pump (invented data); the repair, its after-repair readings
and the dates are invented for this test."""

from __future__ import annotations

import datetime as dt
import io
import re
from pathlib import Path

import pytest
from pypdf import PdfReader

from fieldkit.diagnosis.engine import diagnose
from fieldkit.errors import FieldkitError
from fieldkit.model.repair import Departure, WorkItem
from fieldkit.report.build import job_card
from fieldkit.report.pdf import render_pdf
from fieldkit.report.text import render_text
from fieldkit.session import Workbench, read_visit_file
from fieldkit.units import DisplaySystem

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = ROOT / "sample_readings" / "visits" / "fellborer-charge-pump-worn.json"
#: After-repair readings at the points the diagnosis found low, in the same function state.
AFTER = {
    ("travel.charge", "neutral"): "26.4 bar",
    ("travel.charge", "full_stroke"): "22.5 bar",
    ("travel.charge", "stalled"): "22.06 bar",
    ("brake.release", "full_stroke"): "22 bar",
}


def _repaired(bench: Workbench, retest: bool = True) -> str:
    visit, _profile = read_visit_file(SAMPLE)
    # The sample as it stood at the diagnosis: its own repair, re-test and status left out.
    visit = visit.diagnosis_view().model_copy(
        update={
            "status": "open",
            "summary": "",
            "time_zone": "America/Chicago",
            "work": [],
            "departure": None,
            "complaint": "",
            "symptoms": [],
        }
    )
    visit = bench.store.import_visit(visit, as_new=True)
    bench.set_complaint(visit.id, "Slow to tram once warm; the charge lamp flickers.", ["slow_when_hot"])
    bench.add_work(visit.id, WorkItem(kind="fitted", part="charge pump gerotor set"))
    bench.add_work(visit.id, WorkItem(kind="adjusted", part="charge relief valve", setting="27 bar"))
    if retest:
        for r in visit.current_readings():
            text = AFTER.get((r.test_point, r.condition.function.value if r.condition.function else ""))
            if text:
                bench.record(visit.id, r.test_point, text, r.condition, gauge=r.gauge, after_repair=True)
    return visit.id


def _card(bench: Workbench, visit_id: str, system: str = "metric"):
    shown = DisplaySystem.named(system)
    visit, profile = bench.resolve(visit_id)
    diagnosis = diagnose(visit.diagnosis_view(), profile, bench.knowledge, shown)
    return job_card(visit, profile, diagnosis, shown, bench.knowledge)


def _pdf_text(card) -> str:
    reader = PdfReader(io.BytesIO(render_pdf(card)))
    return "\n".join(page.extract_text() for page in reader.pages)


@pytest.fixture
def bench(tmp_path: Path):
    b = Workbench.open(tmp_path / "cards.sqlite3")
    yield b
    b.close()


def test_a_repaired_machine_gets_a_card_with_complaint_cause_work_retest_and_status(bench) -> None:
    vid = _repaired(bench)
    bench.set_departure(vid, Departure(status="fit_to_run", next_action="Check charge at the 250 h service."))
    bench.finish(vid, "charge pump replaced")
    card = _card(bench, vid)
    for text in (render_text(card), _pdf_text(card)):
        flat = " ".join(text.split())
        assert "Slow to tram once warm; the charge lamp flickers." in flat
        assert "Charge pump worn" in flat
        assert "charge relief valve: adjusted, set to 27 bar" in flat
        assert "Fit to run" in flat and "Check charge at the 250 h service." in flat
        assert "DO NOT OPERATE" not in flat
        assert not re.search(r"\bbits?\b", flat)
        # Repaired: the card reports the cause and the work, not advice to confirm before repairing.
        assert "Confirm it before any repair" not in flat and "See the work done and the re-test" in flat
    text = render_text(card)
    # Before and after, side by side with the verdicts (text: one line per re-tested point).
    assert "before 18.4 bar (LOW) -> after 26.4 bar (in range)" in text
    assert "before 11.0 bar (LOW) -> after 22.0 bar (in range)" in text  # ±0.6 bar: one decimal


def test_the_card_prints_class_limits_and_values_to_the_gauges_resolution(bench) -> None:
    vid = _repaired(bench)
    bench.set_departure(vid, Departure(status="fit_to_run"))
    card = _card(bench, vid)
    text = render_text(card)
    # EN 837-1: class 1 on a 0–60 bar gauge → 1 % × 60 bar = ±0.6 bar; class 1.6 on 0–10 bar → ±0.16 bar.
    assert "±0.6 bar" in text and "±0.16 bar" in text
    # The standard uncertainty u = a/√3 (0.6/√3 = 0.35 bar) stays in the "why" view.
    assert "±0.35 bar" not in text
    # 22.06 bar read on the ±0.6 bar gauge prints to its resolution: 22.1 bar, never 22.06.
    assert "after 22.1 bar" in text and "22.06" not in text
    g60 = next(g for g in card.story.gauges if g.id == "G60")
    assert g60.limit.startswith("±0.6 bar")
    # A gauge too small is said once per gauge, from the point's real maximum on this machine.
    readings = text.split("\nREADINGS\n")[1].split("\nGAUGES USED\n")[0]
    gauges = text.split("\nGAUGES USED\n")[1].split("\nFINDINGS\n")[0]
    assert "837-2" not in readings
    assert "Gauge too small" not in readings
    assert gauges.count("Gauge too small") == len([g for g in card.story.gauges if g.advice]) >= 1


def test_do_not_operate_prints_a_tag_out_notice_in_the_local_time_zone(bench) -> None:
    vid = _repaired(bench, retest=False)
    with pytest.raises(FieldkitError, match="danger finding is still open"):
        bench.finish(vid, "not repaired")
    bench.set_departure(
        vid,
        Departure(
            status="do_not_operate",
            why="brake release pressure stays low.",
            decided_at=dt.datetime(2025, 5, 14, 20, 30, tzinfo=dt.UTC),
        ),
    )
    bench.finish(vid, "tagged out")
    card = _card(bench, vid)
    for text in (render_text(card), _pdf_text(card)):
        flat = " ".join(text.replace("!!", " ").split())
        assert "DO NOT OPERATE" in flat and "brake release pressure stays low." in flat
        # 20:30 UTC is 15:30 in Chicago (UTC−5 in May, daylight time).
        assert "2025-05-14 15:30 CDT" in flat


def test_fit_to_run_is_refused_while_a_danger_finding_is_open(bench) -> None:
    vid = _repaired(bench, retest=False)
    bench.set_departure(vid, Departure(status="fit_to_run"))
    with pytest.raises(FieldkitError, match="'fit to run' cannot stand"):
        bench.finish(vid, "x")
    bench.set_departure(
        vid,
        Departure(
            status="fit_with_limits",
            limits="no tramming on slopes",
            why="brake release low until the new pump is fitted",
        ),
    )
    assert bench.finish(vid, "limited").status.value == "closed"


def test_us_units_reach_the_conditions_and_the_limits(bench) -> None:
    vid = _repaired(bench)
    bench.set_departure(vid, Departure(status="fit_to_run"))
    text = render_text(_card(bench, vid, "us"))
    story_part = text.split("SUMMARY")[0]
    assert "°F" in story_part and "°C" not in story_part
    assert "psi" in story_part and " bar" not in story_part.replace("Oil temperature", "")
    # 0.6 bar = 8.70 psi (NIST SP 811: 1 psi = 6894.757 Pa), to two figures.
    assert "±8.7 psi" in text
    # The charge range in neutral, 25-29 bar from the maker's 27 bar ± 2 (demo profile), is
    # 362.59-420.61 psi by the same factor; a limit is shown to three figures as a technician
    # writes it, not to four as the converted float would print.
    assert "363–421 psi" in text and "362.6" not in text
