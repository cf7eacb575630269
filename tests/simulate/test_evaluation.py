"""The accuracy evaluation: its arithmetic on hand-made cases, and the engine's measured accuracy
on simulated visits with a fixed seed, held above the level measured minus a margin."""

from __future__ import annotations

import pytest

from fieldkit.errors import FieldkitError
from fieldkit.simulate.evaluate import Case, EvaluationReport, evaluate, family_of

SEED = 3
CASES = 5


def case(
    fault: str, top: str, p: float, found: bool, in_top3: bool | None = None, profile: str = "m"
) -> Case:
    return Case(
        profile=profile,
        fault=fault,
        circuit=None,
        severity=1.0,
        seed=0,
        top=top,
        top_probability=p,
        top3=(top,),
        found=found,
        in_top3=found if in_top3 is None else in_top3,
        named=True,
    )


def test_brier_score_of_the_top_probability():
    # Brier (1950), Monthly Weather Review 78(1): mean of (forecast - outcome)^2.
    # (0.9-1)^2 = 0.01, (0.6-0)^2 = 0.36, (0.5-1)^2 = 0.25 -> 0.62 / 3
    r = EvaluationReport(
        0,
        1,
        (1.0, 1.0),
        cases=[case("a", "a", 0.9, True), case("b", "c", 0.6, False), case("c", "c", 0.5, True)],
    )
    assert r.brier() == pytest.approx(0.62 / 3)


def test_reliability_table_bins_by_top_probability():
    r = EvaluationReport(
        0,
        1,
        (1.0, 1.0),
        cases=[
            case("a", "a", 0.1, False),
            case("a", "a", 0.45, True),
            case("a", "a", 0.55, False),
            case("a", "a", 0.95, True),
            case("a", "a", 1.0, True),
        ],
    )
    bins = r.reliability(5)
    assert [b.n for b in bins] == [1, 0, 2, 0, 2]
    assert bins[2].mean_probability == pytest.approx(0.5) and bins[2].accuracy == pytest.approx(0.5)
    assert bins[4].accuracy == 1.0  # a probability of exactly 1 falls in the last bin


def test_scores_and_confusions():
    r = EvaluationReport(
        0,
        1,
        (1.0, 1.0),
        cases=[
            case("pump_worn", "pump_worn@x", 0.7, True),
            case("pump_worn", "no_fault", 0.6, False, in_top3=True),
            case("no_fault", "pump_worn@x", 0.5, False),
            case("no_fault", "no_fault", 0.8, True),
        ],
    )
    assert r.faulty().top1_rate == 0.5 and r.faulty().top3_rate == 1.0
    assert r.healthy().top1_rate == 0.5
    assert r.confusions() == [("no_fault", "pump_worn", 2)]
    assert r.mistaken_for("m", "pump_worn") == [("no_fault", 1)]
    assert family_of("pump_worn") == "internal leakage"


def test_cases_per_fault_must_be_positive():
    with pytest.raises(FieldkitError, match="at least 1"):
        evaluate(cases_per_fault=0)


@pytest.fixture(scope="module")
def report() -> EvaluationReport:
    return evaluate(cases_per_fault=CASES, seed=SEED, workers=2)


def test_evaluation_is_repeatable_for_a_seed_whatever_the_workers(profiles):
    one = [profiles["oskerfield-loamshifter"]]
    serial = evaluate(one, cases_per_fault=2, seed=SEED, workers=1)
    parallel = evaluate(one, cases_per_fault=2, seed=SEED, workers=2)
    assert serial.to_json() == parallel.to_json()
    assert serial.cases == parallel.cases


def test_every_demo_machine_and_its_faults_are_evaluated(report):
    assert set(report.by_profile()) == {
        "brindlecombe-pebblerun",
        "oskerfield-loamshifter",
        "tarnhollow-fellborer",
    }
    faults = {f for f, s in report.by_fault().items()}
    assert "no_fault" in faults and len(faults) >= 20
    assert all(s.n == CASES for s in report.by_profile_fault().values())


# Top-1 accuracy per fault family measured with seed 3, 5 visits per fault and machine, severity
# 0.6-1.4, rules and engine as of this test's writing: healthy 1.00 (15/15), reliefs and settings
# 0.725 (29/40), internal leakage 0.55 (22/40), lines and charge supply 0.60 (33/55), stored
# energy and brakes 1.00 (10/10), conditions and instruments 0.71 (32/45); faulty machines
# 0.66 (126/190), top-3 0.91. The bars are those figures less 0.15 (at least two cases in the
# smallest family), so a rule change that costs a family several cases fails here. Raising a bar
# after a rule change that helps is welcome; lowering one needs a reason in the commit.
FAMILY_BARS = {
    "healthy": 0.85,
    "reliefs and settings": 0.57,
    "internal leakage": 0.40,
    "lines and charge supply": 0.45,
    "stored energy and brakes": 0.85,
    "conditions and instruments": 0.56,
}


@pytest.mark.parametrize("family", list(FAMILY_BARS))
def test_top1_accuracy_per_fault_family_holds(report, family):
    score = report.by_family()[family]
    assert score.top1_rate >= FAMILY_BARS[family], (family, score)


def test_the_engine_names_most_injected_faults_first(report):
    assert report.faulty().top1_rate >= 0.5
    assert report.faulty().top3_rate >= 0.8
    assert report.healthy().top1_rate >= 0.9  # no false alarm on healthy machines


def test_report_json_carries_the_figures(report):
    data = report.to_json()
    assert data["format"] == "fieldkit.evaluation"
    assert 0.0 <= data["brier"] <= 1.0
    assert sum(b["n"] for b in data["reliability"]) == data["overall"]["n"]
    assert data["skipped"]["oskerfield-loamshifter"]["main_relief_high"]
