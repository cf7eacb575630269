"""Symptoms and observations move the ranking the way their likelihood tables say.

The small rules below are written for the test (not the bundled tables), so the expected
posterior can be computed by hand from Bayes' rule and written out here."""

from __future__ import annotations

import math
from pathlib import Path

import pytest
from diagnosis_helpers import knowledge, library

from fieldkit.diagnosis.catalogue import Fault
from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.evidence import evidence_book, evidence_findings, load_evidence
from fieldkit.diagnosis.findings import Hypothesis
from fieldkit.diagnosis.ranking import rank
from fieldkit.errors import DataFileError
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Observation, Visit

SYMPTOMS = """
[[symptom]]
id = "sinks"
text = "Load sinks with the lever let go"
healthy = { p = 0.03, source = "common practice" }
  [symptom.likely]
  load_holding_valve_leak = { p = 0.7, source = "common practice" }
  cylinder_seal_bypass = { p = 0.35, source = "common practice" }
"""

OBSERVATIONS = """
[[observation]]
id = "capped"
question = "With the hoses capped at the cylinder, what does the drift do?"
roles = ["cylinder_drift"]
answers = [{ id = "stops", key = "s", text = "it stops" }, { id = "goes_on", key = "g", text = "it goes on" }]
healthy = { stops = 0.05, goes_on = 0.95, source = "common practice" }
  [observation.likely]
  load_holding_valve_leak = { stops = 0.8, goes_on = 0.2, source = "common practice" }
  cylinder_seal_bypass = { stops = 0.25, goes_on = 0.75, source = "common practice" }
"""


def _fault(fid: str, prior: float) -> Fault:
    return Fault(
        id=fid,
        title=fid,
        circuits=["cylinder"],
        prior=prior,
        prior_source="test",
        description="",
        confirm="",
        fix="",
    )


@pytest.fixture
def book(tmp_path: Path):
    (tmp_path / "symptoms.toml").write_text(SYMPTOMS, encoding="utf-8")
    (tmp_path / "observations.toml").write_text(OBSERVATIONS, encoding="utf-8")
    return load_evidence(tmp_path, {"no_fault", "load_holding_valve_leak", "cylinder_seal_bypass"})


def _lift_hypotheses() -> tuple[MachineProfile, list[Hypothesis]]:
    """The loader's lift circuit with three hypotheses. Priors 0.30 / 0.05 / 0.05, normalised by
    hand: 0.75, 0.125, 0.125."""
    profile = library().get("oskerfield-loamshifter")
    lift = next(c for c in profile.circuits if c.id == "lift")
    return profile, [
        Hypothesis("no_fault", _fault("no_fault", 0.75), None, 0.75),
        Hypothesis("load_holding_valve_leak@lift", _fault("load_holding_valve_leak", 0.05), lift, 0.125),
        Hypothesis("cylinder_seal_bypass@lift", _fault("cylinder_seal_bypass", 0.05), lift, 0.125),
    ]


def test_a_reported_symptom_and_an_observation_give_the_hand_computed_posterior(book) -> None:
    profile, hyps = _lift_hypotheses()
    visit = Visit(
        job_number="T-1",
        machine=profile.id,
        symptoms=["sinks"],
        observations=[Observation(check="capped", answer="stops", circuit="lift", test_point="lift.drift")],
    )
    ranked, post = rank(hyps, evidence_findings(visit, book, hyps))
    # Bayes' rule by hand (naive Bayes: the two findings multiply):
    #   no fault : 0.75  × (0.03/0.03) × (0.05/0.05) = 0.75
    #   valve    : 0.125 × (0.70/0.03) × (0.80/0.05) = 0.125 × 23.333 × 16 = 46.667
    #   seal     : 0.125 × (0.35/0.03) × (0.25/0.05) = 0.125 × 11.667 × 5  =  7.2917
    #   total 54.708 → 0.01371, 0.85301, 0.13328
    assert post == pytest.approx([0.01371, 0.85301, 0.13328], abs=5e-5)
    assert ranked[0].id == "load_holding_valve_leak"
    assert [e.ratio for e in ranked[0].supporting] == pytest.approx([0.70 / 0.03, 0.80 / 0.05])


def test_an_answer_the_table_gives_to_the_seal_moves_the_ranking_towards_the_seal(book) -> None:
    profile, hyps = _lift_hypotheses()
    visit = Visit(
        job_number="T-2",
        machine=profile.id,
        observations=[Observation(check="capped", answer="goes_on", circuit="lift")],
    )
    _ranked, post = rank(hyps, evidence_findings(visit, book, hyps))
    # goes_on: seal 0.75/0.95 = 0.789, valve 0.2/0.95 = 0.211: both below healthy, the valve far more.
    assert post[2] / post[1] == pytest.approx((0.75 / 0.95) / (0.2 / 0.95))
    assert post[0] > 0.75  # neither fault explains the answer as well as a sound circuit


def test_an_observation_in_another_circuit_leaves_this_circuits_faults_alone(book) -> None:
    profile = library().get("oskerfield-loamshifter")
    lift = next(c for c in profile.circuits if c.id == "lift")
    hyps = [Hypothesis("load_holding_valve_leak@lift", _fault("load_holding_valve_leak", 0.05), lift, 1.0)]
    visit = Visit(
        job_number="T-3",
        machine=profile.id,
        observations=[Observation(check="capped", answer="stops", circuit="work")],
    )
    assert evidence_findings(visit, book, hyps)[0].evidence == {}


def test_every_bundled_symptom_raises_the_faults_it_names_most_on_the_demo_machines() -> None:
    k = knowledge()
    book = evidence_book(k.folder, set(k.faults))
    for machine in ("tarnhollow-fellborer", "oskerfield-loamshifter", "brindlecombe-pebblerun"):
        profile = library().get(machine)
        quiet = diagnose(Visit(job_number="T-4", machine=machine), profile, k)
        before = {(f.id, f.circuit): f.probability for f in quiet.faults}
        for symptom in book.symptoms.values():
            told = diagnose(Visit(job_number="T-4", machine=machine, symptoms=[symptom.id]), profile, k)
            after = {(f.id, f.circuit): f.probability for f in told.faults}
            for (fid, circuit), p in after.items():
                ratio = symptom.ratio(fid)
                if ratio > 1.5:
                    assert p > before[(fid, circuit)], (symptom.id, fid)
                elif ratio < 1:
                    assert p < before[(fid, circuit)], (symptom.id, fid)
            if any(
                symptom.ratio(fid) > 1 for fid, _c in after
            ):  # the symptom names a fault this machine can have
                assert after[("no_fault", None)] < before[("no_fault", None)], symptom.id


def test_every_bundled_likelihood_names_its_source() -> None:
    k = knowledge()
    book = evidence_book(k.folder, set(k.faults))
    for s in book.symptoms.values():
        assert all(lk.source for lk in [s.healthy, *s.likely.values()]), s.id
    for o in book.observations.values():
        assert all(lk.source for lk in [o.healthy, *o.likely.values()]), o.id


def test_a_symptom_naming_an_unknown_fault_is_reported_with_file_and_line(tmp_path: Path) -> None:
    (tmp_path / "symptoms.toml").write_text(
        SYMPTOMS.replace("cylinder_seal_bypass", "cylinder_sael"), "utf-8"
    )
    with pytest.raises(DataFileError, match=r"symptoms.toml:8 .*cylinder_sael"):
        load_evidence(tmp_path, {"no_fault", "load_holding_valve_leak", "cylinder_seal_bypass"})


def test_answers_that_do_not_add_up_to_one_are_refused(tmp_path: Path) -> None:
    (tmp_path / "observations.toml").write_text(OBSERVATIONS.replace("stops = 0.8,", "stops = 0.9,"), "utf-8")
    with pytest.raises(DataFileError, match="add up to 1.1"):
        load_evidence(tmp_path, {"load_holding_valve_leak", "cylinder_seal_bypass"})


def test_the_drift_symptom_changes_the_first_recommended_test() -> None:
    k = knowledge()
    profile = library().get("oskerfield-loamshifter")
    quiet = diagnose(Visit(job_number="T-5", machine=profile.id), profile, k)
    told = diagnose(Visit(job_number="T-5", machine=profile.id, symptoms=["creeps_or_drifts"]), profile, k)
    assert told.next_tests[0].test_point != quiet.next_tests[0].test_point
    assert told.next_tests[0].test_point in {"lift.drift", "lift.drift_rod_vented"}
    assert math.isfinite(told.entropy_bits)


def test_capping_the_hoses_does_not_point_at_the_piston_seal() -> None:
    # Field notes (cylinder drift, 2nd-hand trade article): a double-acting cylinder with both
    # ports blocked locks even if its piston seal bypasses. So in the bundled rules, drift that
    # goes on with the hoses capped must not count for a bypassing seal (its likelihood ratio
    # against a healthy cylinder is at most 1), and drift that stops must count more for the
    # leaking load-holding valve than for the seal.
    k = knowledge()
    book = evidence_book(k.folder, set(k.faults))
    capped = book.observations["drift_with_hoses_capped"]
    assert capped.ratio("cylinder_seal_bypass", "goes_on") <= 1.0
    assert capped.ratio("load_holding_valve_leak", "stops") > capped.ratio("cylinder_seal_bypass", "stops")
