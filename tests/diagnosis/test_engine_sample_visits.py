"""The demo visits: each was written to show one fault (its ``scenario.fault``), and the engine
must rank that fault first; a healthy machine must come out as 'no fault'. The ``--json`` output
of ``fieldkit diagnose`` keeps the shape the README documents."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from diagnosis_helpers import diagnose_sample, knowledge, load_visit, sample_visit_paths

from fieldkit.cli import main
from fieldkit.diagnosis.catalogue import NO_FAULT
from fieldkit.diagnosis.results import Verdict
from fieldkit.diagnosis.retest import completion_problems, open_dangers, retest_rows
from fieldkit.model.repair import MachineStatus

SCENARIOS = {p: load_visit(p).scenario.fault for p in sample_visit_paths()}  # type: ignore[union-attr]
FAULTY = [pytest.param(p, id=p.stem) for p, fault in SCENARIOS.items() if fault != NO_FAULT]
HEALTHY = [pytest.param(p, id=p.stem) for p, fault in SCENARIOS.items() if fault == NO_FAULT]


def test_the_demo_has_faulty_and_healthy_visits_on_every_machine() -> None:
    machines = {load_visit(p).machine for p in SCENARIOS}
    assert len(machines) == 3
    for machine in machines:
        faults = {f for p, f in SCENARIOS.items() if load_visit(p).machine == machine}
        assert NO_FAULT in faults and len(faults) > 1, machine


def _whole_story(path: Path) -> bool:
    v = load_visit(path)
    return bool(
        v.complaint and v.symptoms and v.observations and v.work and v.retest_readings() and v.departure
    )


STORIES = [pytest.param(p, id=p.stem) for p in SCENARIOS if _whole_story(p)]


def test_every_demo_machine_has_a_visit_that_tells_the_whole_story() -> None:
    """Complaint → readings → observations → diagnosis → repair → re-test → fit to run (issue 11, item 7)."""
    assert {load_visit(p.values[0]).machine for p in STORIES} == {
        "tarnhollow-fellborer",
        "oskerfield-loamshifter",
        "brindlecombe-pebblerun",
    }


@pytest.mark.parametrize("path", STORIES)
def test_a_whole_story_visit_is_repaired_retested_and_left_fit_to_run(path: Path) -> None:
    visit, profile, d = diagnose_sample(path)
    assert d.top.id == SCENARIOS[path]  # the diagnosis reads only what was found before the repair
    # The complaint's symptoms and the answered checks are findings of the ranking.
    reported = {f.rule_id for f in d.findings if f.verdict is Verdict.REPORTED}
    assert {f"symptom-{s}" for s in visit.symptoms} <= reported
    assert {f"observed-{o.check}" for o in visit.observations} <= reported
    rows = retest_rows(visit, profile, knowledge())
    assert rows
    judged = [r for r in rows if r.after_verdict is not Verdict.NOT_MEASURED]
    # At least one point that was out of range before the repair reads in range after it.
    assert any(r.before_verdict in (Verdict.LOW, Verdict.HIGH) for r in judged)
    assert all(r.after_verdict is Verdict.IN_RANGE for r in judged), [(r.label, r.after) for r in judged]
    assert visit.departure is not None and visit.departure.status is MachineStatus.FIT
    assert not completion_problems(visit, open_dangers(visit, profile, knowledge()))


@pytest.mark.parametrize("path", FAULTY)
def test_faulty_sample_visit_ranks_its_written_fault_first(path: Path) -> None:
    _visit, _profile, d = diagnose_sample(path)
    ranking = [(f.key, round(f.probability, 3)) for f in d.faults[:3]]
    assert d.top.id == SCENARIOS[path], ranking
    assert d.top.supporting, "the top fault is explained by at least one finding"


@pytest.mark.parametrize("path", HEALTHY)
def test_healthy_sample_visit_ranks_no_fault_first(path: Path) -> None:
    _visit, _profile, d = diagnose_sample(path)
    assert d.top.id == NO_FAULT, [(f.key, round(f.probability, 3)) for f in d.faults[:3]]
    assert d.top.probability > 0.5


def test_worn_charge_pump_visit_ranks_charge_pump_first_in_the_travel_loop() -> None:
    path = next(p for p in SCENARIOS if p.stem == "fellborer-charge-pump-worn")
    _visit, _profile, d = diagnose_sample(path)
    assert (d.top.id, d.top.circuit) == ("charge_pump_worn", "travel")
    # The charge relief is the close rival (low charge in neutral points at both).
    assert d.faults[1].id == "charge_relief_low"
    assert {e.finding for e in d.top.supporting} >= {"charge-in-neutral@travel", "charge-in-stroke@travel"}


#: Top-level keys of `fieldkit diagnose --json`, as the README documents them (format version 1).
JSON_KEYS = {
    "format",
    "version",
    "visit",
    "machine",
    "readings",
    "findings",
    "faults",
    "next_tests",
    "cautions",
    "uncertainty_bits",
    "notes",
}
FAULT_KEYS = {"id", "circuit", "title", "probability", "prior", "for", "against", "confirm", "fix", "parts"}
FINDING_KEYS = {
    "id",
    "rule_id",
    "circuit",
    "title",
    "verdict",
    "message",
    "value",
    "uncertainty",
    "low",
    "high",
    "p_low",
    "p_in_range",
    "p_high",
    "readings",
    "missing",
    "discount",
    "discount_reason",
    "action",
    "cautions",
    "source",
}
NEXT_TEST_KEYS = {
    "test_point",
    "label",
    "circuit",
    "condition",
    "minutes",
    "gain_bits",
    "why",
    "repeat",
    "gauge_advice",
    "outcomes",
}
CAUTION_KEYS = {"id", "title", "text", "severity", "source", "because"}


@pytest.mark.parametrize("name", ["fellborer-charge-pump-worn", "demo-open-visit"])
def test_diagnose_json_has_the_documented_shape(name: str, capsys: pytest.CaptureFixture[str]) -> None:
    path = next(p for p in sample_visit_paths(with_scenario=False) if p.stem == name)
    assert main(["diagnose", str(path), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)

    assert JSON_KEYS <= set(out)
    assert (out["format"], out["version"]) == ("fieldkit.diagnosis", 1)
    assert out["visit"] == load_visit(path).id

    faults = out["faults"]
    assert all(FAULT_KEYS <= set(f) for f in faults)
    probabilities = [f["probability"] for f in faults]
    assert probabilities == sorted(probabilities, reverse=True)
    # Rounded to 4 places each, so the sum may miss 1 by half a unit in the last place per fault.
    assert sum(probabilities) == pytest.approx(1.0, abs=5e-5 * len(faults))
    for f in faults:
        for e in f["for"] + f["against"]:
            assert set(e) == {"finding", "title", "message", "ratio"}

    assert all(FINDING_KEYS <= set(f) for f in out["findings"])
    # "reported": a symptom of the complaint or an answered check (rules/symptoms.toml, observations.toml)
    verdicts = {"in_range", "low", "high", "inconclusive", "not_measured", "reported"}
    assert {f["verdict"] for f in out["findings"]} <= verdicts
    assert all(NEXT_TEST_KEYS <= set(t) for t in out["next_tests"])
    assert all(CAUTION_KEYS <= set(c) for c in out["cautions"])
    assert out["cautions"][0]["id"] == "general"

    scenario = load_visit(path).scenario
    if scenario is not None:
        assert faults[0]["id"] == scenario.fault
    else:
        assert out["next_tests"], "an open visit gets a next test"
