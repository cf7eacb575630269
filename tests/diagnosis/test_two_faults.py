"""Two faults at once (issue 13, "Calibrate": rank pairs when no single fault explains the findings).

The small scenes here are written as numbers, not readings: three hypotheses with their priors
and findings with their likelihood ratios, so that the posterior can be worked by hand in the
comment beside each test. The model is stated in fieldkit/diagnosis/pairs.py.
"""

from __future__ import annotations

import math

import pytest

from fieldkit.diagnosis.catalogue import Fault
from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.findings import Hypothesis
from fieldkit.diagnosis.pairs import pair_llr, rank_pairs
from fieldkit.diagnosis.ranking import log_posterior, rank
from fieldkit.diagnosis.results import Finding, Verdict


def _fault(fid: str, prior: float) -> Fault:
    return Fault(
        id=fid,
        title=fid.replace("_", " "),
        circuits=["*"],
        prior=prior,
        prior_source="invented for this test",
        description="-",
        confirm="-",
        fix="-",
    )


def _hyps() -> list[Hypothesis]:
    # Priors 0.5 / 0.25 / 0.25 (already adding up to 1).
    return [
        Hypothesis("no_fault", _fault("no_fault", 0.5), None, 0.5),
        Hypothesis("pump_worn", _fault("pump_worn", 0.25), None, 0.25),
        Hypothesis("main_relief_low", _fault("main_relief_low", 0.25), None, 0.25),
    ]


def _finding(rule: str, verdict: Verdict, pump: float, relief: float) -> Finding:
    """A finding with its likelihood ratios against a healthy machine for the two faults."""
    return Finding(
        rule_id=rule,
        title=rule,
        circuit=None,
        verdict=verdict,
        message=rule,
        evidence={"pump_worn": math.log(pump), "main_relief_low": math.log(relief)},
    )


def _ranked(findings: list[Finding]) -> tuple[list[Hypothesis], list[float], list]:  # type: ignore[type-arg]
    hyps = _hyps()
    ranked, _ = rank(hyps, findings)
    return hyps, log_posterior(hyps, findings), ranked


def test_a_worn_pump_and_a_low_relief_together_outrank_each_alone() -> None:
    # Worked by hand (likelihood ratios against a healthy machine; hand calculation):
    #   flow low:    pump ×8,   relief ×0.5   (a worn pump explains it, a low relief does not)
    #   stall low:   pump ×0.5, relief ×8     (the other way round)
    #   drain ok:    pump ×0.5, relief ×0.5   (read in range; both faults would rather have
    #                                          raised it a little: neither explains it)
    # Singles, prior × product of ratios:
    #   no fault        0.5  × 1 × 1 × 1         = 0.5
    #   pump worn       0.25 × 8 × 0.5 × 0.5     = 0.5
    #   relief low      0.25 × 0.5 × 8 × 0.5     = 0.5
    # Pair, prior 0.25 × 0.25 = 0.0625; per finding the better member where one explains it,
    # the product of both where neither does:
    #   flow low max(8, 0.5) = 8; stall low max(0.5, 8) = 8; drain ok 0.5 × 0.5 = 0.25
    #   pair            0.0625 × 8 × 8 × 0.25    = 1.0
    # Total 0.5 + 0.5 + 0.5 + 1.0 = 2.5: pair 1.0/2.5 = 0.40, each single 0.5/2.5 = 0.20.
    findings = [
        _finding("flow-low", Verdict.LOW, pump=8.0, relief=0.5),
        _finding("stall-low", Verdict.LOW, pump=0.5, relief=8.0),
        _finding("drain", Verdict.IN_RANGE, pump=0.5, relief=0.5),
    ]
    hyps, logs, ranked = _ranked(findings)
    two = rank_pairs(hyps, findings, logs, ranked)
    assert len(two.pairs) == 1
    pair = two.pairs[0]
    assert {pair.first.id, pair.second.id} == {"pump_worn", "main_relief_low"}
    assert pair.probability == pytest.approx(0.40, abs=1e-9)
    assert two.best_single == pytest.approx(0.20, abs=1e-9)
    assert two.wins


def test_a_pair_is_not_ranked_when_the_leading_fault_explains_every_finding() -> None:
    # Flow low (pump ×8, relief ×0.5) alone: the worn pump explains it, so no pair is formed,
    # even though the numbers would allow one.
    findings = [_finding("flow-low", Verdict.LOW, pump=8.0, relief=0.5)]
    hyps, logs, ranked = _ranked(findings)
    assert ranked[0].id == "pump_worn"
    two = rank_pairs(hyps, findings, logs, ranked)
    assert two.pairs == [] and not two.wins


def test_a_pair_ranked_but_less_likely_than_the_best_single_is_not_shown() -> None:
    # Flow low (pump ×8, relief ×0.5), stall just low (pump ×1, relief ×1.6): the relief
    # explains the second finding, the pump does not, so pairs are ranked. By hand:
    #   no fault   0.5                          = 0.5
    #   pump worn  0.25 × 8 × 1                 = 2.0
    #   relief low 0.25 × 0.5 × 1.6             = 0.2
    #   pair       0.0625 × max(8,0.5) × max(1,1.6) = 0.0625 × 8 × 1.6 = 0.8
    # Total 3.5: pump 2.0/3.5 = 0.5714, pair 0.8/3.5 = 0.2286: the single wins.
    findings = [
        _finding("flow-low", Verdict.LOW, pump=8.0, relief=0.5),
        _finding("stall-low", Verdict.LOW, pump=1.0, relief=1.6),
    ]
    hyps, logs, ranked = _ranked(findings)
    two = rank_pairs(hyps, findings, logs, ranked)
    assert two.pairs[0].probability == pytest.approx(0.8 / 3.5, abs=1e-9)
    assert two.best_single == pytest.approx(2.0 / 3.5, abs=1e-9)
    assert not two.wins


@pytest.mark.parametrize(
    ("first", "second", "expected"),
    [
        # hand calculation: the better explanation where one explains it…
        (math.log(8.0), math.log(0.5), math.log(8.0)),
        (math.log(3.0), math.log(4.0), math.log(4.0)),
        # …both penalties where neither does (0.5 × 0.25 = 0.125)
        (math.log(0.5), math.log(0.25), math.log(0.125)),
        # a member that says nothing (another circuit) leaves the other's ratio as it is
        (0.0, math.log(0.5), math.log(0.5)),
    ],
)
def test_a_finding_is_explained_by_either_member(first: float, second: float, expected: float) -> None:
    assert pair_llr(first, second) == pytest.approx(expected)


# --- a scene on a demo machine ----------------------------------------------------------------


def _pebblerun_two_faults() -> tuple[object, object, object]:
    # Pebblerun (invented demo machine): main stall 150 bar against 182-191 bar, pump flow 60 L/min
    # under load against 76.5-91.8 L/min, and the belt motor's drain 4 L/min against at most 1.5.
    # A technician reads a low relief (or a weak pump) in the main circuit and, separately, a worn
    # belt motor: nothing in the main circuit sends oil down the belt motor's drain, and a worn
    # motor does not pull the main stall down (common practice).
    from diagnosis_helpers import VisitBuilder, knowledge, library

    from fieldkit.model.condition import FunctionState

    profile = library().get("brindlecombe-pebblerun")
    b = VisitBuilder(profile)
    b.add("main.stall", 150.0, FunctionState.STALLED)
    b.add("main.pump_flow", 60.0, FunctionState.UNDER_LOAD)
    b.add("main.speed", 1800.0, FunctionState.UNDER_LOAD)
    b.add("belt.motor_drain", 4.0, FunctionState.UNDER_LOAD)
    visit = b.build()
    return visit, profile, diagnose(visit, profile, knowledge())


def test_a_low_main_relief_and_a_worn_belt_motor_are_named_together() -> None:
    _visit, _profile, d = _pebblerun_two_faults()
    assert d.pair_wins  # type: ignore[attr-defined]
    top = d.pairs[0]  # type: ignore[attr-defined]
    assert {top.first.key, top.second.key} == {"main_relief_low@main", "motor_worn@belt"}
    assert top.probability > d.faults[0].probability * 0.5  # type: ignore[attr-defined]
    shown = d.to_json()["two_faults"][0]  # type: ignore[attr-defined]
    assert {f["id"] for f in shown["faults"]} == {"main_relief_low", "motor_worn"}


def test_the_job_card_names_both_faults_when_the_pair_wins() -> None:
    from fieldkit.report.story import build_story

    visit, profile, d = _pebblerun_two_faults()
    story = build_story(visit, profile, d)  # type: ignore[arg-type]
    assert story.cause.startswith("Two faults at once:")
    assert "in the main circuit" in story.cause and "in the belt circuit" in story.cause


def test_a_one_fault_scene_shows_no_pair() -> None:
    # The same machine with the belt motor's drain healthy (0.6 L/min): the low relief alone
    # explains the main circuit; no pair wins.
    from diagnosis_helpers import VisitBuilder, knowledge, library

    from fieldkit.model.condition import FunctionState

    profile = library().get("brindlecombe-pebblerun")
    b = VisitBuilder(profile)
    b.add("main.stall", 150.0, FunctionState.STALLED)
    b.add("belt.motor_drain", 0.6, FunctionState.UNDER_LOAD)
    d = diagnose(b.build(), profile, knowledge())
    assert not d.pair_wins
    assert "two_faults" not in d.to_json()


# --- a circuit fed by another: its fault reads through the fed circuit's finding -----------------


def test_a_brake_released_from_charge_reads_low_for_a_charge_fault_not_as_a_second_fault() -> None:
    # Fellborer (invented demo machine): its parking brakes are released from the drive's charge
    # gallery (profile: supplied_by = "travel"). Charge 17 bar in neutral and 12 bar in stroke
    # (relief 27 bar), brake release 13 bar in stroke (full release 16 bar): a technician reads
    # one fault, the charge supply, and the dragging brake as its consequence (common practice:
    # a charge-released brake reads charge less its valve's drop).
    from diagnosis_helpers import VisitBuilder, finding, knowledge, library

    from fieldkit.model.condition import FunctionState

    profile = library().get("tarnhollow-fellborer")
    b = VisitBuilder(profile)
    b.add("travel.charge", 17.0, FunctionState.NEUTRAL)
    b.add("travel.charge", 12.0, FunctionState.FULL_STROKE)
    b.add("brake.release", 13.0, FunctionState.FULL_STROKE)
    d = diagnose(b.build(), profile, knowledge())
    brake = finding(d, "brake-release", "brake")
    assert brake.verdict is Verdict.LOW
    # The brake finding now speaks for the charge faults in the feeding circuit…
    assert brake.evidence["charge_pump_worn@travel"] > 0 and brake.evidence["charge_relief_low@travel"] > 0
    # …so the leading charge fault explains it and no pair of faults is shown.
    assert d.faults[0].circuit == "travel" and d.faults[0].id.startswith("charge_")
    assert not d.pair_wins


def test_a_drifting_cylinder_is_not_blamed_on_a_seal_in_the_pump_circuit_that_feeds_it() -> None:
    # Loamshifter (invented): the lift cylinders are fed by the work circuit (supplied_by =
    # "work"). A lift drift of 25 mm/min with warm oil is the lift's own valve or seal; the same
    # faults counted again in the work circuit would split the answer in two.
    from diagnosis_helpers import VisitBuilder, knowledge, library

    from fieldkit.model.condition import FunctionState

    profile = library().get("oskerfield-loamshifter")
    b = VisitBuilder(profile)
    b.add("work.oil_temp", 50.0, FunctionState.NEUTRAL)
    b.add("lift.drift", 25.0, FunctionState.NEUTRAL)
    d = diagnose(b.build(), profile, knowledge())
    drift = next(f for f in d.findings if f.rule_id == "cylinder-drift" and f.circuit == "lift")
    assert "load_holding_valve_leak@lift" in drift.evidence
    assert "load_holding_valve_leak@work" not in drift.evidence
    assert "cylinder_seal_bypass@work" not in drift.evidence


def test_fieldkit_diagnose_prints_the_two_faults_and_its_json_lists_them(tmp_path, capsys) -> None:  # type: ignore[no-untyped-def]
    import json
    import re

    from fieldkit.cli import main

    visit, _profile, _d = _pebblerun_two_faults()
    path = tmp_path / "visit.json"
    path.write_text(visit.model_dump_json(), encoding="utf-8")  # type: ignore[attr-defined]
    store = str(tmp_path / "visits.sqlite3")
    assert main(["--store", store, "diagnose", str(path)]) == 0
    text = re.sub(r"\s+", " ", capsys.readouterr().out)
    assert "Two faults at once" in text and "no single fault explains every finding" in text
    assert main(["--store", store, "diagnose", "--json", str(path)]) == 0
    shown = json.loads(capsys.readouterr().out)["two_faults"][0]
    assert {(f["id"], f["circuit"]) for f in shown["faults"]} == {
        ("main_relief_low", "main"),
        ("motor_worn", "belt"),
    }
